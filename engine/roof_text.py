"""The readable summary of a roof result (``neve roof``, and the roof part of ``neve site``).

Library code: it takes the JSON object of :meth:`neve.engine.roof.RoofResult.to_json`
and returns text; it prints nothing. Quantities go through the one formatter,
:mod:`neve.engine.format`. Text a user or a layer supplied (names, notes) is
kept as data; the caller passes the whole through
:func:`neve.engine.printable.printable` before a terminal shows it.
"""

from __future__ import annotations

from collections.abc import Mapping

from neve.engine.format import is_quantity, quantity_text, slope_text

#: keys of a case that are not values to list under it
_CASE_META = {"case", "name", "steps", "not_combined_with", "note", "method", "source", "governs"}


def case_values(case: Mapping) -> list[str]:
    """``key = value`` lines of a load case's quantities (and which drift governs)."""
    out = [
        f"{key} = {quantity_text(value)}"
        for key, value in case.items()
        if key not in _CASE_META and is_quantity(value)
    ]
    if case.get("governs"):
        out.append(f"governs = {case['governs']}")
    return out


def _step_line(s: Mapping) -> str:
    value = s["value"]
    value = f"{value:.4g}" if isinstance(value, float) else str(value)
    unit = "" if s["unit"] == "-" else s["unit"]
    detail = s["substituted"] if s["substituted"] != value else s["description"]
    return f"        {s['symbol']:>11} = {value:<8} {unit:<4} {detail}   [{s['ref']}]"


def roof_text(result: Mapping, *, show_steps: bool = True, show_cautions: bool = True) -> str:
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
    """
    f = result["factors"]
    loads = result["loads"]
    roof = result["roof"]
    lines = [
        f"Roof snow loads, {result['standard']}",
        f"  roof: {roof['shape']}, slope {slope_text(roof['slope_deg'])}, "
        f"surface {roof['surface']}, risk category {roof['risk']}",
        f"  pg = {quantity_text(result['pg'])}",
        f"  Ce = {f['Ce']}, Ct = {f['Ct']}, Is = {f['Is']}, Cs = {f['Cs']}",
        f"  pf = {quantity_text(loads['pf'])}   ps = {quantity_text(loads['ps'])}"
        f"   pm = {quantity_text(loads['pm'])}"
        f"   rain-on-snow = {quantity_text(loads['rain_on_snow'])}",
        f"  design uniform load = {quantity_text(result['design_uniform'])}",
        "",
        "Load cases",
    ]
    for case in result["cases"]:
        lines.append(f"  [{case['case']}] {case['name']}")
        lines += [f"      {v}" for v in case_values(case)]
        if case.get("note"):
            lines.append(f"      note: {case['note']}")
        if case.get("not_combined_with"):
            lines.append(f"      not combined with: {case['not_combined_with']}")
        if show_steps:
            lines += [_step_line(s) for s in case["steps"]]
    if result.get("not_required"):
        lines += ["", "Not required"]
        for item in result["not_required"]:
            name = f" '{item['name']}'" if item.get("name") else ""
            lines.append(f"  [{item['case']}]{name}: {item['reason']}")
    lines += ["", "Flags: " + (", ".join(result["flags"]) if result["flags"] else "none")]
    if show_cautions:
        lines += ["", "Cautions"]
        lines += [f"  ! {c}" for c in result["cautions"]]
    return "\n".join(lines)
