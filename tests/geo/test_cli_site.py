"""`neve site` (neve.cli.site, neve.geo.site.one): the JSON contract, text output, exit codes."""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.units import KPA_PER_PSF
from neve.geo.site.one import resolve_site

from .conftest import LAT0, LON0, D, centre, fixture_rows, write_layer

#: the README's demo site: central highlands zone, elevation from the demo DEM
DEMO_AT = "47.4822,-140.0269"
ROOF = ["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "30ft"]


def run(*args):
    return CliRunner().invoke(main, ["site", *args])


def site_json(*args):
    res = run(*args, "--format", "json")
    assert res.exit_code == 0, res.output
    return json.loads(res.output)


def test_json_contract_on_the_demo_site():
    data = site_json("--at", DEMO_AT, "--dem", "demo", *ROOF)
    assert set(data) == {"site", "ground", "roof"}
    g = data["ground"]
    for key in ("status", "pg", "zone_id", "flags", "elevation", "elevation_source", "layer",
                "rule", "zone_ids", "message", "distance_to_other", "neighbours",
                "other_layers", "steps", "cautions"):  # fmt: skip
        assert key in g, key
    assert g["status"] == "ok" and g["zone_id"] == "SK-H" and g["rule"] == "elevation_table"
    assert "demo_data" in g["flags"] and g["elevation_source"] == "dem"
    assert set(g["pg"]) == {"psf", "kPa"} and set(g["elevation"]) == {"ft", "m"}
    assert g["pg"]["kPa"] == pytest.approx(g["pg"]["psf"] * KPA_PER_PSF, abs=1e-3)
    assert set(g["layer"]) == {"name", "jurisdiction", "standard", "source", "license", "date",
                               "sha256", "demo", "path"}  # fmt: skip
    assert g["layer"]["demo"] is True and len(g["layer"]["sha256"]) == 64
    step = g["steps"][-1]
    assert set(step) == {"symbol", "description", "equation", "substituted", "value", "unit", "ref"}
    assert step["value"] == pytest.approx(g["pg"]["psf"], abs=1e-3) and "SK-H" in step["ref"]
    assert any("licensed design professional" in c for c in g["cautions"])
    assert any("authority having jurisdiction" in c for c in g["cautions"])
    assert any("site-specific" in c for c in g["cautions"])
    assert data["roof"] is not None and data["roof"]["pg"]["psf"] == g["pg"]["psf"]
    assert data["site"]["input"] == DEMO_AT and data["site"]["lat"] == 47.4822


def test_roof_matches_the_engine_on_the_ground_value():
    from neve.engine import Roof, analyze_roof

    roof = Roof.from_mapping({"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"})
    res = resolve_site(47.4822, -140.0269, dem="demo", roof=roof)
    pg = res.row["pg_psf"]
    assert res.to_json()["roof"] == analyze_roof(pg, roof).to_json()


def test_text_output_is_loud_about_demo_data():
    res = run("--at", DEMO_AT, "--dem", "demo", *ROOF)
    assert res.exit_code == 0, res.output
    out = res.output
    assert out.count("DEMO DATA — invented values, never for design") >= 2
    for text in ("Status:      ok", "SK-H", "demo_data", "source: dem", "SHA-256", "Roof (",
                 "Cautions:", "authority having jurisdiction"):  # fmt: skip
        assert text in out, text


def test_study_site_gives_no_roof_and_says_why():
    from pyproj import Transformer

    # the invented summit massif SK-S1 (study zone) at local km (4, 2) of the demo island
    cx, cy = Transformer.from_crs(4326, 32607, always_xy=True).transform(-140.0, 47.5)
    lon, lat = Transformer.from_crs(32607, 4326, always_xy=True).transform(cx + 4000, cy + 2000)
    data = site_json("--at", f"{lat},{lon}", *ROOF)
    g = data["ground"]
    assert g["status"] == "study_required" and g["pg"] is None and data["roof"] is None
    assert "study_required" in g["flags"] and "No roof snow loads were computed" in g["message"]


def test_user_layer_and_elevation(grid_layer):
    lat, lon = centre(1, 0)
    data = site_json("--at", f"{lat},{lon}", "--layer", str(grid_layer), "--elevation", "152m")
    g = data["ground"]
    assert g["status"] == "ok" and g["pg"]["psf"] == 30.0 and "demo_data" not in g["flags"]
    assert g["elevation_source"] == "input" and g["elevation"]["m"] == pytest.approx(152.0)
    assert not any("DEMO" in c for c in g["cautions"])
    # 160 m = 525 ft > elev_max 500 ft
    g2 = site_json("--at", f"{lat},{lon}", "--layer", str(grid_layer), "--elevation", "160m")[
        "ground"
    ]
    assert g2["status"] == "study_required" and "above_elevation_limit" in g2["flags"]


def test_neighbours_and_distance_in_both_units(grid_layer):
    lat = LAT0 + 0.005
    data = site_json("--at", f"{lat},{LON0 + D - 0.0005}", "--layer", str(grid_layer))
    g = data["ground"]
    assert g["status"] == "provisional" and g["pg"]["psf"] == 30.0
    assert set(g["distance_to_other"]) == {"ft", "m"}
    assert g["distance_to_other"]["m"] == pytest.approx(48.2, abs=0.5)
    z2 = next(n for n in g["neighbours"] if n["zone_id"] == "Z2")
    assert z2["within_tolerance"] and z2["pg"]["psf"] == 30.0
    assert any("larger value governs" in s["description"] for s in g["steps"])


def test_stacked_layers_report_the_others():
    from pyproj import Transformer

    cx, cy = Transformer.from_crs(4326, 32607, always_xy=True).transform(-140.0, 47.5)
    lon, lat = Transformer.from_crs(32607, 4326, always_xy=True).transform(cx - 14000, cy - 2000)
    g = site_json("--at", f"{lat},{lon}")["ground"]
    assert g["zone_id"] == "PH-1" and g["layer"]["name"].startswith("Port Hallin")
    other = g["other_layers"][0]
    assert other["status"] == "ok" and other["zone_id"] == "SK-W" and other["pg"]["psf"] == 25.0
    assert any(s["unit"] == "kPa" for s in g["steps"])  # the town layer maps kPa


@pytest.mark.parametrize(
    "args, field",
    [
        (["--at", "95,-140"], "latitude 95"),
        (["--at", "47.5,-200"], "longitude"),
        (["--at", "47.5"], "at"),
        (["--at", DEMO_AT, "--elevation", "412"], "elevation"),
        (["--at", DEMO_AT, "--address", "x"], "exactly one"),
        ([], "exactly one"),
        (["--at", DEMO_AT, "--slope", "6:12", "--shape", "onion"], "shape"),
        (["--at", DEMO_AT, "--shape", "dome", "--rise", "8ft"], "diameter"),  # issue 12
        (["--at", DEMO_AT, "--layer", "/nonexistent/layer.gpkg"], "not found"),
        (["--at", DEMO_AT, "--dem", "/nonexistent/dem.tif"], "dem"),
    ],
)
def test_bad_input_exits_2(args, field):
    res = run(*args)
    assert res.exit_code == 2, res.output
    assert field in res.output


def test_flags_do_not_fail_the_run():
    res = run("--at", "0,0", "--format", "json")
    assert res.exit_code == 0
    g = json.loads(res.output)["ground"]
    assert g["status"] == "no_data" and "coordinates_suspect" in g["flags"]


def test_swapped_coordinates(grid_layer):
    res = run("--at", "-140.0269,47.4822")  # the demo site written LON,LAT
    assert res.exit_code == 2 and "look swapped" in res.output
    lat, lon = centre(0, 0)
    g = site_json("--at", f"{lon},{lat}", "--layer", str(grid_layer))["ground"]
    assert g["status"] == "no_data" and "coordinates_suspect" in g["flags"]
    assert f"Did you mean {lat:g},{lon:g}" in g["message"]


def test_map_and_package(tmp_path):
    pytest.importorskip("neve.maps.site_map")
    pytest.importorskip("neve.maps.package")
    m, pkg = tmp_path / "site.html", tmp_path / "pkg"
    res = run("--at", DEMO_AT, "--dem", "demo", *ROOF, "--map", str(m), "--package", str(pkg),
              "--site-name", "Hut", "--project", "Demo")  # fmt: skip
    assert res.exit_code == 0, res.output
    assert m.is_file() and pkg.is_dir() and any(pkg.iterdir())
    again = run("--at", DEMO_AT, "--map", str(m))
    assert again.exit_code == 2 and "--overwrite" in again.output


def _neve() -> list[str]:
    """The installed ``neve`` command, or the same entry point through this Python."""
    exe = shutil.which("neve")
    return [exe] if exe else [sys.executable, "-m", "neve.cli"]


def test_installed_command_runs():
    # runs as a separate process: the console script when it is on PATH, else python -m
    out = subprocess.run(
        [*_neve(), "site", "--at", DEMO_AT, "--dem", "demo", "--format", "json"],
        capture_output=True, text=True, timeout=120, check=False,
    )  # fmt: skip
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)["ground"]["zone_id"] == "SK-H"
    bad = subprocess.run([*_neve(), "site", "--at", "91,0"], capture_output=True, text=True,
                         check=False)  # fmt: skip
    assert bad.returncode == 2 and "latitude" in bad.stderr


def test_installed_command_runs_without_neve_on_path(monkeypatch):
    # regression guard: the fallback itself works when the console script is missing
    monkeypatch.setattr(shutil, "which", lambda name: None)
    assert _neve()[:2] == [sys.executable, "-m"]
    out = subprocess.run([*_neve(), "site", "--at", DEMO_AT, "--format", "json"],
                         capture_output=True, text=True, timeout=120, check=False)  # fmt: skip
    assert out.returncode == 0, out.stderr
    assert json.loads(out.stdout)["ground"]["zone_id"] == "SK-H"


#: the printed ground load: a value in psf, then its kPa twin in brackets
GROUND_LINE = re.compile(r"Ground pg: +([0-9.]+) psf \(([0-9.]+) kPa\)")


@pytest.fixture(scope="module")
def kpa_layer(tmp_path_factory):
    """The fixture grid with its values in kPa: Z1 is 1.68 kPa (invented fixture)."""
    rows = [dict(r) for r in fixture_rows()]
    rows[0]["pg"] = 1.68
    path = tmp_path_factory.mktemp("kpa") / "grid_kpa.gpkg"
    return write_layer(path, rows, meta={"value_units": "kPa"})


def test_text_prints_psf_and_kpa_in_their_places(grid_layer, kpa_layer):
    # NIST SP 811: 1 psf = 0.04788026 kPa. Z1 of the psf layer is 20 psf = 0.9576 kPa;
    # Z1 of the kPa layer is 1.68 kPa = 35.0875 psf. Swapping the units (or the numbers
    # beside them) fails here. The summary shows 0.1 psf and 0.01 kPa (issue 11).
    lat, lon = centre(0, 0)
    for layer, psf, kpa in ((grid_layer, 20.0, 0.9576), (kpa_layer, 35.0875, 1.68)):
        res = run("--at", f"{lat},{lon}", "--layer", str(layer))
        assert res.exit_code == 0, res.output
        m = GROUND_LINE.search(res.output)
        assert m, res.output
        assert m.group(1) == f"{psf:.1f}" and m.group(2) == f"{kpa:.2f}"
        assert float(m.group(2)) == pytest.approx(float(m.group(1)) * 0.04788026, abs=0.01)


def test_text_roof_loads_print_psf_then_kpa(kpa_layer):
    # NIST SP 811: 1 psf = 0.04788026 kPa; ASCE 7-16 Eq. 7.3-1: pf = 0.7 x 35.0875 = 24.56 psf
    # with the neutral factors (Ce = Ct = Is = 1.0), = 1.176 kPa
    lat, lon = centre(0, 0)
    res = run("--at", f"{lat},{lon}", "--layer", str(kpa_layer), "--shape", "flat",
              "--ce", "1.0", "--ct", "1.0", "--risk", "II")  # fmt: skip
    assert res.exit_code == 0, res.output
    assert "pg = 35.1 psf (1.68 kPa)" in res.output
    assert "pf = 24.6 psf (1.18 kPa)" in res.output
