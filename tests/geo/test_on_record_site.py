"""``neve site --on-record``: the existing-roof check for one site (neve.engine.on_record,
neve.geo.site.one, neve.cli.site).

Sources of the expected numbers:

- the fixture grid of tests/geo/conftest.py (invented): zone Z2 maps pg = 30 psf up to
  500 ft, zone Z3 requires a study;
- a flat roof with Ce = 1.0, Ct = 1.0, risk II (Is = 1.0) on pg = 30 psf:
  pf = 0.7 x 1.0 x 1.0 x 1.0 x 30 = 21 psf (ASCE 7-16 Eq. 7.3-1); pm = 20 Is = 20 psf for
  pg above 20 psf (ASCE 7-16 Sec. 7.3.4); no rain-on-snow above pg 20 psf (Sec. 7.10); so
  design_uniform = max(21, 20) = 21 psf;
- 1 psf = 0.0478802589803 kPa, exact from 1 lbf = 0.45359237 kg x 9.80665 m/s^2 and
  1 ft = 0.3048 m (NIST SP 811, 2008, Appendix B);
- load_ratio = design_uniform / load on record, flagged above 1.0: neve's own definition
  (docs/contract.md, *JSON output*, ``neve site``).
"""

from __future__ import annotations

import json

import pandas as pd
import pytest
from click.testing import CliRunner

from neve.cli import main

from .conftest import centre

ROOF = ["--shape", "flat", "--ce", "1.0", "--ct", "1.0", "--risk", "II"]
KPA_PER_PSF = 0.0478802589803  # NIST SP 811 App. B (see the module docstring)


def _z2() -> list[str]:
    lat, lon = centre(1, 0)
    return ["--at", f"{lat},{lon}", "--elevation", "100ft"]


def run(*args):
    return CliRunner().invoke(main, ["site", *args])


def site_json(*args):
    res = run(*args, "--format", "json")
    assert res.exit_code == 0, res.output
    return json.loads(res.output)


def test_ratio_hand_checked_and_flagged(grid_layer):
    data = site_json(*_z2(), "--layer", str(grid_layer), *ROOF, "--on-record", "15psf")
    assert set(data) == {"site", "ground", "roof", "on_record"}
    rec = data["on_record"]
    assert rec["load"] == {"psf": 15.0, "kPa": pytest.approx(15 * KPA_PER_PSF, abs=1e-4)}
    assert rec["design_uniform"]["psf"] == pytest.approx(21.0)  # Eq. 7.3-1 (docstring)
    assert rec["design_uniform"] == data["roof"]["design_uniform"]
    assert rec["load_ratio"] == pytest.approx(21.0 / 15.0, rel=1e-12)  # 1.4 by hand
    assert rec["exceeds_record"] is True
    assert rec["compared_with"] == "design_uniform" and rec["reason"] is None
    assert "drift" in rec["note"]  # says what is not compared


@pytest.mark.parametrize(
    "given, ratio, above",
    [
        ("21psf", 1.0, False),  # equal: 1.0 is not above 1.0
        ("22psf", 21.0 / 22.0, False),
        ("20.9psf", 21.0 / 20.9, True),
        (f"{21 * KPA_PER_PSF:.13f}kPa", 1.0, False),  # the same load written in kPa
        ("1kPa", 21.0 * KPA_PER_PSF, True),  # 1 kPa = 20.885 psf
    ],
)
def test_threshold_exactly_above_one(grid_layer, given, ratio, above):
    rec = site_json(*_z2(), "--layer", str(grid_layer), *ROOF, "--on-record", given)["on_record"]
    assert rec["load_ratio"] == pytest.approx(ratio, rel=1e-10)
    assert rec["exceeds_record"] is above


def test_without_on_record_the_contract_is_unchanged(grid_layer):
    data = site_json(*_z2(), "--layer", str(grid_layer), *ROOF)
    assert set(data) == {"site", "ground", "roof"}


def test_no_roof_no_ratio(grid_layer):
    rec = site_json(*_z2(), "--layer", str(grid_layer), "--on-record", "15psf")["on_record"]
    assert rec["load_ratio"] is None and rec["exceeds_record"] is False
    assert rec["design_uniform"] is None and "no roof given" in rec["reason"]


def test_study_site_no_ratio(grid_layer):
    lat, lon = centre(2, 0)  # Z3: study (invented fixture)
    data = site_json("--at", f"{lat},{lon}", "--layer", str(grid_layer), *ROOF,
                     "--on-record", "5psf")  # fmt: skip
    assert data["ground"]["status"] == "study_required"
    rec = data["on_record"]
    assert rec["load_ratio"] is None and rec["exceeds_record"] is False
    assert "study_required" in rec["reason"]


@pytest.mark.parametrize(
    "given, fragment",
    [
        ("abc", "'abc' is not a quantity"),
        ("-5psf", "'-5psf' is not above 0"),
        ("0psf", "'0psf' is not above 0"),
        ("30", "bare number '30' has no unit"),
        ("30ft", "unknown unit 'ft'"),
        ("30 furlongs", "unknown unit"),
        ("3000psf", "out of range"),
    ],
)
def test_bad_on_record_exits_2(grid_layer, given, fragment):
    res = run(*_z2(), "--layer", str(grid_layer), *ROOF, "--on-record", given)
    assert res.exit_code == 2, res.output
    assert "on-record" in res.output and fragment in res.output


def test_on_record_given_twice_exits_2(grid_layer):
    res = run(*_z2(), "--layer", str(grid_layer), *ROOF, "--on-record", "1psf",
              "--on-record", "2psf")  # fmt: skip
    assert res.exit_code == 2 and "given 2 times" in res.output


def test_text_output_shows_the_check(grid_layer):
    res = run(*_z2(), "--layer", str(grid_layer), *ROOF, "--on-record", "15psf")
    assert res.exit_code == 0, res.output
    assert "On record:   15.0 psf (0.72 kPa)" in res.output  # 0.1 psf, 0.01 kPa
    assert "Load ratio:  1.400  (above the record: exceeds_record)" in res.output


def test_site_and_screen_give_the_same_ratio(grid_layer, tmp_path):
    # one site, one roof: `neve site` and `neve screen` compare the same unrounded load
    from neve.geo.screen.run import screen

    lat, lon = centre(1, 0)
    rec = site_json(*_z2(), "--layer", str(grid_layer), *ROOF, "--on-record", "1.3kPa")
    sites = pd.DataFrame({"lat": [lat], "lon": [lon], "elevation": ["100ft"],
                          "snow_load_on_record": ["1.3kPa"]})  # fmt: skip
    res = screen(sites, layers=[grid_layer], roof={"shape": "flat", "ce": 1.0, "ct": 1.0,
                                                   "risk": "II"})  # fmt: skip
    assert res.loc[0, "load_ratio"] == rec["on_record"]["load_ratio"]
    assert ("exceeds_record" in res.loc[0, "flags"]) is rec["on_record"]["exceeds_record"]


def test_the_package_shows_the_check(grid_layer, tmp_path):
    pkg = tmp_path / "pkg"
    res = run(*_z2(), "--layer", str(grid_layer), *ROOF, "--on-record", "15psf",
              "--package", str(pkg))  # fmt: skip
    assert res.exit_code == 0, res.output
    html = (pkg / "report.html").read_text(encoding="utf-8")
    assert "Roof snow load on record" in html
    assert "1.400: above the record (exceeds_record)" in html
    assert json.loads((pkg / "site.json").read_text())["on_record"]["exceeds_record"] is True
