"""`neve roof` against the JSON contract of docs/contract.md, unit inputs and exit codes.

Numeric spot checks name their source beside the value; key checks are the
contract itself (docs/contract.md, "JSON output").
"""

from __future__ import annotations

import json
import subprocess
import sys

import pytest

from neve.engine import Roof, analyze_roof

from .conftest import run, run_json

LOAD = {"psf", "kPa"}
LENGTH = {"ft", "m"}
STEP_KEYS = {"symbol", "description", "equation", "substituted", "value", "unit", "ref"}
CASE_NAMES = {"balanced", "minimum", "unbalanced", "drift", "sliding", "ice_dam", "partial"}
GABLE = ["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "30ft"]

ROOF_TOML = """\
shape = "flat"
slope = "0.25:12"
eave_to_ridge = "30ft"
risk = "II"
terrain = "C"
exposure = "fully"
thermal = "heated"

[[step]]
name = "high bay"
height = "10ft"
upper_length = "120ft"
lower_length = "60ft"
separation = "0ft"

[[parapet]]
name = "north parapet"
height = "4ft"
upwind_length = "100ft"

[[projection]]
name = "unit A"
height = "5ft"
plan_length = "20ft"
upwind_length = "80ft"

[overhang]
length = "3ft"
"""


def _is_load(x) -> bool:
    return isinstance(x, dict) and set(x) == LOAD


def _is_length(x) -> bool:
    return isinstance(x, dict) and set(x) == LENGTH


def test_top_level_keys_and_loads():
    d = run_json("roof", "--pg", "35psf", *GABLE)
    for key in ("standard", "factors", "loads", "cases", "design_uniform", "flags", "cautions"):
        assert key in d, key
    assert set(d["factors"]) >= {"Ce", "Ct", "Is", "Cs"}
    assert set(d["loads"]) >= {"pf", "ps", "pm", "rain_on_snow"}
    for k in ("pf", "ps"):
        assert _is_load(d["loads"][k])
    for k in ("pm", "rain_on_snow"):
        assert d["loads"][k] is None or _is_load(d["loads"][k])
    assert _is_load(d["design_uniform"])
    assert isinstance(d["flags"], list) and d["cautions"]


def test_every_case_and_step_record_shape(tmp_path):
    roof = tmp_path / "roof.toml"
    roof.write_text(ROOF_TOML, encoding="utf-8")
    d = run_json("roof", "--pg", "35psf", "--roof", str(roof))
    assert d["cases"]
    for c in d["cases"]:
        assert c["case"] in CASE_NAMES and c["name"]
        assert c["steps"], c["case"]
        for s in c["steps"]:
            assert set(s) == STEP_KEYS, s
            assert "ASCE 7-16" in s["ref"], s  # ref names a provision
    kinds = {c["case"] for c in d["cases"]}
    assert {"balanced", "minimum", "drift", "ice_dam", "partial"} <= kinds
    drifts = [c for c in d["cases"] if c["case"] == "drift"]
    assert len(drifts) == 3  # one step, one parapet, one projection
    for c in drifts:
        assert _is_length(c["hd"]) and _is_length(c["w"]) and _is_load(c["pd"])
        assert c["governs"] in ("leeward", "windward")


def test_step_drift_value():
    # ASCE 7-16 Eq. 7.7-1 (gamma = 0.13 pg + 14 <= 30 pcf) and Fig. 7.6-1
    # (hd = 0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5): pg 35, lu 120 ft -> hd 3.99 ft,
    # pd = hd gamma = 74.1 psf (hand calculation from the published equations).
    d = analyze_roof(35.0, Roof.from_mapping({
        "shape": "flat", "step": [{"name": "s", "height": "10ft", "upper_length": "120ft",
                                   "lower_length": "60ft", "separation": "0ft"}]})).to_json()  # fmt: skip
    c = next(c for c in d["cases"] if c["case"] == "drift")
    assert c["hd"]["ft"] == pytest.approx(3.993, abs=0.01)
    assert c["pd"]["psf"] == pytest.approx(74.07, abs=0.1)
    assert c["governs"] == "leeward"


def test_unbalanced_case_keys_and_values():
    d = run_json("roof", "--pg", "35psf", *GABLE)
    c = next(c for c in d["cases"] if c["case"] == "unbalanced")
    for k in ("windward", "leeward", "surcharge"):
        assert _is_load(c[k]), k
    assert _is_length(c["surcharge_extent"])
    # ASCE 7-16 Sec. 7.6.1 and Fig. 7.6-2: windward 0.3 ps; surcharge hd gamma / sqrt(S)
    # over 8 hd sqrt(S) / 3, hd from lu = W = 30 ft; pg 35, Ce = Ct = Is = 1 -> ps 24.5 psf,
    # S = 2 (6:12): surcharge 25.7 psf over 7.39 ft (hand calculation).
    assert c["windward"]["psf"] == pytest.approx(0.3 * 24.5, abs=0.01)
    assert c["surcharge"]["psf"] == pytest.approx(25.7, abs=0.1)
    assert c["surcharge_extent"]["ft"] == pytest.approx(7.39, abs=0.02)


def test_rain_on_snow_reported_as_a_load():
    # ASCE 7-16 Sec. 7.10: 5 psf where pg <= 20 psf and the slope (deg) < W/50;
    # 0.25:12 = 1.19 deg < 60/50.
    d = run_json("roof", "--pg", "15psf", "--slope", "0.25:12", "--eave-to-ridge", "60ft")
    assert d["loads"]["rain_on_snow"]["psf"] == pytest.approx(5.0)


@pytest.mark.parametrize(
    "pg, psf",
    [("35psf", 35.0), ("1.68kPa", 1.68 / 0.04788026), ("1.68 kN/m2", 1.68 / 0.04788026)],
)
def test_pg_units(pg, psf):
    # 1 psf = 0.04788026 kPa (NIST SP 811, Appendix B.9, from memory)
    d = run_json("roof", "--pg", pg)
    assert d["pg"]["psf"] == pytest.approx(psf, rel=1e-3)
    assert d["loads"]["pf"]["psf"] == pytest.approx(0.7 * psf, rel=1e-3)


@pytest.mark.parametrize("slope", ["6:12", "26.565deg"])
def test_slope_units_agree(slope):
    d = run_json("roof", "--pg", "35psf", "--shape", "gable", "--slope", slope,
                 "--eave-to-ridge", "30ft")  # fmt: skip
    assert d["factors"]["Cs"] == pytest.approx(1.0)  # Fig. 7.4-1, warm other, < 30 deg


@pytest.mark.parametrize("w", ["30ft", "9.144m"])
def test_length_units_agree(w):
    d = run_json("roof", "--pg", "35psf", "--shape", "gable", "--slope", "6:12",
                 "--eave-to-ridge", w)  # fmt: skip
    c = next(c for c in d["cases"] if c["case"] == "unbalanced")
    assert c["surcharge_extent"]["ft"] == pytest.approx(7.39, abs=0.02)


BAD = [
    (["--pg", "35"], "pg", "psf"),
    (["--pg", "-5psf"], "pg", "zero or more"),
    (["--pg", "nanpsf"], "pg", "psf"),
    (["--pg", "35m"], "pg", "psf"),
    (["--pg", "35psf", "--slope", "90deg"], "slope", "90"),
    (["--pg", "35psf", "--slope", "12:0"], "slope", "90"),
    (["--pg", "35psf", "--slope", "6"], "slope", "6:12"),
    (["--pg", "35psf", "--shape", "dome"], "rise", "12ft"),  # issue 12: a dome needs its rise
    (["--pg", "35psf", "--shape", "onion"], "shape", "gable"),
    (["--pg", "35psf", "--surface", "glass"], "surface", "slippery"),
    (["--pg", "35psf", "--thermal", "hot"], "thermal", "greenhouse"),
    (["--pg", "35psf", "--terrain", "A"], "terrain", "treeless"),
    (["--pg", "35psf", "--exposure", "none"], "exposure", "sheltered"),
    (["--pg", "35psf", "--risk", "V"], "risk", "IV"),
    (["--pg", "35psf", "--eave-to-ridge", "30"], "eave_to_ridge", "ft"),
    (["--pg", "35psf", "--ct", "abc"], "ct", "number"),
    (["--pg", "35psf", "--ce", "-1"], "ce", "number"),
    (["--pg", "35psf", "--r-value", "-3"], "r_value", "number"),
    (["--pg", "35psf", "--ct", "1.1", "--thermal", "heated"], "ct", "thermal"),
]


@pytest.mark.parametrize("args, field, accepted", BAD)
def test_bad_input_is_exit_2_naming_field_and_accepted(args, field, accepted):
    res = run("roof", *args)
    assert res.exit_code == 2, res.output
    assert field in res.stderr and accepted in res.stderr, res.stderr
    assert "Traceback" not in res.output


TOML_BAD = [
    ('shape = "flat\n', "roof", "TOML"),
    ('shap = "flat"\n', "roof", "shape"),
    ("slope = 6\n", "slope", "6:12"),
    ('[[step]]\nname = "x"\nheight = "10"\n', "step[0].height", "ft"),
    ("step = 3\n", "step", "[[step]]"),
    ("[overhang]\nlength = 3\n", "overhang.length", "ft"),
    ('[[parapet]]\nname = "p"\nheight = "4ft"\n', "parapet[0].upwind_length", "ft"),
    ('ventilated = "maybe"\n', "ventilated", "true"),
]


@pytest.mark.parametrize("text, field, accepted", TOML_BAD)
def test_malformed_roof_toml_is_exit_2(tmp_path, text, field, accepted):
    p = tmp_path / "roof.toml"
    p.write_text(text, encoding="utf-8")
    res = run("roof", "--pg", "35psf", "--roof", str(p))
    assert res.exit_code == 2, res.output
    assert field in res.stderr and accepted in res.stderr, res.stderr


def test_missing_roof_toml_is_exit_2(tmp_path):
    res = run("roof", "--pg", "35psf", "--roof", str(tmp_path / "none.toml"))
    assert res.exit_code == 2 and "roof" in res.stderr


def test_repeated_pg_is_refused():
    res = run("roof", "--pg", "35psf", "--pg", "40psf")
    assert res.exit_code == 2


def test_cautions_in_text_output():
    res = run("roof", "--pg", "35psf")
    assert res.exit_code == 0
    low = res.stdout.lower()
    assert "licensed" in low and "authority having jurisdiction" in low and "study" in low


def test_api_mirrors_cli():
    cli = run_json("roof", "--pg", "35psf", *GABLE)
    api = analyze_roof(35.0, Roof.from_mapping(
        {"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"})).to_json()  # fmt: skip
    assert json.loads(json.dumps(api)) == cli


def test_installed_command_runs():
    exe = [sys.executable, "-c", "from neve.cli import main; main()"]
    import shutil

    if shutil.which("neve"):
        exe = ["neve"]
    out = subprocess.run([*exe, "roof", "--pg", "35", "--format", "json"],
                         capture_output=True, text=True, timeout=60)  # fmt: skip
    assert out.returncode == 2 and "pg" in out.stderr and "Traceback" not in out.stderr
    out = subprocess.run([*exe, "roof", "--pg", "1.68kPa", "--format", "json"],
                         capture_output=True, text=True, timeout=60)  # fmt: skip
    assert out.returncode == 0
    assert json.loads(out.stdout)["design_uniform"]["kPa"] > 0


def _unit_shapes(obj, path="$"):
    """Yield (path, keys) of every dict that carries a load or a length unit."""
    if isinstance(obj, dict):
        if "psf" in obj or "kPa" in obj or "ft" in obj or "m" in obj:
            yield path, set(obj)
        for k, v in obj.items():
            yield from _unit_shapes(v, f"{path}.{k}")
    elif isinstance(obj, list):
        for i, v in enumerate(obj):
            yield from _unit_shapes(v, f"{path}[{i}]")


def test_every_load_and_length_has_both_units(tmp_path):
    # docs/contract.md, "Units": loads always {"psf","kPa"}, lengths always {"ft","m"}
    roof = tmp_path / "roof.toml"
    roof.write_text(ROOF_TOML, encoding="utf-8")
    d = run_json("roof", "--pg", "35psf", "--roof", str(roof))
    shapes = list(_unit_shapes(d))
    assert shapes
    for path, keys in shapes:
        assert keys in (LOAD, LENGTH), (path, keys)


def test_roof_does_not_import_heavy_libraries():
    # team rule / STYLE.md point 9: heavy libraries are imported where used
    code = (
        "import sys\n"
        "from click.testing import CliRunner\n"
        "from neve.cli import main\n"
        "r = CliRunner().invoke(main, ['roof', '--pg', '35psf', '--format', 'json'])\n"
        "assert r.exit_code == 0, r.output\n"
        "heavy = [m for m in ('geopandas', 'folium', 'matplotlib', 'weasyprint', 'dask',"
        " 'rasterio', 'pyogrio') if m in sys.modules]\n"
        "print(','.join(heavy))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=60)
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == ""
