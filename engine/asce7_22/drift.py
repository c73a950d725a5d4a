"""Snow density, drift height with the winter wind parameter W2, and drifts
(ASCE 7-22 Sec. 7.6.1, 7.7, 7.8).

Loads in [psf], lengths in [ft], density in [pcf], W2 a fraction [-].  Every
function accepts scalars or numpy arrays.  Sources by tag: see
:mod:`neve.engine.asce7_22`.

What is confirmed from published sources: the drift height
``hd = 1.5 sqrt(pg^0.74 lu^0.70 W2^1.7 / gamma)`` and the density
``gamma = 0.13 pg + 14 <= 30 pcf`` [STR-CAN, SKA]; W2 as the share of winter
time with wind above 10 mph (Fig. 7.6-1) [NFBA25]; leeward and windward drifts
checked as separate cases [PROSE]; the drift limited by the clear height hc
(the [SKA] step example reproduces only with hd = hc).  From memory: the 20 ft
least fetch, the 0.75 windward factor, the windward width 8 hd, the hc/hb < 0.2
waiver, and the adjacent-structure and projection rules, which follow
ASCE 7-16.  The fetch is used as given: the one least fetch (20 ft) is that
of the unbalanced load of hip and gable roofs (Sec. 7.6.1, from memory;
:func:`neve.engine.asce7_22.unbalanced.unbalanced_fetch`).

References
----------
.. [1] ASCE/SEI 7-22, Eq. 7.6-1 (drift height), Fig. 7.6-1 (W2), Eq. 7.7-1
   (snow density), Sec. 7.7.1 (lower roof of a structure), Sec. 7.7.2
   (adjacent structures), Sec. 7.8 (roof projections and parapets).
"""

from __future__ import annotations

import numpy as np

from neve.engine.asce7_22 import STANDARD
from neve.engine.drift_cases import log_step_height
from neve.engine.errors import InputError
from neve.engine.steps import StepLog, fmt

#: the largest snow density Eq. 7.7-1 gives [pcf] (confirmed [STR-CAN])
DENSITY_CAP = 30.0
#: drifts are not required where hc/hb is below this (Sec. 7.7.1; from memory)
HC_HB_LIMIT = 0.2
#: factor on hd for windward drifts, parapets and projections (from memory)
WINDWARD_FACTOR = 0.75
#: drift width over drift height: leeward 4, windward 8 (from memory)
LEEWARD_WIDTH_RATIO = 4.0
WINDWARD_WIDTH_RATIO = 8.0
#: sides of roof projections shorter than this need no drift [ft] (Sec. 7.8; from memory)
PROJECTION_EXEMPT_LENGTH = 15.0
#: adjacent structures farther apart than this need no drift [ft] (Sec. 7.7.2; from memory)
ADJACENT_SEPARATION_LIMIT = 20.0


def check_w2(w2, field: str = "w2") -> float:
    """W2 as a float in [0, 1]; anything else is an :class:`InputError` naming ``field``."""
    if isinstance(w2, bool):
        raise InputError(field, f"{w2!r} is not a number", "a fraction from 0 to 1, e.g. 0.45")
    try:
        value = float(w2)
    except (TypeError, ValueError):
        raise InputError(
            field, f"{w2!r} is not a number", "a fraction from 0 to 1, e.g. 0.45"
        ) from None
    if not np.isfinite(value) or value < 0.0 or value > 1.0:
        raise InputError(field, f"{w2!r} is outside 0 to 1", "a fraction from 0 to 1, e.g. 0.45")
    return value


def snow_density(pg, log: StepLog | None = None):
    """Snow density gamma = 0.13 pg + 14, at most 30 pcf (ASCE 7-22 Eq. 7.7-1).

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


def drift_height(pg, lu, w2, log: StepLog | None = None, symbol: str = "hd", what: str = "drift"):
    """Drift height hd [ft] from the upwind fetch lu [ft] and W2 [-].

    ``hd = 1.5 sqrt(pg^0.74 lu^0.70 W2^1.7 / gamma)`` with gamma from
    Eq. 7.7-1 and lu as given (the drift provisions, Sec. 7.7.1 and 7.8,
    set no least fetch as neve reads them; the 20 ft least W of the
    unbalanced load is applied in :mod:`.unbalanced`).  hd is zero where pg
    or W2 is zero.

    References
    ----------
    ASCE 7-22 Eq. 7.6-1 (confirmed [STR-CAN, SKA]).
    """
    pg = np.asarray(pg, dtype=float)
    lu_used = np.asarray(lu, dtype=float)
    w2 = np.asarray(w2, dtype=float)
    gamma = np.minimum(0.13 * pg + 14.0, DENSITY_CAP)
    hd = 1.5 * np.sqrt(np.maximum(pg, 0.0) ** 0.74 * lu_used**0.70 * w2**1.7 / gamma)
    if log is not None:
        log.add(
            symbol,
            f"{what} height from fetch lu = {fmt(lu_used)} ft, W2 = {fmt(w2)}",
            "hd = 1.5 sqrt(pg^0.74 lu^0.70 W2^1.7 / gamma)",
            f"hd = 1.5 sqrt({fmt(pg)}^0.74 x {fmt(lu_used)}^0.70 x {fmt(w2)}^1.7 / {fmt(gamma)})",
            hd,
            "ft",
            f"{STANDARD} Eq. 7.6-1",
        )
    return hd


def balanced_height(ps, gamma, log: StepLog | None = None):
    """Height of the balanced snow hb = ps / gamma [ft] (ASCE 7-22 Sec. 7.7.1)."""
    hb = np.asarray(ps, dtype=float) / np.asarray(gamma, dtype=float)
    if log is not None:
        log.add(
            "hb",
            "height of balanced snow",
            "hb = ps / gamma",
            f"hb = {fmt(ps)} / {fmt(gamma)}",
            hb,
            "ft",
            f"{STANDARD} Sec. 7.7.1",
        )
    return hb


def drift_required(hc, hb):
    """Drifts are required unless hc/hb < 0.2 (ASCE 7-22 Sec. 7.7.1) [bool]."""
    hc = np.asarray(hc, dtype=float)
    hb = np.asarray(hb, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        ratio = np.where(hb > 0, hc / hb, np.inf)
    return (ratio >= HC_HB_LIMIT) & (hc > 0)


def drift_shape(hd, hc, ratio: float = LEEWARD_WIDTH_RATIO):
    """Drift height used and width, given the clear height hc [ft].

    Where ``hd <= hc``: ``w = ratio hd`` (4 leeward, 8 windward).  Where the
    drift would fill the clear height: the height is hc and the width keeps
    the drift's cross-section, ``w = ratio hd^2 / hc``, at most ``8 hc``.

    Returns
    -------
    hd_used, w : float or array
        Drift height and width [ft].

    References
    ----------
    ASCE 7-22 Sec. 7.7.1 (from memory; the hd = hc limit confirmed by the
    [SKA] example).
    """
    hd = np.asarray(hd, dtype=float)
    hc = np.asarray(hc, dtype=float)
    fills = hd > hc
    with np.errstate(divide="ignore", invalid="ignore"):
        w_full = np.minimum(ratio * hd**2 / hc, 8.0 * hc)
    w = np.where(fills, w_full, ratio * hd)
    return np.where(fills, hc, hd), w


def _log_shape(log, hd, hc, hd_used, w, ref: str, what: str, ratio: float):
    if log is None:
        return
    r = fmt(ratio)
    if np.ndim(hd) == 0 and hd > hc:
        log.add(
            "hd", f"{what}: drift fills the clear height, so hd = hc", "hd = hc",
            f"hd = {fmt(hc)}", hd_used, "ft", ref,
        )  # fmt: skip
        log.add(
            "w", f"{what}: drift width (drift fills the clear height)",
            f"w = {r} hd^2 / hc <= 8 hc",
            f"w = min({r} x {fmt(hd)}^2 / {fmt(hc)}, 8 x {fmt(hc)})", w, "ft", ref,
        )  # fmt: skip
    else:
        log.add(
            "w", f"{what}: drift width", f"w = {r} hd", f"w = {r} x {fmt(hd_used)}", w, "ft", ref
        )


def surcharge(hd, gamma, log: StepLog | None = None, what: str = "drift"):
    """Peak drift surcharge pd = hd gamma [psf] (ASCE 7-22 Sec. 7.7.1)."""
    pd = np.asarray(hd, dtype=float) * np.asarray(gamma, dtype=float)
    if log is not None:
        log.add(
            "pd", f"{what}: peak drift surcharge", "pd = hd gamma",
            f"pd = {fmt(hd)} x {fmt(gamma)}", pd, "psf", f"{STANDARD} Sec. 7.7.1",
        )  # fmt: skip
    return pd


def _clear(pg, ps, height, log, what, ref):
    gamma = float(snow_density(pg, log))
    hb = float(balanced_height(ps, gamma, log))
    hc = height - hb
    if log is not None:
        log.add(
            "hc", f"clear height from the balanced snow to the top of the {what}",
            "hc = h - hb", f"hc = {fmt(height)} - {fmt(hb)}", hc, "ft", ref,
        )  # fmt: skip
    return gamma, hb, hc


def _truncate(pd, w, length, log, ref):
    w_on = min(w, length) if length > 0 else w
    pd_far = pd * (1.0 - w_on / w) if w > 0 else 0.0
    if log is not None and w > length > 0:
        log.add(
            "pd_edge", "drift truncated at the far edge of the lower roof",
            "pd_edge = pd (1 - lower_length / w)",
            f"pd_edge = {fmt(pd)} x (1 - {fmt(length)} / {fmt(w)})", pd_far, "psf", ref,
        )  # fmt: skip
    return w_on, pd_far


def step_drifts(pg, ps_lower, step, w2) -> dict:
    """The leeward and the windward drift on a lower roof, as separate cases.

    Parameters
    ----------
    pg : float
        Ground snow load [psf].
    ps_lower : float
        Balanced load on the lower roof [psf].
    step : RoofStep
        Height [ft] from the lower roof to the top of the upper roof, upper
        and lower roof lengths [ft], separation [ft] (0 for a step).
    w2 : float
        Winter wind parameter [-].

    Returns
    -------
    dict
        ``required`` and ``reason`` for the step, and ``drifts``: a list of
        one dict per drift (``governs`` = leeward or windward, ``hd``, ``w``,
        ``pd``, ``hb``, ``hc``, ``gamma``, ``w_on_roof``, ``pd_far_edge``,
        ``log``).

    Notes
    -----
    Leeward: fetch = upper roof length, width 4 hd.  Windward: 0.75 hd with
    fetch = lower roof length, width 8 hd.  ASCE 7-22 has the lower roof
    checked for each drift on its own [PROSE], so both are reported (ASCE
    7-16 kept the larger).  Beside an adjacent structure (s > 0) drifts are
    required only where s < 20 ft and s < 6 h; the leeward drift is then the
    lesser of hd, (6h - s)/6 and hc and its width the lesser of 6 hd and
    6h - s; the windward drift is not truncated (conservative).
    """
    ref = f"{STANDARD} Sec. 7.7.1"
    head = StepLog()
    h, s = log_step_height(step, head, ref), step.separation
    gamma, hb, hc = _clear(pg, ps_lower, h, head, "upper roof", ref)
    out = {"required": True, "reason": "", "drifts": []}
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
    # leeward
    log = StepLog(list(head.steps))
    hd = float(drift_height(pg, step.upper_length, w2, log, "hd_leeward", "leeward drift"))
    if s > 0:
        ref2 = f"{STANDARD} Sec. 7.7.2"
        hd_used = min(hd, (6.0 * h - s) / 6.0, hc)
        w = min(6.0 * hd_used, 6.0 * h - s)
        log.add(
            "hd", "leeward drift height beside an adjacent structure (not above hc)",
            "hd = min(hd, (6h - s)/6, hc)",
            f"hd = min({fmt(hd)}, (6 x {fmt(h)} - {fmt(s)})/6, {fmt(hc)})", hd_used, "ft", ref2,
        )  # fmt: skip
        log.add(
            "w", "leeward drift width beside an adjacent structure", "w = min(6 hd, 6h - s)",
            f"w = min(6 x {fmt(hd_used)}, 6 x {fmt(h)} - {fmt(s)})", w, "ft", ref2,
        )  # fmt: skip
    else:
        hd_used, w = (float(x) for x in drift_shape(hd, hc, LEEWARD_WIDTH_RATIO))
        _log_shape(log, hd, hc, hd_used, w, ref, "leeward drift", LEEWARD_WIDTH_RATIO)
    pd = float(surcharge(hd_used, gamma, log, "leeward drift"))
    w_on, pd_far = _truncate(pd, w, step.lower_length, log, ref)
    out["drifts"].append(dict(
        governs="leeward", hd=hd_used, w=w, pd=pd, hb=hb, hc=hc, gamma=gamma,
        w_on_roof=w_on, pd_far_edge=pd_far, log=log, reason="",
    ))  # fmt: skip
    # windward
    log = StepLog(list(head.steps))
    raw = float(drift_height(pg, step.lower_length, w2, log, "hd_raw", "windward drift"))
    hd = WINDWARD_FACTOR * raw
    log.add(
        "hd_windward", "windward drift height, 0.75 hd with the lower roof as fetch",
        "hd_w = 0.75 hd", f"hd_w = 0.75 x {fmt(raw)}", hd, "ft", ref,
    )  # fmt: skip
    hd_used, w = (float(x) for x in drift_shape(hd, hc, WINDWARD_WIDTH_RATIO))
    _log_shape(log, hd, hc, hd_used, w, ref, "windward drift", WINDWARD_WIDTH_RATIO)
    pd = float(surcharge(hd_used, gamma, log, "windward drift"))
    w_on, pd_far = _truncate(pd, w, step.lower_length, log, ref)
    note = (
        "windward drift beside an adjacent structure not truncated (conservative; Sec. 7.7.2 permits truncation)"
        if s > 0
        else ""
    )
    out["drifts"].append(dict(
        governs="windward", hd=hd_used, w=w, pd=pd, hb=hb, hc=hc, gamma=gamma,
        w_on_roof=w_on, pd_far_edge=pd_far, log=log, reason=note,
    ))  # fmt: skip
    return out


def obstruction_drift(
    pg, ps, height, upwind_length, w2, log: StepLog | None = None, what: str = "parapet"
) -> dict:
    """Windward drift against a parapet wall or a rooftop projection.

    Height 0.75 hd with lu the fetch the caller gives (a parapet's upwind
    roof length; for a projection the greater of the roof lengths on either
    side, Sec. 7.8, from :func:`neve.engine.drift_cases.projection_cases`),
    width 8 hd, limited by hc = height - hb as in Sec. 7.7.1.

    References
    ----------
    ASCE 7-22 Sec. 7.8 (from memory: as ASCE 7-16, with Eq. 7.6-1 and the
    windward width).
    """
    ref = f"{STANDARD} Sec. 7.8"
    gamma, hb, hc = _clear(pg, ps, height, log, what, ref)
    out = {"gamma": gamma, "hb": hb, "hc": hc, "required": True, "reason": "",
           "governs": "windward"}  # fmt: skip
    if not bool(drift_required(hc, hb)):
        out.update(
            required=False,
            reason=f"hc/hb below 0.2 (or the {what} is buried), no drift required (Sec. 7.7.1, 7.8)",
        )
        return out
    raw = float(drift_height(pg, upwind_length, w2, log, "hd_raw", f"{what} drift"))
    hd = WINDWARD_FACTOR * raw
    if log is not None:
        log.add(
            "hd", f"{what} drift height, 0.75 hd with the upwind roof as fetch",
            "hd = 0.75 hd", f"hd = 0.75 x {fmt(raw)}", hd, "ft", ref,
        )  # fmt: skip
    hd_used, w = (float(x) for x in drift_shape(hd, hc, WINDWARD_WIDTH_RATIO))
    _log_shape(log, hd, hc, hd_used, w, ref, f"{what} drift", WINDWARD_WIDTH_RATIO)
    pd = float(surcharge(hd_used, gamma, log, f"{what} drift"))
    out.update(hd=hd_used, w=w, pd=pd)
    return out


def projection_exempt(plan_length) -> np.ndarray:
    """A projection side shorter than 15 ft needs no drift (ASCE 7-22 Sec. 7.8) [bool]."""
    return np.asarray(plan_length, dtype=float) < PROJECTION_EXEMPT_LENGTH
