"""Resolution at the edges (issue 8): study zones at an edge or overlap, a study area
nearby, the elevation-mismatch threshold, DEM values no land surface has, DEM units.

Layers and DEMs are invented fixtures (tests/geo/conftest.py: 0.01-degree cells in the
open Atlantic near 30 N, 40 W).  The behaviours checked are neve's contract: the source
named beside each check is "README, site resolution" (the README's `neve site` section)
or "issue 8" (the hardening issue that states them).
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.errors import InputError
from neve.engine.units import FT_PER_M, M_PER_FT
from neve.geo.site.elevation import DEM_MAX_M, DEM_MIN_M, MISMATCH_M, plausible_dem, stated_unit
from neve.geo.site.one import resolve_site
from neve.geo.site.resolve import more_demanding, resolve_points

from .conftest import LAT0, LON0, D, write_dem, write_layer

NAN = math.nan
BASE = {"pg": NAN, "elev_max": NAN, "table": None, "expr": None, "Z": NAN, "pg_min": NAN}
EDGE_LON = LON0 + D  # the meridian where the fixed zone F meets the study zone S
MID_LAT = LAT0 + D / 2


def zone(zone_id, rule, geometry, **kw) -> dict:
    return dict(BASE, zone_id=zone_id, rule=rule, geometry=geometry, **kw)


def box(x0, y0, x1, y1):
    from shapely.geometry import box as _box

    return _box(x0, y0, x1, y1)


def _no_constant(name: str):
    raise AssertionError(f"JSON output holds {name}, which strict JSON (RFC 8259) does not allow")


def run(*args: str):
    return CliRunner().invoke(main, list(args))


def site_json(*args: str) -> dict:
    """``neve site ... --format json``: exit 0 and one strict JSON object (no NaN, no Infinity)."""
    res = run("site", *args, "--format", "json")
    assert res.exit_code == 0, res.output
    return json.loads(res.stdout, parse_constant=_no_constant)


def one(layer, lat, lon, elev_ft=NAN, **kw) -> dict:
    row = resolve_points([lat], [lon], layers=[layer], elevation_ft=[elev_ft], **kw).iloc[0]
    row = row.to_dict()
    row["flag_list"] = [f for f in row["flags"].split(";") if f]
    return row


def west_of(lon: float, lat: float, metres: float) -> float:
    """Longitude ``metres`` due west of (lon, lat) on the WGS 84 ellipsoid (pyproj.Geod)."""
    from pyproj import Geod

    lon2, _, _ = Geod(ellps="WGS84").fwd(lon, lat, 270.0, metres)
    return float(lon2)


# --- layers: a study zone at an edge and in an overlap, in both row orders ----------------


@pytest.fixture(scope="module", params=["fixed first", "study first"])
def edge_layer(request, tmp_path_factory):
    """F (fixed 20 psf) west of the edge, S (study) east of it: one shared edge."""
    rows = [
        zone("F", "fixed", box(LON0, LAT0, EDGE_LON, LAT0 + D), pg=20.0),
        zone("S", "study", box(EDGE_LON, LAT0, LON0 + 2 * D, LAT0 + D)),
    ]
    if request.param == "study first":
        rows.reverse()
    return write_layer(tmp_path_factory.mktemp("edge") / "edge.geojson", rows)


@pytest.fixture(scope="module", params=["fixed first", "study first"])
def overlap_layer(request, tmp_path_factory):
    """F (fixed 20 psf) and S (study) overlapping in the strip EDGE_LON .. EDGE_LON + D/2."""
    rows = [
        zone("F", "fixed", box(LON0, LAT0, EDGE_LON + D / 2, LAT0 + D), pg=20.0),
        zone("S", "study", box(EDGE_LON, LAT0, LON0 + 2 * D, LAT0 + D)),
    ]
    if request.param == "study first":
        rows.reverse()
    return write_layer(tmp_path_factory.mktemp("overlap") / "overlap.geojson", rows)


@pytest.fixture(scope="module")
def table_layer(tmp_path_factory):
    """T: elevation table [[0, 20], [1000, 40]] (psf over ft); L: fixed 30 psf, elev_max 500 ft."""
    rows = [
        zone("T", "elevation_table", box(LON0, LAT0, LON0 + D, LAT0 + D),
             table="[[0, 20], [1000, 40]]"),
        zone("L", "fixed", box(LON0 + D, LAT0, LON0 + 2 * D, LAT0 + D), pg=30.0, elev_max=500.0),
    ]  # fmt: skip
    return write_layer(tmp_path_factory.mktemp("table") / "table.geojson", rows)


T_SITE = (MID_LAT, LON0 + D / 2)  # centre of T
L_SITE = (MID_LAT, LON0 + 1.5 * D)  # centre of L


def dem(tmp_path, name: str, fill: float, unit: str | None = "metre") -> str:
    return str(write_dem(tmp_path / name, unit=unit, fill=fill))


# --- issue 8, sec. 6.1 and 6.3: study precedes mapped values at an edge and in an overlap --


def test_overlap_of_fixed_and_study_zone_is_study_required(overlap_layer):
    """Inside the overlap: study_required, no value (issue 8, sec. 6; README, site resolution)."""
    r = one(overlap_layer, MID_LAT, EDGE_LON + D / 4, 100.0)
    assert r["status"] == "study_required" and r["zone_id"] == "S"
    assert {"study_required", "overlapping_zones"} <= set(r["flag_list"])
    assert math.isnan(r["pg_psf"]) and r["zone_ids"] == "F;S"
    assert "precedes mapped values" in r["message"]


def test_overlap_site_json_is_strict_and_study_required(overlap_layer):
    """The crash of issue 8 sec. 6.1: NaN reached the JSON encoder (exit 1)."""
    g = site_json("--layer", str(overlap_layer), "--at", f"{MID_LAT},{EDGE_LON + D / 4}")["ground"]
    assert g["status"] == "study_required" and g["pg"] is None
    assert "non_finite_value" not in g["flags"]  # nothing was NaN to begin with
    assert all(s["value"] is None or math.isfinite(s["value"]) for s in g["steps"])
    assert any("precedes the mapped values" in s["description"] for s in g["steps"])


def test_shared_edge_of_fixed_and_study_zone_is_study_required(edge_layer):
    """Exactly on the shared edge the site is in both zones; the study governs (issue 8, 6.3)."""
    r = one(edge_layer, MID_LAT, EDGE_LON, 100.0)
    assert r["status"] == "study_required" and r["zone_id"] == "S"
    assert "study_required" in r["flag_list"] and math.isnan(r["pg_psf"])
    g = site_json("--layer", str(edge_layer), "--at", f"{MID_LAT},{EDGE_LON}")["ground"]
    assert g["status"] == "study_required" and g["pg"] is None and g["zone_ids"] == ["F", "S"]


def test_either_side_of_the_edge(edge_layer):
    """Just inside F: the mapped value, provisional; just inside S: study (README, site resolution)."""
    f = one(edge_layer, MID_LAT, west_of(EDGE_LON, MID_LAT, 1.0), 100.0)
    assert (f["status"], f["pg_psf"], f["zone_id"]) == ("provisional", 20.0, "F")
    s = one(edge_layer, MID_LAT, EDGE_LON + 0.0001, 100.0)
    assert (s["status"], s["zone_id"]) == ("study_required", "S")


# --- issue 8, sec. 6.2: a study area within the boundary tolerance -------------------------


def test_site_30_m_outside_a_study_area_is_flagged_and_provisional(edge_layer):
    """30 m west of S (tolerance 100 m): study_area_nearby, provisional, F's value reported.

    Reading (README, site resolution): the mapped value of the zone that holds the site is
    reported, but the site needs a look: if it may lie in the study area, a study governs.
    """
    lon = west_of(EDGE_LON, MID_LAT, 30.0)
    r = one(edge_layer, MID_LAT, lon, 100.0)
    assert r["status"] == "provisional" and r["pg_psf"] == 20.0 and r["zone_id"] == "F"
    assert {"study_area_nearby", "near_boundary"} <= set(r["flag_list"])
    assert r["distance_to_other_m"] == pytest.approx(30.0, abs=0.5)
    assert "site-specific case study lies within 100 m" in r["message"]
    assert "the larger value governs" not in r["message"]  # a study has no value to compare
    g = site_json("--layer", str(edge_layer), "--at", f"{MID_LAT},{lon}")["ground"]
    assert g["status"] == "provisional" and "study_area_nearby" in g["flags"]
    assert g["pg"]["psf"] == 20.0


def test_no_study_area_flag_beyond_the_tolerance(edge_layer):
    """150 m west of S, beyond the 100 m tolerance: plain ok (README, site resolution)."""
    r = one(edge_layer, MID_LAT, west_of(EDGE_LON, MID_LAT, 150.0), 100.0)
    assert (r["status"], r["flag_list"]) == ("ok", [])


def test_site_outside_every_zone_near_a_study_area(edge_layer):
    """30 m east of S, in no zone: no_data, and the study area is still named (issue 8, 6.2)."""
    from pyproj import Geod

    lon, _, _ = Geod(ellps="WGS84").fwd(LON0 + 2 * D, MID_LAT, 90.0, 30.0)
    r = one(edge_layer, MID_LAT, lon, 100.0)
    assert r["status"] == "no_data"
    assert {"outside_layer", "study_area_nearby"} <= set(r["flag_list"])


def test_roof_loads_on_a_site_near_a_study_area_say_provisional(edge_layer):
    """A roof on a provisional ground value carries ground_provisional (README, site resolution)."""
    lon = west_of(EDGE_LON, MID_LAT, 30.0)
    res = resolve_site(MID_LAT, lon, layers=[edge_layer], roof={"shape": "flat"})
    assert "ground_provisional" in res.roof["flags"]
    assert "study_area_nearby" in res.roof["cautions"][0]


# --- issue 8, sec. 6.5: the 15 m mismatch threshold, bracketed ------------------------------


@pytest.mark.parametrize(
    "given_m, flagged", [(114.0, False), (116.0, True), (86.0, False), (84.0, True)]
)
def test_mismatch_threshold_in_metres(tmp_path, table_layer, given_m, flagged):
    """DEM 100 m: 14 m apart no flag, 16 m apart flag (README: more than 15 m apart)."""
    assert MISMATCH_M == 15.0
    r = one(table_layer, *T_SITE, given_m * FT_PER_M, dem=dem(tmp_path, "d.tif", 100.0))
    assert ("elevation_mismatch" in r["flag_list"]) is flagged
    assert (r["alt_elevation_source"] != "") is flagged


@pytest.mark.parametrize("given", [("1049ft", False), ("1050ft", True)])
def test_mismatch_threshold_in_feet(tmp_path, table_layer, given):
    """A DEM in feet at 1000 ft: 49 ft = 14.94 m no flag, 50 ft = 15.24 m flag
    (1 ft = 0.3048 m, NIST SP 811 Appendix B; threshold: README, site resolution)."""
    text, flagged = given
    path = dem(tmp_path, "ft.tif", 1000.0, unit="ft")
    g = site_json("--layer", str(table_layer), "--at", f"{T_SITE[0]},{T_SITE[1]}",
                  "--dem", path, "--elevation", text)["ground"]  # fmt: skip
    assert ("elevation_mismatch" in g["flags"]) is flagged
    assert bool(g["elevation_alternatives"]) is flagged


# --- issue 8, sec. 3.6: both elevations reported, the larger ground load governs ------------


#: pg of zone T at an elevation of A m: 20 + 20 A / 1000 ft / 0.3048 (the fixture's own table,
#: linear interpolation; 1 ft = 0.3048 m, NIST SP 811 Appendix B)
def t_pg(a_m: float) -> float:
    return 20.0 + 20.0 * (a_m * FT_PER_M) / 1000.0


def test_mismatch_dem_elevation_governs_when_its_load_is_larger(tmp_path, table_layer):
    """Given 50 m, DEM 100 m: pg at both; the DEM's larger pg governs (issue 8, sec. 3)."""
    path = dem(tmp_path, "d.tif", 100.0)
    d = site_json("--layer", str(table_layer), "--at", f"{T_SITE[0]},{T_SITE[1]}",
                  "--dem", path, "--elevation", "50m")  # fmt: skip
    g = d["ground"]
    assert g["status"] == "provisional" and "elevation_mismatch" in g["flags"]
    assert g["pg"]["psf"] == pytest.approx(t_pg(100.0), abs=1e-3)
    assert g["elevation_source"] == "dem" and g["elevation"]["m"] == pytest.approx(100.0)
    assert g["elevation_rule"] == "larger"
    alts = {a["source"]: a for a in g["elevation_alternatives"]}
    assert alts["input"]["pg"]["psf"] == pytest.approx(t_pg(50.0), abs=1e-3)
    assert alts["dem"]["pg"]["psf"] == pytest.approx(t_pg(100.0), abs=1e-3)
    assert (alts["input"]["governs"], alts["dem"]["governs"]) == (False, True)
    assert alts["input"]["elevation"]["m"] == pytest.approx(50.0)
    assert (
        g["steps"][0]["symbol"] == "A"
        and "differ by more than 15 m" in g["steps"][0]["description"]
    )
    assert "DEM elevation governs" in g["message"]


def test_mismatch_given_elevation_governs_with_elevation_source_input(tmp_path, table_layer):
    """--elevation-source input: the given elevation governs; both reported, flag stays."""
    path = dem(tmp_path, "d.tif", 100.0)
    g = site_json(
        "--layer",
        str(table_layer),
        "--at",
        f"{T_SITE[0]},{T_SITE[1]}",
        "--dem",
        path,
        "--elevation",
        "50m",
        "--elevation-source",
        "input",
    )["ground"]
    assert g["pg"]["psf"] == pytest.approx(t_pg(50.0), abs=1e-3)
    assert g["elevation_source"] == "input" and g["elevation_rule"] == "input"
    assert "elevation_mismatch" in g["flags"] and g["status"] == "provisional"
    alts = {a["source"]: a for a in g["elevation_alternatives"]}
    assert alts["dem"]["pg"]["psf"] == pytest.approx(t_pg(100.0), abs=1e-3)
    assert alts["input"]["governs"] and not alts["dem"]["governs"]


def test_mismatch_given_elevation_governs_when_its_load_is_larger(tmp_path, table_layer):
    """Given 200 m above a DEM of 100 m: the given elevation's larger pg governs."""
    r = one(table_layer, *T_SITE, 200.0 * FT_PER_M, dem=dem(tmp_path, "d.tif", 100.0))
    assert r["elevation_source"] == "input"
    assert r["pg_psf"] == pytest.approx(t_pg(200.0)) and r["alt_pg_psf"] == pytest.approx(
        t_pg(100.0)
    )


@pytest.mark.parametrize("given_m, dem_m", [(200.0, 100.0), (100.0, 200.0)])
def test_mismatch_a_study_at_either_elevation_governs(tmp_path, table_layer, given_m, dem_m):
    """Zone L: 30 psf up to 500 ft (152.4 m). A study at either elevation precedes the value
    at the other (README, site resolution: the more demanding result governs)."""
    r = one(table_layer, *L_SITE, given_m * FT_PER_M, dem=dem(tmp_path, "d.tif", dem_m))
    assert r["status"] == "study_required" and "above_elevation_limit" in r["flag_list"]
    assert r["elevation_m"] == pytest.approx(200.0)
    assert r["alt_status"] == "provisional" and r["alt_pg_psf"] == 30.0


def test_more_demanding_ranks_error_study_value_nodata():
    """error > study_required > a value (larger first) > no_data; ties keep the other."""
    ok, prov, study, nodata, err = 0, 1, 2, 3, 4
    a = np.array([study, err, ok, prov, ok, nodata, ok])
    va = np.array([NAN, NAN, 31.0, 30.0, 30.0, NAN, 30.0])
    b = np.array([ok, study, prov, ok, ok, ok, nodata])
    vb = np.array([99.0, NAN, 30.0, 31.0, 30.0, 10.0, NAN])
    assert more_demanding(a, va, b, vb).tolist() == [True, True, True, False, False, False, True]


def test_no_mismatch_no_alternatives(tmp_path, table_layer):
    """Within 15 m, the given elevation is used and nothing else is worked (README)."""
    path = dem(tmp_path, "d.tif", 100.0)
    g = site_json("--layer", str(table_layer), "--at", f"{T_SITE[0]},{T_SITE[1]}",
                  "--dem", path, "--elevation", "105m")["ground"]  # fmt: skip
    assert g["elevation_alternatives"] == [] and g["elevation_source"] == "input"
    assert g["status"] == "ok"


def test_mismatch_text_output_shows_both(tmp_path, table_layer):
    """The text output states both elevations and which governs (issue 8, sec. 3)."""
    path = dem(tmp_path, "d.tif", 100.0)
    res = run("site", "--layer", str(table_layer), "--at", f"{T_SITE[0]},{T_SITE[1]}",
              "--dem", path, "--elevation", "50m")  # fmt: skip
    assert res.exit_code == 0, res.output
    assert "at given 164 ft (50.0 m)" in res.output and "(does not govern)" in res.output
    assert "at DEM   328 ft (100.0 m)" in res.output and "(governs)" in res.output


def test_elevation_source_input_needs_an_elevation(table_layer):
    """--elevation-source input without --elevation: a contradiction, exit 2 (issue 8, 3)."""
    res = run("site", "--layer", str(table_layer), "--at", f"{T_SITE[0]},{T_SITE[1]}",
              "--elevation-source", "input")  # fmt: skip
    assert res.exit_code == 2 and "elevation-source" in res.output
    res = run("site", "--at", "47.5,-140", "--elevation-source", "lowest")
    assert res.exit_code == 2 and "larger" in res.output and "input" in res.output


def test_screen_mismatch_rows(tmp_path, table_layer):
    """neve screen: the larger load governs per row, or the given elevation with
    --elevation-source input; the flag stays on the row (issue 8, sec. 3)."""
    import pandas as pd

    path = dem(tmp_path, "d.tif", 100.0)
    sites = tmp_path / "sites.csv"
    lat, lon = T_SITE
    sites.write_text(f"site_id,lat,lon,elevation\na,{lat},{lon},50m\nb,{lat},{lon},105m\n")
    for rule, expect_a in (("larger", t_pg(100.0)), ("input", t_pg(50.0))):
        out = tmp_path / f"out_{rule}.csv"
        res = run("screen", str(sites), "-o", str(out), "--layer", str(table_layer),
                  "--dem", path, "--elevation-source", rule, "--quiet")  # fmt: skip
        assert res.exit_code == 0, res.output
        df = pd.read_csv(out, dtype={"flags": str}, keep_default_na=False)
        assert df["pg_psf"][0] == pytest.approx(expect_a, abs=1e-6)
        assert "elevation_mismatch" in df["flags"][0] and df["flags"][1] == ""
        assert df["pg_psf"][1] == pytest.approx(t_pg(105.0), abs=1e-6)
        assert "at the DEM elevation pg" in df["message"][0]


# --- issue 8, sec. 3.5: DEM values outside the range of land on Earth ----------------------


def test_plausible_range_is_that_of_land_on_earth():
    """-500 m to 9000 m: the Dead Sea shore (about -430 m) and Everest (about 8,849 m) lie
    inside (from memory; common practice for an elevation sanity range)."""
    assert (DEM_MIN_M, DEM_MAX_M) == (-500.0, 9000.0)
    m = np.array([-430.0, 8849.0, -500.0, 9000.0, -501.0, 9001.0, -9999.0, 32767.0])
    ft, bad = plausible_dem(m * FT_PER_M)
    assert bad.tolist() == [False, False, False, False, True, True, True, True]
    assert np.isnan(ft[bad]).all() and np.isfinite(ft[~bad]).all()


@pytest.mark.parametrize(
    "fill, unit, implausible",
    [(-32768.0, "metre", True), (-501.0, "metre", True), (-499.0, "metre", False),
     (9001.0, "metre", True), (8999.0, "metre", False),
     (30000.0, "ft", True), (29500.0, "ft", False)],
)  # fmt: skip
def test_dem_value_outside_the_plausible_range(tmp_path, table_layer, fill, unit, implausible):
    """Checked after unit conversion: 30,000 ft = 9,144 m is out, 29,500 ft = 8,992 m is in
    (1 ft = 0.3048 m, NIST SP 811 Appendix B; range: common practice, see above)."""
    path = dem(tmp_path, "d.tif", fill, unit=unit)
    g = site_json("--layer", str(table_layer), "--at", f"{T_SITE[0]},{T_SITE[1]}",
                  "--dem", path)["ground"]  # fmt: skip
    assert ("dem_implausible" in g["flags"]) is implausible
    assert "dem_nodata" not in g["flags"]
    if implausible:
        assert g["dem_elevation"] is None and g["elevation_source"] == "none"
        assert g["status"] == "no_data" and "elevation_needed" in g["flags"]
        shown = fill if unit == "metre" else fill * M_PER_FT
        assert f"{round(shown, 1):g} m" in g["message"] and "-500 m to 9000 m" in g["message"]
    else:
        assert g["elevation_source"] == "dem" and g["dem_elevation"] is not None
        assert g["status"] != "no_data"  # an elevation reached the zone's table


def test_implausible_dem_value_with_a_given_elevation(tmp_path, table_layer):
    """A given elevation is used; the DEM value is refused, not compared (issue 8, sec. 3)."""
    r = one(table_layer, *T_SITE, 100.0 * FT_PER_M, dem=dem(tmp_path, "d.tif", -32768.0))
    assert r["elevation_source"] == "input" and r["status"] == "ok"
    assert r["flag_list"] == ["dem_implausible"] and math.isnan(r["dem_elevation_ft"])


# --- issue 8, sec. 3.5: --dem-units never overrides the DEM's own unit ----------------------


def test_dem_units_clash_with_the_stated_unit_is_refused(tmp_path, table_layer):
    """A DEM stating metres with --dem-units ft: exit 2 naming both (issue 8, sec. 3)."""
    path = dem(tmp_path, "m.tif", 100.0, unit="metre")
    res = run("site", "--layer", str(table_layer), "--at", f"{T_SITE[0]},{T_SITE[1]}",
              "--dem", path, "--dem-units", "ft")  # fmt: skip
    assert res.exit_code == 2
    assert "'ft'" in res.output and "'metre'" in res.output and "dem-units" in res.output


def test_dem_units_agreeing_with_the_stated_unit_or_filling_a_gap(tmp_path, table_layer):
    """--dem-units m on a metre DEM is accepted; on a silent DEM it supplies the unit."""
    at = f"{T_SITE[0]},{T_SITE[1]}"
    stated = dem(tmp_path, "m.tif", 100.0, unit="metre")
    silent = dem(tmp_path, "none.tif", 100.0, unit=None)
    for path, units in ((stated, "m"), (stated, "metre"), (silent, "m")):
        g = site_json("--layer", str(table_layer), "--at", at, "--dem", path,
                      "--dem-units", units)["ground"]  # fmt: skip
        assert g["elevation"]["m"] == pytest.approx(100.0)
    g = site_json("--layer", str(table_layer), "--at", at, "--dem", silent,
                  "--dem-units", "ft")["ground"]  # fmt: skip
    assert g["elevation"]["ft"] == pytest.approx(100.0)


def test_stated_unit_from_a_compound_crs():
    """A band without unit metadata: the vertical CRS's unit is the DEM's own statement."""
    from types import SimpleNamespace

    from rasterio.crs import CRS

    ds = SimpleNamespace(units=(None,), crs=CRS.from_user_input("EPSG:32624+5703"))
    assert stated_unit(ds) == ("metre", "vertical CRS")
    ds2 = SimpleNamespace(units=("ft",), crs=CRS.from_epsg(32624))
    assert stated_unit(ds2) == ("ft", "band unit metadata")
    assert stated_unit(SimpleNamespace(units=("",), crs=CRS.from_epsg(32624))) == (None, "")


@pytest.mark.parametrize("command", ["site", "screen"])
def test_dem_units_without_dem_is_refused(tmp_path, command):
    """--dem-units without --dem: exit 2, for neve site and neve screen (issue 8, sec. 3)."""
    if command == "site":
        res = run("site", "--at", "47.5,-140", "--dem-units", "m")
    else:
        sites = tmp_path / "s.csv"
        sites.write_text("lat,lon\n47.5,-140\n")
        res = run("screen", str(sites), "-o", str(tmp_path / "o.csv"), "--dem-units", "m")
        assert not (tmp_path / "o.csv").exists()
    assert res.exit_code == 2 and "dem-units" in res.output and "without --dem" in res.output


def test_dem_units_is_one_choice_in_both_commands():
    """The same option definition in neve site and neve screen (issue 8, sec. 3)."""
    from neve.cli.screen import screen
    from neve.cli.site import site

    def opt(cmd):
        return next(p for p in cmd.params if p.name == "dem_units")

    a, b = opt(site), opt(screen)
    assert type(a.type) is type(b.type) and a.help == b.help
    for cmd in ("site", "screen"):
        res = run(cmd, *(["x.csv", "-o", "y.csv"] if cmd == "screen" else ["--at", "1,1"]),
                  "--dem-units", "cubits")  # fmt: skip
        assert res.exit_code == 2 and "m, ft, us-ft" in res.output


def test_library_refuses_dem_units_without_dem():
    """The same refusal from Python (README: everything the CLI does, with the same names)."""
    with pytest.raises(InputError, match="without --dem"):
        resolve_points([47.5], [-140.0], dem_units="m")
    with pytest.raises(InputError, match="without --dem"):
        resolve_site(47.5, -140.0, dem_units="m")


# --- issue 8, sec. 6.1: no NaN or infinity in any neve site JSON ---------------------------


def test_every_edge_case_gives_strict_json(tmp_path, edge_layer, overlap_layer, table_layer):
    """Every case of this file through the CLI: strict JSON, exit 0 (issue 8, sec. 6)."""
    bad = dem(tmp_path, "bad.tif", -32768.0)
    good = dem(tmp_path, "good.tif", 100.0)
    cases = [
        (overlap_layer, (MID_LAT, EDGE_LON + D / 4), []),
        (edge_layer, (MID_LAT, EDGE_LON), []),
        (edge_layer, (MID_LAT, west_of(EDGE_LON, MID_LAT, 30.0)), ["--elevation", "30m"]),
        (table_layer, T_SITE, ["--dem", bad]),
        (table_layer, T_SITE, ["--dem", good, "--elevation", "10m"]),
        (table_layer, L_SITE, ["--dem", good, "--elevation", "300m"]),
    ]
    for layer, (lat, lon), extra in cases:
        d = site_json("--layer", str(layer), "--at", f"{lat},{lon}", *extra, "--shape", "flat")
        assert "non_finite_value" not in d["ground"]["flags"]


def test_mismatch_a_defect_at_the_dem_elevation_governs_and_is_explained(tmp_path):
    """A formula beyond the 2000 psf bound at the DEM elevation only: error governs, and
    the message accounts for the zone at the DEM elevation (README, site resolution)."""
    layer = write_layer(
        tmp_path / "fx.geojson",
        [zone("FX", "formula", box(LON0, LAT0, LON0 + D, LAT0 + D), expr="A * 10")],
    )  # 50 m = 164 ft -> 1640 psf; 100 m = 328 ft -> 3281 psf, beyond 2000 psf
    r = one(layer, *T_SITE, 50.0 * FT_PER_M, dem=dem(tmp_path, "d.tif", 100.0))
    assert (r["status"], r["elevation_source"]) == ("error", "dem")
    assert r["alt_status"] == "provisional" and r["alt_pg_psf"] == pytest.approx(
        10 * 50.0 * FT_PER_M
    )
    assert "Zone FX" in r["message"] and "328.084 ft" in r["message"]
