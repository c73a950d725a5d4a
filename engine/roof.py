"""A roof and a ground snow load -> every ASCE 7-16 Chapter 7 load case.

:func:`analyze_roof` works one roof for one ground snow load and records
every step; :func:`uniform_loads` evaluates the uniform loads for many ground
loads at once (portfolio screening), through the same provision functions.

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
from dataclasses import dataclass, field

import numpy as np

from engine.asce7_16 import drift as dr
from engine.asce7_16 import eaves, flat, sliding, slope, unbalanced
from engine.asce7_16.factors import STANDARD, resolve_factors
from engine.errors import InputError
from engine.roof_spec import Roof
from engine.steps import StepLog, fmt
from engine.units import KNM3_PER_PCF, length_json, line_load_json, load_json

#: shown with every result (DESIGN.md "Cautions")
CAUTIONS = [
    "neve is an aid to, not a substitute for, the judgement of a licensed design professional.",
    "Confirm the ground snow load with the authority having jurisdiction and its local amendments.",
    "Sites flagged for a study need a site-specific case study by a qualified professional.",
]

_NOT_WITH = {
    "balanced": "",
    "minimum": "drift, sliding, unbalanced, partial, rain-on-snow",
    "unbalanced": "minimum, rain-on-snow, sliding",
    "drift": "minimum, rain-on-snow, sliding",
    "sliding": "minimum, rain-on-snow, drift, unbalanced, partial",
    "partial": "minimum, rain-on-snow, sliding",
    "ice_dam": "all other snow cases (dead load only)",
}


@dataclass
class RoofResult:
    """The outcome of :func:`analyze_roof`; :meth:`to_json` gives the contract."""

    standard: str
    pg: float
    roof: Roof
    factors: dict
    loads: dict
    cases: list[dict]
    design_uniform: float
    flags: list[str] = field(default_factory=list)
    not_required: list[dict] = field(default_factory=list)
    cautions: list[str] = field(default_factory=lambda: list(CAUTIONS))

    def case(self, kind: str) -> list[dict]:
        """All cases of one kind (``"drift"``, ``"unbalanced"`` ...)."""
        return [c for c in self.cases if c["case"] == kind]

    def to_json(self) -> dict:
        r = self.roof
        return {
            "standard": self.standard,
            "pg": load_json(self.pg),
            "roof": {
                "name": r.name,
                "shape": r.shape,
                "slope_deg": round(r.slope, 3),
                "surface": r.surface,
                "risk": self.factors["risk"],
                "eave_to_ridge": length_json(r.eave_to_ridge),
            },
            "factors": {k: self.factors[k] for k in ("Ce", "Ct", "Is", "Cs")},
            "loads": {k: load_json(v) for k, v in self.loads.items()},
            "cases": self.cases,
            "design_uniform": load_json(self.design_uniform),
            "not_required": self.not_required,
            "flags": sorted(set(self.flags)),
            "cautions": list(self.cautions),
        }


def _check_pg(pg) -> float:
    try:
        value = float(pg)
    except (TypeError, ValueError):
        raise InputError(
            "pg", f"{pg!r} is not a number", "a ground snow load of zero or more [psf]"
        ) from None
    if not math.isfinite(value) or value < 0:
        raise InputError(
            "pg", f"{pg!r} is negative or not finite", "a ground snow load of zero or more [psf]"
        )
    return value


def _uniform(pg, roof: Roof, log: StepLog | None):
    """Factors, pf, Cs, ps, pm and rain-on-snow; shared by both entry points."""
    factors, flags = resolve_factors(roof, log if log is not None else StepLog())
    ce, ct, is_ = factors["Ce"], factors["Ct"], factors["Is"]
    pf = flat.flat_roof_load(pg, ce, ct, is_, log)
    slippery, sflags = slope.slippery_line_allowed(
        roof.surface, ct, roof.unobstructed, roof.ventilated, roof.r_value
    )
    flags += sflags
    cs = slope.slope_factor(roof.slope, ct, slippery, log)
    factors["Cs"] = round(float(cs), 4)
    ps = slope.sloped_roof_load(pf, cs, log)
    ros = flat.rain_on_snow(pg, roof.slope, roof.eave_to_ridge, log)
    if roof.eave_to_ridge is None and np.any(ros > 0) and roof.slope > 0:
        flags.append("rain_on_snow_eave_to_ridge_unknown")
    pm_applies = bool(flat.minimum_applies(roof.shape, roof.slope))
    pm = flat.minimum_load(pg, is_, log if pm_applies else None) if pm_applies else None
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
    pg = np.asarray(pg, dtype=float)
    pg = np.where(pg >= 0, pg, np.nan)  # a negative ground load has no result
    factors, _, pf, cs, ps, pm, ros, _ = _uniform(pg, roof, None)
    ros = np.where(np.isnan(pg), np.nan, ros)
    pm_arr = np.full_like(pg, np.nan) if pm is None else np.where(np.isnan(pg), np.nan, pm)
    design = np.fmax(ps + ros, pm_arr) if pm is not None else ps + ros
    design = np.where(np.isnan(pg), np.nan, design)
    return {"pf": pf, "ps": ps, "pm": pm_arr, "rain_on_snow": ros, "design_uniform": design}


def _density_json(gamma: float) -> dict:
    return {"pcf": round(gamma, 3), "kN/m3": round(gamma * KNM3_PER_PCF, 4)}


def _case(kind: str, name: str, log: StepLog, **values) -> dict:
    out = {"case": kind, "name": name}
    out.update(values)
    out["not_combined_with"] = _NOT_WITH[kind]
    out["steps"] = log.to_list()
    return out


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
    log = StepLog()
    factors, flags, pf, cs, ps, pm, ros, slippery = _uniform(pg, roof, log)
    pf, ps, ros = float(pf), float(ps), float(ros)
    pm = None if pm is None else float(pm)
    is_ = factors["Is"]
    cases: list[dict] = []
    skipped: list[dict] = []
    cases.append(
        _case(
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
            _case("minimum", "minimum snow load, low-slope roof", mlog, load=load_json(pm))
        )
    else:
        skipped.append(
            {
                "case": "minimum",
                "reason": f"slope {roof.slope:.1f} deg is not below 15 deg (Sec. 7.3.4)",
            }
        )
    _unbalanced(pg, ps, is_, roof, cases, skipped, flags)
    _drifts(pg, ps, roof, cases, skipped)
    _sliding(pf, roof, ps, cases, skipped)
    _ice_dam(pf, factors["Ct"], roof, cases, skipped, flags)
    _partial(ps, roof, cases, skipped)
    design = max(ps + ros, pm if pm is not None else 0.0)
    loads = {"pf": pf, "ps": ps, "pm": pm, "rain_on_snow": ros if ros > 0 else None}
    return RoofResult(STANDARD, pg, roof, factors, loads, cases, design, flags, skipped)


def _unbalanced(pg, ps, is_, roof: Roof, cases, skipped, flags) -> None:
    if not bool(unbalanced.unbalanced_required(roof.shape, roof.slope)):
        why = (
            f"{roof.shape} roofs have no hip/gable unbalanced case"
            if roof.shape not in ("gable", "hip")
            else f"slope {roof.slope:.2f} deg is outside 1/2 on 12 to 7 on 12"
        )
        skipped.append({"case": "unbalanced", "reason": why + " (Sec. 7.6.1)"})
        return
    w = roof.eave_to_ridge
    if w is None:
        raise InputError(
            "eave_to_ridge",
            f"needed for the unbalanced load of a {roof.shape} roof at this slope",
            "a length such as 30ft",
        )
    narrow = w <= unbalanced.NARROW_W
    methods = []
    if narrow and roof.prismatic is not False:
        methods.append("narrow")
    if not narrow or roof.prismatic is not True:
        methods.append("general")
    if narrow and roof.prismatic is None:
        flags.append("members_unstated")
    for m in methods:
        log = StepLog()
        if m == "narrow":
            v = unbalanced.narrow_roof(pg, is_, log)
            name = "unbalanced, W <= 20 ft with simply supported prismatic members"
        else:
            v = unbalanced.general_case(pg, ps, roof.slope, w, log)
            name = "unbalanced, windward 0.3 ps and leeward ps plus surcharge"
        cases.append(
            _case(
                "unbalanced",
                name,
                log,
                method=m,
                windward=load_json(v["windward"]),
                leeward=load_json(v["leeward"]),
                surcharge=load_json(v["surcharge"]),
                surcharge_extent=length_json(v["surcharge_extent"]),
                leeward_peak=load_json(v["leeward"] + v["surcharge"]),
            )
        )


def _drift_case(name: str, source: str, d: dict, ps: float, log: StepLog, **extra) -> dict:
    return _case(
        "drift",
        name,
        log,
        source=source,
        hd=length_json(d["hd"]),
        w=length_json(d["w"]),
        pd=load_json(d["pd"]),
        governs=d["governs"],
        hb=length_json(d["hb"]),
        hc=length_json(d["hc"]),
        gamma=_density_json(d["gamma"]),
        balanced=load_json(ps),
        total_peak=load_json(ps + d["pd"]),
        note=d.get("reason", ""),
        **extra,
    )


def _drifts(pg, ps, roof: Roof, cases, skipped) -> None:
    for st in roof.steps:
        log = StepLog()
        d = dr.step_drift(pg, ps, st, log)
        if not d["required"]:
            skipped.append({"case": "drift", "name": st.name, "reason": d["reason"]})
            continue
        kind = "adjacent structure" if st.separation > 0 else "roof step"
        cases.append(
            _drift_case(
                f"drift at {kind} '{st.name}'",
                "adjacent" if st.separation > 0 else "step",
                d,
                ps,
                log,
                hd_leeward=length_json(d["hd_leeward"]),
                hd_windward=length_json(d["hd_windward"]),
                w_on_roof=length_json(d["w_on_roof"]),
                pd_far_edge=load_json(d["pd_far_edge"]),
            )
        )
    for p in roof.parapets:
        log = StepLog()
        d = dr.obstruction_drift(pg, ps, p.height, p.upwind_length, log, "parapet")
        if not d["required"]:
            skipped.append({"case": "drift", "name": p.name, "reason": d["reason"]})
            continue
        cases.append(_drift_case(f"drift at parapet '{p.name}'", "parapet", d, ps, log))
    for p in roof.projections:
        if bool(dr.projection_exempt(p.plan_length)):
            skipped.append(
                {
                    "case": "drift",
                    "name": p.name,
                    "reason": f"side {fmt(p.plan_length)} ft long is under 15 ft (Sec. 7.8)",
                }
            )
            continue
        log = StepLog()
        d = dr.obstruction_drift(pg, ps, p.height, p.upwind_length, log, "projection")
        if not d["required"]:
            skipped.append({"case": "drift", "name": p.name, "reason": d["reason"]})
            continue
        cases.append(_drift_case(f"drift at projection '{p.name}'", "projection", d, ps, log))


def _sliding(pf, roof: Roof, ps, cases, skipped) -> None:
    for i, st in enumerate(roof.steps):
        if st.upper_slope is None or not st.upper_slides_toward:
            skipped.append(
                {
                    "case": "sliding",
                    "name": st.name,
                    "reason": "upper roof slope toward this roof not given",
                }
            )
            continue
        if not bool(sliding.sliding_required(st.upper_slope, st.upper_surface)):
            limit = "1/4 on 12" if st.upper_surface == "slippery" else "2 on 12"
            skipped.append(
                {
                    "case": "sliding",
                    "name": st.name,
                    "reason": f"upper roof slope {st.upper_slope:.2f} deg is not above {limit} (Sec. 7.9)",
                }
            )
            continue
        if st.upper_eave_to_ridge is None:
            raise InputError(
                f"step[{i}].upper_eave_to_ridge",
                "needed for the sliding load (Sec. 7.9)",
                "a length such as 40ft",
            )
        log = StepLog()
        log.add(
            "pf_upper",
            "flat roof snow load of the upper roof (taken equal to this roof's pf)",
            "pf_upper = pf",
            f"pf_upper = {fmt(pf)}",
            pf,
            "psf",
            f"{STANDARD} Eq. 7.3-1",
        )
        v = sliding.sliding_load(
            pf, st.upper_eave_to_ridge, st.lower_length, st.separation, st.height, log
        )
        if not v["required"]:
            skipped.append(
                {"case": "sliding", "name": st.name, "reason": v["reason"] + " (Sec. 7.9)"}
            )
            continue
        cases.append(
            _case(
                "sliding",
                f"sliding snow from '{st.name}'",
                log,
                load=load_json(v["load"]),
                line_load=line_load_json(v["line_load"]),
                extent=length_json(v["extent"]),
                balanced=load_json(ps),
                total=load_json(ps + v["load"]),
            )
        )


def _ice_dam(pf, ct, roof: Roof, cases, skipped, flags) -> None:
    if roof.overhang is None:
        return
    applies, f = eaves.ice_dam_applies(ct, roof.ventilated, roof.r_value)
    flags += f
    if not applies:
        skipped.append(
            {
                "case": "ice_dam",
                "reason": "cold roof, or R-value at or above the limit for its ventilation (Sec. 7.4.5)",
            }
        )
        return
    log = StepLog()
    p = float(eaves.ice_dam_load(pf, log))
    cases.append(
        _case(
            "ice_dam",
            "ice dam and icicles on the overhang",
            log,
            load=load_json(p),
            overhang=length_json(roof.overhang),
        )
    )


def _partial(ps, roof: Roof, cases, skipped) -> None:
    log = StepLog()
    v = eaves.partial_loads(ps, log)
    exempt = bool(eaves.partial_exempt(roof.shape, roof.slope))
    note = (
        "for continuous members; members spanning perpendicular to the ridge of this gable roof are exempt (Sec. 7.5)"
        if exempt
        else "for continuous beams and other members where unloading a span increases the effect (Sec. 7.5)"
    )
    cases.append(
        _case(
            "partial",
            "partial loading of continuous members",
            log,
            full=load_json(float(v["full"])),
            half=load_json(float(v["half"])),
            exempt_perpendicular_to_ridge=exempt,
            note=note,
        )
    )
