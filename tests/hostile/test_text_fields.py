"""Hostile text in ``neve site``'s names, roof element names and the package (issue 8 s. 1, 5).

Invariants: exit 0 or 2, never 1 (a refusal names the option); the JSON
output parses strictly and gives the names back exactly as given; no HTML,
SVG or JSON file written shows an evaluated template or input markup; the
site map shows the planted site name (so the check is not vacuous).

Everything here is invented test data (the embedded demo layer of the
invented Skerrow Island).
"""

from __future__ import annotations

import shutil
import subprocess
import tempfile
from pathlib import Path

import pytest
from hypothesis import example, given
from hypothesis import strategies as st

from tests.hostile.helpers import (
    PAYLOADS,
    TEMPLATE_PAYLOADS,
    arg_text,
    assert_exit,
    decoded,
    examples,
    hostile_text,
    marked_text,
    output_pages,
    page_defects,
    run,
    shows_token,
    strict_json,
    warning_problems,
)

#: points in the zones of the demo layer (invented demo data) and one at sea
DEMO_POINTS = (
    "47.52,-140.05",
    "47.45166,-140.16255",
    "47.57702,-140.14576",
    "47.44429,-139.96126",
    "47.51751,-139.94654",
    "47.48347,-140.18615",
    "47.0,-141.0",
)
ELEVATIONS = ("100m", "450m", "1200ft", "3000m")


def _site_problems(folder: Path, name: str, project: str, at: str, elevation: str) -> list[str]:
    problems = []
    page = folder / "site.html"
    result = run(["site", "--at", at, "--elevation", elevation, "--site-name", name,
                  "--project", project, "--map", page, "--format", "json"])  # fmt: skip
    assert_exit(result, (0, 2), "neve site --format json")
    problems += warning_problems(result, "neve site --map")
    if result.exit_code == 2:
        if "site-name" not in result.stderr and "project" not in result.stderr:
            problems.append(f"refusal does not name the option: {result.stderr[-300:]}")
        return problems
    data = strict_json(result.stdout)
    if data["site"].get("name") != name:
        problems.append(f"site name came back as {data['site'].get('name')!r}")
    if data["site"].get("project") != project:
        problems.append(f"project came back as {data['site'].get('project')!r}")
    problems += page_defects(page)
    for text in (name, project):
        if not shows_token(page, text):
            problems.append(f"site map does not show {text!r}")
    text_run = run(["site", "--at", at, "--elevation", elevation, "--site-name", name,
                    "--project", project])  # fmt: skip
    assert_exit(text_run, (0,), "neve site --format text")
    problems += warning_problems(text_run, "neve site --format text")
    for evaluated in (f for forms in TEMPLATE_PAYLOADS.values() for f in forms):
        if evaluated in text_run.stdout:
            problems.append(f"text output shows {evaluated!r}")
    return problems


@pytest.mark.issue8("1")
@examples(25)
@given(
    name=arg_text(marked_text()),
    project=arg_text(st.one_of(marked_text(), hostile_text())),
    at=st.sampled_from(DEMO_POINTS),
    elevation=st.sampled_from(ELEVATIONS),
)
def test_site_names_are_data(name, project, at, elevation):
    # issue 8 section 1 and 5 invariants (module docstring)
    with tempfile.TemporaryDirectory() as tmp:
        problems = _site_problems(Path(tmp), name, project, at, elevation)
    assert not problems, "\n".join(problems)


def _roof_toml(names: list[str]) -> str:
    import tomli_w

    step, parapet, projection = names
    return tomli_w.dumps(
        {
            "shape": "gable",
            "slope": "6:12",
            "eave_to_ridge": "30ft",
            "name": step + " roof",
            "step": [{"name": step, "height": "6ft", "upper_length": "80ft",
                      "lower_length": "60ft"}],
            "parapet": [{"name": parapet, "height": "3ft", "upwind_length": "100ft"}],
            "projection": [{"name": projection, "height": "4ft", "plan_length": "20ft",
                            "upwind_length": "60ft"}],
        }
    )  # fmt: skip


def _package_problems(folder: Path, name: str, project: str, element_names: list[str]) -> list:
    roof = folder / "roof.toml"
    roof.write_text(_roof_toml(element_names), encoding="utf-8")
    pkg = folder / "calc"
    result = run(["site", "--at", "47.52,-140.05", "--elevation", "300m", "--roof", roof,
                  "--site-name", name, "--project", project, "--package", pkg])  # fmt: skip
    assert_exit(result, (0, 2), "neve site --package")
    if result.exit_code == 2:
        return [] if pkg.exists() is False else [f"refused but wrote {pkg}"]
    problems = warning_problems(result, "neve site --package")
    pages = output_pages(pkg)
    if not any(p.name == "report.html" for p in pages):
        problems.append(f"no report.html in the package: {[p.name for p in pages]}")
    for page in pages:
        problems += page_defects(page)
        if page.suffix == ".json":
            strict_json(page.read_text(encoding="utf-8"))
    report = pkg / "report.html"
    if report.exists() and not shows_token(report, name):
        problems.append(f"report.html does not show the site name {name!r}")
    problems += _pdf_problems(pkg / "report.pdf")
    return problems


def _pdf_problems(pdf: Path) -> list[str]:
    if not pdf.exists() or shutil.which("pdftotext") is None:
        return []
    text = subprocess.run(["pdftotext", str(pdf), "-"], capture_output=True, text=True).stdout
    text = decoded(text)
    return [
        f"report.pdf shows {form!r}"
        for forms in TEMPLATE_PAYLOADS.values()
        for form in forms
        if form in text.replace("\n", "")
    ]


@pytest.mark.issue8("1")
@examples(1)  # a package takes several seconds (PDF, static map, diagrams)
@example(  # every payload of the issue at once, with control characters and code points
    # no font has (they once printed matplotlib's glyph warnings on stderr)
    name="".join(PAYLOADS) + "\x13\x85\U00048e04",
    project="".join(PAYLOADS) + "\x04\u2028",
    element_names=[p + " e\x13\U00046814" for p in list(PAYLOADS)[:3]],
)
@given(
    name=arg_text(marked_text()),
    project=arg_text(marked_text()),
    element_names=st.lists(marked_text(2), min_size=3, max_size=3),
)
def test_package_shows_names_as_text(name, project, element_names):
    # issue 8 section 1: site, project and roof element names in every package file
    with tempfile.TemporaryDirectory() as tmp:
        problems = _package_problems(Path(tmp), name, project, element_names)
    assert not problems, "\n".join(problems)


# --------------------------------------------------------------------------- reproducers


@pytest.mark.issue8("1")
@pytest.mark.parametrize("payload", list(PAYLOADS), ids=lambda p: p[:14])
def test_each_payload_in_site_name_and_project(tmp_path, payload):
    # issue 8 section 1: each payload of the issue, in the site map and JSON, literally
    problems = _site_problems(tmp_path, payload, "P " + payload, "47.52,-140.05", "100m")
    assert not problems, "\n".join(problems)


@pytest.mark.issue8("1")
@pytest.mark.parametrize("payload", list(PAYLOADS), ids=lambda p: p[:14])
def test_each_payload_as_site_id_in_the_portfolio_map(tmp_path, payload):
    # issue 8 section 1: a site_id reaches the portfolio map's popups as text
    import csv

    with (tmp_path / "s.csv").open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(["site_id", "note", "lat", "lon", "elevation"])
        w.writerow([payload, payload, "47.52", "-140.05", "100m"])
        w.writerow(["B", "x", payload, "-140.05", payload])  # the bad cells reach the message
    page = tmp_path / "p.html"
    result = run(["screen", tmp_path / "s.csv", "-o", tmp_path / "r.csv", "--map", page,
                  "--quiet"])  # fmt: skip
    assert_exit(result, (0,), "screen --map")
    assert not warning_problems(result, "screen --map")
    assert not page_defects(page)
    assert shows_token(page, payload)


@pytest.mark.issue8("1")
@pytest.mark.parametrize("payload", list(PAYLOADS), ids=lambda p: p[:14])
def test_each_payload_as_a_gazetteer_address(tmp_path, payload):
    # issue 8 section 1: an address found in a gazetteer reaches the site map as text
    import csv

    with (tmp_path / "g.csv").open("w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows([["address", "lat", "lon"], [payload, "47.52", "-140.05"]])
    page = tmp_path / "site.html"
    result = run(["site", "--address", payload, "--gazetteer", tmp_path / "g.csv",
                  "--elevation", "100m", "--map", page, "--format", "json"])  # fmt: skip
    assert_exit(result, (0,), "site --address")
    assert not warning_problems(result, "site --address")
    assert strict_json(result.stdout)["site"]["address"] == payload
    assert not page_defects(page)
    assert shows_token(page, payload)
