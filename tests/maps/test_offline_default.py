"""Every map page works offline by default (issue 11); ``--cdn`` opts into linked scripts.

A page written with neve's defaults carries Leaflet, jQuery, Leaflet.markercluster and
Font Awesome inline, so it references no other host; ``--cdn`` gives the smaller page
that links them.  Every page shows a message when its scripts do not load, and hides
it once the map library has drawn the map.  All data are INVENTED (the Skerrow Island
demo layers and the fixtures of tests/maps/conftest.py).
"""

from __future__ import annotations

import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.maps.assets import remote_references
from tests.maps.conftest import browser_or_skip, make_view

#: the README's first map command (README.md, "Maps and the calculation package"),
#: without the package (another page, written by its own code)
README_SITE = ["site", "--at", "47.52,-140.05", "--dem", "demo", "--shape", "gable",
               "--slope", "6:12", "--eave-to-ridge", "30ft", "--project", "Skerrow depot",
               "--site-name", "Hall B"]  # fmt: skip

NOLOAD_TEXT = "scripts did not load"


def _site_map(tmp_path, *extra, name="site.html"):
    out = tmp_path / name
    res = CliRunner().invoke(main, [*README_SITE, "--map", str(out), *extra])
    assert res.exit_code == 0, res.output
    return out


def _portfolio(tmp_path, **kw):
    from neve.maps.portfolio import write_portfolio_map

    df = pd.DataFrame(
        {"site_id": ["A", "B"], "lat": [44.0, 44.5], "lon": [-110.0, -111.0],
         "status": ["ok", "study_required"], "pg_psf": [35.0, float("nan")],
         "flags": ["", "study_required"], "message": ["", "no mapped value"],
         "zone_id": ["Z1", "Z2"]}  # fmt: skip
    )
    return write_portfolio_map(df, tmp_path / "p.html", demo=True, **kw).read_text("utf-8")


def test_site_map_default_inlines_everything_and_cdn_links(tmp_path):
    default = _site_map(tmp_path).read_text("utf-8")
    assert remote_references(default) == []
    assert "L.map" in default or "L.Map" in default  # Leaflet's code is in the page itself
    assert NOLOAD_TEXT in default
    # the old flag stays accepted and gives the same kind of page
    kept = _site_map(tmp_path, "--self-contained", name="kept.html").read_text("utf-8")
    assert remote_references(kept) == []
    cdn = _site_map(tmp_path, "--cdn", name="cdn.html").read_text("utf-8")
    remote = remote_references(cdn)
    assert any(r.startswith("<script") for r in remote), remote
    assert any(r.startswith("<link") for r in remote), remote
    assert "leaflet" in cdn.lower() and NOLOAD_TEXT in cdn
    # the demo basemap's tiles are data, embedded either way; the scripts make the difference
    assert default.count("data:image/png;base64,") >= cdn.count("data:image/png;base64,") > 100
    bare = _site_map(tmp_path, "--basemap", "none", name="bare.html").read_text("utf-8")
    bare_cdn = _site_map(tmp_path, "--basemap", "none", "--cdn", name="bare_cdn.html")
    assert len(bare_cdn.read_text("utf-8")) < len(bare) / 4  # the smaller page


def test_layer_and_portfolio_maps_default_offline(tmp_path):
    from neve.maps.layer_map import write_layer_map

    layer = write_layer_map(make_view(), [], tmp_path / "layer.html").read_text("utf-8")
    assert remote_references(layer) == [] and NOLOAD_TEXT in layer
    linked = write_layer_map(make_view(), [], tmp_path / "l2.html", self_contained=False)
    assert remote_references(linked.read_text("utf-8")) != []
    portfolio = _portfolio(tmp_path)
    assert remote_references(portfolio) == [] and NOLOAD_TEXT in portfolio
    # markercluster is inlined too: its code, not a link
    assert "MarkerClusterGroup" in portfolio


def test_cdn_flag_on_every_map_command():
    for path in (["site"], ["screen"], ["layer", "show"]):
        res = CliRunner().invoke(main, [*path, "--help"])
        assert res.exit_code == 0, res.output
        assert "--self-contained / --cdn" in res.output, path


# --- headless Chromium, every request outside the page's own folder aborted -----------------


@pytest.fixture()
def _browser():
    browser_or_skip()


@pytest.mark.browser
def test_readme_site_map_draws_offline_and_hides_the_message(tmp_path, _browser):
    from tests.maps.browser import offline_page

    page_path = _site_map(tmp_path)
    base = f"file://{tmp_path}"
    with offline_page(base) as (page, record):
        page.goto(f"{base}/site.html", wait_until="load")
        page.wait_for_selector(".leaflet-overlay-pane svg path")
        assert page.locator(".leaflet-overlay-pane svg path").count() >= 2  # the zones
        assert page.locator("#neve-site-marker").is_visible()  # the site
        assert page.locator("#neve-summary").is_visible()
        page.wait_for_function(
            "getComputedStyle(document.getElementById('neve-noload')).display === 'none'"
        )
        assert page.locator("#neve-noload").is_hidden()
        assert record["page_errors"] == [], record["page_errors"]
        assert record["console_errors"] == [], record["console_errors"]
        assert record["blocked"] == [], record["blocked"]  # fetched nothing outside its folder
    assert page_path.stat().st_size > 100_000


@pytest.mark.browser
def test_cdn_page_without_internet_shows_the_message(tmp_path, _browser):
    from tests.maps.browser import offline_page

    _site_map(tmp_path, "--cdn", name="cdn.html")
    base = f"file://{tmp_path}"
    with offline_page(base) as (page, record):
        page.goto(f"{base}/cdn.html", wait_until="load")
        box = page.locator("#neve-noload")
        assert box.is_visible()
        text = box.inner_text()
        assert NOLOAD_TEXT in text and "--cdn" in text
        assert record["blocked"], "the --cdn page should have asked for its scripts"
        assert page.locator(".leaflet-container").count() == 0
