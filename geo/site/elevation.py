"""Site elevation: from the user's text or sampled from a DEM.

The DEM may be in any CRS.  Its vertical unit is the one the DEM states
itself (the band's unit metadata, ``rasterio`` ``units``, e.g. ``m``,
``metre``, ``ft``, ``US survey foot``; or, when the band is silent, the unit
of a compound CRS's vertical part).  ``dem_units`` (``--dem-units``) names
the unit of a DEM that states none; it never overrides a stated unit: a
``dem_units`` that contradicts the DEM is refused, naming both.  A DEM with
no unit at all is refused rather than guessed.  Sampling is vectorized: the
sites are transformed to the DEM's CRS once, one window covering them is
read, and cells are picked by the inverse geotransform, as
``rasterio.transform.rowcol`` picks them (:func:`rowcol_floor`: the cell that
contains the site, as ``DatasetReader.sample`` picks it).  Nodata and sites
outside the grid give NaN, which the resolver flags as ``dem_nodata``.

Values outside the range of land elevations on Earth (:data:`DEM_MIN_M` to
:data:`DEM_MAX_M`, after conversion to metres) are not elevations: a fill
value the DEM does not declare as nodata, or a unit mistake.
:func:`plausible_dem` separates them; the resolver flags them
``dem_implausible`` and uses no elevation from the DEM there.
"""

from __future__ import annotations

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
    p = Path(dem)
    if not p.is_file():
        with _open_dem(p) as ds:  # its own message for a missing file
            return vertical_factor(ds, p.name, dem_units)
    return _reader(p, dem_units).factor  # opened once, kept for the run (or the server)


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


#: a DEM of at most this many cells is read whole, once, and kept while it is used [cells]
WHOLE_DEM_CELLS = 16_000_000
#: DEM readers kept open (a run samples one DEM over many chunks)
_OPEN_DEMS = 2
_READERS: dict = {}
_READERS_LOCK = threading.Lock()


def rowcol_floor(inverse: np.ndarray, x: np.ndarray, y: np.ndarray):
    """Row and column of the cells holding points, by the inverse geotransform.

    The same arithmetic as ``rasterio.transform.rowcol(transform, x, y, op=math.floor)``
    (the inverse affine as a 3 x 3 matrix times the points, then the floor), in
    numpy: rasterio maps ``math.floor`` over the points one by one in Python.
    Coordinates that do not transform (inf, NaN) give a cell outside any grid.

    Parameters
    ----------
    inverse : numpy.ndarray
        The inverse of the DEM's affine transform as a 3 x 3 matrix (``~transform``).
    x, y : numpy.ndarray
        Point coordinates in the DEM's CRS.
    """
    m = np.empty((3, len(x)))
    m[0], m[1], m[2] = x, y, 1.0
    far = float(2**62)
    with np.errstate(invalid="ignore", over="ignore"):
        inverse.dot(m, out=m)
        cols = np.nan_to_num(np.floor(m[0]), nan=-far, posinf=far, neginf=-far)
        rows = np.nan_to_num(np.floor(m[1]), nan=-far, posinf=far, neginf=-far)
    return np.clip(rows, -far, far).astype(np.int64), np.clip(cols, -far, far).astype(np.int64)


class _DemReader:
    """An open DEM with its unit factor, inverse transform and (a small DEM) its band.

    Kept between calls (:func:`_reader`), so that a run sampling many chunks
    opens, reads and checks the DEM once.  Reads are serialised by a lock
    (a rasterio dataset is not to be read from two threads at once).
    """

    def __init__(self, p: Path, dem_units: str | None):
        ds = _open_dem(p)
        try:
            self.factor = vertical_factor(ds, p.name, dem_units)
        except Exception:
            ds.close()
            raise
        self.ds = ds
        self.crs = ds.crs
        self.height, self.width = ds.height, ds.width
        self.inverse = np.array(tuple(~ds.transform), dtype=float).reshape(3, 3)
        self.lock = threading.Lock()
        self.band = None

    def whole(self):
        """The whole band (masked, as stored) when the DEM is small enough, else None."""
        if self.height * self.width > WHOLE_DEM_CELLS:
            return None
        with self.lock:
            if self.band is None:
                self.band = self.ds.read(1, masked=True)
        return self.band

    def window(self, win):
        with self.lock:
            return self.ds.read(1, window=win, masked=True)

    def close(self) -> None:
        self.ds.close()


def _reader(p: Path, dem_units: str | None) -> _DemReader:
    """The open reader of a DEM file (reopened when the file changed)."""
    st = p.stat()
    key = (str(p.resolve()), st.st_mtime_ns, st.st_size, dem_units)
    with _READERS_LOCK:
        reader = _READERS.pop(key, None)
        if reader is None:
            reader = _DemReader(p, dem_units)
        _READERS[key] = reader  # the newest last
        while len(_READERS) > _OPEN_DEMS:
            _READERS.pop(next(iter(_READERS))).close()
    return reader


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

    Notes
    -----
    The DEM stays open between calls (a run samples it chunk by chunk); a DEM of
    at most :data:`WHOLE_DEM_CELLS` cells is read whole on first use and kept, a
    larger one is read by windows around the sites.  Only the sampled cells are
    converted to floating point.
    """
    from rasterio.windows import Window

    from neve.geo.layers.transform import transformer

    lon = np.atleast_1d(np.asarray(lon, dtype=float))
    lat = np.atleast_1d(np.asarray(lat, dtype=float))
    out = np.full(lon.shape, np.nan)
    p = Path(dem)
    if not p.is_file():
        raise InputError("dem", f"file {str(p)!r} not found", "a GeoTIFF of elevations")
    reader = _reader(p, dem_units)
    factor = reader.factor
    ok = np.flatnonzero(np.isfinite(lon) & np.isfinite(lat))
    if ok.size == 0:
        return out
    x, y = transformer(4326, reader.crs).transform(lon[ok], lat[ok])
    rows, cols = rowcol_floor(reader.inverse, np.asarray(x, float), np.asarray(y, float))
    inside = (rows >= 0) & (rows < reader.height) & (cols >= 0) & (cols < reader.width)
    sel = ok[inside]
    rows, cols = rows[inside], cols[inside]
    if sel.size == 0:
        return out
    band = reader.whole()
    if band is not None:
        out[sel] = np.ma.filled(band[rows, cols].astype(float), np.nan) * factor
        return out
    for part in _tiles(rows, cols):
        r, c = rows[part], cols[part]
        r0, c0 = int(r.min()), int(c.min())
        win = Window(c0, r0, int(c.max()) - c0 + 1, int(r.max()) - r0 + 1)
        vals = reader.window(win)[r - r0, c - c0]
        out[sel[part]] = np.ma.filled(vals.astype(float), np.nan) * factor
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
