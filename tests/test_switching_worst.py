"""The switch-off that breaks the most: each switching rule decided there, the cold corner as nominal.

The largest break is the largest continuous current's state (coils cold at the low end of their
resistance tolerance, the bus at the regulator's highest end) with the coils' inductance at the high
end of its tolerance: the most current, the most stored energy ½LI² and the slowest decay L/R at once.
The figures are checked here against the network's DC solve (an independent path: the switching
figures come from the RL system's steady state) and against the closed-form decay through a constant
clamp voltage, written out in the test.
"""

from __future__ import annotations

import math

import pytest

from coilstage import check
from coilstage.analysis.circuit import element_resistance
from coilstage.analysis.conditions import LARGEST
from coilstage.checks import Status
from coilstage.drawing.load import parse_drawing

from .conftest import COACH, TRUCK

#: the shipped tolerance defaults the largest break takes (coilstage/data/tolerance_defaults.toml):
#: coil resistance -5 % (a solenoid maker's FAQ), inductance +20 % (from memory, not confirmed)
R_LOW, L_HIGH = -0.05, 0.20


def verdict(vs, rule: str, subject: str):
    return next(v for v in vs if v.rule == rule and v.subject == subject)


def closed_form_decay(i0: float, r: float, inductance: float, u0: float, fraction: float) -> tuple[float, float]:
    """Release time to ``fraction``·I0 and the energy a constant clamp U0 takes (first-order RL decay,
    i(t) = (I0 + U0/R) e^{-t/τ} - U0/R, τ = L/R; energy U0·∫i dt up to the zero crossing t0 =
    τ ln(1 + I0 R/U0); a textbook result, written out here apart from physics.transient)."""
    tau = inductance / r
    k = u0 / r
    t_release = tau * math.log((i0 + k) / (fraction * i0 + k))
    t0 = tau * math.log(1 + i0 / k)
    charge = (i0 + k) * tau * (1 - math.exp(-t0 / tau)) - k * t0
    return t_release, u0 * charge


@pytest.mark.parametrize("path", [COACH, TRUCK], ids=["coach", "truck"])
def test_largest_break_figures_against_the_dc_solve_and_the_closed_form(path):
    a, vs = check(parse_drawing(path.read_text(), str(path)))
    b = a.worst.largest_break
    sol = a.worst.largest_current_solution
    frac = a.drawing.switching.release_fraction
    for st in a.drawing.stages:
        fig = a.switching.stages[LARGEST][st.id]
        i0 = abs(sol.current[st.id])
        # rel 1e-6: the RL system's steady state and the DC solve of one network (round-off and the
        # RL system's own conditioning)
        assert fig.i_break == pytest.approx(i0, rel=1e-6)
        r = element_resistance(st, b.temperatures[st.id]) * (1 + R_LOW)
        inductance = st.inductance * (1 + L_HIGH)
        # rel 1e-12: the same quotient, round-off only
        assert fig.tau == pytest.approx(inductance / r, rel=1e-12)
        assert fig.stored_energy == pytest.approx(0.5 * inductance * i0 * i0, rel=1e-6)
        sup = st.suppression
        if sup.kind in ("diode", "diode_zener") and sup.r_series == 0:
            t_rel, energy = closed_form_decay(i0, r, inductance, sup.u0, frac)
            assert fig.decay.t_release == pytest.approx(t_rel, rel=1e-6)
            assert fig.decay.e_suppressor == pytest.approx(energy, rel=1e-6)
        cold = a.switching.stages["cold"][st.id]
        assert fig.i_break > cold.i_break and fig.tau > cold.tau and fig.stored_energy > cold.stored_energy
        rel = verdict(vs, "stage.release_time", st.id)
        assert rel.corner == LARGEST and rel.value == pytest.approx(fig.decay.t_release * 1e3, rel=1e-12)
        assert rel.worst.nominal_value == pytest.approx(cold.decay.t_release * 1e3, rel=1e-12)


def test_suppressor_energy_between_nominal_and_largest_break_fails():
    # Failed to be caught before: with the energy rating between the cold corner's energy per break and
    # the largest break's, the rule passed on the cold corner's nominal network.
    a, _ = check(parse_drawing(COACH.read_text(), str(COACH)))
    s = a.drawing.stages[0]
    e_cold = a.switching.stages["cold"][s.id].decay.e_suppressor
    e_big = a.switching.stages[LARGEST][s.id].decay.e_suppressor
    assert e_big > 1.2 * e_cold
    rating = 0.5 * (e_cold + e_big)
    text = COACH.read_text().replace('energy_rating = "120 J"', f'energy_rating = "{rating:.3f} J"', 1)
    _, vs = check(parse_drawing(text, "coach with a smaller suppressor"))
    v = verdict(vs, "suppressor.rating", f"{s.id} energy")
    assert v.status is Status.FAIL and v.worst.nominal_status is Status.PASS
    assert v.note.startswith("pass nominally, FAIL at the largest current")
    assert "inductance +20%" in v.note  # the deciding tolerances are named


def test_release_limit_between_nominal_and_largest_break_fails():
    a, _ = check(parse_drawing(TRUCK.read_text(), str(TRUCK)))
    s = a.drawing.stages[0]
    t_cold = a.switching.stages["cold"][s.id].decay.t_release
    t_big = a.switching.stages[LARGEST][s.id].decay.t_release
    limit = 0.5 * (t_cold + t_big)
    text = TRUCK.read_text().replace('release_limit = "0.5 s"', f'release_limit = "{limit:.4f} s"', 1)
    _, vs = check(parse_drawing(text, "truck with a tighter release limit"))
    v = verdict(vs, "stage.release_time", s.id)
    assert v.status is Status.FAIL and v.worst.nominal_status is Status.PASS


def test_inductance_tolerance_is_read_from_the_drawing():
    # A drawing's own inductance tolerance moves the largest break's L/R: +0 % leaves it at the
    # resistance tolerance's 1/0.95.
    assert "[tolerances]" not in TRUCK.read_text()
    text = TRUCK.read_text() + '\n[tolerances]\ncoil_inductance = "0 %"\n'
    a, _ = check(parse_drawing(text, "truck, exact inductance"))
    st = a.drawing.stages[0]
    fig = a.switching.stages[LARGEST][st.id]
    r = element_resistance(st, a.worst.largest_break.temperatures[st.id]) * (1 + R_LOW)
    assert fig.tau == pytest.approx(st.inductance / r, rel=1e-12)


def test_relay_voltage_rating_carries_the_regulated_bus_as_nominal():
    # In service the opening contact sees the bus plus the suppressor's clamp: decided at the highest
    # voltage (the coach's 32 V code F maximum, ISO 16750-2 Table 2), the cold corner's regulated bus
    # beside it. Margin convention (rating - need)/need on the figures read off the analysis here.
    a, vs = check(parse_drawing(COACH.read_text(), str(COACH)))
    v = verdict(vs, "relay.voltage_rating", "K1")
    fig = a.contacts.relays["K1"]
    need = a.corners["cold"].bus_voltage + fig.suppressor_voltage
    # rel 1e-12: the same sum and quotient, round-off only
    assert v.worst.nominal_margin == pytest.approx((110.0 - need) / need, rel=1e-12)  # 110 V contactors
    assert v.corner == "highest voltage" and v.limit == pytest.approx(32.0 + fig.suppressor_voltage, rel=1e-12)
