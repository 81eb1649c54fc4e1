"""The quasi-static network's element resistances follow the one R(T) law
(coilstage.physics.conductor.resistance_at_temperature) on arrays, as the DC solve's element
resistances do one element at a time."""

from __future__ import annotations

import numpy as np
import pytest

from coilstage.analysis.circuit import element_resistance
from coilstage.analysis.quasistatic import QuasiStatic
from coilstage.drawing.load import load_drawing
from coilstage.drawing.schema import Cable

CONFIGS = ["coach-24v-4stage", "light-truck-12v-2stage", "flawed-retrofit-24v"]


@pytest.mark.parametrize("name", CONFIGS)
def test_resistances_equal_the_element_law_at_every_temperature(name, coach_path):
    d = load_drawing(coach_path.parent / f"{name}.toml")
    net = QuasiStatic(d, 25.2, None)
    cables = d.of_kind(Cable)
    rng = np.random.default_rng(7)
    for _ in range(5):
        tc = rng.uniform(-40.0, 250.0, len(cables))
        ts = rng.uniform(-40.0, 250.0, len(d.stages))
        rc, rs = net.resistances(tc, ts)
        want_c = [element_resistance(c, float(t)) for c, t in zip(cables, tc, strict=True)]
        want_s = [element_resistance(s, float(t)) for s, t in zip(d.stages, ts, strict=True)]
        # the same law on arrays, a coil referred to 20 degC first: a few ulps of a double (rel 1e-13)
        assert rc == pytest.approx(want_c, rel=1e-13)
        assert rs == pytest.approx(want_s, rel=1e-13)
    # the law written out (IEC 60287-1-1 clause 2.1.1: R = R20 [1 + alpha20 (theta - 20)]) at 105 degC
    c0 = cables[0]
    rc, _ = net.resistances(np.full(len(cables), 105.0), np.full(len(d.stages), 20.0))
    # floating round-off only (rel 1e-13)
    assert rc[0] == pytest.approx(c0.r20_per_m * c0.length * (1 + c0.alpha20 * 85.0), rel=1e-13)


@pytest.mark.parametrize("name", CONFIGS)
def test_dense_solve_agrees_with_the_sparse_lu_of_the_same_network(name, coach_path, monkeypatch):
    """The quasi-static network's small systems are solved from the fixed part's matrix, summed once,
    with the temperature-dependent stamps added. Through the general assembly (mna_matrix and
    Factorized, still dense) the same solves must be the same to the last bit; through SciPy's sparse
    LU (SuperLU, the path above SPARSE_THRESHOLD) the same to round-off; for random temperatures,
    stages on and off, and each state of the alternator."""
    import coilstage.analysis.quasistatic as qs
    import coilstage.physics.network as nw

    d = load_drawing(coach_path.parent / f"{name}.toml")
    alt = d.supply.alternator
    rng = np.random.default_rng(3)
    n_c, n_s = len(d.of_kind(Cable)), len(d.stages)
    cases = []
    for k in range(6):
        tc = rng.uniform(-40.0, 200.0, n_c)
        ts = rng.uniform(-40.0, 200.0, n_s)
        on = rng.random(n_s) < 0.6
        limit = None if alt is None or k == 0 else [alt.limit_idle, alt.limit_rated, 1.0][k % 3]
        cases.append((tc, ts, on, limit))

    def run() -> list:
        net = QuasiStatic(d, 25.2, alt.setpoint if alt else None)
        return [net.solve(*c) for c in cases]

    fast = run()
    monkeypatch.setattr(qs, "SPARSE_THRESHOLD", 0)  # the general assembly, Factorized dense
    general = run()
    for a, b in zip(fast, general, strict=True):
        for x, y in zip(a, b, strict=True):
            np.testing.assert_array_equal(x, y)
    monkeypatch.setattr(nw, "SPARSE_THRESHOLD", 0)  # and Factorized's SuperLU
    sparse = run()
    for a, b in zip(fast, sparse, strict=True):
        # two eliminations of the same matrix: round-off only (rel 1e-10 of currents of 1-300 A)
        for x, y in zip(a, b, strict=True):
            np.testing.assert_allclose(x, y, rtol=1e-10, atol=1e-9)
