"""The edition comparison page of the calculation package (``neve compare --package``).

Layers: the invented fixture grid of tests/geo/conftest.py as an ASCE 7-16 layer
(Z1 20 psf) and an ASCE 7-22 layer (Z1 26 psf); numbers hand-checked in
tests/geo/test_compare.py (ASCE 7-16 Eq. 7.3-1 and Sec. 7.3.4 from memory; ASCE
7-22 Eq. 7.3-1 confirmed in STRUCTURE magazine, Sec. 7.3.3 from memory): pg 20 ->
26 psf, design_uniform 20 -> 26 psf, ratio 1.3. Site and project names are
template and HTML syntax that must come out as text.
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.maps.compare_page import comparison_html
from neve.maps.package import strip_machine_paths
from tests.geo.conftest import fixture_rows, write_layer
from tests.geo.test_compare import AT, FLAT, TWO, _rows_722

NAME = "{{7*7}} {% raw %}<b>Barn</b> &amp; co{% endraw %}"
PROJECT = "<script>alert(1)</script> {{ config }}"


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    d = tmp_path_factory.mktemp("compare_pkg")
    a16 = write_layer(d / "a16.geojson", fixture_rows(), {"name": "grid <i>7-16</i>"})
    a22 = write_layer(d / "a22.geojson", _rows_722(),
                      {"name": "grid {{ 6*7 }} 7-22", "standard": "ASCE 7-22"})  # fmt: skip
    out = d / "pkg"
    r = CliRunner().invoke(main, [
        "compare", "--at", AT, "--layer", str(a16), "--layer", str(a22), *TWO, *FLAT,
        "--site-name", NAME, "--project", PROJECT, "--package", str(out), "--format", "json",
    ])  # fmt: skip
    assert r.exit_code == 0, r.output
    return out, json.loads(r.stdout)


def _section(html: str) -> str:
    start = html.index('<section class="comparison"')
    return html[start : html.index("</section>", start)]


def test_package_files(built):
    out, _ = built
    names = {p.name for p in out.iterdir()}
    assert {"report.html", "report.pdf", "site.json", "comparison.json"} <= names


def test_comparison_json_is_the_compare_output(built):
    out, data = built
    saved = json.loads((out / "comparison.json").read_text(encoding="utf-8"))
    # the compare output with files named by file name only (no folder of this machine)
    assert saved == strip_machine_paths(data)
    assert saved != data  # the layers were given by full path
    assert saved["site"]["name"] == NAME and saved["site"]["project"] == PROJECT
    # the package itself is the last edition's calculation package
    site = json.loads((out / "site.json").read_text(encoding="utf-8"))
    assert site["roof"]["standard"] == "ASCE 7-22"
    assert site["ground"] == strip_machine_paths(data["results"][-1]["ground"])


def test_the_page_shows_every_quantity_and_case(built):
    out, data = built
    page = _section((out / "report.html").read_text(encoding="utf-8"))
    assert "Appendix: edition comparison" in page
    for title in ("ASCE 7-16", "ASCE 7-22"):
        assert f"<th>{title}</th>" in page
    for label in ("Ground snow load pg", "Flat roof snow load pf", "Sloped roof snow load ps",
                  "Minimum roof snow load pm", "Rain-on-snow surcharge",
                  "Governing uniform load"):  # fmt: skip
        assert label in page
    for d in data["differences"]:
        if d["case"]:
            assert f"{d['case']}: {d['name']}".replace("'", "&#39;") in page
    # pg 20 -> 26 psf: difference 6 psf, ratio 1.300 (hand-checked, see module docstring)
    assert "20 psf" in page and "26 psf" in page and "6 psf" in page and "1.300" in page
    # provisions of each edition (Standard.ref / case_ref)
    assert "ASCE 7-16 Eq. 7.3-1" in page and "ASCE 7-22 Eq. 7.3-1" in page
    gov = data["governing"]["asce7-22"]
    assert gov["ref"] and gov["ref"] in page
    assert "licensed design professional" in page
    assert "only in ASCE 7-16" in page  # the balanced case with rain-on-snow (7-16 only)
    # each edition's roof flags and the cases it did not work
    from markupsafe import escape

    for r in data["results"]:
        for f in r["roof"]["flags"]:
            assert f'<span class="flag">{f}</span>' in page
        for n in r["roof"]["not_required"]:
            assert str(escape(n["reason"])) in page


def test_names_are_text_not_markup_or_template(built):
    out, _ = built
    page = _section((out / "report.html").read_text(encoding="utf-8"))
    assert "{{7*7}} {% raw %}&lt;b&gt;Barn&lt;/b&gt; &amp;amp; co{% endraw %}" in page
    assert "&lt;script&gt;alert(1)&lt;/script&gt; {{ config }}" in page
    assert "grid &lt;i&gt;7-16&lt;/i&gt;" in page and "grid {{ 6*7 }} 7-22" in page
    assert "<script" not in page and "<b>Barn" not in page and "<i>7-16" not in page
    assert not re.search(r"\b49\b|\b42\b", re.sub(r"<[^>]+>", " ", page).replace("1.2449", ""))


@pytest.mark.skipif(shutil.which("pdftotext") is None, reason="poppler-utils not installed")
def test_pdf_has_the_page_with_the_names_as_text(built):
    out, _ = built
    text = subprocess.run(["pdftotext", "-layout", str(out / "report.pdf"), "-"],
                          capture_output=True, text=True, check=True).stdout  # fmt: skip
    pages = text.split("\f")
    cmp_pages = [i for i, p in enumerate(pages) if "Appendix: edition comparison" in p]
    assert len(cmp_pages) == 1
    first = pages[cmp_pages[0]]
    assert "5 Cautions" not in first  # the comparison starts on a page of its own
    rest = "\n".join(pages[cmp_pages[0] :])
    assert "<b>Barn</b> &amp; co" in rest and "{{7*7}}" in rest and "{% raw %}" in rest
    assert "Governing" in rest and "1.300" in rest and "Cautions" in rest


def test_escaping_of_every_text_from_the_inputs():
    evil = "<img src=x onerror=alert(1)>{{7*7}}&amp;"
    data = {
        "site": {"lat": 1.0, "lon": 2.0, "name": evil, "project": evil, "input": "1,2"},
        "results": [
            {
                "standard": s,
                "title": t,
                "roof": None,
                "ground": {
                    "status": "ok",
                    "flags": [evil],
                    "zone_id": evil,
                    "layer": {"name": evil, "standard": evil},
                },
            }
            for s, t in (("a", "A"), ("b", "B"))
        ],  # fmt: skip
        "differences": [
            {
                "quantity": "pg",
                "case": None,
                "name": None,
                "values": {"a": {"psf": 10.0, "kPa": 0.4788}, "b": {"psf": 12.0, "kPa": 0.5746}},
                "difference": {"psf": 2.0, "kPa": 0.0958},
                "ratio": 1.2,
                "refs": {"a": evil, "b": evil},
            },
            {
                "quantity": "pd",
                "case": "drift",
                "name": evil,
                "values": {"a": None, "b": {"psf": 5.0, "kPa": 0.2394}},
                "difference": None,
                "ratio": None,
                "refs": {"a": "", "b": evil},
            },
        ],  # fmt: skip
        "governing": {"a": None, "b": None},
        "cautions": [evil],
    }
    html = comparison_html(data)
    assert "<img" not in html
    assert html.count("&lt;img src=x onerror=alert(1)&gt;{{7*7}}&amp;amp;") >= 7
    assert "1.200" in html and "only in B" in html


def test_an_existing_folder_is_refused_before_any_work(tmp_path):
    out = tmp_path / "pkg"
    out.mkdir()
    (out / "keep.txt").write_text("mine", encoding="utf-8")
    r = CliRunner().invoke(main, ["compare", "--at", AT, *TWO, *FLAT, "--package", str(out)])
    assert r.exit_code == 2, r.output
    assert "package" in r.stderr
    assert [p.name for p in out.iterdir()] == ["keep.txt"]
