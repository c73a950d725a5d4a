"""The layer review map: every zone of one layer, its problems highlighted.

Used by ``neve layer show LAYER --map layer.html`` so that a person can look
over a zone layer before relying on it: zones coloured by value, zones whose
value follows from elevation in their own colour, study-required areas
hatched, zones named by the layer check outlined in red and every problem
listed in a panel.
"""

from __future__ import annotations

import os
from collections import Counter
from pathlib import Path

from neve.engine.errors import InputError
from neve.maps import leaflet, style
from neve.maps.geom import check_zones
from neve.maps.site_map import DEFAULT_CAUTIONS
from neve.maps.templating import render

#: above this many zones the value labels are left out (hover still works)
MAX_LABELS = 400
#: above this many vertices the drawing is simplified
MAX_VERTICES = 250_000


def _check_problems(problems) -> list[dict]:
    if problems is None:
        return []
    if not isinstance(problems, (list, tuple)):
        raise InputError("problems", f"got {type(problems).__name__}", "a list of dicts")
    out = []
    for i, p in enumerate(problems):
        if not isinstance(p, dict) or "kind" not in p or "message" not in p:
            raise InputError(
                f"problems[{i}]", "missing 'kind' or 'message'", "dicts {kind, zone_id, message}"
            )
        area = p.get("area_m2")
        out.append(
            {
                "kind": str(p["kind"]),
                "zone_id": None if p.get("zone_id") is None else str(p["zone_id"]),
                "message": str(p["message"]),
                "area": f"{style.num(area, 1)} m\u00b2" if area is not None else "",
            }
        )
    return out


def _vertex_count(geoms) -> int:
    import shapely

    return int(shapely.get_num_coordinates(geoms.to_numpy()).sum())


def write_layer_map(
    view: dict,
    problems: list[dict] | None,
    path: str | os.PathLike,
    *,
    tiles: str = "none",
    self_contained: bool = True,
    overwrite: bool = False,
    basemap=None,
) -> Path:
    """Write a review map of one zone layer.

    Parameters
    ----------
    view : dict
        One layer (``name``, ``meta``, ``sha256``, ``demo``, ``value_units``,
        ``zones``), as for :func:`neve.maps.site_map.write_site_map`.
    problems : list of dict
        Problems found by the layer check: ``{kind, zone_id or None, message,
        area_m2 (optional) [m2]}``.
    path : path-like
        Output ``.html`` file; written atomically.
    tiles : {"none", "osm"}
        Base tiles.
    self_contained : bool
        Inline every script and stylesheet so the page works offline (the
        default); ``False`` links them from the internet (``--cdn``).
    overwrite : bool
        Replace an existing file (otherwise an ``InputError``, before any work).
    basemap : str or neve.maps.basemap.Basemap, optional
        What lies under the zones (:mod:`neve.maps.basemap`); by default the
        demo basemap for a demo layer, otherwise none.

    Returns
    -------
    pathlib.Path
    """
    import folium

    from neve.maps.basemap import as_basemap, fit_zoom

    out = leaflet.check_path(path, "map", overwrite=overwrite)
    probs = _check_problems(problems)
    zones = check_zones(view)
    meta = view.get("meta") or {}
    units = str(view.get("value_units") or meta.get("value_units") or "psf")
    demo = bool(view.get("demo") or meta.get("demo"))

    if len(zones):
        minx, miny, maxx, maxy = zones.total_bounds
        lat, lon = (miny + maxy) / 2, (minx + maxx) / 2
    else:
        lat, lon, minx, miny, maxx, maxy = 0.0, 0.0, -1, -1, 1, 1
    base = as_basemap(basemap, tiles=tiles, demo_data=demo, views=[view])
    m = leaflet.new_map(lat, lon, base, zoom=8)
    bounds = [[miny, minx], [maxy, maxx]]
    m.fit_bounds(bounds)
    leaflet.add_basemap(m, base, bounds, fit_zoom(bounds))
    leaflet.add_defs(m, demo=demo)

    draw = zones
    note = ""
    if len(zones) and _vertex_count(zones.geometry) > MAX_VERTICES:
        tol = max(maxx - minx, maxy - miny) / 3000.0
        draw = zones.copy()
        draw["geometry"] = zones.geometry.simplify(tol, preserve_topology=True)
        note = f"Outlines simplified for display (tolerance {tol:.4g} degrees)."
    classes = style.value_classes(zones["pg"])
    bad_ids = [p["zone_id"] for p in probs if p["zone_id"]]
    tips: dict[str, str] = {}
    for p in probs:
        if p["zone_id"]:
            tips[p["zone_id"]] = (
                tips.get(p["zone_id"], "") + f"\nProblem: {p['kind']}: {p['message']}"
            ).strip()
    group = folium.FeatureGroup(
        name=leaflet.layer_label(view.get("name") or "layer"), control=False
    )
    leaflet.add_zones(
        group,
        draw,
        classes,
        units,
        problem_ids=bad_ids,
        label=len(zones) <= MAX_LABELS,
        max_labels=MAX_LABELS,
        extra_tips=tips,
        see_through=base.drawn,
    )
    group.add_to(m)

    rules = set(zones["rule"].astype(str))
    counts = Counter(style.RULE_LABELS.get(r, r) for r in zones["rule"].astype(str))
    ctx = {
        "name": view.get("name") or meta.get("name") or "zone layer",
        "jurisdiction": meta.get("jurisdiction") or "",
        "standard": meta.get("standard") or "",
        "units": units,
        "elevation_units": meta.get("elevation_units") or "",
        "n_zones": len(zones),
        "rule_counts": sorted(counts.items()),
        "source": meta.get("source") or "",
        "license": meta.get("license") or "",
        "date": str(meta.get("date") or ""),
        "sha": style.short_sha(view.get("sha256")),
        "problems": probs,
        "cautions": list(DEFAULT_CAUTIONS),
    }
    leaflet.add_html(m, render("layer_panel.html.j2", **ctx), "neve_summary")
    has_none = any(
        leaflet.zone_value_text(r, units) == "no value" for r in zones.to_dict("records")
    )
    leaflet.add_html(
        m,
        render(
            "legend.html.j2",
            title=f"Mapped value [{units}]",
            classes=classes,
            units=units,
            has_elev=bool(rules & {"elevation_table", "formula"}),
            has_none=has_none,
            governing=False,
            site=False,
            problems=bool(bad_ids),
            note=note,
        ),
        "neve_legend",
    )
    return leaflet.finish(m, out, overwrite=overwrite, self_contained=self_contained)
