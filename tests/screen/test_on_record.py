"""The existing-roof check of ``neve screen``: ``snow_load_on_record``, ``load_ratio``,
``exceeds_record`` and the summary (neve.engine.on_record, neve.geo.screen).

Sources of the expected numbers:

- unit conversion: 1 lbf = 0.45359237 kg x 9.80665 m/s^2 and 1 ft = 0.3048 m exactly
  (NIST SP 811, 2008, Appendix B.8/B.9, from the definitions), so
  1 psf = 4.4482216152605 N / 0.09290304 m^2 = 47.8802589803 Pa = 0.0478802589803 kPa;
- roof loads on the invented fixture grid (tests/screen/conftest.py; invented data):
  a flat roof with Ce = 1.0, Ct = 1.0, risk II (Is = 1.0):
  pf = 0.7 Ce Ct Is pg (ASCE 7-16 Eq. 7.3-1); pm = 20 Is psf for pg above 20 psf
  (ASCE 7-16 Sec. 7.3.4); no rain-on-snow above pg 20 psf (ASCE 7-16 Sec. 7.10);
  design_uniform = max(pf, pm) (docs/contract.md, JSON output);
  zone SE, pg = 40 psf: pf = 28 psf, pm = 20 psf, design_uniform = 28 psf;
  zone SW, pg = 25 psf: pf = 17.5 psf, pm = 20 psf, design_uniform = 20 psf;
- the ratio and its threshold are neve's own definition (docs/contract.md,
  *Screening results*): load_ratio = design_uniform / load on record, flagged above 1.0.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.errors import InputError
from neve.engine.on_record import load_ratio, ratio_band
from neve.geo.screen.run import run_screen, screen
from neve.geo.screen.sitefile import parse_on_record_cells, parse_sites

#: 1 psf in kPa, from the exact definitions of the pound-force and the foot (NIST SP 811 App. B)
KPA_PER_PSF = 0.45359237 * 9.80665 / 0.3048**2 / 1000.0
#: a flat roof with stated factors (no assumed-factor flags to wade through)
ROOF = {"shape": "flat", "ce": 1.0, "ct": 1.0, "risk": "II"}
SE = (44.5, -108.5)  # fixture zone SE: pg 40 psf -> design_uniform 28 psf (see the docstring)
SW = (44.5, -109.5)  # fixture zone SW: pg 25 psf -> design_uniform 20 psf


def _sites(records, column="snow_load_on_record", where=SE):
    lat, lon = where
    return pd.DataFrame(
        {
            "site_id": [f"R{i}" for i in range(len(records))],
            "lat": lat,
            "lon": lon,
            "elevation": "1000ft",
            column: records,
        }
    )


def test_the_kpa_factor_is_the_exact_one():
    # NIST SP 811 App. B.8: 1 lbf/ft2 = 47.88026 Pa (rounded there); exact from the definitions
    assert KPA_PER_PSF == pytest.approx(0.0478802589803, rel=1e-12)
    from neve.engine.units import KPA_PER_PSF as neve_factor

    assert neve_factor == pytest.approx(0.0478802589803, rel=1e-12)


@pytest.mark.parametrize(
    "cell, psf",
    [
        ("30psf", 30.0),
        (" 30 PSF ", 30.0),
        ("30 lb/ft2", 30.0),
        ("1.44kPa", 1.44 / 0.0478802589803),  # NIST SP 811 App. B (see module docstring)
        ("1.44 kN/m2", 1.44 / 0.0478802589803),
        ("1436.4Pa", 1.4364 / 0.0478802589803),
    ],
)
def test_unit_in_the_cell(cell, psf):
    values, err = parse_on_record_cells(pd.Series([cell]), None, "snow_load_on_record")
    assert err[0] == ""
    assert values[0] == pytest.approx(psf, rel=1e-12)


@pytest.mark.parametrize(
    "column, cells, psf",
    [
        ("snow_load_on_record_psf", [30, 25.5], [30.0, 25.5]),
        ("snow_load_on_record_psf", ["30", "25.5"], [30.0, 25.5]),  # text cells (a CSV)
        ("Snow_Load_On_Record_PSF", ["30", "25.5"], [30.0, 25.5]),  # case-blind, as every column
        ("snow_load_on_record_kpa", [1.44, 2.0], [1.44 / 0.0478802589803, 2.0 / 0.0478802589803]),
        ("snow_load_on_record_kpa", ["1.44", "2kPa"], [1.44 / 0.0478802589803, 2.0 / 0.0478802589803]),
    ],
)  # fmt: skip
def test_unit_in_the_column_name(column, cells, psf):
    s = parse_sites(_sites(cells, column))
    assert list(s.error) == ["", ""]
    np.testing.assert_allclose(s.on_record_psf, psf, rtol=1e-12)


def test_a_cell_contradicting_the_column_unit_refuses_the_file():
    # as for elevation_ft/elevation_m (issue 8): the column's unit is in doubt, so every row is
    with pytest.raises(InputError, match="snow_load_on_record_psf: record 2 says '2kPa'"):
        parse_sites(_sites(["30", "2kPa"], "snow_load_on_record_psf"))


def test_two_on_record_columns_exit_2():
    df = _sites(["30psf"]).assign(snow_load_on_record_psf=[30])
    with pytest.raises(InputError, match="more than one load-on-record column"):
        parse_sites(df)


@pytest.mark.parametrize(
    "cell, fragment",
    [
        ("abc", "'abc' is not a load"),
        ("-5psf", "'-5psf' is not above 0"),
        ("0psf", "'0psf' is not above 0"),
        ("0kPa", "'0kPa' is not above 0"),
        ("30", "'30' is a bare number with no unit"),
        ("30 furlongs", "has a unit that is not a load"),
        ("30ft", "has a unit that is not a load"),
        ("5000psf", "'5000psf' is out of range"),
    ],
)
def test_bad_cells_are_error_rows_naming_the_column(cell, fragment, grid_layer):
    df = _sites(["30psf", cell, ""])
    res = screen(df, roof=ROOF, layers=[grid_layer])
    assert list(res["site_id"]) == ["R0", "R1", "R2"]  # every row kept, in order
    assert list(res["snow_load_on_record"]) == ["30psf", cell, ""]  # every cell as given
    assert list(res["status"]) == ["ok", "error", "ok"]
    assert res.loc[1, "message"].startswith("snow_load_on_record: ")
    assert fragment in res.loc[1, "message"]
    assert np.isnan(res.loc[1, "load_ratio"]) and "exceeds_record" not in res.loc[1, "flags"]


def test_a_bad_cell_in_a_kpa_column_names_that_column(grid_layer):
    res = screen(_sites(["1.2", "x"], "snow_load_on_record_kpa"), roof=ROOF, layers=[grid_layer])
    assert list(res["status"]) == ["ok", "error"]
    assert res.loc[1, "message"].startswith("snow_load_on_record_kpa: 'x' is not a load")


def test_ratio_hand_checked_and_flagged_above_one(grid_layer):
    # SE: design_uniform 28 psf (Eq. 7.3-1; see the docstring); SW: 20 psf (pm, Sec. 7.3.4)
    df = pd.concat(
        [_sites(["20psf", "28psf", "35psf"], where=SE), _sites(["20psf", "25psf"], where=SW)],
        ignore_index=True,
    )
    res = screen(df, roof=ROOF, layers=[grid_layer])
    np.testing.assert_allclose(res["design_uniform_psf"], [28.0, 28.0, 28.0, 20.0, 20.0])
    np.testing.assert_allclose(res["on_record_psf"], [20.0, 28.0, 35.0, 20.0, 25.0])
    np.testing.assert_allclose(res["on_record_kpa"], np.array([20, 28, 35, 20, 25]) * KPA_PER_PSF)
    # 28/20 = 1.4, 28/28 = 1, 28/35 = 0.8, 20/20 = 1, 20/25 = 0.8 (hand division)
    np.testing.assert_allclose(res["load_ratio"], [1.4, 1.0, 0.8, 1.0, 0.8], rtol=1e-12)
    flagged = ["exceeds_record" in f.split(";") for f in res["flags"]]
    assert flagged == [True, False, False, False, False]  # 1.0 exactly is not above 1.0


def test_a_record_in_kpa_equal_to_todays_load_is_not_flagged(grid_layer):
    # 28 psf = 28 x 0.0478802589803 kPa (NIST SP 811 App. B): equal loads, ratio 1 to rounding
    kpa = f"{28 * 0.0478802589803:.13f}kPa"
    res = screen(_sites([kpa, f"{27.99 * KPA_PER_PSF:.13f}kPa"]), roof=ROOF, layers=[grid_layer])
    assert res.loc[0, "load_ratio"] == pytest.approx(1.0, rel=1e-11)
    assert "exceeds_record" not in res.loc[0, "flags"]
    assert res.loc[1, "load_ratio"] == pytest.approx(28 / 27.99, rel=1e-11)
    assert "exceeds_record" in res.loc[1, "flags"].split(";")


def test_rows_without_a_load_on_record_are_not_flagged(grid_layer):
    res = screen(_sites(["", None, "20psf"]), roof=ROOF, layers=[grid_layer])
    assert list(res["status"]) == ["ok", "ok", "ok"]
    assert res["load_ratio"].isna().tolist() == [True, True, False]
    assert res["on_record_psf"].isna().tolist() == [True, True, False]
    assert ["exceeds_record" in f for f in res["flags"]] == [False, False, True]


def test_no_ratio_without_a_governing_uniform_load(grid_layer):
    # NW is a study zone (invented fixture): no ground value, so no roof load and no ratio
    df = pd.concat([_sites(["5psf"], where=(45.5, -109.5)), _sites(["5psf"])], ignore_index=True)
    res = screen(df, roof=ROOF, layers=[grid_layer])
    assert list(res["status"]) == ["study_required", "ok"]
    assert np.isnan(res.loc[0, "load_ratio"]) and "exceeds_record" not in res.loc[0, "flags"]
    assert res.loc[1, "load_ratio"] == pytest.approx(28 / 5)
    # without a roof there is no design_uniform at all: nothing is compared, nothing flagged
    bare = run_screen(_sites(["5psf", "10psf"]), layers=[grid_layer])
    assert bare.results["load_ratio"].isna().all()
    assert not bare.results["flags"].str.contains("exceeds_record").any()
    assert bare.summary["on_record"]["compared"] == 0
    assert bare.summary["on_record"]["roof_given"] is False


def test_summary_counts(grid_layer):
    df = pd.concat(
        [_sites(["20psf", "28psf", "10psf", "", "abc"]), _sites(["4psf"], where=(45.5, -109.5))],
        ignore_index=True,
    )
    run = run_screen(df, roof=ROOF, layers=[grid_layer])
    rec = run.summary["on_record"]
    # given: 20, 28, 10 psf and the study-zone row (4 psf); "abc" is an error row, "" none
    assert rec["given"] == 4
    assert rec["compared"] == 3  # the study-zone row has no design_uniform
    assert rec["exceeds_record"] == 2  # 28/20 = 1.4 and 28/10 = 2.8; 28/28 = 1.0 is not
    assert rec["compared_with"] == "design_uniform" and rec["roof_given"] is True
    assert rec["load_ratio"] == {"min": pytest.approx(1.0), "max": pytest.approx(2.8)}
    assert run.summary["flags"]["exceeds_record"] == 2
    from neve.geo.screen.outputs import format_summary, summary_rows

    text = format_summary(run.summary)
    assert "2 above the record (exceeds_record)" in text and "drifts not included" in text
    sheet = dict(summary_rows(run.summary).itertuples(index=False))
    assert sheet["exceeds_record (load_ratio above 1.0)"] == 2


def test_without_the_column_nothing_changes(grid_layer):
    res = screen(
        _sites(["20psf"]).drop(columns="snow_load_on_record"), roof=ROOF, layers=[grid_layer]
    )
    assert not {"load_ratio", "on_record_psf", "on_record_kpa"} & set(res.columns)
    run = run_screen(_sites(["20psf"]).drop(columns="snow_load_on_record"), layers=[grid_layer])
    assert "on_record" not in run.summary


def test_the_threshold_and_the_bands():
    # neve's own definition: above 1.0 flagged, 1.0 itself not; bands split at exactly that point
    ratio, above = load_ratio([30.0, 30.0, 30.0000001, np.nan, 30.0], [30.0, 31.0, 30.0, 30.0, 0.0])
    assert above.tolist() == [False, False, True, False, False]
    assert ratio[0] == 1.0 and np.isnan(ratio[3]) and np.isnan(ratio[4])
    bands = ratio_band(ratio)
    assert bands.tolist() == [1, 1, 2, -1, -1]


def test_cli_screen_with_loads_on_record(tmp_path, grid_layer):
    sites = tmp_path / "sites.csv"
    sites.write_text(
        "site_id,lat,lon,elevation,snow_load_on_record\n"
        "A,44.5,-108.5,1000ft,20psf\nB,44.5,-108.5,1000ft,\nC,44.5,-108.5,1000ft,zero\n",
        encoding="utf-8",
    )
    out, summ = tmp_path / "out.csv", tmp_path / "s.json"
    args = ["screen", str(sites), "-o", str(out), "--layer", str(grid_layer), "--shape", "flat",
            "--ce", "1.0", "--ct", "1.0", "--risk", "II", "--quiet", "--summary-json", str(summ)]  # fmt: skip
    res = CliRunner().invoke(main, args)
    assert res.exit_code == 0, res.output
    assert "loads on record: 1 given, 1 compared" in res.output  # "zero": an error row
    table = pd.read_csv(out, dtype=str, keep_default_na=False)
    assert list(table["snow_load_on_record"]) == ["20psf", "", "zero"]
    assert list(table["status"]) == ["ok", "ok", "error"]
    assert float(table.loc[0, "load_ratio"]) == pytest.approx(1.4)  # 28 / 20
    assert table.loc[1, "load_ratio"] == ""
    assert json.loads(summ.read_text())["on_record"]["exceeds_record"] == 1


def test_cli_ratio_map_needs_the_column(tmp_path, grid_layer):
    sites = tmp_path / "sites.csv"
    sites.write_text("site_id,lat,lon,elevation\nA,44.5,-108.5,1000ft\n", encoding="utf-8")
    out, page = tmp_path / "out.csv", tmp_path / "map.html"
    args = ["screen", str(sites), "-o", str(out), "--layer", str(grid_layer), "--shape", "flat",
            "--quiet", "--map", str(page), "--map-colour", "ratio"]  # fmt: skip
    res = CliRunner().invoke(main, args)
    assert res.exit_code == 2
    assert "map-colour" in res.output and "snow_load_on_record" in res.output
    assert not out.exists() and not page.exists()  # refused before any output


def test_the_new_columns_keys_and_flag_are_in_the_contract(tmp_path, grid_layer):
    # docs/contract.md is the contract (tests/test_docs.py checks the demo run without a
    # load on record; this run has one, with a roof)
    from tests.test_docs import _keys, _missing

    sites = tmp_path / "sites.csv"
    sites.write_text(
        "site_id,lat,lon,elevation,snow_load_on_record\nA,44.5,-108.5,1000ft,20psf\n", "utf-8"
    )
    out, summ = tmp_path / "out.csv", tmp_path / "s.json"
    args = ["screen", str(sites), "-o", str(out), "--layer", str(grid_layer), "--shape", "flat",
            "--quiet", "--summary-json", str(summ)]  # fmt: skip
    assert CliRunner().invoke(main, args).exit_code == 0
    columns = pd.read_csv(out, nrows=0).columns.tolist()
    added = columns[columns.index("status") :]
    assert {"on_record_psf", "on_record_kpa", "load_ratio"} <= set(added)
    _missing(added, "screening result column(s)")
    summary = json.loads(summ.read_text(encoding="utf-8"))
    _missing(_keys(summary["on_record"], {"on_record"}), "`--summary-json` key(s)")
    _missing(["exceeds_record", "snow_load_on_record", "snow_load_on_record_psf",
              "snow_load_on_record_kpa"], "name(s)")  # fmt: skip
    lat, lon = SE
    res = CliRunner().invoke(main, ["site", "--at", f"{lat},{lon}", "--layer", str(grid_layer),
                                    "--elevation", "1000ft", "--shape", "flat",
                                    "--on-record", "20psf", "--format", "json"])  # fmt: skip
    assert res.exit_code == 0, res.output
    _missing(_keys(json.loads(res.output)["on_record"], {"on_record"}), "`neve site` key(s)")
