"""Real browser: headless Debian Chromium through Playwright, no network.

Each page is served from 127.0.0.1 by ``http.server`` in a thread; every
other request is aborted and recorded, so an empty record proves the page
fetched nothing else.  Every name a page shows is hostile (:func:`hostile`):
site, project, address, zone id, zone note and source, layer names (two
stacked layers, so the layer switcher shows both), jurisdiction, layer
source, licence, problem messages, roof case names and the portfolio's site
id, text columns and column names.  A dialog, a page error or an element
created from that text would mean it ran; the text must read, as text,
exactly as typed (payloads: the usual HTML, attribute and template probes,
common practice in web security testing).  All data are INVENTED.
"""

from __future__ import annotations

import pytest

from tests.maps.browser import offline_page, serve
from tests.maps.conftest import browser_or_skip, make_site_json, make_view

pytestmark = pytest.mark.browser


def hostile(field: str) -> str:
    """A name that would run in the page (or in the template engine) if shown as markup."""
    return (
        f"{field} <script>alert('{field}')</script><img src=x onerror=alert('{field}')>"
        f" \"><svg onload=alert(1)> '${{alert(3)}}` {{{{ 7*7 }}}} {{% if 1 %}}T{{% endif %}} {{#"
    )


#: elements or attributes that only hostile text could have created
INJECTED = "img[src='x'], svg[onload], [onerror], [onload]"


@pytest.fixture(scope="module", autouse=True)
def _browser_available():
    browser_or_skip()


def _clean(record):
    assert record["dialogs"] == [], record["dialogs"]
    assert record["page_errors"] == [], record["page_errors"]
    assert record["console_errors"] == [], record["console_errors"]
    assert record["blocked"] == [], record["blocked"]


def _no_injected(scope):
    """No element or event attribute was created from input text (page or frame)."""
    assert scope.locator(INJECTED).count() == 0


def _rename_zone(view, old, new):
    view["zones"]["zone_id"] = view["zones"]["zone_id"].replace(old, new)


def _hostile_site_and_views():
    site = make_site_json(name=hostile("site"), project=hostile("project"))
    site["site"]["address"] = hostile("address")
    ground = site["ground"]
    ground["zone_id"], ground["zone_ids"] = hostile("zone"), [hostile("zone")]
    ground["layer"].update(
        name=hostile("layer one"), jurisdiction=hostile("jurisdiction"), source=hostile("source")
    )
    views = [
        make_view(name=hostile("layer one"), note=hostile("note"), source=hostile("zone source")),
        make_view(name=hostile("layer two")),
    ]
    views[0]["meta"].update(jurisdiction=hostile("jurisdiction"), source=hostile("source"))
    views[1]["sha256"] = "cd" * 32
    for v in views:
        _rename_zone(v, "V11", hostile("zone"))
    return site, views


def test_site_map_offline_in_chromium(tmp_path):
    from neve.maps.site_map import write_site_map

    site, views = _hostile_site_and_views()
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
        text = summary.text_content()
        for field in ("site", "project", "address", "zone", "layer one", "jurisdiction", "source"):
            assert hostile(field) in text, field  # shown as text, exactly as typed
        assert "35.0 psf (1.68 kPa)" in summary.inner_text()  # 0.1 psf, zeros kept
        assert page.locator("#neve-legend").is_visible()
        assert page.locator("#neve-demo-banner").is_visible()
        assert page.locator(".leaflet-control-scale").is_visible()
        # the layer switcher: Leaflet sets each name with innerHTML
        switcher = page.locator(".leaflet-control-layers")
        assert switcher.is_visible()
        labels = page.locator(".leaflet-control-layers-overlays label")
        assert [labels.nth(i).text_content().strip() for i in range(labels.count())] == [
            hostile("layer one") + " (governs)",
            hostile("layer two"),
        ]
        assert switcher.locator("script, img, svg").count() == 0
        # the site marker's tooltip: name and zone as plain text
        page.hover("#neve-site-marker")
        page.wait_for_selector(".leaflet-tooltip")
        tip = page.locator(".leaflet-tooltip").first.text_content()
        assert hostile("site") in tip and hostile("zone") in tip
        page.mouse.move(5, 5)
        # the governing zone's popup (clicked near its corner, away from the marker)
        governing = page.locator('.leaflet-overlay-pane svg path[stroke="#c2185b"]')
        assert governing.count() == 1
        # the panels may lie over a zone's corner: set them aside to click the zone itself
        page.evaluate("document.querySelectorAll('.neve-panel').forEach(function (e) {"
                      " e.style.display = 'none'; })")  # fmt: skip
        governing.click(position={"x": 12, "y": 12})
        page.wait_for_selector(".leaflet-popup-content")
        popup = page.locator(".leaflet-popup-content").text_content()
        for field in ("zone", "note", "zone source"):
            assert hostile(field) in popup, field
        # a neighbouring zone's popup (the study zone); dispatched on the zone itself, so
        # that the popup still open or a label over it cannot take the click
        hatched.first.dispatch_event("click")
        page.wait_for_function(
            "(document.querySelector('.leaflet-popup-content') || {textContent: ''}).textContent.includes('Zone V20')"
        )
        # the second layer switched on draws too, its names still text
        labels.nth(1).locator("input").check()
        page.wait_for_timeout(200)
        _no_injected(page)
        page.wait_for_timeout(300)
        page.screenshot(path=str(tmp_path / "site_map.png"))
        _clean(record)
    assert (tmp_path / "site_map.png").stat().st_size > 10_000


def test_layer_map_offline_in_chromium(tmp_path):
    from neve.maps.layer_map import write_layer_map

    view = make_view(name=hostile("layer"), note=hostile("note"), source=hostile("zone source"))
    view["meta"].update(
        jurisdiction=hostile("jurisdiction"), source=hostile("source"), license=hostile("licence")
    )
    _rename_zone(view, "V12", hostile("zone"))
    problems = [{"kind": "overlap", "zone_id": hostile("zone"), "message": hostile("problem")}]
    write_layer_map(view, problems, tmp_path / "layer.html", self_contained=True)
    with serve(tmp_path) as base, offline_page(base) as (page, record):
        page.goto(f"{base}/layer.html", wait_until="load")
        page.wait_for_selector(".leaflet-overlay-pane svg path")
        assert page.locator(".leaflet-overlay-pane svg path").count() == 9
        bad = page.locator('.leaflet-overlay-pane svg path[stroke="#e03131"]')
        assert bad.count() == 1
        summary = page.locator("#neve-summary").text_content()
        for field in ("layer", "jurisdiction", "source", "licence"):
            assert hostile(field) in summary, field
        problems_text = page.locator("#neve-problems").text_content()
        assert hostile("problem") in problems_text and hostile("zone") in problems_text
        bad.click()
        page.wait_for_selector(".leaflet-popup-content")
        popup = page.locator(".leaflet-popup-content").text_content()
        assert hostile("zone") in popup and hostile("problem") in popup
        _no_injected(page)
        page.screenshot(path=str(tmp_path / "layer_map.png"))
        _clean(record)


def test_portfolio_map_offline_in_chromium(tmp_path):
    import pandas as pd

    from neve.maps.portfolio import POPUP_TEXT_LIMITS as LIMITS
    from neve.maps.portfolio import write_portfolio_map

    short = "<img src=x onerror=alert(1)>{{ 7*7 }}"  # fits the shortest popup field
    df = pd.DataFrame(
        {
            "site_id": [hostile("site"), "B", "C"],
            "lat": [44.0, 44.5, 45.0],
            "lon": [-110.0, -111.0, -112.0],
            "status": ["ok", "study_required", "error"],
            "pg_psf": [35.0, float("nan"), float("nan")],
            "flags": ["", "study_required", ""],
            "message": [hostile("message"), "no mapped value", hostile("error")],
            "zone_id": [hostile("z"), "Z2", ""],
            "roof_note": [short, "", ""],
            hostile("col") + "_psf": ["1", "2", "3"],
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
        popup = page.locator(".leaflet-popup-content").text_content()
        # long text is cut with an ellipsis (a page-size limit); what is shown reads as typed
        for text, limit in ((hostile("site"), LIMITS["site_id"]), (hostile("message"),
                            LIMITS["message"]), (hostile("z"), LIMITS["zone"]), (short, LIMITS["extra"])):  # fmt: skip
            shown = text if len(text) <= limit else text[: limit - 1] + "\u2026"
            assert shown in popup, shown
        assert (hostile("col") + "_psf").replace("_", " ") in popup  # a column name as label
        _no_injected(page)
        page.screenshot(path=str(tmp_path / "portfolio.png"))
        _clean(record)


def test_report_html_offline_in_chromium(tmp_path):
    from neve.maps.package import write_package

    site, views = _hostile_site_and_views()
    for case in site["roof"]["cases"]:
        case["name"] = hostile(case["case"])
    write_package(site, views, tmp_path / "pkg")
    with serve(tmp_path / "pkg") as base, offline_page(base, height=1400) as (page, record):
        page.goto(f"{base}/report.html", wait_until="load")
        frame = page.frame_locator("iframe.site-map")
        frame.locator(".leaflet-overlay-pane svg path").first.wait_for()
        assert frame.locator(".leaflet-overlay-pane svg path").count() >= 9
        assert page.locator("h1 + .subtitle").text_content() == (
            f"{hostile('project')} \u00b7 {hostile('site')}"
        )
        body = page.locator("body").text_content()
        for field in ("address", "zone", "layer one", "jurisdiction", "source", "drift"):
            assert hostile(field) in body, field
        labels = frame.locator(".leaflet-control-layers-overlays label")
        assert labels.nth(0).text_content().strip() == hostile("layer one") + " (governs)"
        assert labels.nth(1).text_content().strip() == hostile("layer two")
        _no_injected(page)
        _no_injected(frame)
        page.locator("iframe.site-map").scroll_into_view_if_needed()
        page.wait_for_timeout(300)
        page.locator("iframe.site-map").screenshot(path=str(tmp_path / "report_map.png"))
        page.screenshot(path=str(tmp_path / "report.png"), full_page=True)
        _clean(record)
