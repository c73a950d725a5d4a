"""Flat roof, minimum and rain-on-snow loads, and the seismic weight share
(ASCE 7-22 Sec. 7.3, 7.3.3, 7.10; Sec. 12.7.2).

All functions take scalars or numpy arrays and return the same shape.  Loads
in [psf] (strength level, as ASCE 7-22 maps them), lengths in [ft], slopes in
[degrees].  Sources by tag: see :mod:`neve.engine.asce7_22`.

References
----------
.. [1] ASCE/SEI 7-22, Sec. 7.3 (Eq. 7.3-1), Sec. 7.3.3 and Table 7.3-4
   (minimum snow load for low-slope roofs), Sec. 7.10 (rain-on-snow),
   Sec. 12.7.2 (effective seismic weight).
"""

from __future__ import annotations

import numpy as np

from neve.engine.asce7_22 import STANDARD
from neve.engine.choices import choose
from neve.engine.steps import StepLog, fmt, fmt_deg

#: ASCE 7-22 Table 7.3-4: upper limit pm,max of the minimum snow load by risk
#: category [psf].  The table itself is confirmed [PROSE: "Risk Category-specific
#: pm,max values in Table 7.3-4"; NFBA25: "a new table showing the upper limit of
#: minimum snow load, pm,max ... for each risk category"]; the four values are
#: from memory.  They agree with carrying ASCE 7-16's minimum (20 Is psf, a
#: service-level load with the 1.6 snow load factor) to strength level:
#: 20 x 1.6 x (0.8, 1.0, 1.1, 1.2) = 25.6, 32, 35.2, 38.4 psf, i.e. 25, 30, 35
#: and 40 psf in round numbers (our check of the memory, not a source).
MINIMUM_MAX_TABLE_7_3_4 = {"I": 25.0, "II": 30.0, "III": 35.0, "IV": 40.0}
#: slope below which a monoslope, hip or gable roof is "low-slope" [deg]
#: (Sec. 7.3.3; from memory, unchanged from ASCE 7-16)
MINIMUM_SLOPE_LIMIT = 15.0
#: curved roofs and domes get the minimum load where the vertical angle from the
#: eaves to the crown is under this [deg] (Sec. 7.3.3; from memory)
MINIMUM_CROWN_ANGLE = 10.0
CURVED_MINIMUM_SHAPES = ("curved", "dome")
#: the rain-on-snow surcharge [psf] (Sec. 7.10): 8 psf confirmed [PROSE:
#: "Rain-on-snow went from 5 psf to 8 psf where it applies"]
RAIN_ON_SNOW_SURCHARGE = 8.0
#: pg at or below which (but above zero) the surcharge applies [psf]
#: (Sec. 7.10; from memory)
RAIN_ON_SNOW_PG_LIMIT = 20.0
#: the flat roof snow load above which part of the snow counts toward the
#: effective seismic weight [psf], and that share of the uniform design snow
#: load (Sec. 12.7.2): confirmed [NFBA25: "when the flat roof snow load exceeds
#: 45 psf, 15% of the uniform design snow load ... In ASCE 7-16, these
#: parameters were 30 psf and 20%"]
SEISMIC_PF_THRESHOLD = 45.0
SEISMIC_SHARE = 0.15


def flat_roof_load(pg, ce, ct, log: StepLog | None = None):
    """Flat roof snow load pf [psf].

    Parameters
    ----------
    pg : float or array
        Ground snow load of the building's risk category [psf].
    ce, ct : float or array
        Exposure and thermal factors [-].

    Returns
    -------
    pf : float or array
        ``0.7 Ce Ct pg`` [psf]; there is no importance factor in ASCE 7-22.

    References
    ----------
    ASCE 7-22 Sec. 7.3, Eq. 7.3-1 (confirmed: [NFBA25], [STR-MIN]).
    """
    pf = 0.7 * np.asarray(ce) * np.asarray(ct) * np.asarray(pg, dtype=float)
    if log is not None:
        log.add(
            "pf",
            "flat roof snow load (pg of the building's risk category)",
            "pf = 0.7 Ce Ct pg",
            f"pf = 0.7 x {fmt(ce)} x {fmt(ct)} x {fmt(pg)}",
            pf,
            "psf",
            f"{STANDARD} Eq. 7.3-1",
        )
    return pf


def minimum_applies(shape: str, slope) -> np.ndarray:
    """Whether the minimum roof snow load of Sec. 7.3.3 applies [bool].

    It applies to monoslope, hip and gable roofs with a slope under 15
    degrees; a roof given as ``flat`` is read as a low-slope monoslope roof
    (common practice).

    Curved roofs and domes (from memory, as in ASCE 7-16): where the vertical
    angle from the eaves to the crown is under 10 degrees; ``slope`` is then
    that angle (the eave-to-crown line, :mod:`neve.engine.roof_shapes`).
    Multi-span (sawtooth, folded plate, barrel vault) roofs are read as
    monoslope and gable faces: under 15 degrees (the clause names neither;
    applying it is conservative).
    """
    slope = np.asarray(slope, dtype=float)
    if shape in CURVED_MINIMUM_SHAPES:
        return slope < MINIMUM_CROWN_ANGLE
    if shape not in ("flat", "monoslope", "hip", "gable", "sawtooth"):
        return np.zeros_like(slope, dtype=bool)
    return slope < MINIMUM_SLOPE_LIMIT


def minimum_load(pg, risk: str, log: StepLog | None = None):
    """Minimum roof snow load pm for low-slope roofs [psf].

    ``pm = pg`` up to the risk category's upper limit pm,max, then pm,max
    (Table 7.3-4).

    References
    ----------
    ASCE 7-22 Sec. 7.3.3, Table 7.3-4 (the table confirmed [PROSE, NFBA25];
    its values from memory).
    """
    pm_max = choose("risk", str(risk).upper(), MINIMUM_MAX_TABLE_7_3_4)
    pg = np.asarray(pg, dtype=float)
    pm = np.minimum(pg, pm_max)
    if log is not None:
        sub = f"pm = min({fmt(pg)}, {fmt(pm_max)})" if np.ndim(pg) == 0 else "per site"
        log.add(
            "pm",
            f"minimum roof snow load (low-slope roof), risk category {risk}: "
            f"pm,max = {fmt(pm_max)} psf",
            "pm = min(pg, pm,max)",
            sub,
            pm,
            "psf",
            f"{STANDARD} Sec. 7.3.3, Table 7.3-4",
        )
    return pm


def rain_on_snow_applies(pg, slope, eave_to_ridge):
    """Whether the rain-on-snow surcharge of Sec. 7.10 applies [bool].

    Where ``0 < pg <= 20 psf`` and the roof slope in degrees is less than
    ``W/50`` (W, the eave-to-ridge distance, in ft).  W not known (NaN): the
    surcharge is applied, which is conservative.  Thresholds from memory.
    """
    pg = np.asarray(pg, dtype=float)
    slope = np.asarray(slope, dtype=float)
    w = np.asarray(np.nan if eave_to_ridge is None else eave_to_ridge, dtype=float)
    in_range = (pg > 0) & (pg <= RAIN_ON_SNOW_PG_LIMIT)
    low = np.where(np.isnan(w), True, slope < w / 50.0)
    return in_range & low


def rain_on_snow(pg, slope, eave_to_ridge, log: StepLog | None = None):
    """Rain-on-snow surcharge [psf]: 8 psf where it applies, else 0.

    Added to the balanced load case only.

    References
    ----------
    ASCE 7-22 Sec. 7.10 (8 psf confirmed [PROSE]; where it applies, from memory).
    """
    applies = rain_on_snow_applies(pg, slope, eave_to_ridge)
    value = np.where(applies, RAIN_ON_SNOW_SURCHARGE, 0.0)
    if log is not None:
        w = "unknown" if eave_to_ridge is None else f"{fmt(eave_to_ridge)} ft"
        limit = "n/a" if eave_to_ridge is None else fmt(eave_to_ridge / 50.0)
        log.add(
            "p_ros",
            "rain-on-snow surcharge (balanced case only)",
            "8 psf where 0 < pg <= 20 psf and slope < W/50 [deg, W in ft]",
            f"pg = {fmt(pg)} psf, slope = {fmt_deg(slope)}, W = {w}, W/50 = {limit}",
            value,
            "psf",
            f"{STANDARD} Sec. 7.10",
        )
    return value


def seismic_snow_weight(pf, design_uniform):
    """The snow load counted in the effective seismic weight [psf].

    ``0.15 x`` the uniform design snow load where ``pf > 45 psf``, else 0.

    Reading: the provision takes the uniform design snow load whatever the
    roof's slope (wording from memory, as in ASCE 7-16 Sec. 12.7.2), so a
    sloped roof's Cs does not reduce it: neve takes the larger of pf and the
    governing uniform load.

    References
    ----------
    ASCE 7-22 Sec. 12.7.2 (45 psf and 15 % confirmed [NFBA25]).  Information
    only: neve computes no seismic loads.
    """
    pf = np.asarray(pf, dtype=float)
    base = np.fmax(pf, np.asarray(design_uniform, dtype=float))
    return np.where(pf > SEISMIC_PF_THRESHOLD, SEISMIC_SHARE * base, 0.0)


#: slope below which a roof's deflections under the full snow load are to be
#: investigated for ponding instability [deg]: 1/4 on 12 (Sec. 7.11, with the rain
#: chapter's Sec. 8.4; from memory)
PONDING_SLOPE_DEG = float(np.degrees(np.arctan2(0.25, 12.0)))


def ponding_check_required(slope) -> np.ndarray:
    """Whether a roof needs a ponding-instability check [bool].

    Roofs with a slope under 1/4 on 12 (1.19 degrees) are to be checked for
    ponding instability from rain-on-snow or snow meltwater: their
    deflections under the full snow load are investigated as the rain
    provisions require.  neve flags the roof (``ponding_check_required``);
    it does not work the check, which needs the roof's stiffness.  A slope
    of exactly 1/4 on 12 is not under it.

    References
    ----------
    ASCE 7-22 Sec. 7.11 and Sec. 8.4 (from memory).
    """
    return np.asarray(slope, dtype=float) < PONDING_SLOPE_DEG - 1e-9
