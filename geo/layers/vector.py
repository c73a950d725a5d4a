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

Raster layers are looked up in :mod:`neve.geo.layers.raster` and give the same
:class:`Hits`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from neve.engine.units import M_PER_FT
from neve.geo.layers import rules as R

#: WGS 84 first eccentricity squared
E2 = 0.00669437999014
#: rank of each rule state when several zones apply (higher wins)
RANK = {R.OK: 0, R.UNCHECKED: 1, R.STUDY: 2, R.ABOVE: 3, R.NEED_ELEV: 4, R.NUMERIC: 5, R.BAD: 6}
_RANK_OF = np.array([RANK[s] for s in range(7)], dtype=np.int8)
_STATE_OF_RANK = np.array(sorted(RANK, key=RANK.get), dtype=np.int8)
NONE = -1  #: aggregated state of a site in no zone of the layer


def mercator_scale(lat) -> np.ndarray:
    """Scale factor of World Mercator (EPSG:3395) at latitude ``lat`` [degrees] [-]."""
    phi = np.radians(np.clip(np.asarray(lat, dtype=float), -89.9, 89.9))
    return np.sqrt(1.0 - E2 * np.sin(phi) ** 2) / np.cos(phi)


def value_key(value: np.ndarray, state: np.ndarray) -> np.ndarray:
    """A comparable key per evaluation: the value, or a negative code for no value."""
    key = np.where((state == R.OK) | (state == R.UNCHECKED), value, np.nan)
    key = np.where((state == R.STUDY) | (state == R.ABOVE), -1.0, key)
    key = np.where(state == R.NEED_ELEV, -2.0, key)
    return np.where((state == R.BAD) | (state == R.NUMERIC), -3.0, key)


@dataclass
class Hits:
    """What one layer says about n sites (arrays of length n)."""

    n: int
    covered: np.ndarray = None
    state: np.ndarray = None  # aggregated rule state, NONE when not covered
    value_psf: np.ndarray = None  # governing value after the boundary rule [psf]
    base_psf: np.ndarray = None  # larger value of the containing zones [psf]
    zone_idx: np.ndarray = None  # governing zone index (-1 for rasters / none)
    zone_id: np.ndarray = None
    zone_ids: np.ndarray = None
    rule: np.ndarray = None
    overlap: np.ndarray = None
    near: np.ndarray = None  # a zone with another value within the tolerance
    raised: np.ndarray = None  # ... and its larger value governs
    near_unknown: np.ndarray = None  # ... and it has no usable value (elevation, defect)
    near_study: np.ndarray = None  # a zone requiring a study lies within the tolerance
    near_valued: np.ndarray = None  # a zone with another usable value lies within it
    dist_other_m: np.ndarray = None
    nearest_m: np.ndarray = None  # distance to the nearest zone, for sites outside
    neigh_vals: np.ndarray = None  # ';'-joined values within the tolerance [psf]
    pairs: dict = field(default_factory=dict)  # neighbour pairs (site, id, psf, state, m)

    @classmethod
    def empty(cls, n: int) -> Hits:
        return cls(
            n=n,
            covered=np.zeros(n, dtype=bool),
            state=np.full(n, NONE, dtype=np.int8),
            value_psf=np.full(n, np.nan),
            base_psf=np.full(n, np.nan),
            zone_idx=np.full(n, -1, dtype=np.intp),
            zone_id=np.full(n, "", dtype=object),
            zone_ids=np.full(n, "", dtype=object),
            rule=np.full(n, "", dtype=object),
            overlap=np.zeros(n, dtype=bool),
            near=np.zeros(n, dtype=bool),
            raised=np.zeros(n, dtype=bool),
            near_unknown=np.zeros(n, dtype=bool),
            near_study=np.zeros(n, dtype=bool),
            near_valued=np.zeros(n, dtype=bool),
            dist_other_m=np.full(n, np.nan),
            nearest_m=np.full(n, np.nan),
            neigh_vals=np.full(n, "", dtype=object),
        )


def _fmt_psf(v: float) -> str:
    if v == -1.0:
        return "study"
    if v == -2.0:
        return "needs-elevation"
    if v == -3.0:
        return "invalid"
    return f"{v:.4g}"


def _join_groups(site: np.ndarray, text: np.ndarray, order_by=None):
    """';'-join the distinct texts of each site (sorted by ``order_by`` or the text)."""
    key = text if order_by is None else order_by
    order = np.lexsort((key, site))
    s, t, k = site[order], np.asarray(text, dtype=object)[order], np.asarray(key)[order]
    keep = np.r_[True, (s[1:] != s[:-1]) | (k[1:] != k[:-1])]
    s, t = s[keep], t[keep]
    starts = np.r_[0, np.flatnonzero(s[1:] != s[:-1]) + 1]
    joined = np.array([";".join(part) for part in np.split(t, starts[1:])], dtype=object)
    return s[starts], joined


def reduce_hits(
    h: Hits,
    ci: np.ndarray,
    c_val: np.ndarray,
    c_state: np.ndarray,
    c_interior: np.ndarray,
    c_id: np.ndarray,
    c_rule: np.ndarray,
    c_zone: np.ndarray,
    ni: np.ndarray,
    n_val: np.ndarray,
    n_state: np.ndarray,
    n_dist: np.ndarray,
    n_id: np.ndarray,
    tol_m: float,
) -> Hits:
    """Fold containing pairs (``c_*``) and neighbour pairs (``n_*``) into per-site results.

    Values are in psf; ``ci``/``ni`` are site indices of the pairs.
    """
    n = h.n
    count = np.bincount(ci, minlength=n)
    h.covered = count > 0
    # governing containing pair: highest rank, then largest value
    rank = _RANK_OF[c_state]
    vsort = np.where(np.isnan(c_val), -np.inf, c_val)
    order = np.lexsort((-vsort, -rank, ci))
    first = order[np.r_[True, ci[order][1:] != ci[order][:-1]]] if ci.size else order
    sites = ci[first]
    h.state[sites] = c_state[first]
    h.zone_id[sites] = c_id[first]
    h.zone_ids[sites] = c_id[first]
    h.rule[sites] = c_rule[first]
    h.zone_idx[sites] = c_zone[first]
    base = np.full(n, np.nan)
    np.fmax.at(base, ci, c_val)
    h.base_psf = np.where(np.isin(h.state, (R.OK, R.UNCHECKED)), base, np.nan)
    multi = count[ci] > 1
    if multi.any():
        interior = np.bincount(ci[multi & c_interior], minlength=n)
        h.overlap = interior > 1
        sites, ids = _join_groups(ci[multi], c_id[multi].astype(str))
        h.zone_ids[sites] = ids
        keys = value_key(c_val[multi], c_state[multi])
        kmin = np.full(n, np.inf)
        kmax = np.full(n, -np.inf)
        np.minimum.at(kmin, ci[multi], keys)
        np.maximum.at(kmax, ci[multi], keys)
        edge = (kmax > kmin) & ~h.overlap  # on a shared edge of zones with different values
        h.near[edge] = True
        h.near_valued[edge] = True
        h.dist_other_m[edge] = 0.0
    # neighbours
    site_key = value_key(h.base_psf, np.where(h.state == NONE, R.OK, h.state))
    site_key = np.where(h.covered, site_key, np.nan)
    if ni.size:
        nkey = value_key(n_val, n_state)
        # an unknown value (elevation needed, defective zone) is never "the same value"
        other = ~np.isclose(nkey, site_key[ni], rtol=0, atol=1e-9) | (nkey <= -2.0)
        np.fmin.at(h.nearest_m, ni, n_dist)
        np.fmin.at(h.dist_other_m, ni[other], n_dist[other])
        within = other & (n_dist <= tol_m) & h.covered[ni]
        h.near[ni[within]] = True
        valued = within & np.isin(n_state, (R.OK, R.UNCHECKED))
        h.near_valued[ni[valued]] = True
        best = np.full(n, np.nan)
        np.fmax.at(best, ni[valued], n_val[valued])
        study_there = np.isin(n_state, (R.STUDY, R.ABOVE))
        h.near_unknown[ni[within & ~valued & ~study_there]] = True
        # a study area within the tolerance is reported whether or not the site is in a zone
        near_study = study_there & (n_dist <= tol_m) & other
        h.near_study[ni[near_study]] = True
        up = np.isfinite(h.base_psf) & (best > h.base_psf + 1e-9)
        h.raised = up
        if within.any():
            kv = nkey[within]
            uk, kinv = np.unique(kv, return_inverse=True)
            txt = np.array([_fmt_psf(v) for v in uk], dtype=object)[kinv]
            sites, joined = _join_groups(ni[within], txt, order_by=kv)
            h.neigh_vals[sites] = joined
        h.pairs = {"site": ni, "zone_id": n_id, "psf": n_val, "state": n_state, "m": n_dist}
        h.value_psf = np.where(up, best, h.base_psf)
    else:
        h.value_psf = h.base_psf.copy()
    h.nearest_m = np.where(h.covered, 0.0, h.nearest_m)
    return h


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
    from pyproj import Transformer

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
    x, y = Transformer.from_crs(4326, layer.crs, always_xy=True).transform(lon[idx], lat[idx])
    x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    qi, cz = bbox_candidates(layer, x, y)
    inside = shapely.intersects_xy(geoms[cz], x[qi], y[qi])
    qi, cz = qi[inside], cz[inside]
    ci = idx[qi]
    # 2. neighbours within the search radius, in World Mercator metres / k; sites deep inside
    #    their zone (inside the zone shrunk by the radius) cannot have one and are skipped
    tol = layer.tolerance_m
    search = max(tol, float(search_m or 0.0))
    xm, ym = Transformer.from_crs(4326, 3395, always_xy=True).transform(
        lon[idx], np.clip(lat[idx], -85.0, 85.0)
    )
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
    if qn_site.size and qi.size:
        nzones = len(zt)
        same = np.isin(qn_site * nzones + nz, qi * nzones + cz)
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
