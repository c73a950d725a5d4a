"""The readable summary of a roof result (``neve roof``, and the roof part of ``neve site``).

Library code: it takes the JSON object of :meth:`neve.engine.roof.RoofResult.to_json`
and returns text; it prints nothing. Quantities go through the one formatter,
:mod:`neve.engine.format`. Text a user or a layer supplied (names, notes) is
kept as data; the caller passes the whole through
:func:`neve.engine.printable.printable` before a terminal shows it.
"""

from __future__ import annotations

from collections.abc import Collection, Mapping

from neve.engine.format import is_quantity, quantity_text, significant, slope_text
from neve.engine.roof_shapes import shape_text

#: keys of a case that are not values to list under it
_CASE_META = {"case", "name", "steps", "not_combined_with", "note", "method", "source", "governs",
              "situation", "arrangement", "arrangement_of_slopes"}  # fmt: skip

#: the SI unit shown first, by the unit the contract lists first (results of a
#: standard whose load unit is kPa: EN 1991-1-3)
SI_FIRST = {"psf": "kPa", "ft": "m", "plf": "kN/m", "pcf": "kN/m3"}

#: loads of ``loads`` that apply only under conditions: the key of the load in the cases
#: and the symbol of the step that records it (the engine's JSON: null where it does not
#: apply, while the balanced case holds 0 and the step the value 0)
CONDITIONAL_LOADS: dict[str, str] = {"rain_on_snow": "p_ros"}

#: what a load that does not apply reads as, once, in the summary and its step
NOT_APPLICABLE = "not applicable"


def not_applicable(result: Mapping) -> dict[str, str]:
    """The conditional loads of ``result`` that do not apply: case key -> step symbol.

    A load that does not apply is said to be "not applicable" and never also
    shown as a zero: the summary says so, the cases leave out its zero and its
    step reads "not applicable" beside the conditions it checked.

    >>> not_applicable({"loads": {"rain_on_snow": None}})
    {'rain_on_snow': 'p_ros'}
    >>> not_applicable({"loads": {"rain_on_snow": {"psf": 5.0, "kPa": 0.2394}}})
    {}
    """
    loads = result.get("loads") or {}
    return {k: sym for k, sym in CONDITIONAL_LOADS.items() if k in loads and not loads[k]}


def absent_loads(data: Mapping) -> dict[str, set[str]]:
    """Per edition of a ``neve compare`` object, the conditional loads that do not apply to its roof.

    Shown as "not applicable", never as the zero (or null) the JSON holds for
    them (:func:`neve.engine.roof_text.not_applicable`).
    """
    return {
        r["standard"]: set(not_applicable(r["roof"])) if r.get("roof") else set()
        for r in data["results"]
    }


def not_applicable_here(d: Mapping, sid: str, absent: Mapping) -> bool:
    """Whether edition ``sid``'s value of the compared quantity ``d`` reads "not applicable".

    A load of the roof (``d["case"]`` null) that does not apply, or its zero in a
    case that edition has; an edition without the case shows no value at all.
    """
    if d["quantity"] not in absent[sid]:
        return False
    return d["case"] is None or d["values"].get(sid) is not None


def case_values(case: Mapping, *, leave_out: Collection[str] = ()) -> list[str]:
    """``key = value`` lines of a load case's quantities (and which drift governs).

    ``leave_out``: keys not listed (the loads that do not apply, :func:`not_applicable`).
    """
    out = [
        f"{key} = {quantity_text(value)}"
        for key, value in case.items()
        if key not in _CASE_META and key not in leave_out and is_quantity(value)
    ]
    if case.get("governs"):
        out.append(f"governs = {case['governs']}")
    return out


def step_value_text(step: Mapping, not_applicable_symbols: Collection[str] = ()) -> str:
    """A step's value as shown: three significant figures, or "not applicable".

    >>> step_value_text({"symbol": "hd", "value": 2.19812})
    '2.20'
    >>> step_value_text({"symbol": "p_ros", "value": 0.0}, {"p_ros"})
    'not applicable'
    """
    value = step.get("value")
    if step.get("symbol") in not_applicable_symbols and not value:
        return NOT_APPLICABLE
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return "" if value is None else str(value)
    return significant(value)


def _same_number(text: str, value: object) -> bool:
    try:
        return float(text) == float(value)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return False


def _step_line(s: Mapping, not_applicable_symbols: Collection[str] = ()) -> str:
    value = step_value_text(s, not_applicable_symbols)
    unit = "" if s["unit"] == "-" or value == NOT_APPLICABLE else s["unit"]
    same = s["substituted"] == value or _same_number(s["substituted"], s["value"])
    detail = s["description"] if same else s["substituted"]
    return f"        {s['symbol']:>11} = {value:<8} {unit:<4} {detail}   [{s['ref']}]"


def _factor_text(value: object) -> str:
    """A factor of the summary line: three significant figures; text as it is.

    None (a factor the standard does not have: ASCE 7-22 has no Is) reads ``none``.
    """
    if value is None:
        return "none"
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return str(value)
    return significant(value)


def si_first(result: Mapping) -> bool:
    """Whether a roof result is shown SI first: its standard's load unit is kPa (EN 1991-1-3).

    Asked of the registry by the result's ``standard``; an unknown one: the contract's order.
    """
    from neve.engine.standards import find_standard

    try:
        std = find_standard(str(result.get("standard", "")))
    except Exception:  # a result of no registered standard: shown in the contract's order
        std = None
    return bool(std is not None and std.units.get("load") == "kPa")


def _si(value: object, **kw) -> str:
    """A quantity SI first: ``0.52 kPa (10.9 psf)``, ``6.00 m (19.69 ft)``."""
    first = None
    if isinstance(value, Mapping):
        for a, b in SI_FIRST.items():
            if a in value:
                first = b
    return quantity_text(value, first=first, **kw)  # type: ignore[arg-type]


def _si_case_values(case: Mapping) -> list[str]:
    """``key = value`` lines of a case of an SI-first result: coefficients and quantities."""
    out = []
    for key, value in case.items():
        if key in _CASE_META:
            continue
        if is_quantity(value):
            out.append(f"{key} = {_si(value)}")
        elif isinstance(value, (int, float)) and not isinstance(value, bool):
            out.append(f"{key} = {significant(value)}")
    return out


def _si_roof_text(result: Mapping, show_steps: bool, show_cautions: bool, pitch) -> str:
    """The summary of a result whose ground quantity is ``sk`` (EN 1991-1-3): SI first."""
    roof = result["roof"]
    f = {k: _factor_text(v) for k, v in result["factors"].items()}
    loads = result["loads"]
    na = NOT_APPLICABLE
    slope = slope_text(roof["slope_deg"], pitch=bool(pitch))
    other = roof.get("other_slope_deg")
    if other is not None:
        slope += f", other slope {slope_text(other)}"
    params = result.get("parameters") or {}
    period = result.get("return_period")
    lines = [
        f"Roof snow loads, {result['standard']}",
        f"  roof: {roof['shape']}, slope {slope}, topography "
        f"{roof.get('topography') or 'normal (assumed)'}, snow kept from sliding off: "
        f"{'yes' if roof.get('snow_retained') else 'no'}",
        f"  parameters: {params.get('name')} ({params.get('title')}); source: "
        f"{params.get('source')}",
        f"  design case: {result.get('design_case')}",
        f"  sk = {_si(result['sk'])}"
        + (f"   sn = {_si(result['sn'])} (return period {period['years']:g} years, "
           f"V = {period['cov']:g})" if period else ""),
        "  " + ", ".join(f"{k} = {v}" for k, v in f.items()),
        f"  s = {_si(loads.get('s'))}   sAd = {_si(loads.get('sAd'), missing=na)}",
        f"  design uniform load = {_si(result['design_uniform'])}",
        "",
        "Load cases",
    ]  # fmt: skip
    for case in result["cases"]:
        lines.append(f"  [{case['case']}] {case['name']}  ({case.get('situation', '')})")
        lines += [f"      {v}" for v in _si_case_values(case)]
        if case.get("note"):
            lines.append(f"      note: {case['note']}")
        if case.get("not_combined_with"):
            lines.append(f"      not combined with: {case['not_combined_with']}")
        if show_steps:
            lines += [_step_line(s) for s in case["steps"]]
    return "\n".join(lines + _closing_lines(result, show_cautions))


def roof_text(
    result: Mapping,
    *,
    show_steps: bool = True,
    show_cautions: bool = True,
    pitch: bool | None = None,
) -> str:
    """A readable summary of a roof result's JSON object, with its steps.

    Parameters
    ----------
    result : mapping
        The JSON object of a roof result (``standard``, ``pg``, ``roof``,
        ``factors``, ``loads``, ``cases``, ``not_required``, ``flags``, ``cautions``).
    show_steps : bool
        List every step record under its case.
    show_cautions : bool
        End with the cautions (``neve site`` prints its own).
    pitch : bool, optional
        Show the slope as a rise on 12 with its angle (``6:12 (26.6°)``), as
        where the slope was given as a rise:run; False: the angle (``26.6°``).
        None (not known how it was given): the pitch, which carries the angle too.
    """
    if si_first(result):
        return _si_roof_text(result, show_steps, show_cautions, pitch)
    f = {k: _factor_text(v) for k, v in result["factors"].items()}
    loads = result["loads"]
    roof = result["roof"]
    absent = not_applicable(result)
    slope = slope_text(roof["slope_deg"], pitch=pitch is not False)
    na = NOT_APPLICABLE
    lines = [
        f"Roof snow loads, {result['standard']}",
        f"  roof: {roof['shape']}, slope {slope}, "
        f"surface {roof['surface']}, risk category {roof['risk']}",
        *filter(None, [shape_text(roof)]),  # curved, dome, multi-span roofs (issue 12)
        f"  pg = {quantity_text(result['pg'])}",
        f"  Ce = {f['Ce']}, Ct = {f['Ct']}, Is = {f['Is']}, Cs = {f['Cs']}",
        f"  pf = {quantity_text(loads['pf'])}   ps = {quantity_text(loads['ps'])}"
        f"   pm = {quantity_text(loads['pm'], missing=na)}"
        f"   rain-on-snow = {quantity_text(loads['rain_on_snow'], missing=na)}",
        f"  design uniform load = {quantity_text(result['design_uniform'])}",
        "",
        "Load cases",
    ]
    for case in result["cases"]:
        lines.append(f"  [{case['case']}] {case['name']}")
        lines += [f"      {v}" for v in case_values(case, leave_out=absent)]
        if case.get("note"):
            lines.append(f"      note: {case['note']}")
        if case.get("not_combined_with"):
            lines.append(f"      not combined with: {case['not_combined_with']}")
        if show_steps:
            lines += [_step_line(s, absent.values()) for s in case["steps"]]
    return "\n".join(lines + _closing_lines(result, show_cautions))


def _closing_lines(result: dict, show_cautions: bool) -> list[str]:
    """The end of a roof's text: the cases not required, the flags and the cautions."""
    lines = []
    if result.get("not_required"):
        lines += ["", "Not required"]
        for item in result["not_required"]:
            name = f" '{item['name']}'" if item.get("name") else ""
            lines.append(f"  [{item['case']}]{name}: {item['reason']}")
    lines += ["", "Flags: " + (", ".join(result["flags"]) if result["flags"] else "none")]
    if show_cautions:
        lines += ["", "Cautions"]
        lines += [f"  ! {c}" for c in result["cautions"]]
    return lines
