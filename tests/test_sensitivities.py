"""Sensitivities of the steady-state margins and the worst corner of the declared tolerances.

* The central-difference gradients (through params.evaluate) against the exact adjoint derivative of
  the same network, assembled from the scalar path's rows (Circuit.network_rows and the MNA stamps),
  with the adjoint solve of physics.sensitivity (Director and Rohrer 1969). Step: 1e-4 of each
  parameter's range (STEP 1e-3). The margins are linear solves, smooth within a state of the sources,
  so the truncation error O(h²) is ~1e-8 relative; the round-off of a solve is about cond(A)·ε ≈
  1.4e5 × 2.2e-16 ≈ 3e-11 of the margin (0.2 mΩ fuses beside ohm coils), over h; 1e-6 relative leaves
  room for both and still catches a wrong sign, term or scale.
* The worst corner found by the search from the sensitivity signs against every corner enumerated
  here with itertools.product, on the coach with only six parameters left with a range.
"""

from __future__ import annotations

import dataclasses
import itertools

import numpy as np
import pytest

from coilstage.analysis.circuit import Circuit, SourceState
from coilstage.analysis.params import evaluate, model, nominal, parameters
from coilstage.analysis.run import analyse
from coilstage.analysis.sensitivities import EXACT, analyse_sensitivities, exact_gradients, gradients
from coilstage.checks import run_checks
from coilstage.drawing.load import load_drawing
from coilstage.drawing.schema import Cable, Stage, ToleranceSpec
from coilstage.physics.network import Branches, mna_matrix
from coilstage.physics.sensitivity import adjoint_sensitivities

COACH = "configs/coach-24v-4stage.toml"


@pytest.fixture(scope="module")
def coach():
    return load_drawing(COACH)


def _duty_network(d):
    """The duty network at the nominal parameters (ambient 25 °C, regulator at its 25 °C reference:
    bus held at the set-point), all stages on, as a dense MNA matrix, with the rows of its
    resistors."""
    t = {e.id: 25.0 for e in d.elements if isinstance(e, (Cable, Stage))}
    alt = d.supply.alternator
    src = SourceState(alt.setpoint, alt.setpoint, alt.limit_rated, hold_bus=alt.setpoint)
    c = Circuit(d)
    res, vs, _owner, cur, resistance, _on, _fixed = c.network_rows(t, src, None)
    n_nodes = len(c.nodes)
    rr, cc, vv, rhs, n = mna_matrix(n_nodes, Branches.of(res), Branches.of(vs), Branches.of(cur))
    a = np.zeros((len(rhs), len(rhs)))
    np.add.at(a, (rr, cc), vv)
    return c, a, rhs, n, resistance


def _stamp(size, i, j, g):
    m = np.zeros((size, size))
    for p, q, v in ((i, i, g), (j, j, g), (i, j, -g), (j, i, -g)):
        if p > 0 and q > 0:
            m[p - 1, q - 1] += v
    return m


def test_gradients_against_the_exact_adjoint(coach):
    """F-MAIN continuous margin m = (L − I)/L with I = g_F (v_a − v_b) and the S4 voltage drop margin,
    against coil resistance and cable length: a relative tolerance p scales R by (1 + p), so
    ∂g/∂p = −g at p = 0, and ∂A/∂p is the sum of −g stamps of the elements it applies to."""
    d = coach
    c, a, rhs, _n, resistance = _duty_network(d)
    x = np.linalg.solve(a, rhs)
    size = len(rhs)
    ps = parameters(d)
    k = {p.key: j for j, p in enumerate(ps)}
    d_a = []
    for key in ("coils.RC4.resistance_tolerance", "tolerances.cable_length"):
        m = np.zeros((size, size))
        for eid in ps[k[key]].elements:
            e = c.index[eid]
            m += _stamp(size, c.nodes[e.a], c.nodes[e.b], -1.0 / resistance[eid])
        d_a.append(m)
    d_a = np.array(d_a)
    nd = c.nodes
    # read-out 1: the F-MAIN current (its conductance does not depend on either parameter)
    f = c.index["F-MAIN"]
    g_f = 1.0 / resistance["F-MAIN"]
    c1 = np.zeros(size)
    c1[nd[f.a] - 1] += g_f
    c1[nd[f.b] - 1] -= g_f
    # read-out 2: the drop to S4, V(B+) − (V(S4+) − V(S4−))
    s4 = c.index["S4"]
    c2 = np.zeros(size)
    c2[nd[d.supply.battery.node] - 1] += 1.0
    c2[nd[s4.a] - 1] -= 1.0
    c2[nd[s4.b] - 1] += 1.0
    dy = adjoint_sensitivities(a, x, np.column_stack([c1, c2]), d_a)  # (P=2, K=2)
    m = model(d)
    # the duty limit follows the ambient (tabulated on a grid); the ambient is fixed here
    limit = float(np.interp(m.ambient(nominal(m.params)[None])[0], m.limits.grid, m.limits.fuse_limit["F-MAIN"]))
    exact_fuse = -dy[:, 0] / limit
    exact_drop = -dy[:, 1] / d.supply.system_voltage / d.limits.drop_pass
    g, m0 = gradients(d)
    i_fuse = float(c1 @ x)
    assert m0[("fuse.continuous", "F-MAIN")] == pytest.approx((limit - i_fuse) / limit, rel=1e-9)
    got_fuse = g[("fuse.continuous", "F-MAIN")][[k["coils.RC4.resistance_tolerance"], k["tolerances.cable_length"]]]
    got_drop = g[("circuit.voltage_drop", "S4")][[k["coils.RC4.resistance_tolerance"], k["tolerances.cable_length"]]]
    assert got_fuse == pytest.approx(exact_fuse, rel=1e-6)
    assert got_drop == pytest.approx(exact_drop, rel=1e-6)
    ex = exact_gradients(d)
    cols = [k["coils.RC4.resistance_tolerance"], k["tolerances.cable_length"]]
    assert ex[("fuse.continuous", "F-MAIN")][cols] == pytest.approx(exact_fuse, rel=1e-8)
    assert ex[("circuit.voltage_drop", "S4")][cols] == pytest.approx(exact_drop, rel=1e-8)
    # signs as a fitter expects: lower coil resistance, more current, less fuse margin
    assert exact_fuse[0] > 0 and exact_drop[1] < 0


def test_bus_gradient_against_the_battery_by_hand(coach):
    """With the alternator current-limited, the rest of the network seen from the battery terminals is
    a Norton equivalent (J, G) (Thévenin/Norton theorem), so V = (E/R + J)/(1/R + G) and
    ∂V/∂R = −I_bat/(1 + R·G); the battery resistance scales with its age factor, ∂R/∂age = R/age. G is
    read off two scalar solves with the bus held at two voltages (linear: the difference is exact)."""
    d = coach
    ps = parameters(d)
    k = {p.key: j for j, p in enumerate(ps)}
    m = model(d)
    x0 = np.array([p.nominal for p in ps])
    # a cold regulator (set-point up) and a hot-derated alternator: it runs into its limit
    x0[k["supply.alternator.regulator_temperature"]] = ps[k["supply.alternator.regulator_temperature"]].low
    x0[k["supply.alternator.hot_derating"]] = ps[k["supply.alternator.hot_derating"]].high
    emf, rb = m.battery_low(x0[None])
    alt = d.supply.alternator
    db = dataclasses.replace(
        d,
        supply=dataclasses.replace(d.supply, battery=dataclasses.replace(d.supply.battery, internal_resistance=rb[0])),
    )
    limit = m.hot_limit * (1 - x0[k["supply.alternator.hot_derating"]])
    sol = Circuit(db).solve(m.hot_t, SourceState(emf[0], alt.setpoint, limit))
    assert sol.alternator_mode == "current-limited"
    held = [
        Circuit(db).solve(m.hot_t, SourceState(u, alt.setpoint, limit, hold_bus=u)).battery_current
        for u in (20.0, 24.0)
    ]
    g_rest = (held[1] - held[0]) / 4.0
    assert g_rest > 0
    dv = -sol.battery_current / (1 + rb[0] * g_rest) * rb[0] / x0[k["supply.battery.age_factor"]]
    g, _ = gradients(d, at=x0)
    j = k["supply.battery.age_factor"]
    assert g[("supply.bus_minimum", "bus")][j] == pytest.approx(dv / d.supply.v_min, rel=1e-6)
    assert exact_gradients(d, at=x0)[("supply.bus_minimum", "bus")][j] == pytest.approx(dv / d.supply.v_min, rel=1e-8)


def _few(d):
    """The coach with six parameters left with a range (the others stated without tolerance)."""
    fixed = (
        "tolerances.cable_length",
        "supply.alternator.tolerance",
        "supply.alternator.compensation_24v",
        "supply.alternator.regulator_temperature",
        "supply.alternator.cold_excess",
        "supply.battery.surface_charge_per_cell",
        "tolerances.fault_resistance",
    )
    tol = {
        key: ToleranceSpec(0.0 if "cable" in key or "excess" in key or "fault" in key else v, v)
        for key, v in (
            (
                key,
                {
                    "supply.alternator.compensation_24v": -0.02,
                    "supply.alternator.regulator_temperature": 25.0,
                    "supply.battery.surface_charge_per_cell": 2.2,
                }.get(key, 0.0),
            )
            for key in fixed
        )
    }
    return dataclasses.replace(d, tolerances=tol)


def test_worst_corner_against_every_corner(coach):
    d = _few(coach)
    ps = parameters(d)
    assert len(ps) == 6, [p.key for p in ps]
    lo = np.array([p.low for p in ps])
    hi = np.array([p.high for p in ps])
    corners = np.array([np.where(np.array(bits) == 1, hi, lo) for bits in itertools.product((0, 1), repeat=len(ps))])
    brute = evaluate(d, corners)
    found = analyse_sensitivities(d, exhaustive=False)
    assert len(found) > 20
    for key, vs in found.items():
        worst = float(np.min(brute[key].margin))
        assert vs.corner.margin == pytest.approx(worst, rel=1e-9, abs=1e-12), key
        j = int(np.argmin(brute[key].margin))
        assert vs.corner.status == brute[key].status[j], key
    full = analyse_sensitivities(d, exhaustive=True)
    assert all(full[k].corner.margin == pytest.approx(found[k].corner.margin, abs=1e-12) for k in found)


def test_search_finds_the_cold_regulator_through_its_compensation(coach):
    """At nominal the regulator stands at its 25 °C reference, where the compensation has no effect
    (∂U/∂g = θ − 25 K = 0); the search still moves it once the regulator is cold, since the worst
    continuous duty is the coldest regulator with the steepest compensation (U = U_set + g (θ − 25))."""
    found = analyse_sensitivities(coach, [("fuse.continuous", "F-MAIN")])
    c = found[("fuse.continuous", "F-MAIN")].corner
    assert c.values["supply.alternator.regulator_temperature"] == -30.0
    assert c.values["supply.alternator.compensation_24v"] == pytest.approx(-0.035)
    assert c.values["coils.RC4.resistance_tolerance"] == -0.05
    words = [e.parameter.key for e in found[("fuse.continuous", "F-MAIN")].effects]
    assert "supply.alternator.compensation_24v" in words


def test_run_checks_attaches_sensitivities_largest_first(coach):
    verdicts = run_checks(analyse(coach, switching=False, heating=False))
    v = next(v for v in verdicts if v.rule == "fuse.continuous" and v.subject == "F-MAIN")
    s = v.worst.sensitivities
    assert len(s) >= 3
    assert [abs(x.margin_change) for x in s] == sorted((abs(x.margin_change) for x in s), reverse=True)
    coil = next(x for x in s if x.parameter == "coils.RC4.resistance_tolerance")
    assert coil.change == -0.05 and coil.margin_change < 0
    assert any(w.startswith("worst corner of the declared tolerances") for w in v.worst.deciding)
    # a verdict not decided at a worst case carries none
    plain = next(v for v in verdicts if v.rule == "cable.temperature_class")
    assert plain.worst is None


@pytest.mark.parametrize(
    "path", ["configs/coach-24v-4stage.toml", "configs/light-truck-12v-2stage.toml", "configs/flawed-retrofit-24v.toml"]
)
def test_exact_gradients_against_central_differences(path):
    """Every margin with an exact derivative, every parameter, on the three demo drawings: the direct
    and adjoint derivatives (element laws differenced at 1e-6 relative, round-off ε/h ≈ 2e-10) against
    central differences through evaluate at 1e-3 of each range (truncation ~1e-8, solve round-off
    cond(A)·ε/h ≲ 1e-7). Agreement to 2e-6 of the gradient's largest entry is both methods' error
    with room; a missing term (a conductance's own derivative, a source's) is far larger."""
    d = load_drawing(path)
    ex = exact_gradients(d)
    fd, _m0 = gradients(d)
    assert len(ex) >= 10
    for key, g in ex.items():
        scale = max(float(np.max(np.abs(g))), 1e-9)
        assert np.max(np.abs(g - fd[key])) <= 2e-6 * scale, key
    vs = analyse_sensitivities(d, [next(iter(ex))])
    assert next(iter(vs.values())).method == EXACT


def test_a_margin_not_monotone_in_a_parameter_is_said_and_searched(coach, monkeypatch):
    """A made-up margin over the coach's parameters with its lowest point inside the ambient range,
    m = 0.5 − 0.4 (1 − ((θ − 5 °C)/35 K)²) + 2 x_coil: falling then rising in θ (lowest 0.1 at 5 °C,
    0.5 at both ends, worked by hand), rising in the coil tolerance. The search must flag the ambient,
    find 5 °C by its scan (a point of the 11-point grid from −30 to 40 °C) and the coil at −5 %."""
    import coilstage.analysis.sensitivities as sens
    from coilstage.analysis.params import Evaluated

    ps = parameters(coach)
    k = {p.key: j for j, p in enumerate(ps)}
    real = sens.evaluate

    def made_up(d, x, rules=None):
        x = np.atleast_2d(x)
        t = x[:, k["environment.ambient"]]
        m = 0.5 - 0.4 * (1 - ((t - 5.0) / 35.0) ** 2) + 2 * x[:, k["coils.RC4.resistance_tolerance"]]
        out = real(d, x, rules)
        out[("made.up", "x")] = Evaluated(m, np.zeros(len(m), dtype=int), m, 1.0, "1")
        return out

    monkeypatch.setattr(sens, "evaluate", made_up)
    vs = sens.analyse_sensitivities(coach, [("made.up", "x")])[("made.up", "x")]
    assert vs.method == sens.DIFFERENCED
    assert vs.corner.not_monotone == ("environment.ambient",)
    assert vs.corner.interior == {"environment.ambient": pytest.approx(5.0)}
    assert vs.corner.values["coils.RC4.resistance_tolerance"] == -0.05
    assert vs.corner.margin == pytest.approx(0.1 - 0.1)
    words = sens.corner_words(vs)
    assert any(w.startswith("not monotone in ambient") and "inside the range, at 5 degC" in w for w in words)


def _far_end_by_scalar_path(d, col, fuse_id, cable_id):
    """The far-end short's final temperature through the scalar path (Circuit.fault_currents, Thévenin
    with the fault's own resistance, analysis.ratings.far_end_short) with the battery worked by hand:
    EMF on the OCV line of 2 × (11.89 … 12.65 V) per 12 V block (the published table of test_params),
    R = R_25 e^{0.008447 (25 − θ)} [1 + 0.4 (1 − SOC)] · age; cable lengths scaled by their tolerance."""
    from coilstage.analysis.conditions import cold_temperatures
    from coilstage.analysis.ratings import far_end_short
    from coilstage.drawing.schema import Fuse

    scale = 1 + col["tolerances.cable_length"]
    els = tuple(dataclasses.replace(e, length=e.length * scale) if isinstance(e, Cable) else e for e in d.elements)
    soc = col["supply.battery.state_of_charge"]
    cells = 12 if d.supply.system_voltage == 24 else 6
    emf = cells / 6 * np.interp(soc, [0, 0.25, 0.5, 0.75, 1.0], (11.89, 12.06, 12.24, 12.45, 12.65))
    s = d.supply
    r = (
        s.battery.internal_resistance
        * np.exp(0.008447 * (25.0 - col["environment.ambient"]))
        * (1 + 0.4 * (1 - soc))
        * col["supply.battery.age_factor"]
    )
    d = dataclasses.replace(
        d, elements=els, supply=dataclasses.replace(s, battery=dataclasses.replace(s.battery, internal_resistance=r))
    )
    t = cold_temperatures(d)
    t.update({c.id: c.zone_temperature for c in d.of_kind(Cable)})
    src = SourceState(emf, None, None, alt_fixed=True)
    cable = next(c for c in d.of_kind(Cable) if c.id == cable_id)
    fuse = next(f for f in d.of_kind(Fuse) if f.id == fuse_id)
    c = Circuit(d)
    bolted = c.fault_currents(t, src, [cable.b])[cable.b]
    pre = c.solve(t, src)
    u = pre.v[cable.b] - pre.v[d.supply.chassis_node]
    i_sc = u / (u / bolted + col["tolerances.fault_resistance"])
    return far_end_short(fuse, cable, i_sc).theta_final


def test_short_circuit_gradient_against_differences_of_the_scalar_path():
    """The light truck's main-feed short sits in its fuse's time-lag region at the smallest fault, so its
    margin m = (θ_lim − θf)/(θ_lim + 273.15 K) moves with the battery, the harness and the fault's own
    resistance. dm/dp of params (central differences through the vectorised model, STEP 1e-3 of each
    range) against central differences of the scalar path written out in the test (a step of 1e-4 of
    each range: truncation O(h²) ~1e-8 relative; each side a fresh scalar solve). The gate's log-log
    segments are smooth inside a segment, so agreement to 1e-5 relative catches a wrong term, sign or
    law while allowing both differences' truncation."""
    d = load_drawing("configs/light-truck-12v-2stage.toml")
    ps = parameters(d)
    k = {p.key: j for j, p in enumerate(ps)}
    x = nominal(ps)
    x[k["supply.battery.state_of_charge"]] = 0.6
    x[k["supply.battery.age_factor"]] = 1.3
    x[k["environment.ambient"]] = -10.0
    x[k["tolerances.cable_length"]] = 0.05
    x[k["tolerances.fault_resistance"]] = 0.002
    key = ("fuse.cable_short_circuit", "F-MAIN → W-MAIN")
    g, m0 = gradients(d, at=x)
    limit = float(evaluate(d, x[None])[key].limit)
    col = {p.key: float(v) for p, v in zip(ps, x, strict=True)}
    theta0 = _far_end_by_scalar_path(d, col, "F-MAIN", "W-MAIN")
    assert m0[key] == pytest.approx((limit - theta0) / (limit + 273.15), rel=1e-9)
    for name in (
        "supply.battery.state_of_charge",
        "supply.battery.age_factor",
        "environment.ambient",
        "tolerances.cable_length",
        "tolerances.fault_resistance",
    ):
        p = ps[k[name]]
        h = 1e-4 * (p.high - p.low)
        up, down = dict(col), dict(col)
        up[name] += h
        down[name] -= h
        dtheta = (
            _far_end_by_scalar_path(d, up, "F-MAIN", "W-MAIN") - _far_end_by_scalar_path(d, down, "F-MAIN", "W-MAIN")
        ) / (2 * h)
        want = -dtheta / (limit + 273.15)
        assert want != 0.0
        assert g[key][k[name]] == pytest.approx(want, rel=1e-5), name


def test_a_short_flat_at_nominal_is_searched_from_the_smallest_fault():
    """The flawed retrofit's F2 clears its cable's far-end short at nominal beyond its gates' last point
    (constant I²t: the margin does not move with any parameter there, so the sensitivity signs give no
    direction); the search starts from the rule's own way to its worst case instead (each parameter at
    the end that lowers the fault current) and finds a corner at least as bad as the rule's smallest
    fault, which fails the cable."""
    d = load_drawing("configs/flawed-retrofit-24v.toml")
    key = ("fuse.cable_short_circuit", "F2 → W2")
    g, m0 = gradients(d)
    ps = parameters(d)
    width = np.array([p.high - p.low for p in ps])
    assert np.max(np.abs(g[key] * width)) < 1e-9  # flat at nominal
    vs = analyse_sensitivities(d, [key])[key]
    verdict = next(v for v in run_checks(analyse(d, switching=False, heating=False)) if (v.rule, v.subject) == key)
    assert vs.corner.status == 2
    assert vs.corner.margin < m0[key]
    assert verdict.status.value == "fail"
    assert verdict.margin <= vs.corner.margin + 1e-12


def _generated(stages, one_coil_type=False):
    """A generated drawing of ``stages`` branches of different lengths and coils; with
    ``one_coil_type`` every stage wound with the first coil type (its tolerance one parameter for all)."""
    import re

    from coilstage.drawing.load import parse_drawing
    from tests.conftest import drawing_text

    lengths = [1.0 + 0.15 * k for k in range(stages)]
    coils = [0.9 + 0.02 * k for k in range(stages)]
    text = drawing_text(stages=stages, branch_lengths=lengths, coil_r=coils)
    if one_coil_type:
        text = re.sub(r'coil = "C\d+"', 'coil = "C0"', text)
    return parse_drawing(text, f"generated-{stages}")


def test_exact_gradients_of_a_large_drawing_on_the_sparse_factorisation_equal_the_dense_path(monkeypatch):
    """Above BATCH_SPARSE_ABOVE unknowns the exact gradients are taken on one sparse LU per network
    (∂A/∂p·x from the resistor rows): equal, key by key, to the dense path (numpy.linalg.solve and
    physics.sensitivity's direct and adjoint methods on the assembled matrices, forced by raising the
    threshold) to round-off."""
    import coilstage.analysis.sensitivities as sens
    from coilstage.analysis.params import BATCH_SPARSE_ABOVE

    d = _generated(20)
    assert model(d).net.size(True) > BATCH_SPARSE_ABOVE
    sparse = exact_gradients(d)
    monkeypatch.setattr(sens, "BATCH_SPARSE_ABOVE", 10**9)
    dense = exact_gradients(d)
    assert set(sparse) == set(dense)
    assert {k[0] for k in dense} >= {"fuse.continuous", "cable.ampacity", "circuit.voltage_drop", "supply.bus_minimum"}
    for k in dense:
        scale = max(np.max(np.abs(dense[k])), 1e-300)
        assert np.max(np.abs(sparse[k] - dense[k])) <= 1e-9 * scale, k


def test_a_drawing_above_150_unknowns_gets_its_worst_corners():
    """A 56-stage drawing of one coil type (173 unknowns, where the corner search used to be left out)
    has every modelled verdict's sensitivities and worst corner; each corner's margin is what evaluate
    gives at that corner and no higher than the nominal margin."""
    d = _generated(56, one_coil_type=True)
    assert model(d).net.size(True) > 150
    found = analyse_sensitivities(d)
    keys = {k[0] for k in found}
    assert {"fuse.continuous", "cable.ampacity", "fuse.cable_short_circuit", "supply.bus_minimum"} <= keys
    xs = np.array([vs.corner.x for vs in found.values()])
    ev = evaluate(d, xs)
    for r, (k, vs) in enumerate(found.items()):
        assert vs.corner.margin == pytest.approx(float(ev[k].margin[r]), rel=1e-9, abs=1e-12), k
        assert vs.corner.margin <= vs.nominal_margin + 1e-12, k
