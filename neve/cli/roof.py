"""``neve roof``: the ASCE 7-16 roof snow load cases for a given ground load."""

from __future__ import annotations

import click

from neve.cli.options import roof_mapping, roof_options
from neve.engine.errors import InputError
from neve.engine.jsonsafe import dumps
from neve.engine.printable import printable
from neve.engine.roof_spec import Roof, parse_pg


def _once(field: str, values: tuple):
    """The single value of an option that must be given once."""
    if len(values) > 1:
        raise InputError(field, f"given {len(values)} times ({', '.join(values)})", "one value")
    return values[0]


def _num(x, spec: str) -> str:
    """A number in ``spec`` format; None (a value that was not finite) shows as n/a."""
    return "n/a" if x is None else format(x, spec)


def _load(v: dict | None) -> str:
    """A load as ``35.0 psf (1.68 kPa)``: psf first, its kPa twin in brackets."""
    if v is None:
        return "n/a"
    return f"{_num(v['psf'], '.1f')} psf ({_num(v['kPa'], '.2f')} kPa)"


def _length(v: dict | None) -> str:
    if v is None:
        return "n/a"
    return f"{_num(v['ft'], '.2f')} ft ({_num(v['m'], '.2f')} m)"


def _case_values(case: dict) -> list[str]:
    skip = {"case", "name", "steps", "not_combined_with", "note", "method", "source", "governs"}
    out = []
    for key, value in case.items():
        if key in skip or not isinstance(value, dict):
            continue
        if "psf" in value:
            out.append(f"{key} = {_load(value)}")
        elif "ft" in value:
            out.append(f"{key} = {_length(value)}")
        elif "plf" in value:
            out.append(
                f"{key} = {_num(value['plf'], '.0f')} plf ({_num(value['kN/m'], '.2f')} kN/m)"
            )
        elif "pcf" in value:
            out.append(f"{key} = {_num(value['pcf'], '.1f')} pcf")
    if case.get("governs"):
        out.append(f"governs = {case['governs']}")
    return out


def roof_text(result: dict, *, show_steps: bool = True, show_cautions: bool = True) -> str:
    """A readable summary of a ``neve roof`` JSON object, with its steps."""
    f = result["factors"]
    loads = result["loads"]
    lines = [
        f"Roof snow loads, {result['standard']}",
        f"  roof: {result['roof']['shape']}, slope {result['roof']['slope_deg']:.2f} deg, "
        f"surface {result['roof']['surface']}, risk category {result['roof']['risk']}",
        f"  pg = {_load(result['pg'])}",
        f"  Ce = {f['Ce']}, Ct = {f['Ct']}, Is = {f['Is']}, Cs = {f['Cs']}",
        f"  pf = {_load(loads['pf'])}   ps = {_load(loads['ps'])}   pm = {_load(loads['pm'])}"
        f"   rain-on-snow = {_load(loads['rain_on_snow'])}",
        f"  design uniform load = {_load(result['design_uniform'])}",
        "",
        "Load cases",
    ]
    for case in result["cases"]:
        lines.append(f"  [{case['case']}] {case['name']}")
        for v in _case_values(case):
            lines.append(f"      {v}")
        if case.get("note"):
            lines.append(f"      note: {case['note']}")
        if case.get("not_combined_with"):
            lines.append(f"      not combined with: {case['not_combined_with']}")
        if show_steps:
            for s in case["steps"]:
                value = s["value"]
                value = f"{value:.4g}" if isinstance(value, float) else str(value)
                unit = "" if s["unit"] == "-" else s["unit"]
                detail = s["substituted"] if s["substituted"] != value else s["description"]
                lines.append(
                    f"        {s['symbol']:>11} = {value:<8} {unit:<4} {detail}   [{s['ref']}]"
                )
    if result.get("not_required"):
        lines.append("")
        lines.append("Not required")
        for item in result["not_required"]:
            name = f" '{item['name']}'" if item.get("name") else ""
            lines.append(f"  [{item['case']}]{name}: {item['reason']}")
    lines.append("")
    lines.append("Flags: " + (", ".join(result["flags"]) if result["flags"] else "none"))
    if show_cautions:
        lines.append("")
        lines.append("Cautions")
        lines.extend(f"  ! {c}" for c in result["cautions"])
    return "\n".join(lines)


@click.command("roof")
@click.option(
    "--pg",
    required=True,
    multiple=True,
    callback=lambda ctx, param, value: _once("pg", value),
    help="Ground snow load with its unit, e.g. 35psf or 1.68kPa.",
)
@roof_options
@click.option(
    "--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True
)
@click.option("--no-steps", is_flag=True, help="Text output without the step records.")
def roof(pg, fmt, no_steps, **kwargs):
    """Roof snow load cases (ASCE 7-16 Chapter 7) for a ground snow load --pg."""
    from neve.engine.roof import analyze_roof

    pg_psf = parse_pg(pg, "pg")
    mapping = roof_mapping(kwargs) or {}
    result = analyze_roof(pg_psf, Roof.from_mapping(mapping)).to_json()
    if fmt == "json":
        click.echo(dumps(result, indent=2))
    else:
        click.echo(printable(roof_text(result, show_steps=not no_steps)))
