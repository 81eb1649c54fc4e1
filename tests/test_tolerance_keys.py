"""Tolerances a drawing states: the overlay of the drawing's rows on the shipped defaults
(analysis.tolerances.effective / lookup) and the [tolerances] and per-element keys of the loader.

Reference for every shipped value: coilstage/data/tolerance_defaults.toml, read here with tomllib
(independent of coilstage.tables)."""

from __future__ import annotations

import dataclasses
import tomllib

import numpy as np
import pytest

from coilstage import check
from coilstage.analysis import tolerances, worst
from coilstage.drawing.load import load_drawing
from coilstage.drawing.schema import ToleranceSpec

from .conftest import COACH, ROOT

SHIPPED = {
    r["key"]: r
    for r in tomllib.loads((ROOT / "coilstage/data/tolerance_defaults.toml").read_text(encoding="utf-8"))["table"][
        "rows"
    ]
}


@pytest.fixture(scope="module")
def coach():
    return load_drawing(COACH)


def _with(d, **specs: ToleranceSpec):
    return dataclasses.replace(d, tolerances={k.replace("__", "."): v for k, v in specs.items()})


# ---------------------------------------------------------------- effective / lookup


def test_shipped_rows_are_the_table_and_worst_defaults_agree():
    rows = tolerances.shipped()
    assert rows == SHIPPED
    assert worst.defaults() == SHIPPED  # the worst cases still read the same table


def test_shipped_rows_are_copies():
    tolerances.shipped()["coils.*.resistance_tolerance"]["low"] = -0.5
    assert tolerances.shipped()["coils.*.resistance_tolerance"]["low"] == -0.05


def test_effective_without_drawing_rows_is_the_shipped_table(coach):
    # The coach states only the alternator's 0.3 V (a relative row on its 28.2 V set-point) and
    # nothing else; every other row is the table's.
    tol = tolerances.effective(dataclasses.replace(coach, tolerances={}))
    assert tol == SHIPPED


def test_effective_overlays_a_drawing_row(coach):
    spec = ToleranceSpec(-0.07, 0.03, "normal", "tolerances.coil_resistance")
    tol = tolerances.effective(_with(coach, **{"coils.*.resistance_tolerance": spec}))
    row = tol["coils.*.resistance_tolerance"]
    assert (row["low"], row["high"], row["distribution"]) == (-0.07, 0.03, "normal")
    assert row["source"] == "drawing: tolerances.coil_resistance"
    assert row["status"] == "stated in the drawing"
    shipped = SHIPPED["coils.*.resistance_tolerance"]
    assert row["quantity"] == shipped["quantity"] and row["unit"] == shipped["unit"] == "1"
    assert row["nominal"] == 0.0
    # the other rows are untouched
    assert tol["tolerances.cable_length"] == SHIPPED["tolerances.cable_length"]


def test_effective_holds_the_nominal_within_the_drawing_ends(coach):
    # shipped state of charge: nominal 90 % within 50-100 %; the drawing's 40-80 % puts it at 80 %.
    spec = ToleranceSpec(0.40, 0.80, "uniform", "tolerances.battery_state_of_charge")
    row = tolerances.effective(_with(coach, **{"supply.battery.state_of_charge": spec}))[
        "supply.battery.state_of_charge"
    ]
    assert (row["low"], row["nominal"], row["high"]) == (0.40, 0.80, 0.80)


def test_per_element_row_and_lookup(coach):
    specs = {
        "cables.W1.length_tolerance": ToleranceSpec(-0.02, 0.05, "uniform", "harness[2] (W1).length_tolerance"),
        "coils.RC4.resistance_tolerance": ToleranceSpec(-0.03, 0.03, "uniform", "coils.RC4.resistance_tolerance"),
    }
    tol = tolerances.effective(dataclasses.replace(coach, tolerances=specs))
    w1 = tolerances.lookup(tol, "tolerances.cable_length", "W1")
    assert (w1["low"], w1["high"]) == (-0.02, 0.05) and w1["key"] == "cables.W1.length_tolerance"
    assert w1["quantity"] == SHIPPED["tolerances.cable_length"]["quantity"]
    assert w1["source"] == "drawing: harness[2] (W1).length_tolerance"
    # another cable, and no element at all: the generic row
    assert tolerances.lookup(tol, "tolerances.cable_length", "W9") == SHIPPED["tolerances.cable_length"]
    assert tolerances.lookup(tol, "tolerances.cable_length") == SHIPPED["tolerances.cable_length"]
    rc = tolerances.lookup(tol, "coils.*.resistance_tolerance", "RC4")
    assert (rc["low"], rc["high"]) == (-0.03, 0.03)
    assert tolerances.lookup(tol, "coils.*.resistance_tolerance", "OTHER")["low"] == -0.05
    # the per-element key itself works too, and falls back to its generic row
    assert tolerances.lookup(tol, "cables.W1.length_tolerance")["high"] == 0.05
    assert tolerances.lookup(tol, "cables.W7.length_tolerance")["high"] == SHIPPED["tolerances.cable_length"]["high"]
    # a key without a per-element form ignores the element
    assert tolerances.lookup(tol, "tolerances.fault_resistance", "W1") == SHIPPED["tolerances.fault_resistance"]
    with pytest.raises(KeyError):
        tolerances.lookup(tol, "no.such.key")


def test_generic_and_element_keys():
    assert tolerances.generic_key("cables.W.3.length_tolerance") == "tolerances.cable_length"
    assert tolerances.element_key("tolerances.cable_length", "W.3") == "cables.W.3.length_tolerance"
    assert tolerances.element_key("coils.*.inductance_tolerance", "RC4") == "coils.RC4.inductance_tolerance"
    assert tolerances.generic_key("cables..length_tolerance") == "cables..length_tolerance"


def test_drawing_only_row_and_chemistry_row(coach):
    spec = ToleranceSpec(0.004, 0.009, "uniform", "tolerances.battery_resistance")
    d = _with(coach, **{"supply.battery.internal_resistance": spec})
    row = tolerances.effective(d)["supply.battery.internal_resistance"]
    assert row["unit"] == "ohm" and (row["low"], row["high"]) == (0.004, 0.009)
    assert row["nominal"] == pytest.approx(0.0065)  # no shipped nominal: the middle of the ends
    # an AGM battery takes the AGM Peukert row under the generic key (retailer's table: 1.05-1.15)
    agm = dataclasses.replace(
        d, supply=dataclasses.replace(d.supply, battery=dataclasses.replace(d.supply.battery, chemistry="agm"))
    )
    p = tolerances.effective(agm)["supply.battery.peukert_exponent"]
    assert (p["low"], p["high"]) == (1.05, 1.15) and p["key"] == "supply.battery.peukert_exponent"
    assert tolerances.effective(d)["supply.battery.peukert_exponent"] == SHIPPED["supply.battery.peukert_exponent"]


def test_effective_refuses_a_key_it_cannot_place(coach):
    with pytest.raises(KeyError):
        tolerances.effective(_with(coach, **{"no.such.row": ToleranceSpec(0.0, 1.0)}))


# ---------------------------------------------------------------- the loader: [tolerances] and per-element keys

from coilstage.drawing.load import parse_drawing  # noqa: E402

from .conftest import drawing_text, one, problems  # noqa: E402


def _load(tolerances: str = "", text: str | None = None):
    return parse_drawing((text or drawing_text()) + "\n[tolerances]\n" + tolerances, "t.toml")


def _ends(d, key):
    s = d.tolerances[key]
    # default rel 1e-6: the drawing's tolerance text converted to a share: round-off only
    return pytest.approx(s.low), pytest.approx(s.high), s.distribution, s.where


def test_a_drawing_without_tolerances_states_only_its_alternator_tolerance():
    # drawing_text's alternator: 28.0 V set-point, tolerance 0.3 V -> the set-point row ±0.3/28.0 = ±1.0714 %
    d = parse_drawing(drawing_text(), "t.toml")
    assert set(d.tolerances) == {"supply.alternator.tolerance"}
    s = d.tolerances["supply.alternator.tolerance"]
    # default rel 1e-6: shares from the drawing's text: round-off only
    assert (s.low, s.high) == pytest.approx((-0.3 / 28.0, 0.3 / 28.0))
    assert s.where == "supply.alternator.tolerance" and s.distribution == "uniform"
    # the coach, likewise: 0.3 V on 28.2 V, and effective() is the table but for that row
    coach = load_drawing(COACH)
    assert set(coach.tolerances) == {"supply.alternator.tolerance"}
    tol = tolerances.effective(coach)
    assert {k: v for k, v in tol.items() if k != "supply.alternator.tolerance"} == {
        k: v for k, v in SHIPPED.items() if k != "supply.alternator.tolerance"
    }
    # default rel 1e-6: shares from the drawing's text: round-off only
    assert tol["supply.alternator.tolerance"]["high"] == pytest.approx(0.3 / 28.2)


def test_coil_tolerances_symmetric_and_as_a_table():
    d = _load('coil_resistance = "5 %"\ncoil_inductance = { low = "-7 %", high = "+3 %", distribution = "normal" }\n')
    assert _ends(d, "coils.*.resistance_tolerance") == (-0.05, 0.05, "uniform", "tolerances.coil_resistance")
    assert _ends(d, "coils.*.inductance_tolerance") == (-0.07, 0.03, "normal", "tolerances.coil_inductance")


def test_distribution_applies_to_the_drawing_rows():
    d = _load('distribution = "normal"\ncoil_resistance = "5 %"\nfault_resistance = "10 mohm"\n')
    assert d.tolerances["coils.*.resistance_tolerance"].distribution == "normal"
    assert d.tolerances["tolerances.fault_resistance"].distribution == "normal"


def test_cable_length_relative_is_the_generic_row():
    d = _load('cable_length = { low = "0 %", high = "10 %" }\n')
    assert _ends(d, "tolerances.cable_length") == (0.0, 0.10, "uniform", "tolerances.cable_length")
    assert not any(k.startswith("cables.") for k in d.tolerances)


def test_cable_length_absolute_becomes_a_row_per_cable():
    # ±0.3 m: WM and WR are 3 m (±10 %), each branch W<k> 2 m (±15 %), each return W<k>R 1 m (±30 %)
    d = _load('cable_length = "0.3 m"\n')
    assert "tolerances.cable_length" not in d.tolerances
    assert _ends(d, "cables.WM.length_tolerance")[:2] == (-0.10, 0.10)
    assert _ends(d, "cables.WR.length_tolerance")[:2] == (-0.10, 0.10)
    assert _ends(d, "cables.W0.length_tolerance")[:2] == (-0.15, 0.15)
    assert _ends(d, "cables.W1R.length_tolerance") == (-0.30, 0.30, "uniform", "tolerances.cable_length")


def test_a_cables_own_length_tolerance_wins():
    text = drawing_text().replace('length = "2.0 m"', 'length = "2.0 m"\nlength_tolerance = "0.5 m"', 1)
    d = _load('cable_length = "10 %"\n', text)
    # W0 is 2 m: ±0.5 m is ±25 %
    assert _ends(d, "cables.W0.length_tolerance") == (-0.25, 0.25, "uniform", "harness[4] (W0).length_tolerance")
    tol = tolerances.effective(d)
    assert tolerances.lookup(tol, "tolerances.cable_length", "W0")["high"] == pytest.approx(0.25)
    # default rel 1e-6: shares from the drawing's text: round-off only
    assert tolerances.lookup(tol, "tolerances.cable_length", "W1")["high"] == pytest.approx(0.10)


def test_per_coil_type_tolerances():
    text = drawing_text().replace(
        "[coils.C0]\n", '[coils.C0]\nresistance_tolerance = "3 %"\ninductance_tolerance = ["-10 %", "5 %"]\n'
    )
    d = parse_drawing(text, "t.toml")
    assert _ends(d, "coils.C0.resistance_tolerance") == (-0.03, 0.03, "uniform", "coils.C0.resistance_tolerance")
    assert _ends(d, "coils.C0.inductance_tolerance")[:2] == (-0.10, 0.05)
    tol = tolerances.effective(d)
    # default rel 1e-6: shares from the drawing's text: round-off only
    assert tolerances.lookup(tol, "coils.*.resistance_tolerance", "C0")["low"] == pytest.approx(-0.03)
    assert tolerances.lookup(tol, "coils.*.resistance_tolerance", "C1")["low"] == -0.05  # shipped


def test_regulator_setpoint_in_volts_is_a_share_of_the_set_point_and_sets_the_cold_corner():
    text = drawing_text().replace('tolerance = "0.3 V"\n', "")
    d = _load('regulator_setpoint = "0.28 V"\n', text)
    # 0.28 V of 28.0 V = ±1 %; the cold corner takes set-point + 0.28 V = 28.28 V
    assert _ends(d, "supply.alternator.tolerance")[:2] == (-0.01, 0.01)
    assert d.supply.alternator.tolerance == pytest.approx(0.28)
    assert d.corners.cold_bus == pytest.approx(28.28)
    assert not any(a.startswith("supply.alternator.tolerance not given") for a in d.assumptions)
    d = _load('regulator_setpoint = "1.5 %"\n', text)
    assert _ends(d, "supply.alternator.tolerance")[:2] == (-0.015, 0.015)
    assert d.supply.alternator.tolerance == pytest.approx(0.42)  # 1.5 % of 28.0 V


def test_regulator_setpoint_beside_the_alternators_own_tolerance():
    # 0.3 V stated twice: fine; a different high end: a problem naming both
    d = _load('regulator_setpoint = "0.3 V"\n')
    assert d.supply.alternator.tolerance == pytest.approx(0.3)
    msg = one(drawing_text() + '\n[tolerances]\nregulator_setpoint = "0.2 V"\n', "tolerances.regulator_setpoint")
    assert "supply.alternator.tolerance (0.3 V)" in msg


def test_regulator_compensation_takes_the_systems_row():
    d = _load('regulator_compensation = "-30 mV/K"\n')
    assert _ends(d, "supply.alternator.compensation_24v")[:2] == (-0.030, -0.030)
    d12 = _load('regulator_compensation = ["-16 mV/K", "-10 mV/K"]\n', drawing_text(system=12))
    assert _ends(d12, "supply.alternator.compensation_12v")[:2] == (-0.016, -0.010)


def test_fault_battery_and_alternator_rows():
    d = _load(
        'fault_resistance = "10 mohm"\nbattery_state_of_charge = ["40 %", "100 %"]\n'
        'battery_resistance = ["4 mohm", "9 mohm"]\nalternator_hot_derating = "25 %"\n'
    )
    assert _ends(d, "tolerances.fault_resistance")[:2] == (0.0, 0.010)  # the bolted fault stays the low end
    assert _ends(d, "supply.battery.state_of_charge")[:2] == (0.40, 1.0)
    assert _ends(d, "supply.battery.internal_resistance")[:2] == (0.004, 0.009)
    assert _ends(d, "supply.alternator.hot_derating")[:2] == (0.25, 0.25)
    tol = tolerances.effective(d)
    assert tol["supply.battery.internal_resistance"]["unit"] == "ohm"
    assert tol["supply.battery.state_of_charge"]["nominal"] == 0.90  # shipped nominal, within 40-100 %


@pytest.mark.parametrize(
    ("line", "where", "words"),
    [
        ('coil_resistance = "-5 %"', "tolerances.coil_resistance", "zero or more"),
        ('coil_resistance = "5 V"', "tolerances.coil_resistance", "ratio"),
        ('coil_resistance = { low = "3 %", high = "-3 %" }', "tolerances.coil_resistance", "no higher than"),
        ('coil_resistance = { low = "-150 %", high = "3 %" }', "tolerances.coil_resistance", "above -100 %"),
        ('coil_resistance = { low = "-5 %" }', "tolerances.coil_resistance", "both low and high"),
        ('coil_resistance = { low = "-5 %", hi = "5 %" }', "tolerances.coil_resistance.hi", 'did you mean "high"'),
        (
            'coil_inductance = { low = "-5 %", high = "5 %", distribution = "gauss" }',
            "tolerances.coil_inductance.distribution",
            '"uniform" or "normal"',
        ),
        ('cable_length = "3 A"', "tolerances.cable_length", '"0.3 m"'),
        ('cable_length = "1.5 m"', "tolerances.cable_length", "above -1 m, the length of W0R"),
        ('regulator_setpoint = "5 V"', "tolerances.regulator_setpoint", "within ±10 % of the 28 V set-point"),
        ('regulator_compensation = "-30 mV"', "tolerances.regulator_compensation", "per kelvin"),
        ('regulator_compensation = "+30 mV/K"', "tolerances.regulator_compensation", "to 0 mV/K"),
        ('fault_resistance = "-1 mohm"', "tolerances.fault_resistance", "zero or more"),
        ('fault_resistance = "nan mohm"', "tolerances.fault_resistance", "resistance"),
        ('battery_state_of_charge = ["0 %", "100 %"]', "tolerances.battery_state_of_charge", "above 0 %"),
        ('battery_state_of_charge = ["40 %", "120 %"]', "tolerances.battery_state_of_charge", "at most 100 %"),
        ('battery_state_of_charge = ["40 %"]', "tolerances.battery_state_of_charge", "two values"),
        ('battery_resistance = ["9 mohm", "4 mohm"]', "tolerances.battery_resistance", "no higher than"),
        ('battery_resistance = ["0 mohm", "4 mohm"]', "tolerances.battery_resistance", "greater than zero"),
        ('battery_resistance = ["4 mohm", 9]', "tolerances.battery_resistance[1]", "unit"),
        ('alternator_hot_derating = "100 %"', "tolerances.alternator_hot_derating", "below 100 %"),
        ('distribution = "flat"', "tolerances.distribution", '"normal", "uniform"'),
        ('coil_resistence = "5 %"', "tolerances.coil_resistence", 'did you mean "coil_resistance"'),
    ],
)
def test_bad_tolerance_values_name_the_key_and_what_was_expected(line, where, words):
    msg = one(drawing_text() + "\n[tolerances]\n" + line + "\n", where)
    assert words in msg, msg


def test_every_bad_tolerance_is_reported_at_once():
    text = (
        drawing_text()
        .replace("[coils.C0]\n", '[coils.C0]\nresistance_tolerance = "x"\n')
        .replace('length = "2.0 m"', 'length = "2.0 m"\nlength_tolerance = "-1 m"', 1)
    )
    text += (
        '\n[tolerances]\ncoil_resistance = "-5 %"\nfault_resistance = "1 V"\n'
        'battery_state_of_charge = ["90 %", "40 %"]\n'
    )
    got = problems(text)
    for where in (
        "coils.C0.resistance_tolerance",
        "harness[4] (W0).length_tolerance",
        "tolerances.coil_resistance",
        "tolerances.fault_resistance",
        "tolerances.battery_state_of_charge",
    ):
        assert any(p.startswith(where) for p in got), (where, got)


def test_alternator_keys_without_an_alternator():
    text = drawing_text()
    head, _, rest = text.partition("[supply.alternator]")
    text = head + rest[rest.index("[environment]") :]
    msg = one(text + '\n[tolerances]\nalternator_hot_derating = "25 %"\n', "tolerances.alternator_hot_derating")
    assert "[supply.alternator]" in msg


def test_length_tolerance_only_on_a_cable():
    text = drawing_text().replace('rating = "300 A"', 'rating = "300 A"\nlength_tolerance = "5 %"')
    assert "no such key" in one(text, "harness[0] (FM).length_tolerance")


# ---------------------------------------------------------------- the regulator's compensation limit


def test_compensation_limit_is_read_refused_when_negative_and_assumed_when_absent():
    text = drawing_text()
    with_cap = text.replace('limit_idle = "60 A"', 'limit_idle = "60 A"\ncompensation_limit = "0.6 V"', 1)
    assert with_cap != text
    assert parse_drawing(with_cap, "x").supply.alternator.compensation_limit == pytest.approx(0.6)
    plain = parse_drawing(text, "x")
    assert plain.supply.alternator.compensation_limit is None
    assert any(a.startswith("supply.alternator.compensation_limit not given") for a in plain.assumptions)
    msg = one(with_cap.replace('"0.6 V"', '"-0.6 V"'), "supply.alternator.compensation_limit")
    assert "-0.6 V" in msg
    one(with_cap.replace('"0.6 V"', '"0.6 A"'), "supply.alternator.compensation_limit")


def test_compensation_limit_caps_the_models_regulator_and_lifts_the_coachs_worst_corner():
    """The vectorised model's regulator is the set-point with its tolerance plus the compensation
    g·(θ − 25 °C) clipped to ±limit (written out here); on the coach, whose worst braking and pick-up
    corners put the regulator at 105 °C with -35 mV/K (-2.8 V), a 0.6 V limit lifts both corners."""
    from coilstage.analysis.params import model, nominal

    coach = load_drawing(COACH)
    capped = dataclasses.replace(
        coach,
        supply=dataclasses.replace(
            coach.supply, alternator=dataclasses.replace(coach.supply.alternator, compensation_limit=0.6)
        ),
    )
    m = model(capped)
    ix = m.index
    x = np.tile(nominal(m.params), (3, 1))
    x[:, ix["supply.alternator.regulator_temperature"]] = [-30.0, 30.0, 105.0]
    x[:, ix["supply.alternator.compensation_24v"]] = -0.035
    x[:, ix["supply.alternator.tolerance"]] = 0.01
    u_set = 28.2 * 1.01
    np.testing.assert_allclose(m.regulated(x), [u_set + 0.6, u_set - 0.175, u_set - 0.6], rtol=1e-12)
    # the worst corners of the two rules, with and without the limit
    _, base = check(coach)
    _, lifted = check(capped)
    for rule, subject in (("field.braking_retained", "retarder"), ("relay.coil_pickup", "K1")):
        a = next(v for v in base if (v.rule, v.subject) == (rule, subject))
        b = next(v for v in lifted if (v.rule, v.subject) == (rule, subject))
        # half a point: the cap takes 2.2 V of compensation off these corners (2.8 V to 0.6 V), which
        # moves each margin by several points; round-off could not move it by 0.005
        assert b.margin > a.margin + 0.005, (rule, a.margin, b.margin)
