"""Basemaps: what lies under the zones of neve's maps.

``--basemap`` takes one of:

``auto`` (the default)
    the shipped demo basemap when the map shows the demo data, otherwise
    ``none`` (a plain background): a map of a real layer never shows an
    invented island under it;
``none``
    no basemap;
``demo``
    the invented basemap of the demo island (``geo/demo/skerrow_basemap.mbtiles``;
    maps get its path from the caller or from the demo layers' views, as
    ``demo_basemap``: the maps never look into ``neve.geo``);
``osm``
    OpenStreetMap's standard tiles, loaded from the internet by the browser;
an ``http(s)://`` URL template with ``{z}``, ``{x}`` and ``{y}``
    any raster tile server, loaded by the browser; its attribution must be
    given (``--basemap-attribution``), since every tile provider asks for one;
a ``.mbtiles`` file
    raster tiles (PNG, JPEG or WebP) in an MBTiles file, read with the
    standard library's ``sqlite3``; the tiles around what the map shows are
    embedded in the page as ``data:`` URIs, so the page still opens offline.

The static map of the calculation package draws only offline basemaps (an
MBTiles file or the demo basemap): neve never fetches tiles from a server.

The MBTiles format numbers tile rows from the south (TMS); web maps number
them from the north (XYZ).  :func:`xyz_row` converts between them.
"""

from __future__ import annotations

import base64
import functools
import math
import sqlite3
from dataclasses import dataclass, field
from pathlib import Path

from neve.engine.errors import InputError

#: what ``--basemap`` accepts, for messages
ACCEPTED = (
    "auto, none, demo, osm, an http(s) URL template with {z}, {x} and {y}, "
    "or a raster .mbtiles file"
)
#: keywords of ``--basemap``
KEYWORDS = ("auto", "none", "demo", "osm")
OSM_URL = "https://tile.openstreetmap.org/{z}/{x}/{y}.png"
OSM_ATTRIBUTION = "\u00a9 OpenStreetMap contributors"
#: most tile bytes embedded in one page [bytes] (before base64)
EMBED_BUDGET = 2_500_000
#: a transparent 1x1 PNG, shown where the file has no tile
BLANK_TILE = (
    "data:image/png;base64,"
    "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAQAAAC1HAwCAAAAC0lEQVR42mNkYAAAAAYAAjCB0C8AAAAASUVORK5CYII="
)
_MIME = {"png": "image/png", "jpg": "image/jpeg", "jpeg": "image/jpeg", "webp": "image/webp"}


@dataclass(frozen=True)
class Basemap:
    """A resolved basemap choice.

    ``kind`` is ``none``, ``url`` (tiles loaded by the browser) or
    ``mbtiles`` (tiles read from ``path`` and embedded).
    """

    kind: str
    label: str
    url: str | None = None
    attribution: str = ""
    path: Path | None = None
    demo: bool = False
    meta: dict = field(default_factory=dict, compare=False)

    @property
    def offline(self) -> bool:
        return self.kind in ("none", "mbtiles")

    @property
    def drawn(self) -> bool:
        return self.kind != "none"


NONE = Basemap("none", "none")


def _check_url(url: str) -> None:
    from urllib.parse import urlsplit

    parts = urlsplit(url)
    if parts.scheme not in ("http", "https") or not parts.netloc:
        raise InputError("basemap", f"{url!r} is not an http(s) URL", ACCEPTED)
    for key in ("{z}", "{x}", "{y}"):
        if key not in url:
            raise InputError("basemap", f"the URL template {url!r} has no {key}", ACCEPTED)
    if any(c in url for c in "\"'<>`\\ \n\r\t"):
        raise InputError(
            "basemap", f"the URL template {url!r} holds quotes, brackets or spaces", ACCEPTED
        )


@functools.lru_cache(maxsize=8)
def _read_meta(path: str, mtime: float) -> dict:
    con = _connect(Path(path))
    try:
        rows = con.execute("SELECT name, value FROM metadata").fetchall()
        con.execute("SELECT zoom_level, tile_column, tile_row, tile_data FROM tiles LIMIT 1")
        zooms = con.execute("SELECT MIN(zoom_level), MAX(zoom_level) FROM tiles").fetchone()
    except sqlite3.DatabaseError as exc:
        raise InputError(
            "basemap", f"{Path(path).name} is not an MBTiles file ({exc})", ACCEPTED
        ) from None
    finally:
        con.close()
    meta = {str(k): str(v) for k, v in rows}
    fmt = meta.get("format", "png").lower()
    if fmt not in _MIME:
        raise InputError(
            "basemap",
            f"{Path(path).name} holds {fmt!r} tiles; neve draws raster tiles only",
            "an MBTiles file of png, jpg or webp tiles",
        )
    if zooms[0] is None:
        raise InputError("basemap", f"{Path(path).name} holds no tiles", ACCEPTED)
    meta["_minzoom"], meta["_maxzoom"] = int(zooms[0]), int(zooms[1])
    return meta


def _connect(path: Path) -> sqlite3.Connection:
    try:
        return sqlite3.connect(f"{path.resolve().as_uri()}?mode=ro", uri=True)
    except sqlite3.Error as exc:
        raise InputError("basemap", f"cannot open {path.name} ({exc})", ACCEPTED) from None


def _mbtiles(path: Path, *, demo: bool = False, attribution: str | None = None) -> Basemap:
    if not path.is_file():
        raise InputError("basemap", f"{path.name}: no such file", ACCEPTED)
    meta = _read_meta(str(path.resolve()), path.stat().st_mtime)
    attr = attribution if attribution is not None else meta.get("attribution", "")
    return Basemap(
        "mbtiles",
        "demo" if demo else path.name,
        attribution=str(attr),
        path=path,
        demo=demo or meta.get("demo") == "true",
        meta=meta,
    )


def resolve(
    choice: str | None,
    attribution: str | None = None,
    *,
    demo_data: bool = False,
    tiles: str | None = None,
    demo_file: str | Path | None = None,
) -> Basemap:
    """Resolve a ``--basemap`` value (and the older ``--tiles``) to a :class:`Basemap`.

    ``tiles`` (``none`` or ``osm``) is the older option; it applies when
    ``choice`` is ``auto`` or not given.  ``demo_data`` says whether the map
    shows the demo data (for ``auto``); ``demo_file`` is the demo basemap
    (``auto`` gives none without it).
    """
    text = "auto" if choice is None else str(choice).strip()
    low = text.lower()
    if low == "auto" and tiles and str(tiles).lower() != "none":
        low = str(tiles).lower()
    if low == "auto":
        low = "demo" if demo_data and demo_file is not None else "none"
    if low == "none":
        return NONE
    if low == "demo":
        if demo_file is None:
            raise InputError("basemap", "the demo basemap is not installed", ACCEPTED)
        return _mbtiles(Path(demo_file), demo=True, attribution=attribution)
    if low == "osm":
        return Basemap("url", "osm", url=OSM_URL, attribution=attribution or OSM_ATTRIBUTION)
    if low.startswith(("http://", "https://")):
        _check_url(text)
        if not attribution or not str(attribution).strip():
            raise InputError(
                "basemap-attribution",
                "a URL template needs the attribution its tile provider asks for",
                "the attribution text, e.g. --basemap-attribution '(c) Example Maps'",
            )
        return Basemap("url", text, url=text, attribution=str(attribution))
    if low.endswith(".mbtiles"):
        return _mbtiles(Path(text), attribution=attribution)
    raise InputError("basemap", f"{text!r} is not a basemap neve knows", ACCEPTED)


def as_basemap(value, *, tiles: str | None = None, demo_data: bool = False, views=()) -> Basemap:
    """``value`` as a :class:`Basemap`: one already resolved, or a ``--basemap`` text (or None).

    The demo basemap's path comes from the views (``demo_basemap``, set by the
    demo layers).
    """
    if isinstance(value, Basemap):
        return value
    demo_file = next((v["demo_basemap"] for v in views or () if v.get("demo_basemap")), None)
    return resolve(value, tiles=tiles, demo_data=demo_data, demo_file=demo_file)


def fit_zoom(bounds, pixels: int = 900) -> int:
    """The zoom at which ``bounds`` ``[[s, w], [n, e]]`` about fills ``pixels`` across."""
    (south, west), (north, east) = bounds
    x0, y0 = tile_xy(north, west, 0)
    x1, y1 = tile_xy(south, east, 0)
    span = max(abs(x1 - x0), abs(y1 - y0), 1e-9)
    return int(max(0, min(19, math.floor(math.log2(pixels / 256 / span)))))


# --- tiles --------------------------------------------------------------------------


def tile_xy(lat: float, lon: float, zoom: int) -> tuple[float, float]:
    """Fractional XYZ tile column and row (rows from the north) of a point."""
    n = 2**zoom
    lat = max(min(lat, 85.0511), -85.0511)
    x = (lon + 180.0) / 360.0 * n
    y = (1.0 - math.asinh(math.tan(math.radians(lat))) / math.pi) / 2.0 * n
    return x, y


def xyz_row(tms_row: int, zoom: int) -> int:
    """The XYZ row (from the north) of an MBTiles (TMS, from the south) row; its own inverse."""
    return 2**zoom - 1 - tms_row


def tile_bounds(zoom: int, col: int, row: int) -> tuple[float, float, float, float]:
    """(west, south, east, north) in Web Mercator metres of an XYZ tile."""
    origin = 20037508.342789244
    size = 2 * origin / 2**zoom
    west = -origin + col * size
    north = origin - row * size
    return west, north - size, west + size, north


def _ranges(bounds, zoom: int):
    (south, west), (north, east) = bounds
    x0, y0 = tile_xy(north, west, zoom)
    x1, y1 = tile_xy(south, east, zoom)
    n = 2**zoom
    cols = range(max(int(math.floor(x0)), 0), min(int(math.floor(x1)), n - 1) + 1)
    rows = range(max(int(math.floor(y0)), 0), min(int(math.floor(y1)), n - 1) + 1)
    return cols, rows


def read_tiles(basemap: Basemap, zoom: int, bounds) -> dict[tuple[int, int], bytes]:
    """The tiles of ``basemap`` at ``zoom`` covering ``bounds`` ``[[s, w], [n, e]]``.

    Keys are XYZ ``(col, row)``; tiles the file does not hold are left out.
    """
    cols, rows = _ranges(bounds, zoom)
    if not len(cols) or not len(rows):
        return {}
    tms_lo, tms_hi = xyz_row(rows.stop - 1, zoom), xyz_row(rows.start, zoom)
    con = _connect(basemap.path)
    try:
        got = con.execute(
            "SELECT tile_column, tile_row, tile_data FROM tiles WHERE zoom_level = ? "
            "AND tile_column BETWEEN ? AND ? AND tile_row BETWEEN ? AND ?",
            (zoom, cols.start, cols.stop - 1, tms_lo, tms_hi),
        ).fetchall()
    except sqlite3.DatabaseError as exc:
        raise InputError("basemap", f"cannot read {basemap.path.name} ({exc})", ACCEPTED) from None
    finally:
        con.close()
    return {(int(c), xyz_row(int(r), zoom)): bytes(d) for c, r, d in got}


def count_tiles(bounds, zoom: int) -> int:
    cols, rows = _ranges(bounds, zoom)
    return len(cols) * len(rows)


def embedded_tiles(basemap: Basemap, bounds, view_zoom: int, *, budget: int = EMBED_BUDGET):
    """The tiles a page embeds, as layers: ``[(tiles, min_zoom, max_zoom), ...]``.

    ``tiles`` maps ``"z/x/y"`` to a ``data:`` URI.  The first layer holds the
    file's whole extent, from its coarsest zoom up while a third of
    ``budget`` (bytes) lasts, so that the map never shows a hole when panned
    or zoomed out; the second holds the finer zooms around ``bounds`` (three
    times its size, the screen being wider than what is fitted), coarse
    first, while the budget lasts.  Leaflet enlarges the largest zoom
    embedded when the reader zooms in further.
    """
    meta = basemap.meta
    lo, hi = meta["_minzoom"], meta["_maxzoom"]
    mime = _MIME[meta.get("format", "png").lower()]
    used = 0

    def take(zoom, area, limit, out) -> bool:
        nonlocal used
        tiles = read_tiles(basemap, zoom, area)
        size = sum(len(d) for d in tiles.values())
        if used + size > limit:
            return False
        for (c, r), data in sorted(tiles.items()):
            out[f"{zoom}/{c}/{r}"] = f"data:{mime};base64,{base64.b64encode(data).decode('ascii')}"
        used += size
        return True

    layers = []
    full = _file_bounds(meta) or bounds
    coarse: dict[str, str] = {}
    top = lo
    take(lo, full, float("inf"), coarse)  # the coarsest zoom always
    for zoom in range(lo + 1, hi + 1):
        if not take(zoom, full, budget / 3, coarse):
            break
        top = zoom
    layers.append((coarse, lo, top))
    (s, w), (n, e) = bounds
    dy, dx = n - s, e - w
    around = [[max(s - dy, -85.0), w - dx], [min(n + dy, 85.0), e + dx]]
    detail: dict[str, str] = {}
    first = top + 1
    for zoom in range(first, hi + 1):
        if not take(zoom, around, budget, detail):
            break
        top = zoom
    if detail:
        layers.append((detail, first, top))
    return layers


def covers(basemap: Basemap, bounds) -> bool:
    """Whether an MBTiles basemap holds tiles anywhere in ``bounds`` (URL basemaps: always)."""
    if basemap.kind != "mbtiles":
        return basemap.drawn
    full = _file_bounds(basemap.meta)
    if full is None:
        return True
    (s, w), (n, e) = bounds
    (fs, fw), (fn, fe) = full
    return not (e < fw or w > fe or n < fs or s > fn)


def _file_bounds(meta: dict):
    try:
        w, s, e, n = (float(v) for v in str(meta.get("bounds", "")).split(","))
    except ValueError:
        return None
    return [[s, w], [n, e]]


def mosaic(basemap: Basemap, bounds, zoom: int):
    """An RGB mosaic of the tiles covering ``bounds`` at ``zoom``.

    Returns ``(array, (west, south, east, north))`` in Web Mercator metres,
    or ``None`` when the file has no tile there.
    """
    import io

    import numpy as np
    from PIL import Image

    tiles = read_tiles(basemap, zoom, bounds)
    if not tiles:
        return None
    cols, rows = _ranges(bounds, zoom)
    img = np.full((len(rows) * 256, len(cols) * 256, 3), 255, dtype=np.uint8)
    for (c, r), data in tiles.items():
        try:
            tile = Image.open(io.BytesIO(data)).convert("RGB")
        except Exception as exc:  # a damaged tile: name the file, not a traceback
            raise InputError(
                "basemap", f"{basemap.path.name} holds a tile neve cannot read ({exc})", ACCEPTED
            ) from None
        if tile.size != (256, 256):
            tile = tile.resize((256, 256))
        j, i = r - rows.start, c - cols.start
        img[j * 256 : (j + 1) * 256, i * 256 : (i + 1) * 256] = np.asarray(tile)
    west, _, _, north = tile_bounds(zoom, cols.start, rows.start)
    _, south, east, _ = tile_bounds(zoom, cols.stop - 1, rows.stop - 1)
    return img, (west, south, east, north)


def static_zoom(basemap: Basemap, metres_per_pixel: float, lat: float) -> int:
    """The file's zoom whose pixels come closest to ``metres_per_pixel`` without being coarser."""
    lo, hi = basemap.meta["_minzoom"], basemap.meta["_maxzoom"]
    ground = 2 * 20037508.342789244 / 256 * math.cos(math.radians(lat))
    want = math.log2(ground / max(metres_per_pixel, 1e-6))
    return int(min(max(math.ceil(want), lo), hi))
