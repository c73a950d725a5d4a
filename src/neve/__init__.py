"""neve: from a building site to its design snow loads.

The public API carries the CLI's names; heavy parts load only when used, so
``import neve`` (and ``neve roof``) stay fast::

    import neve
    roof = neve.Roof.from_mapping({"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"})
    neve.analyze_roof(35.0, roof)                      # neve roof
    neve.resolve_site(47.52, -140.05, dem="demo")      # neve site
    neve.screen("sites.csv", roof="profiles.toml")     # neve screen
    neve.check_layer("zones.gpkg")                     # neve layer check
    neve.verify()                                      # neve verify
    neve.get_standard("ASCE 7-16")                     # the standards registry

The parts: :mod:`neve.engine` (the standards: pure computation),
:mod:`neve.geo` (zone layers, one site, screening), :mod:`neve.maps` (maps and
the calculation package) and :mod:`neve.cli` (the command line).
"""

from __future__ import annotations

import importlib

from neve.engine.errors import InputError, LayerError, MissingDataError, NeveError, UnsupportedError

#: public name -> module that defines it (imported on first use)
_LAZY = {
    "Roof": "neve.engine.roof_spec",
    "RoofResult": "neve.engine.roof",
    "analyze_roof": "neve.engine.roof",
    "uniform_loads": "neve.engine.roof",
    "screening_flags": "neve.engine.roof",
    "resolve_site": "neve.geo.site.one",
    "SiteResult": "neve.geo.site.one",
    "resolve_points": "neve.geo.site.resolve",
    "screen": "neve.geo.screen.run",
    "load_layer": "neve.geo.layers.model",
    "check_layer": "neve.geo.layers.check",
    "verify": "neve.maps.verification",
    "get_standard": "neve.engine.standards",
    "standards": "neve.engine.standards",
}

__all__ = [
    "InputError",
    "LayerError",
    "MissingDataError",
    "NeveError",
    "UnsupportedError",
    *sorted(_LAZY),
]


def __getattr__(name: str):
    if name in _LAZY:
        value = getattr(importlib.import_module(_LAZY[name]), name)
        globals()[name] = value
        return value
    raise AttributeError(f"module 'neve' has no attribute {name!r}")


def __dir__():
    return sorted(set(globals()) | set(_LAZY))
