"""No row lost, merged or altered (issue 8, part 2), through ``neve screen``.

CSV syntax follows RFC 4180, sec. 2 (a record per line; a cell holding a
comma, a quote or a line break is quoted whole; a quote inside such a cell is
doubled): "RFC 4180" beside a check names that rule.  The spreadsheet formula
defence (a leading ``'`` before a cell starting with ``=``, ``+``, ``-``, ``@``,
tab or carriage return) is the OWASP "CSV Injection" guidance: "OWASP" beside a
check.  The XLSX cell limit of 32,767 characters and the characters XML 1.0
forbids are from ECMA-376 / the XML 1.0 spec ("from memory" for the limit, as
spreadsheet vendors document it).  Everything else is a regression guard of
neve's own contract.  Sites and layers are invented fixture data.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import threading
import time
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.errors import InputError

SW = ("44.5", "-109.5")  # inside the fixture grid's SW zone (fixed, 25 psf)
SE = ("44.5", "-108.5")  # SE zone (fixed, 40 psf)


def _run(*args):
    return CliRunner().invoke(main, ["screen", *map(str, args), "--quiet"])


def _csv(tmp_path, text: str | bytes, name: str = "sites.csv") -> Path:
    p = tmp_path / name
    p.write_bytes(text.encode("utf-8") if isinstance(text, str) else text)
    return p


def _text_back(path: Path) -> pd.DataFrame:
    """A CSV read back as the text it holds (no NA conversion, no type guessing)."""
    return pd.read_csv(path, dtype=str, keep_default_na=False, na_filter=False)


def _screen_csv(tmp_path, grid_layer, text, *extra, out_name="out.csv"):
    sites = _csv(tmp_path, text)
    out = tmp_path / out_name
    summary = tmp_path / "summary.json"
    r = _run(sites, "-o", out, "--layer", grid_layer, "--summary-json", summary, *extra)
    assert r.exit_code == 0, r.output
    return out, json.loads(summary.read_text(encoding="utf-8")), r


# --- CSV records: stray quotes, line breaks, bad bytes, extra commas -----------------


def test_stray_quote_loses_no_row_and_steals_no_coordinates(tmp_path, grid_layer):
    text = (
        "site_id,name,lat,lon\n"
        f'A,"Bob,{SW[0]},{SW[1]}\n'  # RFC 4180: a quote opened and never closed
        f"B,Carl,{SE[0]},{SE[1]}\n"
        f"C,Dan,{SW[0]},{SW[1]}\n"
    )
    out, summary, _ = _screen_csv(tmp_path, grid_layer, text)
    df = _text_back(out)
    assert df["site_id"].tolist() == ["A", "B", "C"]  # rows out = rows in, in order
    a, b, c = (df.iloc[k] for k in range(3))
    assert a["status"] == "error"
    assert "line 2" in a["message"] and "quote" in a["message"]
    assert (b["lat"], b["lon"]) == SE and float(b["site_lon"]) == pytest.approx(-108.5)
    assert b["pg_psf"] == "40" or float(b["pg_psf"]) == 40.0
    assert (c["lat"], c["lon"]) == SW and c["status"] == "ok"
    assert summary["input"]["lines"] == 4 and summary["input"]["records"] == 3
    assert summary["input"]["records_with_read_errors"] == 1


def test_quoted_line_break_is_kept_and_flagged_with_its_lines(tmp_path, grid_layer):
    text = (
        "site_id,address,lat,lon\r\n"
        f'A,"1 Ridge Rd\r\nUnit 4",{SW[0]},{SW[1]}\r\n'  # RFC 4180: a quoted cell may hold CRLF
        f"B,x,{SE[0]},{SE[1]}\r\n"
    )
    out, summary, r = _screen_csv(tmp_path, grid_layer, text, out_name="out.parquet")
    df = pd.read_parquet(out)
    assert df["site_id"].tolist() == ["A", "B"]
    assert df.loc[0, "address"] == "1 Ridge Rd\r\nUnit 4"  # the cell exactly as written
    assert "multiline_field" in df.loc[0, "flags"].split(";")
    assert "lines 2-3" in df.loc[0, "message"]
    assert df.loc[0, "status"] == "ok"  # flags never fail a row
    assert "multiline_field" not in df.loc[1, "flags"]
    info = summary["input"]
    assert (info["lines"], info["records"], info["multiline_records"]) == (4, 2, 1)
    assert summary["flags"]["multiline_field"] == 1
    assert "4 lines" in r.output and "2 records" in r.output


def test_a_quote_that_swallows_rows_is_visible_in_the_summary(tmp_path, grid_layer):
    # a stray quote on line 2 that a later quote closes: one record of three lines
    text = f'site_id,name,lat,lon\nA,"Bob,1,2\nB,Carl,3,4\nC,Dan",{SW[0]},{SW[1]}\n'
    out, summary, r = _screen_csv(tmp_path, grid_layer, text)
    df = _text_back(out)
    assert len(df) == 1 and "multiline_field" in df.loc[0, "flags"]
    assert "lines 2-4" in df.loc[0, "message"] and "stray quote" in df.loc[0, "message"]
    assert summary["input"]["lines"] == 4 and summary["input"]["records"] == 1
    assert "span several lines" in r.output


@pytest.mark.parametrize(
    "line,fragment",
    [
        (b"B\xff," + SW[0].encode() + b"," + SW[1].encode(), "not UTF-8"),
        (f"B,Bob,{SW[0]},{SW[1]}".encode(), "4 cells where the header has 3"),  # extra comma
        (f"B,{SW[0]}".encode(), "2 cells where the header has 3"),
        (f'B,Bo"b,{SW[1]}'.encode(), "quote inside a cell"),  # RFC 4180: quotes only whole
        (f'"B"x,{SW[0]},{SW[1]}'.encode(), "quote"),  # RFC 4180: text after a closing quote
    ],
)
def test_a_malformed_row_is_an_error_row_not_a_refused_file(tmp_path, grid_layer, line, fragment):
    text = (
        b"site_id,lat,lon\n"
        + f"A,{SW[0]},{SW[1]}\n".encode()
        + line
        + b"\n"
        + f"C,{SE[0]},{SE[1]}\n".encode()
    )
    out, summary, _ = _screen_csv(tmp_path, grid_layer, text)
    df = _text_back(out)
    assert len(df) == 3
    assert df.loc[0, "site_id"] == "A" and df.loc[2, "site_id"] == "C"
    assert df.loc[0, "status"] == "ok" and df.loc[2, "status"] != "error"
    assert df.loc[1, "status"] == "error"
    assert "line 3" in df.loc[1, "message"] and fragment in df.loc[1, "message"]
    assert df.loc[1, "site_id"].startswith("B")  # the row keeps what could be read of it
    assert summary["input"]["records_with_read_errors"] == 1


@pytest.mark.parametrize(
    "content,fragment",
    [
        (b"", "empty"),
        (b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR\x00\x00", "not a readable csv table"),
        (b"\xff\xfes\x00i\x00t\x00e\x00\n\x00", "not a readable csv table"),  # UTF-16
        (b"lat,lat,lon\n1,2,3\n", "more than once"),
    ],
)
def test_a_file_that_is_not_a_table_exits_2(tmp_path, grid_layer, content, fragment):
    sites = _csv(tmp_path, content)
    r = _run(sites, "-o", tmp_path / "o.csv", "--layer", grid_layer)
    assert r.exit_code == 2, r.output
    assert fragment in r.output
    assert not (tmp_path / "o.csv").exists()


# --- cells come back exactly as given ---------------------------------------------

AS_GIVEN = ["NA", "null", "None", "N/A", "02134", "12345678901234567891", "", "nan", " 7 "]


def _as_given_csv(tmp_path) -> Path:
    rows = "".join(
        f'S{k},"{v}",{SW[0]},{SW[1]}\n' if v != "" else f"S{k},,{SW[0]},{SW[1]}\n"
        for k, v in enumerate(AS_GIVEN)
    )
    return _csv(tmp_path, "site_id,code,lat,lon\n" + rows)


@pytest.mark.parametrize("suffix", [".csv", ".parquet", ".xlsx", ".gpkg"])
def test_csv_cells_come_back_as_written(tmp_path, grid_layer, suffix):
    sites = _as_given_csv(tmp_path)
    out = tmp_path / f"out{suffix}"
    r = _run(sites, "-o", out, "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    if suffix == ".csv":
        back = _text_back(out)["code"].tolist()
    elif suffix == ".parquet":
        back = pd.read_parquet(out)["code"].tolist()
    elif suffix == ".xlsx":
        import openpyxl

        ws = openpyxl.load_workbook(out, read_only=True)["results"]
        rows = list(ws.iter_rows(values_only=True))
        col = rows[0].index("code")
        back = ["" if row[col] is None else row[col] for row in rows[1:]]
    else:
        import pyogrio

        back = pyogrio.read_dataframe(out)["code"].tolist()
    assert back == AS_GIVEN
    if suffix == ".parquet":
        import pyarrow.parquet as pq

        assert str(pq.read_schema(out).field("code").type) in ("string", "large_string")


def test_csv_input_columns_are_all_text(tmp_path):
    from neve.geo.screen.read import read_sites

    frame, _ = read_sites(_as_given_csv(tmp_path))
    assert frame["code"].tolist() == AS_GIVEN
    assert frame["lat"].tolist() == [SW[0]] * len(AS_GIVEN)  # "44.5", not 44.5


def _typed_frame() -> pd.DataFrame:
    return pd.DataFrame(
        {
            "site_id": ["A", "B", "C"],
            "zip": pd.array([2134, None, 7], dtype="Int64"),
            "code": ["02134", "NA", None],
            "lat": [44.5, 44.5, 44.5],
            "lon": [-109.5, -109.5, -109.5],
        }
    )


def test_parquet_types_are_kept(tmp_path, grid_layer):
    import pyarrow.parquet as pq

    src = tmp_path / "sites.parquet"
    _typed_frame().to_parquet(src, index=False)
    out = tmp_path / "out.parquet"
    assert _run(src, "-o", out, "--layer", grid_layer).exit_code == 0
    schema = pq.read_schema(out)
    assert str(schema.field("zip").type) == "int64"  # an integer column with a gap stays integer
    back = pd.read_parquet(out)
    assert back["zip"].astype("Int64").tolist()[0] == 2134 and pd.isna(back["zip"][1])
    assert back["code"].tolist()[:2] == ["02134", "NA"] and pd.isna(back["code"][2])


def test_xlsx_cells_keep_their_types(tmp_path, grid_layer):
    import openpyxl

    src = tmp_path / "sites.xlsx"
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(["site_id", "zip", "code", "lat", "lon"])
    ws.append(["A", 2134, "02134", 44.5, -109.5])
    ws.append(["B", None, "NA", 44.5, -109.5])
    wb.save(src)
    out = tmp_path / "out.xlsx"
    assert _run(src, "-o", out, "--layer", grid_layer).exit_code == 0
    ws = openpyxl.load_workbook(out, read_only=True)["results"]
    rows = list(ws.iter_rows(values_only=True))
    head = rows[0]
    assert rows[1][head.index("zip")] == 2134 and rows[1][head.index("code")] == "02134"
    assert rows[2][head.index("zip")] is None and rows[2][head.index("code")] == "NA"


def _xlsx_with(tmp_path, header, rows) -> Path:
    import openpyxl

    src = tmp_path / "typed.xlsx"
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.append(header)
    for row in rows:
        ws.append(row)
    wb.save(src)
    return src


def test_boolean_and_date_cells_are_error_rows_not_numbers(tmp_path, grid_layer):
    import datetime

    src = _xlsx_with(
        tmp_path,
        ["site_id", "lat", "lon", "elevation_ft"],
        [
            ["ok", 44.5, -109.5, 1200],
            ["bool", True, -109.5, 1200],
            ["date", 44.5, datetime.datetime(2024, 1, 2), 1200],
            ["elev", 44.5, -109.5, False],
            ["elevdate", 44.5, -109.5, datetime.date(2020, 5, 1)],
        ],
    )
    out = tmp_path / "out.parquet"
    r = _run(src, "-o", out, "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    df = pd.read_parquet(out).set_index("site_id")
    assert df.loc["ok", "status"] == "ok"
    assert df.loc["bool", "status"] == "error" and "boolean" in df.loc["bool", "message"]
    assert df.loc["date", "status"] == "error" and "date" in df.loc["date", "message"]
    assert df.loc["elev", "status"] == "error" and "boolean" in df.loc["elev", "message"]
    assert df.loc["elevdate", "status"] == "error" and "date" in df.loc["elevdate", "message"]


def test_parquet_boolean_and_timestamp_columns_are_not_coordinates(tmp_path, grid_layer):
    src = tmp_path / "sites.parquet"
    pd.DataFrame(
        {"lat": [True, False], "lon": pd.to_datetime(["2024-01-01", "2024-01-02"])}
    ).to_parquet(src, index=False)
    out = tmp_path / "out.csv"
    assert _run(src, "-o", out, "--layer", grid_layer).exit_code == 0
    df = _text_back(out)
    assert df["status"].tolist() == ["error", "error"]
    assert all("boolean" in m for m in df["message"])


# --- contradictions ------------------------------------------------------------------


@pytest.mark.parametrize(
    "header,names",
    [
        ("site_id,lat,latitude,lon", ("lat", "latitude")),
        ("site_id,LAT,lat,lon", ("LAT", "lat")),
        ("site_id,lat,lon,Longitude", ("lon", "Longitude")),
        ("site_id,lat,lng,lon", ("lng", "lon")),
    ],
)
def test_two_columns_for_one_coordinate_exit_2(tmp_path, grid_layer, header, names):
    sites = _csv(tmp_path, header + "\nA,44.5,44.5,-109.5\n")
    r = _run(sites, "-o", tmp_path / "o.csv", "--layer", grid_layer)
    assert r.exit_code == 2, r.output
    assert all(repr(n) in r.output for n in names)
    assert not (tmp_path / "o.csv").exists()


def test_elevation_unit_contradicting_the_column_name_is_refused(tmp_path, grid_layer):
    # issue 8 section 3: an elevation_ft column whose cell says 450m is a contradiction,
    # refused with exit 2 (naming the column, the record and the cell); nothing written
    text = (
        "site_id,lat,lon,elevation_ft\n"
        f"ft,{SW[0]},{SW[1]},450ft\n"
        f"m,{SW[0]},{SW[1]},450m\n"  # the name says ft, the cell says m
    )
    sites = tmp_path / "s.csv"
    sites.write_text(text, encoding="utf-8")
    out = tmp_path / "o.csv"
    r = CliRunner().invoke(main, ["screen", str(sites), "-o", str(out), "--layer", grid_layer,
                                  "--quiet"])  # fmt: skip
    assert r.exit_code == 2, r.output
    assert "elevation_ft" in r.output and "'450m'" in r.output and "record 2" in r.output
    assert not out.exists()


def test_elevation_cells_agreeing_with_the_column_name_are_read(tmp_path, grid_layer):
    text = (
        "site_id,lat,lon,elevation_ft\n"
        f"ft,{SW[0]},{SW[1]},450ft\n"
        f"bare,{SW[0]},{SW[1]},450\n"
        f"feet,{SW[0]},{SW[1]},450 feet\n"
    )
    out, _, _ = _screen_csv(tmp_path, grid_layer, text)
    df = _text_back(out).set_index("site_id")
    for ok in ("ft", "bare", "feet"):
        assert df.loc[ok, "status"] != "error", df.loc[ok, "message"]
        assert float(df.loc[ok, "site_elevation_ft"]) == pytest.approx(450.0)


# --- outputs: spreadsheets, XLSX limits ----------------------------------------------

FORMULAS = ["=1+2", "+1+1", "-2+3", "@SUM(A1)", "\tx", '=HYPERLINK("http://x")']
NOT_FORMULAS = ["-140.05", "+3", "-1e5", "plain", "a=b"]


def _formula_sites(tmp_path) -> Path:
    cells = FORMULAS + NOT_FORMULAS
    rows = "".join(f'"{v.replace(chr(34), chr(34) * 2)}",{SW[0]},{SW[1]}\n' for v in cells)
    return _csv(tmp_path, "note,lat,lon\n" + rows)


def test_csv_output_neutralises_formulas_and_keeps_numbers(tmp_path, grid_layer):
    sites = _formula_sites(tmp_path)
    out, raw = tmp_path / "o.csv", tmp_path / "raw.csv"
    r = _run(sites, "-o", out, "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    df = _text_back(out)
    notes = df["note"].tolist()
    assert notes[: len(FORMULAS)] == ["'" + v for v in FORMULAS]  # OWASP: leading quote
    assert notes[len(FORMULAS) :] == NOT_FORMULAS  # numbers are not formulas
    assert all(float(v) == pytest.approx(-109.5) for v in df["site_lon"])  # still a number
    assert "--csv-raw" in r.output
    assert _run(sites, "-o", raw, "--layer", grid_layer, "--csv-raw").exit_code == 0
    assert _text_back(raw)["note"].tolist() == FORMULAS + NOT_FORMULAS


def test_csv_raw_is_for_csv_output_only(tmp_path, grid_layer):
    r = _run(_formula_sites(tmp_path), "-o", tmp_path / "o.parquet", "--layer", grid_layer,
             "--csv-raw")  # fmt: skip
    assert r.exit_code == 2 and "csv-raw" in r.output


def test_xlsx_output_stores_formula_text_as_text(tmp_path, grid_layer):
    import openpyxl

    out = tmp_path / "o.xlsx"
    assert _run(_formula_sites(tmp_path), "-o", out, "--layer", grid_layer).exit_code == 0
    ws = openpyxl.load_workbook(out)["results"]
    cells = [ws.cell(row=k + 2, column=1) for k in range(len(FORMULAS))]
    assert [c.value for c in cells] == FORMULAS  # as written, no quote added
    assert all(c.data_type == "s" for c in cells)  # text, never a live formula


def test_xlsx_output_with_control_characters_and_long_cells(tmp_path, grid_layer):
    import openpyxl

    long = "x" * 40_000
    frame = pd.DataFrame(
        {
            "site_id": ["nul", "bell", "long", "fine"],
            "note": ["a\x00b", "ring\x07", long, "tab\tand\nline"],
            "lat": [44.5] * 4,
            "lon": [-109.5] * 4,
        }
    )
    src = tmp_path / "sites.parquet"
    frame.to_parquet(src, index=False)
    out = tmp_path / "o.xlsx"
    summary = tmp_path / "s.json"
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no library warning either
        r = _run(src, "-o", out, "--layer", grid_layer, "--summary-json", summary)
    assert r.exit_code == 0, r.output
    assert "Warning" not in r.output
    ws = openpyxl.load_workbook(out, read_only=True)["results"]
    rows = list(ws.iter_rows(values_only=True))
    head = rows[0]
    note, flags, msg = (head.index(c) for c in ("note", "flags", "message"))
    by_id = {row[0]: row for row in rows[1:]}
    assert by_id["nul"][note] == "a\u2400b" and "cell_escaped" in by_id["nul"][flags]
    assert by_id["bell"][note] == "ring\u2407" and "note" in by_id["bell"][msg]
    assert len(by_id["long"][note]) == 32_767  # from memory: the XLSX cell limit
    assert "cell_truncated" in by_id["long"][flags] and "40,000" in by_id["long"][msg]
    assert by_id["fine"][note] == "tab\tand\nline"  # tab and line feed are allowed in XML 1.0
    assert "cell_" not in (by_id["fine"][flags] or "")
    counts = json.loads(summary.read_text(encoding="utf-8"))["flags"]
    assert counts["cell_escaped"] == 2 and counts["cell_truncated"] == 1


def test_gpkg_output_keeps_text_after_a_nul(tmp_path, grid_layer):
    import pyogrio

    src = tmp_path / "sites.parquet"
    pd.DataFrame({"note": ["a\x00b"], "lat": [44.5], "lon": [-109.5]}).to_parquet(src)
    out = tmp_path / "o.gpkg"
    assert _run(src, "-o", out, "--layer", grid_layer).exit_code == 0
    back = pyogrio.read_dataframe(out)
    assert back.loc[0, "note"] == "a\u2400b" and "cell_escaped" in back.loc[0, "flags"]


# --- output paths --------------------------------------------------------------------


def _sites(tmp_path) -> Path:
    return _csv(tmp_path, f"site_id,lat,lon\nA,{SW[0]},{SW[1]}\n")


def test_summary_json_on_the_output_is_refused_before_any_work(tmp_path, grid_layer):
    sites = _sites(tmp_path)
    out = tmp_path / "o.csv"
    r = _run(sites, "-o", out, "--layer", grid_layer, "--summary-json", out)
    assert r.exit_code == 2 and "summary-json" in r.output
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted(
        [sites.name, "grid.gpkg", "grid.gpkg.toml"]
    )


@pytest.mark.parametrize("other", ["--summary-json", "--map", "--geocode-cache"])
def test_any_two_outputs_on_one_path_are_refused(tmp_path, grid_layer, monkeypatch, other):
    sites = _sites(tmp_path)
    monkeypatch.chdir(tmp_path)
    (tmp_path / "sub").mkdir()
    os.symlink(tmp_path / "r.html", tmp_path / "link.html")
    # the same file under another spelling: relative, with "..", through a symlink
    first, second = Path("r.html"), tmp_path / "sub" / ".." / "link.html"
    if other == "--map":
        args = ["--map", first, "--summary-json", second]
    else:
        args = ["--map", first, other, second]
    r = _run(sites, "-o", tmp_path / "o.csv", "--layer", grid_layer, *args)
    assert r.exit_code == 2, r.output
    assert "also the" in r.output
    assert not (tmp_path / "o.csv").exists() and not (tmp_path / "r.html").exists()


def test_an_output_on_the_input_is_refused_even_with_overwrite(tmp_path, grid_layer):
    sites = _sites(tmp_path)
    before = sites.read_bytes()
    r = _run(sites, "-o", sites, "--layer", grid_layer, "--overwrite")
    assert r.exit_code == 2 and "input" in r.output
    assert sites.read_bytes() == before
    r = _run(sites, "-o", tmp_path / "o.csv", "--layer", grid_layer, "--summary-json",
             grid_layer, "--overwrite")  # fmt: skip
    assert r.exit_code == 2 and "layer" in r.output


# --- temporary names, killed runs, races ----------------------------------------------


def test_temporary_names_match_no_result_glob(tmp_path):
    from neve.geo.screen.outputs import write_results

    seen = {}

    def look(tmp):
        folder = tmp_path
        seen["globs"] = [
            sorted(str(p) for p in folder.glob(g))
            for g in ("*.csv", "o*.csv", "*.parquet", "*o.csv*")
        ]
        seen["tmp"] = tmp

    df = pd.DataFrame({"site_id": ["A"], "site_lat": [44.5], "site_lon": [-109.5]})
    write_results(df, tmp_path / "o.csv", _writer_hook=look)
    assert seen["globs"][:3] == [[], [], []]
    assert not seen["tmp"].parent.name.endswith((".csv", ".parquet", ".xlsx", ".gpkg"))
    assert seen["tmp"].parent.name.startswith(".o.csv.neve-")
    assert [p.name for p in tmp_path.iterdir()] == ["o.csv"]


def _dead_pid() -> int:
    p = subprocess.Popen([sys.executable, "-c", "pass"])
    p.wait()
    return p.pid


def test_stale_temporary_files_of_killed_runs_are_removed(tmp_path, grid_layer):
    from neve.maps.target import _host_tag

    host = _host_tag()
    dead = tmp_path / f".o.csv.neve-{host}-{_dead_pid()}-abc123.part"
    dead.mkdir()
    (dead / "o.csv").write_text("half", encoding="utf-8")
    dead_file = tmp_path / f".o.csv.neve-{host}-{_dead_pid()}-xyz.part-wal"
    dead_file.write_text("", encoding="utf-8")
    alive = tmp_path / f".o.csv.neve-{host}-{os.getppid()}-live.part"  # a process that runs
    alive.mkdir()
    far_old = tmp_path / ".o.csv.neve-00000000-1-old.part"  # another host, two days old
    far_old.mkdir()
    os.utime(far_old, (time.time() - 2 * 86400,) * 2)
    far_new = tmp_path / ".o.csv.neve-00000000-1-new.part"  # another host, fresh: kept
    far_new.mkdir()
    other = tmp_path / f".x.csv.neve-{host}-{_dead_pid()}-abc.part"  # another target: kept
    other.mkdir()
    mine = tmp_path / "o.csv.part"  # not neve's naming: kept
    mine.write_text("user file", encoding="utf-8")
    r = _run(_sites(tmp_path), "-o", tmp_path / "o.csv", "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    assert not dead.exists() and not dead_file.exists() and not far_old.exists()
    assert alive.exists() and far_new.exists() and other.exists() and mine.exists()


def test_a_sigkilled_write_is_cleaned_up_by_the_next_run(tmp_path, grid_layer):
    target = tmp_path / "o.csv"
    code = (
        "import os, signal, sys\n"
        "from neve.geo.screen.outputs import atomic_path\n"
        "with atomic_path(sys.argv[1]) as tmp:\n"
        "    tmp.write_text('half a table')\n"
        "    os.kill(os.getpid(), signal.SIGKILL)\n"
    )
    subprocess.run([sys.executable, "-c", code, str(target)], cwd=Path(__file__).parents[2])
    left = [p.name for p in tmp_path.iterdir() if p.name.startswith(".o.csv.neve-")]
    assert left, "the killed run should have left its temporary folder"
    assert not target.exists()
    r = _run(_sites(tmp_path), "-o", target, "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".o.csv.neve-")]


def test_an_output_that_appears_during_the_run_is_not_replaced(tmp_path):
    from neve.geo.screen.outputs import write_results

    target = tmp_path / "o.csv"

    def other_run(tmp):
        target.write_text("the other run's results", encoding="utf-8")

    df = pd.DataFrame({"site_id": ["A"], "site_lat": [44.5], "site_lon": [-109.5]})
    with pytest.raises(InputError, match="appeared"):
        write_results(df, target, _writer_hook=other_run)
    assert target.read_text(encoding="utf-8") == "the other run's results"
    assert [p.name for p in tmp_path.iterdir()] == ["o.csv"]


def test_racing_package_folders_one_wins_the_other_is_refused(tmp_path):
    from neve.maps.target import MARKER, make_temp, publish

    dest = tmp_path / "calc"
    barrier = threading.Barrier(8)
    results = []

    def run(k):
        tmp = make_temp(dest, "building")
        (tmp / MARKER).write_text("")
        (tmp / "who").write_text(str(k))
        barrier.wait()
        try:
            publish(tmp, dest, overwrite=False, field="package")
            results.append(("won", k))
        except InputError:
            results.append(("refused", k))

    threads = [threading.Thread(target=run, args=(k,)) for k in range(8)]
    for t in threads:
        t.start()
    for t in threads:
        t.join()
    won = [k for what, k in results if what == "won"]
    assert len(won) == 1 and len(results) == 8
    assert (dest / "who").read_text() == str(won[0])


def test_second_package_run_never_replaces_the_first(tmp_path, monkeypatch):
    """Inject the race: another run finishes its package while this one builds."""
    from neve.maps import package
    from neve.maps.target import MARKER
    from tests.maps.conftest import make_site_json, make_view

    dest = tmp_path / "calc"
    real_render = package.render

    def render_while_another_run_finishes(*args, **kw):
        if not dest.exists():  # the package renders its page twice (screen and PDF)
            dest.mkdir()
            (dest / MARKER).write_text("")
            (dest / "report.html").write_text("the first run's report")
        return real_render(*args, **kw)

    monkeypatch.setattr(package, "render", render_while_another_run_finishes)
    with pytest.raises(InputError, match="appeared"):
        package.write_package(make_site_json(), [make_view()], dest)
    assert (dest / "report.html").read_text() == "the first run's report"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["calc"]  # no build folder left


def test_killed_overwrite_gives_the_previous_package_back(tmp_path):
    from neve.maps.target import MARKER, make_temp, remove_stale

    dest = tmp_path / "calc"
    old = make_temp(dest, "old")
    (old / "package").mkdir()
    (old / "package" / MARKER).write_text("")
    # the owner died after putting the package aside: pretend its pid is gone
    dead = old.with_name(old.name.replace(f"-{os.getpid()}-", f"-{_dead_pid()}-"))
    old.rename(dead)
    remove_stale(dest)
    assert (dest / MARKER).exists() and not dead.exists()


# --- order and the dask engine -----------------------------------------------------


def test_rows_out_equal_rows_in_with_every_kind_of_problem(tmp_path, grid_layer):
    lines = [
        f"G1,{SW[0]},{SW[1]}",
        'Q1,"44.5,-109.5',  # stray quote
        f"G2,{SE[0]},{SE[1]}",
        "E1,44.5,-109.5,extra",
        "B1\xe9,44.5,-109.5",  # will be written as Latin-1 below
        f"G3,{SW[0]},{SW[1]}",
    ]
    data = ("site_id,lat,lon\n" + "\n".join(lines) + "\n").encode("latin-1")
    out, summary, _ = _screen_csv(tmp_path, grid_layer, data)
    df = _text_back(out)
    assert [s[:2] for s in df["site_id"]] == ["G1", "Q1", "G2", "E1", "B1", "G3"]
    assert (df["status"] == "error").tolist() == [False, True, False, True, True, False]
    assert summary["rows"] == 6 and summary["input"]["lines"] == 7


def test_dask_engine_gives_the_same_rows_for_a_messy_file(tmp_path, grid_layer):
    pytest.importorskip("dask_geopandas")
    text = (
        "site_id,code,lat,lon\n"
        f"A,02134,{SW[0]},{SW[1]}\n"
        f'B,"x\ny",{SE[0]},{SE[1]}\n'
        'C,"NA,44.5,-109.5\n'
        f"D,null,{SW[0]},{SW[1]}\n"
    )
    local, _, _ = _screen_csv(tmp_path, grid_layer, text, out_name="local.parquet")
    sites = tmp_path / "sites.csv"
    dask_out = tmp_path / "dask.parquet"
    r = _run(sites, "-o", dask_out, "--layer", grid_layer, "--engine", "dask")
    assert r.exit_code == 0, r.output
    a, b = pd.read_parquet(local), pd.read_parquet(dask_out)
    pd.testing.assert_frame_equal(a, b)
    assert a["code"].tolist() == ["02134", "x\ny", "NA,44.5,-109.5", "null"]


def test_numbers_in_text_cells_parse_like_numbers():
    """Regression guard: CSV cells are text now; coordinates still parse as before."""
    from neve.geo.screen.sitefile import parse_sites

    frame = pd.DataFrame(
        {"lat": pd.array(["44.5", " 44.5 ", "1e1", "nan", ""], dtype="str"),
         "lon": pd.array(["-109.5"] * 5, dtype="str")}
    )  # fmt: skip
    s = parse_sites(frame)
    np.testing.assert_allclose(s.lat[:3], [44.5, 44.5, 10.0])
    assert s.error[3].startswith("lat: 'nan' is not a number") and s.error[4] == "lat: missing"


# --- the CSV reader itself ---------------------------------------------------------


def _reference(text: str) -> list[list[str]]:
    """Python's csv module (strict) as the reference reader of well-formed CSV (RFC 4180)."""
    import csv
    import io

    return [row for row in csv.reader(io.StringIO(text, newline=""), strict=True) if row]


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_well_formed_csv_reads_as_pythons_csv_module_reads_it(tmp_path, seed):
    from neve.geo.screen.csv_records import read_csv_records

    rng = np.random.default_rng(seed)
    words = ["a", "", "NA", "02134", "x,y", 'say "hi"', "two\nlines", "é ü", "=1+2", " 7 "]
    rows = [["c0", "c1", "c2"]]
    for _ in range(300):
        rows.append([str(words[k]) for k in rng.integers(0, len(words), 3)])

    def cell(v):
        return '"' + v.replace('"', '""') + '"' if any(c in v for c in ',"\n') else v

    text = "".join(",".join(cell(v) for v in r) + ("\r\n" if seed == 2 else "\n") for r in rows)
    path = _csv(tmp_path, text)
    got = read_csv_records(path)
    expected = _reference(text)
    assert got.frame.columns.tolist() == expected[0]
    assert got.frame.astype(object).values.tolist() == expected[1:]
    assert not got.errors
    assert got.info["records"] == 300
    multi = sum(1 for r in rows[1:] if any("\n" in v for v in r))
    assert len(got.multiline) == multi


def test_bad_lines_anywhere_keep_the_order_of_every_record(tmp_path):
    from neve.geo.screen.csv_records import read_csv_records

    rng = np.random.default_rng(4)
    lines, expected_bad = [], set()
    for k in range(5000):
        kind = rng.integers(0, 50)
        if kind == 0:
            lines.append(f"R{k},1,2,3".encode())  # extra comma
            expected_bad.add(f"R{k}")
        elif kind == 1:
            lines.append(f"R{k}\xe9,1,2".encode("latin-1"))  # not UTF-8
            expected_bad.add(f"R{k}\\xe9")
        elif kind == 2:
            lines.append(f"R{k},Zoë,2".encode())  # fine, not ASCII
        elif kind == 3:
            lines.append(b"")  # blank
        else:
            lines.append(f"R{k},{k},{k}".encode())
    data = b"id,a,b\n" + b"\n".join(lines) + b"\n"
    got = read_csv_records(_csv(tmp_path, data))
    ids = got.frame["id"].tolist()
    assert ids == [ln.decode("utf-8", "backslashreplace").split(",")[0] for ln in lines if ln]
    assert {ids[i] for i in got.errors} == expected_bad
    line_of = {ln.decode("utf-8", "backslashreplace").split(",")[0]: k + 2
               for k, ln in enumerate(lines) if ln}  # fmt: skip
    for i, why in got.errors.items():
        assert why.startswith(f"line {line_of[ids[i]]}:")
    assert got.info["lines"] == 5001 and got.info["blank_lines"] == sum(1 for ln in lines if not ln)


def test_xlsx_value_outside_the_named_columns_is_an_error_row(tmp_path, grid_layer):
    src = _xlsx_with(
        tmp_path,
        ["site_id", "lat", "lon"],
        [
            ["A", 44.5, -109.5],
            ["B", 44.5, -109.5, "stray"],
            [None, None, None],
            ["C", 44.5, -109.5],
        ],
    )
    out = tmp_path / "o.csv"
    summary = tmp_path / "s.json"
    r = _run(src, "-o", out, "--layer", grid_layer, "--summary-json", summary)
    assert r.exit_code == 0, r.output
    df = _text_back(out)
    assert df["site_id"].tolist() == ["A", "B", "C"]  # the empty sheet row is no site
    assert df.loc[1, "status"] == "error" and "column D" in df.loc[1, "message"]
    assert "'stray'" in df.loc[1, "message"] and df.loc[2, "status"] == "ok"
    info = json.loads(summary.read_text(encoding="utf-8"))["input"]
    assert (info["sheet_rows"], info["records"], info["blank_rows"]) == (5, 3, 1)


def test_a_killed_package_build_is_removed_by_the_next_build(tmp_path):
    from neve.maps.target import _host_tag, remove_stale

    dest = tmp_path / "calc"
    dead = tmp_path / f".calc.neve-{_host_tag()}-{_dead_pid()}-k1ll3d.building"
    dead.mkdir()
    (dead / "report.html").write_text("half a report")
    assert not list(tmp_path.glob("calc*"))  # no glob for the package picks it up
    assert remove_stale(dest) == [dead] and not dead.exists()
