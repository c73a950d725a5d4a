"""Reading site files for ``neve screen``: columns found by name, rows parsed into arrays.

A site file is CSV, XLSX, GeoPackage or Parquet (GeoParquet too).  Each row is
one site, located by ``lat``/``lon`` (or ``latitude``/``longitude``), by an
``address`` to geocode, or by a point geometry.  An elevation may come with its
unit in the cell (``1200ft``, ``412m``) or in the column name (``elevation_ft``,
``elevation_m``).

Nothing here stops on a bad row: :func:`parse_sites` returns arrays plus a
per-row error text (empty where the row is fine), so the caller keeps every
row in order.  Problems with the file as a whole (not a table, empty, no
coordinate column) are :class:`neve.engine.errors.InputError`.

Reading the file itself is :mod:`neve.geo.screen.read`; geocoding the rows located
by address is :mod:`neve.geo.screen.geocode_rows`.  Their public names are importable
from here as well.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd

from neve.engine.errors import InputError
from neve.engine.units import LENGTH_UNITS
from neve.geo.screen.read import (  # noqa: F401  (file-level names re-exported)
    ACCEPTED_COORDS,
    ADDRESS_NAMES,
    GIVEN_LAT_NAMES,
    GIVEN_LON_NAMES,
    LAT_NAMES,
    LON_NAMES,
    READ_NOTES,
    ROOF_NAMES,
    SITE_FORMATS,
    SITE_ID_NAMES,
    WKT_NAMES,
    ReadNotes,
    find_column,
    read_notes,
    read_sites,
    site_format,
    split_geometry,
)
from neve.geo.screen.site_arrays import SiteArrays  # noqa: F401  (re-exported: its old home)

#: elevation column names -> unit implied by the name (None: unit in each cell)
ELEVATION_NAMES = {
    "elevation": None,
    "elevation_ft": "ft",
    "elevation_m": "m",
}
#: plausible site elevations [ft]: a little below the lowest dry land to above the highest peak
ELEVATION_RANGE_FT = (-1500.0, 30000.0)

ACCEPTED_ELEVATION = (
    "a number with its unit in the cell (1200ft, 412m) in a column named 'elevation', "
    "or a number in a column named elevation_ft or elevation_m"
)

_NUM = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_CELL = re.compile(rf"^\s*(?P<num>{_NUM})\s*(?P<unit>[^\d\s].*?)?\s*$")


def _odd_cells(series: pd.Series) -> tuple[np.ndarray, str]:
    """Cells that are booleans or dates (never numbers here), and what they are."""
    import datetime as _dt

    dtype = series.dtype
    n = len(series)
    present = series.notna().to_numpy(dtype=bool)
    if pd.api.types.is_bool_dtype(dtype):
        return present, "a boolean (true/false)"
    if dtype.kind in "mM" or isinstance(dtype, pd.PeriodDtype):
        return present, "a date or time"
    if isinstance(dtype, pd.ArrowDtype):
        import pyarrow as pa

        t = dtype.pyarrow_dtype
        if pa.types.is_boolean(t):
            return present, "a boolean (true/false)"
        if pa.types.is_temporal(t):
            return present, "a date or time"
    if isinstance(dtype, np.dtype) and dtype == np.dtype(object):
        values = series.to_numpy(dtype=object)
        kinds = (_dt.date, _dt.time, _dt.timedelta, np.datetime64, np.timedelta64)
        boolean = np.fromiter((isinstance(v, (bool, np.bool_)) for v in values), bool, count=n)
        dated = np.fromiter((isinstance(v, kinds) for v in values), bool, count=n)
        if boolean.any() or dated.any():
            what = np.where(boolean, "a boolean (true/false)", "a date or time")
            return boolean | dated, what
    return np.zeros(n, dtype=bool), ""


def _as_float(series: pd.Series) -> np.ndarray | None:
    """All cells of a text column as finite numbers through Arrow, or None (then the slow path)."""
    if not isinstance(series.dtype, pd.StringDtype):
        return None
    import pyarrow as pa
    import pyarrow.compute as pc

    try:
        values = pc.cast(pa.array(series.array), pa.float64()).to_numpy(zero_copy_only=False)
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError, pa.ArrowTypeError, TypeError):
        return None
    return values if np.isfinite(values).all() else None


def _numbers(series: pd.Series, name: str) -> tuple[np.ndarray, np.ndarray]:
    """Numeric values of a column and the per-row error text for unparseable cells.

    Booleans and dates (an XLSX ``TRUE``, a Parquet timestamp) are never taken
    for numbers: their rows are errors.
    """
    err = np.full(len(series), "", dtype=object)
    odd, what = _odd_cells(series)
    if odd.any():
        values = np.full(len(series), np.nan)
        what = np.broadcast_to(np.asarray(what, dtype=object), odd.shape)
        cells = zip(series[odd], what[odd], strict=True)
        err[odd] = [f"{name}: {v!r} is {w}, not a number" for v, w in cells]
        rest = ~odd
        if rest.any():
            sub_values, sub_err = _numbers(series[rest].astype(object), name)
            values[rest] = sub_values
            err[rest] = sub_err
        return values, err
    if pd.api.types.is_numeric_dtype(series.dtype):
        values = series.to_numpy(dtype=float, na_value=np.nan)
        err[np.isinf(values)] = f"{name}: not a finite number"
        err[np.isnan(values)] = f"{name}: missing"
        return values, err
    fast = _as_float(series)
    if fast is not None:
        return fast, err
    values = pd.to_numeric(series, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    blank = series.isna().to_numpy() | (series.astype(str).str.strip() == "").to_numpy()
    bad = np.isnan(values) & ~blank
    if bad.any():
        err[bad] = [f"{name}: {v!r} is not a number" for v in series[bad]]
    err[blank] = f"{name}: missing"
    return values, err


def _merge(err: np.ndarray, new: np.ndarray) -> None:
    """Keep the first error of each row (``new`` is an object array, "" where fine)."""
    take = new != ""
    if take.any():
        take &= err == ""
        err[take] = new[take]


def _merge_mask(err: np.ndarray, mask: np.ndarray, text: str) -> None:
    """Set ``text`` as the error of the rows in ``mask`` that have none yet."""
    if mask.any():
        err[mask & (err == "")] = text


def parse_elevation_cells(series: pd.Series, unit: str | None, name: str):
    """Elevations [ft] and per-row errors from a column.

    Parameters
    ----------
    series : pandas.Series
        The cells.
    unit : {"ft", "m"} or None
        Unit implied by the column name, or None when each cell must carry it.
    name : str
        Column name for the messages.
    """
    n = len(series)
    err = np.full(n, "", dtype=object)
    out = np.full(n, np.nan)
    if n == 0:
        return out, err
    odd, what = _odd_cells(series)
    fast = None if unit is None or odd.any() else _as_float(series)
    if unit is not None and not odd.any() and pd.api.types.is_numeric_dtype(series.dtype):
        out = series.to_numpy(dtype=float, na_value=np.nan) * LENGTH_UNITS[unit]
    elif fast is not None:  # a text column of plain numbers, unit in the column name
        out = fast * LENGTH_UNITS[unit]
    else:
        text = series.astype(object).where(series.notna(), "").astype(str).str.strip()
        parts = text.str.extract(_CELL)
        number = pd.to_numeric(parts["num"], errors="coerce").to_numpy(dtype=float)
        cell_unit = parts["unit"].fillna("").str.lower().str.replace(" ", "", regex=False)
        blank = (text == "").to_numpy()
        unparsed = np.isnan(number) & ~blank
        factor = cell_unit.map(LENGTH_UNITS).to_numpy(dtype=float, na_value=np.nan)
        has_unit = (cell_unit != "").to_numpy()
        contradicts = np.zeros(n, dtype=bool)
        if unit is not None:  # a bare number takes the column's unit; another unit is refused
            with np.errstate(invalid="ignore"):
                contradicts = has_unit & ~np.isnan(factor) & (factor != LENGTH_UNITS[unit])
            factor = np.where(has_unit, factor, LENGTH_UNITS[unit])
            clash = contradicts & ~np.isnan(number)
            if clash.any():  # issue 8: a cell contradicting its column's unit refuses the file
                i = int(np.flatnonzero(clash)[0])
                raise InputError(
                    name,
                    f"record {i + 1} says {text.iloc[i]!r}, which contradicts the column's "
                    f"unit ({unit}; {int(clash.sum())} such cell(s))",
                    f"bare numbers in a column named elevation_{unit}, or a column named "
                    "'elevation' with the unit in each cell",
                )
        out = number * factor
        bare = ~has_unit & ~np.isnan(number) & (unit is None)
        unknown = has_unit & np.isnan(factor) & ~np.isnan(number)
        for mask, why in (
            (unparsed, "is not an elevation"),
            (bare, "is a bare number with no unit"),
            (unknown, "has a unit that is not a length"),
        ):
            if mask.any():
                err[mask] = [
                    f"{name}: {v!r} {why}; accepted: {ACCEPTED_ELEVATION}" for v in text[mask]
                ]
        if odd.any():
            what = np.broadcast_to(np.asarray(what, dtype=object), odd.shape)
            cells = zip(series[odd], what[odd], strict=True)
            err[odd] = [f"{name}: {v!r} is {w}, not an elevation" for v, w in cells]
        out[err != ""] = np.nan
    lo, hi = ELEVATION_RANGE_FT
    with np.errstate(invalid="ignore"):
        out_of_range = ~np.isnan(out) & ((out < lo) | (out > hi) | ~np.isfinite(out))
    if out_of_range.any():
        err[out_of_range] = [
            f"{name}: {v!r} is out of range; accepted: {lo:g} ft to {hi:g} ft"
            for v in series[out_of_range]
        ]
        out[out_of_range] = np.nan
    return out, err


#: load-on-record column names -> unit implied by the name (None: unit in each cell)
ON_RECORD_NAMES = {
    "snow_load_on_record": None,
    "snow_load_on_record_psf": "psf",
    "snow_load_on_record_kpa": "kpa",
}
ACCEPTED_ON_RECORD_CELL = (
    "a load above 0 with its unit in the cell (30psf, 1.44kPa) in 'snow_load_on_record', "
    "or a plain number in snow_load_on_record_psf or snow_load_on_record_kpa"
)


def parse_on_record_cells(series: pd.Series, unit: str | None, name: str):
    """Roof snow loads on record [psf] and per-row errors from a column.

    A blank cell means "none on record" (no error, NaN).  As for the elevation
    (:func:`parse_elevation_cells`), a cell that does not parse, a bare number
    where the unit must be in the cell, an unknown unit, a value not above 0 or
    beyond the bound is a per-row error naming the column; a cell whose unit
    contradicts the unit of the column name refuses the file.

    Parameters
    ----------
    series : pandas.Series
        The cells.
    unit : {"psf", "kpa"} or None
        Unit implied by the column name, or None when each cell must carry it.
    name : str
        Column name for the messages.
    """
    from neve.engine.on_record import ON_RECORD_RANGE_PSF
    from neve.engine.units import LOAD_UNITS

    n = len(series)
    err = np.full(n, "", dtype=object)
    out = np.full(n, np.nan)
    if n == 0:
        return out, err
    odd, what = _odd_cells(series)
    fast = None if unit is None or odd.any() else _as_float(series)
    if unit is not None and not odd.any() and pd.api.types.is_numeric_dtype(series.dtype):
        out = series.to_numpy(dtype=float, na_value=np.nan) * LOAD_UNITS[unit]
        text = series.astype(object).where(series.notna(), "").astype(str)
    elif fast is not None:  # a text column of plain numbers, unit in the column name
        out = fast * LOAD_UNITS[unit]
        text = series.astype(str)
    else:
        text = series.astype(object).where(series.notna(), "").astype(str).str.strip()
        parts = text.str.extract(_CELL)
        number = pd.to_numeric(parts["num"], errors="coerce").to_numpy(dtype=float)
        cell_unit = parts["unit"].fillna("").str.lower().str.replace(" ", "", regex=False)
        blank = (text == "").to_numpy()
        unparsed = np.isnan(number) & ~blank
        factor = cell_unit.map(LOAD_UNITS).to_numpy(dtype=float, na_value=np.nan)
        has_unit = (cell_unit != "").to_numpy()
        if unit is not None:  # a bare number takes the column's unit; another unit is refused
            with np.errstate(invalid="ignore"):
                clash = has_unit & ~np.isnan(factor) & (factor != LOAD_UNITS[unit])
            clash &= ~np.isnan(number)
            if clash.any():
                i = int(np.flatnonzero(clash)[0])
                raise InputError(
                    name,
                    f"record {i + 1} says {text.iloc[i]!r}, which contradicts the column's "
                    f"unit ({unit}; {int(clash.sum())} such cell(s))",
                    ACCEPTED_ON_RECORD_CELL,
                )
            factor = np.where(has_unit, factor, LOAD_UNITS[unit])
        out = number * factor
        bare = ~has_unit & ~np.isnan(number) & (unit is None)
        unknown = has_unit & np.isnan(factor) & ~np.isnan(number)
        for mask, why in (
            (unparsed, "is not a load"),
            (bare, "is a bare number with no unit"),
            (unknown, "has a unit that is not a load"),
        ):
            if mask.any():
                err[mask] = [
                    f"{name}: {v!r} {why}; accepted: {ACCEPTED_ON_RECORD_CELL}" for v in text[mask]
                ]
        if odd.any():
            what = np.broadcast_to(np.asarray(what, dtype=object), odd.shape)
            cells = zip(series[odd], what[odd], strict=True)
            err[odd] = [f"{name}: {v!r} is {w}, not a load" for v, w in cells]
        out[err != ""] = np.nan
    lo, hi = ON_RECORD_RANGE_PSF
    with np.errstate(invalid="ignore"):
        not_above = ~np.isnan(out) & (out <= lo)
        too_big = ~np.isnan(out) & ((out > hi) | ~np.isfinite(out))
    for mask, why in ((not_above, "is not above 0"), (too_big, "is out of range")):
        if mask.any():
            err[mask] = [
                f"{name}: {v!r} {why}; accepted: {ACCEPTED_ON_RECORD_CELL} (at most {hi:g} psf)"
                for v in np.asarray(text, dtype=object)[mask]
            ]
            out[mask] = np.nan
    return out, err


def find_columns(frame: pd.DataFrame, has_geometry: bool) -> dict:
    """Which columns hold coordinates, address, elevation, site id and roof."""
    cols = frame.columns
    for names, what in ((GIVEN_LAT_NAMES, "latitude"), (GIVEN_LON_NAMES, "longitude")):
        given = [c for c in cols if str(c).strip().lower() in names]
        if len(given) > 1:  # lat and latitude, or lat and LAT: which one is meant?
            raise InputError(
                "sites",
                f"columns {' and '.join(map(repr, given))} both give the {what}",
                f"one {what} column (one of {', '.join(names)}, any case)",
            )
    found = {
        "lat": find_column(cols, LAT_NAMES),
        "lon": find_column(cols, LON_NAMES),
        "address": find_column(cols, ADDRESS_NAMES),
        "site_id": find_column(cols, SITE_ID_NAMES),
        "roof": find_column(cols, ROOF_NAMES),
    }
    elev = [c for c in cols if str(c).strip().lower() in ELEVATION_NAMES]
    if len(elev) > 1:
        raise InputError(
            "elevation", f"more than one elevation column ({', '.join(elev)})", ACCEPTED_ELEVATION
        )
    found["elevation"] = elev[0] if elev else None
    on_record = [c for c in cols if str(c).strip().lower() in ON_RECORD_NAMES]
    if len(on_record) > 1:
        raise InputError(
            "snow_load_on_record",
            f"more than one load-on-record column ({', '.join(map(str, on_record))})",
            ACCEPTED_ON_RECORD_CELL,
        )
    found["on_record"] = on_record[0] if on_record else None
    if (found["lat"] is None) != (found["lon"] is None):
        have, miss = ("lat", "lon") if found["lat"] is not None else ("lon", "lat")
        names = LON_NAMES if miss == "lon" else LAT_NAMES
        raise InputError(
            "sites",
            f"a {have} column without a {miss} column",
            f"a {miss} column named one of {', '.join(names)}",
        )
    if found["lat"] is None and not has_geometry and found["address"] is None:
        raise InputError(
            "sites",
            f"no coordinate column among {', '.join(map(str, cols[:12]))}"
            + (" ..." if len(cols) > 12 else ""),
            ACCEPTED_COORDS,
        )
    return found


def parse_sites(frame: pd.DataFrame, geometry=None, *, duplicates=None) -> SiteArrays:
    """Parse a site table into coordinate and elevation arrays with per-row errors.

    Parameters
    ----------
    frame : pandas.DataFrame
        The site table (see :func:`read_sites`).
    geometry : geopandas.GeoSeries, optional
        Point geometry in WGS 84, used when there are no lat/lon columns.
    duplicates : numpy.ndarray, optional
        The rows whose site id is repeated, when the caller knows them (a chunk
        of a larger file: :mod:`neve.geo.screen.stream`); found in the table
        itself when omitted.

    Returns
    -------
    SiteArrays
    """
    notes = read_notes(frame) or ReadNotes()
    frame = frame.reset_index(drop=True)
    n = len(frame)
    if n == 0:
        raise InputError("sites", "the table has no rows", "a table with at least one site")
    cols = find_columns(frame, geometry is not None)
    err = np.full(n, "", dtype=object)
    for i, why in notes.errors.items():  # rows the file itself got wrong come first
        err[i] = why
    address = None
    if cols["address"] is not None:
        address = frame[cols["address"]].astype(object).where(frame[cols["address"]].notna(), "")
        address = address.astype(str).str.strip().to_numpy(dtype=object)
        if notes.errors:  # never geocode a row that could not be read as written
            address[list(notes.errors)] = ""
    if cols["lat"] is not None:
        source = "latlon"
        lat, lat_err = _numbers(frame[cols["lat"]], str(cols["lat"]))
        lon, lon_err = _numbers(frame[cols["lon"]], str(cols["lon"]))
        both_blank = (lat_err == f"{cols['lat']}: missing") & (lon_err == f"{cols['lon']}: missing")
        if address is not None:  # rows without coordinates fall back on their address
            geocode = both_blank & (address != "")
            lat_err[geocode] = ""
            lon_err[geocode] = ""
            address = np.where(geocode, address, "")
        _merge(err, lat_err)
        _merge(err, lon_err)
    elif geometry is not None:
        source = "geometry"
        lat, lon, geom_err = _points(geometry)
        _merge(err, geom_err)
    else:
        source = "address"
        lat = np.full(n, np.nan)
        lon = np.full(n, np.nan)
        _merge_mask(err, address == "", f"{cols['address']}: missing")
    with np.errstate(invalid="ignore"):
        bad_lat = ~np.isnan(lat) & (np.abs(lat) > 90.0)
        bad_lon = ~np.isnan(lon) & (np.abs(lon) > 180.0)
    lat_name = cols["lat"] or "latitude"
    lon_name = cols["lon"] or "longitude"
    _merge_mask(err, bad_lat, f"{lat_name}: out of range; accepted: -90 to 90 degrees")
    _merge_mask(err, bad_lon, f"{lon_name}: out of range; accepted: -180 to 180 degrees")
    elevation = np.full(n, np.nan)
    if cols["elevation"] is not None:
        name = str(cols["elevation"])
        elevation, elev_err = parse_elevation_cells(
            frame[name], ELEVATION_NAMES[name.strip().lower()], name
        )
        _merge(err, elev_err)
    on_record = None
    if cols.get("on_record") is not None:  # the existing-roof check (engine/on_record.py)
        name = str(cols["on_record"])
        on_record, record_err = parse_on_record_cells(
            frame[cols["on_record"]], ON_RECORD_NAMES[name.strip().lower()], name
        )
        _merge(err, record_err)
    roof = None
    if cols["roof"] is not None:
        r = frame[cols["roof"]]
        roof = r.astype(object).where(r.notna(), "").astype(str).str.strip().to_numpy(dtype=object)
    duplicate = np.zeros(n, dtype=bool)
    if duplicates is not None:
        duplicate = np.asarray(duplicates, dtype=bool)
    elif cols["site_id"] is not None:
        ids = frame[cols["site_id"]]
        duplicate = repeated_cells(ids)
        if duplicate.any():  # blank ids are not ids
            duplicate &= (ids.astype(str).str.strip() != "").to_numpy()
    fine = err == ""
    lat = np.where(fine, lat, np.nan)
    lon = np.where(fine, lon, np.nan)
    return SiteArrays(
        frame=frame,
        lat=lat,
        lon=lon,
        elevation_ft=elevation,
        error=err,
        source=source,
        address=address,
        roof=roof,
        site_id=cols["site_id"],
        duplicate=duplicate,
        columns=cols,
        geometry=None if geometry is None else np.asarray(geometry, dtype=object),
        multiline=dict(notes.multiline),
        input_info=dict(notes.info) or {"format": "table", "records": n},
        on_record_psf=on_record,
    )


def repeated_cells(ids: pd.Series) -> np.ndarray:
    """True where a cell's value appears on another row too (a missing cell never does).

    Text held by Arrow (the CSV and Parquet readers' cells) is sorted and each
    value compared with its neighbour in sort order: several times faster than
    hashing a million distinct ids.  Other columns go through :func:`pandas.factorize`;
    both compare values exactly as given.
    """
    n = len(ids)
    duplicate = np.zeros(n, dtype=bool)
    if n < 2:
        return duplicate
    if isinstance(ids.dtype, pd.StringDtype) and ids.dtype.storage == "pyarrow":
        import pyarrow as pa
        import pyarrow.compute as pc

        arr = pa.array(ids.array)
        order = pc.array_sort_indices(arr, null_placement="at_end")
        ranked = arr.take(order)
        same = pc.fill_null(pc.equal(ranked.slice(1), ranked.slice(0, n - 1)), False)
        same = np.asarray(same.to_numpy(zero_copy_only=False), dtype=bool)
        in_order = np.zeros(n, dtype=bool)
        in_order[1:] |= same
        in_order[:-1] |= same
        duplicate[order.to_numpy()] = in_order
        return duplicate
    codes, _ = pd.factorize(ids)  # missing ids get code -1
    counts = np.bincount(codes[codes >= 0], minlength=1)
    has = codes >= 0
    duplicate[has] = counts[codes[has]] > 1
    return duplicate


def _points(geometry) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    import shapely

    geoms = np.asarray(geometry.values if hasattr(geometry, "values") else geometry, dtype=object)
    n = len(geoms)
    err = np.full(n, "", dtype=object)
    kind = shapely.get_type_id(geoms)
    missing = (kind < 0) | shapely.is_empty(geoms)
    not_point = ~missing & (kind != 0)
    err[missing] = "geometry: missing or empty"
    err[not_point] = "geometry: not a point; accepted: point geometry"
    lon = np.full(n, np.nan)
    lat = np.full(n, np.nan)
    ok = ~missing & ~not_point
    lon[ok] = shapely.get_x(geoms[ok])
    lat[ok] = shapely.get_y(geoms[ok])
    return lat, lon, err


def load_sites(path_or_frame) -> SiteArrays:
    """Read (if a path) and parse a site file or table."""
    if isinstance(path_or_frame, (str, Path)):
        frame, geometry = read_sites(path_or_frame)
        return parse_sites(frame, geometry)
    try:
        import geopandas as gpd

        if isinstance(path_or_frame, gpd.GeoDataFrame):
            frame, geometry = split_geometry(path_or_frame.reset_index(drop=True))
            return parse_sites(frame, geometry)
    except ImportError:  # pragma: no cover
        pass
    if not isinstance(path_or_frame, pd.DataFrame):
        raise InputError(
            "sites", f"got {type(path_or_frame).__name__}", "a path or a pandas DataFrame"
        )
    return parse_sites(path_or_frame)


# the geocoding of address rows lives in neve.geo.screen.geocode_rows; its names stay importable from here
from neve.geo.screen.geocode_rows import (  # noqa: E402, F401
    CachedGeocoder,
    GeocodeMiss,
    geocode_rows,
    load_geocode_cache,
    make_geocoder,
    save_geocode_cache,
)
