"""Vectorized look-up of many sites in one zone layer.

For a vector layer :func:`layer_hits` does, for all sites at once:

1. point-in-zone in the layer's own CRS: one ``STRtree.query`` with the
   ``intersects`` predicate (a site exactly on a shared edge lies in both
   zones; it is an overlap only if it is inside the interior of two zones);
2. neighbours: one ``STRtree.query(..., predicate="dwithin")`` in World
   Mercator (EPSG:3395), whose distances are turned into metres on the
   ground by dividing by the ellipsoidal Mercator scale factor
   ``k = sec(phi) sqrt(1 - e^2 sin^2 phi)`` at the site (conformal, so
   exact in every direction for short distances; accurate to well under
   1 % within a few kilometres, to 80 degrees of latitude);
3. the zone rules on every (site, zone) pair (:func:`neve.geo.layers.rules.evaluate`);
4. reductions per site with numpy (``np.maximum.at`` and friends).

Raster layers are looked up in :mod:`neve.geo.layers.raster`; both give the
same :class:`neve.geo.layers.hits.Hits`, reduced by
:func:`neve.geo.layers.hits.reduce_hits`.
"""

from __future__ import annotations

import numpy as np

from neve.engine.units import M_PER_FT
from neve.geo.layers import rules as R
from neve.geo.layers.hits import (  # noqa: F401  (Hits and its names re-exported: their old home)
    NONE,
    RANK,
    Hits,
    reduce_hits,
    value_key,
)

#: WGS 84 first eccentricity squared
E2 = 0.00669437999014


def mercator_scale(lat) -> np.ndarray:
    """Scale factor of World Mercator (EPSG:3395) at latitude ``lat`` [degrees] [-]."""
    phi = np.radians(np.clip(np.asarray(lat, dtype=float), -89.9, 89.9))
    return np.sqrt(1.0 - E2 * np.sin(phi) ** 2) / np.cos(phi)


#: from this many sites on, the grown-union and shrunk-zone prefilters are used (they cost a
#: buffer of every zone once per layer, which a single site does not repay)
PREFILTER_MIN_SITES = 2000
#: up to this many zones, bounding boxes are tested with numpy instead of an STRtree
FEW_ZONES = 64


#: the zone-box grid of :class:`BoxGrid` aims at about this many cells per zone
GRID_CELLS_PER_ZONE = 4
#: a grid whose (zone, cell) entries would exceed this many per zone (a few zones much larger
#: than the rest) is not built: the layer's STRtree is queried instead
GRID_MAX_ENTRIES_PER_ZONE = 64


class BoxGrid:
    """A uniform grid over a layer's zone bounding boxes, for point look-ups in numpy.

    Every zone is entered in each grid cell its bounding box touches; a point's
    candidates are the zones entered in its cell whose box holds it: the same
    pairs as an STRtree query of the point (a superset of the zones that hold it),
    found without building point geometries.  Cell indices are ``floor`` of the
    offset over the cell size, for the boxes and the points alike, so a point on
    a box's edge finds that box (``floor`` is monotonic).

    Parameters
    ----------
    bounds : numpy.ndarray
        ``(n, 4)`` zone bounds ``minx, miny, maxx, maxy`` (layer CRS); NaN rows
        (empty geometries) are never candidates.
    """

    def __init__(self, bounds: np.ndarray):
        b = np.asarray(bounds, dtype=float).reshape(-1, 4)
        self.bounds = b
        ok = np.isfinite(b).all(axis=1)
        self.usable = bool(ok.any())
        if not self.usable:
            return
        zones = np.flatnonzero(ok)
        x0, y0 = b[ok, 0].min(), b[ok, 1].min()
        x1, y1 = b[ok, 2].max(), b[ok, 3].max()
        w, h = x1 - x0, y1 - y0
        cells = max(1, GRID_CELLS_PER_ZONE * zones.size)
        if w > 0 and h > 0:
            nx = int(np.clip(np.ceil(np.sqrt(cells * w / h)), 1, 4096))
            ny = int(np.clip(np.ceil(cells / nx), 1, 4096))
        else:  # all boxes on one line (or one point)
            nx = int(min(cells, 4096)) if w > 0 else 1
            ny = int(min(cells, 4096)) if h > 0 else 1
        self.x0, self.y0, self.x1, self.y1 = x0, y0, x1, y1
        self.nx, self.ny = nx, ny
        self.cw = w / nx if w > 0 else 1.0
        self.ch = h / ny if h > 0 else 1.0
        ix0, iy0 = self._cell_x(b[zones, 0]), self._cell_y(b[zones, 1])
        ix1, iy1 = self._cell_x(b[zones, 2]), self._cell_y(b[zones, 3])
        wide = ix1 - ix0 + 1
        per = wide * (iy1 - iy0 + 1)
        total = int(per.sum())
        if total > GRID_MAX_ENTRIES_PER_ZONE * zones.size:
            self.usable = False
            return
        rep = np.repeat(np.arange(zones.size), per)
        local = np.arange(total) - np.repeat(np.cumsum(per) - per, per)
        cell = (iy0[rep] + local // wide[rep]) * nx + ix0[rep] + local % wide[rep]
        order = np.argsort(cell, stable=True)  # within a cell: zones in file order
        self.zone = zones[rep[order]]
        self.start = np.zeros(nx * ny + 1, dtype=np.intp)
        np.cumsum(np.bincount(cell, minlength=nx * ny), out=self.start[1:])

    def _cell_x(self, x):
        return np.clip(np.floor((x - self.x0) / self.cw), 0, self.nx - 1).astype(np.intp)

    def _cell_y(self, y):
        return np.clip(np.floor((y - self.y0) / self.ch), 0, self.ny - 1).astype(np.intp)

    def candidates(self, x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
        """(site, zone) pairs whose zone box holds the site, by site, zones in file order."""
        with np.errstate(invalid="ignore"):
            inside = (x >= self.x0) & (x <= self.x1) & (y >= self.y0) & (y <= self.y1)
        sites = np.flatnonzero(inside)
        cell = self._cell_y(y[sites]) * self.nx + self._cell_x(x[sites])
        first = self.start[cell]
        count = self.start[cell + 1] - first
        si = np.repeat(sites, count)
        pos = np.arange(si.size) - np.repeat(np.cumsum(count) - count - first, count)
        zi = self.zone[pos]
        b = self.bounds
        xs, ys = x[si], y[si]
        hold = (xs >= b[zi, 0]) & (xs <= b[zi, 2]) & (ys >= b[zi, 1]) & (ys <= b[zi, 3])
        return si[hold], zi[hold]


def box_grid(layer) -> BoxGrid:
    """The layer's :class:`BoxGrid` (built on first use, kept in the layer's cache)."""
    grid = layer._cache.get("box_grid")
    if grid is None:
        import shapely

        grid = layer._cache["box_grid"] = BoxGrid(shapely.bounds(layer.prepared()))
    return grid


def bbox_candidates(layer, x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(site, zone) pairs whose zone bounding box holds the site (layer CRS coordinates).

    Each site's zones come in file order (the order that breaks ties between
    zones of equal value, :func:`neve.geo.layers.hits.reduce_hits`).  For a few zones
    the boxes are compared with numpy directly; otherwise the layer's
    :class:`BoxGrid` is asked (no point geometries to build), or its STRtree when
    the zones are too uneven in size for a grid.
    """
    import shapely

    if len(layer.zones) > FEW_ZONES:
        grid = box_grid(layer)
        if grid.usable:
            return grid.candidates(x, y)
        si, zi = layer.tree().query(shapely.points(x, y))
        order = np.lexsort((zi, si))
        return si[order], zi[order]
    b = shapely.bounds(layer.prepared())
    si, zi = [], []
    for j, (x0, y0, x1, y1) in enumerate(b):
        if not np.isfinite(x0):
            continue
        hit = np.flatnonzero((x >= x0) & (x <= x1) & (y >= y0) & (y <= y1))
        si.append(hit)
        zi.append(np.full(hit.size, j, dtype=np.intp))
    if not si:
        return np.empty(0, dtype=np.intp), np.empty(0, dtype=np.intp)
    return np.concatenate(si), np.concatenate(zi)


def _own_zone(qi, cz, qn_site, nz, n_sites: int, n_zones: int) -> np.ndarray:
    """True for the (site, zone) pairs ``(qn_site, nz)`` that are among ``(qi, cz)``.

    A site is in one zone almost always: its zone is looked up by index; only the
    pairs of sites in several zones (on a shared edge) are matched as pair keys.
    """
    zone_of = np.full(n_sites, -1, dtype=np.intp)
    zone_of[qi] = cz
    same = zone_of[qn_site] == nz
    counts = np.bincount(qi, minlength=n_sites)
    several = counts[qn_site] > 1
    if several.any():
        sel = np.flatnonzero(several)
        mine = counts[qi] > 1
        same[sel] = np.isin(qn_site[sel] * n_zones + nz[sel], qi[mine] * n_zones + cz[mine])
    return same


def layer_hits(layer, lon, lat, elev_ft, search_m: float | None = None) -> Hits:
    """Look up n sites in one layer.

    Parameters
    ----------
    layer : neve.geo.layers.model.Layer
    lon, lat : numpy.ndarray
        Site coordinates [degrees, EPSG:4326]; NaN for sites to skip.
    elev_ft : numpy.ndarray
        Site elevation [ft]; NaN where unknown.
    search_m : float, optional
        Radius for reporting neighbouring zones [m]; at least the layer's
        boundary tolerance.
    """
    if layer.is_raster:
        from neve.geo.layers.raster import raster_hits

        return raster_hits(layer, lon, lat, search_m)
    import shapely

    from neve.geo.layers.transform import transformer

    lon = np.asarray(lon, dtype=float)
    lat = np.asarray(lat, dtype=float)
    n = lon.size
    h = Hits.empty(n)
    zt = layer.zones
    if len(zt) == 0 or n == 0:
        return h
    ok = np.isfinite(lon) & np.isfinite(lat)
    idx = np.flatnonzero(ok)
    geoms = layer.prepared()
    # 1. point-in-zone in the layer's CRS: bounding boxes from the STRtree, then an exact,
    #    prepared intersects_xy test on the candidate pairs (a site on an edge is in the zone)
    x, y = transformer(4326, layer.crs).transform(lon[idx], lat[idx])
    x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    qi, cz = bbox_candidates(layer, x, y)
    inside = shapely.intersects_xy(geoms[cz], x[qi], y[qi])
    qi, cz = qi[inside], cz[inside]
    ci = idx[qi]
    # 2. neighbours within the search radius, in World Mercator metres / k; sites deep inside
    #    their zone (inside the zone shrunk by the radius) cannot have one and are skipped
    tol = layer.tolerance_m
    search = max(tol, float(search_m or 0.0))
    xm, ym = transformer(4326, 3395).transform(lon[idx], np.clip(lat[idx], -85.0, 85.0))
    xm, ym = np.asarray(xm, dtype=float), np.asarray(ym, dtype=float)
    geoms_m, tree_m = layer.tree_m()
    band = np.ones(idx.size, dtype=bool)
    prefilter = search > 0 and idx.size >= PREFILTER_MIN_SITES
    if prefilter:  # a site outside every zone: in the band if within the radius of one
        out = np.ones(idx.size, dtype=bool)
        out[qi] = False
        oi = np.flatnonzero(out)
        band[oi] = shapely.contains_xy(layer.coverage_m(search), xm[oi], ym[oi])
    if prefilter and qi.size:  # a site in a zone: in the band unless deep inside it
        deep = shapely.contains_xy(layer.shrunk_m(search)[cz], xm[qi], ym[qi])
        band[qi[deep]] = False
        band[qi[~deep]] = True  # a site in two zones, one deep, stays in the band
    bi = np.flatnonzero(band)
    qn = qn_site = nz = np.empty(0, dtype=np.intp)
    if search > 0 and bi.size:
        # the band's points are built once: for the tree query and for the distances
        k = mercator_scale(lat[idx][bi])
        pts_m = shapely.points(xm[bi], ym[bi])
        qn, nz = tree_m.query(pts_m, predicate="dwithin", distance=search * k)
        qn_site = bi[qn]
    if qn_site.size and qi.size:  # a neighbour that is the site's own zone is no neighbour
        same = _own_zone(qi, cz, qn_site, nz, idx.size, len(zt))
        qn, qn_site, nz = qn[~same], qn_site[~same], nz[~same]
    if qn_site.size:
        dist = shapely.distance(pts_m[qn], geoms_m[nz]) / k[qn]
    else:
        dist = np.empty(0)
    keep = dist <= search
    qn_site, nz, dist = qn_site[keep], nz[keep], dist[keep]
    ni = idx[qn_site]
    scale = 1.0 if layer.meta["elevation_units"] == "ft" else M_PER_FT
    elev = np.asarray(elev_ft, dtype=float) * scale
    c_val, c_state = R.evaluate(zt, cz, elev[ci])
    n_val, n_state = R.evaluate(zt, nz, elev[ni])
    multi = np.bincount(qi, minlength=idx.size)[qi] > 1
    interior = np.ones(qi.size, dtype=bool)
    if multi.any():
        interior[multi] = shapely.contains_xy(geoms[cz[multi]], x[qi[multi]], y[qi[multi]])
    rules = zt.rule_names()
    return reduce_hits(
        h,
        ci,
        c_val * layer.to_psf,
        c_state,
        interior,
        zt.zone_id[cz],
        rules[cz],
        cz,
        ni,
        n_val * layer.to_psf,
        n_state,
        dist,
        zt.zone_id[nz],
        tol,
    )
