"""The ASCE 7-16 load cases of a roof, each with its steps (used by neve.engine.roof).

Each builder appends the cases that apply to ``cases`` and, for those that do
not, an entry with the reason to ``skipped``.  ``_NOT_WITH`` records which
cases each may not be combined with (ASCE 7-16 Sec. 7.3.4, 7.4.5, 7.5, 7.9,
7.10).
"""

from __future__ import annotations

from neve.engine.asce7_16 import STANDARD, eaves, sliding, unbalanced
from neve.engine.asce7_16 import drift as dr
from neve.engine.errors import InputError
from neve.engine.format import pitch_text
from neve.engine.roof_spec import Roof
from neve.engine.steps import StepLog, fmt
from neve.engine.units import KNM3_PER_PCF, length_json, line_load_json, load_json

_NOT_WITH = {
    "balanced": "",
    "minimum": "drift, sliding, unbalanced, partial, rain-on-snow",
    "unbalanced": "minimum, rain-on-snow, sliding",
    "drift": "minimum, rain-on-snow, sliding",
    "sliding": "minimum, rain-on-snow, drift, unbalanced, partial",
    "partial": "minimum, rain-on-snow, sliding",
    "ice_dam": "all other snow cases (dead load only)",
}


def _density_json(gamma: float) -> dict:
    return {"pcf": round(gamma, 3), "kN/m3": round(gamma * KNM3_PER_PCF, 4)}


def case_record(kind: str, name: str, log: StepLog, **values) -> dict:
    out = {"case": kind, "name": name}
    out.update(values)
    out["not_combined_with"] = _NOT_WITH[kind]
    out["steps"] = log.to_list()
    return out


def unbalanced_cases(pg, ps, is_, roof: Roof, cases, skipped, flags) -> None:
    if not bool(unbalanced.unbalanced_required(roof.shape, roof.slope)):
        why = (
            f"{roof.shape} roofs have no hip/gable unbalanced case"
            if roof.shape not in ("gable", "hip")
            else f"slope {pitch_text(roof.slope)} is outside 1/2 on 12 to 7 on 12"
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
            case_record(
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
    return case_record(
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


def drift_cases(pg, ps, roof: Roof, cases, skipped) -> None:
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


def sliding_cases(pf, roof: Roof, ps, cases, skipped, flags) -> None:
    for i, st in enumerate(roof.steps):
        if pf <= 0:
            skipped.append(
                {"case": "sliding", "name": st.name, "reason": "pf = 0: no snow to slide"}
            )
            continue
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
                    "reason": f"upper roof slope {pitch_text(st.upper_slope)} is not above {limit} (Sec. 7.9)",
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
        if st.upper_pf is None:
            pf_up = pf
            flags.append("upper_pf_assumed")
            log.add(
                "pf_upper",
                "flat roof snow load of the upper roof (not given: taken equal to this roof's pf)",
                "pf_upper = pf",
                f"pf_upper = {fmt(pf)}",
                pf_up,
                "psf",
                f"{STANDARD} Eq. 7.3-1",
            )
        else:
            pf_up = st.upper_pf
            log.add(
                "pf_upper",
                "flat roof snow load of the upper roof (given)",
                "pf_upper = 0.7 Ce Ct Is pg of the upper roof",
                f"pf_upper = {fmt(pf_up)} (given)",
                pf_up,
                "psf",
                f"{STANDARD} Eq. 7.3-1",
            )
        v = sliding.sliding_load(
            pf_up, st.upper_eave_to_ridge, st.lower_length, st.separation, st.height, log
        )
        if not v["required"]:
            skipped.append(
                {"case": "sliding", "name": st.name, "reason": v["reason"] + " (Sec. 7.9)"}
            )
            continue
        cases.append(
            case_record(
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


def ice_dam_case(pf, ct, roof: Roof, cases, skipped, flags) -> None:
    if roof.overhang is None:
        return
    if pf <= 0:
        skipped.append({"case": "ice_dam", "reason": "pf = 0: no snow on the roof"})
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
        case_record(
            "ice_dam",
            "ice dam and icicles on the overhang",
            log,
            load=load_json(p),
            overhang=length_json(roof.overhang),
        )
    )


def partial_case(ps, roof: Roof, cases, skipped) -> None:
    log = StepLog()
    v = eaves.partial_loads(ps, log)
    exempt = bool(eaves.partial_exempt(roof.shape, roof.slope))
    note = (
        "for continuous members; members spanning perpendicular to the ridge of this gable roof are exempt (Sec. 7.5)"
        if exempt
        else "for continuous beams and other members where unloading a span increases the effect (Sec. 7.5)"
    )
    cases.append(
        case_record(
            "partial",
            "partial loading of continuous members",
            log,
            full=load_json(float(v["full"])),
            half=load_json(float(v["half"])),
            exempt_perpendicular_to_ridge=exempt,
            note=note,
        )
    )
