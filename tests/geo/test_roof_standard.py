"""Which layer standards may feed the ASCE 7-16 roof engine (neve.geo.site.one)."""

from __future__ import annotations

import pytest

from neve.engine import Roof
from neve.geo.site.one import resolve_site, roof_engine_accepts
from tests.geo.conftest import LAT0, LON0, D, fixture_rows, write_layer


@pytest.mark.parametrize(
    ("standard", "accepted"),
    [
        ("ASCE 7-16", True),
        ("ASCE/SEI 7-16", True),
        ("asce 7-10", True),
        # ASCE 7-22 maps strength-level ground loads (its Chapter 7 changed the
        # basis), so they must not enter the ASCE 7-16 equations (from memory).
        ("ASCE 7-22", False),
        # EN 1991-1-3 maps the characteristic ground load sk, a different quantity.
        ("EN 1991-1-3", False),
    ],
)
def test_roof_engine_accepts(standard, accepted):
    assert roof_engine_accepts(standard) is accepted


def test_layer_of_another_standard_gives_no_roof_loads(tmp_path):
    path = write_layer(tmp_path / "en.geojson", fixture_rows(), {"standard": "EN 1991-1-3"})
    roof = Roof.from_mapping({"shape": "flat"})
    # Z1 (fixed 20 psf) in the fixture grid: the ground value itself is usable
    res = resolve_site(LAT0 + D / 2, LON0 + D / 2, layers=[path], roof=roof).to_json()
    assert res["ground"]["status"] == "ok"
    assert res["ground"]["pg"]["psf"] == pytest.approx(20.0)
    assert res["roof"] is None
    assert "roof_standard_unsupported" in res["ground"]["flags"]
    assert "EN 1991-1-3" in res["ground"]["message"]


def test_asce_layer_gives_roof_loads(tmp_path):
    path = write_layer(tmp_path / "asce.geojson", fixture_rows())
    roof = Roof.from_mapping({"shape": "flat"})
    res = resolve_site(LAT0 + D / 2, LON0 + D / 2, layers=[path], roof=roof).to_json()
    # ASCE 7-16 Eq. 7.3-1 with Ce = Ct = Is = 1: pf = 0.7 x 20 = 14 psf (from memory)
    assert res["roof"]["loads"]["pf"]["psf"] == pytest.approx(14.0)
    assert "roof_standard_unsupported" not in res["ground"]["flags"]


def test_roof_on_a_provisional_ground_value_says_so(tmp_path):
    # Z2 is fixed 30 psf with elev_max 500 ft; with no elevation the limit cannot be
    # checked, so the value is provisional (elevation_needed) and the roof must say so
    path = write_layer(tmp_path / "asce.geojson", fixture_rows())
    roof = Roof.from_mapping({"shape": "flat"})
    res = resolve_site(LAT0 + D / 2, LON0 + 1.5 * D, layers=[path], roof=roof).to_json()
    assert res["ground"]["status"] == "provisional"
    assert "ground_provisional" in res["roof"]["flags"]
    assert "provisional" in res["roof"]["cautions"][0]
    assert "elevation_needed" in res["roof"]["cautions"][0]


def test_asce_7_22_layer_no_longer_says_roof_standard_unsupported(tmp_path):
    # the invented 7-22 fixture of tests/geo/test_722_layers.py: Z1 pg_II = 24 psf
    from neve.engine.standards import available
    from tests.geo.test_722_layers import META_722, rows_722

    if "asce7-22" not in available():
        pytest.skip("the ASCE 7-22 engine is not registered")
    path = write_layer(tmp_path / "g722.geojson", rows_722(), META_722)
    roof = Roof.from_mapping({"shape": "flat"})
    res = resolve_site(LAT0 + D / 2, LON0 + D / 2, layers=[path], roof=roof).to_json()
    assert res["ground"]["pg"]["psf"] == pytest.approx(24.0)
    assert res["roof"]["standard"] == "ASCE 7-22"
    assert "roof_standard_unsupported" not in res["ground"]["flags"]
