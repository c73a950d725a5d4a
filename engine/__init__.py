"""neve's roof snow load engine: pure computation, numpy only.

Public API::

    from neve.engine import Roof, analyze_roof, uniform_loads
    roof = Roof.from_mapping({"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"})
    result = analyze_roof(35.0, roof)          # pg in psf -> RoofResult
    result.to_json()                           # the JSON contract of `neve roof`
    uniform_loads(np.array([20.0, 35.0]), roof)  # arrays of pf, ps, pm, ... [psf]

Nothing here reads files, prints, or imports GIS libraries.
"""

from neve.engine.errors import InputError, LayerError, MissingDataError, NeveError, UnsupportedError
from neve.engine.roof import RoofResult, analyze_roof, screening_flags, uniform_loads
from neve.engine.roof_spec import Roof

__all__ = [
    "InputError",
    "LayerError",
    "MissingDataError",
    "NeveError",
    "Roof",
    "RoofResult",
    "UnsupportedError",
    "analyze_roof",
    "screening_flags",
    "uniform_loads",
]
