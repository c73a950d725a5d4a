"""Drifts at taller construction (5.3.6) and the local effects of EN 1991-1-3 Section 6.

Roofs abutting and close to taller construction works (5.3.6), drifting at
projections and obstructions (6.2), snow overhanging the edge of a roof
(6.3) and snow loads on snow guards and other obstacles (6.4).  Lengths [m],
loads [kPa], line loads [kN/m], unit weights [kN/m3], slopes [deg].

References
----------
.. [1] EN 1991-1-3:2003 + A1:2015, 5.3.6 (Figure 5.7), 6.2 (Figure 6.1),
   6.3, 6.4.  From memory; 5.3.6 as worked in [SSB03] Appendix A
   (mu_w bounded by 4, ls = 2h from 6 to 8.5 m).
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.en1991_1_3 import STANDARD
from neve.engine.en1991_1_3.parameters import ParameterSet
from neve.engine.en1991_1_3.shapes import MU1_LOW, mu1
from neve.engine.steps import StepLog, fmt, fmt_deg

#: 5.3.6(1): the upper roof slope up to which no snow slides onto the lower roof [deg]
SLIDING_SLOPE_LIMIT = 15.0
#: 5.3.6(1): the share of the upper slope's snow that slides onto the lower roof
SLIDING_SHARE = 0.5


def drift_length(h: float, params: ParameterSet, log: StepLog | None, ref: str) -> float:
    """Drift length ls = 2 h, bounded by ls_min and ls_max (5 and 15 m recommended) [m].

    References
    ----------
    EN 1991-1-3 5.3.6(3) and 6.2(2) (from memory; [SSB03]: 6 m and 8.5 m for h = 3 and 4.25 m).
    """
    lo, hi = float(params["ls_min"]), float(params["ls_max"])
    ls = min(max(2.0 * h, lo), hi)
    if log is not None:
        log.add("ls", "drift length", f"ls = 2 h, {fmt(lo)} m <= ls <= {fmt(hi)} m",
                f"ls = 2 x {fmt(h)} = {fmt(2 * h)}", ls, "m", ref)  # fmt: skip
    return ls


def far_coefficient(peak: float, base: float, ls: float, length: float) -> float:
    """The coefficient at the far edge of a roof shorter than the drift [-].

    The drift falls linearly from ``peak`` at the wall to ``base`` at ``ls``;
    a roof of ``length`` < ls cuts it there (5.3.6(3): interpolation between
    mu2 and mu1, truncated at the end of the lower roof).

    >>> far_coefficient(4.0, 0.8, 10.0, 5.0)
    2.4
    """
    if length >= ls:
        return base
    return peak + (base - peak) * length / ls


def sliding_coefficient(upper_slope, upper_run, ls, log: StepLog | None = None) -> float:
    """mu_s [-]: the snow sliding from the upper roof onto the lower (5.3.6(1)).

    0 where the upper roof's slope is 15 degrees or less.  Steeper, half the
    largest total snow load of the adjacent upper slope (mu1 of that slope
    over its plan run ``upper_run``) slides onto the lower roof.  Reading:
    that load is spread over the drift length ls as a triangle with its peak
    at the wall, like the drift, so that ``mu_s = 2 x 0.5 mu1(alpha) b_s /
    ls = mu1(alpha) b_s / ls`` (the largest load of a pitched slope is its
    undrifted mu1; Ce and Ct cancel).

    References
    ----------
    EN 1991-1-3 5.3.6(1), Figure 5.7 (from memory).
    """
    ref = f"{STANDARD} 5.3.6(1)"
    if upper_slope is None or float(upper_slope) <= SLIDING_SLOPE_LIMIT:
        shown = "not given" if upper_slope is None else fmt_deg(upper_slope)
        if log is not None:
            log.add("mu_s", "sliding snow from the upper roof (upper slope up to 15 degrees: none)",
                    "mu_s = 0 for alpha <= 15 degrees", f"upper roof slope {shown}", 0.0, "-",
                    ref)  # fmt: skip
        return 0.0
    m = float(mu1(upper_slope))
    value = m * float(upper_run) / ls
    if log is not None:
        log.add("mu_s", "sliding snow from the upper roof: half its slope's load, over ls",
                "mu_s = 2 x 0.5 mu1(alpha) b_s / ls",
                f"mu_s = {fmt(m)} x {fmt(upper_run)} / {fmt(ls)}", value, "-", ref)  # fmt: skip
    return value


def abutting(h, b1, b2, sk, params: ParameterSet, upper_slope=None, upper_run=None,
             log: StepLog | None = None) -> dict:  # fmt: skip
    """Coefficients of a roof abutting taller construction (5.3.6, Figure 5.7).

    Parameters
    ----------
    h : float
        Height of the taller construction above this roof [m].
    b1 : float
        Plan width of the upper roof (or of the taller construction) [m].
    b2 : float
        Plan width of this, the lower, roof [m].
    sk : float
        Ground snow load of the situation [kPa] (in ``mu_w <= gamma h / sk``).
    upper_slope : float, optional
        Slope of the upper roof toward this one [deg], for mu_s.
    upper_run : float, optional
        Plan length of that slope [m] (b_s), for mu_s.

    Returns
    -------
    dict
        ``mu1`` (0.8: the lower roof read as flat), ``mu_s``, ``mu_w``,
        ``mu2 = mu_s + mu_w``, ``ls``, ``mu_far`` (the coefficient at the far
        edge where b2 < ls, else mu1).

    References
    ----------
    EN 1991-1-3 5.3.6(1) to (3) (from memory; [SSB03] Appendix A 3.3).
    """
    ref = f"{STANDARD} 5.3.6"
    gamma = float(params["gamma_drift"])
    lo, hi = float(params["mu_w_min"]), float(params["mu_w_max"])
    ls = drift_length(h, params, log, f"{ref}(3)")
    mu_s = sliding_coefficient(upper_slope, upper_run, ls, log)
    wind = (b1 + b2) / (2.0 * h)
    cap = gamma * h / sk if sk > 0 else math.inf
    mu_w = min(max(min(wind, cap), lo), hi)
    if log is not None:
        log.add("mu_w", "drift coefficient due to wind",
                f"mu_w = (b1 + b2) / 2h <= gamma h / sk, {fmt(lo)} <= mu_w <= {fmt(hi)}",
                f"mu_w = ({fmt(b1)} + {fmt(b2)}) / (2 x {fmt(h)}) = {fmt(wind)}; "
                f"gamma h / sk = {fmt(gamma)} x {fmt(h)} / {fmt(sk)} = "
                f"{'inf' if math.isinf(cap) else fmt(cap)}", mu_w, "-",
                f"{ref}(1)")  # fmt: skip
    mu2 = mu_s + mu_w
    if log is not None:
        log.add("mu2", "shape coefficient at the taller construction", "mu2 = mu_s + mu_w",
                f"mu2 = {fmt(mu_s)} + {fmt(mu_w)}", mu2, "-", f"{ref}(1)")  # fmt: skip
    far = far_coefficient(mu2, MU1_LOW, ls, b2)
    if log is not None and b2 < ls:
        log.add("mu_far", "coefficient at the far edge of the lower roof (b2 < ls)",
                "mu_far = mu2 + (mu1 - mu2) b2 / ls",
                f"mu_far = {fmt(mu2)} + ({fmt(MU1_LOW)} - {fmt(mu2)}) x {fmt(b2)} / {fmt(ls)}",
                far, "-", f"{ref}(3)")  # fmt: skip
    return {"mu1": MU1_LOW, "mu_s": mu_s, "mu_w": mu_w, "mu2": mu2, "ls": ls, "mu_far": far}


def obstruction(h, sk, params: ParameterSet, log: StepLog | None = None) -> dict:
    """Coefficients of a drift at a projection or obstruction (6.2, Figure 6.1).

    ``mu1 = 0.8``; ``mu2 = gamma h / sk`` bounded by mu2_obstruction_min and
    _max (0.8 and 2.0 recommended); ``ls = 2 h`` bounded by ls_min and ls_max.
    The drift lies against each side the wind can reach (both sides of a
    projection, the roof side of a parapet).

    References
    ----------
    EN 1991-1-3 6.2(2), Figure 6.1 (from memory).
    """
    ref = f"{STANDARD} 6.2(2)"
    gamma = float(params["gamma_drift"])
    lo, hi = float(params["mu2_obstruction_min"]), float(params["mu2_obstruction_max"])
    raw = gamma * h / sk if sk > 0 else math.inf
    mu2 = min(max(raw, lo), hi)
    if log is not None:
        log.add("mu2", "shape coefficient at the obstruction",
                f"mu2 = gamma h / sk, {fmt(lo)} <= mu2 <= {fmt(hi)}",
                f"mu2 = {fmt(gamma)} x {fmt(h)} / {fmt(sk)} = "
                f"{'inf' if math.isinf(raw) else fmt(raw)}", mu2, "-", ref)  # fmt: skip
    ls = drift_length(h, params, log, ref)
    return {"mu1": MU1_LOW, "mu2": mu2, "ls": ls}


def overhang_line_load(s, params: ParameterSet, log: StepLog | None = None) -> dict:
    """Line load of snow overhanging the edge of a roof se [kN/m] (6.3(2)).

    ``se = k s^2 / gamma`` with gamma = 3 kN/m3 (recommended) and
    ``k = 3 / d``, at most ``d gamma``, where d is the depth of the snow
    layer on the roof [m].  Reading: d is the depth of the undrifted load s
    at that weight density, ``d = s / gamma``.

    Parameters
    ----------
    s : float
        The most onerous undrifted roof load [kPa].

    References
    ----------
    EN 1991-1-3 6.3(1), (2) (from memory).
    """
    ref = f"{STANDARD} 6.3(2)"
    gamma = float(params["gamma_overhang"])
    d = float(s) / gamma
    k = min(3.0 / d, d * gamma) if d > 0 else 0.0
    se = k * float(s) ** 2 / gamma
    if log is not None:
        log.add("d", "depth of the snow layer on the roof (read as s / gamma)", "d = s / gamma",
                f"d = {fmt(s)} / {fmt(gamma)}", d, "m", ref)  # fmt: skip
        log.add("k", "coefficient for the irregular shape of the overhang", "k = 3 / d <= d gamma",
                f"k = min(3 / {fmt(d)}, {fmt(d)} x {fmt(gamma)})" if d > 0 else "no snow",
                k, "-", ref)  # fmt: skip
        log.add("se", "snow overhanging the edge, per metre of edge", "se = k s^2 / gamma",
                f"se = {fmt(k)} x {fmt(s)}^2 / {fmt(gamma)}", se, "kN/m", ref)  # fmt: skip
    return {"d": d, "k": k, "se": se, "gamma": gamma}


def snow_guard_force(s, width, alpha, log: StepLog | None = None):
    """Force on a snow guard or obstacle per metre of its length Fs [kN/m] (6.4).

    ``Fs = s b sin(alpha)``, with no friction between snow and roof; s is the
    most onerous undrifted roof load of the area that can slide [kPa], b the
    plan width from the guard to the next guard or the ridge [m], alpha the
    roof slope.

    >>> round(float(snow_guard_force(0.52, 5.0, 30.0)), 4)
    1.3

    References
    ----------
    EN 1991-1-3 6.4(1), (2) (from memory).
    """
    fs = np.asarray(s, dtype=float) * float(width) * math.sin(math.radians(float(alpha)))
    if log is not None:
        log.add("Fs", "force on the snow guard, per metre, in the direction of sliding",
                "Fs = s b sin(alpha)", f"Fs = {fmt(s)} x {fmt(width)} x sin({fmt_deg(alpha)})",
                fs, "kN/m", f"{STANDARD} 6.4")  # fmt: skip
    return fs
