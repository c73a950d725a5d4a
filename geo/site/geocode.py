"""Addresses to coordinates: an offline gazetteer or a Nominatim-compatible server.

Two sources, tried in this order:

1. a **gazetteer**: a CSV file with columns ``address``, ``lat``, ``lon``
   (a firm's own address list); an address matches when it equals a row's
   address after case, spacing and punctuation are normalised;
2. a **geocoding server** speaking the Nominatim search API (the user's own
   or a public one, named by ``url`` or the ``NEVE_GEOCODER_URL``
   environment variable), queried through geopy.

No server is built in: the user chooses one (public servers have usage
policies).  Ambiguous look-ups (several matches far apart) and failed ones
are errors that say so; nothing is silently guessed.
"""

from __future__ import annotations

import math
import os
import re
from dataclasses import dataclass
from pathlib import Path
from urllib.parse import urlsplit

from neve.engine.errors import InputError, NeveError

#: matches farther apart than this make a look-up ambiguous [m]
AMBIGUOUS_M = 200.0
ENV_URL = "NEVE_GEOCODER_URL"
DEFAULT_USER_AGENT = "neve-snow-load-tool"


class GeocodeError(NeveError):
    """The geocoding server could not be reached or answered with an error."""

    exit_code = 1


@dataclass(frozen=True)
class Geocoded:
    lat: float
    lon: float
    address: str  # the matched address as the source writes it
    source: str  # "gazetteer:<file>" or "server:<url>"


def normalise(text: str) -> str:
    """Case-, spacing- and punctuation-blind form of an address."""
    text = re.sub(r"[.,;:#'\"()]", " ", str(text).lower())
    return " ".join(text.split())


def _distance_m(a: tuple[float, float], b: tuple[float, float]) -> float:
    from pyproj import Geod

    _, _, d = Geod(ellps="WGS84").inv(a[1], a[0], b[1], b[0])
    return float(d)


def _spread(points: list[tuple[float, float]]) -> float:
    return max(
        (_distance_m(p, q) for i, p in enumerate(points) for q in points[i + 1 :]), default=0.0
    )


def _ambiguous(address: str, cands: list[tuple[float, float, str]]) -> InputError:
    shown = "; ".join(f"{c[2]} ({c[0]:.5f},{c[1]:.5f})" for c in cands[:5])
    return InputError(
        "address",
        f"{address!r} is ambiguous: {len(cands)} matches ({shown})",
        "a more specific address, or --at LAT,LON",
    )


def from_gazetteer(address: str, path: str | Path) -> Geocoded | None:
    """Look ``address`` up in a gazetteer CSV; None when it is not listed."""
    import pandas as pd

    p = Path(path)
    if not p.is_file():
        raise InputError("gazetteer", f"file {str(p)!r} not found", "a CSV with address,lat,lon")
    try:
        df = pd.read_csv(p, dtype={"address": str})
    except Exception as exc:
        raise InputError("gazetteer", f"{p.name!r} is not a readable CSV ({exc})") from None
    missing = [c for c in ("address", "lat", "lon") if c not in df.columns]
    if missing:
        raise InputError(
            "gazetteer", f"{p.name!r} lacks column(s) {', '.join(missing)}", "address, lat, lon"
        )
    key = normalise(address)
    hit = df[df["address"].map(lambda a: normalise(a) == key if isinstance(a, str) else False)]
    if hit.empty:
        return None
    cands = []
    for _, r in hit.iterrows():
        try:
            lat, lon = float(r["lat"]), float(r["lon"])
        except (TypeError, ValueError):
            raise InputError("gazetteer", f"row for {r['address']!r} has bad lat/lon") from None
        if not (math.isfinite(lat) and math.isfinite(lon)):
            raise InputError("gazetteer", f"row for {r['address']!r} has bad lat/lon")
        cands.append((lat, lon, str(r["address"])))
    if _spread([(c[0], c[1]) for c in cands]) > AMBIGUOUS_M:
        raise _ambiguous(address, cands)
    return Geocoded(cands[0][0], cands[0][1], cands[0][2], f"gazetteer:{p.name}")


def from_server(
    address: str, url: str, *, user_agent: str | None = None, timeout: float = 10.0
) -> Geocoded:
    """Look ``address`` up on a Nominatim-compatible server through geopy."""
    from geopy.exc import GeopyError
    from geopy.geocoders import Nominatim

    parts = urlsplit(url if "://" in url else f"https://{url}")
    if parts.scheme not in ("http", "https") or not parts.netloc:
        raise InputError(
            "geocoder-url", f"{url!r} is not a server URL", "http(s)://host[:port][/path]"
        )
    domain = parts.netloc + parts.path.rstrip("/")
    coder = Nominatim(
        user_agent=user_agent or DEFAULT_USER_AGENT,
        domain=domain,
        scheme=parts.scheme,
        timeout=timeout,
    )
    try:
        found = coder.geocode(address, exactly_one=False, limit=5)
    except GeopyError as exc:
        raise GeocodeError(
            f"address: the geocoding server {url!r} could not answer ({type(exc).__name__}: "
            f"{exc}); check the server or use --gazetteer FILE.csv or --at LAT,LON"
        ) from None
    if not found:
        raise InputError(
            "address", f"no match for {address!r} on {url!r}", "another spelling, or --at LAT,LON"
        )
    cands = [(float(loc.latitude), float(loc.longitude), str(loc.address)) for loc in found]
    if len(cands) > 1 and _spread([(c[0], c[1]) for c in cands]) > AMBIGUOUS_M:
        raise _ambiguous(address, cands)
    return Geocoded(cands[0][0], cands[0][1], cands[0][2], f"server:{url}")


def geocode(
    address: str,
    *,
    gazetteer: str | Path | None = None,
    url: str | None = None,
    user_agent: str | None = None,
    timeout: float = 10.0,
) -> Geocoded:
    """Coordinates of an address from the gazetteer, else from the server.

    Raises
    ------
    InputError
        No source configured, no match, or an ambiguous match.
    GeocodeError
        The server could not be reached or failed.
    """
    if not isinstance(address, str) or not address.strip():
        raise InputError("address", f"{address!r} is empty", "an address text")
    url = url or os.environ.get(ENV_URL) or None
    if gazetteer is None and url is None:
        raise InputError(
            "address",
            "no geocoder configured",
            f"--gazetteer FILE.csv (address,lat,lon) or --geocoder-url URL of a Nominatim-"
            f"compatible server (or the {ENV_URL} environment variable)",
        )
    if gazetteer is not None:
        hit = from_gazetteer(address, gazetteer)
        if hit is not None:
            return hit
        if url is None:
            raise InputError(
                "address",
                f"{address!r} is not in the gazetteer {Path(gazetteer).name!r}",
                "an address listed there, --geocoder-url URL, or --at LAT,LON",
            )
    return from_server(address, url, user_agent=user_agent, timeout=timeout)
