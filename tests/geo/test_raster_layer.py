"""Raster zone layers (neve.geo.layers.raster): cell values, nodata, study mask, boundary, view."""

from __future__ import annotations

import math

import numpy as np
import pytest

from neve.engine.errors import LayerError
from neve.geo.layers.model import load_layer
from neve.geo.site.resolve import resolve_points

from .conftest import FIXTURE_META, toml_text

# a 4 x 4 grid of 0.01-degree cells from 40 W, 30.04 N (north-west corner), kPa values
VALUES = np.array(
    [
        [1.0, 1.0, 2.0, -9999.0],
        [1.0, 1.0, 2.0, 2.0],
        [1.5, 1.5, 9.0, 2.0],
        [1.5, 1.5, 2.0, 2.0],
    ],
    dtype="float32",
)
MASK = np.zeros((4, 4), dtype="uint8")
MASK[2, 2] = 1  # study required in the cell holding 9.0


@pytest.fixture(scope="module")
def grid(tmp_path_factory):
    import rasterio
    from rasterio.transform import from_origin

    d = tmp_path_factory.mktemp("raster")
    prof = dict(driver="GTiff", width=4, height=4, count=1, crs="EPSG:4326",
                transform=from_origin(-40.0, 30.04, 0.01, 0.01))  # fmt: skip
    with rasterio.open(d / "g.tif", "w", dtype="float32", nodata=-9999.0, **prof) as ds:
        ds.write(VALUES, 1)
    with rasterio.open(d / "mask.tif", "w", dtype="uint8", **prof) as ds:
        ds.write(MASK, 1)
    meta = dict(FIXTURE_META, name="fixture raster", value_units="kPa", study_mask="mask.tif")
    (d / "g.tif.toml").write_text(toml_text(meta), encoding="utf-8")
    return d / "g.tif"


def cell_centre(r, c):
    return 30.04 - (r + 0.5) * 0.01, -40.0 + (c + 0.5) * 0.01


def test_cell_value_in_kpa(grid):
    lat, lon = cell_centre(0, 0)
    r = resolve_points([lat], [lon], layers=[grid]).iloc[0]
    assert r["status"] == "ok" and r["zone_id"] == "cell:1"
    assert r["pg_kpa"] == pytest.approx(1.0)


def test_nodata_means_not_covered_and_mask_means_study(grid):
    r = resolve_points(*map(list, zip(cell_centre(0, 3), strict=True)), layers=[grid]).iloc[0]
    assert r["status"] == "no_data" and "outside_layer" in r["flags"]
    s = resolve_points(*map(list, zip(cell_centre(2, 2), strict=True)), layers=[grid]).iloc[0]
    assert s["status"] == "study_required" and math.isnan(s["pg_psf"])
    out = resolve_points([31.0], [-40.0], layers=[grid]).iloc[0]
    assert out["status"] == "no_data"


def test_near_a_cell_with_a_larger_value(grid):
    lat, _ = cell_centre(0, 1)
    lon = -40.0 + 0.02 - 0.0005  # 48 m west of the edge between 1.0 and 2.0 kPa cells
    r = resolve_points([lat], [lon], layers=[grid]).iloc[0]
    assert r["status"] == "provisional" and "near_boundary" in r["flags"]
    assert r["pg_kpa"] == pytest.approx(2.0)
    assert r["distance_to_other_m"] == pytest.approx(0.0005 * 111_320 * math.cos(math.radians(lat)),
                                                     rel=0.01)  # fmt: skip


def test_view_polygonizes(grid):
    view = load_layer(grid).view()
    z = view["zones"]
    assert {"cell:1", "cell:1.5", "cell:2", "study"} <= set(z["zone_id"])
    assert z.crs.to_epsg() == 4326 and z["study"].sum() == 1
    assert view["value_units"] == "kPa"


def test_mask_on_another_grid_is_rejected(grid, tmp_path):
    import rasterio
    from rasterio.transform import from_origin

    bad = tmp_path / "g.tif"
    bad.write_bytes(grid.read_bytes())
    with rasterio.open(tmp_path / "m.tif", "w", driver="GTiff", width=3, height=3, count=1,
                       dtype="uint8", crs="EPSG:4326",
                       transform=from_origin(-40, 30.04, 0.01, 0.01)) as ds:  # fmt: skip
        ds.write(np.zeros((3, 3), "uint8"), 1)
    meta = dict(FIXTURE_META, study_mask="m.tif")
    (tmp_path / "g.tif.toml").write_text(toml_text(meta), encoding="utf-8")
    with pytest.raises(LayerError, match="not on the grid"):
        load_layer(bad)
