"""Unbalanced snow loads on hip and gable roofs (ASCE 7-22 Sec. 7.6.1).

From memory: the slope range (1/2 on 12 to 7 on 12), the narrow-roof case
(W <= 20 ft with simply supported prismatic members) and the general case
(windward 0.3 ps; leeward ps plus a surcharge hd gamma / sqrt(S) over
8 sqrt(S) hd / 3) follow the previous edition, with two changes: hd comes
from Eq. 7.6-1 with W2 (confirmed [NFBA25]: the unbalanced and drift
provisions were revised), and the narrow-roof leeward load is pg (no
importance factor).

References
----------
.. [1] ASCE/SEI 7-22, Sec. 7.6.1 and Fig. 7.6-2 (balanced and unbalanced
   loads for hip and gable roofs); Eq. 7.6-1 (drift height).
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.asce7_22 import STANDARD
from neve.engine.asce7_22.drift import drift_height, snow_density
from neve.engine.steps import StepLog, fmt, fmt_deg

#: unbalanced loads are not required below 1/2 on 12 or above 7 on 12
LOW_SLOPE_DEG = math.degrees(math.atan2(0.5, 12.0))  # 2.386 deg, printed as 2.38
HIGH_SLOPE_DEG = math.degrees(math.atan2(7.0, 12.0))  # 30.256 deg, printed as 30.2
#: eave-to-ridge distance up to which the narrow-roof case applies [ft]
NARROW_W = 20.0
#: windward fraction of ps in the general case
WINDWARD_FRACTION = 0.3
#: the least fetch of the unbalanced surcharge: a W under 20 ft is taken as 20 ft [ft]
#: (Sec. 7.6.1; from memory, as ASCE 7-16)
LEAST_FETCH = 20.0


def unbalanced_required(shape: str, slope) -> np.ndarray:
    """Whether hip/gable unbalanced loads are required [bool].

    Required for hip and gable roofs with slopes from 1/2 on 12 to 7 on 12
    inclusive.  Reading: the standard prints the limits both as ratios and
    rounded angles (2.38 and 30.2 degrees); neve takes the wider of the two
    readings at each end (2.38 deg and 7 on 12 = 30.26 deg), so that a user
    typing either form gets the case.  Monoslope and flat roofs have no
    hip/gable unbalanced case.
    """
    slope = np.asarray(slope, dtype=float)
    if shape not in ("gable", "hip"):
        return np.zeros_like(slope, dtype=bool)
    return (slope >= 2.38 - 1e-9) & (slope <= HIGH_SLOPE_DEG + 1e-9)


def narrow_roof(pg, log: StepLog | None = None) -> dict:
    """Unbalanced load for W <= 20 ft with simply supported prismatic members.

    Windward side unloaded; leeward side uniform ``pg`` [psf].

    References
    ----------
    ASCE 7-22 Sec. 7.6.1, Fig. 7.6-2 (from memory).
    """
    leeward = float(pg)
    if log is not None:
        log.add(
            "p_lee",
            "unbalanced, narrow roof: uniform load on the leeward side",
            "p = pg",
            f"p = {fmt(pg)}",
            leeward,
            "psf",
            f"{STANDARD} Sec. 7.6.1",
        )
        log.add(
            "p_wind",
            "unbalanced, narrow roof: windward side",
            "p = 0",
            "p = 0",
            0.0,
            "psf",
            f"{STANDARD} Sec. 7.6.1",
        )
    return {"windward": 0.0, "leeward": leeward, "surcharge": 0.0, "surcharge_extent": 0.0}


def unbalanced_fetch(eave_to_ridge, log: StepLog | None = None):
    """The fetch lu of the unbalanced surcharge: W, not less than 20 ft [ft] (ASCE 7-22 Sec. 7.6.1).

    From memory, as ASCE 7-16 Sec. 7.6.1.
    """
    w = np.asarray(eave_to_ridge, dtype=float)
    lu = np.maximum(w, LEAST_FETCH)
    if log is not None:
        log.add(
            "lu",
            "fetch of the unbalanced surcharge: the windward W, not less than 20 ft",
            "lu = max(W, 20 ft)",
            f"lu = max({fmt(w)}, 20)",
            lu,
            "ft",
            f"{STANDARD} Sec. 7.6.1",
        )
    return float(lu) if lu.ndim == 0 else lu


def general_case(pg, ps, slope, eave_to_ridge, w2, log: StepLog | None = None) -> dict:
    """Unbalanced load, general case: windward 0.3 ps, leeward ps plus a surcharge.

    The rectangular surcharge on the leeward side next to the ridge has
    intensity ``hd gamma / sqrt(S)`` and extent ``8 sqrt(S) hd / 3`` from the
    ridge, with hd from Eq. 7.6-1 using lu = W (the windward eave-to-ridge
    distance; a W under 20 ft taken as 20 ft, :func:`unbalanced_fetch`) and
    the site's W2, and S the run for a rise of one.

    Parameters
    ----------
    pg, ps : float
        Ground and balanced sloped roof loads [psf].
    slope : float
        Roof slope [deg].
    eave_to_ridge : float
        W [ft].
    w2 : float
        Winter wind parameter [-].

    References
    ----------
    ASCE 7-22 Sec. 7.6.1, Fig. 7.6-2, Eq. 7.7-1, Eq. 7.6-1.
    """
    ref = f"{STANDARD} Sec. 7.6.1"
    gamma = float(snow_density(pg, log))
    lu = unbalanced_fetch(eave_to_ridge, log)
    hd = float(drift_height(pg, lu, w2, log, "hd", "unbalanced surcharge drift"))
    s_run = 1.0 / math.tan(math.radians(slope))
    windward = WINDWARD_FRACTION * ps
    sur = hd * gamma / math.sqrt(s_run)
    extent = 8.0 * math.sqrt(s_run) * hd / 3.0
    if log is not None:
        log.add(
            "S",
            "roof slope run for a rise of one",
            "S = 1 / tan(slope)",
            f"S = 1 / tan({fmt_deg(slope)})",
            s_run,
            "-",
            ref,
        )
        log.add(
            "p_wind",
            "unbalanced: windward side",
            "p = 0.3 ps",
            f"p = 0.3 x {fmt(ps)}",
            windward,
            "psf",
            ref,
        )
        log.add(
            "p_lee",
            "unbalanced: leeward side (uniform part)",
            "p = ps",
            f"p = {fmt(ps)}",
            ps,
            "psf",
            ref,
        )
        log.add(
            "p_sur",
            "unbalanced: leeward surcharge next to the ridge",
            "p_sur = hd gamma / sqrt(S)",
            f"p_sur = {fmt(hd)} x {fmt(gamma)} / sqrt({fmt(s_run)})",
            sur,
            "psf",
            ref,
        )
        log.add(
            "x_sur",
            "unbalanced: surcharge extent from the ridge",
            "x = 8 sqrt(S) hd / 3",
            f"x = 8 x sqrt({fmt(s_run)}) x {fmt(hd)} / 3",
            extent,
            "ft",
            ref,
        )
    return {
        "windward": windward,
        "leeward": ps,
        "surcharge": sur,
        "surcharge_extent": extent,
        "hd": hd,
        "gamma": gamma,
        "S": s_run,
    }
