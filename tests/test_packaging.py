"""The wheel carries one import package, ``neve``, and every part of it (issue 9).

pyproject.toml maps the design card's folders (engine/, geo/, maps/) into the
``neve`` namespace and lists the packages explicitly, so a new sub-package that
is not listed would be missing from a non-editable install: this test fails
first.  Regression guard; the mapping itself is setuptools' ``package-dir``.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def _config() -> dict:
    return tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"][
        "setuptools"
    ]


def test_only_neve_at_the_top_level():
    cfg = _config()
    assert {p.split(".")[0] for p in cfg["packages"]} == {"neve"}
    assert all(k == "neve" or k.startswith("neve.") for k in cfg["package-dir"])


def test_every_package_folder_is_listed():
    cfg = _config()
    listed = set(cfg["packages"])
    found = set()
    for name, folder in cfg["package-dir"].items():
        base = ROOT / folder
        for init in base.rglob("__init__.py"):
            rel = init.parent.relative_to(base)
            found.add(".".join([name, *rel.parts]) if rel.parts else name)
    # a folder mapped on its own (neve.geo) is not also a sub-folder of neve/
    assert found == listed, (found - listed, listed - found)


def test_console_script_and_package_data():
    data = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    assert data["project"]["scripts"]["neve"] == "neve.cli:main"
    pkg_data = _config()["package-data"]
    assert (ROOT / "geo" / "demo" / "skerrow_base.gpkg").exists() and "neve.geo" in pkg_data
    assert (ROOT / "maps" / "templates").is_dir() and "neve.maps" in pkg_data
