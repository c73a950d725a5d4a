"""``neve roof``: the roof snow load cases of a standard (``--standard``) for a given ground load."""

from __future__ import annotations

import click

from neve.cli.options import (
    format_option,
    pg_option,
    roof_from_options,
    roof_options,
    standard_option,
)
from neve.engine.jsonsafe import dumps
from neve.engine.printable import printable
from neve.engine.roof_spec import Roof, parse_pg
from neve.engine.roof_text import roof_text  # noqa: F401  (re-exported: its old home)


@click.command("roof")
@pg_option
@roof_options
@format_option
@click.option("--no-steps", is_flag=True, help="Text output without the step records.")
@standard_option
def roof(pg, fmt, no_steps, standard, **kwargs):
    """Roof snow load cases for a ground snow load --pg (--standard; default ASCE 7-16 Chapter 7)."""
    from neve.engine.roof import analyze_roof

    pg_psf = parse_pg(pg, "pg")
    roof_ = roof_from_options(kwargs) or Roof.from_mapping({})
    result = analyze_roof(pg_psf, roof_, standard=standard)
    data = result.to_json()
    if fmt == "json":
        click.echo(dumps(data, indent=2))
    else:
        click.echo(printable(roof_text(data, show_steps=not no_steps)))
