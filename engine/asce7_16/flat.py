"""Flat roof, minimum and rain-on-snow loads (ASCE 7-16 Sec. 7.3, 7.3.4, 7.10).

All functions take scalars or numpy arrays and return the same shape.  Loads
in [psf], lengths in [ft], slopes in [degrees], as ASCE 7-16 writes them.

References
----------
.. [1] ASCE/SEI 7-16, Sec. 7.3 (Eq. 7.3-1), Sec. 7.3.4, Sec. 7.10.
"""

from __future__ import annotations

import numpy as np

from neve.engine.asce7_16 import STANDARD
from neve.engine.steps import StepLog, fmt, fmt_deg

#: pg at or below which the minimum load is Is*pg, above which it is 20*Is [psf]
#: (Sec. 7.3.4)
MINIMUM_PG_LIMIT = 20.0
#: slope below which a monoslope, hip or gable roof is "low-slope" for the
#: minimum load [deg] (Sec. 7.3.4)
MINIMUM_SLOPE_LIMIT = 15.0
#: curved roofs and domes get the minimum load where the vertical angle from the
#: eaves to the crown is under this [deg] (Sec. 7.3.4)
MINIMUM_CROWN_ANGLE = 10.0
CURVED_MINIMUM_SHAPES = ("curved", "dome")
#: the rain-on-snow surcharge [psf] (Sec. 7.10)
RAIN_ON_SNOW_SURCHARGE = 5.0
#: pg at or below which (but above zero) the surcharge is considered [psf]
RAIN_ON_SNOW_PG_LIMIT = 20.0


def flat_roof_load(pg, ce, ct, is_, log: StepLog | None = None):
    """Flat roof snow load pf [psf].

    Parameters
    ----------
    pg : float or array
        Ground snow load [psf].
    ce, ct, is_ : float or array
        Exposure, thermal and importance factors [-].

    Returns
    -------
    pf : float or array
        ``0.7 Ce Ct Is pg`` [psf].

    References
    ----------
    ASCE 7-16 Sec. 7.3, Eq. 7.3-1.
    """
    pf = 0.7 * np.asarray(ce) * np.asarray(ct) * np.asarray(is_) * np.asarray(pg, dtype=float)
    if log is not None:
        log.add(
            "pf",
            "flat roof snow load",
            "pf = 0.7 Ce Ct Is pg",
            f"pf = 0.7 x {fmt(ce)} x {fmt(ct)} x {fmt(is_)} x {fmt(pg)}",
            pf,
            "psf",
            f"{STANDARD} Eq. 7.3-1",
        )
    return pf


def minimum_applies(shape: str, slope) -> np.ndarray:
    """Whether the minimum roof snow load of Sec. 7.3.4 applies [bool].

    It applies to monoslope, hip and gable roofs with a slope under 15
    degrees.  A roof given as ``flat`` is read as a low-slope monoslope roof
    (common practice), so the minimum applies to it too.

    Curved roofs and domes: where the vertical angle from the eaves to the
    crown is under 10 degrees; ``slope`` is then that angle (the eave-to-crown
    line, :mod:`neve.engine.roof_shapes`).  Multi-span (sawtooth, folded
    plate, barrel vault) roofs are read as monoslope and gable faces: under 15
    degrees (the clause names neither; applying it is conservative).
    """
    slope = np.asarray(slope, dtype=float)
    if shape in CURVED_MINIMUM_SHAPES:
        return slope < MINIMUM_CROWN_ANGLE
    if shape not in ("flat", "monoslope", "hip", "gable", "sawtooth"):
        return np.zeros_like(slope, dtype=bool)
    return slope < MINIMUM_SLOPE_LIMIT


def minimum_load(pg, is_, log: StepLog | None = None):
    """Minimum roof snow load pm for low-slope roofs [psf].

    ``pm = Is pg`` where ``pg <= 20 psf``, else ``pm = 20 Is``.

    References
    ----------
    ASCE 7-16 Sec. 7.3.4.
    """
    pg = np.asarray(pg, dtype=float)
    pm = np.where(pg <= MINIMUM_PG_LIMIT, is_ * pg, MINIMUM_PG_LIMIT * is_)
    if log is not None:
        if np.ndim(pg) == 0 and pg <= MINIMUM_PG_LIMIT:
            eq, sub = "pm = Is pg  (pg <= 20 psf)", f"pm = {fmt(is_)} x {fmt(pg)}"
        elif np.ndim(pg) == 0:
            eq, sub = "pm = 20 Is  (pg > 20 psf)", f"pm = 20 x {fmt(is_)}"
        else:
            eq, sub = "pm = Is pg if pg <= 20 psf, else 20 Is", "per site"
        log.add(
            "pm",
            "minimum roof snow load (low-slope roof)",
            eq,
            sub,
            pm,
            "psf",
            f"{STANDARD} Sec. 7.3.4",
        )
    return pm


def rain_on_snow_applies(pg, slope, eave_to_ridge):
    """Whether the rain-on-snow surcharge of Sec. 7.10 applies [bool].

    It applies where ``0 < pg <= 20 psf`` and the roof slope in degrees is
    less than ``W/50`` with W, the eave-to-ridge distance, in feet.  Where W
    is not known (NaN) the surcharge is applied, which is conservative.
    """
    pg = np.asarray(pg, dtype=float)
    slope = np.asarray(slope, dtype=float)
    w = np.asarray(np.nan if eave_to_ridge is None else eave_to_ridge, dtype=float)
    in_range = (pg > 0) & (pg <= RAIN_ON_SNOW_PG_LIMIT)
    low = np.where(np.isnan(w), True, slope < w / 50.0)
    return in_range & low


def rain_on_snow(pg, slope, eave_to_ridge, log: StepLog | None = None):
    """Rain-on-snow surcharge [psf]: 5 psf where it applies, else 0.

    Added to the balanced load case only.

    References
    ----------
    ASCE 7-16 Sec. 7.10.
    """
    applies = rain_on_snow_applies(pg, slope, eave_to_ridge)
    value = np.where(applies, RAIN_ON_SNOW_SURCHARGE, 0.0)
    if log is not None:
        w = "unknown" if eave_to_ridge is None else f"{fmt(eave_to_ridge)} ft"
        limit = "n/a" if eave_to_ridge is None else fmt(eave_to_ridge / 50.0)
        log.add(
            "p_ros",
            "rain-on-snow surcharge (balanced case only)",
            "5 psf where 0 < pg <= 20 psf and slope < W/50 [deg, W in ft]",
            f"pg = {fmt(pg)} psf, slope = {fmt_deg(slope)}, W = {w}, W/50 = {limit}",
            value,
            "psf",
            f"{STANDARD} Sec. 7.10",
        )
    return value


#: slope below which a roof's deflections under the full snow load are to be
#: investigated for ponding instability [deg]: 1/4 on 12 (Sec. 7.11, with the rain
#: chapter's Sec. 8.4; from memory)
PONDING_SLOPE_DEG = float(np.degrees(np.arctan2(0.25, 12.0)))


def ponding_check_required(slope) -> np.ndarray:
    """Whether a roof needs a ponding-instability check [bool].

    Roofs with a slope under 1/4 on 12 (1.19 degrees) are to be checked for
    ponding instability from rain-on-snow or snow meltwater: their
    deflections under the full snow load are investigated as the rain
    provisions require.  neve flags the roof (``ponding_check_required``);
    it does not work the check, which needs the roof's stiffness.  A slope
    of exactly 1/4 on 12 is not under it.

    References
    ----------
    ASCE 7-16 Sec. 7.11 and Sec. 8.4 (from memory).
    """
    return np.asarray(slope, dtype=float) < PONDING_SLOPE_DEG - 1e-9
