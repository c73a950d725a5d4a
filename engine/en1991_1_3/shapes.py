"""Roof snow load shape coefficients of EN 1991-1-3 Section 5.3.

Monopitch (5.3.2), pitched (duopitch, 5.3.3), multi-span (5.3.4) and
cylindrical (5.3.5) roofs.  Functions take scalars or numpy arrays of slopes
[degrees] and return the same shape.

References
----------
.. [1] EN 1991-1-3:2003 + A1:2015, Table 5.2, Figures 5.1 to 5.6.  The
   values of Table 5.2 are from memory; mu1 = 0.8 at 8.5 and 5.7 degrees is
   worked in [SSB03] Appendix A.
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.en1991_1_3 import STANDARD
from neve.engine.errors import InputError
from neve.engine.steps import StepLog, fmt, fmt_deg

#: Table 5.2: the slope limits of the shape coefficients [deg]
TABLE_5_2_LIMITS = (30.0, 60.0)
#: Table 5.2: mu1 up to 30 degrees, and mu2 at 0 degrees [-]
MU1_LOW = 0.8
#: Table 5.2: mu2 from 30 to 60 degrees [-]
MU2_HIGH = 1.6
#: the coefficient below which mu is not reduced where snow cannot slide off
#: (snow fences, obstructions, a parapet at the lower edge: 5.3.2(2), 5.3.3(2))
MU_RETAINED_MIN = 0.8
#: cylindrical roofs: the slope beyond which no snow lies (5.3.5(1)) [deg]
CYLINDER_SLOPE_LIMIT = 60.0


def mu1(alpha):
    """Shape coefficient mu1 of a roof slope (Table 5.2) [-].

    0.8 for 0 <= alpha <= 30, 0.8 (60 - alpha) / 30 for 30 < alpha < 60, 0 from 60.

    >>> [round(float(mu1(a)), 4) for a in (0.0, 8.5, 30.0, 45.0, 60.0, 75.0)]
    [0.8, 0.8, 0.8, 0.4, 0.0, 0.0]
    """
    a = np.asarray(alpha, dtype=float)
    lo, hi = TABLE_5_2_LIMITS
    return np.where(a <= lo, MU1_LOW, np.where(a < hi, MU1_LOW * (hi - a) / (hi - lo), 0.0))


def mu2(alpha):
    """Shape coefficient mu2 of a valley of multi-span roofs (Table 5.2) [-].

    0.8 + 0.8 alpha / 30 for 0 <= alpha <= 30, 1.6 for 30 < alpha < 60; at 60
    degrees and above Table 5.2 gives no value (NaN: see 5.3.4(3)).

    >>> [round(float(mu2(a)), 4) for a in (0.0, 15.0, 30.0, 45.0)]
    [0.8, 1.2, 1.6, 1.6]
    """
    a = np.asarray(alpha, dtype=float)
    lo, hi = TABLE_5_2_LIMITS
    return np.where(a <= lo, MU1_LOW + MU1_LOW * a / lo, np.where(a < hi, MU2_HIGH, np.nan))


def slope_coefficient(alpha, retained: bool, log: StepLog | None = None, name: str = "mu1"):
    """mu1 of one roof slope with the snow-retention rule, recorded.

    Parameters
    ----------
    alpha : float
        Roof slope [deg].
    retained : bool
        Snow cannot slide off (snow fences, obstructions, a parapet at the
        lower edge): mu1 is not reduced below 0.8.

    References
    ----------
    EN 1991-1-3 5.3.2(2), 5.3.3(2), Table 5.2 (from memory).
    """
    value = mu1(alpha)
    ref = f"{STANDARD} 5.3.2, Table 5.2"
    if retained and float(np.max(value)) < MU_RETAINED_MIN:
        if log is not None:
            log.add(name, "shape coefficient, snow kept from sliding off: not below 0.8",
                    f"{name} = max(mu1(alpha), 0.8)",
                    f"{name} = max({fmt(value)}, 0.8) at alpha = {fmt_deg(alpha)}",
                    MU_RETAINED_MIN, "-", f"{STANDARD} 5.3.2(2), 5.3.3(2)")  # fmt: skip
        return np.maximum(value, MU_RETAINED_MIN)
    if log is not None:
        lo, hi = TABLE_5_2_LIMITS
        a = float(alpha)
        eq = (f"{name} = 0.8 (0 <= alpha <= 30)" if a <= lo
              else f"{name} = 0.8 (60 - alpha) / 30 (30 < alpha < 60)" if a < hi
              else f"{name} = 0 (alpha >= 60)")  # fmt: skip
        log.add(name, f"shape coefficient at alpha = {fmt_deg(alpha)}", eq,
                f"{name} = {fmt(value)}", value, "-", ref)  # fmt: skip
    return value


def valley_coefficient(alpha1, alpha2, log: StepLog | None = None):
    """mu2 of the valley between two slopes, at their mean slope (5.3.4, Table 5.2) [-].

    A valley slope of 60 degrees or more is refused: the standard asks for
    special consideration there (5.3.4(3)), which neve does not give.

    References
    ----------
    EN 1991-1-3 5.3.4(1) to (3), Figure 5.4 (from memory).
    """
    if max(float(alpha1), float(alpha2)) >= CYLINDER_SLOPE_LIMIT:
        from neve.engine.errors import UnsupportedError

        raise UnsupportedError(
            "slope",
            f"a valley slope of 60 degrees or more needs special consideration "
            f"({STANDARD} 5.3.4(3)), which neve does not give",
            "multi-span slopes under 60 degrees",
        )
    mean = 0.5 * (float(alpha1) + float(alpha2))
    value = float(mu2(mean))
    if log is not None:
        log.add("alpha_mean", "mean slope of the valley", "alpha_mean = (alpha1 + alpha2) / 2",
                f"alpha_mean = ({fmt(alpha1)} + {fmt(alpha2)}) / 2", mean, "deg",
                f"{STANDARD} 5.3.4, Fig. 5.4")  # fmt: skip
        eq = ("mu2 = 0.8 + 0.8 alpha / 30 (0 <= alpha <= 30)" if mean <= TABLE_5_2_LIMITS[0]
              else "mu2 = 1.6 (30 < alpha < 60)")  # fmt: skip
        log.add("mu2", "shape coefficient of the valley", eq, f"mu2 = {fmt(value)}", value, "-",
                f"{STANDARD} 5.3.4, Table 5.2")  # fmt: skip
    return value


def cylinder_geometry(rise: float, span: float) -> dict:
    """The arc of a cylindrical roof of ``rise`` h and ``span`` b [m] (a circular arc).

    Returns ``radius`` r [m], ``eave_slope`` [deg] (the slope at the eaves) and
    ``ls`` [m], the plan width of the part whose slope is at most 60 degrees
    (where snow lies, 5.3.5(1)).  Common practice: the roof is read as one
    circular arc through the eaves and the crown.

    >>> g = cylinder_geometry(5.0, 20.0)
    >>> round(g["radius"], 3), round(g["eave_slope"], 2), round(g["ls"], 3)
    (12.5, 53.13, 20.0)
    """
    if not (rise > 0 and span > 0) or rise > span / 2:
        raise InputError("rise", f"a rise of {rise:g} m on a span of {span:g} m is not a "
                         "cylindrical roof", "a rise above 0 up to half the span")  # fmt: skip
    r = (span**2 / 4.0 + rise**2) / (2.0 * rise)
    eave = math.degrees(math.asin(min(1.0, span / 2.0 / r)))
    half = min(span / 2.0, r * math.sin(math.radians(CYLINDER_SLOPE_LIMIT)))
    return {"radius": r, "eave_slope": eave, "ls": 2.0 * half}


def cylinder_coefficient(rise, span, mu3_max, log: StepLog | None = None):
    """mu3 of a cylindrical roof (5.3.5, Fig. 5.5) [-]: ``0.2 + 10 h / b``, at most mu3_max.

    Parameters
    ----------
    rise, span : float
        Rise h and span b of the roof [m].
    mu3_max : float
        The upper value of mu3 (nationally determined; recommended 2.0).

    References
    ----------
    EN 1991-1-3 5.3.5(1), Figure 5.5 (from memory).
    """
    raw = 0.2 + 10.0 * np.asarray(rise, dtype=float) / np.asarray(span, dtype=float)
    value = np.minimum(raw, mu3_max)
    if log is not None:
        log.add("mu3", "shape coefficient of the cylindrical roof (slope up to 60 degrees)",
                "mu3 = 0.2 + 10 h / b, mu3 <= mu3_max",
                f"mu3 = min(0.2 + 10 x {fmt(rise)} / {fmt(span)}, {fmt(mu3_max)})", value, "-",
                f"{STANDARD} 5.3.5(1)")  # fmt: skip
    return value
