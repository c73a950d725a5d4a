"""Roof descriptions from a ROOF.toml file and the roof options (library code, not CLI).

The engine never reads a file (:mod:`neve.engine` is pure), so the reader of
ROOF.toml lives here, beside the parts of the package rather than inside one:
``neve roof``, ``neve site`` and ``neve screen`` call it, and so do
:func:`neve.geo.screen.run.screen` (a ``roof=`` path) and any Python user::

    from neve.roof_file import read_roof, read_roofs
    roof = read_roof("roof.toml", {"risk": "III"})       # one Roof (options override the file)
    roofs = read_roofs("profiles.toml")                  # a Roof, or {profile name: Roof}

Keys are the roof options' names with ``_`` for ``-`` (:data:`ROOF_KEYS`) plus
the ``[[step]]``, ``[[parapet]]``, ``[[projection]]`` and ``[overhang]`` tables;
a screening file may hold ``[profile.NAME]`` tables instead, one roof each.

A roof option of kind ``parameter set`` (EN 1991-1-3 ``annex``) names one of
its standard's shipped parameter sets (``Standard.parameter_sets``: TOML files
that are package data) or a TOML file of one; it is read here
(:func:`parameter_set_data`) and handed to the roof as a mapping, which the
standard checks.
"""

from __future__ import annotations

import tomllib
from collections.abc import Mapping
from importlib import resources
from pathlib import Path

from neve.engine.errors import InputError
from neve.engine.roof_shapes import SHAPE_KEYS
from neve.engine.roof_spec import Roof, merge_roof_levels

#: the roof options' names as keyword arguments, and as ROOF.toml keys
ROOF_KEYS = (
    "shape", "slope", "surface", "ct", "thermal", "ce", "terrain", "exposure", "risk",
    "eave_to_ridge", "r_value", "ventilated", "unobstructed", "prismatic",
    "topography", "annex", "snow_case", "return_period", "cov", "other_slope",
    "altitude", "guard_width",
) + SHAPE_KEYS  # fmt: skip  (curved, dome and multi-span roofs: neve.engine.roof_shapes)


def _set_folders(option: str):
    """(package, folder) of every standard whose roof option ``option`` is a parameter set."""
    from neve.engine.standards import standards

    out = []
    for std in standards():
        for opt in std.roof_options:
            if opt.name == option and opt.kind == "parameter set" and std.parameter_sets:
                package, _, folder = std.parameter_sets.partition(":")
                out.append((package, folder))
    return out


def shipped_parameter_sets(option: str = "annex") -> dict[str, dict]:
    """The parameter sets shipped for ``option``: name -> the set's mapping as read.

    >>> "recommended" in shipped_parameter_sets()
    True
    """
    out: dict[str, dict] = {}
    for package, folder in _set_folders(option):
        root = resources.files(package).joinpath(folder)
        for entry in sorted(root.iterdir(), key=lambda e: e.name):
            if entry.name.endswith(".toml"):
                out.setdefault(entry.name[:-5], tomllib.loads(entry.read_text(encoding="utf-8")))
    return out


def parameter_set_data(value, field: str = "annex") -> Mapping:
    """The mapping of a parameter set: a shipped set by name, or a TOML file of one.

    A mapping is returned as it is (a ROOF.toml may hold the set inline). A
    name that is neither a shipped set nor an existing ``.toml`` file is an
    InputError listing the shipped sets.
    """
    if isinstance(value, Mapping):
        return value
    text = str(value).strip()
    shipped = shipped_parameter_sets(field)
    for name, data in shipped.items():
        if name.casefold() == text.casefold():
            return data
    if text.lower().endswith(".toml") or Path(text).is_file():
        return read_toml(text, field)
    raise InputError(
        field,
        f"{text!r} is not a shipped parameter set or a TOML file",
        ", ".join(shipped) + ", or a path to a parameter-set .toml file",
    )


def _with_sets(data: Mapping) -> dict:
    """``data`` with every parameter-set option read into its mapping."""
    out = dict(data)
    for key in list(out):
        if out[key] is not None and not isinstance(out[key], Mapping) and _set_folders(key):
            out[key] = parameter_set_data(out[key], key)
    return out


def read_toml(path: str | Path, field: str) -> dict:
    """Read a TOML file; a missing or malformed file is an InputError naming ``field``.

    The text is UTF-8; a byte-order mark at its start (as some Windows editors
    write) is dropped, since TOML itself does not allow one.
    """
    p = Path(path)
    if not p.is_file():
        raise InputError(field, f"file {str(p)!r} not found", "a path to a TOML file")
    try:
        return tomllib.loads(p.read_text(encoding="utf-8-sig"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise InputError(field, f"{str(p)!r} is not valid TOML ({exc})", "a TOML file") from None
    except OSError as exc:
        raise InputError(
            field, f"{str(p)!r} cannot be read ({exc.strerror})", "a readable TOML file"
        ) from None


def given_options(options: Mapping) -> dict:
    """The roof options that were given (not None), by :data:`ROOF_KEYS`."""
    return {k: options[k] for k in ROOF_KEYS if options.get(k) is not None}


def roof_mapping(roof_file: str | Path | None, options: Mapping | None = None) -> dict | None:
    """Merge a ROOF.toml (one roof, no profiles) and the given options into one mapping.

    The options override the file (:func:`neve.engine.roof_spec.merge_roof_levels`):
    ``ct`` replaces the file's ``thermal``, ``unventilated`` its
    ``ventilated = true``, and so on. None when neither describes a roof.
    """
    return _one_roof(read_toml(roof_file, "roof") if roof_file else {}, options)


def _one_roof(data: Mapping, options: Mapping | None) -> dict | None:
    """One roof's mapping (no profiles) with the given options over it; None if empty."""
    if "profile" in data:
        raise InputError(
            "roof",
            "this file defines profiles; name one in the site file's 'roof' column",
            "a ROOF.toml without [profile.*] tables",
        )
    given = given_options(options or {})
    if not data and not given:
        return None
    return merge_roof_levels(dict(data), given)


def roof_from_data(data: Mapping | None, options: Mapping | None = None) -> Roof | None:
    """The one roof a ROOF.toml's content as a mapping (e.g. a JSON object) and the options
    describe, read as :func:`read_roof` reads the file; None if they describe none.

    ``neve serve`` takes the ``roof`` object of a request and its roof keys this way.
    """
    if data is not None and not isinstance(data, Mapping):
        raise InputError("roof", f"{type(data).__name__} given", "an object with ROOF.toml keys")
    merged = _one_roof(data or {}, options)
    return None if merged is None else Roof.from_mapping(merged)


def read_roof(roof_file: str | Path | None, options: Mapping | None = None) -> Roof | None:
    """The one roof a ROOF.toml and the options describe, or None if they describe none."""
    data = roof_mapping(roof_file, options)
    return None if data is None else Roof.from_mapping(_with_sets(data))


def roofs_from_mapping(data: Mapping, overrides: Mapping | None = None) -> Roof | dict[str, Roof]:
    """One roof, or a dict of named profiles, from a ROOF.toml mapping.

    A file with ``[profile.NAME]`` tables gives one roof per profile; keys at
    the top of the file are shared defaults that each profile may override.
    ``overrides`` (command-line roof options) win over both, also across
    spellings (a profile's ``ct`` replaces a shared ``thermal``; see
    :func:`neve.engine.roof_spec.merge_roof_levels`).
    """
    data = dict(data)
    overrides = {k: v for k, v in dict(overrides or {}).items() if v is not None}
    profiles = data.pop("profile", None)
    if profiles is None:
        return Roof.from_mapping(_with_sets(merge_roof_levels(data, overrides)))
    if not isinstance(profiles, Mapping) or not profiles:
        raise InputError("roof", "[profile] must hold named tables", "[profile.NAME] tables")
    out = {}
    for name, table in profiles.items():
        if not isinstance(table, Mapping):
            raise InputError(f"profile.{name}", "is not a table", "[profile.NAME] with roof keys")
        try:
            levels = merge_roof_levels({"name": str(name)}, data, table, overrides)
            out[str(name)] = Roof.from_mapping(_with_sets(levels))
        except InputError as exc:
            raise InputError(f"profile.{name}.{exc.field}", exc.problem, exc.accepted) from None
    return out


def read_roofs(
    roof_file: str | Path | None, options: Mapping | None = None
) -> Roof | dict[str, Roof] | None:
    """A screening roof: one Roof, ``{profile: Roof}`` from ``[profile.*]`` tables, or None.

    ``options`` (the roof options given beside the file) override every profile.
    """
    given = given_options(options or {})
    if roof_file:
        return roofs_from_mapping(read_toml(roof_file, "roof"), given)
    return Roof.from_mapping(_with_sets(given)) if given else None
