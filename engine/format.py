"""The one formatter of quantities for people: loads, lengths, line loads, densities, slopes.

Every text neve shows (the terminal summaries of ``neve roof`` and ``neve
site``, the site and portfolio maps, the diagrams and the calculation package)
prints a quantity through this module, so that a value reads the same
everywhere. A quantity crosses the library as a mapping of its two units (the
JSON shape: ``{"psf": 35.0, "kPa": 1.676}``); it is shown with the first unit
first and its twin in brackets: ``35.0 psf (1.68 kPa)``.

The decimals of each unit are set once, in :data:`DECIMALS`. Two presentations
share them:

- ``trim=False`` (terminal text, the summaries and tables of the package and
  of the site map's panel): trailing zeros kept, so that the decimals shown
  say the precision and columns line up: ``35.0 psf (1.68 kPa)``;
- ``trim=True`` (zone labels and legends of the maps, popups): trailing zeros
  dropped where space is short: ``35 psf (1.68 kPa)``.

Two scales differ from the table on purpose: elevations and distances on the
ground (:func:`elevation_text`, whole feet and tenths of a metre) and a ground
snow load quoted as the map gives it (``exact=True``: up to six significant
digits, so that a reader can trace it to the layer's own value).

A missing value (None, NaN, infinity: JSON ``null``) prints as ``missing``
(``"n/a"`` unless the caller names its own word).

>>> load_text({"psf": 35.0, "kPa": 1.6758})
'35.0 psf (1.68 kPa)'
>>> load_text({"psf": 35.0, "kPa": 1.6758}, trim=True)
'35 psf (1.68 kPa)'
>>> length_text({"ft": 40.0, "m": 12.192}, trim=True)
'40 ft (12.19 m)'
>>> elevation_text({"ft": 164.04, "m": 50.0})
'164 ft (50.0 m)'
>>> load_text({"psf": 35.0875, "kPa": 1.68}, exact=True)
'35.0875 psf (1.68 kPa)'
>>> quantity_text({"plf": 294.0, "kN/m": 4.29})
'294 plf (4.29 kN/m)'
>>> load_text(None)
'n/a'
"""

from __future__ import annotations

import math
from collections.abc import Mapping

#: decimals shown for each unit, everywhere (terminal, maps, package)
DECIMALS: dict[str, int] = {
    "psf": 1,
    "kPa": 2,
    "ft": 2,
    "m": 2,
    "plf": 0,
    "kN/m": 2,
    "pcf": 1,
    "kN/m3": 2,
    "deg": 1,
}

#: elevations and distances on the ground: whole feet, tenths of a metre
GROUND_DECIMALS: dict[str, int] = {"ft": 0, "m": 1}

#: the unit pairs of the JSON contract: (shown first, its twin in brackets)
PAIRS: tuple[tuple[str, str], ...] = (
    ("psf", "kPa"),
    ("ft", "m"),
    ("plf", "kN/m"),
    ("pcf", "kN/m3"),
)

#: what a missing value prints as unless the caller says otherwise
MISSING = "n/a"

#: significant digits of a value quoted exactly (``exact=True``)
EXACT_DIGITS = 6


def _finite(x: object) -> float | None:
    if x is None or isinstance(x, bool):
        return None
    try:
        v = float(x)  # type: ignore[arg-type]
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def number(
    x: object, decimals: int | None = 1, *, trim: bool = False, missing: str = MISSING
) -> str:
    """A number with ``decimals`` decimals; ``decimals=None`` quotes it exactly.

    Parameters
    ----------
    x : float, int or None
        The value; None, NaN, infinity or a non-number prints as ``missing``.
    decimals : int or None
        Decimals shown; None: as given, up to :data:`EXACT_DIGITS` significant digits.
    trim : bool
        Drop trailing zeros (and a trailing decimal point).
    missing : str
        Text for a missing value.

    >>> number(24.5, 2), number(24.5, 2, trim=True), number(float("nan"))
    ('24.50', '24.5', 'n/a')
    """
    v = _finite(x)
    if v is None:
        return missing
    if decimals is None:
        return format(v, f".{EXACT_DIGITS}g")
    text = format(v, f".{decimals}f")
    if trim and "." in text:
        text = text.rstrip("0").rstrip(".")
    if text in ("-0", "-0." + "0" * decimals):  # -0.001 rounds to -0: no sign
        text = text[1:]
    return text


def _pair_of(value: Mapping, first: str | None = None) -> tuple[str, str] | None:
    for a, b in PAIRS:
        if a in value:
            return (b, a) if first == b else (a, b)
    return None


def quantity_text(
    value: Mapping | None,
    *,
    trim: bool = False,
    exact: bool = False,
    decimals: Mapping[str, int] | None = None,
    missing: str = MISSING,
    missing_number: str | None = None,
    first: str | None = None,
) -> str:
    """A two-unit quantity as ``x unit (y twin)``; the units are read from its keys.

    Parameters
    ----------
    value : mapping or None
        ``{"psf": .., "kPa": ..}``, ``{"ft": .., "m": ..}``, ``{"plf": .., "kN/m": ..}``
        or ``{"pcf": .., "kN/m3": ..}``; None (or an empty mapping) is missing.
    trim : bool
        Drop trailing zeros (maps and documents) or keep them (terminal text).
    exact : bool
        Quote both numbers as given (up to six significant digits).
    decimals : mapping, optional
        Decimals per unit overriding :data:`DECIMALS` (e.g. :data:`GROUND_DECIMALS`).
    missing : str
        Text for a missing quantity (None or empty).
    missing_number : str, optional
        Text for a missing number within a quantity (default: ``missing``).
    first : str, optional
        The unit to show first (default: the contract's, ``psf``, ``ft``, ...).
    """
    if not value:
        return missing
    inner = missing if missing_number is None else missing_number
    units = _pair_of(value, first)
    if units is None:  # not a unit pair: each entry as it is
        return ", ".join(
            f"{k}: {number(v, None, missing=inner) if _finite(v) is not None else v}"
            for k, v in value.items()
        )
    table = {**DECIMALS, **(decimals or {})}
    shown = []
    for unit in units:
        digits = None if exact else table[unit]
        shown.append(number(value.get(unit), digits, trim=trim, missing=inner))
    if units[1] not in value:  # a quantity given in one unit only
        return f"{shown[0]} {units[0]}"
    return f"{shown[0]} {units[0]} ({shown[1]} {units[1]})"


def is_quantity(value: object) -> bool:
    """Whether ``value`` is a two-unit quantity this module can print."""
    return isinstance(value, Mapping) and _pair_of(value) is not None


def load_text(value: Mapping | None, **kw) -> str:
    """A load [psf, kPa]: ``35.0 psf (1.68 kPa)``; see :func:`quantity_text`."""
    return quantity_text(value, **kw)


def length_text(value: Mapping | None, **kw) -> str:
    """A length on a roof [ft, m]: ``17.67 ft (5.39 m)``; see :func:`quantity_text`."""
    return quantity_text(value, **kw)


def elevation_text(value: Mapping | None, **kw) -> str:
    """An elevation or a distance on the ground [ft, m]: ``1350 ft (411.5 m)``."""
    return quantity_text(value, decimals=GROUND_DECIMALS, **kw)


def slope_text(
    deg: object, *, pitch: bool = False, trim: bool = False, missing: str = MISSING
) -> str:
    """A roof slope: its angle to a tenth of a degree, ``26.6°``; ``pitch=True``: ``6:12 (26.6°)``.

    Show the pitch where the slope was given as a rise:run (``6:12``), so that
    the reader finds the figure they typed; the angle otherwise.

    >>> slope_text(26.565), slope_text(26.565, pitch=True), slope_text(5.0, trim=True)
    ('26.6°', '6:12 (26.6°)', '5°')
    >>> slope_text(None), slope_text(None, pitch=True)
    ('n/a', 'n/a')
    """
    if pitch:
        return pitch_text(deg, missing=missing)
    text = number(deg, DECIMALS["deg"], trim=trim, missing=missing)
    return text if text == missing else f"{text}\u00b0"


#: significant figures of a calculation step's value in the package (engineering rounding)
STEP_FIGURES = 3


def significant(x: object, figures: int = STEP_FIGURES, *, missing: str = MISSING) -> str:
    """A number to ``figures`` significant figures, trailing zeros kept, never in e-notation.

    Engineering rounding of a calculation step (common practice: three
    significant figures, so that the figures shown say the precision):

    >>> significant(1479.5505), significant(49.591), significant(0.0), significant(1.0)
    ('1480', '49.6', '0', '1.00')
    >>> significant(20.4468), significant(0.49862), significant(-2.2123), significant(None)
    ('20.4', '0.499', '-2.21', 'n/a')
    >>> significant(999.6), significant(0.99996), significant(123456.0)
    ('1000', '1.00', '123000')
    """
    v = _finite(x)
    if v is None:
        return missing
    if v == 0:
        return "0"
    decimals = figures - 1 - math.floor(math.log10(abs(v)))
    r = round(v, decimals)
    if r != 0:  # rounding may carry into a new digit (999.6 -> 1000): count again
        decimals = figures - 1 - math.floor(math.log10(abs(r)))
        r = round(v, decimals)
    if decimals > 0:
        text = format(r, f".{decimals}f")
    else:
        text = str(int(r))
    return text[1:] if text.startswith("-") and float(text) == 0 else text


#: decimals of an angle in degrees beside a pitch
PITCH_DEG_DECIMALS = 1


def pitch_text(deg: object, *, missing: str = MISSING) -> str:
    """A roof slope as rise on 12 with its angle: ``6:12 (26.6°)``.

    The rise is quoted to three significant figures, trailing zeros dropped
    (6:12, not 6.00:12), the angle to a tenth of a degree.  Rise on 12 is
    12 tan(angle).

    >>> pitch_text(26.565), pitch_text(0.0), pitch_text(5.0), pitch_text(45.0)
    ('6:12 (26.6°)', '0:12 (0.0°)', '1.05:12 (5.0°)', '12:12 (45.0°)')
    >>> pitch_text(None)
    'n/a'
    """
    v = _finite(deg)
    if v is None or not -90.0 < v < 90.0:
        return missing
    rise = significant(12.0 * math.tan(math.radians(v)))
    if "." in rise:
        rise = rise.rstrip("0").rstrip(".")
    return f"{rise}:12 ({number(v, PITCH_DEG_DECIMALS)}\u00b0)"
