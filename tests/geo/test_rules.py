"""Zone rules on arrays (neve.geo.layers.rules): fixed, study, elevation_table, formula, limits, floors."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from neve.geo.layers import rules as R
from neve.geo.layers.explain import explain

NAN = math.nan


def table_of(rows):
    base = {"zone_id": None, "rule": None, "pg": NAN, "elev_max": NAN, "table": None,
            "expr": None, "Z": NAN, "pg_min": NAN}  # fmt: skip
    return R.ZoneTable.from_frame(pd.DataFrame([dict(base, **r) for r in rows]))


ZT = table_of(
    [
        {"zone_id": "F", "rule": "fixed", "pg": 25.0},
        {"zone_id": "FL", "rule": "fixed", "pg": 30.0, "elev_max": 1000.0},
        {"zone_id": "S", "rule": "study"},
        {"zone_id": "T", "rule": "elevation_table", "table": "[[1000, 30], [2000, 50], [4000, 90]]"},
        {"zone_id": "X", "rule": "formula", "expr": "Z + 0.02 * max(A - 1000, 0)", "Z": 20.0,
         "pg_min": 25.0},
        {"zone_id": "C", "rule": "formula", "expr": "Z * 2", "Z": 12.5},
        {"zone_id": "N", "rule": "formula", "expr": "Z - A", "Z": 10.0},
    ]
)  # fmt: skip


def ev(j, a):
    v, s = R.evaluate(ZT, np.array([j]), np.array([a], dtype=float))
    return float(v[0]), int(s[0])


def test_table_parses_cleanly():
    assert ZT.problems == []
    assert list(ZT.rule_names()) == ["fixed", "fixed", "study", "elevation_table", "formula",
                                     "formula", "formula"]  # fmt: skip


def test_fixed_value_needs_no_elevation():
    assert ev(0, NAN) == (25.0, R.OK)


def test_elev_max_limits_a_fixed_value():
    assert ev(1, 1000.0) == (30.0, R.OK)  # at the limit: mapped (docs/contract.md, elev_max)
    v, s = ev(1, 1000.1)
    assert math.isnan(v) and s == R.ABOVE
    assert ev(1, NAN) == (30.0, R.UNCHECKED)


def test_study_zone_has_no_value():
    v, s = ev(2, 500.0)
    assert math.isnan(v) and s == R.STUDY


@pytest.mark.parametrize(
    "a, expected",
    [
        # piecewise-linear interpolation worked by hand (common practice):
        (1500.0, 30.0 + (1500 - 1000) * (50 - 30) / (2000 - 1000)),  # 40
        (3000.0, 50.0 + (3000 - 2000) * (90 - 50) / (4000 - 2000)),  # 70
        (2000.0, 50.0),
        (4000.0, 90.0),
        (200.0, 30.0),  # below the first point the first value holds (neve's reading)
    ],
)
def test_elevation_table_interpolates(a, expected):
    assert ev(3, a) == (pytest.approx(expected), R.OK)


def test_above_the_table_a_study_is_required_and_no_elevation_is_needed_elevation():
    assert ev(3, 4000.5)[1] == R.ABOVE
    assert ev(3, NAN)[1] == R.NEED_ELEV


def test_formula_with_floor():
    assert ev(4, 3000.0) == (pytest.approx(20.0 + 0.02 * 2000.0), R.OK)  # 60
    assert ev(4, 500.0) == (25.0, R.OK)  # 20 raised to the pg_min floor of 25
    assert ev(4, NAN)[1] == R.NEED_ELEV
    assert ev(5, NAN) == (25.0, R.OK)  # no A in the expression: no elevation needed


def test_formula_giving_a_negative_value_is_a_numeric_failure():
    assert ev(6, 5.0) == (5.0, R.OK)
    assert ev(6, 50.0)[1] == R.NUMERIC


@pytest.mark.parametrize(
    "row, kind",
    [
        ({"zone_id": "a", "rule": "guess"}, "rule"),
        ({"zone_id": "a", "rule": None}, "rule"),
        ({"zone_id": "a", "rule": "fixed"}, "parameter"),
        ({"zone_id": "a", "rule": "fixed", "pg": -3.0}, "parameter"),
        ({"zone_id": "a", "rule": "fixed", "pg": 3.0, "pg_min": -1.0}, "parameter"),
        ({"zone_id": "a", "rule": "elevation_table", "table": "[[0, 1], [0, 2]]"}, "table"),
        ({"zone_id": "a", "rule": "elevation_table", "table": "[[10, 1], [5, 2]]"}, "table"),
        ({"zone_id": "a", "rule": "elevation_table", "table": "not json"}, "table"),
        ({"zone_id": "a", "rule": "elevation_table", "table": "[[0, 1]]"}, "table"),
        ({"zone_id": "a", "rule": "elevation_table", "table": "[[0, 1], [5, -2]]"}, "table"),
        ({"zone_id": "a", "rule": "elevation_table", "table": '[[0, 1], [5, "x"]]'}, "table"),
        ({"zone_id": "a", "rule": "elevation_table"}, "table"),
        ({"zone_id": "a", "rule": "formula", "expr": "__import__('os')"}, "expression"),
        ({"zone_id": "a", "rule": "formula", "expr": "A +"}, "expression"),
        ({"zone_id": "a", "rule": "formula", "expr": "Q * A"}, "expression"),
        ({"zone_id": "a", "rule": "formula", "expr": "Z * A"}, "expression"),  # Z empty here
        ({"zone_id": None, "rule": "study"}, "missing_id"),
    ],
)
def test_defective_rows_are_problems_and_evaluate_to_bad(row, kind):
    zt = table_of([{"zone_id": "ok", "rule": "fixed", "pg": 1.0, "Z": 1.0}, row])
    assert kind in [p["kind"] for p in zt.problems]
    v, s = R.evaluate(zt, np.array([1, 0]), np.array([100.0, 100.0]))
    assert s[0] == R.BAD and math.isnan(v[0])
    assert s[1] == R.OK


def test_rule_names_are_case_and_separator_blind():
    zt = table_of([{"zone_id": "a", "rule": "Elevation-Table", "table": "[[0,1],[1,2]]"}])
    assert zt.problems == [] and zt.rule_names()[0] == "elevation_table"


@settings(max_examples=60, deadline=None)
@given(st.integers(0, 6), st.one_of(st.just(NAN), st.floats(-100, 6000)))
def test_explain_agrees_with_the_vectorized_value(j, a):
    """Property: the step records end on the value the array path computes."""
    meta = {"value_units": "psf", "elevation_units": "ft"}
    steps = explain(ZT, j, a, meta, "fixture")
    v, s = ev(j, a)
    valued = [st.value for st in steps if st.symbol == "pg" and st.value is not None]
    if s == R.OK and ZT.zone_id[j] != "N":
        assert valued and valued[-1] == pytest.approx(v)
    assert all(st.ref == "fixture" for st in steps)


def test_evaluate_on_many_pairs_matches_one_at_a_time():
    rng = np.random.default_rng(7)
    zone = rng.integers(0, len(ZT), 500)
    a = np.where(rng.random(500) < 0.1, NAN, rng.uniform(0, 5000, 500))
    v, s = R.evaluate(ZT, zone, a)
    for k in range(0, 500, 37):
        v1, s1 = ev(zone[k], a[k])
        assert s1 == s[k]
        assert (math.isnan(v1) and math.isnan(v[k])) or v1 == pytest.approx(v[k])
