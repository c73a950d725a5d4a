"""Roof slope factor Cs (Fig. 7.4-1) and the slippery-line conditions.

Sources: ASCE 7-16 Sec. 7.4, 7.4.1, 7.4.2 and Fig. 7.4-1 (from memory). Each
line of the figure is 1.0 up to its knee and straight down to 0 at 70 deg:

    Ct <= 1.0 (a): slippery knee 5 deg,  other surfaces 30 deg
    Ct  = 1.1 (b): slippery knee 10 deg, other surfaces 37.5 deg
    Ct >= 1.2 (c): slippery knee 15 deg, other surfaces 45 deg
"""

from __future__ import annotations

import numpy as np
import pytest

from neve.engine.asce7_16.slope import slope_factor
from tests.engine.helpers import run

# (Ct, slippery, knee [deg]) from ASCE 7-16 Fig. 7.4-1 (from memory)
KNEES_FIG_7_4_1 = [
    (1.0, False, 30.0),
    (1.0, True, 5.0),
    (1.1, False, 37.5),
    (1.1, True, 10.0),
    (1.2, False, 45.0),
    (1.2, True, 15.0),
]


@pytest.mark.parametrize(("ct", "slippery", "knee"), KNEES_FIG_7_4_1)
def test_knee_cs_is_one_up_to_the_knee(ct, slippery, knee):
    # ASCE 7-16 Fig. 7.4-1 (from memory): Cs = 1.0 from 0 deg to the knee
    assert slope_factor(0.0, ct, slippery) == pytest.approx(1.0, abs=1e-12)
    assert slope_factor(knee, ct, slippery) == pytest.approx(1.0, abs=1e-12)
    # just past the knee it falls: hand calculation (70 - (knee+1))/(70 - knee)
    assert slope_factor(knee + 1.0, ct, slippery) == pytest.approx(
        (69.0 - knee) / (70.0 - knee), abs=1e-12
    )


@pytest.mark.parametrize(("ct", "slippery", "knee"), KNEES_FIG_7_4_1)
def test_cs_zero_from_70_degrees(ct, slippery, knee):
    # ASCE 7-16 Fig. 7.4-1 (from memory): every line reaches 0 at 70 deg and stays 0
    assert slope_factor(70.0, ct, slippery) == pytest.approx(0.0, abs=1e-12)
    assert slope_factor(80.0, ct, slippery) == pytest.approx(0.0, abs=1e-12)


@pytest.mark.parametrize(
    ("slope", "ct", "slippery", "expected"),
    [
        (50.0, 1.0, False, 0.5),  # (70 - 50)/(70 - 30) = 20/40
        (26.56505118, 1.0, True, 0.66822998),  # 6:12 on line a dashed: 43.435/65
        (45.0, 1.1, False, 0.76923077),  # (70 - 45)/(70 - 37.5) = 25/32.5
        (40.0, 1.1, True, 0.5),  # (70 - 40)/(70 - 10) = 30/60
        (60.0, 1.2, False, 0.4),  # (70 - 60)/(70 - 45) = 10/25
        (30.0, 1.2, True, 0.72727273),  # (70 - 30)/(70 - 15) = 40/55
        (60.0, 1.3, False, 0.4),  # freezer Ct = 1.3 uses the Ct >= 1.2 lines
        (40.0, 0.85, False, 0.75),  # greenhouse Ct = 0.85 is warm: 30/40
    ],
)
def test_cs_on_the_sloping_part(slope, ct, slippery, expected):
    # ASCE 7-16 Fig. 7.4-1 (from memory), hand calculation as commented
    assert slope_factor(slope, ct, slippery) == pytest.approx(expected, abs=1e-7)


def test_sloped_roof_load_eq_7_4_1():
    # ASCE 7-16 Eq. 7.4-1 (from memory), hand calculation: other surface, heated,
    # 12:12 = 45 deg: Cs = (70 - 45)/40 = 0.625; pf = 0.7 x 40 = 28; ps = 17.5 psf
    out = run(40.0, shape="gable", slope="12:12", eave_to_ridge="30ft")
    assert out["factors"]["Cs"] == pytest.approx(0.625, abs=1e-4)
    assert out["loads"]["ps"]["psf"] == pytest.approx(17.5, abs=1e-3)


WARM_SLIPPERY = {
    "shape": "gable",
    "slope": "8:12",
    "eave_to_ridge": "30ft",
    "surface": "slippery",
    "unobstructed": True,
}
# 8:12 = 33.690 deg; dashed line a: (70 - 33.690)/65 = 0.55861; solid line a: (70 - 33.690)/40
DASHED_8_12 = (70.0 - 33.690068) / 65.0
SOLID_8_12 = (70.0 - 33.690068) / 40.0


@pytest.mark.parametrize(
    ("ventilated", "r_value", "dashed"),
    [
        (False, 30.0, True),  # unventilated, R >= 30
        (False, 29.0, False),  # unventilated, R < 30
        (True, 20.0, True),  # ventilated, R >= 20
        (True, 19.5, False),  # ventilated, R < 20
    ],
)
def test_warm_roof_slippery_line_needs_r_value(ventilated, r_value, dashed):
    # ASCE 7-16 Sec. 7.4.1 (from memory): warm roofs use the dashed line only with an
    # unobstructed slippery surface and R >= 30 (unventilated) or R >= 20 (ventilated)
    out = run(30.0, **WARM_SLIPPERY, ventilated=ventilated, r_value=r_value)
    expected = DASHED_8_12 if dashed else SOLID_8_12
    assert out["factors"]["Cs"] == pytest.approx(expected, abs=1e-4)


def test_obstructed_slippery_roof_uses_solid_line():
    # ASCE 7-16 Sec. 7.4.1 (from memory): an obstructed surface keeps the solid line
    data = dict(WARM_SLIPPERY, unobstructed=False, ventilated=False, r_value=40.0)
    out = run(30.0, **data)
    assert out["factors"]["Cs"] == pytest.approx(SOLID_8_12, abs=1e-4)


def test_cold_roof_slippery_line_needs_no_r_value():
    # ASCE 7-16 Sec. 7.4.2 (from memory): Ct = 1.1 with an unobstructed slippery surface
    # uses dashed line b: 8:12 gives (70 - 33.690)/(70 - 10) = 0.60517
    data = {k: v for k, v in WARM_SLIPPERY.items()}
    out = run(30.0, **data, thermal="cold-ventilated")
    assert out["factors"]["Cs"] == pytest.approx((70.0 - 33.690068) / 60.0, abs=1e-4)
    assert "slippery_line_not_used" not in out["flags"]


def test_unstated_conditions_use_solid_line_and_flag():
    # ASCE 7-16 Sec. 7.4.1 (from memory) with the conservative reading the issue asks
    # for: slippery surface but R-value and ventilation not stated -> solid line, flagged
    data = {k: v for k, v in WARM_SLIPPERY.items() if k != "unobstructed"}
    out = run(30.0, **data)
    assert out["factors"]["Cs"] == pytest.approx(SOLID_8_12, abs=1e-4)
    assert "slippery_line_not_used" in out["flags"]
    assert {"unobstructed_unstated", "ventilation_unstated", "r_value_unstated"} <= set(
        out["flags"]
    )


def test_other_surface_ignores_slippery_conditions():
    # ASCE 7-16 Fig. 7.4-1 (from memory): "all other surfaces" is the solid line
    out = run(
        30.0,
        shape="gable",
        slope="8:12",
        eave_to_ridge="30ft",
        surface="other",
        unobstructed=True,
        ventilated=False,
        r_value=40.0,
    )
    assert out["factors"]["Cs"] == pytest.approx(SOLID_8_12, abs=1e-4)
    assert "slippery_line_not_used" not in out["flags"]


def test_slope_factor_array_matches_scalars():
    # regression guard: arrays give the same as scalars
    slopes = np.array([0.0, 5.0, 12.0, 30.0, 37.5, 52.0, 69.9, 70.0, 85.0])
    for ct in (1.0, 1.1, 1.2):
        for slippery in (False, True):
            arr = slope_factor(slopes, ct, slippery)
            assert arr.shape == slopes.shape
            scal = [float(slope_factor(float(s), ct, slippery)) for s in slopes]
            np.testing.assert_allclose(arr, scal, rtol=0, atol=1e-12)
