"""Drifts at parapet walls and rooftop projections.

Sources: ASCE 7-16 Sec. 7.8 with the method of Sec. 7.7.1 and Fig. 7.6-1
(from memory): drift height 0.75 hd with lu the roof length upwind of the wall
or projection; sides of projections shorter than 15 ft need no drift.
Fixture: pg = 30 psf, neutral factors, flat roof: ps = 21 psf, gamma = 17.9 pcf,
hb = 1.17318 ft.
"""

from __future__ import annotations

import pytest

from neve.engine import InputError
from neve.engine.asce7_16.drift import projection_exempt
from tests.engine.helpers import cases, run, skipped

PG = 30.0


def test_parapet_drift_three_quarters_hd():
    # ASCE 7-16 Sec. 7.8 (from memory), hand calculation: upwind 100 ft,
    # hd = 0.75 x 3.51938 = 2.63954 ft; parapet 4 ft: hc = 4 - 1.17318 = 2.82682 >= hd
    # w = 4 x 2.63954 = 10.5581 ft; pd = 2.63954 x 17.9 = 47.2477 psf
    out = run(PG, parapet=[{"name": "north wall", "height": "4ft", "upwind_length": "100ft"}])
    (d,) = cases(out, "drift")
    assert d["source"] == "parapet"
    assert d["governs"] == "windward"
    assert d["hd"]["ft"] == pytest.approx(2.63954, abs=1e-3)
    assert d["w"]["ft"] == pytest.approx(10.5581, abs=2e-3)
    assert d["pd"]["psf"] == pytest.approx(47.2477, abs=3e-3)


def test_low_parapet_fills_clear_height():
    # ASCE 7-16 Sec. 7.8 with Sec. 7.7.1 (from memory): parapet 3 ft, hc = 1.82682 < 2.63954
    # w = min(4 x 2.63954^2 / 1.82682 = 15.2553, 8 x 1.82682 = 14.6145) = 14.6145 ft
    # pd = hc gamma = 1.82682 x 17.9 = 32.7 psf
    out = run(PG, parapet=[{"height": "3ft", "upwind_length": "100ft"}])
    (d,) = cases(out, "drift")
    assert d["hd"]["ft"] == pytest.approx(1.82682, abs=1e-3)
    assert d["w"]["ft"] == pytest.approx(14.6145, abs=2e-3)
    assert d["pd"]["psf"] == pytest.approx(32.7, abs=2e-3)


def test_parapet_buried_in_balanced_snow_needs_no_drift():
    # ASCE 7-16 Sec. 7.7.1 / 7.8 (from memory): parapet 1 ft < hb = 1.17318 ft
    out = run(PG, parapet=[{"height": "1ft", "upwind_length": "100ft"}])
    assert not cases(out, "drift")
    assert skipped(out, "drift")


@pytest.mark.parametrize(
    ("plan_length", "exempt"),
    [(14.9, True), (15.0, False), (40.0, False)],
)
def test_projection_plan_length_exemption(plan_length, exempt):
    # ASCE 7-16 Sec. 7.8 (from memory): a side shorter than 15 ft needs no drift
    assert bool(projection_exempt(plan_length)) is exempt
    out = run(
        PG,
        projection=[
            {
                "name": "rooftop unit",
                "height": "5ft",
                "plan_length": f"{plan_length}ft",
                "upwind_length": "80ft",
            }
        ],
    )
    assert bool(cases(out, "drift")) is (not exempt)


def test_projection_uses_its_own_upwind_length():
    # ASCE 7-16 Sec. 7.8 (from memory), hand calculation: upwind 50 ft,
    # hd = 0.75 x (0.43 x 50^(1/3) x 40^(1/4) - 1.5) = 0.75 x (0.43 x 3.68403 x 2.51487
    # - 1.5) = 0.75 x 2.48399 = 1.86299 ft; height 5 ft -> hc = 3.82682 >= hd
    # w = 7.45197 ft; pd = 1.86299 x 17.9 = 33.3476 psf
    out = run(PG, projection=[{"height": "5ft", "plan_length": "20ft", "upwind_length": "50ft"}])
    (d,) = cases(out, "drift")
    assert d["source"] == "projection"
    assert d["hd"]["ft"] == pytest.approx(1.86299, abs=1e-3)
    assert d["w"]["ft"] == pytest.approx(7.45197, abs=2e-3)
    assert d["pd"]["psf"] == pytest.approx(33.3476, abs=3e-3)


def test_projection_missing_plan_length_is_an_input_error():
    # common practice: the exemption needs the side length, so it is required
    with pytest.raises(InputError) as info:
        run(PG, projection=[{"height": "5ft", "upwind_length": "50ft"}])
    assert info.value.field == "projection[0].plan_length"
