"""Geometry of curved, dome and multi-span (sawtooth) roofs, shared by every edition.

Pure geometry, no provision: the load rules that use it live in each
standard's own folder (``curved`` and ``multispan`` modules).  Lengths in
[ft] (any consistent unit works), angles in [degrees].

A curved roof (or the meridian of a dome) is taken as a circular arc through
both eaves and the crown.  With the half-chord ``c`` (half the span, or half
the base diameter of a dome) and the rise ``h`` (eave to crown), the radius
is ``R = (c² + h²) / (2 h)``; at a horizontal distance ``x`` from the crown
the tangent slope ``θ`` has ``sin θ = x / R``, so the point where the tangent
has slope ``α`` lies at ``x = R sin α`` from the crown, ``R (1 - cos α)``
below it.  Two consequences used by the provisions:

* the eave slope is ``θe = asin(c / R)``; an arc is at most a half circle
  (``h <= c``, ``θe <= 90°``);
* the straight line from the crown to the point of slope ``α`` rises at
  ``α / 2`` (``(1 - cos α) / sin α = tan(α / 2)``): the line from an eave to
  the crown at half the eave slope.

References
----------
.. [1] Elementary geometry of the circle (common practice): chord, rise
   (sagitta) and radius ``R = (c² + h²) / (2h)``; the tangent is normal to
   the radius.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

from neve.engine.errors import InputError

#: largest eave slope of an arc [deg]: a half circle (vertical tangent at the eave)
HALF_CIRCLE_DEG = 90.0
#: how far a given eave slope may differ from the one of the arc's rise and chord [deg]
EAVE_SLOPE_TOLERANCE_DEG = 0.5


@dataclass(frozen=True)
class Arc:
    """A circular arc roof profile from eave to eave: ``rise`` and ``chord`` [ft].

    >>> a = Arc(rise=16.0, chord=64.0)
    >>> round(a.radius, 3), round(a.eave_slope, 2)
    (40.0, 53.13)
    >>> round(a.x_at(30.0), 3), round(a.height_at(30.0), 3)
    (20.0, 10.641)
    """

    rise: float  # eave to crown [ft]
    chord: float  # eave to eave, horizontal [ft] (a dome: its base diameter)

    def __post_init__(self):
        for name in ("rise", "chord"):
            v = getattr(self, name)
            if not (isinstance(v, (int, float)) and math.isfinite(v) and v > 0):
                raise InputError(name, f"{v!r} is not a positive length", "a length above 0 ft")
        if not math.isfinite(self.radius):
            raise InputError("rise", f"{self.rise!r} ft is too small beside the chord "
                             f"{self.chord:g} ft to work as an arc", "a larger rise")  # fmt: skip
        if self.rise > self.chord / 2.0 * (1 + 1e-9):
            raise InputError(
                "rise",
                f"{self.rise:g} ft is more than half the chord ({self.chord / 2:g} ft): "
                "the arc would be more than a half circle",
                "a rise of at most half the chord",
            )

    @property
    def half_chord(self) -> float:
        """Horizontal eave-to-crown distance ``c`` [ft]."""
        return self.chord / 2.0

    @property
    def radius(self) -> float:
        """``R = (c² + h²) / (2h)`` [ft]."""
        c, h = self.half_chord, self.rise
        return (c * c + h * h) / (2.0 * h)

    @property
    def eave_slope(self) -> float:
        """Slope of the tangent at the eave, ``asin(c / R)`` [deg]."""
        return math.degrees(math.asin(min(self.half_chord / self.radius, 1.0)))

    @property
    def crown_angle(self) -> float:
        """Slope of the straight line from an eave to the crown [deg] (half the eave slope)."""
        return math.degrees(math.atan2(self.rise, self.half_chord))

    def slope_at(self, x: float) -> float:
        """Tangent slope [deg] at horizontal distance ``x`` [ft] from the crown (0 to c)."""
        x = min(max(abs(float(x)), 0.0), self.half_chord)
        return math.degrees(math.asin(min(x / self.radius, 1.0)))

    def has_point(self, alpha: float) -> bool:
        """Whether the tangent reaches slope ``alpha`` [deg] on the roof (at or before the eave)."""
        return alpha <= self.eave_slope + 1e-9

    def x_at(self, alpha: float) -> float:
        """Horizontal distance [ft] from the crown to the point of tangent slope ``alpha``.

        Past the eave (``alpha`` above the eave slope) the eave's distance ``c``.
        """
        if not self.has_point(alpha):
            return self.half_chord
        return min(self.radius * math.sin(math.radians(alpha)), self.half_chord)

    def height_at(self, alpha: float) -> float:
        """Height [ft] above the eaves of the point of tangent slope ``alpha`` (0 past the eave)."""
        if not self.has_point(alpha):
            return 0.0
        return max(self.rise - self.radius * (1.0 - math.cos(math.radians(alpha))), 0.0)

    def line_to_crown(self, alpha: float) -> float:
        """Slope [deg] of the straight line from the point of slope ``alpha`` to the crown.

        ``alpha / 2`` on a circular arc; the eave-to-crown line past the eave.
        """
        if not self.has_point(alpha):
            return self.crown_angle
        return alpha / 2.0


def arc_from(
    rise: float | None = None,
    chord: float | None = None,
    eave_slope: float | None = None,
    *,
    chord_name: str = "chord",
    roof_word: str = "curved",
) -> Arc:
    """The arc fixed by two of ``rise`` [ft], ``chord`` [ft] and ``eave_slope`` [deg].

    Rise and chord are the usual pair; the eave slope may replace either one
    (``c = R sin θe``, ``h = R (1 - cos θe)``).  All three given: the eave
    slope must be that of the rise and chord within
    :data:`EAVE_SLOPE_TOLERANCE_DEG` (a check of the description).  Fewer
    than two: an :class:`InputError` naming the missing length (``rise``
    first, then ``chord_name``, ``diameter`` for a dome).

    >>> round(arc_from(chord=64.0, eave_slope=53.13010235).rise, 4)
    16.0
    """
    if eave_slope is not None and not (0.0 < eave_slope <= HALF_CIRCLE_DEG):
        raise InputError("eave_slope", f"{eave_slope!r} degrees is not an arc's eave slope",
                         "above 0 up to 90 degrees (a half circle)")  # fmt: skip
    if rise is not None and chord is not None:
        arc = Arc(rise, chord)
        if eave_slope is not None and abs(arc.eave_slope - eave_slope) > EAVE_SLOPE_TOLERANCE_DEG:
            raise InputError(
                "eave_slope",
                f"{eave_slope:.2f} degrees, but a circular arc of rise {rise:g} ft and "
                f"{chord_name} {chord:g} ft has an eave slope of {arc.eave_slope:.2f} degrees",
                f"the arc's own eave slope, or leave eave_slope out (two of rise, {chord_name}, "
                "eave_slope fix the arc)",
            )
        return arc
    if eave_slope is not None and (rise is not None or chord is not None):
        t = math.radians(eave_slope)
        if rise is not None:
            radius = rise / (1.0 - math.cos(t))
            return Arc(rise, 2.0 * radius * math.sin(t))
        radius = chord / 2.0 / math.sin(t)
        return Arc(radius * (1.0 - math.cos(t)), chord)
    missing = "rise" if rise is None else chord_name
    raise InputError(
        missing,
        f"needed for a {roof_word} roof (with {'rise' if missing != 'rise' else chord_name}, "
        "or with eave_slope)",
        "a length such as 12ft" if missing == "rise" else "a length such as 60ft",
    )


def ridge_to_valley(ridge_height: float, slope: float) -> float | None:
    """Horizontal ridge-to-valley distance [ft] of a plane face: ``hr / tan(slope)``.

    None for a level face (no ridge to speak of).

    >>> round(ridge_to_valley(6.0, math.degrees(math.atan2(3, 12))), 6)
    24.0
    """
    t = math.tan(math.radians(slope)) if slope > 0 else 0.0
    if not t > 0:  # level, or so near level that the tangent underflows
        return None
    w = ridge_height / t
    return w if math.isfinite(w) else None
