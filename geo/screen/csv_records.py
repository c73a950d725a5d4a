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
from collections.abc import Iterator
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from neve.engine.errors import InputError

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


def iter_csv_records(path, chunk_lines: int, columns: list | None = None) -> Iterator[CsvRecords]:
    """Read a CSV site file in chunks of about ``chunk_lines`` physical lines.

    The records come out in order, each exactly as :func:`read_csv_records`
    reads it from the whole file: a chunk is read by Arrow when its lines are
    clean, record by record otherwise, and a quoted cell opened near the end of
    a chunk may take lines from the next (up to :data:`MAX_RECORD_LINES`), as it
    would in the whole file.  ``errors`` and ``multiline`` are keyed by the record
    index within the chunk; line numbers in the messages are the file's.  Each
    chunk's ``info`` holds its ``lines``, ``records``, ``blank_lines``,
    ``multiline_records`` and ``records_with_read_errors``; the first chunk's also
    ``format`` and ``header_line`` (its ``lines`` count the header and the blank
    lines before it).  A file whose first line ends in a bare carriage return is
    read whole (one chunk).

    Parameters
    ----------
    path : str or Path
        The CSV file (UTF-8, with or without a byte-order mark).
    chunk_lines : int
        Physical lines per chunk [-], at least 1.
    columns : list of str, optional
        Only these columns in the frames (the records are the same; Arrow then
        converts only these).
    """
    chunk_lines = max(1, int(chunk_lines))
    with open(path, "rb") as fh:
        head = fh.read(1 << 16)
        rest = head.split(b"\n", 1)[0]
        if b"\r" in rest[:-1] or (b"\n" not in head and b"\r" in rest):
            yield read_csv_records(path)  # bare carriage returns: lines end elsewhere
            return
        fh.seek(0)
        blank = 0
        line = fh.readline()
        if line.startswith(_BOM):
            line = line[len(_BOM) :]
        while line and not _body(line).strip():
            blank += 1
            line = fh.readline()
        if not line:
            raise _not_a_table(
                path, "the file is empty" if not blank else "the file holds only blank lines"
            )
        header_line = blank + 1
        names = _header(path, _body(line), header_line)
        before = {"format": "csv", "header_line": header_line, "lines": header_line,
                  "blank_lines": blank}  # fmt: skip
        line_base = header_line
        pending = b""
        eof = False

        def fill(want: int) -> None:
            nonlocal pending, eof
            have = pending.count(b"\n")
            while have < want and not eof:
                more = fh.read(max(1 << 20, 64 * (want - have)))
                if not more:
                    eof = True
                    break
                have += more.count(b"\n")
                pending += more

        while True:
            fill(chunk_lines)
            if not pending:
                break
            arr = np.frombuffer(pending, dtype=np.uint8)
            newlines = np.flatnonzero(arr == 10)
            cut = (
                int(newlines[chunk_lines - 1]) + 1 if len(newlines) >= chunk_lines else len(pending)
            )
            block = pending[:cut]
            rec = _fast_block(block, names, columns)
            if rec is not None:
                used, n_lines = cut, rec.info["lines"]
            else:
                block_lines = _Lines(block).n
                fill(block.count(b"\n") + MAX_RECORD_LINES + 1)
                lines = _Lines(pending)
                rec = _careful_part(path, lines, 0, block_lines, names, line_base)
                n_lines = rec.info.pop("next_line")
                used = lines.end(n_lines)
                rec.info.update(lines=n_lines, multiline_records=len(rec.multiline),
                                records_with_read_errors=len(rec.errors))  # fmt: skip
                if columns is not None:
                    rec.frame = rec.frame[list(columns)]
            pending = pending[used:]
            line_base += n_lines
            if before:
                rec.info["lines"] += before["lines"]
                rec.info["blank_lines"] += before["blank_lines"]
                rec.info = {**before, **rec.info, "lines": rec.info["lines"]}
                before = {}
            yield rec
        if before:  # a header and nothing after it
            frame = pd.DataFrame({name: pd.Series([], dtype=object) for name in names})
            info = {**before, "records": 0, "multiline_records": 0, "records_with_read_errors": 0}
            yield CsvRecords(frame=frame, info=info)


def _fast_block(block: bytes, names: list, columns: list | None = None) -> CsvRecords | None:
    """Arrow's reader for lines (no header) that the vectorised checks find clean, or None."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    if block.count(b"\r") != block.count(b"\r\n"):
        return None
    if b'"' in block and not _quotes_clean(block):
        return None
    keys = [f"c{k}" for k in range(len(names))]
    invalid = []

    def skip(row):
        invalid.append(row.number)
        return "skip"

    try:
        table = pcsv.read_csv(
            pa.py_buffer(block),
            read_options=pcsv.ReadOptions(column_names=keys),
            parse_options=pcsv.ParseOptions(newlines_in_values=False, invalid_row_handler=skip),
            convert_options=pcsv.ConvertOptions(
                column_types={k: pa.large_string() for k in keys},
                strings_can_be_null=False,
                quoted_strings_can_be_null=False,
                null_values=[],
                include_columns=None
                if columns is None
                else [keys[names.index(c)] for c in columns],
            ),
        )
    except (pa.ArrowInvalid, pa.ArrowTypeError):  # e.g. a byte that is not UTF-8
        return None
    if invalid:
        return None
    frame = table.to_pandas()
    frame.columns = names if columns is None else list(columns)
    lines = block.count(b"\n") + (0 if block.endswith(b"\n") else 1)
    records = len(frame)
    info = {"lines": lines, "records": records, "blank_lines": lines - records,
            "multiline_records": 0, "records_with_read_errors": 0}  # fmt: skip
    return CsvRecords(frame=frame, info=info)


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


class _Lines:
    """The physical lines of a file (with their terminators), and which need a closer look.

    Lines end at LF, CRLF or a bare CR.  Unless the file has bare CRs, line
    boundaries and the per-line counts of commas, quotes and non-ASCII bytes are
    found with numpy, so that plain lines (the header's number of commas, no
    quote) can go to Arrow in bulk and only the others are looked at one by one.
    """

    def __init__(self, data: bytes):
        self.data = data
        self.counted = data.count(b"\r") == data.count(b"\r\n")
        if not self.counted:
            self._list = data.splitlines(keepends=True)
            self.n = len(self._list)
            return
        arr = np.frombuffer(data, dtype=np.uint8)
        newlines = np.flatnonzero(arr == 10)
        starts = np.r_[0, newlines + 1]
        stops = np.r_[newlines + 1, len(data)]
        if stops[-1] == starts[-1]:  # the file ends with a line break
            starts, stops = starts[:-1], stops[:-1]
        self.arr, self.starts, self.stops, self.n = arr, starts, stops, len(starts)
        body = stops - starts
        ends_lf = np.zeros(self.n, dtype=bool)
        ends_lf[: len(newlines)] = True
        body -= ends_lf
        crlf = ends_lf & (body > 0)
        crlf[crlf] = arr[stops[crlf] - 2] == 13
        self.body_len = body - crlf

        def per_line(mask):
            pos = np.flatnonzero(mask)
            return np.bincount(np.searchsorted(newlines, pos), minlength=self.n)[: self.n]

        self.commas = per_line(arr == 44)
        self.quotes = per_line(arr == 34)
        self.high = per_line(arr >= 0x80)

    def __getitem__(self, j: int) -> bytes:
        if not self.counted:
            return self._list[j]
        return self.data[self.starts[j] : self.stops[j]]

    def plain(self, width: int, first: int) -> np.ndarray:
        """Lines after ``first`` that need no closer look (None of them if uncounted)."""
        out = np.zeros(self.n, dtype=bool)
        if not self.counted:
            return out
        out[first + 1 :] = True
        out &= (self.commas == width - 1) & (self.quotes == 0) & (self.body_len > 0)
        return out

    def end(self, j: int) -> int:
        """Bytes taken by the first ``j`` lines."""
        if j <= 0:
            return 0
        if not self.counted:
            return sum(len(line) for line in self._list[:j])
        return int(self.stops[j - 1])

    def joined(self, which: np.ndarray) -> bytes:
        """The bytes of the lines in ``which``, each ending in a line break."""
        lengths = self.stops - self.starts
        mask = np.repeat(which, lengths)
        out = self.arr[mask].tobytes()
        if which[-1] and not self.data.endswith(b"\n"):
            out += b"\n"
        return out


def _read_careful(path, data: bytes) -> CsvRecords:
    """Every physical line accounted for, every problem named.

    Plain lines go to Arrow in bulk; the others (quotes, a wrong number of
    commas, blank lines, and non-ASCII lines when they do not decode together)
    are read one record at a time (:func:`_careful_part`).
    """
    lines = _Lines(data)
    n = lines.n
    i = 0
    blank = 0
    while i < n and not _body(lines[i]).strip():
        blank += 1
        i += 1
    if i == n:
        raise _not_a_table(path, "the file holds only blank lines")
    header_line = i + 1
    names = _header(path, _body(lines[i]), header_line)
    part = _careful_part(path, lines, i + 1, n, names, 0)
    info = {
        "format": "csv",
        "lines": n,
        "header_line": header_line,
        "records": part.info["records"],
        "blank_lines": blank + part.info["blank_lines"],
        "multiline_records": len(part.multiline),
        "records_with_read_errors": len(part.errors),
    }
    return CsvRecords(frame=part.frame, errors=part.errors, multiline=part.multiline, info=info)


def _careful_part(path, lines, first: int, stop: int, names: list, line_base: int) -> CsvRecords:
    """The records that start on lines ``first`` to ``stop - 1`` of ``lines`` (0-based).

    A quoted cell opened before ``stop`` may take lines after it (up to
    :data:`MAX_RECORD_LINES`): ``info["next_line"]`` is the first line not read.
    ``line_base``: physical lines of the file before ``lines`` (for the line numbers
    in the messages).  ``info`` holds ``records``, ``blank_lines`` and ``next_line``.
    """
    import pyarrow as pa
    import pyarrow.csv as pcsv

    width = len(names)
    plain = lines.plain(width, first - 1)
    plain[stop:] = False
    if plain.any() and (lines.high[plain] > 0).any():
        wide = plain & (lines.high > 0)
        try:
            lines.joined(wide).decode("utf-8")
        except UnicodeDecodeError:
            plain &= ~wide  # some of them hold bytes that are not UTF-8: look one by one
    rows: list[list] = []
    first_lines: list[int] = []
    errors: dict[int, str] = {}
    multiline: dict[int, tuple[int, int]] = {}
    blank = 0

    def fit(cells: list) -> list:
        if len(cells) >= width:
            return cells[:width]
        return list(cells) + [None] * (width - len(cells))

    def add(cells, first, problem=None, span=None):
        if problem:
            errors[len(rows)] = problem
        if span:
            multiline[len(rows)] = span
        rows.append(cells)
        first_lines.append(first)

    todo = np.flatnonzero(~plain[:stop])
    todo = todo[todo >= first]
    done_to = first - 1  # lines up to here are read (a quoted cell may take the following lines)
    for i in todo.tolist():
        if i <= done_to:
            continue
        done_to = i
        body = _body(lines[i])
        if not body:
            blank += 1
            continue
        text, bad_byte = _decode(body)
        state, cells = _split(text)
        first = last = line_base + i + 1
        if state == "open":
            found = _close_quote(lines, i)
            if found is None:
                add(
                    fit(_lenient(text)),
                    first,
                    f"line {first}: a quote opens a cell that is never closed (a stray quote?); "
                    "the lines after it are read as rows of their own; the line: " + _shown(text),
                )
                continue
            j, text, bad_byte, cells = found
            last = line_base + j + 1
            plain[i : j + 1] = False  # lines inside the quoted cell are not rows
            done_to = j
        where = _lines(first, last)
        span = (first, last) if last > first else None
        if bad_byte:
            problem = f"{where}: {bad_byte}; save the file as UTF-8"
            add(fit(cells if cells is not None else _lenient(text)), first, problem, span)
        elif state == "bad":
            problem = (
                f"{where}: a quote inside a cell or after a closing quote (a cell holding "
                "quotes must be quoted whole, with its quotes doubled); the line: " + _shown(text)
            )
            add(fit(_lenient(text)), first, problem, span)
        elif len(cells) != width:
            hint = "an unquoted comma in a cell?" if len(cells) > width else "a missing comma?"
            problem = (
                f"{where}: {len(cells)} cells where the header has {width} ({hint}); "
                f"the line: {_shown(text)}"
            )
            add(fit(cells), first, problem, span)
        else:
            add(cells, first, None, span)
    keys = [f"c{k}" for k in range(width)]
    careful = [pa.array([r[k] for r in rows], type=pa.large_string()) for k in range(width)]
    if plain.any():
        bulk = pcsv.read_csv(
            pa.py_buffer(lines.joined(plain)),
            read_options=pcsv.ReadOptions(column_names=keys),
            parse_options=pcsv.ParseOptions(newlines_in_values=False),
            convert_options=pcsv.ConvertOptions(
                column_types={k: pa.large_string() for k in keys},
                strings_can_be_null=False,
                quoted_strings_can_be_null=False,
                null_values=[],
            ),
        )
        plain_first = line_base + np.flatnonzero(plain) + 1
        order = np.argsort(
            np.r_[plain_first, np.asarray(first_lines, dtype=np.int64)], kind="stable"
        )
        columns = [
            _interleave(
                bulk.column(k).combine_chunks(), careful[k], plain_first, first_lines, order
            )
            for k in range(width)
        ]
        rank = np.empty(len(order), dtype=np.int64)
        rank[order] = np.arange(len(order))
        shift = len(plain_first)
        errors = {int(rank[shift + k]): v for k, v in errors.items()}
        multiline = {int(rank[shift + k]): v for k, v in multiline.items()}
        records = len(order)
    else:
        columns = careful
        records = len(rows)
    frame = pa.table(dict(zip(keys, columns, strict=True))).to_pandas()
    frame.columns = names
    info = {"records": records, "blank_lines": blank, "next_line": max(done_to + 1, stop)}
    return CsvRecords(frame=frame, errors=errors, multiline=multiline, info=info)


def _interleave(bulk, careful, bulk_first, careful_first, order):
    """The rows of both arrays in line order (few careful rows: slices, not a gather)."""
    import pyarrow as pa

    if len(careful) == 0:
        return bulk
    if len(careful) > 1000:
        return pa.concat_arrays([bulk, careful]).take(pa.array(order))
    cuts = np.searchsorted(bulk_first, np.asarray(careful_first), side="left").tolist()
    parts, start = [], 0
    for k, cut in enumerate(cuts):
        parts.append(bulk.slice(start, cut - start))
        parts.append(careful.slice(k, 1))
        start = cut
    parts.append(bulk.slice(start))
    return pa.concat_arrays(parts)


def _close_quote(lines, i: int):
    """The record that a quote left open on line ``i`` makes, if a later line closes it.

    Returns ``(j, text, bad_byte, cells)`` with ``j`` the last line of the record,
    or None when no line within :data:`MAX_RECORD_LINES` closes the quote into a
    well-formed record (the quote is then taken for a stray one).
    """
    joined = lines[i]
    n = lines.n
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
