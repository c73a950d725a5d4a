"""Flags and step placement added after review (ASCE 7-16 Chapter 7)."""

from __future__ import annotations

import pytest

from neve.engine import Roof, analyze_roof


def _sliding_roof(**step_extra):
    step = {"name": "high bay", "height": "10ft", "upper_length": "100ft", "lower_length": "40ft",
            "upper_slope": "4:12", "upper_eave_to_ridge": "30ft"}  # fmt: skip
    step.update(step_extra)
    return Roof.from_mapping({"shape": "flat", "step": [step]})


def test_shape_not_given_is_flagged():
    # neve's own rule: an unstated shape defaults to flat and says so (common practice)
    assert "shape_assumed" in analyze_roof(30.0, Roof.from_mapping({})).flags
    assert "shape_assumed" not in analyze_roof(30.0, Roof.from_mapping({"shape": "flat"})).flags


def test_minimum_load_step_only_in_its_own_case():
    # ASCE 7-16 Sec. 7.3.4: pm is a separate uniform case, so its step belongs there
    res = analyze_roof(15.0, Roof.from_mapping({"shape": "flat"})).to_json()
    (bal,) = [c for c in res["cases"] if c["case"] == "balanced"]
    (mini,) = [c for c in res["cases"] if c["case"] == "minimum"]
    assert "pm" not in [s["symbol"] for s in bal["steps"]]
    assert "pm" in [s["symbol"] for s in mini["steps"]]


def test_sliding_uses_the_given_upper_pf():
    # ASCE 7-16 Sec. 7.9 (from memory): 0.4 pf W / 15 ft with pf of the UPPER roof;
    # given pf_upper = 30 psf, W = 30 ft: 0.4 x 30 x 30 / 15 = 24 psf
    res = analyze_roof(30.0, _sliding_roof(upper_pf="30psf"))
    (case,) = res.case("sliding")
    assert case["load"]["psf"] == pytest.approx(24.0)
    assert "upper_pf_assumed" not in res.flags


def test_sliding_without_upper_pf_is_flagged():
    # not given: this roof's pf (0.7 x 30 = 21 psf) is used: 0.4 x 21 x 30 / 15 = 16.8 psf
    res = analyze_roof(30.0, _sliding_roof())
    (case,) = res.case("sliding")
    assert case["load"]["psf"] == pytest.approx(16.8)
    assert "upper_pf_assumed" in res.flags


def test_no_sliding_or_ice_dam_without_snow():
    # pg = 0: nothing to slide and no ice dam (a reading: the provisions presume snow)
    roof = Roof.from_mapping(
        {"shape": "flat", "overhang": {"length": "2ft"},
         "step": [{"height": "10ft", "upper_length": "100ft", "lower_length": "40ft",
                   "upper_slope": "4:12", "upper_eave_to_ridge": "30ft"}]}
    )  # fmt: skip
    res = analyze_roof(0.0, roof)
    assert not res.case("sliding") and not res.case("ice_dam")
    assert {n["case"] for n in res.not_required} >= {"sliding", "ice_dam"}
