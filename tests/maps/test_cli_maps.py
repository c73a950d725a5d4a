"""``neve site --map/--package`` and ``neve layer show --map`` end to end."""

from __future__ import annotations

import json
import shutil
import subprocess

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.maps import assets

DEMO_SITE = ["--at", "47.52,-140.05", "--dem", "demo"]
ROOF = ["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "30ft"]

SIDECAR = """\
name = "Fixture layer (invented test data)"
jurisdiction = "none: invented for neve's tests"
standard = "ASCE 7-16"
source = "invented test fixture; not a published map; never for design"
license = "CC0-1.0"
date = "2026-01-01"
value_units = "psf"
elevation_units = "ft"
boundary_tolerance_m = 100
demo = false
"""


@pytest.fixture
def user_layer(tmp_path):
    """An invented two-zone user layer (GeoJSON + sidecar) around the demo coordinates."""
    import geopandas as gpd
    from shapely.geometry import box

    zones = gpd.GeoDataFrame(
        {
            "zone_id": ["F-1", "F-2"],
            "rule": ["fixed", "study"],
            "pg": [42.0, None],
            "note": ["fixture zone", "fixture study area"],
        },
        geometry=[box(-140.10, 47.50, -140.04, 47.55), box(-140.04, 47.50, -139.98, 47.55)],
        crs=4326,
    )
    path = tmp_path / "fixture_layer.geojson"
    zones.to_file(path, driver="GeoJSON")
    (tmp_path / "fixture_layer.geojson.toml").write_text(SIDECAR, encoding="utf-8")
    return path


def test_neve_site_writes_map_and_package_for_the_demo_site(tmp_path):
    out = tmp_path / "out"
    args = ["site", *DEMO_SITE, *ROOF, "--site-name", "Demo hall", "--project", "Demo project",
            "--map", str(out / "site.html"), "--self-contained", "--package", str(out / "pkg")]  # fmt: skip
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, result.output
    html = (out / "site.html").read_text(encoding="utf-8")
    assert assets.remote_references(html) == []
    assert "neve-demo-banner" in html
    for name in ("report.html", "report.pdf", "site.json", "site_map.html", "static_map.png"):
        assert (out / "pkg" / name).is_file(), name
    data = json.loads((out / "pkg" / "site.json").read_text(encoding="utf-8"))
    assert data["site"]["name"] == "Demo hall" and "demo_data" in data["ground"]["flags"]
    assert any((out / "pkg" / "diagrams").glob("*unbalanced*.png"))


def test_neve_site_with_a_user_layer(tmp_path, user_layer):
    out = tmp_path / "pkg"
    args = ["site", "--at", "47.52,-140.07", "--elevation", "300m", "--layer", str(user_layer),
            *ROOF, "--package", str(out), "--format", "json"]  # fmt: skip
    result = CliRunner().invoke(main, args)
    assert result.exit_code == 0, result.output
    from pypdf import PdfReader

    text = " ".join(
        " ".join(p.extract_text() for p in PdfReader(str(out / "report.pdf")).pages).split()
    )
    assert "42.0 psf (2.01 kPa)" in text  # the fixture zone's value, 0.1 psf (issue 11)
    assert "Fixture layer (invented test data)" in text
    assert "INVENTED VALUES" not in text.upper()  # not a demo layer: no demo banner


@pytest.mark.skipif(shutil.which("neve") is None, reason="neve is not installed")
def test_installed_neve_layer_show_map(tmp_path, user_layer):
    out = tmp_path / "layer.html"
    run = subprocess.run(["neve", "layer", "show", str(user_layer), "--map", str(out),
                          "--self-contained"], capture_output=True, text=True, timeout=120)  # fmt: skip
    assert run.returncode == 0, run.stderr
    html = out.read_text(encoding="utf-8")
    assert "F-1" in html and "url(#neve-hatch)" in html
    assert assets.remote_references(html) == []


@pytest.mark.skipif(shutil.which("neve") is None, reason="neve is not installed")
def test_installed_neve_site_bad_tiles_is_exit_2(tmp_path):
    run = subprocess.run(["neve", "site", *DEMO_SITE, "--map", str(tmp_path / "m.html"),
                          "--tiles", "satellite"], capture_output=True, text=True, timeout=120)  # fmt: skip
    assert run.returncode == 2
    assert "tiles" in run.stderr
    assert not (tmp_path / "m.html").exists()
