"""Raster zone layers: a GeoTIFF of ground loads plus an optional study mask.

Each cell holds the ground load in the sidecar's ``value_units``; nodata
(or a cell outside the grid) means the layer has no mapped value there, so
the site is not covered and the next stacked layer may govern.  A cell that
is negative, infinite or beyond the plausibility bound
(:func:`neve.geo.layers.rules.plausible_limit`, 2000 psf) is defective: its sites get
status ``error``, and its id ``cell:<value>`` names the value.  A companion
mask raster named by the sidecar's ``study_mask`` (same grid) marks cells
where a site-specific study is required (nonzero).

Look-ups read one window covering all sites and index it with
``rasterio.transform.rowcol``; neighbouring cells within the search radius
are visited as fixed offsets around each site's cell, with the exact
distance from the site to each cell's rectangle (north-up grids only).
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from neve.engine.errors import LayerError
from neve.geo.layers import rules as R
from neve.geo.layers.hits import Hits, reduce_hits

#: most cell offsets visited in each direction for the neighbour search
MAX_OFFSET = 4


def open_raster_layer(path: Path, meta: dict) -> dict:
    """Validate a raster layer and its mask; return its properties."""
    import rasterio

    try:
        with rasterio.open(path) as ds:
            props = {
                "crs": ds.crs,
                "transform": ds.transform,
                "width": ds.width,
                "height": ds.height,
                "nodata": ds.nodata,
                "bounds": ds.bounds,
                "mask": None,
            }
    except rasterio.errors.RasterioIOError as exc:
        raise LayerError(f"layer {str(path)!r} cannot be read as a raster ({exc})") from None
    if props["crs"] is None:
        raise LayerError(f"raster layer {str(path)!r} has no CRS; accepted: a georeferenced grid")
    t = props["transform"]
    if t.b != 0 or t.d != 0 or t.e >= 0:
        raise LayerError(f"raster layer {str(path)!r} is rotated or flipped; accepted: north-up")
    if meta.get("study_mask"):
        mask = path.with_name(meta["study_mask"])
        if not mask.is_file():
            raise LayerError(f"study_mask {meta['study_mask']!r} not found beside {path.name!r}")
        with rasterio.open(mask) as ms:
            same = (ms.width, ms.height, ms.transform, ms.crs) == (
                props["width"], props["height"], t, props["crs"],
            )  # fmt: skip
        if not same:
            raise LayerError(
                f"study_mask {meta['study_mask']!r} is not on the grid of {path.name!r}; "
                "accepted: a mask with the same size, transform and CRS"
            )
        props["mask"] = mask
    if meta.get("risk_rasters"):
        paths = {}
        for cat, name in meta["risk_rasters"].items():
            q = path.with_name(name)
            if not q.is_file():
                raise LayerError(
                    f"risk_rasters {cat}: {name!r} not found beside {path.name!r}; "
                    "accepted: one raster file per risk category in the layer's folder"
                )
            with rasterio.open(q) as rs:
                same = (rs.width, rs.height, rs.transform, rs.crs) == (
                    props["width"], props["height"], t, props["crs"],
                )  # fmt: skip
            if not same:
                raise LayerError(
                    f"risk_rasters {cat}: {name!r} is not on the grid of {path.name!r}; "
                    "accepted: rasters with the same size, transform and CRS"
                )
            paths[cat] = q
        props["risk_paths"] = paths
    return props


def data_path(layer) -> Path:
    """The raster whose cells give the layer's values (the risk category's, per-risk layers)."""
    return Path(layer.raster.get("data") or layer.path)


def _cell_metres(layer, lat: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Cell width and height on the ground [m] at each site (approximate)."""
    t = layer.raster["transform"]
    crs = layer.raster["crs"]
    if crs.is_geographic:
        dx = abs(t.a) * 111_320.0 * np.cos(np.radians(lat))
        dy = np.full(lat.shape, abs(t.e) * 110_574.0)
    else:
        factor = crs.linear_units_factor[1] if crs.linear_units_factor else 1.0
        dx = np.full(lat.shape, abs(t.a) * factor)
        dy = np.full(lat.shape, abs(t.e) * factor)
    return np.maximum(dx, 1e-6), np.maximum(dy, 1e-6)


def _read_window(path: Path, r0: int, r1: int, c0: int, c1: int):
    import rasterio
    from rasterio.windows import Window

    with rasterio.open(path) as ds:
        return ds.read(1, window=Window(c0, r0, c1 - c0, r1 - r0), masked=True)


def raster_hits(layer, lon, lat, search_m: float | None = None) -> Hits:
    """Look up n sites in a raster layer (see the module notes)."""
    from rasterio.transform import rowcol

    from neve.geo.layers.transform import transformer

    lon = np.asarray(lon, dtype=float)
    lat = np.asarray(lat, dtype=float)
    n = lon.size
    h = Hits.empty(n)
    props = layer.raster
    ok = np.isfinite(lon) & np.isfinite(lat)
    idx = np.flatnonzero(ok)
    if idx.size == 0:
        return h
    x, y = transformer(4326, props["crs"]).transform(lon[idx], lat[idx])
    t = props["transform"]
    fc = (np.asarray(x) - t.c) / t.a  # fractional column
    fr = (np.asarray(y) - t.f) / t.e  # fractional row
    rows, cols = (np.asarray(a) for a in rowcol(t, x, y, op=math.floor))
    H, W = props["height"], props["width"]
    tol = layer.tolerance_m
    search = max(tol, float(search_m or 0.0))
    dx, dy = _cell_metres(layer, lat[idx])
    kx = np.minimum(np.ceil(search / dx), MAX_OFFSET).astype(int)
    ky = np.minimum(np.ceil(search / dy), MAX_OFFSET).astype(int)
    K = int(max(kx.max(initial=0), ky.max(initial=0)))
    near_grid = (rows >= -K) & (rows < H + K) & (cols >= -K) & (cols < W + K)
    if not near_grid.any():
        return h
    r0 = int(max(rows[near_grid].min() - K, 0))
    r1 = int(min(rows[near_grid].max() + K + 1, H))
    c0 = int(max(cols[near_grid].min() - K, 0))
    c1 = int(min(cols[near_grid].max() + K + 1, W))
    if r1 <= r0 or c1 <= c0:
        return h
    band = _read_window(data_path(layer), r0, r1, c0, c1)
    vals = np.ma.filled(band.astype(float), np.nan)
    study = np.zeros(vals.shape, dtype=bool)
    if props["mask"] is not None:
        m = _read_window(props["mask"], r0, r1, c0, c1)
        study = np.ma.filled(m, 0) != 0

    limit = R.plausible_limit(layer.meta["value_units"])

    def cell(rr, cc):
        """value [value_units], state and raw cell value at grid cells; covered flag."""
        inside = (rr >= r0) & (rr < r1) & (cc >= c0) & (cc < c1)
        raw = np.full(rr.shape, np.nan)
        s = np.zeros(rr.shape, dtype=bool)
        raw[inside] = vals[rr[inside] - r0, cc[inside] - c0]
        s[inside] = study[rr[inside] - r0, cc[inside] - c0]
        covered = inside & (~np.isnan(raw) | s)  # NaN is nodata; inf is a defect
        plausible = (raw >= 0) & (raw <= limit)
        state = np.where(s, R.STUDY, np.where(plausible, R.OK, R.BAD)).astype(np.int8)
        v = np.where(state == R.OK, raw, np.nan)
        return v, state, covered, raw

    def ident(raw, state):
        return np.where(state == R.STUDY, "study", np.char.add("cell:", _g(raw)))

    cv, cs, ccov, craw = cell(rows, cols)
    ci = idx[ccov]
    c_val, c_state = cv[ccov] * layer.to_psf, cs[ccov]
    c_id = ident(craw[ccov], c_state).astype(object)
    c_rule = np.where(c_state == R.STUDY, "study", "fixed").astype(object)
    n_parts = []
    for di in range(-K, K + 1):
        for dj in range(-K, K + 1):
            if di == 0 and dj == 0:
                continue
            rr, cc = rows + di, cols + dj
            gap_c = np.maximum(0.0, np.maximum(cc - fc, fc - (cc + 1)))
            gap_r = np.maximum(0.0, np.maximum(rr - fr, fr - (rr + 1)))
            d = np.hypot(gap_c * dx, gap_r * dy)
            v, s, cov, raw = cell(rr, cc)
            sel = cov & (d <= search) & (np.abs(di) <= ky) & (np.abs(dj) <= kx)
            if sel.any():
                n_parts.append((idx[sel], v[sel], s[sel], d[sel], raw[sel]))
    if n_parts:
        ni = np.concatenate([p[0] for p in n_parts])
        nv = np.concatenate([p[1] for p in n_parts])
        ns = np.concatenate([p[2] for p in n_parts])
        nd = np.concatenate([p[3] for p in n_parts])
        nraw = np.concatenate([p[4] for p in n_parts])
    else:
        ni, nv, ns, nd = np.empty(0, int), np.empty(0), np.empty(0, np.int8), np.empty(0)
        nraw = np.empty(0)
    n_id = ident(nraw, ns).astype(object)
    return reduce_hits(
        h, ci, c_val, c_state, np.ones(ci.size, bool), c_id, c_rule,
        np.full(ci.size, -1, dtype=np.intp), ni, nv * layer.to_psf, ns, nd, n_id, tol,
    )  # fmt: skip


def cell_errors(layer, zone_id: np.ndarray) -> np.ndarray:
    """Why sites in defective cells (ids ``cell:<value>``) have status error."""
    vu = layer.meta["value_units"]
    limit = R.plausible_limit(vu)
    out = []
    for zid in np.asarray(zone_id, dtype=object):
        text = str(zid).removeprefix("cell:")
        out.append(
            f"The grid cell of layer {layer.name!r} at this site holds {text} {vu}, which is not "
            f"a plausible {layer.meta.get('quantity', 'pg')} value (accepted: 0 to {limit:.4g} {vu})."
        )
    return np.array(out, dtype=object)


def _g(v: np.ndarray) -> np.ndarray:
    return np.array([f"{x:g}" for x in np.asarray(v, dtype=float)], dtype=str)


def raster_view(layer, center, radius_m: float):
    """Polygonize the raster (a window around ``center``) for the maps."""
    import geopandas as gpd
    import rasterio
    from rasterio.features import shapes
    from rasterio.warp import transform_bounds
    from rasterio.windows import from_bounds

    props = layer.raster
    with rasterio.open(data_path(layer)) as ds:
        if center is None:
            window = rasterio.windows.Window(0, 0, ds.width, ds.height)
        else:
            lat, lon = float(center[0]), float(center[1])
            dlat = radius_m / 111_320.0
            dlon = radius_m / (111_320.0 * max(math.cos(math.radians(lat)), 0.01))
            b = transform_bounds(4326, ds.crs, lon - dlon, lat - dlat, lon + dlon, lat + dlat)
            window = from_bounds(*b, transform=ds.transform).round_offsets().round_lengths()
            window = window.intersection(rasterio.windows.Window(0, 0, ds.width, ds.height))
        band = ds.read(1, window=window, masked=True)
        wt = ds.window_transform(window)
    recs = []
    valid = ~np.ma.getmaskarray(band)
    data = np.ma.filled(band.astype("float32"), 0)
    for geom, value in shapes(data, mask=valid, transform=wt):
        recs.append(("cell:" + f"{value:g}", "fixed", float(value), False, geom))
    if props["mask"] is not None:
        with rasterio.open(props["mask"]) as ms:
            m = (ms.read(1, window=window) != 0).astype("uint8")
        for geom, _ in shapes(m, mask=m.astype(bool), transform=wt):
            recs.append(("study", "study", math.nan, True, geom))
    from shapely.geometry import shape

    gdf = gpd.GeoDataFrame(
        {
            "zone_id": [r[0] for r in recs],
            "rule": [r[1] for r in recs],
            "pg": [r[2] for r in recs],
            "study": [r[3] for r in recs],
        },
        geometry=[shape(r[4]) for r in recs],
        crs=props["crs"],
    )
    gdf["pg_psf"] = gdf["pg"] * layer.to_psf
    gdf["elev_max"] = np.nan
    gdf["note"] = ""
    gdf["source"] = ""
    gdf["pg_lo"] = np.nan  # a raster cell holds one value: no range by elevation
    gdf["pg_hi"] = np.nan
    cols = ["zone_id", "rule", "pg", "pg_psf", "elev_max", "note", "source", "study",
            "pg_lo", "pg_hi", "geometry"]  # fmt: skip
    return gdf[cols].to_crs(4326)
