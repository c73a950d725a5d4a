"""The description of a roof, parsed from options or a ROOF.toml mapping.

A :class:`Roof` holds everything the ASCE 7-16 Chapter 7 provisions need to
know about the roof, in the standard's units (ft, degrees, ft2.h.F/Btu).
:meth:`Roof.from_mapping` turns the option names of the CLI and ROOF.toml
(``shape``, ``slope``, ``eave_to_ridge``, ``[[step]]`` ...) into one,
validating every field; it reads no file (the caller parses the TOML).

Every number is checked against :data:`neve.engine.roof_limits.RANGES` (and a
flat roof against ``FLAT_SLOPE_MAX_DEG``) when a :class:`Roof`,
:class:`RoofStep`, :class:`Parapet` or :class:`Projection` is built, so a
roof built directly from Python is held to the same ranges as one read from
options.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field, replace

from neve.engine.choices import choose_key
from neve.engine.errors import InputError, UnsupportedError
from neve.engine.roof_limits import (
    BOOL_PAIRS,
    FLAT_SLOPE_MAX_DEG,
    PG_MAX_PSF,
    RANGES,
    flat_too_steep,
    merge_roof_levels,
    norm_keys,
    slope_check,
)
from neve.engine.roof_shapes import (
    CURVED_SHAPES,
    MULTISPAN_SHAPES,
    SHAPE_ALIASES,
    SHAPE_KEYS,
    check_shape_fields,
    shape_fields,
)
from neve.engine.units import parse_length, parse_load, parse_slope, slope_is_ratio

__all__ = [
    "FLAT_SLOPE_MAX_DEG", "PG_MAX_PSF", "RANGES", "SHAPES", "Parapet", "Projection", "Roof",
    "RoofStep", "as_roof", "merge_roof_levels", "parse_pg",
]  # fmt: skip

#: roof shapes covered by the engine
SHAPES = ("flat", "monoslope", "gable", "hip", *CURVED_SHAPES, *MULTISPAN_SHAPES)
#: shapes that ASCE 7-16 covers but neve does not yet: refused with a clear message
#: (none since issue 12; kept for callers that ask)
UNSUPPORTED_SHAPES: tuple[str, ...] = ()
SURFACES = ("slippery", "other")
RISKS = ("I", "II", "III", "IV")

_ROOF_KEYS = {
    "shape", "slope", "surface", "ct", "thermal", "ce", "terrain", "exposure", "risk",
    "eave_to_ridge", "r_value", "ventilated", "unobstructed", "prismatic", "name",
    "step", "parapet", "projection", "overhang", *BOOL_PAIRS.values(),
    *SHAPE_KEYS,
}  # fmt: skip


def _length(entry: Mapping, key: str, where: str, range_key: str, default=None, need=None):
    """Parse ``entry[key]`` as a length [ft] and check it against ``RANGES[range_key]``.

    ``need``: an example length, for a key that must be given.
    """
    text = entry.get(key, default)
    name = f"{where}.{key}" if where else key
    if text is None:
        if need:
            raise InputError(name, "missing", f"a length such as {need}")
        return None
    return parse_length(text, name, bound=RANGES[range_key])


def _check(obj, prefix: str, names: dict[str, str]) -> None:
    """Check the attributes of a roof part against RANGES (``names``: attribute -> range key)."""
    for attr, key in names.items():
        value = getattr(obj, attr)
        if value is not None:
            RANGES[key].check(value, f"{prefix}{attr}" if prefix else attr)


def _float(value, name: str) -> float:
    """A plain number (``ct``, ``ce``, ``r_value``) checked against ``RANGES[name]``."""
    bound = RANGES[name]
    if isinstance(value, bool):
        raise InputError(name, f"{value!r} is not a number", bound.text())
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(name, f"{value!r} is not a number", bound.text()) from None
    return bound.check(x, name, value if isinstance(value, str) else None)


def _bool(value, name: str) -> bool | None:
    if value is None or isinstance(value, bool):
        return value
    text = str(value).strip().lower()
    if text in ("true", "yes", "1"):
        return True
    if text in ("false", "no", "0"):
        return False
    raise InputError(name, f"{value!r} is not true or false", "true, false")


@dataclass(frozen=True)
class RoofStep:
    """A higher roof (or adjacent higher structure) beside this, lower, roof.

    Lengths in [ft], slope in [degrees].
    """

    name: str
    height: float  # lower roof surface to top of the upper roof (incl. parapet) [ft]
    upper_length: float  # length of the upper roof upwind of the step [ft]
    lower_length: float  # length of this lower roof [ft]
    separation: float = 0.0  # horizontal gap to an adjacent structure [ft]
    upper_slope: float | None = None  # slope of the upper roof [deg], for sliding
    upper_surface: str = "other"
    upper_eave_to_ridge: float | None = None  # W of the upper roof [ft], for sliding
    upper_slides_toward: bool = True  # the upper roof's eave is at the step
    upper_pf: float | None = None  # flat roof load of the upper roof [psf], for sliding

    def __post_init__(self):
        _check(self, "step.", {a: f"step.{a}" for a in (
            "height", "upper_length", "lower_length", "separation", "upper_eave_to_ridge",
            "upper_pf")})  # fmt: skip
        if self.upper_slope is not None:
            slope_check(self.upper_slope, "step.upper_slope")
        choose_key("step.upper_surface", self.upper_surface, SURFACES)


@dataclass(frozen=True)
class Parapet:
    name: str
    height: float  # parapet height above the roof surface [ft]
    upwind_length: float  # roof length upwind of the parapet [ft]

    def __post_init__(self):
        _check(self, "parapet.", {a: f"parapet.{a}" for a in ("height", "upwind_length")})


@dataclass(frozen=True)
class Projection:
    name: str
    height: float  # projection height above the roof surface [ft]
    plan_length: float  # plan length of the projection's side [ft]
    upwind_length: float  # roof length upwind of the projection [ft]

    def __post_init__(self):
        names = ("height", "plan_length", "upwind_length")
        _check(self, "projection.", {a: f"projection.{a}" for a in names})


@dataclass(frozen=True)
class Roof:
    """A roof in ASCE 7 units; see :meth:`from_mapping` for the option names."""

    shape: str = "flat"
    slope: float = 0.0  # [deg]
    surface: str = "other"
    ct: float | None = None
    thermal: str | None = None
    ce: float | None = None
    terrain: str | None = None
    exposure: str | None = None
    risk: str | None = None
    eave_to_ridge: float | None = None  # W [ft]
    r_value: float | None = None  # [ft2.h.F/Btu]
    ventilated: bool | None = None
    unobstructed: bool | None = None
    prismatic: bool | None = None
    name: str = "roof"
    steps: tuple[RoofStep, ...] = field(default_factory=tuple)
    parapets: tuple[Parapet, ...] = field(default_factory=tuple)
    projections: tuple[Projection, ...] = field(default_factory=tuple)
    overhang: float | None = None  # overhang length beyond the exterior wall [ft]
    shape_stated: bool = True  # False when the shape defaulted to flat
    #: the slope was given as a rise:run (``6:12``): text shows it as ``6:12 (26.6°)``
    slope_pitch: bool = field(default=False, compare=False)
    # curved and dome roofs (a circular arc; see neve.engine.roof_shapes) and multi-span
    # (sawtooth, folded plate, barrel vault) roofs, issue 12
    rise: float | None = None  # eave to crown [ft]
    chord: float | None = None  # eave to eave [ft]; a dome: its base diameter
    eave_slope: float | None = None  # tangent slope at the eave [deg]
    eave_abutted: bool | None = None  # ground or another roof at or within 3 ft of the eave
    ridge_height: float | None = None  # ridge-to-valley height hr [ft]
    spans: int | None = None  # number of spans of a multi-span roof

    def __post_init__(self):
        choose_key("shape", self.shape, SHAPES)
        choose_key("surface", self.surface, SURFACES)
        slope_check(self.slope, "slope")
        _check(self, "", {"ce": "ce", "ct": "ct", "r_value": "r_value",
                          "eave_to_ridge": "eave_to_ridge"})  # fmt: skip
        if self.overhang is not None:
            RANGES["overhang.length"].check(self.overhang, "overhang.length")
        if self.shape == "flat" and self.slope > FLAT_SLOPE_MAX_DEG:
            flat_too_steep(self.slope, self.shape_stated)
        for attr, value in check_shape_fields(self).items():  # derived: slope, W, the arc
            object.__setattr__(self, attr, value)

    def replace(self, **changes) -> Roof:
        return replace(self, **changes)

    @classmethod
    def from_mapping(cls, data: Mapping) -> Roof:
        """Build a roof from option names (``_`` for ``-``) and ROOF.toml tables.

        Values with units are text (``"30ft"``, ``"6:12"``); ``ct``, ``ce``
        and ``r_value`` are plain numbers.  ``None`` means "not given".
        Unknown keys are an :class:`InputError` naming them.
        """
        if not isinstance(data, Mapping):
            raise InputError(
                "roof",
                f"{type(data).__name__} is not a table of roof options",
                "a mapping such as ROOF.toml gives",
            )
        data = norm_keys(data)
        unknown = sorted(set(data) - _ROOF_KEYS)
        if unknown:
            raise InputError(
                "roof", f"unknown key(s) {', '.join(unknown)}", ", ".join(sorted(_ROOF_KEYS))
            )
        shape = str(data.get("shape", "flat")).strip().lower()
        shape = SHAPE_ALIASES.get(shape.replace("_", "-").replace(" ", "-"), shape)
        if shape in UNSUPPORTED_SHAPES:
            from neve.engine.standards import get_standard

            ref = get_standard().ref("shapes_not_covered")
            raise UnsupportedError(
                "shape", f"{shape!r} roofs are not covered by neve yet ({ref})", ", ".join(SHAPES)
            )
        shape = choose_key("shape", shape, SHAPES)
        shaped = shape_fields(shape, data)  # rise, chord, ridge_height ... (issue 12)
        if "slope" in data and shape in CURVED_SHAPES:
            raise InputError(
                "slope",
                f"a {shape} roof's slopes follow from its rise and "
                f"{'diameter' if shape == 'dome' else 'chord'}",
                "rise with " + ("diameter" if shape == "dome" else "chord")
                + " (and eave_slope), without slope",
            )
        if shape in CURVED_SHAPES:
            slope = 0.0  # the eave-to-crown line, set from the arc when the roof is built
        elif "slope" in data:
            slope = parse_slope(data["slope"], "slope")
            if shape == "flat" and slope > FLAT_SLOPE_MAX_DEG:
                flat_too_steep(slope, "shape" in data, data["slope"])
        elif shape == "flat":
            slope = 0.0
        else:
            raise InputError(
                "slope", f"required for a {shape} roof", "rise:run such as 6:12, or 26.6deg"
            )
        kw: dict = {"shape": shape, "slope": slope, "shape_stated": "shape" in data}
        kw["slope_pitch"] = "slope" in data and slope_is_ratio(data["slope"])
        kw["surface"] = choose_key("surface", data.get("surface", "other"), SURFACES)
        if "ct" in data and "thermal" in data:
            raise InputError("ct", "give ct or thermal, not both", "one of ct, thermal")
        if "ce" in data and ("terrain" in data or "exposure" in data):
            raise InputError(
                "ce", "give ce or terrain/exposure, not both", "ce, or terrain with exposure"
            )
        for key, opposite in BOOL_PAIRS.items():
            if key in data and opposite in data:
                raise InputError(
                    key, f"give {key} or {opposite}, not both", f"one of {key}, {opposite}"
                )
        if "ct" in data:
            kw["ct"] = _float(data["ct"], "ct")
        if "ce" in data:
            kw["ce"] = _float(data["ce"], "ce")
        from neve.engine.standards import get_standard

        # the choice words of the standard's own roof options, asked of the registry
        words = {o.name: o.choices for o in get_standard().roof_options if o.kind == "choice"}
        for key in ("thermal", "terrain", "exposure"):
            if key in data:
                kw[key] = choose_key(key, data[key], list(words[key]))
        if "risk" in data:
            kw["risk"] = choose_key("risk", str(data["risk"]).upper(), RISKS)
        kw["eave_to_ridge"] = _length(data, "eave_to_ridge", "", "eave_to_ridge")
        if "r_value" in data:
            kw["r_value"] = _float(data["r_value"], "r_value")
        for key, opposite in BOOL_PAIRS.items():
            if key in data:
                kw[key] = _bool(data[key], key)
            elif opposite in data:
                said = _bool(data[opposite], opposite)
                kw[key] = None if said is None else not said
        if "name" in data:
            kw["name"] = str(data["name"])
        kw["steps"] = tuple(_steps(data.get("step", [])))
        kw["parapets"] = tuple(_parapets(data.get("parapet", [])))
        kw["projections"] = tuple(_projections(data.get("projection", [])))
        if "overhang" in data:
            oh = data["overhang"]
            if isinstance(oh, Mapping):
                _check_keys(oh, "overhang", {"length"})
                if "length" not in oh:
                    raise InputError("overhang.length", "missing", "a length such as 2ft")
                oh = oh["length"]
            kw["overhang"] = _length({"length": oh}, "length", "overhang", "overhang.length")
        kw.update(shaped)
        return cls(**kw)


def _table_list(value, name: str) -> list[Mapping]:
    if isinstance(value, Mapping):
        value = [value]
    if not isinstance(value, (list, tuple)) or not all(isinstance(v, Mapping) for v in value):
        raise InputError(name, "must be a table or an array of tables", f"[[{name}]] entries")
    return list(value)


def _check_keys(entry: Mapping, where: str, keys: set[str]) -> None:
    unknown = sorted(set(entry) - keys)
    if unknown:
        raise InputError(where, f"unknown key(s) {', '.join(unknown)}", ", ".join(sorted(keys)))


def _part(cls, where: str, **kw):
    """Build a roof part; its own range errors get the entry's name (``step[0].height``)."""
    try:
        return cls(**kw)
    except InputError as exc:
        name = exc.field.split(".", 1)[-1]
        raise InputError(f"{where}.{name}", exc.problem, exc.accepted) from None


def _steps(value) -> list[RoofStep]:
    out = []
    keys = {"name", "height", "upper_length", "lower_length", "separation", "upper_slope",
            "upper_surface", "upper_eave_to_ridge", "upper_slides_toward", "upper_pf"}  # fmt: skip
    for i, e in enumerate(_table_list(value, "step")):
        w = f"step[{i}]"
        e = {str(k).replace("-", "_"): v for k, v in e.items()}
        _check_keys(e, w, keys)
        up_slope = e.get("upper_slope")
        out.append(
            _part(
                RoofStep,
                w,
                name=str(e.get("name", f"step {i + 1}")),
                height=_length(e, "height", w, "step.height", need="10ft"),
                upper_length=_length(e, "upper_length", w, "step.upper_length", need="120ft"),
                lower_length=_length(e, "lower_length", w, "step.lower_length", need="60ft"),
                separation=_length(e, "separation", w, "step.separation", "0ft"),
                upper_slope=None if up_slope is None else parse_slope(up_slope, f"{w}.upper_slope"),
                upper_surface=choose_key(
                    f"{w}.upper_surface", e.get("upper_surface", "other"), SURFACES
                ),
                upper_eave_to_ridge=_length(
                    e, "upper_eave_to_ridge", w, "step.upper_eave_to_ridge"
                ),
                upper_pf=None
                if e.get("upper_pf") is None
                else parse_load(e["upper_pf"], f"{w}.upper_pf", bound=RANGES["step.upper_pf"]),
                upper_slides_toward=bool(
                    _bool(e.get("upper_slides_toward", True), f"{w}.upper_slides_toward")
                ),
            )
        )
    return out


def _parapets(value) -> list[Parapet]:
    out = []
    for i, e in enumerate(_table_list(value, "parapet")):
        w = f"parapet[{i}]"
        _check_keys(e, w, {"name", "height", "upwind_length"})
        out.append(
            _part(
                Parapet,
                w,
                name=str(e.get("name", f"parapet {i + 1}")),
                height=_length(e, "height", w, "parapet.height", need="3ft"),
                upwind_length=_length(e, "upwind_length", w, "parapet.upwind_length", need="100ft"),
            )
        )
    return out


def _projections(value) -> list[Projection]:
    out = []
    for i, e in enumerate(_table_list(value, "projection")):
        w = f"projection[{i}]"
        _check_keys(e, w, {"name", "height", "plan_length", "upwind_length"})
        out.append(
            _part(
                Projection,
                w,
                name=str(e.get("name", f"projection {i + 1}")),
                height=_length(e, "height", w, "projection.height", need="4ft"),
                plan_length=_length(e, "plan_length", w, "projection.plan_length", need="20ft"),
                upwind_length=_length(
                    e, "upwind_length", w, "projection.upwind_length", need="80ft"
                ),
            )
        )
    return out


def parse_pg(text, field: str = "pg") -> float:
    """Parse a ground snow load with its unit into psf (0 to 2000 psf, ``RANGES["pg"]``)."""
    return parse_load(text, field, bound=RANGES["pg"])


def as_roof(roof) -> Roof:
    """A :class:`Roof`, or a mapping of roof options turned into one."""
    if isinstance(roof, Roof):
        return roof
    if isinstance(roof, Mapping):
        return Roof.from_mapping(roof)
    raise InputError(
        "roof",
        f"{type(roof).__name__} is not a roof",
        "an engine.Roof or a mapping of roof options",
    )
