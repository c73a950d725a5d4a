"""Hostile CSV site files through ``neve screen`` (issue 8, sections 2 and 5).

What "rows in" means: the records of the file as a strict RFC 4180 reader
(Python's csv module, ``strict=True``) finds them, line by line
(:func:`tests.hostile.helpers.csv_records`).  A quoted field may run over
several physical lines; such a record is one row, kept, and flagged
``multiline_field`` with its line range (issue 8 section 2).  A quote that
never closes into a well-formed record (a stray quote) makes its own line one
record, an ``error`` row, and the lines after it are records of their own: so
a stray quote never swallows rows, and a record that does span lines is
flagged.  A line with nothing on it is no record.  The summary gives physical
lines against records.

Invariants checked on every generated file (issue 8 section 5):

- exit 0 (a readable header: the file is a table, so it is never refused);
  never 1, never an uncaught exception;
- rows out = records in, in order; every input column comes back under its
  own name (or ``input_<name>`` when neve uses the name) with every cell as
  written (``""`` may come back empty; ``lat``/``lon`` may come back as the
  same number);
- a record over several lines carries ``multiline_field``; a record with
  more fields than the header, a byte that is not UTF-8, an odd quote, a
  missing or unreadable coordinate or a bad elevation is ``error``; a clean
  row is never ``error``;
- every number finite or the row ``error``; ``ok``/``provisional`` rows have
  a ground load within 0..2000 psf (README plausibility bound);
- the summary JSON parses strictly and counts the rows and the flag;
- the portfolio map never shows an evaluated template or input markup;
- the CSV and XLSX outputs hold the same number of rows, and no library
  warning reaches stderr.

Everything here is invented test data.
"""

from __future__ import annotations

import csv
import io
import re
import tempfile
from pathlib import Path

import pytest
from hypothesis import given

from tests.hostile.helpers import (
    assert_exit,
    csv_records,
    examples,
    has_surrogate,
    number_defects,
    page_defects,
    physical_lines,
    read_parquet_columns,
    row_flags,
    run,
    same_cell,
    shows_token,
    strict_json,
    warning_problems,
)
from tests.hostile.sitefiles import (
    CLEAN_KINDS,
    DAMAGE_IN_VALUES,
    SiteFile,
    csv_site_files,
)

#: leading characters a spreadsheet may take as a formula (issue 8 section 2)
FORMULA_LEAD = ("=", "+", "-", "@", "\t", "\r")


def expected_reading(sf: SiteFile) -> list[dict]:
    """What each record of the file requires of its output row (see the module docstring)."""
    records = csv_records(sf.data)
    assert records and records[0].fields == sf.header, "oracle: the header must read back"
    n_cols = len(sf.header)
    out = []
    for rec in records[1:]:
        row = sf.row_starting_at(rec.first_line)
        want = {"record": rec, "row": row, "multiline": rec.lines > 1, "error": False}
        if row is None:  # starts inside a row, after a stray quote upstream: no cell kept
            want.update(intact=[], clean=False, kind="fragment", site_id=None)
            want["error"] = (
                rec.malformed or len(rec.fields) > n_cols or any(map(has_surrogate, rec.fields))
            )
            out.append(want)
            continue
        merged = rec.last_line > row.first_line + row.lines - 1
        want["kind"], want["site_id"] = row.kind, row.values.get("site_id")
        if row.kind in CLEAN_KINDS or row.kind in DAMAGE_IN_VALUES:
            assert rec.fields == [row.values[c] for c in sf.header], "oracle: clean row misread"
            want["intact"] = list(range(n_cols))
        elif row.kind == "bad_byte":
            want["intact"] = [j for j in range(n_cols) if j != row.damage_col]
        else:  # the fields before the damaged one are as written
            want["intact"] = list(range(row.damage_col))
        if row.kind in DAMAGE_IN_VALUES or row.kind in ("bad_byte", "extra_comma", "mid_quote"):
            want["error"] = True
        if row.kind == "stray_quote" and not merged and rec.lines == 1:
            want["error"] = True  # an odd quote on a line of its own
        if rec.malformed or len(rec.fields) > n_cols or any(map(has_surrogate, rec.fields)):
            want["error"] = True
        if rec.malformed and row.lines > 1:
            want["intact"] = []  # one line of a broken multi-line row: its cells are a guess
        want["clean"] = row.kind in CLEAN_KINDS and not merged
        out.append(want)
    return out


def screen_problems(sf: SiteFile, folder: Path) -> list[str]:
    """Run ``neve screen`` on the file to Parquet, CSV and XLSX; list the broken invariants."""
    sites = folder / "sites.csv"
    sites.write_bytes(sf.data)
    wants = expected_reading(sf)
    result = run(
        ["screen", sites, "-o", folder / "r.parquet", "--map", folder / "p.html",
         "--summary-json", folder / "s.json", "--quiet"]
    )  # fmt: skip
    assert_exit(result, (0,), "neve screen (parquet)")
    problems: list[str] = warning_problems(result, "neve screen (parquet)")
    names, cols = read_parquet_columns(folder / "r.parquet")
    n_out = len(cols["status"])
    if n_out != len(wants):
        problems.append(f"rows out {n_out} != records in {len(wants)}")
    for j, h in enumerate(sf.header):
        if j >= len(names) or names[j] not in (h, f"input_{h}"):
            problems.append(f"input column {h!r} not at position {j} (got {names[j : j + 1]})")
            return problems
    status = cols["status"]
    flag_col = "flags"
    for i, want in enumerate(wants[:n_out]):
        rec = want["record"]
        where = f"record {i + 1} (lines {rec.first_line}-{rec.last_line}, {want['kind']})"
        flags = row_flags(cols[flag_col][i])
        if want["multiline"] and "multiline_field" not in flags:
            problems.append(f"{where}: spans {rec.lines} lines without multiline_field")
        if want["error"] and status[i] != "error":
            problems.append(f"{where}: status {status[i]!r}, expected 'error'")
        if want["clean"] and status[i] == "error":
            problems.append(f"{where}: a clean row is 'error': {cols['message'][i]!r}")
        for j in want["intact"]:
            if j >= len(rec.fields):
                continue
            h = sf.header[j]
            got = cols[names[j]][i]
            if not same_cell(rec.fields[j], got, numeric_ok=h in (sf.lat_name, sf.lon_name)):
                problems.append(f"{where}: column {h!r} wrote {rec.fields[j]!r}, got {got!r}")
    problems += number_defects(cols, status)
    summary = strict_json((folder / "s.json").read_text(encoding="utf-8"))
    if summary.get("rows") != n_out:
        problems.append(f"summary rows {summary.get('rows')!r} != {n_out}")
    n_multi = sum("multiline_field" in row_flags(f) for f in cols[flag_col])
    if summary.get("flags", {}).get("multiline_field", 0) != n_multi:
        problems.append(f"summary multiline_field {summary.get('flags')} != {n_multi} rows")
    info = summary.get("input") or {}  # physical lines against records (issue 8 s. 2)
    n_lines = len(physical_lines(sf.data))
    if (info.get("lines"), info.get("records")) != (n_lines, len(wants)):
        problems.append(f"summary input {info!r}: expected {n_lines} lines, "
                        f"{len(wants)} records")  # fmt: skip
    problems += page_defects(folder / "p.html")
    for i, want in enumerate(wants[:n_out]):
        sid = want["site_id"]
        if (
            want["clean"]
            and status[i] != "error"
            and sid
            and not shows_token(folder / "p.html", sid)
        ):
            problems.append(f"portfolio map does not show site_id {sid!r}")
    problems += _csv_output_problems(sf, folder, wants)
    problems += _xlsx_output_problems(folder, len(wants))
    return problems


def _csv_output_problems(sf: SiteFile, folder: Path, wants: list[dict]) -> list[str]:
    result = run(["screen", folder / "sites.csv", "-o", folder / "r.csv", "--quiet"])
    assert_exit(result, (0,), "neve screen (csv)")
    problems = []
    problems += warning_problems(result, "neve screen (csv)")
    text = (folder / "r.csv").read_bytes().decode("utf-8-sig")
    rows = list(csv.reader(io.StringIO(text, newline="")))
    if len(rows) - 1 != len(wants):
        problems.append(f"CSV output: {len(rows) - 1} records for {len(wants)} rows in")
        return problems
    for i, want in enumerate(wants):
        if not want["clean"]:
            continue
        for j, h in enumerate(sf.header):
            wrote, got = want["record"].fields[j], rows[i + 1][j]
            numeric = h in (sf.lat_name, sf.lon_name)
            if same_cell(wrote, got, numeric) or (numeric and _same_number(wrote, got)):
                continue
            if wrote.startswith(FORMULA_LEAD) and got in ("'" + wrote, "'" + wrote.lstrip()):
                continue  # neutralised for spreadsheets (issue 8 section 2)
            problems.append(f"CSV output row {i + 1}: column {h!r} wrote {wrote!r}, got {got!r}")
    return problems


def _same_number(a: str, b: str) -> bool:
    try:
        return float(a) == float(b.lstrip("'"))
    except ValueError:
        return False


def _xlsx_output_problems(folder: Path, n_in: int) -> list[str]:
    import openpyxl

    result = run(["screen", folder / "sites.csv", "-o", folder / "r.xlsx", "--quiet"])
    assert_exit(result, (0,), "neve screen (xlsx)")
    problems = []
    problems += warning_problems(result, "neve screen (xlsx)")
    book = openpyxl.load_workbook(folder / "r.xlsx", read_only=True)
    n_rows = sum(1 for _ in book["results"].iter_rows(min_row=2))
    book.close()
    if n_rows != n_in:
        problems.append(f"XLSX output: {n_rows} rows for {n_in} rows in")
    return problems


@pytest.mark.issue8("5")
@examples(25)
@given(sf=csv_site_files())
def test_screen_keeps_every_record_of_a_hostile_csv(sf):
    # issue 8 section 5 invariants (module docstring); records counted per RFC 4180
    with tempfile.TemporaryDirectory() as tmp:
        problems = screen_problems(sf, Path(tmp))
    assert not problems, "\n".join(problems) + f"\nfile: {sf.data!r}"


# --------------------------------------------------------------------------- reproducers


def _screen_csv(tmp_path: Path, text: bytes):
    sites = tmp_path / "sites.csv"
    sites.write_bytes(text)
    result = run(["screen", sites, "-o", tmp_path / "r.parquet", "--quiet",
                  "--summary-json", tmp_path / "s.json"])  # fmt: skip
    return result


def _rows(tmp_path: Path) -> dict[str, list]:
    return read_parquet_columns(tmp_path / "r.parquet")[1]


@pytest.mark.issue8("2")
def test_stray_quote_does_not_swallow_the_rows_after_it(tmp_path):
    # issue 8 section 2 reproducer: a stray quote, then more rows (one of them quoted).
    # Read strictly (RFC 4180), the quote opened in row A closes in row C into text that
    # is no record; so line 2 is an error row and rows B, C, D are read as written.
    data = (
        b"site_id,address,lat,lon\n"
        b'A,"Bob,47.52,-140.05\n'
        b"B,Carl,47.53,-140.06\n"
        b'C,"Dan",47.54,-140.07\n'
        b"D,x,47.55,-140.08\n"
    )
    assert [(r.fields[0], r.malformed) for r in csv_records(data)[1:]] == [
        ("A", True), ("B", False), ("C", False), ("D", False)
    ]  # fmt: skip
    result = _screen_csv(tmp_path, data)
    assert_exit(result, (0,), "stray quote")
    rows = _rows(tmp_path)
    assert rows["site_id"] == ["A", "B", "C", "D"]
    assert rows["status"][0] == "error"
    assert re.search(r"\bline 2\b", rows["message"][0]), rows["message"][0]
    assert rows["address"][1:] == ["Carl", "Dan", "x"]
    for got, wrote in zip(rows["lat"][1:], ("47.53", "47.54", "47.55"), strict=True):
        assert same_cell(wrote, got, numeric_ok=True)
    assert all(s != "error" for s in rows["status"][1:])
    summary = strict_json((tmp_path / "s.json").read_text(encoding="utf-8"))
    assert summary["rows"] == 4
    assert (summary["input"]["lines"], summary["input"]["records"]) == (5, 4)


@pytest.mark.issue8("2")
def test_stray_quote_closed_later_is_one_flagged_record(tmp_path):
    # issue 8 section 2: a quote that a later line closes into a well-formed record makes
    # one record over both lines: kept, flagged multiline_field with its line range, and
    # the summary shows 3 lines for 1 record (and the header) (the swallowed row is visible at once)
    data = b'site_id,address,lat,lon\nA,"Bob,47.52,-140.05\nB,Carl",47.53,-140.06\n'
    assert [r.lines for r in csv_records(data)] == [1, 2]
    result = _screen_csv(tmp_path, data)
    assert_exit(result, (0,), "stray quote closed later")
    rows = _rows(tmp_path)
    assert rows["site_id"] == ["A"]
    assert rows["address"] == ["Bob,47.52,-140.05\nB,Carl"]
    assert "multiline_field" in row_flags(rows["flags"][0])
    assert re.search(r"\b2\b.*\b3\b", rows["message"][0]), "the line range 2-3 in the message"
    summary = strict_json((tmp_path / "s.json").read_text(encoding="utf-8"))
    assert summary["flags"].get("multiline_field") == 1
    assert (summary["input"]["lines"], summary["input"]["records"]) == (3, 1)


@pytest.mark.issue8("2")
def test_stray_quote_to_end_of_file_is_an_error_row_not_a_refusal(tmp_path):
    # issue 8 section 2: an odd quote marks that row error; it does not refuse the file
    data = b'site_id,address,lat,lon\nA,x,47.50,-140.10\nB,"Bob,47.52,-140.05\n'
    result = _screen_csv(tmp_path, data)
    assert_exit(result, (0,), "stray quote at the end")
    rows = _rows(tmp_path)
    assert rows["site_id"] == ["A", "B"]
    assert rows["status"][0] != "error"
    assert rows["status"][1] == "error"


@pytest.mark.issue8("2")
def test_legitimate_multiline_address_is_kept_and_flagged(tmp_path):
    # issue 8 section 2: a quoted field may span lines; kept, flagged multiline_field
    data = b'site_id,address,lat,lon\nA,"1 Quay Rd\nPort Hallin",47.50,-140.10\nB,x,47.51,-140.11\n'
    result = _screen_csv(tmp_path, data)
    assert_exit(result, (0,), "multiline address")
    rows = _rows(tmp_path)
    assert rows["site_id"] == ["A", "B"]
    assert rows["address"][0] == "1 Quay Rd\nPort Hallin"
    assert "multiline_field" in row_flags(rows["flags"][0])
    assert rows["status"][0] != "error"


@pytest.mark.issue8("2")
@pytest.mark.parametrize(
    "bad_line",
    [
        pytest.param(b"B,Bo\xffb,47.52,-140.05", id="byte-not-utf8"),
        pytest.param(b"B,Bob,Smith,47.52,-140.05", id="unquoted-extra-comma"),
        pytest.param(b'B,Bo"b,47.52,-140.05', id="odd-quote-mid-field"),
    ],
)
def test_one_damaged_row_is_error_the_others_untouched(tmp_path, bad_line):
    # issue 8 section 2: the damaged row is error; the file is not refused; others intact
    data = b"site_id,address,lat,lon\nA,x,47.50,-140.10\n" + bad_line + b"\nC,y,47.51,-140.11\n"
    result = _screen_csv(tmp_path, data)
    assert_exit(result, (0,), bad_line.decode("utf-8", "replace"))
    rows = _rows(tmp_path)
    assert rows["site_id"] == ["A", "B", "C"]
    assert rows["status"][1] == "error"
    assert rows["status"][0] != "error" and rows["status"][2] != "error"
    assert rows["address"][0] == "x" and rows["address"][2] == "y"
    assert same_cell("47.51", rows["lat"][2], numeric_ok=True)


@pytest.mark.issue8("2")
def test_blank_lines_are_not_rows(tmp_path):
    # RFC 4180 reading (common practice): an empty line holds no record
    data = b"site_id,lat,lon\n\nA,47.50,-140.10\n\n\nB,47.51,-140.11\n\n"
    result = _screen_csv(tmp_path, data)
    assert_exit(result, (0,), "blank lines")
    assert _rows(tmp_path)["site_id"] == ["A", "B"]


@pytest.mark.issue8("2")
def test_text_columns_come_back_exactly(tmp_path):
    # issue 8 section 2: NA, null, None, N/A, 02134 and a 20-digit id stay text
    cells = ["NA", "null", "None", "N/A", "02134", "12345678901234567891", "", " padded ", "nan"]
    lines = ["site_id,ref,lat,lon"]
    lines += [f"S{i},{c},47.5{i},-140.1{i}" for i, c in enumerate(cells)]
    result = _screen_csv(tmp_path, ("\n".join(lines) + "\n").encode())
    assert_exit(result, (0,), "text cells")
    rows = _rows(tmp_path)
    for wrote, got in zip(cells, rows["ref"], strict=True):
        assert same_cell(wrote, got), f"wrote {wrote!r}, got {got!r}"


@pytest.mark.issue8("2")
def test_a_file_that_is_not_a_table_is_refused(tmp_path):
    # issue 8 section 2: a file that is not a table at all still gets exit 2
    result = _screen_csv(tmp_path, b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00")
    assert_exit(result, (2,), "binary file")
    assert not (tmp_path / "r.parquet").exists()


@pytest.mark.issue8("2")
def test_neutralised_csv_output_cells(tmp_path):
    # issue 8 section 2: cells starting with = + - @ are neutralised in CSV output
    data = b'site_id,note,lat,lon\n"=HYPERLINK(""x"")",@SUM(A1),47.50,-140.10\n'
    (tmp_path / "sites.csv").write_bytes(data)
    result = run(["screen", tmp_path / "sites.csv", "-o", tmp_path / "r.csv", "--quiet"])
    assert_exit(result, (0,), "formula cells")
    text = (tmp_path / "r.csv").read_bytes().decode("utf-8-sig")
    rows = list(csv.reader(io.StringIO(text, newline="")))
    header, first = rows[0], rows[1]
    for col in ("site_id", "note"):
        cell = first[header.index(col)]
        assert not cell.startswith(FORMULA_LEAD), f"{col}: {cell!r} would run as a formula"
