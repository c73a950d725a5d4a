"""Sliding snow from an upper roof onto a lower roof: the rule two editions share.

Both ASCE editions neve has state the same sliding-snow rule (0.4 pf W spread
over 15 ft; slope thresholds 1/4 on 12 and 2 on 12).  Each edition's
``sliding`` module hands in its own clause for the steps, so no edition or
clause is named here (the registry's rule: clauses live in the standards'
folders).
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.steps import StepLog, fmt

#: upper-roof slopes above which sliding is considered [deg]
SLIDING_THRESHOLD_DEG = {
    "slippery": math.degrees(math.atan2(0.25, 12.0)),  # 1/4 on 12
    "other": math.degrees(math.atan2(2.0, 12.0)),  # 2 on 12
}
#: the length over which the sliding load spreads on the lower roof [ft]
SPREAD = 15.0
#: fraction of the upper roof's snow that slides
SLIDING_FRACTION = 0.4


def sliding_required(upper_slope, upper_surface: str) -> np.ndarray:
    """Sliding is considered for slippery upper roofs steeper than 1/4 on 12
    and other upper roofs steeper than 2 on 12 [bool]."""
    return np.asarray(upper_slope, dtype=float) > SLIDING_THRESHOLD_DEG[upper_surface] + 1e-9


def sliding_load(
    pf_upper,
    w_upper,
    lower_length,
    separation=0.0,
    height=None,
    log: StepLog | None = None,
    *,
    ref: str,
) -> dict:
    """Sliding load on a lower roof.

    Parameters
    ----------
    pf_upper : float
        Flat roof snow load of the upper roof [psf].
    w_upper : float
        Horizontal eave-to-ridge distance of the upper roof [ft].
    lower_length : float
        Width of the lower roof from the upper roof's eave [ft].
    separation : float
        Horizontal gap s between the structures [ft] (0 for one structure).
    height : float
        Vertical separation h [ft]; needed when ``separation > 0``.
    ref : str
        The provision the steps cite (the edition's title and clause).

    Returns
    -------
    dict
        ``required``, ``reason``, ``line_load`` (total per unit length of
        eave [plf]), ``load`` (uniform intensity on the lower roof [psf]),
        ``extent`` [ft].

    Notes
    -----
    The total load per unit length of eave is ``0.4 pf W``, spread
    uniformly over 15 ft of the lower roof; a lower roof narrower than
    15 ft takes the proportional share.  Separate structures take sliding
    snow only where ``h/s > 1`` and ``s < 15 ft``, over ``15 - s`` with
    ``0.4 pf W (15 - s)/15`` per unit length.  The load is added to the
    lower roof's balanced load.
    """
    s = float(separation)
    if s > 0:
        if height is None or not (height / s > 1.0 and s < SPREAD):
            return {
                "required": False,
                "reason": f"separate structures: needs h/s > 1 and s < 15 ft (s = {fmt(s)} ft)",
            }
        extent_full = SPREAD - s
    else:
        extent_full = SPREAD
    total = SLIDING_FRACTION * pf_upper * w_upper * extent_full / SPREAD
    extent = min(extent_full, lower_length) if lower_length > 0 else extent_full
    intensity = SLIDING_FRACTION * pf_upper * w_upper / SPREAD
    line = intensity * extent
    if log is not None:
        if s > 0:
            log.add(
                "S_total",
                "sliding load per unit length of eave, separate structure",
                "0.4 pf W (15 - s)/15",
                f"0.4 x {fmt(pf_upper)} x {fmt(w_upper)} x (15 - {fmt(s)})/15",
                total,
                "plf",
                ref,
            )
        else:
            log.add(
                "S_total",
                "sliding load per unit length of eave",
                "0.4 pf W",
                f"0.4 x {fmt(pf_upper)} x {fmt(w_upper)}",
                total,
                "plf",
                ref,
            )
        log.add(
            "x_slide",
            "extent of the sliding load on the lower roof",
            "x = min(15 ft - s, lower roof width)",
            f"x = min({fmt(extent_full)}, {fmt(lower_length)})",
            extent,
            "ft",
            ref,
        )
        log.add(
            "p_slide",
            "uniform sliding load intensity, added to the balanced load",
            "p = 0.4 pf W / 15",
            f"p = 0.4 x {fmt(pf_upper)} x {fmt(w_upper)} / 15",
            intensity,
            "psf",
            ref,
        )
        if extent < extent_full:
            log.add(
                "S_line",
                "sliding load kept on the narrower lower roof (proportional share)",
                "p x",
                f"{fmt(intensity)} x {fmt(extent)}",
                line,
                "plf",
                ref,
            )
    return {"required": True, "reason": "", "line_load": line, "load": intensity, "extent": extent}
