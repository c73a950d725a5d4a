"""The EN 1991-1-3 load cases of a roof, each with its steps.

Each builder appends its cases to ``cases`` and, where a case does not
apply, an entry with the reason to ``skipped``.  A case is one load
arrangement in one design situation: ``situation`` says which
(``persistent/transient`` or ``accidental``), and the load arrangements of
one situation are alternatives.  ``_NOT_WITH`` says what each case is not
combined with.

Loads are worked in [kPa] and lengths in [m]; the JSON gives each load as
``{"psf", "kPa"}``, each length as ``{"ft", "m"}`` and each line load as
``{"plf", "kN/m"}``.
"""

from __future__ import annotations

from dataclasses import dataclass

from neve.engine.en1991_1_3 import STANDARD, exceptional, local, shapes
from neve.engine.en1991_1_3.factors import roof_load
from neve.engine.en1991_1_3.parameters import ParameterSet
from neve.engine.steps import StepLog, fmt
from neve.engine.units import (
    KPA_PER_PSF,
    M_PER_FT,
    N_PER_LBF,
    length_json,
    line_load_json,
    load_json,
)

PERSISTENT = "persistent/transient"
ACCIDENTAL = "accidental"

_NOT_WITH = {
    "undrifted": "the drifted arrangements (each arrangement is a case of its own)",
    "drifted": "the undrifted arrangement (each arrangement is a case of its own)",
    "abutting": "the undrifted load on the same area (its mu1 = 0.8 is the base of the drift)",
    "obstruction": "the undrifted load on the same area (its mu1 = 0.8 is the base of the drift)",
    "overhang": "",
    "snow_guard": "",
    "exceptional_ground": "the persistent/transient cases (an accidental design situation)",
    "exceptional_drift": "the persistent/transient cases and the exceptional snow load on "
    "the ground (an accidental design situation)",
}


def kpa(value) -> dict | None:
    """A load [kPa] in the contract's form ``{"psf", "kPa"}``."""
    return None if value is None else load_json(float(value) / KPA_PER_PSF)


def metres(value) -> dict | None:
    """A length [m] in the contract's form ``{"ft", "m"}``."""
    return None if value is None else length_json(float(value) / M_PER_FT)


def kn_per_m(value) -> dict | None:
    """A line load [kN/m] in the contract's form ``{"plf", "kN/m"}``."""
    if value is None:
        return None
    return line_load_json(float(value) * 1000.0 / (N_PER_LBF / M_PER_FT))


def case_record(kind: str, name: str, situation: str, log: StepLog, **values) -> dict:
    out = {"case": kind, "name": name, "situation": situation}
    out.update(values)
    out["not_combined_with"] = _NOT_WITH[kind]
    out["steps"] = log.to_list()
    return out


@dataclass(frozen=True)
class Situation:
    """How the loads of a set of cases are worked: the ground value and its equation.

    ``ground`` [kPa] is the ground value the loads take (sk or sn; sAd in the
    exceptional-ground situation); ``mu_ground`` the one the coefficients
    bounded by ``gamma h / sk`` take (always the persistent value: [SSB03]
    keeps the persistent coefficients for the accidental arrangements).
    """

    kind: str  # persistent, exceptional_ground
    ground: float
    mu_ground: float
    ce: float
    ct: float

    @property
    def label(self) -> str:
        return PERSISTENT if self.kind == "persistent" else ACCIDENTAL

    def case_kind(self, kind: str) -> str:
        return kind if self.kind == "persistent" else "exceptional_ground"

    def name(self, text: str) -> str:
        return text if self.kind == "persistent" else f"exceptional snow on the ground: {text}"

    def snow(self, mu, log, symbol="s", what=""):
        return float(roof_load(mu, self.ce, self.ct, self.ground, log, symbol=symbol, what=what,
                               situation=self.kind))  # fmt: skip


def _record(sit: Situation, kind: str, name: str, log: StepLog, **values) -> dict:
    rec = case_record(sit.case_kind(kind), sit.name(name), sit.label, log, **values)
    if sit.kind != "persistent":
        rec["arrangement"] = kind
    return rec


def slope_cases(sit: Situation, roof, alphas: tuple[float, float], retained: bool, params,
                geometry: dict | None, head: StepLog | None, cases: list) -> float:  # fmt: skip
    """The undrifted and drifted arrangements of the roof's shape (5.3.2 to 5.3.5).

    ``alphas``: the slopes of the two sides (a monopitch roof has one;
    ``alphas[1]`` is ignored).  ``head``: steps that lead the undrifted case
    (the ground load and the factors), or None.  Returns the largest
    undrifted load [kPa].
    """
    shape = roof.shape
    log = head if head is not None else StepLog()
    a1, a2 = alphas
    if shape == "cylindrical":
        s = sit.snow(shapes.MU1_LOW, log, what="undrifted load, slopes up to 60 degrees")
        cases.append(_record(sit, "undrifted", "undrifted, cylindrical roof", log,
                             mu1=shapes.MU1_LOW, load=kpa(s), ls=metres(geometry["ls"]),
                             note="on the part of the roof whose slope is at most 60 degrees "
                                  f"({fmt(geometry['ls'])} m wide); none beyond"))  # fmt: skip
        dlog = StepLog()
        mu3 = float(shapes.cylinder_coefficient(geometry["rise"], geometry["span"],
                                                params["mu3_max"], dlog))  # fmt: skip
        s_low = sit.snow(
            0.5 * mu3, dlog, symbol="s_1", what="drifted load, windward half (0.5 mu3)"
        )
        s_high = sit.snow(mu3, dlog, symbol="s_2", what="drifted load, leeward half (mu3)")
        cases.append(_record(sit, "drifted", "drifted, cylindrical roof", dlog, mu3=mu3,
                             windward=kpa(s_low), leeward=kpa(s_high), ls=metres(geometry["ls"]),
                             note="0.5 mu3 on the windward and mu3 on the leeward half of ls "
                                  "(Figure 5.6 as read, from memory)"))  # fmt: skip
        return s
    m1 = float(shapes.slope_coefficient(a1, retained, log, "mu1"))
    if shape in ("flat", "monoslope"):
        s = sit.snow(m1, log, what="undrifted load")
        cases.append(_record(sit, "undrifted", f"undrifted, {shape} roof", log, mu1=m1,
                             load=kpa(s), note="a monopitch roof has one arrangement: the "
                             "drifted one is the same (5.3.2)"))  # fmt: skip
        return s
    m2 = float(shapes.slope_coefficient(a2, retained, log, "mu1_2")) if a2 != a1 else m1
    s1 = sit.snow(m1, log, symbol="s_1", what="undrifted load, slope 1")
    s2 = sit.snow(m2, log, symbol="s_2", what="undrifted load, slope 2")
    what = "pitched (duopitch)" if shape == "gable" else "multi-span"
    cases.append(_record(sit, "undrifted", f"undrifted, {what} roof (i)", log, mu1=m1, mu1_2=m2,
                         slope_1=kpa(s1), slope_2=kpa(s2)))  # fmt: skip
    if shape == "gable":
        for label, f1, f2 in (("(ii)", 0.5, 1.0), ("(iii)", 1.0, 0.5)):
            dlog = StepLog()
            d1 = sit.snow(
                f1 * m1, dlog, symbol="s_1", what=f"drifted {label}, slope 1 ({f1:g} mu1)"
            )
            d2 = sit.snow(
                f2 * m2, dlog, symbol="s_2", what=f"drifted {label}, slope 2 ({f2:g} mu1)"
            )
            cases.append(_record(sit, "drifted", f"drifted, pitched (duopitch) roof {label}", dlog,
                                 arrangement_of_slopes=label, mu_1=f1 * m1, mu_2=f2 * m2,
                                 slope_1=kpa(d1), slope_2=kpa(d2)))  # fmt: skip
        return max(s1, s2)
    dlog = StepLog()
    mv = shapes.valley_coefficient(a1, a2, dlog)
    sv = sit.snow(mv, dlog, symbol="s_valley", what="drifted load at the valley (mu2)")
    cases.append(_record(sit, "drifted", "drifted, multi-span roof (ii): the valley", dlog,
                         mu2=mv, valley=kpa(sv), mu1=m1, mu1_2=m2,
                         note="mu2 at the valley, falling to mu1 of each slope at the ridges "
                              "either side (Figure 5.4 (ii) as read, from memory)"))  # fmt: skip
    return max(s1, s2)


def abutting_cases(sit: Situation, roof, params: ParameterSet, cases, skipped, flags) -> None:
    """Drifts on this roof beside taller construction (5.3.6): one case per ``[[step]]``."""
    for i, st in enumerate(roof.steps):
        log = StepLog()
        h, b1, b2 = (x * M_PER_FT for x in (st.height, st.upper_length, st.lower_length))
        run = None if st.upper_eave_to_ridge is None else st.upper_eave_to_ridge * M_PER_FT
        slope = st.upper_slope if st.upper_slides_toward else None
        if slope is not None and slope > local.SLIDING_SLOPE_LIMIT and run is None:
            from neve.engine.errors import InputError

            raise InputError(f"step[{i}].upper_eave_to_ridge",
                             f"needed for the snow sliding from the upper roof ({STANDARD} "
                             "5.3.6(1))", "a length such as 12m")  # fmt: skip
        if st.upper_slope is None and sit.kind == "persistent":
            flags.append("upper_slope_unstated")
        v = local.abutting(h, b1, b2, sit.mu_ground, params, slope, run, log)
        base = sit.snow(v["mu1"], log, symbol="s_1", what="load beyond the drift (mu1)")
        peak = sit.snow(v["mu2"], log, symbol="s_2", what="load at the taller construction (mu2)")
        far = sit.snow(v["mu_far"], StepLog(), symbol="s_far")
        cases.append(_record(sit, "abutting", f"drift at taller construction '{st.name}'", log,
                             source="step", mu1=v["mu1"], mu_s=v["mu_s"], mu_w=v["mu_w"],
                             mu2=v["mu2"], ls=metres(v["ls"]), base=kpa(base), peak=kpa(peak),
                             far_edge=kpa(far), width=metres(b2),
                             note="mu2 at the wall, falling linearly to mu1 at ls (Figure 5.7); "
                                  "mu1 = 0.8 reads the lower roof as flat"))  # fmt: skip


def _places(roof):
    for p in roof.parapets:
        yield "parapet", p
    for p in roof.projections:
        yield "projection", p


def obstruction_cases(sit: Situation, roof, params: ParameterSet, cases) -> None:
    """Drifts at parapets and projections (6.2): one case per ``[[parapet]]``/``[[projection]]``."""
    for kind, p in _places(roof):
        log = StepLog()
        h = p.height * M_PER_FT
        v = local.obstruction(h, sit.mu_ground, params, log)
        base = sit.snow(v["mu1"], log, symbol="s_1", what="load beyond the drift (mu1)")
        peak = sit.snow(v["mu2"], log, symbol="s_2", what="load at the obstruction (mu2)")
        sides = "each side the wind can reach" if kind == "projection" else "the roof side"
        cases.append(_record(sit, "obstruction", f"drift at {kind} '{p.name}'", log, source=kind,
                             mu1=v["mu1"], mu2=v["mu2"], ls=metres(v["ls"]), base=kpa(base),
                             peak=kpa(peak),
                             note=f"mu2 at the {kind}, falling linearly to mu1 at ls, on "
                                  f"{sides} (Figure 6.1)"))  # fmt: skip


def overhang_case(roof, s_undrifted: float, params: ParameterSet, altitude, cases, skipped,
                  flags) -> None:  # fmt: skip
    """Snow overhanging the edge of a cantilevered roof part (6.3), where ``[overhang]`` is given."""
    if roof.overhang is None:
        return
    limit = float(params["overhang_altitude"])
    if altitude is not None and altitude * M_PER_FT <= limit:
        skipped.append({"case": "overhang", "reason": f"site altitude {fmt(altitude * M_PER_FT)} m "
                        f"is not above {fmt(limit)} m ({STANDARD} 6.3(1))"})  # fmt: skip
        return
    if altitude is None:
        flags.append("altitude_unstated")
    log = StepLog()
    v = local.overhang_line_load(s_undrifted, params, log)
    cases.append(case_record("overhang", "snow overhanging the edge of the roof", PERSISTENT, log,
                             se=kn_per_m(v["se"]), s=kpa(s_undrifted), d=metres(v["d"]), k=v["k"],
                             overhang=metres(roof.overhang * M_PER_FT),
                             note="acts at the edge, in addition to the load on the cantilevered "
                                  "part" + ("" if altitude is not None else "; the site altitude "
                                  "is not given, so the case is applied (conservative)")))  # fmt: skip


def snow_guard_case(roof, s_slope: float, alpha: float, width_ft, cases) -> None:
    """The force on a snow guard or obstacle (6.4), where ``guard_width`` is given."""
    if width_ft is None:
        return
    log = StepLog()
    b = width_ft * M_PER_FT
    fs = float(local.snow_guard_force(s_slope, b, alpha, log))
    cases.append(case_record("snow_guard", "force on a snow guard or obstacle", PERSISTENT, log,
                             force=kn_per_m(fs), s=kpa(s_slope), width=metres(b),
                             note="per metre of the guard, in the direction of sliding; no "
                                  "friction between snow and roof"))  # fmt: skip


def exceptional_drift_cases(roof, sk: float, params: ParameterSet, cases, skipped) -> None:
    """The exceptional drifts of Annex B at steps, parapets and projections (s = mu sk)."""
    for st in roof.steps:
        log = StepLog()
        h, b1, b2 = (x * M_PER_FT for x in (st.height, st.upper_length, st.lower_length))
        v = exceptional.step_drift(h, b1, b2, sk, params, log)
        peak = float(
            roof_load(
                v["mu1"],
                1.0,
                1.0,
                sk,
                log,
                symbol="s_1",
                what="exceptional drift at the wall",
                situation="exceptional_drift",
            )
        )
        cases.append(case_record("exceptional_drift", f"exceptional drift at taller construction "
                                 f"'{st.name}'", ACCIDENTAL, log, source="step", mu1=v["mu1"],
                                 ls=metres(v["ls"]), peak=kpa(peak),
                                 far_edge=kpa(v["mu_far"] * sk),
                                 note="mu1 at the wall, falling linearly to 0 at ls (from "
                                      "memory)"))  # fmt: skip
    for kind, p in _places(roof):
        log = StepLog()
        h = p.height * M_PER_FT
        if kind == "parapet":
            b2 = p.upwind_length * M_PER_FT
            b1 = (p.drift_space if p.drift_space is not None else p.upwind_length) * M_PER_FT
            v = exceptional.parapet_drift(h, b1, b2, sk, params, log)
        else:
            v = exceptional.projection_drift(h, sk, params, log)
        peak = float(roof_load(v["mu1"], 1.0, 1.0, sk, log, symbol="s_1",
                               what=f"exceptional drift at the {kind}",
                               situation="exceptional_drift"))  # fmt: skip
        cases.append(
            case_record(
                "exceptional_drift",
                f"exceptional drift at {kind} '{p.name}'",
                ACCIDENTAL,
                log,
                source=kind,
                mu1=v["mu1"],
                ls=metres(v["ls"]),
                peak=kpa(peak),
                note="mu1 at the " + kind + ", falling linearly to 0 at ls",
            )
        )
    if roof.shape == "multi-span":
        skipped.append({"case": "exceptional_drift", "name": "valley",
                        "reason": "not computed: the exceptional valley drift of multi-span roofs "
                                  f"({STANDARD} Annex B, B2) needs the valley geometry neve does "
                                  "not take"})  # fmt: skip
