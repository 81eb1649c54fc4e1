"""Invariants over many generated harnesses (hypothesis), and the report's no-NaN property.

The hypothesis properties ask only the DC solve (:class:`coilstage.analysis.circuit.Circuit` under the
corner conditions of :func:`coilstage.analysis.conditions.corner_sources`), the same solve every corner of
the analysis makes: KCL, the monotonicity laws and a finite solution. The whole check runs only for the
report property, on a fixed set of drawings (the three demos and generated harnesses of fixed seeds, the
ends of the generator's ranges among them), without hypothesis."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from coilstage import check
from coilstage.analysis.circuit import Circuit, Solution
from coilstage.analysis.conditions import corner_sources
from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.report import document, jsonout

from .conftest import drawing_text

SIZES = ["6 mm^2", "10 mm^2", "16 mm^2", "25 mm^2", "35 mm^2", "50 mm^2", "8 AWG", "4 AWG", "1/0 AWG"]


#: the generator's ranges: (low, high) of each figure, the choices of each choice
STAGES, SYSTEMS, CONNECTIONS = (1, 5), [12, 24], ["series", "parallel"]
FEED_LENGTH, BRANCH_LENGTH, COIL_R, COIL_COUNT = (0.3, 8.0), (0.2, 6.0), (0.05, 3.0), (1, 3)
BATTERY_R, ALT_IDLE, ALT_RATED, BASE_LOAD = (1.0, 30.0), (10.0, 150.0), (150.0, 300.0), (0.0, 60.0)


def generated_text(n, system, feed, feed_length, branch, branch_lengths, coil_r, coil_count, connection, *rest):
    battery_r, alt_idle, alt_rated, base_load = rest
    return drawing_text(
        stages=n,
        system=system,
        feed=feed,
        feed_length=f"{feed_length:.3f} m",
        branch=branch,
        branch_lengths=branch_lengths,
        coil_r=coil_r,
        coil_count=coil_count,
        connection=connection,
        battery_r=f"{battery_r:.3f} mohm",
        alt_idle=f"{alt_idle:.1f} A",
        alt_rated=f"{alt_rated:.1f} A",
        base_load=f"{base_load:.1f} A",
    )


@st.composite
def drawings(draw):
    n = draw(st.integers(*STAGES))
    text = generated_text(
        n,
        draw(st.sampled_from(SYSTEMS)),
        draw(st.sampled_from(SIZES)),
        draw(st.floats(*FEED_LENGTH)),
        draw(st.sampled_from(SIZES)),
        [draw(st.floats(*BRANCH_LENGTH)) for _ in range(n)],
        [draw(st.floats(*COIL_R)) for _ in range(n)],
        draw(st.integers(*COIL_COUNT)),
        draw(st.sampled_from(CONNECTIONS)),
        draw(st.floats(*BATTERY_R)),
        draw(st.floats(*ALT_IDLE)),
        draw(st.floats(*ALT_RATED)),
        draw(st.floats(*BASE_LOAD)),
    )
    return parse_drawing(text, "generated")


def seeded_text(seed: int) -> str:
    """A harness drawn from the generator's ranges by numpy's PCG64 stream ``seed``."""
    rng = np.random.default_rng(seed)
    n = int(rng.integers(STAGES[0], STAGES[1] + 1))
    pick = lambda xs: xs[int(rng.integers(len(xs)))]  # noqa: E731
    return generated_text(
        n,
        pick(SYSTEMS),
        pick(SIZES),
        float(rng.uniform(*FEED_LENGTH)),
        pick(SIZES),
        [float(x) for x in rng.uniform(*BRANCH_LENGTH, n)],
        [float(x) for x in rng.uniform(*COIL_R, n)],
        int(rng.integers(COIL_COUNT[0], COIL_COUNT[1] + 1)),
        pick(CONNECTIONS),
        float(rng.uniform(*BATTERY_R)),
        float(rng.uniform(*ALT_IDLE)),
        float(rng.uniform(*ALT_RATED)),
        float(rng.uniform(*BASE_LOAD)),
    )


def end_text(end: int) -> str:
    """Every figure of the generator at the low (``end`` 0) or the high (1) end of its range: the
    thinnest longest feed into the most stages of the lowest coil resistance, and the opposite."""
    n = STAGES[end]
    thin, thick = SIZES[0], SIZES[-1]
    return generated_text(
        n,
        SYSTEMS[end],
        (thin, thick)[end],
        FEED_LENGTH[1 - end],
        (thin, thick)[end],
        [BRANCH_LENGTH[1 - end]] * n,
        [COIL_R[end]] * n,
        COIL_COUNT[end],
        CONNECTIONS[1 - end],
        BATTERY_R[1 - end],
        ALT_IDLE[end],
        ALT_RATED[end],
        BASE_LOAD[1 - end],
    )


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


def _finite(x) -> bool:
    return all(math.isfinite(v) for v in x.values()) if isinstance(x, dict) else math.isfinite(x)


@COMMON
@given(drawings())
def test_dc_solve_is_finite_in_every_corner(d):
    # every node voltage, element current and resistance and both sources' currents of every corner and
    # of the fault solve: the figures the whole analysis builds on (the report's no-NaN property below)
    circuit = Circuit(d)
    for name, (temps, src) in corner_sources(d).items():
        sol = circuit.solve(temps, src)
        assert sol.v and sol.current and sol.resistance, name
        for part in (sol.v, sol.current, sol.resistance, sol.battery_current, sol.alternator_current):
            assert _finite(part), name
        assert all(r >= 0 for r in sol.resistance.values()), name


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


DEMOS = ["coach-24v-4stage", "light-truck-12v-2stage", "flawed-retrofit-24v"]
#: the fixed set of the report property: the demos, harnesses of fixed seeds, the generator's two ends
SEEDS = (0, 2, 4, 8)
REPORT_CASES = [*(f"demo {x}" for x in DEMOS), *(f"seed {k}" for k in SEEDS), "low end", "high end"]


def _report_drawing(case: str, coach_path):
    kind, _, name = case.partition(" ")
    if kind == "demo":
        return load_drawing(coach_path.parent / f"{name}.toml")
    text = seeded_text(int(name)) if kind == "seed" else end_text(("low end", "high end").index(case))
    return parse_drawing(text, case)


def test_the_report_cases_span_the_generator():
    # the fixed set is not one harness repeated: both systems, one to five stages, several coils in
    # series and in parallel
    texts = [seeded_text(k) for k in SEEDS] + [end_text(0), end_text(1)]
    ds = [parse_drawing(t, "x") for t in texts]
    assert {len(d.stages) for d in ds} >= {1, 4, 5}
    assert {d.supply.system_voltage for d in ds} == {12, 24}
    arrangements = {(s.connection, s.count > 1) for d in ds for s in d.stages}
    assert {("series", True), ("parallel", True)} <= arrangements
    assert len(set(texts)) == len(texts)


@pytest.mark.parametrize("case", REPORT_CASES)
def test_no_report_shows_nan(case, coach_path):
    a, verdicts = check(_report_drawing(case, coach_path))
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
