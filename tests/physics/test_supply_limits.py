"""Supply ends (regulator set-point and range) against published and hand-worked values, and the shipped
tolerance defaults (alternator hot derating among them; source beside each check)."""

from __future__ import annotations

import tomllib
from importlib import resources

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from coilstage.physics.supply_limits import (
    regulated_bus_range,
    regulator_setpoint,
)

# ---------------------------------------------------------------- alternator


def test_published_hot_and_cold_curves_lie_in_the_default_range():
    # Source: a marine engine manual's hot and cold alternator curves at 13.5 V: hot 16 A at 1 300 rpm,
    # 41 A at 2 500; cold 24 A and 50 A. The losses (33 % and 18 %) lie inside the shipped 15-35 % range.
    rows = {r["key"]: r for r in _defaults()}
    row = rows["supply.alternator.hot_derating"]
    for hot, cold in [(16.0, 24.0), (41.0, 50.0)]:
        assert row["low"] <= 1 - hot / cold <= row["high"]


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
    cap=st.one_of(st.none(), st.floats(0.0, 2.0)),
)
def test_regulator_range_equals_brute_force_over_a_grid(g, dg, tol, t_min, span, cap):
    # Independent check: the extremes over a dense grid of temperatures and gradients (numpy) equal
    # the four-corner result (the set-point is bilinear in T and g; capped at ±cap, the regulator
    # maker's limit, clip(g (T - 25), -cap, cap) is still monotone in each, so the corners hold).
    t_max = t_min + span
    r = regulated_bus_range(28.0, tol, g, t_min, t_max, gradient_tolerance=dg, compensation_limit=cap)
    tt, gg = np.meshgrid(np.linspace(t_min, t_max, 31), np.linspace(g - dg, g + dg, 11))
    shift = gg * (tt - 25.0)
    u = 28.0 + (shift if cap is None else np.clip(shift, -cap, cap))
    assert r.high == pytest.approx(u.max() + tol, abs=1e-9)
    assert r.low == pytest.approx(u.min() - tol, abs=1e-9)


def test_capped_compensation_by_hand():
    # 24 V: 28.2 ± 0.4 V at -20 mV/K from -30 to 80 °C, the compensation at most 0.6 V either way:
    # uncapped +1.1 V cold and -1.1 V hot (the worked example above), capped to ±0.6 V
    r = regulated_bus_range(28.2, 0.4, -0.020, -30.0, 80.0, compensation_limit=0.6)
    assert (r.high, r.low) == (pytest.approx(29.2), pytest.approx(27.2))
    assert regulator_setpoint(-30.0, 28.2, -0.020, limit=0.6) == pytest.approx(28.8)
    assert regulator_setpoint(10.0, 28.2, -0.020, limit=0.6) == pytest.approx(28.5)  # inside the cap
    got = regulator_setpoint(np.array([-30.0, 25.0, 105.0]), 28.2, -0.035, limit=0.6)
    np.testing.assert_allclose(got, [28.8, 28.2, 27.6], rtol=1e-12)


def test_regulator_ceiling_and_bad_range():
    assert regulated_bus_range(28.2, 0.4, -0.035, -40.0, 80.0, ceiling=30.0).high == 30.0
    with pytest.raises(ValueError):
        regulated_bus_range(28.2, 0.4, -0.02, 50.0, 20.0)


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
