"""The pages of ``neve serve``: Jinja2 templates (autoescape on), assets, tiles, zone outlines.

Text from any input is only ever a template *variable*, escaped on output;
the scripts read what they need from the page's ``data-`` attributes and the
JSON API and write it with ``textContent``, never as HTML.  Assets are a
fixed list of names (:data:`ASSETS`): a request never names a file.
"""

from __future__ import annotations

import functools
import json
import math
from importlib import resources

#: asset name -> (where it comes from, media type)
ASSETS = {
    "leaflet.js": ("leaflet_js", "text/javascript"),
    "leaflet.css": ("leaflet_css", "text/css"),
    "neve.css": ("static:neve.css", "text/css"),
    "site.js": ("static:site.js", "text/javascript"),
    "job.js": ("static:job.js", "text/javascript"),
}

_MEDIA = {
    ".csv": "text/csv",
    ".xlsx": "application/vnd.openxmlformats-officedocument.spreadsheetml.sheet",
    ".gpkg": "application/geopackage+sqlite3",
    ".parquet": "application/vnd.apache.parquet",
    ".json": "application/json",
    ".html": "text/html",
    ".pdf": "application/pdf",
    ".zip": "application/zip",
    ".png": "image/png",
}


def media_type(name: str) -> str:
    for suffix, media in _MEDIA.items():
        if name.endswith(suffix):
            return media
    return "application/octet-stream"


def environment():
    """neve serve's templates, with the maps' templates (steps table) beside them."""
    from neve.maps.templating import environment as maps_environment

    return maps_environment("neve.web")


def _page(name: str, code: int = 200, /, **context):
    from fastapi.responses import HTMLResponse

    html = environment().get_template(name).render(**context)
    return HTMLResponse(html, status_code=code)


@functools.cache
def asset(name: str) -> tuple[str, str]:
    """The text and media type of one asset of :data:`ASSETS` (anything else: not found)."""
    if name not in ASSETS:
        from neve.web.jobs import JobNotFound

        raise JobNotFound("asset", f"no asset {name!r}", ", ".join(ASSETS))
    source, media = ASSETS[name]
    if source.startswith("static:"):
        text = resources.files("neve.web").joinpath("static", source[7:]).read_text("utf-8")
    else:
        from neve.maps import assets

        text = getattr(assets, source)()
    return text, media


# --- what every page shows ----------------------------------------------------------


def _common(config) -> dict:
    from neve.engine.standards import get_standard

    return {
        "demo": config.demo,
        "cautions": list(get_standard().cautions),
        "layer_names": config.layer_names(),
    }


def _standards() -> list[dict]:
    from neve.engine.standards import standards

    return [{"id": s.id, "title": s.title} for s in standards()]


#: the form's labels of the standards' roof options (others: the option's name, capitalised)
_ROOF_LABELS = {
    "surface": "Roof surface", "ct": "Ct (given directly)", "thermal": "Thermal condition",
    "ce": "Ce (given directly)", "terrain": "Surface roughness", "exposure": "Roof exposure",
    "risk": "Risk category", "r_value": "Roof R-value", "ventilated": "Ventilated roof",
    "unobstructed": "Eaves unobstructed", "prismatic": "Prismatic members",
}  # fmt: skip


def _roof_fields() -> list[dict]:
    """The roof options of the form: the shared geometry, then the default standard's options."""
    from neve.engine.roof_spec import RISKS
    from neve.engine.standards import get_standard

    fields = [
        {"name": "shape", "kind": "choice", "label": "Roof shape",
         "choices": ("flat", "monoslope", "gable", "hip", "curved", "dome", "sawtooth",
                     "folded-plate", "barrel-vault"), "help": ""},
        {"name": "slope", "kind": "text", "label": "Slope", "help": "6:12 or 26.6deg"},
        {"name": "eave_to_ridge", "kind": "text", "label": "Eave to ridge W",
         "help": "30ft; asymmetric: 30ft,20ft"},
        {"name": "rise", "kind": "text", "label": "Rise (curved, dome)", "help": "12ft"},
        {"name": "chord", "kind": "text", "label": "Chord (curved)", "help": "60ft"},
        {"name": "diameter", "kind": "text", "label": "Diameter (dome)", "help": "80ft"},
        {"name": "eave_slope", "kind": "text", "label": "Eave slope (curved, dome)", "help": "40deg"},
        {"name": "eave_abutted", "kind": "yes/no", "label": "Eave abutted (curved)", "help": ""},
        {"name": "ridge_height", "kind": "text", "label": "Ridge height hr (sawtooth)", "help": "6ft"},
        {"name": "spans", "kind": "text", "label": "Spans (sawtooth)", "help": "3"},
    ]  # fmt: skip
    for opt in get_standard().roof_options:
        kind = {"choice": "choice", "yes/no": "yes/no"}.get(opt.kind, "text")
        choices = RISKS if opt.name == "risk" else opt.choices
        label = _ROOF_LABELS.get(opt.name) or opt.name.replace("_", " ").capitalize()
        fields.append({"name": opt.name, "kind": kind, "label": label,
                       "choices": choices, "help": opt.help})  # fmt: skip
    return fields


def site_form(config, *, values: dict | None = None, error: str | None = None, status: int = 200):
    from neve.web.site_form import PART_KEYS

    values = values or {}
    rows = {}
    for part in PART_KEYS:
        indices = sorted({int(k.split("-")[1]) for k in values
                          if k.startswith(part + "-") and k.count("-") == 2
                          and k.split("-")[1].isdigit()})  # fmt: skip
        rows[part] = indices
    return _page(
        "site.html.j2",
        status,
        **_common(config),
        values=values,
        error=error,
        standards=_standards(),
        roof_fields=_roof_fields(),
        part_keys=PART_KEYS,
        rows=rows,
        dems=config.dem_names(),
        tiles=tile_info(config),
        zones=bool(config.demo or config.layers),
    )


def site_result(config, job):
    import copy

    from neve.maps.package import result_context, strip_machine_paths
    from neve.maps.site_map import is_demo

    data = strip_machine_paths(copy.deepcopy(job.data))  # file names only, never a folder
    ctx = result_context(data, job.diagrams)
    flags = _flag_meanings()
    ground = data.get("ground") or {}
    return _page(
        "site_result.html.j2",
        **{**_common(config), "cautions": ctx.pop("cautions")},
        demo_result=is_demo(data),
        job=job,
        site=data.get("site") or {},
        ground=ground,
        flags=[(f, flags.get(f, "")) for f in ground.get("flags") or []],
        roof_flags=[(f, flags.get(f, "")) for f in (data.get("roof") or {}).get("flags") or []],
        json_text=json.dumps(data, indent=2, ensure_ascii=False),
        **ctx,
    )


def portfolio_form(config, *, error: str | None = None, status: int = 200):
    from neve.web.uploads import SITE_SUFFIXES

    return _page(
        "portfolio.html.j2",
        status,
        **_common(config),
        error=error,
        standards=_standards(),
        suffixes=SITE_SUFFIXES,
        dems=config.dem_names(),
        max_mb=config.max_upload_bytes // (1024 * 1024),
    )


def job_page(config, job):
    return _page("job.html.j2", **_common(config), job=job)


def error_page(config, status: int, message: str):
    return _page("error.html.j2", status, **_common(config), status=status, message=message)


@functools.lru_cache(maxsize=1)
def _flag_meanings() -> dict[str, str]:
    from neve.geo.site.result import FLAG_TABLE

    return {f.name: f.meaning for f in FLAG_TABLE}


# --- the map of the site form: tiles and zone outlines ------------------------------


def tile_info(config) -> dict | None:
    """Zooms and bounds of the MBTiles basemap the form's map shows (None: no tiles)."""
    base = config.basemap_for(config.demo)
    if base.kind != "mbtiles":
        return None
    meta = base.meta
    return {"min": meta["_minzoom"], "max": meta["_maxzoom"],
            "attribution": base.attribution or ""}  # fmt: skip


def tile(config, z: int, x: int, y: int):
    """One tile of the MBTiles basemap (XYZ numbering), or (None, None)."""
    from neve.maps.basemap import read_tiles

    base = config.basemap_for(config.demo)
    if base.kind != "mbtiles" or not (0 <= z <= 24) or not (0 <= x < 2**z and 0 <= y < 2**z):
        return None, None
    n = 2**z
    lon = (x + 0.5) / n * 360.0 - 180.0
    lat = math.degrees(math.atan(math.sinh(math.pi * (1 - 2 * (y + 0.5) / n))))
    got = read_tiles(base, z, [[lat, lon], [lat, lon]])
    data = got.get((x, y))
    fmt = base.meta.get("format", "png").lower()
    return data, {"jpg": "image/jpeg", "jpeg": "image/jpeg", "webp": "image/webp"}.get(
        fmt, "image/png"
    )


def zones_geojson(config) -> str:
    """The zones of the default layers (or the demo), simplified, as GeoJSON (made once)."""
    cached = config.zones_cache
    if cached is not None:
        return cached
    import pandas as pd

    if config.demo:
        from neve.geo.layers.model import demo_layers

        layers = demo_layers()
    else:
        layers = [layer for _, layer in config.layers[: config.default_count]]
    frames = []
    for layer in layers:
        if getattr(layer, "quantity", "pg") not in (None, "pg"):
            continue
        view = layer.view(center=None)
        zones = view["zones"]
        if len(zones) > 20_000:
            continue  # too many to draw in a form's map
        out = zones[["zone_id", "geometry"]].copy()
        out["zone_id"] = out["zone_id"].astype(str)
        out["layer"] = str(view["name"])
        out["geometry"] = out.geometry.simplify(0.0005, preserve_topology=True)
        frames.append(out)
    if not frames:
        text = json.dumps({"type": "FeatureCollection", "features": []})
    else:
        import geopandas as gpd

        frame = gpd.GeoDataFrame(pd.concat(frames, ignore_index=True), crs="EPSG:4326")
        text = frame.to_json(drop_id=True)
    config.zones_cache = text
    return text
