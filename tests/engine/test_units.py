"""Parsing quantities with units and converting them.

Sources: the international foot, 1 ft = 0.3048 m exactly, and the pound-force,
1 lbf = 0.45359237 kg x 9.80665 m/s^2 = 4.4482216152605 N exactly (NIST SP 811,
Appendix B, from memory). Hence 1 psf = 4.4482216152605 / 0.09290304 Pa
= 47.880258980 Pa and 1 pcf = 4.4482216152605 / 0.028316846592 N/m3
= 157.087464 N/m3.
"""

from __future__ import annotations

import math

import pytest

from neve.engine import InputError
from neve.engine.units import (
    ft_to_m,
    kpa_to_psf,
    length_json,
    load_json,
    m_to_ft,
    parse_density,
    parse_length,
    parse_load,
    parse_slope,
    psf_to_kpa,
)

PA_PER_PSF = 47.880258980335843  # NIST SP 811 definitions, by hand as above
KNM3_PER_PCF = 0.157087464


def test_psf_to_kpa_exact_definition():
    # NIST SP 811 (from memory): 1 psf = 0.047880259 kPa
    assert psf_to_kpa(1.0) == pytest.approx(PA_PER_PSF / 1000.0, rel=1e-12)
    # 35 psf = 1.6758091 kPa
    assert psf_to_kpa(35.0) == pytest.approx(1.67580906, rel=1e-8)


def test_ft_to_m_exact_definition():
    # international foot: 1 ft = 0.3048 m exactly
    assert ft_to_m(1.0) == pytest.approx(0.3048, rel=1e-15)
    assert m_to_ft(412.0) == pytest.approx(412.0 / 0.3048, rel=1e-15)


@pytest.mark.parametrize(
    ("text", "psf"),
    [
        ("35psf", 35.0),
        ("35 psf", 35.0),
        ("35 lb/ft2", 35.0),
        ("1.68kPa", 1.68 * 1000.0 / PA_PER_PSF),  # 35.0875 psf
        ("1.68 kN/m2", 1.68 * 1000.0 / PA_PER_PSF),
        ("2400Pa", 2400.0 / PA_PER_PSF),  # 50.1251 psf
        ("0psf", 0.0),
    ],
)
def test_parse_load(text, psf):
    # NIST SP 811 conversion factors (from memory)
    assert parse_load(text, "pg") == pytest.approx(psf, rel=1e-12, abs=1e-12)


@pytest.mark.parametrize(
    ("text", "ft"),
    [
        ("30ft", 30.0),
        ("30 ft", 30.0),
        ("18in", 1.5),  # 12 in = 1 ft
        ("9.144m", 30.0),  # 30 x 0.3048
        ("914.4cm", 30.0),
        ("9144mm", 30.0),
    ],
)
def test_parse_length(text, ft):
    # international foot, 1 ft = 0.3048 m exactly
    assert parse_length(text, "eave_to_ridge") == pytest.approx(ft, rel=1e-12)


def test_parse_density():
    # NIST SP 811 (from memory): 1 pcf = 0.157087464 kN/m3; 2.5 kN/m3 = 15.9147 pcf
    assert parse_density("18pcf", "gamma") == pytest.approx(18.0, rel=1e-12)
    assert parse_density("2.5kN/m3", "gamma") == pytest.approx(2.5 / KNM3_PER_PCF, rel=1e-8)


@pytest.mark.parametrize(
    ("text", "deg"),
    [
        ("6:12", math.degrees(math.atan(6 / 12))),  # 26.565 deg
        ("6 on 12", math.degrees(math.atan(6 / 12))),
        ("0.25:12", math.degrees(math.atan(0.25 / 12))),  # 1.193 deg
        ("12:12", 45.0),
        ("26.6deg", 26.6),
        ("0.5rad", math.degrees(0.5)),
        ("0:12", 0.0),
    ],
)
def test_parse_slope(text, deg):
    # common practice: rise on a run of 12, or an angle
    assert parse_slope(text, "slope") == pytest.approx(deg, abs=1e-9)


@pytest.mark.parametrize(
    ("parser", "text", "field", "hint"),
    [
        (parse_load, "35", "pg", "psf"),  # bare number
        (parse_load, 35.0, "pg", "psf"),  # a float is a bare number too
        (parse_load, "35 furlongs", "pg", "kPa"),  # unknown unit
        (parse_load, "-5psf", "pg", "zero or more"),  # negative
        (parse_length, "30", "eave_to_ridge", "ft"),
        (parse_length, "thirty ft", "eave_to_ridge", "ft"),
        (parse_slope, "26.6", "slope", "6:12"),
        (parse_slope, "90deg", "slope", "under 90"),  # at 90 degrees
        (parse_slope, "95deg", "slope", "under 90"),
        (parse_slope, "12:0", "slope", "under 90"),  # vertical
        (parse_slope, "-1:12", "slope", "6:12"),
    ],
)
def test_bad_quantity_names_field_and_accepted(parser, text, field, hint):
    # common practice: the error names the field and what would be accepted
    with pytest.raises(InputError) as info:
        parser(text, field)
    assert info.value.field == field
    assert str(info.value).startswith(f"{field}: ")
    assert hint in str(info.value)


def test_json_forms_carry_both_units():
    # docs/contract.md, "Units": loads {"psf", "kPa"}, lengths {"ft", "m"}
    # 20 psf = 0.957605 kPa; 10 ft = 3.048 m
    assert load_json(20.0) == {"psf": 20.0, "kPa": pytest.approx(0.9576, abs=1e-4)}
    assert length_json(10.0) == {"ft": 10.0, "m": pytest.approx(3.048, abs=1e-4)}
    assert load_json(None) is None and length_json(None) is None


def test_round_trip_scalars():
    # regression guard: kPa -> psf -> kPa and m -> ft -> m return the start value
    assert psf_to_kpa(kpa_to_psf(1.44)) == pytest.approx(1.44, rel=1e-14)
    assert ft_to_m(m_to_ft(2.75)) == pytest.approx(2.75, rel=1e-14)
