"""Addresses in a site file to coordinates, for ``neve screen``.

:func:`geocode_rows` fills the coordinates of the rows of a parsed site file
(:class:`neve.geo.screen.site_arrays.SiteArrays`) that are located by an address, asking the
geocoder once per distinct address.  :func:`make_geocoder` builds that
geocoder from a gazetteer CSV and/or a Nominatim-compatible server (see
:mod:`neve.geo.site.geocode`), wrapped in a :class:`CachedGeocoder` that remembers
answers and spaces out server requests.  A failed look-up makes its row an
error; the run goes on.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from neve.engine.errors import InputError, NeveError
from neve.geo.screen.site_arrays import SiteArrays


def _latlon(hit) -> tuple | None:
    """(lat, lon) or (lat, lon, precision, radius [m]) from a geocoder's answer: a pair, a
    geopy Location, a :class:`neve.geo.site.places.Located`, or None."""
    if hit is None:
        return None
    if hasattr(hit, "precision") and hasattr(hit, "radius_m"):
        return float(hit.lat), float(hit.lon), str(hit.precision), float(hit.radius_m)
    if hasattr(hit, "latitude") and hasattr(hit, "longitude"):
        return float(hit.latitude), float(hit.longitude)
    if isinstance(hit, dict) and "lat" in hit and "lon" in hit:
        return float(hit["lat"]), float(hit["lon"])
    lat, lon = hit[:2] if not hasattr(hit, "lat") else (hit.lat, hit.lon)
    return float(lat), float(lon)


class CachedGeocoder:
    """Wrap a geocoding callable with a cache and a minimum interval between calls.

    Parameters
    ----------
    lookup : callable
        ``lookup(address) -> (lat, lon) | geopy Location | None``.
    min_interval_s : float
        Seconds to wait between two uncached look-ups [s] (a public server's
        usage policy typically asks for one request per second).
    cache : dict, optional
        Address -> (lat, lon) or None; shared between runs if the caller keeps it.
    """

    def __init__(self, lookup, *, min_interval_s: float = 0.0, cache: dict | None = None):
        self.lookup = lookup
        self.min_interval_s = float(min_interval_s)
        self.cache = {} if cache is None else cache
        self._last = None

    def __call__(self, address: str):
        key = " ".join(str(address).split()).lower()
        if key in self.cache:
            return self.cache[key]
        import time

        if self._last is not None and self.min_interval_s > 0:
            wait = self.min_interval_s - (time.monotonic() - self._last)
            if wait > 0:
                time.sleep(wait)
        try:
            hit = _latlon(self.lookup(address))
        finally:
            self._last = time.monotonic()
        self.cache[key] = hit
        return hit


class GeocodeMiss(NeveError, LookupError):
    """One address could not be placed (not found, or ambiguous); that row only is an error."""

    exit_code = 2


def _gazetteer_lookup(path: str | Path):
    """A look-up in a gazetteer CSV (address, lat, lon), read once."""
    from neve.geo.site.geocode import AMBIGUOUS_M, from_gazetteer, normalise

    p = Path(path)
    from_gazetteer("", p)  # validates the file (existence, columns) with its own messages
    table = pd.read_csv(p, dtype={"address": str})
    groups: dict[str, list[tuple[float, float]]] = {}
    for addr, la, lo in zip(table["address"], table["lat"], table["lon"], strict=True):
        if isinstance(addr, str):
            groups.setdefault(normalise(addr), []).append((float(la), float(lo)))

    def lookup(address: str):
        cands = groups.get(normalise(address))
        if not cands:
            return None
        la = np.array([c[0] for c in cands])
        lo = np.array([c[1] for c in cands])
        spread_m = max(np.ptp(la), np.ptp(lo) * np.cos(np.radians(la.mean()))) * 111_195.0
        if spread_m > AMBIGUOUS_M:
            raise GeocodeMiss(f"{address!r} matches {len(cands)} places in the gazetteer")
        return cands[0]

    return lookup


def load_geocode_cache(path: str | Path) -> dict:
    """Addresses found on earlier runs: a JSON object of address -> [lat, lon] (missing: empty)."""
    import json

    p = Path(path)
    if not p.exists():
        return {}
    try:
        data = json.loads(p.read_text(encoding="utf-8"))
        return {str(k): _cached(v) for k, v in data.items() if v is not None}
    except (ValueError, TypeError, KeyError, IndexError, AttributeError, UnicodeDecodeError):
        raise InputError(
            "geocode-cache", f"{str(p)!r} is not a geocode cache", "a JSON file neve wrote"
        ) from None


def _cached(v) -> tuple:
    """A cache entry: [lat, lon] (an address) or [lat, lon, precision, radius_m]."""
    if len(v) >= 4:
        from neve.geo.site.places import PRECISIONS

        if str(v[2]) not in PRECISIONS:
            raise InputError(
                "geocode-cache",
                f"an entry has the unknown precision {v[2]!r}",
                ", ".join(PRECISIONS),
            )
        return float(v[0]), float(v[1]), str(v[2]), float(v[3])
    return float(v[0]), float(v[1])


def save_geocode_cache(path: str | Path, cache: dict) -> None:
    """Write the found addresses (not the misses) atomically as JSON.

    The cache is read at the start of a run and updated at its end, so it is
    replaced without ``--overwrite`` (it is the run's own state, not a result);
    what another run added to the file meanwhile is kept (read again and merged;
    this run's answers win).  A file that is no longer a geocode cache is refused
    rather than replaced.
    """
    import json

    from neve.safe_write import write_text

    found = {k: tuple(v) for k, v in cache.items() if v is not None}
    merged = {**load_geocode_cache(path), **found}
    data = {k: list(v) for k, v in sorted(merged.items())}
    write_text(path, json.dumps(data, indent=1), overwrite=True, field="geocode-cache")


def make_geocoder(
    gazetteer: str | Path | None = None,
    url: str | None = None,
    *,
    min_interval_s: float = 1.0,
    cache: dict | None = None,
) -> CachedGeocoder:
    """The geocoder for address rows: a gazetteer CSV first, then a server.

    Parameters
    ----------
    gazetteer : str or Path, optional
        CSV with ``address``, ``lat``, ``lon`` (see :mod:`neve.geo.site.geocode`).
    url : str, optional
        A Nominatim-compatible server (default: the ``NEVE_GEOCODER_URL``
        environment variable).
    min_interval_s : float
        Seconds between two server requests [s]; public servers' usage
        policies commonly ask for no more than one request per second.
    cache : dict, optional
        Results kept between runs by the caller.
    """
    import os

    from neve.geo.site import geocode as gc

    url = url or os.environ.get(gc.ENV_URL) or None
    gazette = _gazetteer_lookup(gazetteer) if gazetteer is not None else None

    def offline(address: str):
        """The shipped gazetteer (ZIP code, then place): misses are this row's error."""
        from neve.geo.site.places import locate

        try:
            return locate(address)
        except InputError as exc:
            raise GeocodeMiss(
                f"{exc.problem} (give a US ZIP code or a place with its region, --gazetteer "
                "FILE.csv, --geocoder-url URL, or lat/lon columns)"
            ) from None

    if gazette is None and url is None:
        return CachedGeocoder(offline, cache=cache)
    if gazette is not None and url is None:

        def local(address: str):  # the user's list first (exact), then the shipped gazetteer
            hit = gazette(address)
            return offline(address) if hit is None else hit

    else:
        local = gazette

    def server(address: str):
        try:
            hit = gc.from_server(address, url)
        except InputError as exc:  # no match or ambiguous: this row only
            raise GeocodeMiss(exc.problem) from None
        return hit.lat, hit.lon

    if local is not None and url is None:
        return CachedGeocoder(local, cache=cache)
    if local is None:
        return CachedGeocoder(server, min_interval_s=min_interval_s, cache=cache)

    throttled = CachedGeocoder(server, min_interval_s=min_interval_s)

    def both(address: str):  # only server requests are spaced out
        hit = local(address)
        return hit if hit is not None else throttled(address)

    return CachedGeocoder(both, cache=cache)


def geocode_rows(site: SiteArrays, geocoder=None, *, progress: bool = False) -> None:
    """Fill ``site.lat``/``site.lon`` for rows located by address (each distinct address once).

    A failed look-up makes that row an error naming the address; the run goes on.
    """
    if site.address is None:
        return
    todo = (site.address != "") & (site.error == "") & np.isnan(site.lat)
    if not todo.any():
        return
    if geocoder is None:
        geocoder = make_geocoder()
    elif not isinstance(geocoder, CachedGeocoder):
        geocoder = CachedGeocoder(geocoder)
    from tqdm.auto import tqdm

    unique = pd.unique(site.address[todo])
    found: dict[str, tuple[float, float] | None] = {}
    for addr in tqdm(unique, disable=not progress, desc="geocoding", unit="address", leave=False):
        try:
            found[addr] = geocoder(addr)
        except GeocodeMiss as exc:
            found[addr] = exc
        except InputError:
            raise
        except Exception as exc:  # a network or server failure: this address only
            found[addr] = exc
    rows = np.flatnonzero(todo)
    if site.location_precision is None:
        located = np.isfinite(site.lat) & np.isfinite(site.lon) & (site.error == "")
        site.location_precision = np.where(located, "coordinates", "").astype(object)
        site.location_radius_m = np.where(located, 0.0, np.nan)
    from neve.geo.site.places import ADDRESS_RADIUS_M

    for i in rows:
        hit = found[site.address[i]]
        if isinstance(hit, GeocodeMiss):
            site.error[i] = f"address: {hit}"
        elif isinstance(hit, Exception):
            site.error[i] = f"address: look-up of {site.address[i]!r} failed ({hit})"
        elif hit is None:
            site.error[i] = f"address: {site.address[i]!r} was not found by the geocoder"
        elif not (abs(hit[0]) <= 90 and abs(hit[1]) <= 180):
            site.error[i] = f"address: the geocoder gave an impossible location {hit!r}"
        else:
            site.lat[i], site.lon[i] = hit[0], hit[1]
            precision, radius = (hit[2], hit[3]) if len(hit) >= 4 else ("address", ADDRESS_RADIUS_M)
            site.location_precision[i], site.location_radius_m[i] = precision, radius


def geocode_sites(
    site: SiteArrays,
    geocoder=None,
    *,
    gazetteer: str | Path | None = None,
    url: str | None = None,
    cache_path: str | Path | None = None,
    progress: bool = False,
) -> None:
    """Locate a site file's address rows, with an optional cache file kept between runs.

    Parameters
    ----------
    site : neve.geo.screen.site_arrays.SiteArrays
        Parsed site file; its ``lat``, ``lon`` and ``error`` are filled in place.
    geocoder : callable, optional
        ``address -> (lat, lon) | None``; built by :func:`make_geocoder` from
        ``gazetteer`` and ``url`` when omitted.
    gazetteer, url
        As for :func:`make_geocoder`.
    cache_path : str or Path, optional
        JSON file of addresses found on earlier runs (:func:`load_geocode_cache`);
        rewritten with what this run found, even when the run is interrupted.
    progress : bool
        Show a progress bar on stderr.

    Raises
    ------
    InputError
        When no geocoder is configured and the file locates its sites by
        address.  In a lat/lon file whose blank rows carry an address, only
        those rows become errors.
    """
    cache = load_geocode_cache(cache_path) if cache_path else None
    try:
        if geocoder is None:
            geocoder = make_geocoder(gazetteer, url, cache=cache)
    except InputError as exc:
        if site.source != "latlon":
            raise
        # a lat/lon file whose blank rows have addresses: those rows only fail
        todo = (site.address != "") & (site.error == "")
        site.error[todo] = f"lat/lon missing and the address cannot be geocoded: {exc.accepted}"
        return
    try:
        geocode_rows(site, geocoder, progress=progress)
    finally:  # keep what was found, even on an interrupted run
        if cache_path and cache is not None:
            save_geocode_cache(cache_path, cache)
