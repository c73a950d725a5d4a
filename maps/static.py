"""The static map of the site and its zones (PNG and SVG) for the calculation package.

Drawn with matplotlib's Agg backend from the layer itself: no display, no
network, no tiles.  The zones around the site are projected to the site's
UTM zone (chosen through pyproj), so the scale bar is true in metres and
feet; a north arrow, the site symbol and a legend complete the figure.
"""

from __future__ import annotations

import math
import os
import textwrap
from pathlib import Path

from neve.maps import style
from neve.maps.geom import check_zones, local_crs, site_lat_lon, zones_near
from neve.maps.site_map import governing_ids, governing_index, is_demo
from neve.safe_write import check_target, write_bytes

#: half-width of the mapped window around the site [m]
WINDOW_M = 5000.0


def _nice_length(target: float) -> float:
    """A round length not above ``target`` (1, 2, 5 x 10^n)."""
    if target <= 0:
        return 1.0
    mag = 10 ** math.floor(math.log10(target))
    for f in (5, 2, 1):
        if f * mag <= target:
            return f * mag
    return mag


def _scale_bar(ax, x0: float, y0: float, width_m: float) -> None:
    """Two-unit scale bar: metres above, feet below, drawn at data coords (metres)."""
    from matplotlib.patches import Rectangle

    length = _nice_length(width_m * 0.25)
    h = width_m * 0.012
    ax.add_patch(
        Rectangle((x0 - 0.03 * width_m, y0 - 4.2 * h), length * 1.2 + 0.06 * width_m, 8.4 * h,
                  facecolor="white", edgecolor="#8a8f9c", lw=0.6, alpha=0.9, zorder=5.5)
    )  # fmt: skip
    for i in range(4):
        ax.add_patch(
            Rectangle(
                (x0 + i * length / 4, y0), length / 4, h,
                facecolor="#1b1f3b" if i % 2 == 0 else "white", edgecolor="#1b1f3b", lw=0.8,
                zorder=6,
            )
        )  # fmt: skip
    label = f"{length / 1000:g} km" if length >= 1000 else f"{length:g} m"
    ax.text(x0 + length / 2, y0 + 1.6 * h, label, ha="center", va="bottom", fontsize=8, zorder=6)
    ft_len = _nice_length(length / 0.3048)
    ft_m = ft_len * 0.3048
    ax.plot([x0, x0 + ft_m], [y0 - 0.6 * h] * 2, color="#1b1f3b", lw=1.2, zorder=6)
    for x in (x0, x0 + ft_m):
        ax.plot([x, x], [y0 - 1.1 * h, y0 - 0.6 * h], color="#1b1f3b", lw=1.2, zorder=6)
    ft_label = f"{ft_len:,.0f} ft"
    ax.text(x0 + ft_m / 2, y0 - 1.4 * h, ft_label, ha="center", va="top", fontsize=8, zorder=6)


def _north_arrow(ax, x: float, y: float, size: float, angle_deg: float = 0.0) -> None:
    """A north arrow at (x, y) pointing to grid north rotated by ``angle_deg``."""
    from matplotlib.patches import Polygon

    a = math.radians(angle_deg)

    def rot(px, py):
        return (x + px * math.cos(a) - py * math.sin(a), y + px * math.sin(a) + py * math.cos(a))

    left = [rot(0, size), rot(-size * 0.35, -size * 0.4), rot(0, -size * 0.15)]
    right = [rot(0, size), rot(size * 0.35, -size * 0.4), rot(0, -size * 0.15)]
    ax.add_patch(Polygon(left, closed=True, facecolor="#1b1f3b", edgecolor="#1b1f3b", zorder=7))
    ax.add_patch(Polygon(right, closed=True, facecolor="white", edgecolor="#1b1f3b", zorder=7))
    tx, ty = rot(0, size * 1.45)
    ax.text(tx, ty, "N", ha="center", va="center", fontsize=11, fontweight="bold", zorder=7)


def true_north_angle(lat: float, lon: float, crs) -> float:
    """Angle of true north from grid north at the site, counter-clockwise [degrees].

    Found numerically with pyproj by projecting a point a little north of the
    site; for a transverse Mercator grid it is the meridian convergence.
    """
    from pyproj import Transformer

    t = Transformer.from_crs(4326, crs, always_xy=True)
    x0, y0 = t.transform(lon, lat)
    x1, y1 = t.transform(lon, min(lat + 0.01, 89.999))
    return math.degrees(math.atan2(-(x1 - x0), y1 - y0))


#: the colour of an approximate location's uncertainty circle (as on the site map)
LOCATION_COLOUR = "#b3541e"


@style.plain_figure_text
def write_static_map(
    site_json: dict,
    views: list[dict],
    png_path: str | os.PathLike,
    svg_path: str | os.PathLike | None = None,
    *,
    overwrite: bool = False,
    basemap=None,
) -> list[Path]:
    """Draw the zones around the site to PNG (and SVG).

    Parameters
    ----------
    site_json : dict
        The ``neve site`` JSON object.
    views : list of dict
        Zone layers, most local first; the one governing the site is drawn.
    png_path : path-like
        Output PNG [150 dpi].
    svg_path : path-like, optional
        Output SVG as well.
    overwrite : bool
        Replace files that exist already (otherwise an ``InputError``, before drawing).
    basemap : str or neve.maps.basemap.Basemap, optional
        Drawn under the zones when it is an MBTiles file (the demo basemap for
        demo data by default): its tiles are mosaicked and reprojected to the
        map's grid.  Online basemaps are not drawn: nothing is fetched.

    Returns
    -------
    list of pathlib.Path
        The files written.
    """
    import io

    import matplotlib

    matplotlib.use("Agg", force=True)
    import geopandas as gpd
    import matplotlib.pyplot as plt
    from matplotlib.lines import Line2D
    from matplotlib.patches import Patch
    from shapely.geometry import Point

    for path in (png_path, svg_path):  # both refused before any drawing, or neither
        if path is not None:
            check_target(path, overwrite=overwrite, field="static map", parents=True)
    from neve.maps.basemap import as_basemap

    lat, lon = site_lat_lon(site_json)
    crs = local_crs(lat, lon)
    site_xy = gpd.GeoSeries([Point(lon, lat)], crs=4326).to_crs(crs).iloc[0]
    units, quantity = "psf", "pg"
    base = as_basemap(basemap, demo_data=is_demo(site_json, views), views=views)
    fig, ax = plt.subplots(figsize=(8.6, 6.0), dpi=150)
    drawn_base = base.kind == "mbtiles" and _draw_basemap(ax, base, site_xy, crs, lat)
    alpha = 0.62 if drawn_base else 1.0
    handles = []
    if views:
        view = views[governing_index(site_json, views)]
        zones = check_zones(view)
        units = str(view.get("value_units") or (view.get("meta") or {}).get("value_units") or "psf")
        quantity = str(view.get("quantity") or "pg")
        gov = set(governing_ids(site_json, view, first=True))
        near = zones_near(zones, lat, lon, WINDOW_M * 1.5, keep_ids=gov)
        if len(near):
            # the legend lists only what the drawn window shows
            shown = near.to_crs(crs).intersects(site_xy.buffer(WINDOW_M).envelope).to_numpy()
            near = near[shown]
        classes = style.value_classes(near["pg"]) if len(near) else []
        if len(near):
            proj = near.to_crs(crs)
            for _, row in proj.iterrows():
                rule = str(row["rule"])
                study = bool(row.get("study")) or rule == "study"
                colour = style.colour_for(row["pg"], classes)
                kw = {"edgecolor": "#4a5068", "linewidth": 0.6, "alpha": alpha}
                if study:
                    kw = {"facecolor": "white", "edgecolor": style.STUDY_COLOUR, "hatch": "////",
                          "linewidth": 0.8, "linestyle": "--"}  # fmt: skip
                elif colour is not None:
                    kw["facecolor"] = colour
                elif rule in ("elevation_table", "formula"):
                    kw.update(facecolor=style.ELEVATION_COLOUR, linestyle=":")
                else:
                    kw["facecolor"] = style.NO_VALUE_COLOUR
                _patch(ax, row.geometry, zorder=2, **kw)
                inside = row.geometry.intersection(site_xy.buffer(WINDOW_M))
                c = inside.representative_point()
                if not c.is_empty and c.distance(site_xy) < 0.2 * WINDOW_M:
                    # keep the label clear of the site symbol
                    moved = Point(site_xy.x, site_xy.y - 0.3 * WINDOW_M)
                    c = moved if inside.contains(moved) else c
                if not c.is_empty:
                    text = _label(row, units)
                    ax.text(c.x, c.y, text, ha="center", va="center", fontsize=7.5, zorder=4,
                            color="#1b1f3b",
                            bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none",
                                  "alpha": 0.75})  # fmt: skip
            g = proj[proj["zone_id"].astype(str).isin(gov)]
            if len(g):
                for geom in g.geometry:
                    _patch(ax, geom, facecolor="none", edgecolor=style.GOVERNING_COLOUR,
                           linewidth=2.4, zorder=5)  # fmt: skip
        for c in classes:
            handles.append(
                Patch(facecolor=c["colour"], edgecolor="#4a5068", label=f"{c['label']} {units}")
            )
        rules = set(near["rule"].astype(str)) if len(near) else set()
        if rules & {"elevation_table", "formula"}:
            handles.append(Patch(facecolor=style.ELEVATION_COLOUR, edgecolor="#4a5068",
                                 linestyle=":", label="value from elevation"))  # fmt: skip
        handles.append(Patch(facecolor="white", edgecolor=style.STUDY_COLOUR, hatch="////",
                             label="case study required (no value)"))  # fmt: skip
        handles.append(Patch(facecolor="none", edgecolor=style.GOVERNING_COLOUR, linewidth=2.4,
                             label="governing zone"))  # fmt: skip
    from neve.maps.site_map import location_radius_m

    radius_m = location_radius_m(site_json)
    if radius_m > 0:  # an approximate location: its uncertainty circle (local CRS, metres)
        from matplotlib.patches import Circle

        ax.add_patch(Circle((site_xy.x, site_xy.y), radius_m, facecolor="none",
                            edgecolor=LOCATION_COLOUR, linewidth=2.0, zorder=7))  # fmt: skip
        handles.append(Line2D([], [], color=LOCATION_COLOUR, linewidth=2.0,
                              label=f"location uncertain within {radius_m:,.0f} m"))  # fmt: skip
    ax.plot(site_xy.x, site_xy.y, marker="o", markersize=10, color=style.SITE_COLOUR,
            markeredgecolor="white", markeredgewidth=2, zorder=8)  # fmt: skip
    ax.plot(site_xy.x, site_xy.y, marker="+", markersize=18, color=style.SITE_COLOUR, zorder=8)
    q = style.ground_quantity(site_json)  # pg, or sk (EN 1991-1-3): kPa first
    pg = (site_json.get("ground") or {}).get(q)
    first = "kPa" if style.si_first(site_json) else "psf"
    ax.annotate(f"site: {q} = {style.load_text(pg, first) if pg else 'no value'}",
                (site_xy.x, site_xy.y),
                xytext=(12, 10), textcoords="offset points", fontsize=8, fontweight="bold",
                color=style.SITE_COLOUR, zorder=9,
                bbox={"boxstyle": "round,pad=0.25", "fc": "white", "ec": style.SITE_COLOUR,
                      "lw": 0.6, "alpha": 0.9})  # fmt: skip
    handles.append(Line2D([], [], marker="o", color="none", markerfacecolor=style.SITE_COLOUR,
                          markeredgecolor="white", markersize=9, label="site"))  # fmt: skip

    x0, y0 = site_xy.x - WINDOW_M, site_xy.y - WINDOW_M
    ax.set_xlim(x0, site_xy.x + WINDOW_M)
    ax.set_ylim(y0, site_xy.y + WINDOW_M)
    ax.set_aspect("equal")
    ax.set_xticks([])
    ax.set_yticks([])
    ax.set_facecolor("#f4f2ec")
    _scale_bar(ax, x0 + 0.04 * 2 * WINDOW_M, y0 + 0.045 * 2 * WINDOW_M, 2 * WINDOW_M)
    angle = true_north_angle(lat, lon, crs)
    _north_arrow(
        ax, site_xy.x + 0.86 * WINDOW_M, site_xy.y + 0.72 * WINDOW_M, 0.11 * WINDOW_M, angle
    )
    ax.legend(handles=handles, loc="upper left", bbox_to_anchor=(1.02, 1.0), fontsize=7.5,
              frameon=False, title=f"Ground snow load {quantity} [{units}]",
              title_fontsize=8, alignment="left")  # fmt: skip
    ax.set_xlabel("")
    ax.set_ylabel("")
    site = site_json.get("site") or {}
    # a long site name wraps (at most three lines) instead of running off the figure
    title = textwrap.fill(str(site.get("name") or "Site"), 90, max_lines=3, placeholder=" \u2026")
    ax.set_title(title, fontsize=10, loc="left")
    foot = f"{crs.name} \u00b7 {lat:.5f}, {lon:.5f}"
    if drawn_base and base.attribution:
        foot += f" \u00b7 basemap: {textwrap.shorten(base.attribution, 90)}"
    if is_demo(site_json, views):
        foot = "DEMO DATA \u2014 INVENTED VALUES, NEVER FOR DESIGN \u00b7 " + foot
    fig.text(0.01, 0.01, foot, fontsize=7, color="#7a3e00" if "DEMO" in foot else "#444")
    fig.tight_layout(rect=(0, 0.03, 1, 1))
    written = []
    # the legend beside the axes is never clipped: the tight box is measured once and
    # used for both files (bbox_inches="tight" would draw the figure twice per file)
    tight = fig.get_tightbbox(fig.canvas.get_renderer()).padded(0.12)
    for path, fmt in ((png_path, "png"), (svg_path, "svg")):
        if path is None:
            continue
        buf = io.BytesIO()
        # SVG keeps its text as text, so it can be searched and edited
        with matplotlib.rc_context({"svg.fonttype": "none"}):
            fig.savefig(buf, format=fmt, bbox_inches=tight,
                        metadata={"Date": None} if fmt == "svg" else None)  # fmt: skip
        written.append(
            write_bytes(path, buf.getvalue(), overwrite=overwrite, field="static map", parents=True)
        )
    plt.close(fig)
    return written


def _patch(ax, geom, **kw) -> None:
    """Add a (multi)polygon as one matplotlib patch.

    Drawn directly rather than through ``GeoSeries.plot``, which redraws the
    whole figure after every call (a full draw per zone).
    """
    from shapely.geometry import MultiPolygon, Polygon
    from shapely.plotting import patch_from_polygon

    if isinstance(geom, (Polygon, MultiPolygon)) and not geom.is_empty:
        ax.add_patch(patch_from_polygon(geom, **kw))
    elif hasattr(geom, "geoms"):  # a collection: its polygonal parts
        for part in geom.geoms:
            _patch(ax, part, **kw)


def _draw_basemap(ax, base, site_xy, crs, lat: float, pixels: int = 900) -> bool:
    """Mosaic the basemap's tiles around the site, reproject them to ``crs``, draw them."""
    import numpy as np
    from pyproj import Transformer
    from rasterio.transform import from_bounds
    from rasterio.warp import Resampling, reproject

    from neve.maps import basemap as bm

    x0, y0 = site_xy.x - WINDOW_M, site_xy.y - WINDOW_M
    x1, y1 = site_xy.x + WINDOW_M, site_xy.y + WINDOW_M
    to_ll = Transformer.from_crs(crs, 4326, always_xy=True)
    lons, lats = to_ll.transform([x0, x1, x0, x1], [y0, y0, y1, y1])
    bounds = [[min(lats), min(lons)], [max(lats), max(lons)]]
    zoom = bm.static_zoom(base, 2 * WINDOW_M / pixels, lat)
    got = bm.mosaic(base, bounds, zoom)
    if got is None:
        return False
    img, (w, s, e, n) = got
    src_t = from_bounds(w, s, e, n, img.shape[1], img.shape[0])
    dst_t = from_bounds(x0, y0, x1, y1, pixels, pixels)
    out = np.zeros((3, pixels, pixels), dtype=np.uint8)
    reproject(
        np.moveaxis(img, 2, 0), out, src_transform=src_t, src_crs="EPSG:3857",
        dst_transform=dst_t, dst_crs=crs, resampling=Resampling.bilinear,
    )  # fmt: skip
    # already at about the axes' own resolution: no smoothing needed when drawn
    ax.imshow(np.moveaxis(out, 0, 2), extent=(x0, x1, y0, y1), zorder=1, interpolation="nearest")
    return True


def _label(row, units: str) -> str:
    """A zone's label: its id over its value or rule (as on the interactive maps)."""
    from neve.maps.leaflet import LABEL_ID_CHARS, zone_value_text

    zid = str(row["zone_id"])
    zid = zid if len(zid) <= LABEL_ID_CHARS else zid[: LABEL_ID_CHARS - 1] + "\u2026"
    return f"{zid}\n{zone_value_text(row.to_dict(), units)}"
