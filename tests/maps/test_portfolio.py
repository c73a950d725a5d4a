"""The portfolio map of screening results."""

from __future__ import annotations

import json
import re
import time

import numpy as np
import pandas as pd
import pytest

from neve.engine.errors import InputError
from neve.maps import assets, portfolio
from neve.maps.portfolio import write_portfolio_map


def _results(n: int, seed: int = 0) -> pd.DataFrame:
    """Invented screening results around an imaginary region (test fixture)."""
    rng = np.random.default_rng(seed)
    status = rng.choice(["ok", "ok", "ok", "provisional", "study_required", "no_data", "error"], n)
    pg = np.where(np.isin(status, ["ok", "provisional"]), rng.uniform(5, 130, n), np.nan)
    return pd.DataFrame(
        {
            "site_id": [f"S{i}" for i in range(n)],
            "lat": 44.0 + rng.normal(0, 0.5, n),
            "lon": -110.0 + rng.normal(0, 0.8, n),
            "status": status,
            "pg_psf": pg,
            "flags": np.where(status == "provisional", "near_boundary", ""),
            "message": "invented row",
            "zone_id": "Z1",
            "roof_design_psf": np.round(pg * 0.7, 1),
        }
    )


def _payload(html: str) -> dict:
    match = re.search(r"var d = (\{.*?\});\n", html, re.S)
    assert match, "portfolio payload not found"
    return json.loads(match.group(1))


def test_portfolio_map_codes_and_legend(tmp_path):
    df = _results(300)
    df.loc[0, ["status", "pg_psf"]] = ["ok", 9.99]
    df.loc[1, ["status", "pg_psf"]] = ["ok", 100.0]
    df.loc[2, ["status", "pg_psf"]] = ["study_required", np.nan]
    df.loc[3, "lat"] = np.nan
    html = write_portfolio_map(df, tmp_path / "p.html", demo=True, self_contained=True).read_text()
    assert assets.remote_references(html) == []
    assert "L.markerClusterGroup" in html and 'id="neve-demo-banner"' in html
    d = _payload(html)
    assert len(d["lat"]) == 299  # the row without coordinates is not drawn ...
    assert "1 site(s) without usable coordinates are not drawn." in html  # ... and the map says so
    codes = d["codes"]
    assert codes[d["code"][0]]["cls"] == "ok" and codes[d["code"][0]]["label"] == "under 10 psf"
    assert codes[d["code"][1]]["label"] == "100 psf and over"
    assert codes[d["code"][2]]["cls"] == "study_required"
    assert d["extra_names"] == ["roof design psf"]
    for word in ("licensed design professional", "authority having jurisdiction"):
        assert word in html


def test_portfolio_hostile_text_is_data_not_markup(tmp_path):
    df = _results(5)
    df.loc[0, "site_id"] = "<img src=x onerror=alert(1)>"
    df.loc[1, "message"] = "</script><script>alert(2)</script>"
    html = write_portfolio_map(df, tmp_path / "p.html").read_text()
    assert "<img src=x" not in html and "<script>alert(2)" not in html
    assert _payload(html)["site_id"][0] == "<img src=x onerror=alert(1)>"


def test_portfolio_input_errors(tmp_path):
    with pytest.raises(InputError, match="results"):
        write_portfolio_map(_results(3).drop(columns=["pg_psf"]), tmp_path / "p.html")
    with pytest.raises(InputError, match="results"):
        write_portfolio_map([{"lat": 1}], tmp_path / "p.html")
    # site_id is optional in site files: rows are numbered instead
    html = write_portfolio_map(
        _results(3).drop(columns=["site_id"]), tmp_path / "p.html"
    ).read_text()
    assert _payload(html)["site_id"] == ["row 1", "row 2", "row 3"]


def test_large_portfolios_are_sampled_and_say_so(tmp_path, monkeypatch):
    monkeypatch.setattr(portfolio, "MAX_POINTS", 2000)
    monkeypatch.setattr(portfolio, "DETAIL_LIMIT", 500)
    df = _results(3000)
    html = write_portfolio_map(df, tmp_path / "p.html").read_text()
    d = _payload(html)
    assert len(d["lat"]) == 2000
    flagged = int((df["status"] != "ok").sum())
    drawn_flagged = sum(1 for s in d["status"] if d["status_names"][s] != "ok")
    assert drawn_flagged == flagged  # every non-ok site is kept
    assert "were left out at random" in html and "messages of ok sites are left out" in html


@pytest.mark.slow
def test_hundred_thousand_sites_in_reasonable_time_and_size(tmp_path):
    df = _results(100_000, seed=3)
    t0 = time.perf_counter()
    out = write_portfolio_map(df, tmp_path / "p.html", self_contained=True)
    elapsed = time.perf_counter() - t0
    assert elapsed < 30.0  # about 2 s on the 2-core CI machine (regression guard)
    assert out.stat().st_size < 15_000_000  # about 6 MB (regression guard)
