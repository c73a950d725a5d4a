"""The demo data recipe (deterministic, matches the shipped files) and the layer recipes."""

from __future__ import annotations

import hashlib
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from neve.geo.layers.model import DEMO_DIR, load_layer
from neve.geo.site.resolve import resolve_points

from .conftest import LAT0, LON0, cell

ROOT = Path(__file__).resolve().parents[2]
RECIPES = ROOT / "data_recipes"


def sha(p: Path) -> str:
    return hashlib.sha256(p.read_bytes()).hexdigest()


def build_into(out: Path) -> None:
    res = subprocess.run(
        [sys.executable, str(RECIPES / "build_demo.py"), "--out", str(out)],
        capture_output=True, text=True, check=False,
    )  # fmt: skip
    assert res.returncode == 0, res.stderr


@pytest.mark.slow
def test_build_demo_is_deterministic_and_matches_the_shipped_files(tmp_path):
    import geopandas as gpd
    import rasterio

    a, b = tmp_path / "a", tmp_path / "b"
    build_into(a)
    build_into(b)
    # the demo basemap has its own recipe and check (tests/maps/test_basemap.py)
    shipped = sorted(
        p.name for p in DEMO_DIR.iterdir() if p.is_file() and p.suffix != ".mbtiles"
    )
    assert sorted(p.name for p in a.iterdir()) == shipped
    for name in shipped:  # two builds in one environment: byte for byte
        assert sha(a / name) == sha(b / name), name
    # against the shipped files: same content (bytes may differ between GDAL versions)
    for name in shipped:
        if name.endswith((".toml", ".md")):
            assert (a / name).read_text() == (DEMO_DIR / name).read_text(), name
        elif name.endswith(".tif"):
            with rasterio.open(a / name) as x, rasterio.open(DEMO_DIR / name) as y:
                np.testing.assert_array_equal(x.read(), y.read())
                assert x.transform == y.transform and x.crs == y.crs
        else:
            x, y = gpd.read_file(a / name), gpd.read_file(DEMO_DIR / name)
            assert x.drop(columns="geometry").equals(y.drop(columns="geometry")), name
            assert x.geometry.geom_equals_exact(y.geometry, tolerance=1e-6).all(), name


def test_demo_files_are_small_and_marked():
    total = sum(p.stat().st_size for p in DEMO_DIR.iterdir())
    assert total < 2_000_000
    for side in DEMO_DIR.glob("*.toml"):
        assert "demo = true" in side.read_text()


def test_demo_dem_has_unit_metadata_and_sea_nodata():
    import rasterio

    with rasterio.open(DEMO_DIR / "skerrow_dem.tif") as ds:
        assert ds.units[0] == "metre" and ds.nodata == -9999.0
        z = ds.read(1, masked=True)
        assert z.mask.any() and 1500 < z.max() < 1800  # regression guard on the invented terrain


def run_recipe(script: str, *args: str):
    return subprocess.run(
        [sys.executable, str(RECIPES / script), *args],
        capture_output=True, text=True, check=False, cwd=ROOT,
    )  # fmt: skip


SIDE = ["--name", "fixture county", "--jurisdiction", "Fixture County (invented)",
        "--standard", "ASCE 7-16", "--value-units", "psf", "--elevation-units", "ft",
        "--source", "invented table for the recipe test", "--license", "CC0-1.0",
        "--date", "2026-01-01", "--demo"]  # fmt: skip


def test_table_recipe_joins_and_checks(tmp_path):
    import geopandas as gpd

    bounds = gpd.GeoDataFrame(
        {"CODE": ["A", "B", "C", "A"]},
        geometry=[cell(0, 0), cell(1, 0), cell(2, 0), cell(0, 1)],
        crs=4326,
    ).to_crs(32624)
    bpath = tmp_path / "bounds.shp"
    bounds.to_file(bpath)
    csv = tmp_path / "values.csv"
    csv.write_text(
        "code,rule,pg,elev_max,table,Z,expr\n"
        "A,,20,,,,\n"
        'B,elevation_table,,,"[[0, 20], [1000, 40]]",,\n'
        "C,formula,,,,12,Z + 0.01 * A\n"
        "D,,99,,,,\n",
        encoding="utf-8",
    )
    out = tmp_path / "layer.gpkg"
    res = run_recipe("table_to_layer.py", "--boundaries", str(bpath), "--boundary-key", "CODE",
                     "--table", str(csv), "--csv-key", "code", "--out", str(out), *SIDE)  # fmt: skip
    assert res.returncode == 0, res.stdout + res.stderr
    assert "no problems" in res.stdout and "table rows with no boundary (left out): D" in res.stdout
    layer = load_layer(out)
    assert sorted(layer.zones.zone_id) == ["A", "B", "C"]
    lat = np.array([LAT0 + 0.005, LAT0 + 0.015, LAT0 + 0.005, LAT0 + 0.005])
    lon = np.array([LON0 + 0.005, LON0 + 0.005, LON0 + 0.015, LON0 + 0.025])
    df = resolve_points(lat, lon, layers=[layer], elevation_ft=np.full(4, 500.0))
    # A (both parts) 20 psf; B table at 500 ft: 20 + 500 * 20 / 1000 = 30; C: 12 + 5 = 17
    np.testing.assert_allclose(df["pg_psf"], [20.0, 20.0, 30.0, 17.0])


def test_table_recipe_reports_a_defective_table(tmp_path):
    import geopandas as gpd

    bpath = tmp_path / "b.geojson"
    gpd.GeoDataFrame({"k": ["A"]}, geometry=[cell(0, 0)], crs=4326).to_file(bpath)
    csv = tmp_path / "v.csv"
    csv.write_text('k,rule,table\nA,elevation_table,"[[0, 20], [0, 40]]"\n', encoding="utf-8")
    res = run_recipe("table_to_layer.py", "--boundaries", str(bpath), "--boundary-key", "k",
                     "--table", str(csv), "--csv-key", "k", "--out", str(tmp_path / "o.gpkg"),
                     *SIDE)  # fmt: skip
    assert res.returncode == 1 and "[table]" in res.stdout


def test_grid_recipe_with_study_code(tmp_path):
    import rasterio
    from rasterio.transform import from_origin

    src = tmp_path / "published.tif"
    vals = np.array([[1.0, 1.2], [-1.0, 1.4]], dtype="float32")  # -1 = study required
    with rasterio.open(src, "w", driver="GTiff", width=2, height=2, count=1, dtype="float32",
                       crs="EPSG:4326", transform=from_origin(LON0, LAT0 + 0.02, 0.01, 0.01)
                       ) as ds:  # fmt: skip
        ds.write(vals, 1)
    out = tmp_path / "grid.tif"
    side = [a if a != "psf" else "kPa" for a in SIDE]
    res = run_recipe("grid_to_layer.py", "--grid", str(src), "--study-value", "-1",
                     "--out", str(out), *side)  # fmt: skip
    assert res.returncode == 0, res.stdout + res.stderr
    assert (tmp_path / "grid_study.tif").is_file()
    lat = np.array([LAT0 + 0.015, LAT0 + 0.005, LAT0 + 0.005])
    lon = np.array([LON0 + 0.005, LON0 + 0.005, LON0 + 0.015])
    df = resolve_points(lat, lon, layers=[out])
    assert list(df["status"]) == ["ok", "study_required", "ok"]
    assert df["pg_kpa"][0] == pytest.approx(1.0) and df["pg_kpa"][2] == pytest.approx(1.4)
