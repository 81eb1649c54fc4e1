"""Adjoint and direct sensitivities of a linear nodal solve against central finite differences of
independent numpy.linalg solves, and the worked check of a series circuit."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

from coilstage.physics.sensitivity import (
    Factors,
    adjoint_sensitivities,
    all_vertices,
    direct_sensitivities,
)

# ---------------------------------------------------------------- the test's own references


def central_difference(func, p: np.ndarray, step: float = 1e-5) -> np.ndarray:
    """df/dp by central differences, (f(p + h_k e_k) - f(p - h_k e_k)) / (2 h_k) with h_k = step |p_k|
    (absolute where p_k is 0): W. H. Press et al., *Numerical Recipes*, 3rd ed., 2007, §5.7; truncation
    error O(h^2). The reference the exact sensitivities are held to."""
    p = np.asarray(p, dtype=float)
    h = step * np.where(np.abs(p) > 1e-30, np.abs(p), 1.0)
    out = []
    for k in range(p.size):
        e = np.zeros_like(p)
        e[k] = h[k]
        out.append((np.asarray(func(p + e), dtype=float) - np.asarray(func(p - e), dtype=float)) / (2 * h[k]))
    return np.array(out)


# ---------------------------------------------------------------- a small MNA builder of the test's own


def mna(n_nodes, resistors, vsources, isources):
    """A (dense) and b of a network, stamped here independently of coilstage.physics.network:
    node 0 is the reference; resistors (a, b, R); voltage sources (a, b, E) with V(b) - V(a) = E;
    current sources (a, b, J) driving J into node b. Unknowns: node 1..n-1, then source currents."""
    n = n_nodes - 1
    m = len(vsources)
    a = np.zeros((n + m, n + m))
    rhs = np.zeros(n + m)
    for i, j, r in resistors:
        g = 1.0 / r
        for p, q, s in ((i, i, g), (j, j, g), (i, j, -g), (j, i, -g)):
            if p and q:
                a[p - 1, q - 1] += s
    for k, (i, j, e) in enumerate(vsources):
        row = n + k
        if i:
            a[i - 1, row] += 1.0
            a[row, i - 1] -= 1.0
        if j:
            a[j - 1, row] -= 1.0
            a[row, j - 1] += 1.0
        rhs[row] = e
    for i, j, cur in isources:
        if i:
            rhs[i - 1] -= cur
        if j:
            rhs[j - 1] += cur
    return a, rhs


def d_a_resistor(size, i, j, r):
    """dA/dR of a resistor's stamp: -(1/R^2) (e_i - e_j)(e_i - e_j)^T (node 0 dropped)."""
    u = np.zeros(size)
    if i:
        u[i - 1] = 1.0
    if j:
        u[j - 1] = -1.0
    return -np.outer(u, u) / r**2


def ladder():
    """A 24 V supply network of 7 nodes: battery E behind Rb, an alternator as a current source, a
    feed, two branches of cable + coil each. Parameters: every resistance, E and J."""
    res = [(1, 2, 0.009), (2, 3, 0.002), (3, 4, 0.003), (4, 0, 0.62), (3, 5, 0.004), (5, 6, 0.001), (6, 0, 0.7)]
    vs = [(0, 1, 25.2)]
    cur = [(0, 2, 80.0)]
    return 7, res, vs, cur


def build(params):
    """A and b of the ladder with parameters p = (R_1..R_7, E, J)."""
    n_nodes, res, _vs, _cur = ladder()
    rs = [(i, j, params[k]) for k, (i, j, _) in enumerate(res)]
    return mna(n_nodes, rs, [(0, 1, params[len(res)])], [(0, 2, params[len(res) + 1])])


def nominal_params():
    _n, res, vs, cur = ladder()
    return np.array([r for *_, r in res] + [vs[0][2], cur[0][2]])


def derivatives(params):
    """dA/dp and db/dp of every parameter of the ladder (stamped by hand)."""
    n_nodes, res, _vs, _cur = ladder()
    a, _b = build(params)
    size = a.shape[0]
    n = n_nodes - 1
    p = len(params)
    d_a = np.zeros((p, size, size))
    d_b = np.zeros((p, size))
    for k, (i, j, _r) in enumerate(res):
        d_a[k] = d_a_resistor(size, i, j, params[k])
    d_b[len(res), n] = 1.0  # dE: the source row
    d_b[len(res) + 1, 2 - 1] = 1.0  # dJ: into node 2
    return d_a, d_b


def read_out(size, node):
    c = np.zeros(size)
    c[node - 1] = 1.0
    return c


# ---------------------------------------------------------------- worked check


def test_series_circuit_worked_check():
    # Hand-worked: E = 28 V, Rs = 0.05 Ohm in series with RL = 0.5 Ohm; y = V_L = 25.4545 V;
    # dV_L/dRs = -E RL/(Rs + RL)^2 = -46.281 V/Ohm (closed form).
    a, b = mna(3, [(1, 2, 0.05), (2, 0, 0.5)], [(0, 1, 28.0)], [])
    x = np.linalg.solve(a, b)
    assert x[1] == pytest.approx(28 * 0.5 / 0.55)
    d_a = np.array([d_a_resistor(3, 1, 2, 0.05)])
    dy = adjoint_sensitivities(a, x, read_out(3, 2), d_a)
    assert dy[0] == pytest.approx(-28 * 0.5 / 0.55**2, rel=1e-12)
    assert dy[0] == pytest.approx(-46.281, abs=5e-4)
    assert direct_sensitivities(a, x, d_a)[0, 1] == pytest.approx(dy[0], rel=1e-12)


# ---------------------------------------------------------------- against finite differences


def fd_of_node(node, p0):
    """Central differences of an independent numpy.linalg.solve at perturbed parameters."""

    def f(p):
        a, b = build(p)
        return np.linalg.solve(a, b)[node - 1]

    # The round-off of a difference quotient is about cond(A)·eps·|y|/h, and cond(A) reaches 1e5 where
    # resistances lie four decades apart: a step of 1e-4 left 1.1e-6 of error on
    # rs = [9, 1, 1, 8.125, 0.03125, 0.001, 6]. So the steps are larger (1e-3 and 5e-4 relative) and a
    # Richardson extrapolation of the two cancels the O(h²) truncation term they bring.
    return (4.0 * central_difference(f, p0, 5e-4) - central_difference(f, p0, 1e-3)) / 3.0


@pytest.mark.parametrize("node", [2, 4, 6])
def test_adjoint_equals_central_differences(node):
    # Independent reference: numpy.linalg.solve of the perturbed network, central differences with a
    # relative step 1e-4 (truncation O(h^2) ~ 1e-8 relative; round-off eps|y|/h ~ 1e-11: tolerance 1e-6).
    p0 = nominal_params()
    a, b = build(p0)
    x = np.linalg.solve(a, b)
    d_a, d_b = derivatives(p0)
    dy = adjoint_sensitivities(a, x, read_out(a.shape[0], node), d_a, d_b)
    assert dy == pytest.approx(fd_of_node(node, p0), rel=1e-6, abs=1e-9)


def test_direct_equals_adjoint_and_differences():
    p0 = nominal_params()
    a, b = build(p0)
    x = np.linalg.solve(a, b)
    d_a, d_b = derivatives(p0)
    dx = direct_sensitivities(a, x, d_a, d_b)  # (P, n)
    for node in (2, 4, 6):
        c = read_out(a.shape[0], node)
        assert dx @ c == pytest.approx(adjoint_sensitivities(a, x, c, d_a, d_b), rel=1e-10)
        assert dx[:, node - 1] == pytest.approx(fd_of_node(node, p0), rel=1e-6, abs=1e-9)
    # The source current (battery branch, the last unknown) too.
    c = np.zeros(a.shape[0])
    c[-1] = 1.0

    def i_bat(p):
        aa, bb = build(p)
        return np.linalg.solve(aa, bb)[-1]

    assert adjoint_sensitivities(a, x, c, d_a, d_b) == pytest.approx(
        central_difference(i_bat, p0, 1e-4), rel=1e-6, abs=1e-7
    )


# ---------------------------------------------------------------- vectorised over samples and read-outs


def test_many_right_hand_sides_at_once_equal_one_by_one():
    # One factorisation, s samples of the sources (the sweep's case: b varies, A does not).
    rng = np.random.default_rng(7)
    p0 = nominal_params()
    a, b0 = build(p0)
    d_a, _ = derivatives(p0)
    size = a.shape[0]
    s = 50
    bs = np.repeat(b0[:, None], s, axis=1)
    bs[-1] = rng.uniform(23.8, 25.4, s)  # battery EMF per sample
    bs[1] = rng.uniform(0.0, 150.0, s)  # alternator current per sample
    f = Factors(a)
    xs = f.solve(bs)
    assert xs == pytest.approx(np.linalg.solve(a, bs), rel=1e-12)
    c = np.stack([read_out(size, 4), read_out(size, 6)], axis=1)  # two read-outs
    many = adjoint_sensitivities(f, xs, c, d_a)  # (P, K, s)
    assert many.shape == (len(p0), 2, s)
    for k in range(s):
        for q in range(2):
            assert many[:, q, k] == pytest.approx(adjoint_sensitivities(a, xs[:, k], c[:, q], d_a), rel=1e-10)
    dx = direct_sensitivities(f, xs, d_a)  # (P, n, s)
    assert dx.shape == (len(p0), size, s)
    assert np.einsum("pns,n->ps", dx, c[:, 1]) == pytest.approx(many[:, 1, :], rel=1e-9)


def test_per_sample_source_derivatives():
    # d_b given per sample (P, n, s) is used column by column.
    p0 = nominal_params()
    a, b = build(p0)
    d_a, d_b = derivatives(p0)
    x = np.linalg.solve(a, b)
    xs = np.stack([x, x], axis=1)
    d_bs = np.stack([d_b, 2 * d_b], axis=2)
    c = read_out(a.shape[0], 6)
    out = adjoint_sensitivities(a, xs, c, d_a, d_bs)
    single = adjoint_sensitivities(a, x, c, d_a, d_b)
    assert out[:, 0] == pytest.approx(single)
    n_r = len(ladder()[1])
    assert out[n_r:, 1] == pytest.approx(2 * single[n_r:])  # the source terms double, not the resistors'


def test_sparse_factorisation_of_a_long_chain():
    # Above SPARSE_THRESHOLD unknowns the sparse LU (scipy.sparse.linalg.splu, trans="T") is used;
    # reference numpy.linalg.solve on the dense matrix and its transpose.
    n_nodes = 200
    res = [(k, k + 1, 0.001 * (1 + k % 5)) for k in range(1, n_nodes - 1)] + [(k, 0, 5.0) for k in range(2, n_nodes, 7)]
    a, b = mna(n_nodes, res, [(0, 1, 24.0)], [])
    f = Factors(a)
    assert f._inv is None  # the sparse path
    assert f.solve(b) == pytest.approx(np.linalg.solve(a, b), rel=1e-10)
    c = read_out(a.shape[0], 150)
    assert f.solve_transposed(c) == pytest.approx(np.linalg.solve(a.T, c), rel=1e-9, abs=1e-15)
    from scipy.sparse import csc_matrix

    g = Factors(csc_matrix(a))
    assert g.solve(b) == pytest.approx(np.linalg.solve(a, b), rel=1e-10)


def test_singular_and_bad_matrices():
    with pytest.raises(ValueError):
        Factors(np.zeros((2, 3)))
    with pytest.raises(np.linalg.LinAlgError):
        Factors(np.zeros((3, 3)))


@settings(max_examples=40, deadline=None)
@example(rs=[9.0, 1.0, 1.0, 8.125, 0.03125, 0.001, 6.0], e=10.0, j=129.0)
@given(
    st.lists(st.floats(1e-3, 10.0), min_size=7, max_size=7),
    st.floats(10.0, 30.0),
    st.floats(1.0, 200.0),  # a relative step on a near-zero source current would be all round-off
)
def test_adjoint_matches_differences_on_random_values(rs, e, j):
    # Property: for any positive resistances and sources the adjoint equals central differences of
    # numpy.linalg.solve. Compared as p·dy/dp [V] (the change of y per unit relative change of p):
    # the differences carry round-off of about cond(A)·eps·|x|/h, large where resistances lie
    # four decades apart, so the tolerance is 1e-6 V absolute plus 1e-6 relative.
    p0 = np.array([*rs, e, j])
    a, b = build(p0)
    x = np.linalg.solve(a, b)
    d_a, d_b = derivatives(p0)
    dy = adjoint_sensitivities(a, x, read_out(a.shape[0], 6), d_a, d_b)
    assert dy * p0 == pytest.approx(fd_of_node(6, p0) * p0, rel=1e-6, abs=1e-6)


def test_all_vertices():
    v = all_vertices(3)
    assert v.shape == (8, 3)
    assert len({tuple(r) for r in v}) == 8
    with pytest.raises(ValueError):
        all_vertices(21)
