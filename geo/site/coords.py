"""Site coordinates: ``LAT,LON`` in decimal degrees or degrees-minutes-seconds.

>>> parse_latlon("47.52,-140.05")
(47.52, -140.05)
>>> parse_latlon("47°31'12\\"N, 140°03'W")
(47.52, -140.05)
>>> parse_latlon("47 31 12 N 140 3 0 W")
(47.52, -140.05)
"""

from __future__ import annotations

import math
import re

import numpy as np

from neve.engine.errors import InputError

_ACCEPTED = (
    "LAT,LON in decimal degrees (47.52,-140.05) or degrees-minutes-seconds "
    "(47°31'12\"N, 140°03'W); latitude -90 to 90, longitude -180 to 180"
)
_NUM = r"\d+(?:\.\d*)?|\.\d+"
_DMS = re.compile(
    rf"^\s*(?P<sign>[+-])?\s*(?P<d>{_NUM})\s*(?:°|d|deg|\s)?\s*"
    rf"(?:(?P<m>{_NUM})\s*(?:'|′|m|min|\s)?\s*)?"
    rf"(?:(?P<s>{_NUM})\s*(?:\"|″|''|s|sec)?\s*)?"
    r"(?P<hem>[NSEWnsew])?\s*$"
)


def _one(text: str, field: str) -> tuple[float, str | None]:
    m = _DMS.match(text)
    if not m:
        raise InputError(field, f"{text.strip()!r} is not a coordinate", _ACCEPTED)
    d = float(m["d"])
    mins = float(m["m"]) if m["m"] else 0.0
    secs = float(m["s"]) if m["s"] else 0.0
    if (m["m"] or m["s"]) and ("." in m["d"] or mins >= 60 or secs >= 60):
        raise InputError(field, f"{text.strip()!r} has bad minutes or seconds", _ACCEPTED)
    value = d + mins / 60.0 + secs / 3600.0
    hem = m["hem"].upper() if m["hem"] else None
    if m["sign"] == "-":
        if hem:
            raise InputError(field, f"{text.strip()!r} has both a sign and N/S/E/W", _ACCEPTED)
        value = -value
    if hem in ("S", "W"):
        value = -value
    return value, hem


def _split_pair(text: str) -> tuple[str, str]:
    if text.count(",") == 1:
        a, b = text.split(",")
        return a, b
    m = re.match(r"^(.*?[NSEWnsew])(?=[\s,;])\s*[,;]?\s*(.+[NSEWnsew])\s*$", text)
    if m:
        return m.group(1), m.group(2)
    parts = text.replace(";", " ").split()
    if len(parts) == 2:
        return parts[0], parts[1]
    raise InputError("at", f"{text!r} is not a LAT,LON pair", _ACCEPTED)


def parse_latlon(text: object, field: str = "at") -> tuple[float, float]:
    """Parse a ``LAT,LON`` text into decimal degrees and check the ranges.

    Raises
    ------
    InputError
        For text that is not a pair of coordinates, or a latitude or
        longitude out of range; when the pair looks swapped the message
        says so.
    """
    if not isinstance(text, str) or not text.strip():
        raise InputError(field, f"{text!r} is not a LAT,LON pair", _ACCEPTED)
    a, b = _split_pair(text.strip())
    lat, hem_a = _one(a, field)
    lon, hem_b = _one(b, field)
    if hem_a in ("E", "W") and hem_b in ("N", "S"):
        lat, lon = lon, lat
    elif hem_a in ("E", "W") or hem_b in ("N", "S"):
        raise InputError(field, f"{text!r} gives two latitudes or two longitudes", _ACCEPTED)
    lat, lon = round(lat, 10), round(lon, 10)
    check_range(lat, lon, field)
    return lat, lon


def check_range(lat: float, lon: float, field: str = "at") -> None:
    """Raise InputError for a latitude or longitude out of range (or not finite)."""
    if not (math.isfinite(lat) and math.isfinite(lon)):
        raise InputError(field, "coordinates are not finite numbers", _ACCEPTED)
    if not -90.0 <= lat <= 90.0:
        hint = " (latitude and longitude look swapped)" if -90 <= lon <= 90 else ""
        raise InputError(field, f"latitude {lat:g} is out of range{hint}", _ACCEPTED)
    if not -180.0 <= lon <= 180.0:
        raise InputError(field, f"longitude {lon:g} is out of range", _ACCEPTED)


def suspect_mask(lat, lon) -> np.ndarray:
    """Sites whose coordinates look wrong by themselves: (0, 0), or exactly on null axes.

    Swapped pairs are detected by the resolver, which tests whether the
    swapped site falls in a layer when the given one does not.
    """
    lat = np.asarray(lat, dtype=float)
    lon = np.asarray(lon, dtype=float)
    return (np.abs(lat) < 1e-9) & (np.abs(lon) < 1e-9)


def valid_mask(lat, lon) -> np.ndarray:
    """Sites whose coordinates are finite and in range."""
    lat = np.asarray(lat, dtype=float)
    lon = np.asarray(lon, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.isfinite(lat) & np.isfinite(lon) & (np.abs(lat) <= 90) & (np.abs(lon) <= 180)
