"""The ASCE 7-22 load cases of a roof, each with its steps.

Each builder appends the cases that apply to ``cases`` and, for those that do
not, an entry with the reason to ``skipped``.  The records, names and loops
both editions share are :mod:`neve.engine.roof_cases`; this module hands them
ASCE 7-22's provision functions and clauses (:data:`CLAUSES`).  ``_NOT_WITH``
records which cases each may not be combined with (ASCE 7-22 Sec. 7.3.3,
7.4.5, 7.5, 7.9, 7.10; from memory, as in the previous edition).

Cases that need the winter wind parameter W2 (drifts, and the general
unbalanced case of a gable or hip roof) are listed in ``skipped`` as not
computed when W2 is not given, with the flag ``w2_needed``.
"""

from __future__ import annotations

from neve.engine import drift_cases as dc
from neve.engine import roof_cases as rc
from neve.engine.asce7_22 import STANDARD, eaves, flat, sliding, slope, unbalanced
from neve.engine.asce7_22 import drift as dr
from neve.engine.errors import InputError
from neve.engine.format import pitch_text
from neve.engine.roof_cases import case_record  # noqa: F401  (this edition's name)
from neve.engine.roof_spec import Roof
from neve.engine.steps import StepLog, fmt
from neve.engine.units import length_json, load_json

_NOT_WITH = rc.NOT_WITH

W2_REASON = "not computed: needs the winter wind parameter W2 (--w2; Fig. 7.6-1)"

#: the clauses ASCE 7-22's cases cite (from memory, numbered as in ASCE 7-16 where
#: the package docstring says so).  Two drifts at an inside corner: as ASCE 7-16.
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
_FACTOR_REFS = {"Ce": f"{STANDARD} Table 7.3-1", "Ct": f"{STANDARD} Table 7.3-2, Table 7.3-3"}


def refuse_upper_is(roof: Roof) -> None:
    """ASCE 7-22 has no snow importance factor: a step's ``upper_is`` is an input error."""
    for i, st in enumerate(roof.steps):
        if st.upper_is is not None:
            raise InputError(
                f"step[{i}].upper_is",
                f"{STANDARD} has no snow importance factor (its pg is mapped per risk category)",
                "leave upper_is out: upper_ce, upper_ct, or upper_pf",
            )


def unbalanced_cases(pg, ps, roof: Roof, w2, cases, skipped, flags) -> None:
    """Hip and gable unbalanced loads (Sec. 7.6.1), for the wind from each side."""
    rc.unbalanced_cases(
        roof,
        narrow=lambda log: unbalanced.narrow_roof(pg, log),
        general=None
        if w2 is None
        else (lambda w, log: unbalanced.general_case(pg, ps, roof.slope, w, w2, log)),
        narrow_w=unbalanced.NARROW_W,
        clauses=CLAUSES,
        cases=cases,
        skipped=skipped,
        flags=flags,
        required=bool(unbalanced.unbalanced_required(roof.shape, roof.slope)),
        general_missing=(W2_REASON, "w2_needed"),
    )


def drift_cases(pg, ps, roof: Roof, w2, cases, skipped, flags) -> None:
    """Step, adjacent-structure, parapet and projection drifts (Sec. 7.7, 7.8)."""
    labels = rc.place_labels(roof)
    if w2 is None:
        places = [(k, i) for k, group in (("step", roof.steps), ("parapet", roof.parapets),
                  ("projection", roof.projections)) for i, _ in enumerate(group)]  # fmt: skip
        if places:
            flags.append("w2_needed")
        for k, i in places:
            skipped.append({"case": "drift", "name": labels[(k, i)].plain, "place": f"{k}[{i}]",
                            "reason": W2_REASON + " (Sec. 7.7, 7.8)"})  # fmt: skip
        return
    for i, st in enumerate(roof.steps):
        label, place = labels[("step", i)], f"step[{i}]"
        v = dr.step_drifts(pg, ps, st, w2)
        if not v["required"]:
            skipped.append(
                {"case": "drift", "name": label.plain, "place": place, "reason": v["reason"]}
            )
            continue
        kind = "adjacent structure" if st.separation > 0 else "roof step"
        extra = {"lower_roof": "existing"} if st.lower_roof == "existing" else {}
        if st.upper_parapet is not None:
            extra["upper_parapet"] = length_json(st.upper_parapet)
        for d in v["drifts"]:
            d = dict(d, reason=rc.join_notes(d.get("reason", ""), rc.existing_note(st, CLAUSES)))
            cases.append(
                dc.drift_case(
                    f"{d['governs']} drift at {kind} {label.quoted}",
                    "adjacent" if st.separation > 0 else "step",
                    d,
                    ps,
                    d["log"],
                    w_on_roof=length_json(d["w_on_roof"]),
                    pd_far_edge=load_json(d["pd_far_edge"]),
                    place=place,
                    **extra,
                )
            )

    def obstruction(ps_, height, lu, log, what):
        return dr.obstruction_drift(pg, ps_, height, lu, w2, log, what)

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
                "pf_upper = 0.7 Ce Ct pg of the upper roof", f"pf_upper = {fmt(st.upper_pf)} (given)",
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
        f = rc.upper_factor_steps(st, factors, ("Ce", "Ct"), log, _FACTOR_REFS)
        pf_up = float(flat.flat_roof_load(pg, f["Ce"], f["Ct"]))
        log.add(
            "pf_upper", "flat roof snow load of the upper roof, from its own factors",
            "pf_upper = 0.7 Ce Ct pg",
            f"pf_upper = 0.7 x {fmt(f['Ce'])} x {fmt(f['Ct'])} x {fmt(pg)}",
            pf_up, "psf", f"{STANDARD} Eq. 7.3-1",
        )  # fmt: skip
        cs = float(slope.slope_factor(st.upper_slope, float(f["Ct"]), False))
        log.add(
            "Cs_upper",
            "slope factor of the upper roof, all-other-surfaces line (for the record: "
            "the sliding load takes pf)",
            "Fig. 7.4-1", f"slope {pitch_text(st.upper_slope)}, Ct = {fmt(f['Ct'])}", cs, "-",
            f"{STANDARD} Fig. 7.4-1",
        )  # fmt: skip
        log.add(
            "ps_upper", "sloped roof load of the upper roof (for the record)", "ps = Cs pf",
            f"ps = {fmt(cs)} x {fmt(pf_up)}", cs * pf_up, "psf", f"{STANDARD} Eq. 7.4-1",
        )  # fmt: skip
        return pf_up

    return upper_pf


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


def ice_dam_case(pf, warm: bool, roof: Roof, cases, skipped, flags) -> None:
    """Ice dams on the overhang of a warm roof (Sec. 7.4.5)."""
    if roof.overhang is None:
        return
    applies, f = (
        (False, []) if pf <= 0 else eaves.ice_dam_applies(warm, roof.ventilated, roof.r_value)
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
