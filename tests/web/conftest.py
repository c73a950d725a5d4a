"""Fixtures of the neve serve tests: a configured application and a test client.

Inputs are the embedded demo data (the invented Skerrow Island, ``demo = true``).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

pytest.importorskip("fastapi")

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "geo" / "demo"

#: a site on the invented demo island (its zone maps pg by elevation)
DEMO_AT = "47.52,-140.05"

#: hostile text: template syntax of Jinja, JavaScript and shells, HTML and a formula
HOSTILE = "{{ 7*7 }} {% if 1 %}x{% endif %} ${7*7} <script>alert(1)</script> <b>b</b> =1+1"


def make_client(tmp_path, **config_kw):
    from fastapi.testclient import TestClient

    from neve.web.app import create_app
    from neve.web.config import load_config

    config = load_config(workdir=tmp_path / "work", **config_kw)
    return TestClient(create_app(config), raise_server_exceptions=False)


@pytest.fixture
def client(tmp_path):
    with make_client(tmp_path) as c:
        yield c


@pytest.fixture
def layers_dir(tmp_path):
    """A folder holding copies of the two demo layers of ASCE 7-16 (with their sidecars)."""
    folder = tmp_path / "layers"
    folder.mkdir()
    for name in ("port_hallin_amendment.geojson", "skerrow_base.gpkg"):
        for suffix in ("", ".toml"):
            shutil.copy(DEMO / (name + suffix), folder / (name + suffix))
    return folder


def sites_csv(n: int, hostile: bool = False) -> str:
    """``n`` invented sites on and around the demo island (site_id, lat, lon, note)."""
    rows = ["site_id,lat,lon,note"]
    for i in range(n):
        note = HOSTILE.replace(",", ";") if hostile and i == 0 else f"row {i}"
        rows.append(f"s{i},{47.40 + (i % 50) * 0.004:.5f},{-140.30 + (i // 50) * 0.02:.5f},{note}")
    return "\n".join(rows) + "\n"
