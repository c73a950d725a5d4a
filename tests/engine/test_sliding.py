"""Sliding snow from an upper roof onto a lower roof.

Sources: ASCE 7-16 Sec. 7.9 (from memory): sliding is considered for slippery
upper roofs steeper than 1/4 on 12 and other upper roofs steeper than 2 on 12;
the load per unit length of eave is 0.4 pf W, spread uniformly over 15 ft of
the lower roof (reduced in proportion on a narrower lower roof); separate
structures take it only where h/s > 1 and s < 15 ft, over 15 - s, with
0.4 pf W (15 - s)/15 per unit length.
"""

from __future__ import annotations

import pytest

from neve.engine import InputError
from neve.engine.asce7_16.sliding import sliding_load, sliding_required
from neve.engine.units import parse_slope
from tests.engine.helpers import cases, run, skipped


@pytest.mark.parametrize(
    ("slope", "surface", "required"),
    [
        ("0.25:12", "slippery", False),  # not greater than 1/4 on 12
        ("0.3:12", "slippery", True),
        ("2:12", "other", False),  # not greater than 2 on 12
        ("2.1:12", "other", True),
        ("1:12", "other", False),
        ("1:12", "slippery", True),
    ],
)
def test_sliding_slope_thresholds(slope, surface, required):
    # ASCE 7-16 Sec. 7.9 (from memory)
    assert bool(sliding_required(parse_slope(slope), surface)) is required


def test_sliding_load_0_4_pf_w_over_15ft():
    # ASCE 7-16 Sec. 7.9 (from memory), hand calculation: pf = 21 psf, W = 30 ft
    # 0.4 x 21 x 30 = 252 plf over 15 ft -> 252 / 15 = 16.8 psf
    v = sliding_load(21.0, 30.0, 40.0)
    assert v["required"]
    assert v["line_load"] == pytest.approx(252.0, abs=1e-9)
    assert v["load"] == pytest.approx(16.8, abs=1e-9)
    assert v["extent"] == pytest.approx(15.0, abs=1e-9)


def test_sliding_on_narrower_lower_roof_is_proportional():
    # ASCE 7-16 Sec. 7.9 (from memory): lower roof 10 ft wide keeps 10/15 of 252 plf
    # = 168 plf at the same 16.8 psf intensity
    v = sliding_load(21.0, 30.0, 10.0)
    assert v["line_load"] == pytest.approx(168.0, abs=1e-9)
    assert v["load"] == pytest.approx(16.8, abs=1e-9)
    assert v["extent"] == pytest.approx(10.0, abs=1e-9)


@pytest.mark.parametrize(
    ("s", "h", "required", "line", "extent"),
    [
        (5.0, 10.0, True, 168.0, 10.0),  # h/s = 2 > 1, s < 15: 0.4 x 21 x 30 x 10/15 = 168 plf
        (10.0, 10.0, False, None, None),  # h/s = 1 is not greater than 1
        (15.0, 20.0, False, None, None),  # s is not less than 15 ft
        (12.0, 13.0, True, 50.4, 3.0),  # 0.4 x 21 x 30 x 3/15 = 50.4 plf over 3 ft
    ],
)
def test_sliding_onto_a_separate_structure(s, h, required, line, extent):
    # ASCE 7-16 Sec. 7.9 (from memory), hand calculation as commented
    v = sliding_load(21.0, 30.0, 60.0, separation=s, height=h)
    assert v["required"] is required
    if required:
        assert v["line_load"] == pytest.approx(line, abs=1e-9)
        assert v["extent"] == pytest.approx(extent, abs=1e-9)
        assert v["load"] == pytest.approx(16.8, abs=1e-9)


STEP = {
    "name": "warehouse",
    "height": "12ft",
    "upper_length": "60ft",
    "lower_length": "40ft",
    "upper_slope": "4:12",
    "upper_surface": "other",
    "upper_eave_to_ridge": "30ft",
}


def test_sliding_case_through_analyze_roof():
    # ASCE 7-16 Sec. 7.9 (from memory): pg = 30 neutral -> pf = 21; upper 4:12 other > 2:12
    # load 0.4 x 21 x 30 / 15 = 16.8 psf, superimposed on the balanced 21 psf -> 37.8 psf
    out = run(30.0, shape="flat", step=[STEP])
    (sl,) = cases(out, "sliding")
    assert sl["load"]["psf"] == pytest.approx(16.8, abs=1e-3)
    assert sl["line_load"]["plf"] == pytest.approx(252.0, abs=1e-2)
    assert sl["extent"]["ft"] == pytest.approx(15.0, abs=1e-3)
    assert sl["total"]["psf"] == pytest.approx(37.8, abs=1e-3)
    # 252 plf = 252 x 4.4482216152605 N / 0.3048 m = 3677.66 N/m = 3.67766 kN/m
    assert sl["line_load"]["kN/m"] == pytest.approx(3.67766, abs=1e-4)


def test_no_sliding_from_a_shallow_upper_roof():
    # ASCE 7-16 Sec. 7.9 (from memory): other surface at 2 on 12 does not slide
    out = run(30.0, shape="flat", step=[dict(STEP, upper_slope="2:12")])
    assert not cases(out, "sliding")
    assert skipped(out, "sliding")


def test_sliding_needs_upper_eave_to_ridge():
    # common practice: W of the upper roof is an input of Sec. 7.9
    step = {k: v for k, v in STEP.items() if k != "upper_eave_to_ridge"}
    with pytest.raises(InputError) as info:
        run(30.0, shape="flat", step=[step])
    assert info.value.field == "step[0].upper_eave_to_ridge"
