"""Real browser: headless Debian Chromium through Playwright, no network.

Each page is served from 127.0.0.1 by ``http.server`` in a thread; every
other request is aborted and recorded, so an empty record proves the page
fetched nothing else.  Hostile text sits in the site name, project, a zone
note, the layer source and a problem message; a dialog would mean it ran.
"""

from __future__ import annotations

import pytest

from tests.maps.browser import offline_page, serve
from tests.maps.conftest import HOSTILE, browser_or_skip, make_site_json, make_view

pytestmark = pytest.mark.browser

LITERAL = "<script>alert(1)</script><img src=x onerror=alert(2)>"


@pytest.fixture(scope="module", autouse=True)
def _browser_available():
    browser_or_skip()


def _clean(record):
    assert record["dialogs"] == [], record["dialogs"]
    assert record["page_errors"] == [], record["page_errors"]
    assert record["console_errors"] == [], record["console_errors"]
    assert record["blocked"] == [], record["blocked"]


def test_site_map_offline_in_chromium(tmp_path):
    from maps.site_map import write_site_map

    site = make_site_json(name=HOSTILE, project=HOSTILE)
    views = [make_view(note=HOSTILE, source=HOSTILE), make_view(name="second layer")]
    views[1]["sha256"] = "cd" * 32
    write_site_map(site, views, tmp_path / "site.html", self_contained=True)
    with serve(tmp_path) as base, offline_page(base) as (page, record):
        page.goto(f"{base}/site.html", wait_until="load")
        page.wait_for_selector(".leaflet-overlay-pane svg path")
        paths = page.locator(".leaflet-overlay-pane svg path")
        assert paths.count() >= 9  # the nine fixture zones of the governing layer
        hatched = page.locator('.leaflet-overlay-pane svg path[fill="url(#neve-hatch)"]')
        assert hatched.count() == 1  # the one study zone, drawn with the pattern
        assert page.locator("#neve-site-marker").is_visible()
        summary = page.locator("#neve-summary")
        assert summary.is_visible()
        assert LITERAL in summary.inner_text()  # hostile name shown as text
        assert "35 psf (1.68 kPa)" in summary.inner_text()
        assert page.locator("#neve-legend").is_visible()
        assert page.locator("#neve-demo-banner").is_visible()
        assert page.locator(".leaflet-control-scale").is_visible()
        assert page.locator(".leaflet-control-layers").is_visible()
        # the governing zone's tooltip carries the hostile note as plain text
        page.hover("#neve-site-marker")
        page.wait_for_selector(".leaflet-tooltip")
        assert LITERAL in page.locator(".leaflet-tooltip").first.inner_text()
        # open a zone popup (click the study zone, away from the marker)
        hatched.first.click()
        page.wait_for_selector(".leaflet-popup-content")
        assert "Zone V20" in page.locator(".leaflet-popup-content").inner_text()
        assert LITERAL in page.locator(".leaflet-popup-content").inner_text()
        page.wait_for_timeout(300)
        page.screenshot(path=str(tmp_path / "site_map.png"))
        _clean(record)
    assert (tmp_path / "site_map.png").stat().st_size > 10_000


def test_layer_map_offline_in_chromium(tmp_path):
    from maps.layer_map import write_layer_map

    problems = [{"kind": "overlap", "zone_id": "V12", "message": HOSTILE}]
    write_layer_map(
        make_view(source=HOSTILE), problems, tmp_path / "layer.html", self_contained=True
    )
    with serve(tmp_path) as base, offline_page(base) as (page, record):
        page.goto(f"{base}/layer.html", wait_until="load")
        page.wait_for_selector(".leaflet-overlay-pane svg path")
        assert page.locator(".leaflet-overlay-pane svg path").count() == 9
        assert page.locator('.leaflet-overlay-pane svg path[stroke="#e03131"]').count() == 1
        assert LITERAL in page.locator("#neve-problems").inner_text()
        page.screenshot(path=str(tmp_path / "layer_map.png"))
        _clean(record)


def test_portfolio_map_offline_in_chromium(tmp_path):
    import pandas as pd

    from maps.portfolio import write_portfolio_map

    df = pd.DataFrame(
        {
            "site_id": [HOSTILE, "B", "C"],
            "lat": [44.0, 44.5, 45.0],
            "lon": [-110.0, -111.0, -112.0],
            "status": ["ok", "study_required", "error"],
            "pg_psf": [35.0, float("nan"), float("nan")],
            "flags": ["", "study_required", ""],
            "message": ["fine", "no mapped value", HOSTILE],
            "zone_id": ["Z1", "Z2", ""],
        }
    )
    write_portfolio_map(df, tmp_path / "p.html", demo=True, self_contained=True)
    with serve(tmp_path) as base, offline_page(base) as (page, record):
        page.goto(f"{base}/p.html", wait_until="load")
        page.wait_for_selector(".neve-pt")
        assert page.locator(".neve-pt-study_required").count() >= 1
        assert page.locator(".leaflet-marker-pane .neve-pt-error").count() == 1
        page.locator(".leaflet-marker-pane .neve-pt-ok").first.click()
        page.wait_for_selector(".leaflet-popup-content")
        assert LITERAL in page.locator(".leaflet-popup-content").inner_text()
        page.screenshot(path=str(tmp_path / "portfolio.png"))
        _clean(record)


def test_report_html_offline_in_chromium(tmp_path):
    from maps.package import write_package

    site = make_site_json(name=HOSTILE, project=HOSTILE)
    write_package(site, [make_view(note=HOSTILE)], tmp_path / "pkg")
    with serve(tmp_path / "pkg") as base, offline_page(base, height=1400) as (page, record):
        page.goto(f"{base}/report.html", wait_until="load")
        frame = page.frame_locator("iframe.site-map")
        frame.locator(".leaflet-overlay-pane svg path").first.wait_for()
        assert frame.locator(".leaflet-overlay-pane svg path").count() >= 9
        assert LITERAL in page.locator("h1 + .subtitle").inner_text()
        page.locator("iframe.site-map").scroll_into_view_if_needed()
        page.wait_for_timeout(300)
        page.locator("iframe.site-map").screenshot(path=str(tmp_path / "report_map.png"))
        page.screenshot(path=str(tmp_path / "report.png"), full_page=True)
        _clean(record)
