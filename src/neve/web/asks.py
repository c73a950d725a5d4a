"""A request's keys -> the library calls of ``neve roof`` and ``neve site``.

The keys are the command-line options' names with ``_`` for ``-`` (``pg``,
``eave_to_ridge``, ``at``, ``elevation``, ``dem``, ``standard`` ...), plus
``roof``: an object with the keys of a ROOF.toml (its ``step``, ``parapet``
and ``projection`` lists and ``overhang``).  The answers come from the same
functions the commands call (:func:`neve.engine.roof.roof_answer`,
:func:`neve.geo.site.ask.ask_site` and :func:`neve.geo.site.ask.site_json`),
so the JSON is the JSON of ``--format json`` and a bad value gets the
command's message (an :class:`neve.engine.errors.InputError`, answered 422).
"""

from __future__ import annotations

from collections.abc import Mapping

from neve.engine.errors import InputError
from neve.roof_file import ROOF_KEYS

#: the keys of ``POST /api/roof``
ROOF_REQUEST_KEYS = ("pg", "sk", "w2", "standard", "roof", *ROOF_KEYS)

#: the keys of ``POST /api/site`` (and of the site page's form)
SITE_REQUEST_KEYS = (
    "at", "address", "country", "region", "elevation", "dem", "dem_units",
    "elevation_source", "layer", "standard", "site_name", "project", "on_record",
    "roof", *ROOF_KEYS,
)  # fmt: skip

#: the yes/no roof keys (``--ventilated/--unventilated``): JSON true or false
_YES_NO = ("ventilated", "unobstructed", "prismatic", "eave_abutted")


def check_keys(body, keys: tuple[str, ...], where: str) -> dict:
    """The request object, refused when it is not one or names a key ``where`` does not take."""
    if not isinstance(body, Mapping):
        raise InputError(
            "body", f"{type(body).__name__} given", f"a JSON object with keys of {where}"
        )
    for key in body:
        if key not in keys:
            raise InputError(str(key), f"is not a key of {where}", ", ".join(keys))
    return dict(body)


def text(body: Mapping, key: str) -> str | None:
    """A text value as the command line would get it (numbers as typed), or None."""
    value = body.get(key)
    if value is None:
        return None
    if isinstance(value, bool) or not isinstance(value, (str, int, float)):
        raise InputError(
            key, f"{type(value).__name__} given", "a text value, e.g. as on the command line"
        )
    return str(value)


def _roof_options(body: Mapping) -> dict:
    """The roof keys given at the top of a request (over its ``roof`` object)."""
    out = {}
    for key in ROOF_KEYS:
        value = body.get(key)
        if value is None:
            continue
        if key in _YES_NO:
            if not isinstance(value, bool):
                raise InputError(key, f"{value!r} is not true or false", "true or false")
            out[key] = value
        else:
            out[key] = text(body, key)
    return out


def roof_of(body: Mapping):
    """The Roof of a request (its ``roof`` object and roof keys), or None."""
    from neve.roof_file import roof_from_data

    return roof_from_data(body.get("roof"), _roof_options(body))


def _standard(body: Mapping):
    value = text(body, "standard")
    if value is None:
        return None
    from neve.engine.standards import get_standard

    return get_standard(value, field="standard")


def roof_request(body) -> dict:
    """``POST /api/roof``: the ``neve roof --format json`` object."""
    from neve.engine.roof import parse_w2, roof_answer

    body = check_keys(body, ROOF_REQUEST_KEYS, "POST /api/roof")
    pg, sk = text(body, "pg"), text(body, "sk")
    w2 = parse_w2(body.get("w2"), "w2")
    standard = _standard(body) or "asce7-16"
    # the standard's own ground quantity (pg, or sk for EN 1991-1-3), as neve roof takes it
    data, _ = roof_answer(pg, roof_of(body), sk=sk, standard=standard, w2=w2)
    return data


def site_request(body, config):
    """``POST /api/site``: the SiteResult of a request, by the server's layers and DEM."""
    from neve.engine.choices import choose_key
    from neve.geo.site.ask import ask_site

    body = check_keys(body, SITE_REQUEST_KEYS, "POST /api/site")
    on_record = text(body, "on_record")
    if on_record is not None:
        from neve.engine.on_record import parse_on_record

        on_record = parse_on_record(on_record, "on-record")
    dem_units = text(body, "dem_units")
    if dem_units is not None:
        from neve.geo.site.elevation import canonical_dem_unit

        dem_units = canonical_dem_unit(dem_units)
    dem = config.pick_dem(body.get("dem"))
    if dem_units is None and dem is not None and dem != "demo":
        dem_units = config.dem_units
    source = text(body, "elevation_source") or "larger"
    source = choose_key("elevation-source", source.lower(), ["larger", "input"])
    roof = roof_of(body)
    return ask_site(
        at=text(body, "at"),
        address=text(body, "address"),
        gazetteer=config.gazetteer,
        geocoder_url=config.geocoder_url,
        country=text(body, "country"),
        region=text(body, "region"),
        site_name=text(body, "site_name"),
        elevation=text(body, "elevation"),
        dem=dem,
        dem_units=dem_units,
        layers=config.pick_layers(body.get("layer")),
        roof=roof,
        project=text(body, "project"),
        elevation_source=source,
        standard=_standard(body),
        on_record_psf=on_record,
    )
