"""The layer review map."""

from __future__ import annotations

import pytest

from neve.engine.errors import InputError
from neve.maps import assets, layer_map, style
from neve.maps.layer_map import write_layer_map
from tests.maps.conftest import HOSTILE, make_view

PROBLEMS = [
    {"kind": "gap", "zone_id": None, "message": "uncovered sliver", "area_m2": 1234.5},
    {"kind": "overlap", "zone_id": "V12", "message": "overlaps V11"},
]


def test_every_zone_problems_highlighted_and_listed(tmp_path):
    out = write_layer_map(make_view(), PROBLEMS, tmp_path / "layer.html", self_contained=True)
    html = out.read_text(encoding="utf-8")
    assert assets.remote_references(html) == []
    assert 'id="neve-problems"' in html
    assert "uncovered sliver" in html and "1234.5 m\u00b2" in html
    assert style.PROBLEM_COLOUR in html  # zone V12 outlined
    for zid in ("V00", "V11", "V20", "V22"):
        assert f'"zone_id": "{zid}"' in html
    assert "url(#neve-hatch)" in html
    assert "7 &times; fixed mapped value" in html


def test_no_problems_no_problem_panel(tmp_path):
    html = write_layer_map(make_view(), [], tmp_path / "layer.html").read_text()
    assert 'id="neve-problems"' not in html
    assert "Problems</th><td>0" in html


def test_hostile_text_in_layer_map(tmp_path):
    problems = [{"kind": HOSTILE, "zone_id": "V11", "message": HOSTILE}]
    view = make_view(name=HOSTILE, note=HOSTILE, source=HOSTILE)
    html = write_layer_map(view, problems, tmp_path / "layer.html").read_text()
    for raw in ("<script>alert", "<img src=x", "onerror=alert(2)>"):
        assert raw not in html


@pytest.mark.parametrize("problems", ["gap", [{"kind": "gap"}], [42]])
def test_malformed_problems_are_input_errors(tmp_path, problems):
    with pytest.raises(InputError, match="problems"):
        write_layer_map(make_view(), problems, tmp_path / "layer.html")


def test_heavy_layers_are_simplified_and_say_so(tmp_path, monkeypatch):
    monkeypatch.setattr(layer_map, "MAX_VERTICES", 10)
    html = write_layer_map(make_view(), [], tmp_path / "layer.html").read_text()
    assert "Outlines simplified for display" in html
