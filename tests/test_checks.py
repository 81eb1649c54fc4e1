"""Rules and the corner solution against hand-worked values (sources beside each check)."""

from __future__ import annotations

import pytest

from coilstage import check
from coilstage.analysis.circuit import element_resistance
from coilstage.analysis.materials import metal
from coilstage.checks import Status
from coilstage.checks.base import Verdict
from coilstage.drawing.load import load_drawing, parse_drawing

from .conftest import FLAWED, drawing_text


def verdict(verdicts, rule, subject) -> Verdict:
    return next(v for v in verdicts if v.rule == rule and v.subject == subject)


def test_single_stage_series_circuit_by_hand():
    # One stage, cold corner: the bus is held at 28.0 + 0.3 V; every element is in series, so
    # I = U / sum(R) (Ohm's law), each cable R = r20 x length x (1 + alpha (t - 20)), t = -30 degC.
    # r20 from the ISO 6722-1 table (from memory): 35 mm^2 0.527, 10 mm^2 1.82 mOhm/m.
    d = parse_drawing(drawing_text(stages=1), "x")
    a, _ = check(d)
    k = 1 + metal("copper").alpha20 * (-30 - 20)
    r_total = (
        0.2e-3  # main fuse
        + 0.527e-3 * 3 * k  # main feed
        + 0.5e-3  # relay contact
        + 1.82e-3 * 2 * k  # branch
        + 1.0 * k  # coil, 1.0 ohm at 20 degC
        + 1.82e-3 * 1 * k  # branch return
        + 0.527e-3 * 3 * k  # main return
    )
    i = 28.3 / r_total
    stage = a.corners["cold"].stages[0]
    # rel 1e-12: the series circuit worked above is the whole network: round-off only
    assert stage.current == pytest.approx(i, rel=1e-12)
    assert stage.terminal_voltage == pytest.approx(i * 1.0 * k, rel=1e-12)
    assert stage.ampere_turns == pytest.approx(150 * i, rel=1e-12)
    # rel 1e-12: as above
    assert stage.stored_energy == pytest.approx(0.5 * 0.05 * i * i, rel=1e-12)


def test_prospective_fault_current_by_hand():
    # Short from the main fuse's load terminal to the negative: battery 28.3 V behind 8 mOhm, the
    # alternator at its 100 A limit, the 20 A base load, 0.2 mOhm fuse. KCL at B+ (Millman):
    # V = (E/Rb + I_alt - I_base) / (1/Rb + 1/R_fuse); I_fault = V / R_fuse.
    d = parse_drawing(drawing_text(stages=1), "x")
    a, verdicts = check(d)
    v = (28.3 / 0.008 + 100 - 20) / (1 / 0.008 + 1 / 0.0002)
    # rel 1e-9: the nodal formula above against the network solve: round-off only
    assert a.fault_current["FM"] == pytest.approx(v / 0.0002, rel=1e-9)
    assert verdict(verdicts, "fuse.breaking_capacity", "FM").status is Status.PASS  # 20 kA given


def test_twelve_volt_relay_on_24v_bus_fails():
    text = drawing_text().replace('rating_24v = "150 A"', 'rating_12v = "150 A"', 1)
    _, verdicts = check(parse_drawing(text, "x"))
    v = verdict(verdicts, "relay.contact_rating", "K0")
    assert v.status is Status.FAIL and "12 V" in v.note
    assert verdict(verdicts, "relay.contact_rating", "K1").status is Status.PASS


def test_relay_derating_interpolates_and_max_ambient_fails():
    # Linear derating between the rated ambient (85 degC given in the generator, zone 60 degC) would
    # not apply; move the rating point down to 25 degC with 50 % at 85 degC: at 60 degC, 1 - 0.5 x 35/60.
    text = drawing_text(stages=1).replace(
        'rated_ambient = "85 degC"', 'rated_ambient = "25 degC"\nderating = "50 % @ 85 degC"'
    )
    _, verdicts = check(parse_drawing(text, "x"))
    v = verdict(verdicts, "relay.contact_rating", "K0")
    # rel 1e-12: the rule's limit is this expression: round-off only
    assert v.limit == pytest.approx(150 * (1 - 0.5 * 35 / 60), rel=1e-12)
    text2 = drawing_text(stages=1).replace('rated_ambient = "85 degC"', 'max_ambient = "55 degC"')
    _, verdicts = check(parse_drawing(text2, "x"))
    assert verdict(verdicts, "relay.contact_rating", "K0").status is Status.FAIL


def _fuse_on_branch(rating: str) -> str:
    # a type E blade fuse in stage 0's branch; its series is 20, 30, 40, 50, 60, 70, 80 A
    return (
        drawing_text(stages=1, branch="6 mm^2").replace(
            'id = "K0"\nkind = "relay"\nfrom = "DIST"',
            'id = "K0"\nkind = "relay"\nfrom = "FX"',
        )
        + '[[harness]]\nid = "F0X"\nkind = "fuse"\nfrom = "DIST"\nto = "FX"\ntype = "E"\n'
        + f'rating = "{rating}"\nzone = "chassis"\n'
    )


def test_fuse_protects_cable_next_size_rule():
    # ABYC E-11: fuse <= ampacity, or the next standard size up within 150 %. The 6 mm^2 branch in a
    # 60 degC zone: between 10 AWG (70 A) and 8 AWG (90 A) in the 125 degC column, x 0.827.
    a, verdicts = check(parse_drawing(_fuse_on_branch("50 A"), "x"))
    amp = verdict(verdicts, "fuse.protects_cable", "F0X").limit
    assert 55 < amp < 70  # about 75 A x 0.827
    assert a.protected["F0X"] == ["W0"]
    status_by_rating = {}
    for rating in ("40 A", "50 A", "60 A", "70 A", "80 A", "100 A"):
        _, vs = check(parse_drawing(_fuse_on_branch(rating), "x"))
        status_by_rating[rating] = verdict(vs, "fuse.protects_cable", "F0X").status
    nxt = min(s for s in (20, 30, 40, 50, 60, 70, 80) if s > amp)
    assert status_by_rating["40 A"] is Status.PASS
    assert status_by_rating[f"{nxt} A"] is Status.PASS  # the next size up, within 150 %
    assert status_by_rating["80 A"] is Status.FAIL
    assert status_by_rating["100 A"] is Status.FAIL


def test_voltage_drop_bands_follow_the_drawing_limits():
    base = drawing_text(stages=1)
    _, vs = check(parse_drawing(base, "x"))
    f = verdict(vs, "circuit.voltage_drop", "S0").value / 100
    for lo, hi, want in ((f * 1.1, f * 2, Status.PASS), (f / 2, f * 1.1, Status.WARN), (f / 3, f / 2, Status.FAIL)):
        text = base + f"\n[limits]\nvoltage_drop_pass = {lo}\nvoltage_drop_warn = {hi}\n"
        _, vs = check(parse_drawing(text, "x"))
        assert verdict(vs, "circuit.voltage_drop", "S0").status is want


def test_fuse_continuous_uses_75_percent_of_the_rerated_rating():
    # 75 % rule (common practice, circuitprotection.ca): the 300 A main fuse rerated by the shipped (from
    # memory) curve at its zone in the worst consistent vehicle state: the largest current flows at the
    # coldest ambient, -30 degC, where the zone stated at 60 degC (at the 40 degC highest ambient) stands
    # at -10 degC; the curve between (-40, 1.12) and (25, 1.00) gives 1.12 - 0.12 x 30/65 = 1.0646 ->
    # 0.75 x 300 x 1.0646 = 239.5 A.
    _, vs = check(parse_drawing(drawing_text(), "x"))
    v = verdict(vs, "fuse.continuous", "FM")
    assert "ambient -30 °C" in v.note and "rerating at -10 °C" in v.note
    # rel 1e-12: the rule's limit is this expression: round-off only
    assert v.limit == pytest.approx(0.75 * 300 * (1.12 - 0.12 * 30 / 65), rel=1e-12)


def test_temperature_class_fail_when_zone_reaches_class():
    text = drawing_text().replace('chassis = "60 degC"', 'chassis = "130 degC"')  # class C is 125 degC
    _, vs = check(parse_drawing(text, "x"))
    v = verdict(vs, "cable.temperature_class", "WM")
    assert v.status is Status.FAIL
    assert verdict(vs, "cable.ampacity", "WM").status is Status.FAIL


def test_alternator_and_bus_rules():
    _, vs = check(parse_drawing(drawing_text(alt_idle="500 A", alt_rated="600 A"), "x"))
    assert verdict(vs, "supply.alternator", "alternator (idle)").status is Status.PASS
    _, vs = check(parse_drawing(drawing_text(alt_idle="10 A"), "x"))
    assert verdict(vs, "supply.alternator", "alternator (idle)").status is Status.WARN
    # a sagging battery (EMF 17 V, stiff load) drops the hot-corner bus below code F's 16 V
    text = drawing_text(stages=4, coil_r=[0.2] * 4, feed="10 mm^2") + '\n[corners.hot]\nbattery_emf = "17 V"\n'
    _, vs = check(parse_drawing(text, "x"))
    assert verdict(vs, "supply.bus_minimum", "bus").status is Status.FAIL


def test_not_checked_needs_a_reason():
    with pytest.raises(ValueError, match="reason"):
        Verdict("x.y", "s", Status.NOT_CHECKED, None, None, "", None, "clause", "")


def test_hot_corner_current_ratio_follows_resistance_and_bus():
    # Stage current scales as U/R(T): cold at -30 degC on a held 28.3 V bus, hot at 150 degC on a
    # sagging bus. The ratio of winding resistances is R(150)/R(-30) = 1.5109/0.8035 = 1.880 (IEC 60028
    # alpha; docs/references.md#copper-resistance-temperature, derived).
    a, _ = check(parse_drawing(drawing_text(stages=1), "x"))
    cold, hot = a.corners["cold"].stages[0], a.corners["hot"].stages[0]
    assert hot.resistance / cold.resistance == pytest.approx(1.880, abs=1e-3)
    # Ohm's law at the stage terminals ties the two corners together exactly
    ratio = (hot.current / cold.current) / (
        (hot.terminal_voltage / cold.terminal_voltage) * cold.resistance / hot.resistance
    )
    # rel 1e-12: Ohm's law holds exactly: round-off only
    assert ratio == pytest.approx(1.0, rel=1e-12)


@pytest.mark.parametrize(
    ("rule", "subject", "why"),
    # Each FLAW of configs/flawed-retrofit-24v.toml, as the README explains it.
    [
        ("fuse.breaking_capacity", "FB", "blade fuse on the battery post"),
        ("cable.temperature_class", "W-FEED", "class A cable in the engine bay"),
        ("cable.ampacity", "W-FEED", "6 mm² carrying the whole retarder"),
        ("relay.contact_rating", "K1", "12 V-only relay on a 24 V bus"),
        ("fuse.protects_cable", "F2", "80 A fuse on a 4 mm² branch"),
        ("circuit.voltage_drop", "S2", "long thin return"),
    ],
)
def test_flawed_drawing_fails_each_flaw(rule, subject, why):
    _, verdicts = check(load_drawing(FLAWED))
    assert verdict(verdicts, rule, subject).status is Status.FAIL, why


def test_element_resistance_of_a_parallel_stage():
    d = parse_drawing(drawing_text(stages=1, coil_count=3, connection="parallel"), "x")
    s = d.stages[0]
    # default rel 1e-6: three 1 ohm, 50 mH coils in parallel: round-off only
    assert element_resistance(s, 20.0) == pytest.approx(1.0 / 3)
    assert s.inductance == pytest.approx(0.05 / 3)
    assert s.coil_current_factor == pytest.approx(1 / 3)


def test_fault_currents_of_every_fuse_match_one_short_at_a_time():
    from coilstage.analysis.conditions import corner_sources

    d = load_drawing(FLAWED)
    a, _ = check(d)
    temps, src = corner_sources(d)["fault"]
    for fid, i_sc in a.fault_current.items():
        fuse = next(e for e in d.elements if e.id == fid)
        direct = a.circuit.solve(temps, src, short_at=fuse.b).fault_current
        # rel 1e-9: the analysis' fault current against a direct solve with the short: round-off only
        assert i_sc == pytest.approx(abs(direct), rel=1e-9)


def test_cold_duty_from_one_factorisation_matches_a_solve_per_state():
    # Independent: a full DC solve for each state (all stages on; each stage alone, the others opened
    # by a 1 TΩ resistance), taking the largest current of each element.
    from coilstage.analysis.circuit import Circuit
    from coilstage.analysis.conditions import corner_sources
    from coilstage.analysis.corners import cold_duty
    from coilstage.analysis.linear import CaseNetwork

    for d in (load_drawing(FLAWED), parse_drawing(drawing_text(stages=3, feed="6 mm^2"), "x")):
        circuit = Circuit(d)
        temps, src = corner_sources(d)["cold"]
        ours, where = cold_duty(CaseNetwork(circuit, temps, src))
        ids = [s.id for s in d.stages]
        sols = [circuit.solve(temps, src)] + [
            circuit.solve(temps, src, overrides={x: 1e12 for x in ids if x != k}) for k in ids
        ]
        for e in d.elements:
            ref = max(abs(s.current[e.id]) for s in sols)
            # 1e-9 A: separate LU solves, and 1e12 ohm standing for an open stage (3e-11 A apart here)
            assert ours[e.id] == pytest.approx(ref, rel=1e-9, abs=1e-9), e.id
        assert where["WM" if "WM" in where else "W-FEED"] == "all stages"
