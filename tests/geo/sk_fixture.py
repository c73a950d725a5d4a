"""A small hand-made EN 1991-1-3 layer (quantity sk) for the geo, screen and maps tests.

Invented fixture data only: no country's map or national annex.  The cells are
those of the geo fixture grid (tests/geo/conftest.py, the open Atlantic around
30 N, 40 W; 0.01 degree each):

    lat 30.01-30.02:  K4 elevation_table | K5 formula (Z = 1, sk_min 1.0) | K6 fixed 1.50
    lat 30.00-30.01:  K1 fixed 0.85      | K2 fixed 1.25, elev_max 400 m  | K3 study
                      lon -40.00..-39.99   -39.99..-39.98                   -39.98..-39.97

Values in kPa, altitudes in m.  The formula of K5 is the invented altitude
formula ``sk = (0.4 + 0.3 * Z) * (1 + (A / 650) ** 2)``.
"""

from __future__ import annotations

from pathlib import Path

from .conftest import LAT0, LON0, D, cell, write_layer

#: the invented altitude formula of K5 (its shape and coefficients are made up)
FORMULA = "(0.4 + 0.3 * Z) * (1 + (A / 650) ** 2)"

SK_META = {
    "name": "sk fixture grid",
    "jurisdiction": "Test fixtures, metric (invented)",
    "standard": "EN 1991-1-3",
    "quantity": "sk",
    "value_units": "kPa",
    "elevation_units": "m",
    "source": "tests/geo/sk_fixture.py (invented fixture)",
    "boundary_tolerance_m": 100,
}


def sk_rows(**texts) -> list[dict]:
    """The six zones; ``texts`` (zone_id, note, source) replace K1's text cells."""
    nan = float("nan")
    base = {"sk": nan, "elev_max": nan, "table": None, "expr": None, "Z": nan, "sk_min": nan,
            "note": "", "source": "sk fixture sheet"}  # fmt: skip
    rows = [
        dict(base, zone_id="K1", rule="fixed", sk=0.85, geometry=cell(0, 0)),
        dict(base, zone_id="K2", rule="fixed", sk=1.25, elev_max=400.0, geometry=cell(1, 0)),
        dict(base, zone_id="K3", rule="study", geometry=cell(2, 0)),
        dict(base, zone_id="K4", rule="elevation_table", table="[[0, 1.0], [1000, 3.0]]",
             geometry=cell(0, 1)),
        dict(base, zone_id="K5", rule="formula", expr=FORMULA, Z=1.0, sk_min=1.0,
             geometry=cell(1, 1)),
        dict(base, zone_id="K6", rule="fixed", sk=1.5, geometry=cell(2, 1)),
    ]  # fmt: skip
    rows[0].update(texts)
    return rows


def write_sk_layer(path: Path, rows: list[dict] | None = None, **meta) -> Path:
    """Write the sk fixture (or ``rows``) with its sidecar (``meta`` overrides keys)."""
    return write_layer(path, sk_rows() if rows is None else rows, {**SK_META, **meta})


def centre(i: int, j: int) -> tuple[float, float]:
    """(lat, lon) of the middle of cell (i, j)."""
    return LAT0 + (j + 0.5) * D, LON0 + (i + 0.5) * D


def at(i: int, j: int) -> str:
    """``--at`` text of the middle of cell (i, j)."""
    lat, lon = centre(i, j)
    return f"{lat:.6f},{lon:.6f}"
