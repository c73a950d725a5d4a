"""Bounds on every value a layer can produce, and what `neve layer check` finds (issue 8 §3-4).

Sources named beside the checks:

- the plausibility bound, 2000 psf (95.8 kPa): "common practice" (no mapped
  ground snow load comes near it; a value beyond it is a unit or data-entry
  error); 1 psf = 0.0478803 kPa from NIST SP 811 Appendix B;
- the area of use of a CRS: pyproj ``CRS.area_of_use`` (EPSG registry data);
- geometry validity: shapely ``is_valid`` / ``is_valid_reason`` (GEOS, OGC
  simple features rules);
- IEEE 754 double precision: ``10**10**10`` and ``exp(1000)`` overflow,
  ``x/0`` and ``log(0)`` have no finite value ("common practice").

Every layer here is hand-made, invented fixture data (tests/geo/conftest.py).
"""

from __future__ import annotations

import json
import math
import warnings
from pathlib import Path

import numpy as np
import pytest
from click.testing import CliRunner
from shapely.geometry import Polygon, box

from neve.cli import main
from neve.geo.layers import rules as R
from neve.geo.layers.check import check_layer
from neve.geo.layers.formula import ExpressionError, compile_expr
from neve.geo.layers.model import load_layer
from neve.geo.site.resolve import resolve_points

from .conftest import FIXTURE_META, LAT0, LON0, cell, centre, fixture_rows, toml_text, write_layer

NAN = float("nan")
BASE = {"pg": NAN, "elev_max": NAN, "table": None, "expr": None, "Z": NAN, "pg_min": NAN}


def zone(zid: str, rule: str, geometry=None, **kw) -> dict:
    return dict(BASE, zone_id=zid, rule=rule, geometry=geometry or cell(0, 0), **kw)


def one_zone(tmp_path: Path, name: str = "z.geojson", meta: dict | None = None, **row) -> Path:
    """A layer of one zone in fixture cell (0, 0) plus a fixed 20 psf zone in cell (1, 0)."""
    rows = [dict(BASE, geometry=cell(0, 0), **row), zone("OK1", "fixed", cell(1, 0), pg=20.0)]
    return write_layer(tmp_path / name, rows, meta)


def run(*args: str):
    return CliRunner().invoke(main, list(args))


def check_json(path) -> tuple[int, dict]:
    res = run("layer", "check", str(path), "--format", "json")
    return res.exit_code, json.loads(res.stdout)


def site_json(layer, lat, lon, *extra) -> dict:
    res = run("site", "--at", f"{lat},{lon}", "--layer", str(layer), *extra, "--format", "json")
    assert res.exit_code == 0, res.output
    assert res.stderr == ""  # no traceback, no numpy warning
    return json.loads(res.stdout)["ground"]


def kinds_of(report: dict, zone_id=None) -> set[str]:
    return {p["kind"] for p in report["problems"] if zone_id is None or p["zone_id"] == zone_id}


LAT, LON = centre(0, 0)


# --- §3: the 2000 psf bound holds for every value a layer can produce ---------------------


@pytest.mark.parametrize(
    "row, kind, shown",
    [
        # common practice: 2000 psf plausibility bound on every value
        ({"rule": "fixed", "pg": 20.0, "pg_min": 1e6}, "implausible_value", "1000000"),
        ({"rule": "fixed", "pg": 2500.0}, "implausible_value", "2500"),
        ({"rule": "fixed", "pg": -5.0}, "parameter", "-5"),
        ({"rule": "fixed", "pg": 20.0, "pg_min": -1.0}, "parameter", "-1"),
        ({"rule": "elevation_table", "table": "[[0, 20], [1000, 3000]]"}, "implausible_value",
         "2000"),
        ({"rule": "elevation_table", "table": "[[0, 20], [1000, -3]]"}, "table", "negative"),
        ({"rule": "formula", "expr": "Z * 1000", "Z": 20.0}, "implausible_value", "20000"),
        ({"rule": "formula", "expr": "Z - 50", "Z": 20.0}, "formula_range", "-30"),
    ],
)  # fmt: skip
def test_out_of_bound_values_are_layer_defects_and_site_errors(tmp_path, row, kind, shown):
    layer = one_zone(tmp_path, zone_id="X1", **row)
    code, rep = check_json(layer)
    assert code == 1 and kind in kinds_of(rep, "X1"), rep["problems"]
    assert any(shown in p["message"] for p in rep["problems"] if p["zone_id"] == "X1")
    g = site_json(layer, LAT, LON, "--elevation", "500ft")
    assert g["status"] == "error" and g["pg"] is None
    assert "X1" in g["message"] and shown in g["message"]
    # the other zone of the same layer still gives its value (the defect stays in its zone)
    assert site_json(layer, *centre(1, 0))["status"] == "ok"


def test_pg_min_of_a_million_is_no_longer_ok_through_the_library(tmp_path):
    layer = one_zone(tmp_path, zone_id="M1", rule="fixed", pg=20.0, pg_min=1e6)
    zt = load_layer(layer).zones
    assert "implausible_value" in {p["kind"] for p in zt.problems}
    v, s = R.evaluate(zt, np.array([0]), np.array([100.0]))
    assert s[0] == R.BAD and math.isnan(v[0])
    r = resolve_points([LAT], [LON], layers=[layer], elevation_ft=[100.0]).iloc[0]
    assert r["status"] == "error" and math.isnan(r["pg_psf"])
    assert "M1" in r["message"] and "1000000" in r["message"]


def test_bound_in_kpa_layers_is_the_same_load(tmp_path):
    # 2000 psf x 0.0478803 kPa/psf = 95.76 kPa (NIST SP 811 Appendix B; common practice bound)
    assert R.plausible_limit("kPa") == pytest.approx(95.76, abs=0.01)
    meta = {"value_units": "kPa"}
    ok = one_zone(tmp_path, "k_ok.geojson", meta, zone_id="K1", rule="fixed", pg=95.0)
    big = one_zone(tmp_path, "k_big.geojson", meta, zone_id="K1", rule="fixed", pg=96.0)
    assert check_json(ok)[0] == 0
    code, rep = check_json(big)
    assert code == 1 and "implausible_value" in kinds_of(rep, "K1")


def test_every_valued_state_is_within_the_bound_after_evaluation(tmp_path):
    """Belt and braces: evaluate() never returns a value outside 0..limit (regression guard)."""
    rows = [zone("F1", "formula", expr="Z + 0.5 * A", Z=10.0, pg_min=5.0)]
    zt = load_layer(write_layer(tmp_path / "f.geojson", rows)).zones
    a = np.linspace(0.0, 10_000.0, 501)
    v, s = R.evaluate(zt, np.zeros(a.size, dtype=np.intp), a)
    valued = (s == R.OK) | (s == R.UNCHECKED)
    assert np.all((v[valued] >= 0) & (v[valued] <= 2000.0))
    assert np.all(s[a > (2000.0 - 10.0) / 0.5] == R.NUMERIC)  # 10 + 0.5 A > 2000 psf


# --- rasters ------------------------------------------------------------------------------


@pytest.fixture()
def bad_raster(tmp_path):
    import rasterio
    from rasterio.transform import from_origin

    vals = np.array([[20.0, 1e6], [-5.0, np.inf]], dtype="float32")
    prof = dict(driver="GTiff", width=2, height=2, count=1, crs="EPSG:4326", dtype="float32",
                nodata=-9999.0, transform=from_origin(LON0, LAT0 + 0.02, 0.01, 0.01))  # fmt: skip
    p = tmp_path / "cells.tif"
    with rasterio.open(p, "w", **prof) as ds:
        ds.write(vals, 1)
    (tmp_path / "cells.tif.toml").write_text(toml_text(FIXTURE_META), encoding="utf-8")
    return p


def test_raster_cells_outside_the_bound_are_found_and_give_errors(bad_raster):
    code, rep = check_json(bad_raster)
    assert code == 1
    assert {"implausible_value", "raster_value"} <= kinds_of(rep)  # common practice bound
    texts = " ".join(p["message"] for p in rep["problems"])
    assert "negative" in texts and "infinite" in texts
    # cell centres: (row 0, col 0) 20 psf, (0, 1) 1e6, (1, 0) -5, (1, 1) inf
    lat = [LAT0 + 0.015, LAT0 + 0.015, LAT0 + 0.005, LAT0 + 0.005]
    lon = [LON0 + 0.005, LON0 + 0.015, LON0 + 0.005, LON0 + 0.015]
    res = resolve_points(lat, lon, layers=[bad_raster])
    assert list(res["status"]) == ["ok", "error", "error", "error"]
    assert res["pg_psf"].iloc[0] == pytest.approx(20.0)
    assert "1e+06" in res["message"].iloc[1] and "-5" in res["message"].iloc[2]
    assert "inf" in res["message"].iloc[3]


# --- §3: formulas: bounded literals and intermediate results -------------------------------


@pytest.mark.parametrize(
    "text",
    [
        "1" + "0" * 330,  # a 330-digit literal (the OverflowError of issue 8)
        "1e400",  # not finite as an IEEE double
        "10 ** 10 ** 10",  # overflows an IEEE double
        "exp(1000)",  # e**1000 > 1.8e308
        "A + 1 / 0",
        "sqrt(-1) + A",
        "log(0) * A",
        "A * 0 ** -1",
        "(-8) ** 0.5 + A",
        "A + 2 ** 60",  # beyond the intermediate bound, 1e15
    ],
)
def test_constant_overflow_and_undefined_parts_are_refused_at_parse(text):
    with pytest.raises(ExpressionError):
        compile_expr(text)


def test_small_and_ordinary_numbers_still_parse():
    # from memory: formula zones use constants such as 0.02, 1000, 4500 and small coefficients
    e = compile_expr("Z + 1.5e-6 * A ** 2 + 0.02 * max(A - 1000, 0)")
    assert float(e.evaluate({"A": 2000.0, "Z": 10.0})) == pytest.approx(10 + 6.0 + 20.0)


@pytest.mark.parametrize(
    "expr, elev_ft, cause",
    [
        ("A ** 1000", 100.0, "overflows"),  # 100**1000 overflows an IEEE double
        ("min(exp(A), 30)", 1000.0, "overflows"),  # an intermediate overflow, hidden by min
        ("20 / (A - 100)", 100.0, "divides by zero"),
        ("sqrt(100 - A)", 400.0, "undefined"),
        ("log(A - 100)", 100.0, "undefined"),
    ],
)
def test_failure_of_a_formula_at_a_site_is_an_error_for_that_site(tmp_path, expr, elev_ft, cause):
    layer = one_zone(tmp_path, zone_id="F1", rule="formula", expr=expr)
    g = site_json(layer, LAT, LON, "--elevation", f"{elev_ft:g}ft")
    assert g["status"] == "error" and g["pg"] is None
    assert "F1" in g["message"] and cause in g["message"]
    # layer check finds the same failure over the claimed range
    code, rep = check_json(layer)
    assert code == 1 and any(cause in p["message"] for p in rep["problems"])


def test_formula_failures_raise_no_numpy_warning(tmp_path):
    layer = load_layer(
        write_layer(tmp_path / "w.geojson", [zone("W1", "formula", expr="20 / (A - 100) + log(A)")])
    )
    with warnings.catch_warnings():
        warnings.simplefilter("error")  # any RuntimeWarning from numpy would raise here
        v, s = R.evaluate(layer.zones, np.zeros(3, np.intp), np.array([0.0, 100.0, 500.0]))
        rep = check_layer(layer.path)
    assert list(s) == [R.NUMERIC, R.NUMERIC, R.OK] and not rep["ok"]
    assert v[2] == pytest.approx(20 / 400 + math.log(500))


def test_huge_literal_in_site_and_screen_is_an_error_row_not_a_crash(tmp_path):
    layer = one_zone(tmp_path, zone_id="L1", rule="formula", expr="1" + "0" * 330)
    code, rep = check_json(layer)
    assert code == 1 and kinds_of(rep, "L1") == {"expression"}
    g = site_json(layer, LAT, LON, "--elevation", "100ft")
    assert g["status"] == "error" and "L1" in g["message"]
    sites = tmp_path / "s.csv"
    sites.write_text(
        f"site_id,lat,lon,elevation_ft\na,{LAT},{LON},100\nb,{centre(1, 0)[0]},{centre(1, 0)[1]},100\n",
        encoding="utf-8",
    )
    out = tmp_path / "out.csv"
    res = run("screen", str(sites), "-o", str(out), "--layer", str(layer), "--quiet")
    assert res.exit_code == 0, res.output
    import pandas as pd

    df = pd.read_csv(out)
    assert list(df["status"]) == ["error", "ok"] and "L1" in df["message"].iloc[0]
    assert res.stderr == ""


def test_screen_rows_with_failing_formulas_are_errors_and_print_no_warning(tmp_path):
    import pandas as pd

    rows = [
        zone("R1", "formula", cell(0, 0), expr="A ** 1000"),  # overflows an IEEE double
        zone("R2", "formula", cell(1, 0), expr="Z - 0.1 * A", Z=20.0),  # negative above 200 ft
        zone("R3", "formula", cell(2, 0), expr="20 / (A - 100)"),  # x / 0 at 100 ft
    ]
    layer = write_layer(tmp_path / "rt.geojson", rows)
    (la, lo), (lb, lb_lon), (lc, lc_lon) = centre(0, 0), centre(1, 0), centre(2, 0)
    sites = tmp_path / "s.csv"
    sites.write_text(
        "site_id,lat,lon,elevation_ft\n"
        f"a,{la},{lo},100\nb,{lb},{lb_lon},500\nc,{lc},{lc_lon},100\nd,{lb},{lb_lon},100\n",
        encoding="utf-8",
    )
    out = tmp_path / "out.csv"
    res = run("screen", str(sites), "-o", str(out), "--layer", str(layer), "--quiet")
    assert res.exit_code == 0 and res.stderr == "", res.output
    df = pd.read_csv(out)
    assert list(df["status"]) == ["error", "error", "error", "ok"]
    assert df["pg_psf"].iloc[3] == pytest.approx(10.0)  # 20 - 0.1 x 100 (arithmetic)
    assert "overflows" in df["message"].iloc[0] and "R1" in df["message"].iloc[0]
    assert "-30" in df["message"].iloc[1]  # 20 - 0.1 x 500
    assert "divides by zero" in df["message"].iloc[2]


# --- §4: formulas and tables over the elevation range the layer claims ---------------------


@pytest.mark.parametrize(
    "elevation_units, row, dirty",
    [
        # 20 / (1000 - A) divides by zero at A = 1000 ft: found without elev_max ...
        ("ft", {"expr": "20 / (1000 - A)"}, True),
        # ... and not when the zone claims only up to 900 ft (values 0.02 to 0.2 psf there)
        ("ft", {"expr": "20 / (1000 - A)", "elev_max": 900.0}, False),
        # 1 / (4600 - A): 4600 m lies above the default range 0-4500 m (clean) ...
        ("m", {"expr": "1 / (4600 - A)"}, False),
        # ... but 4600 ft lies inside it (0-14,764 ft)
        ("ft", {"expr": "1 / (4600 - A)"}, True),
        # a singular point between whole feet is still hit (the numbers in the formula)
        ("ft", {"expr": "1 / (A - 1234.5) ** 2"}, True),
    ],
)
def test_formulas_are_evaluated_over_the_claimed_range(tmp_path, elevation_units, row, dirty):
    meta = {"elevation_units": elevation_units}
    layer = one_zone(tmp_path, meta=meta, zone_id="C1", rule="formula", **row)
    code, rep = check_json(layer)
    assert (code == 1) is dirty, rep["problems"]
    if dirty:
        p = next(p for p in rep["problems"] if p["zone_id"] == "C1")
        assert p["kind"] in ("formula_range", "implausible_value")
        assert p["cause"] in ("division_by_zero", "negative", "above_bound", "overflow")
        assert math.isfinite(p["elevation"])


def test_range_problem_names_zone_cause_and_elevation(tmp_path):
    layer = one_zone(tmp_path, zone_id="D1", rule="formula", expr="20 / (A - 1000)")
    code, rep = check_json(layer)
    by_cause = {p["cause"]: p for p in rep["problems"] if p["zone_id"] == "D1"}
    assert by_cause["division_by_zero"]["elevation"] == 1000.0  # IEEE 754: x / 0 has no value
    assert by_cause["division_by_zero"]["kind"] == "formula_range"
    # 20 / (A - 1000) < 0 for every A below 1000 ft, from the bottom of the range (A = 0)
    assert by_cause["negative"]["kind"] == "formula_range"
    assert by_cause["negative"]["elevation"] == 0.0
    msg = by_cause["negative"]["message"]
    assert "D1" in msg and "A = 0 to 99" in msg  # up to the last point checked below 1000 ft


def test_tables_within_bounds_are_clean_and_demo_layers_stay_clean():
    from neve.geo.layers.model import DEMO_DIR, DEMO_LAYER_FILES

    for f in DEMO_LAYER_FILES:  # regression guard: the invented demo layers pass every check
        assert check_layer(DEMO_DIR / f)["problems"] == []


def test_fixture_grids_in_degrees_and_utm_are_clean(grid_layer, grid_layer_utm):
    assert check_layer(grid_layer)["problems"] == []
    assert check_layer(grid_layer_utm)["problems"] == []  # pyproj: UTM 24N covers 42-36 W


# --- §4: coordinates outside the declared CRS's area of use --------------------------------


def test_utm_metres_labelled_as_degrees_are_found(tmp_path):
    import geopandas as gpd

    gdf = gpd.GeoDataFrame(fixture_rows(), geometry="geometry", crs=4326).to_crs(32624)
    gdf = gdf.set_crs(4326, allow_override=True)  # metres, labelled EPSG:4326
    p = tmp_path / "utm_as_deg.gpkg"
    gdf.to_file(p)
    (tmp_path / "utm_as_deg.gpkg.toml").write_text(toml_text(FIXTURE_META), encoding="utf-8")
    code, rep = check_json(p)
    crs = [x for x in rep["problems"] if x["kind"] == "crs_area"]
    assert code == 1 and len(crs) == 1  # pyproj: EPSG:4326 area of use is +-180, +-90
    assert crs[0]["swapped"] is False and "projected metres" in crs[0]["message"]
    assert set(crs[0]["zone_ids"]) == {"Z1", "Z2", "Z3", "Z4", "Z5", "Z6"}
    # look-ups on it never match and print nothing (2500 sites: the prefilters run too)
    sites = tmp_path / "many.csv"
    rng = np.random.default_rng(8)
    lat, lon = LAT0 + rng.uniform(0, 0.02, 2500), LON0 + rng.uniform(0, 0.03, 2500)
    sites.write_text("lat,lon\n" + "".join(f"{a},{b}\n" for a, b in zip(lat, lon, strict=True)))
    out = tmp_path / "many_out.parquet"
    res = run("screen", str(sites), "-o", str(out), "--layer", str(p), "--quiet")
    assert res.exit_code == 0 and res.stderr == "", res.stderr
    import pandas as pd

    assert set(pd.read_parquet(out)["status"]) == {"no_data"}


def test_swapped_axes_in_geojson_are_found(tmp_path):
    # invented zones near 40 N, 105 W, written with latitude as x (the swap of issue 8)
    rows = [
        zone("S1", "fixed", box(40.0, -105.0, 40.01, -104.99), pg=20.0),
        zone("S2", "fixed", box(40.01, -105.0, 40.02, -104.99), pg=30.0),
    ]
    code, rep = check_json(write_layer(tmp_path / "swapped.geojson", rows))
    crs = [x for x in rep["problems"] if x["kind"] == "crs_area"]
    assert code == 1 and crs and crs[0]["swapped"] is True  # pyproj area of use of EPSG:4326
    assert "swapped" in crs[0]["message"]
    fixed = [zone("S1", "fixed", box(-105.0, 40.0, -104.99, 40.01), pg=20.0)]
    assert check_json(write_layer(tmp_path / "right.geojson", fixed))[0] == 0


def test_degrees_labelled_with_a_utm_zone_are_found(tmp_path):
    import geopandas as gpd

    gdf = gpd.GeoDataFrame(fixture_rows(), geometry="geometry", crs=4326)
    gdf = gdf.set_crs(32624, allow_override=True)  # degrees, labelled UTM 24N
    p = tmp_path / "deg_as_utm.gpkg"
    gdf.to_file(p)
    (tmp_path / "deg_as_utm.gpkg.toml").write_text(toml_text(FIXTURE_META), encoding="utf-8")
    code, rep = check_json(p)
    assert code == 1 and "crs_area" in kinds_of(rep)  # pyproj: UTM 24N is 42 W to 36 W


def test_raster_outside_its_crs_area_of_use_is_found(tmp_path):
    import rasterio
    from rasterio.transform import from_origin

    p = tmp_path / "far.tif"
    prof = dict(driver="GTiff", width=2, height=2, count=1, dtype="float32", nodata=-9999.0,
                crs="EPSG:32624", transform=from_origin(9.0e6, 3.3e6, 100.0, 100.0))  # fmt: skip
    with rasterio.open(p, "w", **prof) as ds:
        ds.write(np.full((2, 2), 20.0, dtype="float32"), 1)
    (tmp_path / "far.tif.toml").write_text(toml_text(FIXTURE_META), encoding="utf-8")
    code, rep = check_json(p)
    assert code == 1 and "crs_area" in kinds_of(rep)  # pyproj area of use of UTM 24N


# --- §4: invalid geometries ----------------------------------------------------------------


def test_invalid_geometry_is_reported_with_its_zone_and_never_a_silent_ok(tmp_path):
    # a bow-tie ring crosses itself at the cell centre (shapely: "Self-intersection")
    x0, y0 = LON0, LAT0
    bowtie = Polygon([(x0, y0), (x0 + 0.01, y0 + 0.01), (x0 + 0.01, y0), (x0, y0 + 0.01)])
    rows = [zone("G1", "fixed", bowtie, pg=20.0), zone("G2", "fixed", cell(1, 0), pg=30.0)]
    layer = write_layer(tmp_path / "bow.geojson", rows)
    code, rep = check_json(layer)
    bad = [p for p in rep["problems"] if p["kind"] == "invalid_geometry"]
    assert code == 1 and len(bad) == 1 and bad[0]["zone_id"] == "G1"
    assert "Self-intersection" in bad[0]["message"]
    # inside the western triangle of the bow-tie: an error, not the zone's 20 psf
    g = site_json(layer, y0 + 0.005, x0 + 0.002, "--elevation", "100ft")
    assert g["status"] == "error" and g["pg"] is None and "G1" in g["message"]
    last = g["steps"][-1]  # the calculation never ends on the zone's 20 psf
    assert last["value"] is None and "status error" in last["description"]
    assert site_json(layer, *centre(1, 0))["status"] == "ok"


# --- §4: problems under their real kind; sidecars with a byte-order mark -------------------


def test_sidecar_problems_are_filed_under_their_kind(tmp_path):
    layer = write_layer(tmp_path / "k.geojson", fixture_rows())
    side = tmp_path / "k.geojson.toml"
    side.write_text(toml_text(dict(FIXTURE_META, colour="red")), encoding="utf-8")
    rep = check_layer(layer)
    assert [(p["kind"], p.get("key")) for p in rep["problems"]] == [("sidecar", "colour")]
    side.write_text(toml_text(dict(FIXTURE_META, elevation_units="furlong")), encoding="utf-8")
    assert [p["kind"] for p in check_layer(layer)["problems"]] == ["units"]
    side.write_text(toml_text(dict(FIXTURE_META, study_mask="m.tif")), encoding="utf-8")
    assert [p["kind"] for p in check_layer(layer)["problems"]] == ["study_mask"]


def test_sidecar_with_a_utf8_byte_order_mark_is_read(tmp_path):
    layer = write_layer(tmp_path / "bom.geojson", fixture_rows())
    side = tmp_path / "bom.geojson.toml"
    side.write_bytes(b"\xef\xbb\xbf" + toml_text(FIXTURE_META).encode("utf-8"))  # UTF-8 BOM
    assert check_layer(layer)["problems"] == []
    assert load_layer(layer).name == FIXTURE_META["name"]
    assert site_json(layer, *centre(0, 0))["status"] == "ok"


def test_sidecar_that_is_not_utf8_is_a_sidecar_problem(tmp_path):
    layer = write_layer(tmp_path / "latin.geojson", fixture_rows())
    text = toml_text(dict(FIXTURE_META, notes="caf\u00e9")).encode("latin-1")
    (tmp_path / "latin.geojson.toml").write_bytes(text)
    code, rep = check_json(layer)
    assert code == 1 and kinds_of(rep) == {"sidecar"} and "UTF-8" in rep["problems"][0]["message"]
    res = run("site", "--at", f"{LAT},{LON}", "--layer", str(layer))
    assert res.exit_code == 2 and "UTF-8" in res.output


def test_exit_codes_stay(tmp_path, grid_layer):
    assert run("layer", "check", str(grid_layer)).exit_code == 0
    dirty = one_zone(tmp_path, zone_id="E1", rule="formula", expr="20 / (A - 100)")
    assert run("layer", "check", str(dirty)).exit_code == 1
    junk = tmp_path / "junk.gpkg"
    junk.write_bytes(b"not a layer")
    assert run("layer", "check", str(junk)).exit_code == 2
