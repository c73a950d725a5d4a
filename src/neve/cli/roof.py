"""``neve roof``: the roof snow load cases of a standard (``--standard``) for a given ground load."""

from __future__ import annotations

import click

from neve.cli.options import (
    format_option,
    pg_option,
    roof_from_options,
    roof_options,
    sk_option,
    standard_option,
    w2_option,
)
from neve.engine.jsonsafe import dumps
from neve.engine.printable import printable
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
@sk_option
@w2_option
@roof_options
@format_option
@click.option("--no-steps", is_flag=True, help="Text output without the step records.")
@standard_option
def roof(pg, sk, w2, fmt, no_steps, standard, **kwargs):
    """Roof snow load cases for a ground snow load --pg (--standard; default ASCE 7-16 Chapter 7).

    For ASCE 7-22 (--standard asce7-22) give the pg of the building's risk
    category and the site's winter wind parameter --w2.  For EN 1991-1-3
    (--standard en1991-1-3) give the characteristic ground snow load --sk
    (e.g. 0.65kPa); lengths are best given in m.
    """
    from neve.engine.roof import roof_answer

    data, roof_ = roof_answer(pg, roof_from_options(kwargs), sk=sk, standard=standard, w2=w2)
    if fmt == "json":
        click.echo(dumps(data, indent=2))
    else:
        shown = dict(data)
        if "Is" in shown["factors"] and shown["factors"]["Is"] is None:  # ASCE 7-22: no Is
            shown["factors"] = {**shown["factors"], "Is": "none"}
        text = roof_text(shown, show_steps=not no_steps, pitch=roof_.slope_pitch)
        extra = _extra_text(data)
        click.echo(printable(text + ("\n\n" + extra if extra else "")))
