"""Joints, lugs and connector derating against published and hand-worked values."""

from __future__ import annotations

import numpy as np
import pytest

from coilstage import tables
from coilstage.physics.joints import (
    base_current,
    conductor_equivalent_length,
    connector_derating,
    crimp_resistance,
    derated_current,
    derated_linear,
    joint_heat,
    joint_temperature_rise,
    joint_voltage_drop,
    lug_fits,
    lug_mismatch,
    resistance_factor,
    rise_fit,
    stud_current_limit,
)


def test_joint_heat_hand_worked():
    # Joule's law, hand-worked: 214 A through 0.2 / 0.5 mohm -> 9.16 / 22.9 W; 54 A through 0.5 mohm
    # -> 1.46 W.
    assert joint_heat(214.0, 0.2e-3) == pytest.approx(9.159, abs=1e-3)
    assert joint_heat(214.0, 0.5e-3) == pytest.approx(22.898, abs=1e-3)
    assert joint_heat(54.0, 0.5e-3) == pytest.approx(1.458, abs=1e-3)
    assert joint_voltage_drop(54.0, 0.5e-3) == pytest.approx(0.027)
    assert joint_temperature_rise(2.0, 10.0) == pytest.approx(20.0)


@pytest.mark.parametrize(
    ("size", "barrel", "micro_ohm"),
    # IEC 60228 Table 3 class 5 copper (shipped table, published): 50 mm^2 0.386, 16 mm^2 1.21,
    # 95 mm^2 0.206 mohm/m; a sound crimp (IEC 61238-1 factor 1) over 30 / 25 / 40 mm of barrel:
    # 11.6 / 30.3 / 8.2 micro-ohm (hand-worked).
    [(50.0, 0.030, 11.58), (16.0, 0.025, 30.25), (95.0, 0.040, 8.24)],
)
def test_crimp_resistance_from_iec60228(size, barrel, micro_ohm):
    r_per_m = tables.conductor_table("iec60228").rows[size].r20_per_m
    assert crimp_resistance(r_per_m, barrel) * 1e6 == pytest.approx(micro_ohm, abs=0.01)
    r = crimp_resistance(r_per_m, barrel, factor=1.5)
    assert resistance_factor(r, r_per_m, barrel) == pytest.approx(1.5)
    assert conductor_equivalent_length(r, r_per_m) == pytest.approx(1.5 * barrel)


def test_connector_derating_published_chart():
    # Connector maker's derating chart after IEC 60512-5-2: base 15.8 A -> derated 12.64 A; 8.6 -> 6.88 A.
    assert connector_derating(15.8) == pytest.approx(12.64)
    assert connector_derating(8.6) == pytest.approx(6.88)


def test_temperature_derating_hand_worked_and_consistent_with_base_curve():
    # Hand-worked (rise ~ I^2): 100 A at 25 degC, ULT 105 degC: at 85 degC sqrt(20/80) = 0.5 -> 50 A;
    # at 65 degC sqrt(40/80) -> 70.71 A. At and above the ULT nothing; at or below 25 degC the rating.
    assert derated_current(100.0, 25.0, 85.0, 105.0) == pytest.approx(50.0)
    assert derated_current(100.0, 25.0, 65.0, 105.0) == pytest.approx(70.7107, abs=1e-4)
    assert derated_current(100.0, 25.0, 105.0, 105.0) == 0.0
    assert derated_current(100.0, 25.0, -10.0, 105.0) == 100.0
    with pytest.raises(ValueError):
        derated_current(100.0, 110.0, 85.0, 105.0)
    # Consistency with the IEC 60512-5-2 base curve of a rise a I^n: rating = base current at the rated
    # ambient, so the derated current at any ambient is the base current there (derived identity).
    a, n = 0.004, 1.9
    rated = base_current(a, n, 25.0, 125.0)
    for t in (40.0, 70.0, 100.0):
        assert derated_current(rated, 25.0, t, 125.0, exponent=n) == pytest.approx(base_current(a, n, t, 125.0))


def test_rise_fit_against_numpy_polyfit():
    # Independent reference: numpy.polyfit of ln(rise) on ln(I) (least squares, degree 1).
    pts = [(10.0, 4.1), (20.0, 15.2), (30.0, 33.9), (40.0, 58.0)]
    a, n = rise_fit(pts)
    slope, icept = np.polyfit(np.log([p[0] for p in pts]), np.log([p[1] for p in pts]), 1)
    assert n == pytest.approx(slope, rel=1e-10)
    assert a == pytest.approx(np.exp(icept), rel=1e-10)
    with pytest.raises(ValueError):
        rise_fit([(10.0, 4.0)])


def test_linear_derating_like_a_relay():
    # A maker's linear derating, hand-worked: 45 A at 23 degC, 30 A at 85 degC (a relay data sheet's
    # pair): 30/45 = 0.667 at 85 degC; at 54 degC halfway, 37.5 A.
    assert derated_linear(45.0, 23.0, 30.0 / 45.0, 85.0, 85.0) == pytest.approx(30.0)
    assert derated_linear(45.0, 23.0, 30.0 / 45.0, 85.0, 54.0) == pytest.approx(37.5)
    assert derated_linear(45.0, 23.0, 30.0 / 45.0, 85.0, 20.0) == 45.0


def test_lug_range():
    # DIN 46235 lugs carry one cross-section (common practice): a 50 mm^2 lug takes 50 mm^2 only.
    assert lug_fits(50e-6, 50e-6, 50e-6)
    assert not lug_fits(35e-6, 50e-6, 50e-6)
    assert lug_mismatch(35e-6, 50e-6, 50e-6) == pytest.approx(-0.3)
    assert lug_mismatch(70e-6, 50e-6, 50e-6) == pytest.approx(0.4)
    assert lug_mismatch(25e-6, 16e-6, 35e-6) == 0.0


def test_stud_table_lookup():
    # Shipped stud table (common practice, from memory): M8 150 A; M9 falls back to M8; M4 is off the table.
    rows = [tuple(r) for r in tables.shipped("joints_common_practice.toml")["table"]["stud_current"]]
    assert stud_current_limit(8, rows) == 150.0
    assert stud_current_limit(9, rows) == 150.0
    assert stud_current_limit(4, rows) is None
