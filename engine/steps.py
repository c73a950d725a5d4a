"""Step records: every number neve reports, with its equation and provision.

A :class:`Step` is the unit of the calculation package.  It names the symbol,
says in a few words what it is, gives the equation in symbols, the equation
with the numbers substituted, the value, its unit and the provision it comes
from (``ref``: the standard's title and clause, as
:meth:`neve.engine.standards.Standard.ref` gives it).

Values may be numpy arrays (portfolio screening evaluates many sites at
once); :meth:`Step.to_dict` is for a single site and needs a scalar.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np


@dataclass(frozen=True)
class Step:
    symbol: str
    description: str
    equation: str
    substituted: str
    value: object
    unit: str
    ref: str

    def to_dict(self) -> dict:
        value = self.value
        if isinstance(value, np.ndarray):
            value = value.item() if value.size == 1 else value.tolist()
        if isinstance(value, (np.floating, np.integer, np.bool_)):
            value = value.item()
        if isinstance(value, float):
            value = round(value, 4)
        return {
            "symbol": self.symbol,
            "description": self.description,
            "equation": self.equation,
            "substituted": self.substituted,
            "value": value,
            "unit": self.unit,
            "ref": self.ref,
        }


def fmt(x, digits: int = 3) -> str:
    """Format a number for a substituted equation; arrays print as ``[n values]``."""
    arr = np.asarray(x)
    if arr.size != 1:
        return f"[{arr.size} values]"
    v = float(arr.reshape(-1)[0])
    if not math.isfinite(v):
        return str(v)
    if v == int(v) and abs(v) < 1e9:
        return str(int(v))
    return f"{v:.{digits}g}" if abs(v) < 1e-3 else f"{v:.{digits}f}".rstrip("0").rstrip(".")


@dataclass
class StepLog:
    """An ordered collection of steps, appended to by provision functions."""

    steps: list[Step] = field(default_factory=list)

    def add(self, symbol, description, equation, substituted, value, unit, ref) -> object:
        self.steps.append(Step(symbol, description, equation, substituted, value, unit, ref))
        return value

    def to_list(self) -> list[dict]:
        return [s.to_dict() for s in self.steps]
