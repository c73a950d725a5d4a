"""Roof slope factor Cs and sloped roof load ps (ASCE 7-22 Sec. 7.4).

From memory: the lines of Fig. 7.4-1 and the slippery-surface conditions of
Sec. 7.4.1-7.4.2 are those of ASCE 7-16.  What is new in 7-22 is that a heated
roof may have Ct above 1.0 (Table 7.3-3); neve puts such a roof on the line set
of its Ct (see :func:`thermal_class`), which keeps Cs = 1 to a steeper slope
and so is the conservative reading.

Cs is read from the lines of Fig. 7.4-1: each line is 1.0 up to a knee slope
and falls linearly to 0 at 70 degrees.  The knee depends on the thermal class
and on whether the "slippery" (dashed) line may be used.

References
----------
.. [1] ASCE/SEI 7-16, Sec. 7.4, Eq. 7.4-1, Sec. 7.4.1 (warm roofs),
   Sec. 7.4.2 (cold roofs), Fig. 7.4-1.
"""

from __future__ import annotations

import numpy as np

from neve.engine.asce7_22 import STANDARD
from neve.engine.steps import StepLog, fmt, fmt_deg

#: knee slope [deg] of the Fig. 7.4-1 lines, by thermal class and line
#: ("slippery": unobstructed slippery surface; "other": all other surfaces).
CS_KNEE_FIG_7_4_1 = {
    "warm": {"slippery": 5.0, "other": 30.0},  # Ct <= 1.0, Fig. 7.4-1a
    "cold-1.1": {"slippery": 10.0, "other": 37.5},  # Ct = 1.1, Fig. 7.4-1b
    "cold-1.2": {"slippery": 15.0, "other": 45.0},  # Ct >= 1.2, Fig. 7.4-1c
}
#: slope at which every line reaches zero [deg]
CS_ZERO_SLOPE = 70.0
#: R-values [ft2.h.F/Btu] a warm roof needs for the slippery line (Sec. 7.4.1)
WARM_SLIPPERY_R_UNVENTILATED = 30.0
WARM_SLIPPERY_R_VENTILATED = 20.0


def thermal_class(ct: float) -> str:
    """Which set of Fig. 7.4-1 lines a thermal factor uses.

    Ct <= 1.0 is a warm roof; 1.0 < Ct <= 1.1 uses the Ct = 1.1 lines; any
    larger Ct uses the Ct >= 1.2 lines.  Reading: the figure gives lines for
    Ct = 1.1 and Ct >= 1.2 only; a Ct given directly between 1.1 and 1.2 is
    put on the colder lines, which keep Cs = 1.0 to a steeper slope and so
    are the conservative choice.
    """
    ct = float(np.max(ct))  # a per-site Ct (Table 7.3-3): the coldest line set
    if ct <= 1.0 + 1e-9:
        return "warm"
    if ct <= 1.1 + 1e-9:
        return "cold-1.1"
    return "cold-1.2"


def slippery_line_allowed(
    surface: str,
    ct: float,
    unobstructed: bool | None,
    ventilated: bool | None,
    r_value: float | None,
) -> tuple[bool, list[str]]:
    """Whether the slippery (dashed) line of Fig. 7.4-1 may be used.

    Returns ``(allowed, flags)``.  The dashed line needs an unobstructed,
    slippery surface that lets snow slide off the eaves; on a warm roof it
    also needs R >= 30 ft2.h.F/Btu when unventilated or R >= 20 when
    ventilated (Sec. 7.4.1).  Where the user has not stated one of these
    conditions, the solid line is used (conservative) and a flag says which
    condition was missing.

    References
    ----------
    ASCE 7-22 Sec. 7.4.1, 7.4.2.
    """
    if surface != "slippery":
        return False, []
    flags: list[str] = []
    if unobstructed is None:
        flags.append("unobstructed_unstated")
    ok = unobstructed is True
    if thermal_class(ct) == "warm":
        if ventilated is None:
            flags.append("ventilation_unstated")
        if r_value is None:
            flags.append("r_value_unstated")
        if ventilated is not None and r_value is not None:
            need = WARM_SLIPPERY_R_VENTILATED if ventilated else WARM_SLIPPERY_R_UNVENTILATED
            ok = ok and r_value >= need
        else:
            ok = False
    if not ok and flags:
        flags.append("slippery_line_not_used")
    return ok, flags


def slope_factor(slope, ct: float, slippery: bool, log: StepLog | None = None):
    """Roof slope factor Cs [-] for a roof slope [deg].

    Parameters
    ----------
    slope : float or array
        Roof slope from horizontal [degrees], 0 <= slope < 90.
    ct : float
        Thermal factor [-], choosing the line set (see :func:`thermal_class`).
    slippery : bool
        Use the slippery (dashed) line; see :func:`slippery_line_allowed`.

    Returns
    -------
    Cs : float or array
        1.0 up to the knee slope, ``(70 - slope)/(70 - knee)`` above it,
        0 from 70 degrees.

    References
    ----------
    ASCE 7-22 Fig. 7.4-1 (a: Ct <= 1.0, b: Ct = 1.1, c: Ct >= 1.2).
    """
    slope = np.asarray(slope, dtype=float)
    cls = thermal_class(ct)
    line = "slippery" if slippery else "other"
    knee = CS_KNEE_FIG_7_4_1[cls][line]
    cs = np.clip((CS_ZERO_SLOPE - slope) / (CS_ZERO_SLOPE - knee), 0.0, 1.0)
    if log is not None:
        fig = {"warm": "7.4-1a", "cold-1.1": "7.4-1b", "cold-1.2": "7.4-1c"}[cls]
        label = "unobstructed slippery surface" if slippery else "all other surfaces"
        if np.ndim(slope) == 0 and slope <= knee:
            sub = f"slope {fmt_deg(slope)} <= {fmt_deg(knee)}, so Cs = 1"
        elif np.ndim(slope) == 0 and slope >= CS_ZERO_SLOPE:
            sub = f"slope {fmt_deg(slope)} >= 70°, so Cs = 0"
        else:
            sub = f"Cs = (70 - {fmt(slope)}) / (70 - {fmt(knee)})"
        log.add(
            "Cs",
            f"roof slope factor, Ct = {fmt(ct)} line for {label}",
            f"Cs = 1 for slope <= {fmt(knee)} deg, else (70 - slope)/(70 - {fmt(knee)}), >= 0",
            sub,
            cs,
            "-",
            f"{STANDARD} Fig. {fig}",
        )
    return cs


def sloped_roof_load(pf, cs, log: StepLog | None = None):
    """Sloped roof (balanced) snow load ps = Cs pf [psf] (ASCE 7-22 Eq. 7.4-1)."""
    ps = np.asarray(cs) * np.asarray(pf, dtype=float)
    if log is not None:
        log.add(
            "ps",
            "sloped roof (balanced) snow load",
            "ps = Cs pf",
            f"ps = {fmt(cs)} x {fmt(pf)}",
            ps,
            "psf",
            f"{STANDARD} Eq. 7.4-1",
        )
    return ps
