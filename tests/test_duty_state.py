"""The duty's states besides the temperatures: the rotor-heated coil zone, the battery's charge with its
EMF and resistance, and the impossible states (a flat battery, a melting conductor) reported as what
happens instead. Each figure is checked against a closed form worked here, a published table, or
scipy.integrate.solve_ivp with a terminal event on the same right-hand side."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from coilstage import check
from coilstage.analysis.duty import continuous_duty, duty_conditions, simulate
from coilstage.checks import Status
from coilstage.drawing.load import load_drawing, parse_drawing

from .conftest import COACH, FLAWED, drawing_text


def verdict(vs, rule, subject):
    return next(v for v in vs if v.rule == rule and v.subject == subject)


def with_zone(d, temperature: float):
    """The drawing with every coil's zone at ``temperature`` [°C] (coils and the stages that hold them)."""
    coils = {k: dataclasses.replace(c, zone_temperature=temperature) for k, c in d.coils.items()}
    els = tuple(dataclasses.replace(e, coil=coils[e.coil.name]) if e.kind == "stage" else e for e in d.elements)
    return dataclasses.replace(d, coils=coils, elements=els)


def with_rise(d, rise: float | None, tau: float | None = None):
    env = dataclasses.replace(d.environment, rotor_zone_rise=rise, rotor_zone_time_constant=tau)
    return dataclasses.replace(d, environment=env)


def event_time(r, col: int, level: float) -> float:
    """First time state ``col`` reaches ``level`` rising, by scipy's event location (independent integrator)."""
    from scipy.integrate import solve_ivp

    y = r.state(0)
    for t0, t1, f in r.segments:

        def ev(_t, yy, col=col):
            return yy[col] - level

        ev.terminal, ev.direction = True, 1
        sol = solve_ivp(f, (t0, t1), y, method="DOP853", rtol=1e-10, atol=1e-9, events=ev)
        if sol.t_events[0].size:
            return float(sol.t_events[0][0])
        y = sol.y[:, -1]
    return math.inf


@pytest.fixture(scope="module")
def coach():
    return load_drawing(COACH)


# ---------------------------------------------------------------- the rotor-heated coil zone


def test_zone_follows_its_first_order_law_over_the_coach_descent(coach):
    # Closed form of dTz/dt = (Tz0 + rise·[on] − Tz)/τ, step by step (lumped node,
    # docs/references.md#winding-first-order-thermal): Tz(t) = T∞ + (Tz(t0) − T∞)·exp(−(t − t0)/τ) with
    # T∞ = 80 + 40 °C while any stage is on and 80 °C in the two steps with none on. Shipped rows: 40 K, 600 s.
    r = simulate(coach)
    tz, t0 = 80.0, 0.0
    for step in coach.duty.steps:
        target = 80.0 + (40.0 if step.stages else 0.0)
        t1 = t0 + step.duration
        tz = target + (tz - target) * math.exp(-step.duration / 600.0)
        j = int(np.nonzero(r.t == t1)[0][-1])
        # 1e-3 K: the integrator at rtol 1e-6, atol 1e-4 over 30 min
        assert r.zone_temperature[j, 0] == pytest.approx(tz, abs=1e-3)
        t0 = t1
    assert np.ptp(r.zone_temperature[-1]) == 0.0  # the four stages share the retarder's surroundings


def test_shipped_default_is_listed_as_an_assumption_and_a_stated_rise_is_not(coach):
    c = duty_conditions(coach)
    assert (c.zone_rise, c.zone_time_constant) == (40.0, 600.0)
    text = " ".join(c.assumptions)
    assert "environment.rotor_zone_rise = 40 K" in text and "invented default" in text
    assert "environment.rotor_zone_time_constant = 600 s" in text
    stated = duty_conditions(with_rise(coach, 25.0, 300.0))
    assert (stated.zone_rise, stated.zone_time_constant) == (25.0, 300.0)
    assert not any("rotor_zone" in a for a in stated.assumptions)


def test_coach_with_its_retarder_zone_at_120_degC(coach):
    # The case of the review: the coach's coils' surroundings at 120 °C instead of 80 °C (no further rise).
    # Measured on this model, with the duty's coils at the low end of their resistance tolerance (-5 %):
    # S1 peaks at 172.2 °C against its 165 °C limit (class H 180 less 15 K) and reaches it 23.8 min into
    # the 30 min descent (the review quoted ≈170 °C and ≈22 min with the stated coils, on the model
    # before the battery and alternator followed the duty). Ranges: ±1.5 K and 22.5-25.5 min, wide
    # enough for the integrator's tolerance and the battery's small effects, narrow enough that the
    # 120 °C zone (not the 80 °C one, 155 °C) is what they pin.
    d = with_rise(with_zone(coach, 120.0), 0.0, 600.0)
    a, vs = check(d)
    peak = float(np.max(a.descent.stage_temperature[:, 0]))
    assert 170.7 <= peak <= 173.7
    t = a.descent.time_to(0, 165.0)
    assert 22.5 * 60 <= t <= 25.5 * 60
    v = verdict(vs, "winding.temperature", "S1")
    assert v.status is Status.FAIL
    assert f"{peak - 165.0:.0f} K over" in v.note and f"reaches the limit after {t / 60:.1f} min" in v.note
    assert verdict(vs, "winding.time_to_limit", "S1").status is Status.FAIL  # continuous: sooner than 30 min


def test_a_stated_rotor_rise_that_passed_before_now_fails(coach):
    # Before the zone was a state, a drawing's rotor_zone_rise was read and ignored: the coach with a stated
    # 80 K rise passed at 134.9 °C (its peak with the zone held at 80 °C). Now the surroundings rise with the
    # retardation and S1 peaks at 172.9 °C (measured, coils -5 %; ±1.5 K as above), 8 K over its limit.
    _, vs = check(with_rise(coach, 80.0))
    v = verdict(vs, "winding.temperature", "S1")
    assert v.status is Status.FAIL
    assert 171.4 <= v.value <= 174.4
    # and the shipped default (40 K, 10 min) leaves the demo passing: 155.0 °C, 10 K of headroom
    _, vs0 = check(coach)
    v0 = verdict(vs0, "winding.temperature", "S1")
    assert v0.status is Status.PASS and 153.5 <= v0.value <= 156.5
    assert f"{165.0 - v0.value:.0f} K of headroom" in v0.note
    assert "+ 40 K while any stage is on" in v0.note  # the conditions are stated in the note


def test_time_to_limit_states_its_conditions(coach):
    _, vs = check(coach)
    v = verdict(vs, "winding.time_to_limit", "S1")
    # one set of conditions, the same as the descent's: the zone rise, the hot alternator, the battery
    assert "conditions:" in v.note and "alternator output less 25%" in v.note and "40 K" in v.note
    assert v.status is Status.PASS and 30.0 < v.value < 45.0  # measured 34.6 min against the 30 min duty


# ---------------------------------------------------------------- the battery over the duty


def test_battery_emf_and_resistance_at_the_start_by_hand(coach):
    r = simulate(coach)
    # EMF: two 12 V blocks at 90 % charge, the published OCV table (realexposer.com: 12.45 V at 75 %,
    # 12.65 V at 100 %) interpolated by hand: 2 × (12.45 + 0.6 × 0.20) = 25.14 V
    assert r.battery_emf[0] == pytest.approx(25.14, abs=1e-9)
    # resistance: stated 9 mΩ at 25 °C, at 40 °C (highest ambient) and 90 %:
    # 9 × exp(ln(1.5)/48 × (25 − 40)) × (1 + 0.4 × 0.1) = 8.2461 mΩ (b from "about 50 % from +30 to −18 °C")
    # (rel 1e-5: the shipped row rounds b = ln(1.5)/48 = 0.0084471 to 0.008447 /K)
    assert r.battery_resistance[0] == pytest.approx(9e-3 * math.exp(math.log(1.5) / 48 * -15) * 1.04, rel=1e-5)
    assert r.battery_emf[-1] < r.battery_emf[0] and r.battery_resistance[-1] > r.battery_resistance[0]


def test_flat_battery_is_found_on_the_solution_and_reported_as_flat():
    d = load_drawing(FLAWED)
    a, vs = check(d)
    r = a.descent
    flat = r.time_to_charge(0.0)
    # independent: solve_ivp's event where the rate-weighted charge used reaches what the battery held
    held = d.duty.start_soc * r.conditions.capacity
    ref = event_time(r, r.soc_column, held)
    assert flat == pytest.approx(ref, abs=0.01)  # 10 ms (measured well under 1 ms); about 17.3 min in
    assert 15 * 60 < flat < 20 * 60
    v = verdict(vs, "battery.charge", "battery")
    assert v.status is Status.FAIL
    assert f"the battery is flat after {flat / 60:.1f} min" in v.note
    # the value stays physical: at most what the battery held, never a negative state of charge
    assert v.value == pytest.approx(held / 3600) and math.isfinite(v.margin)
    assert "-" not in f"{r.state_of_charge.min():.0%}" and r.state_of_charge.min() == 0.0


# ---------------------------------------------------------------- a conductor that runs away


@pytest.fixture(scope="module")
def melting():
    # A 1.5 mm² feed carrying two 0.2 Ω stages, with no outside diameter known, so it sheds heat by the linear
    # law its table ampacity implies: I²R'20·α ≥ G', a first-order heating that runs away.
    d = parse_drawing(drawing_text(feed="1.5 mm^2", coil_r=[0.2, 0.2]), "generated")
    els = tuple(dataclasses.replace(e, outer_diameter=None) if e.id == "WM" else e for e in d.elements)
    return dataclasses.replace(d, elements=els)


def test_conductor_crossings_against_solve_ivp_events(melting):
    a, vs = check(melting)
    r = a.descent
    k = r.cable_ids.index("WM")
    assert r.cable_models["WM"].startswith("linear loss")
    cable = next(e for e in melting.elements if e.id == "WM")
    t_lim = r.cable_time_to(k, cable.class_max)
    t_melt = r.cable_time_to(k, 1084.62)  # copper, CRC Handbook (the ITS-90 freezing point of copper)
    assert t_lim == pytest.approx(event_time(r, k, cable.class_max), abs=0.01)  # 10 ms
    assert t_melt == pytest.approx(event_time(r, k, 1084.62), abs=0.01)
    assert 0 < t_lim < t_melt < 120  # measured 1.5 s and 38.5 s
    # held at the melting point: no temperature above it, no runaway to thousands of degrees
    assert float(np.max(r.cable_temperature[:, k])) == 1084.62
    v = verdict(vs, "cable.conductor_temperature", "WM")
    assert v.status is Status.FAIL and v.value == 1084.62 and math.isfinite(v.margin)
    assert f"passes its insulation's limit ({cable.class_max:g} °C) after {t_lim:.0f} s" in v.note
    assert f"copper's melting point (1085 °C, CRC Handbook) after {t_melt:.0f} s" in v.note


def test_continuous_run_holds_the_same_conditions_as_the_descent(coach):
    r = simulate(coach, continuous_duty(coach))
    assert r.conditions == duty_conditions(coach)


def test_the_duty_takes_the_coils_at_the_low_end_of_their_resistance_tolerance(coach):
    # Worst case of every heating rule: at a given bus the lowest resistance draws the most current and
    # dissipates the most (P = V²/R). The shipped generic tolerance is ±5 % (coilstage/data/
    # tolerance_defaults.toml); the duty's conditions take -5 % for each stage and say so, and the same
    # drawing with that tolerance stated as exactly zero runs cooler.
    import dataclasses

    from coilstage.analysis.duty import duty_conditions, simulate
    from coilstage.drawing.schema import ToleranceSpec

    cond = duty_conditions(coach)
    assert cond.coil_tolerance == {s.id: pytest.approx(-0.05) for s in coach.stages}
    assert dict(cond.words)["coils"].startswith("resistance -5%")
    exact = dataclasses.replace(
        coach,
        tolerances={**coach.tolerances, "coils.*.resistance_tolerance": ToleranceSpec(0.0, 0.0, "uniform", "test")},
    )
    assert duty_conditions(exact).coil_tolerance == {s.id: 0.0 for s in coach.stages}
    hot = float(np.max(simulate(coach).stage_temperature[:, 0]))
    stated = float(np.max(simulate(exact).stage_temperature[:, 0]))
    assert hot > stated + 1.0  # measured 155.0 °C against 152.2 °C


def test_each_heating_verdict_has_the_stated_coils_beside_it_as_nominal(coach):
    """The heating rules are decided with the coils at -5 %; their nominal is the same rules on the duty
    simulated with the coils as stated, which is what the same drawing with a zero coil tolerance
    gives as its own verdict (figure for figure: the same simulation). On the coach the main fuse's
    cyclic duty passes nominally and warns at the low end (the case the worst-case review asked for:
    a nominal pass that does not pass at its worst case says so first)."""
    from coilstage.checks import DUTY_RULES, DUTY_WORST
    from coilstage.drawing.schema import ToleranceSpec

    exact = dataclasses.replace(
        coach,
        tolerances={**coach.tolerances, "coils.*.resistance_tolerance": ToleranceSpec(0.0, 0.0, "uniform", "test")},
    )
    _, worst = check(coach)
    _, stated = check(exact)
    by = {(v.rule, v.subject): v for v in stated}
    seen = 0
    for v in worst:
        if v.rule not in DUTY_RULES or v.status is Status.NOT_CHECKED:
            continue
        n = by[(v.rule, v.subject)]
        assert v.corner == DUTY_WORST and v.worst is not None, (v.rule, v.subject)
        assert v.worst.nominal_status is n.status
        # the same simulation of the same drawing (the stated coils either way): the same figure
        assert v.worst.nominal_value == n.value
        assert n.worst is None  # nothing moves the stated coils: no nominal beside them
        seen += 1
    assert seen >= 20
    cyc = verdict(worst, "fuse.cyclic_duty", "F-MAIN")
    assert cyc.status is Status.WARN and cyc.worst.nominal_status is Status.PASS
    assert cyc.note.startswith("pass nominally, WARN at the low end of the coils' resistance tolerance")
