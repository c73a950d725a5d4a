"""Site files: column detection, per-row parsing and per-row errors (neve.geo.screen.sitefile)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from neve.engine.errors import InputError
from neve.geo.screen.sitefile import (
    CachedGeocoder,
    geocode_rows,
    load_sites,
    parse_elevation_cells,
    parse_sites,
    read_sites,
)

M_PER_FT = 0.3048  # exact, international foot (NIST SP 811, App. B)


@pytest.mark.parametrize(
    "names",
    [("lat", "lon"), ("LAT", "Lon"), ("latitude", "longitude"), ("Latitude", "LONGITUDE"),
     ("lat", "lng")],
)  # fmt: skip
def test_coordinate_columns_found_case_blind(names):
    df = pd.DataFrame({names[0]: [45.5], names[1]: [-109.5]})
    s = parse_sites(df)
    assert s.source == "latlon"
    assert s.lat[0] == 45.5 and s.lon[0] == -109.5
    assert s.error[0] == ""


def test_missing_coordinate_column_lists_accepted_names():
    with pytest.raises(InputError) as exc:
        parse_sites(pd.DataFrame({"x": [1.0], "y": [2.0]}))
    text = str(exc.value)
    for name in ("lat", "lon", "latitude", "longitude", "address", "geometry"):
        assert name in text


def test_lat_without_lon_is_named():
    with pytest.raises(InputError, match="lon"):
        parse_sites(pd.DataFrame({"lat": [1.0]}))


@pytest.mark.parametrize(
    "lat,lon,fragment",
    [
        ("abc", -109.5, "'abc' is not a number"),
        (None, -109.5, "lat: missing"),
        (91.0, -109.5, "lat: out of range"),
        (-90.5, -109.5, "lat: out of range"),
        (45.0, 180.5, "lon: out of range"),
        (45.0, "", "lon: missing"),
        (float("nan"), 1.0, "lat: missing"),
    ],
)
def test_bad_coordinates_are_row_errors(lat, lon, fragment):
    df = pd.DataFrame({"lat": [45.0, lat], "lon": [-109.0, lon]}, dtype=object)
    s = parse_sites(df)
    assert s.error[0] == ""
    assert fragment in s.error[1]
    assert np.isnan(s.lat[1]) and np.isnan(s.lon[1])


def test_bounds_are_inclusive():
    # common practice: +-90 and +-180 are valid coordinates
    s = parse_sites(pd.DataFrame({"lat": [90.0, -90.0], "lon": [180.0, -180.0]}))
    assert list(s.error) == ["", ""]


@pytest.mark.parametrize(
    "cell,expected_ft",
    [
        ("1200ft", 1200.0),
        ("1200 ft", 1200.0),
        ("412m", 412.0 / M_PER_FT),
        (" 412 M ", 412.0 / M_PER_FT),
        ("-30m", -30.0 / M_PER_FT),
        ("1.5km", 1500.0 / M_PER_FT),
    ],
)
def test_elevation_with_unit_in_cell(cell, expected_ft):
    ft, err = parse_elevation_cells(pd.Series([cell]), None, "elevation")
    assert err[0] == ""
    assert ft[0] == pytest.approx(expected_ft, rel=1e-12)


@pytest.mark.parametrize(
    "cell,fragment",
    [
        ("1200", "bare number"),
        ("1200psf", "not a length"),
        ("high", "is not an elevation"),
        ("40000ft", "out of range"),
    ],
)
def test_bad_elevation_cells_name_the_accepted_forms(cell, fragment):
    ft, err = parse_elevation_cells(pd.Series([cell]), None, "elevation")
    assert np.isnan(ft[0])
    assert fragment in err[0]
    if fragment != "out of range":
        assert "elevation_ft" in err[0] and "412m" in err[0]


def test_elevation_unit_from_column_name():
    df = pd.DataFrame(
        {"lat": [45.5, 45.5, 45.5], "lon": [-109.5] * 3, "Elevation_M": [412, None, "x"]}
    )
    s = parse_sites(df)
    assert s.elevation_ft[0] == pytest.approx(412 / M_PER_FT)
    assert np.isnan(s.elevation_ft[1]) and s.error[1] == ""  # blank: no elevation, not an error
    assert "is not an elevation" in s.error[2]


def test_two_elevation_columns_are_refused():
    df = pd.DataFrame({"lat": [1.0], "lon": [1.0], "elevation_ft": [1], "elevation_m": [1]})
    with pytest.raises(InputError, match="more than one elevation column"):
        parse_sites(df)


def test_duplicate_site_ids_marked_blank_ids_not():
    df = pd.DataFrame(
        {"site_id": ["a", "b", "a", "", None, ""], "lat": [1.0] * 6, "lon": [1.0] * 6}
    )
    s = parse_sites(df)
    assert list(s.duplicate) == [True, False, True, False, False, False]


def test_csv_keeps_site_id_text(tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("site_id,lat,lon\n007,45.5,-109.5\n", encoding="utf-8")
    frame, geom = read_sites(p)
    assert frame["site_id"][0] == "007" and geom is None


@pytest.mark.parametrize(
    "content,fragment",
    [
        (b"", "not a readable csv table"),
        (b"site_id,lat,lon\n", "has no rows"),
    ],
)
def test_unreadable_or_empty_csv(tmp_path, content, fragment):
    p = tmp_path / "s.csv"
    p.write_bytes(content)
    with pytest.raises(InputError, match=fragment):
        read_sites(p)


def test_not_a_table(tmp_path):
    p = tmp_path / "s.xlsx"
    p.write_bytes(b"\x89PNG\r\n\x1a\n not a spreadsheet")
    with pytest.raises(InputError, match="not a readable xlsx table"):
        read_sites(p)


def test_unknown_suffix_lists_formats(tmp_path):
    p = tmp_path / "s.doc"
    p.write_text("x")
    with pytest.raises(InputError, match=r"\.csv.*\.gpkg.*\.parquet|\.csv"):
        read_sites(p)


def test_geometry_input_in_another_crs(tmp_path):
    import geopandas as gpd
    import shapely
    from pyproj import Transformer

    # reference: pyproj transforms WGS 84 to UTM zone 12N and back
    to_utm = Transformer.from_crs(4326, 32612, always_xy=True)
    x, y = to_utm.transform(-109.5, 45.5)
    gdf = gpd.GeoDataFrame(
        {"site_id": ["p", "line", "none"]},
        geometry=[shapely.Point(x, y), shapely.LineString([(x, y), (x + 1, y)]), None],
        crs="EPSG:32612",
    )
    path = tmp_path / "pts.gpkg"
    gdf.to_file(path, driver="GPKG")
    s = load_sites(path)
    assert s.source == "geometry"
    assert s.lon[0] == pytest.approx(-109.5, abs=1e-9)
    assert s.lat[0] == pytest.approx(45.5, abs=1e-9)
    assert "not a point" in s.error[1]
    assert "missing" in s.error[2]


def test_address_rows_geocoded_once_each_with_cache():
    calls = []

    def lookup(addr):
        calls.append(addr)
        return {"1 Harbour Rd": (45.5, -109.5), "2 Mill Ln": (44.5, -108.5)}.get(addr)

    df = pd.DataFrame({"address": ["1 Harbour Rd", "2 Mill Ln", "1 Harbour Rd", "9 Nowhere", ""]})
    s = parse_sites(df)
    assert s.source == "address"
    geocoder = CachedGeocoder(lookup)
    geocode_rows(s, geocoder)
    assert s.lat[0] == 45.5 and s.lat[2] == 45.5 and s.lon[1] == -108.5
    assert "not found" in s.error[3]
    assert "address: missing" in s.error[4]
    assert sorted(calls) == ["1 Harbour Rd", "2 Mill Ln", "9 Nowhere"]
    geocode_rows(parse_sites(df), geocoder)  # second run: all cached
    assert len(calls) == 3


def test_geocoder_rate_limit_spaces_calls():
    import time

    stamps = []
    geocoder = CachedGeocoder(
        lambda a: stamps.append(time.monotonic()) or (1.0, 1.0), min_interval_s=0.2
    )
    for a in ("a", "b", "c"):
        geocoder(a)
    gaps = np.diff(stamps)
    assert (gaps >= 0.19).all()


def test_geocoder_failure_is_a_row_error():
    def lookup(addr):
        raise TimeoutError("server did not answer")

    s = parse_sites(pd.DataFrame({"address": ["1 Harbour Rd"]}))
    geocode_rows(s, lookup)
    assert "look-up of '1 Harbour Rd' failed" in s.error[0]


def test_lat_lon_rows_fall_back_on_address():
    df = pd.DataFrame({"lat": [45.0, None], "lon": [-109.0, None], "address": ["x", "2 Mill Ln"]})
    s = parse_sites(df)
    assert s.error[1] == "" and s.address[0] == "" and s.address[1] == "2 Mill Ln"
    geocode_rows(s, lambda a: (44.5, -108.5))
    assert (s.lat[1], s.lon[1]) == (44.5, -108.5)
    assert s.lat[0] == 45.0


from hypothesis import given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

_cells = st.one_of(
    st.none(),
    st.floats(allow_nan=True, allow_infinity=True),
    st.text(max_size=12),
    st.sampled_from(["45.5", "-109.5", "1e3", "91", " 12 ", "NaN", "inf", "1,5"]),
)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(_cells, _cells, _cells), min_size=1, max_size=30))
def test_any_cells_give_one_result_per_row(rows):
    """Property: whatever is in the cells, every row comes back, either located or with a reason."""
    df = pd.DataFrame(rows, columns=["lat", "lon", "elevation"], dtype=object)
    s = parse_sites(df)
    assert len(s.lat) == len(s.lon) == len(s.error) == len(s.elevation_ft) == len(df)
    located = np.isfinite(s.lat) & np.isfinite(s.lon)
    assert ((s.error == "") == located).all()
    assert (np.abs(s.lat[located]) <= 90).all() and (np.abs(s.lon[located]) <= 180).all()
    assert (s.error[~located] != "").all()


def test_wkt_points_in_a_csv(tmp_path):
    p = tmp_path / "s.csv"
    p.write_text("id,geometry\na,POINT (-109.5 45.5)\nb,not wkt\nc,\n", encoding="utf-8")
    s = load_sites(p)
    assert s.source == "geometry"
    assert (s.lat[0], s.lon[0]) == (45.5, -109.5)  # WKT order is x (lon) then y (lat)
    assert "missing" in s.error[1] and "missing" in s.error[2]


def test_result_columns_locate_sites_again():
    s = parse_sites(pd.DataFrame({"address": ["x"], "site_lat": [45.5], "site_lon": [-109.5]}))
    assert s.source == "latlon" and s.lat[0] == 45.5
