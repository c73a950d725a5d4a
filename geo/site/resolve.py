"""Vectorized site resolution: many sites -> status, flags and ground snow load.

:func:`resolve` is the engine under both ``neve site`` (one site) and
``neve screen`` (a portfolio); it returns a typed
:class:`neve.geo.site.result.Resolution` (status codes, flag bits, values per
quantity, ...), which :func:`resolve_points` turns into a table.  Everything
is done on arrays: one DEM read per window, one spatial query per layer
(:mod:`neve.geo.layers.vector`), rules on arrays, and the per-site messages
are built once per distinct combination, not once per site.

Status and flags are those of the README ("neve site and neve layer");
nothing is silently defaulted.  When several layers are given (most local
first) the first layer that covers a site governs and the others are
reported in ``other_layers``.

Readings where the contract leaves room (README, "Elevation, DEM and study
areas"):

* A study precedes mapped values: a site inside, or on the edge of, a zone
  that requires a site-specific case study is ``study_required``, whatever
  the other zones there map (:data:`neve.geo.layers.vector.RANK`).
* A zone requiring a study within the layer's boundary tolerance of the site
  (``study_area_nearby``): the mapped value of the site's own zone is reported
  (raised by any larger value within the tolerance) and the status is
  ``provisional``.  The map cannot place its boundaries closer than the
  tolerance, so the site may lie in the study area: the engineer confirms
  that it does not, or treats the site as ``study_required``.
* A given elevation more than :data:`neve.geo.site.elevation.MISMATCH_M` from the DEM
  (``elevation_mismatch``): the ground load is worked at both elevations and
  the more demanding result governs (:func:`more_demanding`), unless
  ``elevation_source="input"``; the other result is reported beside it.
* DEM values outside :data:`neve.geo.site.elevation.DEM_MIN_M` ..
  :data:`neve.geo.site.elevation.DEM_MAX_M` are no elevation (``dem_implausible``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from neve.engine.errors import InputError
from neve.engine.units import KPA_PER_PSF, M_PER_FT
from neve.geo.layers import rules as R
from neve.geo.layers.model import as_layers, dem_argument
from neve.geo.layers.vector import NONE, Hits, layer_hits
from neve.geo.site.coords import suspect_mask, valid_mask
from neve.geo.site.elevation import (
    DEM_MAX_M,
    DEM_MIN_M,
    MISMATCH_M,
    check_dem_options,
    plausible_dem,
    sample_dem,
)
from neve.geo.site.result import (  # noqa: F401  (the result's names, as they were here)
    BIT,
    COLUMNS,
    ERROR,
    FLAG_TABLE,
    FLAGS,
    FROM_DEM,
    FROM_INPUT,
    FROM_NONE,
    LIMITING,
    NO_DATA,
    OK,
    PROVISIONAL,
    STATUSES,
    STUDY,
    Provenance,
    Resolution,
)

#: ``elevation_source`` choices: which elevation governs where a given one and the DEM disagree
ELEVATION_SOURCES = ("larger", "input")
_BAD_COORDS = BIT["bad_coordinates"]  # message-only bits (kind "note"), never shown as flags
_NEAR_UNKNOWN = BIT["near_unknown"]
_NEAR_VALUED = BIT["near_valued"]


def layer_status(h: Hits) -> tuple[np.ndarray, np.ndarray]:
    """Status code and flag bits of each site from one layer's hits alone."""
    st = h.state
    status = np.full(h.n, NO_DATA, dtype=np.int8)
    flags = np.zeros(h.n, dtype=np.uint64)
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
        if bits & (BIT["overlapping_zones"] | BIT["near_boundary"]):
            parts.append(
                "A zone with a mapped value overlaps, touches or lies near the site; "
                "a required study precedes mapped values."
            )
    else:
        parts.append(f"Ground snow load from {name}.")
        reasons = []
        if bits & BIT["near_boundary"] and bits & _NEAR_VALUED:
            reasons.append(
                f"a zone with another value lies within {layer.tolerance_m:g} m "
                "(the larger value governs)"
            )
        if bits & BIT["study_area_nearby"]:
            reasons.append(
                f"a zone that requires a site-specific case study lies within "
                f"{layer.tolerance_m:g} m (the mapped value is reported; confirm that the "
                "site lies outside that zone, or treat it as study_required)"
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
    if status not in (OK, PROVISIONAL) and bits & BIT["study_area_nearby"]:
        within = f"{layer.tolerance_m:g} m" if layer is not None else "a layer's boundary tolerance"
        parts.append(f"A zone that requires a site-specific case study lies within {within}.")
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
    elevation_source: str = "larger",
    risk: str | None = None,
) -> pd.DataFrame:
    """Resolve many sites to status, flags and ground snow load, as a table.

    The same as :func:`resolve` (see there for the parameters), turned into
    a DataFrame: one row per site, in input order, with the columns of
    :data:`COLUMNS` (:meth:`neve.geo.site.result.Resolution.to_frame`).
    """
    res = resolve(
        lat, lon, layers=layers, elevation_ft=elevation_ft, dem=dem, dem_units=dem_units,
        search_m=search_m, elevation_source=elevation_source, risk=risk,
    )  # fmt: skip
    return res.to_frame()


#: how demanding a result is when the elevations disagree (higher governs): a defective
#: rule or a required study at either elevation comes before any value
_DEMAND = np.array([1, 1, 3, 0, 4], dtype=np.int8)  # ok, provisional, study, no_data, error


def more_demanding(status_a, value_a, status_b, value_b) -> np.ndarray:
    """Whether result ``a`` is more demanding than result ``b``, site by site.

    Results are ranked error > study_required > a value > no_data; between
    two values the larger ground load [psf] is the more demanding.  A tie is
    not "more demanding", so ``b`` keeps it.
    """
    ra, rb = _DEMAND[np.asarray(status_a)], _DEMAND[np.asarray(status_b)]
    va = np.where(np.isfinite(value_a), value_a, -np.inf)
    vb = np.where(np.isfinite(value_b), value_b, -np.inf)
    return (ra > rb) | ((ra == rb) & (ra == 1) & (va > vb + 1e-9))


#: per-site arrays of one look-up (swapped between the two elevations where they disagree)
_SITE_KEYS = ("status", "bits", "value", "zone_id", "zone_ids", "rule", "neigh", "dist", "others")


def _lookup(layers, lo, la, elev, search_m, valid) -> dict:
    """Every layer's hits at one elevation per site, folded into per-site arrays."""
    n = lo.size
    hits = [layer_hits(layer, lo, la, elev, search_m) for layer in layers]
    covered = np.array([h.covered for h in hits]).reshape(len(layers), n)
    gov = np.where(covered.any(axis=0), covered.argmax(axis=0), -1)
    status = np.full(n, NO_DATA, dtype=np.int8)
    bits = np.full(n, BIT["outside_layer"], dtype=np.uint64)
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
        bits[sel & h.near_valued] |= _NEAR_VALUED
    ungov = gov < 0
    if hits:
        dist[ungov] = np.fmin.reduce(np.array([h.dist_other_m for h in hits]), axis=0)[ungov]
        # a study area near the site is said whichever layer it is in
        near_study = np.logical_or.reduce([h.near_study for h in hits])
        for k, h in enumerate(hits):
            near_study[gov == k] = h.near_study[gov == k]
        bits[near_study] |= BIT["study_area_nearby"]
    others = _other_layers(layers, hits, per_layer, gov, valid)
    return {
        "hits": hits, "gov": gov, "per_layer": per_layer, "status": status, "bits": bits,
        "value": value, "zone_id": zone_id, "zone_ids": zone_ids, "rule": rule, "neigh": neigh,
        "dist": dist, "others": others,
    }  # fmt: skip


def _finish(d: dict, extra: np.ndarray, valid: np.ndarray) -> dict:
    """Add the site-wide flags, then settle provisional, error and valueless sites."""
    status, bits, value = d["status"], d["bits"], d["value"]
    bits |= extra
    usable = status == OK
    status[usable & ((bits & LIMITING) != 0)] = PROVISIONAL
    status[~valid] = ERROR
    bits[~valid] = (bits[~valid] & BIT["demo_data"]) | _BAD_COORDS
    value[~np.isin(status, (OK, PROVISIONAL))] = np.nan
    return d


def _outcome(status: np.ndarray, value: np.ndarray, quantity: str = "pg") -> np.ndarray:
    """``pg 31.2 psf`` (``sk 1.46 kPa`` for an sk layer) or the status name, per site."""
    usable = np.isin(status, (OK, PROVISIONAL))
    txt = np.array(STATUSES, dtype=object)[status]
    if usable.any():
        if quantity == "sk":  # EN 1991-1-3: kPa (the value travels in psf)
            txt[usable] = [f"sk {v * KPA_PER_PSF:.3g} kPa" for v in value[usable]]
        else:
            txt[usable] = [f"{quantity} {v:.4g} psf" for v in value[usable]]
    return txt


def _mismatch_text(given_ft, dem_ft, out_in, out_dem, dem_governs, rule: str) -> list[str]:
    texts = []
    for g, d, a, b, use_dem in zip(given_ft, dem_ft, out_in, out_dem, dem_governs, strict=True):
        if rule == "input":
            why = "the given elevation governs (elevation source: input)"
        elif use_dem:
            why = "the DEM elevation governs (the more demanding result)"
        else:
            why = "the given elevation governs (the more demanding result, or equal)"
        texts.append(
            f" Elevation check: given {g:.0f} ft ({g * M_PER_FT:.1f} m), DEM {d:.0f} ft "
            f"({d * M_PER_FT:.1f} m); at the given elevation {a}, at the DEM elevation {b}; "
            f"{why}."
        )
    return texts


def _implausible_text(raw_ft: np.ndarray) -> np.ndarray:
    uv, inv = np.unique(np.round(raw_ft * M_PER_FT, 1), return_inverse=True)
    txt = [
        f" The DEM value at the site, {v:g} m, lies outside {DEM_MIN_M:g} m to {DEM_MAX_M:g} m "
        "(no land surface on Earth): no elevation was taken from the DEM."
        for v in uv
    ]
    return np.array(txt, dtype=object)[inv]


@dataclass
class Lookup:
    """Every layer's hits for some sites at one elevation each, and the governing layer."""

    hits: list  # one neve.geo.layers.vector.Hits per layer
    gov: np.ndarray  # governing layer index per site, -1 for none
    per_layer: list  # (status codes, flag bits) of each layer alone


@dataclass
class Detail:
    """The look-up behind a :class:`Resolution` (kept for one site's derivation).

    ``main`` is the look-up at the given (or only) elevation of every site;
    where a given elevation and the DEM disagree, ``alt`` is the look-up at
    the DEM elevation of the sites ``alt_sites``, and ``alt_governs`` says
    for which of them it governs.
    """

    main: Lookup
    alt: Lookup | None = None
    alt_sites: np.ndarray | None = None
    alt_governs: np.ndarray | None = None

    def governing(self, i: int) -> tuple[Lookup, int]:
        """The look-up that governs site ``i`` and the site's position in it."""
        if self.alt is not None:
            at = np.flatnonzero(self.alt_sites == i)
            if at.size and bool(self.alt_governs[at[0]]):
                return self.alt, int(at[0])
        return self.main, int(i)


def _message_key(status: np.ndarray, bits: np.ndarray, gov: np.ndarray) -> np.ndarray:
    """One int64 per (status, message bits, governing layer): the low 16 flag bits and the notes."""
    low = bits & np.uint64(0xFFFF)
    notes = (bits >> np.uint64(56)) & np.uint64(0xFF)
    small = (low | (notes << np.uint64(16))).astype(np.int64)  # < 2**24
    return (status.astype(np.int64) << 40) | (small << 11) | (gov + 1).astype(np.int64)


def _key_parts(u: int) -> tuple[int, int, int]:
    small = (u >> 11) & ((1 << 24) - 1)
    bits = (small & 0xFFFF) | ((small >> 16) << 56)
    return u >> 40, bits, (u & 2047) - 1


#: the W2 arrays a :class:`Resolution` carries in ``extra`` (empty without a W2 layer)
W2_EXTRA = ("w2_status", "w2_flags", "w2_zone_id", "w2_layer")


def w2_extra(n: int) -> dict:
    """``extra`` arrays of n sites with no W2 look-up."""
    return {
        "w2_status": np.full(n, -1, dtype=np.int8),
        "w2_flags": np.zeros(n, dtype=np.uint64),
        "w2_zone_id": np.full(n, "", dtype=object),
        "w2_layer": np.full(n, -1, dtype=np.intp),
    }


def resolve(
    lat,
    lon,
    *,
    layers=None,
    elevation_ft=None,
    dem=None,
    dem_units=None,
    search_m=None,
    elevation_source: str = "larger",
    keep_detail: bool = False,
    risk: str | None = None,
) -> Resolution:
    """Resolve many sites to status, flags, ground snow load and W2 (vectorized).

    The layers are split by the quantity they map (sidecar ``quantity``): the
    ``pg`` layers give the ground snow load, status and flags exactly as
    described in :func:`resolve_ground`; the ``w2`` layers (the winter wind
    parameter of ASCE 7-22), if any, are resolved the same way on their own
    (stacking, boundary tolerance, provenance) and give ``values["w2"]`` and the
    ``extra`` arrays :data:`W2_EXTRA`; a W2 study area sets ``w2_study_required``,
    no usable W2 value ``w2_missing`` (the ground status is not changed by W2).

    ``risk`` (``"I"`` .. ``"IV"``, default ``"II"``): the risk category whose
    values per-risk layers (ASCE 7-22) give; layers that map one value for
    every category ignore it.  Other parameters: :func:`resolve_ground`.
    ``Resolution.layer`` and ``extra["w2_layer"]`` index the layers as given.
    """
    layers = as_layers(layers)
    if risk is not None:
        layers = [ly.for_risk(risk) for ly in layers]
    ground_quantity(layers)  # one ground quantity per stack (pg or sk)
    ground = [k for k, ly in enumerate(layers) if ly.quantity != "w2"]
    wind = [k for k, ly in enumerate(layers) if ly.quantity == "w2"]
    if not ground:
        raise InputError(
            "layer",
            'only W2 layers (quantity = "w2") given',
            "at least one ground snow load layer (quantity pg) beside the W2 layers",
        )
    kw = dict(elevation_ft=elevation_ft, dem=dem, dem_units=dem_units, search_m=search_m,
              elevation_source=elevation_source)  # fmt: skip
    res = resolve_ground(lat, lon, layers=[layers[k] for k in ground], keep_detail=keep_detail,
                         **kw)  # fmt: skip
    n = len(res)
    res.extra.update(w2_extra(n))
    if not wind:
        return res
    gmap = np.array(ground + [-1], dtype=np.intp)
    res.layer = gmap[res.layer]
    wres = resolve_ground(lat, lon, layers=[layers[k] for k in wind], **kw)
    wmap = np.array(wind + [-1], dtype=np.intp)
    usable = np.isin(wres.status, (OK, PROVISIONAL))
    wbits = wres.flags.copy()
    study = wres.status == STUDY
    wbits[study] |= BIT["w2_study_required"]
    missing = ~usable & ~study
    wbits[missing] |= BIT["w2_missing"]
    res.flags |= wbits & np.uint64(BIT["w2_study_required"] | BIT["w2_missing"] | BIT["demo_data"])
    res.values["w2"] = np.where(usable, wres.value(_quantity_of(wres)), np.nan)
    res.extra.update(
        w2_status=wres.status, w2_flags=wbits, w2_zone_id=wres.zone_id,
        w2_layer=wmap[wres.layer],
    )  # fmt: skip
    res.message = res.message + _w2_texts(wres.status, res.values["w2"], wres.layer,
                                          [layers[k] for k in wind])  # fmt: skip
    res.layers = tuple(Provenance.of(layer) for layer in layers)
    return res


def _quantity_of(res: Resolution) -> str:
    return next(iter(res.values)) if res.values else "w2"


def _w2_texts(status, w2, layer_idx, wind_layers) -> np.ndarray:
    """The W2 sentence appended to each site's message, once per distinct outcome."""
    key = pd.Series(list(zip(status.tolist(), np.round(np.nan_to_num(w2, nan=-1), 6).tolist(),
                             layer_idx.tolist(), strict=True)))  # fmt: skip
    codes, uniq = pd.factorize(key)
    texts = []
    for st, v, k in uniq:
        name = f"layer {wind_layers[k].name!r}" if 0 <= k < len(wind_layers) else "the W2 layers"
        if st in (OK, PROVISIONAL):
            texts.append(f" W2 = {v:.3g} from {name}" + (" (provisional)." if st else "."))
        elif st == STUDY:
            texts.append(f" W2: site-specific study required ({name}); no W2 value.")
        else:
            texts.append(f" W2: no usable value ({name}: {STATUSES[st]}).")
    return np.array(texts, dtype=object)[codes]


def resolve_ground(
    lat,
    lon,
    *,
    layers=None,
    elevation_ft=None,
    dem=None,
    dem_units=None,
    search_m=None,
    elevation_source: str = "larger",
    keep_detail: bool = False,
) -> Resolution:
    """Resolve many sites to status, flags and ground snow load (vectorized), one quantity.

    Parameters
    ----------
    lat, lon : array_like
        Site coordinates [degrees, EPSG:4326]; bad values give status ``error``.
    layers : list of paths or Layer, optional
        Most local first; None gives the embedded demo stack.
    elevation_ft : array_like, optional
        Given site elevations [ft]; NaN where not given.
    dem : str or pathlib.Path, optional
        DEM sampled where needed (and compared with given elevations);
        ``"demo"`` is the embedded synthetic DEM.
    dem_units : str, optional
        Vertical unit of a DEM that states none; never overrides the unit a
        DEM states (a contradiction is an :class:`InputError`); refused
        without ``dem``.
    search_m : float, optional
        Radius for reporting neighbouring zones [m] (default: each layer's
        boundary tolerance).
    elevation_source : {"larger", "input"}
        Where a given elevation and the DEM differ by more than
        :data:`neve.geo.site.elevation.MISMATCH_M` (flag ``elevation_mismatch``), the
        ground load is worked at both elevations.  ``"larger"`` (default):
        the more demanding result governs (see :func:`more_demanding`);
        ``"input"``: the given elevation governs.  The other result is
        reported in the ``alt_*`` fields and in the message.
    keep_detail : bool
        Keep the look-up (:class:`Detail`) in ``Resolution.detail``, for the
        derivation of one site.

    Returns
    -------
    neve.geo.site.result.Resolution
        One entry per site, in input order.
    """
    from neve.engine.choices import choose_key

    elevation_source = choose_key("elevation-source", elevation_source, ELEVATION_SOURCES)
    lat = _as_array(lat)
    lon = _as_array(lon)
    n = lat.size
    if lon.size != n:
        raise InputError("lon", f"{lon.size} longitudes for {n} latitudes", "arrays of one length")
    dem = dem_argument(dem)  # "demo": the embedded synthetic DEM, as for `neve site`
    if dem is None and dem_units is not None:
        check_dem_options(dem, dem_units)  # refused: a unit with no DEM
    layers = as_layers(layers)
    if len(layers) > 1000:
        raise InputError("layer", f"{len(layers)} layers given", "at most 1000 stacked layers")
    valid = valid_mask(lat, lon)
    la = np.where(valid, lat, np.nan)
    lo = np.where(valid, lon, np.nan)
    given = np.full(n, np.nan) if elevation_ft is None else _as_array(elevation_ft, n).astype(float)
    dem_raw = sample_dem(dem, lo, la, dem_units) if dem is not None else np.full(n, np.nan)
    dem_ft, implausible = plausible_dem(dem_raw)
    has_in, has_dem = np.isfinite(given), np.isfinite(dem_ft)
    elev = np.where(has_in, given, dem_ft)
    source = np.where(has_in, FROM_INPUT, np.where(has_dem, FROM_DEM, FROM_NONE)).astype(np.int8)
    extra = np.zeros(n, dtype=np.uint64)
    mismatch = has_in & has_dem & (np.abs(given - dem_ft) * M_PER_FT > MISMATCH_M)
    extra[mismatch] |= BIT["elevation_mismatch"]
    if dem is not None:
        extra[valid & ~has_dem & ~implausible] |= BIT["dem_nodata"]
        extra[valid & implausible] |= BIT["dem_implausible"]
    extra[valid & suspect_mask(lat, lon)] |= BIT["coordinates_suspect"]
    if any(layer.demo for layer in layers):
        extra |= BIT["demo_data"]
    # swapped coordinates: a site in no layer whose swapped pair falls in one
    main = _lookup(layers, lo, la, elev, search_m, valid)
    out = np.flatnonzero(valid & (main["gov"] < 0) & (np.abs(lon) <= 90))
    if out.size:
        for layer in layers:
            sw = layer_hits(layer, la[out], lo[out], np.full(out.size, np.nan))
            extra[out[sw.covered]] |= BIT["coordinates_suspect"]
    _finish(main, extra, valid)
    # a given elevation the DEM disagrees with: the ground load at the DEM elevation too
    alt_source = np.full(n, -1, dtype=np.int8)
    alt_elev = np.full(n, np.nan)
    alt_status = np.full(n, -1, dtype=np.int8)
    alt_value = np.full(n, np.nan)
    alt_zone = np.full(n, "", dtype=object)
    detail = Detail(Lookup(main["hits"], main["gov"], main["per_layer"]))
    note = np.full(n, "", dtype=object)
    sub = np.flatnonzero(mismatch & valid)
    if sub.size:
        a = _finish(_lookup(layers, lo[sub], la[sub], dem_ft[sub], search_m, valid[sub]),
                    extra[sub], valid[sub])  # fmt: skip
        if elevation_source == "larger":
            use_dem = more_demanding(a["status"], a["value"], main["status"][sub],
                                     main["value"][sub])  # fmt: skip
        else:
            use_dem = np.zeros(sub.size, dtype=bool)
        q = _alt_quantity(tuple(Provenance.of(layer) for layer in layers))
        out_in = _outcome(main["status"][sub], main["value"][sub], q)
        out_dem = _outcome(a["status"], a["value"], q)
        note[sub] = _mismatch_text(given[sub], dem_ft[sub], out_in, out_dem, use_dem,
                                   elevation_source)  # fmt: skip
        swap = sub[use_dem]
        for key in _SITE_KEYS:
            mine = main[key][sub].copy()
            main[key][swap] = a[key][use_dem]
            a[key][use_dem] = mine[use_dem]
        elev[swap] = dem_ft[swap]
        source[swap] = FROM_DEM
        alt_source[sub] = np.where(use_dem, FROM_INPUT, FROM_DEM)
        alt_elev[sub] = np.where(use_dem, given[sub], dem_ft[sub])
        alt_status[sub] = a["status"]
        alt_value[sub] = a["value"]
        alt_zone[sub] = a["zone_id"]
        detail.alt = Lookup(a["hits"], a["gov"], a["per_layer"])
        detail.alt_sites, detail.alt_governs = sub, use_dem
    status, bits, gov = main["status"], main["bits"], main["gov"]
    # messages once per distinct combination of status, flags and governing layer
    codes, uniq = pd.factorize(_message_key(status, bits, gov))
    msgs = []
    for u in uniq:
        s, b, g = _key_parts(int(u))
        msgs.append(_message(s, b, layers[g] if 0 <= g < len(layers) else None))
    message = np.array(msgs, dtype=object)[codes]
    err = np.flatnonzero(valid & (status == ERROR) & (gov >= 0))
    # where the DEM elevation governs, the governing hits are those of the second look-up
    at_dem = np.zeros(n, dtype=bool)
    pos = np.full(n, -1, dtype=np.intp)
    if detail.alt is not None:
        at_dem[sub[use_dem]] = True
        pos[sub] = np.arange(sub.size)
    for k in np.unique(gov[err]):  # the governing zone's own account: zone, value, why
        for use_alt in (False, True):
            sel = err[(gov[err] == k) & (at_dem[err] == use_alt)]
            if sel.size == 0:
                continue
            if use_alt:
                why = layers[k].site_errors(detail.alt.hits[k], pos[sel], elev[sel])
            else:
                why = layers[k].site_errors(main["hits"][k], sel, elev[sel])
            message[sel] = np.where(why != "", why + " " + message[sel], message[sel])
    bad_dem = np.flatnonzero(valid & implausible)
    if bad_dem.size:
        message[bad_dem] = message[bad_dem] + _implausible_text(dem_raw[bad_dem])
    if sub.size:
        message[sub] = message[sub] + note[sub]
    prov = tuple(Provenance.of(layer) for layer in layers)
    return Resolution(
        status=status,
        flags=bits & ~np.uint64(_BAD_COORDS | _NEAR_UNKNOWN | _NEAR_VALUED),
        values=_per_quantity(main["value"], gov, prov),
        layer=gov.astype(np.intp),
        zone_id=main["zone_id"],
        zone_ids=main["zone_ids"],
        rule=main["rule"],
        elevation_ft=elev,
        elevation_source=source,
        dem_elevation_ft=dem_ft,
        distance_to_other_m=main["dist"],
        neighbour_values=main["neigh"],
        other_layers=main["others"],
        message=message,
        alt_source=alt_source,
        alt_elevation_ft=alt_elev,
        alt_status=alt_status,
        alt_values={_alt_quantity(prov): alt_value},
        alt_zone_id=alt_zone,
        layers=prov,
        detail=detail if keep_detail else None,
    )


def _alt_quantity(prov: tuple) -> str:
    """The quantity of the elevation alternative's value: the layers' one (``pg`` if mixed)."""
    quantities = {p.quantity for p in prov}
    return quantities.pop() if len(quantities) == 1 else "pg"


def ground_quantity(layers) -> str:
    """The one ground quantity of a stack's ground layers (``pg``; ``sk`` for EN 1991-1-3).

    A stack that mixes ground quantities (a ``pg`` layer above an ``sk`` layer)
    is refused: the first layer that covers a site governs, and a pg map and an
    sk map are not values of one thing.
    """
    seen = {}
    for ly in layers:
        q = getattr(ly, "quantity", "pg")
        if q != "w2":
            seen.setdefault(q, ly)
    if len(seen) > 1:
        raise InputError(
            "layer",
            "the ground layers map different quantities ("
            + ", ".join(f"{q}: {ly.name!r}" for q, ly in seen.items()) + ")",
            "layers of one ground quantity per run (all pg, or all sk), most local first",
        )
    return next(iter(seen), "pg")


def _per_quantity(value: np.ndarray, gov: np.ndarray, prov: tuple) -> dict:
    """The governing values keyed by the quantity each layer maps (``pg`` when no layer)."""
    quantities = sorted({p.quantity for p in prov}) or ["pg"]
    if len(quantities) == 1:
        return {quantities[0]: value}
    out = {}
    for q in quantities:
        mine = np.array([k for k, p in enumerate(prov) if p.quantity == q], dtype=np.intp)
        out[q] = np.where(np.isin(gov, mine), value, np.nan)
    return out
