"""Conductor physics against published values (sources beside each check)."""

from __future__ import annotations

import math

import pytest

from coilstage.analysis.materials import metal
from coilstage.physics.conductor import (
    ampacity_ambient_factor,
    awg_area,
    awg_diameter,
    interpolate_loglog,
    resistance_at_temperature,
    resistance_per_length,
)

ALPHA20 = metal("copper").alpha20  # IEC 60028, from the data copy


@pytest.mark.parametrize(
    ("n", "d_in"),
    # Source: solid copper wire table, "Lessons in Electric Circuits" vol. 1 reference chapter
    # (ASTM B258 diameters to 4 significant figures, inches).
    [(10, 0.1019), (8, 0.1285), (6, 0.1620), (4, 0.2043), (2, 0.2576), (1, 0.2893), (0, 0.3249), (-3, 0.4600)],
)
def test_awg_diameters_astm_b258(n, d_in):
    assert awg_diameter(n) / 0.0254 == pytest.approx(d_in, abs=0.00006)


def test_awg_step_and_area():
    # Source: ASTM B258 formula, step ratio 92^(1/39) = 1.1229322 between successive gauges.
    assert awg_diameter(9) / awg_diameter(10) == pytest.approx(1.1229322, rel=1e-7)
    # Source: 10 AWG = 10 380 circular mils (solid copper wire table as above); 1 cmil = pi/4 mil^2.
    cmil = awg_area(10) / (math.pi / 4 * (0.0254e-3) ** 2)
    assert cmil == pytest.approx(10380, rel=5e-4)


def test_awg_resistance_crc_handbook():
    # Source: CRC Handbook of Chemistry and Physics, wire tables: 1/0 AWG copper 0.000314 ohm/m with
    # rho = 1.678e-8 ohm m (pure copper, not IACS).
    assert resistance_per_length(1.678e-8, awg_area(0)) == pytest.approx(0.000314, rel=2e-3)


def test_copper_resistivity_iec60028():
    # Source: IEC 60028, annealed copper 1/58 ohm mm^2/m = 0.017241 ohm mm^2/m, alpha20 = 0.00393 /K;
    # the one copy of the constants is coilstage/data/materials.toml, read through analysis.materials.
    assert metal("copper").rho20 * 1e6 == pytest.approx(0.017241, rel=1e-4)
    assert metal("copper").alpha20 == 0.00393


@pytest.mark.parametrize(
    ("t", "ratio"),
    # Source: R(t)/R20 = 1 + 0.00393 (t - 20), IEC 60028 alpha; values derived with the beta form
    # (234.5 + t)/254.5 of IEC 60287-1-1 table 1 (docs/references.md#copper-resistance-temperature), to 1e-4.
    [(-40, 0.7642), (-30, 0.8035), (0, 0.9214), (80, 1.2358), (105, 1.3340), (150, 1.5109), (180, 1.6288)],
)
def test_copper_r_of_t(t, ratio):
    r = resistance_at_temperature(1.0, 20.0, t, ALPHA20)
    assert r == pytest.approx(ratio, abs=1e-4)
    assert r == pytest.approx((234.5 + t) / (234.5 + 20.0), abs=2e-4)  # IEC 60949 beta = 234.5 K


def test_r_of_t_is_invertible_between_any_two_temperatures():
    r_at_80 = resistance_at_temperature(0.62, 20.0, 80.0, ALPHA20)
    assert resistance_at_temperature(r_at_80, 80.0, 20.0, ALPHA20) == pytest.approx(0.62, rel=1e-12)


def test_resistance_method_worked_example():
    # Source: UL-style temperature test clause, theta2 = (R2/R1)(k + theta1) - k with k = 234.5 for Cu:
    # R2/R1 = 1.30 at theta1 = 20 degC gives 96.35 degC. Our alpha form agrees within 0.05 K.
    k = 234.5
    theta2 = 1.30 * (k + 20.0) - k
    assert theta2 == pytest.approx(96.35, abs=1e-9)
    assert resistance_at_temperature(1.0, 20.0, theta2, ALPHA20) == pytest.approx(1.30, abs=2e-4)


@pytest.mark.parametrize(
    ("rating", "nec"),
    # Source: NFPA 70 (NEC) Table 310.15(B)(2)(a), ambient 46-50 degC: 0.58 / 0.75 / 0.82 for
    # 60 / 75 / 90 degC insulation. The law at 50 degC reproduces them to 0.01 (the NEC rounds, and
    # its row spans 46-50 degC).
    [(60, 0.58), (75, 0.75), (90, 0.82)],
)
def test_ambient_factor_reproduces_nec(rating, nec):
    assert ampacity_ambient_factor(rating, 50.0) == pytest.approx(nec, abs=0.01)


def test_ambient_factor_limits():
    assert ampacity_ambient_factor(105, 30.0) == 1.0
    assert ampacity_ambient_factor(105, 0.0) == 1.0  # a cool zone is not credited (common practice)
    assert ampacity_ambient_factor(85, 85.0) == 0.0
    assert ampacity_ambient_factor(85, 100.0) == 0.0


def test_loglog_interpolation_hits_ends_and_power_laws():
    assert interpolate_loglog(2.0, 2.0, 10.0, 8.0, 40.0) == pytest.approx(10.0)
    assert interpolate_loglog(8.0, 2.0, 10.0, 8.0, 40.0) == pytest.approx(40.0)
    # A power law y = 3 x^0.6 is reproduced exactly between any two of its points.
    f = lambda x: 3 * x**0.6  # noqa: E731
    assert interpolate_loglog(5.0, 2.0, f(2.0), 9.0, f(9.0)) == pytest.approx(f(5.0), rel=1e-12)
