"""Fuse element cyclic heating: the closed forms against scipy.integrate.solve_ivp and hand-worked values."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from coilstage import tables
from coilstage.physics.fuse_cyclic import (
    interpolate_cyclic_fraction,
    melting_current,
    rise_share_at,
    time_constant_from_i2t,
    time_constant_from_point,
    time_constants_from_gates,
)

# A physical element (invented figures, only their combinations matter): C = 0.02 J/K,
# R_e = 0.5 mohm, R_th = 40 K/W, melting rise 300 K -> tau = 0.8 s, I_min = sqrt(300/(0.5e-3 x 40)).
C, R_E, R_TH, THETA_M = 0.02, 0.5e-3, 40.0, 300.0
TAU = R_TH * C
I_MIN = math.sqrt(THETA_M / (R_E * R_TH))


def _rhs(current_of_t):
    def f(t, y):
        return [(current_of_t(t) ** 2 * R_E - y[0] / R_TH) / C]

    return f


def _simulate_cycles(i_on, t_on, t_off, n):
    """solve_ivp through n on/off cycles from cold, one call per interval (no discontinuity inside a
    step); returns the rise at the end of each on-period and each off-period [K]."""
    theta, peaks, troughs = 0.0, [], []
    for _ in range(n):
        for dur, cur, store in ((t_on, i_on, peaks), (t_off, 0.0, troughs)):
            sol = solve_ivp(_rhs(lambda t, c=cur: c), (0.0, dur), [theta], rtol=1e-10, atol=1e-12, method="DOP853")
            theta = float(sol.y[0, -1])
            store.append(theta)
    return np.array(peaks), np.array(troughs)


@pytest.mark.parametrize(("t_on", "t_off"), [(0.5, 0.5), (2.0, 0.3), (0.1, 1.5), (5.0, 5.0)])
def test_stepped_duty_against_solve_ivp(t_on, t_off):
    # Independent reference: scipy.integrate.solve_ivp (DOP853, rtol 1e-10) through 12 cycles from cold.
    # The duty followed step by step with rise_share_at (on: towards the steady share (I/I_min)^2 of the
    # lumped model, Incropera & DeWitt §5.2; off: towards 0) must match at the end of every on- and
    # off-period to 1e-7 relative.
    i_on = 0.8 * I_MIN
    share = (i_on / I_MIN) ** 2
    peaks, troughs = _simulate_cycles(i_on, t_on, t_off, 12)
    s = 0.0
    for n in range(12):
        s = rise_share_at(t_on, share, s, TAU)
        assert s == pytest.approx(peaks[n] / THETA_M, rel=1e-7)
        s = rise_share_at(t_off, 0.0, s, TAU)
        assert s == pytest.approx(troughs[n] / THETA_M, rel=1e-7)


def test_melting_time_against_solve_ivp_event():
    # Independent reference: solve_ivp with a terminal event at the melting rise, at 2 x I_min.
    i = 2.0 * I_MIN
    ev = lambda t, y: y[0] - THETA_M  # noqa: E731
    ev.terminal = True
    sol = solve_ivp(_rhs(lambda t: i), (0.0, 100.0), [0.0], events=ev, rtol=1e-11, atol=1e-12, method="DOP853")
    t_sim = float(sol.t_events[0][0])
    # Hand-worked: -0.8 ln(1 - 1/4) = 0.2301 s.
    assert t_sim == pytest.approx(0.2301, abs=1e-4)
    # The time constant from that point is the model's, and the current melting in that time is i.
    assert time_constant_from_point(i, t_sim, I_MIN) == pytest.approx(TAU, rel=1e-7)
    assert melting_current(t_sim, I_MIN, TAU) == pytest.approx(i, rel=1e-7)
    with pytest.raises(ValueError):
        time_constant_from_point(0.9 * I_MIN, 1.0, I_MIN)


def test_time_constant_from_melting_i2t():
    # Fuse makers' rule tau = I^2t_melt / I_min^2 (the adiabatic limit): at 30 x I_min the model's
    # melting I^2t lies within 0.06 % of tau I_min^2 (-x^-1 ln(1-x) = 1 + x/2 + ..., x = 1/900).
    # The model's melting time from cold, -tau ln(1 - (I_min/I)^2), written out here.
    i = 30.0 * I_MIN
    i2t = i * i * -TAU * math.log(1.0 - (I_MIN / i) ** 2)
    assert time_constant_from_i2t(i2t, I_MIN) == pytest.approx(TAU, rel=6e-4)


def test_time_constants_from_shipped_gates():
    # Shipped blade-fast gates (ISO 8820 from memory): each must-not-open point above the 1.10 melting
    # threshold gives a tau; the 2.0 x point at 0.15 s gives -0.15 / ln(1 - (1.1/2)^2) = 0.4163 s
    # (hand-worked), and a single node cannot fit every point: the values spread.
    g = tables.shipped_gates("F")
    taus = dict(time_constants_from_gates(g.points, 1.10))
    assert taus[2.0] == pytest.approx(0.4163, abs=1e-4)
    assert 1.10 not in taus  # the threshold itself gives no time constant
    assert max(taus.values()) / min(taus.values()) > 1.5


def test_retarder_stage_against_cyclic_factor():
    # Hand-worked: a stage at 54 % of its fuse's rating for 2 x 10^5 cycles with on-periods of minutes
    # (long against tau): I_melt(t_on) = I_min = 1.10 I_n (shipped threshold, from memory);
    # B'2(2e5) = 0.35 - log10(2) x 0.04 = 0.3380 (semiconductor-fuse guide, linear in log N);
    # limit = 0.3380 x 1.10 = 0.372 I_n < 0.54 I_n: the stage exceeds the cyclic rule.
    rows = tables.shipped("fuse_cyclic_derating.toml")["table"]["rows"]
    table = [(r["cycles"], r["fraction"]) for r in rows]
    b2 = interpolate_cyclic_fraction(2e5, table)
    assert b2 == pytest.approx(0.3380, abs=1e-4)
    i_n = 100.0
    i_melt = melting_current(120.0, 1.10 * i_n, 0.5)
    assert i_melt == pytest.approx(110.0, rel=1e-12)
    # (limit B'2 x I_melt = 0.3380 x 110 = 37.18 A, below the stage's 54 A)
    # Hand-worked: B'2 at 1e5 cycles is the table's own 0.35 (semiconductor-fuse guide).
    assert interpolate_cyclic_fraction(1e5, table) == pytest.approx(0.35)


def test_step_response_and_interpolation_ends():
    assert rise_share_at(0.0, 0.5, 0.1, 1.0) == pytest.approx(0.1)
    assert rise_share_at(50.0, 0.5, 0.1, 1.0) == pytest.approx(0.5)
    table = [(2000, 0.55), (1e6, 0.31)]
    assert interpolate_cyclic_fraction(10, table) == 0.55
    assert interpolate_cyclic_fraction(1e9, table) == 0.31
