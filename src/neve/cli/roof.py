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
    from neve.engine.roof import analyze_roof
    from neve.engine.standards import get_standard

    std = get_standard(standard)
    ground = _ground_load(std, pg, sk)
    if w2 is not None and "w2" not in std.quantities:
        raise InputError(
            "w2",
            f"{std.title} takes no winter wind parameter",
            "--w2 only with a standard that uses W2: " + ", ".join(s for s in _w2_standards()),
        )
    roof_ = roof_from_options(kwargs) or Roof.from_mapping({})
    result = analyze_roof(ground, roof_, standard=std, w2=w2)
    data = result.to_json()
    if fmt == "json":
        click.echo(dumps(data, indent=2))
    else:
        shown = dict(data)
        if "Is" in shown["factors"] and shown["factors"]["Is"] is None:  # ASCE 7-22: no Is
            shown["factors"] = {**shown["factors"], "Is": "none"}
        text = roof_text(shown, show_steps=not no_steps, pitch=roof_.slope_pitch)
        extra = _extra_text(data)
        click.echo(printable(text + ("\n\n" + extra if extra else "")))


def _ground_load(std, pg, sk) -> float:
    """The ground snow load the standard takes, in its load unit: --pg (psf) or --sk (kPa).

    The option of the other quantity, or neither, exits 2 naming what the standard takes.
    """
    from neve.engine.units import psf_to_kpa

    wanted = std.quantities[0]
    given = {"pg": pg, "sk": sk}
    for name, value in given.items():
        if value is not None and name != wanted:
            raise InputError(
                name, f"{std.title} takes no {name}: its ground snow load is {wanted}",
                f"--{wanted} with a load and its unit",
            )  # fmt: skip
    if given.get(wanted) is None:
        raise InputError(wanted, f"missing: {std.title} needs the ground snow load {wanted}",
                         f"--{wanted} with a load and its unit, e.g. "
                         + ("0.65kPa" if wanted == "sk" else "35psf"))  # fmt: skip
    value = parse_pg(given[wanted], wanted)
    return psf_to_kpa(value) if std.units.get("load") == "kPa" else value


def _w2_standards() -> list[str]:
    from neve.engine.standards import standards

    return [s.id for s in standards() if "w2" in s.quantities]
