"""Multiple folded plate, sawtooth and barrel vault roofs (ASCE 7-16 Sec. 7.4.4, 7.6.3).

One family for the three (neve's shape ``sawtooth``, with ``folded-plate``
and ``barrel-vault`` as its other names): Cs = 1 whatever the slope, so the
balanced load is pf; where the slope exceeds 3/8 on 12 the unbalanced load
rises from 0.5 pf at the ridge (or crown) to 2 pf / Ce in the valley, with
the snow surface above the valley no higher than the snow above the ridge.
Loads on the horizontal projection [psf]; lengths [ft]; slopes [deg].

Reading of the valley limit: the snow depths are the loads divided by the
density of Eq. 7.7-1, and the snow above the ridge is the unbalanced 0.5 pf
there, so the valley depth is at most ``hr + 0.5 pf / gamma`` and the valley
load at most ``gamma hr + 0.5 pf``; a limited valley load leaves the snow
surface level from ridge to valley.

References
----------
.. [1] ASCE/SEI 7-16, Sec. 7.4.4 (Cs = 1.0 for these roofs), Sec. 7.6.3
   (unbalanced loads, the 3/8 on 12 threshold, the valley limit),
   Fig. 7.6-3 (balanced and unbalanced loads for a sawtooth roof; number
   from memory), Eq. 7.7-1 (snow density).
"""

from __future__ import annotations

import math

from neve.engine.asce7_16 import STANDARD
from neve.engine.asce7_16.drift import snow_density
from neve.engine.steps import StepLog, fmt, fmt_deg

#: unbalanced loads are required for slopes above 3/8 on 12 [deg] (Sec. 7.6.3; printed 1.79°)
UNBALANCED_MIN_SLOPE_DEG = math.degrees(math.atan2(0.375, 12.0))
#: the slope factor of these roofs, whatever the slope (Sec. 7.4.4)
CS_MULTISPAN = 1.0
#: unbalanced load at the ridge or crown, as a share of pf (Sec. 7.6.3)
RIDGE_SHARE = 0.5
#: unbalanced load in the valley: 2 pf / Ce (Sec. 7.6.3)
VALLEY_FACTOR = 2.0

_REF = f"{STANDARD} Sec. 7.6.3"


def uniform_cs(log: StepLog | None = None) -> float:
    """Cs = 1.0 for multiple folded plate, sawtooth and barrel vault roofs (Sec. 7.4.4)."""
    if log is not None:
        log.add("Cs", "roof slope factor of a multiple folded plate, sawtooth or barrel vault "
                "roof: no reduction for slope", "Cs = 1.0", "Cs = 1.0", CS_MULTISPAN, "-",
                f"{STANDARD} Sec. 7.4.4")  # fmt: skip
    return CS_MULTISPAN


def unbalanced_required(slope) -> bool:
    """Whether Sec. 7.6.3 requires the unbalanced load: slope above 3/8 on 12."""
    return bool(float(slope) > UNBALANCED_MIN_SLOPE_DEG + 1e-9)


def valley_loads(pg, pf, ce, ridge_height, log: StepLog | None = None) -> dict:
    """Unbalanced load of a multi-span roof at the ridge and in the valley [psf].

    Parameters
    ----------
    pg : float
        Ground snow load [psf] (for the density of Eq. 7.7-1).
    pf : float
        Flat roof snow load [psf]; with Cs = 1 the balanced load.
    ce : float
        Exposure factor [-].
    ridge_height : float
        Height hr of the ridge above the valley [ft].

    Returns
    -------
    dict
        ``ridge`` (0.5 pf), ``valley_unlimited`` (2 pf / Ce), ``valley_limit``
        (``gamma hr + 0.5 pf``), ``valley`` (the smaller), ``governs``
        (``"2 pf/Ce"`` or ``"ridge height"``), ``gamma`` [pcf], ``h_ridge`` and
        ``h_valley`` [ft] (snow depths); linear from ridge to valley.

    References
    ----------
    ASCE 7-16 Sec. 7.6.3, Eq. 7.7-1.
    """
    pf, ce, hr = float(pf), float(ce), float(ridge_height)
    ridge = RIDGE_SHARE * pf
    unlimited = VALLEY_FACTOR * pf / ce
    gamma = float(snow_density(pg, log))
    h_ridge = ridge / gamma
    h_max = hr + h_ridge
    limit = gamma * h_max
    valley = min(unlimited, limit)
    governs = "2 pf/Ce" if unlimited <= limit else "ridge height"
    if log is not None:
        log.add("p_ridge", "unbalanced: load at the ridge", "p = 0.5 pf",
                f"p = 0.5 x {fmt(pf)}", ridge, "psf", _REF)  # fmt: skip
        log.add("p_valley", "unbalanced: load in the valley before the limit", "p = 2 pf / Ce",
                f"p = 2 x {fmt(pf)} / {fmt(ce)}", unlimited, "psf", _REF)  # fmt: skip
        log.add("h_ridge", "snow depth above the ridge", "h = p_ridge / gamma",
                f"h = {fmt(ridge)} / {fmt(gamma)}", h_ridge, "ft", _REF)  # fmt: skip
        log.add("h_valley_max", "deepest valley snow: its surface no higher than the snow "
                "above the ridge", "h_max = hr + h_ridge", f"h_max = {fmt(hr)} + {fmt(h_ridge)}",
                h_max, "ft", _REF)  # fmt: skip
        log.add("p_valley_max", "valley load of that depth", "p_max = gamma h_max",
                f"p_max = {fmt(gamma)} x {fmt(h_max)}", limit, "psf", _REF)  # fmt: skip
        log.add("p_v", f"unbalanced: valley load ({governs} governs)",
                "p_v = min(2 pf / Ce, p_max)", f"p_v = min({fmt(unlimited)}, {fmt(limit)})",
                valley, "psf", _REF)  # fmt: skip
    return {"ridge": ridge, "valley_unlimited": unlimited, "valley_limit": limit,
            "valley": valley, "governs": governs, "gamma": gamma, "h_ridge": h_ridge,
            "h_valley": valley / gamma}  # fmt: skip


def threshold_text(slope) -> str:
    """Why a multi-span roof needs no unbalanced load (its slope against 3/8 on 12)."""
    return (
        f"slope {fmt_deg(slope)} does not exceed 3/8 on 12 "
        f"({fmt_deg(UNBALANCED_MIN_SLOPE_DEG)}) (Sec. 7.6.3)"
    )
