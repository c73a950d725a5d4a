"""Small hand-made layers for the geo tests (invented fixture data only).

The fixture grid sits in the open Atlantic around 30 N, 40 W; cells are
0.01 degree (about 960 m east-west, 1110 m north-south):

    lat 30.01-30.02:  Z4 elevation_table | Z5 formula (Z + 0.01 A, pg_min 15) | Z6 fixed 20
    lat 30.00-30.01:  Z1 fixed 20        | Z2 fixed 30, elev_max 500 ft      | Z3 study
                      lon -40.00..-39.99   -39.99..-39.98                      -39.98..-39.97
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

LON0, LAT0, D = -40.0, 30.0, 0.01

FIXTURE_META = {
    "name": "fixture grid",
    "jurisdiction": "Test fixtures (invented)",
    "standard": "ASCE 7-16",
    "value_units": "psf",
    "elevation_units": "ft",
    "source": "tests/geo/conftest.py (invented fixture)",
    "license": "CC0-1.0",
    "date": "2026-01-01",
    "boundary_tolerance_m": 100,
    "demo": False,
}


def cell(i: int, j: int):
    """The fixture cell in column i (west to east) and row j (south to north)."""
    from shapely.geometry import box

    return box(LON0 + i * D, LAT0 + j * D, LON0 + (i + 1) * D, LAT0 + (j + 1) * D)


def fixture_rows() -> list[dict]:
    nan = float("nan")
    base = {"pg": nan, "elev_max": nan, "table": None, "expr": None, "Z": nan, "pg_min": nan}
    rows = [
        dict(base, zone_id="Z1", rule="fixed", pg=20.0, geometry=cell(0, 0)),
        dict(base, zone_id="Z2", rule="fixed", pg=30.0, elev_max=500.0, geometry=cell(1, 0)),
        dict(base, zone_id="Z3", rule="study", geometry=cell(2, 0)),
        dict(base, zone_id="Z4", rule="elevation_table", table="[[0, 20], [1000, 40]]",
             geometry=cell(0, 1)),
        dict(base, zone_id="Z5", rule="formula", expr="Z + 0.01 * A", Z=10.0, pg_min=15.0,
             geometry=cell(1, 1)),
        dict(base, zone_id="Z6", rule="fixed", pg=20.0, geometry=cell(2, 1)),
    ]  # fmt: skip
    return rows


def toml_text(meta: dict) -> str:
    import tomli_w

    return tomli_w.dumps(meta)


def write_layer(path: Path, rows: list[dict], meta: dict | None = None, crs="EPSG:4326") -> Path:
    """Write rows (dicts with a ``geometry`` in EPSG:4326) as a layer plus sidecar."""
    import geopandas as gpd

    gdf = gpd.GeoDataFrame(rows, geometry="geometry", crs="EPSG:4326")
    if crs != "EPSG:4326":
        gdf = gdf.to_crs(crs)
    path.unlink(missing_ok=True)
    gdf.to_file(path, engine="pyogrio")
    m = dict(FIXTURE_META)
    m.update(meta or {})
    Path(str(path) + ".toml").write_text(toml_text(m), encoding="utf-8")
    return path


@pytest.fixture(scope="session")
def fixture_dir(tmp_path_factory) -> Path:
    return tmp_path_factory.mktemp("geo_fixtures")


@pytest.fixture(scope="session")
def grid_layer(fixture_dir) -> Path:
    return write_layer(fixture_dir / "grid.gpkg", fixture_rows())


@pytest.fixture(scope="session")
def grid_layer_utm(fixture_dir) -> Path:
    """The same zones stored in UTM zone 24N (a projected CRS, metres)."""
    return write_layer(fixture_dir / "grid_utm.gpkg", fixture_rows(), crs="EPSG:32624")


def centre(i: int, j: int) -> tuple[float, float]:
    """(lat, lon) of a fixture cell's centre."""
    return LAT0 + (j + 0.5) * D, LON0 + (i + 0.5) * D


def write_dem(path: Path, *, crs="EPSG:32624", unit: str | None = "metre", fill=None) -> Path:
    """A small DEM over the fixture grid: height = 10 m per column + row index, nodata corner."""
    import rasterio
    from pyproj import Transformer
    from rasterio.transform import from_origin

    x, y = Transformer.from_crs(4326, crs, always_xy=True).transform(LON0 - 0.005, LAT0 + 0.035)
    w, h, cs = 40, 50, 100.0
    rows, cols = np.mgrid[0:h, 0:w]
    z = (10.0 * cols + rows).astype("float32") if fill is None else np.full((h, w), fill, "f4")
    z[:5, :5] = -9999.0
    with rasterio.open(
        path, "w", driver="GTiff", width=w, height=h, count=1, dtype="float32", crs=crs,
        transform=from_origin(x, y, cs, cs), nodata=-9999.0,
    ) as ds:  # fmt: skip
        ds.write(z, 1)
        if unit:
            ds.set_band_unit(1, unit)
    return path
