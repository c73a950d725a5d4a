"""One site as ``neve site`` asks for it: coordinates or an address, then :func:`resolve_site`.

``neve site`` and ``neve serve`` (``POST /api/site`` and the site page) both
call :func:`ask_site` and print or send :func:`site_json` of its result, so
the command line and the web give the same answer, and the same message for
the same bad input.
"""

from __future__ import annotations

from neve.engine.errors import InputError
from neve.engine.jsonsafe import finite_copy


def ask_site(
    *,
    at: str | None = None,
    address: str | None = None,
    gazetteer=None,
    geocoder_url: str | None = None,
    country: str | None = None,
    region: str | None = None,
    user_agent: str | None = None,
    geocoder_timeout: float = 10.0,
    site_name: str | None = None,
    **resolve_kw,
):
    """Locate the site (``at`` "LAT,LON" or ``address``: exactly one) and resolve it.

    Parameters
    ----------
    at : str, optional
        Site coordinates as typed (decimal or DMS), ``"47.52,-140.05"``.
    address : str, optional
        An address, US ZIP code or place name (:func:`neve.geo.site.places.locate`:
        the offline gazetteer, then ``gazetteer``, then ``geocoder_url``).
    site_name : str, optional
        The site's name (``--site-name``).
    **resolve_kw
        The keywords of :func:`neve.geo.site.one.resolve_site` (``elevation``,
        ``dem``, ``dem_units``, ``layers``, ``roof``, ``project``,
        ``elevation_source``, ``standard``, ``on_record_psf``).

    Returns
    -------
    neve.geo.site.one.SiteResult
    """
    from neve.geo.site.coords import parse_latlon
    from neve.geo.site.one import resolve_site

    if bool(at) == bool(address):
        raise InputError(
            "at", "give exactly one of --at LAT,LON or --address TEXT", "--at 47.5,-140"
        )
    located = {}
    if at:
        lat, lon = parse_latlon(at)
        given, found = at, None
    else:
        lat, lon, found, located = locate_site(
            address, gazetteer=gazetteer, geocoder_url=geocoder_url, country=country,
            region=region, user_agent=user_agent, geocoder_timeout=geocoder_timeout,
        )  # fmt: skip
        given = address
    return resolve_site(
        lat, lon, name=site_name, address=found, given=given, **resolve_kw, **located
    )


def locate_site(
    address: str,
    *,
    gazetteer=None,
    geocoder_url: str | None = None,
    country: str | None = None,
    region: str | None = None,
    user_agent: str | None = None,
    geocoder_timeout: float = 10.0,
) -> tuple[float, float, str, dict]:
    """An address located (:func:`neve.geo.site.places.locate`): lat, lon, the address
    found, and the ``location_precision``/``_radius_m``/``_source`` keywords of
    :func:`~neve.geo.site.one.resolve_site`."""
    from neve.geo.site.places import locate

    hit = locate(address, gazetteer=gazetteer, url=geocoder_url, country=country, region=region,
                 user_agent=user_agent, timeout=geocoder_timeout)  # fmt: skip
    located = dict(location_precision=hit.precision, location_radius_m=hit.radius_m,
                   location_source=hit.source)  # fmt: skip
    return hit.lat, hit.lon, hit.address, located


def site_json(result) -> dict:
    """What ``neve site --format json`` prints: the result's JSON, NaN and infinity as null."""
    return finite_copy(result.to_json())
