"""Fixtures for the screening tests.

Everything here is invented test data (a 2 x 2 grid of square zones in an
imaginary basin); none of it is any jurisdiction's map.
"""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

#: the fixture grid: lon -110..-108, lat 44..46, split at -109 / 45
GRID = {
    "SW": {"box": (-110.0, 44.0, -109.0, 45.0), "rule": "fixed", "pg": 25.0},
    "SE": {"box": (-109.0, 44.0, -108.0, 45.0), "rule": "fixed", "pg": 40.0, "elev_max": 6000.0},
    "NW": {"box": (-110.0, 45.0, -109.0, 46.0), "rule": "study"},
    "NE": {
        "box": (-109.0, 45.0, -108.0, 46.0),
        "rule": "elevation_table",
        "table": [[0, 20], [5000, 60]],
    },
}

SIDECAR = """\
name = "fixture grid"
jurisdiction = "Virel Basin (invented test fixture)"
standard = "ASCE 7-16"
value_units = "psf"
elevation_units = "ft"
source = "invented for neve's tests"
license = "CC0-1.0"
date = 2026-01-01
boundary_tolerance_m = 100
demo = {demo}
"""


def write_grid_layer(folder: Path, *, demo: bool = False, name: str = "grid.gpkg") -> Path:
    """Write the fixture grid as a GeoPackage with its sidecar; return the path."""
    import geopandas as gpd
    import shapely

    rows = []
    for zone_id, z in GRID.items():
        rows.append(
            {
                "zone_id": zone_id,
                "rule": z["rule"],
                "pg": z.get("pg"),
                "elev_max": z.get("elev_max"),
                "table": json.dumps(z["table"]) if "table" in z else None,
                "geometry": shapely.box(*z["box"]),
            }
        )
    gdf = gpd.GeoDataFrame(rows, geometry="geometry", crs="EPSG:4326")
    path = folder / name
    gdf.to_file(path, driver="GPKG")
    Path(f"{path}.toml").write_text(SIDECAR.format(demo=str(demo).lower()), encoding="utf-8")
    return path


def zone_of(lat: np.ndarray, lon: np.ndarray) -> np.ndarray:
    """Reference zone ids by shapely's point-in-polygon test (None outside the grid)."""
    import shapely

    out = np.full(len(lat), None, dtype=object)
    for zone_id, z in GRID.items():
        inside = shapely.contains_xy(shapely.box(*z["box"]), lon, lat)
        out[inside] = zone_id
    return out


def interior_points(n: int, seed: int = 1) -> tuple[np.ndarray, np.ndarray]:
    """Random points at least 0.01 deg (about 800 m) from every zone edge."""
    rng = np.random.default_rng(seed)
    cell_lon = rng.integers(0, 2, n)
    cell_lat = rng.integers(0, 2, n)
    lon = -110.0 + cell_lon + rng.uniform(0.01, 0.99, n)
    lat = 44.0 + cell_lat + rng.uniform(0.01, 0.99, n)
    return lat, lon


@pytest.fixture
def grid_layer(tmp_path) -> Path:
    return write_grid_layer(tmp_path)


@pytest.fixture
def sites_frame() -> pd.DataFrame:
    """Forty well-formed sites inside the fixture grid, elevations in the cell."""
    lat, lon = interior_points(40)
    rng = np.random.default_rng(2)
    elev = rng.uniform(100, 4000, 40).round(0)
    return pd.DataFrame(
        {
            "site_id": [f"S{i:03d}" for i in range(40)],
            "lat": lat.round(6),
            "lon": lon.round(6),
            "elevation": [f"{e:g}ft" for e in elev],
        }
    )


def malformed_portfolio(n_good: int = 180) -> tuple[pd.DataFrame, dict]:
    """A portfolio with 10 % malformed rows of every kind, mixed in at random places."""
    lat, lon = interior_points(n_good, seed=5)
    rows = [
        {"site_id": f"G{i:03d}", "lat": f"{a:.6f}", "lon": f"{o:.6f}", "elevation": "1500ft",
         "roof": "shed" if i % 2 else "hall"}
        for i, (a, o) in enumerate(zip(lat, lon, strict=True))
    ]  # fmt: skip
    bad = {
        "lat: 'north' is not a number": {"lat": "north"},
        "lon: '-109,5' is not a number": {"lon": "-109,5"},
        "lat: missing": {"lat": ""},
        "lat: out of range": {"lat": "95.0"},
        "lon: out of range": {"lon": "-190.0"},
        "bare number": {"elevation": "1500"},
        "not a length": {"elevation": "1500psf"},
        "elevation: '40000ft' is out of range": {"elevation": "40000ft"},
        "is not an elevation": {"elevation": "tall"},
        "roof: unknown profile 'barn'": {"roof": "barn"},
    }
    expected = {}
    rng = np.random.default_rng(9)
    kinds = list(bad.items()) * 2  # 20 malformed rows: 10 % of 200
    for k, (fragment, change) in enumerate(kinds):
        pos = int(rng.integers(0, len(rows) + 1))
        row = {**rows[0], "site_id": f"X{k:02d}", **change}
        rows.insert(pos, row)
        expected[f"X{k:02d}"] = fragment
    return pd.DataFrame(rows), expected
