"""Generators of hostile zone layers (invented data only).

A generated layer is a GeoJSON file of one row of square zones in the open
Atlantic (around 30 N, 40 W, no land, no real map) with a TOML sidecar.
Every attribute is random: ``zone_id``, ``rule``, ``pg``, ``pg_min``,
``elev_max``, ``table``, ``expr``, a formula variable ``Z``, ``note`` and
``source``; the sidecar's ``name``, ``source`` and ``jurisdiction`` are random
text.  The GeoJSON is written by :mod:`json` directly, so the file holds
exactly what was generated.
"""

from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path

from hypothesis import strategies as st

from tests.hostile.helpers import hostile_text, marked_text

LON0, LAT0, D = -40.0, 30.0, 0.01  # invented fixture cells, about 1 km square

RULE_TEXT = (
    "fixed",
    "study",
    "elevation_table",
    "formula",
    " Fixed ",
    "FORMULA",
    "elevation-table",
)
FORMULAS = (
    "Z + 0.01 * A",
    "Z + 0.02 * max(A - 1000, 0)",
    "A / 0",
    "1 / (A - A)",
    "Z / (A - 1000)",
    "Z / (A - 1234.5)",
    "A ** 999",
    "10 ** 400",
    "9" * 330,
    "1e308 * 10",
    "-A",
    "Z - 100",
    "sqrt(-1)",
    "log(0)",
    "max(A)",
    "min()",
    "__import__('os').system('true')",
    "A.__class__",
    "[1][0]",
    "lambda: 1",
    "A if A else 0",
    "Z +",
    "Z7Q{{ 7*7 }}",
    "-" * 3000 + "1",
    "(" * 500 + "1" + ")" * 500,
    "1" + " + 1" * 3000,
)
FINITE = st.floats(min_value=-1e6, max_value=1e6, allow_nan=False)
ODD_NUMBERS = st.sampled_from(
    (0.0, -1.0, 1e6, 2000.0, 2000.01, 95.8, 1e308, -1e308, 10**30, 5e-324, float("nan"))
)
NUMBER_TEXT = st.sampled_from(
    ("35", "35psf", " 40 ", "1e400", "nan", "inf", "-5", "", "abc", "0x10")
)


def _number():
    return st.one_of(st.none(), FINITE, ODD_NUMBERS, NUMBER_TEXT, st.booleans())


def _table():
    pair = st.lists(st.one_of(FINITE, ODD_NUMBERS, st.integers(-(10**30), 10**30)), min_size=2,
                    max_size=2)  # fmt: skip
    good = st.lists(pair, min_size=0, max_size=5).map(json.dumps)
    return st.one_of(
        st.none(),
        good,
        st.sampled_from(("[[0, 20], [1000, 40]]", "[[0, 20]]", "[]", "{}", "[[0, 20], [0, 30]]",
                         "[[0, -5], [100, 10]]", "[[0, 1e400], [1, 2]]", "[[0, 20], [1000, 1e6]]",
                         "[[true, 1], [2, 3]]", "not json", "[" * 5000)),
        hostile_text(),
    )  # fmt: skip


def _expr():
    return st.one_of(st.none(), st.sampled_from(FORMULAS), hostile_text())


def _well_formed(draw, kind: str) -> dict:
    """Rule parameters a careful author would write (values in psf or kPa alike)."""
    none = {"pg": None, "pg_min": None, "elev_max": None, "table": None, "expr": None, "Z": None}
    if kind == "fixed":
        pg = draw(st.floats(0.0, 90.0))
        return {**none, "rule": "fixed", "pg": pg,
                "elev_max": draw(st.one_of(st.none(), st.floats(100.0, 5000.0))),
                "pg_min": draw(st.one_of(st.none(), st.floats(0.0, pg)))}  # fmt: skip
    if kind == "study":
        return {**none, "rule": "study"}
    if kind == "elevation_table":
        n = draw(st.integers(2, 5))
        elev = sorted(draw(st.sets(st.integers(0, 5000), min_size=n, max_size=n)))
        vals = draw(st.lists(st.floats(0.0, 90.0), min_size=n, max_size=n))
        table = [[e, round(v, 3)] for e, v in zip(elev, vals, strict=True)]
        return {**none, "rule": "elevation_table", "table": json.dumps(table)}
    coeff = draw(st.sampled_from(("0.001", "0.005", "0.01", "0.02")))
    return {**none, "rule": "formula", "expr": f"Z + {coeff} * max(A - 500, 0)",
            "Z": draw(st.floats(0.0, 60.0)), "pg_min": draw(st.one_of(st.none(), st.floats(0.0, 20.0)))}  # fmt: skip


def _random_params(draw) -> dict:
    return {
        "rule": draw(st.one_of(st.sampled_from(RULE_TEXT), hostile_text())),
        "pg": draw(_number()),
        "pg_min": draw(_number()),
        "elev_max": draw(_number()),
        "table": draw(_table()),
        "expr": draw(_expr()),
        "Z": draw(_number()),
    }


ZONE_KINDS = ("fixed", "study", "elevation_table", "formula", "random", "random")


@st.composite
def zone_rows(draw, n, careful: bool = False):
    """Zones of every rule, well formed or with random parameters; text always random.

    ``careful``: every zone well formed, with a zone_id of its own (text still random).
    """
    rows = []
    for i in range(n):
        kind = draw(st.sampled_from(ZONE_KINDS[:4] if careful else ZONE_KINDS))
        params = _random_params(draw) if kind == "random" else _well_formed(draw, kind)
        zone_id = (
            draw(marked_text(2)) + f" #{i}"
            if careful
            else draw(st.one_of(marked_text(), hostile_text(), st.integers(-5, 5)))
        )
        rows.append(
            {
                "zone_id": zone_id,
                **params,
                "note": draw(st.one_of(marked_text(), hostile_text())),
                "source": draw(st.one_of(marked_text(), hostile_text())),
            }
        )
    return rows


def _sidecar_text():
    """Random text that is not blank (a blank name is refused, rightly, with exit 2)."""
    return st.one_of(marked_text(), hostile_text().map(lambda t: t if t.strip() else f"x{t}"))


@dataclass
class LayerFile:
    rows: list
    meta: dict

    def centres(self) -> list[tuple[float, float]]:
        """(lat, lon) of each zone's centre."""
        return [(LAT0 + D / 2, LON0 + (i + 0.5) * D) for i in range(len(self.rows))]

    def write(self, folder: Path, name: str = "zones.geojson") -> Path:
        import tomli_w

        features = []
        for i, props in enumerate(self.rows):
            x0 = LON0 + i * D
            ring = [[x0, LAT0], [x0 + D, LAT0], [x0 + D, LAT0 + D], [x0, LAT0 + D], [x0, LAT0]]
            features.append(
                {
                    "type": "Feature",
                    "properties": props,
                    "geometry": {"type": "Polygon", "coordinates": [ring]},
                }
            )
        path = Path(folder) / name
        doc = {"type": "FeatureCollection", "features": features}
        path.write_text(json.dumps(doc, ensure_ascii=False), encoding="utf-8")
        Path(f"{path}.toml").write_text(tomli_w.dumps(self.meta), encoding="utf-8")
        return path


@st.composite
def layer_files(draw, max_zones: int = 4) -> LayerFile:
    n = draw(st.integers(1, max_zones))
    meta = {
        "name": draw(_sidecar_text()),
        "jurisdiction": draw(_sidecar_text()),
        "standard": draw(st.sampled_from(("ASCE 7-16", "ASCE 7-16", "ASCE 7-22", "EN 1991-1-3"))),
        "value_units": draw(st.sampled_from(("psf", "kPa"))),
        "elevation_units": draw(st.sampled_from(("ft", "m"))),
        "source": draw(_sidecar_text()),
        "license": "CC0-1.0 (invented test data)",
        "date": "2026-01-01",
        "boundary_tolerance_m": draw(st.sampled_from((0, 100, 500))),
        "demo": False,
    }
    return LayerFile(draw(zone_rows(n, careful=draw(st.booleans()))), meta)
