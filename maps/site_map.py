"""The interactive site map: the site, its zone, the neighbouring zones and a summary.

One folium page per site: the governing zone outlined, the zones within a few
kilometres coloured by value with their values labelled, study-required areas
hatched (never a colour of the value scale), a legend in the layer's units, a
summary panel (status, pg, flags, elevation and its source, layer, source
citation, short SHA-256), the cautions, a scale bar, a layer switcher when
layers are stacked and a banner when the layer is invented demo data.
"""

from __future__ import annotations

import math
import os
from pathlib import Path

from neve.engine.roof import CAUTIONS
from neve.maps import leaflet, style
from neve.maps.geom import check_zones, site_lat_lon, zones_near
from neve.maps.templating import render

#: zones within this distance of the site are drawn [m]
NEIGHBOUR_RADIUS_M = 5000.0
#: the map opens on this half-width around the site [m]
VIEW_HALF_WIDTH_M = 3000.0

#: neve's own cautions, shown on every map (one definition, in neve.engine.roof)
DEFAULT_CAUTIONS = tuple(CAUTIONS)


def cautions_of(site_json: dict) -> list[str]:
    """The cautions of a site result (ground, roof), always including neve's own three."""
    out: list[str] = []
    ground = site_json.get("ground") or {}
    roof = site_json.get("roof") or {}
    for c in list(ground.get("cautions") or []) + list(roof.get("cautions") or []):
        if c and str(c) not in out:
            out.append(str(c))
    for c in DEFAULT_CAUTIONS:
        if c not in out:
            out.append(c)
    return out


def is_demo(site_json: dict, views=()) -> bool:
    """True when the site's layer or any view is invented demo data."""
    ground = site_json.get("ground") or {}
    layer = ground.get("layer") or {}
    return bool(
        layer.get("demo")
        or "demo_data" in (ground.get("flags") or [])
        or any(bool(v.get("demo") or (v.get("meta") or {}).get("demo")) for v in views)
    )


def governing_index(site_json: dict, views) -> int:
    """Index of the view that governs the site: the layer named in ``ground.layer``.

    Layers are listed most local first, but the first layer that covers the
    site governs, so a local amendment that misses the site does not.  Falls
    back to the first view.
    """
    layer = (site_json.get("ground") or {}).get("layer") or {}
    for key in ("sha256", "name"):
        want = layer.get(key)
        if not want:
            continue
        for i, v in enumerate(views or []):
            if v.get(key) == want or (key == "name" and (v.get("meta") or {}).get("name") == want):
                return i
    return 0


def governing_ids(site_json: dict, view: dict, first: bool) -> list[str]:
    """Zone ids of ``view`` that the site falls in (for outlining).

    ``first`` is true for the governing view (see :func:`governing_index`).
    """
    ground = site_json.get("ground") or {}
    if first:
        ids = list(ground.get("zone_ids") or [])
        if ground.get("zone_id") and ground["zone_id"] not in ids:
            ids.append(ground["zone_id"])
        return [str(i) for i in ids]
    for other in ground.get("other_layers") or []:
        if other.get("name") == view.get("name") and other.get("zone_id"):
            return [str(other["zone_id"])]
    return []


def _summary_load(load, si: bool = False) -> str:
    """A load in the summary panel and the report: 0.1 psf / 0.01 kPa, zeros kept.

    ``si``: kPa first (an EN 1991-1-3 site).
    """
    from neve.engine import format as fmt

    return fmt.load_text(
        load, missing="none", missing_number="\u2014", first="kPa" if si else None
    )


def summary_context(site_json: dict) -> dict:
    """Plain values for the summary panel and the report (escaped by the templates)."""
    site = site_json.get("site") or {}
    ground = site_json.get("ground") or {}
    layer = ground.get("layer") or {}
    roof = site_json.get("roof") or None
    status = str(ground.get("status") or "unknown")
    zone_ids = ground.get("zone_ids") or ([ground["zone_id"]] if ground.get("zone_id") else [])
    q = style.ground_quantity(site_json)  # pg, or sk (EN 1991-1-3): kPa and m first
    si = style.si_first(site_json)
    metres = "m" if si else None
    neighbours = []
    for n in ground.get("neighbours") or []:
        pg = n.get(q)
        pg_text = _summary_load(pg, si) if isinstance(pg, dict) else style.num(pg, 2)
        dist = n.get("distance")
        dist_text = (
            style.elevation_text(dist, metres) if isinstance(dist, dict) else style.num(dist, 0)
        )
        neighbours.append(f"zone {n.get('zone_id')}: {pg_text} at {dist_text}")
    others = []
    for o in ground.get("other_layers") or []:
        pg = o.get(q)
        pg_text = _summary_load(pg, si) if isinstance(pg, dict) else style.num(pg, 2)
        zone = f"zone {o['zone_id']}" if o.get("zone_id") else "no zone"
        pg_text = pg_text if o.get(q) else "no value"
        others.append(
            f"{o.get('name')}: {str(o.get('status') or '').replace('_', ' ')}, {zone}, {pg_text}"
        )
    return {
        "title": site.get("name") or "Site",
        "project": site.get("project") or "",
        "address": site.get("address") or "",
        "precision": _precision_text(site),
        "radius_m": location_radius_m(site_json),
        "lat": site.get("lat"),
        "lon": site.get("lon"),
        "status": status.replace("_", " "),
        "status_class": status if status.replace("_", "").isalnum() else "error",
        "pg": _summary_load(ground.get(q), si) if ground.get(q) else "no value",
        "quantity": q,
        "symbol": style.SYMBOLS[q],
        "zone": ", ".join(str(z) for z in zone_ids) or "none",
        "rule": ground.get("rule") or "",
        "flags": [str(f) for f in ground.get("flags") or []],
        "elevation": style.elevation_text(ground.get("elevation"), metres),
        "elevation_source": ground.get("elevation_source") or "none",
        "elevation_circle": circle_elevation_text(ground, location_radius_m(site_json)),
        "distance": style.elevation_text(ground.get("distance_to_other"), metres)
        if ground.get("distance_to_other")
        else "",
        "neighbours": neighbours,
        "other_layers": others,
        "layer_name": layer.get("name") or "",
        "jurisdiction": layer.get("jurisdiction") or "",
        "layer_source": layer.get("source") or "",
        "sha": style.short_sha(layer.get("sha256")),
        "message": ground.get("message") or "",
        "roof": style.load_text(roof.get("design_uniform"), "kPa" if si else "psf")
        if roof
        else "",
        "cautions": cautions_of(site_json),
    }


def location_radius_m(site_json: dict) -> float:
    """The site's location uncertainty radius [m] from ``site.location_radius`` (0 if none)."""
    r = (site_json.get("site") or {}).get("location_radius") or {}
    try:
        m = float(r.get("m") or 0.0)
    except (TypeError, ValueError, AttributeError):
        return 0.0
    return m if math.isfinite(m) and m > 0 else 0.0


def circle_elevation_text(ground: dict, radius_m: float) -> str:
    """The DEM over the location circle in words (``ground.elevation_over_radius``); "" if none.

    ``DEM over the 400 m location circle: min 233 ft (71 m), max 502 ft (153 m), used the
    maximum, 502 ft (153 m); at the minimum ok, 24.7 psf; at the maximum ok, 30.0 psf: an elevation rule
    change lies within the circle (the more demanding result governs)``.
    """
    over = ground.get("elevation_over_radius")
    if not isinstance(over, dict) or not over.get("min"):
        return ""
    text = (
        f"DEM over the {style.num(radius_m, 0)} m location circle: min "
        f"{style.elevation_text(over.get('min'))}, max {style.elevation_text(over.get('max'))}, "
        f"used the {over.get('used_at') or 'maximum'}, {style.elevation_text(over.get('used'))}"
    )
    at = []
    for key, name in (("at_min", "minimum"), ("at_max", "maximum")):
        got = over.get(key)
        if isinstance(got, dict):
            status = str(got.get("status") or "").replace("_", " ")
            load = f", {_summary_load(got['pg'])}" if isinstance(got.get("pg"), dict) else ""
            at.append(f"at the {name} {status}{load}")
    if at:
        text += "; " + "; ".join(at)
    if over.get("rule_change"):
        text += (
            ": an elevation rule change lies within the circle "
            "(elevation_rule_within_radius; the more demanding result governs)"
        )
    return text


def _precision_text(site: dict) -> str:
    """``postal_code, within 2.8 km (zipcodes 3.0.0)``; "" for coordinates."""
    precision = str(site.get("location_precision") or "")
    if not precision or precision == "coordinates":
        return ""
    radius = (
        style.elevation_text(site.get("location_radius")) if site.get("location_radius") else ""
    )
    source = f" ({site['location_source']})" if site.get("location_source") else ""
    return f"{precision.replace('_', ' ')}, uncertain within {radius}{source}"


def _site_tip(ctx: dict) -> str:
    return (
        f"{ctx['title']}\nStatus: {ctx['status']}\n{ctx.get('quantity', 'pg')}: {ctx['pg']}\n"
        f"Zone: {ctx['zone']}\nFlags: {', '.join(ctx['flags']) or 'none'}"
    )


def write_site_map(
    site_json: dict,
    views: list[dict],
    path: str | os.PathLike,
    *,
    tiles: str = "none",
    self_contained: bool = True,
    overwrite: bool = False,
    basemap=None,
) -> Path:
    """Write the interactive site map as one HTML file.

    Parameters
    ----------
    site_json : dict
        The ``neve site`` JSON object (``site``, ``ground``, ``roof``).
    views : list of dict
        Zone layers, most local first (the first governs); each with
        ``name``, ``meta``, ``sha256``, ``demo``, ``value_units`` and
        ``zones`` (GeoDataFrame, EPSG:4326).
    path : path-like
        Output ``.html`` file; written atomically.
    tiles : {"none", "osm"}
        Base tiles (the older choice; ``basemap`` takes precedence).
    self_contained : bool
        Inline every script and stylesheet so the page works offline (the
        default); ``False`` links them from the internet (``--cdn``).
    overwrite : bool
        Replace an existing file (otherwise an ``InputError``, before any work).
    basemap : str or neve.maps.basemap.Basemap, optional
        What lies under the zones (``--basemap``; :mod:`neve.maps.basemap`);
        by default the demo basemap for demo data, otherwise none.

    Returns
    -------
    pathlib.Path
        The written file.
    """
    import folium

    from neve.maps.basemap import as_basemap

    out = leaflet.check_path(path, "map", overwrite=overwrite)
    lat, lon = site_lat_lon(site_json)
    ctx = summary_context(site_json)
    base = as_basemap(basemap, tiles=tiles, demo_data=is_demo(site_json, views), views=views)
    m = leaflet.new_map(lat, lon, base, zoom=13)
    # open on the neighbourhood: about 3 km either side of the site, or the whole
    # uncertainty circle of an approximate location
    radius_m = ctx["radius_m"]
    near_m = max(NEIGHBOUR_RADIUS_M, 1.2 * radius_m)
    dlat = max(VIEW_HALF_WIDTH_M, 1.15 * radius_m) / 111_320.0
    dlon = dlat / max(math.cos(math.radians(lat)), 0.05)
    bounds = [[lat - dlat, lon - dlon], [lat + dlat, lon + dlon]]
    m.fit_bounds(bounds)
    leaflet.refit_on_load(m, bounds)
    leaflet.add_basemap(m, base, bounds, 13)
    from shapely.geometry import box

    label_window = box(lon - 0.9 * dlon, lat - 0.9 * dlat, lon + 0.9 * dlon, lat + 0.9 * dlat)
    demo = is_demo(site_json, views)
    leaflet.add_defs(m, demo=demo)

    all_classes: list[dict] = []
    has_elev = has_none = False
    units, quantity = "psf", "pg"
    layer_groups = []
    g_index = governing_index(site_json, views)
    order = [g_index] + [i for i in range(len(views)) if i != g_index] if views else []
    for i in order:
        view = views[i]
        zones = check_zones(view)
        v_units = str(
            view.get("value_units") or (view.get("meta") or {}).get("value_units") or "psf"
        )
        gov = governing_ids(site_json, view, first=(i == g_index))
        near = zones_near(zones, lat, lon, near_m, keep_ids=gov)
        classes = style.value_classes(near["pg"]) if len(near) else []
        if i == g_index:
            all_classes, units = classes, v_units
            quantity = str(view.get("quantity") or "pg")
            rules = set(near["rule"].astype(str)) if len(near) else set()
            has_elev = bool(rules & {"elevation_table", "formula"})
            has_none = any(
                leaflet.zone_value_text(r, v_units) == "no value" for r in near.to_dict("records")
            )
        label = f"{view.get('name') or 'layer'}" + (" (governs)" if i == g_index else "")
        group = folium.FeatureGroup(
            name=leaflet.layer_label(label), show=(i == g_index), control=True
        )
        leaflet.add_zones(
            group,
            near,
            classes,
            v_units,
            governing_ids=gov,
            label_window=label_window,
            avoid=(lat, lon, 0.06 * dlat),
            see_through=base.drawn,
        )
        group.add_to(m)
        layer_groups.append(group)

    # the neighbourhood whose zones are drawn, as the legend says
    folium.Circle(
        [lat, lon], radius=near_m, fill=False, color="#4a5068", weight=1.2,
        dash_array="6 6", interactive=False,
    ).add_to(m)  # fmt: skip
    if radius_m > 0:  # the location's uncertainty: every zone within it was considered
        folium.Circle(
            [lat, lon], radius=radius_m, fill=True, fill_opacity=0.08, color="#b3541e",
            weight=2.5, interactive=False, class_name="neve-location-circle",
        ).add_to(m)  # fmt: skip
    leaflet.add_site_marker(m, lat, lon, _site_tip(ctx))
    leaflet.add_html(m, render("site_panel.html.j2", **ctx), "neve_summary")
    leaflet.add_html(
        m,
        render(
            "legend.html.j2",
            title=f"Ground snow load {quantity} [{units}]",
            classes=all_classes,
            units=units,
            has_elev=has_elev,
            has_none=has_none,
            governing=True,
            site=True,
            problems=False,
            note=f"Dashed circle: {near_m / 1000:.0f} km around the site; every "
            "zone reaching into it is drawn whole."
            + (
                f" Solid circle: the location is uncertain within {radius_m / 1000:.1f} km"
                " (an approximate location); every zone within it was considered and the"
                " larger value governs."
                if radius_m > 0
                else ""
            ),
        ),
        "neve_legend",
    )
    if len(layer_groups) > 1:
        leaflet.add_layer_control(m, collapsed=False, position="topleft")
    return leaflet.finish(m, out, overwrite=overwrite, self_contained=self_contained)
