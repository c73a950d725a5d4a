"""``neve screen`` on EN 1991-1-3 layers (``quantity = "sk"``): sk_kpa/sk_psf and the EN roof.

The layer is the invented fixture of tests/geo/sk_fixture.py.  Roof values:
EN 1991-1-3:2003 Eq. 5.1, s = mu1 Ce Ct sk with mu1 = 0.8 (Table 5.2, 0 to 30
degrees) and Ce = Ct = 1.0 (the recommended values, Table 5.1 and 5.2(8)).
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.units import KPA_PER_PSF
from neve.geo.screen.run import run_screen, screen
from tests.geo.sk_fixture import centre, write_sk_layer

MU1 = 0.8  # EN 1991-1-3 Table 5.2


@pytest.fixture(scope="module")
def sk_layer(tmp_path_factory):
    return write_sk_layer(tmp_path_factory.mktemp("sk") / "sk.gpkg")


def _sites() -> pd.DataFrame:
    cells = [(0, 0, "100m"), (1, 1, "650m"), (2, 0, "10m"), (0, 1, "500m"), (1, 0, "450m")]
    lat, lon = zip(*(centre(i, j) for i, j, _ in cells), strict=True)
    return pd.DataFrame({
        "site_id": ["K1 site", "K5 site", "K3 study", "K4 site", "K2 high"],
        "lat": lat, "lon": lon, "elevation": [e for _, _, e in cells],
    })  # fmt: skip


def test_sk_columns_replace_the_pg_columns(sk_layer):
    res = screen(_sites(), layers=[sk_layer])
    assert "sk_kpa" in res.columns and "sk_psf" in res.columns
    assert "pg_psf" not in res.columns and "pg_kpa" not in res.columns
    cols = list(res.columns)
    assert cols.index("sk_kpa") + 1 == cols.index("sk_psf")  # kPa first
    # hand calculations: K1 fixed 0.85; K5 0.7 (1 + (650/650)^2) = 1.4; K4 1 + 500 x 2/1000
    expected = [0.85, 1.4, np.nan, 2.0, np.nan]
    np.testing.assert_allclose(res["sk_kpa"].to_numpy(float), expected, atol=1e-9)
    np.testing.assert_allclose(res["sk_psf"].to_numpy(float) * KPA_PER_PSF, expected, atol=1e-9)
    assert list(res["status"]) == ["ok", "ok", "study_required", "ok", "study_required"]
    assert list(res["site_id"]) == list(_sites()["site_id"])  # every row, in order
    assert "above_elevation_limit" in res["flags"].iloc[4]


def test_screening_computes_the_en_roof(sk_layer):
    res = screen(_sites(), layers=[sk_layer], roof={"shape": "gable", "slope": "20deg"})
    for col in ("s_kpa", "s_psf", "design_uniform_kpa", "design_uniform_psf"):
        assert col in res.columns
    assert "pf_psf" not in res.columns
    sk = res["sk_kpa"].to_numpy(float)
    np.testing.assert_allclose(res["design_uniform_kpa"].to_numpy(float), MU1 * sk)  # Eq. 5.1
    np.testing.assert_allclose(res["s_psf"].to_numpy(float) * KPA_PER_PSF, MU1 * sk)
    ok = res["status"] == "ok"
    assert all("roof_standard_unsupported" not in f for f in res["flags"])
    # a duopitch roof has drifted arrangements that uniform screening does not compute
    assert all("roof_cases_not_screened" in f for f in res.loc[ok, "flags"])
    assert res.loc[~ok, "design_uniform_kpa"].isna().all()


def test_asce_standard_asked_on_sk_rows_is_an_edition_mismatch(sk_layer):
    res = screen(_sites(), layers=[sk_layer], roof={"shape": "flat"}, standard="asce7-16")
    ok = res["status"] == "ok"
    assert all("edition_mismatch" in f for f in res.loc[ok, "flags"])
    assert res["design_uniform_psf"].isna().all()


def test_summary_gives_the_sk_range(sk_layer):
    run = run_screen(_sites(), layers=[sk_layer])
    assert run.summary["pg_psf"] is None
    assert run.summary["sk_kpa"] == {"min": pytest.approx(0.85), "max": pytest.approx(2.0)}


def test_cli_screen_on_the_demo_sk_layer(tmp_path):
    """--standard en1991-1-3 without --layer: the invented metric district of the demo."""
    sites = tmp_path / "sites.csv"
    sites.write_text("site_id,lat,lon,elevation\nhall,47.5,-140.0,300m\nsea,10,10,0m\n",
                     encoding="utf-8")  # fmt: skip
    out = tmp_path / "out.csv"
    res = CliRunner().invoke(main, ["screen", str(sites), "--standard", "en1991-1-3",
                                    "--shape", "flat", "-o", str(out)])  # fmt: skip
    assert res.exit_code == 0, res.output
    assert "sk range: 1.46 to 1.46 kPa" in res.output
    table = pd.read_csv(out)
    assert list(table["site_id"]) == ["hall", "sea"]
    # the demo's invented table: 1.1 + 300 x (1.7 - 1.1) / 500 = 1.46 kPa (hand calculation)
    assert table["sk_kpa"].iloc[0] == pytest.approx(1.46)
    assert table["design_uniform_kpa"].iloc[0] == pytest.approx(MU1 * 1.46)
    assert "demo_data" in table["flags"].iloc[0]
    assert table["status"].iloc[1] == "no_data"


def test_portfolio_map_of_sk_results(tmp_path, sk_layer):
    sites = tmp_path / "sites.csv"
    _sites().to_csv(sites, index=False)
    page = tmp_path / "map.html"
    res = CliRunner().invoke(main, ["screen", str(sites), "--layer", str(sk_layer),
                                    "-o", str(tmp_path / "o.parquet"), "--map", str(page)])  # fmt: skip
    assert res.exit_code == 0, res.output
    html = page.read_text(encoding="utf-8")
    assert '"ground":"sk"' in html and '"si":true' in html
    assert "under 0.48 kPa (10 psf)" in html  # the bands named kPa first
    assert "Ground snow load sk [kPa]" in html  # the legend's heading


def test_pg_screening_keeps_its_columns(tmp_path):
    from tests.geo.conftest import fixture_rows, write_layer

    path = write_layer(tmp_path / "pg.gpkg", fixture_rows())
    res = screen(pd.DataFrame({"lat": [centre(0, 0)[0]], "lon": [centre(0, 0)[1]]}),
                 layers=[path], roof={"shape": "flat"})  # fmt: skip
    assert {"pg_psf", "pg_kpa", "pf_psf", "design_uniform_psf"} <= set(res.columns)
    assert "sk_kpa" not in res.columns
    json.dumps(list(res.columns))


def test_a_streamed_run_on_sk_layers_is_the_whole_run(tmp_path, sk_layer, monkeypatch):
    # streamed screening (issue 16) in chunks of two rows gives the rows and the summary of one
    # run, the sk range included (regression guard: the chunks' sk ranges were not merged)
    sites = tmp_path / "s.csv"
    _sites().to_csv(sites, index=False)
    got = {}
    for label, rows in (("whole", "1000"), ("chunks", "2")):
        monkeypatch.setenv("NEVE_CHUNK_ROWS", rows)
        out, js = tmp_path / f"{label}.csv", tmp_path / f"{label}.json"
        res = CliRunner().invoke(main, ["screen", str(sites), "--layer", str(sk_layer), "-o", str(out),
                                        "--summary-json", str(js), "--quiet"])  # fmt: skip
        assert res.exit_code == 0, res.output
        got[label] = (out.read_text(), json.loads(js.read_text()))
    assert got["whole"][0] == got["chunks"][0]
    whole, chunks = got["whole"][1], got["chunks"][1]
    assert chunks["chunks"] > 1
    assert chunks["sk_kpa"] == whole["sk_kpa"] and whole["sk_kpa"] is not None
