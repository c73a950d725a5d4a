"""Portfolio screening: many sites to ground snow loads (and roof loads) at once.

>>> from neve.geo.screen.run import screen                       # doctest: +SKIP
>>> results = screen("sites.csv", roof="roof.toml")     # doctest: +SKIP

Every input row comes back, in input order, with every input column plus
``status``, ``pg_psf``, ``pg_kpa``, ``zone_id``, ``flags``, ``message``, the
coordinates used (``site_lat``, ``site_lon``), the elevation used
(``site_elevation_ft``, ``site_elevation_m``, ``site_elevation_source``) and, when a
roof is given, the roof results.  A malformed row is marked ``error`` with the
reason; it never stops the run.  The work is done on arrays: the sites are
resolved in large chunks by :func:`neve.geo.site.resolve.resolve_points` (one spatial
join per layer and chunk, :mod:`neve.geo.screen.local`, or on a Dask cluster,
:mod:`neve.geo.screen.dask_runner`), and the roof engine runs once per roof profile.

Results are an aid to, not a substitute for, a licensed design professional.
"""

from __future__ import annotations

import time
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from neve.engine.errors import InputError, NeveError
from neve.engine.roof_spec import Roof
from neve.engine.units import KPA_PER_PSF, M_PER_FT
from neve.geo.screen.local import (  # noqa: F401  (the local engine's names re-exported)
    CHUNK_SIZE,
    THREADED_FROM,
    THREADS_ENV,
    portable_layer,
    resolve_local,
    resolve_local_result,
    worker_threads,
)
from neve.geo.screen.outputs import (  # noqa: F401  (summary names re-exported)
    CAUTIONS,
    LAT_COLUMN,
    LON_COLUMN,
    ROOF_STATUSES,
    STATUSES,
    format_summary,
    summarize,
)
from neve.geo.screen.sitefile import SiteArrays, load_sites
from neve.geo.site.result import (
    BIT,
    ERROR,
    FROM_NONE,
    OK,
    PROVISIONAL,
    Provenance,
    Resolution,
    bits_of,
    flags_text,
)
from neve.roof_file import read_toml, roofs_from_mapping  # noqa: F401  (moved; re-exported)

#: the result columns neve adds (before the roof columns), in order
RESULT_COLUMNS = (
    "status",
    "pg_psf",
    "pg_kpa",
    "zone_id",
    "flags",
    "message",
    LAT_COLUMN,
    LON_COLUMN,
    "site_elevation_ft",
    "site_elevation_m",
    "site_elevation_source",
    "rule",
    "layer_name",
)
#: roof loads added per row (each as ``<name>_psf`` and ``<name>_kpa``)
ROOF_LOADS = ("pf", "ps", "pm", "rain_on_snow", "design_uniform")
#: the roof loads of a run on ``sk`` layers (EN 1991-1-3), each as ``<name>_kpa`` beside
#: ``<name>_psf``; its ground columns are ``sk_kpa`` and ``sk_psf`` in place of pg's
SK_ROOF_LOADS = ("s", "design_uniform")
#: the quantities whose columns come SI first (kPa, then psf)
SI_FIRST = ("sk",)


def ground_quantity_of(res: Resolution) -> str:
    """The ground quantity of a run's layers (``pg``; ``sk`` for EN 1991-1-3 layers)."""
    quantities = {p.quantity for p in res.layers} - {"w2"}
    return quantities.pop() if len(quantities) == 1 else "pg"


ENGINES = ("local", "dask")
#: the resolver's columns that screening uses
RESOLVED_COLUMNS = (
    "status", "pg_psf", "zone_id", "flags", "message", "elevation_ft", "elevation_source",
    "rule", "layer_name",
)  # fmt: skip


@dataclass
class ScreenRun:
    """Everything one screening produced: the table, its summary, the input geometry."""

    results: pd.DataFrame
    summary: dict
    geometry: object = None
    layers: list = field(default_factory=list)


def _layers(layers) -> list:
    from neve.geo.layers.model import as_layers

    if isinstance(layers, (list, tuple)) and not layers:
        layers = None
    return as_layers(layers)


def _roofs(roof) -> Roof | dict[str, Roof] | None:
    if roof is None or isinstance(roof, Roof):
        return roof
    if isinstance(roof, (str, Path)):
        return roofs_from_mapping(read_toml(roof, "roof"))
    if isinstance(roof, Mapping):
        if roof and all(isinstance(v, Roof) for v in roof.values()):
            return {str(k): v for k, v in roof.items()}
        return roofs_from_mapping(roof)
    raise InputError("roof", f"got {type(roof).__name__}", "a Roof, a mapping or a ROOF.toml path")


def _profile_errors(sites: SiteArrays, roofs) -> None:
    if not isinstance(roofs, dict):
        return
    if sites.roof is None:
        raise InputError(
            "roof",
            f"the roof file defines profiles ({', '.join(roofs)}) but the site file has no 'roof' column",
            "a 'roof' column naming a profile on each row, or a ROOF.toml without profiles",
        )
    canonical = {name.strip().lower(): name for name in roofs}  # case-blind, as every choice
    codes, uniques = pd.factorize(sites.roof)  # each distinct name looked at once
    mapped = np.array([canonical.get(str(u).lower()) for u in uniques] + [None], dtype=object)
    found = mapped[codes]
    names = pd.Series(sites.roof)
    sites.roof = np.where(found != None, found, sites.roof)  # noqa: E711
    unknown = (found == None) & (sites.roof != "")  # noqa: E711
    accepted = ", ".join(roofs)
    todo = unknown & (sites.error == "")
    sites.error[todo] = [f"roof: unknown profile {v!r}; accepted: {accepted}" for v in names[todo]]


@dataclass
class ScreenPlan:
    """What a screening run checked and loaded before reading any site (shared by chunks)."""

    layers: list
    roofs: object
    explicit: object
    engine: str
    kwargs: dict
    resolver: object
    geocoding: dict
    max_rows: int | None = None


def plan_screen(
    *,
    layers=None,
    dem=None,
    dem_units: str | None = None,
    roof=None,
    engine: str = "local",
    scheduler: str | None = None,
    partitions: int | None = None,
    staging=None,
    geocoder=None,
    gazetteer=None,
    geocoder_url: str | None = None,
    geocode_cache=None,
    max_rows: int | None = None,
    progress: bool = False,
    elevation_source: str = "larger",
    standard=None,
) -> ScreenPlan:
    """Check the options and load the layers and roofs of a run (see :func:`run_screen`)."""
    from neve.engine.choices import choose_key
    from neve.engine.standards import get_standard

    explicit = get_standard(standard) if standard is not None else None  # unknown: refused now
    engine = choose_key("engine", engine, ENGINES)
    from neve.geo.layers.model import dem_argument

    dem = dem_argument(dem)  # "demo": the embedded synthetic DEM, as for `neve site`
    if dem is not None and not Path(dem).is_file():
        raise InputError("dem", f"file {str(dem)!r} not found", "a GeoTIFF path, or 'demo'")
    from neve.geo.site.elevation import check_dem_options

    check_dem_options(dem, dem_units)  # before any work: a unit without a DEM, or a clash
    if explicit is not None and (
        layers is None or (isinstance(layers, (list, tuple)) and not layers)
    ):
        from neve.geo.layers.model import demo_layers_for

        layers = demo_layers_for(explicit)  # --standard asce7-22: the 7-22 demo layers
    layer_list = _layers(layers)
    roofs = _roofs(roof)
    kwargs = dict(
        layers=layer_list,
        dem=dem,
        dem_units=dem_units,
        progress=progress,
        elevation_source=elevation_source,
    )
    if engine == "dask":
        from neve.geo.screen.dask_runner import resolve_dask_result

        def resolver(la, lo, el, **kw):
            return resolve_dask_result(la, lo, el, scheduler=scheduler, partitions=partitions,
                                       staging=staging, **kw)  # fmt: skip
    else:
        resolver = resolve_local_result
    geocoding = dict(geocoder=geocoder, gazetteer=gazetteer, url=geocoder_url,
                     cache_path=geocode_cache, progress=progress)  # fmt: skip
    return ScreenPlan(layer_list, roofs, explicit, engine, kwargs, resolver, geocoding, max_rows)


def screen_sites(plan: ScreenPlan, site: SiteArrays, lap=None) -> pd.DataFrame:
    """The results of parsed sites under a plan: every row, in order (see :func:`run_screen`)."""
    lap = lap or (lambda name: None)
    layer_list, roofs, explicit = plan.layers, plan.roofs, plan.explicit
    _profile_errors(site, roofs)
    from neve.geo.screen.editions import has_per_risk, resolve_by_risk, row_risk, w2_columns

    risk, risk_cell = row_risk(site, roofs)  # before the look-up: a bad risk cell is a row error
    lap("read")
    if site.address is not None and (site.address != "").any():
        from neve.geo.screen.geocode_rows import geocode_sites

        geocode_sites(site, plan.geocoding["geocoder"], **{
            k: v for k, v in plan.geocoding.items() if k != "geocoder"})  # fmt: skip
        lap("geocode")
    valid = (site.error == "") & np.isfinite(site.lat) & np.isfinite(site.lon)
    idx = np.flatnonzero(valid)
    elev = site.elevation_ft[idx]
    elev_arg = elev if np.isfinite(elev).any() else None
    kwargs = dict(plan.kwargs)
    resolver = plan.resolver
    if len(idx) == 0:
        resolved = None
    elif has_per_risk(layer_list):  # per-risk layers (ASCE 7-22): once per risk category
        kwargs.pop("layers")
        resolved = resolve_by_risk(resolver, site.lat[idx], site.lon[idx], elev_arg,
                                   risk[idx], layer_list, **kwargs)  # fmt: skip
    else:
        resolved = resolver(site.lat[idx], site.lon[idx], elev_arg, **kwargs)
    if resolved is not None and site.location_radius_m is not None:
        _widen_approximate(resolved, site, idx, elev_arg, risk, layer_list, resolver, kwargs)
    lap("resolve")
    res = _rows_result(site, idx, resolved, layer_list)
    roof_cols = (
        _roof_columns(res, site, roofs, layer_list, explicit, np.where(risk_cell, risk, None))
        if roofs is not None
        else {}
    )
    record_cols = _on_record_columns(res, site, roof_cols)  # before the flags become text
    w2_cols = w2_columns(res, layer_list)  # W2 layers given: w2, w2_zone_id
    out = {**_result_columns(res, site), **w2_cols, **roof_cols, **record_cols}  # text: the edge
    results = _join_input(site.frame, out)
    lap("roof_and_assemble")
    return results


def run_screen(sites, **options) -> ScreenRun:
    """Screen sites; return the results with their summary (see :func:`screen`).

    Takes the options of :func:`plan_screen`; ``standard``: the standard of the
    roof loads (an id or name of :mod:`neve.engine.standards`; the default one
    when omitted).
    """
    t0 = time.perf_counter()
    timings: dict[str, float] = {}

    def lap(name: str) -> None:
        timings[name] = round(time.perf_counter() - t0 - sum(timings.values()), 3)

    plan = plan_screen(**options)
    lap("layers")
    site = load_sites(sites)
    if plan.max_rows is not None and len(site) > plan.max_rows:
        raise InputError(
            "output",
            f"{len(site):,} sites do not fit in the chosen output ({plan.max_rows:,} rows at most)",
            "a .csv, .gpkg or .parquet output for large portfolios",
        )
    results = screen_sites(plan, site, lap)
    summary = summarize(
        results,
        plan.layers,
        engine=plan.engine,
        seconds=time.perf_counter() - t0,
        input_info=site.input_info,
    )
    summary["timings_s"] = timings
    geometry = getattr(site, "geometry", None)
    return ScreenRun(results, summary, geometry, plan.layers)


def screen(sites, *, layers=None, dem=None, dem_units=None, roof=None, engine="local", **kw):
    """Screen a portfolio of sites for ground (and roof) snow loads.

    Parameters
    ----------
    sites : str, Path or pandas.DataFrame
        A site file (CSV, XLSX, GeoPackage, Parquet) or a table with ``lat``/
        ``lon`` (or ``latitude``/``longitude``), ``address`` or point geometry.
    layers : list of Layer or paths, optional
        Zone layers, most local first; the embedded demo layer when omitted.
    dem : str or Path, optional
        Elevation raster sampled where a row gives no elevation (``"demo"``:
        the embedded synthetic demo DEM).
    dem_units : {"m", "ft"}, optional
        Units of the DEM's values when its metadata does not say.
    roof : Roof, mapping, or ROOF.toml path, optional
        One roof for every site, or ``[profile.NAME]`` roofs chosen per row by
        a ``roof`` column.
    engine : {"local", "dask"}
        Where the sites are resolved; ``dask`` accepts ``scheduler=`` (an
        address; a LocalCluster is started when omitted), ``partitions=`` and
        ``staging=`` (a folder the workers share, see :mod:`neve.geo.screen.dask_runner`).
    geocoder : callable, optional
        ``address -> (lat, lon) | None`` for rows located by address; the
        project's geocoder (with a cache and its rate limit) when omitted,
        built from ``gazetteer=`` (CSV of address, lat, lon) and/or
        ``geocoder_url=`` (a Nominatim-compatible server); ``geocode_cache=``
        names a JSON file that keeps found addresses between runs.
    progress : bool
        Show a progress bar on stderr.

    Returns
    -------
    pandas.DataFrame
        One row per input row, in input order (loads [psf] and [kPa]).
    """
    run = run_screen(
        sites, layers=layers, dem=dem, dem_units=dem_units, roof=roof, engine=engine, **kw
    )
    return run.results


def _widen_approximate(resolved, site, idx, elev_arg, risk, layer_list, resolver, kwargs) -> None:
    """Re-resolve rows located with an uncertainty radius, the layers widened to it.

    Rows of one radius (one address: the look-ups are cached) are resolved
    together with every layer's boundary tolerance raised to that radius
    (:meth:`neve.geo.layers.model.Layer.widened`), as ``neve site`` does; rows
    at a ZIP code or place centroid get ``location_approximate``.  With a DEM,
    rows without a given elevation are worked at the minimum and maximum DEM
    elevation over their circle (:func:`neve.geo.site.circle.resolve_over_circle`:
    the more demanding governs, ``elevation_rule_within_radius`` where they
    differ); the minimum and maximum go to ``site.location_elevation_min_ft`` /
    ``_max_ft``.
    """
    from neve.geo.screen.editions import has_per_risk, resolve_by_risk
    from neve.geo.site.circle import elevation_over_circle, resolve_over_circle

    radius = site.location_radius_m[idx]
    precision = site.location_precision[idx]
    approx = np.isin(precision, ("postal_code", "place"))
    n = len(site)
    site.location_elevation_min_ft = np.full(n, np.nan)
    site.location_elevation_max_ft = np.full(n, np.nan)
    if approx.any():
        resolved.flags[approx] |= np.uint64(BIT["location_approximate"])
    dem = kwargs.get("dem")
    per_risk = has_per_risk(layer_list)

    def run(rows, el, widened, **kw):
        kw = dict(kwargs, progress=False, **kw)
        kw.pop("layers", None)
        if per_risk:
            return resolve_by_risk(resolver, site.lat[rows], site.lon[rows], el, risk[rows],
                                   widened, **kw)  # fmt: skip
        return resolver(site.lat[rows], site.lon[rows], el, layers=widened, **kw)

    wide = np.isfinite(radius) & (radius > 0)
    for r in np.unique(radius[wide]):
        pos = np.flatnonzero(wide & (radius == r))
        rows = idx[pos]
        widened = [ly.widened(float(r)) for ly in layer_list]
        el = None if elev_arg is None else elev_arg[pos]
        circle = np.zeros(pos.size, dtype=bool)
        over = None
        if dem is not None:  # ZIP code and place rows (an address's 50 m is taken as exact)
            no_el = np.ones(pos.size, bool) if el is None else ~np.isfinite(el)
            no_el &= approx[pos]
            if no_el.any():
                at = np.flatnonzero(no_el)
                over = elevation_over_circle(site.lat[rows[at]], site.lon[rows[at]], float(r),
                                             dem, kwargs.get("dem_units"))  # fmt: skip
                found = np.isfinite(over["min_ft"])
                circle[at[found]] = True
                over = {k: v[found] for k, v in over.items()}
        plain = ~circle
        if plain.any() and not all(w is ly for w, ly in zip(widened, layer_list, strict=True)):
            sub = pos[plain]
            part = run(idx[sub], None if el is None else el[plain], widened)
            part.flags |= resolved.flags[sub] & np.uint64(BIT["location_approximate"])
            resolved.assign(sub, part)
        if circle.any():
            sub = pos[circle]

            def at_elevation(la, lo, e, _rows=idx[sub], _layers=widened, **_kw):
                return run(_rows, e, _layers, dem=None, dem_units=None)

            part, _, _ = resolve_over_circle(site.lat[idx[sub]], site.lon[idx[sub]], float(r),
                                             over, resolver=at_elevation)  # fmt: skip
            part.flags |= resolved.flags[sub] & np.uint64(BIT["location_approximate"])
            resolved.assign(sub, part)
            site.location_elevation_min_ft[idx[sub]] = over["min_ft"]
            site.location_elevation_max_ft[idx[sub]] = over["max_ft"]
    if approx.any():
        resolved.message[approx] = [
            f"{m} Located at a {'ZIP code' if p == 'postal_code' else 'place'} centroid, "
            f"uncertain within {r:,.0f} m: zones within that circle were considered and the "
            "larger value governs.".strip()
            for m, p, r in zip(resolved.message[approx], precision[approx], radius[approx],
                               strict=True)
        ]  # fmt: skip


def _rows_result(
    site: SiteArrays, idx: np.ndarray, resolved: Resolution | None, layers: list
) -> Resolution:
    """The result of every input row: the resolver's where it ran, ``error`` elsewhere.

    Row-level flags (``duplicate_site_id``, ``multiline_field``) are added as
    bits; rows that were never looked up carry their reason in ``message``.
    """
    n = len(site)
    if resolved is None or not len(idx):
        res = Resolution.blank(n, tuple(Provenance.of(layer) for layer in layers))
    else:
        if len(resolved) != len(idx):
            raise NeveError(f"resolver returned {len(resolved)} results for {len(idx)} sites")
        res = resolved.placed(idx, n)
    invalid = np.ones(n, dtype=bool)
    invalid[idx] = False
    if invalid.any():
        errors = site.error[invalid]
        res.status[invalid] = ERROR
        res.message[invalid] = np.where(errors == "", "no coordinates for this row", errors)
        res.flags[invalid] = BIT["demo_data"] if any(ly.demo for ly in layers) else 0
        res.elevation_source[invalid] = FROM_NONE
    if site.duplicate.any():
        res.flags[site.duplicate] |= BIT["duplicate_site_id"]
    if site.multiline:  # a quoted cell with line breaks: kept, never silently
        rows = np.fromiter(site.multiline, dtype=np.int64, count=len(site.multiline))
        res.flags[rows] |= BIT["multiline_field"]
        res.message[rows] = [
            f"{m} Input record on lines {a}-{b} of the file: a quoted cell holds line breaks "
            f"(if that is not meant, look for a stray quote on line {a}).".strip()
            for m, (a, b) in zip(res.message[rows], site.multiline.values(), strict=True)
        ]
    return res


def _circle_column(site: SiteArrays, which: str) -> np.ndarray:
    """The DEM's minimum or maximum [ft] over each row's location circle (NaN where none)."""
    got = getattr(site, f"location_elevation_{which}_ft", None)
    return np.full(len(site), np.nan) if got is None else got


def _missing_if_empty(text: np.ndarray) -> np.ndarray:
    """Text per row with "" (no zone, no layer) as a missing value."""
    empty = text == ""
    if not empty.any():
        return text
    out = text.copy()
    out[empty] = np.nan
    return out


def _result_columns(res: Resolution, site: SiteArrays) -> dict:
    """The result columns of every row (:data:`RESULT_COLUMNS`): the edge where codes and
    bits become text."""
    q = ground_quantity_of(res)
    pg = res.value(q)  # [psf]
    ground = {"pg_psf": pg, "pg_kpa": pg * KPA_PER_PSF}
    if q in SI_FIRST:  # sk layers: sk_kpa beside sk_psf
        ground = {f"{q}_kpa": pg * KPA_PER_PSF, f"{q}_psf": pg}
    elev = res.elevation_ft
    return {
        "status": res.status_text(),
        **ground,
        "zone_id": _missing_if_empty(res.zone_id),
        "flags": flags_text(res.flags),
        "message": res.message,
        LAT_COLUMN: site.lat,
        LON_COLUMN: site.lon,
        "site_elevation_ft": elev,
        "site_elevation_m": elev * M_PER_FT,
        "site_elevation_source": res.elevation_source_text(),
        "rule": _missing_if_empty(res.rule),
        "layer_name": _missing_if_empty(res.layer_field("name")),
        **(
            {}
            if site.location_precision is None
            else {
                "location_precision": _missing_if_empty(site.location_precision),
                "location_radius_m": site.location_radius_m,
                "location_elevation_min_ft": _circle_column(site, "min"),
                "location_elevation_max_ft": _circle_column(site, "max"),
            }
        ),
    }


def _roof_columns(
    res: Resolution, site: SiteArrays, roofs, layers, standard=None, risk=None
) -> dict:
    """Uniform roof loads of the usable rows (``<load>_psf`` beside ``<load>_kpa``).

    The ground value goes to the standard (asked of the registry) as the
    result's own arrays of the quantities it needs (``pg``, and ``w2`` for a
    standard that takes it); the roof's flags are added to the rows' flag
    bits.  ``standard`` None: each row's governing layer chooses the standard
    that takes its edition (else ASCE 7-16); given, a row whose layer is of an
    edition another standard takes is flagged ``edition_mismatch`` and one no
    standard takes ``roof_standard_unsupported``, without roof loads.  ``risk``
    (per row; None where the site file gives none): the building's risk category
    from the row's ``risk`` cell, given to the roof of the row.
    """
    from dataclasses import replace

    from neve.engine.standards import get_standard
    from neve.geo.screen.editions import row_standards

    explicit = get_standard(standard) if standard is not None else None
    n = len(site)
    q = ground_quantity_of(res)
    names = SK_ROOF_LOADS if q in SI_FIRST else ROOF_LOADS
    psf = {name: np.full(n, np.nan) for name in names}
    pg = res.value(q)  # [psf]
    w2 = res.value("w2")
    usable = np.isin(res.status, (OK, PROVISIONAL)) & np.isfinite(pg)
    groups, mismatch, unsupported = row_standards(res, layers, explicit)
    res.flags[usable & mismatch] |= BIT["edition_mismatch"]
    res.flags[usable & unsupported] |= BIT["roof_standard_unsupported"]
    profiles = (
        [(roofs, np.ones(n, dtype=bool))]
        if isinstance(roofs, Roof)
        else [(r, site.roof == name) for name, r in roofs.items()]
    )
    risks = [None] if risk is None else list(dict.fromkeys(np.asarray(risk).tolist()))
    for std, rows in groups.values():
        for roof, on_roof in profiles:
            for cat in risks:
                mask = usable & rows & on_roof
                this = roof
                if risk is not None:
                    mask &= np.asarray(risk) == cat
                    if cat is not None and roof.risk != cat:
                        this = replace(roof, risk=cat)  # the row's building: its risk category
                if not mask.any():
                    continue
                res.flags[mask] |= bits_of(std.screening_flags(this))
                # the standard's load unit: ASCE 7 takes psf, EN 1991-1-3 kPa
                kpa = std.units.get("load") == "kPa"
                quantities = {q: pg[mask] * KPA_PER_PSF if kpa else pg[mask]}
                if "w2" in std.quantities:
                    quantities["w2"] = w2[mask]
                loads = std.uniform(quantities, this)
                for name in names:
                    v = np.asarray(loads[name], dtype=float)
                    psf[name][mask] = v / KPA_PER_PSF if kpa else v
    out = {}
    for name in names:  # psf beside kPa (kPa first for sk)
        pair = {f"{name}_psf": psf[name], f"{name}_kpa": psf[name] * KPA_PER_PSF}
        out.update(dict(reversed(pair.items())) if q in SI_FIRST else pair)
    return out


#: columns added when the site file has a snow_load_on_record column (the existing-roof check)
ON_RECORD_COLUMNS = ("on_record_psf", "on_record_kpa", "load_ratio")


def _on_record_columns(res: Resolution, site: SiteArrays, roof_cols: dict) -> dict:
    """The load on record, ``load_ratio`` and the ``exceeds_record`` bit (:mod:`neve.engine.on_record`).

    ``load_ratio`` = today's ``design_uniform`` / the load on record: uniform loads
    only, as screening gives them; no ratio (and no flag) without a roof, without a
    usable ground load or without a load on record.
    """
    if site.on_record_psf is None:
        return {}
    from neve.engine.on_record import load_ratio

    record = np.asarray(site.on_record_psf, dtype=float)
    design = roof_cols.get("design_uniform_psf")
    if design is None:
        design = np.full(len(site), np.nan)
    ratio, above = load_ratio(design, record)
    if above.any():
        res.flags[above] |= BIT["exceeds_record"]
    return {
        "on_record_psf": record,
        "on_record_kpa": record * KPA_PER_PSF,
        "load_ratio": ratio,
    }


def _join_input(frame: pd.DataFrame, out: dict) -> pd.DataFrame:
    """Input columns first (a clash with a result name becomes ``input_<name>``), then results.

    Columns are put side by side without copying or re-inferring their types.
    """
    renamed = {c: f"input_{c}" for c in frame.columns if c in out}
    cols = {renamed.get(c, c): frame[c] for c in frame.columns}
    for key, value in out.items():
        if isinstance(value, pd.Series):
            cols[key] = value.set_axis(frame.index)
        else:
            value = np.asarray(value)
            cols[key] = pd.Series(value, index=frame.index, dtype=value.dtype, copy=False)
    return pd.DataFrame(cols, copy=False)
