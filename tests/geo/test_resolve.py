"""Vectorized site resolution (neve.geo.site.resolve): every status and flag on hand-made layers."""

from __future__ import annotations

import math

import numpy as np
import pytest

from neve.engine.units import KPA_PER_PSF, M_PER_FT
from neve.geo.layers.model import load_layer
from neve.geo.site.resolve import COLUMNS, resolve_points

from .conftest import LAT0, LON0, D, centre, fixture_rows, write_layer

NAN = math.nan


def one(layers, lat, lon, elev=NAN, **kw):
    df = resolve_points([lat], [lon], layers=layers, elevation_ft=[elev], **kw)
    row = df.iloc[0].to_dict()
    row["flag_list"] = [f for f in row["flags"].split(";") if f]
    return row


def test_columns_and_order(grid_layer):
    df = resolve_points([centre(0, 0)[0]], [centre(0, 0)[1]], layers=[grid_layer])
    assert list(df.columns) == COLUMNS


def test_fixed_zone_ok(grid_layer):
    r = one([grid_layer], *centre(0, 0))
    assert (r["status"], r["pg_psf"], r["zone_id"], r["rule"]) == ("ok", 20.0, "Z1", "fixed")
    assert r["pg_kpa"] == pytest.approx(20.0 * KPA_PER_PSF)
    assert r["flag_list"] == [] and r["elevation_source"] == "none"
    assert r["layer_name"] == "fixture grid" and len(r["layer_sha256"]) == 64


def test_study_zone(grid_layer):
    r = one([grid_layer], *centre(2, 0), 100.0)
    assert r["status"] == "study_required" and r["flag_list"] == ["study_required"]
    assert math.isnan(r["pg_psf"]) and math.isnan(r["pg_kpa"])


def test_above_elevation_limit(grid_layer):
    r = one([grid_layer], *centre(1, 0), 600.0)
    assert r["status"] == "study_required"
    assert r["flag_list"] == ["above_elevation_limit", "study_required"]
    assert one([grid_layer], *centre(1, 0), 400.0)["pg_psf"] == 30.0


def test_elevation_limit_unchecked_without_elevation_is_provisional(grid_layer):
    r = one([grid_layer], *centre(1, 0))
    assert (r["status"], r["pg_psf"], r["flag_list"]) == ("provisional", 30.0, ["elevation_needed"])


def test_elevation_needed(grid_layer):
    r = one([grid_layer], *centre(0, 1))
    assert r["status"] == "no_data" and r["flag_list"] == ["elevation_needed"]
    assert "elevation" in r["message"]


def test_elevation_table_and_formula(grid_layer):
    # Z4 table [[0, 20], [1000, 40]]: 20 + 250 * 20 / 1000 = 25 (hand interpolation)
    assert one([grid_layer], *centre(0, 1), 250.0)["pg_psf"] == pytest.approx(25.0)
    # Z5 formula Z + 0.01 A with Z = 10, floor 15: 10 + 20 = 30; at 100 ft the floor governs
    assert one([grid_layer], *centre(1, 1), 2000.0)["pg_psf"] == pytest.approx(30.0)
    assert one([grid_layer], *centre(1, 1), 100.0)["pg_psf"] == pytest.approx(15.0)


def test_outside_layer(grid_layer):
    r = one([grid_layer], LAT0 - 0.05, LON0 + 0.005)
    assert r["status"] == "no_data" and r["flag_list"] == ["outside_layer"]
    assert r["layer_name"] == "" and r["zone_id"] == ""


def test_near_boundary_larger_value_governs(grid_layer):
    # 0.0005 deg west of the Z1 | Z2 edge (lon -39.99): Z1 = 20 psf, Z2 = 30 psf within 100 m
    lat = LAT0 + 0.005
    r = one([grid_layer], lat, LON0 + D - 0.0005, 100.0)
    assert r["status"] == "provisional" and r["flag_list"] == ["near_boundary"]
    assert (r["zone_id"], r["pg_psf"], r["neighbour_values_psf"]) == ("Z1", 30.0, "30")
    # the other side keeps its own, larger value
    r2 = one([grid_layer], lat, LON0 + D + 0.0005, 100.0)
    assert (r2["zone_id"], r2["pg_psf"], r2["flag_list"]) == ("Z2", 30.0, ["near_boundary"])
    # 290 m from the edge: beyond the 100 m tolerance, no flag
    far = one([grid_layer], lat, LON0 + D - 0.003, 100.0)
    assert far["status"] == "ok" and far["flag_list"] == []


def test_boundary_distance_matches_pyproj_geodesic(grid_layer):
    """Distance to the other-valued zone vs pyproj.Geod (WGS 84 geodesic)."""
    from pyproj import Geod

    geod = Geod(ellps="WGS84")
    lat = LAT0 + 0.005
    for offset in (0.0002, 0.0005, 0.0009):
        lon = LON0 + D - offset
        r = one([grid_layer], lat, lon, 100.0)
        # the nearest point of the meridian edge lies (to well under 1 mm here) on the parallel
        _, _, d = geod.inv(lon, lat, LON0 + D, lat)
        assert r["distance_to_other_m"] == pytest.approx(d, rel=2e-3)


def test_mercator_scale_factor_against_pyproj_geodesic():
    """Metres on the ground from EPSG:3395 / k, checked with pyproj.Geod at several latitudes."""
    from pyproj import Geod, Transformer

    from neve.geo.layers.vector import mercator_scale

    geod = Geod(ellps="WGS84")
    tr = Transformer.from_crs(4326, 3395, always_xy=True)
    for lat in (-60.0, 0.0, 30.0, 47.5, 70.0):
        for az in (0.0, 45.0, 90.0, 160.0):
            lon2, lat2, _ = geod.fwd(10.0, lat, az, 500.0)
            x1, y1 = tr.transform(10.0, lat)
            x2, y2 = tr.transform(lon2, lat2)
            d = math.hypot(x2 - x1, y2 - y1) / mercator_scale((lat + lat2) / 2)
            assert d == pytest.approx(500.0, rel=1e-4)


def test_projected_layer_gives_the_same_answers(grid_layer, grid_layer_utm):
    rng = np.random.default_rng(3)
    lat = LAT0 + rng.uniform(-0.002, 0.022, 300)
    lon = LON0 + rng.uniform(-0.002, 0.032, 300)
    elev = rng.uniform(0, 900, 300)
    a = resolve_points(lat, lon, layers=[grid_layer], elevation_ft=elev)
    b = resolve_points(lat, lon, layers=[grid_layer_utm], elevation_ft=elev)
    # edges are straight in each CRS; a site within a few cm of an edge may differ
    same = (a["status"] == b["status"]) & (a["zone_id"] == b["zone_id"])
    assert same.mean() > 0.99
    np.testing.assert_allclose(
        a.loc[same, "pg_psf"].to_numpy(), b.loc[same, "pg_psf"].to_numpy(), equal_nan=True
    )
    both = same & a["distance_to_other_m"].notna()
    np.testing.assert_allclose(
        a.loc[both, "distance_to_other_m"], b.loc[both, "distance_to_other_m"], atol=1.0
    )


def test_overlapping_zones_larger_value_governs(fixture_dir):
    from shapely.geometry import box

    rows = fixture_rows()[:1] + [
        {"zone_id": "OV", "rule": "fixed", "pg": 45.0,
         "geometry": box(LON0 + 0.002, LAT0 + 0.002, LON0 + 0.006, LAT0 + 0.006)}
    ]  # fmt: skip
    path = write_layer(fixture_dir / "overlap.geojson", rows)
    r = one([path], LAT0 + 0.004, LON0 + 0.004)
    assert r["status"] == "provisional" and "overlapping_zones" in r["flag_list"]
    assert r["pg_psf"] == 45.0 and r["zone_id"] == "OV" and r["zone_ids"] == "OV;Z1"


def test_shared_edge_is_near_boundary_not_overlap(grid_layer):
    r = one([grid_layer], LAT0 + 0.005, LON0 + D, 100.0)  # exactly on the Z1 | Z2 edge
    assert "overlapping_zones" not in r["flag_list"] and "near_boundary" in r["flag_list"]
    assert r["pg_psf"] == 30.0 and r["distance_to_other_m"] == 0.0


def test_coordinates_suspect(grid_layer):
    assert "coordinates_suspect" in one([grid_layer], 0.0, 0.0)["flag_list"]
    lat, lon = centre(0, 0)
    r = one([grid_layer], lon, lat)  # swapped: (lon, lat) is in no zone, (lat, lon) is
    assert r["flag_list"] == ["coordinates_suspect", "outside_layer"]


def test_bad_coordinates_are_error_rows(grid_layer):
    df = resolve_points([95.0, NAN, centre(0, 0)[0]], [0.0, 1.0, centre(0, 0)[1]],
                        layers=[grid_layer])  # fmt: skip
    assert list(df["status"]) == ["error", "error", "ok"]
    assert "out of range" in df["message"][0]


def test_defective_zone_is_error(fixture_dir):
    rows = fixture_rows()
    rows[0] = dict(rows[0], rule="fixed", pg=NAN)
    path = write_layer(fixture_dir / "defect.gpkg", rows)
    r = one([path], *centre(0, 0))
    assert r["status"] == "error" and "layer check" in r["message"]


def test_input_order_is_kept_for_many_sites(grid_layer):
    rng = np.random.default_rng(11)
    n = 5000
    lat = LAT0 + rng.uniform(-0.01, 0.03, n)
    lon = LON0 + rng.uniform(-0.01, 0.04, n)
    df = resolve_points(lat, lon, layers=[grid_layer], elevation_ft=np.full(n, 300.0))
    assert len(df) == n
    perm = rng.permutation(n)
    df2 = resolve_points(lat[perm], lon[perm], layers=[grid_layer], elevation_ft=np.full(n, 300.0))
    for col in ("status", "zone_id", "flags"):
        assert (df2[col].to_numpy() == df[col].to_numpy()[perm]).all()


def test_stacking_local_governs_and_others_are_reported(fixture_dir, grid_layer):
    from shapely.geometry import box

    local = write_layer(
        fixture_dir / "local.geojson",
        [{"zone_id": "L1", "rule": "fixed", "pg": 1.5,
          "geometry": box(LON0, LAT0, LON0 + D, LAT0 + D)}],
        {"name": "local amendment", "value_units": "kPa", "elevation_units": "m"},
    )  # fmt: skip
    r = one([local, grid_layer], *centre(0, 0))
    assert r["layer_name"] == "local amendment" and r["zone_id"] == "L1"
    assert r["pg_psf"] == pytest.approx(1.5 / KPA_PER_PSF) and r["pg_kpa"] == pytest.approx(1.5)
    assert r["other_layers"] == "fixture grid=20psf"
    r2 = one([local, grid_layer], *centre(1, 0), 100.0)
    assert r2["layer_name"] == "fixture grid" and r2["pg_psf"] == 30.0
    assert r2["other_layers"] == "local amendment=no_data"


def test_metric_elevation_units(fixture_dir):
    rows = [dict(r) for r in fixture_rows()]
    rows[1]["elev_max"] = 152.4  # metres: = 500 ft
    path = write_layer(fixture_dir / "metric.gpkg", rows, {"elevation_units": "m"})
    assert one([path], *centre(1, 0), 499.0)["status"] == "ok"
    assert one([path], *centre(1, 0), 501.0)["status"] == "study_required"


def test_elevation_columns_in_feet_and_metres(grid_layer):
    r = one([grid_layer], *centre(0, 0), 1000.0)
    assert r["elevation_ft"] == 1000.0 and r["elevation_m"] == pytest.approx(1000.0 * M_PER_FT)


def test_demo_data_flag_on_the_demo_stack():
    from neve.geo.layers.model import demo_layers

    r = one(None, 47.4822, -140.0269)
    assert "demo_data" in r["flag_list"] and "DEMO DATA" in r["message"]
    assert all(layer.demo for layer in demo_layers())


def test_empty_layer_covers_nothing(fixture_dir):
    import geopandas as gpd

    from .conftest import FIXTURE_META, toml_text

    path = fixture_dir / "empty.gpkg"
    gpd.GeoDataFrame({"zone_id": [], "rule": []}, geometry=[], crs=4326).to_file(path)
    (fixture_dir / "empty.gpkg.toml").write_text(toml_text(FIXTURE_META), encoding="utf-8")
    assert len(load_layer(path).zones) == 0
    assert one([path], *centre(0, 0))["flag_list"] == ["outside_layer"]


def test_vectorized_neighbours_match_brute_force_on_the_demo_layer():
    """Every site against every zone, one geometry at a time (shapely.distance), vs the resolver."""
    import shapely
    from pyproj import Transformer

    from neve.geo.layers.model import demo_dem_path, demo_layers
    from neve.geo.layers.vector import mercator_scale

    base = demo_layers()[1]
    rng = np.random.default_rng(0)
    n = 3000
    lat = 47.5 + rng.uniform(-0.15, 0.15, n)
    lon = -140 + rng.uniform(-0.35, 0.35, n)
    df = resolve_points(lat, lon, layers=[base], dem=demo_dem_path())
    flags = df["flags"].to_numpy()
    dist = df["distance_to_other_m"].to_numpy()
    xm, ym = Transformer.from_crs(4326, 3395, always_xy=True).transform(lon, lat)
    pts = shapely.points(xm, ym)
    k = mercator_scale(lat)
    gm = base.frame.geometry.to_crs(3395).values
    dd = np.array([shapely.distance(pts, g) / k for g in gm]).T
    x, y = Transformer.from_crs(4326, base.crs, always_xy=True).transform(lon, lat)
    inside = np.array([shapely.intersects_xy(g, x, y) for g in base.frame.geometry.values]).T
    tol = base.tolerance_m
    for i in range(n):
        if not inside[i].any():
            assert "outside_layer" in flags[i]
            continue
        # every demo zone has its own value at a given elevation, save equal-valued pairs
        others = [dd[i, j] for j in range(len(gm)) if not inside[i, j]]
        expect_near = min(others) <= tol
        if "near_boundary" in flags[i]:
            assert expect_near
            assert dist[i] == pytest.approx(min(others), abs=1e-6)
        elif expect_near:  # only an equal value may be within the tolerance
            assert np.isnan(dist[i]) or dist[i] > tol


def test_near_a_study_zone_is_flagged_and_explained(grid_layer):
    r = one([grid_layer], LAT0 + 0.005, LON0 + 2 * D - 0.0005, 100.0)  # Z2, 48 m from study Z3
    assert r["status"] == "provisional"
    assert r["flag_list"] == ["near_boundary", "study_area_nearby"]  # issue 8, sec. 6
    assert r["pg_psf"] == 30.0 and r["neighbour_values_psf"] == "study"
    assert "site-specific case study lies within 100 m" in r["message"]


def test_prefiltered_and_plain_paths_agree():
    """Many sites (prefilters on) and the same sites in small chunks (off) give one answer."""
    import pandas as pd

    from neve.geo.layers.model import demo_dem_path
    from neve.geo.layers.vector import PREFILTER_MIN_SITES

    rng = np.random.default_rng(21)
    n = PREFILTER_MIN_SITES + 500
    lat = 47.5 + rng.uniform(-0.15, 0.15, n)
    lon = -140 + rng.uniform(-0.35, 0.35, n)
    full = resolve_points(lat, lon, dem=demo_dem_path())
    parts = [
        resolve_points(lat[i : i + 400], lon[i : i + 400], dem=demo_dem_path())
        for i in range(0, n, 400)
    ]
    chunked = pd.concat(parts, ignore_index=True)
    pd.testing.assert_frame_equal(full, chunked)


def test_defective_geometries_do_not_break_the_lookup(fixture_dir):
    """A null geometry and a bow-tie (both reported by `neve layer check`) do not break the
    look-up; sites in the bow-tie are errors (shapely validity), the others resolve."""
    from shapely.geometry import Polygon

    rows = fixture_rows()
    rows[0]["geometry"] = None
    rows[5]["geometry"] = Polygon(
        [(LON0 + 2 * D, LAT0 + D), (LON0 + 3 * D, LAT0 + 2 * D), (LON0 + 3 * D, LAT0 + D),
         (LON0 + 2 * D, LAT0 + 2 * D)]
    )  # fmt: skip
    path = write_layer(fixture_dir / "defective_geoms.gpkg", rows)
    rng = np.random.default_rng(4)
    for n in (50, 3000):  # without and with the prefilters
        lat = LAT0 + rng.uniform(0, 2 * D, n)
        lon = LON0 + rng.uniform(0, 3 * D, n)
        df = resolve_points(lat, lon, layers=[path], elevation_ft=np.full(n, 100.0))
        in_z1 = (lat < LAT0 + D) & (lon < LON0 + D)
        assert (df.loc[in_z1, "zone_id"] != "Z1").all()  # the null zone covers nothing
        in_z6 = (df["zone_id"] == "Z6").to_numpy()  # the bow-tie: never a silent ok (issue 8)
        assert in_z6.any() and (df.loc[in_z6, "status"] == "error").all()
        assert set(df.loc[~in_z6, "status"]) <= {"ok", "provisional", "study_required", "no_data"}
