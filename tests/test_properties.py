"""Invariants over many generated harnesses (hypothesis).

The network invariants ask only the DC solve (:class:`coilstage.analysis.circuit.Circuit` under the corner
conditions of :func:`coilstage.analysis.conditions.corner_sources`), the same solve every corner of the
analysis makes; only the report property runs the whole check."""

from __future__ import annotations

import json
import math

import numpy as np
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from coilstage import check
from coilstage.analysis.circuit import Circuit, Solution
from coilstage.analysis.conditions import corner_sources
from coilstage.drawing.load import parse_drawing
from coilstage.report import document, jsonout

from .conftest import drawing_text

SIZES = ["6 mm^2", "10 mm^2", "16 mm^2", "25 mm^2", "35 mm^2", "50 mm^2", "8 AWG", "4 AWG", "1/0 AWG"]


@st.composite
def drawings(draw):
    n = draw(st.integers(1, 5))
    text = drawing_text(
        stages=n,
        system=draw(st.sampled_from([12, 24])),
        feed=draw(st.sampled_from(SIZES)),
        feed_length=f"{draw(st.floats(0.3, 8)):.3f} m",
        branch=draw(st.sampled_from(SIZES)),
        branch_lengths=[draw(st.floats(0.2, 6)) for _ in range(n)],
        coil_r=[draw(st.floats(0.05, 3)) for _ in range(n)],
        coil_count=draw(st.integers(1, 3)),
        connection=draw(st.sampled_from(["series", "parallel"])),
        battery_r=f"{draw(st.floats(1, 30)):.3f} mohm",
        alt_idle=f"{draw(st.floats(10, 150)):.1f} A",
        alt_rated=f"{draw(st.floats(150, 300)):.1f} A",
        base_load=f"{draw(st.floats(0, 60)):.1f} A",
    )
    return parse_drawing(text, "generated")


COMMON = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])


def kcl_residuals(circuit: Circuit, sol: Solution) -> np.ndarray:
    """Sum of the currents leaving each node [A], sources included (Kirchhoff's current law, written out
    here from the solution's element and source currents): zero at every node where KCL holds."""
    d = circuit.drawing
    s = d.supply
    out = dict.fromkeys(circuit.nodes, 0.0)
    for e in d.elements:
        out[e.a] += sol.current[e.id]
        out[e.b] -= sol.current[e.id]
    out[s.battery.node] -= sol.battery_current
    out[s.negative_node] += sol.battery_current
    if s.alternator is not None:
        out[s.alternator.node] -= sol.alternator_current
        out[s.negative_node] += sol.alternator_current
    out[s.base_load_node] += s.base_load
    out[s.negative_node] -= s.base_load
    return np.array(list(out.values()))


@COMMON
@given(drawings())
def test_kcl_holds_at_every_node_in_every_corner(d):
    circuit = Circuit(d)
    for name in ("cold", "hot", "limit"):
        temps, src = corner_sources(d)[name]
        sol = circuit.solve(temps, src)
        scale = max(1.0, abs(sol.battery_current) + abs(sol.alternator_current) + d.supply.base_load)
        assert np.max(np.abs(kcl_residuals(circuit, sol))) <= 1e-9 * scale


@COMMON
@given(drawings(), st.data())
def test_raising_a_resistance_on_a_stage_path_never_raises_its_current(d, data):
    # Elements on a stage's own path: the shared feed and return, its relay, its branch, its coil, its return.
    circuit = Circuit(d)
    k = data.draw(st.integers(0, len(d.stages) - 1))
    own = ["FM", "WM", "WR", f"K{k}", f"W{k}", f"S{k}", f"W{k}R"]
    target = data.draw(st.sampled_from(own))
    factor = data.draw(st.floats(1.0, 50.0))
    for name in ("cold", "hot", "limit"):
        temps, src = corner_sources(d)[name]
        base = circuit.solve(temps, src)
        raised = circuit.solve(temps, src, overrides={target: base.resistance[target] * factor})
        assert raised.current[f"S{k}"] <= base.current[f"S{k}"] * (1 + 1e-12) + 1e-12


@COMMON
@given(drawings(), st.data())
def test_raising_any_resistance_never_raises_the_total_demand(d, data):
    # Rayleigh's monotonicity law: the harness seen from the bus is a passive resistor network, so
    # raising any of its resistances cannot lower its resistance; with a current-limited source behind
    # the bus the delivered current cannot rise either.
    circuit = Circuit(d)
    target = data.draw(st.sampled_from([e.id for e in d.elements]))
    factor = data.draw(st.floats(1.0, 50.0))
    for name in ("cold", "hot"):
        temps, src = corner_sources(d)[name]
        base = circuit.solve(temps, src)
        raised = circuit.solve(temps, src, overrides={target: base.resistance[target] * factor})
        total = lambda s: sum(s.current[x.id] for x in d.stages)  # noqa: E731
        assert total(raised) <= total(base) * (1 + 1e-12) + 1e-12


def test_a_sibling_stage_gains_when_its_neighbour_is_raised():
    # Why the property above is stated for a stage's own path: with a shared feed, a higher resistance
    # in one branch lowers the feed drop, so the *other* stage's current rises (a physical fact).
    d = parse_drawing(drawing_text(stages=2, feed="6 mm^2", feed_length="6 m"), "x")
    circuit = Circuit(d)
    temps, src = corner_sources(d)["cold"]
    base = circuit.solve(temps, src)
    raised = circuit.solve(temps, src, overrides={"S0": base.resistance["S0"] * 3})
    assert raised.current["S0"] < base.current["S0"]
    assert raised.current["S1"] > base.current["S1"]


@COMMON
@given(drawings())
def test_no_report_shows_nan(d):
    a, verdicts = check(d)
    doc = document.build(a, verdicts)
    text = jsonout.render(doc)  # allow_nan=False: raises on NaN or infinity

    def walk(x):
        if isinstance(x, float):
            assert math.isfinite(x)
        elif isinstance(x, dict):
            for y in x.values():
                walk(y)
        elif isinstance(x, list):
            for y in x:
                walk(y)

    walk(json.loads(text))
    assert "NaN" not in text and "Infinity" not in text
