"""``neve compare``: one site under two or more editions, side by side (a thin shell).

The site options are ``neve site``'s own (the same click parameters, so one
spelling, type and default); the work is :func:`neve.geo.site.compare.compare_site`,
which runs each edition through ``neve site``'s code path.
"""

from __future__ import annotations

import copy

import click

from neve.cli.options import (
    command_echo,
    roof_file_echo,
    standard_option,
    title_block_from_options,
)
from neve.cli.site import site as _site_command
from neve.engine.errors import InputError
from neve.engine.jsonsafe import dumps
from neve.engine.roof_shapes import SHAPE_KEYS

#: the parameters of ``neve site`` that ``neve compare`` takes as they are
SITE_PARAMS = (
    "at", "address", "elevation", "dem", "dem_units", "elevation_source", "layers",
    "layer_meta", "roof_file", "shape", "slope", "surface", "ct", "thermal", "ce", "terrain", "exposure",
    "risk", "eave_to_ridge", "r_value", "ventilated", "unobstructed", "prismatic",
    "site_name", "project", "package_dir", "overwrite", "fmt", "gazetteer", "geocoder_url",
    "user_agent", "geocoder_timeout", "country", "region",  # issue 14: the offline gazetteer
    "job", "prepared_by", "checked_by", "revision",  # the package's title block (issue 11)
    *SHAPE_KEYS,  # curved, dome and multi-span roofs (issue 12)
)  # fmt: skip
_HELP = {
    "layers": "Zone layer (repeat, most local first); each edition takes the layers whose "
    "sidecar standard it accepts. Default: the embedded, invented DEMO layers of each edition "
    "(never for design).",
    "package_dir": "Write the calculation package of the last --standard, with a comparison "
    "page of every edition, into this folder.",
    "overwrite": "Replace an existing --package folder.",
}


def _params() -> list[click.Parameter]:
    out = []
    for p in _site_command.params:
        if p.name in SITE_PARAMS:
            p = copy.copy(p)
            if p.name in _HELP:
                p.help = _HELP[p.name]
            out.append(p)
    return out


def _run(**kw) -> None:
    """Ground and roof snow loads of one site under two or more editions, side by side.

    Each --standard (give it two or more times) is resolved with its own layers and
    the same roof; every quantity and roof case is listed per edition with the
    difference (last minus first) and the ratio (last / first), and the case that
    sets the governing uniform load in each edition.

    Results are an aid to a licensed design professional; confirm ground snow loads
    with the authority having jurisdiction; flagged sites need a site-specific study.
    """
    from neve.cli.options import roof_from_options
    from neve.cli.site import _check_output
    from neve.geo.site.compare import check_editions, compare_site
    from neve.geo.site.coords import parse_latlon

    chosen = check_editions(kw["standard"] or [])
    if bool(kw["at"]) == bool(kw["address"]):
        raise InputError(
            "at", "give exactly one of --at LAT,LON or --address TEXT", "--at 47.5,-140"
        )
    roof = roof_from_options(kw)
    _check_output(kw["package_dir"], "package", kw["overwrite"], is_dir=True)
    from neve.cli.site import locate_address

    address, located = None, {}
    if kw["at"]:
        lat, lon = parse_latlon(kw["at"])
        given = kw["at"]
    else:  # as neve site: gazetteer or server (exact), else the shipped gazetteer
        lat, lon, address, located = locate_address(kw)
        given = kw["address"]
    cmp = compare_site(
        lat,
        lon,
        chosen,
        layers=list(kw["layers"]) or None,
        elevation=kw["elevation"],
        dem=kw["dem"],
        dem_units=kw["dem_units"],
        roof=roof,
        name=kw["site_name"],
        project=kw["project"],
        address=address,
        given=given,
        elevation_source=kw["elevation_source"],
        **located,
    )
    data = cmp.to_json()
    if kw["package_dir"]:
        from neve.maps.package import write_package

        _, last, last_json = cmp.results[-1]
        write_package(
            last_json,
            last.views(),
            kw["package_dir"],
            project=kw["project"],
            site_name=kw["site_name"],
            overwrite=kw["overwrite"],
            comparison=data,
            title_block=title_block_from_options(kw),
            inputs={"command": command_echo(), "roof_file": roof_file_echo(kw)},
            slope_pitch=None if roof is None else roof.slope_pitch,
        )
    if kw["fmt"] == "json":
        click.echo(dumps(data, indent=2, ensure_ascii=False))
    else:
        click.echo(cmp.to_text())
        if kw["package_dir"]:
            click.echo(f"Wrote package: {kw['package_dir']}")


compare = standard_option(
    click.Command("compare", callback=_run, params=_params(), help=_run.__doc__),
    multiple=True,
    help="A standard to compare (give two or more, e.g. --standard asce7-16 --standard asce7-22)",
)
