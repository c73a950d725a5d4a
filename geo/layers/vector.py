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


def bbox_candidates(layer, x: np.ndarray, y: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(site, zone) pairs whose zone bounding box holds the site (layer CRS coordinates).

    For a few zones the boxes are compared with numpy directly (no point
    geometries to build); otherwise the layer's STRtree is queried.
    """
    import shapely

    if len(layer.zones) > FEW_ZONES:
        return layer.tree().query(shapely.points(x, y))
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
    if prefilter:  # sites farther than the radius from every zone have no neighbour
        band = shapely.contains_xy(layer.coverage_m(search), xm, ym)
    if prefilter and qi.size:
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
