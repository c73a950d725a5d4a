"""``neve layer``: check a zone layer, or draw it on a map."""

from __future__ import annotations

import json

import click

from neve.cli.options import (
    format_option,
    map_look_options,
    map_option,
    overwrite_option,
    resolve_basemap,
)
from neve.engine.printable import printable


@click.group("layer")
def layer() -> None:
    """Check or show a zone layer (vector or raster, with its .toml sidecar)."""


@layer.command("check")
@click.argument("layer_path", metavar="LAYER", type=click.Path(dir_okay=False))
@format_option
def check(layer_path: str, fmt: str) -> None:
    """Report the defects of LAYER; exit 0 when clean, 1 when problems are found, 2 unreadable."""
    from neve.geo.layers.check import check_layer, check_text

    report = check_layer(layer_path)
    if fmt == "json":
        click.echo(json.dumps(report, indent=2, ensure_ascii=False))
    else:
        click.echo(printable(check_text(report)))
    if not report["ok"]:
        raise click.exceptions.Exit(1)


@layer.command("show")
@click.argument("layer_path", metavar="LAYER", type=click.Path(dir_okay=False))
@map_option("HTML map to write.", required=True)
@map_look_options
@overwrite_option("Replace an existing map.")
def show(layer_path: str, map_path: str, tiles: str, self_contained: bool, overwrite: bool,
         basemap: str = "auto", basemap_attribution: str | None = None) -> None:  # fmt: skip
    """Draw LAYER and the problems `neve layer check` finds on an HTML map."""
    from neve.geo.layers.check import check_layer
    from neve.geo.layers.model import load_layer
    from neve.safe_write import check_target

    check_target(map_path, overwrite=overwrite, field="map", parents=True)  # before any work
    look = {"basemap": basemap, "basemap_attribution": basemap_attribution, "tiles": tiles}
    resolve_basemap(look, demo_data=False)  # a bad --basemap is refused before any work
    report = check_layer(layer_path)
    layer = load_layer(layer_path)
    view = layer.view(center=None)
    base = resolve_basemap(look, demo_data=bool(view.get("demo")))
    from neve.maps.layer_map import write_layer_map

    write_layer_map(view, report["problems"], map_path, basemap=base,
                    self_contained=self_contained, overwrite=overwrite)  # fmt: skip
    click.echo(f"Wrote map: {map_path} ({len(report['problems'])} problem(s) marked)")
