"""ASCE 7-16 factor tables: importance Is, exposure Ce, thermal Ct.

Each table is a module-level dict keyed by the trade's terms, with the table
it restates beside it.  Values restated from ASCE 7-16 (from memory; check
against the standard at hand).

References
----------
.. [1] ASCE/SEI 7-16, Minimum Design Loads and Associated Criteria for
   Buildings and Other Structures, Table 1.5-2 (importance factors),
   Table 7.3-1 (exposure factor), Table 7.3-2 (thermal factor).
"""

from __future__ import annotations

from neve.engine.asce7_16 import STANDARD
from neve.engine.choices import choose
from neve.engine.errors import InputError
from neve.engine.steps import StepLog, fmt

#: ASCE 7-16 Table 1.5-2: snow importance factor Is by risk category
#: (risk category from Table 1.5-1).
IMPORTANCE_SNOW_TABLE_1_5_2 = {"I": 0.80, "II": 1.00, "III": 1.10, "IV": 1.20}

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

#: ASCE 7-16 Table 7.3-1: exposure factor Ce[terrain][exposure];
#: None where the table gives no value ("N/A").
EXPOSURE_TABLE_7_3_1 = {
    "B": {"fully": 0.9, "partially": 1.0, "sheltered": 1.2},
    "C": {"fully": 0.9, "partially": 1.0, "sheltered": 1.1},
    "D": {"fully": 0.8, "partially": 0.9, "sheltered": 1.0},
    "above-treeline": {"fully": 0.7, "partially": 0.8, "sheltered": None},
    "treeless": {"fully": 0.7, "partially": 0.8, "sheltered": None},
}

#: thermal condition keys accepted for Table 7.3-2, with the row they stand for
THERMAL = {
    "heated": "heated building (the general row)",
    "cold-ventilated": (
        "kept just above freezing, or a cold ventilated roof with R > 25 ft2.h.F/Btu "
        "between the ventilated and heated spaces"
    ),
    "unheated": "unheated or open-air building",
    "below-freezing": "freezer building kept below freezing",
    "greenhouse": "continuously heated greenhouse, roof R < 2.0 ft2.h.F/Btu",
}
#: ASCE 7-16 Table 7.3-2: thermal factor Ct by thermal condition
THERMAL_TABLE_7_3_2 = {
    "heated": 1.0,
    "cold-ventilated": 1.1,
    "unheated": 1.2,
    "below-freezing": 1.3,
    "greenhouse": 0.85,
}


def importance_factor(risk: str) -> float:
    """Snow importance factor Is [-] for a risk category (ASCE 7-16 Table 1.5-2)."""
    return choose("risk", str(risk).upper(), IMPORTANCE_SNOW_TABLE_1_5_2)


def exposure_factor(terrain: str, exposure: str) -> float:
    """Exposure factor Ce [-] from ASCE 7-16 Table 7.3-1.

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


def thermal_factor(thermal: str) -> float:
    """Thermal factor Ct [-] from ASCE 7-16 Table 7.3-2."""
    return choose("thermal", thermal, THERMAL_TABLE_7_3_2)


def resolve_factors(roof, log: StepLog) -> tuple[dict, list[str]]:
    """Ce, Ct and Is for a roof, with a step for each and flags for defaults.

    Where the roof states neither a factor nor its table condition, the
    table's central row is used and a flag says so: Ce = 1.0 (terrain C,
    partially exposed), Ct = 1.0 (heated), Is = 1.0 (risk category II).
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
    if roof.ct is not None:
        ct, how = roof.ct, "given directly"
    else:
        thermal = roof.thermal or "heated"
        if roof.thermal is None:
            flags.append("thermal_assumed")
        ct = thermal_factor(thermal)
        how = THERMAL[thermal].lower()
    log.add(
        "Ct", f"thermal factor ({how})", "Table 7.3-2", fmt(ct), ct, "-", f"{STANDARD} Table 7.3-2"
    )
    risk = roof.risk or "II"
    if roof.risk is None:
        flags.append("risk_assumed")
    is_ = importance_factor(risk)
    log.add(
        "Is",
        f"importance factor, risk category {risk}",
        "Table 1.5-2",
        fmt(is_),
        is_,
        "-",
        f"{STANDARD} Table 1.5-2",
    )
    return {"Ce": ce, "Ct": ct, "Is": is_, "risk": risk}, flags
