"""The registered verification cases, run by the test suite, and ``neve verify``.

Every case of every registered standard runs here, parametrized over the
registry, so the cases ``neve verify`` shows and the suite cannot drift
apart. Each case names its own source (ASCE 7-16 tables and equations, from
memory, as in the engine tests it was taken from); the tables it holds are
checked against the engine tests' own copies. The CLI checks follow issue 9
("neve verify": exit 0 when all pass, 1 otherwise; JSON ``cases`` and
``summary``; an HTML manual through the autoescaping environment, offline;
``-o`` refuses an existing file unless ``--overwrite``).
"""

from __future__ import annotations

import dataclasses
import json
import math
import re

import pytest
from click.testing import CliRunner

import neve.engine.standards as registry
from neve.cli import main
from neve.engine.asce7_16 import factors
from neve.engine.asce7_16 import verification as v
from neve.engine.standards import VerificationCase, get_standard, run_verification, standards

CASES = [(std, case) for std in standards() for case in std.cases()]
CASE_KEYS = {"id", "standard", "source", "inputs", "expected", "computed", "tolerance", "ok"}


@pytest.mark.parametrize(("std", "case"), CASES, ids=[f"{s.id}:{c.id}" for s, c in CASES])
def test_registered_case(std, case):
    # the source is the case's own: case.source (shown in the failure message)
    out = case.run(std.title)
    assert out["ok"], json.dumps(out, indent=2, default=str)


def test_the_registry_holds_the_asce_7_16_cases():
    for std in standards():  # ids are unique within a standard
        ids = [c.id for s, c in CASES if s is std]
        assert len(ids) == len(set(ids)), f"case ids of {std.id} are unique"
    cases16 = [c for s, c in CASES if s.id == "asce7-16"]
    assert len(cases16) >= 150
    groups = {c.group for c in cases16}
    # every provision family the engine tests check has cases here
    for group in ("Table 1.5-2", "Table 7.3-1", "Table 7.3-2", "Eq. 7.3-1", "Sec. 7.3.4",
                  "Fig. 7.4-1", "Eq. 7.4-1", "Eq. 7.7-1", "Fig. 7.6-1", "Sec. 7.6.1",
                  "Sec. 7.7.1", "Sec. 7.7.2", "Sec. 7.8", "Sec. 7.9", "Sec. 7.4.5", "Sec. 7.5",
                  "Sec. 7.10"):  # fmt: skip
        assert group in groups, group


@pytest.mark.parametrize(("std", "case"), CASES, ids=[f"{s.id}:{c.id}" for s, c in CASES])
def test_every_case_names_its_source_and_can_fail(std, case):
    assert case.source.startswith(std.title + " ")
    # from memory, common practice, or (issue 10) a published source with its address
    assert any(w in case.source for w in ("from memory", "common practice", "https://"))
    assert case.expected
    for key, tol in case.tolerances().items():
        want = case.expected[key]
        assert tol >= 0
        if isinstance(want, (int, float)) and not isinstance(want, bool):
            # tight enough to catch a wrong value: at most 0.5 % of it (or 0.1 near zero)
            assert tol <= max(0.005 * abs(want), 0.1), (key, tol)


def test_tables_are_the_engine_tests_own():
    # the verification data and the engine tests hold the same published values
    from tests.engine.test_factors_tables import CE_TABLE_7_3_1, CT_TABLE_7_3_2, IS_TABLE_1_5_2
    from tests.engine.test_slope_factor import KNEES_FIG_7_4_1

    assert v.IS_TABLE_1_5_2 == IS_TABLE_1_5_2
    assert v.CE_TABLE_7_3_1 == CE_TABLE_7_3_1
    assert v.CT_TABLE_7_3_2 == CT_TABLE_7_3_2
    assert v.KNEES_FIG_7_4_1 == KNEES_FIG_7_4_1
    assert v.NEUTRAL == __import__("tests.engine.helpers", fromlist=["NEUTRAL"]).NEUTRAL


def _one(case_id: str) -> VerificationCase:
    (case,) = [c for _, c in CASES if c.id == case_id]
    return case


def test_a_wrong_expected_value_fails():
    case = _one("sec-7.7.1/leeward-governs")
    key = "pd [psf]"
    tol = case.tolerances()[key]
    wrong = dict(case.expected, **{key: case.expected[key] + 3 * tol})
    out = dataclasses.replace(case, expected=wrong).run("ASCE 7-16")
    assert out["ok"] is False
    assert out["computed"][key] == pytest.approx(case.expected[key], abs=tol)
    words = dict(case.expected, governs="windward")
    assert dataclasses.replace(case, expected=words).run("ASCE 7-16")["ok"] is False


def test_a_case_that_raises_fails_and_says_why():
    case = dataclasses.replace(
        _one("table-7.3-1/B/fully"), inputs={"terrain": "Q", "exposure": "x"}
    )
    out = case.run("ASCE 7-16")
    assert out["ok"] is False
    assert "terrain" in out["error"]
    assert out["computed"] == {"Ce": None}


def test_not_a_number_never_passes():
    case = dataclasses.replace(_one("table-1.5-2/I"), compute=lambda i: {"Is": math.nan})
    assert case.run("ASCE 7-16")["ok"] is False


def test_a_changed_engine_table_fails_its_case(monkeypatch):
    # the cases compute through the engine: a wrong table cell is caught
    monkeypatch.setitem(factors.EXPOSURE_TABLE_7_3_1["B"], "fully", 0.95)
    report = run_verification("asce7-16")
    failed = [c["id"] for c in report["cases"] if not c["ok"]]
    assert failed == ["table-7.3-1/B/fully"]
    assert report["summary"]["failed"] == 1 and report["summary"]["ok"] is False


# --- neve verify ---------------------------------------------------------------------


def _verify(*args):
    return CliRunner().invoke(main, ["verify", *map(str, args)])


def test_verify_passes_and_prints_every_case():
    r = _verify()
    assert r.exit_code == 0, r.output
    for _, case in CASES:
        assert f"[pass] {case.id} " in r.stdout
    titles = ", ".join(s.title for s in standards())  # ASCE 7-16, ASCE 7-22 (issue 10)
    assert f"{len(CASES)} of {len(CASES)} verification cases pass ({titles}); 0 fail." in r.stdout
    # per case: id, standard, source, inputs, expected, computed, tolerance, pass
    block = r.stdout.split("[pass] sec-7.7.1/leeward-governs", 1)[1].split("[pass]", 1)[0]
    assert "(ASCE 7-16)" in block and "source:" in block and "inputs:" in block
    assert "pd [psf]: expected 62.9969 +/- 0.002, computed 62.99" in block


def test_verify_json_shape():
    r = _verify("--format", "json")
    assert r.exit_code == 0, r.output
    data = json.loads(r.stdout)
    assert {"cases", "summary"} <= set(data)
    assert len(data["cases"]) == len(CASES)
    for c in data["cases"]:
        assert CASE_KEYS <= set(c)
        assert c["standard"] in [s.title for s in standards()]
        assert c["ok"] is True
        assert set(c["expected"]) == set(c["computed"]) == set(c["tolerance"])
    s = data["summary"]
    assert (s["total"], s["passed"], s["failed"], s["ok"]) == (len(CASES), len(CASES), 0, True)
    assert s["standards"] == [s_.title for s_ in standards()]
    assert data["environment"]["neve"]


@pytest.mark.parametrize("name", ["asce7-16", "ASCE 7-16"])
def test_verify_one_standard(name):
    r = _verify("--standard", name, "--format", "json")
    assert r.exit_code == 0, r.output
    assert json.loads(r.stdout)["summary"]["total"] == len(get_standard(name).cases())


def test_verify_unknown_standard_exits_2():
    r = _verify("--standard", "EN 1991-1-4")
    assert r.exit_code == 2
    assert "accepted: asce7-16" in r.output


def test_verify_exits_1_when_a_case_fails(monkeypatch, tmp_path):
    monkeypatch.setitem(factors.THERMAL_TABLE_7_3_2, "greenhouse", 0.9)
    r = _verify()
    assert r.exit_code == 1
    assert "[FAIL] table-7.3-2/greenhouse " in r.stdout
    assert "1 fail." in r.stdout
    out = tmp_path / "report.json"
    r = _verify("--format", "json", "-o", out)
    assert r.exit_code == 1  # the report is written, and the exit code says it failed
    data = json.loads(out.read_text(encoding="utf-8"))
    assert data["summary"]["failed"] == 1


@pytest.mark.parametrize("fmt", ["text", "json", "html"])
def test_verify_output_file_is_refused_when_it_exists(tmp_path, fmt):
    out = tmp_path / f"manual.{fmt}"
    r = _verify("--format", fmt, "-o", out)
    assert r.exit_code == 0, r.output
    assert f"Wrote {fmt}: {out}" in r.stdout
    first = out.read_text(encoding="utf-8")
    out.write_text("precious", encoding="utf-8")
    again = _verify("--format", fmt, "-o", out)
    assert again.exit_code == 2
    assert "output:" in again.output and "--overwrite" in again.output
    assert out.read_text(encoding="utf-8") == "precious"
    assert _verify("--format", fmt, "-o", out, "--overwrite").exit_code == 0
    assert out.read_text(encoding="utf-8") != "precious"
    assert len(out.read_text(encoding="utf-8")) > 0.9 * len(first)
    assert sorted(p.name for p in tmp_path.iterdir()) == [out.name]  # no temporary left


def test_verify_html_manual_is_whole_and_offline():
    r = _verify("--format", "html")
    assert r.exit_code == 0, r.output
    html = r.stdout
    assert html.lstrip().startswith("<!DOCTYPE html>") and html.rstrip().endswith("</html>")
    for _, case in CASES:
        assert f"<h3>{case.id}</h3>" in html
    assert f"{len(CASES)} of {len(CASES)} cases pass" in html
    assert "licensed design professional" in html and "authority having jurisdiction" in html
    # nothing to fetch: no scripts, no remote references
    assert "<script" not in html.lower()
    assert not re.search(r"""(?:src|href)\s*=\s*["']?(?:https?:)?//""", html, re.I)
    assert "@import" not in html


@pytest.fixture
def hostile_standard():
    """An invented standard whose case texts are markup (test fixture only)."""
    payload = "<script>alert(1)</script><img src=x onerror=alert(2)> {{ 7*7 }} &amp;"
    case = VerificationCase(
        id=f"id {payload}",
        source=f"source {payload}",
        inputs={f"key {payload}": f"value {payload}"},
        expected={f"q {payload}": f"word {payload}"},
        tolerance=0.0,
        compute=lambda i: {f"q {payload}": f"word {payload}"},
        note=f"note {payload}",
        group=f"group {payload}",
    )
    std = dataclasses.replace(
        get_standard(), id="hostile-1", title=f"T {payload}", names=(), verification=lambda: [case],
        _cases=[],
    )  # fmt: skip
    registry.register(std)
    try:
        yield std, payload
    finally:
        registry._REGISTRY.pop("hostile-1", None)


def test_verify_html_escapes_every_text(hostile_standard):
    from neve.maps.verification import verification_html

    std, payload = hostile_standard
    report = run_verification(std)
    assert report["summary"]["ok"]
    html = verification_html(report)
    assert "<script" not in html.lower() and "<img" not in html.lower()
    escaped = payload.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    for what in ("id", "source", "key", "value", "word", "note", "group", "T"):
        assert f"{what} {escaped}" in html, what
    assert "{{ 7*7 }}" in html  # shown as typed, never compiled as a template


@pytest.mark.browser
def test_verify_manual_in_chromium_offline(tmp_path, hostile_standard):
    """The manual opens in headless Chromium with no network; hostile text stays text."""
    from tests.maps.browser import offline_page, serve
    from tests.maps.conftest import browser_or_skip

    browser_or_skip()
    std, payload = hostile_standard
    page_path = tmp_path / "manual.html"
    r = _verify("--format", "html", "-o", page_path)  # every registered standard
    assert r.exit_code == 0, r.output
    with serve(tmp_path) as base, offline_page(base, width=1200, height=1600) as (page, record):
        page.goto(f"{base}/manual.html")
        verdict = page.inner_text("#verdict")
        total = len(CASES) + 1
        assert f"{total} of {total} cases pass" in verdict
        assert page.locator("section.case").count() == total
        assert page.locator("section.case.failed").count() == 0
        # the invented hostile case reads as typed, and nothing it says became an element
        assert page.locator("img, svg, script").count() == 0
        assert f"source {payload}" in page.inner_text("body")
        page.screenshot(path=str(tmp_path / "manual.png"))
    assert record == {"blocked": [], "page_errors": [], "console_errors": [], "dialogs": []}
    assert (tmp_path / "manual.png").stat().st_size > 10_000
