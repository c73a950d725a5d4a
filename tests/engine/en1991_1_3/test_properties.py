"""Property tests (hypothesis) over the EN 1991-1-3 provisions.

Properties: every shape coefficient within its clause's bounds (EN 1991-1-3
Table 5.2, 5.3.5, 5.3.6, 6.2; from memory) and every load non-decreasing in sk.
"""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from neve.engine.en1991_1_3 import local, shapes
from neve.engine.en1991_1_3.analysis import analyze_roof, uniform_loads
from neve.engine.en1991_1_3.parameters import RECOMMENDED
from neve.engine.roof_spec import Roof

FAST = settings(max_examples=60, deadline=None, database=None)
slopes = st.floats(0.0, 89.0)
lengths = st.floats(0.5, 200.0)
heights = st.floats(0.1, 50.0)
sks = st.floats(0.05, 20.0)


@FAST
@given(slopes)
def test_mu1_between_0_and_0_8(alpha):
    assert 0.0 <= float(shapes.mu1(alpha)) <= 0.8


@FAST
@given(st.floats(0.0, 59.9))
def test_mu2_between_0_8_and_1_6(alpha):
    assert 0.8 <= float(shapes.mu2(alpha)) <= 1.6


@FAST
@given(st.floats(0.1, 10.0), st.floats(20.0, 100.0))
def test_mu3_within_0_2_and_its_cap(rise, span):
    assert 0.2 <= float(shapes.cylinder_coefficient(rise, span, 2.0)) <= 2.0


@FAST
@given(heights, lengths, lengths, sks)
def test_abutting_within_bounds(h, b1, b2, sk):
    v = local.abutting(h, b1, b2, sk, RECOMMENDED)
    assert 0.8 <= v["mu_w"] <= 4.0
    assert 5.0 <= v["ls"] <= 15.0
    assert min(v["mu1"], v["mu2"]) <= v["mu_far"] <= max(v["mu1"], v["mu2"])


@FAST
@given(heights, sks)
def test_obstruction_within_bounds(h, sk):
    v = local.obstruction(h, sk, RECOMMENDED)
    assert 0.8 <= v["mu2"] <= 2.0 and 5.0 <= v["ls"] <= 15.0


@FAST
@given(
    st.sampled_from(["flat", "monoslope", "gable", "multi-span"]), st.floats(0.0, 59.0), sks, sks
)
def test_loads_non_decreasing_in_sk(shape, alpha, a, b):
    lo, hi = sorted((a, b))
    slope = "0deg" if shape == "flat" else f"{alpha}deg"
    steps = [{"name": "t", "height": "3m", "upper_length": "10m", "lower_length": "20m"}]
    roof = Roof.from_mapping(
        {"shape": shape, "slope": slope, "step": steps, "snow_case": "B3", "unobstructed": True}
    )
    r_lo, r_hi = analyze_roof(lo, roof), analyze_roof(hi, roof)
    assert r_lo.design_uniform <= r_hi.design_uniform + 1e-12
    for c_lo, c_hi in zip(r_lo.cases, r_hi.cases, strict=True):
        for key in ("load", "slope_1", "slope_2", "valley", "peak", "base"):
            if c_lo.get(key):
                assert c_lo[key]["kPa"] <= c_hi[key]["kPa"] + 1e-9, (c_lo["name"], key)
    u = uniform_loads([lo, hi], roof)["design_uniform"]
    assert u[0] <= u[1] + 1e-12
