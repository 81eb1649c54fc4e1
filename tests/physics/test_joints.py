"""Joints, lugs and connector derating against published and hand-worked values."""

from __future__ import annotations

import pytest

from coilstage.physics.joints import (
    derated_current,
    derated_linear,
    joint_heat,
    lug_fits,
    lug_mismatch,
)


def test_joint_heat_hand_worked():
    # Joule's law, hand-worked: 214 A through 0.2 / 0.5 mohm -> 9.16 / 22.9 W; 54 A through 0.5 mohm
    # -> 1.46 W.
    assert joint_heat(214.0, 0.2e-3) == pytest.approx(9.159, abs=1e-3)
    assert joint_heat(214.0, 0.5e-3) == pytest.approx(22.898, abs=1e-3)
    assert joint_heat(54.0, 0.5e-3) == pytest.approx(1.458, abs=1e-3)


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
    # ambient, so the derated current at any ambient is the base current there (derived identity; the
    # base current ((T_ULT - T)/a)^(1/n) written out here).
    a, n = 0.004, 1.9

    def base(t):
        return ((125.0 - t) / a) ** (1.0 / n)

    for t in (40.0, 70.0, 100.0):
        assert derated_current(base(25.0), 25.0, t, 125.0, exponent=n) == pytest.approx(base(t))


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
