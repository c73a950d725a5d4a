"""Quantities with units at neve's edges.

Every quantity that crosses a boundary (CLI, file, JSON, report) carries its
unit.  Text such as ``35psf``, ``1.68kPa``, ``1.68 kN/m2``, ``412m``,
``1350ft``, ``6:12`` or ``26.6deg`` is parsed here into the units ASCE 7
writes its formulas in (psf, ft, pcf, degrees).  A bare number where a unit
is needed is an :class:`~neve.engine.errors.InputError` that lists the accepted
units.

Conversion factors are exact by definition of the international foot
(1 ft = 0.3048 m) and the avoirdupois pound (1 lb = 0.45359237 kg) with
standard gravity g = 9.80665 m/s^2 (NIST SP 811, Appendix B).

>>> parse_load("1.68 kN/m2", "pg")  # doctest: +ELLIPSIS
35.087...
>>> round(parse_slope("6:12", "slope"), 3)
26.565
>>> parse_length("412m", "elevation") / FT_PER_M  # doctest: +ELLIPSIS
412.0...
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass

import numpy as np

from neve.engine.errors import InputError

#: metres in one international foot [m/ft]
M_PER_FT = 0.3048
#: feet in one metre [ft/m]
FT_PER_M = 1.0 / M_PER_FT
#: pound-force in newtons [N/lbf]: 0.45359237 kg x 9.80665 m/s^2
N_PER_LBF = 0.45359237 * 9.80665
#: kilopascals in one psf [kPa/psf]
KPA_PER_PSF = N_PER_LBF / M_PER_FT**2 / 1000.0
#: kN/m3 in one pcf [(kN/m3)/pcf]
KNM3_PER_PCF = N_PER_LBF / M_PER_FT**3 / 1000.0
#: R-value conversion, SI (m2.K/W) to US (ft2.h.F/Btu)
RUS_PER_RSI = 5.678263

_NUM = r"[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?"
_QTY = re.compile(rf"^\s*({_NUM})\s*([^\d\s].*?)?\s*$")

#: load units -> factor to psf
LOAD_UNITS = {
    "psf": 1.0,
    "lb/ft2": 1.0,
    "lb/ft^2": 1.0,
    "lbf/ft2": 1.0,
    "kpa": 1.0 / KPA_PER_PSF,
    "kn/m2": 1.0 / KPA_PER_PSF,
    "kn/m^2": 1.0 / KPA_PER_PSF,
    "kn/m²": 1.0 / KPA_PER_PSF,
    "pa": 1.0 / KPA_PER_PSF / 1000.0,
}
#: length units -> factor to ft
LENGTH_UNITS = {
    "ft": 1.0,
    "feet": 1.0,
    "foot": 1.0,
    "'": 1.0,
    "in": 1.0 / 12.0,
    "m": FT_PER_M,
    "meter": FT_PER_M,
    "metre": FT_PER_M,
    "meters": FT_PER_M,
    "metres": FT_PER_M,
    "mm": FT_PER_M / 1000.0,
    "cm": FT_PER_M / 100.0,
    "km": FT_PER_M * 1000.0,
}
#: density units -> factor to pcf
DENSITY_UNITS = {
    "pcf": 1.0,
    "lb/ft3": 1.0,
    "lb/ft^3": 1.0,
    "kn/m3": 1.0 / KNM3_PER_PCF,
    "kn/m^3": 1.0 / KNM3_PER_PCF,
}
_ANGLE_UNITS = {"deg": 1.0, "degree": 1.0, "degrees": 1.0, "°": 1.0, "rad": 180.0 / math.pi}

_ACCEPTED = {
    "load": "a number with psf, lb/ft2, kPa, kN/m2 or Pa (e.g. 35psf, 1.68kPa)",
    "length": "a number with ft, in, m, cm or mm (e.g. 30ft, 9.1m)",
    "density": "a number with pcf or kN/m3 (e.g. 18pcf)",
    "slope": "rise:run such as 6:12, or an angle such as 26.6deg (0 to under 90 degrees)",
}


def _split(text: object, field: str, kind: str) -> tuple[float, str]:
    if isinstance(text, bool) or text is None:
        raise InputError(field, f"{text!r} is not a quantity", _ACCEPTED[kind])
    if isinstance(text, (int, float, np.integer, np.floating)):
        raise InputError(field, f"bare number {text!r} has no unit", _ACCEPTED[kind])
    match = _QTY.match(str(text))
    if not match:
        raise InputError(field, f"{text!r} is not a quantity", _ACCEPTED[kind])
    number, unit = match.groups()
    if not unit:
        raise InputError(field, f"bare number {text!r} has no unit", _ACCEPTED[kind])
    value = float(number)
    if not math.isfinite(value):
        raise InputError(field, f"{text!r} is not a finite number", _ACCEPTED[kind])
    return value, unit.strip().lower().replace(" ", "")


def _parse(text: object, field: str, kind: str, table: dict[str, float], bound=None) -> float:
    value, unit = _split(text, field, kind)
    if unit not in table:
        raise InputError(field, f"unknown unit {unit!r} in {text!r}", _ACCEPTED[kind])
    value = value * table[unit]
    if bound is not None:
        return bound.check(value, field, text)
    if not math.isfinite(value):  # e.g. 1e308m: finite as written, infinite in ft
        raise InputError(field, f"{text!r} is too large to be a {kind}", _ACCEPTED[kind])
    return value


def parse_load(
    text: object, field: str, *, allow_negative: bool = False, bound: Bound | None = None
) -> float:
    """Parse a pressure such as ``35psf`` or ``1.68kPa`` into psf.

    Parameters
    ----------
    text : str
        The quantity with its unit.
    field : str
        Input field name for error messages.
    allow_negative : bool
        Negative loads are rejected unless this is true.
    bound : Bound, optional
        The accepted range [psf]; a value outside it is refused with the range.

    Returns
    -------
    float
        The load [psf].
    """
    value = _parse(text, field, "load", LOAD_UNITS, bound)
    if value < 0 and not allow_negative:
        raise InputError(field, f"{text!r} is negative", "a load of zero or more")
    return value


def parse_length(
    text: object, field: str, *, allow_negative: bool = False, bound: Bound | None = None
) -> float:
    """Parse a length such as ``30ft`` or ``9.1m`` into feet [ft].

    With ``bound``, a value outside that range [ft] is refused with the range.
    """
    value = _parse(text, field, "length", LENGTH_UNITS, bound)
    if value < 0 and not allow_negative:
        raise InputError(field, f"{text!r} is negative", "a length of zero or more")
    return value


def parse_length_unit(text: object, field: str) -> tuple[float, str]:
    """Parse a length and return ``(value, unit)`` as written (``m`` or ``ft`` family).

    Used where the original unit must be reported back (elevations).
    """
    value, unit = _split(text, field, "length")
    if unit not in LENGTH_UNITS:
        raise InputError(field, f"unknown unit {unit!r} in {text!r}", _ACCEPTED["length"])
    return value, unit


def parse_density(text: object, field: str) -> float:
    """Parse a unit weight such as ``18pcf`` into pcf."""
    value = _parse(text, field, "density", DENSITY_UNITS)
    if value <= 0:
        raise InputError(field, f"{text!r} is not positive", "a density above zero")
    return value


def slope_is_ratio(text: object) -> bool:
    """Whether a slope is written as a rise:run (``6:12``, ``6 on 12``, ``6/12``).

    Text output shows such a slope as its pitch, ``6:12 (26.6°)``, and an
    angle as an angle.

    >>> slope_is_ratio("6:12"), slope_is_ratio(" 0.25 on 12 "), slope_is_ratio("26.6deg")
    (True, True, False)
    """
    return bool(re.match(rf"^({_NUM})\s*(?::|on|/)\s*({_NUM})$", str(text).strip().lower()))


def parse_slope(text: object, field: str = "slope") -> float:
    """Parse a roof slope into degrees from horizontal.

    Accepts ``rise:run`` (``6:12``, ``0.25:12``), ``rise on run``
    (``6 on 12``) or an angle (``26.6deg``, ``26.6°``, ``0.46rad``).
    Slopes at or over 90 degrees and negative slopes are rejected.

    Returns
    -------
    float
        Roof slope [degrees].
    """
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        raise InputError(field, f"bare number {text!r} has no unit", _ACCEPTED["slope"])
    raw = str(text).strip().lower()
    ratio = re.match(rf"^({_NUM})\s*(?::|on|/)\s*({_NUM})$", raw)
    if ratio:
        rise, run = float(ratio.group(1)), float(ratio.group(2))
        if rise < 0 or run < 0 or (rise == 0 and run == 0):
            raise InputError(field, f"{text!r} is not a roof slope", _ACCEPTED["slope"])
        deg = math.degrees(math.atan2(rise, run))
    else:
        value, unit = _split(raw, field, "slope")
        if unit not in _ANGLE_UNITS:
            raise InputError(field, f"unknown unit {unit!r} in {text!r}", _ACCEPTED["slope"])
        deg = value * _ANGLE_UNITS[unit]
    if deg < 0 or deg >= 90.0:
        raise InputError(field, f"{text!r} is {deg:.1f} degrees", _ACCEPTED["slope"])
    return deg


#: how each engine unit is shown in a range, with its SI twin (factor, SI unit)
_SI_TWIN = {"ft": (M_PER_FT, "m"), "psf": (KPA_PER_PSF, "kPa"),
            "ft2.h.F/Btu": (1.0 / RUS_PER_RSI, "m2.K/W")}  # fmt: skip


#: what a value of each engine unit is called in a message
_NOUN = {"": "a number", "ft": "a length", "psf": "a load", "deg": "a slope"}


def _g(x: float) -> str:
    return f"{x:.4g}"


@dataclass(frozen=True)
class Bound:
    """The accepted range of one input, in the engine's unit.

    Parameters
    ----------
    lo, hi : float
        The lowest and highest accepted value [``unit``].
    unit : str
        ``ft``, ``psf``, ``deg``, ``ft2.h.F/Btu`` or ``""`` for a plain factor.
    lo_open : bool
        True where ``lo`` itself is refused (a roof length of zero).
    why : str
        Where the range comes from, for the README table and the docstrings.

    >>> Bound(0.0, 500.0, "ft", lo_open=True).text()
    'a length above zero, up to 500 ft (152.4 m)'
    >>> Bound(0.7, 1.2, "").check(1.5, "ce")
    Traceback (most recent call last):
    ...
    neve.engine.errors.InputError: ce: 1.5 is out of range; accepted: a number from 0.7 to 1.2
    """

    lo: float
    hi: float
    unit: str = ""
    lo_open: bool = False
    why: str = ""

    def _with_unit(self, x: float, twin: bool = False) -> str:
        text = _g(x) if not self.unit else f"{_g(x)} {self.unit}"
        if twin and self.unit in _SI_TWIN and x != 0:
            factor, si = _SI_TWIN[self.unit]
            text += f" ({_g(x * factor)} {si})"
        return text

    def text(self) -> str:
        """The range in words, e.g. ``a length above zero, up to 500 ft (152.4 m)``."""
        noun = _NOUN.get(self.unit, "a number")
        hi = self._with_unit(self.hi, True)
        if self.lo == 0:
            return f"{noun} {'above zero' if self.lo_open else 'of zero or more'}, up to {hi}"
        if self.lo_open:
            return f"{noun} above {self._with_unit(self.lo)}, up to {hi}"
        return f"{noun} from {_g(self.lo)} to {hi}"

    def contains(self, value: float) -> bool:
        """Whether ``value`` (a finite number) is in the range."""
        above = value > self.lo if self.lo_open else value >= self.lo
        return bool(math.isfinite(value) and above and value <= self.hi)

    def check(self, value: object, field: str, given: object = None) -> float:
        """Return ``value`` as a float, or raise :class:`InputError` naming ``field`` and the range.

        ``given`` is the text the user wrote (shown in the message); without
        it the value itself is shown.
        """
        shown = repr(given) if given is not None else None
        if isinstance(value, bool):
            raise InputError(field, f"{value!r} is not a number", self.text())
        try:
            x = float(value)
        except (TypeError, ValueError):
            raise InputError(
                field, f"{shown or repr(value)} is not a number", self.text()
            ) from None
        if math.isnan(x):
            raise InputError(field, f"{shown or repr(value)} is not a number", self.text())
        if math.isinf(x):
            problem = "is out of range" if shown else "is not a finite number"
            raise InputError(field, f"{shown or repr(value)} {problem}", self.text())
        if self.contains(x):
            return x
        what = self._with_unit(x)
        if shown is not None:
            what = f"{shown} ({what})" if self.unit else shown
        if self.lo == 0 and x < 0:
            problem = f"{what} is negative"
        elif self.lo_open and x == self.lo:
            problem = f"{what} is not above {'zero' if self.lo == 0 else self._with_unit(self.lo)}"
        else:
            problem = f"{what} is out of range"
        raise InputError(field, problem, self.text())


def psf_to_kpa(psf):
    """Convert psf to kPa (works on arrays)."""
    return np.asarray(psf, dtype=float) * KPA_PER_PSF if np.ndim(psf) else float(psf) * KPA_PER_PSF


def kpa_to_psf(kpa):
    """Convert kPa to psf (works on arrays)."""
    return np.asarray(kpa, dtype=float) / KPA_PER_PSF if np.ndim(kpa) else float(kpa) / KPA_PER_PSF


def ft_to_m(ft):
    """Convert feet to metres (works on arrays)."""
    return np.asarray(ft, dtype=float) * M_PER_FT if np.ndim(ft) else float(ft) * M_PER_FT


def m_to_ft(m):
    """Convert metres to feet (works on arrays)."""
    return np.asarray(m, dtype=float) * FT_PER_M if np.ndim(m) else float(m) * FT_PER_M


def _num(x, digits: int):
    if x is None:
        return None
    x = float(x)
    if not math.isfinite(x):
        return None
    return round(x, digits)


def load_json(psf) -> dict | None:
    """A load in the JSON contract's form ``{"psf": x, "kPa": y}`` (None stays None)."""
    if psf is None:
        return None
    return {"psf": _num(psf, 3), "kPa": _num(float(psf) * KPA_PER_PSF, 4)}


def length_json(ft) -> dict | None:
    """A length in the JSON contract's form ``{"ft": x, "m": y}`` (None stays None)."""
    if ft is None:
        return None
    return {"ft": _num(ft, 3), "m": _num(float(ft) * M_PER_FT, 4)}


def line_load_json(plf) -> dict | None:
    """A load per unit length as ``{"plf": x, "kN/m": y}``."""
    if plf is None:
        return None
    return {"plf": _num(plf, 2), "kN/m": _num(float(plf) * N_PER_LBF / M_PER_FT / 1000.0, 4)}
