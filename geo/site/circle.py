"""The uncertainty circle of an approximate location: its elevations and the rules they cross.

A site located at a ZIP code or place centroid (:mod:`neve.geo.site.places`)
may lie anywhere within its uncertainty radius.  With a DEM and no given
elevation, :func:`elevation_over_circle` samples the DEM over that circle
(vectorized: every site's points in one :func:`neve.geo.site.elevation.sample_dem`
call) and gives the minimum and the maximum.  :func:`resolve_over_circle`
resolves each site at both, with the layers widened to the radius
(:meth:`neve.geo.layers.model.Layer.widened`): where the results differ, an
elevation rule change (an ``elev_max`` limit, the end of an elevation table,
a formula or a table's slope) lies within the circle; the site is flagged
``elevation_rule_within_radius``, the more demanding result governs
(:func:`neve.geo.site.resolve.more_demanding`) and a value from it is
provisional.  The elevation used is labelled ``dem`` (never ``input``), and
no given-versus-DEM comparison is made: the elevation is the DEM's own.

Readings (our choices, docs/contract.md "Location precision"):

* Sample points: the centre and rings at 1/3, 2/3 and 3/3 of the radius with
  8, 16 and 24 points (49 in all), on a sphere of 111,320 m per degree of
  latitude (common practice).  A DEM cell between the points is not seen; the
  spacing is a third of the radius.
* Two results differ when their status differs or their values differ by
  more than :data:`VALUE_TOL_PSF` (so rounding noise is no rule change).
* DEM values no land surface has (:func:`neve.geo.site.elevation.plausible_dem`)
  are left out and flag ``dem_implausible``; where no point of the circle has
  a value, the site is resolved as without the circle (``dem_nodata``).
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.units import M_PER_FT

#: rings of the sample pattern: (fraction of the radius in thirds, points on the ring)
RINGS = ((1, 8), (2, 16), (3, 24))
#: metres per degree of latitude (common practice)
M_PER_DEG = 111_320.0
#: two results at the circle's minimum and maximum elevation differ above this [psf]
VALUE_TOL_PSF = 0.01


def _offsets() -> tuple[np.ndarray, np.ndarray]:
    """(north, east) of the sample pattern as fractions of the radius (centre first)."""
    north, east = [0.0], [0.0]
    for ring, count in RINGS:
        a = np.linspace(0.0, 2.0 * np.pi, count, endpoint=False)
        north.extend(np.cos(a) * ring / 3.0)
        east.extend(np.sin(a) * ring / 3.0)
    return np.array(north), np.array(east)


def circle_points(lat, lon, radius_m) -> tuple[np.ndarray, np.ndarray]:
    """Sample points of each site's circle: ``(lat, lon)`` arrays of shape (n, 49) [degrees].

    >>> la, lo = circle_points([30.0], [-40.0], [0.0])
    >>> la.shape, float(la.max() - la.min())
    ((1, 49), 0.0)
    """
    lat = np.atleast_1d(np.asarray(lat, dtype=float))[:, None]
    lon = np.atleast_1d(np.asarray(lon, dtype=float))[:, None]
    r = np.atleast_1d(np.asarray(radius_m, dtype=float))[:, None]
    north, east = _offsets()
    coslat = np.maximum(np.cos(np.radians(lat)), 1e-6)
    return lat + north * r / M_PER_DEG, lon + east * r / (M_PER_DEG * coslat)


def elevation_over_circle(lat, lon, radius_m, dem, dem_units: str | None = None) -> dict:
    """DEM elevations over each site's uncertainty circle [ft].

    Returns
    -------
    dict of numpy.ndarray
        ``min_ft``, ``max_ft`` (NaN where no point has a plausible value),
        ``centre_ft`` (the DEM at the centre, NaN at nodata), ``points`` (the
        number of points with a value) and ``implausible`` (some point's value
        is no land elevation).
    """
    from neve.geo.site.elevation import plausible_dem, sample_dem

    la, lo = circle_points(lat, lon, radius_m)
    raw = np.asarray(sample_dem(dem, lo.ravel(), la.ravel(), dem_units), dtype=float)
    ft, bad = plausible_dem(raw)
    ft, bad = ft.reshape(la.shape), bad.reshape(la.shape)
    have = np.isfinite(ft)
    some = have.any(axis=1)
    lo_ft = np.where(some, np.min(np.where(have, ft, np.inf), axis=1), np.nan)
    hi_ft = np.where(some, np.max(np.where(have, ft, -np.inf), axis=1), np.nan)
    return {
        "min_ft": lo_ft,
        "max_ft": hi_ft,
        "centre_ft": ft[:, 0],
        "points": have.sum(axis=1),
        "implausible": bad.any(axis=1),
    }


def differs(status_a, value_a, status_b, value_b) -> np.ndarray:
    """Whether two results of each site differ (status, or value by more than the tolerance)."""
    sa, sb = np.asarray(status_a), np.asarray(status_b)
    va, vb = np.asarray(value_a, dtype=float), np.asarray(value_b, dtype=float)
    fa, fb = np.isfinite(va), np.isfinite(vb)
    with np.errstate(invalid="ignore"):
        apart = fa & fb & (np.abs(va - vb) > VALUE_TOL_PSF)
    return (sa != sb) | (fa != fb) | apart


def _outcome(status: int, value: float) -> str:
    from neve.geo.site.result import OK, PROVISIONAL, STATUSES

    if status in (OK, PROVISIONAL) and math.isfinite(value):
        return f"pg {value:.4g} psf"
    return STATUSES[status]


def circle_text(min_ft, max_ft, out_min: str, out_max: str, changed: bool, max_governs: bool,
                radius_m: float) -> str:  # fmt: skip
    """The sentence that says what the elevations over the circle gave."""
    span = (
        f" Elevation over the {radius_m:,.0f} m location circle (DEM): minimum {min_ft:.0f} ft "
        f"({min_ft * M_PER_FT:.1f} m), maximum {max_ft:.0f} ft ({max_ft * M_PER_FT:.1f} m)"
    )
    if not changed:
        return f"{span}; the result is the same at both ({out_max}); the maximum is used."
    used = "maximum" if max_governs else "minimum"
    return (
        f"{span}; the zone's elevation rule gives another result within the circle "
        f"(an elevation rule change lies within it): {out_min} at the minimum, "
        f"{out_max} at the maximum; the more demanding result (at the {used}) governs "
        "(elevation_rule_within_radius)."
    )


def resolve_over_circle(lat, lon, radius_m, over: dict, *, resolver, **kw):
    """Resolve sites at the minimum and maximum elevation of their circles; the more demanding governs.

    Parameters
    ----------
    lat, lon, radius_m : array_like
        The sites [degrees] and their uncertainty radii [m].
    over : dict
        :func:`elevation_over_circle` of these sites (every ``min_ft`` finite).
    resolver : callable
        ``resolver(lat, lon, elevation_ft, **kw) -> Resolution`` (the layers,
        already widened to the radius, in ``kw``; ``dem`` is not passed).
    **kw
        Passed to ``resolver``.

    Returns
    -------
    (Resolution, numpy.ndarray, numpy.ndarray)
        The governing result (elevation source ``dem``, ``dem_elevation_ft`` the
        DEM at the centre, the flag where the results differ, and the sentence
        on the circle in ``message``), whether the two results differ, and
        whether the one at the maximum governs, per site.
    """
    from neve.geo.site.resolve import more_demanding
    from neve.geo.site.result import BIT, FROM_DEM, OK, PROVISIONAL

    lat = np.atleast_1d(np.asarray(lat, dtype=float))
    lon = np.atleast_1d(np.asarray(lon, dtype=float))
    radius = np.broadcast_to(np.asarray(radius_m, dtype=float), lat.shape)
    hi = resolver(lat, lon, over["max_ft"], **kw)
    lo = resolver(lat, lon, over["min_ft"], **kw)
    st_lo, st_hi = lo.status.copy(), hi.status.copy()
    pg_lo, pg_hi = lo.value("pg").copy(), hi.value("pg").copy()
    changed = differs(st_lo, pg_lo, st_hi, pg_hi)
    use_min = more_demanding(st_lo, pg_lo, st_hi, pg_hi)
    res = hi
    if use_min.any():
        pos = np.flatnonzero(use_min)
        res.assign(pos, lo.take(pos))
        if use_min.all():  # one site's derivation: the look-up of the result that governs
            res.detail = lo.detail
    res.extra.update(
        circle_min_status=st_lo, circle_min_pg=pg_lo, circle_max_status=st_hi,
        circle_max_pg=pg_hi,
    )  # fmt: skip
    res.elevation_source[:] = FROM_DEM
    res.dem_elevation_ft = np.asarray(over["centre_ft"], dtype=float).copy()
    bits = np.uint64(BIT["elevation_rule_within_radius"])
    res.flags[changed] |= bits
    res.flags[over["implausible"]] |= np.uint64(BIT["dem_implausible"])
    raise_ = changed & (res.status == OK)
    res.status[raise_] = PROVISIONAL
    texts = [
        circle_text(
            a,
            b,
            _outcome(int(sa), float(va)),
            _outcome(int(sb), float(vb)),
            bool(c),
            not bool(m),
            float(r),
        )  # fmt: skip
        for a, b, sa, va, sb, vb, c, m, r in zip(
            over["min_ft"],
            over["max_ft"],
            st_lo,
            pg_lo,
            st_hi,
            pg_hi,
            changed,
            use_min,
            radius,
            strict=True,
        )
    ]
    prefix = np.where(
        raise_,
        " Provisional: the ground load changes with elevation within the location circle.",
        "",
    )
    res.message = np.array([m + p + t for m, p, t in zip(res.message, prefix, texts, strict=True)],
                           dtype=object)  # fmt: skip
    return res, changed, ~use_min
