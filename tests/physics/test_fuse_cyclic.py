"""Fuse element cyclic heating: the closed forms against scipy.integrate.solve_ivp and hand-worked values."""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.integrate import solve_ivp

from coilstage import tables
from coilstage.physics.fuse_cyclic import (
    cyclic_limit_current,
    equivalent_steady_current,
    interpolate_cyclic_fraction,
    melting_current,
    melting_time,
    periodic_peak_share,
    periodic_swing_share,
    periodic_trough_share,
    rise_share_at,
    steady_share,
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


def test_physical_model_identities():
    # Lumped-capacitance model (Incropera & DeWitt §5.2): theta_ss = I^2 R_e R_th; melting at I_min.
    assert steady_share(I_MIN, I_MIN) == pytest.approx(1.0)
    assert (0.5 * I_MIN) ** 2 * R_E * R_TH / THETA_M == pytest.approx(steady_share(0.5 * I_MIN, I_MIN))


@pytest.mark.parametrize(("t_on", "t_off"), [(0.5, 0.5), (2.0, 0.3), (0.1, 1.5), (5.0, 5.0)])
def test_periodic_peak_against_solve_ivp(t_on, t_off):
    # Independent reference: scipy.integrate.solve_ivp (DOP853, rtol 1e-10) through 12 cycles from cold.
    # The closed form for cycle n and its steady-periodic limit must match to 1e-7 relative.
    i_on = 0.8 * I_MIN
    share = steady_share(i_on, I_MIN)
    peaks, troughs = _simulate_cycles(i_on, t_on, t_off, 12)
    for n in (1, 2, 5, 12):
        assert periodic_peak_share(share, t_on, t_off, TAU, cycles=n) == pytest.approx(peaks[n - 1] / THETA_M, rel=1e-7)
    # After 12 cycles the state is steady-periodic to within q^12.
    q = math.exp(-(t_on + t_off) / TAU)
    if q**12 < 1e-9:
        assert periodic_peak_share(share, t_on, t_off, TAU) == pytest.approx(peaks[-1] / THETA_M, rel=1e-7)
        assert periodic_trough_share(share, t_on, t_off, TAU) == pytest.approx(troughs[-1] / THETA_M, rel=1e-7)
        assert periodic_swing_share(share, t_on, t_off, TAU) == pytest.approx(
            (peaks[-1] - troughs[-1]) / THETA_M, rel=1e-6
        )


def test_limits_of_the_periodic_peak():
    # Derived limits: on and off long against tau -> the steady share; period short against tau -> the
    # rms share s t_on/T (the element sees the mean heat).
    assert periodic_peak_share(0.3, 100.0, 100.0, 1.0) == pytest.approx(0.3, rel=1e-12)
    assert periodic_peak_share(0.3, 1e-4, 3e-4, 1.0) == pytest.approx(0.3 * 0.25, rel=1e-3)
    assert equivalent_steady_current(10.0, 1e-4, 3e-4, 1.0) == pytest.approx(10.0 * math.sqrt(0.25), rel=1e-3)
    assert equivalent_steady_current(10.0, 50.0, 50.0, 1.0) == pytest.approx(10.0, rel=1e-12)


def test_melting_time_against_solve_ivp_event():
    # Independent reference: solve_ivp with a terminal event at the melting rise, at 2 x I_min.
    i = 2.0 * I_MIN
    ev = lambda t, y: y[0] - THETA_M  # noqa: E731
    ev.terminal = True
    sol = solve_ivp(_rhs(lambda t: i), (0.0, 100.0), [0.0], events=ev, rtol=1e-11, atol=1e-12, method="DOP853")
    t_sim = float(sol.t_events[0][0])
    assert melting_time(i, I_MIN, TAU) == pytest.approx(t_sim, rel=1e-7)
    # Hand-worked: -0.8 ln(1 - 1/4) = 0.2301 s.
    assert melting_time(i, I_MIN, TAU) == pytest.approx(0.2301, abs=1e-4)
    # Round trip: the time constant from that point is the model's.
    assert time_constant_from_point(i, t_sim, I_MIN) == pytest.approx(TAU, rel=1e-7)
    assert melting_current(t_sim, I_MIN, TAU) == pytest.approx(i, rel=1e-9)
    assert math.isinf(melting_time(I_MIN, I_MIN, TAU))
    with pytest.raises(ValueError):
        time_constant_from_point(0.9 * I_MIN, 1.0, I_MIN)


def test_time_constant_from_melting_i2t():
    # Fuse makers' rule tau = I^2t_melt / I_min^2 (the adiabatic limit): at 30 x I_min the model's
    # melting I^2t lies within 0.06 % of tau I_min^2 (-x^-1 ln(1-x) = 1 + x/2 + ..., x = 1/900).
    i = 30.0 * I_MIN
    i2t = i * i * melting_time(i, I_MIN, TAU)
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
    assert cyclic_limit_current(i_melt, b2) == pytest.approx(37.18, abs=0.01)
    assert 54.0 > cyclic_limit_current(i_melt, b2)
    # Hand-worked: B'2 at 1e5 cycles (0.35, semiconductor-fuse guide) with I_melt = 1.35 I_n -> 0.4725 I_n.
    assert cyclic_limit_current(1.35, interpolate_cyclic_fraction(1e5, table)) == pytest.approx(0.4725)


def test_step_response_and_interpolation_ends():
    assert rise_share_at(0.0, 0.5, 0.1, 1.0) == pytest.approx(0.1)
    assert rise_share_at(50.0, 0.5, 0.1, 1.0) == pytest.approx(0.5)
    table = [(2000, 0.55), (1e6, 0.31)]
    assert interpolate_cyclic_fraction(10, table) == 0.55
    assert interpolate_cyclic_fraction(1e9, table) == 0.31
