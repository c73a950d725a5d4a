"""The ASCE 7-16 load cases of a roof, each with its steps (used by neve.engine.roof).

Each builder appends the cases that apply to ``cases`` and, for those that do
not (or cannot be worked from what was given), an entry with the reason to
``skipped``.  The records, names and loops both editions share are
:mod:`neve.engine.roof_cases`; this module hands them ASCE 7-16's provision
functions and clauses (:data:`CLAUSES`).  ``_NOT_WITH`` records which cases
each may not be combined with (ASCE 7-16 Sec. 7.3.4, 7.4.5, 7.5, 7.9, 7.10).
"""

from __future__ import annotations

from neve.engine import drift_cases as dc
from neve.engine import roof_cases as rc
from neve.engine.asce7_16 import STANDARD, eaves, flat, sliding, slope, unbalanced
from neve.engine.asce7_16 import drift as dr
from neve.engine.errors import InputError
from neve.engine.format import pitch_text
from neve.engine.roof_cases import case_record  # noqa: F401  (this edition's name)
from neve.engine.roof_spec import Roof
from neve.engine.steps import StepLog, fmt
from neve.engine.units import length_json, load_json

_NOT_WITH = rc.NOT_WITH

#: the clauses ASCE 7-16's cases cite.  Two drifts at an inside corner: the
#: drift clauses work each drift on its own; that the larger governs where two
#: overlap is common practice (from memory of the commentary).
CLAUSES = rc.Clauses(
    edition=STANDARD,
    unbalanced="Sec. 7.6.1",
    step="Sec. 7.7.1",
    adjacent="Sec. 7.7.2",
    obstruction="Sec. 7.8",
    sliding="Sec. 7.9",
    ice_dam="Sec. 7.4.5",
    partial="Sec. 7.5",
    existing="Sec. 7.12",
    corner="Sec. 7.7.1, 7.8; common practice",
)

#: the table each factor of the upper roof is read from (for its pf, Sec. 7.9)
_FACTOR_REFS = {
    "Ce": f"{STANDARD} Table 7.3-1",
    "Ct": f"{STANDARD} Table 7.3-2",
    "Is": f"{STANDARD} Table 1.5-2",
}


def unbalanced_cases(pg, ps, is_, roof: Roof, cases, skipped, flags) -> None:
    """Hip and gable unbalanced loads (Sec. 7.6.1), for the wind from each side."""
    rc.unbalanced_cases(
        roof,
        narrow=lambda log: unbalanced.narrow_roof(pg, is_, log),
        general=lambda w, log: unbalanced.general_case(pg, ps, roof.slope, w, log),
        narrow_w=unbalanced.NARROW_W,
        clauses=CLAUSES,
        cases=cases,
        skipped=skipped,
        flags=flags,
        required=bool(unbalanced.unbalanced_required(roof.shape, roof.slope)),
    )


def drift_cases(pg, ps, roof: Roof, cases, skipped) -> None:
    """Step, adjacent-structure, parapet and projection drifts (Sec. 7.7, 7.8)."""
    labels = rc.place_labels(roof)
    for i, st in enumerate(roof.steps):
        label, place = labels[("step", i)], f"step[{i}]"
        log = StepLog()
        d = dr.step_drift(pg, ps, st, log)
        if not d["required"]:
            skipped.append(
                {"case": "drift", "name": label.plain, "place": place, "reason": d["reason"]}
            )
            continue
        kind = "adjacent structure" if st.separation > 0 else "roof step"
        d = dict(d, reason=rc.join_notes(d.get("reason", ""), rc.existing_note(st, CLAUSES)))
        extra = {"lower_roof": "existing"} if st.lower_roof == "existing" else {}
        if st.upper_parapet is not None:
            extra["upper_parapet"] = length_json(st.upper_parapet)
        cases.append(
            dc.drift_case(
                f"drift at {kind} {label.quoted}",
                "adjacent" if st.separation > 0 else "step",
                d,
                ps,
                log,
                hd_leeward=length_json(d["hd_leeward"]),
                hd_windward=length_json(d["hd_windward"]),
                w_on_roof=length_json(d["w_on_roof"]),
                pd_far_edge=load_json(d["pd_far_edge"]),
                place=place,
                **extra,
            )
        )

    def obstruction(ps_, height, lu, log, what):
        return dr.obstruction_drift(pg, ps_, height, lu, log, what)

    dc.parapet_cases(roof, ps, obstruction, labels, cases, skipped)
    dc.projection_cases(
        roof, ps, obstruction, dr.projection_exempt, dr.PROJECTION_EXEMPT_LENGTH, CLAUSES,
        labels, cases, skipped,
    )  # fmt: skip
    dc.inside_corners(roof, labels, cases, CLAUSES)


def _upper_pf(pg, pf, factors, flags):
    """``upper_pf(step, log)``: the upper roof's pf for sliding (Eq. 7.3-1 with its own factors)."""

    def upper_pf(st, log: StepLog) -> float:
        if st.upper_pf is not None:
            log.add(
                "pf_upper", "flat roof snow load of the upper roof (given)",
                "pf_upper = 0.7 Ce Ct Is pg of the upper roof", f"pf_upper = {fmt(st.upper_pf)} (given)",
                st.upper_pf, "psf", f"{STANDARD} Eq. 7.3-1",
            )  # fmt: skip
            return st.upper_pf
        if not st.upper_factors:
            flags.append("upper_pf_assumed")
            log.add(
                "pf_upper",
                "flat roof snow load of the upper roof (not given: taken equal to this roof's pf)",
                "pf_upper = pf", f"pf_upper = {fmt(pf)}", pf, "psf", f"{STANDARD} Eq. 7.3-1",
            )  # fmt: skip
            return pf
        f = rc.upper_factor_steps(st, factors, ("Ce", "Ct", "Is"), log, _FACTOR_REFS)
        pf_up = float(flat.flat_roof_load(pg, f["Ce"], f["Ct"], f["Is"]))
        log.add(
            "pf_upper", "flat roof snow load of the upper roof, from its own factors",
            "pf_upper = 0.7 Ce Ct Is pg",
            f"pf_upper = 0.7 x {fmt(f['Ce'])} x {fmt(f['Ct'])} x {fmt(f['Is'])} x {fmt(pg)}",
            pf_up, "psf", f"{STANDARD} Eq. 7.3-1",
        )  # fmt: skip
        _upper_sloped(st, f["Ct"], pf_up, log)
        return pf_up

    return upper_pf


def _upper_sloped(st, ct: float, pf_up: float, log: StepLog) -> None:
    """Cs and ps of the upper roof, for the record (the sliding load takes pf, Sec. 7.9)."""
    cs = float(slope.slope_factor(st.upper_slope, ct, False))
    log.add(
        "Cs_upper",
        "slope factor of the upper roof, all-other-surfaces line (for the record: "
        "the sliding load takes pf)",
        "Fig. 7.4-1", f"slope {pitch_text(st.upper_slope)}, Ct = {fmt(ct)}", cs, "-",
        f"{STANDARD} Fig. 7.4-1",
    )  # fmt: skip
    log.add(
        "ps_upper", "sloped roof load of the upper roof (for the record)", "ps = Cs pf",
        f"ps = {fmt(cs)} x {fmt(pf_up)}", cs * pf_up, "psf", f"{STANDARD} Eq. 7.4-1",
    )  # fmt: skip


def _need_w(i: int) -> None:
    raise InputError(
        f"step[{i}].upper_eave_to_ridge",
        "needed for the sliding load (Sec. 7.9)",
        "a length such as 40ft",
    )


def sliding_cases(pg, pf, factors, roof: Roof, ps, cases, skipped, flags) -> None:
    """Sliding snow from each step's upper roof (Sec. 7.9)."""
    rc.sliding_cases(
        pf,
        ps,
        roof,
        upper_pf=_upper_pf(pg, pf, factors, flags),
        slide=sliding.sliding_load,
        required=sliding.sliding_required,
        clauses=CLAUSES,
        labels=rc.place_labels(roof),
        cases=cases,
        skipped=skipped,
        need_w=_need_w,
    )


def ice_dam_case(pf, ct, roof: Roof, cases, skipped, flags) -> None:
    """Ice dams on the overhang of a warm roof (Sec. 7.4.5)."""
    if roof.overhang is None:
        return
    applies, f = (
        (False, []) if pf <= 0 else eaves.ice_dam_applies(ct, roof.ventilated, roof.r_value)
    )
    flags += f
    rc.ice_dam_case(pf, applies, lambda log: eaves.ice_dam_load(pf, log), roof, CLAUSES, cases,
                    skipped)  # fmt: skip


def partial_case(ps, roof: Roof, cases, skipped) -> None:
    """Partial loading of continuous members (Sec. 7.5)."""
    log = StepLog()
    v = eaves.partial_loads(ps, log)
    exempt = bool(eaves.partial_exempt(roof.shape, roof.slope))
    rc.partial_case(v, exempt, log, CLAUSES, cases)
