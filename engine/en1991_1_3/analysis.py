"""EN 1991-1-3: a roof and its ground snow load sk -> every load case, in SI units.

:func:`analyze_roof` works one roof for one site and records every step;
:func:`uniform_loads` evaluates the undrifted roof load for many sites at
once (screening).  The rest of neve reaches them through the standards
registry (this standard's declaration is :mod:`neve.engine.en1991_1_3.standard`).

The design situations (5.2, Annex A): the persistent/transient situation
always; the accidental ones by the design case of Annex A (the parameter
set's ``design_case`` or the roof option ``snow_case``): B1 and B3 add the
exceptional snow load on the ground (Eq. 5.2 with sAd = Cesl sk), B2 and B3
the exceptional drifts of Annex B (Eq. 5.3).  Each arrangement of each
situation is a case of its own.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from neve.engine.en1991_1_3 import STANDARD, factors, shapes
from neve.engine.en1991_1_3 import cases as cs
from neve.engine.en1991_1_3.parameters import DESIGN_CASES, ParameterSet, parameter_set
from neve.engine.errors import InputError
from neve.engine.roof_spec import PG_MAX_PSF, Roof, as_roof
from neve.engine.steps import StepLog, fmt
from neve.engine.units import KPA_PER_PSF, M_PER_FT

#: shown with every result: neve is an aid to a licensed professional
CAUTIONS = (
    "neve is an aid to, not a substitute for, the judgement of a licensed design professional.",
    "Confirm the characteristic ground snow load sk and the nationally determined parameters "
    "with the national annex of the site's country and the authority having jurisdiction.",
    "Sites flagged for a study need a site-specific case study by a qualified professional.",
    "Many EN 1991-1-3 values in neve are from memory and marked so in the steps' sources and "
    "in neve verify; check them against the standard and its national annex at hand.",
    "Accidental design situations (exceptional snow on the ground, exceptional drifts) go into "
    "the accidental combination of EN 1990; neve gives the snow loads only.",
)

#: the largest ground snow load accepted [kPa] (the shared plausibility bound)
SK_MAX_KPA = PG_MAX_PSF * KPA_PER_PSF

#: shared roof options that are another standard's: refused with the EN word to use
_NOT_EN = {
    "thermal": "ct (a justified thermal coefficient)",
    "terrain": "topography (windswept, normal, sheltered) or ce",
    "exposure": "topography (windswept, normal, sheltered) or ce",
    "risk": "none: EN 1991-1-3 has no risk category (EN 1990 consequence classes act on the "
    "combinations)",
    "r_value": "ct (a justified thermal coefficient)",
    "ventilated": "ct (a justified thermal coefficient)",
    "prismatic": "none: the arrangements of EN 1991-1-3 do not depend on the members",
}

#: shapes with drifted arrangements beyond the undrifted load (screening flags them)
_DRIFTED_SHAPES = ("gable", "multi-span", "cylindrical")


@dataclass
class EnRoofResult:
    """The outcome of :func:`analyze_roof`; :meth:`to_json` gives the contract."""

    sk: float  # [kPa]
    sn: float | None  # [kPa], for another return period
    roof: Roof
    params: ParameterSet
    design_case: str
    factors: dict
    loads: dict
    cases: list[dict]
    design_uniform: float  # [kPa]
    flags: list[str] = field(default_factory=list)
    not_required: list[dict] = field(default_factory=list)
    cautions: list[str] = field(default_factory=list)
    return_period: dict | None = None
    standard: str = STANDARD

    def case(self, kind: str) -> list[dict]:
        """All cases of one kind (``"drifted"``, ``"abutting"`` ...)."""
        return [c for c in self.cases if c["case"] == kind]

    def to_json(self) -> dict:
        r = self.roof
        other = r.option("other_slope")
        return {
            "standard": self.standard,
            "sk": cs.kpa(self.sk),
            "sn": cs.kpa(self.sn),
            "return_period": self.return_period,
            "roof": {
                "name": r.name,
                "shape": r.shape,
                "slope_deg": round(r.slope, 3),
                "other_slope_deg": None if other is None else round(float(other), 3),
                "surface": r.surface,
                "topography": r.option("topography"),
                "snow_retained": r.unobstructed is False,
            },
            "parameters": self.params.to_json(),
            "design_case": self.design_case,
            "factors": dict(self.factors),
            "loads": {k: cs.kpa(v) for k, v in self.loads.items()},
            "cases": self.cases,
            "design_uniform": cs.kpa(self.design_uniform),
            "not_required": self.not_required,
            "flags": sorted(set(self.flags)),
            "cautions": list(self.cautions),
        }


def check_sk(sk) -> float:
    """The ground snow load sk [kPa], a finite number from 0 to the shared bound."""
    accepted = f"a ground snow load of 0 to {SK_MAX_KPA:.4g} kPa"
    try:
        value = float(sk)
    except (TypeError, ValueError):
        raise InputError("sk", f"{sk!r} is not a number", accepted) from None
    if isinstance(sk, bool) or not math.isfinite(value) or not 0.0 <= value <= SK_MAX_KPA:
        raise InputError("sk", f"{sk!r} is negative, not finite or implausibly large", accepted)
    return value


def _refuse_other_standards(roof: Roof) -> None:
    for key, use in _NOT_EN.items():
        if getattr(roof, key) is not None:
            raise InputError(key, f"{STANDARD} takes no {key}", use)


def _return_period(roof: Roof):
    years, cov = roof.option("return_period"), roof.option("cov")
    if years is None and cov is None:
        return None, None
    if years is None:
        raise InputError("cov", "given without a return period", "--return-period with --cov")
    if cov is None:
        raise InputError("return_period", "needs the coefficient of variation of the annual "
                         "maxima", "--cov, e.g. 0.4 (Annex D)")  # fmt: skip
    return factors.parse_return_period(years), factors.check_cov(cov)


def _alphas(roof: Roof) -> tuple[float, float]:
    other = roof.option("other_slope")
    return float(roof.slope), float(roof.slope if other is None else other)


def _retained(roof: Roof, alphas, flags) -> bool:
    """Whether snow is kept from sliding off (mu1 not below 0.8): stated, or assumed so.

    ``--obstructed`` (snow fences, obstructions, a parapet at the lower edge):
    yes; ``--unobstructed``: no; not stated where it matters (a slope over 30
    degrees): yes, the conservative reading, flagged ``snow_retention_unstated``.
    """
    if roof.unobstructed is not None:
        return not roof.unobstructed
    if roof.shape != "cylindrical" and max(alphas) > shapes.TABLE_5_2_LIMITS[0]:
        flags.append("snow_retention_unstated")
        return True
    return False


def _cylinder(roof: Roof) -> dict:
    rise, span = roof.rise, roof.chord  # the shared roof's rise and chord are h and b
    if rise is None or span is None:
        missing = "rise" if rise is None else "chord"
        raise InputError(missing, "needed for a cylindrical roof", "a length such as 4m")
    g = shapes.cylinder_geometry(rise * M_PER_FT, span * M_PER_FT)
    return {**g, "rise": rise * M_PER_FT, "span": span * M_PER_FT}


def _ground(sk, roof: Roof, log: StepLog):
    """The ground value of the persistent situation: sk, or sn for another return period."""
    log.add("sk", "characteristic ground snow load (given)", "sk given", f"sk = {fmt(sk)}", sk,
            "kPa", f"{STANDARD} 4.1")  # fmt: skip
    years, cov = _return_period(roof)
    if years is None:
        return sk, None, None
    sn = float(factors.adjusted_ground_load(sk, years, cov, log))
    return sn, sn, {"years": years, "cov": cov, "ratio": round(sn / sk, 4) if sk else None}


def analyze_roof(sk: float, roof: Roof) -> EnRoofResult:
    """All EN 1991-1-3 load cases of ``roof`` for a ground snow load ``sk`` [kPa].

    Parameters
    ----------
    sk : float
        Characteristic ground snow load [kPa], zero or more.
    roof : Roof
        The roof; its EN options (``topography``, ``annex``, ``snow_case``,
        ``return_period``, ``cov``, ``other_slope``, ``rise``, ``span``,
        ``altitude``, ``guard_width``) are in ``roof.extra``.

    Returns
    -------
    EnRoofResult
    """
    sk = check_sk(sk)
    roof = as_roof(roof)
    _refuse_other_standards(roof)
    params = parameter_set(roof.option("annex"))
    design_case = str(roof.option("snow_case") or params["design_case"]).upper()
    if design_case not in DESIGN_CASES:
        raise InputError("snow_case", f"{design_case!r} is not accepted", ", ".join(DESIGN_CASES))
    flags: list[str] = []
    if not roof.shape_stated:
        flags.append("shape_assumed")
    if roof.option("topography") is None and roof.ce is None:
        flags.append("topography_assumed")
    if params.demo:
        flags.append("demo_parameters")
    head = StepLog()
    ground, sn, period = _ground(sk, roof, head)
    ce = factors.exposure_coefficient(roof.option("topography"), roof.ce, params, head)
    ct = factors.thermal_coefficient(roof.ct, params, head)
    if ct < 1.0:
        flags.append("ct_reduced")
    alphas = _alphas(roof)
    retained = _retained(roof, alphas, flags)
    geometry = _cylinder(roof) if roof.shape == "cylindrical" else None
    cases: list[dict] = []
    skipped: list[dict] = []
    sit = cs.Situation("persistent", ground, ground, ce, ct)
    s_max = cs.slope_cases(sit, roof, alphas, retained, params, geometry, head, cases)
    cs.abutting_cases(sit, roof, params, cases, skipped, flags)
    cs.obstruction_cases(sit, roof, params, cases)
    cs.overhang_case(roof, s_max, params, roof.option("altitude"), cases, skipped, flags)
    s_slope = sit.snow(float(shapes.mu1(alphas[0])), None) if roof.shape != "cylindrical" else s_max
    cs.snow_guard_case(roof, s_slope, alphas[0], roof.option("guard_width"), cases)
    loads = {"s": s_max, "sAd": None}
    cesl = None
    if design_case in ("B1", "B3"):
        cesl = float(params["Cesl"])
        alog = StepLog()
        sad = float(factors.exceptional_ground_load(sk, cesl, alog))
        loads["sAd"] = sad
        acc = cs.Situation("exceptional_ground", sad, ground, ce, ct)
        cs.slope_cases(acc, roof, alphas, retained, params, geometry, alog, cases)
        cs.abutting_cases(acc, roof, params, cases, skipped, flags)
        cs.obstruction_cases(acc, roof, params, cases)
    else:
        skipped.append({"case": "exceptional_ground", "reason": f"design case {design_case} "
                        f"({DESIGN_CASES[design_case]}; {STANDARD} Annex A)"})  # fmt: skip
    if design_case in ("B2", "B3"):
        cs.exceptional_drift_cases(roof, sk, params, cases, skipped)
        if not (roof.steps or roof.parapets or roof.projections or roof.shape == "multi-span"):
            skipped.append({"case": "exceptional_drift", "reason": "no taller construction, "
                            "parapet, projection or valley on this roof"})  # fmt: skip
    else:
        skipped.append({"case": "exceptional_drift", "reason": f"design case {design_case} "
                        f"({DESIGN_CASES[design_case]}; {STANDARD} Annex A)"})  # fmt: skip
    facts = {"Ce": ce, "Ct": ct, "Cesl": cesl}
    return EnRoofResult(sk, sn, roof, params, design_case, facts, loads, cases, s_max, flags,
                        skipped, list(CAUTIONS), period)  # fmt: skip


def _mu_undrifted(roof: Roof) -> float:
    """The largest undrifted coefficient of the roof [-] (screening)."""
    if roof.shape == "cylindrical":
        return shapes.MU1_LOW
    alphas = _alphas(roof)
    retained = roof.unobstructed is False or (
        roof.unobstructed is None and max(alphas) > shapes.TABLE_5_2_LIMITS[0]
    )
    mus = [float(shapes.mu1(a)) for a in alphas]
    if retained:
        mus = [max(m, shapes.MU_RETAINED_MIN) for m in mus]
    return max(mus)


def uniform_loads(sk, roof: Roof) -> dict[str, np.ndarray]:
    """The undrifted roof load for many ground snow loads at once.

    Parameters
    ----------
    sk : array_like
        Ground snow loads [kPa]; NaN stays NaN, a value out of range gives NaN.
    roof : Roof
        One roof for all of them.

    Returns
    -------
    dict of ndarray
        ``s`` (the largest undrifted persistent load) and ``design_uniform``
        (the same) [kPa].
    """
    roof = as_roof(roof)
    _refuse_other_standards(roof)
    params = parameter_set(roof.option("annex"))
    sk = np.asarray(sk, dtype=float)
    sk = np.where((sk >= 0) & (sk <= SK_MAX_KPA), sk, np.nan)
    log = StepLog()
    ce = factors.exposure_coefficient(roof.option("topography"), roof.ce, params, log)
    ct = factors.thermal_coefficient(roof.ct, params, log)
    years, cov = _return_period(roof)
    ground = sk if years is None else sk * factors.return_period_factor(years, cov)
    if roof.shape == "cylindrical":
        _cylinder(roof)
    s = _mu_undrifted(roof) * ce * ct * ground
    return {"s": np.asarray(s, dtype=float), "design_uniform": np.asarray(s, dtype=float)}


def screening_flags(roof: Roof) -> list[str]:
    """Flags that go with :func:`uniform_loads` results of ``roof``.

    The flags of the roof description plus ``roof_cases_not_screened`` where
    the roof has cases beyond the undrifted load (drifted arrangements,
    drifts, overhanging snow, snow guards, accidental situations).
    """
    roof = as_roof(roof)
    result = analyze_roof(1.0, roof)
    flags = [f for f in result.flags if f not in ("altitude_unstated",)]
    more = len(result.cases) > 1
    if more or roof.shape in _DRIFTED_SHAPES:
        flags.append("roof_cases_not_screened")
    return sorted(set(flags))
