"""Screening computes roof loads only from ASCE 7-16-compatible layers (neve.geo.screen.run)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from neve.geo.screen.run import screen
from tests.geo.conftest import LAT0, LON0, D, fixture_rows, write_layer


def _sites():
    # Z1 (fixed 20 psf) and Z2 (fixed 30 psf, elev_max 500 ft) of the invented fixture grid
    return pd.DataFrame({"lat": [LAT0 + D / 2] * 2, "lon": [LON0 + D / 2, LON0 + 1.5 * D]})


def test_other_standard_gives_ground_values_but_no_roof_loads(tmp_path):
    path = write_layer(tmp_path / "en.geojson", fixture_rows(), {"standard": "EN 1991-1-3"})
    res = screen(_sites(), layers=[path], roof={"shape": "flat"})
    assert list(res["pg_psf"]) == pytest.approx([20.0, 30.0])
    assert np.isnan(res["pf_psf"]).all()
    assert all("roof_standard_unsupported" in f for f in res["flags"])


def test_asce_layer_gives_roof_loads(tmp_path):
    path = write_layer(tmp_path / "asce.geojson", fixture_rows())
    res = screen(_sites(), layers=[path], roof={"shape": "flat"})
    # ASCE 7-16 Eq. 7.3-1 with Ce = Ct = Is = 1: pf = 0.7 pg (from memory)
    assert list(res["pf_psf"]) == pytest.approx([14.0, 21.0])
    assert not any("roof_standard_unsupported" in f for f in res["flags"])


def test_screen_names_the_cases_it_does_not_compute(tmp_path):
    # ASCE 7-16 Sec. 7.6.1 (from memory): a 6:12 gable has an unbalanced case, which
    # screening (uniform loads only) does not compute; the row must say so, and the
    # unstated exposure/thermal/risk defaults must reach the row too
    path = write_layer(tmp_path / "asce.geojson", fixture_rows())
    roof = {"shape": "gable", "slope": "6:12", "eave_to_ridge": "30ft"}
    res = screen(_sites(), layers=[path], roof=roof)
    for flags in res["flags"]:
        assert "roof_cases_not_screened" in flags
        assert "exposure_assumed" in flags and "risk_assumed" in flags


def test_fully_described_flat_roof_adds_no_roof_flags(tmp_path):
    path = write_layer(tmp_path / "asce.geojson", fixture_rows())
    roof = {
        "shape": "flat",
        "terrain": "C",
        "exposure": "partially",
        "thermal": "heated",
        "risk": "II",
    }
    # sloped at 1/4 on 12: no ponding check (ASCE 7-16 Sec. 7.11, from memory; issue 12)
    res = screen(_sites().iloc[:1], layers=[path], roof=dict(roof, slope="0.25:12", eave_to_ridge="100ft"))
    assert res["flags"].iloc[0] == ""
    # dead flat: below 1/4 on 12, the one flag is the ponding check
    res = screen(_sites().iloc[:1], layers=[path], roof=roof)
    assert res["flags"].iloc[0] == "ponding_check_required"


def test_asce_7_22_layer_gives_7_22_roof_loads_without_unsupported_flag(tmp_path):
    # the invented 7-22 fixture of tests/geo/test_722_layers.py: Z1 pg_II = 24 psf
    from neve.engine.standards import available
    from tests.geo.test_722_layers import META_722, rows_722

    if "asce7-22" not in available():
        pytest.skip("the ASCE 7-22 engine is not registered")
    path = write_layer(tmp_path / "g722.geojson", rows_722(), META_722)
    res = screen(_sites().iloc[:1], layers=[path], roof={"shape": "flat", "ce": 1.0, "ct": 1.0})
    # ASCE 7-22 Eq. 7.3-1, pf = 0.7 Ce Ct pg with no Is (from memory): 0.7 x 24 = 16.8 psf
    assert res["pf_psf"].iloc[0] == pytest.approx(16.8)
    assert "roof_standard_unsupported" not in res["flags"].iloc[0]
