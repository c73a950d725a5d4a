"""Drift cases at the places of a roof, shared by the editions.

One drift case per parapet and per side of a projection, the step height
with a parapet on the upper roof, and two drifts meeting at an inside corner.
As in :mod:`neve.engine.roof_cases`, each edition hands in its provision
functions (the drift against a wall, the projection exemption) and its
clauses (:class:`neve.engine.roof_cases.Clauses`); no clause is written here.
Step drifts themselves are the editions' (ASCE 7-22 checks the leeward and
windward drift apart), built with :func:`drift_case`.
"""

from __future__ import annotations

from collections.abc import Callable

from neve.engine.roof_cases import Clauses, case_record, density_json, join_notes
from neve.engine.roof_spec import Roof
from neve.engine.steps import StepLog, fmt
from neve.engine.units import length_json, load_json


def drift_case(name: str, source: str, d: dict, ps: float, log: StepLog, **extra) -> dict:
    """A drift case from a drift dict (``hd``, ``w``, ``pd``, ``governs``, ``hb``, ``hc``, ``gamma``)."""
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
        gamma=density_json(d["gamma"]),
        balanced=load_json(ps),
        total_peak=load_json(ps + d["pd"]),
        note=d.get("reason", ""),
        **extra,
    )


# --- drifts at parapets and projections ---------------------------------------------

#: ``drift(ps, height, lu, log, what)``: the edition's drift against a wall or projection
ObstructionDrift = Callable[[float, float, float, StepLog, str], dict]


def parapet_cases(roof: Roof, ps: float, drift: ObstructionDrift, labels, cases, skipped) -> None:
    """One drift case per parapet (lu: the roof length upwind of it)."""
    for i, p in enumerate(roof.parapets):
        label = labels[("parapet", i)]
        log = StepLog()
        d = drift(ps, p.height, p.upwind_length, log, "parapet")
        place = f"parapet[{i}]"
        if not d["required"]:
            skipped.append({"case": "drift", "name": label.plain, "place": place,
                            "reason": d["reason"]})  # fmt: skip
            continue
        cases.append(
            drift_case(f"drift at parapet {label.quoted}", "parapet", d, ps, log, place=place)
        )


def projection_cases(
    roof: Roof,
    ps: float,
    drift: ObstructionDrift,
    exempt: Callable[[float], bool],
    exempt_length: float,
    clauses: Clauses,
    labels,
    cases,
    skipped,
) -> None:
    """Drift cases at each side of each roof projection.

    A projection described with one roof length (``upwind_length``) is worked
    as before: one drift, with that length as lu.  A projection with roof
    lengths on its sides gets one drift per side, each with lu the greater of
    the roof lengths on that side and the opposite one (the edition's
    projection clause, ``clauses.obstruction``), each side of the projection
    shorter than ``exempt_length`` exempt on its own, and each drift
    truncated at the roof's edge on its side where it is wider than the roof
    there (as on a lower roof, ``clauses.step``).
    """
    for i, p in enumerate(roof.projections):
        label, place = labels[("projection", i)], f"projection[{i}]"
        for side, face, length, opposite in p.sides():
            name = label.quoted if p.one_sided else f"{label.quoted}, {side} side"
            plain = label.plain if p.one_sided else f"{label.plain}, {side} side"
            entry = {"case": "drift", "name": plain, "place": place}
            if bool(exempt(face)):
                skipped.append(
                    dict(
                        entry,
                        reason=f"side {fmt(face)} ft long is under "
                        f"{fmt(exempt_length)} ft ({clauses.obstruction})",
                    )  # fmt: skip
                )
                continue
            log = StepLog()
            lu = length if p.one_sided or opposite is None else max(length, opposite)
            if not p.one_sided:
                _log_fetch(log, side, length, opposite, lu, clauses)
            d = drift(ps, p.height, lu, log, "projection")
            if not d["required"]:
                skipped.append(dict(entry, reason=d["reason"]))
                continue
            extra: dict = {"place": place}
            if not p.one_sided:
                w_on, pd_far = _truncate(d["pd"], d["w"], length, log, clauses.full("step"))
                extra.update(
                    side=side,
                    roof_length=length_json(length),
                    w_on_roof=length_json(w_on),
                    pd_far_edge=load_json(pd_far),
                )
            cases.append(
                drift_case(f"drift at projection {name}", "projection", d, ps, log, **extra)
            )


def _log_fetch(log, side, length, opposite, lu, clauses) -> None:
    ref = clauses.full("obstruction")
    if opposite is None:
        log.add(
            "lu", f"fetch of the {side} side: its own roof length (the opposite one not given)",
            "lu = roof length beside the side", f"lu = {fmt(length)}", lu, "ft", ref,
        )  # fmt: skip
        return
    log.add(
        "lu",
        f"fetch of the {side} side: the greater roof length on either side of the projection",
        "lu = max(roof length this side, roof length opposite)",
        f"lu = max({fmt(length)}, {fmt(opposite)})",
        lu,
        "ft",
        ref,
    )


def _truncate(pd: float, w: float, length: float, log: StepLog, ref: str) -> tuple[float, float]:
    w_on = min(w, length) if length > 0 else w
    pd_far = pd * (1.0 - w_on / w) if w > 0 else 0.0
    if w > length > 0:
        log.add(
            "pd_edge", "drift truncated at the roof's edge on this side",
            "pd_edge = pd (1 - roof length / w)",
            f"pd_edge = {fmt(pd)} x (1 - {fmt(length)} / {fmt(w)})", pd_far, "psf", ref,
        )  # fmt: skip
    return w_on, pd_far


# --- steps: the height with a parapet on the upper roof ---------------------------------


def log_step_height(step, log: StepLog | None, ref: str) -> float:
    """The step height h [ft], with a step record where a parapet on the upper roof adds to it."""
    h = step.step_height
    if log is not None and step.upper_parapet is not None:
        log.add(
            "h",
            "height of the step to the top of the parapet on the upper roof",
            "h = height + upper_parapet",
            f"h = {fmt(step.height)} + {fmt(step.upper_parapet)}",
            h,
            "ft",
            ref,
        )
    return h


# --- two drifts at an inside corner -------------------------------------------------


def inside_corners(roof: Roof, labels, cases: list, clauses: Clauses) -> None:
    """Where a step or parapet ``meets`` another at an inside corner, note how the drifts combine.

    The governing drift of each place (its largest pd) gets an entry in
    ``inside_corners``: the other place, the overlap of the two drifts (this
    drift's width by the other's), the peak surcharge there and which drift
    gives it.  Reading: the drift provisions work each drift on its own and
    add each to the balanced load; two drifts that meet at an inside corner
    are not added to each other -- where they overlap, the larger of the two
    surcharges governs at each point (common practice, as the commentary to
    the drift provisions is remembered; from memory).  A place whose drift
    is not required (or not computed) leaves the other's drift alone.
    """
    by_place: dict[str, dict] = {}
    for c in cases:
        if c.get("case") == "drift" and c.get("place"):
            old = by_place.get(c["place"])
            if old is None or c["pd"]["psf"] > old["pd"]["psf"]:
                by_place[c["place"]] = c
    index = {p.name: (k, i) for k, group in (("step", roof.steps), ("parapet", roof.parapets))
             for i, p in enumerate(group)}  # fmt: skip
    pairs: set[frozenset] = set()
    for kind, group in (("step", roof.steps), ("parapet", roof.parapets)):
        for i, part in enumerate(group):
            for other in part.meets:
                ok, oi = index[other]
                pairs.add(frozenset({(kind, i), (ok, oi)}))
    for pair in sorted(pairs, key=sorted):
        a, b = sorted(pair)
        ca, cb = (by_place.get(f"{k}[{i}]") for k, i in (a, b))
        for this, that, mine, theirs in ((a, b, ca, cb), (b, a, cb, ca)):
            if mine is None:
                continue
            entry = {"meets": labels[that].plain}
            if theirs is None:
                entry["note"] = f"the other place has no drift: this drift alone ({clauses.corner})"
            else:
                pd_this, pd_that = mine["pd"]["psf"], theirs["pd"]["psf"]
                gov = this if pd_this >= pd_that else that
                entry.update(
                    overlap_this=mine["w"],
                    overlap_other=theirs["w"],
                    peak_surcharge=load_json(max(pd_this, pd_that)),
                    peak_total=load_json(mine["balanced"]["psf"] + max(pd_this, pd_that)),
                    governs=labels[gov].plain,
                    note=(
                        f"in the {fmt(mine['w']['ft'])} ft by {fmt(theirs['w']['ft'])} ft overlap "
                        "at the corner the larger of the two drift surcharges governs at each "
                        f"point; the two are not added ({clauses.corner})"
                    ),
                )
            mine.setdefault("inside_corners", []).append(entry)
            mine["note"] = join_notes(mine.get("note", ""), f"inside corner with "
                                      f"{labels[that].quoted}: {entry['note']}")  # fmt: skip
