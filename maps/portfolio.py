"""The portfolio map of ``neve screen``: every screened site, by ground-load band.

Sites are coloured by bands of ground snow load of our own (see
:data:`neve.maps.style.PORTFOLIO_BANDS_PSF`); provisional sites carry an orange
ring, study-required sites a hatched diamond, sites without data a dotted
circle and failed rows a crossed square, so none of them can be read as a
plain value.  Markers are clustered (Leaflet.markercluster, loaded in chunks)
and the site data travel as compact column arrays; a popup is built on click
from plain text.  Beyond :data:`DETAIL_LIMIT` sites the messages of ``ok``
sites are left out, and beyond :data:`MAX_POINTS` sites ``ok`` sites are
sampled (every provisional, study, no-data and error site is always drawn); the
map says so.
"""

from __future__ import annotations

import json
import math
import os
from collections import Counter
from pathlib import Path

from neve.engine.errors import InputError
from neve.engine.units import KPA_PER_PSF
from neve.maps import leaflet, style
from neve.maps.site_map import DEFAULT_CAUTIONS

#: columns ``results`` must have
REQUIRED = ("lat", "lon", "site_id", "status", "pg_psf", "flags", "message", "zone_id")
#: above this many sites, messages of ok sites are dropped from the page
DETAIL_LIMIT = 20_000
#: above this many sites, ok sites are sampled down to this total
MAX_POINTS = 250_000
#: markers are clustered only above this many drawn sites (below it every site shows
#: itself); study-required and error sites are never clustered
CLUSTER_ABOVE = 2_000
#: statuses drawn on their own, never inside a cluster
ALWAYS_SHOWN = ("study_required", "error")
#: status -> CSS class suffix and legend text
STATUS_SYMBOLS = {
    "ok": ("ok", "value (colour = band)"),
    "provisional": ("provisional", "provisional: value limited by a flag (orange ring)"),
    "study_required": ("study_required", "site-specific case study required (hatched diamond)"),
    "no_data": ("no_data", "no data (dotted circle)"),
    "error": ("error", "error in the row (crossed square)"),
}

#: what ``--map-colour`` may name
MAP_COLOURS = ("ground", "ratio")
RATIO_NEEDS = (
    "a site file with a snow_load_on_record column, screened with a roof; or --map-colour ground"
)
RATIO_HEADING = "Load ratio: today's design_uniform / load on record"
#: fills of :data:`neve.engine.on_record.RATIO_BANDS` (neve's own): blues at or below 1.0,
#: amber to deep red above it
RATIO_BAND_COLOURS = ("#3b78a8", "#a3d6d3", "#f4c542", "#e8590c", "#a61e1e")
NO_RATIO_COLOUR = "#c8c8c8"
NO_RATIO_LABEL = "no ratio (no load on record, no roof, or no usable ground load)"
#: the popup lines of a ratio map, first
RATIO_POPUP = ("load_ratio", "on_record_psf", "design_uniform_psf")
#: decimals of those popup lines
RATIO_POPUP_DECIMALS = {"load_ratio": 3, "on_record_psf": 2, "design_uniform_psf": 2}

#: longest text a popup shows per field [characters]; longer text is cut with an ellipsis
POPUP_TEXT_LIMITS = {"site_id": 80, "zone": 60, "flags": 160, "message": 240, "extra": 40}

_TEMPLATE = """{% macro script(this, kwargs) %}
(function () {
    var d = {{ this.payload_js }};
    var map = {{ this._parent.get_name() }};
    var icons = {};
    function icon(code) {
        if (!icons[code]) {
            var c = d.codes[code];
            icons[code] = L.divIcon({
                className: 'neve-pt-icon',
                html: '<div class="neve-pt neve-pt-' + c.cls + '" style="background:' + c.fill + '"></div>',
                iconSize: [12, 12], iconAnchor: [6, 6]
            });
        }
        return icons[code];
    }
    // clustering only where it helps (d.cluster: many sites); study-required and error
    // sites are never clustered: they always show as themselves
    var cluster = d.cluster ? L.markerClusterGroup({
        chunkedLoading: true, maxClusterRadius: 45, disableClusteringAtZoom: 15,
        showCoverageOnHover: false,
        iconCreateFunction: function (cl) {
            var n = cl.getChildCount(), flagged = 0;
            var kids = cl.getAllChildMarkers();
            for (var k = 0; k < kids.length; k++) { if (kids[k].options.neveFlagged) { flagged++; } }
            var size = n < 100 ? 30 : (n < 1000 ? 36 : 44);
            var div = document.createElement('div');
            div.className = 'neve-cluster' + (flagged ? ' neve-cluster-flagged' : '');
            div.style.width = div.style.height = size + 'px';
            div.style.lineHeight = size + 'px';
            div.textContent = n >= 10000 ? Math.round(n / 1000) + 'k' : String(n);
            return L.divIcon({html: div.outerHTML, className: 'neve-cluster-icon', iconSize: [size, size]});
        }
    }) : L.featureGroup();
    var always = L.featureGroup();
    var grouped = [], alone = [];
    for (var i = 0; i < d.lat.length; i++) {
        var code = d.code[i];
        var c = d.codes[code];
        var m = L.marker([d.lat[i], d.lon[i]], {icon: icon(code), keyboard: false,
                         neveFlagged: c.flagged, zIndexOffset: c.always ? 1000 : 0});
        m.neveIndex = i;
        if (c.always) { alone.push(m); } else { grouped.push(m); }
    }
    function line(box, label, value) {
        if (value === undefined || value === null || value === '') { return; }
        var p = document.createElement('div');
        var b = document.createElement('b');
        b.textContent = label + ': ';
        p.appendChild(b);
        p.appendChild(document.createTextNode(String(value)));
        box.appendChild(p);
    }
    function load(psf) {  // 0.1 psf and 0.01 kPa, as everywhere in neve; kPa first for sk
        if (psf === null) { return null; }
        var kpa = (psf * d.kpa_per_psf).toFixed(2) + ' kPa', us = psf.toFixed(1) + ' psf';
        return d.si ? kpa + ' (' + us + ')' : us + ' (' + kpa + ')';
    }
    function popup(e) {
        var i = e.layer.neveIndex;
        var box = document.createElement('div');
        box.className = 'neve-tip neve-popup';
        line(box, 'Site', d.site_id[i]);
        if (d.name) { line(box, 'Name', d.name[i]); }
        line(box, 'Status', d.status_names[d.status[i]]);
        if (d.elev) {
            var m = (d.elev_m && d.elev_m[i] !== null) ? d.elev_m[i] : d.elev[i] * 0.3048;
            line(box, 'Elevation', d.elev[i] === null ? null :
                 Math.round(d.elev[i]) + ' ft (' + m.toFixed(1) + ' m)');
        }
        line(box, d.ground, d.pg[i] === null ? 'no value' : load(d.pg[i]));
        if (d.design) { line(box, 'Design uniform load', load(d.design[i])); }
        line(box, 'Zone', d.zone[i]);
        line(box, 'Flags', d.flags[i]);
        line(box, 'Message', d.message[i]);
        for (var k = 0; k < d.extra_names.length; k++) { line(box, d.extra_names[k], d.extra[k][i]); }
        L.popup({maxWidth: 300, minWidth: 180}).setLatLng(e.layer.getLatLng()).setContent(box).openOn(map);
    }
    cluster.on('click', popup);
    always.on('click', popup);
    if (d.cluster) { cluster.addLayers(grouped); } else { grouped.forEach(function (m) { cluster.addLayer(m); }); }
    alone.forEach(function (m) { always.addLayer(m); });
    cluster.addTo(map);
    always.addTo(map);
})();
{% endmacro %}"""

_CLUSTER_CSS = """
.neve-cluster-icon { background: transparent; border: none; }
.neve-cluster { border-radius: 50%; background: rgba(44, 52, 112, .82); color: #fff;
  font: 700 11px "DejaVu Sans", Arial, sans-serif; text-align: center;
  box-shadow: 0 0 0 3px rgba(163, 214, 211, .8); }
.neve-cluster-flagged { box-shadow: 0 0 0 3px #e8590c; }
.neve-pt-icon { background: transparent; border: none; }
.neve-popup { white-space: normal; overflow-wrap: anywhere; max-width: 300px; }
.neve-popup div { margin: 1px 0; }
"""


def _safe_json(obj) -> str:
    text = json.dumps(obj, separators=(",", ":"), ensure_ascii=False, allow_nan=False)
    return (
        text.replace("<", "\\u003c")
        .replace(">", "\\u003e")
        .replace("&", "\\u0026")
        .replace("\u2028", "\\u2028")
        .replace("\u2029", "\\u2029")
    )


def _clean(v, limit: int = 240) -> str:
    if v is None or (isinstance(v, float) and math.isnan(v)):
        return ""
    text = str(v)
    return text if len(text) <= limit else text[: limit - 1] + "\u2026"


def _rounded(v, column: str):
    """A popup number rounded for reading: the ratio's own decimals, 0.1 psf, 0.01 kPa,
    otherwise three significant figures (text cells as they are)."""
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        return v
    if not math.isfinite(v):
        return ""
    digits = RATIO_POPUP_DECIMALS.get(column)
    if digits is None and column.endswith("_psf"):
        digits = 1
    elif digits is None and column.lower().endswith("_kpa"):
        digits = 2
    if digits is None:
        from neve.engine.format import significant

        return significant(v, 3)
    return f"{v:.{digits}f}"


def _numbers(values, digits: int) -> list:
    """Rounded numbers for the page (None where not finite)."""
    import numpy as np

    arr = np.asarray(values, dtype=float)
    out = np.round(arr, digits).tolist()
    return [v if math.isfinite(v) else None for v in out]


def _layer_class():
    from folium.elements import JSCSSMixin
    from folium.plugins import MarkerCluster
    from folium.template import Template

    from neve.maps.templating import data_macro

    class PortfolioLayer(JSCSSMixin, data_macro()):  # site text is data, never compiled
        _template = Template(_TEMPLATE)
        default_js = list(MarkerCluster.default_js)
        default_css = list(MarkerCluster.default_css)

        def __init__(self, payload: dict):
            super().__init__()
            self._name = "PortfolioLayer"
            self.payload_js = _safe_json(payload)

    return PortfolioLayer


def write_portfolio_map(
    results,
    path: str | os.PathLike,
    *,
    demo: bool = False,
    tiles: str = "none",
    self_contained: bool = True,
    overwrite: bool = False,
    colour: str = "ground",
    basemap=None,
    views: list[dict] | None = None,
) -> Path:
    """Write the portfolio map of screening results.

    Parameters
    ----------
    results : pandas.DataFrame
        One row per site with at least ``lat``, ``lon`` [degrees],
        ``site_id``, ``status``, ``pg_psf`` [psf], ``flags``
        (semicolon-separated), ``message`` and ``zone_id``; columns named
        ``roof_*`` or ending in ``_psf`` are shown in the popups as well.
    path : path-like
        Output ``.html``; written atomically.
    demo : bool
        Show the demo-data banner.
    tiles : {"none", "osm"}
        Base tiles.
    self_contained : bool
        Inline every script and stylesheet so the page works offline (the
        default); ``False`` links them from the internet (``--cdn``).
    overwrite : bool
        Replace an existing file (otherwise an ``InputError``, before any work).
    colour : {"ground", "ratio"}
        What colours the sites: bands of the ground snow load (default), or
        bands of ``load_ratio`` (today's ``design_uniform`` / the load on record,
        :data:`neve.engine.on_record.RATIO_BANDS`; needs a ``load_ratio``
        column); sites above 1.0 are those flagged ``exceeds_record``.
    basemap : str or neve.maps.basemap.Basemap, optional
        What lies under the sites (:mod:`neve.maps.basemap`); by default the
        demo basemap for demo data, otherwise none.
    views : list of dict, optional
        The zone layers used (as for :func:`neve.maps.site_map.write_site_map`);
        their zones around the sites are drawn under them, coloured by the
        same bands (by ``pg_psf``).

    Returns
    -------
    pathlib.Path
    """
    import numpy as np
    import pandas as pd

    from neve.engine.choices import choose_key

    colour = choose_key("map-colour", colour, MAP_COLOURS)
    out = leaflet.check_path(path, "map", overwrite=overwrite)
    if not isinstance(results, pd.DataFrame):
        raise InputError("results", f"got {type(results).__name__}", "a pandas DataFrame")
    if colour == "ratio" and "load_ratio" not in results.columns:
        raise InputError("map-colour", "'ratio' given, but the results have no load_ratio "
                         "column", RATIO_NEEDS)  # fmt: skip
    si = "pg_psf" not in results.columns and "sk_psf" in results.columns
    if si:  # a run on sk layers (EN 1991-1-3): the same bands, shown kPa first as sk
        results = results.assign(pg_psf=results["sk_psf"])
    if "site_id" not in results.columns:  # optional in site files: number the rows
        results = results.assign(site_id=[f"row {i + 1}" for i in range(len(results))])
    missing = [c for c in REQUIRED if c not in results.columns]
    if missing:
        raise InputError("results", f"missing column(s) {', '.join(missing)}", ", ".join(REQUIRED))
    n_total = len(results)
    lat = pd.to_numeric(results["lat"], errors="coerce").to_numpy(dtype=float)
    lon = pd.to_numeric(results["lon"], errors="coerce").to_numpy(dtype=float)
    placeable = np.isfinite(lat) & np.isfinite(lon) & (np.abs(lat) <= 90) & (np.abs(lon) <= 180)
    status = results["status"].astype(str).str.strip().to_numpy()
    pg = pd.to_numeric(results["pg_psf"], errors="coerce").to_numpy(dtype=float)
    flags = results["flags"].fillna("").astype(str).to_numpy()
    counts = Counter(status.tolist())

    # symbol code: 0..6 bands for ok, then one code per band for provisional, then statuses
    nb = len(style.PORTFOLIO_BANDS_PSF)
    bands = style.PORTFOLIO_BANDS_PSF
    if si:  # the same bands, named kPa first for sk
        bands = tuple(zip((u for u, _ in bands), style.band_labels_kpa(), strict=True))
    codes = []
    for i, (_, label) in enumerate(bands):
        codes.append(
            {"cls": "ok", "fill": style.PORTFOLIO_BAND_COLOURS[i], "flagged": False, "label": label}
        )
    for i, (_, label) in enumerate(bands):
        codes.append(
            {
                "cls": "provisional",
                "fill": style.PORTFOLIO_BAND_COLOURS[i],
                "flagged": True,
                "label": label,
            }
        )
    special = {"study_required": 2 * nb, "no_data": 2 * nb + 1, "error": 2 * nb + 2}
    codes += [
        {"cls": "study_required", "fill": "#fff", "flagged": True, "label": "study"},
        {"cls": "no_data", "fill": "#fff", "flagged": True, "label": "no data"},
        {"cls": "error", "fill": "#fff", "flagged": True, "label": "error"},
    ]
    band = np.array([style.portfolio_band(v) for v in pg], dtype=int)
    ratio_note = None
    if colour == "ratio":  # the same codes, with the ratio's bands in place of pg's
        codes, nb, special, band, ratio_note = _ratio_codes(results)
    code = np.full(n_total, special["error"], dtype=int)
    is_ok = status == "ok"
    is_prov = status == "provisional"
    code[is_ok & (band >= 0)] = band[is_ok & (band >= 0)]
    code[is_prov & (band >= 0)] = nb + band[is_prov & (band >= 0)]
    code[(is_ok | is_prov) & (band < 0)] = special["no_data"]
    code[status == "study_required"] = special["study_required"]
    code[status == "no_data"] = special["no_data"]

    notes = [ratio_note] if ratio_note else []
    keep = placeable.copy()
    if (~placeable).sum():
        notes.append(f"{int((~placeable).sum())} site(s) without usable coordinates are not drawn.")
    flagged_code = np.array([c["flagged"] for c in codes], dtype=bool)
    # status ok with a value (and, colouring by ratio, not above the record): the only rows
    # ever sampled
    plain = keep & (code < nb) & ~flagged_code[code]
    n_keep = int(keep.sum())
    if n_keep > MAX_POINTS:
        rng = np.random.default_rng(0)
        idx_plain = np.flatnonzero(plain)
        n_drop = min(len(idx_plain), n_keep - MAX_POINTS)
        keep[rng.choice(idx_plain, size=n_drop, replace=False)] = False
        notes.append(
            f"{n_drop:,} of {int(plain.sum()):,} ok sites were left out at random to keep the "
            "page usable; every provisional, study, no-data and error site is drawn."
        )
    rows = np.flatnonzero(keep)
    for c in codes:  # study-required and error sites are never hidden inside a cluster
        c["always"] = c["cls"] in ALWAYS_SHOWN
    clustered = len(rows) > CLUSTER_ABOVE
    if clustered:
        notes.append(
            f"{len(rows):,} sites: nearby sites are grouped in clusters (zoom in to open them); "
            "study-required and error sites always show on their own."
        )
    trim = n_total > DETAIL_LIMIT
    if trim:
        notes.append(
            f"Large portfolio ({n_total:,} sites): messages of ok sites are left out of the "
            "popups; the results file has every row in full."
        )
    shown = {"pg_psf", "sk_psf", "design_uniform_psf", "site_elevation_ft"}
    extra_cols = [
        c
        for c in results.columns
        if (c.startswith("roof_") or (c.endswith("_psf") and c not in shown))
    ][:4]
    if colour == "ratio":  # what the colour means comes first in the popups
        first = [c for c in RATIO_POPUP if c in results.columns]
        extra_cols = first + [c for c in extra_cols if c not in first][: max(0, 4 - len(first))]
    statuses = sorted(set(status.tolist()))
    s_index = {s: i for i, s in enumerate(statuses)}
    sub = results.iloc[rows]
    message = [
        "" if (trim and st == "ok") else _clean(v, POPUP_TEXT_LIMITS["message"])
        for v, st in zip(sub["message"].tolist(), status[rows].tolist(), strict=True)
    ]
    payload = {
        "lat": np.round(lat[rows], 5).tolist(),
        "lon": np.round(lon[rows], 5).tolist(),
        "code": code[rows].tolist(),
        "codes": codes,
        "status": [s_index[s] for s in status[rows].tolist()],
        "status_names": statuses,
        "site_id": [_clean(v, POPUP_TEXT_LIMITS["site_id"]) for v in sub["site_id"].tolist()],
        "pg": _numbers(pg[rows], 1),
        "zone": [_clean(v, POPUP_TEXT_LIMITS["zone"]) for v in sub["zone_id"].tolist()],
        # flags wrap at their separators
        "flags": [_clean(v.replace(";", "; "), POPUP_TEXT_LIMITS["flags"]) for v in flags[rows].tolist()],
        "message": message,
        "extra_names": [c.replace("_", " ") for c in extra_cols],
        "extra": [
            [_clean(_rounded(v, c), POPUP_TEXT_LIMITS["extra"]) for v in sub[c].tolist()]
            for c in extra_cols
        ],
        "cluster": clustered,
        "kpa_per_psf": KPA_PER_PSF,
        "ground": "sk" if si else "pg",
        "si": si,
    }

    for key, col, digits in (("elev", "site_elevation_ft", 0), ("elev_m", "site_elevation_m", 1),
                             ("design", "design_uniform_psf", 1)):  # fmt: skip
        if col in sub.columns:
            payload[key] = _numbers(pd.to_numeric(sub[col], errors="coerce"), digits)
    name_col = next((c for c in ("site_name", "name") if c in sub.columns), None)
    if name_col:
        payload["name"] = [_clean(v, POPUP_TEXT_LIMITS["site_id"]) for v in sub[name_col].tolist()]
    if len(rows):
        la, lo = lat[rows], lon[rows]
        centre = (float(np.median(la)), float(np.median(lo)))
    else:
        centre = (0.0, 0.0)
    from neve.maps.basemap import as_basemap, fit_zoom

    base = as_basemap(basemap, tiles=tiles, demo_data=demo)
    m = leaflet.new_map(centre[0], centre[1], base, zoom=5)
    if len(rows):
        bounds = [[float(la.min()), float(lo.min())], [float(la.max()), float(lo.max())]]
        m.fit_bounds(bounds)
        leaflet.add_basemap(m, base, bounds, fit_zoom(bounds))
        # zones in the pg bands under pg-coloured sites; a ratio map keeps one scale only
        n_zones = _add_zone_layers(m, views or [] if colour == "ground" else [], bounds,
                                   drawn=base.drawn)  # fmt: skip
        if n_zones:
            notes.append(
                f"Under the sites: the {n_zones:,} zone(s) of the layers used around them, "
                "lighter, in the same bands (by their value in psf); lavender: value by "
                "elevation; hatched: case study required."
            )
    leaflet.add_defs(m, demo=demo)
    m.get_root().header.add_child(
        leaflet.fixed_html(f"<style>{_CLUSTER_CSS}</style>"), name="neve_cluster_css"
    )
    layer = _layer_class()(payload)
    layer.add_to(m)
    legend = _legend_html(counts, n_total, len(rows), notes, colour=colour, clustered=clustered,
                          si=si)
    leaflet.add_html(m, legend, "neve_legend")
    return leaflet.finish(
        m, out, overwrite=overwrite, self_contained=self_contained, elements=[layer], cluster=True
    )


#: most zone vertices drawn under the portfolio (beyond it outlines are simplified)
ZONE_VERTICES = 200_000


def _add_zone_layers(m, views: list[dict], bounds, *, drawn: bool) -> int:
    """Draw the zones of ``views`` within ``bounds`` (with a margin) under the sites."""
    import folium
    import shapely
    from shapely.geometry import box

    from neve.maps.geom import check_zones

    (s, w), (n, e) = bounds
    dy, dx = max(n - s, 0.02), max(e - w, 0.02)
    window = box(w - dx, s - dy, e + dx, n + dy)  # the screen is wider than what is fitted
    classes = style.portfolio_classes()
    total = 0
    for view in views:
        zones = check_zones(view)
        if not len(zones):
            continue
        zones = zones[zones.intersects(window)]
        if not len(zones):
            continue
        if int(shapely.get_num_coordinates(zones.geometry.values).sum()) > ZONE_VERTICES:
            zones = zones.copy()
            zones["geometry"] = zones.geometry.simplify(max(dx, dy) / 2000.0, preserve_topology=True)
        units = str(view.get("value_units") or (view.get("meta") or {}).get("value_units") or "")
        group = folium.FeatureGroup(
            name=leaflet.layer_label(f"zones: {view.get('name') or 'layer'}"), control=True
        )
        if "pg_psf" not in zones.columns:
            zones = zones.assign(pg_psf=zones["pg"])
        leaflet.add_zones(group, zones, classes, units, label=False, see_through=True,
                          colour_key="pg_psf")  # fmt: skip
        group.add_to(m)
        total += len(zones)
    if total:
        leaflet.add_layer_control(m, collapsed=True, position="topleft")
    return total


def _legend_html(
    counts: Counter, n_total: int, n_drawn: int, notes: list[str], colour: str = "ground",
    clustered: bool = True, si: bool = False,
) -> str:
    """The legend panel; ``si``: sk sites (EN 1991-1-3), the bands named kPa first."""
    from neve.maps.templating import render

    labels = style.band_labels_kpa() if si else [b[1] for b in style.PORTFOLIO_BANDS_PSF]
    bands = [
        {"label": label, "colour": style.PORTFOLIO_BAND_COLOURS[i]}
        for i, label in enumerate(labels)
    ]
    heading = "Ground snow load sk [kPa]" if si else None
    if colour == "ratio":
        from neve.engine.on_record import RATIO_BANDS

        heading = RATIO_HEADING
        bands = [
            {"label": label, "colour": RATIO_BAND_COLOURS[i], "cls": f"neve-ratio-{i}"}
            for i, (_, label) in enumerate(RATIO_BANDS)
        ] + [{"label": NO_RATIO_LABEL, "colour": NO_RATIO_COLOUR, "cls": "neve-ratio-none"}]
    symbols = [
        {"cls": cls, "label": text, "count": counts.get(key, 0)}
        for key, (cls, text) in STATUS_SYMBOLS.items()
    ]
    other = sum(v for k, v in counts.items() if k not in STATUS_SYMBOLS)
    return render(
        "portfolio_legend.html.j2",
        bands=bands,
        symbols=symbols,
        other=other,
        n_total=n_total,
        n_drawn=n_drawn,
        notes=notes,
        cautions=list(DEFAULT_CAUTIONS),
        heading=heading,
        sample_colour=style.PORTFOLIO_BAND_COLOURS[3],
        clustered=clustered,
    )


def _ratio_codes(results):
    """Symbol codes by band of ``load_ratio``: (codes, bands, special codes, band per row, note)."""
    import numpy as np
    import pandas as pd

    from neve.engine.on_record import RATIO_BANDS, ratio_band

    ratio = pd.to_numeric(results["load_ratio"], errors="coerce").to_numpy(dtype=float)
    nb = len(RATIO_BANDS) + 1  # the last one: no ratio (no load on record, no roof, no value)
    labels = [label for _, label in RATIO_BANDS] + [NO_RATIO_LABEL]
    fills = [*RATIO_BAND_COLOURS, NO_RATIO_COLOUR]
    above = {i for i, (upper, _) in enumerate(RATIO_BANDS) if upper > 1.0}
    codes = []
    for prov in (False, True):
        for i, label in enumerate(labels):
            codes.append({"cls": "provisional" if prov else "ok", "fill": fills[i],
                          "flagged": prov or i in above, "label": label})  # fmt: skip
    special = {"study_required": 2 * nb, "no_data": 2 * nb + 1, "error": 2 * nb + 2}
    codes += [
        {"cls": "study_required", "fill": "#fff", "flagged": True, "label": "study"},
        {"cls": "no_data", "fill": "#fff", "flagged": True, "label": "no data"},
        {"cls": "error", "fill": "#fff", "flagged": True, "label": "error"},
    ]
    band = ratio_band(ratio)
    n_above = int(np.isin(band, sorted(above)).sum())
    band = np.where(band < 0, nb - 1, band)  # drawn, in grey: never hidden as "no data"
    note = (
        f"Colour: load_ratio = today's design_uniform / snow_load_on_record (uniform loads "
        f"only; drifts not included). {n_above:,} site(s) above 1.0 (exceeds_record): have "
        "those roofs reviewed by a licensed design professional."
    )
    return codes, nb, special, band, note


def screen_view(results):
    """``neve screen`` results as :func:`write_portfolio_map` reads them.

    ``lat``/``lon`` become the coordinates used (``site_lat``/``site_lon``); the
    input's own ``lat``, ``lon`` and ``site_id`` columns are kept as ``input_*``;
    sites without an id are named by their row in the site file (``row 1`` = the
    first data row).
    """
    view = results.copy(deep=False)
    for col in ("lat", "lon", "site_id"):
        if col in view.columns:
            view = view.rename(columns={col: f"input_{col}"})
    view["lat"] = results["site_lat"]
    view["lon"] = results["site_lon"]
    if "site_id" in results.columns:
        view["site_id"] = results["site_id"].astype(str)
    else:  # row numbers as in the site file (1 = first data row)
        view["site_id"] = [f"row {i + 1}" for i in range(len(results))]
    return view
