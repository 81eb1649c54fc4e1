"""The figures the switching, joint, cable and heating rules compare are made by the analysis, once,
and read by the rules: here each is held to a value worked out independently of the code that made it
(by hand from the law it rests on, or by numpy / scipy), on the demo drawings."""

from __future__ import annotations

import math

import pytest

from coilstage.analysis.run import analyse
from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.drawing.schema import Joint, Relay

from .conftest import COACH, FLAWED, TRUCK
from .test_joints import with_lug

#: copper's temperature coefficient of resistance at 20 °C, IEC 60028 (1/234.5 K)
ALPHA_CU = 0.00393


@pytest.fixture(scope="module", params=[COACH, TRUCK, FLAWED, "lug"], ids=["coach", "truck", "flawed", "lug"])
def analysed(request):
    """Each demo, and the coach with a 0.2 mohm lug J1 on W1 (a joint with a shipped degraded resistance)."""
    if request.param == "lug":
        return analyse(parse_drawing(with_lug(), "lug"))
    return analyse(load_drawing(request.param))


def test_the_load_a_contact_breaks_is_ohms_law_on_the_cold_bus(analysed):
    """R_load = U_bus / I_break (Ohm's law), U_bus the cold corner's bus, I_break the sum of the
    switched stages' cold break currents (summed here from the switching result)."""
    a = analysed
    cold = a.switching.stages["cold"]
    for r in a.drawing.of_kind(Relay):
        fig = a.contacts.relays[r.id]
        ids = a.switched.get(r.id, [])
        if not ids:
            assert fig.load_resistance is None and fig.dump is None
            continue
        i_b = sum(cold[s].i_break for s in ids)
        assert fig.i_break == pytest.approx(i_b, rel=1e-12)
        assert fig.load_resistance == pytest.approx(a.corners["cold"].bus_voltage / i_b, rel=1e-12)
        assert fig.dump.load_resistance == fig.load_resistance


def test_the_coil_pickup_is_the_same_ampere_turns_at_the_hot_coil(analysed):
    """Hand-worked: R(T) = R_ref (1 + α (T − 20)) / (1 + α (T_ref − 20)) with copper's α (IEC 60028);
    U_need = U_op R(T)/R_ref; U_have = U_bus R(T)/(R(T) + R_feed) (a voltage divider)."""
    a = analysed
    for r in a.drawing.of_kind(Relay):
        fig = a.contacts.relays[r.id]
        if r.coil is None:
            assert fig.pickup_hot is None and fig.coil is None
            continue
        c = r.coil
        t = r.zone_temperature + c.rise
        rt = c.r_ref * (1 + ALPHA_CU * (t - 20.0)) / (1 + ALPHA_CU * (c.t_ref - 20.0))
        for x, bus in (
            (fig.pickup_hot, a.corners["hot"].bus_voltage),
            (fig.pickup_lowest, a.worst.lowest_bus.bus_voltage),
        ):
            assert x.temperature == t and x.bus == bus
            assert x.resistance == pytest.approx(rt, rel=2e-3)  # α rounded to 3 figures here
            assert x.need == pytest.approx(c.operate_voltage * rt / c.r_ref, rel=2e-3)
            assert x.have == pytest.approx(bus * rt / (rt + c.feed_resistance), rel=2e-3)


def test_the_arc_estimate_is_bus_power_over_the_opening_plus_the_stored_energy(analysed):
    """E ≈ U_bus·I·t_open + ½LI² (common practice, an estimate) at the normal and the slowest release."""
    a = analysed
    for r in a.drawing.of_kind(Relay):
        fig = a.contacts.relays[r.id]
        if fig.arc_slowed is None:
            continue
        for arc, t in ((fig.arc_normal, fig.opening.release), (fig.arc_slowed, fig.opening.release_slowest)):
            assert arc.energy == pytest.approx(a.contacts.highest_bus * fig.i_break * t + fig.stored_energy)


def test_joint_heat_is_joules_law(analysed):
    """P = I²R (Joule's law), at the nominal and the largest continuous current."""
    a = analysed
    for j in a.drawing.of_kind(Joint):
        fig = a.joints[j.id]
        if fig.current is None:
            assert fig.heat_nominal is None
            continue
        assert fig.heat_nominal == pytest.approx(fig.current.nominal**2 * j.resistance, rel=1e-12)
        assert fig.heat_worst == pytest.approx(fig.current.worst**2 * j.resistance, rel=1e-12)
        if fig.degraded is not None:
            assert fig.degraded[0] > j.resistance
            assert fig.heat_degraded == pytest.approx(fig.current.worst**2 * fig.degraded[0], rel=1e-12)


def test_some_drawing_has_each_figure():
    """The tests above are not empty: across the drawings there is a switched relay, a coil, a joint
    with a current and a degraded resistance."""
    seen = set()
    for a in (analyse(load_drawing(p)) for p in (COACH, TRUCK, FLAWED)):
        seen |= {"load" for f in a.contacts.relays.values() if f.load_resistance is not None}
        seen |= {"coil" for f in a.contacts.relays.values() if f.pickup_hot is not None}
        assert math.isfinite(a.contacts.highest_bus)
    lug = analyse(parse_drawing(with_lug(), "lug")).joints["J1"]
    assert lug.heat_nominal is not None and lug.heat_degraded is not None
    assert seen == {"load", "coil"}


def test_the_drop_at_the_largest_current_is_read_off_its_solution(analysed):
    """Each stage's drop at the largest continuous current: the battery terminals' voltage less the
    stage's terminal voltage, read here straight off that network solution (node voltages), and as a
    share of the nominal system voltage."""
    a = analysed
    d = a.drawing
    sol = a.worst.largest_current_solution
    assert sol is not None
    v_bus = sol.v[d.supply.battery.node] - sol.v[d.supply.negative_node]
    assert set(a.largest_current_stages.stages) == {s.id for s in d.stages}
    for s in d.stages:
        x = a.largest_current_stages.stages[s.id]
        drop = v_bus - (sol.v[s.a] - sol.v[s.b])
        assert x.drop == pytest.approx(drop, rel=1e-12, abs=1e-12)
        assert x.drop_fraction == pytest.approx(drop / d.supply.system_voltage, rel=1e-12, abs=1e-12)


def test_the_fuse_duty_is_miners_sum_and_follows_the_duty():
    """Miner's linear sum Σ dt / t_min(I) (common practice, no source): under a constant current I the
    share used is the duration over t_min(I) (hand-worked from the sum); a copy of the analysis with
    another duty simulation (as sizing makes one) carries the figures of that simulation."""
    import dataclasses

    import numpy as np

    from coilstage import tables
    from coilstage.analysis.fuse_duty import FuseDuty
    from coilstage.drawing.schema import Fuse

    a = analyse(load_drawing(COACH))
    r = a.descent
    assert r is not None
    fuses = [f for f in a.drawing.of_kind(Fuse) if f.gates]
    assert fuses and all(isinstance(a.fuse_duty[f.id], FuseDuty) for f in fuses)
    currents = dict(r.device_current)
    expect = {}
    for f in fuses:
        g = tables.FuseGates(f.gates, f.gates_source)
        carry = f.rating * tables.fuse_rerating(f.zone_temperature)
        m = next(x for x in (1.5, 2.0, 3.0, 5.0) if np.isfinite(g.t_min(x)))  # a current on the gate
        currents[f.id] = np.full_like(r.t, m * carry)
        expect[f.id] = (float(r.t[-1] - r.t[0]) / g.t_min(m), m * carry)
    b = dataclasses.replace(a, descent=dataclasses.replace(r, device_current=currents))
    for f in fuses:
        fd = b.fuse_duty[f.id]
        assert fd.used == pytest.approx(expect[f.id][0], rel=1e-9)
        assert fd.peak == pytest.approx(expect[f.id][1], rel=1e-12)
        assert a.fuse_duty[f.id].used != pytest.approx(fd.used)  # the original keeps its own
    assert dataclasses.replace(a, descent=None).fuse_duty == {}


def test_the_relay_contact_rating_is_derated_linearly_above_its_rated_ambient():
    """Hand-worked linear derating: 100 % up to the 25 °C rated ambient, 80 % at 85 °C, so at a 55 °C
    zone 1 + (0.8 - 1)(55 - 25)/(85 - 25) = 0.9 of the rating; above the highest ambient none; with no
    derating given the stated rating, a pass held to a warning."""
    import dataclasses

    from coilstage.analysis.ratings import relay_contact

    a = analyse(load_drawing(COACH))
    r = a.drawing.of_kind(Relay)[0]
    base = dataclasses.replace(r, rating_24v=100.0, rated_ambient=25.0, max_ambient=None, zone_temperature=55.0)
    x = relay_contact(dataclasses.replace(base, derated=(0.8, 85.0)), 24)
    assert (x.rating, x.factor, x.held_to_warn) == (100.0, pytest.approx(0.9), False)
    assert x.limit == pytest.approx(90.0)
    y = relay_contact(dataclasses.replace(base, derated=None), 24)
    assert (y.limit, y.held_to_warn) == (100.0, True)
    z = relay_contact(dataclasses.replace(base, max_ambient=50.0), 24)
    assert z.factor is None and z.limit is None and "highest ambient" in z.factor_words
    assert relay_contact(dataclasses.replace(base, rating_24v=None, rating_12v=50.0), 24).limit is None
    # the sweep's figures are those of the relay with its zone at each ambient of the sweep
    sw = a.worst.duty_sweep
    for j, rc in enumerate(a.ratings.relay_contacts_sweep["worst"][r.id]):
        assert rc == relay_contact(dataclasses.replace(r, zone_temperature=sw.zone(r.zone_temperature, j)), 24)
