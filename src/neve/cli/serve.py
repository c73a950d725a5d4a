"""``neve serve``: the site and portfolio pages and the JSON API in a browser (neve.web)."""

from __future__ import annotations

import click

from neve.cli.options import (
    basemap_attribution_option,
    basemap_option,
    dem_option,
    dem_units_option,
    gazetteer_option,
    geocoder_url_option,
    layers_option,
    serve_options,
)


@click.command("serve")
@serve_options
@layers_option
@dem_option
@dem_units_option
@basemap_option
@basemap_attribution_option
@gazetteer_option
@geocoder_url_option
def serve(host, port, layers_dir, workdir, token, max_upload_mb, layers, dem, dem_units,
          basemap, basemap_attribution, gazetteer, geocoder_url):  # fmt: skip
    """Serve the site form, the portfolio upload and the JSON API on this machine.

    Without --layer or --layers-dir the embedded, invented DEMO layers are served,
    and every page says so. Listens on 127.0.0.1 unless --host says otherwise
    (then --token is required). Results are an aid to a licensed design
    professional; confirm ground snow loads with the authority having
    jurisdiction; flagged sites need a site-specific study.
    """
    from neve.web.config import check_binding, load_config

    check_binding(host, token)
    config = load_config(
        layers=layers, layers_dir=layers_dir, dem=None if dem == "demo" else dem,
        dem_units=dem_units, basemap=basemap, basemap_attribution=basemap_attribution,
        workdir=workdir, token=token, gazetteer=gazetteer, geocoder_url=geocoder_url,
        max_upload_mb=max_upload_mb,
    )  # fmt: skip
    from neve.web.config import loopback_hosts

    config.allowed_hosts = loopback_hosts(host)
    from neve.web.server import run

    shown = f"[{host}]" if ":" in host else host
    where = f"http://{shown}:{port}/" + ("?token=..." if token else "")
    what = (
        "the embedded DEMO layers (invented; never for design)"
        if config.demo
        else (f"{len(config.layers)} layer(s): " + ", ".join(config.layer_names()))
    )
    click.echo(f"neve serve: {where} — {what}; jobs in {config.work}", err=True)
    run(config, host, port)
