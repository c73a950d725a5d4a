"""CSV site files read record by record: no row lost, merged or altered.

Every cell is read as the text written in the file: ``NA``, ``null``, ``N/A``,
``02134`` and empty cells stay text, and no column's type is guessed.  A CSV
record is one line, or, when a cell is quoted and holds line breaks, several
physical lines; such a record is kept and reported (its line range), so that
a stray quote that swallowed rows is visible at once.  Problems of one record
never refuse the file; they make that record an error row:

* a byte that is not UTF-8 (the cells keep it visible as ``\\xNN``),
* more or fewer cells than the header has (an unquoted comma, a missing one),
* a quote where RFC 4180 allows none (inside an unquoted cell, or text after
  a closing quote), or a quote that is opened and never closed; the lines after
  such a quote are read as rows of their own.

Only a file that has no header row of column names (empty, binary, not UTF-8
in its first line, repeated column names) is refused as a whole.

The common clean file goes through Arrow's multi-threaded reader (a few
vectorised checks decide that it is clean); the record-by-record reader runs
only when one of those checks finds something to look at.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from engine.errors import InputError

#: a quoted cell may span at most this many physical lines; a quote left open
#: longer is taken for a stray quote
MAX_RECORD_LINES = 1000
_BOM = b"\xef\xbb\xbf"
_QUOTED = r'"[^"]*(?:""[^"]*)*"'
_FIELD = rf'(?:{_QUOTED}|[^,"\r\n]*)'
_FIELD_RE = re.compile(_FIELD)
_RECORD_RE = re.compile(rf"{_FIELD}(?:,{_FIELD})*")
_OPEN_RE = re.compile(rf'(?:{_FIELD},)*"[^"]*(?:""[^"]*)*')
_NOT_A_TABLE = "a CSV table: a header row of column names, then one row per site (UTF-8)"


@dataclass
class CsvRecords:
    """The records of a CSV file, with where each came from and what was wrong.

    Attributes
    ----------
    frame : pandas.DataFrame
        One row per record, every cell as text (missing only where an error row
        had fewer cells than the header).
    errors : dict
        Record index -> why the record is an error row (names its line).
    multiline : dict
        Record index -> (first, last) physical line [1-based] of records whose
        quoted cells hold line breaks.
    info : dict
        ``format``, ``lines`` (physical lines), ``header_line``, ``records``,
        ``blank_lines``, ``multiline_records``, ``records_with_read_errors``.
    """

    frame: pd.DataFrame
    errors: dict = field(default_factory=dict)
    multiline: dict = field(default_factory=dict)
    info: dict = field(default_factory=dict)


def _not_a_table(path, why: str) -> InputError:
    return InputError("sites", f"{str(path)!r} is not a readable csv table ({why})", _NOT_A_TABLE)


def _body(line: bytes) -> bytes:
    if line.endswith(b"\r\n"):
        return line[:-2]
    if line.endswith((b"\n", b"\r")):
        return line[:-1]
    return line


def _decode(raw: bytes) -> tuple[str, str]:
    """Text of a record and, if some byte is not UTF-8, what it was (else "")."""
    try:
        return raw.decode("utf-8"), ""
    except UnicodeDecodeError as exc:
        text = raw.decode("utf-8", "backslashreplace")
        return text, f"byte 0x{raw[exc.start]:02x} is not UTF-8 (kept as \\x{raw[exc.start]:02x})"


def _fields(text: str) -> list[str]:
    """The cells of a record that :data:`_RECORD_RE` accepts, unquoted."""
    out, pos, end = [], 0, len(text)
    while True:
        m = _FIELD_RE.match(text, pos)
        cell = m.group(0)
        out.append(cell[1:-1].replace('""', '"') if cell.startswith('"') else cell)
        pos = m.end()
        if pos >= end:
            return out
        pos += 1  # the comma


def _split(text: str) -> tuple[str, list[str] | None]:
    """``("ok", cells)``, ``("open", None)`` (a quoted cell goes on) or ``("bad", None)``."""
    if '"' not in text:
        return "ok", text.split(",")
    if _RECORD_RE.fullmatch(text):
        return "ok", _fields(text)
    if _OPEN_RE.fullmatch(text):
        return "open", None
    return "bad", None


def _lenient(text: str) -> list[str]:
    """Cells of a malformed record as Python's csv module reads them (for error rows)."""
    import csv

    try:
        return next(csv.reader([text]), [])
    except csv.Error:
        return text.split(",")


def _shown(text: str, limit: int = 160) -> str:
    return repr(text if len(text) <= limit else text[:limit] + "...")


def _lines(first: int, last: int) -> str:
    return f"line {first}" if first == last else f"lines {first}-{last}"


def read_csv_records(path) -> CsvRecords:
    """Read a CSV site file into text cells, one row per record (see the module notes).

    Parameters
    ----------
    path : str or Path
        The CSV file (UTF-8, with or without a byte-order mark).

    Returns
    -------
    CsvRecords
    """
    with open(path, "rb") as fh:
        data = fh.read()
    if data.startswith(_BOM):
        data = data[len(_BOM) :]
    if not data.strip(b"\r\n"):
        raise _not_a_table(path, "the file is empty")
    fast = _read_fast(path, data)
    if fast is not None:
        return fast
    return _read_careful(path, data)


def _header(path, text_bytes: bytes, line_no: int) -> list[str]:
    if b"\x00" in text_bytes:
        raise _not_a_table(path, f"line {line_no}, the header, holds NUL bytes: a binary file?")
    text, bad = _decode(text_bytes)
    if bad:
        raise _not_a_table(path, f"line {line_no}, the header: {bad}")
    state, names = _split(text)
    if state != "ok":
        raise _not_a_table(
            path, f"line {line_no}, the header, has a misplaced quote: {_shown(text)}"
        )
    seen: dict[str, int] = {}
    for name in names:
        seen[name] = seen.get(name, 0) + 1
    twice = [n for n, c in seen.items() if c > 1]
    if twice:
        raise InputError(
            "sites",
            f"{str(path)!r}: the header names column(s) {', '.join(map(repr, twice))} more than once",
            "a header row whose column names are all different",
        )
    return names


def _frame(names: list[str], columns: list) -> pd.DataFrame:
    import pyarrow as pa

    table = pa.table(
        {f"c{k}": columns[k] for k in range(len(names))},
    )
    frame = table.to_pandas()
    frame.columns = names
    return frame


def _read_fast(path, data: bytes) -> CsvRecords | None:
    """Arrow's reader for a file that the vectorised checks find clean; None otherwise."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    if data.count(b"\r") != data.count(b"\r\n"):  # bare carriage returns end lines too
        return None
    first_end = data.find(b"\n")
    first = data if first_end < 0 else data[:first_end]
    if not _body(first + b"\n").strip():
        return None  # blank lines before the header
    if b'"' in data and not _quotes_clean(data):
        return None
    names = _header(path, _body(first + b"\n"), 1)
    keys = [f"c{k}" for k in range(len(names))]
    invalid = []

    def skip(row):
        invalid.append(row.number)
        return "skip"

    try:
        table = pcsv.read_csv(
            pa.py_buffer(data),
            read_options=pcsv.ReadOptions(column_names=keys, skip_rows=1),
            parse_options=pcsv.ParseOptions(newlines_in_values=False, invalid_row_handler=skip),
            convert_options=pcsv.ConvertOptions(
                column_types={k: pa.large_string() for k in keys},
                strings_can_be_null=False,
                quoted_strings_can_be_null=False,
                null_values=[],
            ),
        )
    except (pa.ArrowInvalid, pa.ArrowTypeError):  # e.g. a byte that is not UTF-8
        return None
    if invalid:
        return None
    frame = table.to_pandas()
    frame.columns = names
    lines = data.count(b"\n") + (0 if data.endswith(b"\n") else 1)
    records = len(frame)
    info = {
        "format": "csv",
        "lines": lines,
        "header_line": 1,
        "records": records,
        "blank_lines": lines - 1 - records,
        "multiline_records": 0,
        "records_with_read_errors": 0,
    }
    return CsvRecords(frame=frame, info=info)


def _quotes_clean(data: bytes) -> bool:
    """True when every line's quotes are balanced and each sits where RFC 4180 allows it.

    A quote must open a cell (after a comma or at the start of a line), close one
    (before a comma or the end of a line), or be one of a doubled pair.  A line
    with an odd number of quotes (a cell with a line break, or a stray quote) or a
    quote elsewhere sends the file to the record-by-record reader.
    """
    arr = np.frombuffer(data, dtype=np.uint8)
    q = np.flatnonzero(arr == 34)
    if not len(q):
        return True
    newlines = np.flatnonzero(arr == 10)
    per_line = np.bincount(np.searchsorted(newlines, q), minlength=1)
    if (per_line % 2).any():
        return False
    prev = np.where(q > 0, arr[np.maximum(q - 1, 0)], 10)
    nxt = np.where(q < len(arr) - 1, arr[np.minimum(q + 1, len(arr) - 1)], 10)
    opens = (prev == 44) | (prev == 10)
    closes = (nxt == 44) | (nxt == 10) | (nxt == 13)
    doubled = (prev == 34) | (nxt == 34)
    return bool((opens | closes | doubled).all())


def _read_careful(path, data: bytes) -> CsvRecords:
    """Record by record: every physical line accounted for, every problem named."""
    lines = data.splitlines(keepends=True)
    n = len(lines)
    i = 0
    blank = 0
    while i < n and not _body(lines[i]).strip():
        blank += 1
        i += 1
    header_line = i + 1
    names = _header(path, _body(lines[i]), header_line)
    width = len(names)
    i += 1
    rows: list[list] = []
    errors: dict[int, str] = {}
    multiline: dict[int, tuple[int, int]] = {}

    def fit(cells: list) -> list:
        if len(cells) >= width:
            return cells[:width]
        return list(cells) + [None] * (width - len(cells))

    while i < n:
        body = _body(lines[i])
        if not body:
            blank += 1
            i += 1
            continue
        text, bad_byte = _decode(body)
        state, cells = _split(text)
        first = last = i + 1
        if state == "open":
            found = _close_quote(lines, i)
            if found is None:
                errors[len(rows)] = (
                    f"line {first}: a quote opens a cell that is never closed (a stray quote?); "
                    "the lines after it are read as rows of their own; the line: " + _shown(text)
                )
                rows.append(fit(_lenient(text)))
                i += 1
                continue
            j, text, bad_byte, cells = found
            last = j + 1
            multiline[len(rows)] = (first, last)
            i = j + 1
        else:
            i += 1
        where = _lines(first, last)
        if bad_byte:
            errors[len(rows)] = f"{where}: {bad_byte}; save the file as UTF-8"
            rows.append(fit(cells if cells is not None else _lenient(text)))
            continue
        if state == "bad":
            errors[len(rows)] = (
                f"{where}: a quote inside a cell or after a closing quote (a cell holding "
                "quotes must be quoted whole, with its quotes doubled); the line: " + _shown(text)
            )
            rows.append(fit(_lenient(text)))
            continue
        if len(cells) != width:
            hint = "an unquoted comma in a cell?" if len(cells) > width else "a missing comma?"
            errors[len(rows)] = (
                f"{where}: {len(cells)} cells where the header has {width} ({hint}); "
                f"the line: {_shown(text)}"
            )
            rows.append(fit(cells))
            continue
        rows.append(cells)
    import pyarrow as pa

    columns = [pa.array([r[k] for r in rows], type=pa.large_string()) for k in range(width)]
    frame = _frame(names, columns)
    info = {
        "format": "csv",
        "lines": n,
        "header_line": header_line,
        "records": len(rows),
        "blank_lines": blank,
        "multiline_records": len(multiline),
        "records_with_read_errors": len(errors),
    }
    return CsvRecords(frame=frame, errors=errors, multiline=multiline, info=info)


def _close_quote(lines: list[bytes], i: int):
    """The record that a quote left open on line ``i`` makes, if a later line closes it.

    Returns ``(j, text, bad_byte, cells)`` with ``j`` the last line of the record,
    or None when no line within :data:`MAX_RECORD_LINES` closes the quote into a
    well-formed record (the quote is then taken for a stray one).
    """
    joined = lines[i]
    n = len(lines)
    j = i
    while j + 1 < n and j + 1 - i < MAX_RECORD_LINES:
        j += 1
        line = lines[j]
        if line.count(b'"') % 2 == 0:  # quotes in pairs: the cell is still open
            joined += line
            continue
        text, bad_byte = _decode(_body(joined + line))
        state, cells = _split(text)
        if state == "ok":
            return j, text, bad_byte, cells
        if state == "bad":
            return None
        joined += line
    return None
