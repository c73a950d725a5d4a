"""``neve roof --standard asce7-22 --w2``, ``neve verify --standard asce7-22`` and
the registry's declaration of ASCE 7-22.

Expected numbers: the [SKA] step example and Eq. 7.3-1 (see test_provisions.py
for the sources); the option rules are neve's contract (docs/contract.md).
"""

from __future__ import annotations

import json

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.standards import get_standard, run_verification, site_quantities

ARGS = ["roof", "--standard", "asce7-22", "--pg", "63psf", "--shape", "gable",
        "--slope", "6:12", "--eave-to-ridge", "30ft"]  # fmt: skip


def invoke(args):
    return CliRunner().invoke(main, args)


def test_roof_json_with_w2():
    res = invoke([*ARGS, "--w2", "0.45", "--ce", "1.0", "--ct", "1.0", "--format", "json"])
    assert res.exit_code == 0, res.output
    out = json.loads(res.output)
    assert out["standard"] == "ASCE 7-22"
    assert out["factors"]["Is"] is None
    assert out["w2"] == 0.45
    assert out["loads"]["pf"]["psf"] == pytest.approx(44.1)  # 0.7 x 63, Eq. 7.3-1
    assert "w2_needed" not in out["flags"]
    assert any(c["case"] == "unbalanced" and c["method"] == "general" for c in out["cases"])
    assert "seismic_weight" in out


@pytest.mark.parametrize("bad", ["1.5", "-0.1", "abc", "nan", "45%"])
def test_w2_out_of_range_exits_2_naming_w2(bad):
    res = invoke([*ARGS, "--w2", bad])
    assert res.exit_code == 2
    assert "w2" in res.stderr and "0 to 1" in res.stderr


def test_w2_with_asce7_16_exits_2():
    res = invoke(["roof", "--pg", "30psf", "--w2", "0.5"])
    assert res.exit_code == 2 and "w2" in res.stderr


def test_no_w2_reports_w2_needed():
    res = invoke([*ARGS, "--format", "json"])
    assert res.exit_code == 0, res.output
    out = json.loads(res.output)
    assert "w2_needed" in out["flags"]
    assert any("W2" in n["reason"] for n in out["not_required"])


def test_text_names_the_standard_and_w2():
    res = invoke([*ARGS, "--w2", "0.45", "--no-steps"])
    assert res.exit_code == 0
    assert res.output.splitlines()[0] == "Roof snow loads, ASCE 7-22"
    assert "W2 (winter wind parameter) = 0.45" in res.output
    assert "Sec. 12.7.2" in res.output
    assert "Is = None" not in res.output


def test_default_stays_asce7_16_and_says_so():
    res = invoke(["roof", "--pg", "30psf", "--no-steps"])
    assert res.exit_code == 0
    assert res.output.splitlines()[0] == "Roof snow loads, ASCE 7-16"


def test_verify_asce7_22_passes():
    res = invoke(["verify", "--standard", "asce7-22", "--format", "json"])
    assert res.exit_code == 0, res.output[-2000:]
    out = json.loads(res.output)
    assert out["summary"]["standards"] == ["ASCE 7-22"] and out["summary"]["ok"]
    assert out["summary"]["total"] >= 20


def test_verify_all_still_passes():
    report = run_verification()
    assert report["summary"]["ok"]
    assert report["summary"]["standards"] == ["ASCE 7-16", "ASCE 7-22", "EN 1991-1-3"]


def test_every_case_names_a_source():
    for case in get_standard("asce7-22").cases():
        assert case.source.strip(), case.id
        assert "ASCE 7-16" not in case.id


def test_declaration():
    std = get_standard("ASCE/SEI 7-22")
    assert std.id == "asce7-22" and std.title == "ASCE 7-22"
    assert std.names == ("ASCE 7-22", "ASCE/SEI 7-22")
    assert std.layer_standards == ("ASCE 7-22",)
    assert std.quantities == ("pg", "w2")
    assert std.accepts_layer("ASCE 7-22", "w2") and not std.accepts_layer("ASCE 7-16")
    assert std.ref("case.minimum") == "ASCE 7-22 Sec. 7.3.3"  # renumbered [STR-MIN]
    assert "w2" in site_quantities()
    assert get_standard().id == "asce7-16"  # the default stays
    assert {o.name for o in std.roof_options} >= {"thermal", "r_value", "ventilated", "risk"}


def test_screening_flags():
    from neve.engine.roof import screening_flags
    from neve.engine.roof_spec import Roof

    flags = screening_flags(Roof.from_mapping({}), standard="asce7-22")
    assert "thermal_upper_bound" in flags


def test_every_flag_is_in_the_flag_table_and_the_contract():
    from pathlib import Path

    from neve.geo.site.result import FLAG_TABLE

    names = {f.name for f in FLAG_TABLE if f.kind == "roof"}
    contract = (Path(__file__).parents[3] / "docs" / "contract.md").read_text(encoding="utf-8")
    for flag in ("w2_needed", "thermal_upper_bound"):
        assert flag in names and f"`{flag}`" in contract
    bits = {f.name: f.bit for f in FLAG_TABLE}
    assert bits["w2_needed"] == 37 and bits["thermal_upper_bound"] == 38


def test_analyze_through_the_registry_with_and_without_w2():
    from neve.engine.roof_spec import Roof

    std = get_standard("asce7-22")
    roof = Roof.from_mapping({"ce": 1.0, "ct": 1.0, "parapet": [{"height": "4ft",
                              "upwind_length": "100ft"}]})  # fmt: skip
    with_w2 = std.analyze({"pg": 63.0, "w2": 0.45}, roof).to_json()
    assert "w2_needed" not in with_w2["flags"] and with_w2["w2"] == 0.45
    for missing in ({"pg": 63.0}, {"pg": 63.0, "w2": None}, {"pg": 63.0, "w2": float("nan")}):
        out = std.analyze(missing, roof).to_json()
        assert "w2_needed" in out["flags"] and out["w2"] is None
