"""Fixtures for the maps tests.

Everything here is INVENTED test data: an imaginary valley ("Varda Basin")
with made-up zone values, made-up sites and a made-up roof result that
follows the JSON contract of docs/contract.md. None of it is any jurisdiction's
map and none of it may be used for design.
"""

from __future__ import annotations

import math
import os
import shutil

import pytest

os.environ.setdefault("MPLBACKEND", "Agg")

HOSTILE = "<script>alert(1)</script><img src=x onerror=alert(2)> \"q\" 'a' `b` ${alert(3)}"

#: invented site near the middle of the invented grid
SITE_LAT, SITE_LON = 44.005, -110.004


def _grid_zones(note: str = "", source: str = "invented fixture"):
    """A 3 x 3 grid of invented zones (about 2.4 km square each) around the site."""
    import geopandas as gpd
    from shapely.geometry import box

    d = 0.03
    rows = []
    values = [
        [20.0, 25.0, 30.0],
        [25.0, 35.0, 40.0],
        [None, 45.0, None],
    ]
    rules = [
        ["fixed", "fixed", "fixed"],
        ["fixed", "fixed", "fixed"],
        ["study", "fixed", "elevation_table"],
    ]
    for r in range(3):
        for c in range(3):
            x0 = SITE_LON - 1.5 * d + c * d
            y0 = SITE_LAT + 1.5 * d - (r + 1) * d
            pg = values[r][c]
            rows.append(
                {
                    "zone_id": f"V{r}{c}",
                    "rule": rules[r][c],
                    "pg": math.nan if pg is None else pg,
                    "pg_psf": math.nan if pg is None else pg,
                    "elev_max": 6000.0 if rules[r][c] == "fixed" else math.nan,
                    "note": note if (r, c) == (1, 1) else "",
                    "source": source,
                    "study": rules[r][c] == "study",
                    "geometry": box(x0, y0, x0 + d, y0 + d),
                }
            )
    return gpd.GeoDataFrame(rows, geometry="geometry", crs=4326)


def make_view(name="Varda Basin test layer", note="", source="invented fixture", demo=True):
    """An invented view in the form geo hands to maps."""
    meta = {
        "name": name,
        "jurisdiction": "Varda Basin (imaginary)",
        "standard": "ASCE 7-16",
        "value_units": "psf",
        "elevation_units": "ft",
        "source": source,
        "license": "CC0 (invented test data)",
        "date": "2026-01-01",
        "boundary_tolerance_m": 100,
        "demo": demo,
    }
    return {
        "name": name,
        "meta": meta,
        "sha256": "ab" * 32,
        "demo": demo,
        "value_units": "psf",
        "zones": _grid_zones(note=note, source=source),
    }


def make_roof_json():
    """An invented roof result with balanced, unbalanced and drift cases (contract shape)."""

    def load(psf):
        return {"psf": psf, "kPa": round(psf * 0.04788026, 4)}

    def length(ft):
        return {"ft": ft, "m": round(ft * 0.3048, 4)}

    step = {
        "symbol": "pf",
        "description": "flat roof snow load",
        "equation": "pf = 0.7 Ce Ct Is pg",
        "substituted": "0.7 x 1 x 1.1 x 1 x 35",
        "value": 26.95,
        "unit": "psf",
        "ref": "ASCE 7-16 Eq. 7.3-1",
    }
    return {
        "standard": "ASCE 7-16",
        "pg": load(35.0),
        "roof": {
            "name": "roof",
            "shape": "gable",
            "slope_deg": 26.565,
            "risk": "II",
            "eave_to_ridge": length(40.0),
        },  # fmt: skip
        "factors": {"Ce": 1.0, "Ct": 1.1, "Is": 1.0, "Cs": 1.0},
        "loads": {"pf": load(26.95), "ps": load(26.95), "pm": load(20.0), "rain_on_snow": None},
        "cases": [
            {"case": "balanced", "name": "balanced", "load": load(26.95), "steps": [step]},
            {
                "case": "unbalanced",
                "name": "unbalanced (wind across ridge)",
                "windward": load(8.09),
                "leeward": load(26.95),
                "surcharge": load(23.1),
                "surcharge_extent": length(14.2),
                "steps": [
                    dict(step, symbol="hd", value=5.3, unit="ft", ref="ASCE 7-16 Fig. 7.6-1")
                ],
            },
            {
                "case": "drift",
                "name": "drift at high bay",
                "hd": length(3.6),
                "w": length(14.4),
                "pd": load(64.8),
                "governs": "leeward",
                "steps": [
                    dict(step, symbol="hd", value=3.6, unit="ft", ref="ASCE 7-16 Fig. 7.6-1")
                ],
            },
            {"case": "mystery", "name": "future case", "load": load(11.0), "extent": length(5.0)},
        ],
        "design_uniform": load(26.95),
        "not_required": [{"case": "minimum", "reason": "invented reason for the fixture"}],
        "flags": ["exposure_assumed"],
        "cautions": [
            "neve is an aid to, not a substitute for, the judgement of a licensed design professional."
        ],
    }


def make_site_json(name="Test hall", project="Fixture project", roof=True, status="provisional"):
    """An invented ``neve site`` result for the site in zone V11."""
    return {
        "site": {"lat": SITE_LAT, "lon": SITE_LON, "name": name, "project": project},
        "ground": {
            "status": status,
            "pg": {"psf": 35.0, "kPa": 1.6758},
            "zone_id": "V11",
            "zone_ids": ["V11"],
            "rule": "fixed",
            "flags": ["demo_data", "near_boundary"],
            "message": "invented fixture result",
            "elevation": {"ft": 4200.0, "m": 1280.16},
            "elevation_source": "input",
            "distance_to_other": {"ft": 984.3, "m": 300.0},
            "neighbours": [
                {
                    "zone_id": "V12",
                    "pg": {"psf": 40.0, "kPa": 1.9152},
                    "distance": {"ft": 984.3, "m": 300.0},
                }
            ],
            "other_layers": [],
            "layer": {
                "name": "Varda Basin test layer",
                "jurisdiction": "Varda Basin (imaginary)",
                "standard": "ASCE 7-16",
                "source": "invented fixture",
                "license": "CC0",
                "date": "2026-01-01",
                "sha256": "ab" * 32,
                "demo": True,
                "path": "varda.gpkg",
            },
            "steps": [
                {
                    "symbol": "pg",
                    "description": "mapped ground snow load of zone V11",
                    "equation": "pg = mapped value",
                    "substituted": "35",
                    "value": 35.0,
                    "unit": "psf",
                    "ref": "layer Varda Basin test layer",
                }
            ],
            "cautions": [
                "Ground snow loads must be confirmed with the authority having jurisdiction."
            ],
        },
        "roof": make_roof_json() if roof else None,
    }


@pytest.fixture
def view():
    return make_view()


@pytest.fixture
def site_json():
    return make_site_json()


@pytest.fixture
def roof_json():
    return make_roof_json()


def browser_or_skip():
    """Chromium + Playwright, or skip (but fail when CI is set)."""
    missing = []
    if shutil.which("chromium") is None:
        missing.append("chromium")
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        missing.append("playwright")
    if missing:
        if os.environ.get("CI"):
            pytest.fail(f"browser test needs {', '.join(missing)} (CI is set, so not skipping)")
        pytest.skip(f"browser test needs {', '.join(missing)}")
