"""Ice dams and icicles along eaves (ASCE 7-22 Sec. 7.4.5) and partial
loading (ASCE 7-22 Sec. 7.5).

References
----------
.. [1] ASCE/SEI 7-22, Sec. 7.4.5; Sec. 7.5 and Fig. 7.5-1.
"""

from __future__ import annotations

import numpy as np

from neve.engine.asce7_22 import STANDARD
from neve.engine.steps import StepLog, fmt

#: R-values below which a warm roof draining over its eaves needs the
#: overhang load [ft2.h.F/Btu] (Sec. 7.4.5)
ICE_DAM_R_UNVENTILATED = 30.0
ICE_DAM_R_VENTILATED = 20.0
#: partial loading need not be applied to members spanning perpendicular to
#: the ridge of gable roofs of this slope or more [deg] (Sec. 7.5)
PARTIAL_GABLE_EXEMPT_DEG = 2.38


def ice_dam_applies(
    warm: bool, ventilated: bool | None, r_value: float | None
) -> tuple[bool, list[str]]:
    """Whether the 2 pf overhang load applies; returns ``(applies, flags)``.

    It applies to warm (heated) roofs that drain water over their eaves,
    when unventilated with R < 30 or ventilated with R < 20 ft2.h.F/Btu.
    Where ventilation or R is not stated the load is applied (conservative)
    and a flag says so.  Reading: cold, unheated and freezer roofs are not
    among the roof types the provision names.
    """
    if not warm:
        return False, []
    if ventilated is None or r_value is None:
        return True, ["ice_dam_conditions_unstated"]
    limit = ICE_DAM_R_VENTILATED if ventilated else ICE_DAM_R_UNVENTILATED
    return r_value < limit, []


def ice_dam_load(pf, log: StepLog | None = None):
    """Uniform load on overhangs, 2 pf [psf], with pf of the heated roof up-slope
    of the exterior wall.  Only dead load acts with it (ASCE 7-22 Sec. 7.4.5)."""
    p = 2.0 * np.asarray(pf, dtype=float)
    if log is not None:
        log.add(
            "p_ice",
            "ice dam and icicle load on the overhang",
            "p = 2 pf",
            f"p = 2 x {fmt(pf)}",
            p,
            "psf",
            f"{STANDARD} Sec. 7.4.5",
        )
    return p


def partial_exempt(shape: str, slope) -> np.ndarray:
    """Members perpendicular to the ridge of gable roofs of 1/2 on 12 (2.38 deg)
    or more need no partial loading (ASCE 7-22 Sec. 7.5) [bool]."""
    return np.asarray(shape == "gable") & (
        np.asarray(slope, dtype=float) >= PARTIAL_GABLE_EXEMPT_DEG
    )


def partial_loads(ps, log: StepLog | None = None) -> dict:
    """Full and half balanced loads for the partial-loading arrangements.

    The balanced load on some spans and half of it on the others, arranged
    as Fig. 7.5-1 shows (an interior span unloaded, an end span unloaded,
    two adjacent spans loaded), whichever gives the worst effect on a
    continuous member.  Neither the minimum load nor rain-on-snow is
    combined with it.
    """
    full = np.asarray(ps, dtype=float)
    half = 0.5 * full
    if log is not None:
        log.add(
            "p_full",
            "partial loading: full balanced load on the loaded spans",
            "p = ps",
            f"p = {fmt(ps)}",
            full,
            "psf",
            f"{STANDARD} Sec. 7.5",
        )
        log.add(
            "p_half",
            "partial loading: half the balanced load on the other spans",
            "p = 0.5 ps",
            f"p = 0.5 x {fmt(ps)}",
            half,
            "psf",
            f"{STANDARD} Sec. 7.5, Fig. 7.5-1",
        )
    return {"full": full, "half": half}
