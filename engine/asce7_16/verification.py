"""ASCE 7-16 verification cases: table values and equations worked by hand, as data.

Every case names where its expected value comes from.  The values were
restated from ASCE 7-16 without the document at hand: each source says
"from memory", as the engine tests they were taken from do; "common
practice" marks a trade fact without a clause.  A hand calculation is shown
in the case's ``note``.  ``neve verify`` runs these cases on the user's
machine and ``tests/engine/test_verify.py`` runs the same cases in the test
suite, so the two cannot drift apart.

Inputs are written as the user would write them (loads and lengths with
their units, slopes as ``rise:run`` or degrees); expected quantities carry
their unit in brackets (``pd [psf]``), read from the engine's JSON results
(``{"psf": ..., "kPa": ...}``) by that unit.

References
----------
.. [1] ASCE/SEI 7-16, Minimum Design Loads and Associated Criteria for
   Buildings and Other Structures, Table 1.5-2 and Chapter 7 (Tables 7.3-1
   and 7.3-2, Eq. 7.3-1, 7.4-1 and 7.7-1, Figs. 7.4-1 and 7.6-1, Sec. 7.3.4,
   7.4.1, 7.4.2, 7.4.5, 7.5, 7.6.1, 7.7.1, 7.7.2, 7.8, 7.9 and 7.10).
.. [2] NIST SP 811 (2008), Guide for the Use of the International System of
   Units: 1 psf = 47.880259 Pa.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping

from neve.engine.asce7_16 import drift, eaves, factors, flat, sliding, slope, unbalanced
from neve.engine.asce7_16.analysis import analyze_roof
from neve.engine.roof_spec import Roof, parse_pg
from neve.engine.standards import VerificationCase
from neve.engine.units import parse_length, parse_slope

#: 1 psf in kPa (NIST SP 811: 47.880259 Pa)
KPA_PER_PSF = 0.047880259

# --- tables (each list as the engine tests hold it; tests/engine/test_verify.py
# --- checks that the two are the same) ------------------------------------------

#: ASCE 7-16 Table 1.5-2, snow column (from memory): (risk category, Is)
IS_TABLE_1_5_2 = [("I", 0.80), ("II", 1.00), ("III", 1.10), ("IV", 1.20)]

#: ASCE 7-16 Table 7.3-1 (from memory): (terrain, exposure, Ce)
CE_TABLE_7_3_1 = [
    ("B", "fully", 0.9),
    ("B", "partially", 1.0),
    ("B", "sheltered", 1.2),
    ("C", "fully", 0.9),
    ("C", "partially", 1.0),
    ("C", "sheltered", 1.1),
    ("D", "fully", 0.8),
    ("D", "partially", 0.9),
    ("D", "sheltered", 1.0),
    ("above-treeline", "fully", 0.7),
    ("above-treeline", "partially", 0.8),
    ("treeless", "fully", 0.7),
    ("treeless", "partially", 0.8),
]

#: ASCE 7-16 Table 7.3-2 (from memory): (thermal condition, Ct)
CT_TABLE_7_3_2 = [
    ("heated", 1.0),
    ("cold-ventilated", 1.1),
    ("unheated", 1.2),
    ("below-freezing", 1.3),
    ("greenhouse", 0.85),
]

#: ASCE 7-16 Fig. 7.4-1 (from memory): (Ct, slippery, knee [deg]); each line is 1.0
#: up to its knee and straight down to 0 at 70 deg
KNEES_FIG_7_4_1 = [
    (1.0, False, 30.0),
    (1.0, True, 5.0),
    (1.1, False, 37.5),
    (1.1, True, 10.0),
    (1.2, False, 45.0),
    (1.2, True, 15.0),
]

#: a neutral roof: every factor 1.0, so hand arithmetic stays short
NEUTRAL = {"ce": 1.0, "ct": 1.0, "risk": "II"}

_MEMORY = "(from memory)"


#: id prefixes and the provision kind they stand for
_GROUPS = {"table": "Table", "eq": "Eq.", "fig": "Fig.", "sec": "Sec."}


def _group(id_: str) -> str:
    """The provision a case is filed under: ``sec-7.7.1/...`` -> ``Sec. 7.7.1``."""
    head = id_.split("/", 1)[0]
    kind, _, number = head.partition("-")
    if kind in _GROUPS:
        return f"{_GROUPS[kind]} {number}"
    return "Governing uniform load (Sec. 7.3.4, Eq. 7.4-1, Sec. 7.10)"


def _case(id_, source, inputs, expected, tolerance, compute, note=""):
    return VerificationCase(id_, source, inputs, expected, tolerance, compute, note, _group(id_))


def _neutral(**roof) -> dict:
    """A roof mapping on the neutral factors, as the engine tests build it."""
    data = dict(NEUTRAL)
    if "terrain" in roof or "exposure" in roof:
        data.pop("ce")
    if "thermal" in roof:
        data.pop("ct")
    data.update(roof)
    return data


def _result(inputs: Mapping) -> dict:
    pg = parse_pg(inputs["pg"], "pg")
    return analyze_roof(pg, Roof.from_mapping(inputs["roof"])).to_json()


def _uniform_values(inputs: Mapping) -> dict:
    """The uniform loads, factors and design load of a roof (``pf [psf]``, ``Cs`` ...)."""
    out = _result(inputs)
    values = {**out["loads"], **out["factors"], "design_uniform": out["design_uniform"]}
    values["pm applies"] = out["loads"]["pm"] is not None
    return values


def _case_values(kind: str, **match) -> Callable[[Mapping], dict]:
    """The first load case of ``kind`` (matching ``match``), and whether there is one."""

    def compute(inputs: Mapping) -> dict:
        out = _result(inputs)
        found = [
            c
            for c in out["cases"]
            if c["case"] == kind and all(c.get(k) == v for k, v in match.items())
        ]
        values = dict(found[0]) if found else {}
        values[f"{kind} required"] = bool(found)
        values["methods"] = ", ".join(sorted(str(c.get("method")) for c in found))
        return values

    return compute


CASES: list[VerificationCase] = []
add = CASES.append

# --- Table 1.5-2, Table 7.3-1, Table 7.3-2 -------------------------------------------

for _risk, _is in IS_TABLE_1_5_2:
    add(
        _case(
            f"table-1.5-2/{_risk}",
            f"ASCE 7-16 Table 1.5-2, snow importance factor {_MEMORY}",
            {"risk": _risk},
            {"Is": _is},
            1e-12,
            lambda i: {"Is": factors.importance_factor(i["risk"])},
        )
    )
for _terrain, _exposure, _ce in CE_TABLE_7_3_1:
    add(
        _case(
            f"table-7.3-1/{_terrain}/{_exposure}",
            f"ASCE 7-16 Table 7.3-1, exposure factor {_MEMORY}",
            {"terrain": _terrain, "exposure": _exposure},
            {"Ce": _ce},
            1e-12,
            lambda i: {"Ce": factors.exposure_factor(i["terrain"], i["exposure"])},
        )
    )
for _thermal, _ct in CT_TABLE_7_3_2:
    add(
        _case(
            f"table-7.3-2/{_thermal}",
            f"ASCE 7-16 Table 7.3-2, thermal factor {_MEMORY}",
            {"thermal": _thermal},
            {"Ct": _ct},
            1e-12,
            lambda i: {"Ct": factors.thermal_factor(i["thermal"])},
        )
    )

# --- Eq. 7.3-1: flat roof snow load -------------------------------------------------

add(
    _case(
        "eq-7.3-1/function",
        f"ASCE 7-16 Eq. 7.3-1 {_MEMORY}; hand calculation",
        {"pg": "55psf", "Ce": 0.9, "Ct": 1.1, "Is": 0.8},
        {"pf [psf]": 30.492},
        1e-9,
        lambda i: {
            "pf [psf]": float(flat.flat_roof_load(parse_pg(i["pg"]), i["Ce"], i["Ct"], i["Is"]))
        },
        "pf = 0.7 x 0.9 x 1.1 x 0.8 x 55 = 30.492 psf",
    )
)
add(
    _case(
        "eq-7.3-1/terrain-b-sheltered-unheated-risk-iii",
        f"ASCE 7-16 Eq. 7.3-1 with Tables 7.3-1, 7.3-2 and 1.5-2 {_MEMORY}; hand calculation",
        {
            "pg": "40psf",
            "roof": _neutral(terrain="B", exposure="sheltered", thermal="unheated", risk="III"),
        },
        {"Ce": 1.2, "Ct": 1.2, "Is": 1.1, "pf [psf]": 44.352},
        {"Ce": 1e-12, "Ct": 1e-12, "Is": 1e-12, "pf [psf]": 1e-3},
        _uniform_values,
        "pf = 0.7 x 1.2 x 1.2 x 1.1 x 40 = 44.352 psf",
    )
)
add(
    _case(
        "eq-7.3-1/terrain-d-partially-unheated-risk-iv",
        f"ASCE 7-16 Eq. 7.3-1 with Tables 7.3-1, 7.3-2 and 1.5-2 {_MEMORY}; hand calculation",
        {
            "pg": "30psf",
            "roof": _neutral(terrain="D", exposure="partially", thermal="unheated", risk="IV"),
        },
        {"Ce": 0.9, "Ct": 1.2, "Is": 1.2, "pf [psf]": 27.216},
        {"Ce": 1e-12, "Ct": 1e-12, "Is": 1e-12, "pf [psf]": 1e-3},
        _uniform_values,
        "pf = 0.7 x 0.9 x 1.2 x 1.2 x 30 = 27.216 psf",
    )
)
add(
    _case(
        "eq-7.3-1/factors-given-directly",
        f"ASCE 7-16 Eq. 7.3-1 {_MEMORY}; common practice: Ce and Ct may be given directly",
        {"pg": "40psf", "roof": _neutral(ce=0.85, ct=1.15)},
        {"pf [psf]": 27.37},
        1e-3,
        _uniform_values,
        "pf = 0.7 x 0.85 x 1.15 x 1.0 x 40 = 27.37 psf",
    )
)

# --- Sec. 7.3.4: minimum snow load --------------------------------------------------

for _pg, _is, _pm, _note in [
    (15.0, 1.1, 16.5, "pg <= 20: pm = Is pg = 1.1 x 15"),
    (20.0, 1.2, 24.0, "boundary pg = 20: both forms give 20 Is = 24"),
    (30.0, 1.2, 24.0, "pg > 20: pm = 20 Is = 20 x 1.2"),
    (90.0, 0.8, 16.0, "pg > 20: pm = 20 x 0.8"),
]:
    add(
        _case(
            f"sec-7.3.4/pg-{_pg:g}-is-{_is:g}",
            f"ASCE 7-16 Sec. 7.3.4 {_MEMORY}; hand calculation",
            {"pg": f"{_pg:g}psf", "Is": _is},
            {"pm [psf]": _pm},
            1e-9,
            lambda i: {"pm [psf]": float(flat.minimum_load(parse_pg(i["pg"]), i["Is"]))},
            _note,
        )
    )
for _shape, _slope, _applies, _note in [
    ("flat", "0:12", True, "a flat roof is read as a low-slope monoslope roof (common practice)"),
    ("monoslope", "14.9deg", True, "under 15 deg"),
    ("monoslope", "15deg", False, '"less than 15 degrees": 15 itself is out'),
    ("gable", "3:12", True, "3:12 = 14.04 deg"),
    ("hip", "4:12", False, "4:12 = 18.43 deg"),
]:
    add(
        _case(
            f"sec-7.3.4/applies/{_shape}-{_slope}",
            f"ASCE 7-16 Sec. 7.3.4 {_MEMORY}: monoslope, hip and gable roofs under 15 deg",
            {"pg": "30psf", "roof": _neutral(shape=_shape, slope=_slope, eave_to_ridge="40ft")},
            {"pm applies": _applies},
            0.0,
            _uniform_values,
            _note,
        )
    )

# --- Sec. 7.10: rain-on-snow surcharge ----------------------------------------------

for _pg, _ros in [(0.0, None), (0.5, 5.0), (15.0, 5.0), (20.0, 5.0), (20.01, None), (40.0, None)]:
    add(
        _case(
            f"sec-7.10/pg-{_pg:g}",
            f"ASCE 7-16 Sec. 7.10 {_MEMORY}: 5 psf where 0 < pg <= 20 psf",
            {"pg": f"{_pg:g}psf", "roof": _neutral(shape="flat")},
            {"rain_on_snow [psf]": _ros},
            1e-9,
            _uniform_values,
        )
    )
for _slope_deg, _w, _applies, _note in [
    (4.0, 250.0, True, "W/50 = 5 deg > 4 deg"),
    (4.0, 200.0, False, "W/50 = 4 deg, slope is not less than 4 deg"),
    (4.0, 150.0, False, "W/50 = 3 deg < 4 deg"),
    (1.0, 60.0, True, "W/50 = 1.2 deg"),
]:
    add(
        _case(
            f"sec-7.10/slope-{_slope_deg:g}deg-w-{_w:g}ft",
            f"ASCE 7-16 Sec. 7.10 {_MEMORY}: slope in degrees less than W/50 with W in ft",
            {"pg": "15psf", "slope": f"{_slope_deg:g}deg", "eave_to_ridge": f"{_w:g}ft"},
            {"rain-on-snow applies": _applies},
            0.0,
            lambda i: {
                "rain-on-snow applies": bool(
                    flat.rain_on_snow_applies(
                        parse_pg(i["pg"]),
                        parse_slope(i["slope"]),
                        parse_length(i["eave_to_ridge"], "eave_to_ridge"),
                    )
                )
            },
            _note,
        )
    )
for _w, _ros, _note in [
    ("300ft", 5.0, "1:12 = 4.764 deg < W/50 = 6 deg"),
    ("200ft", None, "W/50 = 4 deg < 4.764 deg: no surcharge"),
]:
    add(
        _case(
            f"sec-7.10/gable-1-on-12-w-{_w}",
            f"ASCE 7-16 Sec. 7.10 {_MEMORY}",
            {"pg": "12psf", "roof": _neutral(shape="gable", slope="1:12", eave_to_ridge=_w)},
            {"rain_on_snow [psf]": _ros},
            1e-9,
            _uniform_values,
            _note,
        )
    )
_STEP_8FT = {"height": "8ft", "upper_length": "80ft", "lower_length": "50ft"}
add(
    _case(
        "sec-7.10/balanced-case-only/balanced",
        f"ASCE 7-16 Sec. 7.10 {_MEMORY}: the surcharge belongs to the balanced case only",
        {"pg": "15psf", "roof": _neutral(shape="flat", step=[_STEP_8FT])},
        {"load [psf]": 15.5},
        1e-3,
        _case_values("balanced"),
        "pf = 0.7 x 15 = 10.5 psf; balanced = 10.5 + 5 = 15.5 psf",
    )
)
add(
    _case(
        "sec-7.10/balanced-case-only/minimum",
        f"ASCE 7-16 Sec. 7.3.4 and Sec. 7.10 {_MEMORY}: no surcharge on the minimum load",
        {"pg": "15psf", "roof": _neutral(shape="flat", step=[_STEP_8FT])},
        {"load [psf]": 15.0},
        1e-3,
        _case_values("minimum"),
        "pm = Is pg = 15 psf, no surcharge added",
    )
)

# --- Fig. 7.4-1 and Eq. 7.4-1: roof slope factor ------------------------------------


def _knee_values(i: Mapping) -> dict:
    ct, slippery, knee = i["Ct"], i["surface"] == "slippery", parse_slope(i["knee"])
    cs = lambda deg: float(slope.slope_factor(deg, ct, slippery))  # noqa: E731
    return {
        "Cs at 0 deg": cs(0.0),
        "Cs at the knee": cs(knee),
        "Cs 1 deg past the knee": cs(knee + 1.0),
        "Cs at 70 deg": cs(70.0),
        "Cs at 80 deg": cs(80.0),
    }


for _ct, _slippery, _knee in KNEES_FIG_7_4_1:
    _surface = "slippery" if _slippery else "other"
    add(
        _case(
            f"fig-7.4-1/knee/ct-{_ct:g}/{_surface}",
            f"ASCE 7-16 Fig. 7.4-1 {_MEMORY}: Cs = 1.0 up to the knee, 0 from 70 deg",
            {"Ct": _ct, "surface": _surface, "knee": f"{_knee:g}deg"},
            {
                "Cs at 0 deg": 1.0,
                "Cs at the knee": 1.0,
                "Cs 1 deg past the knee": (69.0 - _knee) / (70.0 - _knee),
                "Cs at 70 deg": 0.0,
                "Cs at 80 deg": 0.0,
            },
            1e-12,
            _knee_values,
            f"past the knee: (70 - ({_knee:g} + 1)) / (70 - {_knee:g})",
        )
    )
for _deg, _ct, _slippery, _cs, _note in [
    (50.0, 1.0, False, 0.5, "(70 - 50)/(70 - 30) = 20/40"),
    (26.56505118, 1.0, True, 0.66822998, "6:12 on line a dashed: 43.435/65"),
    (45.0, 1.1, False, 0.76923077, "(70 - 45)/(70 - 37.5) = 25/32.5"),
    (40.0, 1.1, True, 0.5, "(70 - 40)/(70 - 10) = 30/60"),
    (60.0, 1.2, False, 0.4, "(70 - 60)/(70 - 45) = 10/25"),
    (30.0, 1.2, True, 0.72727273, "(70 - 30)/(70 - 15) = 40/55"),
    (60.0, 1.3, False, 0.4, "freezer Ct = 1.3 uses the Ct >= 1.2 lines"),
    (40.0, 0.85, False, 0.75, "greenhouse Ct = 0.85 is warm: 30/40"),
]:
    _surface = "slippery" if _slippery else "other"
    add(
        _case(
            f"fig-7.4-1/slope-{_deg:.4g}deg/ct-{_ct:g}/{_surface}",
            f"ASCE 7-16 Fig. 7.4-1 {_MEMORY}; hand calculation",
            {"slope": f"{_deg:.10g}deg", "Ct": _ct, "surface": _surface},
            {"Cs": _cs},
            1e-7,
            lambda i: {
                "Cs": float(
                    slope.slope_factor(parse_slope(i["slope"]), i["Ct"], i["surface"] == "slippery")
                )
            },
            _note,
        )
    )
add(
    _case(
        "eq-7.4-1/gable-12-on-12",
        f"ASCE 7-16 Eq. 7.4-1 and Fig. 7.4-1 {_MEMORY}; hand calculation",
        {"pg": "40psf", "roof": _neutral(shape="gable", slope="12:12", eave_to_ridge="30ft")},
        {"Cs": 0.625, "ps [psf]": 17.5},
        {"Cs": 1e-4, "ps [psf]": 1e-3},
        _uniform_values,
        "other surface, heated, 12:12 = 45 deg: Cs = (70 - 45)/40 = 0.625; "
        "pf = 0.7 x 40 = 28; ps = 17.5 psf",
    )
)
_WARM_SLIPPERY = {
    "shape": "gable",
    "slope": "8:12",
    "eave_to_ridge": "30ft",
    "surface": "slippery",
    "unobstructed": True,
}
_DASHED_8_12 = (70.0 - 33.690068) / 65.0
_SOLID_8_12 = (70.0 - 33.690068) / 40.0
for _vent, _r, _dashed, _note in [
    (False, 30.0, True, "unventilated, R >= 30"),
    (False, 29.0, False, "unventilated, R < 30"),
    (True, 20.0, True, "ventilated, R >= 20"),
    (True, 19.5, False, "ventilated, R < 20"),
]:
    add(
        _case(
            f"sec-7.4.1/{'ventilated' if _vent else 'unventilated'}-r-{_r:g}",
            f"ASCE 7-16 Sec. 7.4.1 and Fig. 7.4-1 {_MEMORY}: warm roofs use the dashed line "
            "only with an unobstructed slippery surface and R >= 30 (unventilated) or R >= 20 "
            "(ventilated)",
            {"pg": "30psf", "roof": _neutral(**_WARM_SLIPPERY, ventilated=_vent, r_value=_r)},
            {"Cs": _DASHED_8_12 if _dashed else _SOLID_8_12},
            1e-4,
            _uniform_values,
            f"{_note}; 8:12 = 33.690 deg: dashed line a (70 - 33.690)/65, "
            "solid line a (70 - 33.690)/40",
        )
    )
add(
    _case(
        "sec-7.4.2/cold-roof-slippery",
        f"ASCE 7-16 Sec. 7.4.2 and Fig. 7.4-1 {_MEMORY}: Ct = 1.1 with an unobstructed "
        "slippery surface uses dashed line b",
        {"pg": "30psf", "roof": _neutral(**_WARM_SLIPPERY, thermal="cold-ventilated")},
        {"Cs": (70.0 - 33.690068) / 60.0},
        1e-4,
        _uniform_values,
        "8:12 = 33.690 deg: (70 - 33.690)/(70 - 10) = 0.60517",
    )
)

# --- Eq. 7.7-1 and Fig. 7.6-1: snow density and drift height ------------------------

for _pg, _gamma, _note in [
    (0.0, 14.0, "0.13 x 0 + 14"),
    (30.0, 17.9, "0.13 x 30 + 14"),
    (100.0, 27.0, "0.13 x 100 + 14"),
    (123.0, 29.99, "just under the cap"),
    (200.0, 30.0, "0.13 x 200 + 14 = 40 -> capped at 30 pcf"),
]:
    add(
        _case(
            f"eq-7.7-1/pg-{_pg:g}",
            f"ASCE 7-16 Eq. 7.7-1 {_MEMORY}: gamma = 0.13 pg + 14 <= 30 pcf",
            {"pg": f"{_pg:g}psf"},
            {"gamma [pcf]": _gamma},
            1e-9,
            lambda i: {"gamma [pcf]": float(drift.snow_density(parse_pg(i["pg"])))},
            _note,
        )
    )
for _lu, _pg, _hd, _note in [
    (100.0, 30.0, 3.519381, "0.43 x 4.64159 x 2.51487 - 1.5"),
    (200.0, 50.0, 5.498682, "0.43 x 5.84804 x 2.78316 - 1.5"),
    (400.0, 60.0, 7.664237, "0.43 x 7.36806 x 2.89256 - 1.5"),
    (30.0, 25.0, 1.749819, "0.43 x 3.10723 x 2.43230 - 1.5"),
]:
    add(
        _case(
            f"fig-7.6-1/lu-{_lu:g}ft-pg-{_pg:g}",
            f"ASCE 7-16 Fig. 7.6-1 equation {_MEMORY}; hand calculation",
            {"pg": f"{_pg:g}psf", "lu": f"{_lu:g}ft"},
            {"hd [ft]": _hd},
            1e-5,
            lambda i: {
                "hd [ft]": float(drift.drift_height(parse_pg(i["pg"]), parse_length(i["lu"], "lu")))
            },
            f"hd = 0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5 = {_note}",
        )
    )

# --- Sec. 7.7.1: drifts at roof steps -----------------------------------------------

_STEP_SRC = f"ASCE 7-16 Sec. 7.7.1 with Fig. 7.6-1 and Eq. 7.7-1 {_MEMORY}; hand calculation"
_FIXTURE = (
    "pg = 30 psf, neutral factors, flat lower roof: pf = ps = 21 psf, "
    "gamma = 17.9 pcf, hb = 21 / 17.9 = 1.17318 ft"
)


def _step(**step) -> dict:
    return {"pg": "30psf", "roof": _neutral(shape="flat", step=[step])}


add(
    _case(
        "sec-7.7.1/leeward-governs",
        _STEP_SRC,
        _step(height="10ft", upper_length="100ft", lower_length="60ft"),
        {
            "governs": "leeward",
            "hb [ft]": 21.0 / 17.9,
            "hc [ft]": 8.82682,
            "hd [ft]": 3.519381,
            "hd_windward [ft]": 2.05013,
            "w [ft]": 14.0775,
            "pd [psf]": 62.9969,
            "total_peak [psf]": 83.9969,
        },
        {
            "hb [ft]": 1e-3,
            "hc [ft]": 1e-3,
            "hd [ft]": 1e-3,
            "hd_windward [ft]": 1e-3,
            "w [ft]": 2e-3,
            "pd [psf]": 2e-3,
            "total_peak [psf]": 3e-3,
        },
        _case_values("drift"),
        f"{_FIXTURE}. h = 10 ft: hc = 8.82682 ft; leeward hd (upper 100 ft) = 3.51938 > "
        "windward 0.75 x hd(60 ft) = 2.05013; hd <= hc so w = 4 hd = 14.0775 ft; "
        "pd = 3.51938 x 17.9 = 62.9969 psf; on the balanced 21 psf: 83.9969 psf",
    )
)
add(
    _case(
        "sec-7.7.1/windward-governs",
        _STEP_SRC,
        _step(height="10ft", upper_length="30ft", lower_length="300ft"),
        {
            "governs": "windward",
            "hd_leeward [ft]": 1.86014,
            "hd [ft]": 4.30440,
            "w [ft]": 17.2176,
            "pd [psf]": 77.0488,
        },
        {"hd_leeward [ft]": 1e-3, "hd [ft]": 1e-3, "w [ft]": 2e-3, "pd [psf]": 3e-3},
        _case_values("drift"),
        f"{_FIXTURE}. leeward hd(30 ft) = 1.86014 ft; windward 0.75 x hd(300 ft) = "
        "0.75 x 5.73920 = 4.30440 ft governs; < hc so w = 17.2176 ft; pd = 77.0488 psf",
    )
)
add(
    _case(
        "sec-7.7.1/drift-fills-clear-height",
        _STEP_SRC,
        _step(height="4ft", upper_length="100ft", lower_length="60ft"),
        {"hd [ft]": 2.82682, "w [ft]": 17.5265, "pd [psf]": 50.6},
        {"hd [ft]": 1e-3, "w [ft]": 3e-3, "pd [psf]": 2e-3},
        _case_values("drift"),
        f"{_FIXTURE}. h = 4 ft: hc = 2.82682 < hd = 3.51938, so the height is hc and "
        "w = 4 hd^2 / hc = 17.5265 ft (8 hc = 22.6145 does not cap); pd = hc gamma = 50.6 psf",
    )
)
add(
    _case(
        "sec-7.7.1/width-capped-at-8-hc",
        _STEP_SRC,
        _step(height="3ft", upper_length="100ft", lower_length="60ft"),
        {"w [ft]": 14.6145, "pd [psf]": 32.7},
        2e-3,
        _case_values("drift"),
        f"{_FIXTURE}. h = 3 ft: hc = 1.82682; 4 hd^2 / hc = 27.1205 > 8 hc = 14.6145 ft; "
        "pd = 1.82682 x 17.9 = 32.7 psf",
    )
)
for _hd, _hc, _used, _w, _note in [
    (2.0, 3.0, 2.0, 8.0, "hd <= hc: (hd, 4 hd)"),
    (3.0, 2.5, 2.5, 14.4, "hd > hc: 4 x 9 / 2.5 = 14.4 < 8 x 2.5 = 20"),
    (5.0, 1.0, 1.0, 8.0, "hd > hc: 4 x 25 / 1 = 100 > 8 x 1 = 8"),
]:
    add(
        _case(
            f"sec-7.7.1/drift-shape/hd-{_hd:g}-hc-{_hc:g}",
            f"ASCE 7-16 Sec. 7.7.1 {_MEMORY}: drift height and width rules",
            {"hd": f"{_hd:g}ft", "hc": f"{_hc:g}ft"},
            {"height [ft]": _used, "w [ft]": _w},
            1e-12,
            lambda i: dict(
                zip(
                    ("height [ft]", "w [ft]"),
                    map(
                        float,
                        drift.drift_shape(parse_length(i["hd"], "hd"), parse_length(i["hc"], "hc")),
                    ),
                    strict=True,
                )
            ),
            _note,
        )
    )
for _h, _required, _note in [
    ("1.35ft", False, "hc = 0.17682, hc/hb = 0.151 < 0.2"),
    ("1.45ft", True, "hc = 0.27682, hc/hb = 0.236 >= 0.2"),
]:
    add(
        _case(
            f"sec-7.7.1/hc-over-hb/height-{_h}",
            f"ASCE 7-16 Sec. 7.7.1 {_MEMORY}: no drift where hc/hb < 0.2",
            _step(height=_h, upper_length="100ft", lower_length="60ft"),
            {"drift required": _required},
            0.0,
            _case_values("drift"),
            f"{_FIXTURE}; limit height = 1.2 hb = 1.40782 ft; {_note}",
        )
    )
for _hc, _hb, _required, _note in [
    (1.0, 5.0, True, "hc/hb = 0.2 exactly: not below 0.2, so drift is required"),
    (0.999, 5.0, False, "hc/hb = 0.1998 < 0.2"),
    (1.001, 5.0, True, "hc/hb = 0.2002"),
]:
    add(
        _case(
            f"sec-7.7.1/hc-over-hb/hc-{_hc:g}-hb-{_hb:g}",
            f"ASCE 7-16 Sec. 7.7.1 {_MEMORY}: drift loads need not be applied where hc/hb < 0.2",
            {"hc": f"{_hc:g}ft", "hb": f"{_hb:g}ft"},
            {"drift required": _required},
            0.0,
            lambda i: {
                "drift required": bool(
                    drift.drift_required(parse_length(i["hc"], "hc"), parse_length(i["hb"], "hb"))
                )
            },
            _note,
        )
    )
for _h, _required in [("3.92ft", True), ("3.919ft", False)]:
    add(
        _case(
            f"sec-7.7.1/pg-140/height-{_h}",
            f"ASCE 7-16 Eq. 7.7-1, Eq. 7.3-1, Sec. 7.7.1 {_MEMORY}; hand calculation",
            {
                "pg": "140psf",
                "roof": _neutral(
                    shape="flat",
                    step=[{"height": _h, "upper_length": "100ft", "lower_length": "60ft"}],
                ),
            },
            {"drift required": _required},
            0.0,
            _case_values("drift"),
            "pg = 140 psf: gamma = 0.13 x 140 + 14 = 32.2 -> capped at 30 pcf; "
            "pf = ps = 98 psf; hb = 3.26667 ft; h = 3.92 ft = 1.2 hb gives hc/hb = 0.2 "
            "exactly (drift); 3.919 ft gives 0.19969 (no drift)",
        )
    )
add(
    _case(
        "sec-7.7.1/truncated-at-far-edge",
        f"ASCE 7-16 Sec. 7.7.1 {_MEMORY}: a drift wider than the lower roof is truncated "
        "at its far edge",
        _step(height="10ft", upper_length="100ft", lower_length="10ft"),
        {"w [ft]": 14.0775, "w_on_roof [ft]": 10.0, "pd_far_edge [psf]": 18.2469},
        {"w [ft]": 2e-3, "w_on_roof [ft]": 1e-6, "pd_far_edge [psf]": 3e-3},
        _case_values("drift"),
        "w = 14.0775 ft on a 10 ft roof: edge intensity = 62.9969 x (1 - 10/14.0775) = 18.2469 psf",
    )
)

# --- Sec. 7.7.2: adjacent structures ------------------------------------------------

_ADJ_SRC = f"ASCE 7-16 Sec. 7.7.2 with Sec. 7.7.1 {_MEMORY}; hand calculation"
add(
    _case(
        "sec-7.7.2/leeward-width-6-hd",
        _ADJ_SRC,
        _step(height="10ft", upper_length="100ft", lower_length="60ft", separation="5ft"),
        {"source": "adjacent", "hd [ft]": 3.519381, "w [ft]": 21.1163, "pd [psf]": 62.9969},
        {"hd [ft]": 1e-3, "w [ft]": 2e-3, "pd [psf]": 2e-3},
        _case_values("drift"),
        "s = 5 ft < 20 ft and < 6h = 60 ft: required; hd = min(3.51938, (60 - 5)/6) = "
        "3.51938; w = min(6 x 3.51938, 55) = 21.1163 ft; pd = 62.9969 psf",
    )
)
add(
    _case(
        "sec-7.7.2/height-limited-by-separation",
        _ADJ_SRC,
        _step(height="4ft", upper_length="100ft", lower_length="60ft", separation="15ft"),
        {"hd_leeward [ft]": 1.5, "governs": "windward", "hd [ft]": 2.050, "w [ft]": 8.201},
        {"hd_leeward [ft]": 1e-3, "hd [ft]": 2e-3, "w [ft]": 5e-3},
        _case_values("drift"),
        "h = 4 ft, s = 15 ft: hd = min(3.51938, (24 - 15)/6 = 1.5) = 1.5 ft; the windward "
        "drift of Sec. 7.7.1, 0.75 x 2.7335 = 2.050 ft, is larger and governs (reading: the "
        "larger of the two governs, as in Sec. 7.7.1); hc = 2.827 ft > 2.05, so w = 4 x 2.05",
    )
)
add(
    _case(
        "sec-7.7.2/leeward-width-limited",
        _ADJ_SRC,
        _step(height="10ft", upper_length="200ft", lower_length="20ft", separation="10ft"),
        {"governs": "leeward", "hd [ft]": 4.824, "w [ft]": 28.94, "pd [psf]": 86.35},
        {"hd [ft]": 3e-3, "w [ft]": 2e-2, "pd [psf]": 0.1},
        _case_values("drift"),
        "h = 10 ft, s = 10 ft: hd = 0.43 x 200^(1/3) x 40^(1/4) - 1.5 = 4.824 ft "
        "< (6h - s)/6 = 8.33; w = min(6 x 4.824, 60 - 10) = 28.94 ft; pd = 86.35 psf",
    )
)
for _h, _s, _required, _note in [
    ("10ft", "19.9ft", True, "s < 20 and s < 6h = 60"),
    ("10ft", "20ft", False, "s is not less than 20 ft"),
    ("3ft", "17.9ft", True, "s < 6h = 18"),
    ("3ft", "18ft", False, "s is not less than 6h = 18 ft"),
]:
    add(
        _case(
            f"sec-7.7.2/separation/h-{_h}-s-{_s}",
            f"ASCE 7-16 Sec. 7.7.2 {_MEMORY}: drifts only where s < 20 ft and s < 6h",
            _step(height=_h, upper_length="100ft", lower_length="60ft", separation=_s),
            {"drift required": _required},
            0.0,
            _case_values("drift"),
            _note,
        )
    )

# --- Sec. 7.6.1: unbalanced loads on hip and gable roofs ----------------------------

for _slope, _required, _note in [
    ("0.45:12", False, "below 1/2 on 12"),
    ("0.5:12", True, "1/2 on 12 itself is inside the range"),
    ("2.38deg", True, "the angle the standard prints for 1/2 on 12"),
    ("6:12", True, ""),
    ("7:12", True, "7 on 12 itself is inside the range"),
    ("30.2deg", True, "the angle the standard prints for 7 on 12"),
    ("7.2:12", False, "above 7 on 12"),
    ("45deg", False, ""),
]:
    add(
        _case(
            f"sec-7.6.1/slope-range/{_slope}",
            f"ASCE 7-16 Sec. 7.6.1 {_MEMORY}: not required above 7 on 12 or below 1/2 on 12",
            {"slope": _slope},
            {"gable": _required, "hip": _required},
            0.0,
            lambda i: {
                shape: bool(unbalanced.unbalanced_required(shape, parse_slope(i["slope"])))
                for shape in ("gable", "hip")
            },
            _note,
        )
    )
_UNB_SRC = f"ASCE 7-16 Sec. 7.6.1, Fig. 7.6-1, Fig. 7.6-2, Eq. 7.7-1 {_MEMORY}; hand calculation"
add(
    _case(
        "sec-7.6.1/narrow-roof-prismatic",
        _UNB_SRC,
        {
            "pg": "30psf",
            "roof": _neutral(
                shape="gable", slope="6:12", eave_to_ridge="20ft", prismatic=True, risk="III"
            ),
        },
        {"leeward [psf]": 33.0, "windward [psf]": 0.0, "surcharge [psf]": 0.0},
        {"leeward [psf]": 1e-3, "windward [psf]": 1e-9, "surcharge [psf]": 1e-9},
        _case_values("unbalanced"),
        "W <= 20 ft with simply supported prismatic members: leeward Is pg = 1.1 x 30 = "
        "33 psf, windward unloaded",
    )
)
add(
    _case(
        "sec-7.6.1/general-gable-6-on-12",
        _UNB_SRC,
        {"pg": "30psf", "roof": _neutral(shape="gable", slope="6:12", eave_to_ridge="40ft")},
        {
            "windward [psf]": 6.3,
            "leeward [psf]": 21.0,
            "surcharge [psf]": 27.8245,
            "surcharge_extent [ft]": 8.29035,
            "surcharge_extent [m]": 2.52690,
        },
        {
            "windward [psf]": 1e-3,
            "leeward [psf]": 1e-3,
            "surcharge [psf]": 2e-3,
            "surcharge_extent [ft]": 2e-3,
            "surcharge_extent [m]": 2e-4,
        },
        _case_values("unbalanced"),
        "pf = ps = 21 psf (Cs = 1 at 26.57 deg); windward 0.3 x 21 = 6.3 psf; "
        "hd = 0.43 x 40^(1/3) x 40^(1/4) - 1.5 = 2.19831 ft; gamma = 17.9 pcf; S = 2; "
        "surcharge = 2.19831 x 17.9 / sqrt(2) = 27.8245 psf over 8 sqrt(2) 2.19831 / 3 = "
        "8.29035 ft (2.52690 m)",
    )
)
add(
    _case(
        "sec-7.6.1/general-hip-4-on-12",
        _UNB_SRC,
        {"pg": "50psf", "roof": _neutral(shape="hip", slope="4:12", eave_to_ridge="50ft")},
        {"windward [psf]": 10.5, "surcharge [psf]": 34.4287, "surcharge_extent [ft]": 13.4356},
        {"windward [psf]": 1e-3, "surcharge [psf]": 2e-3, "surcharge_extent [ft]": 2e-3},
        _case_values("unbalanced"),
        "pf = ps = 35 psf; windward 10.5 psf; hd = 0.43 x 50^(1/3) x 60^(1/4) - 1.5 = "
        "2.90889 ft; gamma = 20.5 pcf; S = 3; surcharge = 34.4287 psf over 13.4356 ft",
    )
)
add(
    _case(
        "sec-7.6.1/short-w-lu-20ft",
        f'{_UNB_SRC} ("for W less than 20 ft use lu = 20 ft")',
        {
            "pg": "30psf",
            "roof": _neutral(shape="gable", slope="6:12", eave_to_ridge="16ft", prismatic=False),
        },
        {"surcharge [psf]": 18.1675, "surcharge_extent [ft]": 5.41305},
        2e-3,
        _case_values("unbalanced"),
        "W = 16 ft, members not prismatic: general case with lu = 20 ft; hd = 1.43535 ft; "
        "surcharge = 1.43535 x 17.9 / sqrt(2) = 18.1675 psf over 5.41305 ft",
    )
)
add(
    _case(
        "sec-7.6.1/wide-roof-general-only",
        f"ASCE 7-16 Sec. 7.6.1 {_MEMORY}: the narrow case needs W <= 20 ft",
        {
            "pg": "30psf",
            "roof": _neutral(shape="gable", slope="6:12", eave_to_ridge="20.5ft", prismatic=True),
        },
        {"methods": "general"},
        0.0,
        _case_values("unbalanced"),
    )
)

# --- Sec. 7.8: parapets and rooftop projections -------------------------------------

_OBS_SRC = f"ASCE 7-16 Sec. 7.8 with Sec. 7.7.1 and Fig. 7.6-1 {_MEMORY}; hand calculation"
add(
    _case(
        "sec-7.8/parapet-three-quarters-hd",
        _OBS_SRC,
        {
            "pg": "30psf",
            "roof": _neutral(
                parapet=[{"name": "north wall", "height": "4ft", "upwind_length": "100ft"}]
            ),
        },
        {
            "source": "parapet",
            "governs": "windward",
            "hd [ft]": 2.63954,
            "w [ft]": 10.5581,
            "pd [psf]": 47.2477,
        },
        {"hd [ft]": 1e-3, "w [ft]": 2e-3, "pd [psf]": 3e-3},
        _case_values("drift"),
        f"{_FIXTURE}. upwind 100 ft: hd = 0.75 x 3.51938 = 2.63954 ft <= hc = 2.82682; "
        "w = 4 hd = 10.5581 ft; pd = 2.63954 x 17.9 = 47.2477 psf",
    )
)
add(
    _case(
        "sec-7.8/low-parapet-fills-clear-height",
        _OBS_SRC,
        {"pg": "30psf", "roof": _neutral(parapet=[{"height": "3ft", "upwind_length": "100ft"}])},
        {"hd [ft]": 1.82682, "w [ft]": 14.6145, "pd [psf]": 32.7},
        {"hd [ft]": 1e-3, "w [ft]": 2e-3, "pd [psf]": 2e-3},
        _case_values("drift"),
        "parapet 3 ft: hc = 1.82682 < 2.63954; w = min(15.2553, 8 hc = 14.6145) ft; "
        "pd = hc gamma = 32.7 psf",
    )
)
add(
    _case(
        "sec-7.8/parapet-buried-in-balanced-snow",
        f"ASCE 7-16 Sec. 7.7.1 and Sec. 7.8 {_MEMORY}",
        {"pg": "30psf", "roof": _neutral(parapet=[{"height": "1ft", "upwind_length": "100ft"}])},
        {"drift required": False},
        0.0,
        _case_values("drift"),
        "parapet 1 ft < hb = 1.17318 ft",
    )
)
for _plan, _exempt in [(14.9, True), (15.0, False), (40.0, False)]:
    add(
        _case(
            f"sec-7.8/projection-side-{_plan:g}ft",
            f"ASCE 7-16 Sec. 7.8 {_MEMORY}: a side shorter than 15 ft needs no drift",
            {
                "pg": "30psf",
                "roof": _neutral(
                    projection=[
                        {
                            "name": "rooftop unit",
                            "height": "5ft",
                            "plan_length": f"{_plan:g}ft",
                            "upwind_length": "80ft",
                        }
                    ]
                ),
            },
            {"drift required": not _exempt},
            0.0,
            _case_values("drift"),
        )
    )
add(
    _case(
        "sec-7.8/projection-own-upwind-length",
        _OBS_SRC,
        {
            "pg": "30psf",
            "roof": _neutral(
                projection=[{"height": "5ft", "plan_length": "20ft", "upwind_length": "50ft"}]
            ),
        },
        {"source": "projection", "hd [ft]": 1.86299, "w [ft]": 7.45197, "pd [psf]": 33.3476},
        {"hd [ft]": 1e-3, "w [ft]": 2e-3, "pd [psf]": 3e-3},
        _case_values("drift"),
        "upwind 50 ft: hd = 0.75 x (0.43 x 50^(1/3) x 40^(1/4) - 1.5) = 1.86299 ft <= "
        "hc = 3.82682; w = 7.45197 ft; pd = 33.3476 psf",
    )
)

# --- Sec. 7.9: sliding snow ---------------------------------------------------------

for _slope, _surface, _required, _note in [
    ("0.25:12", "slippery", False, "not greater than 1/4 on 12"),
    ("0.3:12", "slippery", True, ""),
    ("2:12", "other", False, "not greater than 2 on 12"),
    ("2.1:12", "other", True, ""),
    ("1:12", "other", False, ""),
    ("1:12", "slippery", True, ""),
]:
    add(
        _case(
            f"sec-7.9/threshold/{_surface}-{_slope}",
            f"ASCE 7-16 Sec. 7.9 {_MEMORY}: slippery upper roofs steeper than 1/4 on 12, "
            "other upper roofs steeper than 2 on 12",
            {"upper_slope": _slope, "upper_surface": _surface},
            {"sliding required": _required},
            0.0,
            lambda i: {
                "sliding required": bool(
                    sliding.sliding_required(parse_slope(i["upper_slope"]), i["upper_surface"])
                )
            },
            _note,
        )
    )


def _sliding_values(i: Mapping) -> dict:
    s = i.get("separation")
    v = sliding.sliding_load(
        parse_pg(i["pf_upper"], "pf_upper"),
        parse_length(i["w_upper"], "w_upper"),
        parse_length(i["lower_length"], "lower_length"),
        separation=0.0 if s is None else parse_length(s, "separation"),
        height=None if i.get("height") is None else parse_length(i["height"], "height"),
    )
    return {
        "sliding required": bool(v["required"]),
        "line_load [plf]": v.get("line_load"),
        "load [psf]": v.get("load"),
        "extent [ft]": v.get("extent"),
    }


_SLIDE_SRC = f"ASCE 7-16 Sec. 7.9 {_MEMORY}; hand calculation"
add(
    _case(
        "sec-7.9/0.4-pf-w-over-15ft",
        _SLIDE_SRC,
        {"pf_upper": "21psf", "w_upper": "30ft", "lower_length": "40ft"},
        {
            "sliding required": True,
            "line_load [plf]": 252.0,
            "load [psf]": 16.8,
            "extent [ft]": 15.0,
        },  # fmt: skip
        1e-9,
        _sliding_values,
        "0.4 x 21 x 30 = 252 plf over 15 ft: 252 / 15 = 16.8 psf",
    )
)
add(
    _case(
        "sec-7.9/narrower-lower-roof",
        _SLIDE_SRC,
        {"pf_upper": "21psf", "w_upper": "30ft", "lower_length": "10ft"},
        {"line_load [plf]": 168.0, "load [psf]": 16.8, "extent [ft]": 10.0},
        1e-9,
        _sliding_values,
        "a lower roof 10 ft wide keeps 10/15 of 252 plf = 168 plf at 16.8 psf",
    )
)
for _s, _h, _required, _line, _extent, _note in [
    (5.0, 10.0, True, 168.0, 10.0, "h/s = 2 > 1, s < 15: 0.4 x 21 x 30 x 10/15 = 168 plf"),
    (10.0, 10.0, False, None, None, "h/s = 1 is not greater than 1"),
    (15.0, 20.0, False, None, None, "s is not less than 15 ft"),
    (12.0, 13.0, True, 50.4, 3.0, "0.4 x 21 x 30 x 3/15 = 50.4 plf over 3 ft"),
]:
    _expected = {"sliding required": _required}
    if _required:
        _expected.update({"line_load [plf]": _line, "extent [ft]": _extent, "load [psf]": 16.8})
    add(
        _case(
            f"sec-7.9/separate-structure/s-{_s:g}ft-h-{_h:g}ft",
            f"{_SLIDE_SRC}: separate structures only where h/s > 1 and s < 15 ft",
            {
                "pf_upper": "21psf",
                "w_upper": "30ft",
                "lower_length": "60ft",
                "separation": f"{_s:g}ft",
                "height": f"{_h:g}ft",
            },  # fmt: skip
            _expected,
            1e-9,
            _sliding_values,
            _note,
        )
    )
_SLIDE_STEP = {
    "name": "warehouse",
    "height": "12ft",
    "upper_length": "60ft",
    "lower_length": "40ft",
    "upper_slope": "4:12",
    "upper_surface": "other",
    "upper_eave_to_ridge": "30ft",
}
add(
    _case(
        "sec-7.9/through-the-roof-cases",
        _SLIDE_SRC,
        {"pg": "30psf", "roof": _neutral(shape="flat", step=[_SLIDE_STEP])},
        {
            "load [psf]": 16.8,
            "line_load [plf]": 252.0,
            "line_load [kN/m]": 3.67766,
            "extent [ft]": 15.0,
            "total [psf]": 37.8,
        },
        {
            "load [psf]": 1e-3,
            "line_load [plf]": 1e-2,
            "line_load [kN/m]": 1e-4,
            "extent [ft]": 1e-3,
            "total [psf]": 1e-3,
        },
        _case_values("sliding"),
        "pf = 21 psf; upper 4:12 other > 2:12: 0.4 x 21 x 30 / 15 = 16.8 psf on the balanced "
        "21 psf = 37.8 psf; 252 plf = 252 x 4.4482216 N / 0.3048 m = 3.67766 kN/m",
    )
)
add(
    _case(
        "sec-7.9/upper-pf-given",
        f"ASCE 7-16 Sec. 7.9 {_MEMORY}: 0.4 pf W / 15 ft with pf of the upper roof",
        {
            "pg": "30psf",
            "roof": {
                "shape": "flat",
                "step": [
                    {
                        "name": "high bay",
                        "height": "10ft",
                        "upper_length": "100ft",
                        "lower_length": "40ft",
                        "upper_slope": "4:12",
                        "upper_eave_to_ridge": "30ft",
                        "upper_pf": "30psf",
                    }
                ],
            },
        },
        {"load [psf]": 24.0},
        1e-6,
        _case_values("sliding"),
        "upper pf = 30 psf, W = 30 ft: 0.4 x 30 x 30 / 15 = 24 psf",
    )
)

# --- Sec. 7.4.5: ice dams; Sec. 7.5: partial loading --------------------------------

for _vent, _r, _applies, _note in [
    (False, 20.0, True, "unventilated, R < 30"),
    (False, 30.0, False, "unventilated, R = 30 is not below 30"),
    (True, 19.0, True, "ventilated, R < 20"),
    (True, 20.0, False, "ventilated, R = 20 is not below 20"),
    (True, 25.0, False, "ventilated, R >= 20"),
]:
    add(
        _case(
            f"sec-7.4.5/{'ventilated' if _vent else 'unventilated'}-r-{_r:g}",
            f"ASCE 7-16 Sec. 7.4.5 {_MEMORY}: warm roofs, unventilated with R < 30 or "
            "ventilated with R < 20 ft2.h.F/Btu",
            {"Ct": 1.0, "ventilated": _vent, "r_value": _r},
            {"ice dam load applies": _applies},
            0.0,
            lambda i: {
                "ice dam load applies": eaves.ice_dam_applies(
                    i["Ct"], i["ventilated"], i["r_value"]
                )[0]
            },
            _note,
        )
    )
add(
    _case(
        "sec-7.4.5/not-on-cold-roofs",
        f"ASCE 7-16 Sec. 7.4.5 {_MEMORY}: the provision names warm roofs only",
        {"Ct": 1.1, "ventilated": False, "r_value": 10.0},
        {"ice dam load applies": False},
        0.0,
        lambda i: {
            "ice dam load applies": eaves.ice_dam_applies(i["Ct"], i["ventilated"], i["r_value"])[0]
        },
    )
)
add(
    _case(
        "sec-7.4.5/two-pf",
        f"ASCE 7-16 Sec. 7.4.5 {_MEMORY}; hand calculation",
        {
            "pg": "30psf",
            "roof": _neutral(overhang={"length": "2ft"}, ventilated=False, r_value=20.0),
        },  # fmt: skip
        {"load [psf]": 42.0, "overhang [ft]": 2.0},
        {"load [psf]": 1e-3, "overhang [ft]": 1e-6},
        _case_values("ice_dam"),
        "pf = 0.7 x 30 = 21 psf; overhang load = 2 x 21 = 42 psf",
    )
)
add(
    _case(
        "sec-7.4.5/uses-pf-not-ps",
        f"ASCE 7-16 Sec. 7.4.5 {_MEMORY}: the overhang load is 2 pf, not 2 ps",
        {
            "pg": "40psf",
            "roof": _neutral(
                shape="gable",
                slope="10:12",
                eave_to_ridge="25ft",
                overhang={"length": "3ft"},
                ventilated=False,
                r_value=15.0,
            ),
        },  # fmt: skip
        {"load [psf]": 56.0},
        1e-3,
        _case_values("ice_dam"),
        "10:12 (39.81 deg): Cs = 0.7548, but pf = 0.7 x 40 = 28 -> 2 pf = 56 psf",
    )
)
for _shape, _slope, _exempt, _note in [
    ("gable", "0.5:12", True, "1/2 on 12 and greater"),
    ("gable", "6:12", True, ""),
    ("gable", "2deg", False, "below 2.38 deg"),
    ("hip", "6:12", False, "the exemption names gable roofs"),
    ("flat", "0:12", False, ""),
]:
    add(
        _case(
            f"sec-7.5/exempt/{_shape}-{_slope}",
            f"ASCE 7-16 Sec. 7.5 {_MEMORY}: members spanning perpendicular to the ridge of "
            "gable roofs of 1/2 on 12 or more are exempt",
            {"shape": _shape, "slope": _slope},
            {"exempt": _exempt},
            0.0,
            lambda i: {"exempt": bool(eaves.partial_exempt(i["shape"], parse_slope(i["slope"])))},
            _note,
        )
    )
add(
    _case(
        "sec-7.5/full-and-half-balanced",
        f"ASCE 7-16 Sec. 7.5 and Fig. 7.5-1 {_MEMORY}; hand calculation",
        {"pg": "40psf", "roof": _neutral()},
        {"full [psf]": 28.0, "half [psf]": 14.0, "exempt_perpendicular_to_ridge": False},
        1e-3,
        _case_values("partial"),
        "flat: ps = 28 psf on loaded spans, 0.5 x 28 = 14 psf on the others",
    )
)

# --- the governing uniform load (Sec. 7.3.4, Eq. 7.3-1, Eq. 7.4-1, Sec. 7.10) -------

for _pg, _opts, _design, _note in [
    (15.0, {}, 15.5, "flat: ps = 0.7 x 15 = 10.5, + 5 rain-on-snow = 15.5 > pm = 15"),
    (18.0, {"risk": "IV"}, 21.6, "ps = 0.7 x 18 x 1.2 = 15.12, + 5 = 20.12 < pm = 21.6"),
    (40.0, {}, 28.0, "ps = 0.7 x 40 = 28 > pm = 20"),
    (25.0, {"ce": 0.9}, 20.0, "ps = 0.7 x 0.9 x 25 = 15.75 < pm = 20"),
    (40.0, {"shape": "gable", "slope": "8:12", "eave_to_ridge": "30ft"}, 25.4170,
     "8:12 gable, no minimum (33.69 deg >= 15): ps = 28 x (70 - 33.690)/40 = 25.4170"),
]:  # fmt: skip
    _label = "-".join(f"{k}-{v}" for k, v in _opts.items()) or "flat"
    add(
        _case(
            f"design-uniform/pg-{_pg:g}/{_label}",
            f"ASCE 7-16 Sec. 7.3.4, Eq. 7.3-1, Eq. 7.4-1, Sec. 7.10 {_MEMORY}; hand "
            "calculation; kPa by NIST SP 811 (1 psf = 47.880259 Pa)",
            {"pg": f"{_pg:g}psf", "roof": _neutral(**_opts)},
            {"design_uniform [psf]": _design, "design_uniform [kPa]": _design * KPA_PER_PSF},
            {"design_uniform [psf]": 2e-3, "design_uniform [kPa]": 2e-4},
            _uniform_values,
            _note,
        )
    )
for _pg, _design, _note in [
    (20.0, 26.84, "0.7 x 1.2 x 1.3 x 20 = 21.84 + 5 = 26.84 psf (pm = 20)"),
    (20.5, 22.386, "0.7 x 1.2 x 1.3 x 20.5 = 22.386 psf, no surcharge"),
]:
    add(
        _case(
            f"design-uniform/rain-on-snow-step/pg-{_pg:g}",
            f"ASCE 7-16 Sec. 7.10 {_MEMORY}: the surcharge stops above pg = 20 psf",
            {
                "pg": f"{_pg:g}psf",
                "roof": _neutral(terrain="B", exposure="sheltered", thermal="below-freezing"),
            },  # fmt: skip
            {"design_uniform [psf]": _design},
            1e-3,
            _uniform_values,
            f"sheltered terrain B (Ce 1.2), freezer (Ct 1.3): {_note}",
        )
    )

# --- roof geometry of issue 12: asymmetric gables, projection sides, parapets on the
# --- upper roof, the upper roof's own factors, the fetch as given -------------------

_ASYM = {"shape": "gable", "slope": "6:12", "eave_to_ridge": ["40ft", "16ft"], "prismatic": False}
for _side, _sur, _ext, _gov, _note in [
    ("A", 27.8245, 8.29035, True, "side A windward, lu = W = 40 ft: hd = 0.43 x 40^(1/3) x "
     "40^(1/4) - 1.5 = 2.19831 ft; S = 2; surcharge = 2.19831 x 17.9 / sqrt(2) = 27.8245 psf "
     "over 8 sqrt(2) 2.19831 / 3 = 8.29035 ft on side B; the larger peak: governs"),
    ("B", 18.1675, 5.41305, False, "side B windward, W = 16 ft < 20 ft so lu = 20 ft: hd = "
     "1.43535 ft; surcharge = 18.1675 psf over 5.41305 ft on side A"),
]:  # fmt: skip
    add(
        _case(
            f"sec-7.6.1/asymmetric-gable/wind-from-{_side}",
            f"{_UNB_SRC}; reading: the windward side's W is the fetch, the surcharge lies on "
            "the leeward side",
            {"pg": "30psf", "roof": _neutral(**_ASYM)},
            {
                "surcharge [psf]": _sur,
                "surcharge_extent [ft]": _ext,
                "windward [psf]": 6.3,
                "governing": _gov,
            },  # fmt: skip
            {"surcharge [psf]": 2e-3, "surcharge_extent [ft]": 2e-3, "windward [psf]": 1e-3},
            _case_values("unbalanced", wind_from=_side, method="general"),
            _note,
        )
    )
_PROJ_SIDES = {"height": "5ft", "plan_length": "20ft", "length_right": "80ft"}
add(
    _case(
        "sec-7.8/projection-greater-fetch",
        f"{_OBS_SRC}: lu is the greater of the roof lengths on either side of a projection",
        {"pg": "30psf", "roof": _neutral(projection=[dict(_PROJ_SIDES, length_left="50ft")])},
        {"hd [ft]": 2.36969, "w [ft]": 9.47874, "pd [psf]": 42.4174},
        {"hd [ft]": 1e-3, "w [ft]": 2e-3, "pd [psf]": 3e-3},
        _case_values("drift", side="left"),
        f"{_FIXTURE}. left side, roof 50 ft there, 80 ft on the right: lu = max(50, 80) = 80 ft; "
        "hd = 0.75 x (0.43 x 80^(1/3) x 40^(1/4) - 1.5) = 0.75 x 3.15958 = 2.36969 ft <= hc = "
        "3.82682; w = 4 hd = 9.47874 ft; pd = 2.36969 x 17.9 = 42.4174 psf",
    )
)
add(
    _case(
        "sec-7.8/projection-truncated-at-roof-edge",
        f"ASCE 7-16 Sec. 7.8 with Sec. 7.7.1 {_MEMORY}: the drift beside a short roof length "
        "is truncated at the roof's edge; hand calculation",
        {"pg": "30psf", "roof": _neutral(projection=[dict(_PROJ_SIDES, length_left="6ft")])},
        {"w_on_roof [ft]": 6.0, "pd_far_edge [psf]": 15.5674},
        {"w_on_roof [ft]": 1e-6, "pd_far_edge [psf]": 3e-3},
        _case_values("drift", side="left"),
        "left side, 6 ft of roof: lu = 80 ft, w = 9.47874 ft > 6 ft: pd_edge = 42.4174 x "
        "(1 - 6 / 9.47874) = 15.5674 psf",
    )
)
add(
    _case(
        "sec-7.7.1/parapet-on-the-upper-roof",
        _STEP_SRC,
        _step(height="10ft", upper_parapet="2ft", upper_length="100ft", lower_length="60ft"),
        {"hc [ft]": 10.82682, "hd [ft]": 3.519381, "w [ft]": 14.0775, "pd [psf]": 62.9969},
        {"hc [ft]": 1e-3, "hd [ft]": 1e-3, "w [ft]": 2e-3, "pd [psf]": 2e-3},
        _case_values("drift"),
        f"{_FIXTURE}. h = 10 + 2 (parapet on the upper roof) = 12 ft: hc = 12 - 1.17318 = "
        "10.82682 ft; leeward hd = 3.51938 ft governs as at 10 ft",
    )
)
add(
    _case(
        "sec-7.7.1/short-lower-roof-fetch-as-given",
        f"{_STEP_SRC}; reading: Sec. 7.7.1 sets no least fetch (the 20 ft one is Sec. 7.6.1's)",
        _step(height="10ft", upper_length="100ft", lower_length="10ft"),
        {"hd_windward [ft]": 0.622343},
        1e-3,
        _case_values("drift"),
        "windward fetch = lower roof 10 ft, as given: 0.75 x (0.43 x 10^(1/3) x 40^(1/4) - 1.5) "
        "= 0.75 x 0.829790 = 0.622343 ft",
    )
)
add(
    _case(
        "sec-7.9/upper-roof-own-factors",
        f"ASCE 7-16 Sec. 7.9 with Eq. 7.3-1 {_MEMORY}; hand calculation",
        _step(
            height="10ft",
            upper_length="100ft",
            lower_length="60ft",
            upper_slope="4:12",
            upper_eave_to_ridge="30ft",
            upper_ct=1.2,
            upper_is=1.1,
        ),  # fmt: skip
        {"load [psf]": 22.176, "extent [ft]": 15.0},
        {"load [psf]": 1e-6, "extent [ft]": 1e-9},
        _case_values("sliding"),
        "upper roof Ce = 1 (this roof's), Ct = 1.2, Is = 1.1: pf = 0.7 x 1 x 1.2 x 1.1 x 30 = "
        "27.72 psf; 0.4 x 27.72 x 30 ft / 15 ft = 22.176 psf over 15 ft",
    )
)
