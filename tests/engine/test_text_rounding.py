"""Engineering rounding of the text of ``neve roof`` and ``neve site`` (issue 11).

Three significant figures in the steps (common practice), loads to 0.1 psf
and 0.01 kPa in the summaries, the slope as ``6:12 (26.6°)`` where it was
given as a rise:run and ``26.6°`` otherwise, and a rain-on-snow surcharge
that does not apply reading "not applicable" without a zero beside it. The
JSON keeps its keys, types and unrounded values. Hand values: ASCE 7-16
Fig. 7.6-1, Eq. 7.7-1 and Sec. 7.10 (from memory).
"""

from __future__ import annotations

import json
import math
import re
from pathlib import Path

import pytest
from click.testing import CliRunner

from neve.cli import main
from neve.engine.steps import fmt, fmt_deg
from tests.rounding import too_precise

ROOT = Path(__file__).resolve().parents[2]
GABLE = ["--shape", "gable", "--slope", "6:12", "--eave-to-ridge", "40ft"]
#: a roof where the ASCE 7-16 rain-on-snow surcharge applies: pg <= 20 psf and the
#: slope, atan(0.25/12) = 1.19 deg, under W/50 = 120/50 = 2.4 (Sec. 7.10, from memory)
LOW_SLOPE = ["--shape", "monoslope", "--slope", "0.25:12", "--eave-to-ridge", "120ft"]
#: a printed load of a summary: 0.1 psf, 0.01 kPa
LOAD = re.compile(r"(-?\d+(?:\.\d+)?) psf \((-?\d+(?:\.\d+)?) kPa\)")


def roof_out(*args: str) -> str:
    res = CliRunner().invoke(main, ["roof", *args])
    assert res.exit_code == 0, res.output
    return res.output


def roof_json(*args: str) -> dict:
    return json.loads(roof_out(*args, "--format", "json"))


def step_lines(text: str) -> list[str]:
    """The step lines of a roof text, without their provision in brackets."""
    return [line.rsplit("   [", 1)[0] for line in text.splitlines() if line.rstrip().endswith("]")
            and "   [" in line]  # fmt: skip


def step(result: dict, symbol: str) -> dict:
    return next(s for c in result["cases"] for s in c["steps"] if s["symbol"] == symbol)


@pytest.mark.parametrize(
    ("x", "expected"),
    [
        (30.0, "30"),  # exact: as given
        (0.7, "0.7"),  # a factor exact at fewer figures is not padded
        (49.591, "49.6"),
        (2.19827, "2.20"),  # rounded: the trailing zero says the precision
        (1479.5505, "1480"),
        (999.6, "1000"),  # the rounding carries into a new digit
        (0.99996, "1.00"),
        (-2.2123, "-2.21"),
        (0.04788026, "0.0479"),
        (float("nan"), "nan"),
        ([1.0, 2.0], "[2 values]"),
    ],
)
def test_substituted_numbers_three_figures(x, expected):
    # common practice: three significant figures for a calculation step
    assert fmt(x) == expected


def test_substituted_slope_in_degrees():
    # atan(6/12) = 26.565 deg (plain trigonometry)
    assert fmt_deg(math.degrees(math.atan(6 / 12))) == "26.6\u00b0"


def test_slope_as_given():
    # 6:12 is atan(6/12) = 26.565 deg: shown as the pitch typed, with its angle
    text = roof_out("--pg", "30psf", *GABLE)
    assert "slope 6:12 (26.6\u00b0)," in text
    assert "26.57" not in text and "26.565" not in text
    angle = roof_out("--pg", "30psf", "--shape", "gable", "--slope", "26.6deg",
                     "--eave-to-ridge", "40ft")  # fmt: skip
    roof_line = next(line for line in angle.splitlines() if line.startswith("  roof:"))
    assert "slope 26.6\u00b0," in roof_line and ":12" not in roof_line


def test_steps_three_figures_and_json_unrounded():
    # ASCE 7-16 Fig. 7.6-1 (from memory): hd = 0.43 lu^(1/3) (pg + 10)^(1/4) - 1.5 with
    # lu = W = 40 ft, pg = 30 psf: 2.198 ft, printed 2.20; gamma = 0.13 x 30 + 14 = 17.9 pcf
    hd = 0.43 * 40 ** (1 / 3) * (30 + 10) ** 0.25 - 1.5
    assert abs(hd - 2.198) < 1e-3
    text = roof_out("--pg", "30psf", *GABLE)
    lines = step_lines(text)
    assert lines, text
    for line in lines:
        assert too_precise(line) == [], line
    assert any(re.search(r"\bhd = 2\.20 +ft", line) for line in lines), text
    assert "p_sur = 2.20 x 17.9 / sqrt(2)" in text
    data = roof_json("--pg", "30psf", *GABLE)  # the JSON keeps the value unrounded
    hd_step = step(data, "hd")
    assert isinstance(hd_step["value"], float)
    assert hd_step["value"] == pytest.approx(hd, abs=1e-4) and hd_step["value"] != 2.2
    assert hd_step["substituted"] == "hd = 0.43 x 40^(1/3) x (30 + 10)^(1/4) - 1.5"


def test_summary_loads_to_a_tenth_of_a_psf():
    for args in (
        ("--pg", "30psf", *GABLE),
        ("--pg", "1.68kPa", "--roof", str(ROOT / "examples" / "warehouse.toml")),
    ):
        text = roof_out(*args)
        loads = LOAD.findall(text)
        assert len(loads) > 5, text
        for psf, kpa in loads:
            assert re.fullmatch(r"-?\d+\.\d", psf) and re.fullmatch(r"-?\d+\.\d\d", kpa), (psf, kpa)


def test_factors_line_three_figures():
    # ASCE 7-16 Fig. 7.4-1a (from memory): the Ct = 1.0 line for other surfaces is
    # Cs = (70 - slope)/40 past 30 deg; 14:12 = atan(14/12) = 49.40 deg -> 20.60/40 = 0.515
    text = roof_out("--pg", "40psf", "--shape", "gable", "--slope", "14:12",
                    "--eave-to-ridge", "25ft")  # fmt: skip
    line = next(line for line in text.splitlines() if line.startswith("  Ce = "))
    cs = (70 - math.degrees(math.atan(14 / 12))) / 40
    assert f"Cs = {cs:.3f}" in line, line
    assert too_precise(line) == [], line


def test_rain_on_snow_not_applicable_never_zero():
    # ASCE 7-16 Sec. 7.10 (from memory): no surcharge with pg = 30 psf > 20 psf
    text = roof_out("--pg", "30psf", *GABLE)
    assert "rain-on-snow = not applicable" in text
    assert "rain_on_snow =" not in text  # the balanced case lists no zero
    ros = [line for line in text.splitlines() if "p_ros" in line]
    assert len(ros) == 1 and "p_ros = not applicable" in ros[0], ros
    assert not re.search(r"p_ros = +0\b", text)
    assert "n/a" not in text
    rain_lines = [line for line in text.splitlines() if "rain" in line or "p_ros" in line]
    assert not any(re.search(r"(?<![\d.])0(\.0+)? (psf|kPa)", line) for line in rain_lines), (
        rain_lines
    )
    data = roof_json("--pg", "30psf", *GABLE)  # the JSON as the contract has it
    assert data["loads"]["rain_on_snow"] is None
    balanced = next(c for c in data["cases"] if c["case"] == "balanced")
    assert balanced["rain_on_snow"] == {"psf": 0.0, "kPa": 0.0}
    assert step(data, "p_ros")["value"] == 0.0


def test_rain_on_snow_where_it_applies():
    # ASCE 7-16 Sec. 7.10 (from memory): 5 psf; NIST SP 811: 5 psf = 0.2394 kPa
    text = roof_out("--pg", "15psf", *LOW_SLOPE)
    assert "rain-on-snow = 5.0 psf (0.24 kPa)" in text
    assert "rain_on_snow = 5.0 psf (0.24 kPa)" in text
    assert re.search(r"p_ros = 5\.00 +psf", text), text
    assert "not applicable" not in text.split("Not required")[0].split("pm = ")[1]


@pytest.mark.parametrize(
    "args",
    [
        (
            "--pg",
            "42.7psf",
            "--shape",
            "hip",
            "--slope",
            "8:12",
            "--eave-to-ridge",
            "33.3ft",
            "--risk",
            "IV",
            "--ce",
            "0.9",
            "--ct",
            "1.1",
        ),
        ("--pg", "1.68kPa", "--roof", str(ROOT / "examples" / "warehouse.toml")),
        (
            "--standard",
            "asce7-22",
            "--pg",
            "30psf",
            "--w2",
            "0.5",
            "--roof",
            str(ROOT / "examples" / "warehouse.toml"),
        ),
        ("--standard", "asce7-22", "--pg", "37.3psf", "--w2", "0.45", *GABLE),
        ("--pg", "15psf", *LOW_SLOPE),
    ],
    ids=["hip", "warehouse-kPa", "warehouse-7-22", "gable-7-22", "rain-on-snow"],
)
def test_no_step_beyond_three_figures(args):
    # steps, parapets, projections, sliding and ice dams (examples/warehouse.toml), both
    # editions: every number of every step line to three significant figures (common practice)
    text = roof_out(*args)
    lines = step_lines(text)
    assert len(lines) > 5, text
    for line in lines:
        assert too_precise(line) == [], line
    assert not re.search(r"\d+\.\d\d+ deg\b", text)


def test_site_text_rounding():
    # the README's first command, without --map and --package (invented Skerrow demo)
    res = CliRunner().invoke(main, ["site", "--at", "47.52,-140.05", "--dem", "demo",
                                    "--shape", "gable", "--slope", "6:12",
                                    "--eave-to-ridge", "30ft"])  # fmt: skip
    assert res.exit_code == 0, res.output
    text = res.output
    assert re.search(r"Ground pg: +\d+\.\d psf \(\d+\.\d\d kPa\)\n", text), text
    ground = text.split("Ground value steps:")[1].split("Roof (")[0]
    assert ground.strip() and too_precise(ground) == [], ground
    assert "slope 6:12 (26.6\u00b0)" in text and "26.57" not in text
    for line in step_lines(text):
        assert too_precise(line) == [], line
    assert "rain-on-snow = not applicable" in text and "rain_on_snow =" not in text
    assert "Is = None" not in text


def test_compare_text_rain_on_snow_not_applicable():
    # ASCE 7-16 and 7-22 Sec. 7.10 (from memory): no surcharge where pg > 20 psf (the demo
    # site's pg is about 50 psf in both editions): "not applicable", no 0.0 psf, no difference
    res = CliRunner().invoke(main, ["compare", "--at", "47.52,-140.05", "--dem", "demo",
                                    "--shape", "gable", "--slope", "6:12",
                                    "--eave-to-ridge", "30ft", "--standard", "asce7-16",
                                    "--standard", "asce7-22"])  # fmt: skip
    assert res.exit_code == 0, res.output
    rows = [line for line in res.output.splitlines() if line.strip().startswith("rain_on_snow")]
    assert len(rows) == 2, res.output  # the roof's loads and the balanced case
    for row in rows:
        assert row.split()[1:] == ["not", "applicable", "not", "applicable", "-", "-"], row
