"""Hostile zone layers through ``neve layer check``, ``layer show``, ``site`` and ``screen``.

Invariants (issue 8 sections 1, 3, 4 and 5) on every generated layer:

- ``layer check``: exit 0 (clean), 1 (problems) or 2 (unreadable), never an
  uncaught exception; its JSON parses strictly; ``ok`` matches the exit code;
- ``layer show --map``, ``site`` and ``screen``: exit 0 or 2, never 1;
- JSON outputs parse strictly (no NaN, no Infinity); every number of the
  results finite or the row ``error``; an ``ok`` or ``provisional`` ground
  load lies within 0..2000 psf (README plausibility bound);
- a layer that ``layer check`` finds clean never gives a site status
  ``error`` at elevations from 0 to 4,500 m (issue 8 section 4: every
  formula and table is checked over that range when the layer claims none);
- no map shows an evaluated template or input markup, and the layer map and
  site map show the planted text (so the check is not vacuous).

Everything here is invented test data.
"""

from __future__ import annotations

import tempfile
from pathlib import Path

import pytest
from hypothesis import event, given
from hypothesis import strategies as st

from tests.hostile.helpers import (
    PAYLOADS,
    PG_MAX_PSF,
    assert_exit,
    examples,
    number_defects,
    page_defects,
    read_parquet_columns,
    run,
    shows_token,
    strict_json,
    warning_problems,
)
from tests.hostile.layerfiles import LayerFile, layer_files

ELEVATIONS_M = st.floats(min_value=0.0, max_value=4500.0)


def _ground_problems(ground: dict, clean_layer: bool, where: str) -> list[str]:
    out = []
    status = ground.get("status")
    if status in ("ok", "provisional"):
        pg = (ground.get("pg") or {}).get("psf")
        if not isinstance(pg, (int, float)) or not 0.0 <= pg <= PG_MAX_PSF:
            out.append(f"{where}: status {status!r} with pg {ground.get('pg')!r}")
    if clean_layer and status == "error":
        out.append(f"{where}: 'layer check' found the layer clean, the site is 'error': "
                   f"{ground.get('message')!r}")  # fmt: skip
    return out


def layer_problems(lf: LayerFile, folder: Path, elevation_m: float, k: int) -> list[str]:
    problems: list[str] = []
    path = lf.write(folder)
    check = run(["layer", "check", path, "--format", "json"])
    assert_exit(check, (0, 1, 2), "neve layer check")
    problems += warning_problems(check, "neve layer check")
    clean = check.exit_code == 0
    event(f"layer check exit {check.exit_code}")
    if check.exit_code in (0, 1):
        report = strict_json(check.stdout)
        if bool(report.get("ok")) != clean:
            problems.append(f"layer check: ok={report.get('ok')!r} with exit {check.exit_code}")
    show = run(["layer", "show", path, "--map", folder / "layer.html"])
    assert_exit(show, (0, 2), "neve layer show")
    problems += warning_problems(show, "neve layer show")
    if show.exit_code == 0:
        page = folder / "layer.html"
        problems += page_defects(page)
        for text in (lf.meta["name"], *(str(r["zone_id"]) for r in lf.rows)):
            if not shows_token(page, text):
                problems.append(f"layer map does not show {text!r}")
    lat, lon = lf.centres()[k]
    site = run(["site", "--at", f"{lat},{lon}", "--layer", path, "--elevation",
                f"{elevation_m:.1f}m", "--format", "json", "--map", folder / "site.html"])  # fmt: skip
    assert_exit(site, (0, 2), "neve site")
    problems += warning_problems(site, "neve site")
    event(f"site exit {site.exit_code}")
    if site.exit_code == 0:
        data = strict_json(site.stdout)
        event(f"site status {data['ground'].get('status')}")
        problems += _ground_problems(data["ground"], clean, f"site in zone {k}")
        problems += page_defects(folder / "site.html")
        if not shows_token(folder / "site.html", lf.meta["name"]):
            problems.append(f"site map does not show the layer name {lf.meta['name']!r}")
    elif clean:
        problems.append(f"neve site refused a clean layer: {site.stderr[-400:]}")
    lines = ["site_id,lat,lon,elevation"]
    lines += [f"Z{i},{a},{o},{elevation_m:.1f}m" for i, (a, o) in enumerate(lf.centres())]
    lines.append("OUT,29.5,-39.5,10m")  # outside every zone
    (folder / "sites.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    screen = run(["screen", folder / "sites.csv", "--layer", path, "-o", folder / "r.parquet",
                  "--summary-json", folder / "s.json", "--quiet"])  # fmt: skip
    assert_exit(screen, (0, 2), "neve screen")
    problems += warning_problems(screen, "neve screen")
    if screen.exit_code == 0:
        _, cols = read_parquet_columns(folder / "r.parquet")
        if len(cols["status"]) != len(lines) - 1:
            problems.append(f"screen: {len(cols['status'])} rows for {len(lines) - 1}")
        problems += number_defects(cols, cols["status"])
        strict_json((folder / "s.json").read_text(encoding="utf-8"))
        if clean:
            for i, s in enumerate(cols["status"][:-1]):
                if s == "error":
                    problems.append(f"screen row {i}: a clean layer gives 'error': "
                                    f"{cols['message'][i]!r}")  # fmt: skip
    elif clean:
        problems.append(f"neve screen refused a clean layer: {screen.stderr[-400:]}")
    return problems


@pytest.mark.issue8("5")
@examples(20)
@given(lf=layer_files(), elevation_m=ELEVATIONS_M, pick=st.integers(0, 3))
def test_hostile_layer_attributes(lf, elevation_m, pick):
    # issue 8 sections 1, 3, 4, 5 invariants (module docstring)
    with tempfile.TemporaryDirectory() as tmp:
        problems = layer_problems(lf, Path(tmp), elevation_m, pick % len(lf.rows))
    assert not problems, "\n".join(problems)


# --------------------------------------------------------------------------- reproducers

META = {
    "name": "hostile fixture (invented)",
    "jurisdiction": "nowhere (invented)",
    "standard": "ASCE 7-16",
    "value_units": "psf",
    "elevation_units": "ft",
    "source": "tests/hostile (invented)",
    "license": "CC0-1.0",
    "date": "2026-01-01",
    "boundary_tolerance_m": 100,
    "demo": False,
}


def _one_zone(**props) -> LayerFile:
    row = {"zone_id": "H1", "rule": "fixed", "pg": None, "pg_min": None, "elev_max": None,
           "table": None, "expr": None, "Z": None, "note": "", "source": ""}  # fmt: skip
    row.update(props)
    return LayerFile([row], dict(META))


@pytest.mark.issue8("3")
@pytest.mark.parametrize(
    "props",
    [
        pytest.param({"rule": "fixed", "pg": 20.0, "pg_min": 1e6}, id="pg_min-1e6"),
        pytest.param({"rule": "fixed", "pg": 1e6}, id="pg-1e6"),
        pytest.param({"rule": "elevation_table", "table": "[[0, 20], [1000, 1e6]]"}, id="table"),
        pytest.param({"rule": "formula", "expr": "Z + 1e6", "Z": 1.0}, id="formula-result"),
        pytest.param({"rule": "formula", "expr": "9" * 330}, id="formula-330-digits"),
        pytest.param({"rule": "formula", "expr": "10 ** 400"}, id="formula-overflow"),
        pytest.param({"rule": "formula", "expr": "Z / (A - 500)", "Z": 1.0}, id="division-by-0"),
    ],
)
def test_out_of_bound_layer_values_are_defects_and_errors(tmp_path, props):
    # issue 8 section 3: every value a layer can produce within 2000 psf; outside it
    # (or a formula failing at the site) the layer check reports it and the site is error
    lf = _one_zone(**props)
    path = lf.write(tmp_path)
    check = run(["layer", "check", path, "--format", "json"])
    assert_exit(check, (1,), "layer check")
    assert strict_json(check.stdout)["problems"]
    lat, lon = lf.centres()[0]
    for fmt in ("json", "text"):
        site = run(["site", "--at", f"{lat},{lon}", "--layer", path, "--elevation", "500ft",
                    "--format", fmt])  # fmt: skip
        assert_exit(site, (0, 2), f"site --format {fmt}")
        if fmt == "json" and site.exit_code == 0:
            assert strict_json(site.stdout)["ground"]["status"] == "error"
    (tmp_path / "s.csv").write_text(f"site_id,lat,lon,elevation\nA,{lat},{lon},500ft\n")
    screen = run(["screen", tmp_path / "s.csv", "--layer", path, "-o", tmp_path / "r.parquet",
                  "--quiet"])  # fmt: skip
    assert_exit(screen, (0,), "screen")
    _, cols = read_parquet_columns(tmp_path / "r.parquet")
    assert cols["status"] == ["error"]


@pytest.mark.issue8("6")
def test_site_in_overlap_of_fixed_and_study_zone_gives_strict_json(tmp_path):
    # issue 8 section 6 reproducer: a fixed zone overlapping a study zone made NaN reach
    # the JSON encoder (exit 1); the site is study_required and the JSON has no NaN
    lf = LayerFile(
        [
            {"zone_id": "F1", "rule": "fixed", "pg": 30.0, "note": "", "source": ""},
            {"zone_id": "S1", "rule": "study", "pg": None, "note": "", "source": ""},
        ],
        dict(META),
    )
    path = lf.write(tmp_path)
    # both squares over the same ground: rewrite the second one onto the first
    import json

    doc = json.loads(path.read_text(encoding="utf-8"))
    doc["features"][1]["geometry"] = doc["features"][0]["geometry"]
    path.write_text(json.dumps(doc), encoding="utf-8")
    lat, lon = lf.centres()[0]
    site = run(["site", "--at", f"{lat},{lon}", "--layer", path, "--elevation", "100ft",
                "--format", "json"])  # fmt: skip
    assert_exit(site, (0,), "site in the overlap")
    assert strict_json(site.stdout)["ground"]["status"] == "study_required"


@pytest.mark.issue8("1")
@pytest.mark.parametrize("payload", list(PAYLOADS), ids=lambda p: p[:14])
def test_each_payload_in_every_layer_text_field(tmp_path, payload):
    # issue 8 sections 1 and 6: zone_id, note, source and the sidecar's name, jurisdiction
    # and source, on the layer map and on the site map with two stacked layers (the layer
    # switcher shows both names)
    lf = _one_zone(zone_id=payload, rule="fixed", pg=30.0, note=payload, source=payload)
    lf.meta.update(name=payload, jurisdiction=payload, source=payload)
    local = lf.write(tmp_path, "local.geojson")
    wide = LayerFile(lf.rows, {**lf.meta, "name": "wide " + payload}).write(
        tmp_path, "wide.geojson"
    )
    show = run(["layer", "show", local, "--map", tmp_path / "layer.html"])
    assert_exit(show, (0,), "layer show")
    assert not page_defects(tmp_path / "layer.html")
    assert shows_token(tmp_path / "layer.html", payload)
    lat, lon = lf.centres()[0]
    site = run(["site", "--at", f"{lat},{lon}", "--layer", local, "--layer", wide,
                "--elevation", "100ft", "--map", tmp_path / "site.html", "--format", "json"])  # fmt: skip
    assert_exit(site, (0,), "site with two hostile layers")
    assert strict_json(site.stdout)["ground"]["zone_id"] == payload
    assert not page_defects(tmp_path / "site.html")
    assert shows_token(tmp_path / "site.html", payload)


@pytest.mark.issue8("5")
def test_mixed_type_layer_column_prints_no_library_warning(tmp_path):
    # found by this suite: a GeoJSON column holding a number in one zone and text in another
    # (GDAL types it as JSON); reading it must not print a library warning on stderr
    lf = LayerFile(
        [
            {"zone_id": 1, "rule": "study", "note": "", "source": ""},
            {"zone_id": "B", "rule": "study", "note": "", "source": ""},
        ],
        dict(META),
    )
    path = lf.write(tmp_path)
    lat, lon = lf.centres()[1]
    for args in (
        ["layer", "check", path],
        ["layer", "show", path, "--map", tmp_path / "m.html"],
        ["site", "--at", f"{lat},{lon}", "--layer", path, "--elevation", "10m"],
    ):
        result = run(args)
        assert_exit(result, (0, 1), " ".join(map(str, args[:2])))
        assert not warning_problems(result, " ".join(map(str, args[:2])))
