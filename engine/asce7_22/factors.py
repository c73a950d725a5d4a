"""ASCE 7-22 factor tables: exposure Ce, thermal Ct (no snow importance factor).

Each table is a module-level dict keyed by the trade's terms, with the table
it restates beside it and, for each value, whether it was confirmed in a
published secondary source or is from memory (see the package docstring for
the sources' titles and addresses).

ASCE 7-22 has no snow importance factor: its ground snow loads are mapped per
risk category (strength level) [NFBA25, STR-GSL].  The risk category still
chooses the minimum roof load (Table 7.3-4, :mod:`.flat`) and is reported.

References
----------
.. [1] ASCE/SEI 7-22, Table 7.3-1 (exposure factor), Table 7.3-2 (thermal
   factor), Table 7.3-3 (thermal factor of heated roofs by R-value and pg).
"""

from __future__ import annotations

import numpy as np

from neve.engine.asce7_22 import STANDARD
from neve.engine.choices import choose
from neve.engine.errors import InputError
from neve.engine.steps import StepLog, fmt

#: risk categories (Table 1.5-1); in 7-22 they pick the ground snow map and pm,max
RISKS = ("I", "II", "III", "IV")

#: surface roughness / terrain keys accepted for Table 7.3-1
TERRAINS = {
    "B": "terrain B",
    "C": "terrain C",
    "D": "terrain D",
    "above-treeline": "windswept mountain site above the tree line",
    "treeless": "Alaska site with no trees within 2 mi (3 km)",
}
#: roof exposure keys accepted for Table 7.3-1
EXPOSURES = {
    "fully": "Fully exposed",
    "partially": "Partially exposed",
    "sheltered": "Sheltered",
}

#: ASCE 7-22 Table 7.3-1: exposure factor Ce[terrain][exposure]; None where the
#: table gives no value.  From memory: the values are those of ASCE 7-16, which
#: 7-22 did not change (no secondary source found that says otherwise; [NFBA25]
#: uses Ce = 1.0 for a partially exposed roof in both editions).
EXPOSURE_TABLE_7_3_1 = {
    "B": {"fully": 0.9, "partially": 1.0, "sheltered": 1.2},
    "C": {"fully": 0.9, "partially": 1.0, "sheltered": 1.1},
    "D": {"fully": 0.8, "partially": 0.9, "sheltered": 1.0},
    "above-treeline": {"fully": 0.7, "partially": 0.8, "sheltered": None},
    "treeless": {"fully": 0.7, "partially": 0.8, "sheltered": None},
}

#: thermal condition keys accepted for Table 7.3-2 (the same words as ASCE 7-16,
#: so one roof description serves both editions), with the row they stand for
THERMAL = {
    "heated": "heated building (warm roof: Table 7.3-3 by R-value and pg)",
    "cold-ventilated": (
        "kept just above freezing, or a cold ventilated roof with R > 25 ft2.h.F/Btu "
        "between the ventilated and heated spaces"
    ),
    "unheated": "unheated or open-air building",
    "below-freezing": "freezer building kept below freezing",
    "greenhouse": "continuously heated greenhouse, roof R < 2.0 ft2.h.F/Btu",
}
#: ASCE 7-22 Table 7.3-2: thermal factor Ct of the fixed rows.
#: cold-ventilated 1.2: confirmed [NFBA25 p. 26: ventilated roof, R-25 or better,
#: 7-16 Ct = 1.1, 7-22 Ct = 1.2; TDEG: "increased the value of Ct to 1.2 for
#: ventilated roofs"].  unheated 1.2, below-freezing 1.3, greenhouse 0.85: from
#: memory (unchanged from ASCE 7-16).
THERMAL_TABLE_7_3_2 = {
    "cold-ventilated": 1.2,
    "unheated": 1.2,
    "below-freezing": 1.3,
    "greenhouse": 0.85,
}
#: the R-value above which a ventilated roof is "cold" (Table 7.3-2 row) [ft2.h.F/Btu]
COLD_VENTILATED_R = 25.0

#: ASCE 7-22 Table 7.3-3 (heated, unventilated roofs): Ct by (R-value
#: [ft2.h.F/Btu], pg [psf]).  Only the cells confirmed in a published source are
#: held: R = 30, pg = 30 psf gives 1.17 [TDEG].  The table's range, 1.0 to 1.2,
#: is confirmed [TDEG: "a range of Ct values for unventilated roofs between 1.0
#: and 1.2 depending on the roof R-value and the ground snow load"].  Where a
#: roof falls outside the confirmed cells, neve takes the table's upper bound
#: (conservative) and flags ``thermal_upper_bound``.
HEATED_TABLE_7_3_3 = {(30.0, 30.0): 1.17}
#: the largest Ct Table 7.3-3 gives (confirmed [TDEG])
HEATED_CT_UPPER = 1.2
HEATED_CT_LOWER = 1.0


def exposure_factor(terrain: str, exposure: str) -> float:
    """Exposure factor Ce [-] from ASCE 7-22 Table 7.3-1.

    Raises
    ------
    InputError
        For an unknown terrain or exposure, or a sheltered roof above the tree
        line or in treeless terrain, for which the table gives no value.
    """
    row = choose("terrain", terrain, EXPOSURE_TABLE_7_3_1)
    value = choose("exposure", exposure, row)
    if value is None:
        raise InputError(
            "exposure",
            f"Table 7.3-1 gives no value for a sheltered roof in terrain {terrain!r}",
            "fully, partially",
        )
    return value


def heated_thermal_factor(r_value, pg):
    """Thermal factor Ct [-] of a heated, unventilated roof (ASCE 7-22 Table 7.3-3).

    Parameters
    ----------
    r_value : float or None
        Roof thermal resistance R [ft2.h.F/Btu]; None when not known.
    pg : float or array
        Ground snow load [psf].

    Returns
    -------
    ct : float or array
        The table value where (R, pg) is a held cell, or lies inside a
        rectangle of four held cells (bilinear interpolation, as the table
        note allows); otherwise the table's upper bound 1.2.
    upper_bound : bool or array
        Where the upper bound was taken (``thermal_upper_bound``).

    Notes
    -----
    Reading: a cell not confirmed from a published source is not guessed;
    the largest value the table gives is used instead, which can only raise
    the load.  With :data:`HEATED_TABLE_7_3_3` holding one cell, that cell is
    used exactly and every other roof gets 1.2.
    """
    pg = np.asarray(pg, dtype=float)
    ct = np.full(pg.shape, HEATED_CT_UPPER)
    bound = np.ones(pg.shape, dtype=bool)
    if r_value is None:
        return (ct if ct.ndim else float(ct)), (bound if bound.ndim else bool(bound))
    r = float(r_value)
    rs = sorted({k[0] for k in HEATED_TABLE_7_3_3})
    ps = sorted({k[1] for k in HEATED_TABLE_7_3_3})
    flat_pg = pg.reshape(-1)
    out_ct, out_b = ct.reshape(-1), bound.reshape(-1)
    for i, p in enumerate(flat_pg):
        if not np.isfinite(p):
            continue
        value = _cell(r, float(p), rs, ps)
        if value is not None:
            out_ct[i], out_b[i] = value, False
    ct, bound = out_ct.reshape(pg.shape), out_b.reshape(pg.shape)
    return (ct if ct.ndim else float(ct)), (bound if bound.ndim else bool(bound))


def _cell(r: float, p: float, rs: list, ps: list):
    """Table 7.3-3 at (r, p) from held cells: exact, or bilinear inside four held cells."""
    t = HEATED_TABLE_7_3_3
    if (r, p) in t:
        return t[(r, p)]
    r0 = max((x for x in rs if x <= r), default=None)
    r1 = min((x for x in rs if x >= r), default=None)
    p0 = max((x for x in ps if x <= p), default=None)
    p1 = min((x for x in ps if x >= p), default=None)
    corners = [(a, b) for a in (r0, r1) for b in (p0, p1)]
    if None in (r0, r1, p0, p1) or any(c not in t for c in corners):
        return None
    fr = 0.0 if r1 == r0 else (r - r0) / (r1 - r0)
    fp = 0.0 if p1 == p0 else (p - p0) / (p1 - p0)
    low = t[(r0, p0)] * (1 - fp) + t[(r0, p1)] * fp
    high = t[(r1, p0)] * (1 - fp) + t[(r1, p1)] * fp
    return low * (1 - fr) + high * fr


def resolve_factors(roof, pg, log: StepLog) -> tuple[dict, list[str]]:
    """Ce and Ct for a roof under ground load ``pg``, with a step for each and flags.

    Where the roof states neither a factor nor its table condition, the
    table's central row is used and a flag says so: Ce = 1.0 (terrain C,
    partially exposed), heated (Table 7.3-3).  The risk category defaults to
    II (``risk_assumed``).  ``Is`` is None: ASCE 7-22 has no snow importance
    factor.
    """
    flags: list[str] = []
    if roof.ce is not None:
        ce, how = roof.ce, "given directly"
    else:
        terrain = roof.terrain or "C"
        exposure = roof.exposure or "partially"
        if roof.terrain is None or roof.exposure is None:
            flags.append("exposure_assumed")
        ce = exposure_factor(terrain, exposure)
        how = f"terrain {terrain}, {EXPOSURES[exposure].lower()}"
    log.add(
        "Ce", f"exposure factor ({how})", "Table 7.3-1", fmt(ce), ce, "-", f"{STANDARD} Table 7.3-1"
    )
    ct, ct_flags, how, table = thermal_factor(roof, pg)
    flags += ct_flags
    log.add("Ct", f"thermal factor ({how})", table, fmt(ct), ct, "-", f"{STANDARD} {table}")
    risk = roof.risk or "II"
    if roof.risk is None:
        flags.append("risk_assumed")
    return {"Ce": ce, "Ct": ct, "Is": None, "risk": risk}, flags


def thermal_factor(roof, pg):
    """Ct [-] of a roof: ``(ct, flags, how, table)``; ct is an array where pg is one.

    Rows: a Ct given directly; a fixed row of Table 7.3-2; a heated roof that
    is ventilated with R > 25 takes the cold-ventilated row (1.2); any other
    heated roof, Table 7.3-3 (:func:`heated_thermal_factor`).
    """
    flags: list[str] = []
    if roof.ct is not None:
        return roof.ct, flags, "given directly", "Table 7.3-2"
    thermal = roof.thermal or "heated"
    if roof.thermal is None:
        flags.append("thermal_assumed")
    if thermal != "heated":
        ct = choose("thermal", thermal, THERMAL_TABLE_7_3_2)
        return ct, flags, THERMAL[thermal].lower(), "Table 7.3-2"
    r = roof.r_value
    if roof.ventilated is True and r is not None and r > COLD_VENTILATED_R:
        how = f"heated, ventilated roof with R = {fmt(r)} > 25: the cold ventilated row"
        return THERMAL_TABLE_7_3_2["cold-ventilated"], flags, how, "Table 7.3-2"
    if r is None:
        flags.append("r_value_unstated")
    if roof.ventilated is False:
        ct, bound = heated_thermal_factor(r, pg)
    else:
        # ventilation unstated (it might be a cold ventilated roof, 1.2), or a
        # ventilated warm roof with R <= 25 (no confirmed cell): the upper bound
        if roof.ventilated is None:
            flags.append("ventilation_unstated")
        ct, bound = heated_thermal_factor(None, pg)
    if np.any(bound):
        flags.append("thermal_upper_bound")
    if np.ndim(ct) == 0 and not bound:
        how = f"heated, unventilated, R = {fmt(r)}, pg = {fmt(pg)} psf"
    elif np.ndim(ct) == 0:
        how = (
            "heated roof; R-value, ventilation or the table cell not confirmed: "
            "the table's upper bound 1.2"
        )
    else:
        how = "heated roof, per site (upper bound 1.2 where the cell is not confirmed)"
    return ct, flags, how, "Table 7.3-3"
