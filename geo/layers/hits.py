"""What one zone layer says about many sites: the :class:`Hits` arrays and their reduction.

Both look-ups give a :class:`Hits`: the vector one (:mod:`neve.geo.layers.vector`,
point-in-zone and neighbour pairs from an STRtree) and the raster one
(:mod:`neve.geo.layers.raster`, cells and their neighbours). :func:`reduce_hits`
folds the (site, zone) pairs either found into per-site results with numpy, so
that both give the same answer for the same pairs. Kept in a module of its own
so that neither look-up imports the other.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from neve.geo.layers import rules as R

#: rank of each rule state when several zones apply (higher wins)
RANK = {R.OK: 0, R.UNCHECKED: 1, R.STUDY: 2, R.ABOVE: 3, R.NEED_ELEV: 4, R.NUMERIC: 5, R.BAD: 6}
_RANK_OF = np.array([RANK[s] for s in range(7)], dtype=np.int8)
NONE = -1  #: aggregated state of a site in no zone of the layer


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
