"""ASCE 7-16 Chapter 7: a roof and a ground snow load -> every load case.

:func:`analyze_roof` works one roof for one ground snow load and records
every step; :func:`uniform_loads` evaluates the uniform loads for many ground
loads at once (portfolio screening), through the same provision functions.
The rest of neve reaches them through the standards registry
(:mod:`neve.engine.standards`; this standard's declaration is
:mod:`neve.engine.asce7_16.standard`), or through the facade
:mod:`neve.engine.roof`.

Which cases combine with which (ASCE 7-16 Sec. 7.3.4, 7.5, 7.9, 7.10, 7.4.5):

* balanced: ``ps`` plus the rain-on-snow surcharge where it applies;
* minimum: a separate uniform case, not combined with drift, sliding,
  unbalanced or partial loads;
* unbalanced, drift and sliding: each added to (or replacing, for
  unbalanced) the balanced load without rain-on-snow;
* partial: the balanced load and half of it on chosen spans, without the
  minimum load or rain-on-snow;
* ice dam: 2 pf on overhangs with dead load only.
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.asce7_16 import STANDARD, flat, shape_cases, slope, unbalanced
from neve.engine.asce7_16.cases import (
    case_record,
    drift_cases,
    ice_dam_case,
    partial_case,
    sliding_cases,
    unbalanced_cases,
)
from neve.engine.asce7_16.factors import resolve_factors
from neve.engine.errors import InputError
from neve.engine.format import slope_text
from neve.engine.roof import RoofResult
from neve.engine.roof_spec import PG_MAX_PSF, Roof, as_roof
from neve.engine.steps import StepLog
from neve.engine.units import load_json

#: shown with every result: neve is an aid to a licensed professional
CAUTIONS = (
    "neve is an aid to, not a substitute for, the judgement of a licensed design professional.",
    "Confirm the ground snow load with the authority having jurisdiction and its local amendments.",
    "Sites flagged for a study need a site-specific case study by a qualified professional.",
)


def _check_pg(pg) -> float:
    try:
        value = float(pg)
    except (TypeError, ValueError):
        raise InputError(
            "pg", f"{pg!r} is not a number", "a ground snow load of zero or more [psf]"
        ) from None
    if not math.isfinite(value) or value < 0 or value > PG_MAX_PSF:
        raise InputError(
            "pg",
            f"{pg!r} is negative, not finite or implausibly large",
            f"a ground snow load of 0 to {PG_MAX_PSF:g} psf",
        )
    return value


def _uniform(pg, roof: Roof, log: StepLog | None):
    """Factors, pf, Cs, ps, pm and rain-on-snow; shared by both entry points."""
    factors, flags = resolve_factors(roof, log if log is not None else StepLog())
    if not roof.shape_stated:
        flags.append("shape_assumed")
    ce, ct, is_ = factors["Ce"], factors["Ct"], factors["Is"]
    pf = flat.flat_roof_load(pg, ce, ct, is_, log)
    slippery, sflags = slope.slippery_line_allowed(
        roof.surface, ct, roof.unobstructed, roof.ventilated, roof.r_value
    )
    flags += sflags
    # --- hook (issue 12): curved, dome and multi-span roofs, engine/asce7_16/shape_cases.py ---
    if roof.shape in shape_cases.SHAPES:
        cs = shape_cases.uniform_cs(roof, log)
    else:
        cs = slope.slope_factor(roof.slope, ct, slippery, log)
    # --- end of hook ---
    factors["Cs"] = round(float(cs), 4)
    ps = slope.sloped_roof_load(pf, cs, log)
    # an asymmetric roof: the longer W (rain-on-snow then applies to more roofs: conservative)
    ros = flat.rain_on_snow(pg, roof.slope, roof.eave_to_ridge_max, log)
    if roof.eave_to_ridge is None and np.any(ros > 0) and roof.slope > 0:
        flags.append("rain_on_snow_eave_to_ridge_unknown")
    if bool(flat.ponding_check_required(roof.slope)):
        flags.append("ponding_check_required")
    pm_applies = bool(flat.minimum_applies(roof.shape, roof.slope))
    pm = flat.minimum_load(pg, is_, None) if pm_applies else None  # logged in its own case
    return factors, flags, pf, cs, ps, pm, ros, slippery


def uniform_loads(pg, roof: Roof) -> dict[str, np.ndarray]:
    """Uniform roof loads for many ground snow loads at once.

    Parameters
    ----------
    pg : array_like
        Ground snow loads [psf]; NaN stays NaN, and a negative value gives
        NaN (no result) rather than stopping a batch.
    roof : Roof
        One roof for all of them.

    Returns
    -------
    dict of ndarray
        ``pf``, ``ps``, ``pm`` (NaN where the minimum does not apply),
        ``rain_on_snow`` (0 where it does not apply) and ``design_uniform``
        (the larger of balanced plus rain-on-snow and pm) [psf].
    """
    roof = as_roof(roof)
    pg = np.asarray(pg, dtype=float)
    pg = np.where((pg >= 0) & (pg <= PG_MAX_PSF), pg, np.nan)  # no result for these
    factors, _, pf, cs, ps, pm, ros, _ = _uniform(pg, roof, None)
    ros = np.where(np.isnan(pg), np.nan, ros)
    pm_arr = np.full_like(pg, np.nan) if pm is None else np.where(np.isnan(pg), np.nan, pm)
    design = np.fmax(ps + ros, pm_arr) if pm is not None else ps + ros
    design = np.where(np.isnan(pg), np.nan, design)
    return {"pf": pf, "ps": ps, "pm": pm_arr, "rain_on_snow": ros, "design_uniform": design}


def screening_flags(roof: Roof) -> list[str]:
    """Flags that go with :func:`uniform_loads` results of ``roof``.

    The flags of the roof description (defaults assumed, slippery line not
    used, rain-on-snow with W unknown, a ponding check required) plus
    ``roof_cases_not_screened`` where the roof has load cases beyond the
    uniform ones that can govern (unbalanced, drifts, sliding, ice dams):
    screening reports uniform loads only, and those cases need
    :func:`analyze_roof` (``neve site``).  ``eave_to_ridge_needed``: a gable
    or hip roof whose unbalanced load needs W, not given.
    """
    roof = as_roof(roof)
    # at pg = 10 psf rain-on-snow is in range, so its W-unknown flag shows too
    _, flags, *_ = _uniform(np.array([10.0]), roof, None)
    more = bool(roof.steps or roof.parapets or roof.projections or roof.overhang is not None)
    unbalanced_needed = bool(unbalanced.unbalanced_required(roof.shape, roof.slope))
    if more or unbalanced_needed:
        flags.append("roof_cases_not_screened")
    if unbalanced_needed and roof.eave_to_ridge is None:
        flags.append("eave_to_ridge_needed")
    # --- hook (issue 12): curved, dome and multi-span roofs, engine/asce7_16/shape_cases.py ---
    if shape_cases.has_more_cases(roof):
        flags.append("roof_cases_not_screened")
    # --- end of hook ---
    return sorted(set(flags))


def analyze_roof(pg: float, roof: Roof) -> RoofResult:
    """All ASCE 7-16 Chapter 7 load cases of ``roof`` under ground snow load ``pg``.

    Parameters
    ----------
    pg : float
        Ground snow load [psf], zero or more.
    roof : Roof
        The roof (see :meth:`Roof.from_mapping`).

    Returns
    -------
    RoofResult
        Factors, uniform loads, every applicable case with its steps, the
        cases found not required and why, the governing uniform load, flags
        and cautions.
    """
    pg = _check_pg(pg)
    roof = as_roof(roof)
    log = StepLog()
    factors, flags, pf, cs, ps, pm, ros, slippery = _uniform(pg, roof, log)
    pf, ps, ros = float(pf), float(ps), float(ros)
    pm = None if pm is None else float(pm)
    is_ = factors["Is"]
    cases: list[dict] = []
    skipped: list[dict] = []
    cases.append(
        case_record(
            "balanced",
            "balanced snow load" + (" with rain-on-snow surcharge" if ros > 0 else ""),
            log,
            load=load_json(ps + ros),
            ps=load_json(ps),
            rain_on_snow=load_json(ros),
        )
    )
    if pm is not None:
        mlog = StepLog()
        flat.minimum_load(pg, is_, mlog)
        cases.append(
            case_record("minimum", "minimum snow load, low-slope roof", mlog, load=load_json(pm))
        )
    else:
        skipped.append(
            {
                "case": "minimum",
                "reason": f"slope {slope_text(roof.slope)} is not below 15\u00b0 (Sec. 7.3.4)",
            }
        )
    unbalanced_cases(pg, ps, is_, roof, cases, skipped, flags)
    drift_cases(pg, ps, roof, cases, skipped)
    sliding_cases(pg, pf, factors, roof, ps, cases, skipped, flags)
    ice_dam_case(pf, factors["Ct"], roof, cases, skipped, flags)
    partial_case(ps, roof, cases, skipped)
    # --- hook (issue 12): curved, dome and multi-span roofs, engine/asce7_16/shape_cases.py ---
    shape_cases.add_cases(pg, pf, factors, roof, cases, skipped, flags)
    # --- end of hook ---
    design = max(ps + ros, pm if pm is not None else 0.0)
    loads = {"pf": pf, "ps": ps, "pm": pm, "rain_on_snow": ros if ros > 0 else None}
    return RoofResult(
        STANDARD, pg, roof, factors, loads, cases, design, flags, skipped, list(CAUTIONS)
    )
