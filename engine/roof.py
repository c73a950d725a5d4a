"""Orchestration: a roof and a ground snow load -> every ASCE 7-16 load case.

(Work in progress: balanced load only; the full set of cases follows.)
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from engine.asce7_16.factors import STANDARD, resolve_factors
from engine.roof_spec import Roof
from engine.steps import StepLog, fmt
from engine.units import load_json

CAUTIONS = [
    "neve is an aid to, not a substitute for, the judgement of a licensed design professional.",
    "Confirm the ground snow load with the authority having jurisdiction and its local amendments.",
    "Sites flagged for a study need a site-specific case study by a qualified professional.",
]


@dataclass
class RoofResult:
    standard: str
    pg: float
    factors: dict
    loads: dict
    cases: list[dict]
    design_uniform: float
    flags: list[str] = field(default_factory=list)
    cautions: list[str] = field(default_factory=lambda: list(CAUTIONS))
    steps: list = field(default_factory=list)

    def to_json(self) -> dict:
        return {
            "standard": self.standard,
            "pg": load_json(self.pg),
            "factors": {k: self.factors[k] for k in ("Ce", "Ct", "Is", "Cs")},
            "loads": {k: load_json(v) for k, v in self.loads.items()},
            "cases": self.cases,
            "design_uniform": load_json(self.design_uniform),
            "flags": list(self.flags),
            "cautions": list(self.cautions),
        }


def analyze_roof(pg: float, roof: Roof) -> RoofResult:
    """All ASCE 7-16 Chapter 7 load cases for ``roof`` under ground snow load ``pg`` [psf]."""
    log = StepLog()
    factors, flags = resolve_factors(roof, log)
    pf = 0.7 * factors["Ce"] * factors["Ct"] * factors["Is"] * pg
    log.add(
        "pf",
        "flat roof snow load",
        "pf = 0.7 Ce Ct Is pg",
        f"0.7 x {fmt(factors['Ce'])} x {fmt(factors['Ct'])} x {fmt(factors['Is'])} x {fmt(pg)}",
        pf,
        "psf",
        f"{STANDARD} Eq. 7.3-1",
    )
    factors["Cs"] = 1.0
    ps = pf
    cases = [
        {"case": "balanced", "name": "balanced", "load": load_json(ps), "steps": log.to_list()}
    ]
    return RoofResult(
        STANDARD,
        pg,
        factors,
        {"pf": pf, "ps": ps, "pm": None, "rain_on_snow": None},
        cases,
        ps,
        flags,
    )


def uniform_loads(pg, roof: Roof) -> dict[str, np.ndarray]:
    """Arrays of the uniform loads for many ground loads at once [psf].

    Returns a dict with ``pf``, ``ps``, ``pm`` (NaN where not applicable),
    ``rain_on_snow`` (0 where not applicable) and ``design_uniform``.
    """
    pg = np.asarray(pg, dtype=float)
    log = StepLog()
    factors, _ = resolve_factors(roof, log)
    pf = 0.7 * factors["Ce"] * factors["Ct"] * factors["Is"] * pg
    return {
        "pf": pf,
        "ps": pf,
        "pm": np.full_like(pf, np.nan),
        "rain_on_snow": np.zeros_like(pf),
        "design_uniform": pf,
    }
