"""The portfolio's colour scale (issue 11): ordered, colour-blind safe, adjacent bands apart.

Checked with colorspacious (a general-purpose colour-science library): CAM02-UCS
lightness J' (Luo, Cui and Li 2006), the CAM02-UCS colour difference delta E, and its
simulation of colour-vision deficiency (Machado, Oliveira and Fernandes 2009), at
severity 100 for protanomaly, deuteranomaly and tritanomaly.  The thresholds are ours:
adjacent bands at least 8 delta E apart under every simulation and 12 with normal vision
(a just-noticeable difference is about 1 to 2 in this space: from memory), and J'
strictly falling, so that the bands read in one order for every reader.
"""

from __future__ import annotations

import numpy as np
import pytest

from neve.maps import style

colorspacious = pytest.importorskip("colorspacious")

VISION = {
    "normal": None,
    "protan": {"name": "sRGB1+CVD", "cvd_type": "protanomaly", "severity": 100},
    "deutan": {"name": "sRGB1+CVD", "cvd_type": "deuteranomaly", "severity": 100},
    "tritan": {"name": "sRGB1+CVD", "cvd_type": "tritanomaly", "severity": 100},
}


def _rgb(colours) -> np.ndarray:
    return np.array([[int(c[i : i + 2], 16) / 255 for i in (1, 3, 5)] for c in colours])


def _seen(colours, vision):
    rgb = _rgb(colours)
    if VISION[vision] is None:
        return rgb
    return np.clip(colorspacious.cspace_convert(rgb, VISION[vision], "sRGB1"), 0, 1)


@pytest.mark.parametrize("vision", list(VISION))
def test_portfolio_bands_fall_in_lightness_for_every_reader(vision):
    seen = _seen(style.PORTFOLIO_BAND_COLOURS, vision)
    lightness = colorspacious.cspace_convert(seen, "sRGB1", "CAM02-UCS")[:, 0]
    assert np.all(np.diff(lightness) < -5), lightness  # light = low load, dark = high load


@pytest.mark.parametrize("vision", list(VISION))
def test_adjacent_portfolio_bands_are_told_apart(vision):
    seen = _seen(style.PORTFOLIO_BAND_COLOURS, vision)
    gaps = [colorspacious.deltaE(a, b, input_space="sRGB1") for a, b in zip(seen, seen[1:], strict=False)]
    assert min(gaps) >= (12 if vision == "normal" else 8), np.round(gaps, 1)


def test_the_check_tells_a_bad_scale_from_a_good_one():
    """A red-green pair that protan readers confuse fails the same measure (so it can fail)."""
    seen = _seen(["#d62728", "#2ca02c"], "deutan")  # a red and a green of equal lightness
    normal = _seen(["#d62728", "#2ca02c"], "normal")
    gap = colorspacious.deltaE(seen[0], seen[1], input_space="sRGB1")
    assert gap < colorspacious.deltaE(normal[0], normal[1], input_space="sRGB1") / 2


def test_bands_and_colours_pair_up_and_the_classes_cover_every_load():
    assert len(style.PORTFOLIO_BAND_COLOURS) == len(style.PORTFOLIO_BANDS_PSF)
    classes = style.portfolio_classes()
    for pg, band in ((0.0, 0), (9.99, 0), (10.0, 1), (49.9, 3), (150.0, 6)):
        assert style.colour_for(pg, classes) == style.PORTFOLIO_BAND_COLOURS[band]
        assert style.portfolio_band(pg) == band
