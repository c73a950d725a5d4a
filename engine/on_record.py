"""The existing-roof check: today's uniform roof snow load against the load on record.

An existing roof was designed for a roof snow load that is on record (drawings,
a permit, a structural report).  Today's map may demand more.  The check
divides today's governing *uniform* roof snow load, ``design_uniform`` (the
larger of the balanced load, with rain-on-snow where it applies, and the
minimum load), by the load on record:

    load_ratio = design_uniform / load on record

and flags ``exceeds_record`` where the ratio is above 1.0.  Drift, sliding,
unbalanced and ice-dam cases are *not* part of the ratio: screening gives the
uniform loads only (``roof_cases_not_screened`` says where other cases exist),
and ``neve site`` compares the same quantity, so one site gets the same ratio
from both.  A ratio is only a pointer: a roof above 1.0 needs a licensed
professional's review of the structure, and a roof at or below 1.0 may still
be governed by drifts or by a load on record that was never right.

No ratio (``None``/NaN, never flagged) where there is no load on record, no
roof given, or no usable ground load (``study_required``, ``no_data``,
``error``, or a layer the roof engine does not take).

>>> import numpy as np
>>> ratio, above = load_ratio(np.array([36.0, 30.0, 20.0]), np.array([30.0, 30.0, np.nan]))
>>> ratio.tolist()[:2], above.tolist()
([1.2, 1.0], [True, False, False])
"""

from __future__ import annotations

import math

import numpy as np

from neve.engine.errors import InputError
from neve.engine.roof_limits import PG_MAX_PSF
from neve.engine.units import parse_load

#: a ratio above this flags ``exceeds_record``; exactly 1.0 is not flagged
EXCEEDS_ABOVE = 1.0
#: relative allowance for the rounding of unit conversions (a record written in kPa
#: that equals today's load in psf must not be flagged by the last bit of a float)
RATIO_ROUNDING = 1e-9
#: the loads on record accepted [psf]: above 0, up to the bound of every load neve reads
ON_RECORD_RANGE_PSF = (0.0, PG_MAX_PSF)
#: what today's load is compared with (the result key / column stem)
COMPARED_WITH = "design_uniform"
ACCEPTED_ON_RECORD = (
    f"a roof snow load above 0 with its unit, e.g. 30psf or 1.44kPa (at most {PG_MAX_PSF:g} psf)"
)
#: what the check means, for people (text output, JSON, summaries)
NOTE = (
    "load_ratio = today's governing uniform roof snow load (design_uniform) / the load on "
    "record; drift, sliding, unbalanced and ice-dam loads are not included. A ratio above "
    "1.0 means the roof was designed for less snow than today's map demands: have the "
    "structure reviewed by a licensed design professional."
)


def load_ratio(design_psf, record_psf) -> tuple[np.ndarray, np.ndarray]:
    """Ratios of today's uniform roof load to the load on record, and where they exceed 1.0.

    Parameters
    ----------
    design_psf : array_like
        Today's governing uniform roof snow load, ``design_uniform`` [psf];
        NaN where there is none.
    record_psf : array_like
        The roof snow load on record [psf]; NaN where none is on record.

    Returns
    -------
    ratio : numpy.ndarray
        ``design_psf / record_psf`` [-]; NaN where either is missing or the
        record is not above 0.
    exceeds : numpy.ndarray of bool
        True where the ratio is above 1.0 (by more than :data:`RATIO_ROUNDING`).

    Notes
    -----
    Reading of the check (neve's own, no standard defines it): the ratio
    compares uniform loads only, see the module docstring.
    """
    design = np.asarray(design_psf, dtype=float)
    record = np.asarray(record_psf, dtype=float)
    ok = np.isfinite(design) & np.isfinite(record) & (record > 0)
    ratio = np.full(np.broadcast(design, record).shape, np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        np.divide(design, record, out=ratio, where=ok)
    exceeds = ok & (ratio > EXCEEDS_ABOVE * (1.0 + RATIO_ROUNDING))
    return ratio, exceeds


#: bands of load_ratio for maps (neve's own): (upper bound, label); the split at 1.0 is
#: exactly the ``exceeds_record`` threshold, so a site is drawn above 1.0 iff it is flagged
RATIO_BANDS = (
    (0.8, "under 0.8"),
    (1.0, "0.8 to 1.0"),
    (1.25, "above 1.0 to 1.25"),
    (1.5, "above 1.25 to 1.5"),
    (math.inf, "above 1.5"),
)


def ratio_band(ratio) -> np.ndarray:
    """Index into :data:`RATIO_BANDS` per ratio [-]; -1 where there is no ratio.

    >>> ratio_band([0.5, 0.8, 1.0, 1.01, 1.25, 1.5, 2.0, float("nan")]).tolist()
    [0, 1, 1, 2, 2, 3, 4, -1]
    """
    r = np.atleast_1d(np.asarray(ratio, dtype=float))
    _, above = load_ratio(r, 1.0)
    band = np.full(r.shape, -1, dtype=int)
    fine = np.isfinite(r)
    band[fine & ~above] = np.where(r[fine & ~above] < RATIO_BANDS[0][0], 0, 1)
    up = fine & above
    band[up] = 2 + np.searchsorted([b for b, _ in RATIO_BANDS[2:-1]], r[up], side="left")
    return band


def parse_on_record(text: object, field: str = "on-record") -> float:
    """One load on record with its unit (``30psf``, ``1.44kPa``) -> [psf].

    Zero, negative, unitless or out-of-range values are an ``InputError``
    naming ``field`` and what is accepted.
    """
    value = parse_load(text, field, allow_negative=True)
    lo, hi = ON_RECORD_RANGE_PSF
    if math.isfinite(value) and value <= lo:
        raise InputError(field, f"{text!r} is not above 0", ACCEPTED_ON_RECORD)
    if not math.isfinite(value) or value > hi:
        raise InputError(field, f"{text!r} is out of range", ACCEPTED_ON_RECORD)
    return value


def on_record_json(
    record_psf: float,
    design: dict | None,
    status: str,
    roof_given: bool,
    *,
    design_psf: float | None = None,
) -> dict:
    """The ``on_record`` object of ``neve site --on-record``.

    Parameters
    ----------
    record_psf : float
        The load on record [psf].
    design : dict or None
        The roof result's ``design_uniform`` load (``{"psf", "kPa"}``), or None.
    status : str
        The ground status (for the reason when there is no ratio).
    roof_given : bool
        Whether a roof was given.
    design_psf : float, optional
        The unrounded ``design_uniform`` [psf] (the JSON load is rounded); taken
        for the ratio when given, so that ``neve site`` and ``neve screen`` agree.
    """
    from neve.engine.units import load_json

    lo, hi = ON_RECORD_RANGE_PSF
    if not (math.isfinite(float(record_psf)) and lo < float(record_psf) <= hi):
        raise InputError("on-record", f"{record_psf!r} psf is out of range", ACCEPTED_ON_RECORD)
    psf = None if design is None else design.get("psf")
    if psf is not None and design_psf is not None and math.isfinite(float(design_psf)):
        psf = float(design_psf)
    ratio, above = load_ratio(np.nan if psf is None else float(psf), record_psf)
    r = float(ratio)
    reason = None
    if not roof_given:
        reason = (
            "no roof given: the ratio needs today's design_uniform roof load "
            "(roof options or --roof)"
        )
    elif psf is None:
        reason = f"no roof snow load was computed (ground status {status})"
    return {
        "load": load_json(record_psf),
        "compared_with": COMPARED_WITH,
        "design_uniform": design,
        "load_ratio": r if math.isfinite(r) else None,
        "exceeds_record": bool(above),
        "reason": reason,
        "note": NOTE,
    }
