"""Flux per stage: the magnetic circuit against Ampère's law, reluctance, published curve points and a
brute-force solve; AC against the impedance formula; the field rules."""

from __future__ import annotations

import itertools
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.integrate import solve_ivp
from scipy.optimize import brentq

from coilstage import check, tables
from coilstage.analysis.field import circuit_of
from coilstage.checks import Status
from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.physics.magnetic import (
    MU0,
    BHCurve,
    MagneticCircuit,
    ac_current,
    kloss_torque,
    modelica_mu_r,
)

from .conftest import COACH, TRUCK, drawing_text


def linear_curve(mu_r: float) -> BHCurve:
    h = np.array([0.0, 1e9])
    return BHCurve("linear", h, MU0 * mu_r * h)


def test_iron_free_gap_follows_amperes_law():
    # Source: Ampère's law around a path of two gaps with ideal iron: B = mu0 N I / (2 g).
    m = MagneticCircuit(100, 40e-4, 2, 1e-3, 0.2, 40e-4, linear_curve(1e9))
    for ni in (100.0, 1000.0, 5000.0):
        # iron of mu_r 1e9 over 0.2 m still adds 0.2/1e9 to the 2 mm of gap: 1e-7 of the MMF
        assert m.gap_flux_density(ni) == pytest.approx(MU0 * ni / 2e-3, rel=3e-7)
    # check value (docs/references.md#magnetic-circuit, derived): 1.2 T across a 1 mm gap needs 954.9 A-turns
    assert 1.2 * 1e-3 / MU0 == pytest.approx(954.9, abs=0.1)


def test_linear_circuit_inductance_is_n_squared_over_reluctance():
    # Check values (docs/references.md#magnetic-circuit, derived from L = N²/R): N = 100, two 1 mm gaps,
    # A = 40 cm², iron neglected: R = 3.979e5 A/Wb, L = 25.13 mH; with mu_r 1000 over 0.2 m, 22.8 mH
    # (22.85 mH before rounding: R = 3.979e5 + 3.979e4 A/Wb).
    ideal = MagneticCircuit(100, 40e-4, 2, 1e-3, 0.2, 40e-4, linear_curve(1e9))
    assert 2e-3 / (MU0 * 40e-4) == pytest.approx(3.979e5, rel=1e-3)
    assert ideal.apparent_inductance(10.0) == pytest.approx(25.13e-3, rel=1e-3)
    iron = MagneticCircuit(100, 40e-4, 2, 1e-3, 0.2, 40e-4, linear_curve(1000))
    # rel 1e-9: the series reluctance formula written out: round-off only
    assert iron.apparent_inductance(7.0) == pytest.approx(
        1e4 / (2e-3 / (MU0 * 40e-4) + 0.2 / (MU0 * 1000 * 40e-4)), rel=1e-9
    )
    # abs 0.06 mH: 22.8 mH is the hand value to 3 figures (22.85 mH by the formula above)
    assert iron.apparent_inductance(7.0) == pytest.approx(22.8e-3, abs=0.06e-3)
    assert iron.incremental_inductance(7.0) == pytest.approx(iron.unsaturated_inductance(), rel=1e-6)


def test_shipped_curves_reproduce_their_points():
    # steel-1010: the point table itself (open-source material class; FEMM attribution from memory).
    c = tables.bh_curve("steel-1010")
    row = next(r for r in tables.shipped("bh_curves.toml")["table"]["rows"] if r["name"] == "steel-1010")
    for h, b in row["points"]:
        # round-off only: the curve passes through its own points (abs for the point at 0)
        assert c.h_of_b(b) == pytest.approx(h, rel=1e-12, abs=1e-12)
        assert float(c.b_of_h_array(h)) == pytest.approx(b, rel=1e-12, abs=1e-12)
    # aisi-1008: Modelica's mu_rApprox with the AISI_1008 record; check values in
    # docs/references.md#magnetic-circuit (derived from the library's formula): mu_r 2082.4 / 649.6 and
    # H 382.1 / 1837.5 A/m at 1.0 / 1.5 T.
    assert modelica_mu_r(1.0, 200, 1.17, 8100, 2.59, 10) == pytest.approx(2082.4, abs=0.1)
    assert modelica_mu_r(1.5, 200, 1.17, 8100, 2.59, 10) == pytest.approx(649.6, abs=0.1)
    a = tables.bh_curve("aisi-1008")
    # rel 1e-3: the reference values to 4 significant figures (0.01 % apart here)
    assert a.h_of_b(1.0) == pytest.approx(382.1, rel=1e-3)
    assert a.h_of_b(1.5) == pytest.approx(1837.5, rel=1e-3)


def test_saturating_circuit_worked_example_and_brute_force():
    # Check values (docs/references.md#magnetic-circuit, derived on the 1010 table): l_fe 0.2 m, two 1 mm gaps,
    # A = 40 cm²: B = 0.568 / 1.114 / 1.504 / 1.700 / 1.858 / 1.917 T at 1000 ... 8000 A-turns.
    m = MagneticCircuit(100, 40e-4, 2, 1e-3, 0.2, 40e-4, tables.bh_curve("steel-1010"))
    for ni, b in ((1000, 0.568), (2000, 1.114), (3000, 1.504), (4000, 1.700), (6000, 1.858), (8000, 1.917)):
        assert m.gap_flux_density(ni) == pytest.approx(b, abs=5e-4)
    # brute force: scan B on a fine grid and take the first point whose MMF reaches N·I
    grid = np.linspace(0, 2.6, 260001)
    mmf = np.array([m.mmf(b) for b in grid[::50]])
    for ni in (500.0, 2500.0, 7000.0):
        k = np.nonzero(mmf >= ni)[0][0]
        fine = grid[(k - 1) * 50 : k * 50 + 1]
        kk = np.nonzero(np.array([m.mmf(b) for b in fine]) >= ni)[0][0]
        # abs 1e-5 T: the step of the reference grid above
        assert m.gap_flux_density(ni) == pytest.approx(fine[kk], abs=1e-5)


@settings(max_examples=200, deadline=None)
@given(st.floats(1e-3, 5e5), st.sampled_from(["steel-1010", "aisi-1008"]), st.floats(0.5, 2.0))
def test_flux_density_is_the_root_scipy_finds(ni, curve, area_ratio):
    # Independent reference: scipy.optimize.brentq on the same mmf(B) = NI, across the curve's knees and
    # beyond its last point (full saturation), with pole and iron sections differing. The exact
    # segment solve agrees to round-off (abs 1e-12 T; brentq run to xtol 1e-15).
    m = MagneticCircuit(200, 60e-4 * area_ratio, 2, 1.5e-3, 0.25, 60e-4, tables.bh_curve(curve))
    hi = MU0 * ni / (m.gaps * m.gap)
    ref = brentq(lambda b: m.mmf(b) - ni, 0.0, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps)
    assert m.gap_flux_density(ni) == pytest.approx(ref, abs=1e-12)
    assert m.gap_flux_density(-ni) == -m.gap_flux_density(ni)


@settings(max_examples=60, deadline=None)
@given(st.floats(0, 2e4), st.floats(0, 2e4))
def test_flux_density_rises_with_ampere_turns(a, b):
    m = MagneticCircuit(200, 60e-4, 2, 1.5e-3, 0.25, 50e-4, tables.bh_curve("aisi-1008"))
    lo, hi = sorted((a, b))
    assert m.gap_flux_density(lo) <= m.gap_flux_density(hi) + 1e-12


def test_more_turns_give_a_stronger_field_at_the_same_current():
    # Common practice (no source): the field follows ampere-turns.
    curve = tables.bh_curve("steel-1010")
    b = [
        MagneticCircuit(n, 60e-4, 2, 1.5e-3, 0.25, 60e-4, curve).gap_flux_density(n * 20.0)
        for n in (100, 150, 210, 300)
    ]
    assert all(x < y for x, y in itertools.pairwise(b))


def test_ac_current_against_the_impedance_formula():
    # Check values (docs/references.md#ac-impedance, derived): L = 0.1 H, R = 0.6 ohm, 50 Hz, 28 V:
    # |Z| = 31.42 ohm, I = 0.891 A (46.67 A on DC, 52 times less).
    i, z = ac_current(28.0, 0.6, 0.1, 50.0)
    assert z == pytest.approx(math.sqrt(0.6**2 + (2 * math.pi * 50 * 0.1) ** 2), rel=1e-12)
    assert z == pytest.approx(31.42, abs=0.01)
    # abs 1e-3 A: 0.891 A is given to 3 decimals
    assert i == pytest.approx(0.891, abs=1e-3)


def test_kloss_torque_shape():
    # Check values (docs/references.md#eddy-current-torque-shape, the Modelica EddyCurrentTorque form): T_max 100 N m,
    # omega_cr 10 rad/s: 80 / 100 / 80 N m at 5 / 10 / 20 rad/s.
    assert [round(kloss_torque(w, 100.0, 10.0), 6) for w in (5, 10, 20)] == [80.0, 100.0, 80.0]
    assert kloss_torque(0.0, 100.0, 10.0) == 0.0


def test_knee_is_where_the_log_slope_falls_to_the_shipped_value():
    c = tables.bh_curve("steel-1010")
    bk = c.knee(0.2)
    hk = c.h_of_b(bk)

    def slope(h0, h1):
        return (math.log(float(c.b_of_h_array(h1))) - math.log(float(c.b_of_h_array(h0)))) / math.log(h1 / h0)

    # the curve is piecewise linear: just below the knee the log slope is above 0.2, just above it is not
    assert slope(hk / 1.02, hk / 1.001) > 0.2
    assert slope(hk * 1.001, hk * 1.02) <= 0.2 + 1e-3


def test_saturating_switch_on_against_solve_ivp():
    # Independent: solve_ivp on d(lambda)/dt = c - K i(lambda), i(lambda) by brentq on the magnetic
    # circuit itself (no table), for stage S1 of the coach switched on alone in the cold corner.
    d = load_drawing(COACH)
    a, _ = check(d)
    so = next(x for x in a.field.switch_on if x.stage == "S1")
    from coilstage.analysis.conditions import corner_sources
    from coilstage.analysis.linear import CaseNetwork

    temps, src = corner_sources(d)["cold"]
    lin = CaseNetwork(a.circuit, temps, src).linear(("S1",), "fixed")
    k, c = float(lin.rl.k[0, 0]), float(lin.rl.c[0])
    s = d.stages[0]
    circ = circuit_of(s.coil)
    # parallel coils: stage linkage = one coil's linkage at half the stage current
    lam = lambda i: circ.linkage(i * s.coil_current_factor)  # noqa: E731
    inv = lambda y: brentq(lambda i: lam(i) - y, 0.0, 2 * c / k, xtol=1e-12) if y > 0 else 0.0  # noqa: E731
    ev = lambda t, y: inv(y[0]) - 0.95 * c / k  # noqa: E731
    ev.terminal = True
    sol = solve_ivp(lambda t, y: [c - k * inv(y[0])], (0, 5), [0.0], rtol=1e-10, atol=1e-12, events=ev)
    assert so.t95_saturating == pytest.approx(sol.t_events[0][0], rel=2e-3)
    assert so.t95_saturating < so.t95_linear  # saturation lowers the inductance: a faster rise


def test_linear_ratios_follow_ohms_law():
    # Without a magnetic circuit the effort follows (N·I)²: hot windings alone scale it by (R_cold/R_hot)²,
    # the sagging bus alone by (U_hot/U_cold)², per stage (Ohm's law at the stage terminals).
    a, _ = check(load_drawing(TRUCK))
    f = a.field
    cold, hot = a.corners["cold"].stages, a.corners["hot"].stages
    # rel 1e-12: the same sums of the corners' currents: round-off only
    assert f.ratio_corners == pytest.approx(sum(h.current**2 for h in hot) / sum(c.current**2 for c in cold), rel=1e-12)
    exp_t = sum((c.current * c.resistance / h.resistance) ** 2 for c, h in zip(cold, hot, strict=True))
    assert f.ratio_temperature == pytest.approx(exp_t / sum(c.current**2 for c in cold), rel=1e-12)


def verdict(vs, rule, subject):
    return next(v for v in vs if v.rule == rule and v.subject == subject)


def test_field_rules_on_the_coach():
    a, vs = check(load_drawing(COACH))
    assert verdict(vs, "field.inductance_crosscheck", "RC4").status is Status.PASS
    assert verdict(vs, "field.saturation", "S1").status is Status.WARN  # cold: 1.7 T in the iron
    v = verdict(vs, "field.braking_retained", "retarder")
    # decided at the lowest bus (hot coils at +5 %, a half-charged battery, a hot derated alternator),
    # and then at the worst corner of the declared tolerances, which is lower still (the regulator hot
    # and its set-point low as well); the hot corner's ratio beside it as nominal
    assert v.status is Status.PASS and v.corner == "worst corner of the declared tolerances"
    assert v.value < a.worst.braking.ratio
    assert v.worst.nominal_value == pytest.approx(a.field.ratio_corners)
    assert a.worst.braking.ratio < a.field.ratio_corners
    assert a.field.torque["hot"] < a.field.torque["cold"]


def test_inductance_crosscheck_warns_on_a_mismatch():
    geometry = 'pole_area = "60 cm^2"\ngap_length = "1.5 mm"\niron_length = "0.25 m"\nbh_curve = "aisi-1008"\n'
    text = drawing_text(stages=1).replace('inductance = "50 mH"\n', 'inductance = "50 mH"\n' + geometry, 1)
    _, vs = check(parse_drawing(text, "x"))
    v = verdict(vs, "field.inductance_crosscheck", "C0")
    # 150 turns, two 1.5 mm gaps over 60 cm²: N²/R ≈ 56 mH against the stated 50 mH -> within 25 %
    assert v.status is Status.PASS
    _, vs = check(parse_drawing(text.replace('inductance = "50 mH"', 'inductance = "20 mH"', 1), "x"))
    assert verdict(vs, "field.inductance_crosscheck", "C0").status is Status.WARN


def test_field_command(tmp_path):
    from coilstage.cli import main

    assert main(["field", str(COACH), "-o", str(tmp_path)]) == 0
    assert (tmp_path / f"{COACH.stem}-field.png").stat().st_size > 1000
    assert main(["field", str(TRUCK), "-o", str(tmp_path)]) == 2  # no magnetic circuit to plot


def test_saturation_decided_at_the_largest_continuous_current():
    # field.saturation reads the most ampere-turns the supply can drive: the largest continuous current's
    # network (coils at the low end of their resistance, the bus at the regulator's highest end), the
    # cold corner as nominal. The operating point is the magnetic circuit's at that network's own stage
    # current (the circuit's Ampère's-law solve is checked against brentq on the B-H curve above); the
    # current is read off the solved network here, independently of the field view.
    a, vs = check(load_drawing(COACH))
    s = a.drawing.stages[0]
    circ = circuit_of(s.coil)
    i_worst = abs(a.worst.largest_current_solution.current[s.id]) * s.coil_current_factor
    i_cold = abs(a.corners["cold"].solution.current[s.id]) * s.coil_current_factor
    v = verdict(vs, "field.saturation", s.id)
    # rel 1e-9: the same law at the same current: round-off only
    assert v.value == pytest.approx(circ.iron_flux_density(circ.gap_flux_density(s.coil.turns * i_worst)), rel=1e-9)
    assert v.worst.nominal_value == pytest.approx(
        circ.iron_flux_density(circ.gap_flux_density(s.coil.turns * i_cold)), rel=1e-9
    )
    assert i_worst > i_cold and v.value > v.worst.nominal_value
    assert v.corner == "largest current" and v.worst.deciding


@settings(max_examples=100, deadline=None)
@given(
    st.lists(st.one_of(st.just(0.0), st.floats(1e-3, 5e5), st.floats(-5e5, -1e-3)), min_size=1, max_size=40),
    st.sampled_from(["steel-1010", "aisi-1008"]),
    st.floats(0.5, 2.0),
)
def test_flux_density_over_an_array_is_the_root_scipy_finds(nis, curve, area_ratio):
    # The array form (numpy.interp on the mmf's knots) against the same independent reference as the
    # scalar solve above, scipy.optimize.brentq on mmf(B) = NI (abs 1e-12 T: round-off of two solves).
    m = MagneticCircuit(200, 60e-4 * area_ratio, 2, 1.5e-3, 0.25, 60e-4, tables.bh_curve(curve))
    got = m.gap_flux_density_array(np.array(nis))
    for ni, b in zip(nis, got, strict=True):
        if ni == 0:
            assert b == 0.0
            continue
        assert b == pytest.approx(np.sign(ni) * _brentq_root(m, abs(ni)), abs=1e-12)


def _brentq_root(m: MagneticCircuit, ni: float) -> float:
    hi = MU0 * ni / (m.gaps * m.gap)
    return brentq(lambda x: m.mmf(x) - ni, 0.0, hi, xtol=1e-15, rtol=4 * np.finfo(float).eps)
