"""The calculation package: whole-or-nothing folder, self-contained HTML, PDF pages."""

from __future__ import annotations

import json
import shutil
import subprocess

import pytest

from neve.engine.errors import InputError
from neve.maps import assets, package
from neve.maps.package import write_package
from tests.maps.conftest import HOSTILE, make_site_json, make_view

RAW_HOSTILE = ("<script>alert", "<img src=x", "onerror=alert(2)>")


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    root = tmp_path_factory.mktemp("pkg")
    site = make_site_json(name="Varda depot", project="Fixture project 7")
    files = write_package(site, [make_view()], root / "package", site_name="Varda depot (east)")
    return root, files


@pytest.fixture(scope="module")
def hostile(tmp_path_factory):
    root = tmp_path_factory.mktemp("hostile")
    site = make_site_json(name=HOSTILE, project=HOSTILE)
    site["ground"]["layer"]["source"] = HOSTILE
    files = write_package(site, [make_view(note=HOSTILE, source=HOSTILE)], root / "package")
    return root, files


def test_package_files(built):
    root, files = built
    names = {p.name for p in (root / "package").iterdir()}
    assert {"report.html", "report.pdf", "site.json", "site_map.html", "static_map.png",
            "static_map.svg", "diagrams"} <= names  # fmt: skip
    assert all(p.exists() for p in files.values())
    assert {k for k in files if k.startswith("diagram:")} == {
        "diagram:unbalanced (wind across ridge)", "diagram:drift at high bay"}  # fmt: skip
    # nothing but the package next to it: the build folder was renamed into place
    assert [p.name for p in root.iterdir()] == ["package"]


def test_site_json_carries_the_overrides(built):
    _, files = built
    data = json.loads(files["site_json"].read_text(encoding="utf-8"))
    assert data["site"]["name"] == "Varda depot (east)"
    assert data["site"]["project"] == "Fixture project 7"
    assert data["ground"]["pg"] == {"psf": 35.0, "kPa": 1.6758}


def test_each_diagram_follows_its_case_heading(built):
    """Sketch, then values, then steps: the figure comes right under the case's heading."""
    import re

    _, files = built
    html = files["report_html"].read_text(encoding="utf-8")
    for name in ("unbalanced (wind across ridge)", "drift at high bay"):
        m = re.search(r"<h3>4\.\d+ [a-z_]+: " + re.escape(name) + r"</h3>\s*(?:\{#.*?#\}\s*)?"
                      r'<figure class="diagram"><img src="data:image/png;base64,', html)  # fmt: skip
        assert m, name
    assert html.count('<figure class="diagram">') == 2  # balanced and the unknown case: none


def test_report_html_is_self_contained(built):
    _, files = built
    html = files["report_html"].read_text(encoding="utf-8")
    assert assets.remote_references(html) == []
    assert '<link rel="stylesheet"' not in html
    assert html.count("data:image/png;base64,") >= 3  # static map + two diagrams
    assert 'class="site-map"' in html and "srcdoc=" in html
    for heading in ("Design criteria", "Ground snow load", "Roof snow load cases", "Summary",
                    "Cautions", "Provenance of the zone layer"):  # fmt: skip
        assert heading in html
    assert "ASCE 7-16 Eq. 7.3-1" in html and "0.7 x 1 x 1.1 x 1 x 35" in html
    assert "future case" in html  # an unknown case is still reported, generically
    assert "Risk category</th><td>II" in html and "40 ft (12.19 m)" in html
    assert "invented reason for the fixture" in html


def _pdf_pages(path):
    from pypdf import PdfReader

    return [page.extract_text() for page in PdfReader(str(path)).pages]


def test_pdf_has_pages_headers_and_the_governing_values(built):
    _, files = built
    pages = _pdf_pages(files["report_pdf"])
    assert len(pages) >= 3
    for i, text in enumerate(pages, start=1):
        flat = " ".join(text.split())
        # the title block at the foot of every page: sheet i of N
        assert "SHEET" in flat.upper() and f"{i} of {len(pages)}" in flat
        assert "Fixture project 7" in flat and "Varda depot (east)" in flat  # running header
    everything = " ".join(" ".join(pages).split())
    # the governing values as the report prints them (fixture: pg 35 psf, design 26.95 psf):
    # loads to 0.1 psf and 0.01 kPa, zeros kept (issue 11)
    assert "35.0 psf (1.68 kPa)" in everything
    assert "26.9 psf (1.29 kPa)" in everything
    assert "DEMO DATA" in everything.upper()
    assert "licensed design professional" in everything
    assert "authority having jurisdiction" in everything


@pytest.mark.skipif(shutil.which("pdftotext") is None, reason="poppler-utils not installed")
def test_pdf_text_with_poppler(built):
    _, files = built
    text = subprocess.run(["pdftotext", "-layout", str(files["report_pdf"]), "-"],
                          capture_output=True, text=True, check=True).stdout  # fmt: skip
    assert "35.0 psf (1.68 kPa)" in text  # 0.1 psf, 0.01 kPa, zeros kept (issue 11)
    assert "site-specific case study" in text


def test_hostile_text_in_the_report(hostile):
    _, files = hostile
    html = files["report_html"].read_text(encoding="utf-8")
    for raw in RAW_HOSTILE:
        assert raw not in html
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    text = " ".join(" ".join(_pdf_pages(files["report_pdf"])).split())
    assert "<script>alert(1)</script>" in text  # printed literally in the PDF


def test_existing_package_is_not_overwritten_unless_asked(tmp_path):
    dest = tmp_path / "pkg"
    dest.mkdir()
    (dest / "keep.txt").write_text("old")
    with pytest.raises(InputError, match="package"):
        write_package(make_site_json(roof=False), [make_view()], dest)
    assert (dest / "keep.txt").exists()
    # a folder of the user's own files is never replaced, even with overwrite
    with pytest.raises(InputError, match="not a neve package"):
        write_package(make_site_json(roof=False), [make_view()], dest, overwrite=True)
    assert (dest / "keep.txt").exists()
    # a previous package is replaced only with overwrite
    other = tmp_path / "pkg2"
    write_package(make_site_json(roof=False), [make_view()], other)
    (other / "stale.txt").write_text("from the old package")
    with pytest.raises(InputError, match="package"):
        write_package(make_site_json(roof=False), [make_view()], other)
    write_package(make_site_json(roof=False), [make_view()], other, overwrite=True)
    assert not (other / "stale.txt").exists() and (other / "report.pdf").exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["pkg", "pkg2"]


def test_failed_build_leaves_nothing(tmp_path, monkeypatch):
    def broken(*args, **kwargs):
        raise RuntimeError("disk full (simulated)")

    monkeypatch.setattr(package, "write_static_map", broken)
    with pytest.raises(RuntimeError, match="simulated"):
        write_package(make_site_json(), [make_view()], tmp_path / "pkg")
    assert list(tmp_path.iterdir()) == []


def test_a_file_in_the_way_is_an_input_error(tmp_path):
    (tmp_path / "pkg").write_text("x")
    with pytest.raises(InputError, match="package"):
        write_package(make_site_json(), [make_view()], tmp_path / "pkg")


# --- the title block (issue 11) -------------------------------------------------------

TB_HOSTILE = {
    "--job": "{{7*7}}",
    "--prepared-by": "{% raw %}",
    "--checked-by": "<b>x</b>",
    "--revision": "&amp;",
}


def _site_package(tmp_path, *extra):
    from click.testing import CliRunner

    from neve.cli import main

    out = tmp_path / "pkg"
    r = CliRunner().invoke(main, [
        "site", "--at", "47.52,-140.05", "--elevation", "450m", "--shape", "gable",
        "--slope", "6:12", "--eave-to-ridge", "30ft", "--site-name", "North shed",
        "--project", "Skerrow demo (invented)", "--package", str(out), *extra,
    ])  # fmt: skip
    assert r.exit_code == 0, r.output
    return out


def _title_block(html: str) -> str:
    start = html.index('<table class="titleblock"')
    return html[start : html.index("</table>", start)]


def test_title_block_fields_empty_but_present(tmp_path):
    tb = _title_block((_site_package(tmp_path) / "report.html").read_text(encoding="utf-8"))
    for label in ("Project", "Job no.", "Site", "Date", "Prepared by", "Checked by",
                  "Revision", "Sheet", "Seal"):  # fmt: skip
        assert f'<span class="tb-label">{label}</span>' in tb, label
    assert '<span class="tb-label">Job no.</span></td>' in tb  # not given: an empty field
    assert '<span class="tb-label">Checked by</span></td>' in tb
    assert "Skerrow demo (invented)" in tb and "North shed" in tb


@pytest.mark.skipif(shutil.which("pdftotext") is None, reason="poppler-utils not installed")
def test_title_block_hostile_text_stays_literal(tmp_path):
    args = [a for kv in TB_HOSTILE.items() for a in kv]
    out = _site_package(tmp_path, *args)
    tb = _title_block((out / "report.html").read_text(encoding="utf-8"))
    assert "{{7*7}}" in tb and "49" not in tb.replace("2026", "")  # not run as a template
    assert "{% raw %}" in tb
    assert "&lt;b&gt;x&lt;/b&gt;" in tb and "<b>x</b>" not in tb  # escaped, not markup
    assert "&amp;amp;" in tb  # the text "&amp;" itself, escaped once
    text = subprocess.run(["pdftotext", str(out / "report.pdf"), "-"], capture_output=True,
                          text=True, check=True).stdout  # fmt: skip
    pages = text.split("\f")[:-1] if text.endswith("\f") else text.split("\f")
    assert len(pages) >= 3
    for i, page in enumerate(pages, start=1):  # on every page, literally
        for value in TB_HOSTILE.values():
            assert value in page, (i, value)
        assert f"{i} of {len(pages)}" in page
