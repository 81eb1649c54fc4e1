"""DC network solution: hand-solved networks and an independent numpy solve of the same circuits."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from coilstage.physics.network import Branches, LimitedSource, solve_mna, solve_with_limited_source


def test_hand_solved_two_branch_network():
    # Hand solution (series-parallel reduction, Ohm's law): E = 25 V behind Rb = 10 mOhm, a 5 mOhm
    # feed to node D, branches of 1.0 and 0.5 Ohm from D to ground.
    e, rb, rf, r2, r3 = 25.0, 0.010, 0.005, 1.0, 0.5
    r_par = r2 * r3 / (r2 + r3)  # 1/3 Ohm
    i_total = e / (rb + rf + r_par)  # 71.770 A
    v_d = i_total * r_par  # 23.923 V
    # nodes: 0 ground, 1 battery terminal, 2 D; battery as Norton source (E/Rb in parallel with Rb)
    res = Branches.of([(0, 1, rb), (1, 2, rf), (2, 0, r2), (2, 0, r3)])
    sol = solve_mna(3, res, Branches.of([]), Branches.of([(0, 1, e / rb)]))
    assert i_total == pytest.approx(71.770, abs=1e-3)
    assert sol.v[2] == pytest.approx(v_d, rel=1e-12)
    assert (sol.v[1] - sol.v[2]) / rf == pytest.approx(i_total, rel=1e-12)
    assert sol.v[2] / r2 == pytest.approx(23.923, abs=1e-3)
    assert sol.v[2] / r3 == pytest.approx(47.847, abs=1e-3)


def test_zero_ohm_element_carries_the_branch_current():
    # The same network with the feed replaced by a 0 V source: its current is the total current.
    e, rb, r2, r3 = 25.0, 0.010, 1.0, 0.5
    res = Branches.of([(0, 1, rb), (2, 0, r2), (2, 0, r3)])
    sol = solve_mna(3, res, Branches.of([(1, 2, 0.0)]), Branches.of([(0, 1, e / rb)]))
    assert sol.i_vsource[0] == pytest.approx(e / (rb + r2 * r3 / (r2 + r3)), rel=1e-12)
    assert sol.v[1] == pytest.approx(sol.v[2], abs=1e-12)


def _independent_nodal(n, res_rows, is_rows):
    """Reference: reduced Laplacian from the incidence matrix, solved with numpy.linalg.solve."""
    m = len(res_rows)
    a = np.zeros((n, m))
    g = np.zeros(m)
    for k, (i, j, r) in enumerate(res_rows):
        a[i, k], a[j, k], g[k] = 1.0, -1.0, 1.0 / r
    lap = a @ np.diag(g) @ a.T
    inj = np.zeros(n)
    for i, j, cur in is_rows:
        inj[i] -= cur
        inj[j] += cur
    v = np.linalg.solve(lap[1:, 1:], inj[1:])
    return np.concatenate(([0.0], v))


@settings(max_examples=60, deadline=None)
@given(st.integers(3, 40), st.integers(0, 2**31 - 1))
def test_mna_matches_independent_nodal_solve(n, seed):
    rng = np.random.default_rng(seed)
    rows = [(int(rng.integers(0, k)), k, float(rng.uniform(1e-3, 10))) for k in range(1, n)]  # a spanning tree
    for _ in range(n):
        i, j = rng.integers(0, n, 2)
        if i != j:
            rows.append((int(i), int(j), float(rng.uniform(1e-3, 10))))
    cur = [(0, int(rng.integers(1, n)), float(rng.uniform(-50, 50))) for _ in range(3)]
    ours = solve_mna(n, Branches.of(rows), Branches.of([]), Branches.of(cur))
    ref = _independent_nodal(n, rows, cur)
    np.testing.assert_allclose(ours.v, ref, rtol=1e-9, atol=1e-9)


def test_sparse_path_matches_dense_path():
    # Same network solved once below and once above the sparse threshold (by padding with a chain).
    rng = np.random.default_rng(7)
    n = 400
    rows = [(k - 1, k, float(rng.uniform(0.01, 1))) for k in range(1, n)]
    rows += [(k, 0, float(rng.uniform(1, 10))) for k in range(1, n, 3)]
    cur = [(0, 1, 100.0)]
    ours = solve_mna(n, Branches.of(rows), Branches.of([]), Branches.of(cur))
    np.testing.assert_allclose(ours.v, _independent_nodal(n, rows, cur), rtol=1e-9, atol=1e-9)


def test_singular_network_raises():
    with pytest.raises(np.linalg.LinAlgError):
        solve_mna(3, Branches.of([(0, 1, 1.0)]), Branches.of([]), Branches.of([(0, 2, 1.0)]))


# ---- the current-limited charging source
E, RB, VSET, RS, RLOAD = 24.0, 0.010, 28.0, 0.020, 0.10


def _network():
    res = Branches.of([(0, 1, RB), (1, 0, RLOAD)])
    return res, Branches.of([]), Branches.of([(0, 1, E / RB)])


def test_alternator_regulating_closed_form():
    # Two Thevenin sources and a load on one node (Millman's theorem):
    # V = (E/Rb + Vset/Rs) / (1/Rb + 1/Rs + 1/R)
    v = (E / RB + VSET / RS) / (1 / RB + 1 / RS + 1 / RLOAD)
    i_alt = (VSET - v) / RS
    sol = solve_with_limited_source(2, *_network(), LimitedSource(1, VSET, RS, i_alt * 1.01))
    assert sol.mode == "regulating"
    assert sol.dc.v[1] == pytest.approx(v, rel=1e-12)
    assert sol.i_source == pytest.approx(i_alt, rel=1e-9)


def test_alternator_switches_to_current_limit():
    v_reg = (E / RB + VSET / RS) / (1 / RB + 1 / RS + 1 / RLOAD)
    i_reg = (VSET - v_reg) / RS
    limit = 0.5 * i_reg
    # Closed form once limited: Millman with a current source: V = (E/Rb + I_lim)/(1/Rb + 1/R)
    v = (E / RB + limit) / (1 / RB + 1 / RLOAD)
    sol = solve_with_limited_source(2, *_network(), LimitedSource(1, VSET, RS, limit))
    assert sol.mode == "current-limited"
    assert sol.i_source == limit
    assert sol.dc.v[1] == pytest.approx(v, rel=1e-12)
    # consistency: the regulating law would have wanted more than the limit at this voltage
    assert (VSET - sol.dc.v[1]) / RS > limit


def test_alternator_off_when_bus_above_setpoint():
    # A battery at 30 V under a light 1 Ohm load holds the bus at 29.7 V, above the 28 V set-point:
    # the rectifier blocks and the alternator delivers nothing (divider: V = E R/(R + Rb)).
    e, r_light = 30.0, 1.0
    res = Branches.of([(0, 1, RB), (1, 0, r_light)])
    sol = solve_with_limited_source(
        2, res, Branches.of([]), Branches.of([(0, 1, e / RB)]), LimitedSource(1, VSET, RS, 100)
    )
    assert sol.mode == "off"
    assert sol.i_source == 0.0
    assert sol.dc.v[1] == pytest.approx(e * r_light / (r_light + RB), rel=1e-12)


def test_alternator_current_is_min_of_law_and_limit_over_a_sweep():
    v_prev = None
    for limit in np.linspace(1, 400, 60):
        sol = solve_with_limited_source(2, *_network(), LimitedSource(1, VSET, RS, float(limit)))
        law = (VSET - sol.dc.v[1]) / RS
        assert sol.i_source == pytest.approx(min(law, limit), rel=1e-9, abs=1e-9)
        if v_prev is not None:
            assert sol.dc.v[1] >= v_prev - 1e-12  # more available current never lowers the bus
        v_prev = sol.dc.v[1]


@settings(max_examples=40, deadline=None)
@given(st.integers(3, 30), st.integers(0, 2**31 - 1), st.booleans())
def test_short_circuit_currents_match_a_direct_solve_with_the_short_added(n, seed, big):
    # Thevenin's theorem against the plain route: add a 0 V source from node k to ref and read its current.
    from coilstage.physics.network import short_circuit_currents

    rng = np.random.default_rng(seed)
    if big:  # exercise the sparse path too
        n = 200
    rows = [(int(rng.integers(0, k)), k, float(rng.uniform(1e-3, 2))) for k in range(1, n)]
    rows += [(int(rng.integers(0, n)), int(rng.integers(0, n)), float(rng.uniform(1e-3, 2))) for _ in range(n // 2)]
    rows = [r for r in rows if r[0] != r[1]]
    vs = [(0, 1, 0.0)] if n > 3 else []  # a zero-ohm element from ground to node 1
    cur = [(0, int(rng.integers(2, n)), float(rng.uniform(10, 500))) for _ in range(2)]
    nodes = [int(k) for k in rng.choice(np.arange(2, n), size=min(5, n - 2), replace=False)]
    ref = 0
    got = short_circuit_currents(n, Branches.of(rows), Branches.of(vs), Branches.of(cur), nodes, ref)
    for k, i_sc in zip(nodes, got, strict=True):
        sol = solve_mna(n, Branches.of(rows), Branches.of([*vs, (k, ref, 0.0)]), Branches.of(cur))
        assert i_sc == pytest.approx(sol.i_vsource[-1], rel=1e-8, abs=1e-9)


def test_sparse_factorisation_with_sources_and_a_reused_pattern_against_numpy():
    # Above the sparse threshold, with voltage sources (the saddle-point rows of MNA) and the compressed
    # pattern made once and reused with new values: each solve equals numpy.linalg.solve on the same
    # triplets summed into a dense matrix here (np.add.at, apart from the package's assembly of the
    # compressed form and its SuperLU ordering). rtol 1e-9: conditioning ~1e4 (1 mohm to 10 ohm).
    from coilstage.physics.network import SPARSE_THRESHOLD, Factorized, mna_matrix

    rng = np.random.default_rng(11)
    n = SPARSE_THRESHOLD + 60
    base = [(int(rng.integers(0, k)), k, 0.0) for k in range(1, n)]
    vs = Branches.of([(0, 1, 24.0), (5, 6, 0.0)])
    for trial in range(3):  # the same pattern, new values each time
        rows = [(a, b, float(rng.uniform(1e-3, 10))) for a, b, _ in base]
        r, c, x, rhs, _n = mna_matrix(n, Branches.of(rows), vs, Branches.of([(0, 9, float(trial + 1))]))
        dense = np.zeros((len(rhs), len(rhs)))
        np.add.at(dense, (r, c), x)
        np.testing.assert_allclose(Factorized(r, c, x, len(rhs)).solve(rhs), np.linalg.solve(dense, rhs), rtol=1e-9)


def test_one_structure_solved_with_new_values_each_time_against_numpy():
    """mna_matrix works out where a structure's stamps fall once and reuses it: every new set of values
    on the same nodes must still give the independent nodal solve's voltages (numpy.linalg.solve of
    the reduced Laplacian built from the incidence matrix)."""
    rng = np.random.default_rng(11)
    n = 9
    nodes = [(int(rng.integers(0, k)), k) for k in range(1, n)] + [(2, 7), (3, 5), (1, 8)]
    for _ in range(6):
        rows = [(i, j, float(rng.uniform(1e-3, 10))) for i, j in nodes]
        cur = [(0, 4, float(rng.uniform(-50, 50)))]
        ours = solve_mna(n, Branches.of(rows), Branches.of([]), Branches.of(cur))
        # round-off of two different eliminations of a 9-node network (rel 1e-9, as the test above)
        np.testing.assert_allclose(ours.v, _independent_nodal(n, rows, cur), rtol=1e-9, atol=1e-9)
