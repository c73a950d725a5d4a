"""EN 1991-1-3's declaration to the standards registry (:mod:`neve.engine.standards`).

Importing this module registers the standard: its names, the layer
``standard`` strings whose values it takes (the site quantity ``sk``, in
kPa), its roof options beyond the shared roof geometry, its cautions, the
clause each result comes from, its parameter sets (``annexes/``) and its
verification cases.  The computations stay in the provision modules beside
it.

References
----------
.. [1] EN 1991-1-3:2003 + A1:2015, Eurocode 1: Actions on structures,
   Part 1-3: General actions, Snow loads.
"""

from __future__ import annotations

from collections.abc import Mapping

from neve.engine.en1991_1_3 import STANDARD
from neve.engine.en1991_1_3.analysis import CAUTIONS, analyze_roof, screening_flags, uniform_loads
from neve.engine.en1991_1_3.factors import TOPOGRAPHIES
from neve.engine.en1991_1_3.parameters import DESIGN_CASES
from neve.engine.errors import InputError
from neve.engine.roof_spec import as_roof
from neve.engine.standards import RoofOption, Standard, register

#: layer ``standard`` strings whose sk values these equations may take
LAYER_STANDARDS = ("EN 1991-1-3", "EN 1991-1-3:2003", "EN 1991-1-3:2003+A1:2015")

#: the clause behind each result, by key
PROVISIONS = {
    "load.sk": "4.1",
    "load.sn": "Annex D, Eq. D.1",
    "load.s": "5.2(3), Eq. 5.1",
    "load.sAd": "4.3, Eq. 4.1",
    "design_uniform": "5.2(3), Eq. 5.1, Table 5.2",
    "case.undrifted": "5.3, Eq. 5.1",
    "case.undrifted.monoslope": "5.3.2, Figure 5.2",
    "case.drifted": "5.3.3, 5.3.4, 5.3.5",
    "case.abutting": "5.3.6, Figure 5.7",
    "case.abutting.step": "5.3.6, Figure 5.7",
    "case.obstruction": "6.2, Figure 6.1",
    "case.obstruction.parapet": "6.2, Figure 6.1",
    "case.obstruction.projection": "6.2, Figure 6.1",
    "case.overhang": "6.3",
    "case.snow_guard": "6.4",
    "case.exceptional_ground": "4.3, 5.2(3), Eq. 5.2, Annex A",
    "case.exceptional_drift": "Annex B, Eq. 5.3",
    "case.exceptional_drift.step": "Annex B, B3",
    "case.exceptional_drift.parapet": "Annex B, B4",
    "case.exceptional_drift.projection": "Annex B, B4",
    "factor.Ce": "5.2(7), Table 5.1",
    "factor.Ct": "5.2(8)",
    "factor.Cesl": "4.3",
    "factor.mu": "5.3, Table 5.2",
    "limit.flat_slope": "5.3.2, Table 5.2",
    "shapes_not_covered": "5.3.1",
}

#: the roof options EN 1991-1-3 takes: shared ones (surface, ct, ce, unobstructed) and
#: its own (held in ``Roof.extra``); lengths in m are the natural input, any unit is read
ROOF_OPTIONS = (
    RoofOption("surface", "choice", "Roof surface: slippery or other (EN 1991-1-3: not used; "
               "what counts is whether snow can slide off, --obstructed).",
               ("slippery", "other")),
    RoofOption("ct", "number", f"Thermal coefficient Ct, a justified value up to 1.0 "
               f"({STANDARD} {PROVISIONS['factor.Ct']})."),
    RoofOption("ce", "number", f"Exposure coefficient Ce given directly "
               f"({STANDARD} {PROVISIONS['factor.Ce']})."),
    RoofOption("unobstructed", "yes/no", "Whether snow can slide off the roof; --obstructed: "
               "snow fences, obstructions or a parapet at the lower edge (mu1 not below 0.8).",
               opposite="obstructed"),
    RoofOption("topography", "choice", "EN 1991-1-3 topography for Ce: "
               + ", ".join(TOPOGRAPHIES) + f" ({STANDARD} {PROVISIONS['factor.Ce']}).",
               TOPOGRAPHIES),
    RoofOption("annex", "parameter set", "EN 1991-1-3 national parameter set: recommended "
               "(default), a shipped set's name, or a TOML file of one."),
    RoofOption("snow_case", "choice", "EN 1991-1-3 design case of Annex A: "
               + ", ".join(DESIGN_CASES) + " (default: the parameter set's).",
               tuple(DESIGN_CASES)),
    RoofOption("return_period", "text", f"EN 1991-1-3: a return period other than 50 years, "
               f"e.g. 100y, with --cov ({STANDARD} {PROVISIONS['load.sn']})."),
    RoofOption("cov", "number", "EN 1991-1-3: coefficient of variation V of the annual "
               "maximum snow loads, e.g. 0.4 (with --return-period)."),
    RoofOption("other_slope", "slope", "EN 1991-1-3: slope of the second side of a gable "
               "(duopitch) or of the second slope at a multi-span valley (default: --slope)."),
    RoofOption("altitude", "length", "EN 1991-1-3: site altitude, e.g. 900m (snow overhanging "
               "the edge of a roof part cantilevered beyond the walls, [overhang])."),
    RoofOption("guard_width", "length", "EN 1991-1-3: plan width from a snow guard to the next "
               "guard or the ridge, e.g. 6m (the force on the guard)."),
)  # fmt: skip


def _sk(quantities):
    """The ground snow load ``sk`` [kPa] from the site quantities (a number is sk itself)."""
    if isinstance(quantities, Mapping):
        if "sk" not in quantities or quantities["sk"] is None:
            raise InputError(
                "sk",
                f"missing from the site quantities ({', '.join(map(str, quantities)) or 'none'})",
                "a characteristic ground snow load sk [kPa]",
            )
        return quantities["sk"]
    return quantities


def _roof(roof):
    roof = as_roof(roof)
    EN_1991_1_3.check_roof(roof)
    return roof


def analyze(quantities, roof):
    """Every EN 1991-1-3 load case of ``roof`` for the site quantities ``{"sk": kPa}``."""
    return analyze_roof(_sk(quantities), _roof(roof))


def uniform(quantities, roof) -> dict:
    """The undrifted roof load for arrays of ``sk`` [kPa] (screening)."""
    return uniform_loads(_sk(quantities), _roof(roof))


def _screening_flags(roof) -> list:
    return screening_flags(_roof(roof))


def _verification():
    from neve.engine.en1991_1_3.verification import CASES

    return CASES


EN_1991_1_3 = register(
    Standard(
        id="en1991-1-3",
        title=STANDARD,
        names=("EN 1991-1-3", "EN1991-1-3", "Eurocode 1-3", "EN 1991-1-3:2003"),
        layer_standards=LAYER_STANDARDS,
        units={"load": "kPa", "length": "m", "density": "kN/m3", "slope": "deg"},
        quantities=("sk",),
        roof_options=ROOF_OPTIONS,
        cautions=CAUTIONS,
        provisions=PROVISIONS,
        analyze=analyze,
        uniform=uniform,
        screening_flags=_screening_flags,
        verification=_verification,
        summary="EN 1991-1-3 (Eurocode 1, snow): s = mu Ce Ct sk for monopitch, duopitch, "
        "multi-span and cylindrical roofs, drifts at taller construction and obstructions, "
        "overhanging snow, snow guards, exceptional snow and drifts (Annex A, B), return "
        "periods (Annex D), national parameters as data",
        shapes=("flat", "monoslope", "gable", "multi-span", "cylindrical"),
        parameter_sets="neve.engine.en1991_1_3:annexes",
    )
)
