"""The Python API mirrors the CLI and refuses bad input with neve.engine.errors.InputError.

Source: issue 2 ("every case ... answered by the Python API"), STYLE.md point 8
("everything the CLI can do, a Python user can do with the same names"), and
the team rule that bad input raises InputError naming the field (regression guard).
"""

from __future__ import annotations

import pytest

from neve.engine import InputError, Roof, analyze_roof
from neve.geo.layers.model import load_layer

from .conftest import run


def test_public_names_exist():
    import neve.engine as engine
    import neve.geo.layers.model
    import neve.geo.screen.run
    import neve.geo.site.one

    for mod, name in [(engine, "analyze_roof"), (engine, "Roof"), (neve.geo.site.one, "resolve_site"),
                      (neve.geo.screen.run, "screen"), (neve.geo.layers.model, "load_layer")]:  # fmt: skip
        assert callable(getattr(mod, name)), name
    assert callable(Roof.from_mapping)


def test_load_layer(grid):
    layer = load_layer(grid)
    assert "fixture grid" in repr(layer)
    with pytest.raises(Exception) as err:
        load_layer(grid + ".missing")
    assert "not found" in str(err.value)


@pytest.mark.parametrize("bad", [["shape"], None, "flat"])
def test_from_mapping_refuses_non_mappings(bad):
    with pytest.raises(InputError):
        Roof.from_mapping(bad)


def test_analyze_roof_with_a_mapping():
    d = analyze_roof(35.0, {"shape": "flat"}).to_json()
    # ASCE 7-16 Eq. 7.3-1: pf = 0.7 Ce Ct Is pg = 24.5 psf with defaults 1.0 (hand calculation)
    assert d["loads"]["pf"]["psf"] == pytest.approx(24.5)


def test_absurd_ground_load_refused():
    res = run("roof", "--pg", "1e300psf")
    assert res.exit_code == 2 and "pg" in res.stderr


def test_bool_options_from_mapping():
    r = Roof.from_mapping({"ventilated": True, "unobstructed": False, "r_value": 30})
    assert r.ventilated is True and r.unobstructed is False
    with pytest.raises(InputError) as err:
        Roof.from_mapping({"ventilated": "maybe"})
    assert "ventilated" in str(err.value) and "true" in str(err.value)
