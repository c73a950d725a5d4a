"""``neve site``: ground and roof snow loads for one site (a thin shell over neve.geo.site.one)."""

from __future__ import annotations

import click

from neve.cli.options import (
    command_echo,
    dem_options,
    format_option,
    gazetteer_option,
    geocoder_url_option,
    layer_standard_option,
    layers_option,
    map_look_options,
    map_option,
    narrow_options,
    on_record_option,
    overwrite_option,
    resolve_basemap,
    roof_file_echo,
    roof_from_options,
    roof_options,
    title_block_from_options,
    title_block_options,
)
from neve.engine.errors import InputError
from neve.engine.jsonsafe import dumps


def _check_output(path: str | None, field: str, overwrite: bool, is_dir: bool = False) -> None:
    """Refuse an output before any work (:mod:`neve.safe_write`; the writer checks again)."""
    if path is None:
        return
    if is_dir:
        from neve.maps.target import check_package_target

        check_package_target(path, overwrite)
        return
    from neve.safe_write import check_target

    check_target(path, overwrite=overwrite, field=field, parents=True)


def locate_address(kw: dict) -> tuple[float, float, str, dict]:
    """``--address`` located: lat, lon, the address found, and the ``location_*`` keywords
    of :func:`neve.geo.site.one.resolve_site` (:func:`neve.geo.site.ask.locate_site`).

    Shared by ``neve site`` (through :func:`~neve.geo.site.ask.ask_site`) and
    ``neve compare``, so both locate an address alike.
    """
    from neve.geo.site.ask import locate_site

    return locate_site(
        kw["address"],
        gazetteer=kw.get("gazetteer"),
        geocoder_url=kw.get("geocoder_url"),
        country=kw.get("country"),
        region=kw.get("region"),
        user_agent=kw.get("user_agent"),
        geocoder_timeout=kw.get("geocoder_timeout") or 10.0,
    )


@click.command("site")
@click.option("--at", "at", metavar="LAT,LON", help="Site coordinates, decimal or DMS.")
@click.option("--address", help="Site address, US ZIP code or place name (offline gazetteer; "
              "--gazetteer or --geocoder-url for exact addresses).")  # fmt: skip
@click.option("--elevation", help="Site elevation with its unit, e.g. 412m or 1350ft.")
@dem_options
@layers_option
@roof_options
@click.option("--site-name", help="Name of the site for reports.")
@click.option("--project", help="Project name for reports.")
@title_block_options
@map_option("Write a site map (HTML).")
@click.option("--package", "package_dir", type=click.Path(file_okay=False),
              help="Write a calculation package into this folder.")  # fmt: skip
@map_look_options
@overwrite_option("Replace existing --map/--package outputs.")
@format_option
@gazetteer_option
@geocoder_url_option
@narrow_options
@click.option("--user-agent", help="User agent sent to the geocoding server.")
@click.option("--geocoder-timeout", type=float, default=10.0, show_default=True,
              help="Seconds to wait for the geocoding server.")  # fmt: skip
@layer_standard_option
@on_record_option
def site(**kw) -> None:
    """Ground snow load of a site from zone layers, and roof snow loads when a roof is given.

    Without --layer the embedded, invented DEMO layers are used: never for design.
    Results are an aid to a licensed design professional; confirm ground snow loads
    with the authority having jurisdiction; flagged sites need a site-specific study.
    """
    from neve.geo.site.ask import ask_site, site_json

    if bool(kw["at"]) == bool(kw["address"]):  # before any output is checked
        raise InputError(
            "at", "give exactly one of --at LAT,LON or --address TEXT", "--at 47.5,-140"
        )
    roof = roof_from_options(kw)
    _check_output(kw["map_path"], "map", kw["overwrite"])
    _check_output(kw["package_dir"], "package", kw["overwrite"], is_dir=True)
    if kw["map_path"] or kw["package_dir"]:
        resolve_basemap(kw, demo_data=False)  # a bad --basemap is refused before any work
    result = ask_site(
        at=kw["at"],
        address=kw["address"],
        gazetteer=kw["gazetteer"],
        geocoder_url=kw["geocoder_url"],
        country=kw["country"],
        region=kw["region"],
        user_agent=kw["user_agent"],
        geocoder_timeout=kw["geocoder_timeout"],
        site_name=kw["site_name"],
        elevation=kw["elevation"],
        dem=kw["dem"],
        dem_units=kw["dem_units"],
        layers=list(kw["layers"]) or None,
        roof=roof,
        project=kw["project"],
        elevation_source=kw["elevation_source"],
        standard=kw["standard"],
        on_record_psf=kw.get("on_record"),
    )
    data = site_json(result)  # no NaN or infinity in any output: null + a flag
    if kw["map_path"] or kw["package_dir"]:
        views = result.views()
        from neve.maps.site_map import is_demo

        base = resolve_basemap(kw, demo_data=is_demo(data, views))
        if kw["map_path"]:
            from neve.maps.site_map import write_site_map

            write_site_map(
                data,
                views,
                kw["map_path"],
                basemap=base,
                self_contained=kw["self_contained"],
                overwrite=kw["overwrite"],
            )
        if kw["package_dir"]:
            from neve.maps.package import write_package

            write_package(
                data,
                views,
                kw["package_dir"],
                project=kw["project"],
                site_name=kw["site_name"],
                overwrite=kw["overwrite"],
                title_block=title_block_from_options(kw),
                inputs={"command": command_echo(), "roof_file": roof_file_echo(kw)},
                basemap=base,
                slope_pitch=None if roof is None else roof.slope_pitch,
            )
    if kw["fmt"] == "json":
        click.echo(dumps(data, indent=2, ensure_ascii=False))
    else:
        click.echo(result.to_text())
        for what, path in (("map", kw["map_path"]), ("package", kw["package_dir"])):
            if path:
                click.echo(f"Wrote {what}: {path}")
