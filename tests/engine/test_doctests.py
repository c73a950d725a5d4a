"""Run the doctest examples of the engine's public helpers.

``pytest --doctest-modules`` is not configured for the suite, so the examples
in the docstrings of engine/units.py, engine/choices.py, engine/jsonsafe.py,
engine/roof_limits.py, engine/format.py, engine/steps.py, engine/roof_text.py
(and of the tests' own tests/rounding.py) are run here; a
broken example fails this test. (regression guard)
"""

from __future__ import annotations

import doctest

import pytest

import neve.engine.asce7_16.curved
import neve.engine.asce7_22.curved
import neve.engine.choices
import neve.engine.format
import neve.engine.jsonsafe
import neve.engine.roof_geometry
import neve.engine.roof_limits
import neve.engine.roof_text
import neve.engine.steps
import neve.engine.units
import tests.rounding

MODULES = [neve.engine.units, neve.engine.choices, neve.engine.jsonsafe, neve.engine.roof_limits,
           neve.engine.format, neve.engine.steps, neve.engine.roof_text, tests.rounding,
           neve.engine.roof_geometry, neve.engine.asce7_16.curved,
           neve.engine.asce7_22.curved]  # fmt: skip  (issue 12: the arc, eave conditions)


@pytest.mark.parametrize("module", MODULES, ids=lambda m: m.__name__)
def test_module_doctests(module):
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS, verbose=False)
    assert result.attempted > 0, f"{module.__name__} has no doctest examples"
    assert result.failed == 0
