"""Property tests (hypothesis) over the ASCE 7-16 provisions.

Properties stated by the standard's own shape (from memory): Fig. 7.4-1 lines
lie in [0, 1] and never rise with slope; Eq. 7.3-1, Eq. 7.4-1, Sec. 7.3.4 and
Eq. 7.7-1 / Fig. 7.6-1 never fall as pg rises; Sec. 7.7.1 caps the drift
width at 8 hc. Unit round trips follow the exact ft and lbf definitions.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from neve.engine import Roof, analyze_roof, uniform_loads
from neve.engine.asce7_16.drift import drift_height, drift_shape, snow_density
from neve.engine.asce7_16.slope import slope_factor
from neve.engine.units import ft_to_m, kpa_to_psf, m_to_ft, parse_length, parse_load, psf_to_kpa

FAST = settings(max_examples=60, deadline=None, database=None)

slopes = st.floats(min_value=0.0, max_value=89.99, allow_nan=False)
cts = st.sampled_from([0.85, 1.0, 1.05, 1.1, 1.15, 1.2, 1.3])
pgs = st.floats(min_value=0.0, max_value=300.0, allow_nan=False)
lengths = st.floats(min_value=0.0, max_value=2000.0, allow_nan=False)

SHAPES = [
    {"shape": "flat"},
    {"shape": "monoslope", "slope": "2:12", "eave_to_ridge": "60ft"},
    {"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"},
    {"shape": "hip", "slope": "10:12", "eave_to_ridge": "40ft", "thermal": "unheated"},
    {"shape": "gable", "slope": "1:12", "eave_to_ridge": "400ft", "ce": 1.2, "ct": 1.3},
]


@FAST
@given(a=slopes, b=slopes, ct=cts, slippery=st.booleans())
def test_cs_in_unit_interval_and_non_increasing(a, b, ct, slippery):
    # ASCE 7-16 Fig. 7.4-1 (from memory)
    lo, hi = min(a, b), max(a, b)
    c_lo = float(slope_factor(lo, ct, slippery))
    c_hi = float(slope_factor(hi, ct, slippery))
    assert 0.0 <= c_hi <= c_lo <= 1.0


@FAST
@given(a=pgs, b=pgs, spec=st.sampled_from(SHAPES))
def test_uniform_loads_non_decreasing_with_pg(a, b, spec):
    # ASCE 7-16 Eq. 7.3-1, Eq. 7.4-1, Sec. 7.3.4 (from memory): pf, ps, pm rise with pg
    lo, hi = min(a, b), max(a, b)
    out = uniform_loads(np.array([lo, hi]), Roof.from_mapping(spec))
    for key in ("pf", "ps"):
        assert out[key][0] <= out[key][1] + 1e-9
    if not np.isnan(out["pm"][0]):
        assert out["pm"][0] <= out["pm"][1] + 1e-9
    # design uniform rises too, except across the Sec. 7.10 step at pg = 20 psf
    if (hi <= 20.0) == (lo <= 20.0) and (lo > 0) == (hi > 0):
        assert out["design_uniform"][0] <= out["design_uniform"][1] + 1e-9


@FAST
@given(a=pgs, b=pgs, lu=lengths)
def test_density_and_drift_height_non_decreasing_with_pg(a, b, lu):
    # ASCE 7-16 Eq. 7.7-1 and Fig. 7.6-1 (from memory)
    lo, hi = min(a, b), max(a, b)
    assert float(snow_density(lo)) <= float(snow_density(hi)) + 1e-12
    assert float(snow_density(hi)) <= 30.0
    assert float(drift_height(lo, lu)) <= float(drift_height(hi, lu)) + 1e-12
    assert float(drift_height(lo, lu)) >= 0.0


@FAST
@given(
    hd=st.floats(min_value=0.0, max_value=50.0, allow_nan=False),
    hc=st.floats(min_value=0.01, max_value=50.0, allow_nan=False),
)
def test_drift_width_never_above_8_hc(hd, hc):
    # ASCE 7-16 Sec. 7.7.1 (from memory): w <= 8 hc and the height used <= hc
    hd_used, w = drift_shape(hd, hc)
    assert float(w) <= 8.0 * hc * (1 + 1e-12)
    assert float(hd_used) <= max(hc, hd) + 1e-12
    assert float(hd_used) <= hc + 1e-12 or float(hd_used) == pytest.approx(hd)


@FAST
@given(
    pg=st.floats(min_value=1.0, max_value=250.0, allow_nan=False),
    height=st.floats(min_value=0.5, max_value=40.0, allow_nan=False),
    upper=st.floats(min_value=1.0, max_value=1500.0, allow_nan=False),
    lower=st.floats(min_value=1.0, max_value=1500.0, allow_nan=False),
)
def test_step_drift_width_capped_through_analyze_roof(pg, height, upper, lower):
    # ASCE 7-16 Sec. 7.7.1 (from memory): w <= 8 hc, pd <= hc gamma
    r = Roof.from_mapping(
        {
            "shape": "flat",
            "ce": 1.0,
            "ct": 1.0,
            "risk": "II",
            "step": [
                {
                    "height": f"{height}ft",
                    "upper_length": f"{upper}ft",
                    "lower_length": f"{lower}ft",
                }
            ],
        }
    )
    for c in analyze_roof(pg, r).case("drift"):
        hc = c["hc"]["ft"]  # JSON lengths are rounded to 0.001 ft: allow 8 x 0.0005 + 0.0005
        assert c["w"]["ft"] <= 8.0 * hc + 5e-3
        assert c["pd"]["psf"] <= hc * c["gamma"]["pcf"] + 2e-2


@FAST
@given(x=st.floats(min_value=0.0, max_value=1e5, allow_nan=False))
def test_unit_round_trips(x):
    # NIST SP 811 definitions (from memory): conversions invert exactly (to rounding)
    assert kpa_to_psf(psf_to_kpa(x)) == pytest.approx(x, rel=1e-12, abs=1e-12)
    assert m_to_ft(ft_to_m(x)) == pytest.approx(x, rel=1e-12, abs=1e-12)
    text = repr(x)
    assert parse_load(f"{text}kPa", "pg") == pytest.approx(kpa_to_psf(x), rel=1e-12, abs=1e-12)
    assert parse_length(f"{text} m", "h") == pytest.approx(m_to_ft(x), rel=1e-12, abs=1e-12)


@FAST
@given(pg=st.lists(pgs, min_size=1, max_size=8), spec=st.sampled_from(SHAPES))
def test_arrays_give_the_same_as_scalars(pg, spec):
    # regression guard: the array entry point equals one call per site
    r = Roof.from_mapping(spec)
    arr = uniform_loads(np.array(pg), r)
    for i, p in enumerate(pg):
        one = uniform_loads(p, r)
        for key in ("pf", "ps", "design_uniform"):
            assert arr[key][i] == pytest.approx(float(one[key]), abs=1e-9)
