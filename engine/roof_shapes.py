"""The roof description of curved, dome and multi-span roofs (issue 12).

:mod:`neve.engine.roof_spec` asks this module for the shapes it adds to the
four plane ones, their ROOF.toml keys and option names, how to parse them and
what follows from them, so that the plane-roof code there stays as it was.

Shapes and their inputs (lengths [ft], slopes [deg]):

* ``curved`` (also ``arch``): a circular arc from eave to eave, fixed by two of
  ``rise`` (eave to crown), ``chord`` (eave to eave) and ``eave_slope`` (the
  tangent at the eave); rise and chord are the usual pair, and all three
  given are checked against each other.  ``eave_abutted`` says whether the
  ground or another roof meets the roof at or within 3 ft of its eaves.
* ``dome``: the same arc as the dome's meridian, ``rise`` and ``diameter`` (the
  base diameter; ``chord`` is accepted for it too).
* ``sawtooth`` (also ``folded-plate`` and ``barrel-vault``: one family, the
  multiple folded plate, sawtooth and barrel vault roofs, whose provisions
  treat them alike): ``slope`` of the faces from valley to ridge (for barrel
  vaults the straight line from valley to crown), ``ridge_height`` hr (valley
  to ridge), optionally ``spans`` (how many) and ``eave_to_ridge`` (here the
  horizontal ridge-to-valley distance; ``hr / tan(slope)`` when not given).

What follows is set on the roof when it is built (:func:`check_shape_fields`):
a curved roof's or dome's ``slope`` is the slope of the straight line from an
eave to the crown (the angle the minimum-load and rain-on-snow provisions
read for a curved roof), its ``eave_to_ridge`` the eave-to-crown distance
(half the chord), and its ``rise`` and ``chord`` those of the arc
(:func:`roof_arc` gives the arc, with its eave slope).
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from neve.engine.errors import InputError
from neve.engine.roof_geometry import arc_from, ridge_to_valley
from neve.engine.roof_limits import RANGES
from neve.engine.units import length_json, parse_length, parse_slope

#: shapes whose profile is a circular arc
CURVED_SHAPES = ("curved", "dome")
#: the multi-span family (multiple folded plate, sawtooth and barrel vault roofs)
MULTISPAN_SHAPES = ("sawtooth",)
#: other names accepted for the new shapes -> the shape neve works them as
SHAPE_ALIASES = {"arch": "curved", "folded-plate": "sawtooth", "barrel-vault": "sawtooth"}
#: the ROOF.toml keys (and option names, ``-`` for ``_``) of the new shapes
SHAPE_KEYS = ("rise", "chord", "diameter", "eave_slope", "eave_abutted", "ridge_height", "spans")
#: which shapes each key (and Roof attribute) belongs to
_KEY_SHAPES = {
    "rise": (*CURVED_SHAPES, "cylindrical"),  # cylindrical: EN 1991-1-3's h and b
    "chord": (*CURVED_SHAPES, "cylindrical"),
    "diameter": ("dome",),
    "eave_slope": CURVED_SHAPES,
    "eave_abutted": CURVED_SHAPES,
    "ridge_height": MULTISPAN_SHAPES,
    "spans": MULTISPAN_SHAPES,
}


def _not_for(key: str, shape: str) -> InputError:
    shapes = _KEY_SHAPES[key]
    return InputError(
        key,
        f"applies to {' and '.join(shapes)} roofs, not to a {shape} roof",
        f"shape {' or '.join(shapes)} with {key}, or leave {key} out",
    )


def _spans(value) -> int:
    """A whole number of spans (``3``, ``"3"``, ``3.0``) checked against ``RANGES["spans"]``."""
    bound = RANGES["spans"]
    if isinstance(value, bool):
        raise InputError("spans", f"{value!r} is not a whole number", bound.text())
    try:
        x = float(str(value).strip())
    except ValueError:
        x = math.nan
    if not (math.isfinite(x) and x.is_integer()):
        raise InputError("spans", f"{value!r} is not a whole number", bound.text())
    bound.check(x, "spans")
    return int(x)


def shape_fields(shape: str, data: Mapping) -> dict:
    """The :class:`~neve.engine.roof_spec.Roof` keywords of the new shapes' keys in ``data``.

    ``data`` holds the option names with ``_`` for ``-``; lengths and slopes
    are text with units.  A key given for a shape it does not belong to is an
    :class:`InputError` naming it.
    """
    out: dict = {}
    for key, shapes in _KEY_SHAPES.items():
        if key in data and data[key] is not None and shape not in shapes:
            raise _not_for(key, shape)
    if "chord" in data and "diameter" in data:
        raise InputError("diameter", "give diameter or chord, not both",
                         "diameter (a dome's base) or chord")  # fmt: skip
    if "rise" in data:
        out["rise"] = parse_length(data["rise"], "rise", bound=RANGES["rise"])
    for key in ("chord", "diameter"):
        if key in data:
            out["chord"] = parse_length(data[key], key, bound=RANGES["chord"])
    if "eave_slope" in data:
        out["eave_slope"] = parse_slope(data["eave_slope"], "eave_slope")
    if "ridge_height" in data:
        out["ridge_height"] = parse_length(
            data["ridge_height"], "ridge_height", bound=RANGES["ridge_height"]
        )
    if "spans" in data:
        out["spans"] = _spans(data["spans"])
    if shape in CURVED_SHAPES and data.get("eave_to_ridge") is not None:
        raise InputError(
            "eave_to_ridge",
            f"a {shape} roof's eave-to-crown distance is half its "
            f"{'diameter' if shape == 'dome' else 'chord'}",
            "rise and " + ("diameter" if shape == "dome" else "chord") + ", without eave_to_ridge",
        )
    if shape in CURVED_SHAPES:  # missing lengths are named before the roof is built
        arc_from(out.get("rise"), out.get("chord"), out.get("eave_slope"),
                 chord_name="diameter" if shape == "dome" else "chord", roof_word=shape)  # fmt: skip
    if shape in MULTISPAN_SHAPES and "ridge_height" not in out and "slope" in data:
        raise InputError(
            "ridge_height",
            f"needed for a {shape} roof (the ridge-to-valley height hr, which limits the "
            "valley snow)",
            "a length such as 6ft",
        )
    return out


def roof_arc(roof):
    """The :class:`~neve.engine.roof_geometry.Arc` of a curved roof or dome (None otherwise)."""
    if roof.shape not in CURVED_SHAPES:
        return None
    return arc_from(roof.rise, roof.chord, roof.eave_slope,
                    chord_name="diameter" if roof.shape == "dome" else "chord",
                    roof_word=roof.shape)  # fmt: skip


def check_shape_fields(roof) -> dict:
    """Check a roof's new-shape attributes; return the attributes that follow from them.

    For a curved roof or dome: the arc's ``rise`` and ``chord``, ``slope``
    (the eave-to-crown line) and ``eave_to_ridge`` (half the chord); a given
    ``eave_slope`` is kept as given (checked against the arc).  For a sawtooth roof:
    ``eave_to_ridge`` (ridge to valley, ``hr / tan(slope)``) where it was not
    given.  Attributes of another shape are refused.
    """
    shape = roof.shape
    for key, shapes in _KEY_SHAPES.items():
        if key == "diameter":
            continue
        if getattr(roof, key) is not None and shape not in shapes:
            raise _not_for(key, shape)
    for key in ("rise", "chord", "ridge_height"):
        value = getattr(roof, key)
        if value is not None:
            RANGES[key].check(value, key)
    if roof.spans is not None:
        _spans(roof.spans)
    out: dict = {}
    if shape in CURVED_SHAPES:
        arc = arc_from(roof.rise, roof.chord, roof.eave_slope,
                       chord_name="diameter" if shape == "dome" else "chord", roof_word=shape)  # fmt: skip
        out = {"rise": arc.rise, "chord": arc.chord, "slope": arc.crown_angle,
               "eave_to_ridge": arc.half_chord}  # fmt: skip
    elif shape in MULTISPAN_SHAPES:
        if roof.ridge_height is None:
            raise InputError("ridge_height", f"needed for a {shape} roof", "a length such as 6ft")
        if roof.eave_to_ridge is None:
            w = ridge_to_valley(roof.ridge_height, roof.slope)
            if w is not None and RANGES["eave_to_ridge"].contains(w):
                out["eave_to_ridge"] = w
    return {k: v for k, v in out.items() if getattr(roof, k) != v}


def shape_json(roof) -> dict:
    """The roof description keys of the new shapes (``{}`` for a plane roof).

    Curved roof or dome: ``rise``, ``chord`` (a dome's base diameter),
    ``eave_slope_deg`` (the arc's) and ``eave_abutted``; multi-span roof:
    ``ridge_height`` and ``spans``.
    """
    if roof.shape in CURVED_SHAPES:
        arc = roof_arc(roof)
        return {"rise": length_json(arc.rise), "chord": length_json(arc.chord),
                "eave_slope_deg": round(arc.eave_slope, 3), "eave_abutted": roof.eave_abutted}  # fmt: skip
    if roof.shape in MULTISPAN_SHAPES:
        return {"ridge_height": length_json(roof.ridge_height), "spans": roof.spans}
    return {}


def shape_text(roof_json: Mapping) -> str | None:
    """One line describing a curved, dome or multi-span roof's geometry (None for others)."""
    from neve.engine.format import quantity_text, slope_text

    if roof_json.get("rise"):
        word = "diameter" if roof_json.get("shape") == "dome" else "chord"
        abut = {True: "ground or a roof abuts the eave", False: "eave clear",
                None: "abutment at the eave not stated"}[roof_json.get("eave_abutted")]  # fmt: skip
        return (f"  arc: rise {quantity_text(roof_json['rise'])}, {word} "
                f"{quantity_text(roof_json.get('chord'))}, eave slope "
                f"{slope_text(roof_json.get('eave_slope_deg'))} (the slope above is the line "
                f"from eave to crown); {abut}")  # fmt: skip
    if roof_json.get("ridge_height"):
        spans = roof_json.get("spans")
        return (f"  multi-span: ridge height hr {quantity_text(roof_json['ridge_height'])}, "
                f"ridge to valley {quantity_text(roof_json.get('eave_to_ridge'))}"
                + (f", {spans} spans" if spans else ""))  # fmt: skip
    return None
