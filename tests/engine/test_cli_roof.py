"""``neve roof`` from the command line: exit codes, JSON contract, bad input.

The JSON keys are those of the contract (docs/contract.md, "JSON
output"); the numbers are hand calculations from ASCE 7-16 (from memory).
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys

import pytest
from click.testing import CliRunner

from neve.cli import main

GABLE = ["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "30ft"]


def invoke(*args: str):
    return CliRunner().invoke(main, ["roof", *args])


def as_json(result) -> dict:
    assert result.exit_code == 0, result.output
    return json.loads(result.stdout)


def assert_load(v):
    assert set(v) == {"psf", "kPa"}
    # 1 psf = 0.047880259 kPa (NIST SP 811 definitions); JSON kPa rounded to 4 places
    assert v["kPa"] == pytest.approx(v["psf"] * 0.047880259, abs=1e-3)


def assert_length(v):
    assert set(v) == {"ft", "m"}
    assert v["m"] == pytest.approx(v["ft"] * 0.3048, abs=1e-3)


def test_json_contract_keys_gable():
    out = as_json(invoke("--pg", "35psf", *GABLE, "--format", "json"))
    assert out["standard"] == "ASCE 7-16"
    assert set(out["factors"]) >= {"Ce", "Ct", "Is", "Cs"}
    assert set(out["loads"]) >= {"pf", "ps", "pm", "rain_on_snow"}
    assert_load(out["loads"]["pf"])
    assert_load(out["loads"]["ps"])
    assert out["loads"]["pm"] is None  # 26.57 deg is not below 15 deg (Sec. 7.3.4)
    assert out["loads"]["rain_on_snow"] is None  # pg > 20 psf (Sec. 7.10)
    assert_load(out["design_uniform"])
    # ASCE 7-16 Eq. 7.3-1 by hand: 0.7 x 35 = 24.5 psf; Cs = 1 at 26.57 deg (Fig. 7.4-1a)
    assert out["design_uniform"]["psf"] == pytest.approx(24.5, abs=1e-3)
    assert isinstance(out["flags"], list)
    assert len(out["cautions"]) >= 3
    text = " ".join(out["cautions"]).lower()
    assert "licensed" in text and "authority having jurisdiction" in text and "study" in text
    kinds = {c["case"] for c in out["cases"]}
    assert {"balanced", "unbalanced", "partial"} <= kinds
    allowed = {"balanced", "minimum", "unbalanced", "drift", "sliding", "ice_dam", "partial"}
    assert kinds <= allowed
    for case in out["cases"]:
        assert case["name"]
        for step in case["steps"]:
            assert set(step) >= {
                "symbol",
                "description",
                "equation",
                "substituted",
                "value",
                "unit",
                "ref",
            }
    (unb,) = [c for c in out["cases"] if c["case"] == "unbalanced"]
    for key in ("windward", "leeward", "surcharge"):
        assert_load(unb[key])
    assert_length(unb["surcharge_extent"])


def test_json_contract_drift_from_roof_toml(tmp_path):
    roof = tmp_path / "ROOF.toml"
    roof.write_text(
        'shape = "flat"\nce = 1.0\nct = 1.0\nrisk = "II"\n\n'
        '[[step]]\nname = "press hall"\nheight = "10ft"\nupper_length = "100ft"\n'
        'lower_length = "60ft"\nseparation = "0ft"\n\n'
        '[[parapet]]\nname = "east"\nheight = "3ft"\nupwind_length = "60ft"\n\n'
        '[overhang]\nlength = "2ft"\n',
        encoding="utf-8",
    )
    out = as_json(invoke("--pg", "30psf", "--roof", str(roof), "--format", "json"))
    drifts = [c for c in out["cases"] if c["case"] == "drift"]
    assert len(drifts) == 2
    for d in drifts:
        assert_length(d["hd"])
        assert_length(d["w"])
        assert_load(d["pd"])
        assert d["governs"] in ("leeward", "windward")
    step = next(d for d in drifts if "press hall" in d["name"])
    # ASCE 7-16 Sec. 7.7.1 by hand (see test_drift.py): pd = 3.51938 x 17.9 = 62.997 psf
    assert step["pd"]["psf"] == pytest.approx(62.997, abs=3e-3)
    assert step["governs"] == "leeward"
    assert any(c["case"] == "ice_dam" for c in out["cases"])


def test_options_override_the_roof_file(tmp_path):
    roof = tmp_path / "ROOF.toml"
    roof.write_text('shape = "flat"\nrisk = "II"\n', encoding="utf-8")
    out = as_json(invoke("--pg", "30psf", "--roof", str(roof), "--risk", "IV", "--format", "json"))
    # Table 1.5-2: risk IV Is = 1.2; Eq. 7.3-1: pf = 0.7 x 1 x 1 x 1.2 x 30 = 25.2 psf
    assert out["factors"]["Is"] == pytest.approx(1.2, abs=1e-12)
    assert out["loads"]["pf"]["psf"] == pytest.approx(25.2, abs=1e-3)


def test_si_input_gives_the_same_result():
    # 1.68 kPa = 35.0875 psf (NIST SP 811); 9.144 m = 30 ft exactly
    a = as_json(
        invoke(
            "--pg",
            "1.68kPa",
            "--shape",
            "gable",
            "--slope",
            "26.565deg",
            "--eave-to-ridge",
            "9.144m",
            "--format",
            "json",
        )
    )
    # 0.7 x 35.0875 = 24.5613 psf
    assert a["loads"]["pf"]["psf"] == pytest.approx(24.5613, abs=1e-3)
    assert a["roof"]["eave_to_ridge"]["ft"] == pytest.approx(30.0, abs=1e-3)


def test_text_format_shows_steps_flags_and_cautions():
    r = invoke("--pg", "35psf", *GABLE)
    assert r.exit_code == 0, r.output
    assert "ASCE 7-16" in r.output
    assert "Eq. 7.3-1" in r.output  # a step record with its provision
    assert "unbalanced" in r.output
    assert "Cautions" in r.output
    assert "authority having jurisdiction" in r.output
    short = invoke("--pg", "35psf", *GABLE, "--no-steps")
    assert short.exit_code == 0
    assert "Eq. 7.3-1" not in short.output


@pytest.mark.parametrize(
    ("args", "field", "accepted"),
    [
        (["--pg", "35"], "pg", "psf"),  # bare number where a unit is needed
        (["--pg=-5psf"], "pg", "zero or more"),  # negative ground load
        (["--pg", "35psf", "--slope", "90deg", "--shape", "gable"], "slope", "6:12"),
        (["--pg", "35psf", "--slope", "12:0", "--shape", "gable"], "slope", "90"),
        (["--pg", "35psf", "--slope", "26.6", "--shape", "gable"], "slope", "6:12"),
        (["--pg", "35psf", "--eave-to-ridge", "30", *GABLE[:4]], "eave_to_ridge", "ft"),
        (["--pg", "35psf", "--surface", "icy"], "surface", "slippery, other"),
        (["--pg", "35psf", "--risk", "V"], "risk", "I, II, III, IV"),
        (["--pg", "35psf", "--thermal", "warm"], "thermal", "greenhouse"),
        (["--pg", "35psf", "--terrain", "E", "--exposure", "fully"], "terrain", "treeless"),
        (["--pg", "35psf", "--terrain", "C", "--exposure", "open"], "exposure", "sheltered"),
        # issue 12: curved, dome and sawtooth roofs need their own lengths, named when missing
        (["--pg", "35psf", "--shape", "dome"], "rise", "12ft"),
        (["--pg", "35psf", "--shape", "dome", "--rise", "8ft"], "diameter", "60ft"),
        (["--pg", "35psf", "--shape", "curved"], "rise", "12ft"),
        (["--pg", "35psf", "--shape", "curved", "--rise", "10ft"], "chord", "60ft"),
        (["--pg", "35psf", "--shape", "arch", "--chord", "60ft"], "rise", "12ft"),
        (["--pg", "35psf", "--shape", "sawtooth", "--slope", "3:12"], "ridge_height", "6ft"),
        (["--pg", "35psf", "--shape", "sawtooth", "--ridge-height", "6ft"], "slope", "6:12"),
        (["--pg", "35psf", "--shape", "pyramid"], "shape", "flat, monoslope, gable, hip, curved"),
        (["--pg", "35psf", "--ct", "abc"], "ct", "number"),
        # issue 12: a gable without W is worked (unbalanced not computed); an asymmetric
        # gable with one W of its two is refused
        (["--pg", "35psf", *GABLE[:4], "--eave-to-ridge", "30ft,"], "eave_to_ridge", "30ft,20ft"),
        (["--pg", "35psf", "--roof", "/nonexistent/ROOF.toml"], "roof", "TOML"),
    ],
)
def test_bad_input_exits_2_naming_field_and_accepted(args, field, accepted):
    r = invoke(*args)
    assert r.exit_code == 2, r.output
    assert r.stdout == ""
    assert f"{field}:" in r.stderr
    assert "accepted" in r.stderr and accepted in r.stderr


@pytest.mark.parametrize(
    ("content", "field", "accepted"),
    [
        ('shape = "flat\n', "roof", "TOML"),  # unterminated string: not TOML
        ('shape = "flat"\ncolour = "red"\n', "roof", "eave_to_ridge"),  # unknown key
        ('[[step]]\nupper_length = "100ft"\nlower_length = "60ft"\n', "step[0].height", "ft"),
        (
            '[[step]]\nheight = "10"\nupper_length = "100ft"\nlower_length = "60ft"\n',
            "step[0].height",
            "ft",
        ),
        (
            '[[step]]\nheight = "10ft"\nupper_length = "100ft"\nlower_length = "60ft"\n'
            'widht = "3ft"\n',
            "step[0]",
            "separation",
        ),
        ('[[parapet]]\nheight = "3ft"\n', "parapet[0].upwind_length", "ft"),
        ('shape = "barrel-vault"\n', "slope", "6:12"),  # issue 12: a sawtooth family name
        ('shape = "barrel-vault"\nslope = "3:12"\n', "ridge_height", "6ft"),
        ('shape = "pagoda"\n', "shape", "gable"),
    ],
)
def test_malformed_roof_toml_exits_2(tmp_path, content, field, accepted):
    roof = tmp_path / "ROOF.toml"
    roof.write_text(content, encoding="utf-8")
    r = invoke("--pg", "35psf", "--roof", str(roof))
    assert r.exit_code == 2, r.output
    assert f"{field}:" in r.stderr
    assert "accepted" in r.stderr and accepted in r.stderr


@pytest.mark.parametrize(
    "args",
    [
        ["--thermal", "heated"],
        ["--thermal", "cold-ventilated"],
        ["--thermal", "unheated"],
        ["--thermal", "below-freezing"],
        ["--thermal", "greenhouse"],
        ["--terrain", "B", "--exposure", "fully"],
        ["--terrain", "D", "--exposure", "sheltered"],
        ["--terrain", "above-treeline", "--exposure", "partially"],
        ["--terrain", "treeless", "--exposure", "fully"],
        ["--risk", "I"],
        ["--risk", "iv"],
        ["--ce", "0.9", "--ct", "1.1"],
        ["--shape", "monoslope", "--slope", "0.25:12"],
    ],
)
def test_design_card_option_values_are_accepted(args):
    # docs/contract.md, "Roof options and ROOF.toml": every listed value runs with exit code 0
    out = as_json(invoke("--pg", "40psf", *args, "--format", "json"))
    assert out["loads"]["pf"]["psf"] > 0


def test_warm_roof_condition_options_reach_the_slope_factor():
    # ASCE 7-16 Sec. 7.4.1, Fig. 7.4-1a (from memory): unobstructed slippery, unventilated,
    # R = 30: dashed line, 8:12 = 33.690 deg -> Cs = (70 - 33.690)/65 = 0.55862
    args = ["--shape", "gable", "--slope", "8:12", "--eave-to-ridge", "30ft"]
    warm = ["--surface", "slippery", "--unobstructed", "--unventilated", "--r-value", "30"]
    out = as_json(invoke("--pg", "40psf", *args, *warm, "--format", "json"))
    assert out["factors"]["Cs"] == pytest.approx(0.55862, abs=1e-4)
    # --obstructed: solid line, (70 - 33.690)/40 = 0.90775
    warm[2] = "--obstructed"
    out = as_json(invoke("--pg", "40psf", *args, *warm, "--format", "json"))
    assert out["factors"]["Cs"] == pytest.approx(0.90775, abs=1e-4)


def test_flags_do_not_fail_the_run():
    # docs/contract.md, "Exit codes": exit code 0 with flags present
    out = as_json(invoke("--pg", "35psf", "--surface", "slippery", *GABLE, "--format", "json"))
    assert "slippery_line_not_used" in out["flags"]


def test_installed_neve_command_subprocess(tmp_path):
    exe = shutil.which("neve")
    cmd = [exe] if exe else [sys.executable, "-m", "neve.cli"]
    ok = subprocess.run(
        [
            *cmd,
            "roof",
            "--pg",
            "25psf",
            "--shape",
            "hip",
            "--slope",
            "5:12",
            "--eave-to-ridge",
            "24ft",
            "--risk",
            "III",
            "--format",
            "json",
        ],
        capture_output=True,
        text=True,
        timeout=60,
        cwd=tmp_path,
    )
    assert ok.returncode == 0, ok.stderr
    out = json.loads(ok.stdout)
    # ASCE 7-16 Eq. 7.3-1, Table 1.5-2 by hand: 0.7 x 1 x 1 x 1.1 x 25 = 19.25 psf;
    # 5:12 = 22.62 deg < 30 deg so Cs = 1 (Fig. 7.4-1a); pm = 20 x 1.1 = 22 psf governs
    # only below 15 deg, so design uniform = ps = 19.25 psf
    assert out["loads"]["pf"]["psf"] == pytest.approx(19.25, abs=1e-3)
    assert out["design_uniform"]["psf"] == pytest.approx(19.25, abs=1e-3)
    bad = subprocess.run(
        [*cmd, "roof", "--pg", "25"], capture_output=True, text=True, timeout=60, cwd=tmp_path
    )
    assert bad.returncode == 2
    assert "pg:" in bad.stderr and "psf" in bad.stderr


def test_readme_example_roof_file_by_hand():
    # the README's `neve roof --pg 1.68kPa --roof examples/warehouse.toml` (invented roof),
    # every number worked by hand from ASCE 7-16 (from memory):
    # pg = 1680 / 47.880259 = 35.0875 psf; pf = ps = 0.7 x 35.0875 = 24.5613 psf (Eq. 7.3-1,
    # Cs = 1 at 1.19 deg); pm = 20 psf (Sec. 7.3.4); gamma = 0.13 x 35.0875 + 14
    # = 18.5614 pcf (Eq. 7.7-1); hb = 24.5613 / 18.5614 = 1.32325 ft
    from pathlib import Path

    example = Path(__file__).resolve().parents[2] / "examples" / "warehouse.toml"
    if not example.is_file():
        pytest.skip("examples/warehouse.toml not in this checkout")
    out = as_json(invoke("--pg", "1.68kPa", "--roof", str(example), "--format", "json"))
    assert out["loads"]["pf"]["psf"] == pytest.approx(24.5613, abs=1e-3)
    assert out["loads"]["pm"]["psf"] == pytest.approx(20.0, abs=1e-3)
    assert out["design_uniform"]["psf"] == pytest.approx(24.5613, abs=1e-3)
    by_name = {c["name"]: c for c in out["cases"]}
    step = next(c for n, c in by_name.items() if "high bay" in n and c["case"] == "drift")
    # Sec. 7.7.1: leeward hd(150 ft) = 0.43 x 5.31329 x 45.0875^(1/4) - 1.5 = 4.42034 ft
    # > windward 0.75 x hd(80 ft) = 2.47587; hc = 12 - 1.32325 = 10.6768 >= hd
    # w = 4 x 4.42034 = 17.6813 ft; pd = 4.42034 x 18.5614 = 82.0475 psf
    assert step["governs"] == "leeward"
    assert step["w"]["ft"] == pytest.approx(17.6813, abs=2e-3)
    assert step["pd"]["psf"] == pytest.approx(82.0475, abs=3e-3)
    parapet = next(c for n, c in by_name.items() if "east parapet" in n)
    # Sec. 7.8: 0.75 x hd(200 ft) = 3.76213 > hc = 3 - 1.32325 = 1.67675 -> height hc,
    # w = min(4 x 3.76213^2 / 1.67675 = 33.764, 8 x 1.67675 = 13.414) = 13.414 ft;
    # pd = 1.67675 x 18.5614 = 31.1229 psf
    assert parapet["w"]["ft"] == pytest.approx(13.414, abs=2e-3)
    assert parapet["pd"]["psf"] == pytest.approx(31.1229, abs=3e-3)
    rtu = next(c for n, c in by_name.items() if "RTU-2" in n)
    # Sec. 7.8: 0.75 x hd(90 ft) = 2.62005 <= hc = 3.67675; pd = 2.62005 x 18.5614 = 48.6318
    assert rtu["pd"]["psf"] == pytest.approx(48.6318, abs=3e-3)
    (slide,) = [c for c in out["cases"] if c["case"] == "sliding"]
    # Sec. 7.9: slippery 3:12 > 1/4 on 12; 0.4 x 24.5613 x 45 / 15 = 29.4735 psf
    assert slide["load"]["psf"] == pytest.approx(29.4735, abs=2e-3)
    (ice,) = [c for c in out["cases"] if c["case"] == "ice_dam"]
    # Sec. 7.4.5: unventilated R = 25 < 30 -> 2 x 24.5613 = 49.1225 psf
    assert ice["load"]["psf"] == pytest.approx(49.1225, abs=2e-3)


def test_help_lists_the_design_card_options():
    # docs/contract.md, "Roof options and ROOF.toml": the roof option names, exactly
    r = invoke("--help")
    assert r.exit_code == 0
    for name in ("--pg", "--roof", "--shape", "--slope", "--surface", "--ct", "--thermal",
                 "--ce", "--terrain", "--exposure", "--risk", "--eave-to-ridge", "--r-value",
                 "--ventilated", "--unventilated", "--unobstructed", "--obstructed",
                 "--format"):  # fmt: skip
        assert name in r.output, name


def test_text_output_prints_psf_then_kpa_beside_each_load():
    # NIST SP 811: 1 psf = 0.04788026 kPa; ASCE 7-16 Eq. 7.3-1 with the neutral factors:
    # pg = 35 psf = 1.676 kPa, pf = ps = 0.7 x 35 = 24.5 psf = 1.173 kPa. Swapping the
    # unit labels or the numbers beside them fails here.
    res = invoke("--pg", "35psf", "--shape", "flat", "--ce", "1.0", "--ct", "1.0", "--risk", "II")
    assert res.exit_code == 0, res.output
    assert "pg = 35.0 psf (1.68 kPa)" in res.output
    assert "pf = 24.5 psf (1.17 kPa)   ps = 24.5 psf (1.17 kPa)" in res.output
    assert "design uniform load = 24.5 psf (1.17 kPa)" in res.output
    pairs = re.findall(r"([0-9.]+) psf \(([0-9.]+) kPa\)", res.output)
    assert len(pairs) >= 5
    for psf, kpa in pairs:  # every printed pair: kPa = psf x 0.04788026, to the printed digits
        assert float(kpa) == pytest.approx(float(psf) * 0.04788026, abs=0.006)
