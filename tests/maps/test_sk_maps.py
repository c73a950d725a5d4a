"""Maps and the calculation package of an EN 1991-1-3 site (an sk layer): kPa first.

The site and its layer come through neve.geo (the test may use it; neve.maps
never does) on the invented fixture of tests/geo/sk_fixture.py.  EN clause
labels come from the engine's steps ("EN 1991-1-3 Eq. 5.1", "5.3.2, Table 5.2").
"""

from __future__ import annotations

import shutil
import subprocess

import pytest

from neve.engine.roof_spec import as_roof
from neve.geo.layers.model import load_layer
from neve.geo.site.one import resolve_site
from neve.maps import leaflet, style
from neve.maps.package import write_package
from neve.maps.site_map import summary_context, write_site_map
from neve.maps.static import write_static_map
from tests.geo.sk_fixture import centre, sk_rows, write_sk_layer

HOSTILE = "{{ 7*7 }} {% if 1 %}x{% endif %} ${7*7} <script>alert(1)</script>"


@pytest.fixture(scope="module")
def sk_site(tmp_path_factory):
    """(site JSON, views) of a site in K4 (table, 500 m: sk = 2.0 kPa) with a flat roof."""
    folder = tmp_path_factory.mktemp("skmaps")
    path = write_sk_layer(folder / "sk.gpkg", sk_rows(note=HOSTILE))
    res = resolve_site(*centre(0, 1), layers=[path], elevation="500m",
                       roof=as_roof({"shape": "flat"}), name="Fixture hall")  # fmt: skip
    return res.to_json(), res.views(), folder


def test_view_labels_are_kpa(tmp_path):
    rows = sk_rows()
    rows[0]["sk"] = 20.0  # an sk layer mapped in psf: labelled in kPa all the same
    view = load_layer(write_sk_layer(tmp_path / "psf.gpkg", rows, value_units="psf")).view()
    z = view["zones"].set_index("zone_id")
    units = view["value_units"]
    assert units == "kPa"
    assert leaflet.zone_label_text(z.loc["K1"].to_dict() | {"zone_id": "K1"}, units) == (
        "K1 \u00b7 0.96 kPa"  # 20 psf x 0.0478803 kPa/psf (NIST SP 811)
    )
    assert leaflet.zone_label_text(z.loc["K4"].to_dict() | {"zone_id": "K4"}, units) == (
        "K4 \u00b7 0.05\u20130.14 kPa by elevation"  # the table's 1 and 3 psf in kPa
    )
    assert leaflet.zone_label_text(z.loc["K5"].to_dict() | {"zone_id": "K5"}, units) == (
        "K5 \u00b7 \u2265 0.05 kPa by elevation"  # the floor sk_min, 1 psf in kPa
    )


def test_summary_panel_names_sk_kpa_first(sk_site):
    data, _, _ = sk_site
    ctx = summary_context(data)
    assert ctx["quantity"] == "sk" and ctx["symbol"] == ("s", "k")
    assert ctx["pg"] == "2.00 kPa (41.8 psf)"
    assert ctx["elevation"].startswith("500 m (")
    assert ctx["roof"] == "1.6 kPa (33.4 psf)"  # EN 1991-1-3 Eq. 5.1: 0.8 x 2.0 kPa


def test_site_map_of_an_sk_site(sk_site, tmp_path):
    data, views, _ = sk_site
    html = write_site_map(data, views, tmp_path / "site.html").read_text(encoding="utf-8")
    assert "Ground load s<sub>k</sub>" in html
    assert "Ground snow load sk [kPa]" in html
    assert "K1 \\u00b7 0.85 kPa" in html  # the zone labels (JSON-escaped in the page)
    assert "K4 \\u00b7 1\\u20133 kPa by elevation" in html
    assert "zone K1: 0.85 kPa (17.8 psf) at" in html  # the neighbours, kPa first
    assert "<script>alert(1)</script>" not in html  # the hostile note, escaped
    assert "49 x" not in html and "49 ${" not in html


def test_static_map_of_an_sk_site(sk_site, tmp_path):
    data, views, _ = sk_site
    png, svg = write_static_map(data, views, tmp_path / "s.png", tmp_path / "s.svg")
    text = svg.read_text(encoding="utf-8")
    assert png.stat().st_size > 10_000
    assert "Ground snow load sk [kPa]" in text
    assert "site: sk = 2 kPa (41.8 psf)" in text


def test_portfolio_band_labels_in_kpa():
    labels = style.band_labels_kpa()
    assert len(labels) == len(style.PORTFOLIO_BANDS_PSF)
    assert labels[2] == "0.96 to under 1.44 kPa (20 to under 30 psf)"  # 20 and 30 psf in kPa


@pytest.mark.skipif(shutil.which("pdftotext") is None, reason="poppler-utils not installed")
def test_package_shows_sk_and_en_references(sk_site):
    data, views, folder = sk_site
    files = write_package(data, views, folder / "package")
    html = files["report_html"].read_text(encoding="utf-8")
    assert "Ground snow load s<sub>k</sub>" in html
    assert "2.00 kPa (41.8 psf)" in html  # kPa first
    assert "EN 1991-1-3 Eq. 5.1" in html and "EN 1991-1-3 5.2(7), Table 5.1" in html
    assert "larger of ps + rain-on-snow and pm" not in html  # no ASCE wording for EN
    assert "<th>Is</th>" not in html and "<th>Cs</th>" not in html
    assert "<script>alert(1)</script>" not in html
    pdf = subprocess.run(["pdftotext", "-layout", str(files["report_pdf"]), "-"],
                         capture_output=True, text=True, check=True).stdout  # fmt: skip
    assert "2.00 kPa (41.8 psf)" in pdf
    assert "EN 1991-1-3" in pdf
    assert "Standard(id=" not in pdf
