"""Build the invented demo basemap of Skerrow Island as raster MBTiles.

Skerrow Island, the town of Port Hallin, its villages and its roads do not
exist: they are drawn here, from the same invented coast and terrain that
``build_demo.py`` uses for the demo layers and DEM, so that the demo maps
show geographic context (sea, coast, terrain tints, roads, towns) with no
internet.  Nothing here is traced from any real map.

Output: ``geo/demo/skerrow_basemap.mbtiles`` (unless ``--out`` is given), an
MBTiles 1.3 file (SQLite; ``metadata`` and ``tiles`` tables, PNG tiles in the
Web Mercator tile grid, rows numbered from the south as the MBTiles format
asks).  Each zoom level is drawn as one image with matplotlib (Agg) and cut
into 256 px tiles, so that lines and labels run across tile edges without
seams; tiles are palette PNGs to keep the file small.  The build is
deterministic: the same inputs give the same bytes.

Run: ``python data_recipes/build_demo_basemap.py [--out FILE] [--max-zoom 13]``
"""

from __future__ import annotations

import argparse
import io
import math
import sqlite3
import sys
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import build_demo  # noqa: E402  (the invented coast and terrain)

DEFAULT_OUT = HERE.parent / "geo" / "demo" / "skerrow_basemap.mbtiles"
TILE = 256
#: half of the Web Mercator square [m]
ORIGIN = 20037508.342789244
ATTRIBUTION = "Invented demo basemap of Skerrow Island (neve demo data, not a real place)"

#: colours of the basemap: muted, so that the zone colours on top stay readable
SEA = "#d6e4ee"
SEA_LINE = "#9fb9cc"
LAND = "#f1efe6"
TINTS = ("#eae8d8", "#e0dcc6", "#d5cfb6", "#c9c1a6", "#bdb49a")
ROAD_MAJOR = "#8a5a3c"
ROAD_MINOR = "#a8876e"
TOWN = "#cdb9a8"
LABEL = "#3b3f55"

#: invented roads in local km (east, north) from the island centre
ROADS_MAJOR = (
    # the cross-island road: Port Hallin - the central pass - Ostrand
    ((-14.0, -2.0), (-9.0, -1.0), (-4.0, -3.5), (2.0, -5.0), (9.0, -4.0), (15.5, -2.5), (19.5, -1.0)),
    # the north road: Port Hallin - Brae
    ((-14.0, -0.5), (-12.5, 3.5), (-9.0, 7.5), (-5.5, 10.5)),
)
ROADS_MINOR = (
    ((-5.5, 10.5), (0.0, 11.5), (6.0, 10.0), (11.0, 7.0)),  # Brae - Ness farms
    ((15.5, -2.5), (16.0, 3.5), (11.0, 7.0)),  # Ostrand - Ness farms
    ((-14.0, -2.0), (-17.0, -5.0), (-19.0, -7.0)),  # to the Cape Gale light
    ((2.0, -5.0), (3.0, -9.5), (5.0, -12.0)),  # to Sutherby
)
#: invented places: (name, x km, y km, kind)
PLACES = (
    ("Port Hallin", -14.0, -1.5, "town"),
    ("Ostrand", 19.5, -1.0, "village"),
    ("Brae", -5.5, 10.5, "village"),
    ("Sutherby", 5.0, -12.0, "village"),
    ("Ness farms", 11.0, 7.0, "hamlet"),
    ("Cape Gale light", -19.0, -7.0, "hamlet"),
)
#: named features: (name, x km, y km, min zoom)
FEATURES = (
    ("Mount Skerrow", 4.0, 2.0, 10),
    ("Hallin Fell", -10.0, 6.0, 11),
    ("Skerrow Island", 0.0, -17.5, 8),
)


def _merc(lon, lat):
    x = np.radians(lon) * 6378137.0
    y = np.log(np.tan(np.pi / 4 + np.radians(lat) / 2)) * 6378137.0
    return x, y


def _local_to_merc(xy_km):
    from pyproj import Transformer

    t = Transformer.from_crs(build_demo.UTM, 3857, always_xy=True)
    cx, cy = Transformer.from_crs(4326, build_demo.UTM, always_xy=True).transform(
        build_demo.CENTER_LON, build_demo.CENTER_LAT
    )
    xy = np.asarray(xy_km, dtype=float)
    return t.transform(xy[..., 0] * 1000.0 + cx, xy[..., 1] * 1000.0 + cy)


def _merc_to_local(mx, my):
    from pyproj import Transformer

    t = Transformer.from_crs(3857, build_demo.UTM, always_xy=True)
    cx, cy = Transformer.from_crs(4326, build_demo.UTM, always_xy=True).transform(
        build_demo.CENTER_LON, build_demo.CENTER_LAT
    )
    ux, uy = t.transform(mx, my)
    return (np.asarray(ux) - cx) / 1000.0, (np.asarray(uy) - cy) / 1000.0


def tile_range(zoom: int, west: float, south: float, east: float, north: float):
    """Columns and rows (XYZ, rows from the north) of the tiles covering a lon/lat box."""
    n = 2**zoom

    def col(lon):
        return int(math.floor((lon + 180.0) / 360.0 * n))

    def row(lat):
        r = math.radians(lat)
        return int(math.floor((1.0 - math.asinh(math.tan(r)) / math.pi) / 2.0 * n))

    return range(col(west), col(east) + 1), range(row(north), row(south) + 1)


def _draw_zoom(zoom: int, cols: range, rows: range) -> np.ndarray:
    """The RGBA image of the tiles ``cols`` x ``rows`` at ``zoom``, drawn as one figure."""
    import matplotlib

    matplotlib.use("Agg", force=True)
    import matplotlib.pyplot as plt
    import shapely
    from matplotlib import patheffects
    from matplotlib.patches import Polygon as MplPolygon

    size = 2 * ORIGIN / 2**zoom
    x0 = -ORIGIN + cols.start * size
    x1 = -ORIGIN + cols.stop * size
    y1 = ORIGIN - rows.start * size
    y0 = ORIGIN - rows.stop * size
    w_px, h_px = len(cols) * TILE, len(rows) * TILE
    dpi = 100
    fig = plt.figure(figsize=(w_px / dpi, h_px / dpi), dpi=dpi)
    ax = fig.add_axes((0, 0, 1, 1))
    ax.set_xlim(x0, x1)
    ax.set_ylim(y0, y1)
    ax.axis("off")
    fig.patch.set_facecolor(SEA)
    m_per_px = size / TILE
    pt = 72.0 / dpi  # points per pixel

    # land with terrain tints (the same invented terrain as the demo DEM)
    isl = build_demo.island_outline()
    coast = np.asarray(isl.exterior.coords)
    cx_m, cy_m = _local_to_merc(coast)
    land_xy = np.column_stack([cx_m, cy_m])
    ax.add_patch(MplPolygon(land_xy, closed=True, facecolor=LAND, edgecolor="none", zorder=1))
    step = max(m_per_px * 2.0, 60.0)
    gx = np.arange(x0, x1 + step, step)
    gy = np.arange(y0, y1 + step, step)
    mx, my = np.meshgrid(gx, gy)
    lx, ly = _merc_to_local(mx, my)
    z = build_demo.dem_heights(lx, ly)
    dist = shapely.distance(isl.exterior, shapely.points(lx, ly))
    z = z * np.clip(dist / 2.0, 0.0, 1.0)
    z = np.where(shapely.contains_xy(isl, lx, ly), z, np.nan)
    levels = [150.0, 400.0, 700.0, 1000.0, 1300.0, 5000.0]
    ax.contourf(mx, my, z, levels=levels, colors=TINTS, zorder=2, antialiased=True)
    ax.contour(mx, my, z, levels=levels[:-1], colors="#b3aa8c", linewidths=0.4, zorder=2.5)
    ax.plot(cx_m, cy_m, color=SEA_LINE, lw=1.2, zorder=3)

    # roads, wider at larger zooms
    major_w = max(0.8, min(4.0, 0.45 * (zoom - 7))) * pt * 1.6
    minor_w = major_w * 0.6
    for road in ROADS_MAJOR:
        rx, ry = _local_to_merc(np.asarray(road))
        ax.plot(rx, ry, color="white", lw=major_w + 1.6 * pt, solid_capstyle="round", zorder=4)
        ax.plot(rx, ry, color=ROAD_MAJOR, lw=major_w, solid_capstyle="round", zorder=4.1)
    if zoom >= 10:
        for road in ROADS_MINOR:
            rx, ry = _local_to_merc(np.asarray(road))
            ax.plot(rx, ry, color=ROAD_MINOR, lw=minor_w, ls=(0, (4, 2)), zorder=4)

    # the built-up area of Port Hallin and its street grid
    town = np.asarray([(-15.6, -3.2), (-12.4, -3.2), (-12.4, 1.6), (-15.6, 1.6)])
    tx, ty = _local_to_merc(town)
    ax.add_patch(
        MplPolygon(np.column_stack([tx, ty]), closed=True, facecolor=TOWN, edgecolor="none",
                   alpha=0.8, zorder=3.5)
    )  # fmt: skip
    if zoom >= 12:
        for x in np.arange(-15.2, -12.4, 0.55):
            sx, sy = _local_to_merc(np.asarray([(x, -3.2), (x, 1.6)]))
            ax.plot(sx, sy, color="white", lw=1.2 * pt, zorder=3.6)
        for y in np.arange(-2.8, 1.6, 0.55):
            sx, sy = _local_to_merc(np.asarray([(-15.6, y), (-12.4, y)]))
            ax.plot(sx, sy, color="white", lw=1.2 * pt, zorder=3.6)

    halo = [patheffects.withStroke(linewidth=3 * pt, foreground="white")]
    for name, x, y, kind in PLACES:
        if kind == "hamlet" and zoom < 11 or kind == "village" and zoom < 9:
            continue
        px, py = _local_to_merc(np.asarray([x, y]))
        size_px = {"town": 14, "village": 12, "hamlet": 11}[kind]
        ax.plot(px, py, marker="s" if kind == "town" else "o", ms=5 * pt * 1.4, color=LABEL,
                zorder=5)  # fmt: skip
        ax.text(px, py + 6 * m_per_px, name, fontsize=size_px * pt, color=LABEL, ha="center",
                va="bottom", zorder=6, path_effects=halo,
                fontweight="bold" if kind == "town" else "normal")  # fmt: skip
    for name, x, y, min_zoom in FEATURES:
        if zoom < min_zoom:
            continue
        px, py = _local_to_merc(np.asarray([x, y]))
        ax.text(px, py, name, fontsize=12 * pt, color="#5b5340", style="italic", ha="center",
                va="center", zorder=6, path_effects=halo)  # fmt: skip

    fig.canvas.draw()
    img = np.asarray(fig.canvas.buffer_rgba())[:h_px, :w_px].copy()
    plt.close(fig)
    return img


def _png(tile: np.ndarray) -> bytes:
    from PIL import Image

    im = Image.fromarray(tile[:, :, :3], "RGB").quantize(colors=48, method=Image.Quantize.MEDIANCUT)
    buf = io.BytesIO()
    im.save(buf, format="PNG", optimize=True)
    return buf.getvalue()


def build(out: Path = DEFAULT_OUT, min_zoom: int = 8, max_zoom: int = 13) -> Path:
    """Write the MBTiles file; return its path."""
    from pyproj import Transformer

    isl = build_demo.island_outline().buffer(25.0)  # a wide margin of sea around the coast
    t = Transformer.from_crs(build_demo.UTM, 4326, always_xy=True)
    cx, cy = Transformer.from_crs(4326, build_demo.UTM, always_xy=True).transform(
        build_demo.CENTER_LON, build_demo.CENTER_LAT
    )
    minx, miny, maxx, maxy = isl.bounds
    west, south = t.transform(minx * 1000 + cx, miny * 1000 + cy)
    east, north = t.transform(maxx * 1000 + cx, maxy * 1000 + cy)
    out.parent.mkdir(parents=True, exist_ok=True)
    tmp = out.with_name(out.name + ".tmp")
    tmp.unlink(missing_ok=True)
    con = sqlite3.connect(tmp)
    con.execute("CREATE TABLE metadata (name TEXT, value TEXT)")
    con.execute(
        "CREATE TABLE tiles (zoom_level INTEGER, tile_column INTEGER, tile_row INTEGER, "
        "tile_data BLOB)"
    )
    con.execute("CREATE UNIQUE INDEX tile_index ON tiles (zoom_level, tile_column, tile_row)")
    meta = {
        "name": "Skerrow Island demo basemap (invented)",
        "format": "png",
        "type": "baselayer",
        "version": "1",
        "description": "Invented coast, terrain, roads and towns of the neve demo island; "
        "not a real place, never for navigation or design",
        "attribution": ATTRIBUTION,
        "bounds": f"{west:.5f},{south:.5f},{east:.5f},{north:.5f}",
        "center": f"{build_demo.CENTER_LON},{build_demo.CENTER_LAT},11",
        "minzoom": str(min_zoom),
        "maxzoom": str(max_zoom),
        "demo": "true",
    }
    con.executemany("INSERT INTO metadata VALUES (?, ?)", sorted(meta.items()))
    count = 0
    for zoom in range(min_zoom, max_zoom + 1):
        cols, rows = tile_range(zoom, west, south, east, north)
        img = _draw_zoom(zoom, cols, rows)
        for j, row in enumerate(rows):
            for i, col in enumerate(cols):
                tile = img[j * TILE : (j + 1) * TILE, i * TILE : (i + 1) * TILE]
                tms_row = 2**zoom - 1 - row  # MBTiles numbers rows from the south
                con.execute(
                    "INSERT INTO tiles VALUES (?, ?, ?, ?)", (zoom, col, tms_row, _png(tile))
                )
                count += 1
    con.commit()
    con.execute("VACUUM")
    con.close()
    tmp.replace(out)
    print(f"wrote {out} ({count} tiles, zooms {min_zoom}-{max_zoom}, {out.stat().st_size:,} bytes)")
    return out


def main() -> None:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--out", type=Path, default=DEFAULT_OUT)
    p.add_argument("--min-zoom", type=int, default=8)
    p.add_argument("--max-zoom", type=int, default=13)
    a = p.parse_args()
    build(a.out, a.min_zoom, a.max_zoom)


if __name__ == "__main__":
    main()
