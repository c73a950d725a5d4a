"""Snow density, drift height and drifts (ASCE 7-16 Sec. 7.6.1, 7.7, 7.8).

Loads in [psf], lengths in [ft], density in [pcf].  Every function accepts
scalars or numpy arrays.

References
----------
.. [1] ASCE/SEI 7-16, Eq. 7.7-1 (snow density), Fig. 7.6-1 (drift height),
   Sec. 7.7.1 (lower roof of a structure), Sec. 7.7.2 (adjacent
   structures), Sec. 7.8 (roof projections and parapets), Fig. 7.7-1,
   Fig. 7.7-2.
"""

from __future__ import annotations

import numpy as np

from neve.engine.asce7_16 import STANDARD
from neve.engine.drift_cases import log_step_height
from neve.engine.steps import StepLog, fmt

#: the largest snow density Eq. 7.7-1 gives [pcf]
DENSITY_CAP = 30.0
#: drifts are not required where hc/hb is below this (Sec. 7.7.1)
HC_HB_LIMIT = 0.2
#: factor on hd for windward drifts and for parapets/projections (Sec. 7.7.1, 7.8)
WINDWARD_FACTOR = 0.75
#: sides of roof projections shorter than this need no drift [ft] (Sec. 7.8)
PROJECTION_EXEMPT_LENGTH = 15.0
#: adjacent structures farther apart than this need no drift [ft] (Sec. 7.7.2)
ADJACENT_SEPARATION_LIMIT = 20.0


def snow_density(pg, log: StepLog | None = None):
    """Snow density gamma = 0.13 pg + 14, at most 30 pcf (ASCE 7-16 Eq. 7.7-1).

    Parameters
    ----------
    pg : float or array
        Ground snow load [psf].

    Returns
    -------
    gamma : float or array
        Snow density [pcf].
    """
    gamma = np.minimum(0.13 * np.asarray(pg, dtype=float) + 14.0, DENSITY_CAP)
    if log is not None:
        log.add(
            "gamma",
            "snow density",
            "gamma = 0.13 pg + 14 <= 30 pcf",
            f"gamma = 0.13 x {fmt(pg)} + 14",
            gamma,
            "pcf",
            f"{STANDARD} Eq. 7.7-1",
        )
    return gamma


def drift_height(pg, lu, log: StepLog | None = None, symbol: str = "hd", what: str = "drift"):
    """Drift height hd from the upwind fetch lu [ft].

    ``hd = 0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5``, not below zero; hd is
    zero where pg is zero (no snow to drift; a reading, the figure starts at
    pg > 0).

    The fetch is used as given.  Reading (from memory): the one least fetch
    the provisions state is that of the unbalanced load of hip and gable
    roofs, where a W under 20 ft is taken as 20 ft (Sec. 7.6.1; applied by
    :func:`neve.engine.asce7_16.unbalanced.general_case`); the drift
    provisions (Sec. 7.7.1, 7.8) take the roof lengths as they are.

    References
    ----------
    ASCE 7-16 Fig. 7.6-1 (the equation printed with the graph).
    """
    lu_used = np.asarray(lu, dtype=float)
    pg = np.asarray(pg, dtype=float)
    hd = np.maximum(0.43 * np.cbrt(lu_used) * (pg + 10.0) ** 0.25 - 1.5, 0.0)
    # Reading: with no ground snow there is no snow to drift; the fitted
    # relation would otherwise still give about 2 ft at pg = 0.
    hd = np.where(pg > 0, hd, 0.0)
    if log is not None:
        log.add(
            symbol,
            f"{what} height from fetch lu = {fmt(lu_used)} ft",
            "hd = 0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5",
            f"hd = 0.43 x {fmt(lu_used)}^(1/3) x ({fmt(pg)} + 10)^(1/4) - 1.5",
            hd,
            "ft",
            f"{STANDARD} Fig. 7.6-1",
        )
    return hd


def balanced_height(ps, gamma, log: StepLog | None = None):
    """Height of the balanced snow hb = ps / gamma [ft] (ASCE 7-16 Sec. 7.7.1)."""
    hb = np.asarray(ps, dtype=float) / np.asarray(gamma, dtype=float)
    if log is not None:
        log.add(
            "hb",
            "height of balanced snow on the lower roof",
            "hb = ps / gamma",
            f"hb = {fmt(ps)} / {fmt(gamma)}",
            hb,
            "ft",
            f"{STANDARD} Sec. 7.7.1",
        )
    return hb


def drift_required(hc, hb):
    """Drifts are required unless hc/hb < 0.2 (ASCE 7-16 Sec. 7.7.1) [bool]."""
    hc = np.asarray(hc, dtype=float)
    hb = np.asarray(hb, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(hb > 0, hc / hb, np.inf)
    return (ratio >= HC_HB_LIMIT) & (hc > 0)


def drift_shape(hd, hc):
    """Drift height used and width, given the clear height hc [ft].

    Where ``hd <= hc``: ``w = 4 hd``.  Where the drift would fill the clear
    height (``hd > hc``): ``w = 4 hd^2 / hc`` but at most ``8 hc``, and the
    height used is ``hc``.

    Returns
    -------
    hd_used, w : float or array
        Drift height and width [ft].

    References
    ----------
    ASCE 7-16 Sec. 7.7.1 and Fig. 7.7-1.
    """
    hd = np.asarray(hd, dtype=float)
    hc = np.asarray(hc, dtype=float)
    fills = hd > hc
    with np.errstate(divide="ignore", invalid="ignore"):
        w_full = np.minimum(4.0 * hd**2 / hc, 8.0 * hc)
    w = np.where(fills, w_full, 4.0 * hd)
    return np.where(fills, hc, hd), w


def _log_shape(log, hd, hc, hd_used, w, ref: str, what: str):
    if log is None:
        return
    if np.ndim(hd) == 0 and hd > hc:
        log.add(
            "hd",
            f"{what}: drift fills the clear height, so hd = hc",
            "hd = hc",
            f"hd = {fmt(hc)}",
            hd_used,
            "ft",
            ref,
        )
        log.add(
            "w",
            f"{what}: drift width (drift fills the clear height)",
            "w = 4 hd^2 / hc <= 8 hc",
            f"w = min(4 x {fmt(hd)}^2 / {fmt(hc)}, 8 x {fmt(hc)})",
            w,
            "ft",
            ref,
        )
    else:
        log.add("w", f"{what}: drift width", "w = 4 hd", f"w = 4 x {fmt(hd_used)}", w, "ft", ref)


def surcharge(hd, gamma, log: StepLog | None = None, what: str = "drift"):
    """Peak drift surcharge pd = hd gamma [psf] (ASCE 7-16 Sec. 7.7.1)."""
    pd = np.asarray(hd, dtype=float) * np.asarray(gamma, dtype=float)
    if log is not None:
        log.add(
            "pd",
            f"{what}: peak drift surcharge",
            "pd = hd gamma",
            f"pd = {fmt(hd)} x {fmt(gamma)}",
            pd,
            "psf",
            f"{STANDARD} Sec. 7.7.1",
        )
    return pd


def step_drift(pg, ps_lower, step, log: StepLog | None = None) -> dict:
    """Drift on a lower roof at a roof step or beside an adjacent structure.

    Parameters
    ----------
    pg : float
        Ground snow load [psf].
    ps_lower : float
        Balanced load on the lower roof [psf].
    step : RoofStep
        Height [ft] from the lower roof surface to the top of the upper roof
        (including any parapet), upper and lower roof lengths [ft], and the
        horizontal separation [ft] (0 for a step in one structure).

    Returns
    -------
    dict
        ``required`` (bool), ``reason``, ``hd``, ``w``, ``pd``, ``governs``
        (leeward|windward), ``hb``, ``hc``, ``gamma``, ``hd_leeward``,
        ``hd_windward``, ``w_on_roof`` and ``pd_far_edge`` (truncation at the
        lower roof's far edge).

    Notes
    -----
    Leeward drift uses the upper roof length as fetch; windward drift uses
    the lower roof length with 0.75 on hd; the larger height governs
    (Sec. 7.7.1).  The fetches are the roof lengths as given (no least
    fetch: see :func:`drift_height`); where both give no drift height, no
    drift is required.  A parapet on the upper roof at the step
    (``upper_parapet``) adds its height to the step's, with a step of its
    own: the drift forms against the parapet's top.  A drift wider than the lower roof is truncated at the far
    edge, not reduced to zero there.  For a separate adjacent structure
    (separation s > 0), drifts are required only where s < 20 ft and
    s < 6 h; the leeward drift height is then the lesser of hd and
    (6h - s)/6 and its width the lesser of 6 hd and 6h - s (Sec. 7.7.2);
    neve also keeps that height at or below hc (the Sec. 7.7.1 limit), and
    compares it with the windward drift, the larger governing.
    For the windward drift beside an adjacent structure Sec. 7.7.2 sends
    the designer to Sec. 7.7.1 and permits truncation; neve does not
    truncate it (conservative) and says so.
    """
    ref = f"{STANDARD} Sec. 7.7.1"
    gamma = float(snow_density(pg, log))
    hb = float(balanced_height(ps_lower, gamma, log))
    h, s = log_step_height(step, log, ref), step.separation
    hc = h - hb
    if log is not None:
        log.add(
            "hc",
            "clear height from the balanced snow to the top of the upper roof",
            "hc = h - hb",
            f"hc = {fmt(h)} - {fmt(hb)}",
            hc,
            "ft",
            ref,
        )
    out = {"gamma": gamma, "hb": hb, "hc": hc, "h": h, "s": s, "required": True, "reason": ""}
    if s > 0 and (s >= ADJACENT_SEPARATION_LIMIT or s >= 6.0 * h):
        out.update(
            required=False,
            reason=f"separation {fmt(s)} ft is not less than 20 ft and 6h = {fmt(6 * h)} ft (Sec. 7.7.2)",
        )
        return out
    if not bool(drift_required(hc, hb)):
        out.update(
            required=False,
            reason=f"hc/hb = {fmt(hc / hb if hb else float('inf'))} < 0.2, no drift required (Sec. 7.7.1)",
        )
        return out
    hd_lee = float(drift_height(pg, step.upper_length, log, "hd_leeward", "leeward drift"))
    hd_wind_raw = float(drift_height(pg, step.lower_length, None))
    hd_wind = WINDWARD_FACTOR * hd_wind_raw
    if log is not None:
        log.add(
            "hd_windward",
            f"windward drift height, 0.75 x hd from fetch lu = {fmt(step.lower_length)} ft",
            "hd_w = 0.75 [0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5]",
            f"hd_w = 0.75 x {fmt(hd_wind_raw)}",
            hd_wind,
            "ft",
            f"{STANDARD} Sec. 7.7.1, Fig. 7.6-1",
        )
    if s > 0:
        ref2 = f"{STANDARD} Sec. 7.7.2"
        hd_adj = min(hd_lee, (6.0 * h - s) / 6.0, hc)
        w_lee = min(6.0 * hd_adj, 6.0 * h - s)
        if log is not None:
            log.add(
                "hd_leeward_adj",
                "leeward drift height beside an adjacent structure (not above hc)",
                "hd = min(hd, (6h - s)/6, hc)",
                f"hd = min({fmt(hd_lee)}, (6 x {fmt(h)} - {fmt(s)})/6, {fmt(hc)})",
                hd_adj,
                "ft",
                ref2,
            )
        hd_lee = hd_adj
    if max(hd_lee, hd_wind) <= 0.0:
        out.update(
            required=False,
            reason=f"the fetches ({fmt(step.upper_length)} ft and {fmt(step.lower_length)} ft) "
            "give no drift height, no drift required (Sec. 7.7.1, Fig. 7.6-1)",
        )
        return out
    governs = "leeward" if hd_lee >= hd_wind else "windward"
    if s > 0 and governs == "leeward":
        hd_used, w = hd_lee, w_lee
        if log is not None:
            log.add(
                "w",
                "leeward drift width beside an adjacent structure",
                "w = min(6 hd, 6h - s)",
                f"w = min(6 x {fmt(hd_used)}, 6 x {fmt(h)} - {fmt(s)})",
                w,
                "ft",
                ref2,
            )
    else:
        hd_gov = max(hd_lee, hd_wind)
        hd_used, w = (float(x) for x in drift_shape(hd_gov, hc))
        _log_shape(log, hd_gov, hc, hd_used, w, ref, f"{governs} drift")
    pd = float(surcharge(hd_used, gamma, log))
    w_on = min(w, step.lower_length) if step.lower_length > 0 else w
    pd_far = pd * (1.0 - w_on / w) if w > 0 else 0.0
    if log is not None and w > step.lower_length > 0:
        log.add(
            "pd_edge",
            "drift truncated at the far edge of the lower roof",
            "pd_edge = pd (1 - lower_length / w)",
            f"pd_edge = {fmt(pd)} x (1 - {fmt(step.lower_length)} / {fmt(w)})",
            pd_far,
            "psf",
            ref,
        )
    out.update(
        hd=hd_used,
        w=w,
        pd=pd,
        governs=governs,
        hd_leeward=hd_lee,
        hd_windward=hd_wind,
        w_on_roof=w_on,
        pd_far_edge=pd_far,
    )
    if s > 0 and governs == "windward":
        out["reason"] = (
            "windward drift beside an adjacent structure not truncated (conservative; Sec. 7.7.2 permits truncation)"
        )
    return out


def obstruction_drift(
    pg, ps, height, upwind_length, log: StepLog | None = None, what: str = "parapet"
) -> dict:
    """Windward drift against a parapet wall or a rooftop projection.

    The drift height is 0.75 hd with lu the fetch the caller gives (for a
    parapet the roof length upwind of it; for a projection the greater of
    the roof lengths on either side, Sec. 7.8, worked out by
    :func:`neve.engine.drift_cases.projection_cases`), shaped as in
    Sec. 7.7.1 with hc = height - hb.

    References
    ----------
    ASCE 7-16 Sec. 7.8.
    """
    ref = f"{STANDARD} Sec. 7.8"
    gamma = float(snow_density(pg, log))
    hb = float(balanced_height(ps, gamma, log))
    hc = height - hb
    if log is not None:
        log.add(
            "hc",
            f"clear height from the balanced snow to the top of the {what}",
            "hc = h - hb",
            f"hc = {fmt(height)} - {fmt(hb)}",
            hc,
            "ft",
            ref,
        )
    out = {
        "gamma": gamma,
        "hb": hb,
        "hc": hc,
        "required": True,
        "reason": "",
        "governs": "windward",
    }
    if not bool(drift_required(hc, hb)):
        out.update(
            required=False,
            reason=f"hc/hb below 0.2 (or the {what} is buried), no drift required (Sec. 7.7.1, 7.8)",
        )
        return out
    hd_raw = float(drift_height(pg, upwind_length, None))
    hd = WINDWARD_FACTOR * hd_raw
    if log is not None:
        log.add(
            "hd",
            f"{what} drift height, 0.75 x hd from upwind length lu = {fmt(upwind_length)} ft",
            "hd = 0.75 [0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5]",
            f"hd = 0.75 x {fmt(hd_raw)}",
            hd,
            "ft",
            f"{ref}, Fig. 7.6-1",
        )
    if hd <= 0.0:
        out.update(
            required=False,
            reason=f"the fetch lu = {fmt(upwind_length)} ft gives no drift height, no drift "
            "required (Sec. 7.8, Fig. 7.6-1)",
        )
        return out
    hd_used, w = (float(x) for x in drift_shape(hd, hc))
    _log_shape(log, hd, hc, hd_used, w, ref, f"{what} drift")
    pd = float(surcharge(hd_used, gamma, log, f"{what} drift"))
    out.update(hd=hd_used, w=w, pd=pd)
    return out


def projection_exempt(plan_length) -> np.ndarray:
    """A projection side shorter than 15 ft needs no drift (ASCE 7-16 Sec. 7.8) [bool]."""
    return np.asarray(plan_length, dtype=float) < PROJECTION_EXEMPT_LENGTH
