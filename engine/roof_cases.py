"""The load-case records of a roof and the loops over its places, shared by the editions.

Both ASCE editions neve has build their load cases alike: one record per case
(:func:`case_record`), one drift case per step, parapet and side of a
projection, the unbalanced cases of a gable or hip roof for the wind from each
side, sliding snow per step, the ice dam and partial loading.  What differs
between editions -- the provision functions and the clause each step and
reason cites -- is handed in by the edition's ``cases`` module: callables that
work one drift or one unbalanced load, and a :class:`Clauses` of its clause
strings (clauses live in the editions' folders; none is written here).

Names: each place (step, parapet, projection) is named by its ``name``; a
name used by more than one place of the roof gets the place's entry after it
(``'north' (parapet[1])``), so that every case of a roof has a name of its
own.  Every drift and sliding case also carries ``place`` (``step[0]``,
``parapet[1]``, ``projection[0]``).
"""

from __future__ import annotations

from collections.abc import Callable, Sequence
from dataclasses import dataclass

from neve.engine.format import pitch_text
from neve.engine.roof_spec import Roof
from neve.engine.steps import StepLog, fmt
from neve.engine.units import KNM3_PER_PCF, length_json, line_load_json, load_json

#: what each case may not be combined with (the same in both editions)
NOT_WITH = {
    "balanced": "",
    "minimum": "drift, sliding, unbalanced, partial, rain-on-snow",
    "unbalanced": "minimum, rain-on-snow, sliding",
    "drift": "minimum, rain-on-snow, sliding",
    "sliding": "minimum, rain-on-snow, drift, unbalanced, partial",
    "partial": "minimum, rain-on-snow, sliding",
    "ice_dam": "all other snow cases (dead load only)",
}

#: the reason of an unbalanced case not computed for want of W
EAVE_TO_RIDGE_REASON = (
    "not computed: needs the eave-to-ridge distance W (eave_to_ridge, --eave-to-ridge)"
)


@dataclass(frozen=True)
class Clauses:
    """The clause strings an edition's cases cite, each with the edition's title.

    ``unbalanced``: hip and gable unbalanced loads; ``step``: drifts on a lower
    roof; ``adjacent``: adjacent structures; ``obstruction``: parapets and
    projections; ``sliding``; ``ice_dam``; ``partial``; ``existing``: existing
    roofs beside new, higher structures; ``corner``: what neve cites for two
    drifts meeting at an inside corner.  Each is the clause alone for the
    reasons and, with the edition, the ``ref`` of the steps: see :meth:`full`.
    """

    edition: str
    unbalanced: str
    step: str
    adjacent: str
    obstruction: str
    sliding: str
    ice_dam: str
    partial: str
    existing: str
    corner: str

    def full(self, name: str) -> str:
        """``<edition> <clause>`` for a step record's ``ref``."""
        return f"{self.edition} {getattr(self, name)}"


def density_json(gamma: float) -> dict:
    return {"pcf": round(gamma, 3), "kN/m3": round(gamma * KNM3_PER_PCF, 4)}


def case_record(kind: str, name: str, log: StepLog, **values) -> dict:
    """One load case: ``case``, ``name``, its values, ``not_combined_with`` and ``steps``."""
    out = {"case": kind, "name": name}
    out.update(values)
    out["not_combined_with"] = NOT_WITH[kind]
    out["steps"] = log.to_list()
    return out


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


# --- names ----------------------------------------------------------------------------


@dataclass(frozen=True)
class Label:
    """How a place is named: ``quoted`` in case names, ``plain`` in ``not_required`` entries."""

    quoted: str
    plain: str


def place_labels(roof: Roof) -> dict[tuple[str, int], Label]:
    """How each place is named in the cases, with its entry where its name repeats.

    Keys are ``(kind, index)``: ``("step", 0)``, ``("parapet", 1)`` ...

    >>> from neve.engine.roof_spec import Roof
    >>> r = Roof.from_mapping({"parapet": [{"name": "north", "height": "3ft",
    ...     "upwind_length": "90ft"}, {"name": "north", "height": "3ft", "upwind_length": "40ft"}]})
    >>> [(k, v.quoted, v.plain) for k, v in place_labels(r).items()][1]
    (('parapet', 1), "'north' (parapet[1])", 'north (parapet[1])')
    """
    parts = [
        (kind, i, p)
        for kind, group in (
            ("step", roof.steps),
            ("parapet", roof.parapets),
            ("projection", roof.projections),
        )  # fmt: skip
        for i, p in enumerate(group)
    ]
    names = [p.name for _, _, p in parts]
    out = {}
    for kind, i, p in parts:
        entry = f" ({kind}[{i}])" if names.count(p.name) > 1 else ""
        out[(kind, i)] = Label(f"'{p.name}'{entry}", f"{p.name}{entry}")
    return out


# --- unbalanced loads of gable and hip roofs ----------------------------------------


def unbalanced_cases(
    roof: Roof,
    *,
    narrow: Callable[[StepLog], dict],
    general: Callable[[float, StepLog], dict] | None,
    narrow_w: float,
    clauses: Clauses,
    cases: list,
    skipped: list,
    flags: list,
    required: bool,
    general_missing: tuple[str, str] | None = None,
) -> None:
    """The unbalanced cases of a gable or hip roof, for the wind from each side.

    Parameters
    ----------
    narrow : callable
        ``narrow(log)``: the edition's narrow-roof case (W <= ``narrow_w``
        with simply supported prismatic members).
    general : callable or None
        ``general(w_windward, log)``: the edition's general case with the
        windward side's W [ft] as fetch; None where it cannot be worked
        (``general_missing`` then gives its ``(reason, flag)``).
    required : bool
        Whether the edition requires unbalanced loads for this roof.

    Notes
    -----
    A symmetric roof (one W) gets the cases it always had, one per method.
    An asymmetric roof (two W) gets each method for the wind from side A
    and from side B: the windward side's W is the fetch of the surcharge,
    the surcharge lies on the other side, and the case whose leeward peak
    (ps plus surcharge) is larger is named as governing (``governing``);
    both directions stay cases to check.  Without W the cases are listed as
    not computed, with the flag ``eave_to_ridge_needed``.
    """
    if not required:
        why = (
            f"{roof.shape} roofs have no hip/gable unbalanced case"
            if roof.shape not in ("gable", "hip")
            else f"slope {pitch_text(roof.slope)} is outside 1/2 on 12 to 7 on 12"
        )
        skipped.append({"case": "unbalanced", "reason": f"{why} ({clauses.unbalanced})"})
        return
    if roof.eave_to_ridge is None:
        flags.append("eave_to_ridge_needed")
        skipped.append(
            {"case": "unbalanced", "reason": f"{EAVE_TO_RIDGE_REASON} ({clauses.unbalanced})"}
        )
        return
    sides = roof.eave_to_ridge_sides
    winds = [(None, roof.eave_to_ridge, roof.eave_to_ridge)]
    if sides is not None:
        winds = [("A", sides[0], sides[1]), ("B", sides[1], sides[0])]
    mine: list[dict] = []
    for side, w_wind, w_lee in winds:
        narrow_roof = w_wind <= narrow_w
        methods = []
        if narrow_roof and roof.prismatic is not False:
            methods.append("narrow")
        if not narrow_roof or roof.prismatic is not True:
            methods.append("general")
        if narrow_roof and roof.prismatic is None:
            flags.append("members_unstated")
        for m in methods:
            if m == "general" and general is None:
                reason, flag = general_missing or ("not computed", "")
                if flag:
                    flags.append(flag)
                name = "general method" + (f", wind from side {side}" if side else "")
                skipped.append(
                    {
                        "case": "unbalanced",
                        "name": name,
                        "reason": f"{reason} ({clauses.unbalanced})",
                    }
                )
                continue
            log = StepLog()
            if m == "narrow":
                v = narrow(log)
                name = "unbalanced, W <= 20 ft with simply supported prismatic members"
            else:
                v = general(w_wind, log)
                name = "unbalanced, windward 0.3 ps and leeward ps plus surcharge"
            extra: dict = {}
            if side is not None:
                other = "B" if side == "A" else "A"
                name = f"{name}, wind from side {side} onto side {other}"
                extra = {
                    "wind_from": side,
                    "windward_eave_to_ridge": length_json(w_wind),
                    "leeward_eave_to_ridge": length_json(w_lee),
                    "governing": False,
                    "note": _side_note(v, side, other, w_wind, w_lee),
                }
            case = case_record(
                "unbalanced",
                name,
                log,
                method=m,
                windward=load_json(v["windward"]),
                leeward=load_json(v["leeward"]),
                surcharge=load_json(v["surcharge"]),
                surcharge_extent=length_json(v["surcharge_extent"]),
                leeward_peak=load_json(v["leeward"] + v["surcharge"]),
                **extra,
            )
            cases.append(case)
            mine.append(case)
    if sides is not None and mine:
        _name_governing(mine)


def _side_note(v: dict, side: str, other: str, w_wind: float, w_lee: float) -> str:
    text = (
        f"wind from side {side}: side {side} (W = {fmt(w_wind)} ft) is windward and its W the "
        f"fetch; the load of side {other} (W = {fmt(w_lee)} ft) is the leeward one"
    )
    if v["surcharge_extent"] > w_lee:
        text += (
            f"; the surcharge would reach {fmt(v['surcharge_extent'])} ft from the ridge, "
            f"beyond side {other}'s eave: it ends at the eave"
        )
    return text


def _name_governing(mine: list[dict]) -> None:
    """Mark the case with the larger leeward peak (then the larger surcharge resultant)."""

    def key(c):
        ext = min(c["surcharge_extent"]["ft"], c["leeward_eave_to_ridge"]["ft"])
        return (c["leeward_peak"]["psf"], c["surcharge"]["psf"] * ext)

    best = max(mine, key=key)
    best["governing"] = True
    best["name"] += " (governs)"
    best["note"] += (
        "; governs: the largest leeward peak of the cases of both wind directions (check all)"
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


# --- steps: the height with a parapet on the upper roof, existing lower roofs -------


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


def existing_note(step, clauses: Clauses, what: str = "drift") -> str:
    """The note of a case on an existing lower roof beside a new, higher structure."""
    if step.lower_roof != "existing":
        return ""
    near = (
        "; the higher structure is within 20 ft: the owners of this existing roof are to be "
        "told of the possible increase"
        if step.separation < 20.0
        else ""
    )
    return (
        f"existing lower roof beside a new, higher structure: this {what} is the increase of "
        f"its snow load, for which the existing roof is to be evaluated ({clauses.existing}){near}"
    )


def join_notes(*notes: str) -> str:
    return "; ".join(n for n in notes if n)


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


# --- ice dams and partial loads -----------------------------------------------------


def ice_dam_case(pf, applies: bool, dam_load: Callable[[StepLog], float], roof: Roof,
                 clauses: Clauses, cases, skipped) -> None:  # fmt: skip
    """The ice dam load on the overhang, where the edition's conditions make it apply."""
    if roof.overhang is None:
        return
    if pf <= 0:
        skipped.append({"case": "ice_dam", "reason": "pf = 0: no snow on the roof"})
        return
    if not applies:
        skipped.append(
            {
                "case": "ice_dam",
                "reason": "cold roof, or R-value at or above the limit for its ventilation "
                f"({clauses.ice_dam})",
            }
        )
        return
    log = StepLog()
    p = float(dam_load(log))
    cases.append(
        case_record(
            "ice_dam",
            "ice dam and icicles on the overhang",
            log,
            load=load_json(p),
            overhang=length_json(roof.overhang),
        )
    )


def partial_case(v: dict, exempt: bool, log: StepLog, clauses: Clauses, cases) -> None:
    """Partial loading of continuous members from the edition's loads ``v`` (``full``, ``half``)."""
    note = (
        "for continuous members; members spanning perpendicular to the ridge of this gable "
        f"roof are exempt ({clauses.partial})"
        if exempt
        else "for continuous beams and other members where unloading a span increases the "
        f"effect ({clauses.partial})"
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


# --- sliding snow -------------------------------------------------------------------


def sliding_cases(
    pf: float,
    ps: float,
    roof: Roof,
    *,
    upper_pf: Callable[[object, StepLog], float],
    slide: Callable[..., dict],
    required: Callable[[float, str], bool],
    clauses: Clauses,
    labels,
    cases: list,
    skipped: list,
    need_w: Callable[[int], None],
) -> None:
    """Sliding snow from each step's upper roof onto this roof.

    ``upper_pf(step, log)`` gives the upper roof's pf (given, from its own
    factors, or this roof's), ``slide`` is the edition's sliding load,
    ``required(slope, surface)`` its slope thresholds, and ``need_w(i)``
    raises the edition's error for a step without its upper W.
    """
    for i, st in enumerate(roof.steps):
        label, place = labels[("step", i)], f"step[{i}]"
        entry = {"case": "sliding", "name": label.plain, "place": place}
        if pf <= 0:
            skipped.append(dict(entry, reason="pf = 0: no snow to slide"))
            continue
        if st.upper_slope is None or not st.upper_slides_toward:
            skipped.append(dict(entry, reason="upper roof slope toward this roof not given"))
            continue
        if not bool(required(st.upper_slope, st.upper_surface)):
            limit = "1/4 on 12" if st.upper_surface == "slippery" else "2 on 12"
            skipped.append(
                dict(
                    entry,
                    reason=f"upper roof slope {pitch_text(st.upper_slope)} is not above {limit} "
                    f"({clauses.sliding})",
                )
            )
            continue
        if st.upper_eave_to_ridge is None:
            need_w(i)
        log = StepLog()
        pf_up = upper_pf(st, log)
        v = slide(pf_up, st.upper_eave_to_ridge, st.lower_length, st.separation, st.height, log)
        if not v["required"]:
            skipped.append(dict(entry, reason=f"{v['reason']} ({clauses.sliding})"))
            continue
        note = join_notes(
            "a parapet on the upper roof may hold the snow back; the sliding load is given "
            "all the same (conservative)"
            if st.upper_parapet is not None
            else "",
            existing_note(st, clauses, "sliding load"),
        )
        extra = {"note": note} if note else {}
        cases.append(
            case_record(
                "sliding",
                f"sliding snow from {label.quoted}",
                log,
                load=load_json(v["load"]),
                line_load=line_load_json(v["line_load"]),
                extent=length_json(v["extent"]),
                balanced=load_json(ps),
                total=load_json(ps + v["load"]),
                place=place,
                **extra,
            )
        )


def upper_factor_steps(st, mine: dict, names: Sequence[str], log: StepLog, refs: dict) -> dict:
    """The upper roof's factors: its own where given, else this roof's, each with a step.

    ``mine``: this roof's factors by name (``Ce``, ``Ct``, ``Is``); ``names``:
    the factors the edition's pf takes; ``refs``: the table each is read from.
    """
    out = {}
    given = st.upper_factors
    for k in names:
        value = given.get(k, mine[k])
        how = "given for the upper roof" if k in given else "not given: this roof's"
        log.add(f"{k}_upper", f"{k} of the upper roof ({how})", f"{k} of the upper roof",
                fmt(value), value, "-", refs[k])  # fmt: skip
        out[k] = value
    return out
