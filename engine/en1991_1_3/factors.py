"""Ground and roof factors of EN 1991-1-3: Ce, Ct, sAd, and the return period of Annex D.

All functions take scalars or numpy arrays and return the same shape.
Loads in [kN/m2 = kPa], slopes in [degrees].

References
----------
.. [1] EN 1991-1-3:2003 + A1:2015, 4.3 (Eq. 4.1), 5.2 (Eq. 5.1 to 5.3,
   Table 5.1), Annex D (Eq. D.1).  From memory, except where a
   verification case names the worked example of [SSB03] (Cesl, Ce normal).
"""

from __future__ import annotations

import math
import re

import numpy as np

from neve.engine.choices import choose_key
from neve.engine.en1991_1_3 import STANDARD
from neve.engine.en1991_1_3.parameters import ParameterSet
from neve.engine.errors import InputError
from neve.engine.steps import StepLog, fmt

#: topography -> the parameter holding its exposure coefficient (Table 5.1; the
#: values themselves are nationally determined, see ``parameters``)
EXPOSURE_TABLE_5_1 = {
    "windswept": "Ce_windswept",
    "normal": "Ce_normal",
    "sheltered": "Ce_sheltered",
}
TOPOGRAPHIES = tuple(EXPOSURE_TABLE_5_1)

#: Euler-Mascheroni constant, as Annex D writes it (0.57722)
EULER_GAMMA = 0.57722
#: the largest annual probability of exceedence Annex D may be used for (from memory:
#: return periods of about 5 years and more)
ANNEX_D_PN_MAX = 0.2
#: the longest return period neve accepts [years] (plausibility)
RETURN_PERIOD_MAX = 10000.0
#: the accepted coefficient of variation of the annual maxima (plausibility)
COV_RANGE = (0.0, 1.5)


def exposure_coefficient(topography: str | None, ce, params: ParameterSet, log: StepLog):
    """Exposure coefficient Ce [-] from the topography (Table 5.1) or given directly.

    Parameters
    ----------
    topography : {"windswept", "normal", "sheltered"} or None
        None with ``ce`` None: normal (the caller flags ``topography_assumed``).
    ce : float or None
        A value given directly (0.7 to 1.2, the shared roof range).
    params : ParameterSet
        The nationally determined values of Table 5.1.

    References
    ----------
    EN 1991-1-3 5.2(7), Table 5.1 (recommended values; a national annex may set them).
    """
    if ce is not None:
        log.add("Ce", "exposure coefficient (given)", "Ce given", f"Ce = {fmt(ce)}", float(ce),
                "-", f"{STANDARD} 5.2(7)")  # fmt: skip
        return float(ce)
    word = choose_key("topography", topography or "normal", TOPOGRAPHIES)
    value = float(params[EXPOSURE_TABLE_5_1[word]])
    log.add(
        "Ce",
        f"exposure coefficient, {word} topography ({params.name} values)",
        f"Ce = Table 5.1 ({word})",
        f"Ce = {fmt(value)}",
        value,
        "-",
        f"{STANDARD} 5.2(7), Table 5.1",
    )
    return value


def thermal_coefficient(ct, params: ParameterSet, log: StepLog) -> float:
    """Thermal coefficient Ct [-]: the parameter set's (1.0) unless a justified value is given.

    A value above 1.0 is refused: Ct only reduces the load of roofs of high
    thermal transmittance (5.2(8)); a value below 1.0 must be justified,
    and the caller flags ``ct_reduced``.

    References
    ----------
    EN 1991-1-3 5.2(8) (from memory).
    """
    if ct is None:
        value = float(params["Ct"])
        log.add("Ct", f"thermal coefficient ({params.name} value)", "Ct = 1.0 unless justified",
                f"Ct = {fmt(value)}", value, "-", f"{STANDARD} 5.2(8)")  # fmt: skip
        return value
    if float(ct) > 1.0:
        raise InputError("ct", f"{ct!r} is above 1.0", "a thermal coefficient of at most 1.0 "
                         f"({STANDARD} 5.2(8): Ct only reduces the load)")  # fmt: skip
    log.add("Ct", "thermal coefficient (given: a reduced value must be justified)", "Ct given",
            f"Ct = {fmt(ct)}", float(ct), "-", f"{STANDARD} 5.2(8)")  # fmt: skip
    return float(ct)


def exceptional_ground_load(sk, cesl, log: StepLog | None = None):
    """Design value of the exceptional snow load on the ground sAd [kPa].

    ``sAd = Cesl sk`` (Eq. 4.1), for the accidental design situations of
    Annex A cases B1 and B3.

    References
    ----------
    EN 1991-1-3 4.3(1), Eq. 4.1; [SSB03] Appendix A: sAd = 2 x 0.65 = 1.30 kN/m2.
    """
    sad = np.asarray(cesl, dtype=float) * np.asarray(sk, dtype=float)
    if log is not None:
        log.add("sAd", "exceptional snow load on the ground", "sAd = Cesl sk",
                f"sAd = {fmt(cesl)} x {fmt(sk)}", sad, "kPa", f"{STANDARD} 4.3, Eq. 4.1")  # fmt: skip
    return sad


_YEARS = re.compile(r"^\s*(\d+(?:\.\d*)?|\.\d+)\s*(y|yr|yrs|year|years|a)?\s*$", re.IGNORECASE)


def parse_return_period(text, field: str = "return_period") -> float:
    """A return period such as ``100y`` or ``100 years`` in years (5 to 10000).

    >>> parse_return_period("100y"), parse_return_period("50 years")
    (100.0, 50.0)
    """
    accepted = f"a return period in years from {1 / ANNEX_D_PN_MAX:g}, e.g. 100y"
    if isinstance(text, bool):
        raise InputError(field, f"{text!r} is not a return period", accepted)
    if isinstance(text, (int, float)):
        value = float(text)
    else:
        match = _YEARS.match(str(text))
        if not match:
            raise InputError(field, f"{text!r} is not a return period", accepted)
        value = float(match.group(1))
    if not math.isfinite(value) or value < 1 / ANNEX_D_PN_MAX or value > RETURN_PERIOD_MAX:
        raise InputError(field, f"{text!r} is out of range",
                         f"{accepted} (Annex D is not for annual probabilities above "
                         f"{ANNEX_D_PN_MAX:g}), up to {RETURN_PERIOD_MAX:g}y")  # fmt: skip
    return value


def check_cov(value, field: str = "cov") -> float:
    """The coefficient of variation V of the annual maximum snow loads, checked."""
    lo, hi = COV_RANGE
    accepted = f"a plain number above {lo:g} up to {hi:g}, e.g. 0.4"
    try:
        v = float(value)
    except (TypeError, ValueError):
        raise InputError(field, f"{value!r} is not a number", accepted) from None
    if isinstance(value, bool) or not (lo < v <= hi):
        raise InputError(field, f"{value!r} is out of range", accepted)
    return v


def return_period_factor(years, cov):
    """The ratio sn / sk of Annex D (Eq. D.1) [-].

    ``sn / sk = [1 - V sqrt(6)/pi (ln(-ln(1 - Pn)) + 0.57722)] / (1 + 2.5923 V)``
    with Pn = 1 / years.  At 50 years the ratio is 1 (the characteristic value is
    the 50-year value: ``2.5923 = -sqrt(6)/pi (ln(-ln 0.98) + 0.57722)``).

    >>> round(float(return_period_factor(50.0, 0.4)), 4)
    1.0
    """
    pn = 1.0 / np.asarray(years, dtype=float)
    v = np.asarray(cov, dtype=float)
    top = 1.0 - v * math.sqrt(6.0) / math.pi * (np.log(-np.log(1.0 - pn)) + EULER_GAMMA)
    return top / (1.0 + 2.5923 * v)


def adjusted_ground_load(sk, years, cov, log: StepLog | None = None):
    """Ground snow load sn [kPa] for a return period other than 50 years (Annex D).

    Parameters
    ----------
    sk : float or array
        Characteristic ground snow load (50-year) [kPa].
    years : float
        Return period n [years], 5 or more.
    cov : float
        Coefficient of variation V of the annual maximum snow loads [-].

    References
    ----------
    EN 1991-1-3 Annex D, Eq. D.1 (from memory; its 50-year consistency is a
    property test).
    """
    pn = 1.0 / float(years)
    ratio = return_period_factor(years, cov)
    sn = np.asarray(sk, dtype=float) * ratio
    if log is not None:
        ref = f"{STANDARD} Annex D, Eq. D.1"
        log.add("Pn", "annual probability of exceedence", "Pn = 1 / n",
                f"Pn = 1 / {fmt(years)}", pn, "-", ref)  # fmt: skip
        log.add(
            "sn",
            "ground snow load for the return period",
            "sn = sk [1 - V sqrt(6)/pi (ln(-ln(1 - Pn)) + 0.57722)] / (1 + 2.5923 V)",
            f"sn = {fmt(sk)} x {fmt(ratio)} (V = {fmt(cov)}, Pn = {fmt(pn)})",
            sn,
            "kPa",
            ref,
        )
    return sn


#: the equation of the roof load in each design situation (5.2(3))
SITUATION_EQUATION = {
    "persistent": "Eq. 5.1",
    "exceptional_ground": "Eq. 5.2",
    "exceptional_drift": "Eq. 5.3",
}


def roof_load(mu, ce, ct, ground, log: StepLog | None = None, *, symbol="s", what="",
              situation: str = "persistent"):  # fmt: skip
    """Snow load on the roof s [kPa] in a design situation (5.2(3)).

    ``persistent``: ``s = mu Ce Ct sk`` (Eq. 5.1; sk, or sn for another return
    period); ``exceptional_ground``: ``s = mu Ce Ct sAd`` (Eq. 5.2);
    ``exceptional_drift``: ``s = mu sk`` without Ce and Ct (Eq. 5.3, Annex B).

    Parameters
    ----------
    mu : float or array
        Snow load shape coefficient [-].
    ce, ct : float
        Exposure and thermal coefficients [-].
    ground : float or array
        The ground value of the situation: sk (or sn), or sAd [kPa].

    References
    ----------
    EN 1991-1-3 5.2(3), Eq. 5.1 to 5.3 (from memory; Eq. 5.1 and 5.2 as worked in [SSB03]).
    """
    ref = SITUATION_EQUATION[situation]
    ground_name = {"persistent": "sk", "exceptional_ground": "sAd", "exceptional_drift": "sk"}
    g = ground_name[situation]
    if situation == "exceptional_drift":
        s = np.asarray(mu, dtype=float) * np.asarray(ground, dtype=float)
        eq, sub = f"{symbol} = mu {g}", f"{symbol} = {fmt(mu)} x {fmt(ground)}"
    else:
        s = np.asarray(mu, dtype=float) * ce * ct * np.asarray(ground, dtype=float)
        eq = f"{symbol} = mu Ce Ct {g}"
        sub = f"{symbol} = {fmt(mu)} x {fmt(ce)} x {fmt(ct)} x {fmt(ground)}"
    if log is not None:
        log.add(symbol, what or "snow load on the roof", eq, sub, s, "kPa", f"{STANDARD} {ref}")
    return s
