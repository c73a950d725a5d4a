"""`neve site` against docs/contract.md: every status and flag, JSON keys, exit codes.

Layers are the invented fixture grid (tests/geo/conftest.py) plus the small
layers of this folder's conftest. Expected statuses and flags come from
docs/contract.md, "Site resolution result" and "Flags" (regression guard of the contract).
"""

from __future__ import annotations

import json
import shutil
import subprocess
import sys

import pytest

from neve.engine import Roof
from neve.geo.site.one import resolve_site
from tests.geo.conftest import write_dem, write_layer

from .conftest import run, run_json, zone

#: the installed command, or the same entry point through this Python when it is not on PATH
NEVE = [shutil.which("neve")] if shutil.which("neve") else [sys.executable, "-m", "neve.cli"]

LOAD = {"psf", "kPa"}
LENGTH = {"ft", "m"}
FLAT = ["--shape", "flat"]

# (name, layer fixture, --at, extra args, status, flags that must be present)
CASES = [
    ("fixed", "grid", "30.005,-39.995", [], "ok", set()),
    ("below limit", "grid", "30.005,-39.985", ["--elevation", "400ft"], "ok", set()),
    ("above limit", "grid", "30.005,-39.985", ["--elevation", "600ft"], "study_required",
     {"above_elevation_limit", "study_required"}),
    ("study zone", "grid", "30.005,-39.975", [], "study_required", {"study_required"}),
    ("table needs elevation", "grid", "30.015,-39.995", [], None, {"elevation_needed"}),
    ("limit needs elevation", "grid", "30.005,-39.985", [], "provisional", {"elevation_needed"}),
    ("above table", "grid", "30.015,-39.995", ["--elevation", "1500ft"], "study_required",
     {"above_elevation_limit"}),
    ("outside", "grid", "31.0,-39.99", [], "no_data", {"outside_layer"}),
    ("near boundary", "grid", "30.005,-39.9901", ["--elevation", "100ft"], "provisional",
     {"near_boundary"}),
    ("overlap", "overlap", "30.01,-39.985", [], "provisional", {"overlapping_zones"}),
    ("swapped", "grid", "-39.995,30.005", [], None, {"coordinates_suspect"}),
    ("zero zero", "grid", "0,0", [], None, {"coordinates_suspect"}),
    ("dem nodata", "big", "30.034,-40.003", ["--dem", "DEM"], None, {"dem_nodata"}),
    ("mismatch", "grid", "30.015,-39.995", ["--dem", "DEM", "--elevation", "5000ft"], None,
     {"elevation_mismatch"}),
    ("defective formula", "defective", "30.005,-39.995", ["--elevation", "100ft"], "error", set()),
    # issue 8 sec. 6: a study zone in an overlap, on an edge and 29 m away; sec. 3: a DEM value
    # no land surface has, and a given elevation 16 m from the DEM (15 m: README)
    ("study overlap", "study_overlap", "30.005,-39.9875", [], "study_required",
     {"study_required", "overlapping_zones"}),
    ("study edge", "study_edge", "30.005,-39.99", [], "study_required", {"study_required"}),
    ("study nearby", "study_edge", "30.005,-39.9903", [], "provisional",
     {"study_area_nearby", "near_boundary"}),
    ("dem implausible", "big", "30.015,-39.995", ["--dem", "BADDEM"], "no_data",
     {"dem_implausible", "elevation_needed"}),
    ("mismatch 16 m", "big", "30.015,-39.995", ["--dem", "FLATDEM", "--elevation", "116m"],
     "provisional", {"elevation_mismatch"}),
    ("match 14 m", "big", "30.015,-39.995", ["--dem", "FLATDEM", "--elevation", "114m"], "ok",
     set()),
]  # fmt: skip


@pytest.fixture(scope="module")
def study_edge(cdir) -> str:
    """F (fixed 20 psf) west of -39.99, S (study) east of it (invented)."""
    from shapely.geometry import box

    rows = [zone("F", "fixed", box(-40.0, 30.0, -39.99, 30.01), pg=20.0),
            zone("S", "study", box(-39.99, 30.0, -39.98, 30.01))]  # fmt: skip
    return str(write_layer(cdir / "study_edge.geojson", rows))


@pytest.fixture(scope="module")
def study_overlap(cdir) -> str:
    """F (fixed 20 psf) and S (study) overlapping between -39.99 and -39.985 (invented)."""
    from shapely.geometry import box

    rows = [zone("F", "fixed", box(-40.0, 30.0, -39.985, 30.01), pg=20.0),
            zone("S", "study", box(-39.99, 30.0, -39.98, 30.01))]  # fmt: skip
    return str(write_layer(cdir / "study_overlap.geojson", rows))


def _args(request, extra):
    dems = {"DEM": "dem", "BADDEM": "bad_dem", "FLATDEM": "flat_dem"}
    return [request.getfixturevalue(dems[a]) if a in dems else a for a in extra]


@pytest.fixture(scope="module")
def bad_dem(cdir) -> str:
    """A DEM whose cells hold -32768 (a fill value it does not declare as nodata)."""
    return str(write_dem(cdir / "bad_dem.tif", fill=-32768.0))


@pytest.fixture(scope="module")
def flat_dem(cdir) -> str:
    """A DEM at 100 m everywhere (but its nodata corner)."""
    return str(write_dem(cdir / "flat_dem.tif", fill=100.0))


@pytest.mark.parametrize("name, layer, at, extra, status, flags", CASES, ids=[c[0] for c in CASES])
def test_status_and_flags(request, name, layer, at, extra, status, flags):
    path = request.getfixturevalue(layer)
    d = run_json("site", "--layer", path, "--at", at, *_args(request, extra))
    g = d["ground"]
    if status:
        assert g["status"] == status, g
    assert flags <= set(g["flags"]), g["flags"]
    assert "demo_data" not in g["flags"]


def test_larger_value_governs_overlap_and_boundary(grid, overlap):
    # docs/contract.md, "Site flags": near_boundary / overlapping_zones -> the larger value governs
    g = run_json("site", "--layer", overlap, "--at", "30.01,-39.985")["ground"]
    assert g["pg"]["psf"] == pytest.approx(40.0)
    g = run_json("site", "--layer", grid, "--at", "30.005,-39.9901", "--elevation", "100ft")
    assert g["ground"]["pg"]["psf"] == pytest.approx(30.0)


def test_demo_data_loud_without_layer():
    res = run("site", "--at", "47.52,-140.05")
    assert res.exit_code == 0
    assert "demo" in res.stdout.lower() and "never for design" in res.stdout.lower()
    d = run_json("site", "--at", "47.52,-140.05")
    assert "demo_data" in d["ground"]["flags"]


def test_json_keys_and_units(grid):
    d = run_json("site", "--layer", grid, "--at", "30.005,-39.985", "--elevation", "412ft",
                 *FLAT)  # fmt: skip
    assert set(d) == {"site", "ground", "roof"}
    g = d["ground"]
    for key in ("status", "pg", "zone_id", "flags", "elevation", "layer"):
        assert key in g, key
    assert set(g["pg"]) == LOAD and set(g["elevation"]) == LENGTH
    assert g["elevation"]["ft"] == pytest.approx(412.0)
    assert g["layer"]["sha256"] and g["layer"]["name"] == "fixture grid"
    assert d["roof"]["design_uniform"] and set(d["roof"]["design_uniform"]) == LOAD
    assert d["roof"]["cautions"]


@pytest.mark.parametrize(
    "elev, ft", [("412m", 412 / 0.3048), ("1350ft", 1350.0), ("412 m", 412 / 0.3048)]
)
def test_elevation_units(grid, elev, ft):
    # 1 ft = 0.3048 m exactly (international foot, common practice)
    g = run_json("site", "--layer", grid, "--at", "30.015,-39.995", "--elevation", elev)["ground"]
    assert g["elevation"]["ft"] == pytest.approx(ft, rel=1e-4)


def test_roof_null_when_ground_unusable(grid):
    d = run_json("site", "--layer", grid, "--at", "30.005,-39.975", *FLAT)
    assert d["roof"] is None
    assert "study" in d["ground"]["message"].lower()


def test_cautions_in_site_outputs(grid):
    d = run_json("site", "--layer", grid, "--at", "30.005,-39.995")
    text = json.dumps(d).lower()
    assert "licensed" in text and "authority having jurisdiction" in text
    res = run("site", "--layer", grid, "--at", "30.005,-39.995")
    assert "licensed" in res.stdout.lower()


BAD = [
    (["--at", "95,-39.99"], "at", "-90 to 90"),
    (["--at", "30,-190"], "at", "-180 to 180"),
    (["--at", "abc"], "at", "LAT,LON"),
    (["--at", "nan,nan"], "at", "LAT,LON"),
    ([], "at", "--at"),
    (["--at", "30.005,-39.995", "--elevation", "412"], "elevation", "ft"),
    (["--at", "30.005,-39.995", "--elevation", "412psf"], "elevation", "m"),
    (["--at", "30.005,-39.995", "--slope", "95deg"], "slope", "90"),
    (["--at", "30.005,-39.995", "--risk", "V"], "risk", "IV"),
    (["--at", "30.005,-39.995", "--eave-to-ridge", "30"], "eave_to_ridge", "ft"),
    (["--address", "1 Main"], "address", "--gazetteer"),
]


@pytest.mark.parametrize("args, field, accepted", BAD)
def test_bad_input_exit_2(grid, args, field, accepted):
    res = run("site", "--layer", grid, *args)
    assert res.exit_code == 2, res.output
    assert field in res.stderr and accepted in res.stderr, res.stderr


def test_missing_sidecar_exit_2(cdir, grid):
    import shutil

    lone = cdir / "lone.geojson"
    shutil.copy(grid, lone)
    res = run("site", "--layer", str(lone), "--at", "30.005,-39.995")
    assert res.exit_code == 2 and "sidecar" in res.stderr and ".toml" in res.stderr


def test_existing_map_not_overwritten(tmp_path, grid):
    m = tmp_path / "m.html"
    m.write_text("keep", encoding="utf-8")
    res = run("site", "--layer", grid, "--at", "30.005,-39.995", "--map", str(m))
    assert res.exit_code == 2 and "map" in res.stderr
    assert m.read_text(encoding="utf-8") == "keep"


@pytest.mark.parametrize("at", ["30.005,-39.985", "30.005,-39.975"])
def test_defective_fixed_zone_is_status_error_not_a_crash(defective, at):
    res = run("site", "--layer", defective, "--at", at, "--format", "json")
    assert res.exit_code == 0, res.output
    assert json.loads(res.stdout)["ground"]["status"] == "error"


def test_formula_cannot_run_code(hostile, tmp_path):
    for at in ("30.005,-39.995", "30.005,-39.985", "30.005,-39.975"):
        out = subprocess.run([*NEVE, "site", "--layer", hostile, "--at", at, "--elevation",
                              "100ft", "--format", "json"], cwd=tmp_path, capture_output=True,
                             text=True, timeout=60)  # fmt: skip
        assert out.returncode == 0, out.stderr
        assert json.loads(out.stdout)["ground"]["status"] == "error"
    assert not (tmp_path / "pwned").exists()


def test_no_library_warnings_on_stderr(cdir):
    from tests.geo.conftest import cell, write_layer

    from .conftest import zone

    p = write_layer(cdir / "badtable.geojson",
                    [zone("T1", "elevation_table", cell(0, 0), table="[[0, 20], [1000, 40]]"),
                     zone("T2", "elevation_table", cell(1, 0), table="not json")])  # fmt: skip
    out = subprocess.run([*NEVE, "site", "--layer", str(p), "--at", "30.005,-39.995",
                          "--elevation", "100ft"], capture_output=True, text=True, timeout=60)  # fmt: skip
    assert out.returncode == 0
    assert "Warning" not in out.stderr, out.stderr


def test_resolve_site_accepts_a_roof_mapping(grid):
    r = resolve_site(30.005, -39.995, layers=[grid], roof={"shape": "flat"})
    assert r.to_json()["roof"]["design_uniform"]["psf"] > 0


def test_resolve_site_mirrors_cli(grid):
    api = resolve_site(30.005, -39.985, layers=[grid], elevation="400ft",
                       roof=Roof.from_mapping({"shape": "flat"})).to_json()  # fmt: skip
    cli = run_json("site", "--layer", grid, "--at", "30.005,-39.985", "--elevation", "400ft",
                   *FLAT)  # fmt: skip
    assert api["ground"]["pg"] == cli["ground"]["pg"]
    assert api["roof"]["design_uniform"] == cli["roof"]["design_uniform"]


def test_every_load_and_length_in_site_json_has_both_units(grid, dem):
    from .test_roof_contract import LENGTH as L
    from .test_roof_contract import LOAD as P
    from .test_roof_contract import _unit_shapes

    d = run_json("site", "--layer", grid, "--at", "30.015,-39.995", "--dem", dem,
                 "--elevation", "110m", "--shape", "gable", "--slope", "6:12",
                 "--eave-to-ridge", "30ft")  # fmt: skip
    assert d["ground"]["elevation"] and d["roof"]
    for path, keys in _unit_shapes(d):
        assert keys in (P, L), (path, keys)
