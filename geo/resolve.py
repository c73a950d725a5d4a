"""Vectorized site resolution: many sites -> status, flags and ground snow load.

:func:`resolve_points` is the engine under both ``neve site`` (one site) and
``neve screen`` (a portfolio).  Everything is done on arrays: one DEM read
per window, one spatial query per layer (:mod:`geo.lookup`), rules on
arrays, and the per-site strings (flags, messages) are built once per
distinct combination, not once per site.

Status and flags follow DESIGN.md ("Site resolution result"); nothing is
silently defaulted.  When several layers are given (most local first) the
first layer that covers a site governs and the others are reported in
``other_layers``.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from engine.errors import InputError
from engine.units import KPA_PER_PSF, M_PER_FT
from geo import rules as R
from geo.coords import suspect_mask, valid_mask
from geo.elevation import MISMATCH_M, sample_dem
from geo.layers import as_layers
from geo.lookup import NONE, Hits, layer_hits

STATUSES = ("ok", "provisional", "study_required", "no_data", "error")
OK, PROVISIONAL, STUDY, NO_DATA, ERROR = range(5)
FLAGS = (
    "study_required",
    "above_elevation_limit",
    "elevation_needed",
    "outside_layer",
    "near_boundary",
    "overlapping_zones",
    "dem_nodata",
    "coordinates_suspect",
    "elevation_mismatch",
    "demo_data",
)
BIT = {name: 1 << i for i, name in enumerate(FLAGS)}
#: flags that make a usable value provisional
LIMITING = (
    BIT["near_boundary"]
    | BIT["overlapping_zones"]
    | BIT["elevation_needed"]
    | BIT["coordinates_suspect"]
    | BIT["elevation_mismatch"]
)
_BAD_COORDS = 1 << 20  # message-only bits, never shown as flags
_NEAR_UNKNOWN = 1 << 21
COLUMNS = [
    "status", "pg_psf", "pg_kpa", "zone_id", "zone_ids", "rule", "flags", "message",
    "elevation_ft", "elevation_m", "elevation_source", "dem_elevation_ft",
    "distance_to_other_m", "neighbour_values_psf", "layer_name", "layer_sha256", "other_layers",
]  # fmt: skip


def layer_status(h: Hits) -> tuple[np.ndarray, np.ndarray]:
    """Status code and flag bits of each site from one layer's hits alone."""
    st = h.state
    status = np.full(h.n, NO_DATA, dtype=np.int8)
    flags = np.zeros(h.n, dtype=np.int64)
    flags[st == NONE] |= BIT["outside_layer"]
    status[(st == R.BAD) | (st == R.NUMERIC)] = ERROR
    need = st == R.NEED_ELEV
    flags[need] |= BIT["elevation_needed"]
    study = (st == R.STUDY) | (st == R.ABOVE)
    status[study] = STUDY
    flags[study] |= BIT["study_required"]
    flags[st == R.ABOVE] |= BIT["above_elevation_limit"]
    flags[st == R.UNCHECKED] |= BIT["elevation_needed"]
    flags[h.near] |= BIT["near_boundary"]
    flags[h.overlap] |= BIT["overlapping_zones"]
    valued = (st == R.OK) | (st == R.UNCHECKED)
    status[valued] = OK
    return status, flags


def _other_layers(layers, hits, per_layer, gov, valid) -> np.ndarray:
    """';'-joined ``name=value`` (or ``name=status``) of the non-governing layers per site.

    Each layer's text is coded as a small integer per site; the strings are
    built once per distinct combination of codes.
    """
    n = gov.size
    if len(layers) < 2:
        return np.full(n, "", dtype=object)
    codes, tables = [], []
    for k, (h, (st, _)) in enumerate(zip(hits, per_layer, strict=True)):
        val = np.where(np.isfinite(h.value_psf), h.value_psf, 0.0)
        uv, uinv = np.unique(np.round(val, 6), return_inverse=True)
        name = layers[k].name
        table = [""] + [f"{name}={s}" for s in STATUSES] + [f"{name}={v:.4g}psf" for v in uv]
        code = np.where(st == OK, uinv + 1 + len(STATUSES), st.astype(np.int64) + 1)
        code[(gov == k) | ~valid] = 0
        codes.append(code.astype(np.int64))
        tables.append(table)
    sizes = [len(t) for t in tables]
    if float(np.prod(np.array(sizes, dtype=float))) < 2.0**62:
        key = np.zeros(n, dtype=np.int64)
        for code, size in zip(codes, sizes, strict=True):
            key = key * size + code
        uniq, inv = np.unique(key, return_inverse=True)
        texts = []
        for u in uniq:
            parts, u = [], int(u)
            for table, size in zip(reversed(tables), reversed(sizes), strict=True):
                parts.append(table[u % size])
                u //= size
            texts.append(";".join(p for p in reversed(parts) if p))
        return np.array(texts, dtype=object)[inv]
    out = np.full(n, "", dtype=object)  # very many distinct values: plain string joins
    for code, table in zip(codes, tables, strict=True):
        piece = np.array(table, dtype=object)[code]
        out = np.where(out == "", piece, np.where(piece == "", out, out + ";" + piece))
    return out


def _message(status: int, bits: int, layer) -> str:
    name = f"layer {layer.name!r}" if layer is not None else "the layers given"
    parts: list[str] = []
    if bits & _BAD_COORDS:
        parts.append("Coordinates are missing or out of range; no look-up was made.")
    elif status == ERROR:
        parts.append(
            f"The zone of {name} at this site is defective or its formula gives no valid "
            "value here; run `neve layer check` on the layer."
        )
    elif status == NO_DATA and bits & BIT["outside_layer"]:
        parts.append(f"The site lies outside every zone of {name}; no mapped value.")
    elif status == NO_DATA:
        parts.append(
            f"The zone's rule in {name} needs the site elevation; give an elevation or a DEM."
        )
    elif status == STUDY:
        why = (
            "the site is above the zone's elevation limit"
            if bits & BIT["above_elevation_limit"]
            else "the zone has no mapped value"
        )
        parts.append(f"Site-specific case study required: {why} ({name}).")
    else:
        parts.append(f"Ground snow load from {name}.")
        reasons = []
        if bits & BIT["near_boundary"]:
            reasons.append(
                f"a zone with another value lies within {layer.tolerance_m:g} m "
                "(the larger value governs)"
            )
        if bits & _NEAR_UNKNOWN:
            reasons.append(
                f"a zone within {layer.tolerance_m:g} m has no usable value here "
                "(a study or an elevation is needed there)"
            )
        if bits & BIT["overlapping_zones"]:
            reasons.append("the site lies in overlapping zones (the larger value governs)")
        if bits & BIT["elevation_needed"]:
            reasons.append("the zone's elevation limit was not checked (no elevation)")
        if bits & BIT["elevation_mismatch"]:
            reasons.append(f"the given elevation and the DEM differ by more than {MISMATCH_M:g} m")
        if bits & BIT["coordinates_suspect"]:
            reasons.append("the coordinates look suspect")
        if reasons:
            parts.append("Provisional: " + "; ".join(reasons) + ".")
    if bits & BIT["dem_nodata"]:
        parts.append("The DEM has no value at the site.")
    if status != ERROR and bits & BIT["coordinates_suspect"] and status != PROVISIONAL:
        parts.append("The coordinates look suspect (swapped, or 0,0?).")
    if bits & BIT["demo_data"]:
        parts.append("DEMO DATA: invented values, never for design.")
    return " ".join(parts)


def _as_array(x, n: int | None = None) -> np.ndarray:
    a = np.atleast_1d(np.asarray(x, dtype=float)).ravel()
    if n is not None and a.size == 1 and n != 1:
        a = np.full(n, a[0])
    return a


def resolve_points(
    lat,
    lon,
    *,
    layers=None,
    elevation_ft=None,
    dem=None,
    dem_units: str | None = None,
    search_m: float | None = None,
) -> pd.DataFrame:
    """Resolve many sites to status, flags and ground snow load (vectorized).

    Parameters
    ----------
    lat, lon : array_like
        Site coordinates [degrees, EPSG:4326]; bad values give status ``error``.
    layers : list of paths or Layer, optional
        Most local first; None gives the embedded demo stack.
    elevation_ft : array_like, optional
        Given site elevations [ft]; NaN where not given.
    dem : str or pathlib.Path, optional
        DEM sampled where needed (and compared with given elevations).
    dem_units : str, optional
        Vertical unit of the DEM when its band metadata does not say.
    search_m : float, optional
        Radius for reporting neighbouring zones [m] (default: each layer's
        boundary tolerance).

    Returns
    -------
    pandas.DataFrame
        One row per site, in input order, with the columns of :data:`COLUMNS`.
    """
    df, _ = resolve_detail(
        lat, lon, layers=layers, elevation_ft=elevation_ft, dem=dem, dem_units=dem_units,
        search_m=search_m,
    )  # fmt: skip
    return df


def resolve_detail(
    lat, lon, *, layers=None, elevation_ft=None, dem=None, dem_units=None, search_m=None
):
    """Like :func:`resolve_points`, also returning ``(layers, hits, governing index)``."""
    lat = _as_array(lat)
    lon = _as_array(lon)
    n = lat.size
    if lon.size != n:
        raise InputError("lon", f"{lon.size} longitudes for {n} latitudes", "arrays of one length")
    layers = as_layers(layers)
    valid = valid_mask(lat, lon)
    la = np.where(valid, lat, np.nan)
    lo = np.where(valid, lon, np.nan)
    given = np.full(n, np.nan) if elevation_ft is None else _as_array(elevation_ft, n).astype(float)
    dem_ft = sample_dem(dem, lo, la, dem_units) if dem is not None else np.full(n, np.nan)
    has_in, has_dem = np.isfinite(given), np.isfinite(dem_ft)
    elev = np.where(has_in, given, dem_ft)
    source = np.where(has_in, "input", np.where(has_dem, "dem", "none")).astype(object)
    extra = np.zeros(n, dtype=np.int64)
    extra[has_in & has_dem & (np.abs(given - dem_ft) * M_PER_FT > MISMATCH_M)] |= BIT[
        "elevation_mismatch"
    ]
    if dem is not None:
        extra[valid & ~has_dem] |= BIT["dem_nodata"]
    extra[valid & suspect_mask(lat, lon)] |= BIT["coordinates_suspect"]
    if any(layer.demo for layer in layers):
        extra |= BIT["demo_data"]
    hits = [layer_hits(layer, lo, la, elev, search_m) for layer in layers]
    covered = np.array([h.covered for h in hits]).reshape(len(layers), n)
    gov = np.where(covered.any(axis=0), covered.argmax(axis=0), -1)
    # swapped coordinates: a site in no layer whose swapped pair falls in one
    out = np.flatnonzero(valid & (gov < 0) & (np.abs(lon) <= 90))
    if out.size:
        for layer in layers:
            sw = layer_hits(layer, la[out], lo[out], np.full(out.size, np.nan))
            extra[out[sw.covered]] |= BIT["coordinates_suspect"]
    status = np.full(n, NO_DATA, dtype=np.int8)
    bits = np.full(n, BIT["outside_layer"], dtype=np.int64)
    value = np.full(n, np.nan)
    zone_id = np.full(n, "", dtype=object)
    zone_ids = zone_id.copy()
    rule = zone_id.copy()
    neigh = zone_id.copy()
    dist = np.full(n, np.nan)
    per_layer = []
    for k, h in enumerate(hits):
        st, fl = layer_status(h)
        per_layer.append((st, fl))
        sel = gov == k
        status[sel], bits[sel], value[sel] = st[sel], fl[sel], h.value_psf[sel]
        zone_id[sel], zone_ids[sel], rule[sel] = h.zone_id[sel], h.zone_ids[sel], h.rule[sel]
        neigh[sel], dist[sel] = h.neigh_vals[sel], h.dist_other_m[sel]
        bits[sel & h.near_unknown] |= _NEAR_UNKNOWN
    ungov = gov < 0
    if hits:
        dist[ungov] = np.fmin.reduce(np.array([h.dist_other_m for h in hits]), axis=0)[ungov]
    bits |= extra
    usable = status == OK
    status[usable & ((bits & LIMITING) != 0)] = PROVISIONAL
    status[~valid] = ERROR
    bits[~valid] = (bits[~valid] & BIT["demo_data"]) | _BAD_COORDS
    value[~np.isin(status, (OK, PROVISIONAL))] = np.nan
    # flags and messages once per distinct combination
    if len(layers) > 1000:
        raise InputError("layer", f"{len(layers)} layers given", "at most 1000 stacked layers")
    key = (status.astype(np.int64) << 48) | (bits << 10) | (gov + 1).astype(np.int64)
    uniq, inv = np.unique(key, return_inverse=True)
    msgs, ftxt = [], []
    for u in uniq:
        s, b, g = int(u >> 48), int((u >> 10) & ((1 << 38) - 1)), int(u & 1023) - 1
        msgs.append(_message(s, b, layers[g] if 0 <= g < len(layers) else None))
        ftxt.append(";".join(sorted(f for f in FLAGS if b & BIT[f])))
    message = np.array(msgs, dtype=object)[inv]
    flag_text = np.array(ftxt, dtype=object)[inv]
    names = np.array([layer.name for layer in layers] + [""], dtype=object)
    shas = np.array([layer.sha256 for layer in layers] + [""], dtype=object)
    others = _other_layers(layers, hits, per_layer, gov, valid)
    cols = {
        "status": np.array(STATUSES, dtype=object)[status],
        "pg_psf": value,
        "pg_kpa": value * KPA_PER_PSF,
        "zone_id": zone_id,
        "zone_ids": zone_ids,
        "rule": rule,
        "flags": flag_text,
        "message": message,
        "elevation_ft": elev,
        "elevation_m": elev * M_PER_FT,
        "elevation_source": source,
        "dem_elevation_ft": dem_ft,
        "distance_to_other_m": dist,
        "neighbour_values_psf": neigh,
        "layer_name": names[gov],
        "layer_sha256": shas[gov],
        "other_layers": others,
    }
    # object columns stay object (no per-row conversion to Arrow strings for big portfolios)
    df = pd.DataFrame(
        {k: pd.Series(v, dtype=object if v.dtype == object else v.dtype) for k, v in cols.items()}
    )
    return df, {"layers": layers, "hits": hits, "gov": gov, "per_layer": per_layer, "bits": bits}
