"""The package echoes its inputs (issue 11): the command line, the ROOF.toml and the layers
with their SHA-256, with file names only, never a folder of the machine.

Invented data: the Skerrow demo layers and an invented ROOF.toml.
"""

from __future__ import annotations

import hashlib

from click.testing import CliRunner

from neve.cli import main

ROOF = """# invented roof for the test (demo = true)
shape = "gable"
slope = "6:12"
eave_to_ridge = "30ft"
"""
HOSTILE = "Hall {{ 7*7 }} <b>x</b> {% raw %}"


def test_command_roof_file_and_layers_are_echoed_without_folders(tmp_path):
    folder = tmp_path / "client-secret-folder"
    folder.mkdir()
    roof = folder / "hall_roof.toml"
    roof.write_text(ROOF, encoding="utf-8")
    out = folder / "calc"
    res = CliRunner().invoke(main, [
        "site", "--at", "47.52,-140.05", "--dem", "demo", "--roof", str(roof),
        "--site-name", HOSTILE, "--package", str(out),
    ])  # fmt: skip
    assert res.exit_code == 0, res.output
    html = (out / "report.html").read_text("utf-8")
    # the command as run, the ROOF.toml by its file name, shell-quoted, escaped
    assert "neve site --at 47.52,-140.05 --dem demo --roof hall_roof.toml" in html
    assert "--site-name &#39;Hall {{ 7*7 }} &lt;b&gt;x&lt;/b&gt; {% raw %}&#39;" in html
    assert "--package calc" in html
    assert 'eave_to_ridge = &#34;30ft&#34;' in html or 'eave_to_ridge = "30ft"' in html
    assert "# invented roof for the test" in html
    # every layer used, with its SHA-256 (the demo stack: two layers)
    from neve.geo.layers.model import DEMO_DIR, DEMO_LAYER_FILES

    for name in DEMO_LAYER_FILES:
        digest = hashlib.sha256((DEMO_DIR / name).read_bytes()).hexdigest()
        assert digest in html, name
    # no folder of the machine in any file of the package
    for path in out.rglob("*"):
        if path.is_file():
            data = path.read_bytes()
            assert str(folder).encode() not in data, path.name
            assert b"client-secret-folder" not in data, path.name
    from pypdf import PdfReader

    text = " ".join(" ".join(p.extract_text() for p in PdfReader(str(out / "report.pdf")).pages).split())
    assert "--roof hall_roof.toml" in text
    assert "Layers used" in text


def test_package_from_python_says_the_command_is_not_recorded(tmp_path):
    from neve.maps.package import write_package
    from tests.maps.conftest import make_site_json, make_view

    write_package(make_site_json(), [make_view()], tmp_path / "pkg")
    html = (tmp_path / "pkg" / "report.html").read_text("utf-8")
    assert "not recorded (written from Python)" in html
