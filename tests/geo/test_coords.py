"""Coordinates (neve.geo.site.coords): decimal and DMS input, ranges."""

from __future__ import annotations

import pytest

from neve.engine.errors import InputError
from neve.geo.site.coords import parse_latlon, suspect_mask


@pytest.mark.parametrize(
    "text, lat, lon",
    [
        ("47.52,-140.05", 47.52, -140.05),
        (" 47.52 , -140.05 ", 47.52, -140.05),
        ("47.52 -140.05", 47.52, -140.05),
        # DMS to decimal: d + m/60 + s/3600 (common practice)
        ("47°31'12\"N, 140°03'W", 47 + 31 / 60 + 12 / 3600, -(140 + 3 / 60)),
        ("47 31 12 N 140 3 0 W", 47.52, -140.05),
        ("47d31m12sN 140d3mW", 47.52, -140.05),
        ("140.05W 47.52N", 47.52, -140.05),  # order given by the hemisphere letters
        ("33°52'S, 151°12'E", -(33 + 52 / 60), 151.2),
        ("-90,180", -90.0, 180.0),
    ],
)
def test_parses(text, lat, lon):
    got = parse_latlon(text)
    assert got == (pytest.approx(lat, abs=1e-9), pytest.approx(lon, abs=1e-9))


@pytest.mark.parametrize(
    "text, match",
    [
        ("95,10", "latitude 95 is out of range .latitude and longitude look swapped"),
        ("-90.5,10", "latitude"),
        ("10,181", "longitude 181"),
        ("abc", "not a"),
        ("1,2,3", "not a"),
        ("47 70 0 N, 10 E", "minutes"),
        ("47N, 10N", "two latitudes"),
        ("", "not a"),
        ("nan,1", "not a"),
    ],
)
def test_rejects(text, match):
    with pytest.raises(InputError, match=match):
        parse_latlon(text)


def test_zero_zero_is_suspect():
    assert list(suspect_mask([0.0, 0.0, 10.0], [0.0, 1.0, 0.0])) == [True, False, False]
