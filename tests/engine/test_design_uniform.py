"""The governing uniform load, which cases combine, and the step records.

Sources: ASCE 7-16 Sec. 7.3.4 (minimum load is a separate uniform case, not
combined with drift, sliding, unbalanced or partial loads), Sec. 7.10
(rain-on-snow belongs to the balanced case only), Sec. 7.9 (sliding is not
combined with drift, unbalanced, partial or minimum loads), all from memory.
"""

from __future__ import annotations

import numpy as np
import pytest

from neve.engine import Roof, analyze_roof, uniform_loads
from tests.engine.helpers import cases, roof, run

STEP_KEYS = {"symbol", "description", "equation", "substituted", "value", "unit", "ref"}


@pytest.mark.parametrize(
    ("pg", "options", "expected"),
    [
        # flat, neutral: ps = 0.7 x 15 = 10.5, + 5 rain-on-snow = 15.5 > pm = 15
        (15.0, {}, 15.5),
        # risk IV: ps = 0.7 x 18 x 1.2 = 15.12, + 5 = 20.12 < pm = 1.2 x 18 = 21.6
        (18.0, {"risk": "IV"}, 21.6),
        # ps = 0.7 x 40 = 28 > pm = 20 x 1 = 20
        (40.0, {}, 28.0),
        # ps = 0.7 x 0.9 x 25 = 15.75 < pm = 20
        (25.0, {"ce": 0.9}, 20.0),
        # 8:12 gable, no minimum (33.69 deg >= 15): ps = 28 x (70 - 33.690)/40 = 25.4170
        (40.0, {"shape": "gable", "slope": "8:12", "eave_to_ridge": "30ft"}, 25.4170),
    ],
)
def test_design_uniform_is_the_larger_uniform_case(pg, options, expected):
    # ASCE 7-16 Sec. 7.3.4, Eq. 7.3-1, Eq. 7.4-1, Sec. 7.10 (from memory), by hand
    out = run(pg, **options)
    assert out["design_uniform"]["psf"] == pytest.approx(expected, abs=2e-3)
    # 1 psf = 47.880259 Pa exactly from the ft and lbf definitions (NIST SP 811)
    assert out["design_uniform"]["kPa"] == pytest.approx(expected * 0.047880259, abs=2e-4)


def test_rain_on_snow_step_down_above_20_psf():
    # ASCE 7-16 Sec. 7.10 (from memory): the surcharge stops above pg = 20 psf, so the
    # governing uniform load can fall as pg rises. Sheltered terrain B (Ce 1.2), freezer
    # (Ct 1.3): pg = 20 -> 0.7 x 1.2 x 1.3 x 20 = 21.84 + 5 = 26.84 psf (pm = 20)
    # pg = 20.5 -> 0.7 x 1.2 x 1.3 x 20.5 = 22.386 psf, no surcharge
    opts = {"terrain": "B", "exposure": "sheltered", "thermal": "below-freezing"}
    assert run(20.0, **opts)["design_uniform"]["psf"] == pytest.approx(26.84, abs=1e-3)
    assert run(20.5, **opts)["design_uniform"]["psf"] == pytest.approx(22.386, abs=1e-3)


ROOFS = [
    {"shape": "flat"},
    {"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft", "risk": "III"},
    {"shape": "monoslope", "slope": "1:12", "eave_to_ridge": "400ft", "ce": 1.2, "ct": 1.3},
    {"shape": "hip", "slope": "45deg", "eave_to_ridge": "20ft", "thermal": "unheated"},
]


@pytest.mark.parametrize("spec", ROOFS)
def test_uniform_loads_arrays_match_analyze_roof(spec):
    # regression guard: the array entry point agrees with the single-site one
    r = Roof.from_mapping(spec)
    pgs = np.array([0.0, 5.0, 15.0, 20.0, 20.5, 42.0, 110.0])
    arr = uniform_loads(pgs, r)
    for i, pg in enumerate(pgs):
        one = analyze_roof(float(pg), r)
        assert arr["pf"][i] == pytest.approx(one.loads["pf"], abs=1e-9)
        assert arr["ps"][i] == pytest.approx(one.loads["ps"], abs=1e-9)
        assert arr["design_uniform"][i] == pytest.approx(one.design_uniform, abs=1e-9)
        if one.loads["pm"] is None:
            assert np.isnan(arr["pm"][i])
        else:
            assert arr["pm"][i] == pytest.approx(one.loads["pm"], abs=1e-9)


def test_uniform_loads_nan_stays_nan():
    # common practice (screening): a site without a ground load gives no roof load
    out = uniform_loads(np.array([np.nan, 30.0]), roof())
    assert np.isnan(out["design_uniform"][0])
    # 0.7 x 30 = 21 psf
    assert out["design_uniform"][1] == pytest.approx(21.0, abs=1e-9)


def test_minimum_load_is_a_separate_case():
    # ASCE 7-16 Sec. 7.3.4 (from memory)
    out = run(30.0, shape="gable", slope="3:12", eave_to_ridge="30ft")
    (m,) = cases(out, "minimum")
    for other in ("drift", "sliding", "unbalanced", "partial", "rain-on-snow"):
        assert other in m["not_combined_with"]


def test_sliding_not_combined_with_other_cases():
    # ASCE 7-16 Sec. 7.9 (from memory)
    step = {
        "height": "12ft",
        "upper_length": "60ft",
        "lower_length": "40ft",
        "upper_slope": "4:12",
        "upper_eave_to_ridge": "30ft",
    }
    out = run(30.0, step=[step])
    (sl,) = cases(out, "sliding")
    for other in ("drift", "unbalanced", "partial", "minimum"):
        assert other in sl["not_combined_with"]


def test_drift_not_combined_with_sliding():
    # ASCE 7-16 Sec. 7.9 (from memory): sliding need not be combined with drift, so the
    # relation holds both ways; the drift case should say so as the sliding case does
    step = {
        "height": "12ft",
        "upper_length": "60ft",
        "lower_length": "40ft",
        "upper_slope": "4:12",
        "upper_eave_to_ridge": "30ft",
    }
    out = run(30.0, step=[step])
    (d,) = cases(out, "drift")
    assert "sliding" in d["not_combined_with"]


def test_every_case_carries_step_records():
    # common practice (calculation package): each case shows its steps and provisions
    spec = {
        "shape": "gable",
        "slope": "5:12",
        "eave_to_ridge": "32ft",
        "overhang": "2ft",
        "step": [
            {
                "height": "9ft",
                "upper_length": "90ft",
                "lower_length": "40ft",
                "upper_slope": "3:12",
                "upper_eave_to_ridge": "25ft",
            }
        ],
        "parapet": [{"height": "3.5ft", "upwind_length": "64ft"}],
    }
    out = run(35.0, **spec)
    kinds = {c["case"] for c in out["cases"]}
    assert {"balanced", "unbalanced", "drift", "sliding", "ice_dam", "partial"} <= kinds
    for c in out["cases"]:
        assert c["steps"], c["case"]
        for s in c["steps"]:
            assert set(s) == STEP_KEYS
            assert s["ref"].startswith("ASCE 7-16 ")
    (bal,) = cases(out, "balanced")
    pf = next(s for s in bal["steps"] if s["symbol"] == "pf")
    # ASCE 7-16 Eq. 7.3-1: pf = 0.7 x 1 x 1 x 1 x 35 = 24.5 psf
    assert pf["ref"] == "ASCE 7-16 Eq. 7.3-1"
    assert pf["value"] == pytest.approx(24.5, abs=1e-4)
    assert "35" in pf["substituted"]


@pytest.mark.parametrize("pg", [-1.0, float("nan"), float("inf")])
def test_analyze_roof_refuses_bad_pg(pg):
    # common practice: a ground snow load is a finite value of zero or more
    from neve.engine import InputError

    with pytest.raises(InputError) as info:
        analyze_roof(pg, roof())
    assert info.value.field == "pg"


def test_uniform_loads_gives_no_negative_load_for_negative_pg():
    # common practice: a negative ground load is bad input; for a batch it should come back
    # as NaN (or an InputError naming pg), never as a negative design load (-3.5 psf here)
    from neve.engine import InputError

    try:
        out = uniform_loads(np.array([-5.0, 30.0]), roof())
    except InputError as exc:
        assert exc.field == "pg"
        return
    assert np.isnan(out["design_uniform"][0])
    assert out["design_uniform"][1] == pytest.approx(21.0, abs=1e-9)
