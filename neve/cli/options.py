"""Option definitions shared by the CLI commands (one place, as in rasterio).

``roof_options`` adds the ASCE 7-16 roof options of DESIGN.md to a command;
:func:`roof_from_options` turns the parsed values plus an optional ROOF.toml
into an :class:`neve.engine.roof_spec.Roof` (command-line options override the
file), or ``None`` when no roof was described.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

import click

from neve.engine.errors import InputError
from neve.engine.roof_spec import Roof, merge_roof_levels

#: roof option names as they appear in kwargs (and ROOF.toml keys)
ROOF_OPTION_KEYS = (
    "shape", "slope", "surface", "ct", "thermal", "ce", "terrain", "exposure", "risk",
    "eave_to_ridge", "r_value", "ventilated", "unobstructed", "prismatic",
)  # fmt: skip


def _one_answer(ctx, param, values: tuple):
    """A yes/no pair (``--ventilated/--unventilated``) given once, or both ways: refused."""
    if not values:
        return None
    if len(set(values)) > 1:
        yes, no = param.opts[0], param.secondary_opts[0]
        raise InputError(param.name, f"{yes} and {no} given together", f"one of {yes}, {no}")
    return values[0]


def _pair(decl: str, name: str, help_: str):
    """A yes/no option pair; giving both spellings is a contradiction (exit 2)."""
    return click.option(decl, name, default=None, multiple=True, callback=_one_answer, help=help_)


def roof_options(f):
    """Decorate a click command with the roof options and ``--roof ROOF.toml``."""
    opts = [
        click.option(
            "--roof",
            "roof_file",
            type=click.Path(dir_okay=False),
            help="ROOF.toml describing the roof (options below override it).",
        ),
        click.option("--shape", help="Roof shape: flat, monoslope, gable, hip."),
        click.option("--slope", help="Roof slope, e.g. 6:12 or 26.6deg."),
        click.option("--surface", help="Roof surface: slippery or other."),
        click.option("--ct", help="Thermal factor Ct given directly (ASCE 7-16 Table 7.3-2)."),
        click.option(
            "--thermal",
            help="Thermal condition: heated, cold-ventilated, unheated, below-freezing, greenhouse.",
        ),
        click.option("--ce", help="Exposure factor Ce given directly (ASCE 7-16 Table 7.3-1)."),
        click.option("--terrain", help="Surface roughness: B, C, D, above-treeline, treeless."),
        click.option("--exposure", help="Roof exposure: fully, partially, sheltered."),
        click.option("--risk", help="Risk category: I, II, III, IV."),
        click.option(
            "--eave-to-ridge",
            "eave_to_ridge",
            help="Horizontal eave-to-ridge distance W, e.g. 30ft.",
        ),
        click.option(
            "--r-value", "r_value", help="Roof thermal resistance R [ft2.h.F/Btu], e.g. 30."
        ),
        _pair("--ventilated/--unventilated", "ventilated", "Whether the roof is ventilated."),
        _pair(
            "--unobstructed/--obstructed",
            "unobstructed",
            "Whether snow can slide off the eaves unobstructed.",
        ),
        _pair(
            "--prismatic/--non-prismatic",
            "prismatic",
            "Simply supported prismatic members from ridge to eave (Sec. 7.6.1).",
        ),
    ]
    for opt in reversed(opts):
        f = opt(f)
    return f


def read_toml(path: str | Path, field: str) -> dict:
    """Read a TOML file; a missing or malformed file is an InputError naming ``field``.

    The text is UTF-8; a byte-order mark at its start (as some Windows editors
    write) is dropped, since TOML itself does not allow one.
    """
    p = Path(path)
    if not p.is_file():
        raise InputError(field, f"file {str(p)!r} not found", "a path to a TOML file")
    try:
        return tomllib.loads(p.read_text(encoding="utf-8-sig"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(field, f"{str(p)!r} is not valid TOML ({exc})", "a TOML file") from None
    except OSError as exc:
        raise InputError(
            field, f"{str(p)!r} cannot be read ({exc.strerror})", "a readable TOML file"
        ) from None


def roof_mapping(kwargs: dict) -> dict | None:
    """Merge ``--roof`` file content and the roof options into one mapping.

    The options override the file (:func:`neve.engine.roof_spec.merge_roof_levels`):
    ``--ct`` replaces the file's ``thermal``, ``--unventilated`` its
    ``ventilated = true``, and so on.
    """
    data: dict = {}
    if kwargs.get("roof_file"):
        data = read_toml(kwargs["roof_file"], "roof")
        if "profile" in data:
            raise InputError(
                "roof",
                "this file defines profiles; name one in the site file's 'roof' column",
                "a ROOF.toml without [profile.*] tables",
            )
    given = {k: kwargs.get(k) for k in ROOF_OPTION_KEYS if kwargs.get(k) is not None}
    if not data and not given:
        return None
    return merge_roof_levels(data, given)


def roof_from_options(kwargs: dict) -> Roof | None:
    """The roof described by the options and ``--roof`` file, or None if none was."""
    data = roof_mapping(kwargs)
    return None if data is None else Roof.from_mapping(data)


class DemUnitType(click.ParamType):
    """``--dem-units``: one vertical unit (``m``, ``ft``, ``us-ft`` or a longer spelling)."""

    name = "m|ft|us-ft"

    def convert(self, value, param, ctx):
        from neve.geo.site.elevation import canonical_dem_unit

        try:
            return canonical_dem_unit(value)
        except InputError:
            self.fail(
                f"{value!r} is not a vertical unit; accepted: m, ft, us-ft "
                "(also metre, foot, US survey foot)",
                param,
                ctx,
            )


def dem_units_option(f):
    """``--dem-units``, the same choice for every command that takes ``--dem``."""
    return click.option(
        "--dem-units",
        type=DemUnitType(),
        help="Vertical unit of a DEM that does not state one: m, ft, us-ft. Needs --dem; "
        "never overrides the unit the DEM states (a contradiction is refused).",
    )(f)


def elevation_source_option(f):
    """``--elevation-source``: which elevation governs where a given one and the DEM disagree."""
    return click.option(
        "--elevation-source",
        "elevation_source",
        type=click.Choice(["larger", "input"], case_sensitive=False),
        default="larger",
        show_default=True,
        help="Where a given elevation and the DEM differ by more than 15 m: 'larger' lets "
        "the more demanding ground load govern, 'input' the given elevation.",
    )(f)
