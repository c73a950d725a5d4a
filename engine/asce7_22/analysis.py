"""ASCE 7-22 Chapter 7: a roof, a ground snow load and W2 -> every load case.

:func:`analyze_roof` works one roof for one site (pg of the building's risk
category, and the winter wind parameter W2 when known) and records every
step; :func:`uniform_loads` evaluates the uniform loads for many sites at
once (screening), through the same provision functions.  The rest of neve
reaches them through the standards registry (this standard's declaration is
:mod:`neve.engine.asce7_22.standard`) or the facade :mod:`neve.engine.roof`.

Which cases combine with which (Sec. 7.3.3, 7.5, 7.9, 7.10, 7.4.5; from
memory, as in ASCE 7-16): balanced = ps plus rain-on-snow where it applies;
minimum a separate uniform case; unbalanced, drift and sliding on the
balanced load without rain-on-snow; partial loading with the balanced load
and half of it; ice dam 2 pf on overhangs with dead load only.

Without W2, the uniform cases are computed and every case that needs W2 is
listed in ``not_required`` as not computed, with the flag ``w2_needed``.
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.asce7_22 import STANDARD, flat, shape_cases, slope, unbalanced
from neve.engine.asce7_22.cases import (
    case_record,
    drift_cases,
    ice_dam_case,
    partial_case,
    refuse_upper_is,
    sliding_cases,
    unbalanced_cases,
)
from neve.engine.asce7_22.drift import check_w2
from neve.engine.asce7_22.factors import resolve_factors
from neve.engine.errors import InputError
from neve.engine.format import slope_text
from neve.engine.roof import RoofResult
from neve.engine.roof_spec import PG_MAX_PSF, Roof, as_roof
from neve.engine.steps import StepLog, fmt
from neve.engine.units import load_json

#: shown with every result: neve is an aid to a licensed professional
CAUTIONS = (
    "neve is an aid to, not a substitute for, the judgement of a licensed design professional.",
    "Confirm the ground snow load with the authority having jurisdiction and its local amendments.",
    "Sites flagged for a study need a site-specific case study by a qualified professional.",
    "ASCE 7-22 ground snow loads are strength-level and mapped per risk category: use the pg "
    "of the building's risk category, never an ASCE 7-16 map value, and the 7-22 load "
    "combinations (snow factor 1.0 for strength design, 0.7 for allowable stress design).",
    "Some ASCE 7-22 values in neve are from memory and marked so in the calculation steps' "
    "sources and in neve verify; check them against the standard at hand.",
)

#: thermal conditions that are warm (heated) roofs for the ice-dam provision
_WARM = ("heated", "greenhouse")


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


def _warm(roof: Roof) -> bool:
    """Whether the roof is a warm (heated) roof for Sec. 7.4.5 (see :mod:`.eaves`)."""
    if roof.ct is not None:
        return roof.ct <= 1.0 + 1e-9
    return (roof.thermal or "heated") in _WARM


def _uniform(pg, roof: Roof, log: StepLog | None):
    """Factors, pf, Cs, ps, pm and rain-on-snow; shared by both entry points."""
    factors, flags = resolve_factors(roof, pg, log if log is not None else StepLog())
    if not roof.shape_stated:
        flags.append("shape_assumed")
    ce, ct = factors["Ce"], factors["Ct"]
    pf = flat.flat_roof_load(pg, ce, ct, log)
    ct_line = float(np.max(ct))
    slippery, sflags = slope.slippery_line_allowed(
        roof.surface, ct_line, roof.unobstructed, roof.ventilated, roof.r_value
    )
    flags += sflags
    # --- hook (issue 12): curved, dome and multi-span roofs, engine/asce7_22/shape_cases.py ---
    if roof.shape in shape_cases.SHAPES:
        cs = shape_cases.uniform_cs(roof, log)
    else:
        cs = slope.slope_factor(roof.slope, ct_line, slippery, log)
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
    pm = flat.minimum_load(pg, factors["risk"], None) if pm_applies else None
    return factors, flags, pf, cs, ps, pm, ros


def uniform_loads(pg, roof: Roof, w2=None) -> dict[str, np.ndarray]:
    """Uniform roof loads for many ground snow loads at once.

    Parameters
    ----------
    pg : array_like
        Ground snow loads of the roof's risk category [psf]; NaN stays NaN,
        and a value out of range gives NaN rather than stopping a batch.
    roof : Roof
        One roof for all of them.
    w2 : array_like, optional
        Winter wind parameter [-]; the uniform loads do not depend on it
        (accepted so that screening can pass every site quantity).

    Returns
    -------
    dict of ndarray
        ``pf``, ``ps``, ``pm`` (NaN where the minimum does not apply),
        ``rain_on_snow`` (0 where it does not apply), ``design_uniform``
        (the larger of balanced plus rain-on-snow and pm) and
        ``seismic_snow`` (the snow load counted in the seismic weight,
        Sec. 12.7.2) [psf].
    """
    roof = as_roof(roof)
    refuse_upper_is(roof)
    pg = np.asarray(pg, dtype=float)
    pg = np.where((pg >= 0) & (pg <= PG_MAX_PSF), pg, np.nan)
    factors, _, pf, cs, ps, pm, ros = _uniform(pg, roof, None)
    pf, ps = np.broadcast_to(pf, pg.shape), np.broadcast_to(ps, pg.shape)
    ros = np.where(np.isnan(pg), np.nan, ros)
    pm_arr = np.full_like(pg, np.nan) if pm is None else np.where(np.isnan(pg), np.nan, pm)
    design = np.fmax(ps + ros, pm_arr) if pm is not None else ps + ros
    design = np.where(np.isnan(pg), np.nan, design)
    seismic = np.where(np.isnan(pg), np.nan, flat.seismic_snow_weight(pf, design))
    return {
        "pf": np.asarray(pf, dtype=float),
        "ps": np.asarray(ps, dtype=float),
        "pm": pm_arr,
        "rain_on_snow": ros,
        "design_uniform": design,
        "seismic_snow": seismic,
    }


def screening_flags(roof: Roof) -> list[str]:
    """Flags that go with :func:`uniform_loads` results of ``roof``.

    The flags of the roof description (defaults assumed, thermal upper
    bound, slippery line not used, rain-on-snow with W unknown) plus
    ``roof_cases_not_screened`` where the roof has load cases beyond the
    uniform ones that can govern (those need :func:`analyze_roof`);
    ``ponding_check_required`` below 1/4 on 12; ``eave_to_ridge_needed``
    where the unbalanced load needs W and W is not given.
    """
    roof = as_roof(roof)
    refuse_upper_is(roof)
    _, flags, *_ = _uniform(np.array([10.0]), roof, None)
    more = bool(roof.steps or roof.parapets or roof.projections or roof.overhang is not None)
    unbalanced_needed = bool(unbalanced.unbalanced_required(roof.shape, roof.slope))
    if more or unbalanced_needed:
        flags.append("roof_cases_not_screened")
    if unbalanced_needed and roof.eave_to_ridge is None:
        flags.append("eave_to_ridge_needed")
    # --- hook (issue 12): curved, dome and multi-span roofs, engine/asce7_22/shape_cases.py ---
    if shape_cases.has_more_cases(roof):
        flags.append("roof_cases_not_screened")
    # --- end of hook ---
    return sorted(set(flags))


def _seismic_note(pf: float, design: float) -> dict:
    w = float(flat.seismic_snow_weight(pf, design))
    applies = pf > flat.SEISMIC_PF_THRESHOLD
    text = (
        f"pf = {fmt(pf)} psf exceeds {fmt(flat.SEISMIC_PF_THRESHOLD)} psf: "
        f"{fmt(100 * flat.SEISMIC_SHARE)} % of the uniform design snow load, {fmt(w)} psf, "
        "counts toward the effective seismic weight"
        if applies
        else f"pf = {fmt(pf)} psf does not exceed {fmt(flat.SEISMIC_PF_THRESHOLD)} psf: "
        "no snow counts toward the effective seismic weight"
    )
    return {
        "applies": bool(applies),
        "threshold_pf": load_json(flat.SEISMIC_PF_THRESHOLD),
        "share": flat.SEISMIC_SHARE,
        "load": load_json(w),
        "ref": f"{STANDARD} Sec. 12.7.2",
        "note": text + " (information only; neve computes no seismic loads).",
    }


def analyze_roof(pg: float, roof: Roof, w2=None) -> RoofResult:
    """All ASCE 7-22 Chapter 7 load cases of ``roof`` for one site.

    Parameters
    ----------
    pg : float
        Ground snow load of the building's risk category [psf], zero or more.
    roof : Roof
        The roof (see :meth:`Roof.from_mapping`); its ``risk`` chooses pm,max.
    w2 : float, optional
        Winter wind parameter [-], 0 to 1 (Fig. 7.6-1).  Without it the cases
        that need it are listed as not computed (flag ``w2_needed``).

    Returns
    -------
    RoofResult
        Factors (``Is`` None), uniform loads, every applicable case with its
        steps, the cases found not required or not computed and why, the
        governing uniform load, flags, cautions, and the extra keys ``w2``
        and ``seismic_weight``.
    """
    pg = _check_pg(pg)
    w2 = None if w2 is None else check_w2(w2)
    roof = as_roof(roof)
    refuse_upper_is(roof)
    log = StepLog()
    factors, flags, pf, cs, ps, pm, ros = _uniform(pg, roof, log)
    pf, ps, ros = float(pf), float(ps), float(ros)
    factors["Ct"] = float(factors["Ct"])
    pm = None if pm is None else float(pm)
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
        flat.minimum_load(pg, factors["risk"], mlog)
        cases.append(
            case_record("minimum", "minimum snow load, low-slope roof", mlog, load=load_json(pm))
        )
    else:
        skipped.append(
            {
                "case": "minimum",
                "reason": f"slope {slope_text(roof.slope)} is not below 15\u00b0 (Sec. 7.3.3)",
            }
        )
    unbalanced_cases(pg, ps, roof, w2, cases, skipped, flags)
    drift_cases(pg, ps, roof, w2, cases, skipped, flags)
    sliding_cases(pg, pf, factors, roof, ps, cases, skipped, flags)
    ice_dam_case(pf, _warm(roof), roof, cases, skipped, flags)
    partial_case(ps, roof, cases, skipped)
    # --- hook (issue 12): curved, dome and multi-span roofs, engine/asce7_22/shape_cases.py ---
    shape_cases.add_cases(pg, pf, factors, roof, cases, skipped, flags)
    # --- end of hook ---
    design = max(ps + ros, pm if pm is not None else 0.0)
    loads = {"pf": pf, "ps": ps, "pm": pm, "rain_on_snow": ros if ros > 0 else None}
    extra = {"w2": w2, "seismic_weight": _seismic_note(pf, design)}
    return RoofResult(
        STANDARD, pg, roof, factors, loads, cases, design, flags, skipped, list(CAUTIONS),
        extra=extra,
    )  # fmt: skip
