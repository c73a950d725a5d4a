"""Load diagrams of the issue-12 roof geometry (regression guards of the drawing).

The values come from the engine (its own tests check them against their
sources: tests/engine/test_roof_geometry.py); here the diagrams must show
them as the package prints them, name what they draw and keep their labels
apart.  The roofs are invented.
"""

from __future__ import annotations

import json

import pytest

from tests.maps.test_static_diagrams import VARIANTS, _all_text, _overlaps, _texts

ROOF = {
    "ce": 1.0, "ct": 1.0, "risk": "II", "shape": "flat",
    "step": [{"name": "hall", "height": "12ft", "upper_parapet": "3ft", "upper_length": "150ft",
              "lower_length": "70ft"}],
    "projection": [{"name": "AHU", "height": "6ft", "plan_length": "22ft", "length_left": "30ft",
                    "length_right": "80ft"}],
}  # fmt: skip
GABLE = {"ce": 1.0, "ct": 1.0, "risk": "II", "shape": "gable", "slope": "6:12",
         "eave_to_ridge": ["40ft", "14ft"], "prismatic": False}  # fmt: skip


def _json(data, standard):
    import neve

    w2 = {"w2": 0.5} if standard == "asce7-22" else {}
    out = neve.analyze_roof(35.0, neve.Roof.from_mapping(data), standard=standard, **w2)
    return json.loads(json.dumps(out.to_json()))


@pytest.fixture(scope="module", params=["asce7-16", "asce7-22"])
def roofs(request):
    return _json(ROOF, request.param), _json(GABLE, request.param)


def _figure(case, roof):
    from neve.maps.diagrams import case_figure

    return case_figure(case, roof)


def test_asymmetric_unbalanced_shows_each_sides_w(roofs):
    from neve.maps.package import _value_text

    _, gable = roofs
    cases = [c for c in gable["cases"] if c["case"] == "unbalanced"]
    assert {c["wind_from"] for c in cases} == {"A", "B"}
    for c in cases:
        fig = _figure(c, gable)
        text = _all_text(fig)
        assert _value_text(c["leeward_eave_to_ridge"]) in text  # the W dimensioned
        assert _value_text(c["windward_eave_to_ridge"]) in text
        assert f"wind from side {c['wind_from']}" in text
        assert _overlaps(fig) == ([], [])


def test_parapet_on_the_upper_roof_is_drawn_and_tabled(roofs):
    roof, _ = roofs
    for c in (c for c in roof["cases"] if c.get("source") == "step"):
        fig = _figure(c, roof)
        labels = {t.get_text() for t in _texts(fig)}
        assert {"parapet", "hp", "upper roof"} <= labels
        assert "3 ft (0.91 m)" in _all_text(fig)


def test_projection_side_shows_its_roof_length_and_the_greater_fetch(roofs):
    roof, _ = roofs
    left = next(c for c in roof["cases"] if c.get("side") == "left")
    text = _all_text(_figure(left, roof))
    assert "30 ft (9.14 m)" in text  # the roof length on the left
    assert "80 ft (24.38 m)" in text  # lu: the greater of the two sides (Sec. 7.8 reading)
    assert "the left side" in text


@pytest.mark.parametrize("variant", list(VARIANTS))
def test_symbols_have_rows_and_labels_do_not_overlap(roofs, variant):
    for roof in roofs:
        for case in roof["cases"]:
            fig = _figure(VARIANTS[variant](case), roof)
            if fig is None:
                continue
            texts = [t for t in _texts(fig) if t.get_style() == "italic"]
            sketch = {t.get_text() for t in texts if t.axes is not None}
            table = {t.get_text() for t in texts if t.axes is None}
            assert sketch <= table, (case["name"], sketch - table)
            assert _overlaps(fig) == ([], []), (case["name"], variant)
