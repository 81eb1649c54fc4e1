"""Ground and return rule: each return lost in turn, the network re-solved without it, where the current
goes and what opens or overheats. Before this rule a lost return was never considered (every case below
passed silently). Checked by Kirchhoff's current law at the ground stud and Ohm's law across the open
return on the re-solved network, and by hand on a small harness."""

from __future__ import annotations

import numpy as np
import pytest

from coilstage import check
from coilstage.analysis.ground import OPEN_RESISTANCE, lose_return, returns
from coilstage.checks import Status
from coilstage.checks.ground import LOST_RETURN
from coilstage.drawing.load import parse_drawing

from .conftest import COACH, drawing_text

COACH_TEXT = COACH.read_text(encoding="utf-8")
CHASSIS_PATH = '\n[[harness]]\nid = "G-BODY"\nkind = "ground"\nfrom = "GSTUD"\nto = "CHASSIS"\nresistance = "{r}"\n'


def analysed(text: str):
    a, _ = check(parse_drawing(text, "case"))
    return a


def one(a, subject):
    (v,) = [v for v in LOST_RETURN.evaluate(a) if v.subject == subject]
    return v


def test_a_stage_return_lost_drops_the_stage_out():
    # Coach W1R (S1's return) lost: no other path, S1's current falls to nothing (its braking drops out),
    # and the open return stands at the branch voltage (S1- floats up to S1+: no current, no drop).
    a = analysed(COACH_TEXT)
    v = one(a, "W1R")
    # it fails safe: nothing else takes the current, only S1's braking is lost
    assert v.status is Status.PASS and "S1 53.5 -> 0.0 A" in v.note and "fails safe" in v.note
    cold = a.conditions["cold"]
    lr = lose_return(a.drawing, "W1R", cold.temperatures, cold.sources)
    sol = lr.solution
    assert abs(sol.current["S1"]) < 1e-6
    # abs 1e-6 V: the gap voltage and the solution come by different routes (the lost return an
    # OPEN_RESISTANCE): 1.5e-8 V apart here
    assert lr.gap_voltage == pytest.approx(sol.v["S1+"] - sol.v["GSTUD"], abs=1e-6)
    assert {e.id for e in returns(a.drawing)} >= {"W1R", "W2R", "W3R", "W4R", "W-RET", "W-STRAP"}


def test_shared_return_lost_goes_through_the_chassis_and_strap():
    # With the ground stud also bolted to the body (a 2 mohm chassis path), losing W-RET sends the stages'
    # current through the body and the battery strap W-STRAP. Kirchhoff's current law at GSTUD: the
    # chassis path carries what the four stage returns bring; Ohm's law: the open W-RET stands at
    # I x (R_body + R_strap).
    a = analysed(COACH_TEXT + CHASSIS_PATH.format(r="2 mohm"))
    cold = a.conditions["cold"]
    lr = lose_return(a.drawing, "W-RET", cold.temperatures, cold.sources)
    s = lr.solution
    into_stud = sum(s.current[k] for k in ("W1R", "W2R", "W3R", "W4R"))
    # rel 1e-6: KCL at the stud and Ohm's law on the solution; the lost return is OPEN_RESISTANCE, not
    # open (2e-12 apart here)
    assert s.current["G-BODY"] == pytest.approx(into_stud, rel=1e-6)
    assert s.current["W-STRAP"] == pytest.approx(into_stud, rel=1e-6)
    i = s.current["G-BODY"]
    # rel 1e-6: as above
    assert lr.gap_voltage == pytest.approx(i * (s.resistance["G-BODY"] + s.resistance["W-STRAP"]), rel=1e-6)
    v = one(a, "W-RET")
    assert "G-BODY" in v.note and "W-STRAP" in v.note
    # the 95 mm^2 strap carries it within its ampacity; the body path has no rating in the drawing: WARN
    assert s.current["W-STRAP"] < a.ratings.cables["W-STRAP"].ampacity.value
    assert v.status is Status.WARN and "G-BODY (" in v.note and "no rating" in v.note
    # A 6 mm^2 strap cannot carry the four stages: the loss pushes it over its ampacity (33 CFR 183.425)
    thin = COACH_TEXT.replace('size = "95 mm^2"\nlength = "0.6 m"', 'size = "6 mm^2"\nlength = "0.6 m"')
    assert thin != COACH_TEXT
    v = one(analysed(thin + CHASSIS_PATH.format(r="2 mohm")), "W-RET")
    assert v.status is Status.FAIL and "the loss pushes W-STRAP overheats" in v.note


def test_battery_strap_lost_leaves_body_shorts_uncleared():
    # W-STRAP carries nothing in service; lost, a short to the body has no way back: WARN, saying so.
    v = one(analysed(COACH_TEXT), "W-STRAP")
    assert v.status is Status.WARN and "short to the body" in v.note


def test_lost_return_by_hand_on_two_stages():
    # Generated 24 V harness: two stages on a 35 mm^2 feed, each with its own return to a stud, the stud to
    # B- by its return cable. Independent check: the intact and broken networks solved by numpy.linalg on
    # the nodal equations written out here (the held bus of the cold corner as an ideal source).
    a = analysed(drawing_text(stages=2))
    cold = a.conditions["cold"]
    d = a.drawing
    ret = [e.id for e in returns(d) if e.a.startswith("S") or e.b.startswith("S")]
    lost = ret[0]
    lr = lose_return(d, lost, cold.temperatures, cold.sources)
    s = lr.solution
    nodes = sorted({n for e in d.elements for n in (e.a, e.b)} | {d.supply.negative_node, d.supply.battery.node})
    idx = {n: k for k, n in enumerate(nodes)}
    g = np.zeros((len(nodes), len(nodes)))
    for e in d.elements:
        r = OPEN_RESISTANCE if e.id == lost else s.resistance[e.id]
        i, j = idx[e.a], idx[e.b]
        for p, q in ((i, i), (j, j)):
            g[p, q] += 1 / r
        g[i, j] -= 1 / r
        g[j, i] -= 1 / r
    # fix B- at 0 and B+ at the held bus; other loads and sources as the solution's currents
    fixed = {d.supply.negative_node: s.v[d.supply.negative_node], d.supply.battery.node: s.v[d.supply.battery.node]}
    inj = np.zeros(len(nodes))
    if d.supply.base_load > 0 and d.supply.base_load_node in idx:
        inj[idx[d.supply.base_load_node]] -= d.supply.base_load
    if d.supply.alternator is not None and d.supply.alternator.node in idx:
        inj[idx[d.supply.alternator.node]] += s.alternator_current
    free = [n for n in nodes if n not in fixed]
    fi = [idx[n] for n in free]
    xi = [idx[n] for n in fixed]
    vx = np.array([fixed[n] for n in fixed])
    vf = np.linalg.solve(g[np.ix_(fi, fi)], inj[fi] - g[np.ix_(fi, xi)] @ vx)
    for n, v in zip(free, vf, strict=True):
        # abs 1e-6 V: numpy.linalg.solve against the package's solve of the same system, round-off only (3e-14 V here)
        assert s.v[n] == pytest.approx(v, abs=1e-6), n
    assert lr.stages and lr.stages[0].after < 1e-6


def test_lost_return_boundary_at_a_relays_rating():
    # Flawed retrofit, W2R lost: K3 and K4 go from 59.5 A to about 60.5 A against their 60 A rating, so the
    # loss pushes them over (FAIL). Their rating 0.1 % above / below the rerouted current: WARN (K1 has only
    # a 12 V rating, a part with no rating here) / FAIL.
    from .conftest import FLAWED

    text = FLAWED.read_text(encoding="utf-8")
    a = analysed(text)
    cold = a.conditions["cold"]
    lr = lose_return(a.drawing, "W2R", cold.temperatures, cold.sources)
    i = max(abs(lr.solution.current[k]) for k in ("K3", "K4"))
    assert one(a, "W2R").status is Status.FAIL and "K3 runs above its contact rating" in one(a, "W2R").note
    for k, want in ((1.001, Status.WARN), (0.999, Status.FAIL)):
        t = text
        for rid in ("K3", "K4"):
            s = t.index(f'id = "{rid}"')
            e = t.index("[[harness]]", s)
            t = t[:s] + t[s:e].replace('rating_24v = "60 A"', f'rating_24v = "{k * i:.4f} A"') + t[e:]
        assert one(analysed(t), "W2R").status is want, k


def test_returns_lost_by_rank_one_updates_equal_a_fresh_dense_solve(monkeypatch):
    """Above LOW_RANK_ABOVE unknowns every return is lost on one factorisation of the intact network
    (Sherman–Morrison, refined): each broken network's node voltages and element currents equal the
    broken network assembled afresh (mna_matrix with the return at OPEN_RESISTANCE) and solved by
    numpy.linalg.solve, and the verdict's figures those of a fresh Circuit.solve (lose_return)."""
    from coilstage.analysis import ground
    from coilstage.analysis.circuit import Circuit
    from coilstage.physics.network import Branches, mna_matrix

    a = analysed(drawing_text(stages=20, coil_r=[0.9 + 0.02 * k for k in range(20)]))
    d = a.drawing
    cold = a.conditions["cold"]
    circuit = Circuit(d)
    ids = [g.id for g in returns(d)]
    vs = circuit.network_rows(cold.temperatures, cold.sources, None)[1]
    assert len(circuit.nodes) - 1 + len(vs) > ground.LOW_RANK_ABOVE
    fresh = []
    real = ground.lose_return
    monkeypatch.setattr(ground, "lose_return", lambda d, i, *args: fresh.append(i) or real(d, i, *args))
    got = ground.lose_returns(d, ids, cold.temperatures, cold.sources, a.corners["cold"].solution)
    # every return here has a parallel path: the update serves each (a fresh solve only where its
    # residual is not at round-off)
    assert not fresh, fresh
    for i in ids:
        lr = got[i]
        rows = circuit.network_rows(cold.temperatures, cold.sources, {i: OPEN_RESISTANCE})
        r, c, v, rhs, n = mna_matrix(
            len(circuit.nodes), Branches.of(rows[0]), Branches.of(rows[1]), Branches.of(rows[3])
        )
        dense = np.zeros((len(rhs), len(rhs)))
        np.add.at(dense, (r, c), v)
        x = np.linalg.solve(dense, rhs)
        volts = np.concatenate(([0.0], x[:n]))
        for name, k in circuit.nodes.items():
            # the rank-one-update route against a dense numpy.linalg.solve: round-off (abs for 0 V nodes)
            assert lr.solution.v[name] == pytest.approx(volts[k], rel=1e-9, abs=1e-9), (i, name)
        fresh = lose_return(d, i, cold.temperatures, cold.sources, a.corners["cold"].solution)
        for e in d.elements:
            # against a fresh solve of the same network: round-off (abs for the lost return's ~0 A)
            assert lr.solution.current[e.id] == pytest.approx(fresh.solution.current[e.id], rel=1e-9, abs=1e-9)
        assert lr.gap_voltage == pytest.approx(fresh.gap_voltage, rel=1e-9)
        assert [x.element for x in lr.rerouted] == [x.element for x in fresh.rerouted]
        assert [x.element for x in lr.stages] == [x.element for x in fresh.stages]
