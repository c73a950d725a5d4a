"""Run the doctest examples in neve's modules outside the engine (regression guard).

The engine's examples are run by tests/engine/test_doctests.py.
"""

from __future__ import annotations

import doctest
import importlib

import pytest


@pytest.mark.parametrize(
    "name",
    [
        "neve.geo.site.coords",
        "neve.geo.layers.formula",
        "neve.engine.printable",
        "neve.geo.site.elevation",
    ],
)
def test_module_doctests(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS, verbose=False)
    assert result.attempted > 0, f"{name} has no doctest examples"
    assert result.failed == 0
