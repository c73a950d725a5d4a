"""Flat roof load, minimum load for low-slope roofs, rain-on-snow surcharge.

Sources: ASCE 7-16 Eq. 7.3-1, Sec. 7.3.4 and Sec. 7.10 (from memory). Every
expected number is a hand calculation from those equations, shown beside it.
"""

from __future__ import annotations

import numpy as np
import pytest

from neve.engine.asce7_16.flat import flat_roof_load, minimum_load, rain_on_snow_applies
from tests.engine.helpers import cases, run, skipped


def test_flat_roof_load_eq_7_3_1_all_factors():
    # ASCE 7-16 Eq. 7.3-1 (from memory), hand calculation:
    # terrain B sheltered Ce = 1.2, unheated Ct = 1.2, risk III Is = 1.1, pg = 40 psf
    # pf = 0.7 x 1.2 x 1.2 x 1.1 x 40 = 44.352 psf
    out = run(40.0, terrain="B", exposure="sheltered", thermal="unheated", risk="III")
    assert out["loads"]["pf"]["psf"] == pytest.approx(44.352, abs=1e-3)


def test_flat_roof_load_function():
    # ASCE 7-16 Eq. 7.3-1, hand calculation: 0.7 x 0.9 x 1.1 x 0.8 x 55 = 30.492 psf
    assert flat_roof_load(55.0, 0.9, 1.1, 0.8) == pytest.approx(30.492, abs=1e-9)


@pytest.mark.parametrize(
    ("pg", "is_", "expected"),
    [
        (15.0, 1.1, 16.5),  # pg <= 20: pm = Is pg = 1.1 x 15
        (20.0, 1.2, 24.0),  # boundary pg = 20: both forms give 20 Is = 24
        (30.0, 1.2, 24.0),  # pg > 20: pm = 20 Is = 20 x 1.2
        (90.0, 0.8, 16.0),  # pg > 20: pm = 20 x 0.8
    ],
)
def test_minimum_load_sec_7_3_4(pg, is_, expected):
    # ASCE 7-16 Sec. 7.3.4 (from memory), hand calculation as commented
    assert minimum_load(pg, is_) == pytest.approx(expected, abs=1e-9)


@pytest.mark.parametrize(
    ("shape", "slope", "applies"),
    [
        ("flat", "0:12", True),
        ("monoslope", "14.9deg", True),
        ("monoslope", "15deg", False),  # "less than 15 degrees": 15 itself is out
        ("gable", "3:12", True),  # 14.04 deg
        ("hip", "4:12", False),  # 18.43 deg
    ],
)
def test_minimum_applies_below_15_degrees(shape, slope, applies):
    # ASCE 7-16 Sec. 7.3.4 (from memory): monoslope, hip and gable roofs under 15 deg;
    # a flat roof is read as a low-slope monoslope roof (common practice)
    out = run(30.0, shape=shape, slope=slope, eave_to_ridge="40ft")
    assert (out["loads"]["pm"] is not None) is applies
    assert bool(cases(out, "minimum")) is applies
    assert bool(skipped(out, "minimum")) is (not applies)


@pytest.mark.parametrize(
    ("pg", "applies"),
    [(0.0, False), (0.5, True), (15.0, True), (20.0, True), (20.01, False), (40.0, False)],
)
def test_rain_on_snow_pg_range(pg, applies):
    # ASCE 7-16 Sec. 7.10 (from memory): where 0 < pg <= 20 psf
    out = run(pg, shape="flat")
    ros = out["loads"]["rain_on_snow"]
    if applies:
        assert ros["psf"] == pytest.approx(5.0, abs=1e-9)
    else:
        assert ros is None


@pytest.mark.parametrize(
    ("slope_deg", "w_ft", "applies"),
    [
        (4.0, 250.0, True),  # W/50 = 5 deg > 4 deg
        (4.0, 200.0, False),  # W/50 = 4 deg, slope is not less than 4 deg
        (4.0, 150.0, False),  # W/50 = 3 deg < 4 deg
        (1.0, 60.0, True),  # W/50 = 1.2 deg
    ],
)
def test_rain_on_snow_slope_below_w_over_50(slope_deg, w_ft, applies):
    # ASCE 7-16 Sec. 7.10 (from memory): slope in degrees less than W/50 with W in ft
    assert bool(rain_on_snow_applies(15.0, slope_deg, w_ft)) is applies


def test_rain_on_snow_through_a_gable_roof():
    # ASCE 7-16 Sec. 7.10 (from memory): 1:12 is 4.764 deg; W = 300 ft gives W/50 = 6 deg
    out = run(12.0, shape="gable", slope="1:12", eave_to_ridge="300ft")
    assert out["loads"]["rain_on_snow"]["psf"] == pytest.approx(5.0, abs=1e-9)
    # W = 200 ft: W/50 = 4 deg < 4.764 deg, no surcharge
    out = run(12.0, shape="gable", slope="1:12", eave_to_ridge="200ft")
    assert out["loads"]["rain_on_snow"] is None


def test_rain_on_snow_only_in_the_balanced_case():
    # ASCE 7-16 Sec. 7.10 (from memory): the surcharge belongs to the balanced case only.
    # pg = 15, neutral factors: pf = 0.7 x 15 = 10.5 psf; balanced = 10.5 + 5 = 15.5 psf
    out = run(
        15.0, shape="flat", step=[{"height": "8ft", "upper_length": "80ft", "lower_length": "50ft"}]
    )
    (bal,) = cases(out, "balanced")
    assert bal["load"]["psf"] == pytest.approx(15.5, abs=1e-3)
    (drift,) = cases(out, "drift")
    # drift sits on the balanced load without the surcharge: total = 10.5 + pd
    assert drift["total_peak"]["psf"] == pytest.approx(10.5 + drift["pd"]["psf"], abs=2e-3)
    (minimum,) = cases(out, "minimum")
    # pm = Is pg = 15 psf, no surcharge added (Sec. 7.10)
    assert minimum["load"]["psf"] == pytest.approx(15.0, abs=1e-3)


def test_arrays_match_scalars_for_uniform_provisions():
    # regression guard: array input gives the same numbers as scalar input
    pg = np.array([0.0, 10.0, 20.0, 35.0, 80.0])
    arr = minimum_load(pg, 1.1)
    assert arr.shape == pg.shape
    for p, v in zip(pg, arr, strict=True):
        assert v == pytest.approx(float(minimum_load(float(p), 1.1)), abs=1e-12)
    ros = rain_on_snow_applies(pg, 2.0, 400.0)
    assert ros.tolist() == [False, True, True, False, False]
