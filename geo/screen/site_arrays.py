"""The parsed site file of ``neve screen``: one array per column, one entry per input row.

:func:`neve.geo.screen.sitefile.parse_sites` builds a :class:`SiteArrays`;
:mod:`neve.geo.screen.geocode_rows` fills in the coordinates of the rows that
an address locates; :mod:`neve.geo.screen.run` resolves them. It lives in a module
of its own so that the parser and the geocoding of rows need not import each other.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np
import pandas as pd


@dataclass
class SiteArrays:
    """A site file parsed into arrays, one entry per input row, in input order.

    Attributes
    ----------
    frame : pandas.DataFrame
        The input columns as read (a geometry column becomes WKT text).
    lat, lon : numpy.ndarray
        Coordinates [deg, WGS 84]; NaN where the row has none (yet).
    elevation_ft : numpy.ndarray
        Given elevation [ft]; NaN where none was given.
    error : numpy.ndarray
        Per-row error text (object array, ``""`` where the row is fine).
    address : numpy.ndarray or None
        Address text for rows to geocode (``""`` elsewhere), or None.
    roof : numpy.ndarray or None
        Roof profile names from a ``roof`` column, or None.
    source : str
        How sites are located: ``latlon``, ``address`` or ``geometry``.
    site_id : str or None
        The name of the site-id column, if any.
    duplicate : numpy.ndarray
        True where the row's site id also appears on another row.
    multiline : dict
        Row index -> (first, last) physical line of CSV records whose quoted
        cells hold line breaks (flagged ``multiline_field``).
    input_info : dict
        How the file was laid out (see :class:`neve.geo.screen.read.ReadNotes`).
    on_record_psf : numpy.ndarray or None
        The roof snow load on record [psf] from a ``snow_load_on_record`` column
        (NaN where none is given), or None without such a column.
    location_precision, location_radius_m : numpy.ndarray or None
        Filled by the geocoding of address rows: each row's location precision
        (:data:`neve.geo.site.places.PRECISIONS`, ``""`` for a row not located)
        and its uncertainty radius [m]; None for a file without addresses.
    location_elevation_min_ft, location_elevation_max_ft : numpy.ndarray or None
        With a DEM: the DEM's minimum and maximum [ft] over each approximate
        row's location circle (NaN elsewhere); set by the screening run.
    """

    frame: pd.DataFrame
    lat: np.ndarray
    lon: np.ndarray
    elevation_ft: np.ndarray
    error: np.ndarray
    source: str
    address: np.ndarray | None = None
    roof: np.ndarray | None = None
    site_id: str | None = None
    duplicate: np.ndarray = field(default_factory=lambda: np.zeros(0, bool))
    columns: dict = field(default_factory=dict)
    geometry: object = None
    multiline: dict = field(default_factory=dict)
    input_info: dict = field(default_factory=dict)
    on_record_psf: np.ndarray | None = None
    location_precision: np.ndarray | None = None
    location_radius_m: np.ndarray | None = None
    location_elevation_min_ft: np.ndarray | None = None
    location_elevation_max_ft: np.ndarray | None = None

    def __len__(self) -> int:
        return len(self.frame)
