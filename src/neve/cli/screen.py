"""``neve screen``: screen a portfolio of sites (a thin shell over :mod:`neve.geo.screen.run`)."""

from __future__ import annotations

import signal
import sys
from pathlib import Path

import click

from neve.cli.options import (
    compare_option,  # issue 10: edition comparison
    dem_options,
    gazetteer_option,
    geocoder_url_option,
    layer_standard_option,
    layers_option,
    map_colour_option,
    map_look_options,
    map_option,
    output_option,
    overwrite_option,
    quiet_option,
    roof_options,
    roofs_from_options,
)
from neve.engine.errors import InputError


def _terminate(signum, frame):  # pragma: no cover - exercised through a subprocess test
    raise KeyboardInterrupt(f"signal {signum}")


@click.command("screen")
@click.argument("sites", type=click.Path(dir_okay=False))  # or a postgresql:// URL
@output_option(
    "Results file: .csv, .xlsx (with a summary sheet), .gpkg or .parquet.", required=True
)
@layers_option
@dem_options
@roof_options
@map_option("Portfolio map (.html).")
@map_look_options
@map_colour_option
@click.option(
    "--engine",
    type=click.Choice(["local", "dask"], case_sensitive=False),
    default="local",
    show_default=True,
    help="Resolve on this machine, or on a Dask cluster.",
)
@click.option(
    "--scheduler",
    help="Dask scheduler address (tcp://host:8786); a local cluster is started without it.",
)
@click.option(
    "--staging",
    type=click.Path(file_okay=False),
    help="Folder shared with the Dask workers for the staged sites (remote clusters).",
)
@click.option(
    "--partitions", type=click.IntRange(min=1), help="Dask partitions (default: automatic)."
)
@gazetteer_option
@geocoder_url_option
@click.option(
    "--geocode-cache",
    "geocode_cache",
    type=click.Path(dir_okay=False),
    help="JSON file keeping found addresses between runs (read, then updated).",
)
@quiet_option
@overwrite_option("Replace existing output files.")
@click.option(
    "--csv-raw",
    "csv_raw",
    is_flag=True,
    help="CSV output: write text cells as they are. By default a text cell starting with "
    "=, +, -, @, tab or CR that is not a plain number gets a leading ' so that spreadsheets "
    "show it as text.",
)
@click.option(
    "--summary-json",
    "summary_json",
    type=click.Path(dir_okay=False),
    help="Also write the run summary as JSON to this file.",
)
@layer_standard_option
@compare_option
def screen(sites, output, layers, dem, dem_units, elevation_source, map_path, tiles, basemap, basemap_attribution, self_contained, engine, scheduler, staging, partitions,
           gazetteer, geocoder_url, geocode_cache, quiet, overwrite, csv_raw, summary_json, standard, map_colour="ground", compare=None, **roof_kw):  # fmt: skip
    """Screen a portfolio: ground snow load (and roof loads) for every site in SITES.

    SITES is a CSV, XLSX, GeoPackage or Parquet file with lat/lon (or
    latitude/longitude), an address, or point geometry; an optional
    elevation carries its unit in the cell (1200ft, 412m) or in the column
    name (elevation_ft, elevation_m).  Every row comes back in order with
    status, flags and message.  An optional snow_load_on_record column (30psf,
    1.44kPa; or snow_load_on_record_psf / _kpa with plain numbers) adds
    load_ratio = today's design_uniform / the load on record, flagged
    exceeds_record above 1.0 (uniform loads only; needs a roof).

    --compare asce7-16,asce7-22 screens under each edition with its own layers:
    columns <column>__<id>, pg_ratio and design_uniform_ratio (last / first),
    and the summary's rises_over_10pct; --map shows the last edition.

    Results are an aid to, not a substitute for, a licensed design
    professional. Confirm ground snow loads with the authority having
    jurisdiction; flagged sites need a site-specific case study.
    """
    import json

    from neve.geo.postgis import is_db_url
    from neve.geo.screen.outputs import XLSX_MAX_ROWS, check_distinct, result_format, write_results
    from neve.geo.screen.run import format_summary, run_screen
    from neve.safe_write import check_target, write_text

    # check every target before any work, so a refusal costs nothing
    to_db = is_db_url(output)  # a PostGIS results table (neve.geo.postgis)
    fmt = "postgis" if to_db else result_format(output)
    file_inputs = [x for x in (sites, *layers) if not is_db_url(x)]
    check_distinct(
        {"output": None if to_db else output, "summary-json": summary_json, "map": map_path,
         "geocode-cache": geocode_cache},
        {"sites": None if is_db_url(sites) else sites, "gazetteer": gazetteer,
         "layer": [x for x in layers if x in file_inputs], "dem": dem,
         "roof": roof_kw.get("roof_file")},
    )  # fmt: skip
    if csv_raw and fmt != "csv":
        raise InputError("csv-raw", f"given for a .{fmt} output", "--csv-raw with a .csv output")
    if to_db:
        from neve.geo.postgis import check_db_target, same_table

        for name, given in [("sites", sites), *(("layer", x) for x in layers)]:
            if is_db_url(given) and same_table(given, output):
                raise InputError("output", f"the results table is the {name} input of this run; "
                                 "it would be replaced", "another table for the results")  # fmt: skip
        check_db_target(output, overwrite)
    else:
        check_target(output, overwrite=overwrite, field="output")
    if map_path:
        if Path(map_path).suffix.lower() not in (".html", ".htm"):
            raise InputError("map", f"{map_path!r} is not an .html path", "a path ending in .html")
        check_target(map_path, overwrite=overwrite, field="map")
        from neve.cli.options import resolve_basemap

        resolve_basemap({"basemap": basemap, "basemap_attribution": basemap_attribution,
                         "tiles": tiles}, demo_data=False)  # refused before any work  # fmt: skip
    if summary_json:
        check_target(summary_json, overwrite=overwrite, field="summary-json")
    if scheduler and engine.lower() != "dask":
        raise InputError(
            "scheduler", "given without --engine dask", "--engine dask --scheduler ADDRESS"
        )
    if staging and engine.lower() != "dask":
        raise InputError("staging", "given without --engine dask", "--engine dask --staging DIR")
    if partitions and engine.lower() != "dask":
        raise InputError(
            "partitions", "given without --engine dask", "--engine dask --partitions N"
        )
    roof = roofs_from_options(roof_kw)
    if compare is not None:
        source = click.get_current_context().get_parameter_source("standard")
        if source is click.core.ParameterSource.COMMANDLINE:
            raise InputError("standard", "given together with --compare",
                             "either --standard ID or --compare ID,ID")  # fmt: skip
    progress = not quiet and sys.stderr.isatty()
    try:  # a terminated run cleans up its temporary files like an interrupted one
        previous = signal.signal(signal.SIGTERM, _terminate)
    except ValueError:  # not the main thread: leave signals alone
        previous = None
    try:
        from neve.geo.screen.stream import STREAMED_FORMATS, stream_screen

        if (
            fmt in STREAMED_FORMATS
            and not is_db_url(sites)  # a PostGIS source is read whole (neve.geo.postgis)
            and not map_path
            and compare is None
            and engine.lower() == "local"
        ):
            # the site file read in chunks, the results written as each is done (issue 16)
            summary = stream_screen(
                sites,
                output,
                overwrite=overwrite,
                csv_raw=csv_raw,
                progress=progress,
                layers=list(layers) or None,
                dem=dem,
                dem_units=dem_units,
                elevation_source=elevation_source,
                roof=roof,
                gazetteer=gazetteer,
                geocoder_url=geocoder_url,
                geocode_cache=geocode_cache,
                standard=standard,
            )
            if summary_json:
                text = json.dumps(summary, indent=2)
                write_text(summary_json, text, overwrite=overwrite, field="summary-json")
            click.echo(format_summary(summary))
            click.echo(f"results: {output}")
            return
        screen_run = run_screen
        if compare is not None:  # each edition screened, then joined (geo/screen/compare.py)
            from functools import partial

            from neve.geo.screen.compare import run_compare

            screen_run = partial(run_compare, standards=compare)
        run = screen_run(
            sites,
            layers=list(layers) or None,
            dem=dem,
            dem_units=dem_units,
            elevation_source=elevation_source,
            roof=roof,
            engine=engine.lower(),
            scheduler=scheduler,
            partitions=partitions,
            staging=staging,
            gazetteer=gazetteer,
            geocoder_url=geocoder_url,
            geocode_cache=geocode_cache,
            max_rows=XLSX_MAX_ROWS if fmt == "xlsx" else None,
            progress=progress,
            standard=standard,
        )
        map_run = run.runs[-1][1] if compare is not None else run  # the last edition's map
        if map_path and map_colour.lower() == "ratio" and "load_ratio" not in map_run.results:
            from neve.maps.portfolio import RATIO_NEEDS

            raise InputError(
                "map-colour",
                "'ratio' given, but the site file has no snow_load_on_record column",
                RATIO_NEEDS,
            )  # refused before any output is written
        if to_db:
            from neve.geo.postgis import write_db_results

            write_db_results(run.results, output, overwrite=overwrite)
        else:
            write_results(
                run.results,
                output,
                overwrite=overwrite,
                summary=run.summary,
                geometry=run.geometry,
                csv_raw=csv_raw,
            )
        if map_path:
            _write_map(
                map_run, map_path, overwrite, tiles=tiles, self_contained=self_contained,
                colour=map_colour.lower(), basemap=basemap, basemap_attribution=basemap_attribution,
            )  # fmt: skip
        if summary_json:
            text = json.dumps(run.summary, indent=2)
            write_text(summary_json, text, overwrite=overwrite, field="summary-json")
    finally:
        if previous is not None:
            signal.signal(signal.SIGTERM, previous)
    if compare is not None:
        from neve.geo.screen.compare import format_compare_summary

        click.echo(format_compare_summary(run.summary))
    else:
        click.echo(format_summary(run.summary))
    if to_db:
        from neve.geo.postgis import masked

        click.echo(f"results: {masked(output)}")
    else:
        click.echo(f"results: {output}")
    if map_path:
        click.echo(f"map: {map_path}")


def _write_map(
    run,
    map_path: str,
    overwrite: bool,
    *,
    tiles: str = "none",
    self_contained: bool = False,
    colour: str = "ground",
    basemap: str = "auto",
    basemap_attribution: str | None = None,
) -> None:
    from neve.cli.options import resolve_basemap
    from neve.maps.portfolio import screen_view, write_portfolio_map

    demo = bool(run.summary.get("demo"))
    look = {"basemap": basemap, "basemap_attribution": basemap_attribution, "tiles": tiles}
    view = screen_view(run.results)
    write_portfolio_map(
        view,
        map_path,
        demo=demo,
        basemap=resolve_basemap(look, demo_data=demo),
        views=_zone_views(getattr(run, "layers", None) or [], view),
        tiles=tiles,
        self_contained=self_contained,
        overwrite=overwrite,
        colour=colour,
    )


def _zone_views(layers, results) -> list[dict]:
    """The views of the layers used, around the screened sites (for the portfolio map)."""
    from neve.geo.screen.views import zone_views

    return zone_views(layers, results)


def map_frame(results):
    """The results as the portfolio map reads them (:func:`neve.maps.portfolio.screen_view`)."""
    from neve.maps.portfolio import screen_view

    return screen_view(results)
