"""``neve screen --compare asce7-16,asce7-22`` (neve.geo.screen.compare).

Invented fixture layers (tests/geo/conftest.py's grid): ASCE 7-16 Z1 20 psf,
Z2 30 psf (elev_max 500 ft), Z3 study, Z6 20 psf; ASCE 7-22 Z1 26, Z2 33, Z3
study, Z6 20 psf, with per-risk-category columns whose risk-II value is the same.
A flat roof, Ce = Ct = 1.0, risk category II. Hand calculations:

* ASCE 7-16 (from memory): pf = 0.7 Ce Ct Is pg (Eq. 7.3-1); pm = Is pg for
  pg <= 20 psf, 20 Is above (Sec. 7.3.4); rain-on-snow 5 psf for pg <= 20 psf
  (Sec. 7.10); design_uniform = max(ps + surcharge, pm).
  Z1: max(14 + 5, 20) = 20; Z2: max(21, 20) = 21; Z6: 20.
* ASCE 7-22: pf = 0.7 Ce Ct pg (Eq. 7.3-1, confirmed in STRUCTURE magazine,
  "ASCE 7-22 Flat Roof Snow Load versus Minimum Snow Load"); pm = min(pg, 30 psf)
  for risk II (Sec. 7.3.3, from memory); rain-on-snow 8 psf where pg <= 20 psf
  (Sec. 7.10; the engine's reading, 8 psf marked confirmed there, the limit from memory).
  Z1: max(18.2, 26) = 26; Z2: max(23.1, 30) = 30; Z6: max(14 + 8, 20) = 22.
* design_uniform_ratio (7-22 / 7-16): Z1 26 / 20 = 1.3; Z2 30 / 21 = 1.428571...;
  Z6 22 / 20 = 1.1 exactly, which is not a rise of *more* than 10 %. Rises: Z1 and
  Z2, so rises_over_10pct = 2.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine import Roof
from neve.geo.screen.compare import RISE_RATIO, column_name, run_compare
from neve.geo.screen.run import run_screen
from tests.geo.conftest import fixture_rows, write_layer

PG_722 = {"Z1": 26.0, "Z2": 33.0, "Z6": 20.0}
ROOF = {"shape": "flat", "ce": "1.0", "ct": "1.0", "risk": "II"}
SITES = """\
site_id,lat,lon,elevation,status,note
z1,30.005,-39.995,100ft,given,"{{7*7}} <b>bold</b> &amp;"
z2,30.005,-39.985,100ft,,=1+1
bad,north,-39.99,,,row without a latitude
z3,30.005,-39.975,100ft,,study zone
z6,30.015,-39.975,100ft,,"  spaces kept  "
"""


def _rows_722() -> list[dict]:
    rows = []
    for r in fixture_rows():
        r = dict(r)
        if r["zone_id"] in PG_722:
            r["pg"] = PG_722[r["zone_id"]]
        for cat in ("I", "II", "III", "IV"):
            r[f"pg_{cat}"] = r["pg"] if r["rule"] == "fixed" else float("nan")
        rows.append(r)
    return rows


@pytest.fixture(scope="module")
def env(tmp_path_factory):
    d = tmp_path_factory.mktemp("screen_compare")
    a16 = write_layer(d / "g16.geojson", fixture_rows(), {"name": "grid 7-16"})
    a22 = write_layer(
        d / "g22.geojson", _rows_722(), {"name": "grid 7-22", "standard": "ASCE 7-22"}
    )
    sites = d / "sites.csv"
    sites.write_text(SITES, encoding="utf-8")
    return d, str(a16), str(a22), str(sites)


@pytest.fixture(scope="module")
def run(env):
    _, a16, a22, sites = env
    return run_compare(sites, ["asce7-16", "asce7-22"], layers=[a16, a22],
                       roof=Roof.from_mapping(ROOF))  # fmt: skip


def test_column_names():
    assert column_name("pg_psf", "asce7-16") == "pg_psf__asce7-16"
    assert column_name("design_uniform_psf", "asce7-22") == "design_uniform_psf__asce7-22"


def test_every_input_row_and_cell_kept_in_order(run, env):
    _, a16, _, sites = env
    plain = run_screen(sites, layers=[a16], roof=Roof.from_mapping(ROOF)).results
    k = list(plain.columns).index("status")
    inputs = list(plain.columns[:k])
    assert inputs == ["site_id", "lat", "lon", "elevation", "input_status", "note"]
    assert list(run.results.columns[: len(inputs) + 2]) == [*inputs, "site_lat", "site_lon"]
    assert "site_lat__asce7-16" not in run.results
    assert len(run.results) == 5
    pd.testing.assert_frame_equal(run.results[inputs], plain[inputs])
    assert list(run.results["site_id"]) == ["z1", "z2", "bad", "z3", "z6"]
    assert run.results.loc[0, "note"] == "{{7*7}} <b>bold</b> &amp;"


def test_each_editions_columns_are_that_editions_screening(run, env):
    _, a16, a22, sites = env
    for sid, layer in (("asce7-16", a16), ("asce7-22", a22)):
        alone = run_screen(sites, layers=[layer], standard=sid, roof=Roof.from_mapping(ROOF))
        res = alone.results
        for c in res.columns[list(res.columns).index("status") :]:
            got = run.results[c if c in ("site_lat", "site_lon") else column_name(c, sid)]
            pd.testing.assert_series_equal(got, res[c], check_names=False)


def test_ratios_hand_checked(run):
    r = run.results.set_index("site_id")
    assert r.loc["z1", "design_uniform_psf__asce7-16"] == pytest.approx(20.0)
    assert r.loc["z1", "design_uniform_psf__asce7-22"] == pytest.approx(26.0)
    assert r.loc["z1", "design_uniform_ratio"] == pytest.approx(1.3)
    assert r.loc["z2", "design_uniform_psf__asce7-16"] == pytest.approx(21.0)
    assert r.loc["z2", "design_uniform_psf__asce7-22"] == pytest.approx(30.0)
    assert r.loc["z2", "design_uniform_ratio"] == pytest.approx(30.0 / 21.0)
    assert r.loc["z6", "design_uniform_psf__asce7-22"] == pytest.approx(22.0)
    assert r.loc["z6", "design_uniform_ratio"] == pytest.approx(1.1)
    # pg_ratio: 26 / 20 = 1.3, 33 / 30 = 1.1, 20 / 20 = 1.0
    assert r.loc["z1", "pg_ratio"] == pytest.approx(1.3)
    assert r.loc["z2", "pg_ratio"] == pytest.approx(1.1)
    assert r.loc["z6", "pg_ratio"] == pytest.approx(1.0)
    # no ratio where either edition has no load: the study zone and the bad row
    for sid in ("z3", "bad"):
        assert math.isnan(r.loc[sid, "design_uniform_ratio"])
        assert math.isnan(r.loc[sid, "pg_ratio"])
    assert r.loc["z3", "status__asce7-16"] == "study_required"
    assert r.loc["bad", "status__asce7-22"] == "error"


def test_summary_counts_rises_over_10pct(run):
    s = run.summary
    assert RISE_RATIO == pytest.approx(1.10)
    assert s["rises_over_10pct"] == 2  # z1 (1.3) and z2 (1.43); z6 (exactly 1.1) is not counted
    assert s["compared"] == 3
    assert s["standards"] == ["asce7-16", "asce7-22"]
    assert s["ratio"] == "asce7-22 / asce7-16"
    assert s["design_uniform_ratio"]["min"] == pytest.approx(1.1)
    assert s["design_uniform_ratio"]["max"] == pytest.approx(30.0 / 21.0)
    assert s["pg_ratio"] == {"min": pytest.approx(1.0), "max": pytest.approx(1.3)}
    assert set(s["editions"]) == {"asce7-16", "asce7-22"}
    assert s["editions"]["asce7-22"]["rows"] == 5
    assert s["status"]["study_required__asce7-16"] == 1
    assert s["status"]["error__asce7-22"] == 1
    assert s["rows"] == 5 and s["cautions"]
    assert [x["name"] for x in s["layers"]] == ["grid 7-16", "grid 7-22"]


def test_exactly_ten_percent_is_not_a_rise(run):
    # z6: 22 / 20 = 1.1 exactly (hand calculation above), not counted; the count is
    # exactly the rows whose ratio is above 1.10
    ratio = run.results["design_uniform_ratio"].to_numpy(dtype=float)
    assert int(np.count_nonzero(ratio > RISE_RATIO)) == run.summary["rises_over_10pct"]
    z6 = run.results.set_index("site_id").loc["z6", "design_uniform_ratio"]
    assert not z6 > RISE_RATIO


def test_without_a_roof_only_pg_is_compared(env):
    _, a16, a22, sites = env
    run = run_compare(sites, ["asce7-16", "asce7-22"], layers=[a16, a22])
    assert "design_uniform_ratio" not in run.results
    assert "design_uniform_psf__asce7-16" not in run.results
    assert run.summary["rises_over_10pct"] is None
    assert run.summary["compared"] is None
    assert run.results.set_index("site_id").loc["z1", "pg_ratio"] == pytest.approx(1.3)


def test_cli_writes_columns_and_prints_the_count(env):
    d, a16, a22, sites = env
    out = d / "cmp.csv"
    summary = d / "cmp.json"
    r = CliRunner().invoke(main, [
        "screen", sites, "-o", str(out), "--layer", a16, "--layer", a22, "--compare",
        "asce7-16,asce7-22", "--shape", "flat", "--ce", "1.0", "--ct", "1.0", "--risk", "II",
        "--quiet", "--summary-json", str(summary), "--overwrite",
    ])  # fmt: skip
    assert r.exit_code == 0, r.output
    assert "rises_over_10pct): 2 of 3 compared" in r.stdout
    df = pd.read_csv(out, dtype=str, keep_default_na=False)
    for c in ("pg_psf__asce7-16", "pg_psf__asce7-22", "design_uniform_psf__asce7-16",
              "design_uniform_psf__asce7-22", "flags__asce7-22", "design_uniform_ratio",
              "pg_ratio"):  # fmt: skip
        assert c in df.columns
    assert list(df["site_id"]) == ["z1", "z2", "bad", "z3", "z6"]
    data = json.loads(summary.read_text(encoding="utf-8"))
    assert data["rises_over_10pct"] == 2


@pytest.mark.parametrize(
    ("value", "fragment"),
    [
        ("asce7-16", "at least two"),
        ("asce7-16,en1991", "not a standard"),
        ("asce7-16,asce7-16", "twice"),
    ],
)
def test_bad_compare_exits_2(env, value, fragment):
    d, a16, a22, sites = env
    r = CliRunner().invoke(main, ["screen", sites, "-o", str(d / "x.csv"), "--layer", a16,
                                  "--layer", a22, "--compare", value, "--quiet"])  # fmt: skip
    assert r.exit_code == 2, r.output
    assert "error: compare:" in r.stderr and fragment in r.stderr
    assert not (d / "x.csv").exists()


def test_compare_with_standard_exits_2(env):
    d, a16, a22, sites = env
    r = CliRunner().invoke(main, ["screen", sites, "-o", str(d / "y.csv"), "--layer", a16,
                                  "--layer", a22, "--compare", "asce7-16,asce7-22",
                                  "--standard", "asce7-22", "--quiet"])  # fmt: skip
    assert r.exit_code == 2, r.output
    assert "error: standard:" in r.stderr


def test_an_edition_without_its_layer_exits_2(env):
    d, a16, _, sites = env
    r = CliRunner().invoke(main, ["screen", sites, "-o", str(d / "z.csv"), "--layer", a16,
                                  "--compare", "asce7-16,asce7-22", "--quiet"])  # fmt: skip
    assert r.exit_code == 2, r.output
    assert "error: layer:" in r.stderr and "ASCE 7-22" in r.stderr


@pytest.mark.parametrize("suffix", ["csv", "xlsx", "gpkg", "parquet"])
def test_every_output_format_and_the_map(env, suffix):
    d, a16, a22, sites = env
    out = d / f"all.{suffix}"
    html = d / f"all_{suffix}.html"
    r = CliRunner().invoke(main, [
        "screen", sites, "-o", str(out), "--layer", a16, "--layer", a22, "--compare",
        "asce7-16,asce7-22", "--shape", "flat", "--quiet", "--map", str(html), "--overwrite",
    ])  # fmt: skip
    assert r.exit_code == 0, r.output
    if suffix == "csv":
        df = pd.read_csv(out)
    elif suffix == "xlsx":
        df = pd.read_excel(out, sheet_name=0)
        sheet = pd.read_excel(out, sheet_name="summary")
        assert "status: ok__asce7-22" in set(sheet["item"])
    elif suffix == "gpkg":
        import geopandas as gpd

        df = gpd.read_file(out)
    else:
        df = pd.read_parquet(out)
    assert len(df) == 5
    assert {"pg_psf__asce7-16", "pg_psf__asce7-22", "pg_ratio", "design_uniform_ratio"} <= set(
        df.columns
    )
    assert html.is_file()


def test_addresses_are_asked_of_the_server_once_for_every_edition(env, monkeypatch):
    # an invented server stand-in: counts the requests (no network)
    from types import SimpleNamespace

    import neve.geo.site.geocode as gc

    d, a16, a22, _ = env
    where = {"1 Fixture Road": (30.005, -39.995), "2 Fixture Road": (30.005, -39.985)}
    asked: list[str] = []

    def fake(address, url, *args, **kwargs):
        asked.append(address)
        lat, lon = where[address]
        return SimpleNamespace(lat=lat, lon=lon)

    monkeypatch.setattr(gc, "from_server", fake)
    sites = d / "addresses.csv"
    sites.write_text("site_id,address,elevation\na,1 Fixture Road,100ft\n"
                     "b,2 Fixture Road,100ft\n", encoding="utf-8")  # fmt: skip
    run = run_compare(str(sites), ["asce7-16", "asce7-22"], layers=[a16, a22],
                      geocoder_url="http://geocoder.invalid", roof=Roof.from_mapping(ROOF))  # fmt: skip
    assert sorted(asked) == ["1 Fixture Road", "2 Fixture Road"]  # once each, not per edition
    r = run.results.set_index("site_id")
    assert r.loc["a", "site_lat"] == pytest.approx(30.005)
    assert r.loc["a", "design_uniform_ratio"] == pytest.approx(1.3)  # Z1: 26 / 20


def test_demo_layers_of_each_edition(tmp_path):
    # invented Skerrow Island sites (demo = true); no --layer: each edition its own demo layers
    from pathlib import Path

    sites = Path(__file__).resolve().parents[2] / "examples" / "roofs_on_record.csv"
    run = run_compare(str(sites), ["asce7-16", "asce7-22"], roof=Roof.from_mapping(ROOF))
    res = run.results
    assert run.summary["demo"] is True
    for (std, one), title in zip(run.runs, ("ASCE 7-16", "ASCE 7-22"), strict=True):
        sid = std.id
        assert one.layers and all(ly.demo and ly.meta["standard"] == title for ly in one.layers)
        flags = res[column_name("flags", sid)].fillna("")
        assert not flags.str.contains("edition_mismatch").any()
        assert flags.str.contains("demo_data").all()
    ratio = res["design_uniform_ratio"].to_numpy(dtype=float)
    assert run.summary["rises_over_10pct"] == int(np.count_nonzero(ratio > 1.10))
    assert run.summary["compared"] == int(np.count_nonzero(np.isfinite(ratio)))
