"""ASCE 7-22's declaration to the standards registry (:mod:`neve.engine.standards`).

Importing this module registers the standard.  Its names, the layer edition
whose ground loads it takes (strength-level, one map per risk category), its
two site quantities ``pg`` and ``w2``, its roof options, its cautions, the
clauses each result comes from, and its verification cases are declared
here; the computations stay in the provision modules beside it.

Section numbers: ASCE 7-22 dropped the importance-factor section of 7-16
(Sec. 7.3.3), so the minimum load moved from Sec. 7.3.4 to Sec. 7.3.3
(confirmed [STR-MIN]: "ASCE 7-22 Section 7.3.3, Minimum Snow Load for
Low-Slope Roofs"); the drift height moved from Fig. 7.6-1 to Eq. 7.6-1, and
Fig. 7.6-1 is now the W2 map (confirmed [NFBA25], [PROSE]).  The other
clause numbers are from memory (as in 7-16).

References
----------
.. [1] ASCE/SEI 7-22, Minimum Design Loads and Associated Criteria for
   Buildings and Other Structures, Chapter 7 (snow loads), Sec. 12.7.2.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from neve.engine.asce7_22 import STANDARD
from neve.engine.asce7_22.analysis import CAUTIONS, analyze_roof, screening_flags, uniform_loads
from neve.engine.asce7_22.factors import EXPOSURES, RISKS, TERRAINS, THERMAL
from neve.engine.asce7_22.shape_cases import PROVISIONS as SHAPE_PROVISIONS
from neve.engine.errors import InputError
from neve.engine.roof_spec import as_roof
from neve.engine.standards import RoofOption, Standard, register

#: layer ``standard`` strings whose values the ASCE 7-22 equations may take: only
#: 7-22's own (strength-level, risk-targeted); earlier editions map 50-year loads.
LAYER_STANDARDS = ("ASCE 7-22",)

#: the clause behind each result, by key (see the module docstring on numbering)
PROVISIONS = {
    "load.pf": "Eq. 7.3-1",
    "load.ps": "Eq. 7.4-1",
    "load.pm": "Sec. 7.3.3, Table 7.3-4",
    "load.rain_on_snow": "Sec. 7.10",
    "load.seismic_snow": "Sec. 12.7.2",
    "design_uniform": "Sec. 7.3.3, 7.4, 7.10",
    "case.balanced": "Eq. 7.4-1, Sec. 7.10",
    "case.minimum": "Sec. 7.3.3",
    "case.unbalanced": "Sec. 7.6.1",
    "case.sliding": "Sec. 7.9",
    "case.ice_dam": "Sec. 7.4.5",
    "case.partial": "Sec. 7.5",
    "case.drift": "Sec. 7.7, 7.8",
    "case.drift.step": "Sec. 7.7.1",
    "case.drift.adjacent": "Sec. 7.7.2",
    "case.drift.parapet": "Sec. 7.8",
    "case.drift.projection": "Sec. 7.8",
    "factor.Ce": "Table 7.3-1",
    "factor.Ct": "Table 7.3-2, Table 7.3-3",
    "factor.Cs": "Fig. 7.4-1",
    "factor.W2": "Fig. 7.6-1",
    "equation.hd": "Eq. 7.6-1",
    "limit.flat_slope": "Sec. 7.3",
    "limit.adjacent": "Sec. 7.7.2",
    "shapes_not_covered": "Sec. 7.4.3-7.4.4, 7.6.2-7.6.4",
    **SHAPE_PROVISIONS,  # curved, dome and multi-span roofs (issue 12; from memory)
}

#: the roof options ASCE 7-22 adds to the shared roof geometry; the words are
#: those of ASCE 7-16, so one ROOF.toml serves both editions
ROOF_OPTIONS = (
    RoofOption("surface", "choice", "Roof surface: slippery or other.", ("slippery", "other")),
    RoofOption(
        "ct", "number", f"Thermal factor Ct given directly ({STANDARD} {PROVISIONS['factor.Ct']})."
    ),
    RoofOption(
        "thermal",
        "choice",
        "Thermal condition: " + ", ".join(THERMAL) + " (heated: Table 7.3-3 by R-value and pg).",
        tuple(THERMAL),
    ),
    RoofOption(
        "ce", "number", f"Exposure factor Ce given directly ({STANDARD} {PROVISIONS['factor.Ce']})."
    ),
    RoofOption(
        "terrain", "choice", "Surface roughness: " + ", ".join(TERRAINS) + ".", tuple(TERRAINS)
    ),
    RoofOption(
        "exposure", "choice", "Roof exposure: " + ", ".join(EXPOSURES) + ".", tuple(EXPOSURES)
    ),
    RoofOption(
        "risk",
        "choice",
        "Risk category: " + ", ".join(RISKS) + " (chooses pm,max; pg must be this category's).",
        RISKS,
    ),
    RoofOption(
        "r_value", "number", "Roof thermal resistance R [ft2.h.F/Btu], e.g. 30 (Table 7.3-3)."
    ),
    RoofOption("ventilated", "yes/no", "Whether the roof is ventilated.", opposite="unventilated"),
    RoofOption(
        "unobstructed",
        "yes/no",
        "Whether snow can slide off the eaves unobstructed.",
        opposite="obstructed",
    ),
    RoofOption(
        "prismatic",
        "yes/no",
        "Simply supported prismatic members from ridge to eave (Sec. 7.6.1).",
        opposite="non_prismatic",
    ),
)


def _take(quantities, name: str, need: bool):
    if isinstance(quantities, Mapping):
        if name not in quantities or quantities[name] is None:
            if need:
                raise InputError(
                    name,
                    f"missing from the site quantities ({', '.join(map(str, quantities)) or 'none'})",
                    "a ground snow load pg [psf] of the building's risk category",
                )
            return None
        return quantities[name]
    return quantities if name == "pg" else None


def _w2(quantities):
    """W2 from the site quantities; None, or a NaN (a site without a W2 value), is not given."""
    w2 = _take(quantities, "w2", False)
    if isinstance(w2, float) and math.isnan(w2):
        return None
    return w2


def _roof(roof):
    """The roof as a Roof, held to what ASCE 7-22 covers (its shapes, no other standard's options)."""
    roof = as_roof(roof)
    ASCE_7_22.check_roof(roof)
    return roof


def analyze(quantities, roof):
    """Every ASCE 7-22 load case of ``roof`` for ``{"pg": psf, "w2": fraction}`` (w2 optional)."""
    return analyze_roof(_take(quantities, "pg", True), _roof(roof), _w2(quantities))


def uniform(quantities, roof) -> dict:
    """The uniform loads for arrays of ``pg`` [psf] (screening); ``w2`` is not needed."""
    return uniform_loads(_take(quantities, "pg", True), _roof(roof), _take(quantities, "w2", False))


def _screening_flags(roof) -> list:
    return screening_flags(_roof(roof))


def _verification():
    from neve.engine.asce7_22.verification import CASES
    from neve.engine.asce7_22.verification_shapes import CASES as SHAPE_CASES  # issue 12

    return CASES + SHAPE_CASES


ASCE_7_22 = register(
    Standard(
        id="asce7-22",
        title=STANDARD,
        names=("ASCE 7-22", "ASCE/SEI 7-22"),
        layer_standards=LAYER_STANDARDS,
        units={"load": "psf", "length": "ft", "density": "pcf", "slope": "deg"},
        quantities=("pg", "w2"),
        roof_options=ROOF_OPTIONS,
        cautions=CAUTIONS,
        provisions=PROVISIONS,
        analyze=analyze,
        uniform=uniform,
        screening_flags=_screening_flags,
        verification=_verification,
        summary="ASCE/SEI 7-22 Chapter 7: strength-level, risk-targeted ground loads (no Is), "
        "thermal factor by R-value, drifts with the winter wind parameter W2, minimum "
        "load by risk category, rain-on-snow, sliding, ice dam and partial loads",
    )
)
