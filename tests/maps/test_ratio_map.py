"""The portfolio map coloured by load_ratio (``neve screen --map-colour ratio``).

All data are INVENTED.  The bands and the threshold are neve's own
(neve.engine.on_record.RATIO_BANDS; docs/contract.md, *Screening results*): a
site is drawn above 1.0 exactly when its ratio is above 1.0 (``exceeds_record``).
"""

from __future__ import annotations

import json
import re

import numpy as np
import pandas as pd
import pytest

from neve.engine.errors import InputError
from neve.engine.on_record import RATIO_BANDS
from neve.maps import assets
from neve.maps.portfolio import NO_RATIO_LABEL, RATIO_HEADING, write_portfolio_map

HOSTILE = "<script>alert(1)</script><img src=x onerror=alert(2)>{{ 7*7 }}"


def _payload(html: str) -> dict:
    match = re.search(r"var d = (\{.*?\});\n", html, re.S)
    assert match, "portfolio payload not found"
    return json.loads(match.group(1))


def _results() -> pd.DataFrame:
    """Invented screening results with loads on record."""
    ratio = [0.5, 0.8, 1.0, 1.0000001, 1.25, 1.3, 2.0, np.nan, np.nan, 1.4]
    status = ["ok"] * 8 + ["study_required", "provisional"]
    n = len(ratio)
    return pd.DataFrame(
        {
            "site_id": [HOSTILE] + [f"S{i}" for i in range(1, n)],
            "lat": np.linspace(44.0, 44.9, n),
            "lon": np.linspace(-110.0, -109.1, n),
            "status": status,
            "pg_psf": [40.0] * 8 + [np.nan, 40.0],
            "flags": [""] * n,
            "message": [HOSTILE] + ["invented row"] * (n - 1),
            "zone_id": "Z1",
            "design_uniform_psf": [28.0] * 8 + [np.nan, 28.0],
            "on_record_psf": [28.0 / r if np.isfinite(r) else np.nan for r in ratio[:8]]
            + [20.0, 20.0],
            "load_ratio": ratio,
        }
    )


def test_ratio_colours_classes_and_legend(tmp_path):
    html = write_portfolio_map(
        _results(), tmp_path / "r.html", colour="ratio", self_contained=True, demo=True
    ).read_text(encoding="utf-8")
    assert assets.remote_references(html) == []
    d = _payload(html)
    labels = [d["codes"][c]["label"] for c in d["code"]]
    bands = [label for _, label in RATIO_BANDS]
    assert labels == [bands[0], bands[1], bands[1], bands[2], bands[2], bands[3], bands[4],
                      NO_RATIO_LABEL, "study", bands[3]]  # fmt: skip
    classes = [d["codes"][c]["cls"] for c in d["code"]]
    assert classes[-1] == "provisional" and classes[-2] == "study_required"
    # the ratio bands above 1.0 count as flagged for the cluster ring; at or below 1.0 not
    flagged = [d["codes"][c]["flagged"] for c in d["code"][:8]]
    assert flagged == [False, False, False, True, True, True, True, False]
    assert RATIO_HEADING.replace("'", "&#39;") in html
    for i in range(len(RATIO_BANDS)):
        assert f"neve-ratio-{i}" in html
    assert "neve-ratio-none" in html
    assert "5 site(s) above 1.0 (exceeds_record)" in html  # 1.0000001, 1.25, 1.3, 2.0, 1.4
    assert d["extra_names"][:3] == ["load ratio", "on record psf", "design uniform psf"]


def test_text_from_inputs_is_data(tmp_path):
    html = write_portfolio_map(_results(), tmp_path / "r.html", colour="ratio").read_text()
    assert "<script>alert(1)" not in html and "<img src=x" not in html
    assert "\\u003cscript\\u003ealert(1)" in html  # in the payload, escaped
    assert _payload(html)["site_id"][0] == HOSTILE  # and reads back as typed


def test_ground_colouring_is_the_default_and_unchanged(tmp_path):
    html = write_portfolio_map(_results(), tmp_path / "g.html").read_text()
    d = _payload(html)
    assert d["codes"][d["code"][0]]["label"] == "30 to under 50 psf"
    assert "neve-ratio-0" not in html and RATIO_HEADING not in html


def test_ratio_without_the_column_and_unknown_colour(tmp_path):
    with pytest.raises(InputError, match="load_ratio"):
        write_portfolio_map(_results().drop(columns="load_ratio"), tmp_path / "a.html",
                            colour="ratio")  # fmt: skip
    with pytest.raises(InputError, match="map-colour"):
        write_portfolio_map(_results(), tmp_path / "b.html", colour="rainbow")
    assert not list(tmp_path.iterdir())


def test_sites_above_the_record_are_never_sampled_away(tmp_path, monkeypatch):
    from neve.maps import portfolio

    monkeypatch.setattr(portfolio, "MAX_POINTS", 4)
    n = 12
    df = pd.DataFrame(
        {
            "site_id": [f"S{i}" for i in range(n)],
            "lat": np.linspace(44.0, 44.9, n),
            "lon": np.linspace(-110.0, -109.1, n),
            "status": "ok",
            "pg_psf": 40.0,
            "flags": "",
            "message": "invented",
            "zone_id": "Z1",
            "load_ratio": [0.5] * 9 + [1.5, 2.0, 3.0],
        }
    )
    d = _payload(write_portfolio_map(df, tmp_path / "s.html", colour="ratio").read_text())
    ids = set(d["site_id"])
    assert {"S9", "S10", "S11"} <= ids and len(ids) == 4


@pytest.mark.browser
def test_ratio_map_offline_in_chromium(tmp_path):
    from tests.maps.browser import offline_page, serve
    from tests.maps.conftest import browser_or_skip

    browser_or_skip()
    write_portfolio_map(_results(), tmp_path / "r.html", colour="ratio", self_contained=True)
    with serve(tmp_path) as base, offline_page(base) as (page, record):
        page.goto(f"{base}/r.html", wait_until="load")
        page.wait_for_selector(".neve-pt")
        legend = page.locator("#neve-summary").text_content()
        assert RATIO_HEADING in legend and RATIO_BANDS[-1][1] in legend
        assert page.locator("#neve-summary .neve-ratio-4").count() == 1
        page.screenshot(path=str(tmp_path / "ratio_map.png"))
        assert record["dialogs"] == [] and record["page_errors"] == []
        assert record["blocked"] == []


def test_ratio_popup_numbers_are_rounded_for_reading(tmp_path):
    d = _payload(write_portfolio_map(_results(), tmp_path / "r.html", colour="ratio").read_text())
    ratio = d["extra"][d["extra_names"].index("load ratio")]
    assert ratio[:4] == ["0.500", "0.800", "1.000", "1.000"]  # 1.0000001 reads 1.000 ...
    assert d["codes"][d["code"][3]]["label"] == RATIO_BANDS[2][1]  # ... but is drawn above 1.0
    assert ratio[7] == ""  # no ratio
    assert d["extra"][d["extra_names"].index("on record psf")][0] == "56.00"  # 28 / 0.5
