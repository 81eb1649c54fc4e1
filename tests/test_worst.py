"""Each rule at its own worst case: the worst-case views against hand calculations, and the
verdicts decided on them carrying their nominal figures."""

from __future__ import annotations

import math

import pytest

from coilstage.analysis.run import analyse
from coilstage.checks import RULES, run_checks
from coilstage.checks.base import Status, Verdict, decided_at_worst
from coilstage.drawing.load import load_drawing

COACH = "configs/coach-24v-4stage.toml"


@pytest.fixture(scope="module")
def coach():
    """The rules' own verdicts, each at its named worst case (run_checks may then decide a
    steady-state verdict at a worse tolerance corner: tests/test_tolerance_corner.py)."""
    a = analyse(load_drawing(COACH), switching=False, heating=False)
    return a, {(v.rule, v.subject): v for rule in RULES for v in rule.evaluate(a)}


def test_smallest_fault_battery_by_hand(coach):
    a, _ = coach
    sf = a.worst.smallest_fault
    # Published OCV table (realexposer.com): 50 % -> 12.24 V per block, 24.48 V per pair.
    assert sf.battery_emf == pytest.approx(24.48)
    # Hand-worked from the shipped defaults: 9 mOhm x exp(ln(1.5)/48 x (25 + 30)) x (1 + 0.4 x 0.5) x 1.5.
    assert sf.battery_resistance == pytest.approx(0.009 * math.exp(0.008447 * 55) * 1.2 * 1.5, rel=1e-4)
    # The far-end fault of the main feed falls far below the largest (the first case a review measured).
    assert sf.far_end["W-MAIN"] < 0.5 * a.far_end_fault["W-MAIN"]


def test_smallest_fault_with_its_own_resistance_is_bounded(coach):
    # Hand bound: no fault current can exceed the battery EMF over the battery's and the fault's own
    # resistance in series (alternator off); the default fault resistance is 5 mOhm (from memory).
    a, _ = coach
    sf = a.worst.smallest_fault
    assert sf.fault_resistance == pytest.approx(0.005)
    assert 0 < sf.far_end["W-MAIN"] < sf.battery_emf / (sf.battery_resistance + sf.fault_resistance)


def test_largest_fault_drops_the_other_loads(coach):
    # The largest fault with the rest of the vehicle disconnected; surface-charged
    # battery 12 x 2.2 = 26.4 V (battery retailer's note), 0.9 x 9 mOhm (IEC 61660-1, from memory).
    a, _ = coach
    lf = a.worst.largest_fault
    assert lf.battery_emf == pytest.approx(26.4)
    assert lf.battery_resistance == pytest.approx(0.0081)
    assert lf.at_fuse["F1"] > a.fault_current["F1"]


def test_breaking_capacity_decided_at_the_largest_fault(coach):
    a, v = coach
    f1 = v[("fuse.breaking_capacity", "F1")]
    # the coach's F1 breaks 4 kA (its drawing's datasheet figure)
    assert f1.limit == pytest.approx(4000)
    assert f1.margin == pytest.approx((4000 - a.worst.largest_fault.at_fuse["F1"]) / 4000)
    assert f1.worst.nominal_margin == pytest.approx((4000 - a.fault_current["F1"]) / 4000)
    assert f1.margin < f1.worst.nominal_margin
    assert f1.corner == "largest fault"


def test_continuous_duty_with_coil_tolerance_and_cold_regulator(coach):
    """fuse.continuous in one consistent vehicle state over the ambient range: at the coldest ambient
    (-30 °C) the coils are coldest and the cold regulator's compensation raises the bus, 28.2 + 0.3 +
    0.020 V/K x 55 K = 29.6 V, while the fuse's zone (60 °C at the highest ambient, 40 °C) is 70 K
    cooler, -10 °C. Hand-worked limit from the shipped rerating curve (points (-40, 1.12) and
    (25, 1.00), linear): 1.12 - 0.12 x 30/65 = 1.0646; 0.75 x 350 A x 1.0646 = 279.5 A. Hand estimate of
    the current ratio to the nominal sweep (bus 28.5 V, stated coil R) at the same ambient:
    at most (29.6 / 28.5) / 0.95 = 1.093 less the shared feed's drop."""
    a, v = coach
    fm = v[("fuse.continuous", "F-MAIN")]
    sw, sn = a.worst.duty_sweep, a.worst.duty_sweep_nominal
    assert a.worst.bus_high == pytest.approx(28.2 + 0.3 + 0.020 * 55)
    assert sw.ambients[0] == -30.0 and sw.bus[0] == pytest.approx(29.6)
    assert fm.corner == "largest current" and "ambient -30 °C" in fm.note
    assert fm.limit == pytest.approx(0.75 * 350 * (1.12 - 0.12 * 30 / 65))
    assert fm.value == pytest.approx(sw.currents["F-MAIN"][0])
    ratio = fm.value / sn.currents["F-MAIN"][0]
    assert 1.08 < ratio < (29.6 / 28.5) / 0.95 + 1e-9
    assert fm.margin == pytest.approx((fm.limit - fm.value) / fm.limit)
    assert fm.margin < fm.worst.nominal_margin


def test_lowest_bus_is_the_battery_behind_its_highest_resistance(coach):
    a, v = coach
    low = a.worst.lowest_bus
    # KCL at the battery: bus = EMF - I_battery R_battery (hand form of the battery's Thévenin source).
    sf = a.worst.smallest_fault
    assert low.bus_voltage == pytest.approx(sf.battery_emf - low.solution.battery_current * sf.battery_resistance)
    assert low.bus_voltage < a.corners["hot"].bus_voltage
    bus = v[("supply.bus_minimum", "bus")]
    assert bus.value == pytest.approx(low.bus_voltage)
    assert bus.worst.nominal_value == pytest.approx(a.corners["hot"].bus_voltage)


def test_decided_at_worst_says_a_nominal_pass_that_fails():
    nom = Verdict("x.y", "s", Status.PASS, 1.0, 2.0, "A", 0.5, "c", "nominal note", "cold")
    bad = Verdict("x.y", "s", Status.FAIL, 3.0, 2.0, "A", -0.5, "c", "worst note", "w")
    out = decided_at_worst(bad, nom, "largest fault", ("battery 8 mΩ",))
    assert out.status is Status.FAIL and out.margin == -0.5
    assert out.note.startswith("pass nominally, FAIL at the largest fault")
    assert out.worst.nominal_status is Status.PASS and out.worst.nominal_margin == 0.5
    # The nominal case harsher than the worst-case definition: the nominal verdict is kept.
    kept = decided_at_worst(nom, bad, "largest fault")
    assert kept.status is Status.FAIL and "is the worse here" in kept.note


def test_time_to_limit_quotes_its_own_run():
    # The time and the temperature beside it come from one run (the continuous
    # profile), not the time from the profile and the temperature from the hot corner (alternator idle).
    a = analyse(load_drawing("configs/flawed-retrofit-24v.toml"), switching=False)
    v = {x.subject: x for x in run_checks(a) if x.rule == "winding.time_to_limit"}
    k = a.continuous.stage_ids.index("S1")
    end = float(a.continuous.stage_temperature[-1, k])
    assert f"same run: {end:.0f} °C" in v["S1"].note
    assert abs(end - a.corners["hot"].temperatures["S1"]) > 5  # the two differ: 182 against 190 °C


def test_hot_steady_state_with_unmodelled_neighbours_closes():
    # S3 and S4 on a coil without a thermal model (stated hot 150 °C); S1's steady
    # state must be solved with them at 150 °C, the state the hot corner then runs. Independent check:
    # at the hot corner's own solution, S1's winding temperature equals zone + P·Rth with P = I²R at
    # that temperature (the steady heat balance, physics.thermal), to 0.01 K.
    import dataclasses

    from coilstage.analysis.quasistatic import stage_thermal_resistance
    from coilstage.drawing.schema import Stage

    d0 = load_drawing(COACH)
    rc = d0.coils["RC4"]
    plain = dataclasses.replace(
        rc,
        name="RC4P",
        thermal_resistance=None,
        thermal_resistance_moving=None,
        heat_capacity=None,
        hot_temperature=150.0,
        hot_temperature_source="stated",
    )
    els = tuple(
        dataclasses.replace(e, coil=plain) if isinstance(e, Stage) and e.id in ("S3", "S4") else e for e in d0.elements
    )
    d = dataclasses.replace(d0, coils=dict(d0.coils, RC4P=plain), elements=els)
    a = analyse(d, switching=False, heating=False)
    hot = a.corners["hot"]
    s1 = next(s for s in hot.stages if s.id == "S1")
    stage = next(e for e in d.stages if e.id == "S1")
    p = s1.current**2 * hot.solution.resistance["S1"]
    assert hot.temperatures["S1"] == pytest.approx(
        stage.coil.zone_temperature + p * stage_thermal_resistance(stage, True), abs=0.01
    )


def test_tolerance_defaults_listed_once_under_assumptions(coach):
    """Every tolerance default the worst cases take is a listed assumption with its value, source and
    status, once. Reference: the shipped rows of coilstage/data/tolerance_defaults.toml, read here with
    tomllib (independent of the loader), and the 24 V coach's 12 cells."""
    import tomllib
    from pathlib import Path

    from coilstage.report.document import build

    a, verdicts = coach
    rows = {
        r["key"]: r for r in tomllib.loads(Path("coilstage/data/tolerance_defaults.toml").read_text())["table"]["rows"]
    }
    doc = build(a, list(verdicts.values()))
    lines = [x for x in doc["assumptions"] if x.startswith("worst-case default ")]
    assert len(lines) == len(set(lines)) == 13
    by_key = {x.split(" ")[2]: x for x in lines}
    assert "supply.alternator.compensation_12v" not in by_key  # a 24 V drawing takes the 24 V gradient
    for key, line in by_key.items():
        assert rows[key]["source"] in line and rows[key]["status"] in line
    assert "= 50 % (low end of 50 % to 100 %)" in by_key["supply.battery.state_of_charge"]
    assert "= 5 mΩ (high end of 0 mΩ to 5 mΩ)" in by_key["tolerances.fault_resistance"]
    assert "= -5 % (low end of -5 % to +5 %)" in by_key["coils.*.resistance_tolerance"]
    assert "= +20 % (high end of -20 % to +20 %)" in by_key["coils.*.inductance_tolerance"]
    assert "= -20 mV/K" in by_key["supply.alternator.compensation_24v"]


@pytest.mark.parametrize(("rule", "subject"), [("relay.contact_rating", "K1")])
def test_ampacity_and_contact_duty_at_the_largest_current(coach, rule, subject):
    """Relay contact duty is decided at the largest continuous current in one vehicle state over the
    ambient range (as cable ampacity, tests/test_worst_rules.py), the worst at the coldest ambient:
    coil R -5 % and the bus at the regulator's highest end, 28.2 + 0.3 + 0.020 V/K x 55 K = 29.6 V
    against the cold corner's 28.5 V. Hand estimate of the current ratio on the stage branch (Ohm's
    law, the coil dominating the branch): at most (29.6 / 28.5) / 0.95 = 1.093, less the shared feed's
    drop. The limit is the nominal verdict's own (the rating does not depend on the current)."""
    a, v = coach
    x = v[(rule, subject)]
    sw, sn = a.worst.duty_sweep, a.worst.duty_sweep_nominal
    assert x.corner == "largest current" and x.worst is not None
    j = sw.ambients.index(-30.0)
    assert x.value == pytest.approx(sw.currents[subject][j])
    assert 1.08 < x.value / sn.currents[subject][j] < (29.6 / 28.5) / 0.95 + 1e-9
    assert x.margin == pytest.approx((x.limit - x.value) / x.limit)
    assert x.margin < x.worst.nominal_margin
    assert "decided by ambient -30 °C" in x.note


def test_voltage_drop_at_the_largest_current(coach):
    """circuit.voltage_drop is decided at the largest continuous current: the drop is the
    current times the path's resistance (Ohm's law), so with the same (cold) cables it grows with the
    currents, at most by (29.6 V / 28.5 V) / 0.95 = 1.093 (hand estimate, as for the fuses), and by more
    than the bus ratio 29.6 / 28.5 = 1.039 alone. The nominal figure is the worse of the cold and hot
    corners, as before."""
    a, v = coach
    for s in a.drawing.stages:
        x = v[("circuit.voltage_drop", s.id)]
        cold = next(t for t in a.corners["cold"].stages if t.id == s.id)
        assert x.corner == "largest current"
        assert x.worst.nominal_value == pytest.approx(cold.drop_fraction * 100)
        assert 29.6 / 28.5 < x.value / x.worst.nominal_value < (29.6 / 28.5) / 0.95 + 1e-9
        sol = a.worst.largest_current_solution
        u_bus = sol.v[a.drawing.supply.battery.node] - sol.v[a.drawing.supply.negative_node]
        assert x.value == pytest.approx((u_bus - (sol.v[s.a] - sol.v[s.b])) / 24 * 100)
