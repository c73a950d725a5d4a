"""EN 1991-1-3 provisions, clause by clause, each value beside its source.

Sources: [SSB03] = Single-Storey Steel Buildings, Part 3: Actions, Appendix A
(worked example: snow load on a single-storey building, sk = 0.65 kN/m2);
values recalled from EN 1991-1-3:2003 + A1:2015 without the document at hand
say "from memory"; an equation worked by hand says "hand calculation".
"""

from __future__ import annotations

import json
import math
import tomllib
from importlib import resources

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.en1991_1_3 import factors, local, shapes
from neve.engine.en1991_1_3.analysis import analyze_roof, uniform_loads
from neve.engine.en1991_1_3.parameters import PARAMETERS, RECOMMENDED, parameter_set
from neve.engine.errors import InputError, UnsupportedError
from neve.engine.roof_spec import Roof
from neve.engine.standards import get_standard, run_verification


def _roof(**kw) -> Roof:
    return Roof.from_mapping(kw)


def _cli(*args):
    return CliRunner().invoke(main, [str(a) for a in args])


# --- Table 5.2 (from memory) ---------------------------------------------------------------

TABLE_5_2_MU1 = [(0.0, 0.8), (8.5, 0.8), (30.0, 0.8), (40.0, 0.8 * 20 / 30), (59.0, 0.8 / 30),
                 (60.0, 0.0), (80.0, 0.0)]  # fmt: skip
TABLE_5_2_MU2 = [(0.0, 0.8), (15.0, 1.2), (30.0, 1.6), (45.0, 1.6)]


@pytest.mark.parametrize(("alpha", "expected"), TABLE_5_2_MU1)
def test_mu1_table_5_2(alpha, expected):
    # EN 1991-1-3 Table 5.2 (from memory); mu1(8.5 deg) = 0.8 as worked in [SSB03]
    assert float(shapes.mu1(alpha)) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize(("alpha", "expected"), TABLE_5_2_MU2)
def test_mu2_table_5_2(alpha, expected):
    # EN 1991-1-3 Table 5.2 (from memory)
    assert float(shapes.mu2(alpha)) == pytest.approx(expected, abs=1e-12)
    assert math.isnan(float(shapes.mu2(60.0)))


def test_monopitch_slides_unless_retained():
    # EN 1991-1-3 5.3.2(2) (from memory): with snow fences or a parapet at the eave mu1 >= 0.8
    free = analyze_roof(1.0, _roof(shape="monopitch", slope="45deg", unobstructed=True))
    kept = analyze_roof(1.0, _roof(shape="monopitch", slope="45deg", unobstructed=False))
    assert free.cases[0]["mu1"] == pytest.approx(0.4)
    assert kept.cases[0]["mu1"] == pytest.approx(0.8)
    unstated = analyze_roof(1.0, _roof(shape="monopitch", slope="45deg"))
    assert unstated.cases[0]["mu1"] == pytest.approx(0.8)
    assert "snow_retention_unstated" in unstated.flags
    assert (
        "snow_retention_unstated"
        not in analyze_roof(1.0, _roof(shape="monopitch", slope="20deg")).flags
    )


def test_duopitch_arrangements_ssb03():
    # [SSB03] sheets 2-3, Figure A.2: 0.52 kN/m2 undrifted, 0.26 / 0.52 drifted (Figure 5.3)
    r = analyze_roof(0.65, _roof(shape="duopitch", slope="8.5deg", topography="normal"))
    kinds = [c["case"] for c in r.cases]
    assert kinds == ["undrifted", "drifted", "drifted"]
    assert r.cases[1]["slope_1"]["kPa"] == pytest.approx(0.26, abs=1e-4)
    assert r.cases[2]["slope_2"]["kPa"] == pytest.approx(0.26, abs=1e-4)
    assert r.design_uniform == pytest.approx(0.52, abs=1e-9)


def test_asymmetric_duopitch_takes_each_slope():
    # EN 1991-1-3 Figure 5.3 (from memory): mu1(alpha1) and mu1(alpha2), hand calculation
    r = analyze_roof(1.0, _roof(shape="gable", slope="10deg", other_slope="45deg",
                                unobstructed=True))  # fmt: skip
    assert r.cases[0]["mu1"] == pytest.approx(0.8) and r.cases[0]["mu1_2"] == pytest.approx(0.4)
    assert r.cases[1]["mu_1"] == pytest.approx(0.4) and r.cases[1]["mu_2"] == pytest.approx(0.4)


def test_multi_span_valley_and_steep_valley_refused():
    # EN 1991-1-3 5.3.4, Table 5.2 (from memory): mu2 at the mean slope; 60 deg needs a study
    r = analyze_roof(1.0, _roof(shape="multi-span", slope="20deg", other_slope="40deg"))
    assert r.case("drifted")[0]["mu2"] == pytest.approx(1.6)  # mean 30 deg
    with pytest.raises(UnsupportedError):
        analyze_roof(1.0, _roof(shape="multi-span", slope="60deg", unobstructed=True))


@pytest.mark.parametrize(("rise", "span", "mu3"), [(2.0, 20.0, 1.2), (5.0, 20.0, 2.0),
                                                  (1.0, 50.0, 0.4)])  # fmt: skip
def test_cylindrical_mu3(rise, span, mu3):
    # EN 1991-1-3 5.3.5(1) (from memory): 0.2 + 10 h / b, at most 2.0; hand calculation
    r = analyze_roof(1.0, _roof(shape="cylindrical", rise=f"{rise}m", chord=f"{span}m"))
    drifted = r.case("drifted")[0]
    assert drifted["mu3"] == pytest.approx(mu3)
    assert drifted["windward"]["kPa"] == pytest.approx(0.5 * mu3, abs=1e-4)
    assert r.design_uniform == pytest.approx(0.8)


def test_cylinder_needs_rise_and_span_and_a_real_arc():
    with pytest.raises(InputError):
        analyze_roof(1.0, _roof(shape="cylindrical", rise="2m"))
    with pytest.raises(InputError):
        analyze_roof(1.0, _roof(shape="cylindrical", rise="12m", chord="20m"))
    # common practice (one circular arc): r = (b^2/4 + h^2) / 2h; ls where the slope <= 60 deg
    g = shapes.cylinder_geometry(8.0, 20.0)
    assert g["radius"] == pytest.approx((100 + 64) / 16)
    assert g["ls"] == pytest.approx(2 * g["radius"] * math.sin(math.radians(60)))


# --- Ce, Ct, sAd, Annex D ---------------------------------------------------------------------


@pytest.mark.parametrize(("topography", "ce"), [("windswept", 0.8), ("normal", 1.0),
                                                ("sheltered", 1.2)])  # fmt: skip
def test_exposure_table_5_1(topography, ce):
    # EN 1991-1-3 Table 5.1 recommended values (from memory; normal as used in [SSB03])
    r = analyze_roof(1.0, _roof(topography=topography))
    assert r.factors["Ce"] == ce
    assert r.design_uniform == pytest.approx(0.8 * ce)


def test_ct_justified_and_bounded():
    # EN 1991-1-3 5.2(8) (from memory): Ct 1.0 unless a justified value; never above 1.0
    r = analyze_roof(1.0, _roof(ct=0.9))
    assert r.factors["Ct"] == 0.9 and "ct_reduced" in r.flags
    with pytest.raises(InputError) as info:
        analyze_roof(1.0, _roof(ct=1.1))
    assert info.value.field == "ct"


def test_exceptional_ground_ssb03():
    # [SSB03] sheet 1: sAd = Cesl sk = 2 x 0.65 = 1.30 kN/m2; sheet 3: 1.04 and 0.52 kN/m2
    r = analyze_roof(0.65, _roof(shape="gable", slope="8.5deg", snow_case="B1"))
    assert r.loads["sAd"] == pytest.approx(1.30)
    acc = r.case("exceptional_ground")
    assert [c["arrangement"] for c in acc] == ["undrifted", "drifted", "drifted"]
    assert all(c["situation"] == "accidental" for c in acc)
    assert acc[0]["slope_1"]["kPa"] == pytest.approx(1.04)
    case_a = analyze_roof(0.65, _roof(shape="gable", slope="8.5deg"))
    assert not case_a.case("exceptional_ground")
    assert any(n["case"] == "exceptional_ground" for n in case_a.not_required)


def test_return_period_annex_d():
    # EN 1991-1-3 Annex D, Eq. D.1 (from memory): 50 years gives sk itself (consistency),
    # longer periods more, shorter less; hand calculation at 100 years, V = 0.4
    assert float(factors.return_period_factor(50.0, 0.2)) == pytest.approx(1.0, abs=1e-4)
    expected = (1 - 0.4 * math.sqrt(6) / math.pi * (math.log(-math.log(0.99)) + 0.57722)) / (
        1 + 2.5923 * 0.4
    )
    r = analyze_roof(0.65, _roof(return_period="100y", cov=0.4))
    assert r.sn == pytest.approx(0.65 * expected)
    assert r.return_period["years"] == 100.0
    assert analyze_roof(1.0, _roof(return_period="10y", cov=0.4)).sn < 1.0
    for bad in (
        {"return_period": "100y"},
        {"cov": 0.4},
        {"return_period": "2y", "cov": 0.4},
        {"return_period": "100y", "cov": 0.0},
        {"return_period": "soon", "cov": 0.3},
    ):
        with pytest.raises(InputError):
            analyze_roof(1.0, _roof(**bad))


# --- 5.3.6 and Section 6 ------------------------------------------------------------------------


def _step(h, b1="10m", b2="40m", **more):
    return {"name": "tower", "height": h, "upper_length": b1, "lower_length": b2, **more}


def test_abutting_ssb03():
    # [SSB03] sheets 4-5: mu_w = (10 + 40) / 2h bounded by 4: s = 2.60 kN/m2, ls = 6 and 8.5 m
    for h, ls in (("3m", 6.0), ("4.25m", 8.5)):
        r = analyze_roof(0.65, _roof(shape="gable", slope="5.7deg",
                                     step=[_step(h, upper_slope="8.5deg",
                                                 upper_eave_to_ridge="12.5m")]))  # fmt: skip
        (c,) = r.case("abutting")
        assert c["mu_w"] == 4.0 and c["mu_s"] == 0.0
        assert c["peak"]["kPa"] == pytest.approx(2.60) and c["ls"]["m"] == pytest.approx(ls)


def test_abutting_bounds_and_sliding():
    # EN 1991-1-3 5.3.6 (from memory): mu_w >= 0.8, <= gamma h / sk; ls in [5, 15] m
    v = local.abutting(1.0, 20.0, 20.0, 1.0, RECOMMENDED)
    assert v["mu_w"] == pytest.approx(2.0)  # gamma h / sk = 2 x 1 / 1 caps (20 + 20) / 2
    assert v["ls"] == 5.0
    assert local.abutting(20.0, 1.0, 1.0, 1.0, RECOMMENDED)["ls"] == 15.0
    assert local.abutting(10.0, 1.0, 1.0, 1.0, RECOMMENDED)["mu_w"] == 0.8
    # sliding above 15 deg: mu_s = mu1(alpha) b_s / ls (the reading in local.py); hand calculation
    slid = local.abutting(3.0, 10.0, 40.0, 0.65, RECOMMENDED, upper_slope=20.0, upper_run=12.5)
    assert slid["mu_s"] == pytest.approx(0.8 * 12.5 / 6.0)
    assert slid["mu2"] == pytest.approx(slid["mu_s"] + 4.0)
    # a lower roof shorter than ls: interpolated at its far edge (5.3.6(3))
    short = local.abutting(5.0, 10.0, 4.0, 0.65, RECOMMENDED)
    assert short["mu_far"] == pytest.approx(short["mu2"] + (0.8 - short["mu2"]) * 4.0 / 10.0)
    unstated = analyze_roof(0.65, _roof(step=[_step("3m")]))
    assert "upper_slope_unstated" in unstated.flags
    with pytest.raises(InputError):  # sliding needs the plan run of the upper slope
        analyze_roof(0.65, _roof(step=[_step("3m", upper_slope="30deg")]))


def test_obstruction_6_2():
    # EN 1991-1-3 6.2(2) (from memory): mu2 = gamma h / sk in [0.8, 2.0]; ls = 2h in [5, 15] m
    proj = {"name": "plant", "height": "1m", "plan_length": "4m", "upwind_length": "20m"}
    r = analyze_roof(0.65, _roof(projection=[proj]))
    (c,) = r.case("obstruction")
    assert c["mu2"] == 2.0 and c["ls"]["m"] == pytest.approx(5.0)
    low = local.obstruction(0.2, 1.0, RECOMMENDED)
    assert low["mu2"] == 0.8  # 2 x 0.2 / 1 = 0.4, raised to 0.8
    assert local.obstruction(1.0, 2.0, RECOMMENDED)["mu2"] == pytest.approx(1.0)


def test_overhang_6_3_and_altitude():
    # EN 1991-1-3 6.3 (from memory): se = k s^2 / 3, k = 3/d <= d gamma, d = s / gamma (reading)
    v = local.overhang_line_load(0.52, RECOMMENDED)
    assert v["k"] == pytest.approx(0.52) and v["se"] == pytest.approx(0.52 * 0.52**2 / 3)
    deep = local.overhang_line_load(6.0, RECOMMENDED)  # d = 2 m: 3/d = 1.5 < d gamma = 6
    assert deep["k"] == pytest.approx(1.5)
    high = analyze_roof(0.65, _roof(overhang={"length": "1m"}, altitude="900m"))
    assert high.case("overhang") and "altitude_unstated" not in high.flags
    low = analyze_roof(0.65, _roof(overhang={"length": "1m"}, altitude="300m"))
    assert not low.case("overhang") and any(n["case"] == "overhang" for n in low.not_required)
    unknown = analyze_roof(0.65, _roof(overhang={"length": "1m"}))
    assert unknown.case("overhang") and "altitude_unstated" in unknown.flags


def test_snow_guard_6_4():
    # EN 1991-1-3 6.4 (from memory): Fs = s b sin(alpha); hand calculation 0.52 x 5 x 0.5 = 1.3
    r = analyze_roof(0.65, _roof(shape="monopitch", slope="30deg", guard_width="5m"))
    assert r.case("snow_guard")[0]["force"]["kN/m"] == pytest.approx(1.30, abs=1e-4)


def test_annex_b_only_in_cases_b2_b3():
    # EN 1991-1-3 Annex A Table A.1 (from memory): exceptional drifts in B2 and B3 only
    par = {"name": "p", "height": "3m", "upwind_length": "25m", "drift_space": "12.5m"}
    a = analyze_roof(0.65, _roof(parapet=[par]))
    assert not a.case("exceptional_drift")
    b3 = analyze_roof(0.65, _roof(parapet=[par], snow_case="B3"))
    # [SSB03] sheet 8, 3.5.2: mu1 = 4.00, s = 2.60 kN/m2 (Annex B, B4)
    assert b3.case("exceptional_drift")[0]["mu1"] == pytest.approx(4.0)
    assert b3.case("exceptional_ground")  # B3 has both
    ms = analyze_roof(0.65, _roof(shape="multi-span", slope="10deg", snow_case="B2"))
    assert any(n["case"] == "exceptional_drift" and n.get("name") == "valley"
               for n in ms.not_required)  # fmt: skip


# --- parameter sets -----------------------------------------------------------------------------


def test_recommended_file_is_the_engines_table():
    # the shipped recommended.toml and the engine's recommended values cannot drift apart
    path = resources.files("neve.engine.en1991_1_3").joinpath("annexes/recommended.toml")
    data = tomllib.loads(path.read_text(encoding="utf-8"))
    assert data["values"] == RECOMMENDED.values
    assert set(data["values"]) == set(PARAMETERS)
    assert parameter_set(data).values == RECOMMENDED.values


def test_a_users_parameter_set_file(tmp_path):
    # invented values (test fixture, not any country's annex)
    f = tmp_path / "mine.toml"
    f.write_text(
        'name = "mine"\ntitle = "invented"\nsource = "test fixture"\ndemo = true\n'
        '[values]\nCe_normal = 1.1\nCesl = 3.0\ndesign_case = "B1"\n',
        encoding="utf-8",
    )
    r = _cli("roof", "--standard", "en1991-1-3", "--sk", "1kPa", "--annex", f, "--format",
             "json")  # fmt: skip
    assert r.exit_code == 0, r.output
    out = json.loads(r.stdout)
    assert out["parameters"]["name"] == "mine" and out["design_case"] == "B1"
    assert out["factors"]["Ce"] == 1.1 and out["loads"]["sAd"]["kPa"] == pytest.approx(3.0)
    assert "demo_parameters" in out["flags"]
    assert out["parameters"]["set_here"] == ["Ce_normal", "Cesl", "design_case"]
    bad = tmp_path / "bad.toml"
    bad.write_text('name = "x"\ntitle = "t"\nsource = "s"\n[values]\nCesl = 99\n')
    r = _cli("roof", "--standard", "en1991-1-3", "--sk", "1kPa", "--annex", bad)
    assert r.exit_code == 2 and "annex.values.Cesl" in r.output
    r = _cli("roof", "--standard", "en1991-1-3", "--sk", "1kPa", "--annex", "XX")
    assert r.exit_code == 2 and "recommended" in r.output


# --- the CLI contract ---------------------------------------------------------------------------


def test_issue_command_prints_the_contract():
    r = _cli("roof", "--standard", "en1991-1-3", "--sk", "0.65kPa", "--shape", "gable", "--slope",
             "8.5deg", "--format", "json")  # fmt: skip
    assert r.exit_code == 0, r.output
    out = json.loads(r.stdout)
    assert out["standard"] == "EN 1991-1-3"
    assert {"design_uniform", "cases", "flags", "cautions"} <= set(out)
    assert out["design_uniform"] == {"psf": pytest.approx(0.52 / 0.047880259, abs=1e-3),
                                     "kPa": 0.52}  # fmt: skip
    for case in out["cases"]:
        for step in case["steps"]:
            assert step["ref"].startswith("EN 1991-1-3 ")


def test_text_is_si_first():
    r = _cli("roof", "--standard", "en1991-1-3", "--sk", "0.65kPa", "--shape", "duopitch",
             "--slope", "8.5deg")  # fmt: skip
    assert r.exit_code == 0, r.output
    assert "sk = 0.65 kPa (13.6 psf)" in r.output
    assert "design uniform load = 0.52 kPa (10.9 psf)" in r.output


@pytest.mark.parametrize(("args", "field"), [
    (["--standard", "en1991-1-3", "--pg", "30psf"], "pg"),
    (["--sk", "1kPa"], "sk"),
    (["--standard", "en1991-1-3"], "sk"),
    (["--pg", "30psf", "--topography", "normal"], "topography"),
    (["--standard", "en1991-1-3", "--sk", "1kPa", "--thermal", "heated"], "thermal"),
    (["--standard", "en1991-1-3", "--sk", "1kPa", "--shape", "hip", "--slope", "20deg"], "shape"),
    (["--pg", "30psf", "--shape", "cylindrical"], "shape"),
    (["--standard", "en1991-1-3", "--sk", "1kPa", "--snow-case", "C"], "snow_case"),
])  # fmt: skip
def test_wrong_inputs_exit_2_naming_the_field(args, field):
    r = _cli("roof", *args)
    assert r.exit_code == 2, r.output
    assert f"{field}:" in r.output
    assert "Traceback" not in r.output


def test_other_units_are_converted_at_the_edges():
    a = _cli("roof", "--standard", "en1991-1-3", "--sk", "0.65kPa", "--format", "json")
    b = _cli("roof", "--standard", "en1991-1-3", "--sk", f"{0.65 / 0.047880259}psf",
             "--format", "json")  # fmt: skip
    assert json.loads(a.stdout)["design_uniform"]["kPa"] == pytest.approx(
        json.loads(b.stdout)["design_uniform"]["kPa"], abs=1e-9
    )


def test_uniform_matches_analyze_and_screening_flags():
    roof = _roof(shape="gable", slope="40deg", unobstructed=True, topography="sheltered")
    u = uniform_loads([0.5, 1.0, float("nan"), -1.0], roof)
    assert u["design_uniform"][1] == pytest.approx(analyze_roof(1.0, roof).design_uniform)
    assert math.isnan(u["design_uniform"][2]) and math.isnan(u["design_uniform"][3])
    assert "roof_cases_not_screened" in get_standard("en1991-1-3").screening_flags(roof)


def test_verification_passes():
    report = run_verification("en1991-1-3")
    assert report["summary"]["ok"], [c["id"] for c in report["cases"] if not c["ok"]]
    assert any("infosteel.be" in c["source"] for c in report["cases"])
