"""The declared parameters and the vectorised margins of the steady-state rules, against the scalar
analysis of the same drawing changed to each sample (dataclasses.replace), and against a network
assembled here by hand and solved with numpy.linalg.solve (an independent general-purpose library)."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest

from coilstage.analysis.circuit import Circuit, SourceState
from coilstage.analysis.conditions import hot_temperatures
from coilstage.analysis.params import FAIL, PASS, WARN, evaluate, model, nominal, parameters
from coilstage.analysis.run import analyse
from coilstage.checks import RULES
from coilstage.drawing.load import load_drawing
from coilstage.drawing.schema import Cable, Fuse, Relay, Stage
from tests.conftest import drawing_at_sample

COACH = "configs/coach-24v-4stage.toml"
STATUS = {"pass": PASS, "warn": WARN, "fail": FAIL}

#: Published open-circuit voltage of a 12 V flooded block at 0/25/50/75/100 % charge [V]
#: (realexposer.com "What does terminal voltage tell", the table of OCV and specific gravity).
OCV_12V = (11.89, 12.06, 12.24, 12.45, 12.65)


@pytest.fixture(scope="module")
def coach():
    return load_drawing(COACH)


def _samples(ps, n, seed):
    rng = np.random.default_rng(seed)
    lo = np.array([p.low for p in ps])
    hi = np.array([p.high for p in ps])
    x = lo + (hi - lo) * rng.random((n, len(ps)))
    x[0] = nominal(ps)
    x[1] = lo
    x[2] = hi
    return x


def _regulator(d, col):
    """Regulated voltage by hand: U = U_set (1 + tol) + g (θ − 25 °C) (a linear compensation)."""
    alt = d.supply.alternator
    return alt.setpoint * (1 + col["supply.alternator.tolerance"]) + col["supply.alternator.compensation_24v"] * (
        col["supply.alternator.regulator_temperature"] - 25.0
    )


def test_parameters_of_the_coach(coach):
    ps = {p.key: p for p in parameters(coach)}
    coil = ps["coils.RC4.resistance_tolerance"]
    assert (coil.low, coil.high) == (-0.05, 0.05) and coil.elements == ("S1", "S2", "S3", "S4")
    assert ps["tolerances.cable_length"].high == 0.10
    # the drawing's ±0.3 V on 28.2 V as a fraction (stated in the drawing)
    assert ps["supply.alternator.tolerance"].high == pytest.approx(0.3 / 28.2)
    reg = ps["supply.alternator.regulator_temperature"]
    assert (reg.low, reg.high) == (-30.0, 105.0)  # lowest ambient to the alternator cable's zone
    assert (ps["environment.ambient"].low, ps["environment.ambient"].high) == (-30.0, 40.0)


def test_a_drawing_with_its_own_cable_row_gets_its_own_parameter(coach):
    from coilstage.drawing.schema import ToleranceSpec

    d = dataclasses.replace(coach, tolerances={"cables.W1.length_tolerance": ToleranceSpec(0.0, 0.3)})
    ps = {p.key: p for p in parameters(d)}
    assert ps["cables.W1.length_tolerance"].elements == ("W1",)
    assert "W1" not in ps["tolerances.cable_length"].elements


def _zones_at(d, ambient):
    """The drawing with every zone temperature moved by the ambient's shortfall from its highest (the
    zones follow the ambient one for one), worked here element by element."""
    shift = d.environment.ambient_max - ambient
    els = tuple(
        dataclasses.replace(e, zone_temperature=e.zone_temperature - shift)
        if isinstance(e, (Cable, Fuse, Relay))
        else e
        for e in d.elements
    )
    return dataclasses.replace(d, elements=els)


def test_duty_rules_equal_the_scalar_analysis_row_by_row(coach):
    """Each sample through analyse() on the drawing changed to it: cold corner at the sample's ambient,
    every zone moved with the ambient, bus held at the regulator's voltage (by hand), alternator at
    rated output plus its cold excess. The model tabulates the duty limits on an ambient grid and
    interpolates between its points, so the samples' ambients are put on grid points here (exact
    there); the interpolation between them is held by the next test."""
    ps = parameters(coach)
    xs = _samples(ps, 6, 1)
    grid = model(coach).limits.grid
    k_amb = [p.key for p in ps].index("environment.ambient")
    xs[:, k_amb] = grid[np.abs(grid[None, :] - xs[:, k_amb, None]).argmin(axis=1)]
    got = evaluate(coach, xs)
    ids = {"fuse.continuous", "cable.ampacity", "relay.contact_rating"}
    seen = 0
    for i, x in enumerate(xs):
        d, col = drawing_at_sample(coach, ps, x)
        d = _zones_at(d, col["environment.ambient"])
        alt = d.supply.alternator
        d = dataclasses.replace(
            d,
            corners=dataclasses.replace(
                d.corners, cold_ambient=col["environment.ambient"], cold_bus=_regulator(d, col)
            ),
            supply=dataclasses.replace(
                d.supply,
                alternator=dataclasses.replace(
                    alt, limit_rated=alt.limit_rated * (1 + col["supply.alternator.cold_excess"])
                ),
            ),
        )
        a = analyse(d, switching=False, heating=False)
        # the rules' cold-corner figures: the worst cases kept, their ambient sweeps left out
        a = dataclasses.replace(a, worst=dataclasses.replace(a.worst, duty_sweep=None, duty_sweep_nominal=None))
        for rule in RULES:
            if rule.id not in ids:
                continue
            for v in rule.evaluate(a):
                if v.margin is None:
                    continue
                e = got[(v.rule, v.subject)]
                assert e.margin[i] == pytest.approx(v.margin, rel=1e-9, abs=1e-12), (v.rule, v.subject, i)
                assert e.status[i] == STATUS[v.status.value], (v.rule, v.subject, i)
                seen += 1
        for s in a.corners["cold"].stages:
            f = s.drop_fraction
            e = got[("circuit.voltage_drop", s.id)]
            assert e.value[i] == pytest.approx(100 * f, rel=1e-9)
            assert e.margin[i] == pytest.approx((d.limits.drop_pass - f) / d.limits.drop_pass, rel=1e-9, abs=1e-12)
    assert seen >= 6 * 20


def test_duty_limits_between_grid_points_stay_within_a_tenth_of_a_percent(coach):
    """Between the grid's points the interpolated limits against the ratings worked at the exact zone
    temperature (analysis.ratings.cable_rating, tables.fuse_rerating): the ampacity's ambient factor is
    smooth (a square root of the insulation's headroom), so a chord 2.5 K long is within 0.1 %."""
    from coilstage import tables
    from coilstage.analysis.ratings import cable_rating

    m = model(coach)
    grid = m.limits.grid
    amb_max = coach.environment.ambient_max
    mids = (grid[:-1] + grid[1:]) / 2
    for c in coach.of_kind(Cable):
        if c.id not in m.limits.cable_limit:
            continue
        got = np.interp(mids, grid, m.limits.cable_limit[c.id])
        exact = [
            cable_rating(dataclasses.replace(c, zone_temperature=c.zone_temperature - (amb_max - t))).ampacity.value
            for t in mids
        ]
        assert got == pytest.approx(exact, rel=1e-3), c.id
    frac = float(tables.fuse_rules()["continuous_fraction"])
    for f in coach.of_kind(Fuse):
        got = np.interp(mids, grid, m.limits.fuse_limit[f.id])
        exact = [frac * f.rating * tables.fuse_rerating(f.zone_temperature - (amb_max - t)) for t in mids]
        assert got == pytest.approx(exact, rel=1e-3), f.id


def test_lowest_bus_equals_the_scalar_solve(coach):
    """The bus of the low-bus network against Circuit.solve with the battery worked by hand: EMF on the
    published OCV line (12 cells), R = R_25 · e^{b (25 − θ)} · [1 + 0.4 (1 − SOC)] · age, the
    alternator regulating at the compensated set-point with its idle output less the hot derating."""
    ps = parameters(coach)
    xs = _samples(ps, 8, 2)
    got = evaluate(coach, xs)[("supply.bus_minimum", "bus")]
    temps = hot_temperatures(coach)
    modes = set()
    for i, x in enumerate(xs):
        d, col = drawing_at_sample(coach, ps, x)
        emf, r = _battery_by_hand(d, col)
        d = dataclasses.replace(
            d,
            supply=dataclasses.replace(d.supply, battery=dataclasses.replace(d.supply.battery, internal_resistance=r)),
        )
        limit = d.supply.alternator.limit_idle * (1 - col["supply.alternator.hot_derating"])
        sol = Circuit(d).solve(temps, SourceState(emf, _regulator(d, col), limit))
        modes.add(sol.alternator_mode)
        assert got.value[i] == pytest.approx(sol.v[d.supply.battery.node], rel=1e-9)
        assert got.margin[i] == pytest.approx((got.value[i] - 16.0) / 16.0, rel=1e-12)
    assert "current-limited" in modes  # the switch of state is exercised


def test_braking_retained_equals_the_scalar_solve_and_the_flux_law(coach):
    """field.braking_retained of the model against Circuit.solve of the same state with the battery
    worked by hand (as the low-bus test above), every cable and winding at its hot-corner temperature
    less the sample's ambient shortfall from the highest (the zones follow the ambient), and the effort
    Σ B² from the scalar magnetic circuit (analysis.worst.braking_effort, whose root
    tests/test_field.py holds against scipy.optimize.brentq), over the cold corner's effort. The
    windings stand at their steady state in the braking-retained state (analysis.worst.braking_drawing),
    less the ambient's shortfall."""
    from coilstage.analysis.conditions import corner_sources
    from coilstage.analysis.tolerances import effective
    from coilstage.analysis.worst import braking_drawing, braking_effort

    ps = parameters(coach)
    xs = _samples(ps, 8, 5)
    got = evaluate(coach, xs)[("field.braking_retained", "retarder")]
    cold_t, cold_src = corner_sources(coach)["cold"]
    cold = Circuit(coach).solve(cold_t, cold_src)
    e_cold = braking_effort(coach, {s.id: abs(cold.current[s.id]) for s in coach.stages})
    hot = hot_temperatures(braking_drawing(coach, effective(coach)))
    ratios = []
    for i, x in enumerate(xs):
        d, col = drawing_at_sample(coach, ps, x)
        emf, r = _battery_by_hand(d, col)
        d = dataclasses.replace(
            d,
            supply=dataclasses.replace(d.supply, battery=dataclasses.replace(d.supply.battery, internal_resistance=r)),
        )
        shift = col["environment.ambient"] - d.environment.ambient_max
        temps = {k: t + shift for k, t in hot.items()}
        limit = d.supply.alternator.limit_idle * (1 - col["supply.alternator.hot_derating"])
        sol = Circuit(d).solve(temps, SourceState(emf, _regulator(d, col), limit))
        ratio = braking_effort(d, {s.id: abs(sol.current[s.id]) for s in d.stages}) / e_cold
        ratios.append(ratio)
        # rel 1e-9: two solves of the same network (batched numpy and the scalar MNA), round-off only
        assert got.value[i] == pytest.approx(ratio, rel=1e-9)
        assert got.margin[i] == pytest.approx((ratio - 0.25) / 0.25, rel=1e-9)
        assert got.status[i] == (PASS if ratio >= 0.25 else FAIL)
    assert max(ratios) - min(ratios) > 0.02  # the samples move it


def test_braking_model_at_the_rules_own_state_gives_the_rules_ratio(coach):
    """At the state analysis.worst decides field.braking_retained in (coils +5 %, cables +10 %, battery
    at 50 % charge and aged × 1.5 at the highest ambient, alternator derated 35 %, regulator nominal)
    the model's braking network gives the rule's own ratio, which worst.py solves by Circuit.solve
    of the drawing changed to that state: the two paths agree to round-off (rel 1e-9)."""
    a = analyse(coach, heating=False, transients=False)
    m = model(coach)
    x = nominal(m.params)
    for key, value in {
        "coils.RC4.resistance_tolerance": 0.05,
        "tolerances.cable_length": 0.1,
        "supply.alternator.hot_derating": 0.35,
        "supply.battery.state_of_charge": 0.5,
        "supply.battery.age_factor": 1.5,
        "environment.ambient": coach.environment.ambient_max,
    }.items():
        x[m.index[key]] = value
    got = evaluate(coach, x[None], {"field.braking_retained"})[("field.braking_retained", "retarder")]
    assert got.value[0] == pytest.approx(a.worst.braking.ratio, rel=1e-9)


def test_a_regulating_and_an_off_alternator_in_one_batch(coach):
    ps = parameters(coach)
    k = {p.key: j for j, p in enumerate(ps)}
    x = np.tile(nominal(ps), (3, 1))
    x[0, k["supply.alternator.hot_derating"]] = -5.0  # an alternator that can deliver everything: regulating
    x[1, k["supply.alternator.regulator_temperature"]] = 105.0
    x[1, k["supply.alternator.compensation_24v"]] = -0.035  # set-point 25.4 V: near the battery
    x[2, k["supply.alternator.tolerance"]] = -0.2  # set-point 22.6 V below the battery: off
    got = evaluate(coach, x)[("supply.bus_minimum", "bus")]
    temps = hot_temperatures(coach)
    for i in range(3):
        d, col = drawing_at_sample(coach, ps, x[i])
        soc = col["supply.battery.state_of_charge"]
        emf = 2 * np.interp(soc, [0, 0.25, 0.5, 0.75, 1.0], OCV_12V)
        r = d.supply.battery.internal_resistance * (1 + 0.4 * (1 - soc))  # ambient 25 °C: no rise
        d = dataclasses.replace(
            d,
            supply=dataclasses.replace(d.supply, battery=dataclasses.replace(d.supply.battery, internal_resistance=r)),
        )
        limit = d.supply.alternator.limit_idle * (1 - col["supply.alternator.hot_derating"])
        sol = Circuit(d).solve(temps, SourceState(emf, _regulator(d, col), limit))
        assert got.value[i] == pytest.approx(sol.v[d.supply.battery.node], rel=1e-9), sol.alternator_mode
        if i == 0:
            assert sol.alternator_mode == "regulating"
        if i == 2:
            assert sol.alternator_mode == "off"


def test_largest_fault_equals_the_scalar_thevenin_solve(coach):
    """Breaking capacity: the bolted short at each fuse's load terminal against Circuit.fault_currents
    with a battery of cells × 2.1…2.2 V behind 0.9…1.0 × its resistance, the alternator a current
    source of its rated output plus the cold excess, the other loads off, coils and cables at the
    ambient."""
    ps = parameters(coach)
    xs = _samples(ps, 5, 3)
    got = evaluate(coach, xs)
    from coilstage.drawing.schema import Fuse

    fuses = coach.of_kind(Fuse)
    for i, x in enumerate(xs):
        d, col = drawing_at_sample(coach, ps, x)
        s = d.supply
        d = dataclasses.replace(
            d,
            supply=dataclasses.replace(
                s,
                base_load=0.0,
                battery=dataclasses.replace(
                    s.battery,
                    internal_resistance=s.battery.internal_resistance * col["supply.battery.resistance_min_factor"],
                ),
            ),
        )
        t = {e.id: col["environment.ambient"] for e in d.elements if isinstance(e, (Cable, Stage))}
        src = SourceState(
            12 * col["supply.battery.surface_charge_per_cell"],
            None,
            s.alternator.limit_rated * (1 + col["supply.alternator.cold_excess"]),
            alt_fixed=True,
        )
        ref = Circuit(d).fault_currents(t, src, [f.b for f in fuses])
        for f in fuses:
            e = got[("fuse.breaking_capacity", f.id)]
            assert e.value[i] == pytest.approx(ref[f.b], rel=1e-9)
            assert e.status[i] == (PASS if ref[f.b] <= f.breaking_capacity else FAIL)


def test_duty_currents_against_a_network_assembled_by_hand(coach):
    """All stages on, bus held: nodal equations G v = i written here from the element resistances
    R(θ) = R_ref (1 + tol)(1 + α (θ − θ_ref))/(1 + α (θ_ref − 20)) … as the scalar solution reports
    them, solved with numpy.linalg.solve; the held battery node and the reference are eliminated."""
    ps = parameters(coach)
    x = _samples(ps, 3, 4)[2]
    got = evaluate(coach, x[None])
    d, col = drawing_at_sample(coach, ps, x)
    t = col["environment.ambient"]
    bus = _regulator(d, col)
    alt_i = d.supply.alternator.limit_rated * (1 + col["supply.alternator.cold_excess"])
    # element resistances by hand: copper R = R20 (1 + α20 (θ − 20)); coil from its reference
    res = {}
    for e in d.elements:
        if isinstance(e, Cable):
            res[e.id] = e.r20_per_m * e.length * (1 + e.alpha20 * (t - 20))
        elif isinstance(e, Stage):
            c = e.coil
            r20 = c.r_ref / (1 + c.alpha20 * (c.t_ref - 20))
            res[e.id] = r20 * (1 + c.alpha20 * (t - 20)) * e.r_factor
        else:
            res[e.id] = e.resistance
    assert all(r > 0 for r in res.values())
    s = d.supply
    fixed = {s.negative_node: 0.0, s.battery.node: bus}
    free = sorted({n for e in d.elements for n in (e.a, e.b)} - set(fixed))
    ix = {n: k for k, n in enumerate(free)}
    g = np.zeros((len(free), len(free)))
    rhs = np.zeros(len(free))
    for e in d.elements:
        ge = 1 / res[e.id]
        for p, q in ((e.a, e.b), (e.b, e.a)):
            if p in ix:
                g[ix[p], ix[p]] += ge
                if q in ix:
                    g[ix[p], ix[q]] -= ge
                else:
                    rhs[ix[p]] += ge * fixed[q]
    if s.alternator.node in ix:
        rhs[ix[s.alternator.node]] += alt_i
    v = dict(fixed)
    v.update(zip(free, np.linalg.solve(g, rhs), strict=True))
    for e in d.elements:
        i = (v[e.a] - v[e.b]) / res[e.id]
        if e.id in ("F-MAIN", "W-MAIN"):  # shared feed: largest with all stages on
            key = ("fuse.continuous", e.id) if e.id == "F-MAIN" else ("cable.ampacity", e.id)
            assert got[key].value[0] == pytest.approx(abs(i), rel=1e-9)
        if isinstance(e, Stage):
            drop = bus - (v[e.a] - v[e.b])
            assert got[("circuit.voltage_drop", e.id)].value[0] == pytest.approx(100 * drop / 24, rel=1e-9)


def test_evaluate_rejects_a_wrong_column_count(coach):
    with pytest.raises(ValueError, match="columns"):
        evaluate(coach, np.zeros((2, 3)))


# ---------------------------------------------------------------- the smallest fault and the relay coils

#: the rule's own worst case of each parameter it sets (analysis.worst: the smallest fault and the lowest
#: bus), every other parameter nominal
RULE_CASE = {
    "supply.battery.state_of_charge": "low",
    "supply.battery.age_factor": "high",
    "environment.ambient": "low",
    "tolerances.cable_length": "high",
    "tolerances.fault_resistance": "high",
    "supply.alternator.hot_derating": "high",
}


def _rule_case(ps):
    x = nominal(ps)
    for j, p in enumerate(ps):
        end = RULE_CASE.get(p.key, "high" if p.key.startswith("cables.") else None)
        if end is not None:
            x[j] = getattr(p, end)
    return x


@pytest.mark.parametrize(
    "path", ["configs/coach-24v-4stage.toml", "configs/light-truck-12v-2stage.toml", "configs/flawed-retrofit-24v.toml"]
)
def test_new_rules_at_the_rules_own_case_equal_the_rules_verdicts(path):
    """At the point of the parameter box the rules are decided at (the smallest fault: low charge, aged,
    coldest ambient for the battery, harness long, the fault's own resistance; the lowest bus likewise
    with the alternator hot-derated) the model gives each verdict's own value, margin and status."""
    d = load_drawing(path)
    ps = parameters(d)
    got = evaluate(d, _rule_case(ps)[None])
    a = analyse(d, switching=False, heating=False)
    seen = 0
    for rule in RULES:
        if rule.id not in ("fuse.cable_short_circuit", "relay.coil_pickup"):
            continue
        for v in rule.evaluate(a):
            if v.margin is None:
                continue
            e = got[(v.rule, v.subject)]
            assert e.value[0] == pytest.approx(v.value, rel=1e-9), (v.rule, v.subject)
            assert e.margin[0] == pytest.approx(v.margin, rel=1e-9, abs=1e-12), (v.rule, v.subject)
            assert e.status[0] == STATUS[v.status.value], (v.rule, v.subject)
            seen += 1
    assert seen >= 2


def test_gate_reading_equals_the_rules_interpolation():
    """gate_t_max against tables.FuseGates.t_max (the rule's reading) at every point, between points,
    below the first finite time and beyond the last, on the shipped ISO 8820 gates of the coach's fuses
    and on gates written here with a zero time (linear segment) and an unbounded first point."""
    from coilstage.analysis.params import gate_t_max
    from coilstage.analysis.ratings import fuse_gates
    from coilstage.tables import FuseGates

    coach = load_drawing(COACH)
    gates = [fuse_gates(f) for f in coach.of_kind(Fuse)]
    gates.append(FuseGates(((1.0, 0.0, math.inf), (2.0, 0.0, 10.0), (4.0, 0.0, 0.0), (8.0, 0.0, 0.0)), "written here"))
    for g in gates:
        pts = [p[0] for p in g.points]
        m = np.unique(np.concatenate([pts, np.geomspace(0.5, 40.0, 301), np.array(pts) * (1 + 1e-9)]))
        got = gate_t_max(g.points, m)
        want = np.array([g.t_max(float(v)) for v in m])
        assert np.array_equal(np.isinf(got), np.isinf(want))
        fin = np.isfinite(want)
        assert got[fin] == pytest.approx(want[fin], rel=1e-12, abs=1e-15)


@pytest.mark.parametrize("path", [COACH, "configs/light-truck-12v-2stage.toml", "configs/flawed-retrofit-24v.toml"])
def test_the_models_resistances_equal_the_element_law_to_the_last_bit(path):
    """Model.resistances (every element's constants as arrays) against
    analysis.circuit.element_resistance called element by element, with each parameter's scale
    applied by hand: equal bit for bit at a temperature per sample, at a temperature per element, and
    with a per-sample shift (the three ways the networks read it). (parameters() gives no element to
    two parameters, so the rule that a later parameter's scale replaces an earlier one's cannot be
    reached from a drawing and is not tested here.)"""
    from coilstage.analysis.circuit import element_resistance

    d = load_drawing(path)
    m = model(d)
    x = _samples(m.params, 20, 3)
    rng = np.random.default_rng(4)
    ambient = rng.uniform(-30.0, 40.0, len(x))
    shift = rng.uniform(-20.0, 0.0, len(x))
    scale = np.ones((len(x), len(d.elements)))
    for k, p in enumerate(m.params):
        for eid in p.elements:
            scale[:, m.el_ix[eid]] = 1.0 + x[:, k]
    for temps, sh in ((ambient, None), (ambient, shift), (m.hot_t, None), (m.hot_t, shift)):
        want = np.empty((len(x), len(d.elements)))
        for j, e in enumerate(d.elements):
            if isinstance(e, (Cable, Stage)):
                t = temps if isinstance(temps, np.ndarray) else temps.get(e.id, 20.0)
                want[:, j] = [
                    element_resistance(e, float(v)) for v in np.broadcast_to(t if sh is None else t + sh, len(x))
                ]
            else:
                want[:, j] = element_resistance(e, 20.0)
        assert np.array_equal(m.resistances(x, temps, sh), want * scale)


def _battery_by_hand(d, col):
    """EMF on the published OCV line and R = R_25 · e^{b (25 − θ)} · [1 + 0.4 (1 − SOC)] · age, the
    battery of the low-bus and braking networks by hand."""
    cells = 12 if d.supply.system_voltage == 24 else 6
    soc = col["supply.battery.state_of_charge"]
    emf = cells / 6 * np.interp(soc, [0, 0.25, 0.5, 0.75, 1.0], OCV_12V)
    b = 0.008447  # ln(1.5)/48 K rounded as the shipped row states it (a 50 % rise from +30 to -18 °C)
    r = (
        d.supply.battery.internal_resistance
        * math.exp(b * (25.0 - col["environment.ambient"]))
        * (1 + 0.4 * (1 - soc))
        * col["supply.battery.age_factor"]
    )
    return emf, r


def test_short_circuit_rows_equal_the_scalar_far_end_short():
    """Each sample through the scalar path on the drawing changed to it: the far-end short by
    Circuit.fault_currents (one factorisation, Thévenin) with the battery worked by hand, the alternator
    off, cables at their zones and coils at the cold corner, the other loads connected; the fault's own
    resistance in series with Z_kk = U_oc / I_bolted; the clearing time and the final temperature by
    analysis.ratings.far_end_short (the rule's figures), the margin on the kelvin scale
    (checks.base.ceiling_temperature). On the light truck, where the main feed's short falls in its fuse's
    time-lag region (the margin moves with every battery parameter)."""
    from coilstage.analysis.conditions import cold_temperatures
    from coilstage.analysis.params import MELTING_POINT
    from coilstage.analysis.ratings import far_end_short
    from coilstage.analysis.topology import protected_cables
    from coilstage.checks.base import ceiling_temperature

    truck = load_drawing("configs/light-truck-12v-2stage.toml")
    ps = parameters(truck)
    xs = _samples(ps, 6, 5)
    xs[3] = _rule_case(ps)
    got = evaluate(truck, xs)
    protected = protected_cables(truck)
    seen = 0
    for i, x in enumerate(xs):
        d, col = drawing_at_sample(truck, ps, x)
        emf, r = _battery_by_hand(d, col)
        s = d.supply
        d = dataclasses.replace(
            d, supply=dataclasses.replace(s, battery=dataclasses.replace(s.battery, internal_resistance=r))
        )
        t = cold_temperatures(d)
        t.update({c.id: c.zone_temperature for c in d.of_kind(Cable)})
        src = SourceState(emf, None, None, alt_fixed=True)
        c_ = Circuit(d)
        cables = {c.id: c for c in d.of_kind(Cable)}
        far = [cables[cid].b for ids in protected.values() for cid in ids]
        bolted = c_.fault_currents(t, src, far)
        pre = c_.solve(t, src)
        rf = col["tolerances.fault_resistance"]
        for f in d.of_kind(Fuse):
            for cid in protected.get(f.id, []):
                node = cables[cid].b
                u = pre.v[node] - pre.v[s.chassis_node]
                i_sc = u / (u / bolted[node] + rf) if rf > 0 else bolted[node]
                sh = far_end_short(f, cables[cid], i_sc)
                theta = sh.theta_final if sh.theta_final is not None else math.inf
                theta = min(theta, MELTING_POINT[cables[cid].material])
                e = got[("fuse.cable_short_circuit", f"{f.id} → {cid}")]
                assert e.value[i] == pytest.approx(theta, rel=1e-9), (f.id, cid, i)
                limit = e.limit
                assert e.margin[i] == pytest.approx(ceiling_temperature(theta, limit), rel=1e-9, abs=1e-12)
                assert e.status[i] == (PASS if theta <= limit else FAIL)
                seen += 1
    assert seen == 6 * 3


def test_short_circuit_of_a_branch_cleared_at_constant_i2t_by_hand(coach):
    """The coach's F1 (100 A, shipped ISO 8820 gates: 1 s at 6 × rating at the latest) clears its 16 mm²
    branch cable's far-end short beyond the gates' last point, where the gates follow a constant I²t:
    I²t = 1 s × (600 A)² = 3.6e5 A²s whatever the current. IEC 60949:1988 clause 3, equation (1), with
    K = √(Qc (β + 20)/ρ20) from Table I (Qc = 3.45e6 J/(K·m³), β = 234.5 K, ρ20 = 1/58e6 Ω·m):
    θf = (125 + 234.5) · exp(3.6e5 / (K · 16e-6)²) − 234.5 = 135.07 °C from the class-C conductor's
    125 °C, against its 250 °C short-circuit limit; margin (523.15 − 408.22)/523.15 = 0.2197. Worked by
    hand with the constants of the standard."""
    k = math.sqrt(3.45e6 * (234.5 + 20.0) / (1 / 58e6))
    theta = (125.0 + 234.5) * math.exp(3.6e5 / (k * 16e-6) ** 2) - 234.5
    assert theta == pytest.approx(135.07, abs=0.01)
    ps = parameters(coach)
    got = evaluate(coach, np.array([nominal(ps), _rule_case(ps)]))[("fuse.cable_short_circuit", "F1 → W1")]
    assert got.value == pytest.approx([theta, theta], rel=1e-6)  # flat in the current: both cases
    assert got.margin == pytest.approx([(250.0 - theta) / (250.0 + 273.15)] * 2, rel=1e-6)


def test_relay_pickup_by_hand(coach):
    """The coach's contactor coils (120 Ω at 20 °C, must operate at 16.8 V, 1.5 Ω of control wiring,
    70 °C zone + 25 K rise) at 95 °C: R = 120 (1 + 0.00393 × 75) = 155.37 Ω (IEC 60028 copper α), so they
    need 16.8 × 155.37/120 = 21.75 V and pass at 110 % of it, 23.93 V (Caltrans Electric-08); they get
    V_bus × 155.37/156.87 of the low bus. Worked by hand; the bus is the model's own supply.bus_minimum
    figure of each sample (held to the scalar solve by test_lowest_bus_equals_the_scalar_solve)."""
    r_hot = 120.0 * (1 + 0.00393 * 75.0)
    need = 16.8 * r_hot / 120.0
    assert need == pytest.approx(21.75, abs=0.01)
    ps = parameters(coach)
    xs = _samples(ps, 6, 6)
    got = evaluate(coach, xs)
    bus = got[("supply.bus_minimum", "bus")].value
    for rid in ("K1", "K2", "K3", "K4"):
        e = got[("relay.coil_pickup", rid)]
        have = bus * r_hot / (r_hot + 1.5)
        assert e.value == pytest.approx(have, rel=1e-12)
        assert e.limit == pytest.approx(1.1 * need, rel=1e-12)
        assert e.margin == pytest.approx((have - 1.1 * need) / (1.1 * need), rel=1e-9, abs=1e-12)
        assert list(e.status) == [PASS if h >= 1.1 * need else WARN if h >= need else FAIL for h in have]


def test_the_sparse_block_solve_equals_the_dense_batched_solve(coach, monkeypatch):
    """Above BATCH_SPARSE_ABOVE unknowns the samples are solved as one block-diagonal sparse system
    (scipy.sparse.linalg.splu); forced on the coach, every margin equals the batched dense solve
    (numpy.linalg.solve) to round-off; with samples repeated, so that each distinct network is solved
    once and its right-hand sides that differ between samples are made from its unit solutions."""
    from coilstage.analysis import params

    ps = parameters(coach)
    xs = _samples(ps, 40, 7)
    xs = np.concatenate([xs, xs[5:15], np.repeat(xs[:1], 4, axis=0)])
    dense = evaluate(coach, xs)
    monkeypatch.setattr(params, "BATCH_SPARSE_ABOVE", 0)
    sparse = evaluate(coach, xs)
    assert set(sparse) == set(dense)
    for k in dense:
        assert sparse[k].margin == pytest.approx(dense[k].margin, rel=1e-9, abs=1e-12), k
        assert (sparse[k].status == dense[k].status).all(), k


@pytest.fixture(scope="module")
def large():
    """A generated 20-stage drawing: above BATCH_SPARSE_ABOVE unknowns, so evaluate takes its sparse
    path (block LU, stamps through the sparse map, the stages as ports read by their terminals)."""
    from coilstage.analysis import params
    from coilstage.drawing.load import parse_drawing
    from tests.conftest import drawing_text

    lengths = [1.0 + 0.15 * k for k in range(20)]
    coils = [0.9 + 0.02 * k for k in range(20)]
    d = parse_drawing(drawing_text(stages=20, branch_lengths=lengths, coil_r=coils), "generated-20")
    assert model(d).net.size(True) > params.BATCH_SPARSE_ABOVE
    return d


def test_large_duty_currents_equal_a_dense_solve_of_every_stage_state(large):
    """Each element's largest current over the stage states (all on, each stage alone) on the sparse
    path equals the full network of every state assembled densely and solved by numpy.linalg.solve
    one sample and one state at a time (no ports, no block LU)."""
    m = model(large)
    net = m.net
    xs = _samples(m.params, 5, 11)
    xs[1] = xs[0]
    xs[1, m.index["supply.alternator.tolerance"]] = m.params[m.index["supply.alternator.tolerance"]].high
    duty, x_on, _bus = m.duty(xs)
    r = m.resistances(xs, m.ambient(xs))
    g = np.divide(1.0, r, out=np.zeros_like(r), where=r > 0)
    size = net.size(True)
    for s, row in enumerate(xs):
        rhs = np.zeros(size)
        alt = large.supply.alternator
        exc = m.column(row[None], "supply.alternator.cold_excess", 0.0)[0]
        rhs[net.alt_node - 1] += alt.limit_rated * (1.0 + exc)
        rhs[net.base_node - 1] -= large.supply.base_load
        rhs[size - 1] = m.regulated(row[None])[0]
        states = [np.ones(len(m.stages))] + [np.eye(len(m.stages))[k] for k in range(len(m.stages))]
        best = np.zeros(len(large.elements))
        for q, st in enumerate(states):
            on = np.ones(len(large.elements))
            on[m.stages] = st
            gq = g[s] * on
            a = (gq[net.res_el] @ m.st_duty.map) @ np.eye(size * size)[m.st_duty.pos]
            a = a.reshape(size, size) + m.c_duty
            x = np.linalg.solve(a, rhs)
            v = np.concatenate([[0.0], x[: net.n]])
            cur = (v[net.ea] - v[net.eb]) * gq
            for qq, k in enumerate(net.zero_el):
                cur[k] = x[net.n + qq]
            best = np.maximum(best, np.abs(cur))
            if q == 0:
                assert x_on[s] == pytest.approx(x, rel=1e-9, abs=1e-9)
        assert duty[s] == pytest.approx(best, rel=1e-9, abs=1e-9)


def test_large_sparse_path_equals_the_dense_batched_path(large, monkeypatch):
    """On a drawing above the threshold, every margin of the sparse path equals the batched dense path
    (numpy.linalg.solve, forced by raising BATCH_SPARSE_ABOVE) to round-off."""
    from coilstage.analysis import params

    ps = model(large).params
    xs = _samples(ps, 30, 5)
    # and samples that share their networks' conductances with others (only the alternator and its
    # regulator moved: sources), as a corner search's candidates do: each distinct network is solved
    # once, its sources' right-hand sides combined from unit solutions
    shared = np.repeat(xs[:6], 3, axis=0)
    for j, p in enumerate(ps):
        if p.key.startswith("supply.alternator."):
            shared[:, j] = np.tile([p.low, p.nominal, p.high], 6)
    xs = np.concatenate([xs, shared])
    sparse = evaluate(large, xs)
    monkeypatch.setattr(params, "BATCH_SPARSE_ABOVE", 10**9)
    dense = evaluate(large, xs)
    assert set(sparse) == set(dense)
    for k in dense:
        assert sparse[k].margin == pytest.approx(dense[k].margin, rel=1e-9, abs=1e-12), k
        assert (sparse[k].status == dense[k].status).all(), k


@pytest.mark.parametrize(
    "rules",
    [
        ("fuse.continuous",),
        ("supply.bus_minimum", "relay.coil_pickup"),
        ("fuse.breaking_capacity",),
        ("fuse.cable_short_circuit", "cable.ampacity"),
    ],
)
def test_evaluate_of_some_rules_equals_the_whole_evaluation(coach, rules):
    """Asked for some rules, evaluate solves only their networks and gives exactly the figures of the
    whole evaluation for them (and nothing else)."""
    xs = _samples(parameters(coach), 25, 3)
    whole = evaluate(coach, xs)
    some = evaluate(coach, xs, rules)
    assert set(some) == {k for k in whole if k[0] in rules}
    assert some
    for k, e in some.items():
        assert np.array_equal(e.margin, whole[k].margin), k
        assert np.array_equal(e.status, whole[k].status), k
