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

from neve.engine.format import STEP_FIGURES, significant


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


def fmt(x, figures: int = STEP_FIGURES) -> str:
    """A number for a substituted equation: ``figures`` significant figures (engineering rounding).

    A value that is exact at fewer figures prints short (``30``, ``0.7``,
    ``1``: an input or a table factor is not padded with zeros); any other
    value is rounded to ``figures`` significant figures with its trailing
    zeros kept, so that the figures shown say the precision.  Arrays print
    as ``[n values]``; the value a step stores is never rounded by this.

    >>> fmt(30.0), fmt(0.7), fmt(49.591), fmt(2.198), fmt(1479.55), fmt(0.04788026)
    ('30', '0.7', '49.6', '2.20', '1480', '0.0479')
    >>> fmt(1e-5), fmt(float("nan")), fmt([1.0, 2.0])
    ('0.00001', 'nan', '[2 values]')
    """
    arr = np.asarray(x)
    if arr.size != 1:
        return f"[{arr.size} values]"
    v = float(arr.reshape(-1)[0])
    if not math.isfinite(v):
        return str(v)
    if v == int(v) and abs(v) < 1e9:
        return str(int(v))
    text = significant(v, figures)
    if "." in text:
        short = text.rstrip("0").rstrip(".")
        if math.isclose(float(short), v, rel_tol=1e-9, abs_tol=0.0):
            return short
    return text


def fmt_deg(deg) -> str:
    """A roof slope in a substituted equation: ``26.6°`` (:func:`fmt`, then the degree sign).

    >>> fmt_deg(26.565), fmt_deg(30.0), fmt_deg(2.3859)
    ('26.6°', '30°', '2.39°')
    """
    return f"{fmt(deg)}\u00b0"


@dataclass
class StepLog:
    """An ordered collection of steps, appended to by provision functions."""

    steps: list[Step] = field(default_factory=list)

    def add(self, symbol, description, equation, substituted, value, unit, ref) -> object:
        self.steps.append(Step(symbol, description, equation, substituted, value, unit, ref))
        return value

    def to_list(self) -> list[dict]:
        return [s.to_dict() for s in self.steps]
