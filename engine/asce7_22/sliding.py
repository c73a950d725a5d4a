"""Sliding snow from an upper roof onto a lower roof (ASCE 7-22 Sec. 7.9).

From memory: the provision is that of ASCE 7-16 (0.4 pf W spread over 15 ft;
slope thresholds 1/4 on 12 and 2 on 12), with pf of ASCE 7-22 Eq. 7.3-1.

The provision is the one :mod:`neve.engine.sliding_snow` holds; this module
gives it this edition's clause for the steps.

References
----------
.. [1] ASCE/SEI 7-22, Sec. 7.9.
"""

from __future__ import annotations

from neve.engine.asce7_22 import STANDARD
from neve.engine.sliding_snow import (  # noqa: F401  (this edition's names)
    SLIDING_FRACTION,
    SLIDING_THRESHOLD_DEG,
    SPREAD,
    sliding_required,
)
from neve.engine.sliding_snow import sliding_load as _sliding_load
from neve.engine.steps import StepLog


def sliding_load(
    pf_upper, w_upper, lower_length, separation=0.0, height=None, log: StepLog | None = None
) -> dict:
    """Sliding load on a lower roof (see :func:`neve.engine.sliding_snow.sliding_load`)."""
    return _sliding_load(
        pf_upper, w_upper, lower_length, separation, height, log, ref=f"{STANDARD} Sec. 7.9"
    )
