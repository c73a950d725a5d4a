"""Elevation input and DEM sampling (neve.geo.site.elevation), checked against rasterio's sample()."""

from __future__ import annotations

import math

import numpy as np
import pytest

from neve.engine.errors import InputError
from neve.engine.units import FT_PER_M
from neve.geo.site.elevation import parse_elevation, sample_dem
from neve.geo.site.resolve import resolve_points

from .conftest import LAT0, LON0, centre, write_dem


@pytest.fixture(scope="module")
def dem(tmp_path_factory):
    return write_dem(tmp_path_factory.mktemp("dem") / "dem.tif")


def test_parse_elevation_units():
    assert parse_elevation("412m") == pytest.approx(412 * FT_PER_M)
    assert parse_elevation("1350ft") == 1350.0
    assert parse_elevation("-20 m") == pytest.approx(-20 * FT_PER_M)
    assert math.isnan(parse_elevation(None))
    for bad in ("412", "412 furlongs", "12000m", 412):
        with pytest.raises(InputError, match="elevation"):
            parse_elevation(bad)


def test_dem_sampling_matches_rasterio_sample(dem):
    """Vectorized window + rowcol sampling vs rasterio DatasetReader.sample (reference)."""
    import rasterio
    from pyproj import Transformer

    rng = np.random.default_rng(5)
    lat = LAT0 + rng.uniform(-0.01, 0.04, 400)
    lon = LON0 + rng.uniform(-0.02, 0.05, 400)
    got = sample_dem(dem, lon, lat)
    with rasterio.open(dem) as ds:
        x, y = Transformer.from_crs(4326, ds.crs, always_xy=True).transform(lon, lat)
        ref = np.array([v[0] for v in ds.sample(zip(x, y, strict=True), masked=True)], dtype=object)
        inside = [
            0 <= r < ds.height and 0 <= c < ds.width
            for r, c in (ds.index(xx, yy) for xx, yy in zip(x, y, strict=True))
        ]
    expected = np.array(
        [float(v) * FT_PER_M if ok and v is not np.ma.masked else np.nan
         for v, ok in zip(ref, inside, strict=True)]
    )  # fmt: skip
    assert np.isnan(got).sum() > 0 and np.isfinite(got).sum() > 100  # both cases exercised
    np.testing.assert_allclose(got, expected, equal_nan=True)


def test_dem_units_from_metadata_or_option(tmp_path):
    ft = write_dem(tmp_path / "ft.tif", unit="ft", fill=1000.0)
    none = write_dem(tmp_path / "none.tif", unit=None, fill=1000.0)
    lat, lon = centre(1, 1)
    assert sample_dem(ft, [lon], [lat])[0] == 1000.0
    with pytest.raises(InputError, match="dem-units"):
        sample_dem(none, [lon], [lat])
    assert sample_dem(none, [lon], [lat], dem_units="m")[0] == pytest.approx(1000 * FT_PER_M)
    # US survey foot: 1200/3937 m (NIST SP 811 Appendix B)
    got = sample_dem(none, [lon], [lat], dem_units="US survey foot")[0]
    assert got == pytest.approx(1000 * 1200 / 3937 * FT_PER_M)
    with pytest.raises(InputError, match="unknown vertical unit"):
        sample_dem(none, [lon], [lat], dem_units="cubits")


def test_missing_dem_is_input_error(tmp_path):
    with pytest.raises(InputError, match="dem"):
        sample_dem(tmp_path / "nope.tif", [0.0], [0.0])


def test_resolver_uses_the_dem_and_flags_nodata_and_mismatch(grid_layer, dem):
    lat, lon = centre(0, 1)  # Z4: elevation table, needs elevation
    r = resolve_points([lat], [lon], layers=[grid_layer], dem=dem).iloc[0]
    assert r["elevation_source"] == "dem" and r["status"] == "ok"
    assert r["elevation_ft"] == r["dem_elevation_ft"]
    given = r["dem_elevation_ft"] + 100.0  # 30 m away from the DEM: > 15 m
    r2 = resolve_points([lat], [lon], layers=[grid_layer], dem=dem, elevation_ft=[given]).iloc[0]
    assert r2["elevation_source"] == "input" and r2["elevation_ft"] == given
    assert "elevation_mismatch" in r2["flags"] and r2["status"] == "provisional"
    close = r["dem_elevation_ft"] + 10.0  # 3 m: no flag
    r3 = resolve_points([lat], [lon], layers=[grid_layer], dem=dem, elevation_ft=[close]).iloc[0]
    assert "elevation_mismatch" not in r3["flags"]
    # the DEM's nodata corner (north-west): flagged, and a rule needing elevation cannot run
    far = resolve_points([LAT0 + 0.034], [LON0 - 0.004], layers=[grid_layer], dem=dem).iloc[0]
    assert "dem_nodata" in far["flags"] and far["elevation_source"] == "none"


def test_dem_units_never_override_the_stated_unit(tmp_path):
    """A DEM stating feet: --dem-units m is a clash naming both; foot agrees (issue 8, sec. 3)."""
    from neve.geo.site.elevation import check_dem_options

    ft = write_dem(tmp_path / "ft.tif", unit="ft", fill=1000.0)
    lat, lon = centre(1, 1)
    with pytest.raises(InputError, match=r"'m'.*'ft'"):
        sample_dem(ft, [lon], [lat], dem_units="m")
    with pytest.raises(InputError, match="contradicts"):
        check_dem_options(ft, "metre")
    assert sample_dem(ft, [lon], [lat], dem_units="foot")[0] == 1000.0
    assert check_dem_options(ft, None) == 1.0
    with pytest.raises(InputError, match="without --dem"):
        check_dem_options(None, "m")
    assert check_dem_options(None, None) is None


def test_a_stated_unit_neve_does_not_know_is_refused(tmp_path):
    """A band unit such as 'cubit' is neither guessed nor overridden (issue 8, sec. 3)."""
    odd = write_dem(tmp_path / "odd.tif", unit="cubit", fill=10.0)
    lat, lon = centre(1, 1)
    with pytest.raises(InputError, match="unknown vertical unit 'cubit'"):
        sample_dem(odd, [lon], [lat])
    with pytest.raises(InputError, match="contradicts"):
        sample_dem(odd, [lon], [lat], dem_units="m")


# --- issue 16: the DEM sampled by the inverse geotransform, kept open between calls ---


@pytest.mark.parametrize(
    "transform",
    [
        (0.0025, 0.0, -112.0, 0.0, -0.0025, 46.0),  # north-up degrees
        (30.0, 0.0, 500000.0, 0.0, -30.0, 5000000.0),  # metres
        (10.0, 2.0, 1000.0, 1.5, -10.0, 9000.0),  # rotated
    ],
)
def test_rowcol_floor_matches_rasterio(transform):
    """Reference: rasterio.transform.rowcol(..., op=math.floor), cell edges included."""
    import math

    from affine import Affine
    from rasterio.transform import rowcol

    from neve.geo.site.elevation import rowcol_floor

    t = Affine(*transform)
    rng = np.random.default_rng(3)
    cols = rng.integers(-5, 400, 2000) + rng.choice([0.0, 0.5, 1e-12, 1 - 1e-12], 2000)
    rows = rng.integers(-5, 300, 2000) + rng.choice([0.0, 0.5, 1e-12, 1 - 1e-12], 2000)
    x, y = t * (cols, rows)  # points on and beside cell edges
    x, y = np.asarray(x, float), np.asarray(y, float)
    want_r, want_c = rowcol(t, x, y, op=math.floor)
    got_r, got_c = rowcol_floor(np.array(tuple(~t), float).reshape(3, 3), x, y)
    assert got_r.tolist() == [int(v) for v in want_r]
    assert got_c.tolist() == [int(v) for v in want_c]


def test_rowcol_floor_of_points_that_do_not_transform():
    from neve.geo.site.elevation import rowcol_floor

    r, c = rowcol_floor(np.eye(3), np.array([np.inf, np.nan, 2.5]), np.array([1.0, -np.inf, 3.5]))
    assert r[2] == 3 and c[2] == 2
    assert abs(r[:2]).min() > 1e15 and abs(c[:2]).min() > 1e15  # outside any grid


def test_a_rewritten_dem_is_read_again(tmp_path):
    """The open DEM is keyed by the file's size and time: a new file is a new DEM."""
    import os

    from neve.geo.site.elevation import sample_dem

    path = tmp_path / "d.tif"
    _write_dem(path, 100.0)
    assert sample_dem(path, [-110.5], [44.5], "m")[0] == pytest.approx(100.0 / 0.3048)
    _write_dem(path, 200.0)
    os.utime(path, ns=(1, 10**18))  # a different time even on a coarse clock
    assert sample_dem(path, [-110.5], [44.5], "m")[0] == pytest.approx(200.0 / 0.3048)


def _write_dem(path, value: float) -> None:
    import rasterio
    from affine import Affine

    with rasterio.open(path, "w", driver="GTiff", width=4, height=4, count=1, dtype="float32",
                       crs="EPSG:4326", transform=Affine(0.5, 0, -111.0, 0, -0.5, 45.0)) as dst:  # fmt: skip
        dst.write(np.full((1, 4, 4), value, dtype=np.float32))
