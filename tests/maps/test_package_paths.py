"""No absolute path of the user's machine in any file of the calculation package.

The README's first command is run as written in a temporary folder; every
file of the package it writes is read as bytes (the PDF also through
``pdftotext``) and must not hold the temporary folder, the repository folder
or the home folder. Files are named by their file name only; their SHA-256
stays (common practice for a document that leaves the engineer's machine).
"""

from __future__ import annotations

import json
import os
import shlex
import shutil
import subprocess
from pathlib import Path

import pytest

from neve.maps.package import strip_machine_paths
from tests.test_readme import _setup_commands

ROOT = Path(__file__).resolve().parents[2]


def _forbidden(tmp: Path) -> list[str]:
    out = {str(tmp), str(tmp.resolve()), str(ROOT), os.path.expanduser("~")}
    return sorted(p for p in out if p not in ("", "/"))


@pytest.fixture(scope="module")
def readme_package(tmp_path_factory):
    if shutil.which("neve") is None:
        pytest.skip("the neve command is not installed")
    tmp = tmp_path_factory.mktemp("readme")
    main = _setup_commands()[0]
    args = shlex.split(main[main.index("neve site") :])
    res = subprocess.run(args, cwd=tmp, capture_output=True, text=True, timeout=300)
    assert res.returncode == 0, res.stderr
    return tmp, tmp / "calc"


def test_no_machine_path_in_any_file_of_the_package(readme_package):
    tmp, pkg = readme_package
    files = [p for p in pkg.rglob("*") if p.is_file()]
    assert {"report.html", "report.pdf", "site.json"} <= {p.name for p in files}
    for p in files:
        data = p.read_bytes()
        for bad in _forbidden(tmp):
            assert bad.encode() not in data, f"{p.name} holds {bad}"


@pytest.mark.skipif(shutil.which("pdftotext") is None, reason="pdftotext not installed")
def test_no_machine_path_in_the_pdf_text(readme_package):
    tmp, pkg = readme_package
    text = subprocess.run(
        ["pdftotext", str(pkg / "report.pdf"), "-"], capture_output=True, text=True, check=True
    ).stdout
    assert "skerrow_base.gpkg" in text  # the layer is still named, by file name
    for bad in _forbidden(tmp):
        assert bad not in text


def test_layer_named_by_file_name_with_its_sha_kept(readme_package):
    _, pkg = readme_package
    site = json.loads((pkg / "site.json").read_text(encoding="utf-8"))
    layer = site["ground"]["layer"]
    assert layer["path"] == "skerrow_base.gpkg"
    assert len(layer["sha256"]) == 64


def test_strip_machine_paths_cuts_file_keys_and_machine_paths(tmp_path):
    dem = tmp_path / "dem.tif"
    dem.write_bytes(b"x")
    got = strip_machine_paths(
        {
            "path": "/srv/jobs/client/zones.gpkg",
            "roof_file": r"C:\jobs\ROOF.toml",
            "elevation_source": str(dem),
            "name": "North shed / east",  # text, not a path: kept
            "list": [{"dem_path": "/data/x.tif"}],
            "sha256": "ab" * 32,
        }
    )
    assert got == {
        "path": "zones.gpkg",
        "roof_file": "ROOF.toml",
        "elevation_source": "dem.tif",
        "name": "North shed / east",
        "list": [{"dem_path": "x.tif"}],
        "sha256": "ab" * 32,
    }
