"""Sidecar validation (neve.geo.layers.sidecar): required keys, units, tolerance, types."""

from __future__ import annotations

import pytest

from neve.engine.errors import LayerError
from neve.geo.layers.sidecar import read_sidecar, sidecar_path, validate_meta

from .conftest import FIXTURE_META, toml_text


def test_complete_sidecar_is_filled_in():
    meta = validate_meta(dict(FIXTURE_META, value_units="KPA", elevation_units="M"))
    assert meta["value_units"] == "kPa" and meta["elevation_units"] == "m"
    assert meta["quantity"] == "pg" and meta["boundary_tolerance_m"] == 100.0
    assert meta["demo"] is False


def test_default_tolerance_and_demo():
    raw = {k: v for k, v in FIXTURE_META.items() if k not in ("boundary_tolerance_m", "demo")}
    meta = validate_meta(raw)
    assert meta["boundary_tolerance_m"] == 100.0  # docs/contract.md, "Sidecar": the default
    assert meta["demo"] is False


@pytest.mark.parametrize("key", ["name", "jurisdiction", "standard", "value_units",
                                 "elevation_units", "source", "license", "date"])  # fmt: skip
def test_each_required_key_is_required(key):
    raw = dict(FIXTURE_META)
    del raw[key]
    with pytest.raises(LayerError, match=key):
        validate_meta(raw)


@pytest.mark.parametrize(
    "change, match",
    [
        ({"value_units": "lbs"}, "value_units: unknown unit"),
        ({"elevation_units": "yards"}, "elevation_units: unknown unit"),
        ({"boundary_tolerance_m": -1}, "boundary_tolerance_m"),
        ({"boundary_tolerance_m": 50000}, "boundary_tolerance_m"),
        ({"boundary_tolerance_m": "100"}, "boundary_tolerance_m"),
        ({"demo": "yes"}, "demo"),
        ({"quantity": "wind"}, "quantity"),
        ({"name": ""}, "name"),
        ({"colour": "red"}, "unknown key"),
        ({"date": 2024}, "date"),
    ],
)
def test_wrong_values_are_named(change, match):
    with pytest.raises(LayerError, match=match):
        validate_meta(dict(FIXTURE_META, **change))


def test_missing_and_broken_sidecar_files(tmp_path):
    layer = tmp_path / "z.gpkg"
    layer.write_bytes(b"")
    with pytest.raises(LayerError, match="no sidecar"):
        read_sidecar(layer)
    sidecar_path(layer).write_text("name = [unclosed", encoding="utf-8")
    with pytest.raises(LayerError, match="not valid TOML"):
        read_sidecar(layer)
    sidecar_path(layer).write_text(toml_text(FIXTURE_META) + "date2 = 1\n", encoding="utf-8")
    with pytest.raises(LayerError, match="date2"):
        read_sidecar(layer)


def test_toml_date_becomes_iso_text(tmp_path):
    layer = tmp_path / "z.gpkg"
    text = toml_text({k: v for k, v in FIXTURE_META.items() if k != "date"}) + "date = 2024-05-01\n"
    sidecar_path(layer).write_text(text, encoding="utf-8")
    assert read_sidecar(layer)["date"] == "2024-05-01"
