"""Rules decided at their own worst case, each against a hand calculation or a brute-force reference
beside it: the smallest far-end fault and its clearing time, the consistent vehicle state of the duty
rules, the braking retained at the lowest bus."""

from __future__ import annotations

import math

import pytest

from coilstage import tables
from coilstage.analysis.run import analyse
from coilstage.checks import cables, field, fuse_timing
from coilstage.drawing.load import load_drawing
from coilstage.drawing.schema import Fuse

COACH = "configs/coach-24v-4stage.toml"
TRUCK = "configs/light-truck-12v-2stage.toml"
ALPHA_CU = 0.00393  # IEC 60028 annealed copper, 1/K at 20 °C


def _rules_verdicts(a):
    """The verdicts of the rules under test, straight from their rule functions (what each rule decides
    at its own worst case, before any search over the declared tolerances is laid over it)."""
    return {(v.rule, v.subject): v for mod in (cables, field, fuse_timing) for r in mod.RULES for v in r.evaluate(a)}


def _checked(path: str):
    a = analyse(load_drawing(path), switching=False, heating=False)
    return a, _rules_verdicts(a)


@pytest.fixture(scope="module")
def coach():
    return _checked(COACH)


@pytest.fixture(scope="module")
def truck():
    return _checked(TRUCK)


#: as-routed length over the drawing's, the long end of the shipped default (+10 %, common practice)
LENGTH_HIGH = 1.10


def _r_cable(d, cid: str, theta: float) -> float:
    """R = R'20 · length · 1.10 · (1 + α(θ − 20)) with the drawing's ISO 6722 R'20 (an input, not a
    result) and the cable at the long end of its length tolerance."""
    c = next(e for e in d.elements if e.id == cid)
    return c.r20_per_m * c.length * LENGTH_HIGH * (1 + ALPHA_CU * (theta - 20.0))


def _by_id(d, eid: str):
    return next(e for e in d.elements if e.id == eid)


def _hand_far_end_main(a) -> float:
    """The coach's (and the truck's) main-feed far-end fault at the smallest fault, by Ohm's law.

    Circuit (alternator off, so W-ALT carries nothing): battery EMF E behind R_b; the base load a
    constant current I_0 at the battery terminals; B+ → F-MAIN → W-MAIN → DIST. At DIST the fault
    R_f to CHASSIS, then W-STRAP to B-; in parallel the stage branches (fuse, contact, feed cable,
    stage, return cable) to GSTUD, then W-RET to B-. Cables at their zone temperature, coils at the
    lowest ambient (their largest current, which takes most from the fault). With
    R_L = R_ret + 1/Σ(1/R_k): V_D = (E − R_b I_0)/(1 + (R_b + R_main)(1/(R_f + R_s) + 1/R_L)),
    I_fault = V_D/(R_f + R_s)."""
    d = a.drawing
    sf = a.worst.smallest_fault
    e, rb, rf = sf.battery_emf, sf.battery_resistance, sf.fault_resistance
    zone = {c.id: c.zone_temperature for c in d.elements if hasattr(c, "r20_per_m")}
    r_main = _by_id(d, "F-MAIN").resistance + _r_cable(d, "W-MAIN", zone["W-MAIN"])
    # the chassis is strapped to the battery negative (coach) or is the negative itself (truck)
    r_s = _r_cable(d, "W-STRAP", zone["W-STRAP"]) if "W-STRAP" in zone else 0.0
    assert "W-STRAP" in zone or d.supply.chassis_node == d.supply.negative_node
    r_ret = _r_cable(d, "W-RET", zone["W-RET"])
    g = 0.0
    t_min = d.environment.ambient_min
    for st in d.stages:
        k = st.id[1:]
        coil = st.coil
        # R(θ) = R_ref (1 + α(θ − 20)) / (1 + α(θ_ref − 20)) (IEC 60028 linear law), times the stage's
        # coil arrangement (series count, or 1/count in parallel)
        r_stage = coil.r_ref * (1 + ALPHA_CU * (t_min - 20.0)) / (1 + ALPHA_CU * (coil.t_ref - 20.0)) * st.r_factor
        r_k = (
            _by_id(d, f"F{k}").resistance
            + _by_id(d, f"K{k}").resistance
            + _r_cable(d, f"W{k}", zone[f"W{k}"])
            + r_stage
            + _r_cable(d, f"W{k}R", zone[f"W{k}R"])
        )
        g += 1.0 / r_k
    r_l = r_ret + 1.0 / g
    v_d = (e - rb * d.supply.base_load) / (1 + (rb + r_main) * (1 / (rf + r_s) + 1 / r_l))
    return v_d / (rf + r_s)


def test_smallest_far_end_fault_of_the_coach_main_feed_by_hand(coach):
    a, _ = coach
    hand = _hand_far_end_main(a)
    # hand calculation (Ohm's law on the circuit in the docstring) against the network's Thévenin figure
    assert a.worst.smallest_fault.far_end["W-MAIN"] == pytest.approx(hand, rel=1e-3)
    # the nominal (cold, charged, 200 A alternator feeding) fault is about 3.0 kA; the smallest far below
    assert a.far_end_fault["W-MAIN"] == pytest.approx(3000, rel=0.01)
    assert hand < 0.3 * a.far_end_fault["W-MAIN"]


def test_smallest_far_end_fault_of_the_truck_main_feed_by_hand(truck):
    a, _ = truck
    assert a.worst.smallest_fault.far_end["W-MAIN"] == pytest.approx(_hand_far_end_main(a), rel=1e-3)


@pytest.mark.parametrize("which", ["coach", "truck"])
def test_short_circuit_decided_at_the_smallest_fault(which, request):
    # The old rule read the largest fault; clearing is slowest at the smallest. The clearing time is
    # read here from the fuse's own gates (shipped ISO 8820 gates, from memory) at that current.
    a, v = request.getfixturevalue(which)
    f = next(x for x in a.drawing.of_kind(Fuse) if x.id == "F-MAIN")
    i_min = a.worst.smallest_fault.far_end["W-MAIN"]
    i_nom = a.far_end_fault["W-MAIN"]
    g = tables.FuseGates(f.gates, f.gates_source)
    t_min_fault, t_nom = g.t_max(i_min / f.rating), g.t_max(i_nom / f.rating)
    assert t_min_fault > 10 * t_nom  # an order of magnitude longer at least
    verdict = v[("fuse.cable_short_circuit", "F-MAIN → W-MAIN")]
    assert verdict.corner == "smallest fault"
    sh = a.ratings.far_end_worst[("F-MAIN", "W-MAIN")]
    assert sh.current == pytest.approx(i_min)
    assert sh.clear_time == pytest.approx(t_min_fault)
    # IEC 60949 adiabatic final temperature, by hand: θf = (θi + β) exp(I²t/(K S)²) − β,
    # K = 226 A·s^½/mm², β = 234.5 K (copper; IEC 60949 rounds K, hence 0.3 %)
    c = next(x for x in a.drawing.elements if x.id == "W-MAIN")
    theta_f = (c.class_max + 234.5) * math.exp(i_min**2 * t_min_fault / (226.0 * c.area * 1e6) ** 2) - 234.5
    assert sh.theta_final == pytest.approx(theta_f, rel=3e-3)
    assert verdict.value == pytest.approx(sh.theta_final)
    assert verdict.worst.nominal_value < verdict.value
    assert "smallest fault" in verdict.note


def test_nuisance_opening_decided_at_the_largest_current(coach):
    # The old rule read the cold corner's peak. At the largest continuous current the peak scales as the
    # steady current does (linear network at a fixed switching sequence): hand ratio largest/duty.
    a, v = coach
    for fid in ("F-MAIN", "F1"):
        verdict = v[("fuse.no_nuisance_opening", fid)]
        k = a.worst.largest_current[fid] / a.duty[fid]
        assert k > 1.0
        assert verdict.corner == "largest current"
        assert verdict.value == pytest.approx(a.ratings.fuses[fid].peak_current * k)
        assert verdict.worst.nominal_value == pytest.approx(a.ratings.fuses[fid].peak_current)
        f = next(x for x in a.drawing.of_kind(Fuse) if x.id == fid)
        # limit: first gate point (1.10 x, ISO 8820 gates from memory) x rating x rerating at its zone
        assert verdict.limit == pytest.approx(1.10 * f.rating * tables.fuse_rerating(f.zone_temperature))
        assert verdict.margin < verdict.worst.nominal_margin


def _brute_force_ampacity(path: str, cid: str, coil_factor: float = 0.95, drawing=None):
    """Brute-force reference for the consistent-state sweep: for each ambient of the sweep, the drawing
    itself is changed (dataclasses.replace) so its zones stand at their stated temperature less
    (ambient_max − ambient), its cold corner is at that ambient with the bus the regulator's highest
    end there (28.2 + 0.3 V + 20 mV/K below 25 °C for the coach, by hand: set-point, tolerance and the
    shipped compensation default), its coils at −5 % (shipped tolerance default), and the nominal
    analysis is run on it. Returns (ambient, margin) of every point."""
    import dataclasses

    from coilstage.drawing.schema import Cable, Stage

    d = drawing or load_drawing(path)
    alt = d.supply.alternator
    g = 0.020 if d.supply.system_voltage == 24 else 0.010  # V/K, shipped compensation defaults (magnitude)
    lo, hi = d.environment.ambient_min, d.environment.ambient_max
    out = []
    for t in [lo + (hi - lo) * k / 8 for k in range(9)]:
        bus = alt.setpoint + alt.tolerance + g * max(25.0 - t, 0.0)
        els = []
        for e in d.elements:
            if isinstance(e, Stage):
                e = dataclasses.replace(e, coil=dataclasses.replace(e.coil, r_ref=e.coil.r_ref * coil_factor))
            elif isinstance(e, Cable):
                e = dataclasses.replace(e, zone_temperature=e.zone_temperature - (hi - t))
            els.append(e)
        dd = dataclasses.replace(
            d, elements=tuple(els), corners=dataclasses.replace(d.corners, cold_ambient=t, cold_bus=bus)
        )
        a = analyse(dd, switching=False, heating=False)
        amp = a.ratings.cables[cid].ampacity.value
        out.append((t, (amp - a.duty[cid]) / amp))
    return out


@pytest.mark.parametrize(("path", "cid"), [(COACH, "W1"), (COACH, "W-MAIN"), (COACH, "W-ALT"), (TRUCK, "W1")])
def test_ampacity_in_one_vehicle_state_against_brute_force(path, cid, request):
    # The old rule set the cold coil current against the hottest zone's derating (two states of the
    # vehicle at once). Now: the worst ambient of the sweep, the same as the brute-force loop's.
    a, v = request.getfixturevalue("coach" if path == COACH else "truck")
    ref = _brute_force_ampacity(path, cid)
    t_ref, m_ref = min(ref, key=lambda x: x[1])
    verdict = v[("cable.ampacity", cid)]
    # the alternator cable carries the alternator's fixed output in every state, so its nominal and
    # worst sweeps tie (either may be kept); its worst ambient is the hottest, the others' the coldest
    assert verdict.corner == "largest current" or cid == "W-ALT"
    assert verdict.margin == pytest.approx(m_ref, rel=1e-6, abs=1e-9)
    assert f"ambient {t_ref:g} °C" in verdict.note
    assert t_ref == (40.0 if cid == "W-ALT" else a.drawing.environment.ambient_min)
    sw = a.worst.duty_sweep
    assert sw.ambients == pytest.approx([t for t, _ in ref])
    # the old envelope's margin (cold current against the stated zone's ampacity) is not what decides
    old = (a.ratings.cables[cid].ampacity.value - a.worst.largest_current[cid]) / a.ratings.cables[cid].ampacity.value
    assert verdict.margin != pytest.approx(old, rel=1e-3) or cid == "W-ALT"


def test_braking_retained_decided_at_the_lowest_bus(coach):
    # The old rule read the hot corner (stated battery EMF 25.2 V, alternator at its full idle output).
    a, v = coach
    b = a.worst.braking
    verdict = v[("field.braking_retained", "retarder")]
    assert verdict.corner == "lowest bus"
    assert verdict.value == pytest.approx(b.ratio)
    assert verdict.worst.nominal_value == pytest.approx(a.field.ratio_corners)
    assert b.ratio < a.field.ratio_corners
    # battery by hand: 9 mOhm x exp(ln(1.5)/48 x (25 - 40)) x (1 + 0.4 x 0.5) x 1.5 (shipped defaults), at
    # the highest ambient that goes with hot coils; KVL at the battery: U = E(50 %) - R_b I_b
    r_b = 0.009 * math.exp(0.008447 * (25 - 40)) * 1.2 * 1.5
    sol = b.solution
    d = a.drawing
    u = sol.v[d.supply.battery.node] - sol.v[d.supply.negative_node]
    assert u == pytest.approx(24.48 - r_b * sol.battery_current, rel=1e-9)
    assert b.bus_voltage == pytest.approx(u, abs=1e-9)
    # a lower bus heats the windings less than the hot corner's steady state
    hot = a.conditions["hot"].temperatures
    assert all(b.solution.resistance[s.id] < hot_r for s, hot_r in ((s, _hot_r(s, hot[s.id])) for s in d.stages))


def _hot_r(stage, theta):
    """The stage's resistance at ``theta`` [°C] with +5 % tolerance (IEC 60028 linear law)."""
    c = stage.coil
    return c.r_ref * (1 + ALPHA_CU * (theta - 20.0)) / (1 + ALPHA_CU * (c.t_ref - 20.0)) * stage.r_factor * 1.05


def test_braking_ratio_without_magnetic_circuit_by_hand(truck):
    # Coils without a magnetic circuit: effort ∝ (N·I)² (same turns on every stage), so the ratio is
    # Σ I_low² / Σ I_cold² of the stage currents (hand sum over the two stages).
    a, _ = truck
    b = a.worst.braking
    cold = a.corners["cold"].solution
    num = sum(b.solution.current[s.id] ** 2 for s in a.drawing.stages)
    den = sum(cold.current[s.id] ** 2 for s in a.drawing.stages)
    assert b.ratio == pytest.approx(num / den, rel=1e-9)
    assert b.ratio < a.field.ratio_corners


def test_drawing_stated_tolerances_are_used():
    import dataclasses

    from coilstage.drawing.schema import ToleranceSpec

    d = load_drawing(COACH)
    tol = {
        "coils.RC4.resistance_tolerance": ToleranceSpec(-0.10, 0.10, "uniform", "coils.RC4.resistance_tolerance"),
        "cables.W-MAIN.length_tolerance": ToleranceSpec(0.0, 0.30, "uniform", "harness.W-MAIN.length_tolerance"),
        "supply.battery.internal_resistance": ToleranceSpec(0.006, 0.030, "uniform", "supply.battery.resistance"),
    }
    ds = dataclasses.replace(d, tolerances={**d.tolerances, **tol})
    a = analyse(ds, switching=False, heating=False)
    sf, lf = a.worst.smallest_fault, a.worst.largest_fault
    # the battery's stated range replaces the derived one at both ends
    assert sf.battery_resistance == pytest.approx(0.030)
    assert lf.battery_resistance == pytest.approx(0.006)
    # main feed at +30 % (its own row), the other cables at the harness's +10 %: the hand calculation
    # with W-MAIN's resistance scaled by 1.30/1.10
    hand = _hand_far_end_main_with(a, {"W-MAIN": 1.30})
    assert sf.far_end["W-MAIN"] == pytest.approx(hand, rel=1e-3)
    # the coil type's own -10 % decides the consistent-state sweep: brute force with 0.90 x R
    ref = _brute_force_ampacity(COACH, "W1", coil_factor=0.90, drawing=ds)
    v = _rules_verdicts(a)[("cable.ampacity", "W1")]
    assert v.margin == pytest.approx(min(m for _, m in ref), rel=1e-6)
    assert "-10%" in " ".join(v.worst.deciding)


def _hand_far_end_main_with(a, length: dict[str, float]) -> float:
    """:func:`_hand_far_end_main` with some cables at their own length factor instead of 1.10."""
    global _r_cable
    plain = _r_cable

    def scaled(d, cid, theta):
        return plain(d, cid, theta) * length.get(cid, LENGTH_HIGH) / LENGTH_HIGH

    _r_cable = scaled
    try:
        return _hand_far_end_main(a)
    finally:
        _r_cable = plain
