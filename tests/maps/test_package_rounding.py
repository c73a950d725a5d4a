"""Engineering rounding in the calculation package, with values checked by hand.

Steps to three significant figures, loads to 0.1 psf and 0.01 kPa in the
summaries, the slope as rise on 12 with its angle, and one statement of the
rain-on-snow surcharge. The package is the README's first command's (the
invented Skerrow demo).
"""

from __future__ import annotations

import math
import re
import shlex
import shutil
import subprocess
from html import unescape

import pytest

from neve.engine import format as fmt
from tests.rounding import too_precise
from tests.test_readme import _setup_commands


def test_significant_by_hand():
    # hand-checked: 1479.5505 -> 1.48e3; 49.591 -> 49.6; 0.49862 -> 0.499 (common practice:
    # three significant figures for a calculation step)
    assert fmt.significant(1479.5505) == "1480"
    assert fmt.significant(49.591) == "49.6"
    assert fmt.significant(0.49862) == "0.499"
    assert fmt.significant(1.0) == "1.00"
    assert fmt.significant(31.9849) == "32.0"
    assert fmt.significant(float("nan")) == "n/a"


def test_pitch_by_hand():
    # 6:12 is atan(6/12) = 26.565 deg (plain trigonometry); 45 deg is 12:12
    assert fmt.pitch_text(math.degrees(math.atan(6 / 12))) == "6:12 (26.6\u00b0)"
    assert fmt.pitch_text(45.0) == "12:12 (45.0\u00b0)"
    # 5 deg: 12 tan 5 deg = 1.0499 -> 1.05 on 12
    assert fmt.pitch_text(5.0) == "1.05:12 (5.0\u00b0)"


def test_summary_load_decimals():
    # 10.414 psf / 0.4986 kPa -> 0.1 psf and 0.01 kPa, the zero kept
    assert fmt.load_text({"psf": 10.414, "kPa": 0.4986}) == "10.4 psf (0.50 kPa)"
    assert fmt.load_text({"psf": 31.985, "kPa": 1.5314}) == "32.0 psf (1.53 kPa)"


@pytest.fixture(scope="module")
def report_html(tmp_path_factory):
    """The report's HTML without the embedded site map (the README's first command)."""
    if shutil.which("neve") is None:
        pytest.skip("the neve command is not installed")
    tmp = tmp_path_factory.mktemp("round")
    main = _setup_commands()[0]
    args = shlex.split(main[main.index("neve site") :])
    res = subprocess.run(args, cwd=tmp, capture_output=True, text=True, timeout=300)
    assert res.returncode == 0, res.stderr
    html = (tmp / "calc" / "report.html").read_text(encoding="utf-8")
    return html[: html.index("<iframe")] + html[html.index("</iframe>") :]  # the report only


@pytest.fixture(scope="module")
def report(report_html):
    return unescape(re.sub(r"<[^>]+>", " ", report_html))


def _cells(row_html: str) -> list[str]:
    cells = re.findall(r"<td[^>]*>(.*?)</td>", row_html, flags=re.S)
    return [unescape(re.sub(r"<[^>]+>", " ", c)).strip() for c in cells]


@pytest.fixture(scope="module")
def step_rows(report_html):
    """Every row of every steps table: symbol, description, equation, substituted, result, ref."""
    tables = re.findall(r'<table class="steps">(.*?)</table>', report_html, flags=re.S)
    rows = [_cells(r) for t in tables for r in re.findall(r"<tr>(.*?)</tr>", t, flags=re.S)]
    return [r for r in rows if len(r) == 6]


def test_slope_shown_as_pitch(report):
    # the README gives --slope 6:12: atan(6/12) = 26.565 deg
    assert "6:12 (26.6\u00b0)" in report
    assert "26.565" not in report


def test_step_results_to_three_figures(report):
    # demo zone SK-H elevation table (invented): pg = 40 + (1479.55 - 1000) x 30 / 1500
    pg = 40 + (1479.5505 - 1000) * (70 - 40) / (2500 - 1000)
    assert abs(pg - 49.591) < 1e-3
    assert "49.6 psf" in report and "49.591 psf" not in report.replace("pg = 49.591 psf", "")
    assert "1480 ft" in report and "1479.5505" not in report


def test_surcharge_to_a_tenth_of_a_psf(report):
    # ASCE 7-16 Sec. 7.6.1 / Fig. 7.6-1 and Eq. 7.7-1 (from memory): hd = 0.43 lu^(1/3)
    # (pg + 10)^(1/4) - 1.5, gamma = 0.13 pg + 14, surcharge = hd gamma / sqrt(S), S = 2
    # for a 6:12 roof (12/6)
    pg, lu = 49.591, 30.0
    hd = 0.43 * lu ** (1 / 3) * (pg + 10) ** 0.25 - 1.5
    gamma = 0.13 * pg + 14
    p_sur = hd * gamma / math.sqrt(2)
    assert abs(p_sur - 31.985) < 0.01
    assert f"surcharge {p_sur:.1f} psf" in report  # 32.0 psf, the zero kept
    assert "surcharge 32 psf" not in report


def test_rain_on_snow_one_statement(report, step_rows):
    # ASCE 7-16 Sec. 7.10 (from memory): the surcharge applies only where pg <= 20 psf;
    # the demo site has pg = 49.6 psf, so it does not apply: "not applicable", never a zero
    row = re.search(r"Rain-on-snow surcharge\s+(.{0,60})", report).group(1)
    assert re.match(r"not applicable\s+ASCE 7-16 Sec\. 7\.10", row), row
    assert "no surcharge added" not in report
    assert not re.search(r"rain on snow\s", report)  # no zero row in the balanced case
    ros = [r for r in step_rows if r[0] == "p_ros"]
    assert len(ros) == 1 and ros[0][4] == "not applicable", ros
    assert not re.search(r"rain[- ]on[- ]snow[^.;]{0,40}\b0(\.0+)? (psf|kPa)", report)


def test_step_rows_three_figures(step_rows):
    # common practice: three significant figures in the substituted equation and the
    # result of every step (the old package printed 49.591, 34.714 and 450.967 m there)
    assert len(step_rows) > 15
    for symbol, _, _, substituted, result, _ in step_rows:
        assert too_precise(substituted) == [], (symbol, substituted)
        assert too_precise(result) == [], (symbol, result)


def test_slope_in_steps_in_degrees(report, step_rows):
    # atan(6/12) = 26.565 deg: steps and reasons read 26.6 degrees, never 26.57 deg
    assert "26.57" not in report
    cs = next(r for r in step_rows if r[0] == "Cs")
    assert cs[3] == "slope 26.6\u00b0 <= 30\u00b0, so Cs = 1", cs
    assert "slope 26.6\u00b0 is not below 15\u00b0" in report
    assert not any(re.search(r"\d deg\b", r[3]) for r in step_rows)
