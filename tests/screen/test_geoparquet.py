"""Parquet results are GeoParquet (issue 16): the site point, the ``geo`` metadata, EPSG:4326.

The ``geo`` metadata keys (``version``, ``primary_column``, ``columns`` with
``encoding``, ``geometry_types``, ``crs`` as PROJJSON) are those of the GeoParquet
specification 1.0.0; the WKB bytes are checked against shapely's ``to_wkb``
(GEOS), a general-purpose reference library; ``geopandas.read_parquet`` is the
reader GIS users have.  Sites and layers are invented fixture data.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from tests.screen.conftest import interior_points


def _run(*args):
    return CliRunner().invoke(main, ["screen", *map(str, args), "--quiet"])


@pytest.fixture
def mixed_sites(tmp_path):
    """Good sites and error rows (a bad latitude, a missing one), as a CSV file."""
    lat, lon = interior_points(12, seed=3)
    rows = [f"S{i:02d},{a:.6f},{o:.6f}" for i, (a, o) in enumerate(zip(lat, lon, strict=True))]
    rows[3] = "S03,north,-109.5"
    rows[7] = "S07,,-109.5"
    path = tmp_path / "sites.csv"
    path.write_text("site_id,lat,lon\n" + "\n".join(rows) + "\n", encoding="utf-8")
    return path


def test_parquet_results_open_as_points_in_geopandas(tmp_path, mixed_sites, grid_layer):
    import geopandas as gpd
    import shapely

    out = tmp_path / "r.parquet"
    r = _run(mixed_sites, "-o", out, "--layer", grid_layer)
    assert r.exit_code == 0, r.output
    g = gpd.read_parquet(out)
    assert g.crs.to_epsg() == 4326
    assert g.geometry.name == "geometry"
    error = (g["status"] == "error").to_numpy()
    assert error.tolist() == [i in (3, 7) for i in range(12)]
    assert g.geometry[error].isna().all()  # error rows: null geometry
    pts = g.geometry[~error]
    assert (shapely.get_type_id(pts.values) == 0).all()  # points
    np.testing.assert_array_equal(shapely.get_x(pts.values), g.loc[~error, "site_lon"])
    np.testing.assert_array_equal(shapely.get_y(pts.values), g.loc[~error, "site_lat"])


def test_geo_metadata_follows_the_specification(tmp_path, mixed_sites, grid_layer):
    import pyarrow.parquet as pq
    import pyproj

    out = tmp_path / "r.parquet"
    assert _run(mixed_sites, "-o", out, "--layer", grid_layer).exit_code == 0
    meta = json.loads(pq.read_schema(out).metadata[b"geo"])
    assert meta["version"] == "1.0.0" and meta["primary_column"] == "geometry"
    col = meta["columns"]["geometry"]
    assert col["encoding"] == "WKB" and col["geometry_types"] == ["Point"]
    assert pyproj.CRS.from_json_dict(col["crs"]).to_epsg() == 4326
    assert str(pq.read_schema(out).field("geometry").type) == "binary"


def test_parquet_keeps_every_other_column_as_the_csv_output(tmp_path, mixed_sites, grid_layer):
    """Adding the geometry changes nothing else: same columns, same cells (regression guard)."""
    pq_out, csv_out = tmp_path / "r.parquet", tmp_path / "r.csv"
    assert _run(mixed_sites, "-o", pq_out, "--layer", grid_layer).exit_code == 0
    assert _run(mixed_sites, "-o", csv_out, "--layer", grid_layer).exit_code == 0
    got = pd.read_parquet(pq_out)
    want = pd.read_csv(csv_out, dtype=str, keep_default_na=False)
    assert list(got.columns) == [*want.columns, "geometry"]
    for col in ("site_id", "lat", "lon", "status", "flags", "message", "zone_id"):
        assert got[col].fillna("").astype(str).tolist() == want[col].tolist(), col
    np.testing.assert_allclose(
        got["pg_psf"].to_numpy(float), pd.to_numeric(want["pg_psf"]).to_numpy(float),
        equal_nan=True,
    )  # fmt: skip


def test_an_input_column_named_geometry_is_kept(tmp_path, grid_layer):
    import geopandas as gpd

    path = tmp_path / "sites.csv"
    path.write_text(
        "site_id,lat,lon,geometry\nA,44.5,-109.5,{{ not a point }}\nB,44.5,-108.5,<b>x</b>\n",
        encoding="utf-8",
    )
    out = tmp_path / "r.parquet"
    assert _run(path, "-o", out, "--layer", grid_layer).exit_code == 0
    g = gpd.read_parquet(out)
    assert g.geometry.name == "site_geometry"
    assert g["geometry"].tolist() == ["{{ not a point }}", "<b>x</b>"]  # as given
    assert g.geometry.x.tolist() == [-109.5, -108.5]


@pytest.mark.parametrize(
    ("lon", "lat"),
    [
        ([-109.5, np.nan, 0.0, 180.0], [44.5, 1.0, -0.0, -90.0]),
        ([], []),
        ([np.nan], [np.nan]),
        ([1e-300, -1e300], [5e-324, 2.5]),
    ],
)
def test_point_wkb_is_the_bytes_geos_writes(lon, lat):
    import shapely

    from neve.geo.screen.outputs import point_wkb

    lon, lat = np.asarray(lon, float), np.asarray(lat, float)
    got = point_wkb(lon, lat).to_pylist()
    ok = np.isfinite(lon) & np.isfinite(lat)
    geoms = np.full(len(lon), None, dtype=object)
    geoms[ok] = shapely.points(lon[ok], lat[ok])
    want = shapely.to_wkb(geoms, byte_order=1, output_dimension=2)
    assert got == [None if w is None else bytes(w) for w in want]


def test_geometry_column_names():
    from neve.geo.screen.outputs import geometry_column

    assert geometry_column(["a", "b"]) == "geometry"
    assert geometry_column(["geometry"]) == "site_geometry"
    assert geometry_column(["geometry", "site_geometry"]) == "site_geometry_2"
