"""The portfolio map as a reader meets it (issue 11): zones under the sites, clusters only
where they help, study-required and error sites always on their own, rounded popups.

Invented data only: the demo sites of ``examples/roofs_on_record.csv`` (Skerrow Island)
and generated points.
"""

from __future__ import annotations

import re
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.maps.portfolio import CLUSTER_ABOVE, write_portfolio_map
from tests.maps.conftest import browser_or_skip

ROOT = Path(__file__).resolve().parents[2]


def _sites(n: int, study: int = 3, error: int = 2) -> pd.DataFrame:
    rng = np.random.default_rng(7)
    status = ["ok"] * (n - study - error) + ["study_required"] * study + ["error"] * error
    return pd.DataFrame(
        {
            "site_id": [f"S{i}" for i in range(n)],
            "lat": 44.0 + rng.random(n) * 0.05,  # close together: clusters if clustering
            "lon": -110.0 + rng.random(n) * 0.05,
            "status": status,
            "pg_psf": [31.234567] * (n - study - error) + [float("nan")] * (study + error),
            "flags": [""] * (n - study - error) + ["study_required"] * study + [""] * error,
            "message": [""] * n,
            "zone_id": ["Z1"] * n,
        }
    )


def _open(path, fn):
    browser_or_skip()
    from tests.maps.browser import offline_page, serve

    with serve(path.parent) as url, offline_page(url) as (page, record):
        page.goto(f"{url}/{path.name}", wait_until="load")
        page.wait_for_selector(".neve-pt")
        out = fn(page)
        assert record["page_errors"] == [] and record["blocked"] == []
        return out


def test_fifty_sites_are_not_clustered(tmp_path):
    out = write_portfolio_map(_sites(50), tmp_path / "p.html", basemap="none")

    def look(page):
        return (page.locator(".leaflet-marker-pane .neve-cluster").count()
                + page.locator("#neve-summary .neve-cluster").count(),
                page.locator(".leaflet-marker-pane .neve-pt").count())  # fmt: skip

    clusters, points = _open(out, look)
    assert clusters == 0 and points == 50


def test_many_sites_cluster_but_study_and_error_sites_always_show(tmp_path):
    n = CLUSTER_ABOVE + 500
    out = write_portfolio_map(_sites(n, study=4, error=3), tmp_path / "p.html", basemap="none")

    def look(page):
        page.wait_for_selector(".leaflet-marker-pane .neve-cluster")
        assert page.locator("#neve-summary .neve-cluster").count() == 1  # explained
        return (page.locator(".leaflet-marker-pane .neve-cluster").count(),
                page.locator(".leaflet-marker-pane .neve-pt-study_required").count(),
                page.locator(".leaflet-marker-pane .neve-pt-error").count(),
                page.locator(".leaflet-marker-pane .neve-pt").count())  # fmt: skip

    clusters, study, error, points = _open(out, look)
    assert clusters >= 1 and study == 4 and error == 3
    assert points < n / 2  # the ok sites are inside clusters


def test_screen_map_draws_the_zones_under_the_sites_and_rounds_the_popups(tmp_path):
    out = tmp_path / "port.html"
    res = CliRunner().invoke(main, [
        "screen", str(ROOT / "examples" / "roofs_on_record.csv"), "-o", str(tmp_path / "r.csv"),
        "--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "30ft", "--map", str(out),
    ])  # fmt: skip
    assert res.exit_code == 0, res.output
    html = out.read_text("utf-8")
    assert "zones: Skerrow Island ground snow load map (DEMO)" in html

    def look(page):
        zones = page.locator(".leaflet-overlay-pane svg path").count()
        page.locator(".leaflet-marker-pane .neve-pt-ok").first.click()
        page.wait_for_selector(".leaflet-popup-content")
        return zones, page.locator(".leaflet-popup-content").inner_text()

    zones, popup = _open(out, look)
    assert zones >= 3
    # pg and the design load to 0.1 psf / 0.01 kPa, the elevation in whole feet
    assert re.search(r"pg: \d+\.\d psf \(\d+\.\d\d kPa\)", popup), popup
    assert re.search(r"Design uniform load: \d+\.\d psf \(\d+\.\d\d kPa\)", popup), popup
    assert re.search(r"Elevation: \d+ ft \(\d+\.\d m\)", popup), popup
    assert not re.search(r"\d\.\d{4,}", popup), popup  # no long decimals anywhere
    assert "demo_data; " in popup  # flags wrap at their separators


def test_a_ratio_map_keeps_one_colour_scale(tmp_path):
    out = tmp_path / "ratio.html"
    res = CliRunner().invoke(main, [
        "screen", str(ROOT / "examples" / "roofs_on_record.csv"), "-o", str(tmp_path / "r.csv"),
        "--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "30ft", "--map", str(out),
        "--map-colour", "ratio",
    ])  # fmt: skip
    assert res.exit_code == 0, res.output
    assert "zones: Skerrow" not in out.read_text("utf-8")


@pytest.mark.parametrize("v,col,want", [(30.933931473859648, "roof_pf_psf", "30.9"),
                                        (1.4812345, "roof_pf_kpa", "1.48"),
                                        (0.123456, "roof_cs", "0.123"), ("text", "roof_x", "text")])  # fmt: skip
def test_popup_numbers_are_rounded(v, col, want):
    from neve.maps.portfolio import _rounded

    assert _rounded(v, col) == want
