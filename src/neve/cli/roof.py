"""``neve roof``: the roof snow load cases of a standard (``--standard``) for a given ground load."""

from __future__ import annotations

import click

from neve.cli.options import (
    format_option,
    pg_option,
    roof_from_options,
    roof_options,
    standard_option,
    w2_option,
)
from neve.engine.errors import InputError
from neve.engine.jsonsafe import dumps
from neve.engine.printable import printable
from neve.engine.roof_spec import Roof, parse_pg
from neve.engine.roof_text import roof_text  # noqa: F401  (re-exported: its old home)


def _extra_text(data: dict) -> str:
    """Lines for the keys a standard adds (ASCE 7-22: W2 and the seismic weight note)."""
    lines = []
    if "w2" in data:
        w2 = data["w2"]
        lines.append(f"W2 (winter wind parameter) = {'not given' if w2 is None else w2}")
    seismic = data.get("seismic_weight")
    if seismic:
        lines.append(f"Seismic weight [{seismic['ref']}]: {seismic['note']}")
    return "\n".join(lines)


@click.command("roof")
@pg_option
@w2_option
@roof_options
@format_option
@click.option("--no-steps", is_flag=True, help="Text output without the step records.")
@standard_option
def roof(pg, w2, fmt, no_steps, standard, **kwargs):
    """Roof snow load cases for a ground snow load --pg (--standard; default ASCE 7-16 Chapter 7).

    For ASCE 7-22 (--standard asce7-22) give the pg of the building's risk
    category and the site's winter wind parameter --w2.
    """
    from neve.engine.roof import analyze_roof
    from neve.engine.standards import get_standard

    std = get_standard(standard)
    if w2 is not None and "w2" not in std.quantities:
        raise InputError(
            "w2",
            f"{std.title} takes no winter wind parameter",
            "--w2 only with a standard that uses W2: " + ", ".join(s for s in _w2_standards()),
        )
    pg_psf = parse_pg(pg, "pg")
    roof_ = roof_from_options(kwargs) or Roof.from_mapping({})
    result = analyze_roof(pg_psf, roof_, standard=std, w2=w2)
    data = result.to_json()
    if fmt == "json":
        click.echo(dumps(data, indent=2))
    else:
        shown = dict(data)
        if shown["factors"].get("Is") is None:  # ASCE 7-22: no snow importance factor
            shown["factors"] = {**shown["factors"], "Is": "none"}
        text = roof_text(shown, show_steps=not no_steps, pitch=roof_.slope_pitch)
        extra = _extra_text(data)
        click.echo(printable(text + ("\n\n" + extra if extra else "")))


def _w2_standards() -> list[str]:
    from neve.engine.standards import standards

    return [s.id for s in standards() if "w2" in s.quantities]
