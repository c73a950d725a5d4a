"""The EN 1991-1-3 site side against docs/contract.md: ground.quantity, ground.sk, the demo.

The demo layer is invented (geo/demo/skerrow_en_sk.gpkg: a metric district of
the invented Skerrow Island, `demo = true`); the fixture is tests/geo/sk_fixture.py.
Roof values: EN 1991-1-3:2003 Eq. 5.1 with mu1 = 0.8 (Table 5.2) and Ce = Ct = 1.0.
"""

from __future__ import annotations

import pytest

from neve.engine.units import KPA_PER_PSF
from tests.geo.sk_fixture import at, write_sk_layer

from .conftest import run, run_json

LOAD = {"psf", "kPa"}
#: a demo site of the metric district's central highlands (zone EN-H)
DEMO_AT = "47.5,-140.0"


def test_ground_of_an_sk_site_names_its_quantity():
    data = run_json("site", "--standard", "en1991-1-3", "--at", DEMO_AT, "--elevation", "300m",
                    "--shape", "flat")  # fmt: skip
    g = data["ground"]
    assert g["quantity"] == "sk"
    assert set(g["sk"]) == LOAD
    assert g["pg"] is None
    # the demo's invented table: 1.1 + 300 x (1.7 - 1.1) / 500 = 1.46 kPa (hand calculation)
    assert g["sk"]["kPa"] == pytest.approx(1.46)
    assert g["sk"]["psf"] == pytest.approx(1.46 / KPA_PER_PSF, abs=1e-3)
    assert g["layer"]["standard"] == "EN 1991-1-3" and g["layer"]["demo"] is True
    assert "demo_data" in g["flags"]
    assert data["roof"]["standard"] == "EN 1991-1-3"
    assert data["roof"]["design_uniform"]["kPa"] == pytest.approx(0.8 * 1.46, abs=1e-3)


def test_ground_of_a_pg_site_keeps_pg():
    g = run_json("site", "--at", DEMO_AT, "--elevation", "300m")["ground"]
    assert g["quantity"] == "pg" and set(g["pg"]) == LOAD and "sk" not in g


def test_neighbour_and_alternative_keys_follow_the_quantity(tmp_path):
    layer = write_sk_layer(tmp_path / "sk.gpkg")
    g = run_json("site", "--layer", str(layer), "--at", at(0, 0))["ground"]
    assert g["neighbours"] and all("sk" in n and "pg" not in n for n in g["neighbours"])


def test_mixed_stack_exits_2_naming_the_field(tmp_path):
    from tests.geo.conftest import fixture_rows, write_layer

    sk = write_sk_layer(tmp_path / "sk.gpkg")
    pg = write_layer(tmp_path / "pg.gpkg", fixture_rows())
    res = run("site", "--at", at(0, 0), "--layer", str(pg), "--layer", str(sk))
    assert res.exit_code == 2
    assert "layer" in res.output and "accepted" in res.output


def test_screen_columns_of_an_sk_run(tmp_path):
    sites = tmp_path / "s.csv"
    sites.write_text(f"site_id,lat,lon\nk1,{at(0, 0)}\n", encoding="utf-8")
    out = tmp_path / "o.csv"
    res = run("screen", str(sites), "--layer", str(write_sk_layer(tmp_path / "sk.gpkg")),
              "--shape", "flat", "-o", str(out))  # fmt: skip
    assert res.exit_code == 0, res.output
    header = [c.strip("\"") for c in out.read_text(encoding="utf-8").splitlines()[0].split(",")]
    for col in ("sk_kpa", "sk_psf", "s_kpa", "s_psf", "design_uniform_kpa", "design_uniform_psf"):
        assert col in header
    assert "pg_psf" not in header and "pf_psf" not in header


def test_compare_lines_up_pg_and_sk():
    data = run_json("compare", "--at", DEMO_AT, "--elevation", "300m", "--standard", "asce7-16",
                    "--standard", "en1991-1-3", "--shape", "flat")  # fmt: skip
    rows = {d["quantity"]: d for d in data["differences"] if d["case"] is None}
    assert rows["sk"]["values"]["en1991-1-3"]["kPa"] == pytest.approx(1.46)
    assert rows["sk"]["values"]["asce7-16"] is None
    assert rows["pg"]["values"]["en1991-1-3"] is None
    assert "EN 1991-1-3" in rows["sk"]["refs"]["en1991-1-3"]
