"""Supply rules: alternator output against the demand, bus voltage against the supply code."""

from __future__ import annotations

from coilstage.analysis.run import Analysis
from coilstage.checks.base import (
    Rule,
    Status,
    Verdict,
    at_least,
    at_most,
    decided_at_worst,
    not_checked,
)


def _alternator(a: Analysis) -> list[Verdict]:
    alt = a.drawing.supply.alternator
    if alt is None:
        return [not_checked(ALTERNATOR, "alternator", "the drawing has no alternator", "A")]
    cold = a.corners["cold"]
    stages = [st.id for st in cold.stages]
    worst_sol = a.worst.largest_current_solution
    words = tuple(f"{k} {v}" for k, v in a.worst.largest_current_words)
    out = []
    for label, limit in (("idle", alt.limit_idle), ("rated speed", alt.limit_rated)):

        def at(total: float, where: str, corner: str, label: str = label, limit: float = limit) -> Verdict:
            demand = total + cold.base_load
            share = max(demand - limit, 0.0)
            note = (
                f"stages {total:.1f} A + base load {cold.base_load:.1f} A at the {where} against {limit:g} A at {label}"
            )
            if share > 0:
                note += f"; the battery supplies {share:.1f} A ({share / demand:.0%}) while the retarder is on"
            return at_most(ALTERNATOR, f"alternator ({label})", demand, limit, "A", note, corner, over=Status.WARN)

        nominal = at(cold.total_stage_current, "cold corner", "cold")
        if worst_sol is None:
            out.append(nominal)
            continue
        total = sum(abs(worst_sol.current[sid]) for sid in stages)
        out.append(
            decided_at_worst(
                at(total, "largest continuous current", "largest current"), nominal, "largest current", words
            )
        )
    return out


def _bus_minimum(a: Analysis) -> list[Verdict]:
    hot = a.corners["hot"]
    s = a.drawing.supply
    nominal = at_least(
        BUS_MINIMUM,
        "bus",
        hot.bus_voltage,
        s.v_min,
        "V",
        f"bus at the battery terminals in the hot corner (battery {hot.battery_current:.1f} A, alternator "
        f"{hot.alternator_current:.1f} A {hot.alternator_mode}) against the {s.limits_source} minimum",
        "hot",
    )
    low = a.worst.lowest_bus
    sol = low.solution
    worst = at_least(
        BUS_MINIMUM,
        "bus",
        low.bus_voltage,
        s.v_min,
        "V",
        f"bus at the battery terminals at the lowest bus {low.bus_voltage:.2f} V (battery {sol.battery_current:.1f} A, "
        f"alternator {sol.alternator_current:.1f} A {sol.alternator_mode}) against the {s.limits_source} minimum",
        low.name,
    )
    return [decided_at_worst(worst, nominal, low.name, tuple(f"{k} {v}" for k, v in low.words))]


ALTERNATOR = Rule(
    "supply.alternator",
    "Alternator output at idle and at rated speed against stages plus base load",
    "ISO 8854 rating convention (output at idle and at rated speed); energy balance of the descent is the arbiter",
    _alternator,
    ("network.solve_with_limited_source", "network.charging_source_state"),
)
BUS_MINIMUM = Rule(
    "supply.bus_minimum",
    "Bus voltage with the retarder on stays above the supply code's minimum",
    "ISO 16750-2:2010 Tables 1 and 2 (supply voltage codes)",
    _bus_minimum,
    ("network.solve_with_limited_source",),
)
RULES = [ALTERNATOR, BUS_MINIMUM]
