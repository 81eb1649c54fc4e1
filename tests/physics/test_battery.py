"""Lead-acid battery physics against published forms and hand-worked values (source beside each check)."""

from __future__ import annotations

import math
import tomllib
from importlib import resources

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from coilstage.physics.battery import (
    CRANKING_TESTS,
    FLOODED_OCV_LINE,
    capacity_temperature_factor,
    internal_resistance,
    open_circuit_voltage,
    peukert_usable_charge,
    resistance_bound_from_cranking_current,
    resistance_from_short_circuit_current,
)

AH = 3600.0  # coulombs per ampere-hour
H = 3600.0  # seconds per hour


def _data() -> dict:
    text = resources.files("coilstage.data").joinpath("battery_lead_acid.toml").read_text(encoding="utf-8")
    return tomllib.loads(text)


# ---------------------------------------------------------------- open-circuit voltage


@pytest.mark.parametrize(
    ("soc", "ocv_12v"),
    # Source: OCV against state of charge of a 12 V lead-acid block at rest
    # (realexposer.com/2009/11/what-does-terminal-voltage-tell.html, published table).
    [(1.00, 12.65), (0.75, 12.45), (0.50, 12.24), (0.25, 12.06), (0.00, 11.89)],
)
def test_ocv_at_the_published_points(soc, ocv_12v):
    assert open_circuit_voltage(soc) == pytest.approx(ocv_12v, abs=1e-9)
    # Same source: per cell = block / 6; a 24 V pair (two blocks) = 2 x block.
    assert open_circuit_voltage(soc, cells=1) == pytest.approx(ocv_12v / 6, abs=1e-9)
    assert open_circuit_voltage(soc, cells=12) == pytest.approx(2 * ocv_12v, abs=1e-9)


def test_ocv_check_values_at_half_charge():
    # Source: same published table: 50 % -> 12.24 V per block, 2.040 V per cell, 24.48 V per pair.
    assert open_circuit_voltage(0.5) == pytest.approx(12.24, abs=0.005)
    assert open_circuit_voltage(0.5, cells=1) == pytest.approx(2.040, abs=0.0005)
    assert open_circuit_voltage(0.5, cells=12) == pytest.approx(24.48, abs=0.005)


def test_ocv_between_points_is_linear_and_held_beyond():
    # Hand-worked: halfway between 50 % (12.24 V) and 75 % (12.45 V) is 12.345 V.
    assert open_circuit_voltage(0.625) == pytest.approx(12.345, abs=1e-9)
    # Outside 0...1 the table's end values hold (no extrapolation of a published line).
    assert open_circuit_voltage(1.2) == pytest.approx(12.65)
    assert open_circuit_voltage(-0.1) == pytest.approx(11.89)
    arr = open_circuit_voltage(np.array([0.0, 0.5, 1.0]), cells=12)
    assert arr == pytest.approx([23.78, 24.48, 25.30])


def test_ocv_agrees_with_a_second_published_table():
    # Source: a second public table (motorhome.com, "Checking & maintaining batteries"):
    # 12.66 / 12.45 / 12.30 / 12.15 V at 100 / 75 / 50 / 25 %. Independent tables agree within 0.1 V.
    for soc, v in [(1.0, 12.66), (0.75, 12.45), (0.5, 12.30), (0.25, 12.15)]:
        assert abs(open_circuit_voltage(soc) - v) <= 0.1


def test_ocv_linear_fit_per_cell():
    # Derived from the published table: OCV_cell ~ 1.982 + 0.126 SOC within 12 mV per cell.
    soc = np.linspace(0, 1, 41)
    assert np.max(np.abs(open_circuit_voltage(soc, cells=1) - (1.982 + 0.126 * soc))) < 0.012


def test_agm_option_shifts_the_line():
    # From memory, not confirmed: an AGM block reads about 2.15 V per cell full (2.17 V published by
    # one maker). The offset option moves the whole line by the difference at full charge.
    agm = _data()["agm"]["full_per_cell"]
    offset = agm - 12.65 / 6
    assert open_circuit_voltage(1.0, cells=6, offset_per_cell=offset) == pytest.approx(6 * agm)
    assert open_circuit_voltage(0.5, offset_per_cell=offset) - open_circuit_voltage(0.5) == pytest.approx(6 * offset)


def test_ocv_line_must_ascend():
    with pytest.raises(ValueError, match="ascend"):
        open_circuit_voltage(0.5, line=((1.0, 2.1), (0.0, 1.98)))


def test_shipped_table_and_code_hold_the_same_line():
    # The code's default line and the shipped data are the same published table.
    rows = sorted((r["soc"], r["ocv_12v"] / 6) for r in _data()["table"]["rows"])
    assert [p[0] for p in rows] == [p[0] for p in FLOODED_OCV_LINE]
    assert [p[1] for p in rows] == pytest.approx([p[1] for p in FLOODED_OCV_LINE])


# ---------------------------------------------------------------- internal resistance


@pytest.mark.parametrize(
    ("standard", "bound_mohm"),
    # Derived from the end voltages of the standards (SAE J537 7.2 V / 30 s; EN 50342-1 7.5 V / 10 s;
    # DIN 43539-2 9.0 V): R <= (12.7 V - U_end)/1000 A -> 5.50 / 5.20 / 3.70 mOhm; IEC 60095-1 8.4 V -> 4.30.
    [("SAE J537", 5.50), ("EN 50342-1", 5.20), ("DIN 43539-2", 3.70), ("IEC 60095-1", 4.30)],
)
def test_cranking_bound_check_values(standard, bound_mohm):
    # abs 1e-9 mOhm: the bound is one subtraction and one division, exact to round-off
    assert resistance_bound_from_cranking_current(1000.0, standard) * 1e3 == pytest.approx(bound_mohm, abs=1e-9)


def test_cranking_bound_of_a_24v_pair_and_errors():
    # Hand-worked: two 1 000 A blocks in series -> 2 x 5.5 = 11 mOhm at -18 degC.
    assert resistance_bound_from_cranking_current(1000.0, blocks=2) == pytest.approx(0.011)
    with pytest.raises(ValueError, match="unknown cranking standard"):
        resistance_bound_from_cranking_current(1000.0, "JIS")
    with pytest.raises(ValueError, match="positive"):
        resistance_bound_from_cranking_current(0.0)


def test_resistance_from_short_circuit_current():
    # Hand-worked: Ri = OCV / Isc; 12.7 V and 2 540 A -> 5.0 mOhm; a 24 V pair 25.4 V / 2 540 A -> 10 mOhm
    # (so 25.4 V behind 10 mOhm gives about 2.5 kA at the terminals).
    assert resistance_from_short_circuit_current(12.7, 2540.0) == pytest.approx(0.005)
    assert resistance_from_short_circuit_current(25.4, 2540.0) == pytest.approx(0.010)
    with pytest.raises(ValueError):
        resistance_from_short_circuit_current(12.7, -1.0)


def test_cranking_table_in_data_matches_code():
    rows = {r["standard"]: (r["end_voltage"], r["time"]) for r in _data()["cranking_tests"]}
    assert rows == CRANKING_TESTS
    for r in _data()["cranking_tests"]:
        assert r["temperature"] == -18.0  # every cold-cranking test runs at -18 degC (0 degF)


def test_resistance_rises_fifty_percent_from_30_to_minus_18():
    # Source: energy-storage company's published note, "about a 50 % increase" from +30 to -18 degC.
    r30 = internal_resistance(1.0, 1.0, 30.0)
    r_18 = internal_resistance(1.0, 1.0, -18.0)
    assert r_18 / r30 == pytest.approx(1.5, rel=1e-12)


def test_resistance_of_flat_battery_and_age():
    # Source: same note, "up to 40 %" from full to fully discharged; age factor from memory.
    assert internal_resistance(0.004, 0.0, 25.0) == pytest.approx(0.0056)
    # Hand-worked: half charge -> 1 + 0.4 x 0.5 = 1.2; age 1.5 multiplies.
    assert internal_resistance(0.004, 0.5, 25.0, age_factor=1.5) == pytest.approx(0.004 * 1.2 * 1.5)
    # At the reference state the reference resistance comes back.
    assert internal_resistance(0.004) == pytest.approx(0.004)


def test_resistance_range_of_a_24v_pair_spans_the_quoted_band():
    # From memory (typical figures, not confirmed): a new warm 24 V pair 4-10 mOhm; cold, half-charged and
    # aged about 30 mOhm. From 9 mOhm stated (25 degC, full): -30 degC, 50 % SOC, age 1.5 -> ~26 mOhm.
    r = internal_resistance(0.009, 0.5, -30.0, age_factor=1.5)
    assert 0.020 < r < 0.032
    assert r == pytest.approx(0.009 * math.exp(math.log(1.5) / 48 * 55) * 1.2 * 1.5)


@given(
    soc=st.floats(0.0, 1.0),
    dsoc=st.floats(0.0, 1.0),
    t=st.floats(-40.0, 60.0),
    dt=st.floats(0.0, 50.0),
)
def test_resistance_rises_as_charge_and_temperature_fall(soc, dsoc, t, dt):
    # Property (common practice, no single source: resistance rises with cold and low charge).
    lower_soc = max(0.0, soc - dsoc)
    assert internal_resistance(1.0, lower_soc, t) >= internal_resistance(1.0, soc, t) - 1e-15
    assert internal_resistance(1.0, soc, t - dt) >= internal_resistance(1.0, soc, t) - 1e-15


# ---------------------------------------------------------------- Peukert


@pytest.mark.parametrize(
    ("k", "share"),
    # Hand-worked from Peukert's law in its published form C_I = C_H (I_H/I)^(k-1) (battery retailer's
    # page; Peukert 1897): C20 = 225 Ah (I20 = 11.25 A), I = 109 A -> 0.797 / 0.635 / 0.567 / 0.506.
    [(1.1, 0.797), (1.2, 0.635), (1.25, 0.567), (1.3, 0.506)],
)
def test_peukert_usable_share_check_values(k, share):
    q = peukert_usable_charge(109.0, 225 * AH, 20 * H, k)
    assert q / (225 * AH) == pytest.approx(share, abs=5e-4)
    # Independent form: (11.25/109)^(k-1) written out with math.
    assert q / (225 * AH) == pytest.approx((11.25 / 109.0) ** (k - 1), rel=1e-12)


def test_peukert_charge_is_current_times_the_published_time():
    # Independent form: Peukert's law as published, t = H (C/(I H))^k, written out here; the usable
    # charge is I t (Peukert 1897).
    for i in (20.0, 109.0, 400.0):
        t = 20 * H * (225 * AH / (i * 20 * H)) ** 1.25
        assert i * t == pytest.approx(peukert_usable_charge(i, 225 * AH, 20 * H, 1.25), rel=1e-12)
    # At the rated current (11.25 A for C20 = 225 Ah) the rated capacity comes back, whatever k.
    assert peukert_usable_charge(11.25, 225 * AH, 20 * H, 1.3) == pytest.approx(225 * AH)


def test_peukert_limits():
    # k = 1: no rate effect (the law reduces to a constant charge).
    assert peukert_usable_charge(300.0, 225 * AH, 20 * H, 1.0) == pytest.approx(225 * AH)
    # Below the rated current the law promises more than the battery holds; capped by default.
    assert peukert_usable_charge(2.0, 225 * AH, 20 * H, 1.25) == pytest.approx(225 * AH)
    raw = peukert_usable_charge(2.0, 225 * AH, 20 * H, 1.25, cap_at_rated=False)
    assert raw == pytest.approx(225 * AH * (11.25 / 2.0) ** 0.25)
    arr = peukert_usable_charge(np.array([11.25, 109.0]), 225 * AH, 20 * H, 1.25)
    assert arr.shape == (2,)
    with pytest.raises(ValueError):
        peukert_usable_charge(10.0, 225 * AH, 20 * H, 0.9)
    with pytest.raises(ValueError):
        peukert_usable_charge(0.0, 225 * AH, 20 * H, 1.2)


def test_peukert_exponent_ranges_in_data():
    # Source: battery retailer's published table: AGM 1.05-1.15, gel 1.10-1.25, flooded 1.20-1.60.
    rows = {r["type"]: (r["low"], r["high"]) for r in _data()["peukert_exponents"]}
    assert rows == {"AGM": (1.05, 1.15), "gel": (1.10, 1.25), "flooded": (1.20, 1.60)}


# ---------------------------------------------------------------- capacity against temperature


def test_capacity_temperature_factor():
    # From memory (IEC 60896-11 lambda = 0.01 /K), derived check value 0.57 at -18 degC; compare
    # "half the nominal capacity at 0 degF" (battery distributor's published note): within 0.1.
    assert capacity_temperature_factor(-18.0) == pytest.approx(0.57)
    assert abs(capacity_temperature_factor(-18.0) - 0.5) < 0.1
    assert capacity_temperature_factor(25.0) == pytest.approx(1.0)
    assert capacity_temperature_factor(-200.0) == 0.0


def test_every_row_of_the_battery_data_has_a_status():
    # Shipped-table convention: every value says whether it is published, from memory, ... .
    d = _data()
    words = ("published", "from memory", "common practice", "derived")
    for key in ("cranking_tests", "resistance_factors", "peukert_exponents"):
        for row in d[key]:
            assert any(w in row["status"] for w in words), (key, row)
    for key in ("agm", "surface_charge", "capacity_temperature"):
        assert any(w in d[key]["status"] for w in words), key
