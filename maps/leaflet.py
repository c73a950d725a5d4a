"""Shared folium building blocks for neve's HTML maps.

Text from inputs never reaches the page as markup and is never compiled as
a template:

- branca's ``Element(text)`` compiles ``text`` as Jinja source, so a site name
  such as ``{{ ... }}`` would run on the machine writing the map.  neve never
  calls it with content: its own HTML is rendered by neve's autoescaping
  environment (:mod:`neve.maps.templating`) with the text passed as variables, and
  the result enters the folium tree through :func:`neve.maps.templating.fixed_html`, an element
  whose template is a constant and which carries that HTML as data.
- tooltips and popups are bound by our own small script that sets
  ``textContent`` from JSON-encoded strings (folium's own ``Tooltip``/
  ``Popup``/``GeoJsonTooltip`` insert text as HTML inside JavaScript template
  literals, which would let a hostile zone note run);
- every text that Leaflet treats as HTML (layer switcher names, ``DivIcon``
  labels) is HTML-escaped first (:func:`layer_label`).
"""

from __future__ import annotations

import functools
import json
import math
from pathlib import Path

from neve.engine.choices import choose_key
from neve.engine.errors import InputError
from neve.maps import assets, style
from neve.maps.templating import data_macro, fixed_html, render

#: accepted values of ``tiles``
TILES = {"none": None, "osm": "OpenStreetMap"}

_SAFE_FEATURE_JS = """function (feature, layer) {
    var text = feature.properties.neve_tip;
    if (text === undefined || text === null) { return; }
    var make = function () {
        var d = document.createElement('div');
        d.className = 'neve-tip';
        d.textContent = String(text);
        return d;
    };
    layer.bindTooltip(make, {sticky: true});
    layer.bindPopup(make);
}"""


def tiles_choice(tiles: str) -> str:
    """Validate ``tiles`` (``none`` or ``osm``)."""
    return choose_key("tiles", tiles, TILES)


def new_map(lat: float, lon: float, tiles="none", zoom: int = 12):
    """A folium map centred on ``(lat, lon)`` with a metric/imperial scale bar.

    ``tiles`` is ``none`` or ``osm`` (the older choice) or a resolved
    :class:`neve.maps.basemap.Basemap`; a basemap is added by :func:`add_basemap`.
    """
    import folium

    from neve.maps.basemap import Basemap

    if isinstance(tiles, Basemap):
        key = "none"
    else:
        key = tiles_choice(tiles)
    m = folium.Map(
        location=[lat, lon],
        zoom_start=zoom,
        tiles=TILES[key],
        control_scale=True,
        prefer_canvas=False,
        max_zoom=19,
    )
    # without a tile layer Leaflet has no zoom limit, which marker clustering needs
    m.options["maxZoom"] = 19
    m.options["minZoom"] = 1
    return m


@functools.cache
def _safe_text_class():
    from folium.template import Template

    class SafeText(data_macro()):
        """Binds a plain-text tooltip/popup; the text is data (``tojson``), never source."""

        _template = Template(
            """{% macro script(this, kwargs) %}
            (function () {
                var text = {{ this.text|tojson }};
                var make = function () {
                    var d = document.createElement('div');
                    d.className = 'neve-tip';
                    d.textContent = text;
                    return d;
                };
                {% if this.tooltip %}{{ this._parent.get_name() }}.bindTooltip(make);{% endif %}
                {% if this.popup %}{{ this._parent.get_name() }}.bindPopup(make);{% endif %}
            })();
            {% endmacro %}"""
        )

        def __init__(self, text: str, tooltip: bool, popup: bool):
            super().__init__()
            self._name = "SafeText"
            self.text = str(text)
            self.tooltip = tooltip
            self.popup = popup

    return SafeText


class SafeText:
    """Factory of a folium element binding a plain-text tooltip/popup to its parent."""

    @staticmethod
    def make(text: str, *, tooltip: bool = True, popup: bool = True):
        return _safe_text_class()(text, tooltip, popup)


@functools.cache
def _embedded_tiles_class():
    from folium.template import Template

    class EmbeddedTiles(data_macro()):
        """A Leaflet tile layer whose tiles are ``data:`` URIs carried in the page (as data)."""

        _template = Template(
            """{% macro script(this, kwargs) %}
            var {{ this.get_name() }} = (function () {
                var tiles = {{ this.tiles|tojson }};
                var blank = {{ this.blank|tojson }};
                var Layer = L.TileLayer.extend({
                    getTileUrl: function (c) {
                        var key = this._getZoomForUrl() + '/' + c.x + '/' + c.y;
                        return Object.prototype.hasOwnProperty.call(tiles, key) ? tiles[key] : blank;
                    }
                });
                return new Layer('', {{ this.options|tojson }});
            })().addTo({{ this._parent.get_name() }});
            {% endmacro %}"""
        )

        def __init__(self, tiles: dict, options: dict, blank: str):
            super().__init__()
            self._name = "EmbeddedTiles"
            self.tiles = tiles
            self.options = options
            self.blank = blank

    return EmbeddedTiles


def add_basemap(m, basemap, bounds, view_zoom: int) -> None:
    """Add ``basemap`` under the zones of ``m``; ``bounds`` ``[[s, w], [n, e]]`` is what opens.

    A URL basemap is a plain tile layer (the browser loads it); an MBTiles
    basemap embeds its tiles (:func:`neve.maps.basemap.embedded_tiles`): a
    coarse layer over the file's whole extent and a detailed one over
    ``bounds``.  Attribution text is escaped: Leaflet shows it as HTML.
    """
    import folium

    from neve.maps import basemap as bm

    if basemap is None or not basemap.drawn or not bm.covers(basemap, bounds):
        return  # an MBTiles file of another place adds nothing (not even its attribution)
    attribution = style.esc(basemap.attribution)
    if basemap.kind == "url":
        data_macro(folium.TileLayer)(
            tiles=basemap.url, attr=attribution, name=layer_label(basemap.label),
            max_zoom=19, control=False, overlay=False,
        ).add_to(m)  # fmt: skip
        return
    for tiles, low, top in bm.embedded_tiles(basemap, bounds, view_zoom):
        options = {
            "minZoom": 1,
            "maxZoom": 19,
            "minNativeZoom": low,
            "maxNativeZoom": top,
            "attribution": attribution,
            "tileSize": 256,
            "className": "neve-basemap",
        }
        attribution = ""  # said once
        _embedded_tiles_class()(tiles, options, bm.BLANK_TILE).add_to(m)


def layer_label(text: object) -> str:
    """A layer switcher name: Leaflet inserts it with ``innerHTML``, so it is escaped."""
    return style.esc(text)


def add_layer_control(m, **options) -> None:
    """The layer switcher; its (escaped) layer names are data, never template source."""
    import folium

    data_macro(folium.LayerControl)(**options).add_to(m)


#: fill opacity of a zone over a basemap, relative to a plain background
SEE_THROUGH = 0.62


def zone_style(
    row, classes: list[dict], *, governing: bool = False, problem: bool = False,
    see_through: bool = False,
) -> dict:
    """Leaflet path style of one zone row (value colour, hatch, elevation or none).

    ``see_through``: a basemap lies under the zones, so their fills are lighter
    (:data:`SEE_THROUGH`) and the coast, roads and towns show through.
    """
    rule = str(row.get("rule", ""))
    study = bool(row.get("study", False)) or rule == "study"
    colour = style.colour_for(row.get("pg"), classes)
    if study:
        s = {
            "fillColor": "url(#neve-hatch)",
            "fillOpacity": 1.0,
            "color": style.STUDY_COLOUR,
            "weight": 1.5,
            "dashArray": "6 4",
        }
    elif colour is not None:
        s = {"fillColor": colour, "fillOpacity": 0.72, "color": "#4a5068", "weight": 1.0}
    elif rule in ("elevation_table", "formula"):
        s = {
            "fillColor": style.ELEVATION_COLOUR,
            "fillOpacity": 0.7,
            "color": "#5f3dc4",
            "weight": 1.0,
            "dashArray": "2 4",
        }
    else:
        s = {"fillColor": style.NO_VALUE_COLOUR, "fillOpacity": 0.6, "color": "#666", "weight": 1}
    if see_through and not study:
        s["fillOpacity"] = round(s["fillOpacity"] * SEE_THROUGH, 3)
    if problem:
        s.update({"color": style.PROBLEM_COLOUR, "weight": 3.0, "dashArray": None})
    if governing:
        s.update({"color": style.GOVERNING_COLOUR, "weight": 4.0, "dashArray": None})
    return s


def _finite_or_none(x) -> float | None:
    try:
        v = float(x)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def zone_value_text(row, units: str) -> str:
    """Short label of a zone's value or rule: ``35 psf``, ``study``, ``30–120 psf by elevation``."""
    rule = str(row.get("rule", ""))
    if bool(row.get("study", False)) or rule == "study":
        return "study"
    pg = _finite_or_none(row.get("pg"))
    if pg is not None:
        return f"{style.num(pg, 2)} {units}"
    if rule in ("elevation_table", "formula"):
        lo, hi = _finite_or_none(row.get("pg_lo")), _finite_or_none(row.get("pg_hi"))
        if lo is not None and hi is not None and hi > lo:
            return f"{style.num(lo, 2)}\u2013{style.num(hi, 2)} {units} by elevation"
        if lo is not None:
            return f"\u2265 {style.num(lo, 2)} {units} by elevation"
        return "by elevation"
    return "no value"


def zone_label_text(row, units: str) -> str:
    """A zone's label on a map: its id and value or rule (``SK-H · 30–120 psf by elevation``)."""
    zid = str(row.get("zone_id", ""))
    zid = zid if len(zid) <= LABEL_ID_CHARS else zid[: LABEL_ID_CHARS - 1] + "\u2026"
    text = zone_value_text(row, units)
    return f"{zid} \u00b7 {text}" if zid else text


#: longest zone id written in a label [characters]; tooltips and the report give it whole
LABEL_ID_CHARS = 24


def zone_tip(row, units: str, extra: str = "") -> str:
    """Plain-text description of a zone for its tooltip and popup."""
    lines = [
        f"Zone {row.get('zone_id')}",
        f"Value: {zone_value_text(row, units)}",
        f"Rule: {style.RULE_LABELS.get(str(row.get('rule')), str(row.get('rule')))}",
    ]
    elev = row.get("elev_max")
    try:
        if elev is not None and math.isfinite(float(elev)):
            lines.append(f"Elevation limit: {style.num(elev, 0)}")
    except (TypeError, ValueError):
        pass
    for key, label in (("note", "Note"), ("source", "Source")):
        val = row.get(key)
        if val is not None and str(val).strip() and str(val) != "nan":
            lines.append(f"{label}: {val}")
    if extra:
        lines.append(extra)
    return "\n".join(lines)


def add_zones(
    parent,
    zones,
    classes,
    units: str,
    *,
    governing_ids=(),
    problem_ids=(),
    label: bool = True,
    extra_tips: dict | None = None,
    label_window=None,
    max_labels: int = 120,
    avoid: tuple[float, float, float] | None = None,
    see_through: bool = False,
    colour_key: str = "pg",
) -> None:
    """Add zone polygons (and value labels) to a folium map or feature group.

    ``label_window`` (a shapely polygon in EPSG:4326) keeps the labels inside
    the part of the map that opens on screen; ``avoid`` = (lat, lon, gap)
    [degrees] moves a label that would sit under the site marker;
    ``colour_key`` is the column the ``classes`` colour (``pg_psf`` on the
    portfolio map, whose bands are in psf whatever the layer's units).
    """
    import folium

    gov = {str(z) for z in governing_ids}
    bad = {str(z) for z in problem_ids}
    features = []
    for _, row in zones.iterrows():
        zid = str(row["zone_id"])
        rowd = row.to_dict()
        props = {
            "neve_style": zone_style(
                {**rowd, "pg": rowd.get(colour_key)}, classes, governing=zid in gov,
                problem=zid in bad, see_through=see_through,
            ),
            "neve_tip": zone_tip(rowd, units, (extra_tips or {}).get(zid, "")),
            "zone_id": zid,
        }
        features.append(
            {"type": "Feature", "geometry": row.geometry.__geo_interface__, "properties": props}
        )
    if not features:
        return
    # governing zones last so their outline is drawn on top
    features.sort(key=lambda f: f["properties"]["zone_id"] in gov)
    from folium.utilities import JsCode

    data_macro(folium.GeoJson)(
        {"type": "FeatureCollection", "features": features},
        style_function=lambda f: f["properties"]["neve_style"],
        on_each_feature=JsCode(_SAFE_FEATURE_JS),
        control=False,
    ).add_to(parent)
    if label:
        labelled = zones
        if len(zones) > max_labels:  # label the nearest zones only (hover shows every value)
            key = "distance_m" if "distance_m" in zones.columns else "zone_id"
            labelled = zones.sort_values(key).head(max_labels)
        for _, row in labelled.iterrows():
            geom = row.geometry
            if label_window is not None:
                part = geom.intersection(label_window)
                geom = part if not part.is_empty else geom
            pt = geom.representative_point()
            if avoid is not None:  # keep the label clear of the site marker
                a_lat, a_lon, gap = avoid
                if abs(pt.y - a_lat) < gap and abs(pt.x - a_lon) < gap:
                    from shapely.geometry import Point

                    moved = Point(a_lon, a_lat - 2.0 * gap)
                    pt = moved if geom.contains(moved) else pt
            text = zone_label_text(row.to_dict(), units)
            folium.Marker(
                [pt.y, pt.x],
                icon=data_macro(folium.DivIcon)(
                    html=f'<div class="neve-zone-label"><span>{style.esc(text)}</span></div>',
                    class_name="neve-label-icon",
                    icon_size=(0, 0),
                ),
                interactive=False,
            ).add_to(parent)


def add_site_marker(parent, lat: float, lon: float, text: str) -> None:
    """Our own site pin (Font Awesome building glyph) with a plain-text tooltip."""
    import folium

    marker = folium.Marker(
        [lat, lon],
        icon=data_macro(folium.DivIcon)(
            html='<div class="neve-site-pin" id="neve-site-marker">'
            '<i class="fa-solid fa-building"></i></div>',
            class_name="neve-site-icon",
            icon_size=(26, 26),
            icon_anchor=(13, 30),
        ),
        z_index_offset=1000,
    )
    marker.add_child(SafeText.make(text))
    marker.add_to(parent)


def add_html(m, html: str, name: str) -> None:
    """Add already-escaped panel HTML to the page body (as data, never compiled)."""
    m.get_root().html.add_child(fixed_html(html), name=name)


def add_defs(m, *, demo: bool) -> None:
    """Our CSS, the SVG hatch pattern and (for demo data) the banner."""
    # an empty icon, so the browser does not ask the server for /favicon.ico
    m.get_root().header.add_child(fixed_html('<link rel="icon" href="data:,">'), name="neve_icon")
    add_html(
        m,
        render(
            "map_defs.html.j2",
            css=assets.package_text("map.css"),
            study_colour=style.STUDY_COLOUR,
            demo=demo,
        ),
        "neve_defs",
    )


def finish(
    m, path, *, self_contained: bool, elements=(), cluster: bool = False, overwrite: bool = False
) -> Path:
    """Set assets, render, check self-containment and write the page (:mod:`neve.safe_write`)."""
    from neve.safe_write import write_text

    assets.prepare_assets(m, elements, self_contained=self_contained, cluster=cluster)
    html = m.get_root().render()
    if self_contained:
        remote = assets.remote_references(html)
        if remote:
            from neve.engine.errors import OutputError

            raise OutputError(f"self-contained map still references remote assets: {remote[:3]}")
    return write_text(path, html, overwrite=overwrite, field="map", parents=True)


def check_path(path, field: str, suffixes=(".html", ".htm"), *, overwrite: bool = False) -> Path:
    """An output path with an HTML suffix; an existing file is refused unless ``overwrite``."""
    from neve.safe_write import check_target

    p = Path(path)
    if p.suffix.lower() not in suffixes:
        raise InputError(
            field, f"{str(p)!r} does not end in {' or '.join(suffixes)}", "an .html path"
        )
    return check_target(p, overwrite=overwrite, field=field, parents=True)


def refit_on_load(m, bounds) -> None:
    """Re-measure the map and fit ``bounds`` once the page has laid out.

    A map inside an ``iframe`` (the calculation package embeds the site map
    that way) can run its scripts before the frame has its size; Leaflet then
    keeps a zero size and draws every zone as a point.  This re-fits on
    ``load`` and on ``resize``, with padding so that the summary panel (on
    the right) never covers what is fitted: the site and its governing zone.
    """
    name = m.get_name()
    js = (
        "<script>(function(){var b=" + json.dumps(bounds) + ";"
        "function refit(){if(typeof " + name + "==='undefined'){return;}"
        "var p=document.getElementById('neve-summary');"
        "var w=(p&&p.offsetWidth<0.6*window.innerWidth)?p.offsetWidth+20:0;"
        + name + ".invalidateSize(false);"
        + name + ".fitBounds(b,{paddingTopLeft:[20,20],paddingBottomRight:[w,20]});}"
        "window.addEventListener('load',refit);"
        "window.addEventListener('resize',refit);})();</script>"
    )  # fmt: skip
    m.get_root().html.add_child(fixed_html(js), name="neve_refit")
