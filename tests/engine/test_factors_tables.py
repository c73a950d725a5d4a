"""Importance, exposure and thermal factors, cell by cell.

Sources: ASCE 7-16 Table 1.5-2 (snow importance factor), Table 7.3-1
(exposure factor Ce) and Table 7.3-2 (thermal factor Ct), all from memory.
Each expected value is written here independently of the engine's tables.
"""

from __future__ import annotations

import pytest

from neve.engine import InputError
from neve.engine.asce7_16.factors import exposure_factor, importance_factor, thermal_factor
from tests.engine.helpers import run

# ASCE 7-16 Table 1.5-2, snow column (from memory)
IS_TABLE_1_5_2 = [("I", 0.80), ("II", 1.00), ("III", 1.10), ("IV", 1.20)]

# ASCE 7-16 Table 7.3-1 (from memory): (terrain, exposure, Ce)
CE_TABLE_7_3_1 = [
    ("B", "fully", 0.9),
    ("B", "partially", 1.0),
    ("B", "sheltered", 1.2),
    ("C", "fully", 0.9),
    ("C", "partially", 1.0),
    ("C", "sheltered", 1.1),
    ("D", "fully", 0.8),
    ("D", "partially", 0.9),
    ("D", "sheltered", 1.0),
    ("above-treeline", "fully", 0.7),
    ("above-treeline", "partially", 0.8),
    ("treeless", "fully", 0.7),
    ("treeless", "partially", 0.8),
]

# ASCE 7-16 Table 7.3-2 (from memory): (thermal condition, Ct)
CT_TABLE_7_3_2 = [
    ("heated", 1.0),  # the general row: heated buildings
    ("cold-ventilated", 1.1),  # kept just above freezing / cold ventilated roofs, R > 25
    ("unheated", 1.2),  # unheated and open air structures
    ("below-freezing", 1.3),  # freezer buildings
    ("greenhouse", 0.85),  # continuously heated greenhouses, roof R < 2.0
]


@pytest.mark.parametrize(("risk", "expected"), IS_TABLE_1_5_2)
def test_importance_factor_table_1_5_2(risk, expected):
    # ASCE 7-16 Table 1.5-2 (from memory)
    assert importance_factor(risk) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize(("terrain", "exposure", "expected"), CE_TABLE_7_3_1)
def test_exposure_factor_table_7_3_1(terrain, exposure, expected):
    # ASCE 7-16 Table 7.3-1 (from memory)
    assert exposure_factor(terrain, exposure) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize("terrain", ["above-treeline", "treeless"])
def test_exposure_sheltered_has_no_value_above_treeline(terrain):
    # ASCE 7-16 Table 7.3-1 gives N/A for sheltered roofs in these two rows (from memory)
    with pytest.raises(InputError) as info:
        exposure_factor(terrain, "sheltered")
    assert info.value.field == "exposure"
    assert "fully" in str(info.value)


@pytest.mark.parametrize(("thermal", "expected"), CT_TABLE_7_3_2)
def test_thermal_factor_table_7_3_2(thermal, expected):
    # ASCE 7-16 Table 7.3-2 (from memory)
    assert thermal_factor(thermal) == pytest.approx(expected, abs=1e-12)


@pytest.mark.parametrize(
    ("field", "call"),
    [
        ("risk", lambda: importance_factor("V")),
        ("terrain", lambda: exposure_factor("A", "fully")),
        ("exposure", lambda: exposure_factor("C", "open")),
        ("thermal", lambda: thermal_factor("warm")),
    ],
)
def test_unknown_choice_names_field_and_accepted(field, call):
    # common practice: an unknown table row is an input error listing the rows
    with pytest.raises(InputError) as info:
        call()
    assert info.value.field == field
    assert info.value.accepted


def test_factors_reach_the_result_through_roof_options():
    # ASCE 7-16 Tables 7.3-1, 7.3-2, 1.5-2 (from memory): terrain D partially exposed
    # Ce = 0.9; unheated Ct = 1.2; risk IV Is = 1.2
    out = run(30.0, terrain="D", exposure="partially", thermal="unheated", risk="IV")
    assert out["factors"]["Ce"] == pytest.approx(0.9, abs=1e-12)
    assert out["factors"]["Ct"] == pytest.approx(1.2, abs=1e-12)
    assert out["factors"]["Is"] == pytest.approx(1.2, abs=1e-12)
    # ASCE 7-16 Eq. 7.3-1 by hand: pf = 0.7 x 0.9 x 1.2 x 1.2 x 30 = 27.216 psf
    assert out["loads"]["pf"]["psf"] == pytest.approx(27.216, abs=1e-3)
    assert not {"exposure_assumed", "thermal_assumed", "risk_assumed"} & set(out["flags"])


def test_factors_given_directly_override_tables():
    # common practice: Ce and Ct may be given directly; Eq. 7.3-1 by hand:
    # pf = 0.7 x 0.85 x 1.15 x 1.0 x 40 = 27.37 psf
    out = run(40.0, ce=0.85, ct=1.15)
    assert out["factors"]["Ce"] == pytest.approx(0.85, abs=1e-12)
    assert out["factors"]["Ct"] == pytest.approx(1.15, abs=1e-12)
    assert out["loads"]["pf"]["psf"] == pytest.approx(27.37, abs=1e-3)


def test_unstated_factors_are_flagged_not_silent():
    # common practice (docs/contract.md, "Roof options and ROOF.toml": nothing is silently defaulted)
    from neve.engine import Roof, analyze_roof

    out = analyze_roof(30.0, Roof.from_mapping({"shape": "flat"})).to_json()
    assert {"exposure_assumed", "thermal_assumed", "risk_assumed"} <= set(out["flags"])


def test_ct_and_thermal_together_is_refused():
    # common practice: one source for a factor
    from neve.engine import Roof

    with pytest.raises(InputError) as info:
        Roof.from_mapping({"ct": 1.1, "thermal": "heated"})
    assert info.value.field == "ct"
