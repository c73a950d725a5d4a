"""Exceptional snow drifts of EN 1991-1-3 Annex B (accidental design situations).

Annex B gives the shape coefficients of exceptional drifts where the design
case of Annex A is B2 or B3 (a national annex says where); the roof load is
then ``s = mu sk`` (Eq. 5.3), without Ce and Ct.  neve gives the drifts at
taller construction (B3), behind parapets (B4) and at local projections
(B4).  The valley drift of multi-span roofs (B2) needs geometry neve does
not take and is listed as not computed.

Lengths [m], loads [kPa].

References
----------
.. [1] EN 1991-1-3:2003 + A1:2015, Annex B (informative; a national annex
   may modify it, 1.1(4)).  B4 behind parapets as worked in [SSB03]
   Appendix A 3.5.2 and 3.5.3: ``mu1 = min(2h/sk; 2b/ls; 8)`` with
   ``ls = min(5h; b1; 15 m)``.  B3 and the local projections of B4 are
   from memory.
"""

from __future__ import annotations

from neve.engine.en1991_1_3 import STANDARD
from neve.engine.en1991_1_3.parameters import ParameterSet
from neve.engine.steps import StepLog, fmt

#: Annex B: the drift length as a multiple of the height difference
ANNEX_B_LS_FACTOR = 5.0


def step_drift(h, b1, b2, sk, params: ParameterSet, log: StepLog | None = None) -> dict:
    """Exceptional drift on a roof abutting taller construction (Annex B3) [-].

    ``mu1 = min(2h / sk; 2b / ls; 8)`` with b the larger of b1 and b2 and
    ``ls = 5 h``; the drift falls linearly to 0 at ls and is cut at the far
    edge where b2 < ls.  From memory (the bound 8 is the parameter
    ``annex_b_mu_max_step``).

    References
    ----------
    EN 1991-1-3 Annex B, B3 (from memory).
    """
    ref = f"{STANDARD} Annex B, B3"
    top = float(params["annex_b_mu_max_step"])
    ls = ANNEX_B_LS_FACTOR * h
    b = max(b1, b2)
    mu = min(2.0 * h / sk, 2.0 * b / ls, top) if sk > 0 else top
    if log is not None:
        log.add("ls", "length of the exceptional drift", "ls = 5 h", f"ls = 5 x {fmt(h)}", ls,
                "m", ref)  # fmt: skip
        log.add("mu1", "shape coefficient of the exceptional drift",
                f"mu1 = min(2h / sk; 2b / ls; {fmt(top)}), b = max(b1, b2)",
                f"mu1 = min(2 x {fmt(h)} / {fmt(sk)}; 2 x {fmt(b)} / {fmt(ls)}; {fmt(top)})",
                mu, "-", ref)  # fmt: skip
    far = mu * (1.0 - b2 / ls) if b2 < ls else 0.0
    return {"mu1": mu, "ls": ls, "mu_far": far}


def parapet_drift(h, b1, b2, sk, params: ParameterSet, log: StepLog | None = None) -> dict:
    """Exceptional drift behind a parapet (Annex B4) [-].

    ``mu1 = min(2h / sk; 2b / ls; 8)`` with b the larger of b1 and b2 and
    ``ls = min(5h; b1; 15 m)``.  Reading of the two widths (as [SSB03] works
    them: its 2b/ls is 2 x 25 / 12.5 at the eaves and 2 x 40 / 15 at the
    gable, the larger width each time): b2 is the roof width from which the
    snow drifts to the parapet (``upwind_length``) and b1 the roof length
    beside the parapet over which the drift can lie (``drift_space``; the
    upwind length where not given).

    References
    ----------
    EN 1991-1-3 Annex B, B4; [SSB03] Appendix A 3.5.2, 3.5.3.
    """
    ref = f"{STANDARD} Annex B, B4"
    top = float(params["annex_b_mu_max_parapet"])
    cap = float(params["annex_b_ls_max"])
    ls = min(ANNEX_B_LS_FACTOR * h, b1, cap)
    b = max(b1, b2)
    mu = min(2.0 * h / sk, 2.0 * b / ls, top) if sk > 0 else top
    if log is not None:
        log.add("ls", "length of the exceptional drift", f"ls = min(5h; b1; {fmt(cap)} m)",
                f"ls = min(5 x {fmt(h)}; {fmt(b1)}; {fmt(cap)})", ls, "m", ref)  # fmt: skip
        log.add("mu1", "shape coefficient of the exceptional drift behind the parapet",
                f"mu1 = min(2h / sk; 2b / ls; {fmt(top)}), b = max(b1, b2)",
                f"mu1 = min(2 x {fmt(h)} / {fmt(sk)}; 2 x {fmt(b)} / {fmt(ls)}; {fmt(top)})",
                mu, "-", ref)  # fmt: skip
    return {"mu1": mu, "ls": ls}


def projection_drift(h, sk, params: ParameterSet, log: StepLog | None = None) -> dict:
    """Exceptional drift at a local projection or obstruction (Annex B4) [-].

    ``mu1 = min(2h / sk; 5)`` with ``ls = 5 h``, on each side the wind can
    reach.  From memory (the bound 5 is ``annex_b_mu_max_projection``).

    References
    ----------
    EN 1991-1-3 Annex B, B4 (from memory).
    """
    ref = f"{STANDARD} Annex B, B4"
    top = float(params["annex_b_mu_max_projection"])
    ls = ANNEX_B_LS_FACTOR * h
    mu = min(2.0 * h / sk, top) if sk > 0 else top
    if log is not None:
        log.add("ls", "length of the exceptional drift", "ls = 5 h", f"ls = 5 x {fmt(h)}", ls,
                "m", ref)  # fmt: skip
        log.add("mu1", "shape coefficient of the exceptional drift at the projection",
                f"mu1 = min(2h / sk; {fmt(top)})",
                f"mu1 = min(2 x {fmt(h)} / {fmt(sk)}; {fmt(top)})", mu, "-", ref)  # fmt: skip
    return {"mu1": mu, "ls": ls}
