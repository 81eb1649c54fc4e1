"""Parsing quantities at the edge: units, dimensions, temperatures, conductor sizes."""

from __future__ import annotations

import pytest

from coilstage.units import (
    QuantityError,
    parse_cable_size,
    parse_dimensionless,
    parse_quantity,
    parse_resistance_at,
    parse_temperature,
)


@pytest.mark.parametrize(
    ("text", "dim", "si"),
    [
        ("35 mm^2", "area", 35e-6),
        ("35 mm²", "area", 35e-6),
        ("2.4 m", "length", 2.4),
        ("8 mohm", "resistance", 0.008),
        ("1.5 mΩ", "resistance", 0.0015),
        ("45 mH", "inductance", 0.045),
        ("225 A*h", "charge", 225 * 3600.0),
        ("12 min", "time", 720.0),
        ("3 ft", "length", 0.9144),  # 1 ft = 0.3048 m exactly (international foot, 1959)
    ],
)
def test_parse_quantity_to_si(text, dim, si):
    # rel 1e-12: conversion factors exact in decimal: round-off only
    assert parse_quantity(text, dim) == pytest.approx(si, rel=1e-12)


def test_wrong_dimension_is_named():
    with pytest.raises(QuantityError, match=r"current.*not a voltage"):
        parse_quantity("30 V", "current")


@pytest.mark.parametrize("bare", [30, 30.0, "30"])
def test_bare_number_is_refused(bare):
    with pytest.raises(QuantityError):
        parse_quantity(bare, "current")


def test_unknown_unit_is_refused():
    with pytest.raises(QuantityError):
        parse_quantity("30 furlongs", "length")


def test_temperature_offset_units():
    # Source: definition of the Celsius and Fahrenheit scales (0 °C = 273.15 K; °F = 9/5 °C + 32).
    assert parse_temperature("85 degC") == pytest.approx(85.0)
    assert parse_temperature("358.15 K") == pytest.approx(85.0)
    assert parse_temperature("185 degF") == pytest.approx(85.0)
    with pytest.raises(QuantityError):
        parse_temperature("85 V")
    with pytest.raises(QuantityError):
        parse_temperature("-300 degC")


def test_resistance_at_temperature():
    # default rel 1e-6: unit conversions: round-off only
    assert parse_resistance_at("0.62 ohm @ 20 degC") == (pytest.approx(0.62), pytest.approx(20.0))
    with pytest.raises(QuantityError, match="measured at"):
        parse_resistance_at("0.62 ohm")
    with pytest.raises(QuantityError, match="after the '@'"):
        parse_resistance_at("0.62 ohm @ 20 V")


@pytest.mark.parametrize(
    ("text", "system", "nominal"),
    [
        ("6 AWG", "awg", 6),
        ("1/0 AWG", "awg", 0),
        ("2/0 AWG", "awg", -1),
        ("4/0 AWG", "awg", -3),
        ("00 AWG", "awg", -1),
        ("AWG 10", "awg", 10),
        ("16 mm^2", "mm2", 16.0),
        ("2.5 mm2", "mm2", 2.5),
    ],
)
def test_cable_sizes(text, system, nominal):
    # Source: ASTM B258 numbering (1/0 = gauge 0, 2/0 = -1, ... 4/0 = -3).
    size = parse_cable_size(text)
    assert (size.system, size.nominal) == (system, nominal)


def test_cable_size_refuses_other_things():
    with pytest.raises(QuantityError):
        parse_cable_size("16 m")


def test_dimensionless():
    # default rel 1e-6: unit conversions: round-off only
    assert parse_dimensionless("75 %") == pytest.approx(0.75)
    assert parse_dimensionless(0.5) == 0.5
    with pytest.raises(QuantityError):
        parse_dimensionless("3 V")


def test_fast_units_agree_with_pint():
    # The fast path must give exactly what pint gives for every unit it reads without pint.
    from coilstage.units import DIMENSIONS, FAST_TEMPERATURES, FAST_UNITS, normalise_unit_text, registry

    ureg = registry()
    for unit, (factor, dim) in FAST_UNITS.items():
        q = ureg.Quantity(2.5, normalise_unit_text(unit).replace("^", "**"))
        # rel 1e-12: pint's conversion and the fast table's factor: round-off only
        assert q.to(DIMENSIONS[dim][0]).magnitude == pytest.approx(2.5 * factor, rel=1e-12), unit
        assert parse_quantity(f"2.5 {unit}", dim) == pytest.approx(2.5 * factor, rel=1e-12)
    for unit in FAST_TEMPERATURES:
        reference = (
            ureg.Quantity(85, "degC" if unit == "°C" else unit).to("degC").magnitude
        )  # pint reads "°C" as degreeC
        assert parse_temperature(f"85 {unit}") == pytest.approx(reference, abs=1e-9), unit
    assert parse_dimensionless("75 %") == pytest.approx(ureg.Quantity("75 %").to("").magnitude)


def test_forms_outside_the_fast_path_still_parse():
    # default rel 1e-6: unit conversions: round-off only
    assert parse_quantity("1.5e-3 kohm", "resistance") == pytest.approx(1.5)
    assert parse_quantity("225 A * h", "charge") == pytest.approx(225 * 3600)
    assert parse_quantity("2 ft", "length") == pytest.approx(0.6096)
