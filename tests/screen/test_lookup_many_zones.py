"""neve.geo.layers.vector.layer_hits on a layer of many zones (the zone-box grid) and the points it builds.

The layer is an invented 12 x 12 grid of square zones with made-up values in
an imaginary basin; none of it is any jurisdiction's map.  Answers are checked
against shapely's point-in-polygon test and pyproj's WGS 84 geodesic, the
number of point objects built per call is a regression guard.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest

from neve.geo.layers.model import load_layer
from neve.geo.layers.vector import FEW_ZONES, PREFILTER_MIN_SITES, layer_hits

#: the invented grid: lon -111..-108, lat 43..46 in 0.25 deg squares
WEST, SOUTH, STEP, CELLS = -111.0, 43.0, 0.25, 12

SIDECAR = """\
name = "many-zone fixture grid"
jurisdiction = "Virel Basin (invented test fixture)"
standard = "ASCE 7-16"
value_units = "psf"
elevation_units = "ft"
source = "invented for neve's tests"
license = "CC0-1.0"
date = 2026-01-01
boundary_tolerance_m = 100
demo = false
"""


def _value(i: int, j: int) -> float:
    return float(10 + 5 * ((3 * i + 7 * j) % 17))  # neighbours never share a value


@pytest.fixture(scope="module")
def many_zones(tmp_path_factory) -> Path:
    import geopandas as gpd
    import shapely

    rows = []
    for i in range(CELLS):
        for j in range(CELLS):
            x0, y0 = WEST + i * STEP, SOUTH + j * STEP
            rows.append(
                {
                    "zone_id": f"C{i:02d}{j:02d}",
                    "rule": "fixed",
                    "pg": _value(i, j),
                    "geometry": shapely.box(x0, y0, x0 + STEP, y0 + STEP),
                }
            )
    path = tmp_path_factory.mktemp("many") / "many.gpkg"
    gpd.GeoDataFrame(rows, geometry="geometry", crs="EPSG:4326").to_file(path, driver="GPKG")
    Path(f"{path}.toml").write_text(SIDECAR, encoding="utf-8")
    return path


def _interior(n: int, seed: int = 3) -> tuple[np.ndarray, np.ndarray]:
    rng = np.random.default_rng(seed)
    i, j = rng.integers(0, CELLS, n), rng.integers(0, CELLS, n)
    fx, fy = rng.uniform(0.05, 0.95, n), rng.uniform(0.05, 0.95, n)
    return SOUTH + (j + fy) * STEP, WEST + (i + fx) * STEP


def test_the_fixture_takes_the_grid_path(many_zones):
    from neve.geo.layers.vector import box_grid

    layer = load_layer(many_zones)
    assert len(layer.zones) == CELLS * CELLS > FEW_ZONES
    assert box_grid(layer).usable


def test_zones_match_shapely_point_in_polygon(many_zones):
    """Reference: shapely.contains_xy on each invented square (a general-purpose library)."""
    import shapely

    layer = load_layer(many_zones)
    rng = np.random.default_rng(9)
    n = PREFILTER_MIN_SITES + 500  # the prefiltered path
    lat = rng.uniform(SOUTH - 0.2, SOUTH + CELLS * STEP + 0.2, n)
    lon = rng.uniform(WEST - 0.2, WEST + CELLS * STEP + 0.2, n)
    h = layer_hits(layer, lon, lat, np.full(n, np.nan))
    ref = np.full(n, "", dtype=object)
    for zid, geom in zip(layer.frame["zone_id"], layer.frame.geometry, strict=True):
        ref[shapely.contains_xy(geom, lon, lat)] = zid
    assert (ref != "").sum() > 0.7 * n and (ref == "").sum() > 0  # both cases are exercised
    np.testing.assert_array_equal(h.zone_id, ref)
    np.testing.assert_array_equal(h.covered, ref != "")


@pytest.mark.parametrize("offset_m", [20.0, 60.0, 95.0])
def test_boundary_distance_matches_pyproj_geodesic(many_zones, offset_m):
    """Distance to the next zone east vs pyproj.Geod on WGS 84 (within 0.5 %)."""
    from pyproj import Geod

    geod = Geod(ellps="WGS84")
    layer = load_layer(many_zones)
    lat0, lon_edge = _interior(PREFILTER_MIN_SITES)  # a large call, so the prefilter runs
    i = np.floor((lon_edge - WEST) / STEP)
    lon_edge = WEST + (i + 1) * STEP  # the zone's east edge ...
    keep = i < CELLS - 1  # ... with a zone beyond it
    lat0, lon_edge = lat0[keep], lon_edge[keep]
    lon0, _, _ = geod.fwd(lon_edge, lat0, np.full(lat0.size, 270.0), np.full(lat0.size, offset_m))
    h = layer_hits(layer, lon0, lat0, np.full(lat0.size, np.nan))
    _, _, ref = geod.inv(lon0, lat0, lon_edge, lat0)
    np.testing.assert_allclose(h.dist_other_m, ref, rtol=5e-3)
    assert h.near.all()  # every one is within the 100 m tolerance of another value


def test_points_are_built_once_per_site_per_crs(many_zones, monkeypatch):
    """Regression guard for the speed item: no site's point object is built twice in one CRS."""
    import shapely

    layer = load_layer(many_zones)
    lat, lon = _interior(PREFILTER_MIN_SITES + 1000, seed=21)
    lat[:300] = SOUTH + 3 * STEP + 2e-4  # about 20 m from an edge: in the neighbour band
    layer_hits(layer, lon, lat, np.full(lat.size, np.nan))  # build the layer's caches first
    built: list[int] = []
    real = shapely.points

    def counting(*args, **kwargs):
        out = real(*args, **kwargs)
        built.append(np.size(out))
        return out

    monkeypatch.setattr(shapely, "points", counting)
    h = layer_hits(layer, lon, lat, np.full(lat.size, np.nan))
    assert h.near[:300].all()
    # none in the layer's CRS (the zone-box grid needs none), one in World Mercator (the band)
    assert len(built) == 1
    assert 300 <= built[0] < lat.size
