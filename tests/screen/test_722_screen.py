"""Screening with ASCE 7-22 layers: pg per row's risk category, W2 columns, the roof standard.

Expected values come from the invented layer data of tests/geo/test_722_layers.py
(``rows_722``, ``w2_rows``; hand-checked there); none is a real map value.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from neve.engine import Roof
from neve.engine.standards import available, get_standard
from neve.geo.screen.run import run_screen, screen
from tests.geo.conftest import centre, write_layer
from tests.geo.test_722_layers import META_722, rows_722, write_w2

needs_722 = pytest.mark.skipif(
    "asce7-22" not in available(), reason="the ASCE 7-22 engine is not registered"
)


@pytest.fixture(scope="module")
def layers(tmp_path_factory):
    d = tmp_path_factory.mktemp("s722")
    return write_layer(d / "g722.gpkg", rows_722(), META_722), write_w2(d / "w2.geojson")


def _sites(risks):
    lat, lon = centre(0, 0)  # Z1: pg_I..IV = 20, 24, 27, 30 psf; W1 = 0.5
    return pd.DataFrame({"site_id": [f"s{k}" for k in range(len(risks))],
                         "lat": [lat] * len(risks), "lon": [lon] * len(risks), "risk": risks})  # fmt: skip


def test_row_risk_picks_the_category(layers):
    res = screen(_sites(["I", "iii", "IV", "", "V"]), layers=list(layers))
    assert list(res["pg_psf"][:4]) == pytest.approx([20.0, 27.0, 30.0, 24.0])  # blank: II
    assert res["status"].iloc[4] == "error"
    assert "risk" in res["message"].iloc[4] and "I, II, III, IV" in res["message"].iloc[4]
    assert list(res["site_id"]) == ["s0", "s1", "s2", "s3", "s4"]  # input order kept


def test_roof_risk_is_the_default_category(layers):
    sites = _sites(["", "IV"])
    res = screen(sites, layers=[layers[0]], roof={"shape": "flat", "risk": "III"})
    assert list(res["pg_psf"]) == pytest.approx([27.0, 30.0])  # roof's III; the cell's IV


def test_w2_columns(layers):
    lat, lon = centre(2, 0)  # Z3 / W3: both study areas
    sites = pd.concat([_sites(["II"]), pd.DataFrame({"lat": [lat], "lon": [lon]})])
    res = screen(sites.reset_index(drop=True), layers=list(layers))
    assert res["w2"].iloc[0] == pytest.approx(0.5) and res["w2_zone_id"].iloc[0] == "W1"
    assert np.isnan(res["w2"].iloc[1]) and res["w2_zone_id"].iloc[1] == "W3"
    assert "w2_study_required" in res["flags"].iloc[1]
    res = screen(_sites(["II"]), layers=[layers[0]])  # no W2 layer: no W2 columns
    assert "w2" not in res.columns


@needs_722
def test_layer_chooses_asce_7_22_and_w2_reaches_the_uniform_path(layers):
    roof = {"shape": "flat", "ce": 1.0, "ct": 1.0}
    res = screen(_sites(["I", "III"]), layers=list(layers), roof=roof)
    std = get_standard("asce7-22")
    for k, (cat, pg) in enumerate((("I", 20.0), ("III", 27.0))):
        r = Roof.from_mapping(dict(roof, risk=cat))  # the row's risk category is the building's
        direct = std.uniform({"pg": np.array([pg]), "w2": np.array([0.5])}, r)
        assert res["pf_psf"].iloc[k] == pytest.approx(float(np.asarray(direct["pf"])[0]))
        assert res["design_uniform_psf"].iloc[k] == pytest.approx(
            float(np.asarray(direct["design_uniform"])[0])
        )
    # ASCE 7-22 Eq. 7.3-1 (pf = 0.7 Ce Ct pg, no Is; from memory): 0.7 x 20 = 14 psf
    assert res["pf_psf"].iloc[0] == pytest.approx(14.0)
    assert not any("roof_standard_unsupported" in f for f in res["flags"])


@needs_722
def test_explicit_other_edition_is_edition_mismatch(layers):
    res = screen(_sites(["II"]), layers=list(layers), roof={"shape": "flat"}, standard="asce7-16")
    assert np.isnan(res["pf_psf"]).all()
    assert "edition_mismatch" in res["flags"].iloc[0]
    assert res["pg_psf"].iloc[0] == pytest.approx(24.0)  # the ground value is still reported


@needs_722
def test_demo_with_standard_asce7_22_screens_on_the_722_demo():
    sites = pd.DataFrame({"lat": [47.52], "lon": [-140.05], "risk": ["IV"]})
    run = run_screen(sites, dem="demo", roof={"shape": "flat"}, standard="asce7-22")
    assert [ly.meta["standard"] for ly in run.layers] == ["ASCE 7-22", "ASCE 7-22"]
    assert "demo_data" in run.results["flags"].iloc[0]
    assert np.isfinite(run.results["pf_psf"].iloc[0]) and np.isfinite(run.results["w2"].iloc[0])
