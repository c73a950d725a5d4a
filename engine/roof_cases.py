"""The load-case records of a roof and the loops over its places, shared by the editions.

Both ASCE editions neve has build their load cases alike: one record per case
(:func:`case_record`), the unbalanced cases of a gable or hip roof for the
wind from each side, sliding snow per step, the ice dam and partial loading,
and (in :mod:`neve.engine.drift_cases`) one drift case per parapet and side of
a projection.  What differs
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


# --- steps: existing lower roofs -----------------------------------------------------


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
