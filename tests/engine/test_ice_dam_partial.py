"""Ice dams and icicles along eaves; partial loading of continuous members.

Sources: ASCE 7-16 Sec. 7.4.5 (from memory): warm roofs that drain water over
their eaves carry 2 pf on overhangs when unventilated with R < 30 or
ventilated with R < 20 ft2.h.F/Btu, with only dead load acting with it.
ASCE 7-16 Sec. 7.5 and Fig. 7.5-1 (from memory): spans with the balanced load
and others with half of it; members spanning perpendicular to the ridge of
gable roofs of 1/2 on 12 (2.38 deg) or more are exempt.
"""

from __future__ import annotations

import pytest

from neve.engine.asce7_16.eaves import ice_dam_applies, ice_dam_load, partial_exempt
from neve.engine.units import parse_slope
from tests.engine.helpers import cases, run, skipped


@pytest.mark.parametrize(
    ("ventilated", "r_value", "applies"),
    [
        (False, 20.0, True),  # unventilated, R < 30
        (False, 30.0, False),  # unventilated, R = 30 is not below 30
        (True, 19.0, True),  # ventilated, R < 20
        (True, 20.0, False),  # ventilated, R = 20 is not below 20
        (True, 25.0, False),  # ventilated, R >= 20
    ],
)
def test_ice_dam_conditions_on_warm_roofs(ventilated, r_value, applies):
    # ASCE 7-16 Sec. 7.4.5 (from memory)
    ok, flags = ice_dam_applies(1.0, ventilated, r_value)
    assert ok is applies
    assert flags == []


def test_ice_dam_not_on_cold_roofs():
    # ASCE 7-16 Sec. 7.4.5 (from memory): the provision names warm roofs only
    ok, _ = ice_dam_applies(1.1, False, 10.0)
    assert ok is False
    out = run(30.0, thermal="cold-ventilated", overhang={"length": "2ft"})
    assert not cases(out, "ice_dam")
    assert skipped(out, "ice_dam")


def test_ice_dam_load_two_pf():
    # ASCE 7-16 Sec. 7.4.5 (from memory), hand calculation: pg = 30 neutral -> pf = 21
    # overhang load = 2 x 21 = 42 psf
    assert ice_dam_load(21.0) == pytest.approx(42.0, abs=1e-12)
    out = run(30.0, overhang={"length": "2ft"}, ventilated=False, r_value=20.0)
    (ice,) = cases(out, "ice_dam")
    assert ice["load"]["psf"] == pytest.approx(42.0, abs=1e-3)
    assert ice["overhang"]["ft"] == pytest.approx(2.0, abs=1e-6)
    assert "dead load" in ice["not_combined_with"]


def test_ice_dam_uses_pf_not_ps():
    # ASCE 7-16 Sec. 7.4.5 (from memory): the overhang load is 2 pf of the heated roof,
    # not 2 ps. 10:12 (39.81 deg) on solid line a: Cs = (70 - 39.81)/40 = 0.7548
    # pf = 0.7 x 40 = 28 -> overhang load 56 psf, whatever Cs is
    out = run(
        40.0,
        shape="gable",
        slope="10:12",
        eave_to_ridge="25ft",
        overhang={"length": "3ft"},
        ventilated=False,
        r_value=15.0,
    )
    (ice,) = cases(out, "ice_dam")
    assert ice["load"]["psf"] == pytest.approx(56.0, abs=1e-3)


def test_ice_dam_unstated_conditions_applied_and_flagged():
    # common practice: without R and ventilation the conservative answer is to apply it
    out = run(30.0, overhang={"length": "2ft"})
    assert cases(out, "ice_dam")
    assert "ice_dam_conditions_unstated" in out["flags"]


def test_no_overhang_no_ice_dam_case():
    # ASCE 7-16 Sec. 7.4.5 (from memory): the load acts on overhanging portions only
    out = run(30.0, ventilated=False, r_value=10.0)
    assert not cases(out, "ice_dam")


@pytest.mark.parametrize(
    ("shape", "slope", "exempt"),
    [
        ("gable", "0.5:12", True),  # 1/2 on 12 and greater
        ("gable", "6:12", True),
        ("gable", "2deg", False),  # below 2.38 deg
        ("hip", "6:12", False),  # the exemption names gable roofs
        ("flat", "0:12", False),
    ],
)
def test_partial_loading_gable_exemption(shape, slope, exempt):
    # ASCE 7-16 Sec. 7.5 (from memory)
    assert bool(partial_exempt(shape, parse_slope(slope))) is exempt


def test_partial_case_full_and_half_balanced():
    # ASCE 7-16 Sec. 7.5, Fig. 7.5-1 (from memory), hand calculation: pg = 40 neutral,
    # flat: ps = 28 psf on loaded spans, 0.5 x 28 = 14 psf on the others
    out = run(40.0)
    (part,) = cases(out, "partial")
    assert part["full"]["psf"] == pytest.approx(28.0, abs=1e-3)
    assert part["half"]["psf"] == pytest.approx(14.0, abs=1e-3)
    assert part["exempt_perpendicular_to_ridge"] is False
    # Sec. 7.3.4 and 7.10: neither the minimum load nor rain-on-snow goes with it
    assert "minimum" in part["not_combined_with"]
    assert "rain-on-snow" in part["not_combined_with"]
