"""Unbalanced snow loads on hip and gable roofs.

Sources: ASCE 7-16 Sec. 7.6.1, Fig. 7.6-1 and Fig. 7.6-2, Eq. 7.7-1 (from
memory). Hand calculations use hd = 0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5 with
lu = W, gamma = 0.13 pg + 14, S = run for a rise of one, surcharge
hd gamma / sqrt(S) over 8 sqrt(S) hd / 3 from the ridge.
"""

from __future__ import annotations

import pytest

from neve.engine.asce7_16.unbalanced import unbalanced_required
from neve.engine.units import parse_slope
from tests.engine.helpers import cases, run, skipped


@pytest.mark.parametrize(
    ("slope", "required"),
    [
        ("0.45:12", False),  # below 1/2 on 12
        ("0.5:12", True),  # 1/2 on 12 itself is inside the range
        ("2.38deg", True),  # the angle the standard prints for 1/2 on 12
        ("6:12", True),
        ("7:12", True),  # 7 on 12 itself is inside the range
        ("30.2deg", True),  # the angle the standard prints for 7 on 12
        ("7.2:12", False),  # above 7 on 12
        ("45deg", False),
    ],
)
def test_slope_range_for_unbalanced(slope, required):
    # ASCE 7-16 Sec. 7.6.1 (from memory): not required above 7 on 12 or below 1/2 on 12
    for shape in ("gable", "hip"):
        assert bool(unbalanced_required(shape, parse_slope(slope))) is required


@pytest.mark.parametrize("shape", ["flat", "monoslope"])
def test_no_hip_gable_unbalanced_on_flat_or_monoslope(shape):
    # ASCE 7-16 Sec. 7.6.1 (from memory) covers hip and gable roofs only
    out = run(30.0, shape=shape, slope="1:12", eave_to_ridge="40ft")
    assert not cases(out, "unbalanced")
    assert skipped(out, "unbalanced")


def test_narrow_roof_prismatic_members():
    # ASCE 7-16 Sec. 7.6.1 (from memory): W <= 20 ft with simply supported prismatic
    # members: leeward Is pg, windward unloaded. Hand: Is = 1.1 (risk III), pg = 30
    # -> leeward = 1.1 x 30 = 33 psf
    out = run(30.0, shape="gable", slope="6:12", eave_to_ridge="20ft", prismatic=True, risk="III")
    (unb,) = cases(out, "unbalanced")
    assert unb["leeward"]["psf"] == pytest.approx(33.0, abs=1e-3)
    assert unb["windward"]["psf"] == pytest.approx(0.0, abs=1e-9)
    assert unb["surcharge"]["psf"] == pytest.approx(0.0, abs=1e-9)


def test_general_case_gable_6_on_12():
    # ASCE 7-16 Sec. 7.6.1, Fig. 7.6-2 (from memory), hand calculation:
    # pg = 30, neutral factors: pf = 21; 6:12 = 26.57 deg < 30 so Cs = 1, ps = 21 psf
    # windward = 0.3 x 21 = 6.3 psf; leeward uniform = 21 psf
    # hd = 0.43 x 40^(1/3) x 40^(1/4) - 1.5 = 0.43 x 3.41995 x 2.51487 - 1.5 = 2.19831 ft
    # gamma = 0.13 x 30 + 14 = 17.9 pcf; S = 2
    # surcharge = 2.19831 x 17.9 / sqrt(2) = 27.8245 psf
    # extent = 8 x sqrt(2) x 2.19831 / 3 = 8.29035 ft
    out = run(30.0, shape="gable", slope="6:12", eave_to_ridge="40ft")
    (unb,) = cases(out, "unbalanced")
    assert unb["windward"]["psf"] == pytest.approx(6.3, abs=1e-3)
    assert unb["leeward"]["psf"] == pytest.approx(21.0, abs=1e-3)
    assert unb["surcharge"]["psf"] == pytest.approx(27.8245, abs=2e-3)
    assert unb["surcharge_extent"]["ft"] == pytest.approx(8.29035, abs=2e-3)
    # metres: 8.29035 ft x 0.3048 = 2.52690 m
    assert unb["surcharge_extent"]["m"] == pytest.approx(2.52690, abs=2e-4)


def test_general_case_hip_4_on_12():
    # ASCE 7-16 Sec. 7.6.1 (from memory), hand calculation:
    # pg = 50: pf = 35; 4:12 = 18.43 deg so Cs = 1, ps = 35; windward = 10.5 psf
    # hd = 0.43 x 50^(1/3) x 60^(1/4) - 1.5 = 0.43 x 3.68403 x 2.78316 - 1.5 = 2.90889 ft
    # gamma = 0.13 x 50 + 14 = 20.5 pcf; S = 3
    # surcharge = 2.90889 x 20.5 / sqrt(3) = 34.4287 psf; extent = 8 sqrt(3) 2.90889 / 3
    # = 13.4356 ft
    out = run(50.0, shape="hip", slope="4:12", eave_to_ridge="50ft")
    (unb,) = cases(out, "unbalanced")
    assert unb["windward"]["psf"] == pytest.approx(10.5, abs=1e-3)
    assert unb["surcharge"]["psf"] == pytest.approx(34.4287, abs=2e-3)
    assert unb["surcharge_extent"]["ft"] == pytest.approx(13.4356, abs=2e-3)


def test_short_w_without_prismatic_members_uses_lu_of_20ft():
    # ASCE 7-16 Sec. 7.6.1 (from memory: "for W less than 20 ft use lu = 20 ft"):
    # W = 16 ft, members not prismatic -> general case with lu = 20 ft.
    # hd = 0.43 x 20^(1/3) x 40^(1/4) - 1.5 = 1.43535 ft
    # surcharge = 1.43535 x 17.9 / sqrt(2) = 18.1675 psf; extent = 8 sqrt(2) 1.43535/3
    # = 5.41305 ft
    out = run(30.0, shape="gable", slope="6:12", eave_to_ridge="16ft", prismatic=False)
    (unb,) = cases(out, "unbalanced")
    assert unb["surcharge"]["psf"] == pytest.approx(18.1675, abs=2e-3)
    assert unb["surcharge_extent"]["ft"] == pytest.approx(5.41305, abs=2e-3)


def test_narrow_roof_members_unstated_gives_both_and_flags():
    # common practice: when the member type is not stated, show both readings and say so
    out = run(30.0, shape="gable", slope="6:12", eave_to_ridge="18ft")
    methods = sorted(c["method"] for c in cases(out, "unbalanced"))
    assert methods == ["general", "narrow"]
    assert "members_unstated" in out["flags"]


def test_wide_roof_never_uses_the_narrow_case():
    # ASCE 7-16 Sec. 7.6.1 (from memory): the narrow case needs W <= 20 ft
    out = run(30.0, shape="gable", slope="6:12", eave_to_ridge="20.5ft", prismatic=True)
    assert [c["method"] for c in cases(out, "unbalanced")] == ["general"]


def test_no_unbalanced_surcharge_where_ground_snow_load_is_zero():
    # common practice: no ground snow, no unbalanced snow. Fig. 7.6-1 alone would give
    # hd = 0.43 x 40^(1/3) x 10^(1/4) - 1.5 = 0.9151 ft and a surcharge of
    # 0.9151 x 14 / sqrt(3) = 7.40 psf on a 4:12 roof with W = 40 ft
    out = run(0.0, shape="gable", slope="4:12", eave_to_ridge="40ft")
    for unb in cases(out, "unbalanced"):
        assert unb["surcharge"]["psf"] == 0.0


def test_unbalanced_without_eave_to_ridge_is_not_computed():
    # W is an input of Sec. 7.6.1 (from memory); without it (issue 12) the cases that do
    # not need W are worked and the unbalanced case is listed as not computed, flagged
    out = run(30.0, shape="gable", slope="6:12")
    assert cases(out, "unbalanced") == []
    assert {c["case"] for c in out["cases"]} >= {"balanced", "partial"}
    (skip,) = [s for s in out["not_required"] if s["case"] == "unbalanced"]
    assert skip["reason"].startswith("not computed") and "eave_to_ridge" in skip["reason"]
    assert "eave_to_ridge_needed" in out["flags"]
