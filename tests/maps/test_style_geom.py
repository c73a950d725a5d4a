"""Value classes, bands, escaping, the local CRS and distances near a site."""

from __future__ import annotations

import math

import pytest

from neve.engine.errors import InputError, LayerError
from neve.maps import style
from neve.maps.geom import check_zones, local_crs, site_lat_lon, zones_near
from tests.maps.conftest import SITE_LAT, SITE_LON, make_view


@pytest.mark.parametrize(
    ("lat", "lon", "epsg"),
    [
        # UTM: 6-degree zones numbered eastward from 180 W; WGS 84 / UTM north is
        # EPSG 326zz and south 327zz (EPSG registry convention; common practice)
        (44.005, -110.004, 32612),
        (-33.92, 18.42, 32734),
        (51.48, -0.001, 32630),
        (51.48, 0.001, 32631),
        (0.5, 179.9, 32660),
    ],
)
def test_local_crs_is_the_utm_zone_of_the_site(lat, lon, epsg):
    assert local_crs(lat, lon).to_epsg() == epsg


def test_local_crs_polar_sites_use_a_local_azimuthal_projection():
    # UTM is defined from 80 S to 84 N (common practice); beyond, a local projection
    crs = local_crs(86.0, 10.0)
    assert crs.to_epsg() is None
    assert "Azimuthal Equidistant" in crs.coordinate_operation.method_name
    assert crs.is_projected


def test_distance_to_a_neighbouring_zone_matches_the_geodesic():
    """Planar UTM distance vs pyproj's geodesic (Karney) on WGS 84: within 0.3 %."""
    from pyproj import Geod

    view = make_view()
    near = zones_near(check_zones(view), SITE_LAT, SITE_LON, 5000.0, keep_ids=["V11"])
    d = near.set_index("zone_id")["distance_m"]
    assert d["V11"] == 0.0  # the site lies inside its own zone
    # V12's west edge is 0.015 degrees east of the site (fixture geometry)
    _, _, geodesic = Geod(ellps="WGS84").inv(SITE_LON, SITE_LAT, SITE_LON + 0.015, SITE_LAT)
    assert d["V12"] == pytest.approx(geodesic, rel=3e-3)


def test_zones_near_keeps_only_the_neighbourhood_but_always_the_governing_zone():
    view = make_view()
    zones = check_zones(view)
    near = zones_near(zones, SITE_LAT, SITE_LON, 100.0, keep_ids=["V00"])
    # only the site's own zone is within 100 m; V00 is kept because it was asked for
    assert set(near["zone_id"]) == {"V11", "V00"}


def test_check_zones_names_missing_columns():
    view = make_view()
    view["zones"] = view["zones"].drop(columns=["rule"])
    with pytest.raises(LayerError, match="rule"):
        check_zones(view)


def test_check_zones_reprojects_to_wgs84():
    view = make_view()
    view["zones"] = view["zones"].to_crs(3857)
    zones = check_zones(view)
    assert zones.crs.to_epsg() == 4326
    assert zones.total_bounds[0] == pytest.approx(SITE_LON - 0.045, abs=1e-9)


@pytest.mark.parametrize("site", [{}, {"lat": "x", "lon": 1}, {"lat": 95.0, "lon": 0.0}])
def test_site_lat_lon_rejects_bad_sites(site):
    with pytest.raises(InputError, match="site"):
        site_lat_lon({"site": site})


def test_value_classes_exact_values_low_to_high():
    classes = style.value_classes([35.0, 20.0, float("nan"), None, 35.0, 50.0])
    assert [c["lo"] for c in classes] == [20.0, 35.0, 50.0]
    assert classes[0]["colour"] == style.VALUE_COLOURS[0]
    assert classes[-1]["colour"] == style.VALUE_COLOURS[-1]
    assert style.colour_for(35.0, classes) == classes[1]["colour"]
    assert style.colour_for(float("nan"), classes) is None


def test_value_classes_bins_many_values_on_round_edges():
    values = [10.0 + 1.7 * i for i in range(40)]
    classes = style.value_classes(values)
    assert len(classes) <= len(style.VALUE_COLOURS)
    assert classes[0]["lo"] <= min(values) and classes[-1]["hi"] > max(values)
    # every value falls in exactly one class (regression guard on the binning)
    for v in values:
        assert sum(c["lo"] <= v < c["hi"] for c in classes) == 1


@pytest.mark.parametrize(
    ("pg", "band"),
    [(0.0, 0), (9.99, 0), (10.0, 1), (29.9, 2), (30.0, 3), (99.9, 5), (100.0, 6), (400.0, 6),
     (float("nan"), -1), (None, -1), ("x", -1)],
)  # fmt: skip
def test_portfolio_bands_of_our_own(pg, band):
    # bands are neve's own design (style.PORTFOLIO_BANDS_PSF): regression guard
    assert style.portfolio_band(pg) == band


def test_text_helpers():
    assert style.esc("<a href='x'>\"") == "&lt;a href=&#x27;x&#x27;&gt;&quot;"
    assert style.load_text({"psf": 35.0, "kPa": 1.6758}) == "35 psf (1.68 kPa)"
    assert style.length_text({"ft": 984.3, "m": 300.0}) == "984.3 ft (300 m)"
    assert style.num(float("inf")) == "\u2014"
    assert style.short_sha("ab" * 32) == "abababababab"
    assert math.isinf(style.PORTFOLIO_BANDS_PSF[-1][0])
