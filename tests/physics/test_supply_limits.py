"""Supply ends (alternator hot derating, regulator range, bus voltage) against published and hand-worked
values, and the shipped tolerance defaults (source beside each check)."""

from __future__ import annotations

import tomllib
from importlib import resources

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from coilstage.physics.supply_limits import (
    ISO8854_RATING_AMBIENT,
    alternator_output_factor,
    bus_voltage,
    largest_bus,
    regulated_bus_range,
    regulator_setpoint,
)

# ---------------------------------------------------------------- alternator


def test_rating_ambient_is_iso8854():
    # Source: ISO 8854:2012 test ambient (23 ± 5) degC.
    assert ISO8854_RATING_AMBIENT == 23.0
    assert alternator_output_factor(23.0, 105.0, 0.25) == pytest.approx(1.0)


def test_hot_derating_line():
    # Hand-worked: 25 % lost at 105 degC, linear from 23 degC: at 64 degC (halfway) 12.5 % lost.
    assert alternator_output_factor(105.0, 105.0, 0.25) == pytest.approx(0.75)
    assert alternator_output_factor(64.0, 105.0, 0.25) == pytest.approx(0.875)
    # Held beyond the hot point (no data there) and at 1 below the rating without a cold excess.
    assert alternator_output_factor(140.0, 105.0, 0.25) == pytest.approx(0.75)
    assert alternator_output_factor(-30.0, 105.0, 0.25) == pytest.approx(1.0)


def test_published_hot_and_cold_curves_lie_in_the_default_range():
    # Source: a marine engine manual's hot and cold alternator curves at 13.5 V: hot 16 A at 1 300 rpm,
    # 41 A at 2 500; cold 24 A and 50 A. The losses (33 % and 18 %) lie inside the shipped 15-35 % range.
    rows = {r["key"]: r for r in _defaults()}
    row = rows["supply.alternator.hot_derating"]
    for hot, cold in [(16.0, 24.0), (41.0, 50.0)]:
        assert row["low"] <= 1 - hot / cold <= row["high"]


def test_cold_excess():
    # Hand-worked: +10 % at -30 degC, linear to 1 at 23 degC: at -3.5 degC (halfway) +5 %.
    f = alternator_output_factor(
        np.array([-30.0, -3.5, 23.0, 105.0]), 105.0, 0.25, cold_temperature=-30.0, cold_excess=0.1
    )
    assert f == pytest.approx([1.10, 1.05, 1.0, 0.75])
    with pytest.raises(ValueError):
        alternator_output_factor(0.0, 105.0, 0.25, cold_temperature=30.0, cold_excess=0.1)
    with pytest.raises(ValueError):
        alternator_output_factor(0.0, 20.0, 0.25)
    with pytest.raises(ValueError):
        alternator_output_factor(0.0, 105.0, 1.2)


@given(t1=st.floats(-40, 150), dt=st.floats(0, 100), d=st.floats(0, 0.9))
def test_output_never_rises_with_temperature(t1, dt, d):
    # Property (common practice: a hotter machine gives less).
    assert alternator_output_factor(t1 + dt, 105.0, d) <= alternator_output_factor(t1, 105.0, d) + 1e-12


# ---------------------------------------------------------------- regulator


def test_regulator_worked_example_24v():
    # Derived worked example: 28.2 V + 0.4 V tolerance, -20 mV/K, regulator 25 -> -30 degC: 29.7 V.
    r = regulated_bus_range(28.2, 0.4, -0.020, -30.0, 80.0)
    assert r.high == pytest.approx(29.7)
    assert r.high_temperature == -30.0
    # ... and 30.5 V with -35 mV/K (same derivation).
    assert regulated_bus_range(28.2, 0.4, -0.035, -30.0, 80.0).high == pytest.approx(30.525)


def test_regulator_against_a_published_service_band():
    # Source: US Army TM 10-3930-621-12 (forklift regulator): 14.1-14.9 V at 65 degF, 13.4-14.2 V at
    # 145 degF. The band is 14.5 ± 0.4 V at 18.3 degC with -0.7 V over 44.4 K (-15.7 mV/K, derived).
    t65, t145 = (65 - 32) / 1.8, (145 - 32) / 1.8
    g = -0.7 / (t145 - t65)
    r = regulated_bus_range(14.5, 0.4, g, t65, t145, t_reference=t65)
    assert (r.low, r.high) == pytest.approx((13.4, 14.9))
    assert regulator_setpoint(t145, 14.5, g, t65) == pytest.approx(13.8)


def test_regulator_mid_band_of_a_car_service_specification():
    # Source: a vehicle maker's service specification (regulator ambient): 14.0-15.1 V at -20 degC,
    # 13.7-14.6 at 20, 13.2-14.3 at 60. Mid-bands 14.55 / 14.15 / 13.75 V lie on -10 mV/K (derived).
    for t, lo, hi in [(-20.0, 14.0, 15.1), (20.0, 13.7, 14.6), (60.0, 13.2, 14.3)]:
        assert regulator_setpoint(t, 14.15, -0.010, 20.0) == pytest.approx((lo + hi) / 2, abs=1e-9)


@given(
    g=st.floats(-0.06, 0.0),
    dg=st.floats(0.0, 0.01),
    tol=st.floats(0.0, 1.0),
    t_min=st.floats(-40.0, 20.0),
    span=st.floats(0.0, 120.0),
)
def test_regulator_range_equals_brute_force_over_a_grid(g, dg, tol, t_min, span):
    # Independent check: the extremes over a dense grid of temperatures and gradients (numpy) equal
    # the four-corner result (the set-point is bilinear in T and g).
    t_max = t_min + span
    r = regulated_bus_range(28.0, tol, g, t_min, t_max, gradient_tolerance=dg)
    tt, gg = np.meshgrid(np.linspace(t_min, t_max, 31), np.linspace(g - dg, g + dg, 11))
    u = 28.0 + gg * (tt - 25.0)
    assert r.high == pytest.approx(u.max() + tol, abs=1e-9)
    assert r.low == pytest.approx(u.min() - tol, abs=1e-9)


def test_regulator_ceiling_and_bad_range():
    assert regulated_bus_range(28.2, 0.4, -0.035, -40.0, 80.0, ceiling=30.0).high == 30.0
    with pytest.raises(ValueError):
        regulated_bus_range(28.2, 0.4, -0.02, 50.0, 20.0)


# ---------------------------------------------------------------- bus


def test_bus_with_a_current_limited_alternator():
    # Hand-worked: hot alternator 100 A x 0.75 = 75 A; 250 A demand; half-charged 24 V pair 24.48 V
    # (published OCV table) at 30 mOhm: the battery gives 175 A, 24.48 - 175 x 0.030 = 19.23 V.
    assert bus_voltage(250.0, 24.48, 0.030, 75.0, 27.6) == pytest.approx(19.23)
    # No alternator output: the battery alone, 24.48 - 250 x 0.030.
    assert bus_voltage(250.0, 24.48, 0.030, 0.0, 27.6) == pytest.approx(16.98)


def test_bus_regulating_against_numpy_linalg():
    # Independent reference: the two-source network (battery E behind Rb, alternator U behind Ra,
    # constant-current load I at the bus node) solved as a 1-node nodal equation by numpy.linalg.
    e, rb, u, ra, i = 25.2, 0.009, 28.2, 0.025, 120.0
    g = np.array([[1 / rb + 1 / ra]])
    v = np.linalg.solve(g, np.array([e / rb + u / ra - i]))[0]
    assert (u - v) / ra < 500.0  # inside the 500 A limit: regulating
    assert bus_voltage(i, e, rb, 500.0, u, ra) == pytest.approx(v, rel=1e-12)
    # Ideal regulation: the bus is the set-point.
    assert bus_voltage(i, e, rb, 500.0, u) == pytest.approx(u)


def test_bus_with_a_regulated_voltage_below_the_emf_is_the_battery_alone():
    # A regulated voltage below the battery's EMF: the rectifier blocks, the battery holds the bus.
    assert bus_voltage(10.0, 25.3, 0.01, 100.0, 24.0, 0.025) == pytest.approx(25.3 - 0.1)


def test_bus_is_continuous_and_falls_with_demand():
    # Property of the piecewise characteristic (Ho, Ruehli, Brennan MNA; the source model of
    # coilstage.physics.network): continuous at the state changes and non-increasing in demand.
    i = np.linspace(0.0, 600.0, 6001)
    u = bus_voltage(i, 24.9, 0.02, 150.0, 28.2, 0.025)
    assert np.all(np.diff(u) <= 1e-12)
    assert np.max(np.abs(np.diff(u))) < 0.01  # no jump larger than the 0.1 A step would give


def test_largest_bus():
    # Derived: the surface-charged pair, 12 x 2.2 = 26.4 V, holds without an alternator.
    assert largest_bus(29.7, True, 26.4) == 29.7
    assert largest_bus(29.7, False, 26.4) == 26.4


# ---------------------------------------------------------------- shipped defaults


def _defaults() -> list[dict]:
    text = resources.files("coilstage.data").joinpath("tolerance_defaults.toml").read_text(encoding="utf-8")
    return tomllib.loads(text)["table"]["rows"]


def test_tolerance_defaults_are_complete_and_ordered():
    words = ("published", "from memory", "common practice", "derived")
    rows = _defaults()
    keys = [r["key"] for r in rows]
    assert len(keys) == len(set(keys))
    for r in rows:
        assert r["low"] <= r["nominal"] <= r["high"], r["key"]
        assert r["distribution"] in ("uniform", "normal"), r["key"]
        assert r["source"] and any(w in r["status"] for w in words), r["key"]
    # The brief's list: every quantity a drawing may leave out has a default.
    for needed in (
        "coils.*.resistance_tolerance",
        "coils.*.inductance_tolerance",
        "tolerances.cable_length",
        "supply.alternator.tolerance",
        "supply.alternator.compensation_24v",
        "supply.alternator.hot_derating",
        "supply.battery.state_of_charge",
        "supply.battery.resistance_min_factor",
        "supply.battery.peukert_exponent",
        "tolerances.fault_resistance",
        "environment.retarder_rise",
    ):
        assert needed in keys


def test_tolerance_defaults_spot_values():
    rows = {r["key"]: r for r in _defaults()}
    # Source: a solenoid maker's FAQ, ±5 % for precision-wound heavy-gauge coils.
    assert (rows["coils.*.resistance_tolerance"]["low"], rows["coils.*.resistance_tolerance"]["high"]) == (-0.05, 0.05)
    # Source: a vehicle maker's alternator specification, 14.55 ± 0.3 V (±2 %).
    assert rows["supply.alternator.tolerance"]["high"] == pytest.approx(0.3 / 14.55, abs=0.001)
    # Derived: b = ln(1.5)/48 K from the +50 % (+30 -> -18 degC) published claim.
    assert rows["supply.battery.resistance_temperature_coefficient"]["nominal"] == pytest.approx(
        np.log(1.5) / 48, rel=1e-4
    )
    # Common practice: 50 % is the lowest state of charge in service.
    assert rows["supply.battery.state_of_charge"]["low"] == 0.5
