"""Roof geometry of issue 12 in both ASCE editions, each value beside its source.

Sources:

* ASCE 7-16 Sec. 7.6.1 and Fig. 7.6-2 (unbalanced loads of hip and gable
  roofs; a W under 20 ft taken as 20 ft), Fig. 7.6-1 (drift height), Eq. 7.7-1
  (density), Sec. 7.7.1 (step drifts), Sec. 7.8 (parapets and projections:
  0.75 hd; for a projection lu the greater of the roof lengths upwind and
  downwind of it; a side under 15 ft exempt), Sec. 7.9 (sliding, 0.4 pf W over
  15 ft), Eq. 7.3-1, Sec. 7.11 (ponding below 1/4 on 12), Sec. 7.12 (existing
  roofs): all from memory, the standard not at hand.  ASCE 7-22: the same
  clauses as neve holds them (Eq. 7.6-1 for hd with W2; no Is).
* Hand calculations from those equations, shown beside each number (no
  published worked example of these cases was at hand).
* Two drifts meeting at an inside corner are not added: common practice (the
  larger governs where they overlap).

The roofs are invented.
"""

from __future__ import annotations

import math

import pytest
from click.testing import CliRunner
from hypothesis import given, settings
from hypothesis import strategies as st

from neve.cli import main
from neve.engine.errors import InputError
from neve.engine.roof import analyze_roof, screening_flags
from neve.engine.roof_spec import Roof

NEUTRAL = {"ce": 1.0, "ct": 1.0, "risk": "II"}
EDITIONS = ["asce7-16", "asce7-22"]
#: pg 30 psf on the neutral flat roof: pf = ps = 21 psf, gamma = 0.13 x 30 + 14 = 17.9 pcf,
#: hb = 21 / 17.9 = 1.17318 ft (Eq. 7.3-1, Eq. 7.7-1; hand calculation)
PG, GAMMA, HB = 30.0, 17.9, 21.0 / 17.9


def run(pg=PG, standard="asce7-16", w2=None, **kw) -> dict:
    data = {**NEUTRAL, **kw}
    w2 = w2 if standard == "asce7-22" else None  # ASCE 7-16 takes no W2
    return analyze_roof(pg, Roof.from_mapping(data), standard=standard, w2=w2).to_json()


def of(out, kind, **match) -> list[dict]:
    return [
        c
        for c in out["cases"]
        if c["case"] == kind and all(c.get(k) == v for k, v in match.items())
    ]


def hd_716(lu, pg=PG):
    """ASCE 7-16 Fig. 7.6-1: hd = 0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5 (not below 0)."""
    return max(0.43 * lu ** (1 / 3) * (pg + 10) ** 0.25 - 1.5, 0.0)


def invoke(*args, toml: str | None = None, tmp_path=None):
    extra = []
    if toml is not None:
        path = tmp_path / "roof.toml"
        path.write_text(toml, encoding="utf-8")
        extra = ["--roof", str(path)]
    return CliRunner().invoke(main, ["roof", *args, *extra])


GABLE = {"shape": "gable", "slope": "6:12"}


# --- a gable or hip roof without W --------------------------------------------------------


@pytest.mark.parametrize("standard", EDITIONS)
@pytest.mark.parametrize("shape", ["gable", "hip"])
def test_without_w_every_other_case_is_worked_and_unbalanced_not_computed(standard, shape):
    # Sec. 7.6.1 needs W; issue 12: pf, Cs, ps and the cases without W are still worked
    out = run(standard=standard, w2=0.45, shape=shape, slope="6:12")
    assert of(out, "unbalanced") == []
    assert {c["case"] for c in out["cases"]} == {"balanced", "partial"}
    assert out["loads"]["ps"]["psf"] == pytest.approx(21.0, abs=1e-3)  # Cs = 1 at 26.6 deg
    (skip,) = [s for s in out["not_required"] if s["case"] == "unbalanced"]
    assert skip["reason"].startswith("not computed") and "eave_to_ridge" in skip["reason"]
    assert "Sec. 7.6.1" in skip["reason"]
    assert "eave_to_ridge_needed" in out["flags"]


@pytest.mark.parametrize("standard", EDITIONS)
def test_screening_flags_say_w_is_needed(standard):
    assert "eave_to_ridge_needed" in screening_flags(Roof.from_mapping(GABLE), standard=standard)
    with_w = Roof.from_mapping({**GABLE, "eave_to_ridge": "30ft"})
    assert "eave_to_ridge_needed" not in screening_flags(with_w, standard=standard)
    # a slope outside 1/2 to 7 on 12 needs no unbalanced case, so no W
    steep = Roof.from_mapping({"shape": "gable", "slope": "12:12"})
    assert "eave_to_ridge_needed" not in screening_flags(steep, standard=standard)


def test_cli_gable_without_w_exits_0_and_lists_the_case():
    r = invoke("--pg", "35psf", "--shape", "gable", "--slope", "6:12", "--format", "json")
    assert r.exit_code == 0, r.output
    assert "eave_to_ridge_needed" in r.output


# --- asymmetric gables: hand calculations from Sec. 7.6.1 with Fig. 7.6-1 ---------------


def test_asymmetric_gable_wind_from_each_side():
    out = run(**GABLE, eave_to_ridge=["40ft", "16ft"], prismatic=False)
    a, b = (of(out, "unbalanced", wind_from=s)[0] for s in "AB")
    s_run = 2.0  # 6 on 12
    # wind from A: lu = W_A = 40 ft, hd = 2.19831 ft; surcharge hd gamma / sqrt(S) on side B
    hd_a = hd_716(40.0)
    assert a["surcharge"]["psf"] == pytest.approx(hd_a * GAMMA / math.sqrt(s_run), abs=2e-3)
    assert a["surcharge_extent"]["ft"] == pytest.approx(8 * math.sqrt(s_run) * hd_a / 3, abs=2e-3)
    assert a["surcharge"]["psf"] == pytest.approx(
        27.8245, abs=2e-3
    )  # hand: 2.19831 x 17.9 / 1.41421
    # wind from B: W_B = 16 ft < 20 ft, so lu = 20 ft (Sec. 7.6.1): hd = 1.43535 ft
    assert b["surcharge"]["psf"] == pytest.approx(hd_716(20.0) * GAMMA / math.sqrt(2), abs=2e-3)
    assert a["windward"]["psf"] == b["windward"]["psf"] == pytest.approx(0.3 * 21.0, abs=1e-3)
    assert a["windward_eave_to_ridge"]["ft"] == 40.0 and a["leeward_eave_to_ridge"]["ft"] == 16.0
    # the governing one is named: the larger leeward peak, wind across the longer side
    assert a["governing"] is True and b["governing"] is False
    assert a["name"].endswith("(governs)") and "wind from side A" in a["name"]
    assert len({c["name"] for c in out["cases"]}) == len(out["cases"])
    assert out["roof"]["eave_to_ridge_sides"] == [
        {"ft": 40.0, "m": pytest.approx(12.192, abs=1e-3)},
        {"ft": 16.0, "m": pytest.approx(4.877, abs=1e-3)},
    ]


def test_asymmetric_surcharge_beyond_the_short_side_says_it_ends_at_the_eave():
    # W_A = 100 ft: hd = 3.51938 ft, extent = 8 sqrt(2) 3.51938 / 3 = 13.2724 ft > W_B = 10 ft
    out = run(**GABLE, eave_to_ridge="100ft,10ft", prismatic=False)
    (a,) = of(out, "unbalanced", wind_from="A")
    assert a["surcharge_extent"]["ft"] == pytest.approx(13.2724, abs=2e-3)
    assert "ends at the eave" in a["note"]


def test_asymmetric_narrow_side_gets_the_narrow_case():
    # Sec. 7.6.1: W <= 20 ft with prismatic members: leeward Is pg, windward unloaded,
    # applied per wind direction with the windward W
    out = run(**GABLE, eave_to_ridge=["40ft", "16ft"], prismatic=True)
    assert [c["method"] for c in of(out, "unbalanced", wind_from="B")] == ["narrow"]
    assert [c["method"] for c in of(out, "unbalanced", wind_from="A")] == ["general"]
    (b,) = of(out, "unbalanced", wind_from="B")
    assert b["leeward"]["psf"] == pytest.approx(30.0) and b["windward"]["psf"] == 0.0


def test_single_w_works_exactly_as_before():
    one = run(**GABLE, eave_to_ridge="40ft")
    (case,) = of(one, "unbalanced")
    assert case["name"] == "unbalanced, windward 0.3 ps and leeward ps plus surcharge"
    assert "wind_from" not in case and one["roof"]["eave_to_ridge_sides"] is None


@settings(max_examples=40, deadline=None, database=None)
@given(
    w=st.sampled_from([8, 16, 20, 30, 55, 120]),
    pg=st.floats(min_value=0.0, max_value=200.0),
    slope=st.sampled_from(["1:12", "3:12", "6:12", "7:12"]),
    standard=st.sampled_from(EDITIONS),
    prismatic=st.sampled_from([None, True, False]),
)
def test_symmetric_gable_wind_from_either_side_mirrors(w, pg, slope, standard, prismatic):
    # hypothesis property (issue 12): two equal W give the same cases for either wind,
    # each the case of one W
    kw = {"shape": "gable", "slope": slope}
    if prismatic is not None:
        kw["prismatic"] = prismatic
    two = run(pg, standard, 0.5, eave_to_ridge=[f"{w}ft", f"{w}ft"], **kw)
    one = run(pg, standard, 0.5, eave_to_ridge=f"{w}ft", **kw)
    keys = ("windward", "leeward", "surcharge", "surcharge_extent", "leeward_peak")
    for m in {c["method"] for c in of(one, "unbalanced")}:
        (a,) = of(two, "unbalanced", wind_from="A", method=m)
        (b,) = of(two, "unbalanced", wind_from="B", method=m)
        (ref,) = of(one, "unbalanced", method=m)
        assert [a[k] for k in keys] == [b[k] for k in keys] == [ref[k] for k in keys]
        assert a["windward_eave_to_ridge"] == b["leeward_eave_to_ridge"]


@pytest.mark.parametrize(
    ("given", "why"),
    [
        ("30ft,", "one of two"),
        (",30ft", "one of two"),
        ("30ft,20ft,10ft", "more than two"),
    ],
)
def test_asymmetric_gable_with_one_w_exits_2_naming_the_field(given, why):
    r = invoke("--pg", "35psf", "--shape", "gable", "--slope", "6:12", "--eave-to-ridge", given)
    assert r.exit_code == 2, (why, r.output)
    assert r.stderr.startswith("neve: error: eave_to_ridge:")


def test_asymmetric_w_in_roof_toml(tmp_path):
    ok = invoke("--pg", "35psf", "--format", "json", tmp_path=tmp_path,
                toml='shape = "gable"\nslope = "6:12"\neave_to_ridge = ["30ft", "20ft"]\n')  # fmt: skip
    assert ok.exit_code == 0, ok.output
    one = invoke("--pg", "35psf", tmp_path=tmp_path,
                 toml='shape = "gable"\nslope = "6:12"\neave_to_ridge = ["30ft"]\n')  # fmt: skip
    assert one.exit_code == 2 and "eave_to_ridge:" in one.stderr
    mono = invoke("--pg", "35psf", tmp_path=tmp_path,
                  toml='shape = "monoslope"\nslope = "1:12"\neave_to_ridge = ["30ft", "20ft"]\n')  # fmt: skip
    assert mono.exit_code == 2 and "eave_to_ridge:" in mono.stderr


def test_asymmetric_rain_on_snow_takes_the_longer_w():
    # Sec. 7.10: rain-on-snow where 0 < pg <= 20 psf and slope [deg] < W/50 [ft];
    # 1 on 12 = 4.76 deg: W = 300 ft gives 6 > 4.76 (applies), W = 200 ft gives 4 (not)
    out = run(12.0, shape="gable", slope="1:12", eave_to_ridge="200ft,300ft")
    assert out["loads"]["rain_on_snow"]["psf"] == 5.0


# --- projections: sides, the greater fetch, the 15 ft exemption per side -----------------

PROJ = {"height": "5ft", "plan_length": "20ft", "length_left": "50ft", "length_right": "80ft"}


def test_projection_drift_on_each_side_with_the_greater_fetch():
    out = run(shape="flat", projection=[PROJ])
    left, right = of(out, "drift", side="left")[0], of(out, "drift", side="right")[0]
    # Sec. 7.8: lu = max(50, 80) = 80 ft on both sides; hd = 0.75 x 3.15958 = 2.36969 ft
    hd = 0.75 * hd_716(80.0)
    for c in (left, right):
        assert c["hd"]["ft"] == pytest.approx(hd, abs=1e-3)
        assert c["w"]["ft"] == pytest.approx(4 * hd, abs=2e-3)  # hd <= hc = 3.82682 ft
        assert c["pd"]["psf"] == pytest.approx(hd * GAMMA, abs=3e-3)
        lu = [s for s in c["steps"] if s["symbol"] == "lu"]
        assert lu and lu[0]["value"] == 80.0 and lu[0]["ref"] == "ASCE 7-16 Sec. 7.8"
    assert left["roof_length"]["ft"] == 50.0 and right["roof_length"]["ft"] == 80.0
    assert left["name"] == "drift at projection 'projection 1', left side"
    assert left["place"] == right["place"] == "projection[0]"


def test_projection_exemption_per_side():
    # Sec. 7.8: a side shorter than 15 ft needs no drift, each side on its own
    p = dict(PROJ, plan_width="10ft", length_front="40ft", length_back="30ft")
    out = run(shape="flat", projection=[p])
    assert sorted(c["side"] for c in of(out, "drift")) == ["left", "right"]
    exempt = [s for s in out["not_required"] if s["case"] == "drift"]
    assert sorted(s["name"] for s in exempt) == ["projection 1, back side",
                                                  "projection 1, front side"]  # fmt: skip
    assert all("under 15 ft (Sec. 7.8)" in s["reason"] for s in exempt)


def test_projection_drift_truncated_at_the_roof_edge_of_its_side():
    # Sec. 7.7.1 by Sec. 7.8: w = 9.47874 ft beside 6 ft of roof: pd_edge = pd (1 - 6/w)
    out = run(shape="flat", projection=[dict(PROJ, length_left="6ft")])
    (left,) = of(out, "drift", side="left")
    w, pd = left["w"]["ft"], left["pd"]["psf"]
    assert left["w_on_roof"]["ft"] == 6.0
    assert left["pd_far_edge"]["psf"] == pytest.approx(pd * (1 - 6.0 / w), abs=3e-3)
    assert left["pd_far_edge"]["psf"] == pytest.approx(15.5674, abs=3e-3)  # hand


@pytest.mark.parametrize("key", ["upwind_length", "length_left"])
def test_projection_with_one_length_is_worked_as_before(key):
    # the older upwind_length (and one length alone): one drift with that fetch, old name
    p = {"height": "5ft", "plan_length": "20ft", key: "50ft"}
    out = run(shape="flat", projection=[p])
    (c,) = of(out, "drift")
    assert c["name"] == "drift at projection 'projection 1'"
    assert c["hd"]["ft"] == pytest.approx(0.75 * hd_716(50.0), abs=1e-3)  # 1.86299 ft
    assert "side" not in c


@pytest.mark.parametrize(
    ("table", "field"),
    [
        ('[[projection]]\nheight = "4ft"\nplan_length = "20ft"\n', "projection[0].length_left"),
        ('[[projection]]\nheight = "4ft"\nplan_length = "20ft"\nlength_left = "50ft"\n'
         'plan_width = "10ft"\n', "projection[0].length_front"),
        ('[[projection]]\nheight = "4ft"\nplan_length = "20ft"\nlength_left = "50ft"\n'
         'length_back = "10ft"\n', "projection[0].plan_width"),
        ('[[projection]]\nheight = "4ft"\nplan_length = "20ft"\nlength_left = "50ft"\n'
         'upwind_length = "50ft"\n', "projection[0].upwind_length"),
        ('[[step]]\nheight = "9ft"\nupper_length = "90ft"\nlower_length = "40ft"\n'
         'upper_pf = "30psf"\nupper_ct = 1.2\n', "step[0].upper_pf"),
        ('[[step]]\nheight = "9ft"\nupper_length = "90ft"\nlower_length = "40ft"\n'
         'meets = "nowhere"\n', "step[0].meets"),
        ('[[parapet]]\nname = "p"\nheight = "3ft"\nupwind_length = "90ft"\nmeets = "p"\n',
         "parapet[0].meets"),
        ('[[step]]\nheight = "9ft"\nupper_length = "90ft"\nlower_length = "40ft"\n'
         'lower_roof = "old"\n', "step[0].lower_roof"),
    ],
)  # fmt: skip
def test_bad_places_exit_2_naming_the_field(tmp_path, table, field):
    r = invoke("--pg", "35psf", tmp_path=tmp_path, toml=table)
    assert r.exit_code == 2, r.output
    assert r.stderr.startswith(f"neve: error: {field}:"), r.stderr


def test_projection_without_sides_from_python_names_the_field():
    with pytest.raises(InputError) as e:
        Roof.from_mapping({"projection": [{"height": "4ft", "plan_length": "20ft"}]})
    assert e.value.field == "projection[0].length_left"


# --- a parapet on the upper roof at a step -----------------------------------------------


@pytest.mark.parametrize("standard", EDITIONS)
def test_upper_parapet_adds_to_the_step_height_visibly(standard):
    step = {"height": "10ft", "upper_length": "100ft", "lower_length": "60ft"}
    with_parapet = run(standard=standard, w2=0.45, step=[dict(step, upper_parapet="2ft")])
    same = run(standard=standard, w2=0.45, step=[dict(step, height="12ft")])
    for c, ref in zip(of(with_parapet, "drift"), of(same, "drift"), strict=True):
        assert c["hc"] == ref["hc"] and c["pd"] == ref["pd"] and c["w"] == ref["w"]
        (h,) = [s for s in c["steps"] if s["symbol"] == "h"]
        assert h["equation"] == "h = height + upper_parapet" and h["value"] == 12.0
        assert h["ref"].endswith("Sec. 7.7.1")
    # hand: hc = 12 - 1.17318 = 10.82682 ft
    assert of(with_parapet, "drift")[0]["hc"]["ft"] == pytest.approx(12.0 - HB, abs=1e-3)


# --- sliding from an upper roof with its own factors --------------------------------------

SLIDE = {"height": "10ft", "upper_length": "100ft", "lower_length": "60ft",
         "upper_slope": "4:12", "upper_eave_to_ridge": "30ft"}  # fmt: skip


def test_sliding_from_the_upper_roofs_own_factors_asce7_16():
    # Eq. 7.3-1: pf_upper = 0.7 x 1 x 1.2 x 1.1 x 30 = 27.72 psf; Sec. 7.9: 0.4 pf W / 15 ft
    out = run(step=[dict(SLIDE, upper_ct=1.2, upper_is=1.1)])
    (c,) = of(out, "sliding")
    assert c["load"]["psf"] == pytest.approx(0.4 * 27.72 * 30 / 15, abs=1e-6)  # 22.176 psf
    syms = {s["symbol"]: s for s in c["steps"]}
    assert syms["pf_upper"]["value"] == pytest.approx(27.72)
    assert syms["Ce_upper"]["description"].endswith("(not given: this roof's)")
    assert syms["Cs_upper"]["value"] == 1.0  # 4 on 12 = 18.4 deg < 45 deg knee (Ct 1.2)
    assert "upper_pf_assumed" not in out["flags"]


def test_sliding_from_the_upper_roofs_own_factors_asce7_22():
    # ASCE 7-22 Eq. 7.3-1 (no Is): pf_upper = 0.7 x 0.9 x 1.2 x 30 = 22.68 psf
    out = run(standard="asce7-22", w2=0.45, step=[dict(SLIDE, upper_ce=0.9, upper_ct=1.2)])
    (c,) = of(out, "sliding")
    assert c["load"]["psf"] == pytest.approx(0.4 * 22.68 * 30 / 15, abs=1e-6)


def test_upper_is_is_refused_by_asce7_22_naming_it(tmp_path):
    toml = ('[[step]]\nheight = "10ft"\nupper_length = "100ft"\nlower_length = "60ft"\n'
            "upper_is = 1.1\n")  # fmt: skip
    r = invoke("--pg", "35psf", "--standard", "asce7-22", "--w2", "0.4", tmp_path=tmp_path,
               toml=toml)  # fmt: skip
    assert r.exit_code == 2 and r.stderr.startswith("neve: error: step[0].upper_is:"), r.output
    assert invoke("--pg", "35psf", tmp_path=tmp_path, toml=toml).exit_code == 0  # ASCE 7-16


def test_upper_pf_is_still_accepted():
    out = run(step=[dict(SLIDE, upper_pf="40psf")])
    assert of(out, "sliding")[0]["load"]["psf"] == pytest.approx(0.4 * 40 * 30 / 15)


# --- several places, each its own case; inside corners -----------------------------------


@pytest.mark.parametrize("standard", EDITIONS)
def test_every_place_has_its_own_case_name(standard):
    par = {"name": "north", "height": "3ft", "upwind_length": "100ft"}
    step = {"name": "north", "height": "9ft", "upper_length": "90ft", "lower_length": "60ft"}
    out = run(standard=standard, w2=0.45, step=[step, dict(step, name="hall")],
              parapet=[par, dict(par, upwind_length="40ft")],
              projection=[PROJ, dict(PROJ, name="north")])  # fmt: skip
    names = [c["name"] for c in out["cases"]]
    assert len(names) == len(set(names))
    assert "drift at parapet 'north' (parapet[1])" in names
    places = {c["place"] for c in of(out, "drift")}
    assert places == {"step[0]", "step[1]", "parapet[0]", "parapet[1]", "projection[0]",
                      "projection[1]"}  # fmt: skip


def test_without_w2_the_not_computed_places_have_unique_names():
    par = {"name": "north", "height": "3ft", "upwind_length": "100ft"}
    out = run(standard="asce7-22", parapet=[par, par])
    names = [s["name"] for s in out["not_required"] if s["case"] == "drift"]
    assert names == ["north (parapet[0])", "north (parapet[1])"]


def test_inside_corner_larger_drift_governs_in_the_overlap():
    # common practice: two drifts meeting at an inside corner are not added; in the
    # overlap the larger surcharge governs
    step = {"name": "hall", "height": "10ft", "upper_length": "100ft", "lower_length": "60ft",
            "meets": ["east wall"]}  # fmt: skip
    par = {"name": "east wall", "height": "4ft", "upwind_length": "100ft"}
    out = run(step=[step], parapet=[par])
    s, p = of(out, "drift", place="step[0]")[0], of(out, "drift", place="parapet[0]")[0]
    (cs,), (cp,) = s["inside_corners"], p["inside_corners"]
    assert cs["meets"] == "east wall" and cp["meets"] == "hall"
    peak = max(s["pd"]["psf"], p["pd"]["psf"])
    assert cs["peak_surcharge"]["psf"] == cp["peak_surcharge"]["psf"] == pytest.approx(peak)
    assert cs["peak_total"]["psf"] == pytest.approx(21.0 + peak, abs=1e-3)
    assert cs["peak_total"]["psf"] < s["total_peak"]["psf"] + p["pd"]["psf"]  # not added
    assert cs["governs"] == "hall"  # 62.9969 psf (leeward, 100 ft) > 47.2477 psf (parapet)
    assert cs["overlap_this"] == s["w"] and cs["overlap_other"] == p["w"]
    assert "inside corner" in s["note"]


# --- ponding and existing roofs ------------------------------------------------------------


@pytest.mark.parametrize("standard", EDITIONS)
@pytest.mark.parametrize(
    ("shape", "slope", "flagged"),
    [("flat", "0deg", True), ("monoslope", "0.2:12", True), ("monoslope", "0.25:12", False),
     ("gable", "1:12", False)],
)  # fmt: skip
def test_ponding_check_below_quarter_on_12(standard, shape, slope, flagged):
    # Sec. 7.11 (with Sec. 8.4): roofs under 1/4 on 12 are checked for ponding instability
    out = run(standard=standard, w2=0.45, shape=shape, slope=slope, eave_to_ridge="40ft")
    assert ("ponding_check_required" in out["flags"]) is flagged
    roof = Roof.from_mapping({"shape": shape, "slope": slope, "eave_to_ridge": "40ft"})
    assert ("ponding_check_required" in screening_flags(roof, standard=standard)) is flagged


@pytest.mark.parametrize("standard", EDITIONS)
def test_existing_lower_roof_beside_a_new_higher_structure(standard):
    # Sec. 7.12: the drift on the existing roof is its increased load, with a note
    step = {"height": "10ft", "upper_length": "100ft", "lower_length": "60ft",
            "lower_roof": "existing", "separation": "5ft"}  # fmt: skip
    out = run(standard=standard, w2=0.45, step=[step])
    drifts = of(out, "drift")
    assert drifts and all(c["lower_roof"] == "existing" for c in drifts)
    assert all("existing" in c["note"] and "Sec. 7.12" in c["note"] for c in drifts)
    assert all("within 20 ft" in c["note"] for c in drifts)
    assert "lower_roof" not in of(run(step=[dict(step, lower_roof="new")]), "drift")[0]


# --- the 20 ft least fetch only where Sec. 7.6.1 sets it ----------------------------------


def test_drift_fetch_is_taken_as_given():
    out = run(step=[{"height": "10ft", "upper_length": "100ft", "lower_length": "10ft"}])
    (c,) = of(out, "drift")
    # hand: 0.75 x (0.43 x 10^(1/3) x 40^(1/4) - 1.5) = 0.622343 ft (was 20 ft: 1.07651 ft)
    assert c["hd_windward"]["ft"] == pytest.approx(0.75 * hd_716(10.0), abs=1e-3)
    par = run(parapet=[{"height": "3ft", "upwind_length": "2ft"}])
    # 0.43 x 2^(1/3) x 40^(1/4) - 1.5 < 0: no drift height, no drift
    assert of(par, "drift") == []
    assert (
        "no drift height" in [s for s in par["not_required"] if s["case"] == "drift"][0]["reason"]
    )


def test_unbalanced_keeps_the_20_ft_least_w_with_its_step():
    out = run(**GABLE, eave_to_ridge="16ft", prismatic=False)
    (c,) = of(out, "unbalanced")
    (lu,) = [s for s in c["steps"] if s["symbol"] == "lu"]
    assert lu["value"] == 20.0 and lu["ref"] == "ASCE 7-16 Sec. 7.6.1"
    assert lu["equation"] == "lu = max(W, 20 ft)"


# --- loads stay non-negative and finite --------------------------------------------------


@st.composite
def geometry_roofs(draw):
    data = {**NEUTRAL, "shape": draw(st.sampled_from(["flat", "gable", "hip"]))}
    if data["shape"] == "flat":
        data["slope"] = "0deg"
    else:
        data["slope"] = f"{draw(st.sampled_from([1, 4, 7]))}:12"
        ws = draw(st.lists(st.sampled_from([5, 16, 40, 300]), min_size=1, max_size=2))
        data["eave_to_ridge"] = [f"{w}ft" for w in ws] if len(ws) == 2 else f"{ws[0]}ft"
    lengths = st.sampled_from(["1ft", "6ft", "25ft", "400ft"])
    data["step"] = [{"height": draw(st.sampled_from(["1ft", "5ft", "30ft"])),
                     "upper_length": draw(lengths), "lower_length": draw(lengths),
                     "upper_parapet": draw(st.sampled_from([None, "2ft"])),
                     "separation": draw(st.sampled_from(["0ft", "8ft"])),
                     "upper_slope": "5:12", "upper_eave_to_ridge": draw(lengths),
                     "upper_ct": draw(st.sampled_from([None, 1.2])), "name": "s",
                     "meets": ["p"]}]  # fmt: skip
    data["parapet"] = [{"name": "p", "height": "3ft", "upwind_length": draw(lengths)}]
    data["projection"] = [{"height": "4ft", "plan_length": draw(st.sampled_from(["10ft", "20ft"])),
                           "length_left": draw(lengths), "length_right": draw(lengths)}]  # fmt: skip
    data["step"][0] = {k: v for k, v in data["step"][0].items() if v is not None}
    return data


def _loads(obj):
    if isinstance(obj, dict):
        if "psf" in obj:
            yield obj["psf"]
        if "ft" in obj:
            yield obj["ft"]
        for v in obj.values():
            yield from _loads(v)
    elif isinstance(obj, list):
        for v in obj:
            yield from _loads(v)


@settings(max_examples=60, deadline=None, database=None)
@given(geometry_roofs(), st.floats(min_value=0.0, max_value=300.0), st.sampled_from(EDITIONS))
def test_loads_non_negative_and_finite(data, pg, standard):
    w2 = 0.5 if standard == "asce7-22" else None
    out = analyze_roof(pg, Roof.from_mapping(data), standard=standard, w2=w2).to_json()
    values = list(_loads(out["cases"]))
    assert values  # not vacuous: the balanced case at least
    for v in values:
        assert v is not None and math.isfinite(v) and v >= 0.0
