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

from neve.engine.errors import InputError
from neve.engine.roof_spec import Roof
from neve.engine.units import KPA_PER_PSF, M_PER_FT
from neve.geo.screen.local import (  # noqa: F401  (the local engine's names re-exported)
    CHUNK_SIZE,
    THREADED_FROM,
    THREADS_ENV,
    portable_layer,
    resolve_local,
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


def run_screen(
    sites,
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
) -> ScreenRun:
    """Screen sites; return the results with their summary (see :func:`screen`)."""
    from neve.engine.choices import choose_key

    t0 = time.perf_counter()
    timings: dict[str, float] = {}

    def lap(name: str) -> None:
        timings[name] = round(time.perf_counter() - t0 - sum(timings.values()), 3)

    engine = choose_key("engine", engine, ENGINES)
    from neve.geo.layers.model import dem_argument

    dem = dem_argument(dem)  # "demo": the embedded synthetic DEM, as for `neve site`
    if dem is not None and not Path(dem).is_file():
        raise InputError("dem", f"file {str(dem)!r} not found", "a GeoTIFF path, or 'demo'")
    from neve.geo.site.elevation import check_dem_options

    check_dem_options(dem, dem_units)  # before any work: a unit without a DEM, or a clash
    layer_list = _layers(layers)
    roofs = _roofs(roof)
    lap("layers")
    site = load_sites(sites)
    if max_rows is not None and len(site) > max_rows:
        raise InputError(
            "output",
            f"{len(site):,} sites do not fit in the chosen output ({max_rows:,} rows at most)",
            "a .csv, .gpkg or .parquet output for large portfolios",
        )
    _profile_errors(site, roofs)
    lap("read")
    if site.address is not None and (site.address != "").any():
        from neve.geo.screen.geocode_rows import geocode_sites

        geocode_sites(
            site,
            geocoder,
            gazetteer=gazetteer,
            url=geocoder_url,
            cache_path=geocode_cache,
            progress=progress,
        )
        lap("geocode")
    valid = (site.error == "") & np.isfinite(site.lat) & np.isfinite(site.lon)
    idx = np.flatnonzero(valid)
    elev = site.elevation_ft[idx]
    elev_arg = elev if np.isfinite(elev).any() else None
    kwargs = dict(
        layers=layer_list,
        dem=dem,
        dem_units=dem_units,
        progress=progress,
        elevation_source=elevation_source,
    )
    if len(idx) == 0:
        resolved = None
    elif engine == "dask":
        from neve.geo.screen.dask_runner import resolve_dask

        resolved = resolve_dask(
            site.lat[idx],
            site.lon[idx],
            elev_arg,
            scheduler=scheduler,
            partitions=partitions,
            staging=staging,
            columns=list(RESOLVED_COLUMNS),
            **kwargs,
        )
    else:
        resolved = resolve_local(site.lat[idx], site.lon[idx], elev_arg, **kwargs)
    lap("resolve")
    out = _assemble(site, idx, resolved, demo=any(ly.demo for ly in layer_list))
    if roofs is not None:
        _add_roof(out, site, roofs, layer_list)
    results = _join_input(site.frame, out)
    lap("roof_and_assemble")
    summary = summarize(
        results,
        layer_list,
        engine=engine,
        seconds=time.perf_counter() - t0,
        input_info=site.input_info,
    )
    summary["timings_s"] = timings
    geometry = getattr(site, "geometry", None)
    return ScreenRun(results, summary, geometry, layer_list)


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


def _assemble(
    site: SiteArrays, idx: np.ndarray, resolved: pd.DataFrame | None, demo: bool = False
) -> dict:
    """The result columns for every row: the resolver's where it ran, errors elsewhere.

    Text columns stay in the resolver's (Arrow-backed) string dtype and are
    moved by index, never converted element by element.
    """
    n = len(site)
    rows = pd.RangeIndex(n)
    cols = list(RESOLVED_COLUMNS)
    if resolved is None or not len(idx):
        res = pd.DataFrame({c: pd.Series(np.nan if c in ("pg_psf", "elevation_ft") else None,
                                         index=rows, dtype=float if c in ("pg_psf", "elevation_ft")
                                         else "str") for c in cols})  # fmt: skip
    else:
        if len(resolved) != len(idx):
            raise RuntimeError(f"resolver returned {len(resolved)} rows for {len(idx)} sites")
        res = resolved[cols].set_axis(pd.Index(idx))
        if len(idx) != n:
            res = res.reindex(rows)
        else:
            res = res.set_axis(rows)
    invalid = np.ones(n, dtype=bool)
    invalid[idx] = False
    status = res["status"].copy()
    message = res["message"].copy()
    flags = res["flags"].copy()
    source = res["elevation_source"].copy()
    if invalid.any():
        errors = site.error[invalid]
        errors = np.where(errors == "", "no coordinates for this row", errors)
        status[invalid] = "error"
        message[invalid] = errors
        flags[invalid] = "demo_data" if demo else ""
        source[invalid] = "none"
    if site.duplicate.any():
        d = site.duplicate
        old = flags[d].fillna("")
        flags[d] = np.where(old == "", "duplicate_site_id", old + ";duplicate_site_id")
    if site.multiline:  # a quoted cell with line breaks: kept, never silently
        rows = np.fromiter(site.multiline, dtype=np.int64, count=len(site.multiline))
        old = flags.iloc[rows].fillna("").to_numpy(dtype=object)
        flags.iloc[rows] = [
            ";".join(sorted(set(filter(None, str(f).split(";"))) | {"multiline_field"}))
            for f in old
        ]
        said = message.iloc[rows].fillna("").to_numpy(dtype=object)
        message.iloc[rows] = [
            f"{m} Input record on lines {a}-{b} of the file: a quoted cell holds line breaks "
            f"(if that is not meant, look for a stray quote on line {a}).".strip()
            for m, (a, b) in zip(said, site.multiline.values(), strict=True)
        ]
    text = {}
    for col in ("zone_id", "rule", "layer_name"):  # no zone: missing, not an empty name
        v = res[col]
        text[col] = v.mask(v == "") if (v == "").any() else v
    pg = res["pg_psf"].to_numpy(dtype=float, na_value=np.nan)
    elev = res["elevation_ft"].to_numpy(dtype=float, na_value=np.nan)
    return {
        "status": status,
        "pg_psf": pg,
        "pg_kpa": pg * KPA_PER_PSF,
        "zone_id": text["zone_id"],
        "flags": flags.fillna(""),
        "message": message.fillna(""),
        LAT_COLUMN: site.lat,
        LON_COLUMN: site.lon,
        "site_elevation_ft": elev,
        "site_elevation_m": elev * M_PER_FT,
        "site_elevation_source": source,
        "rule": text["rule"],
        "layer_name": text["layer_name"],
    }


def _merge_flags(texts: np.ndarray, extra) -> np.ndarray:
    """Add ``extra`` flags to ';'-joined flag texts, once per distinct text (fast)."""
    codes, uniques = pd.factorize(pd.Series(texts, dtype=object).fillna(""))
    merged = np.array(
        [";".join(sorted(set(filter(None, str(u).split(";"))) | set(extra))) for u in uniques]
        + [";".join(sorted(set(extra)))],
        dtype=object,
    )
    return merged[codes]  # code -1 (missing) picks the last entry


def _add_roof(out: dict, site: SiteArrays, roofs, layers) -> None:
    from neve.engine import screening_flags, uniform_loads
    from neve.geo.site.one import roof_engine_accepts

    n = len(site)
    for name in ROOF_LOADS:
        out[f"{name}_psf"] = np.full(n, np.nan)
    status = out["status"]
    pg = out["pg_psf"]
    usable = pd.Series(status).isin(ROOF_STATUSES).to_numpy() & np.isfinite(pg)
    # only layers mapping ASCE 7-16-compatible ground loads feed the engine
    refused = [
        ly.name for ly in layers if not roof_engine_accepts(str(ly.meta.get("standard", "")))
    ]
    if refused:
        other = usable & pd.Series(out["layer_name"]).isin(refused).to_numpy()
        if other.any():
            flags = pd.Series(out["flags"]).astype(object).to_numpy(copy=True)
            flags[other] = _merge_flags(flags[other], ["roof_standard_unsupported"])
            out["flags"] = pd.Series(flags)
            usable = usable & ~other
    groups = (
        [(roofs, usable)]
        if isinstance(roofs, Roof)
        else [(r, usable & (site.roof == name)) for name, r in roofs.items()]
    )
    row_flags = None
    for roof, mask in groups:
        if not mask.any():
            continue
        extra = screening_flags(roof)
        if extra:
            if row_flags is None:
                row_flags = pd.Series(out["flags"]).astype(object).to_numpy(copy=True)
            row_flags[mask] = _merge_flags(row_flags[mask], extra)
        loads = uniform_loads(pg[mask], roof)
        for name in ROOF_LOADS:
            out[f"{name}_psf"][mask] = np.asarray(loads[name], dtype=float)
    if row_flags is not None:
        out["flags"] = pd.Series(row_flags)
    for name in ROOF_LOADS:
        out[f"{name}_kpa"] = out[f"{name}_psf"] * KPA_PER_PSF
    order = [c for name in ROOF_LOADS for c in (f"{name}_psf", f"{name}_kpa")]
    for c in order:  # move the roof columns to the end, psf beside kPa
        out[c] = out.pop(c)


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
