"""Site elevation: from the user's text or sampled from a DEM.

The DEM may be in any CRS.  Its vertical unit is the one the DEM states
itself (the band's unit metadata, ``rasterio`` ``units``, e.g. ``m``,
``metre``, ``ft``, ``US survey foot``; or, when the band is silent, the unit
of a compound CRS's vertical part).  ``dem_units`` (``--dem-units``) names
the unit of a DEM that states none; it never overrides a stated unit: a
``dem_units`` that contradicts the DEM is refused, naming both.  A DEM with
no unit at all is refused rather than guessed.  Sampling is vectorized: the
sites are transformed to the DEM's CRS once, one window covering them is
read, and cells are picked with ``rasterio.transform.rowcol`` (the cell that
contains the site, as ``DatasetReader.sample`` picks it).  Nodata and sites
outside the grid give NaN, which the resolver flags as ``dem_nodata``.

Values outside the range of land elevations on Earth (:data:`DEM_MIN_M` to
:data:`DEM_MAX_M`, after conversion to metres) are not elevations: a fill
value the DEM does not declare as nodata, or a unit mistake.
:func:`plausible_dem` separates them; the resolver flags them
``dem_implausible`` and uses no elevation from the DEM there.
"""

from __future__ import annotations

import contextlib
import math
import threading
from pathlib import Path

import numpy as np

from neve.engine.errors import InputError, LayerError
from neve.engine.units import FT_PER_M, M_PER_FT, parse_length_unit

#: vertical units accepted from band metadata or ``--dem-units`` -> factor to ft
DEM_UNITS = {
    "m": FT_PER_M,
    "metre": FT_PER_M,
    "metres": FT_PER_M,
    "meter": FT_PER_M,
    "meters": FT_PER_M,
    "ft": 1.0,
    "foot": 1.0,
    "feet": 1.0,
    "international foot": 1.0,
    "us survey foot": 1200.0 / 3937.0 * FT_PER_M,
    "us_survey_foot": 1200.0 / 3937.0 * FT_PER_M,
    "ftus": 1200.0 / 3937.0 * FT_PER_M,
    "us-ft": 1200.0 / 3937.0 * FT_PER_M,
    "foot_us": 1200.0 / 3937.0 * FT_PER_M,
}
#: the names ``--dem-units`` lists as accepted (every key of DEM_UNITS is read)
DEM_UNIT_NAMES = ("m", "ft", "us-ft")
#: plausible range of a DEM value on Earth's land surface [m]: the Dead Sea shore lies
#: near -430 m and the summit of Everest near 8,849 m (from memory), with a margin
DEM_MIN_M = -500.0
DEM_MAX_M = 9000.0
#: a given elevation and the DEM differing by more than this are flagged [m]
MISMATCH_M = 15.0
#: largest DEM window read at once [cells]; larger spreads are read in tiles
MAX_WINDOW_CELLS = 64_000_000


def parse_elevation(text: object, field: str = "elevation") -> float:
    """Parse ``412m`` or ``1350ft`` into feet [ft]; NaN for None.

    Elevations may be negative (sites below sea level) but not below -500 m
    or above 9000 m.
    """
    if text is None:
        return math.nan
    value, unit = parse_length_unit(text, field)
    from neve.engine.units import LENGTH_UNITS

    ft = value * LENGTH_UNITS[unit]
    if not -500 * FT_PER_M <= ft <= 9000 * FT_PER_M:
        raise InputError(field, f"{text!r} is out of range", "an elevation from -500m to 9000m")
    return ft


def dem_unit_factor(units: str | None, field: str = "dem-units") -> float:
    """Factor from a DEM vertical unit name to feet."""
    key = str(units).strip().lower()
    if key not in DEM_UNITS:
        raise InputError(field, f"unknown vertical unit {units!r}", "m, ft, US survey foot")
    return DEM_UNITS[key]


def canonical_dem_unit(units: str, field: str = "dem-units") -> str:
    """The short name (``m``, ``ft``, ``us-ft``) of any accepted vertical unit spelling.

    >>> canonical_dem_unit("Metre"), canonical_dem_unit("foot"), canonical_dem_unit("ftUS")
    ('m', 'ft', 'us-ft')
    """
    factor = dem_unit_factor(units, field)
    return next(name for name in DEM_UNIT_NAMES if DEM_UNITS[name] == factor)


def stated_unit(ds) -> tuple[str | None, str]:
    """The vertical unit a DEM states itself, and where it says so.

    The band's unit metadata first; when it is empty, the unit of the
    vertical part of a compound CRS.  ``(None, "")`` when the DEM is silent.
    """
    band = ds.units[0] if ds.units and ds.units[0] else None
    if band and str(band).strip():
        return str(band).strip(), "band unit metadata"
    if ds.crs is not None:
        try:
            from pyproj import CRS

            crs = CRS.from_wkt(ds.crs.to_wkt())
        except Exception:  # a CRS pyproj cannot read states no vertical unit we can use
            return None, ""
        for sub in crs.sub_crs_list if crs.is_compound else []:
            if sub.is_vertical and sub.axis_info:
                return sub.axis_info[0].unit_name, "vertical CRS"
    return None, ""


def vertical_factor(ds, name: str, dem_units: str | None = None) -> float:
    """Factor from a DEM's values to feet, from its own unit or ``dem_units``.

    Raises
    ------
    InputError
        ``dem-units`` when the DEM states no unit and none is given, when the
        given unit contradicts the one the DEM states (both are named), or
        when either unit is unknown.
    """
    unit, where = stated_unit(ds)
    if unit is None:
        if not dem_units:
            raise InputError(
                "dem-units",
                f"DEM {name!r} does not state its vertical unit",
                "--dem-units m, --dem-units ft or --dem-units us-ft",
            )
        return dem_unit_factor(dem_units, "dem-units")
    stated = str(unit).strip().lower()
    if dem_units is None:
        return dem_unit_factor(unit, f"DEM {name} {where}")
    given = dem_unit_factor(dem_units, "dem-units")
    if DEM_UNITS.get(stated) != given:
        raise InputError(
            "dem-units",
            f"--dem-units {dem_units!r} contradicts the unit {unit!r} that DEM {name!r} "
            f"states in its {where}; the DEM's own unit is never overridden",
            "no --dem-units for a DEM that states its unit (or the unit it states)",
        )
    return given


def check_dem_options(dem, dem_units: str | None = None) -> float | None:
    """Check ``--dem`` and ``--dem-units`` together before any work.

    ``dem_units`` without a DEM is refused; with a DEM, the DEM is opened
    and its vertical unit settled (:func:`vertical_factor`).  Returns the
    factor to feet, or None without a DEM.  ``dem`` is a path (``"demo"``
    already resolved by the caller).
    """
    if dem is None:
        if dem_units is not None:
            raise InputError(
                "dem-units",
                f"{dem_units!r} given without --dem",
                "--dem-units together with --dem DEM.tif (the unit of that DEM)",
            )
        return None
    with _kept_dem(dem) as ds:
        return vertical_factor(ds, Path(dem).name, dem_units)


def plausible_dem(dem_ft) -> tuple[np.ndarray, np.ndarray]:
    """Split DEM values [ft] into plausible elevations and a mask of implausible ones.

    A finite value below :data:`DEM_MIN_M` or above :data:`DEM_MAX_M`
    (in metres) is no elevation on Earth's land surface; it becomes NaN in
    the first array and True in the mask.

    >>> e, bad = plausible_dem([100.0, -40000.0, float("nan")])
    >>> e.tolist()[:2], bad.tolist()
    ([100.0, nan], [False, True, False])
    """
    ft = np.asarray(dem_ft, dtype=float)
    m = ft * M_PER_FT
    with np.errstate(invalid="ignore"):
        bad = np.isfinite(ft) & ((m < DEM_MIN_M) | (m > DEM_MAX_M))
    return np.where(bad, np.nan, ft), bad


def _open_dem(dem):
    import rasterio

    p = Path(dem)
    if not p.is_file():
        raise InputError("dem", f"file {str(p)!r} not found", "a GeoTIFF of elevations")
    try:
        ds = rasterio.open(p)
    except rasterio.errors.RasterioIOError as exc:
        raise LayerError(f"DEM {str(p)!r} cannot be read ({exc})") from None
    if ds.crs is None:
        ds.close()
        raise LayerError(f"DEM {str(p)!r} has no CRS; accepted: a georeferenced GeoTIFF")
    return ds


#: open DEMs kept per thread, by file (path, size, modification time): a server asking the
#: same DEM request after request opens it once (rasterio's open is milliseconds)
_KEPT = threading.local()
MAX_KEPT_DEMS = 4


@contextlib.contextmanager
def _kept_dem(dem):
    """The DEM opened once per thread and file version (:func:`_open_dem` checks it)."""
    p = Path(dem)
    try:
        st = p.stat()
    except OSError:
        st = None
    if st is None or not p.is_file():
        with _open_dem(p) as ds:  # its own message for a missing file
            yield ds
        return
    key = (str(p.resolve()), st.st_size, st.st_mtime_ns)
    kept = getattr(_KEPT, "dems", None)
    if kept is None:
        kept = _KEPT.dems = {}
    ds = kept.get(key)
    if ds is None or ds.closed:
        ds = _open_dem(p)
        if len(kept) >= MAX_KEPT_DEMS:
            kept.pop(next(iter(kept))).close()
        kept[key] = ds
    yield ds


def sample_dem(dem: str | Path, lon, lat, dem_units: str | None = None) -> np.ndarray:
    """DEM elevation at many sites [ft]; NaN at nodata or outside the grid.

    Parameters
    ----------
    dem : str or pathlib.Path
        A GeoTIFF (any CRS) of elevations.
    lon, lat : array_like
        Site coordinates [degrees, EPSG:4326].
    dem_units : str, optional
        Vertical unit of a DEM that states none (never overrides a stated one).

    Returns
    -------
    numpy.ndarray
        The DEM values converted to feet, as read (:func:`plausible_dem`
        sorts out values no land surface has).

    Raises
    ------
    LayerError
        When the DEM cannot be read or has no CRS.
    InputError
        When the vertical unit is neither in the file nor given, or when the
        given one contradicts the DEM's own.
    """
    from rasterio.transform import rowcol
    from rasterio.windows import Window

    from neve.geo.layers.transform import transformer

    lon = np.atleast_1d(np.asarray(lon, dtype=float))
    lat = np.atleast_1d(np.asarray(lat, dtype=float))
    out = np.full(lon.shape, np.nan)
    p = Path(dem)
    with _kept_dem(p) as ds:
        factor = vertical_factor(ds, p.name, dem_units)
        ok = np.flatnonzero(np.isfinite(lon) & np.isfinite(lat))
        if ok.size == 0:
            return out
        x, y = transformer(4326, ds.crs).transform(lon[ok], lat[ok])
        rows, cols = (np.asarray(a) for a in rowcol(ds.transform, x, y, op=math.floor))
        inside = (rows >= 0) & (rows < ds.height) & (cols >= 0) & (cols < ds.width)
        sel = ok[inside]
        rows, cols = rows[inside], cols[inside]
        if sel.size == 0:
            return out
        for part in _tiles(rows, cols):
            r, c = rows[part], cols[part]
            r0, c0 = int(r.min()), int(c.min())
            win = Window(c0, r0, int(c.max()) - c0 + 1, int(r.max()) - r0 + 1)
            band = ds.read(1, window=win, masked=True)
            vals = np.ma.filled(band.astype(float), np.nan)[r - r0, c - c0]
            out[sel[part]] = vals * factor
    return out


def _tiles(rows: np.ndarray, cols: np.ndarray) -> list[np.ndarray]:
    """Split site indices so that no window exceeds MAX_WINDOW_CELLS."""
    span = (int(rows.max()) - int(rows.min()) + 1) * (int(cols.max()) - int(cols.min()) + 1)
    if span <= MAX_WINDOW_CELLS:
        return [np.arange(rows.size)]
    side = int(math.sqrt(MAX_WINDOW_CELLS))
    key = (rows // side) * (int(cols.max()) // side + 1) + cols // side
    order = np.argsort(key, kind="stable")
    bounds = np.flatnonzero(np.diff(key[order])) + 1
    return np.split(order, bounds)
