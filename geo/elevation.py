"""Site elevation: from the user's text or sampled from a DEM.

The DEM may be in any CRS.  Its vertical unit comes from the band's unit
metadata (``rasterio`` ``units``; e.g. ``m``, ``metre``, ``ft``, ``foot``,
``US survey foot``) or from ``dem_units``, which overrides it; a DEM with
neither is an error rather than a guess.  Sampling is vectorized: the sites
are transformed to the DEM's CRS once, one window covering them is read,
and cells are picked with ``rasterio.transform.rowcol`` (the cell that
contains the site, as ``DatasetReader.sample`` picks it).  Nodata and sites
outside the grid give NaN, which the resolver flags as ``dem_nodata``.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from engine.errors import InputError, LayerError
from engine.units import FT_PER_M, parse_length_unit

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
}
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
    from engine.units import LENGTH_UNITS

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


def sample_dem(dem: str | Path, lon, lat, dem_units: str | None = None) -> np.ndarray:
    """DEM elevation at many sites [ft]; NaN at nodata or outside the grid.

    Parameters
    ----------
    dem : str or pathlib.Path
        A GeoTIFF (any CRS) of elevations.
    lon, lat : array_like
        Site coordinates [degrees, EPSG:4326].
    dem_units : str, optional
        Vertical unit, overriding the band's unit metadata.

    Raises
    ------
    LayerError
        When the DEM cannot be read or has no CRS.
    InputError
        When the vertical unit is neither in the file nor given.
    """
    import rasterio
    from pyproj import Transformer
    from rasterio.transform import rowcol
    from rasterio.windows import Window

    lon = np.atleast_1d(np.asarray(lon, dtype=float))
    lat = np.atleast_1d(np.asarray(lat, dtype=float))
    out = np.full(lon.shape, np.nan)
    p = Path(dem)
    if not p.is_file():
        raise InputError("dem", f"file {str(p)!r} not found", "a GeoTIFF of elevations")
    try:
        ds = rasterio.open(p)
    except rasterio.errors.RasterioIOError as exc:
        raise LayerError(f"DEM {str(p)!r} cannot be read ({exc})") from None
    with ds:
        if ds.crs is None:
            raise LayerError(f"DEM {str(p)!r} has no CRS; accepted: a georeferenced GeoTIFF")
        unit = dem_units or (ds.units[0] if ds.units and ds.units[0] else None)
        if not unit:
            raise InputError(
                "dem-units",
                f"DEM {p.name!r} does not state its vertical unit",
                "--dem-units m or --dem-units ft",
            )
        factor = dem_unit_factor(unit, "dem-units" if dem_units else f"DEM {p.name} band unit")
        ok = np.flatnonzero(np.isfinite(lon) & np.isfinite(lat))
        if ok.size == 0:
            return out
        x, y = Transformer.from_crs(4326, ds.crs, always_xy=True).transform(lon[ok], lat[ok])
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
