"""The accepted ranges of a roof's numbers, and how option levels combine.

Each number a roof description carries (lengths, heights, loads, factors)
has a range an engineer would accept, in :data:`RANGES`; values outside it,
zero where zero makes no physical sense, NaN and infinities are refused with
the range in the message (exit code 2 on the command line).  The ranges are
generous: they stop absurd or mistyped values (``1e6ft``, ``1e9psf``), not
unusual buildings.  A roof given as ``flat`` may slope up to
:data:`FLAT_SLOPE_MAX_DEG`.

:func:`merge_roof_levels` combines option levels (a ROOF.toml, then the
command line), a later level replacing what an earlier one said, including
the other spelling of the same thing (``ct`` for ``thermal``).

References
----------
.. [1] The default standard of :mod:`neve.engine.standards` (ASCE 7-16): the
   clauses behind the flat-roof slope limit, the Ce and Ct tables and the
   20 ft limit of adjacent structures are its provisions ``limit.flat_slope``,
   ``factor.Ce``, ``factor.Ct`` and ``limit.adjacent``.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

from neve.engine.errors import InputError
from neve.engine.units import Bound

#: the steepest slope a roof given as ``flat`` may have [deg].  ASCE 7-16
#: works the flat roof snow load pf for roofs of 5 degrees or less (about 1.05
#: on 12; its provision ``limit.flat_slope``); a steeper roof is a monoslope,
#: gable or hip roof.
FLAT_SLOPE_MAX_DEG = 5.0

#: largest ground snow load neve accepts [psf]; far above any mapped value
#: (common practice: the heaviest mapped mountain values are a few hundred psf)
PG_MAX_PSF = 2000.0

_PLAN = "longer than the roofs of the largest buildings"
#: the accepted range of every number of a roof, keyed by its ROOF.toml name,
#: in the engine's units.  Zero is refused where it makes no physical sense
#: (a roof length, a height); a zero separation is a step within one structure.
RANGES: dict[str, Bound] = {
    "pg": Bound(0.0, PG_MAX_PSF, "psf", why="plausibility bound on ground snow loads"),
    "ce": Bound(0.7, 1.2, why="the extremes of the standard's exposure factor table"),
    "ct": Bound(0.85, 1.3, why="the extremes of the standard's thermal factor table"),
    "r_value": Bound(0.0, 200.0, "ft2.h.F/Btu", why="far above any insulated roof"),
    "eave_to_ridge": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "overhang.length": Bound(0.0, 50.0, "ft", lo_open=True, why="a deep canopy; omit [overhang] when there is none"),
    "step.height": Bound(0.0, 500.0, "ft", lo_open=True, why="a tall building beside a low roof"),
    "step.upper_length": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "step.lower_length": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "step.separation": Bound(0.0, 5000.0, "ft", why="0 for a step in one structure; drifts stop at 20 ft (adjacent structures)"),
    "step.upper_eave_to_ridge": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "step.upper_pf": Bound(0.0, PG_MAX_PSF, "psf", why="the ground snow load bound"),
    "step.upper_parapet": Bound(0.0, 50.0, "ft", lo_open=True, why="taller walls are a roof step"),
    "step.upper_ce": Bound(0.7, 1.2, why="the extremes of the standard's exposure factor table"),
    "step.upper_ct": Bound(0.85, 1.3, why="the extremes of the standard's thermal factor table"),
    "step.upper_is": Bound(0.8, 1.2, why="the extremes of the standard's snow importance factors"),
    "parapet.height": Bound(0.0, 50.0, "ft", lo_open=True, why="taller walls are a roof step"),
    "parapet.upwind_length": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "parapet.drift_space": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "option.length": Bound(0.0, 5000.0, "ft", why="a standard's own lengths (spans, rises, guard widths, site altitudes): longer than the largest roofs, higher than the Eurocode for snow reaches (1500 m)"),
    "projection.height": Bound(0.0, 100.0, "ft", lo_open=True, why="a rooftop penthouse"),
    "projection.plan_length": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "projection.upwind_length": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "projection.length_left": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "projection.length_right": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "projection.plan_width": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "projection.length_front": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "projection.length_back": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    # curved, dome and multi-span (sawtooth) roofs (issue 12)
    "rise": Bound(0.0, 1000.0, "ft", lo_open=True, why="an arched hangar; at most half the chord"),
    "chord": Bound(0.0, 5000.0, "ft", lo_open=True, why=_PLAN),
    "ridge_height": Bound(0.0, 200.0, "ft", lo_open=True, why="the ridge-to-valley height of a multi-span roof"),
    "spans": Bound(2.0, 1000.0, why="a multi-span roof has two spans or more"),
}  # fmt: skip

#: yes/no keys and the key that says the opposite (``unventilated = true`` is
#: ``ventilated = false``); both of a pair on one level contradict each other
BOOL_PAIRS = {"ventilated": "unventilated", "unobstructed": "obstructed",
              "prismatic": "non_prismatic", "eave_abutted": "eave_clear"}  # fmt: skip
#: keys that say the same thing in two ways: one level may use only one side,
#: and a later level's side replaces an earlier level's other side
_ALTERNATIVES = (
    (("ct",), ("thermal",)),
    (("ce",), ("terrain", "exposure")),
    *(((k,), (v,)) for k, v in BOOL_PAIRS.items()),
)


def norm_keys(data: Mapping) -> dict:
    """Keys with ``_`` for ``-``; entries whose value is None ("not given") left out."""
    return {str(k).replace("-", "_"): v for k, v in dict(data).items() if v is not None}


def merge_roof_levels(*levels: Mapping | None) -> dict:
    """Merge roof option mappings, each later level overriding the earlier ones.

    A level may give ``ct`` or ``thermal``, ``ce`` or ``terrain``/``exposure``,
    ``ventilated`` or ``unventilated`` (and the other yes/no pairs), not both;
    a later level that gives one side drops the other side of the earlier
    levels, so ``--ct 1.1`` on the command line replaces ``thermal`` in the
    ROOF.toml.  Both sides on one level are left in and refused by
    :meth:`Roof.from_mapping`.

    >>> merge_roof_levels({"thermal": "heated", "shape": "flat"}, {"ct": 1.1})
    {'shape': 'flat', 'ct': 1.1}
    """
    out: dict = {}
    for level in levels:
        if not level:
            continue
        level = norm_keys(level)
        for side_a, side_b in _ALTERNATIVES:
            for mine, theirs in ((side_a, side_b), (side_b, side_a)):
                if any(k in level for k in mine):
                    for k in theirs:
                        if k not in level:
                            out.pop(k, None)
        out.update(level)
    return out


def slope_check(slope, name: str) -> None:
    """Refuse a slope [deg] that is not a finite number from 0 to under 90."""
    try:
        x = float(slope)
    except (TypeError, ValueError):
        x = math.nan
    if not (math.isfinite(x) and 0.0 <= x < 90.0):
        raise InputError(name, f"{slope!r} degrees is not a roof slope", "0 to under 90 degrees")


def flat_too_steep(slope: float, stated: bool, given=None) -> None:
    """Raise the refusal of a flat roof steeper than FLAT_SLOPE_MAX_DEG.

    ``stated``: the user said ``flat`` (else the shape was left out, and
    the message asks for one); ``given``: the slope as the user wrote it.
    """
    shown = f"{given!r} ({slope:.2f} degrees)" if given is not None else f"{slope:.2f} degrees"
    from neve.engine.standards import get_standard

    ref = get_standard().ref("limit.flat_slope")
    limit = f"at most {FLAT_SLOPE_MAX_DEG:g} degrees (about 1.05:12; {ref})"
    if stated:
        raise InputError(
            "slope",
            f"{shown} is too steep for a flat roof",
            f"a flat roof slope of {limit}, or shape monoslope, gable or hip",
        )
    raise InputError(
        "shape",
        f"not given, so the roof is taken as flat, but slope {shown} is too steep for a flat roof",
        f"shape monoslope, gable or hip for this slope, or a slope of {limit}",
    )
