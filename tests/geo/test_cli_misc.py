"""`neve site` odds and ends: doctests, fast start, raster layers, mismatch, text for studies."""

from __future__ import annotations

import doctest
import json
import subprocess
import sys

import pytest
from click.testing import CliRunner

import neve.geo.layers.formula
import neve.geo.site.coords
from neve.cli import main

from .test_cli_site import DEMO_AT, ROOF
from .test_raster_layer import cell_centre, grid  # noqa: F401 - fixture


@pytest.mark.parametrize(
    "module", [neve.geo.site.coords, neve.geo.layers.formula], ids=lambda m: m.__name__
)
def test_module_doctests(module):
    """The docstring examples run (regression guard)."""
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0 and result.failed == 0


def test_site_does_not_import_the_heavy_map_libraries():
    code = (
        "import sys\n"
        "from click.testing import CliRunner\n"
        "from neve.cli import main\n"
        f"r = CliRunner().invoke(main, ['site', '--at', '{DEMO_AT}', '--format', 'json'])\n"
        "assert r.exit_code == 0, r.output\n"
        "print(sorted(m for m in ('folium', 'matplotlib', 'weasyprint', 'dask', 'maps')"
        " if m in sys.modules))\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"


def test_site_on_a_raster_layer(grid):  # noqa: F811
    lat, lon = cell_centre(1, 2)
    res = CliRunner().invoke(
        main, ["site", "--at", f"{lat},{lon}", "--layer", str(grid), "--format", "json"]
    )
    assert res.exit_code == 0, res.output
    g = json.loads(res.output)["ground"]
    assert g["status"] == "ok" and g["pg"]["kPa"] == pytest.approx(2.0, abs=1e-3)
    assert g["zone_id"] == "cell:2" and g["steps"][0]["description"].startswith("grid cell")


def test_elevation_and_dem_far_apart():
    res = CliRunner().invoke(
        main, ["site", "--at", DEMO_AT, "--dem", "demo", "--elevation", "900m", "--format", "json"]
    )
    g = json.loads(res.output)["ground"]
    assert g["elevation_source"] == "input" and g["elevation"]["m"] == pytest.approx(900.0)
    assert "elevation_mismatch" in g["flags"] and g["status"] == "provisional"
    assert g["dem_elevation"]["m"] == pytest.approx(508.9, abs=0.5)  # regression guard


def test_text_for_a_study_site_with_a_roof():
    res = CliRunner().invoke(main, ["site", "--at", DEMO_AT, "--elevation", "1500m", *ROOF])
    assert res.exit_code == 0
    assert "study_required" in res.output and "above_elevation_limit" in res.output
    assert "No roof snow loads were computed" in res.output and "Roof (" not in res.output


def test_demo_dem_alone_gives_elevation_for_the_formula_zone():
    # the invented north valley SK-N: Z + 0.015 max(A - 800, 0), elevation from the demo DEM
    res = CliRunner().invoke(main, ["site", "--at", "47.555,-140.13", "--format", "json"])
    g = json.loads(res.output)["ground"]
    assert g["zone_id"] == "SK-N" and g["status"] == "no_data"
    assert "elevation_needed" in g["flags"]
    res = CliRunner().invoke(
        main, ["site", "--at", "47.555,-140.13", "--dem", "demo", "--format", "json"]
    )
    g = json.loads(res.output)["ground"]
    a = g["elevation"]["ft"]
    assert g["pg"]["psf"] == pytest.approx(max(28 + 0.015 * max(a - 800, 0), 30.0), abs=1e-3)
