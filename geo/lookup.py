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
3. the zone rules on every (site, zone) pair (:func:`geo.rules.evaluate`);
4. reductions per site with numpy (``np.maximum.at`` and friends).

Raster layers are looked up in :mod:`geo.raster` and give the same
:class:`Hits`.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from geo import rules as R

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
    near_unknown: np.ndarray = None  # ... and it has no usable value
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
        for i in np.unique(ci[multi]):
            sel = ci == i
            h.zone_ids[i] = ";".join(sorted(set(c_id[sel].tolist())))
            keys = value_key(c_val[sel], c_state[sel])
            if np.unique(keys).size > 1 and not h.overlap[i]:
                h.near[i] = True  # on a shared edge of zones with different values
                h.dist_other_m[i] = 0.0
    # neighbours
    site_key = value_key(h.base_psf, np.where(h.state == NONE, R.OK, h.state))
    site_key = np.where(h.covered, site_key, np.nan)
    if ni.size:
        nkey = value_key(n_val, n_state)
        other = ~np.isclose(nkey, site_key[ni], rtol=0, atol=1e-9)
        np.fmin.at(h.nearest_m, ni, n_dist)
        np.fmin.at(h.dist_other_m, ni[other], n_dist[other])
        within = other & (n_dist <= tol_m) & h.covered[ni]
        h.near[np.unique(ni[within])] = True
        valued = within & np.isin(n_state, (R.OK, R.UNCHECKED))
        best = np.full(n, np.nan)
        np.fmax.at(best, ni[valued], n_val[valued])
        h.near_unknown[np.unique(ni[within & ~valued])] = True
        up = np.isfinite(h.base_psf) & (best > h.base_psf + 1e-9)
        h.raised = up
        for i in np.unique(ni[within]):
            sel = within & (ni == i)
            vals = sorted(set(nkey[sel].tolist()))
            h.neigh_vals[i] = ";".join(_fmt_psf(v) for v in vals)
        h.pairs = {"site": ni, "zone_id": n_id, "psf": n_val, "state": n_state, "m": n_dist}
        h.value_psf = np.where(up, best, h.base_psf)
    else:
        h.value_psf = h.base_psf.copy()
    h.nearest_m = np.where(h.covered, 0.0, h.nearest_m)
    return h


def layer_hits(layer, lon, lat, elev_ft, search_m: float | None = None) -> Hits:
    """Look up n sites in one layer.

    Parameters
    ----------
    layer : geo.layers.Layer
    lon, lat : numpy.ndarray
        Site coordinates [degrees, EPSG:4326]; NaN for sites to skip.
    elev_ft : numpy.ndarray
        Site elevation [ft]; NaN where unknown.
    search_m : float, optional
        Radius for reporting neighbouring zones [m]; at least the layer's
        boundary tolerance.
    """
    if layer.is_raster:
        from geo.raster import raster_hits

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
    to_layer = Transformer.from_crs(4326, layer.crs, always_xy=True)
    x, y = to_layer.transform(lon[idx], lat[idx])
    pts = shapely.points(x, y)
    qi, cz = layer.tree().query(pts, predicate="intersects")
    ci = idx[qi]
    tol = layer.tolerance_m
    search = max(tol, float(search_m or 0.0))
    to_m = Transformer.from_crs(4326, 3395, always_xy=True)
    xm, ym = to_m.transform(lon[idx], np.clip(lat[idx], -85.0, 85.0))
    ptsm = shapely.points(xm, ym)
    geoms_m, tree_m = layer.tree_m()
    k = mercator_scale(lat[idx])
    if search > 0:
        qn, nz = tree_m.query(ptsm, predicate="dwithin", distance=search * k)
    else:
        qn, nz = np.empty(0, dtype=np.intp), np.empty(0, dtype=np.intp)
    if qn.size and qi.size:
        nzones = len(zt)
        inside = np.isin(qn * nzones + nz, qi * nzones + cz)
        qn, nz = qn[~inside], nz[~inside]
    dist = shapely.distance(ptsm[qn], geoms_m[nz]) / k[qn] if qn.size else np.empty(0)
    keep = dist <= search
    qn, nz, dist = qn[keep], nz[keep], dist[keep]
    ni = idx[qn]
    scale = 1.0 if layer.meta["elevation_units"] == "ft" else 0.3048
    elev = np.asarray(elev_ft, dtype=float) * scale
    c_val, c_state = R.evaluate(zt, cz, elev[ci])
    n_val, n_state = R.evaluate(zt, nz, elev[ni])
    multi = np.bincount(qi, minlength=idx.size)[qi] > 1
    interior = np.ones(qi.size, dtype=bool)
    if multi.any():
        interior[multi] = shapely.within(pts[qi[multi]], layer.frame.geometry.values[cz[multi]])
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
