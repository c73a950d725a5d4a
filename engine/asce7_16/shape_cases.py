"""The load cases of curved, dome and multi-span roofs (ASCE 7-16; issue 12).

The one hook through which :mod:`neve.engine.asce7_16.analysis` reaches the
provisions of :mod:`.curved` and :mod:`.multispan`; it leaves the plane-roof
builders of :mod:`.cases` as they are.  Three entry points, each called from
one delimited place in ``analysis``:

* :func:`uniform_cs` (in ``_uniform``): Cs of the roof's uniform load: 1 at
  the crown of a curved roof or dome (its largest balanced load), 1 for a
  multi-span roof whatever the slope;
* :func:`has_more_cases` (in ``screening_flags``): whether the roof has an
  unbalanced case that screening's uniform loads leave out;
* :func:`add_cases` (at the end of ``analyze_roof``): the balanced load along
  a curved roof or dome (added to the balanced case), its unbalanced case,
  a dome's, or a multi-span roof's valley case, or why none is required.

Case records (``docs/contract.md``): the balanced case of a curved roof or
dome gets ``method`` ``"curved"`` / ``"dome"`` and the loads at its points;
the unbalanced cases are ``case = "unbalanced"`` with ``method`` ``"curved"``,
``"dome"`` or ``"sawtooth"``.
"""

from __future__ import annotations

from neve.engine.asce7_16 import STANDARD, curved, multispan, slope
from neve.engine.asce7_16.cases import case_record
from neve.engine.format import slope_text
from neve.engine.roof_shapes import CURVED_SHAPES, MULTISPAN_SHAPES, roof_arc
from neve.engine.steps import StepLog
from neve.engine.units import KNM3_PER_PCF, length_json, load_json

#: the shapes this hook works
SHAPES = (*CURVED_SHAPES, *MULTISPAN_SHAPES)
#: the provision keys of the new cases (``Standard.case_ref`` reads ``case.<kind>.<method>``)
PROVISIONS = {
    "case.balanced.curved": "Sec. 7.4.3, Fig. 7.4-2",
    "case.balanced.dome": "Sec. 7.4.3, Fig. 7.4-2",
    "case.unbalanced.curved": "Sec. 7.6.2, Fig. 7.4-2",
    "case.unbalanced.dome": "Sec. 7.6.4, 7.6.2",
    "case.unbalanced.sawtooth": "Sec. 7.6.3",
    "factor.Cs.sawtooth": "Sec. 7.4.4",
}


def uniform_cs(roof, log: StepLog | None) -> float:
    """Cs of the uniform load of a curved roof, dome (at the crown) or multi-span roof."""
    if roof.shape in CURVED_SHAPES:
        return curved.crown_cs(log)
    return multispan.uniform_cs(log)


def has_more_cases(roof) -> bool:
    """Whether the roof has an unbalanced case beyond the uniform loads (screening)."""
    if roof.shape == "dome":
        return True
    if roof.shape == "curved":
        return curved.unbalanced_required(roof_arc(roof))
    if roof.shape in MULTISPAN_SHAPES:
        return multispan.unbalanced_required(roof.slope)
    return False


def _slippery(roof, ct) -> bool:
    allowed, _ = slope.slippery_line_allowed(
        roof.surface, ct, roof.unobstructed, roof.ventilated, roof.r_value
    )
    return allowed


def _insert_at(cases: list) -> int:
    """Where the shape's unbalanced case goes: after the uniform cases (balanced, minimum)."""
    i = 0
    while i < len(cases) and cases[i]["case"] in ("balanced", "minimum"):
        i += 1
    return i


def _curved_values(v: dict, prefix: str, arc) -> dict:
    keys = ("crown", "30", "70", "eave") if prefix else ("crown", "at_30", "at_70", "eave")
    out = {}
    for key in keys:
        name = f"{prefix}{key}"
        out[name] = load_json(v[name]) if v.get(name) is not None else None
    out["x_30"] = length_json(v["x_30"])
    out["x_70"] = length_json(v["x_70"])
    out["half_chord"] = length_json(arc.half_chord)
    out["rise"] = length_json(arc.rise)
    out["eave_slope_deg"] = round(arc.eave_slope, 3)
    out["eave_condition"] = f"{v['condition']}: {curved.EAVE_CONDITIONS_FIG_7_4_2[v['condition']]}"
    return out


def _curved_cases(pf, factors, roof, cases, skipped, flags) -> None:
    arc = roof_arc(roof)
    ct, ce = float(factors["Ct"]), float(factors["Ce"])
    slippery = _slippery(roof, ct)
    cond = curved.eave_condition(arc.eave_slope)
    if cond >= 2 and roof.eave_abutted is None:
        flags.append("eave_abutment_unstated")
    word = "dome" if roof.shape == "dome" else "curved roof"
    # the balanced load along the roof, added to the balanced case
    bal = next((c for c in cases if c["case"] == "balanced"), None)
    if bal is not None:
        blog = StepLog()
        v = curved.balanced(arc, pf, ct, slippery, roof.eave_abutted, blog)
        bal["method"] = "dome" if roof.shape == "dome" else "curved"
        bal["name"] = (f"balanced snow load on the {word}, largest at the crown; Cs from "
                       "the tangent slope along the roof") + (
            " with rain-on-snow surcharge" if "rain-on-snow" in bal["name"] else "")  # fmt: skip
        values = _curved_values(v, "", arc)
        steps = bal.pop("steps")
        tail = {k: bal.pop(k) for k in ("not_combined_with",)}
        bal.update(values)
        bal.update(tail)
        bal["steps"] = steps + blog.to_list()
    # the minimum load of a curved roof: by the eave-to-crown angle
    for item in list(skipped):
        if item["case"] == "minimum":
            item["reason"] = (f"the line from the eave to the crown rises {slope_text(roof.slope)},"
                              " not under 10\u00b0 (Sec. 7.3.4)")  # fmt: skip
        if item["case"] == "unbalanced" and "hip/gable" in item["reason"]:
            skipped.remove(item)
    log = StepLog()
    if roof.shape == "curved" and not curved.unbalanced_required(arc):
        line = curved.unbalanced_line(arc)
        skipped.append({"case": "unbalanced", "name": "curved roof",
                        "reason": f"the line from the eave (or 70\u00b0 point) to the crown "
                        f"rises {slope_text(line)}, outside 10\u00b0 to 60\u00b0 (Sec. 7.6.2)"})  # fmt: skip
        return
    v = curved.unbalanced(arc, pf, ce, ct, slippery, roof.eave_abutted, log)
    values = _curved_values(v, "leeward_", arc)
    extra: dict = {}
    if roof.shape == "dome":
        sectors = curved.dome_sectors(log)
        extra = {"sector_deg": sectors["full"], "taper_deg": sectors["taper"],
                 "unloaded_deg": sectors["unloaded"]}  # fmt: skip
        line = curved.unbalanced_line(arc)
        lo, hi = curved.UNBALANCED_LINE_DEG
        note = ("on the downwind 90\u00b0 sector in plan, falling to zero over 22.5\u00b0 on "
                "each side; none on the upwind 225\u00b0 (Sec. 7.6.4)")  # fmt: skip
        if not lo <= line <= hi:
            note += (f"; applied although a curved roof of this profile (line to the crown "
                     f"{slope_text(line)}) would be exempt (Sec. 7.6.2): read conservatively")  # fmt: skip
        name = "unbalanced, dome: curved-roof loads on the downwind sector"
    else:
        note = "windward side free of snow; leeward linear between the points (Fig. 7.4-2)"
        name = "unbalanced, curved roof: windward free, leeward by the eave slope"
    note += (
        f"; eave slope {slope_text(arc.eave_slope)}: condition {cond}, "
        f"{curved.EAVE_CONDITIONS_FIG_7_4_2[cond]}"
    )
    if cond >= 2:
        held = roof.eave_abutted is not False
        note += ("; not reduced from the 30\u00b0 point to the eave (ground or a roof abuts it"
                 + (")" if roof.eave_abutted else ": not stated, taken so)") if held
                 else "; eave clear of ground and other roofs")  # fmt: skip
    case = case_record("unbalanced", name, log, method=bal["method"] if bal else roof.shape,
                       windward=load_json(v["windward"]), **values, **extra, note=note)  # fmt: skip
    cases.insert(_insert_at(cases), case)


def _multispan_cases(pg, pf, factors, roof, cases, skipped) -> None:
    for item in list(skipped):
        if item["case"] == "unbalanced" and "hip/gable" in item["reason"]:
            skipped.remove(item)
    if not multispan.unbalanced_required(roof.slope):
        skipped.append({"case": "unbalanced", "name": "valleys",
                        "reason": multispan.threshold_text(roof.slope)})  # fmt: skip
        return
    log = StepLog()
    v = multispan.valley_loads(pg, pf, float(factors["Ce"]), roof.ridge_height, log)
    note = ("from the ridge to the valley, linear; in every valley"
            + ("" if roof.spans is None else f" of the {roof.spans} spans")
            + ("; limited: the snow surface over the valley no higher than over the ridge"
               if v["governs"] == "ridge height" else ""))  # fmt: skip
    case = case_record(
        "unbalanced",
        "unbalanced, multi-span roof: 0.5 pf at the ridge to the valley load",
        log,
        method="sawtooth",
        ridge=load_json(v["ridge"]),
        valley=load_json(v["valley"]),
        valley_unlimited=load_json(v["valley_unlimited"]),
        valley_limit=load_json(v["valley_limit"]),
        governs=v["governs"],
        ridge_height=length_json(roof.ridge_height),
        ridge_to_valley=length_json(roof.eave_to_ridge),
        h_ridge=length_json(v["h_ridge"]),
        h_valley=length_json(v["h_valley"]),
        gamma={"pcf": round(v["gamma"], 3), "kN/m3": round(v["gamma"] * KNM3_PER_PCF, 4)},
        spans=roof.spans,
        note=note,
    )
    cases.insert(_insert_at(cases), case)


def add_cases(pg, pf, factors, roof, cases, skipped, flags) -> None:
    """Add the cases of a curved, dome or multi-span roof to ``cases`` (else nothing).

    Parameters
    ----------
    pg, pf : float
        Ground and flat roof snow loads [psf].
    factors : dict
        The roof's factors (``Ce``, ``Ct``).
    roof : Roof
        The roof.
    cases, skipped, flags : list
        The result's cases, the cases not required (with reasons) and flags,
        appended to (and the balanced case completed) in place.

    References
    ----------
    ASCE 7-16 Sec. 7.4.3, 7.4.4, 7.6.2, 7.6.3, 7.6.4, Fig. 7.4-2.
    """
    if roof.shape in CURVED_SHAPES:
        _curved_cases(float(pf), factors, roof, cases, skipped, flags)
    elif roof.shape in MULTISPAN_SHAPES:
        _multispan_cases(pg, float(pf), factors, roof, cases, skipped)


__all__ = ["PROVISIONS", "SHAPES", "STANDARD", "add_cases", "has_more_cases", "uniform_cs"]
