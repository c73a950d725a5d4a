"""``neve screen`` through click's CliRunner and the installed command."""

from __future__ import annotations

import os
import shutil
import signal
import subprocess
import sys
import time

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from tests.screen.conftest import interior_points

pytest.importorskip("neve.geo.site.resolve")

from neve.cli import main  # noqa: E402


def _run(*args):
    return CliRunner().invoke(main, ["screen", *map(str, args)])


@pytest.fixture
def sites_csv(tmp_path, sites_frame):
    path = tmp_path / "sites.csv"
    sites_frame.to_csv(path, index=False)
    return path


def test_screen_writes_results_and_prints_summary(tmp_path, sites_csv, grid_layer, sites_frame):
    out = tmp_path / "r.csv"
    r = _run(sites_csv, "-o", out, "--layer", grid_layer, "--ce", "1.0", "--ct", "1.0")
    assert r.exit_code == 0, r.output
    res = pd.read_csv(out)
    assert list(res["site_id"]) == list(sites_frame["site_id"])
    assert "pf_psf" in res.columns
    assert f"sites: {len(sites_frame)}" in r.output
    assert "pg range:" in r.output
    assert "licensed design professional" in r.output
    assert "authority having jurisdiction" in r.output
    for status in ("ok", "study_required"):
        count = int((res["status"] == status).sum())
        assert any(line.split() == [status, str(count)] for line in r.output.splitlines())


def test_existing_output_needs_overwrite(tmp_path, sites_csv, grid_layer):
    out = tmp_path / "r.parquet"
    out.write_text("precious")
    r = _run(sites_csv, "-o", out, "--layer", grid_layer)
    assert r.exit_code == 2
    assert "already exists" in r.output and "--overwrite" in r.output
    assert out.read_text() == "precious"
    r = _run(sites_csv, "-o", out, "--layer", grid_layer, "--overwrite")
    assert r.exit_code == 0, r.output
    assert len(pd.read_parquet(out)) == 40


@pytest.mark.parametrize(
    "content,fragment",
    [
        ("site_id,lat,lon\n", "has no rows"),
        ("site_id,x,y\nA,1,2\n", "latitude"),
        ("", "not a readable csv table"),
    ],
)
def test_bad_site_files_exit_2(tmp_path, grid_layer, content, fragment):
    path = tmp_path / "s.csv"
    path.write_text(content, encoding="utf-8")
    r = _run(path, "-o", tmp_path / "r.csv", "--layer", grid_layer)
    assert r.exit_code == 2, r.output
    assert fragment in r.output
    assert not (tmp_path / "r.csv").exists()


def test_missing_coordinate_column_lists_the_accepted_names(tmp_path, grid_layer):
    path = tmp_path / "s.csv"
    path.write_text("site_id,north,east\nA,45.5,-109.5\n", encoding="utf-8")
    r = _run(path, "-o", tmp_path / "r.csv", "--layer", grid_layer)
    assert r.exit_code == 2
    for name in ("lat", "lon", "latitude", "longitude", "address"):
        assert name in r.output


def test_file_that_is_not_a_table_exits_2(tmp_path, grid_layer):
    path = tmp_path / "s.parquet"
    path.write_bytes(os.urandom(256))
    r = _run(path, "-o", tmp_path / "r.csv", "--layer", grid_layer)
    assert r.exit_code == 2
    assert "not a readable parquet table" in r.output


@pytest.mark.parametrize(
    "extra,fragment",
    [
        (["--scheduler", "tcp://127.0.0.1:1"], "--engine dask"),
        (["--map", "m.png"], ".html"),
    ],
)
def test_option_misuse_exits_2(tmp_path, sites_csv, grid_layer, extra, fragment):
    r = _run(sites_csv, "-o", tmp_path / "r.csv", "--layer", grid_layer, *extra)
    assert r.exit_code == 2
    assert fragment in r.output


def test_unknown_output_suffix(tmp_path, sites_csv, grid_layer):
    r = _run(sites_csv, "-o", tmp_path / "r.json", "--layer", grid_layer)
    assert r.exit_code == 2 and ".parquet" in r.output


@pytest.mark.parametrize("fmt", ["csv", "xlsx", "gpkg", "parquet", "geoparquet"])
def test_every_input_format_gives_the_same_results(tmp_path, sites_frame, grid_layer, fmt):
    import geopandas as gpd

    base = tmp_path / "base.csv"
    sites_frame.to_csv(base, index=False)
    assert _run(base, "-o", tmp_path / "base_out.parquet", "--layer", grid_layer).exit_code == 0
    expected = pd.read_parquet(tmp_path / "base_out.parquet")
    if fmt == "csv":
        path = base
    elif fmt == "xlsx":
        path = tmp_path / "s.xlsx"
        sites_frame.to_excel(path, index=False)
    elif fmt == "parquet":
        path = tmp_path / "s.parquet"
        sites_frame.to_parquet(path)
    else:
        gdf = gpd.GeoDataFrame(
            sites_frame.drop(columns=["lat", "lon"]),
            geometry=gpd.points_from_xy(sites_frame["lon"], sites_frame["lat"]),
            crs="EPSG:4326",
        )
        path = tmp_path / ("s.gpkg" if fmt == "gpkg" else "s.parquet")
        gdf.to_file(path) if fmt == "gpkg" else gdf.to_parquet(path)
    out = tmp_path / "out.parquet"
    r = _run(path, "-o", out, "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    got = pd.read_parquet(out) if fmt != "geoparquet" else gpd.read_parquet(out)
    for col in ("site_id", "status", "zone_id", "flags", "message"):
        assert list(got[col]) == list(expected[col]), col
    np.testing.assert_allclose(got["pg_psf"], expected["pg_psf"], equal_nan=True)
    np.testing.assert_allclose(got["site_lat"], expected["site_lat"], rtol=1e-12)


@pytest.mark.parametrize("suffix", [".csv", ".xlsx", ".gpkg", ".parquet"])
def test_every_output_format_screens_again(tmp_path, sites_csv, grid_layer, suffix):
    first = tmp_path / f"first{suffix}"
    assert _run(sites_csv, "-o", first, "--layer", grid_layer).exit_code == 0
    second = tmp_path / "second.parquet"
    r = _run(first, "-o", second, "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    a = pd.read_parquet(tmp_path / "first.parquet") if suffix == ".parquet" else None
    b = pd.read_parquet(second)
    assert len(b) == 40
    assert list(b["status"]) == list(b["input_status"])  # same answer the second time
    assert list(b["site_id"].astype(str)) == [f"S{i:03d}" for i in range(40)]
    if a is not None:
        assert list(a["zone_id"]) == list(b["zone_id"])


def test_xlsx_output_has_a_summary_sheet(tmp_path, sites_csv, grid_layer):
    out = tmp_path / "r.xlsx"
    assert _run(sites_csv, "-o", out, "--layer", grid_layer).exit_code == 0
    sheets = pd.read_excel(out, sheet_name=None)
    assert set(sheets) == {"results", "summary"}
    assert "fixture grid" in set(sheets["summary"]["value"].astype(str))


def _installed_neve():
    exe = shutil.which("neve")
    if exe is None:
        pytest.skip("the neve command is not installed")
    return exe


def test_installed_command_runs(tmp_path, sites_csv, grid_layer):
    out = tmp_path / "r.gpkg"
    p = subprocess.run(
        [_installed_neve(), "screen", str(sites_csv), "-o", str(out), "--layer", str(grid_layer)],
        capture_output=True, text=True, timeout=120,
    )  # fmt: skip
    assert p.returncode == 0, p.stderr
    assert "sites: 40" in p.stdout
    assert "resolving" not in p.stderr and "site/s" not in p.stderr  # not a terminal: no bar
    import pyogrio

    assert len(pyogrio.read_dataframe(out)) == 40


def test_installed_command_bad_input_exit_2(tmp_path, grid_layer):
    path = tmp_path / "s.csv"
    path.write_text("id,a,b\n1,2,3\n")
    p = subprocess.run(
        [_installed_neve(), "screen", str(path), "-o", str(tmp_path / "r.csv"), "--layer", str(grid_layer)],
        capture_output=True, text=True, timeout=120,
    )  # fmt: skip
    assert p.returncode == 2
    assert "neve: error: sites:" in p.stderr


def test_interrupted_run_leaves_no_partial_output(tmp_path, grid_layer):
    """Terminate a run at several moments: the output is whole or absent, never partial."""
    lat, lon = interior_points(150_000, seed=11)
    path = tmp_path / "big.csv"
    pd.DataFrame({"site_id": np.arange(len(lat)), "lat": lat, "lon": lon}).to_csv(path, index=False)
    exe = _installed_neve()
    for k, delay in enumerate((0.5, 2.0, 3.5, 5.0)):
        out = tmp_path / f"r{k}.csv"
        p = subprocess.Popen(
            [exe, "screen", str(path), "-o", str(out), "--layer", str(grid_layer), "--quiet"],
            stdout=subprocess.PIPE, stderr=subprocess.PIPE,
        )  # fmt: skip
        time.sleep(delay)
        p.send_signal(signal.SIGTERM)
        p.communicate(timeout=120)
        if out.exists():
            assert len(pd.read_csv(out, usecols=["status"])) == len(lat)
        if k == 0:  # stopped during start-up: nothing written
            assert not out.exists() and p.returncode != 0
        leftovers = [f.name for f in tmp_path.iterdir() if ".part" in f.name]
        assert leftovers == [], leftovers


@pytest.mark.skipif(sys.platform == "win32", reason="POSIX signals")
def test_sigint_is_exit_not_traceback(tmp_path, grid_layer):
    lat, lon = interior_points(100_000, seed=12)
    path = tmp_path / "big.csv"
    pd.DataFrame({"lat": lat, "lon": lon}).to_csv(path, index=False)
    p = subprocess.Popen(
        [_installed_neve(), "screen", str(path), "-o", str(tmp_path / "r.csv"), "--layer", str(grid_layer)],
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
    )  # fmt: skip
    time.sleep(1.5)
    p.send_signal(signal.SIGINT)
    _, err = p.communicate(timeout=120)
    if p.returncode != 0:
        assert p.returncode in (1, 130, -2), err
    assert not [f for f in tmp_path.iterdir() if ".part" in f.name]


def test_portfolio_map_written_beside_results(tmp_path, sites_csv, grid_layer):
    pytest.importorskip("neve.maps.portfolio")
    out, html = tmp_path / "r.csv", tmp_path / "portfolio.html"
    r = _run(sites_csv, "-o", out, "--layer", grid_layer, "--map", html)
    assert r.exit_code == 0, r.output
    text = html.read_text(encoding="utf-8")
    assert "S000" in text and "S039" in text  # every site id reaches the map's data
    assert f"map: {html}" in r.output
    assert not [f for f in tmp_path.iterdir() if ".part" in f.name]


def test_map_frame_uses_coordinates_of_address_rows():
    from neve.cli.screen import map_frame

    res = pd.DataFrame(
        {"address": ["x"], "site_lat": [45.5], "site_lon": [-109.5], "status": ["ok"]}
    )
    view = map_frame(res)
    assert view["lat"][0] == 45.5 and view["lon"][0] == -109.5 and view["site_id"][0] == "row 1"


def test_address_rows_with_a_gazetteer(tmp_path, grid_layer):
    gaz = tmp_path / "gaz.csv"
    gaz.write_text(
        "address,lat,lon\n1 Harbour Rd,45.5,-109.5\n2 Mill Ln,44.5,-108.5\n"
        "3 Twin St,44.5,-109.5\n3 Twin St,45.5,-108.5\n",
        encoding="utf-8",
    )
    sites = tmp_path / "s.csv"
    sites.write_text(
        "site_id,address\nA,1 Harbour Rd\nB,2 mill ln.\nC,9 Nowhere\nD,3 Twin St\nE,\n",
        encoding="utf-8",
    )
    out = tmp_path / "r.csv"
    r = _run(sites, "-o", out, "--layer", grid_layer, "--gazetteer", gaz)
    assert r.exit_code == 0, r.output
    res = pd.read_csv(out)
    assert list(res["site_id"]) == ["A", "B", "C", "D", "E"]
    assert res["zone_id"][0] == "NW" and res["site_lat"][0] == 45.5
    assert res["zone_id"][1] == "SE" and res["pg_psf"][1] == 40.0  # normalised spelling matched
    assert res["status"][2] == "error" and "not found" in res["message"][2]
    assert res["status"][3] == "error" and "matches 2 places" in res["message"][3]
    assert res["status"][4] == "error" and "address: missing" in res["message"][4]


def test_address_rows_without_a_geocoder_use_the_shipped_gazetteer(
    tmp_path, grid_layer, monkeypatch
):
    """Issue 14: with no geocoder configured, address rows are looked up in the shipped
    gazetteer; an address it does not hold is that row's error, naming the other ways."""
    monkeypatch.delenv("NEVE_GEOCODER_URL", raising=False)
    sites = tmp_path / "s.csv"
    sites.write_text("address\n1 Harbour Rd\n05401\n", encoding="utf-8")
    out = tmp_path / "r.csv"
    r = _run(sites, "-o", out, "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    res = pd.read_csv(out)
    assert res["status"][0] == "error"
    assert "--gazetteer" in res["message"][0] and "--geocoder-url" in res["message"][0]
    assert res["location_precision"][1] == "postal_code" and res["location_radius_m"][1] > 0


def test_demo_portfolio_on_the_embedded_demo_data(tmp_path):
    """Invented Skerrow Island portfolio on the embedded demo stack (demo = true)."""
    from pathlib import Path

    from pyproj import Transformer

    from neve.geo.layers.model import demo_layers

    base = demo_layers()[-1]
    x0, y0, x1, y1 = base.frame.total_bounds
    to_ll = Transformer.from_crs(base.crs, 4326, always_xy=True)
    rng = np.random.default_rng(3)
    lon, lat = to_ll.transform(rng.uniform(x0, x1, 60), rng.uniform(y0, y1, 60))
    profiles = Path(__file__).resolve().parents[2] / "examples" / "profiles.toml"
    if not profiles.is_file():
        pytest.skip("examples/profiles.toml is not there")
    roofs = ["warehouse", "townhouse", "school"]
    df = pd.DataFrame(
        {
            "site_id": [f"SK{i:02d}" for i in range(60)],
            "lat": lat,
            "lon": lon,
            "roof": [roofs[i % 3] for i in range(60)],
        }
    )
    df["lat"] = df["lat"].astype(object)
    df.loc[7, "lat"] = "n/a"
    df.loc[8, "roof"] = "greenhouse-shed"
    sites = tmp_path / "skerrow_sites.csv"
    df.to_csv(sites, index=False)
    out = tmp_path / "r.xlsx"
    r = _run(sites, "-o", out, "--dem", "demo", "--roof", profiles)
    assert r.exit_code == 0, r.output
    assert r.output.startswith("DEMO DATA")
    res = pd.read_excel(out, sheet_name="results")
    assert list(res["site_id"]) == list(df["site_id"])
    placed = res["status"] != "error"
    assert res.loc[placed, "flags"].str.contains("demo_data").all()
    assert res["status"][7] == "error" and res["status"][8] == "error"
    assert "unknown profile 'greenhouse-shed'" in res["message"][8]
    summary = pd.read_excel(out, sheet_name="summary")
    assert "DEMO" in set(summary["item"])


def test_roof_profiles_from_the_command_line(tmp_path, grid_layer, sites_frame):
    roofs = tmp_path / "roofs.toml"
    roofs.write_text(
        "ct = 1.0\n[profile.low]\nce = 0.9\n[profile.high]\nce = 1.2\n", encoding="utf-8"
    )
    sites = tmp_path / "s.csv"
    sites_frame.assign(roof=["low", "high"] * 20).to_csv(sites, index=False)
    out, summary = tmp_path / "r.parquet", tmp_path / "summary.json"
    r = _run(sites, "-o", out, "--layer", grid_layer, "--roof", roofs, "--risk", "II",
             "--summary-json", summary)  # fmt: skip
    assert r.exit_code == 0, r.output
    res = pd.read_parquet(out)
    ok = res["status"] == "ok"
    # ASCE 7-16 Eq. 7.3-1 with Is = 1.0 (risk II, Table 1.5-2) and the profile's Ce
    ce = np.where(res["roof"] == "low", 0.9, 1.2)
    np.testing.assert_allclose(res["pf_psf"][ok], 0.7 * ce[ok] * 1.0 * 1.0 * res["pg_psf"][ok])
    import json

    data = json.loads(summary.read_text())
    assert data["rows"] == 40 and sum(data["status"].values()) == 40
    assert data["cautions"]


def test_too_many_rows_for_xlsx_refused_before_work(tmp_path, sites_csv, grid_layer, monkeypatch):
    import neve.geo.screen.outputs

    monkeypatch.setattr(neve.geo.screen.outputs, "XLSX_MAX_ROWS", 10)
    r = _run(sites_csv, "-o", tmp_path / "r.xlsx", "--layer", grid_layer)
    assert r.exit_code == 2
    assert "40 sites do not fit" in r.output and ".parquet" in r.output
    assert not (tmp_path / "r.xlsx").exists()


def test_geocode_cache_kept_between_runs(tmp_path, grid_layer):
    import json

    gaz = tmp_path / "gaz.csv"
    gaz.write_text("address,lat,lon\n1 Harbour Rd,45.5,-109.5\n", encoding="utf-8")
    sites = tmp_path / "s.csv"
    sites.write_text("site_id,address\nA,1 Harbour Rd\nB,9 Nowhere\n", encoding="utf-8")
    cache = tmp_path / "cache.json"
    r = _run(sites, "-o", tmp_path / "a.csv", "--layer", grid_layer, "--gazetteer", gaz,
             "--geocode-cache", cache)  # fmt: skip
    assert r.exit_code == 0, r.output
    assert json.loads(cache.read_text()) == {"1 harbour rd": [45.5, -109.5]}  # misses not kept
    gaz.write_text("address,lat,lon\n", encoding="utf-8")  # the second run needs the cache
    r = _run(sites, "-o", tmp_path / "b.csv", "--layer", grid_layer, "--gazetteer", gaz,
             "--geocode-cache", cache)  # fmt: skip
    assert r.exit_code == 0, r.output
    res = pd.read_csv(tmp_path / "b.csv")
    assert res["site_lat"][0] == 45.5 and res["status"][1] == "error"


def test_bad_geocode_cache_exit_2(tmp_path, grid_layer):
    gaz = tmp_path / "gaz.csv"
    gaz.write_text("address,lat,lon\n", encoding="utf-8")
    sites = tmp_path / "s.csv"
    sites.write_text("address\n1 Harbour Rd\n", encoding="utf-8")
    cache = tmp_path / "cache.json"
    cache.write_text("[1, 2", encoding="utf-8")
    r = _run(sites, "-o", tmp_path / "a.csv", "--layer", grid_layer, "--gazetteer", gaz,
             "--geocode-cache", cache)  # fmt: skip
    assert r.exit_code == 2 and "geocode-cache" in r.output
