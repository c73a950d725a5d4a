"""Generators of hostile site files (invented data only) and their expected reading.

A generated CSV file is a header that neve can read plus rows of known kinds:
clean rows (random text in every text field, valid coordinates and
elevation), rows a CSV reader must keep but flag (a quoted field over
several lines) and damaged rows (a stray quote, a byte that is not UTF-8, an
unquoted extra comma, a quote in mid-field, a missing or out-of-range
coordinate, text in a coordinate column, a bad elevation).  What the file
holds is read back with Python's csv module (:func:`helpers.csv_records`),
independently of neve.
"""

from __future__ import annotations

import io
import string
from dataclasses import dataclass, field

from hypothesis import strategies as st

from tests.hostile.helpers import hostile_text, marked_text

#: the invented demo island's extent (demo data of neve, Skerrow Island)
ISLAND = {"lat": (47.36, 47.62), "lon": (-140.30, -139.68)}
LATLON_NAMES = (("lat", "lon"), ("latitude", "longitude"), ("Lat", "LON"))
#: extra columns; `status` and `flags` clash with result columns (kept as input_<name>)
EXTRA_NAMES = ("note", "owner", "Ref No", "status", "flags")
ELEVATION_NAMES = ("elevation", "elevation_ft", "elevation_m", None)

#: kinds of rows, clean ones weighted up
CLEAN_KINDS = ("clean", "multiline", "blank_after")
DAMAGE_IN_TEXT = ("stray_quote", "bad_byte", "extra_comma", "mid_quote")
DAMAGE_IN_VALUES = ("missing_coord", "coord_out_of_range", "coord_text", "elevation_bad")
ROW_KINDS = ("clean",) * 4 + CLEAN_KINDS[1:] + DAMAGE_IN_TEXT + DAMAGE_IN_VALUES

#: text in a coordinate column that is no coordinate (none of them is a number neve may read)
COORD_TEXT = (
    "TRUE",
    "false",
    "2024-01-05",
    "47,52",
    "north",
    "0x1F",
    "inf",
    "-inf",
    "Infinity",
    "1e400",
    "--47",
    "47.5.1",
    "4 7",
)
#: bad cells of an `elevation` column (unit in the cell)
ELEV_CELL_BAD = (
    "1200",
    "1200psf",
    "tall",
    "ft",
    "1e400ft",
    "infm",
    "-infft",
    "nanft",
    "99999m",
    "-3000m",
    "1200 ft 3",
    "12 00ft",
)
#: bad cells of an `elevation_ft` / `elevation_m` column (unit in the name)
ELEV_NUM_BAD = ("tall", "1e400", "inf", "-inf", "99999999", "-99999", "TRUE", "12 00")
BAD_BYTES = (b"\xff", b"\xfe", b"\x80", b"\xc3\x28", b"\xe2\x82")

WORD = st.text(alphabet=string.ascii_letters, min_size=1, max_size=6)


@dataclass
class Row:
    kind: str
    values: dict  # column -> text written (for damaged text columns: the readable part)
    raw: bytes = b""  # the row as written, line ending(s) included
    damage_col: int | None = None  # position in the header of the damaged field
    first_line: int = 0
    lines: int = 0  # physical lines of the row itself (a blank line after it not counted)
    damage_piece: bytes = b""  # the damaged field as written


@dataclass
class SiteFile:
    data: bytes
    header: list
    rows: list = field(default_factory=list)
    lat_name: str = "lat"
    lon_name: str = "lon"
    elev_name: str | None = None

    def row_starting_at(self, line: int) -> Row | None:
        for row in self.rows:
            if row.first_line == line:
                return row
        return None


def physical_lines(text: str) -> int:
    return len(list(io.StringIO(text, newline="")))


def _coordinate(draw, axis: str) -> str:
    lo, hi = ISLAND[axis]
    if draw(st.booleans()):
        value = draw(st.floats(min_value=lo, max_value=hi))
    else:
        limit = 90.0 if axis == "lat" else 180.0
        value = draw(st.floats(min_value=-limit, max_value=limit))
    return f"{value:.{draw(st.integers(0, 7))}f}"


def _elevation(draw, elev_name) -> str:
    if draw(st.integers(0, 4)) == 0:
        return ""
    if elev_name == "elevation":
        unit = draw(st.sampled_from(("ft", "m", "FT", "M", "feet", "metres")))
        top = 4000.0 if unit.lower().startswith("m") else 13000.0
        value = draw(st.floats(min_value=0.0, max_value=top))
        return f"{value:.{draw(st.integers(0, 2))}f}{draw(st.sampled_from(('', ' ')))}{unit}"
    top = 4000.0 if elev_name == "elevation_m" else 13000.0
    return f"{draw(st.floats(min_value=0.0, max_value=top)):.{draw(st.integers(0, 2))}f}"


@st.composite
def _row(draw, header, lat_name, lon_name, elev_name, text_cols) -> Row:
    kind = draw(st.sampled_from(ROW_KINDS))
    values = {}
    for col in header:
        if col == lat_name:
            values[col] = _coordinate(draw, "lat")
        elif col == lon_name:
            values[col] = _coordinate(draw, "lon")
        elif col == elev_name:
            values[col] = _elevation(draw, elev_name)
        elif col == "site_id":
            values[col] = draw(st.one_of(marked_text(), hostile_text()))
        elif col == "address":  # a legitimate line break in some
            values[col] = draw(hostile_text())
        else:
            values[col] = draw(hostile_text())
    row = Row(kind, values)
    if kind == "multiline":
        col = draw(st.sampled_from(text_cols))
        values[col] = draw(WORD) + draw(st.sampled_from(("\n", "\r\n", "\n\n"))) + draw(WORD)
    elif kind == "missing_coord":
        for col in draw(st.sampled_from(((lat_name,), (lon_name,), (lat_name, lon_name)))):
            values[col] = ""
        if values[lat_name] == values[lon_name] == "" and "address" in values:
            values["address"] = ""  # no geocoding fallback: a row without any location
    elif kind == "coord_out_of_range":
        col = draw(st.sampled_from((lat_name, lon_name)))
        limit = 90.0 if col == lat_name else 180.0
        sign = draw(st.sampled_from(("", "-")))
        value = draw(st.floats(min_value=limit + 1e-3, max_value=1e6))
        values[col] = sign + draw(st.sampled_from((f"{value:.4f}", "1e400")))
    elif kind == "coord_text":
        values[draw(st.sampled_from((lat_name, lon_name)))] = draw(st.sampled_from(COORD_TEXT))
    elif kind == "elevation_bad":
        if elev_name is None:
            row.kind = kind = "clean"
        else:
            bad = ELEV_CELL_BAD if elev_name == "elevation" else ELEV_NUM_BAD
            values[elev_name] = draw(st.sampled_from(bad))
    if kind == "mid_quote":  # one line: a bare quote never starts a multi-line cell
        for col in text_cols:
            values[col] = values[col].replace("\r", " ").replace("\n", " ")
    if kind in DAMAGE_IN_TEXT:
        row.damage_col = header.index(draw(st.sampled_from(text_cols)))
        row.values[header[row.damage_col]] = None  # not a readable value
    row.damage_piece = _damage(draw, kind)
    return row


def _damage(draw, kind) -> bytes:
    a, b = draw(WORD).encode(), draw(WORD).encode()
    if kind == "stray_quote":
        return b'"' + a
    if kind == "bad_byte":
        return a + draw(st.sampled_from(BAD_BYTES)) + b
    if kind == "extra_comma":
        return a + b"," + b
    if kind == "mid_quote":
        return a + b'"' + b
    return b""


@st.composite
def csv_site_files(draw, max_rows: int = 8) -> SiteFile:
    """A CSV site file with a readable header and 1..max_rows rows of random kinds."""
    from tests.hostile.helpers import csv_field

    lat_name, lon_name = draw(st.sampled_from(LATLON_NAMES))
    elev_name = draw(st.sampled_from(ELEVATION_NAMES))
    extras = draw(st.lists(st.sampled_from(EXTRA_NAMES), unique=True, max_size=2))
    header = ["site_id", "address", lat_name, lon_name]
    header += ([elev_name] if elev_name else []) + extras
    header = list(draw(st.permutations(header)))
    text_cols = [c for c in header if c in ("site_id", "address", *EXTRA_NAMES)]
    quote_all = draw(st.booleans())
    eol = draw(st.sampled_from(("\r\n", "\n")))
    rows = draw(
        st.lists(
            _row(header, lat_name, lon_name, elev_name, text_cols), min_size=1, max_size=max_rows
        )
    )
    final_eol = draw(st.booleans())
    bom = draw(st.booleans())
    out = bytearray(b"\xef\xbb\xbf" if bom else b"")
    out += (",".join(header) + eol).encode()
    line = 2
    for k, row in enumerate(rows):
        pieces = []
        for j, col in enumerate(header):
            if j == row.damage_col:
                pieces.append(row.damage_piece)
            else:
                pieces.append(csv_field(row.values[col], quote_all).encode("utf-8"))
        last = k == len(rows) - 1
        body = b",".join(pieces)
        row.raw = body + (eol.encode() if (final_eol or not last) else b"")
        row.first_line = line
        row.lines = physical_lines(row.raw.decode("utf-8", "surrogateescape"))
        line += row.lines
        if row.kind == "blank_after" and not last:
            row.raw += eol.encode()
            line += 1
        out += row.raw
    return SiteFile(bytes(out), header, rows, lat_name, lon_name, elev_name)
