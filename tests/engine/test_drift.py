"""Snow density, drift height and drifts at roof steps and adjacent structures.

Sources: ASCE 7-16 Eq. 7.7-1, Fig. 7.6-1, Sec. 7.7.1, Fig. 7.7-1, Sec. 7.7.2
(from memory). Fixture roof: pg = 30 psf, neutral factors, flat lower roof, so
pf = ps = 0.7 x 30 = 21 psf, gamma = 0.13 x 30 + 14 = 17.9 pcf and
hb = 21 / 17.9 = 1.17318 ft.
"""

from __future__ import annotations

import numpy as np
import pytest

from neve.engine.asce7_16.drift import drift_height, drift_required, drift_shape, snow_density
from tests.engine.helpers import cases, run, skipped

PG = 30.0
GAMMA = 17.9  # 0.13 x 30 + 14
HB = 21.0 / 17.9  # 1.17318 ft
HD_100 = 3.519381  # 0.43 x 100^(1/3) x 40^(1/4) - 1.5 = 0.43 x 4.64159 x 2.51487 - 1.5


def step_run(**step) -> dict:
    out = run(PG, shape="flat", step=[step])
    return out


@pytest.mark.parametrize(
    ("pg", "gamma"),
    [
        (0.0, 14.0),  # 0.13 x 0 + 14
        (30.0, 17.9),  # 0.13 x 30 + 14
        (100.0, 27.0),  # 0.13 x 100 + 14
        (123.0, 29.99),  # just under the cap
        (200.0, 30.0),  # 0.13 x 200 + 14 = 40 -> capped at 30 pcf
    ],
)
def test_snow_density_eq_7_7_1(pg, gamma):
    # ASCE 7-16 Eq. 7.7-1 (from memory): gamma = 0.13 pg + 14 <= 30 pcf
    assert snow_density(pg) == pytest.approx(gamma, abs=1e-9)


@pytest.mark.parametrize(
    ("lu", "pg", "hd"),
    [
        (100.0, 30.0, 3.519381),  # 0.43 x 4.64159 x 2.51487 - 1.5
        (200.0, 50.0, 5.498682),  # 0.43 x 5.84804 x 2.78316 - 1.5
        (400.0, 60.0, 7.664237),  # 0.43 x 7.36806 x 2.89256 - 1.5
        (30.0, 25.0, 1.749819),  # 0.43 x 3.10723 x 2.43230 - 1.5
    ],
)
def test_drift_height_fig_7_6_1(lu, pg, hd):
    # ASCE 7-16 Fig. 7.6-1 equation (from memory), hand calculation as commented
    assert drift_height(pg, lu) == pytest.approx(hd, abs=1e-5)


def test_leeward_drift_governs_at_a_roof_step():
    # ASCE 7-16 Sec. 7.7.1 (from memory), hand calculation:
    # h = 10 ft: hc = 10 - 1.17318 = 8.82682 ft; hc/hb = 7.5 >= 0.2 -> drift required
    # leeward hd (upper 100 ft) = 3.51938; windward 0.75 x hd(60 ft)
    # = 0.75 x 2.73351 = 2.05013 -> leeward governs; 3.51938 <= hc so w = 4 hd = 14.0775 ft
    # pd = 3.51938 x 17.9 = 62.9969 psf
    out = step_run(height="10ft", upper_length="100ft", lower_length="60ft")
    (d,) = cases(out, "drift")
    assert d["governs"] == "leeward"
    assert d["hb"]["ft"] == pytest.approx(HB, abs=1e-3)
    assert d["hc"]["ft"] == pytest.approx(8.82682, abs=1e-3)
    assert d["hd"]["ft"] == pytest.approx(HD_100, abs=1e-3)
    assert d["hd_windward"]["ft"] == pytest.approx(2.05013, abs=1e-3)
    assert d["w"]["ft"] == pytest.approx(14.0775, abs=2e-3)
    assert d["pd"]["psf"] == pytest.approx(62.9969, abs=2e-3)
    # the surcharge is superimposed on the balanced load: 21 + 62.9969
    assert d["total_peak"]["psf"] == pytest.approx(83.9969, abs=3e-3)


def test_windward_drift_governs_with_a_long_lower_roof():
    # ASCE 7-16 Sec. 7.7.1 (from memory), hand calculation:
    # leeward hd(30 ft) = 0.43 x 3.10723 x 2.51487 - 1.5 = 1.86014 ft
    # windward 0.75 x hd(300 ft) = 0.75 x (0.43 x 6.69433 x 2.51487 - 1.5)
    # = 0.75 x 5.73920 = 4.30440 ft -> windward governs; < hc = 8.82682 so w = 17.2176 ft
    # pd = 4.30440 x 17.9 = 77.0488 psf
    out = step_run(height="10ft", upper_length="30ft", lower_length="300ft")
    (d,) = cases(out, "drift")
    assert d["governs"] == "windward"
    assert d["hd_leeward"]["ft"] == pytest.approx(1.86014, abs=1e-3)
    assert d["hd"]["ft"] == pytest.approx(4.30440, abs=1e-3)
    assert d["w"]["ft"] == pytest.approx(17.2176, abs=2e-3)
    assert d["pd"]["psf"] == pytest.approx(77.0488, abs=3e-3)


def test_drift_fills_clear_height_width_rule():
    # ASCE 7-16 Sec. 7.7.1 (from memory): hd > hc -> height hc, w = 4 hd^2 / hc <= 8 hc.
    # h = 4 ft: hc = 2.82682 < hd = 3.51938; w = 4 x 3.51938^2 / 2.82682 = 17.5265 ft
    # (8 hc = 22.6145 does not cap); pd = hc gamma = 2.82682 x 17.9 = 50.6 psf
    out = step_run(height="4ft", upper_length="100ft", lower_length="60ft")
    (d,) = cases(out, "drift")
    assert d["hd"]["ft"] == pytest.approx(2.82682, abs=1e-3)
    assert d["w"]["ft"] == pytest.approx(17.5265, abs=3e-3)
    assert d["pd"]["psf"] == pytest.approx(50.6, abs=2e-3)


def test_drift_width_capped_at_8_hc():
    # ASCE 7-16 Sec. 7.7.1 (from memory): h = 3 ft: hc = 1.82682; 4 hd^2 / hc = 27.1205
    # > 8 hc = 14.6145 -> w = 14.6145 ft; pd = 1.82682 x 17.9 = 32.7 psf
    out = step_run(height="3ft", upper_length="100ft", lower_length="60ft")
    (d,) = cases(out, "drift")
    assert d["w"]["ft"] == pytest.approx(14.6145, abs=2e-3)
    assert d["pd"]["psf"] == pytest.approx(32.7, abs=2e-3)


def test_drift_shape_function_rules():
    # ASCE 7-16 Sec. 7.7.1 (from memory): hd <= hc -> (hd, 4 hd); hd > hc -> (hc, ...)
    hd_used, w = drift_shape(2.0, 3.0)
    assert (float(hd_used), float(w)) == pytest.approx((2.0, 8.0), abs=1e-12)
    # hd = 3, hc = 2.5: 4 x 9 / 2.5 = 14.4 < 8 x 2.5 = 20
    hd_used, w = drift_shape(3.0, 2.5)
    assert (float(hd_used), float(w)) == pytest.approx((2.5, 14.4), abs=1e-12)
    # hd = 5, hc = 1: 4 x 25 / 1 = 100 > 8 x 1 = 8
    hd_used, w = drift_shape(5.0, 1.0)
    assert (float(hd_used), float(w)) == pytest.approx((1.0, 8.0), abs=1e-12)


@pytest.mark.parametrize(
    ("height", "required"),
    [
        ("1.35ft", False),  # hc = 0.17682, hc/hb = 0.151 < 0.2
        ("1.45ft", True),  # hc = 0.27682, hc/hb = 0.236 >= 0.2
    ],
)
def test_no_drift_when_hc_over_hb_below_0_2(height, required):
    # ASCE 7-16 Sec. 7.7.1 (from memory): no drift where hc/hb < 0.2;
    # limit height = hb x 1.2 = 1.40782 ft
    out = step_run(height=height, upper_length="100ft", lower_length="60ft")
    assert bool(cases(out, "drift")) is required
    assert bool(skipped(out, "drift")) is (not required)


@pytest.mark.parametrize(
    ("hc", "hb", "required"),
    [
        (1.0, 5.0, True),  # hc/hb = 0.2 exactly: not below 0.2, so drift is required
        (0.999, 5.0, False),  # hc/hb = 0.1998 < 0.2
        (1.001, 5.0, True),  # hc/hb = 0.2002
    ],
)
def test_drift_required_at_exactly_0_2(hc, hb, required):
    # ASCE 7-16 Sec. 7.7.1 (from memory): drift loads need not be applied where hc/hb < 0.2;
    # at hc/hb = 0.2 exactly they are applied
    assert bool(drift_required(hc, hb)) is required


@pytest.mark.parametrize(("height", "required"), [("3.92ft", True), ("3.919ft", False)])
def test_step_drift_at_exactly_hc_over_hb_0_2(height, required):
    # ASCE 7-16 Eq. 7.7-1, Eq. 7.3-1, Sec. 7.7.1 (from memory), hand calculation:
    # pg = 140 psf: gamma = 0.13 x 140 + 14 = 32.2 -> capped at 30 pcf;
    # pf = ps = 0.7 x 140 = 98 psf (neutral factors, flat); hb = 98 / 30 = 3.26667 ft.
    # h = 3.92 ft = 1.2 hb: hc = 0.65333 ft, hc/hb = 0.2 exactly (in binary too) -> drift.
    # h = 3.919 ft: hc/hb = 0.19969 < 0.2 -> no drift.
    out = run(140.0, shape="flat", step=[{"height": height, "upper_length": "100ft",
                                          "lower_length": "60ft"}])  # fmt: skip
    assert bool(cases(out, "drift")) is required
    assert bool(skipped(out, "drift")) is (not required)
    if required:
        (d,) = cases(out, "drift")
        assert d["hb"]["ft"] == pytest.approx(98.0 / 30.0, abs=1e-3)
        assert d["hc"]["ft"] == pytest.approx(0.2 * 98.0 / 30.0, abs=1e-3)
    else:
        (s,) = skipped(out, "drift")
        assert "< 0.2" in s["reason"]


def test_drift_truncated_at_far_edge_not_reduced_to_zero():
    # ASCE 7-16 Sec. 7.7.1 (from memory): a drift wider than the lower roof is truncated
    # at the far edge. w = 14.0775 ft on a 10 ft roof: edge intensity
    # = 62.9969 x (1 - 10 / 14.0775) = 18.2469 psf
    out = step_run(height="10ft", upper_length="100ft", lower_length="10ft")
    (d,) = cases(out, "drift")
    assert d["w"]["ft"] == pytest.approx(14.0775, abs=2e-3)
    assert d["w_on_roof"]["ft"] == pytest.approx(10.0, abs=1e-6)
    assert d["pd_far_edge"]["psf"] == pytest.approx(18.2469, abs=3e-3)


def test_adjacent_structure_leeward_width_6hd():
    # ASCE 7-16 Sec. 7.7.2 (from memory): s = 5 ft < 20 ft and < 6h = 60 ft -> required;
    # hd = min(3.51938, (60 - 5)/6 = 9.16667) = 3.51938; w = min(6 x 3.51938, 55)
    # = 21.1163 ft; pd = 62.9969 psf
    out = step_run(height="10ft", upper_length="100ft", lower_length="60ft", separation="5ft")
    (d,) = cases(out, "drift")
    assert d["source"] == "adjacent"
    assert d["hd"]["ft"] == pytest.approx(HD_100, abs=1e-3)
    assert d["w"]["ft"] == pytest.approx(21.1163, abs=2e-3)
    assert d["pd"]["psf"] == pytest.approx(62.9969, abs=2e-3)


def test_adjacent_structure_height_limited_by_separation():
    # ASCE 7-16 Sec. 7.7.2 (from memory): h = 4 ft, s = 15 ft: 6h = 24 > 15 -> required;
    # hd = min(3.51938, (24 - 15)/6 = 1.5) = 1.5 ft; w = min(6 x 1.5, 24 - 15) = 9 ft
    # pd = 1.5 x 17.9 = 26.85 psf
    # The windward drift of Sec. 7.7.1 (which Sec. 7.7.2 keeps for adjacent structures)
    # is 0.75 x [0.43 x 60^(1/3) x 40^(1/4) - 1.5] = 0.75 x 2.7335 = 2.050 ft, larger
    # than the reduced leeward 1.5 ft, so it governs (reading: the larger of the two
    # governs, as in Sec. 7.7.1); hc = 4 - 21/17.9 = 2.827 ft > 2.05, so w = 4 x 2.05.
    out = step_run(height="4ft", upper_length="100ft", lower_length="60ft", separation="15ft")
    (d,) = cases(out, "drift")
    assert d["hd_leeward"]["ft"] == pytest.approx(1.5, abs=1e-3)
    assert d["governs"] == "windward"
    assert d["hd"]["ft"] == pytest.approx(2.050, abs=2e-3)
    assert d["w"]["ft"] == pytest.approx(8.201, abs=5e-3)


def test_adjacent_structure_leeward_width_limited_by_separation():
    # ASCE 7-16 Sec. 7.7.2 (from memory): h = 10 ft, s = 10 ft, upper 200 ft, lower 20 ft,
    # pg = 30: hd = 0.43 x 200^(1/3) x 40^(1/4) - 1.5 = 0.43 x 5.848 x 2.5149 - 1.5 = 4.824;
    # (6h - s)/6 = 50/6 = 8.33, hc = 10 - 1.173 = 8.83 -> hd = 4.824 ft;
    # windward 0.75 x [0.43 x 20^(1/3) x 2.5149 - 1.5] = 0.75 x 0.6934 = 0.52 -> leeward governs;
    # w = min(6 x 4.824 = 28.94, 60 - 10 = 50) = 28.94 ft; pd = 4.824 x 17.9 = 86.35 psf
    out = step_run(height="10ft", upper_length="200ft", lower_length="20ft", separation="10ft")
    (d,) = cases(out, "drift")
    assert d["governs"] == "leeward"
    assert d["hd"]["ft"] == pytest.approx(4.824, abs=3e-3)
    assert d["w"]["ft"] == pytest.approx(28.94, abs=2e-2)
    assert d["pd"]["psf"] == pytest.approx(86.35, abs=0.1)


@pytest.mark.parametrize(
    ("height", "separation", "required"),
    [
        ("10ft", "19.9ft", True),  # s < 20 and s < 6h = 60
        ("10ft", "20ft", False),  # s is not less than 20 ft
        ("3ft", "17.9ft", True),  # s < 6h = 18
        ("3ft", "18ft", False),  # s is not less than 6h = 18 ft
    ],
)
def test_adjacent_structure_separation_limits(height, separation, required):
    # ASCE 7-16 Sec. 7.7.2 (from memory): drifts only where s < 20 ft and s < 6h
    out = step_run(height=height, upper_length="100ft", lower_length="60ft", separation=separation)
    assert bool(cases(out, "drift")) is required


def test_adjacent_drift_height_not_above_clear_height():
    # ASCE 7-16 Sec. 7.7.2 with Sec. 7.7.1 (from memory; a reading): h = 3 ft, s = 2 ft
    # gives (6h - s)/6 = 2.6667 ft, more than hc = 3 - 1.17318 = 1.82682 ft. A drift
    # surcharge cannot rise above the upper roof, so the height used should not
    # exceed hc (as Sec. 7.7.1 does for hd > hc): pd <= 1.82682 x 17.9 = 32.7 psf
    out = step_run(height="3ft", upper_length="100ft", lower_length="60ft", separation="2ft")
    (d,) = cases(out, "drift")
    assert d["hd"]["ft"] <= d["hc"]["ft"] + 1e-6
    assert d["pd"]["psf"] <= 32.7 + 1e-3


def test_no_drift_where_ground_snow_load_is_zero():
    # common practice: with no ground snow (pg = 0) there is no snow to drift; the
    # Fig. 7.6-1 equation alone would give hd = 0.43 x 100^(1/3) x 10^(1/4) - 1.5
    # = 2.049 ft and pd = 28.7 psf, which no designer would apply at a snow-free site
    out = run(
        0.0,
        shape="flat",
        step=[{"height": "10ft", "upper_length": "100ft", "lower_length": "60ft"}],
    )
    assert all(c["pd"]["psf"] == 0.0 for c in cases(out, "drift"))


def test_drift_functions_accept_arrays():
    # regression guard: arrays give the same as scalars
    pg = np.array([10.0, 30.0, 60.0, 150.0])
    lu = np.array([20.0, 100.0, 250.0, 500.0])
    hd = drift_height(pg, lu)
    gam = snow_density(pg)
    assert hd.shape == gam.shape == pg.shape
    for i in range(pg.size):
        assert hd[i] == pytest.approx(float(drift_height(pg[i], lu[i])), abs=1e-12)
        assert gam[i] == pytest.approx(float(snow_density(pg[i])), abs=1e-12)
