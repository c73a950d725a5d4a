"""EN 1991-1-3 layers (``quantity = "sk"``) through the layer check, ``neve site`` and its JSON.

The layer is the invented fixture of tests/geo/sk_fixture.py.  Values computed
here by hand are marked "hand calculation"; the roof factors are EN
1991-1-3:2003 Table 5.2 (mu1 = 0.8 for slopes from 0 to 30 degrees) and
Eq. 5.1 (s = mu1 Ce Ct sk, Ce = Ct = 1.0, the recommended values of Table 5.1
and 5.2(8)).
"""

from __future__ import annotations

import json
import math

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.units import KPA_PER_PSF
from neve.geo.layers.check import check_layer
from neve.geo.layers.model import load_layer
from neve.geo.site.one import resolve_site

from .conftest import write_layer
from .sk_fixture import FORMULA, SK_META, at, centre, sk_rows, write_sk_layer

#: EN 1991-1-3 Table 5.2: mu1 of a roof from 0 to 30 degrees
MU1 = 0.8


@pytest.fixture(scope="module")
def sk_layer(tmp_path_factory):
    return write_sk_layer(tmp_path_factory.mktemp("sk") / "sk.gpkg")


def site(*args):
    res = CliRunner().invoke(main, ["site", *args, "--format", "json"])
    assert res.exit_code == 0, res.output
    return json.loads(res.output)


def ground(layer, i, j, elevation=None, **kw):
    lat, lon = centre(i, j)
    return resolve_site(lat, lon, layers=[layer], elevation=elevation, **kw)


# --------------------------------------------------------------------------- layer check
def test_sk_layer_checks_clean(sk_layer):
    rep = check_layer(sk_layer)
    assert rep["ok"], rep["problems"]
    assert rep["zones"] == 6


def test_neve_layer_check_accepts_the_demo_sk_layer():
    from neve.geo.layers.model import DEMO_DIR, DEMO_EN_LAYER_FILES

    for name in DEMO_EN_LAYER_FILES:
        res = CliRunner().invoke(main, ["layer", "check", str(DEMO_DIR / name)])
        assert res.exit_code == 0, res.output
        assert "no problems" in res.output


@pytest.mark.parametrize(
    "change, kind",
    [
        (lambda r: r[0].update(sk=float("nan")), "parameter"),  # fixed without its sk
        (lambda r: r[4].update(sk_min=-1.0), "parameter"),  # a negative floor
        (lambda r: r[4].update(expr="__import__('os').system('true')"), "expression"),
        (lambda r: r[4].update(expr="Z.__class__"), "expression"),
        (lambda r: r[4].update(expr="W + A"), "expression"),  # no such column
        (lambda r: r[0].update(sk=500.0), "implausible_value"),  # 500 kPa: no ground load
        (lambda r: r[3].update(table="[[0, 2.0], [0, 3.0]]"), "table"),
    ],
)
def test_sk_layer_defects_are_reported(tmp_path, change, kind):
    rows = sk_rows()
    change(rows)
    rep = check_layer(write_sk_layer(tmp_path / "bad.gpkg", rows))
    assert not rep["ok"]
    assert kind in {p["kind"] for p in rep["problems"]}


def test_sk_layer_reads_its_value_from_the_sk_column_not_pg(tmp_path):
    rows = sk_rows()
    rows[0]["pg"] = rows[0].pop("sk")  # the value under the pg column of an sk layer
    rep = check_layer(write_sk_layer(tmp_path / "pgcol.gpkg", rows))
    assert any(p["zone_id"] == "K1" and "'sk'" in p["message"] for p in rep["problems"])


def test_sk_layer_in_psf_is_accepted_and_converted(tmp_path):
    rows = sk_rows()
    rows[0]["sk"] = 20.0  # psf
    path = write_sk_layer(tmp_path / "psf.gpkg", rows, value_units="psf")
    assert check_layer(path)["ok"]
    g = ground(path, 0, 0).ground
    assert g["quantity"] == "sk"
    assert g["sk"]["psf"] == pytest.approx(20.0)
    assert g["sk"]["kPa"] == pytest.approx(20.0 * KPA_PER_PSF, abs=1e-4)  # NIST SP 811
    # the maps get kPa: the view's pg columns of an sk layer are in kPa whatever it maps in
    view = load_layer(path).view()
    assert view["value_units"] == "kPa" and view["quantity"] == "sk"
    k1 = view["zones"].set_index("zone_id").loc["K1"]
    assert k1["pg"] == pytest.approx(20.0 * KPA_PER_PSF)
    assert k1["pg_psf"] == pytest.approx(20.0)


def test_unknown_quantity_is_refused(tmp_path):
    from neve.engine.errors import LayerError

    path = write_sk_layer(tmp_path / "q.gpkg", quantity="sn")
    with pytest.raises(LayerError, match="quantity"):
        load_layer(path)


# --------------------------------------------------------------------------- site, by rule
def test_site_by_value_gives_ground_sk_and_the_en_roof(sk_layer):
    data = site("--layer", str(sk_layer), "--at", at(0, 0), "--shape", "flat")
    g = data["ground"]
    assert g["status"] == "ok" and g["quantity"] == "sk" and g["pg"] is None
    assert g["sk"]["kPa"] == pytest.approx(0.85)
    assert g["sk"]["psf"] == pytest.approx(0.85 / KPA_PER_PSF, abs=1e-3)
    # no --standard: the layer's standard picks the EN engine
    roof = data["roof"]
    assert roof["standard"] == "EN 1991-1-3"
    assert roof["sk"]["kPa"] == pytest.approx(0.85)
    assert roof["design_uniform"]["kPa"] == pytest.approx(MU1 * 0.85, abs=1e-3)  # Eq. 5.1
    assert [s["symbol"] for s in g["steps"]] == ["sk"]
    assert g["steps"][0]["equation"] == "sk = mapped value"


def test_pg_layers_keep_ground_pg_and_name_their_quantity(grid_layer):
    lat, lon = centre(0, 0)
    g = resolve_site(lat, lon, layers=[grid_layer]).ground
    assert g["quantity"] == "pg" and "sk" not in g
    assert g["pg"]["psf"] == pytest.approx(20.0)


@pytest.mark.parametrize(
    "elevation, expected",
    [
        ("0m", 1.0),  # at the first point
        ("500m", 2.0),  # hand calculation: 1.0 + 500 x (3.0 - 1.0) / 1000
        ("750m", 2.5),  # hand calculation: 1.0 + 750 x 2.0 / 1000
    ],
)
def test_site_by_elevation_table(sk_layer, elevation, expected):
    g = ground(sk_layer, 0, 1, elevation).ground
    assert g["status"] == "ok" and g["rule"] == "elevation_table"
    assert g["sk"]["kPa"] == pytest.approx(expected)


def test_site_above_the_table_needs_a_study(sk_layer):
    g = ground(sk_layer, 0, 1, "1200m").ground
    assert g["status"] == "study_required" and g["sk"] is None
    assert "above_elevation_limit" in g["flags"]


@pytest.mark.parametrize(
    "elevation, expected",
    [
        # hand calculations of (0.4 + 0.3 Z)(1 + (A / 650)^2) with Z = 1:
        ("650m", 1.4),  # 0.7 x (1 + 1) = 1.4
        ("975m", 0.7 * (1 + 1.5**2)),  # 0.7 x 3.25 = 2.275
        ("0m", 1.0),  # 0.7 x 1 = 0.7, raised to the floor sk_min = 1.0
        ("2132.5ft", 1.4),  # 650 m given in feet: the formula takes A in the layer's metres
    ],
)
def test_site_by_altitude_formula(sk_layer, elevation, expected):
    res = ground(sk_layer, 1, 1, elevation)
    g = res.ground
    assert g["status"] == "ok" and g["rule"] == "formula"
    assert g["sk"]["kPa"] == pytest.approx(expected, abs=1e-3)
    formula = [s for s in g["steps"] if s["equation"] == f"sk = {FORMULA}"]
    assert formula and "Z = 1" in formula[0]["substituted"]
    assert g["steps"][0]["symbol"] == "A" and g["steps"][0]["unit"] == "m"


def test_formula_floor_is_named_sk_min(sk_layer):
    g = ground(sk_layer, 1, 1, "0m").ground
    floor = [s for s in g["steps"] if "sk_min" in s["equation"]]
    assert floor and floor[0]["equation"] == "sk = max(sk, sk_min)"


def test_formula_without_elevation_is_flagged(sk_layer):
    g = ground(sk_layer, 1, 1).ground
    assert g["status"] == "no_data" and "elevation_needed" in g["flags"]
    assert g["sk"] is None


# --------------------------------------------------------------------------- flags
def test_above_the_elevation_limit_of_a_fixed_sk_zone(sk_layer):
    ok = ground(sk_layer, 1, 0, "300m").ground
    assert ok["status"] == "ok" and ok["sk"]["kPa"] == pytest.approx(1.25)
    high = ground(sk_layer, 1, 0, "450m").ground
    assert high["status"] == "study_required" and "above_elevation_limit" in high["flags"]


def test_study_zone(sk_layer):
    g = ground(sk_layer, 2, 0).ground
    assert g["status"] == "study_required" and "study_required" in g["flags"]


def test_boundary_analysis_on_an_sk_layer(sk_layer):
    """A site 40 m inside K5 (floor 1.0 kPa at 0 m) beside K6 (1.50 kPa): the larger governs."""
    from .conftest import LAT0, LON0, D

    lat = LAT0 + 1.5 * D
    lon = LON0 + 2 * D - 0.0004  # about 40 m west of the K5 | K6 edge
    res = resolve_site(lat, lon, layers=[sk_layer], elevation="0m")
    g = res.ground
    assert "near_boundary" in g["flags"]
    assert g["sk"]["kPa"] == pytest.approx(1.5)
    assert g["distance_to_other"]["m"] < 100
    raised = [s for s in g["steps"] if s["equation"] == "sk = max(sk, neighbouring values)"]
    assert raised and raised[0]["unit"] == "kPa" and raised[0]["value"] == pytest.approx(1.5)
    assert any("sk" in n and n["sk"] for n in g["neighbours"])


def test_stacking_sk_layers(tmp_path, sk_layer):
    local = write_sk_layer(tmp_path / "local.gpkg", [dict(sk_rows()[0], sk=1.1, zone_id="L1")],
                           name="local sk amendment")  # fmt: skip
    g = resolve_site(*centre(0, 0), layers=[local, sk_layer]).ground
    assert g["zone_id"] == "L1" and g["sk"]["kPa"] == pytest.approx(1.1)
    assert g["other_layers"][0]["sk"]["kPa"] == pytest.approx(0.85)
    assert g["layer"]["name"] == "local sk amendment"
    assert [ly["name"] for ly in g["layers"]] == ["local sk amendment", "sk fixture grid"]


def test_a_stack_mixing_pg_and_sk_is_refused(sk_layer, grid_layer):
    res = CliRunner().invoke(main, ["site", "--at", at(0, 0), "--layer", str(sk_layer),
                                    "--layer", str(grid_layer)])  # fmt: skip
    assert res.exit_code == 2
    assert "layer" in res.output and "sk" in res.output and "pg" in res.output
    assert "Traceback" not in res.output


def test_elevation_mismatch_on_an_sk_layer(tmp_path, sk_layer):
    from .conftest import write_dem

    dem = write_dem(tmp_path / "dem.tif")
    g = ground(sk_layer, 0, 1, "900m", dem=dem).ground
    assert "elevation_mismatch" in g["flags"]
    alts = g["elevation_alternatives"]
    assert len(alts) == 2 and all("sk" in a and "pg" not in a for a in alts)
    given = next(a for a in alts if a["source"] == "input")
    assert given["sk"]["kPa"] == pytest.approx(1.0 + 900 * 2.0 / 1000)  # hand calculation


# --------------------------------------------------------------------------- roof standard
def test_explicit_asce_standard_on_an_sk_layer_is_an_edition_mismatch(sk_layer):
    data = site("--layer", str(sk_layer), "--at", at(0, 0), "--standard", "asce7-16",
                "--shape", "flat")  # fmt: skip
    assert data["roof"] is None
    assert "edition_mismatch" in data["ground"]["flags"]
    assert data["ground"]["sk"]["kPa"] == pytest.approx(0.85)


def test_site_altitude_reaches_the_en_roof(tmp_path, sk_layer):
    """EN 1991-1-3 6.3: snow overhanging the edge is designed for above the annex's altitude
    (800 m recommended); the site's elevation is the altitude when --altitude is not given."""
    roof = tmp_path / "ROOF.toml"
    roof.write_text('shape = "flat"\n[overhang]\nlength = "0.6m"\n', encoding="utf-8")
    low = site("--layer", str(sk_layer), "--at", at(0, 1), "--elevation", "300m",
               "--roof", str(roof))  # fmt: skip
    high = site("--layer", str(sk_layer), "--at", at(0, 1), "--elevation", "900m",
                "--roof", str(roof))  # fmt: skip
    assert "overhang" not in {c["case"] for c in low["roof"]["cases"]}
    assert "overhang" in {c["case"] for c in high["roof"]["cases"]}
    for data in (low, high):
        assert "altitude_unstated" not in data["roof"]["flags"]
    given = site("--layer", str(sk_layer), "--at", at(0, 1), "--elevation", "900m",
                 "--roof", str(roof), "--altitude", "300m")  # fmt: skip
    assert "overhang" not in {c["case"] for c in given["roof"]["cases"]}  # the user's wins


def test_text_output_is_si_first(sk_layer):
    res = CliRunner().invoke(main, ["site", "--layer", str(sk_layer), "--at", at(0, 1),
                                    "--elevation", "500m"])  # fmt: skip
    assert res.exit_code == 0, res.output
    assert "Ground sk:   2.00 kPa (41.8 psf)" in res.output
    assert "Elevation:   500.0 m (1640 ft)" in res.output


# --------------------------------------------------------------------------- hostile text
HOSTILE = "{{ 7*7 }} {% if 1 %}x{% endif %} ${7*7} <script>alert(1)</script>"


def test_hostile_text_in_sk_layer_attributes_stays_literal(tmp_path):
    rows = sk_rows(zone_id="K1 " + HOSTILE, note=HOSTILE, source=HOSTILE)
    path = write_layer(tmp_path / "hostile.gpkg", rows, {**SK_META, "name": HOSTILE})
    data = site("--layer", str(path), "--at", at(0, 0))
    g = data["ground"]
    assert g["zone_id"] == "K1 " + HOSTILE
    assert g["layer"]["name"] == HOSTILE
    assert HOSTILE in g["steps"][0]["ref"]
    assert "49" not in json.dumps(g["zone_id"])
    res = CliRunner().invoke(main, ["site", "--layer", str(path), "--at", at(0, 0)])
    assert res.exit_code == 0 and HOSTILE in res.output


def test_ground_json_has_no_nan(sk_layer):
    data = site("--layer", str(sk_layer), "--at", at(1, 1))
    text = json.dumps(data)
    assert "NaN" not in text and not math.isnan(data["site"]["lat"])


# --------------------------------------------------------------------------- a grid of sk
def test_sk_grid_layer(tmp_path):
    """A GeoTIFF of sk [kPa]: cell values, nodata, the boundary rule; resolver columns."""
    import numpy as np
    import rasterio
    from rasterio.transform import from_origin

    from neve.geo.site.resolve import resolve

    from .conftest import FIXTURE_META, toml_text

    values = np.array([[0.9, 1.6], [0.9, -9999.0]], dtype="float32")
    prof = dict(driver="GTiff", width=2, height=2, count=1, crs="EPSG:4326",
                transform=from_origin(-40.0, 30.02, 0.01, 0.01))  # fmt: skip
    path = tmp_path / "sk.tif"
    with rasterio.open(path, "w", dtype="float32", nodata=-9999.0, **prof) as ds:
        ds.write(values, 1)
    meta = dict(FIXTURE_META, **{k: v for k, v in SK_META.items() if k != "name"},
                name="sk grid")  # fmt: skip
    (tmp_path / "sk.tif.toml").write_text(toml_text(meta), encoding="utf-8")
    assert check_layer(path)["ok"]
    g = resolve_site(30.015, -39.995, layers=[path]).ground  # the 0.9 kPa cell, mid-cell
    assert g["quantity"] == "sk" and g["sk"]["kPa"] == pytest.approx(0.9, abs=1e-6)
    edge = resolve_site(30.015, -39.9905, layers=[path]).ground  # about 48 m from 1.6 kPa
    assert "near_boundary" in edge["flags"] and edge["sk"]["kPa"] == pytest.approx(1.6)
    res = resolve([30.005, 30.015], [-39.985, -39.995], layers=[path])
    frame = res.to_frame(["status", "sk_kpa", "sk_psf"])
    assert list(frame["status"]) == ["no_data", "ok"]
    assert frame["sk_kpa"].iloc[1] == pytest.approx(0.9, abs=1e-6)
    assert frame["sk_psf"].iloc[1] == pytest.approx(0.9 / KPA_PER_PSF, abs=1e-4)
