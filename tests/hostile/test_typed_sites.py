"""Hostile XLSX and Parquet site files through ``neve screen`` (issue 8, sections 2 and 5).

Typed cells are what these formats add to CSV: a boolean or a date in a
coordinate or elevation column is an error row, never a number (issue 8
section 2); NaN and infinity in a numeric coordinate column are errors too.
Text cells (any unicode, control characters and NUL in Parquet) come back
exactly; rows out = rows in, in order; outputs to XLSX never crash on
control characters and raise no library warning.

Everything here is invented test data.
"""

from __future__ import annotations

import datetime as dt
import math
import tempfile
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from tests.hostile.helpers import (
    assert_exit,
    examples,
    hostile_text,
    marked_text,
    number_defects,
    read_parquet_columns,
    run,
    same_cell,
    warning_problems,
)
from tests.hostile.sitefiles import ISLAND

LAT_OK = st.one_of(st.floats(*ISLAND["lat"]), st.floats(-90.0, 90.0))
LON_OK = st.one_of(st.floats(*ISLAND["lon"]), st.floats(-180.0, 180.0))
WHEN = st.sampled_from((dt.datetime(2024, 1, 5, 12, 0), dt.datetime(1999, 12, 31)))
DAY = st.sampled_from((dt.date(2024, 1, 5), dt.date(1970, 1, 1)))


def _xlsx_text(s: str) -> str:
    from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE

    return ILLEGAL_CHARACTERS_RE.sub("", s)


def _coord_good(ok):
    return st.one_of(ok, ok.map(lambda v: f"{v:.6f}"))


def _coord_bad():
    """A coordinate cell that is no coordinate."""
    return st.one_of(
        st.booleans(),
        WHEN,
        DAY,
        st.none(),
        marked_text(2).map(_xlsx_text),
        st.floats(1000.0, 1e9),
    )


def _elev_good(unit_in_name: bool):
    good = st.floats(0.0, 3000.0)
    if unit_in_name:
        return st.one_of(good, st.none())
    return st.one_of(good.map(lambda v: f"{v:.1f}m"), st.none())


def _elev_bad(unit_in_name: bool):
    typed = st.one_of(st.booleans(), WHEN, DAY)
    if unit_in_name:
        return typed
    return st.one_of(typed, st.floats(0.0, 3000.0))  # a bare number has no unit


@st.composite
def xlsx_rows(draw):
    """Rows with at most one bad cell each, so a bad cell that is read as good shows."""
    elev_name = draw(st.sampled_from(("elevation", "elevation_m")))
    in_name = elev_name == "elevation_m"
    n = draw(st.integers(1, 6))
    rows = []
    for _ in range(n):
        bad = draw(st.sampled_from((None, "lat", "lon", elev_name)))
        row = {
            "site_id": _xlsx_text(draw(marked_text())) or "S",
            "note": _xlsx_text(draw(hostile_text())),
            "lat": draw(_coord_bad() if bad == "lat" else _coord_good(LAT_OK)),
            "lon": draw(_coord_bad() if bad == "lon" else _coord_good(LON_OK)),
            elev_name: draw(_elev_bad(in_name) if bad == elev_name else _elev_good(in_name)),
            "_error": bad is not None,
        }
        rows.append(row)
    return elev_name, rows


def _write_xlsx(path: Path, elev_name: str, rows: list[dict]) -> list[str]:
    import openpyxl

    header = ["site_id", "note", "lat", "lon", elev_name]
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.append(header)
    for r, row in enumerate(rows, start=2):
        for c, col in enumerate(header, start=1):
            cell = sheet.cell(row=r, column=c)
            cell.value = row[col]
            if isinstance(row[col], str):
                cell.data_type = "s"  # text stays text, even when it starts with '='
    book.save(path)
    # what the file holds, as openpyxl reads it back (XML turns a CR LF in a cell into LF)
    sheet = openpyxl.load_workbook(path)[book.active.title]
    for r, row in enumerate(rows, start=2):
        for c, col in enumerate(header, start=1):
            if isinstance(row[col], str):
                row[col] = sheet.cell(row=r, column=c).value
    return header


@pytest.mark.issue8("2")
@examples(15)
@given(spec=xlsx_rows())
def test_xlsx_typed_cells(spec):
    # issue 8 section 2: booleans and dates in coordinate/elevation columns are error rows
    elev_name, rows = spec
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        header = _write_xlsx(folder / "sites.xlsx", elev_name, rows)
        result = run(["screen", folder / "sites.xlsx", "-o", folder / "r.parquet", "--quiet"])
        assert_exit(result, (0,), "screen xlsx")
        _, cols = read_parquet_columns(folder / "r.parquet")
    problems = _typed_problems(header, rows, cols) + warning_problems(result, "screen xlsx")
    assert not problems, "\n".join(problems)


def _typed_problems(header, rows, cols) -> list[str]:
    status = cols["status"]
    if len(status) != len(rows):
        return [f"rows out {len(status)} != rows in {len(rows)}"]
    problems = number_defects(cols, status)
    for i, row in enumerate(rows):
        if row["_error"] and status[i] != "error":
            cells = {c: row[c] for c in header}
            problems.append(f"row {i}: status {status[i]!r}, expected 'error' for {cells!r}")
        if not row["_error"] and status[i] == "error":
            problems.append(f"row {i}: a good row is 'error': {cols['message'][i]!r}")
        for col in ("site_id", "note"):
            got = cols[col][i]
            if not same_cell(row[col], got):
                problems.append(f"row {i}: {col} wrote {row[col]!r}, got {got!r}")
    return problems


@st.composite
def parquet_frames(draw):
    import numpy as np
    import pandas as pd

    n = draw(st.integers(1, 6))
    kind = draw(st.sampled_from(("float", "text", "bool", "datetime", "int")))
    lat, lon, bad = [], [], []
    for _ in range(n):
        a, o = draw(LAT_OK), draw(LON_OK)
        odd = draw(st.sampled_from((None, "nan", "inf", "range", None, None)))
        if kind == "float" and odd == "nan":
            a = math.nan
        elif kind == "float" and odd == "inf":
            o = -math.inf
        elif kind == "float" and odd == "range":
            a = 91.0 + abs(a)
        lat.append(a)
        lon.append(o)
        bad.append(kind in ("bool", "datetime") or (kind == "float" and odd is not None))
    if kind == "text":
        junk = draw(st.lists(st.booleans(), min_size=n, max_size=n))
        lat = [draw(marked_text(2)) if j else f"{a:.6f}" for a, j in zip(lat, junk, strict=True)]
        lon = [f"{o:.6f}" for o in lon]
        bad = junk
    elif kind == "bool":
        lat = draw(st.lists(st.booleans(), min_size=n, max_size=n))
        lon = draw(st.lists(st.booleans(), min_size=n, max_size=n))
    elif kind == "datetime":
        lat = pd.to_datetime([draw(WHEN) for _ in range(n)])
        lon = pd.to_datetime([draw(WHEN) for _ in range(n)])
    elif kind == "int":
        lat = np.array([int(a) for a in lat], dtype="int64")
        lon = np.array([int(o) for o in lon], dtype="int64")
    ids = draw(st.lists(st.one_of(marked_text(), hostile_text(), st.none()), min_size=n,
                        max_size=n))  # fmt: skip
    notes = draw(st.lists(st.one_of(hostile_text(), st.none()), min_size=n, max_size=n))
    frame = pd.DataFrame(
        {
            "site_id": pd.array(ids, dtype=object),
            "note": pd.array(notes, dtype=object),
            "lat": lat,
            "lon": lon,
        }
    )
    return frame, bad


@pytest.mark.issue8("2")
@examples(15)
@given(spec=parquet_frames())
def test_parquet_typed_columns(spec):
    # issue 8 section 2: typed coordinate columns, any text (NUL, control characters) kept;
    # XLSX and GPKG outputs of such text are written whole, with every row
    frame, bad = spec
    rows = [
        {"site_id": s, "note": t, "_error": b}
        for s, t, b in zip(frame["site_id"], frame["note"], bad, strict=True)
    ]
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        frame.to_parquet(folder / "sites.parquet", index=False)
        result = run(["screen", folder / "sites.parquet", "-o", folder / "r.parquet", "--quiet"])
        assert_exit(result, (0,), "screen parquet")
        _, cols = read_parquet_columns(folder / "r.parquet")
        xlsx = run(["screen", folder / "sites.parquet", "-o", folder / "r.xlsx", "--quiet"])
        assert_exit(xlsx, (0,), "screen parquet -> xlsx")
        problems = []
        problems += warning_problems(result, "screen parquet") + warning_problems(xlsx, "xlsx")
        problems += _xlsx_count(folder / "r.xlsx", len(frame))
        gpkg = run(["screen", folder / "sites.parquet", "-o", folder / "r.gpkg", "--quiet"])
        assert_exit(gpkg, (0,), "screen parquet -> gpkg")
        problems += warning_problems(gpkg, "gpkg") + _gpkg_count(folder / "r.gpkg", len(frame))
    problems += _typed_problems(["site_id", "note", "lat", "lon"], rows, cols)
    assert not problems, "\n".join(problems)


def _gpkg_count(path: Path, n: int) -> list[str]:
    import pyogrio

    got = len(pyogrio.read_dataframe(path, read_geometry=False))
    return [] if got == n else [f"GPKG output: {got} rows for {n}"]


def _xlsx_count(path: Path, n: int) -> list[str]:
    import openpyxl

    book = openpyxl.load_workbook(path, read_only=True)
    got = sum(1 for _ in book["results"].iter_rows(min_row=2))
    book.close()
    return [] if got == n else [f"XLSX output: {got} rows for {n}"]


# --------------------------------------------------------------------------- reproducers


@pytest.mark.issue8("2")
@pytest.mark.parametrize(
    "lat",
    [pytest.param(True, id="bool"), pytest.param(dt.datetime(2024, 1, 5), id="datetime"),
     pytest.param(dt.date(2024, 1, 5), id="date")],
)  # fmt: skip
def test_bool_or_date_coordinate_in_xlsx_is_error(tmp_path, lat):
    # issue 8 section 2: a boolean or date cell in a coordinate column is an error row
    rows = [
        {"site_id": "A", "note": "x", "lat": lat, "lon": -140.05, "elevation": "100m"},
        {"site_id": "B", "note": "y", "lat": 47.52, "lon": -140.05, "elevation": "100m"},
    ]
    _write_xlsx(tmp_path / "s.xlsx", "elevation", rows)
    result = run(["screen", tmp_path / "s.xlsx", "-o", tmp_path / "r.parquet", "--quiet"])
    assert_exit(result, (0,), "xlsx")
    _, cols = read_parquet_columns(tmp_path / "r.parquet")
    assert cols["status"][0] == "error"
    assert cols["status"][1] != "error"


@pytest.mark.issue8("2")
def test_bool_elevation_in_xlsx_is_error(tmp_path):
    # issue 8 section 2: a boolean in an elevation column is an error row, not 1 ft
    rows = [{"site_id": "A", "note": "x", "lat": 47.52, "lon": -140.05, "elevation_m": True}]
    _write_xlsx(tmp_path / "s.xlsx", "elevation_m", rows)
    result = run(["screen", tmp_path / "s.xlsx", "-o", tmp_path / "r.parquet", "--quiet"])
    assert_exit(result, (0,), "xlsx")
    assert read_parquet_columns(tmp_path / "r.parquet")[1]["status"] == ["error"]


@pytest.mark.issue8("2")
def test_control_characters_and_long_cells_to_xlsx(tmp_path):
    # issue 8 section 2: NUL and control characters are written (stripped or escaped,
    # said in the message), and a cell over the XLSX limit (32,767 characters) is cut
    import openpyxl
    import pandas as pd

    frame = pd.DataFrame(
        {
            "site_id": ["A\x00B", "C\x1bD", "E", "F"],
            "note": ["\x01\x02\x03", "ok", "x" * 40000, "plain"],
            "lat": [47.52] * 4,
            "lon": [-140.05] * 4,
        }
    )
    frame.to_parquet(tmp_path / "s.parquet", index=False)
    result = run(["screen", tmp_path / "s.parquet", "-o", tmp_path / "r.xlsx", "--quiet"])
    assert_exit(result, (0,), "xlsx output")
    assert not warning_problems(result, "xlsx output")
    book = openpyxl.load_workbook(tmp_path / "r.xlsx", read_only=True)
    rows = list(book["results"].iter_rows(values_only=True))
    book.close()
    header = list(rows[0])
    assert len(rows) == 5
    assert len(rows[3][header.index("note")]) <= 32767
    message = [r[header.index("message")] or "" for r in rows[1:]]
    flags = [r[header.index("flags")] or "" for r in rows[1:]]
    # rows A, C, E and F differ only in their text: A and C say what was changed, E is flagged
    assert message[0] != message[3] and message[1] != message[3], message
    assert flags[2] != flags[3], flags
