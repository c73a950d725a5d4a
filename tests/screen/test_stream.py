"""Streamed screening (issue 16): the same rows as the whole-file path, and whole-or-nothing.

The reference is neve's own in-memory path (``run_screen`` + ``write_results``),
which the rest of ``tests/screen`` checks against the fixture grid and the
standards; these tests only show that reading and writing in chunks changes
nothing (regression guards).  CSV syntax is RFC 4180, sec. 2.  Sites and
layers are invented fixture data.
"""

from __future__ import annotations

import json
import os
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from tests.screen.conftest import interior_points, malformed_portfolio

ROOF = 'ce = 1.0\nct = 1.0\n[profile.hall]\nrisk = "II"\n[profile.shed]\nrisk = "IV"\n'


def _portfolio_csv(tmp_path: Path) -> Path:
    """Malformed cells, CSV syntax errors, a quoted cell over lines, repeated ids far apart,
    and a run of error rows long enough to fill whole chunks of 3 and 5 lines."""
    df, _ = malformed_portfolio(60)
    lines = ["site_id,lat,lon,elevation,roof"]
    lines += [",".join(map(str, r)) for r in df.itertuples(index=False)]
    lines[5:5] = ['G900,"44.6\n",-109.5,1500ft,hall']  # a quoted cell with a line break
    lines[9:9] = ["X900,44.6,-109.5,1500ft,hall,extra"]  # one cell too many
    lines[14:14] = ['X901,4"4.6,-109.5,1500ft,hall']  # a quote inside a cell
    lines[20:20] = ["X902,north,-109.5,1500ft,hall"] * 16  # chunks made only of error rows
    lines[40:40] = ["", ""]  # blank lines
    lines.append("G001,44.7,-108.7,1500ft,shed")  # repeats an id of the first chunk
    lines.append('X903,"{{ 7*7 }}",${x},<b>{% x %}</b>,hall')
    path = tmp_path / "sites.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _roof(tmp_path: Path) -> Path:
    roof = tmp_path / "roof.toml"
    roof.write_text(ROOF, encoding="utf-8")
    return roof


def _in_memory(sites, out, grid_layer, roof) -> dict:
    from neve.geo.screen.outputs import write_results
    from neve.geo.screen.run import run_screen

    run = run_screen(sites, layers=[grid_layer], roof=roof)
    write_results(run.results, out, summary=run.summary, geometry=run.geometry)
    return run.summary


def _streamed(sites, out, grid_layer, roof, rows, summary) -> None:
    r = CliRunner().invoke(
        main,
        ["screen", str(sites), "-o", str(out), "--layer", str(grid_layer), "--roof", str(roof),
         "--summary-json", str(summary), "--quiet"],
        env={"NEVE_CHUNK_ROWS": str(rows)},
    )  # fmt: skip
    assert r.exit_code == 0, r.output


def _read(path: Path) -> pd.DataFrame:
    if path.suffix == ".csv":
        return pd.read_csv(path, dtype=str, keep_default_na=False)
    if path.suffix == ".parquet":
        return pd.read_parquet(path)
    import pyogrio

    return pyogrio.read_dataframe(path)


def _sites_as(fmt: str, csv_path: Path, tmp_path: Path, grid_layer: Path) -> Path:
    if fmt == "csv":
        return csv_path
    from neve.geo.screen.read import read_sites

    frame, _ = read_sites(csv_path)
    frame.attrs = {}
    if fmt == "parquet":
        path = tmp_path / "sites.parquet"
        frame.to_parquet(path, index=False)
        return path
    if fmt == "results":  # neve's own GeoParquet results, screened again
        from neve.geo.screen.outputs import write_results
        from neve.geo.screen.run import run_screen

        path = tmp_path / "first.parquet"
        write_results(run_screen(csv_path, layers=[grid_layer]).results, path)
        return path
    import geopandas as gpd

    lat = pd.to_numeric(frame["lat"], errors="coerce")
    lon = pd.to_numeric(frame["lon"], errors="coerce")
    gdf = gpd.GeoDataFrame(frame.drop(columns=["lat", "lon"]),
                           geometry=gpd.points_from_xy(lon, lat), crs="EPSG:4326")  # fmt: skip
    if fmt == "geoparquet":
        path = tmp_path / "sites.geoparquet"
        gdf.to_crs(3857).to_parquet(path, index=False)  # another CRS: points moved to WGS 84
        return path
    path = tmp_path / "sites.gpkg"
    gdf.to_file(path, driver="GPKG")
    return path


@pytest.mark.parametrize("rows", [3, 5, 1000])
@pytest.mark.parametrize("suffix", [".csv", ".parquet", ".gpkg"])
def test_streamed_results_are_the_in_memory_results(tmp_path, grid_layer, suffix, rows):
    sites = _portfolio_csv(tmp_path)
    roof = _roof(tmp_path)
    want, got = tmp_path / f"memory{suffix}", tmp_path / f"streamed{suffix}"
    summary = _in_memory(sites, want, grid_layer, roof)
    _streamed(sites, got, grid_layer, roof, rows, tmp_path / "s.json")
    if suffix == ".csv":
        assert got.read_bytes() == want.read_bytes()  # byte for byte
    else:
        pd.testing.assert_frame_equal(_read(got), _read(want))
    streamed = json.loads((tmp_path / "s.json").read_text(encoding="utf-8"))
    assert streamed["chunks"] == (1 if rows == 1000 else streamed["chunks"]) and streamed["chunks"]
    for key in ("rows", "status", "flags", "pg_psf", "input", "layers", "demo", "cautions"):
        assert streamed[key] == json.loads(json.dumps(summary[key])), key
    back = _read(got)
    assert "duplicate_site_id" in back.loc[back["site_id"] == "G001", "flags"].iloc[0]
    assert (back["site_id"] == "X902").sum() == 16
    assert set(back.loc[back["site_id"] == "X902", "status"]) == {"error"}


@pytest.mark.parametrize("fmt", ["parquet", "gpkg", "geoparquet", "results"])
def test_streamed_inputs_of_every_format(tmp_path, grid_layer, fmt):
    sites = _sites_as(fmt, _portfolio_csv(tmp_path), tmp_path, grid_layer)
    roof = _roof(tmp_path)
    want, got = tmp_path / "memory.parquet", tmp_path / "streamed.parquet"
    _in_memory(sites, want, grid_layer, roof)
    _streamed(sites, got, grid_layer, roof, 4, tmp_path / "s.json")
    a, b = _read(got), _read(want)
    pd.testing.assert_frame_equal(a.drop(columns="geometry"), b.drop(columns="geometry"))
    assert a["geometry"].tolist() == b["geometry"].tolist()


def _combined(parts):
    frames, errors, multi, info, off = [], {}, {}, {}, 0
    for p in parts:
        frames.append(p.frame)
        errors.update({k + off: v for k, v in p.errors.items()})
        multi.update({k + off: v for k, v in p.multiline.items()})
        off += len(p.frame)
        for k, v in p.info.items():
            info[k] = info[k] + v if k in info and k != "header_line" and isinstance(v, int) else v
    return pd.concat(frames, ignore_index=True), errors, multi, info


_LINES = ["S{i},44.5,-109.5", '"S{i}",44.5,-109.5', 'S{i},"44.5\n",-109.5', 'S{i},4"4,-109.5',
          '"S{i},44.5,-109.5', "S{i},44.5", "S{i},44.5,-109.5,x", "", "S{i},\udcff,1",
          '"a ""q""",1,2', 'S{i},"multi\nline\ncell",1', "S{i},{{{{ 1 }}}},<script>x</script>"]  # fmt: skip


@pytest.mark.parametrize("seed", range(40))
def test_csv_chunks_read_as_the_whole_file(tmp_path, seed, monkeypatch):
    """Random mixes of good and malformed records, cut into chunks of 1 to 7 lines."""
    import neve.geo.screen.csv_records as cr

    monkeypatch.setattr(cr, "MAX_RECORD_LINES", 3 if seed % 2 else 1000)  # stray quotes too
    rng = random.Random(seed)
    rows = [rng.choice(_LINES).format(i=i) for i in range(rng.randint(0, 30))]
    text = "\n" * rng.randint(0, 2) + "site_id,lat,lon\n" + "\n".join(rows) + rng.choice(["", "\n"])
    path = tmp_path / "s.csv"
    path.write_bytes(text.encode("utf-8", "surrogateescape"))
    whole = cr.read_csv_records(path)
    for size in (1, 2, 3, 7):
        frame, errors, multi, info = _combined(cr.iter_csv_records(path, size))
        assert frame.equals(whole.frame) or (frame.empty and whole.frame.empty)
        assert errors == whole.errors and multi == whole.multiline
        assert info == whole.info
        ids = [r.frame["site_id"] for r in cr.iter_csv_records(path, size, columns=["site_id"])]
        assert pd.concat(ids, ignore_index=True).tolist() == whole.frame["site_id"].tolist()


_KILLED = """
import sys, time
from neve.geo.screen.stream import stream_screen

def hook(done, tmp):
    if done == 2:
        print("two chunks written", flush=True)
        time.sleep(60)

stream_screen(sys.argv[1], sys.argv[2], layers=[sys.argv[3]], rows=10, _chunk_hook=hook)
"""


@pytest.mark.parametrize("suffix", [".csv", ".parquet", ".gpkg"])
def test_a_killed_streamed_run_leaves_no_output(tmp_path, grid_layer, suffix):
    lat, lon = interior_points(100, seed=4)
    (tmp_path / "in").mkdir()
    sites = tmp_path / "in" / "sites.csv"
    pd.DataFrame({"site_id": [f"S{i}" for i in range(100)], "lat": lat, "lon": lon}).to_csv(
        sites, index=False
    )
    (tmp_path / "out").mkdir()
    out = tmp_path / "out" / f"results{suffix}"
    proc = subprocess.Popen(
        [sys.executable, "-c", _KILLED, str(sites), str(out), str(grid_layer)],
        stdout=subprocess.PIPE, text=True, env={**os.environ, "PYTHONUNBUFFERED": "1"},
    )  # fmt: skip
    try:
        assert proc.stdout.readline().strip() == "two chunks written"
        parts = list(out.parent.glob(".results*.part/*"))
        assert parts and parts[0].stat().st_size > 0  # the rows so far: under the hidden name
        assert not out.exists()
        proc.send_signal(signal.SIGKILL)
        proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
    time.sleep(0.1)
    assert not out.exists()
    shown = [q for q in out.parent.iterdir() if not q.name.startswith(".")]
    assert not shown  # no partial file at or beside the target (a dead run's is hidden)
    r = CliRunner().invoke(main, ["screen", str(sites), "-o", str(out), "--layer",
                                  str(grid_layer), "--quiet"])  # fmt: skip
    assert r.exit_code == 0, r.output  # the next run clears the dead run's leftovers
    assert len(_read(out)) == 100
    assert not list(out.parent.glob(".results*.part"))


def test_chunk_rows_knob(monkeypatch):
    from neve.engine.errors import InputError
    from neve.geo.screen.stream import CHUNK_ROWS, chunk_rows

    monkeypatch.delenv("NEVE_CHUNK_ROWS", raising=False)
    assert chunk_rows() == CHUNK_ROWS
    monkeypatch.setenv("NEVE_CHUNK_ROWS", "7")
    assert chunk_rows() == 7
    for bad in ("0", "-3", "many", "1.5"):
        monkeypatch.setenv("NEVE_CHUNK_ROWS", bad)
        with pytest.raises(InputError, match="NEVE_CHUNK_ROWS"):
            chunk_rows()


def test_a_bad_chunk_rows_value_exits_2(tmp_path, grid_layer):
    lat, lon = interior_points(3)
    sites = tmp_path / "s.csv"
    pd.DataFrame({"lat": lat, "lon": lon}).to_csv(sites, index=False)
    r = CliRunner().invoke(main, ["screen", str(sites), "-o", str(tmp_path / "r.csv"),
                                  "--layer", str(grid_layer)], env={"NEVE_CHUNK_ROWS": "x"})  # fmt: skip
    assert r.exit_code == 2 and "NEVE_CHUNK_ROWS" in r.output
    assert not (tmp_path / "r.csv").exists()


def test_an_xlsx_output_refuses_too_many_rows(tmp_path, grid_layer, monkeypatch):
    import neve.geo.screen.outputs as outputs

    monkeypatch.setattr(outputs, "XLSX_MAX_ROWS", 5)
    lat, lon = interior_points(8)
    sites = tmp_path / "s.csv"
    pd.DataFrame({"lat": lat, "lon": lon}).to_csv(sites, index=False)
    r = CliRunner().invoke(main, ["screen", str(sites), "-o", str(tmp_path / "r.xlsx"),
                                  "--layer", str(grid_layer)])  # fmt: skip
    assert r.exit_code == 2 and "do not fit" in r.output and ".parquet" in r.output
    assert not (tmp_path / "r.xlsx").exists()


def test_sites_of_a_header_only_file_are_refused(tmp_path, grid_layer):
    sites = tmp_path / "s.csv"
    sites.write_text("lat,lon\n\n", encoding="utf-8")
    r = CliRunner().invoke(main, ["screen", str(sites), "-o", str(tmp_path / "r.parquet"),
                                  "--layer", str(grid_layer)])  # fmt: skip
    assert r.exit_code == 2 and "no rows" in r.output
    assert not (tmp_path / "r.parquet").exists()


def test_a_streamed_run_shows_its_progress(tmp_path, grid_layer, capsys):
    from neve.geo.screen.stream import stream_screen

    lat, lon = interior_points(30, seed=6)
    sites = tmp_path / "s.parquet"
    pd.DataFrame({"lat": lat, "lon": lon}).to_parquet(sites, index=False)
    summary = stream_screen(sites, tmp_path / "r.csv", layers=[grid_layer], progress=True, rows=7)
    err = capsys.readouterr().err
    assert "screening" in err and "0/30" in err  # sites counted against the file's rows
    assert summary["chunks"] == 5 and summary["rows"] == 30


def test_repeated_ids_of_the_first_pass_match_pandas_value_counts():
    """The whole-file repeated ids (found by sorting) against pandas' value_counts
    (a general-purpose reference), over parts of several types, with missing ids."""
    import numpy as np
    import pandas as pd

    from neve.geo.screen.stream import _repeated_ids

    rng = np.random.default_rng(16)
    for trial in range(40):
        parts, every = [], []
        for _ in range(rng.integers(1, 5)):
            n = int(rng.integers(0, 30))
            vals = [None if rng.random() < 0.1 else f"id{rng.integers(0, 25)}" for _ in range(n)]
            parts.append(pd.Series(vals, dtype="string[pyarrow]" if trial % 2 else object))
            every += vals
        counts = pd.Series(every, dtype=object).value_counts(dropna=True)
        want = sorted(counts[counts > 1].index)
        got = sorted(v for v in _repeated_ids(parts).to_pylist() if v is not None)
        assert got == want, (trial, got, want)
    mixed = [pd.Series([1, 2, 3]), pd.Series(["3", "4", "4"])]  # numbers and text: as text
    assert sorted(_repeated_ids(mixed).to_pylist()) == ["3", "4"]
    assert len(_repeated_ids([pd.Series([None, None], dtype=object)])) == 0
