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

#: roof shapes of the shared roof vocabulary (each standard says which it covers:
#: ``Standard.shapes``): ASCE 7 the first seven, EN 1991-1-3 flat, monoslope, gable,
#: multi-span and cylindrical
SHAPES = ("flat", "monoslope", "gable", "hip", *CURVED_SHAPES, *MULTISPAN_SHAPES,
          "multi-span", "cylindrical")  # fmt: skip
#: other words for the shapes: the Eurocode's (monopitch, duopitch), spellings, and the
#: family names of issue 12 (arch, folded plate, barrel vault)
SHAPE_ALIASES = {**SHAPE_ALIASES, "monopitch": "monoslope", "mono-pitch": "monoslope",
                 "duopitch": "gable", "duo-pitch": "gable", "pitched": "gable",
                 "multispan": "multi-span", "multi-pitch": "multi-span"}  # fmt: skip
#: shapes whose slope is not given but follows from their own geometry
SLOPE_FREE_SHAPES = ("cylindrical",)
#: shapes that ASCE 7-16 covers but neve does not yet: refused with a clear message
#: (none since issue 12; kept for callers that ask)
UNSUPPORTED_SHAPES: tuple[str, ...] = ()
#: the kinds of a standard's own roof option (``RoofOption.kind``) and how each is read
OPTION_KINDS = ("choice", "number", "yes/no", "length", "slope", "text", "parameter set")
SURFACES = ("slippery", "other")
#: shapes with two sides, each with its own eave-to-ridge distance
TWO_SIDED = ("gable", "hip")
#: what a roof step says of this, lower, roof: new, or an existing roof beside a new,
#: higher structure
LOWER_ROOFS = ("new", "existing")
_ONE_W = "an asymmetric roof needs two distances, one per side, and only one was given"
_TWO_W = 'two lengths such as 30ft,20ft (ROOF.toml: ["30ft", "20ft"]), or one for a symmetric roof'
RISKS = ("I", "II", "III", "IV")

_ROOF_KEYS = {
    "shape", "slope", "surface", "ct", "thermal", "ce", "terrain", "exposure", "risk",
    "eave_to_ridge", "r_value", "ventilated", "unobstructed", "prismatic", "name",
    "step", "parapet", "projection", "overhang", *BOOL_PAIRS.values(),
    *SHAPE_KEYS,
}  # fmt: skip


#: the keys of a ``[[step]]`` table (this roof is the lower one beside a higher roof)
STEP_KEYS = (
    "name", "height", "upper_length", "lower_length", "separation", "upper_slope",
    "upper_surface", "upper_eave_to_ridge", "upper_slides_toward", "upper_pf",
    "upper_parapet", "upper_ce", "upper_ct", "upper_is", "lower_roof", "meets",
)  # fmt: skip
#: the keys of a ``[[parapet]]`` table
PARAPET_KEYS = ("name", "height", "upwind_length", "meets", "drift_space")
#: the keys of a ``[[projection]]`` table
PROJECTION_KEYS = (
    "name", "height", "plan_length", "upwind_length", "length_left", "length_right",
    "plan_width", "length_front", "length_back",
)  # fmt: skip


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


def _eave_to_ridge(value) -> tuple[float | None, float | None]:
    """W [ft], or W of side A and side B of an asymmetric roof.

    One length (``30ft``) is a symmetric roof, as it always was; two, as a
    TOML array (``["30ft", "20ft"]``) or a comma-separated text
    (``30ft,20ft``), are the two sides of an asymmetric gable or hip roof.
    An array or text with one length only, or more than two, is refused.
    """
    if value is None:
        return None, None
    if isinstance(value, str) and "," in value:
        value = [v.strip() for v in value.split(",")]
    if isinstance(value, (list, tuple)):
        parts = [v for v in value if not (isinstance(v, str) and not v.strip())]
        if len(parts) == 1 or (len(parts) == 2 and len(value) > 2):
            raise InputError("eave_to_ridge", _ONE_W, _TWO_W)
        if len(parts) != 2:
            raise InputError(
                "eave_to_ridge", f"{len(parts)} distances given, at most two (one per side)", _TWO_W
            )
        bound = RANGES["eave_to_ridge"]
        a, b = (parse_length(v, "eave_to_ridge", bound=bound) for v in parts)
        return a, b
    return parse_length(value, "eave_to_ridge", bound=RANGES["eave_to_ridge"]), None


def _meets_check(meets, name: str) -> None:
    if not isinstance(meets, tuple) or not all(isinstance(m, str) for m in meets):
        raise InputError(name, f"{meets!r} is not a list of names", "names of steps and parapets")


def _places_check(roof) -> None:
    """Each ``meets`` names one other step or parapet of the roof, by a name used once."""
    walls = [p.name for p in (*roof.steps, *roof.parapets)]
    for kind, parts in (("step", roof.steps), ("parapet", roof.parapets)):
        for i, part in enumerate(parts):
            for other in part.meets:
                where = f"{kind}[{i}].meets"
                accepted = ", ".join(repr(w) for w in walls if w != part.name) or "none"
                if other == part.name:
                    raise InputError(where, f"{other!r} is this {kind} itself", accepted)
                if walls.count(other) == 0:
                    raise InputError(where, f"no step or parapet is named {other!r}", accepted)
                if walls.count(other) > 1:
                    raise InputError(
                        where, f"{other!r} names more than one step or parapet", "unique names"
                    )


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
    #: a parapet on the upper roof at the step [ft]: added to ``height`` for the drift
    upper_parapet: float | None = None
    #: the upper roof's own exposure, thermal and importance factors [-], for its pf
    #: (sliding); a factor not given is taken from this roof
    upper_ce: float | None = None
    upper_ct: float | None = None
    upper_is: float | None = None
    #: ``existing``: this lower roof is an existing roof and the higher structure is
    #: new (an addition or a new building beside it); ``new`` otherwise
    lower_roof: str = "new"
    #: names of the steps and parapets whose drifts meet this one at an inside corner
    meets: tuple[str, ...] = ()

    def __post_init__(self):
        _check(self, "step.", {a: f"step.{a}" for a in (
            "height", "upper_length", "lower_length", "separation", "upper_eave_to_ridge",
            "upper_pf", "upper_parapet", "upper_ce", "upper_ct", "upper_is")})  # fmt: skip
        if self.upper_slope is not None:
            slope_check(self.upper_slope, "step.upper_slope")
        choose_key("step.upper_surface", self.upper_surface, SURFACES)
        choose_key("step.lower_roof", self.lower_roof, LOWER_ROOFS)
        _meets_check(self.meets, "step.meets")
        if self.upper_pf is not None and self.upper_factors:
            given = ", ".join(f"upper_{k.lower()}" for k in self.upper_factors)
            raise InputError(
                "step.upper_pf",
                f"give upper_pf or the upper roof's factors ({given}), not both",
                "upper_pf, or upper_ce / upper_ct / upper_is",
            )

    @property
    def step_height(self) -> float:
        """The height the drift forms against [ft]: ``height`` plus any ``upper_parapet``."""
        return self.height + (self.upper_parapet or 0.0)

    @property
    def upper_factors(self) -> dict[str, float]:
        """The upper roof's own factors that were given (``Ce``, ``Ct``, ``Is``)."""
        pairs = (("Ce", self.upper_ce), ("Ct", self.upper_ct), ("Is", self.upper_is))
        return {k: v for k, v in pairs if v is not None}


@dataclass(frozen=True)
class Parapet:
    name: str
    height: float  # parapet height above the roof surface [ft]
    upwind_length: float  # roof length upwind of the parapet [ft]
    #: names of the steps and parapets whose drifts meet this one at an inside corner
    meets: tuple[str, ...] = ()
    #: roof length beside the parapet over which a drift can lie [ft] (EN 1991-1-3
    #: exceptional drifts; None: the upwind length)
    drift_space: float | None = None

    def __post_init__(self):
        names = ("height", "upwind_length", "drift_space")
        _check(self, "parapet.", {a: f"parapet.{a}" for a in names})
        _meets_check(self.meets, "parapet.meets")


#: the sides of a projection in plan: (side, the key of the roof length beside it,
#: the attribute holding the length of the projection's face on that side)
PROJECTION_SIDES = (
    ("left", "length_left", "plan_length"),
    ("right", "length_right", "plan_length"),
    ("front", "length_front", "plan_width"),
    ("back", "length_back", "plan_width"),
)


@dataclass(frozen=True)
class Projection:
    """A rooftop projection (a penthouse, a mechanical unit) seen in plan.

    Its two faces of length ``plan_length`` look onto the roof lengths
    ``length_left`` and ``length_right``; optionally its two faces of length
    ``plan_width`` look onto ``length_front`` and ``length_back``.  Lengths
    in [ft].  ``upwind_length`` is the older name of ``length_left``: a
    projection with one roof length only is worked as before, with that
    length as its fetch.
    """

    name: str
    height: float  # projection height above the roof surface [ft]
    plan_length: float  # length of the faces toward length_left / length_right [ft]
    upwind_length: float | None = None  # the older name of length_left [ft]
    length_left: float | None = None  # roof length beside the left face [ft]
    length_right: float | None = None  # roof length beside the right face [ft]
    plan_width: float | None = None  # length of the faces toward length_front / length_back [ft]
    length_front: float | None = None
    length_back: float | None = None

    def __post_init__(self):
        if self.upwind_length is not None and self.length_left is not None:
            if self.upwind_length != self.length_left:
                raise InputError(
                    "projection.upwind_length",
                    "upwind_length is the older name of length_left: give one of them",
                    "length_left and length_right",
                )
        left = self.length_left if self.length_left is not None else self.upwind_length
        object.__setattr__(self, "length_left", left)  # one value, both names
        object.__setattr__(self, "upwind_length", left)
        names = ("height", "plan_length", "length_left", "length_right", "plan_width",
                 "length_front", "length_back")  # fmt: skip
        _check(self, "projection.", {a: f"projection.{a}" for a in names})
        if self.length_left is None and self.length_right is None:
            raise InputError(
                "projection.length_left",
                "missing: the roof length on at least one side of the projection",
                "length_left and length_right (or upwind_length), lengths such as 80ft",
            )
        front = self.length_front is not None or self.length_back is not None
        if self.plan_width is not None and not front:
            raise InputError(
                "projection.length_front",
                "missing: plan_width needs the roof length in front of or behind the projection",
                "length_front and length_back, lengths such as 40ft",
            )
        if front and self.plan_width is None:
            raise InputError(
                "projection.plan_width",
                "missing: length_front / length_back need the width of those faces",
                "a length such as 10ft",
            )

    @property
    def one_sided(self) -> bool:
        """Described as before sides were: one roof length only, no plan_width."""
        given = [getattr(self, key) for _, key, _ in PROJECTION_SIDES]
        return sum(v is not None for v in given) == 1

    def sides(self) -> list[tuple[str, float, float, float | None]]:
        """``(side, face length, roof length beside it, roof length opposite)`` per side given [ft]."""
        opposite = {"left": "length_right", "right": "length_left",
                    "front": "length_back", "back": "length_front"}  # fmt: skip
        out = []
        for side, key, face in PROJECTION_SIDES:
            length = getattr(self, key)
            if length is not None:
                out.append((side, getattr(self, face), length, getattr(self, opposite[side])))
        return out


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
    eave_to_ridge: float | None = None  # W [ft]; side A's of an asymmetric roof
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
    #: the roof options a standard adds beyond the shared ones (its ``roof_options``
    #: of kinds the shared roof does not hold: EN 1991-1-3 ``topography``, ``annex``
    #: ...), by name, parsed by kind (lengths [ft], slopes [deg]); each standard
    #: refuses the ones it does not declare
    extra: Mapping = field(default_factory=dict)

    def option(self, name: str, default=None):
        """A standard's own roof option (``extra``), or ``default`` when not given."""
        return self.extra.get(name, default)

    #: side B's eave-to-ridge distance W of an asymmetric gable or hip roof [ft]
    #: (``eave_to_ridge = ["30ft", "20ft"]``); None for a symmetric roof
    eave_to_ridge_b: float | None = None
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
                          "eave_to_ridge": "eave_to_ridge",
                          "eave_to_ridge_b": "eave_to_ridge"})  # fmt: skip
        if self.eave_to_ridge_b is not None:
            if self.eave_to_ridge is None:
                raise InputError("eave_to_ridge", _ONE_W, _TWO_W)
            if self.shape not in TWO_SIDED:
                raise InputError(
                    "eave_to_ridge",
                    f"two distances are for a gable or hip roof, not a {self.shape} roof",
                    "one length such as 30ft",
                )
        _places_check(self)
        if self.overhang is not None:
            RANGES["overhang.length"].check(self.overhang, "overhang.length")
        if self.shape == "flat" and self.slope > FLAT_SLOPE_MAX_DEG:
            flat_too_steep(self.slope, self.shape_stated)
        for attr, value in check_shape_fields(self).items():  # derived: slope, W, the arc
            object.__setattr__(self, attr, value)

    def replace(self, **changes) -> Roof:
        return replace(self, **changes)

    @property
    def asymmetric(self) -> bool:
        """Whether the roof was given two eave-to-ridge distances, one per side."""
        return self.eave_to_ridge_b is not None

    @property
    def eave_to_ridge_sides(self) -> tuple[float, float] | None:
        """``(W of side A, W of side B)`` [ft] of an asymmetric roof, else None."""
        if self.eave_to_ridge_b is None or self.eave_to_ridge is None:
            return None
        return (self.eave_to_ridge, self.eave_to_ridge_b)

    @property
    def eave_to_ridge_max(self) -> float | None:
        """The longer W [ft] (the one W of a symmetric roof); None when W is not given."""
        sides = self.eave_to_ridge_sides
        return max(sides) if sides else self.eave_to_ridge

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
        known = _ROOF_KEYS | set(_extra_options())
        unknown = sorted(set(data) - known)
        if unknown:
            raise InputError(
                "roof", f"unknown key(s) {', '.join(unknown)}", ", ".join(sorted(known))
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
        elif shape == "flat" or shape in SLOPE_FREE_SHAPES:
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
        kw["eave_to_ridge"], kw["eave_to_ridge_b"] = _eave_to_ridge(data.get("eave_to_ridge"))
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
        kw["extra"] = _extra(data)
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


def _extra_options() -> dict:
    """The roof options standards declare beyond the shared roof keys: name -> RoofOption.

    Asked of the registry (every registered standard); a name two standards
    declare is read by the first one's kind.
    """
    from neve.engine.standards import standards

    out: dict = {}
    for std in standards():
        for opt in std.roof_options:
            if opt.name not in _ROOF_KEYS:
                out.setdefault(opt.name, opt)
    return out


def _extra_value(opt, value):
    """A standard's own roof option read by its kind (lengths [ft], slopes [deg])."""
    name = opt.name
    if opt.kind == "choice":
        return choose_key(name, value, list(opt.choices))
    if opt.kind == "number":
        if isinstance(value, bool):
            raise InputError(name, f"{value!r} is not a number", "a plain number")
        try:
            x = float(value)
        except (TypeError, ValueError):
            raise InputError(name, f"{value!r} is not a number", "a plain number") from None
        if x != x or x in (float("inf"), float("-inf")):
            raise InputError(name, f"{value!r} is not a finite number", "a plain number")
        return x
    if opt.kind == "yes/no":
        return _bool(value, name)
    if opt.kind == "length":
        return parse_length(value, name, bound=RANGES["option.length"])
    if opt.kind == "slope":
        return parse_slope(value, name)
    if opt.kind == "parameter set" and isinstance(value, Mapping):
        return value  # read from a file at the edge (neve.roof_file); the standard checks it
    if isinstance(value, (Mapping, list, tuple)):
        raise InputError(name, "must be a text", "a text")
    return str(value)


def _extra(data: Mapping) -> dict:
    options = _extra_options()
    return {k: _extra_value(options[k], v) for k, v in data.items() if k in options}


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
    keys = set(STEP_KEYS)
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
                upper_parapet=_length(e, "upper_parapet", w, "step.upper_parapet"),
                upper_ce=_number(e, "upper_ce", w, "step.upper_ce"),
                upper_ct=_number(e, "upper_ct", w, "step.upper_ct"),
                upper_is=_number(e, "upper_is", w, "step.upper_is"),
                lower_roof=choose_key(f"{w}.lower_roof", e.get("lower_roof", "new"), LOWER_ROOFS),
                meets=_names(e.get("meets"), f"{w}.meets"),
            )
        )
    return out


def _number(entry: Mapping, key: str, where: str, range_key: str) -> float | None:
    """A plain number of a roof part (``upper_ce``), checked against ``RANGES[range_key]``."""
    if entry.get(key) is None:
        return None
    value, name, bound = entry[key], f"{where}.{key}", RANGES[range_key]
    if isinstance(value, bool):
        raise InputError(name, f"{value!r} is not a number", bound.text())
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise InputError(name, f"{value!r} is not a number", bound.text()) from None
    return bound.check(x, name, value if isinstance(value, str) else None)


def _names(value, name: str) -> tuple[str, ...]:
    """A name or a list of names (``meets``)."""
    if value is None:
        return ()
    if isinstance(value, str):
        value = [value]
    if not isinstance(value, (list, tuple)) or not all(isinstance(v, str) for v in value):
        raise InputError(name, f"{value!r} is not a name or a list of names", '["east parapet"]')
    return tuple(value)


def _parapets(value) -> list[Parapet]:
    out = []
    for i, e in enumerate(_table_list(value, "parapet")):
        w = f"parapet[{i}]"
        _check_keys(e, w, set(PARAPET_KEYS))
        out.append(
            _part(
                Parapet,
                w,
                name=str(e.get("name", f"parapet {i + 1}")),
                height=_length(e, "height", w, "parapet.height", need="3ft"),
                upwind_length=_length(e, "upwind_length", w, "parapet.upwind_length", need="100ft"),
                meets=_names(e.get("meets"), f"{w}.meets"),
                drift_space=_length(e, "drift_space", w, "parapet.drift_space"),
            )
        )
    return out


def _projections(value) -> list[Projection]:
    out = []
    for i, e in enumerate(_table_list(value, "projection")):
        w = f"projection[{i}]"
        _check_keys(e, w, set(PROJECTION_KEYS))
        if "upwind_length" in e and "length_left" in e:
            raise InputError(
                f"{w}.upwind_length",
                "upwind_length is the older name of length_left: give one of them",
                "length_left and length_right",
            )
        left_key = "upwind_length" if "upwind_length" in e else "length_left"
        lengths = {
            k: _length(e, k, w, f"projection.{k}")
            for k in ("length_right", "plan_width", "length_front", "length_back")
        }
        out.append(
            _part(
                Projection,
                w,
                name=str(e.get("name", f"projection {i + 1}")),
                height=_length(e, "height", w, "projection.height", need="4ft"),
                plan_length=_length(e, "plan_length", w, "projection.plan_length", need="20ft"),
                length_left=_length(e, left_key, w, f"projection.{left_key}"),
                **lengths,
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
