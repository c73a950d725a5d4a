"""ASCE 7-16's declaration to the standards registry (:mod:`neve.engine.standards`).

Importing this module registers the standard.  Everything the rest of neve
needs to know about ASCE 7-16 — its names, the layer editions whose ground
snow loads it takes, its units, the site quantity ``pg``, its roof options,
its cautions, the clauses each result comes from, and its verification
cases — is declared here; the computations stay in the provision modules
beside it and are reached through ``analyze``, ``uniform`` and
``screening_flags``.

References
----------
.. [1] ASCE/SEI 7-16, Minimum Design Loads and Associated Criteria for
   Buildings and Other Structures, Chapter 7 (snow loads) and Table 1.5-2.
"""

from __future__ import annotations

from collections.abc import Mapping

from neve.engine.asce7_16 import STANDARD
from neve.engine.asce7_16.analysis import CAUTIONS, analyze_roof, screening_flags, uniform_loads
from neve.engine.asce7_16.factors import (
    EXPOSURES,
    IMPORTANCE_SNOW_TABLE_1_5_2,
    TERRAINS,
    THERMAL,
)
from neve.engine.asce7_16.shape_cases import PROVISIONS as SHAPE_PROVISIONS
from neve.engine.errors import InputError
from neve.engine.roof_spec import as_roof
from neve.engine.standards import RoofOption, Standard, register

#: layer ``standard`` strings whose ground snow loads the ASCE 7-16 equations may take:
#: ASCE 7-05 and 7-10 map the same 50-year ground snow load as ASCE 7-16; ASCE 7-22
#: maps strength-level loads and EN 1991-1-3 a different quantity (sk).
LAYER_STANDARDS = ("ASCE 7-16", "ASCE 7-10", "ASCE 7-05")

#: the clause behind each result, by key: ``load.<name>`` for the uniform loads,
#: ``case.<kind>`` (and ``case.drift.<source>``) for the load cases, the rest for
#: tables, limits and messages elsewhere in neve
PROVISIONS = {
    "load.pf": "Eq. 7.3-1",
    "load.ps": "Eq. 7.4-1",
    "load.pm": "Sec. 7.3.4",
    "load.rain_on_snow": "Sec. 7.10",
    "design_uniform": "Sec. 7.3.4, 7.4, 7.10",
    "case.balanced": "Eq. 7.4-1, Sec. 7.10",
    "case.minimum": "Sec. 7.3.4",
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
    "factor.Ct": "Table 7.3-2",
    "factor.Is": "Table 1.5-2",
    "factor.Cs": "Fig. 7.4-1",
    "limit.flat_slope": "Sec. 7.3",
    "limit.adjacent": "Sec. 7.7.2",
    "shapes_not_covered": "Sec. 7.4.3-7.4.4, 7.6.2-7.6.4",
    **SHAPE_PROVISIONS,  # curved, dome and multi-span roofs (issue 12)
}

#: the roof options ASCE 7-16 adds to the shared roof geometry (shape, slope,
#: eave-to-ridge W, steps, parapets, projections, overhang)
ROOF_OPTIONS = (
    RoofOption("surface", "choice", "Roof surface: slippery or other.", ("slippery", "other")),
    RoofOption(
        "ct", "number", f"Thermal factor Ct given directly ({STANDARD} {PROVISIONS['factor.Ct']})."
    ),
    RoofOption(
        "thermal",
        "choice",
        "Thermal condition: " + ", ".join(THERMAL) + ".",
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
        "Risk category: " + ", ".join(IMPORTANCE_SNOW_TABLE_1_5_2) + ".",
        tuple(IMPORTANCE_SNOW_TABLE_1_5_2),
    ),
    RoofOption("r_value", "number", "Roof thermal resistance R [ft2.h.F/Btu], e.g. 30."),
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


def _pg(quantities) -> object:
    """The ground snow load ``pg`` [psf] from the site quantities (a number is pg itself)."""
    if isinstance(quantities, Mapping):
        if "pg" not in quantities:
            raise InputError(
                "pg",
                f"missing from the site quantities ({', '.join(map(str, quantities)) or 'none'})",
                "a ground snow load pg [psf]",
            )
        return quantities["pg"]
    return quantities


def _roof(roof):
    """The roof as a Roof, held to what ASCE 7-16 covers (its shapes, no other standard's options)."""
    roof = as_roof(roof)
    ASCE_7_16.check_roof(roof)
    return roof


def analyze(quantities, roof):
    """Every ASCE 7-16 load case of ``roof`` for the site quantities ``{"pg": psf}``."""
    return analyze_roof(_pg(quantities), _roof(roof))


def uniform(quantities, roof) -> dict:
    """The uniform loads for arrays of ``pg`` [psf] (screening)."""
    return uniform_loads(_pg(quantities), _roof(roof))


def _screening_flags(roof) -> list:
    return screening_flags(_roof(roof))


def _verification():
    from neve.engine.asce7_16.verification import CASES
    from neve.engine.asce7_16.verification_shapes import CASES as SHAPE_CASES  # issue 12

    return CASES + SHAPE_CASES


ASCE_7_16 = register(
    Standard(
        id="asce7-16",
        title=STANDARD,
        names=("ASCE 7-16", "ASCE/SEI 7-16"),
        layer_standards=LAYER_STANDARDS,
        units={"load": "psf", "length": "ft", "density": "pcf", "slope": "deg"},
        quantities=("pg",),
        roof_options=ROOF_OPTIONS,
        cautions=CAUTIONS,
        provisions=PROVISIONS,
        analyze=analyze,
        uniform=uniform,
        screening_flags=_screening_flags,
        verification=_verification,
        summary="ASCE/SEI 7-16 Chapter 7: flat, sloped and minimum roof loads, rain-on-snow, "
        "unbalanced, drift, sliding, ice dam and partial loads",
    )
)
