"""Benchmark of the duty (heating) simulation. Prints its figures; asserts nothing.

The four-stage demo over its 30-minute descent (21 steps: 20 switching events), windings, cables and
battery coupled through the network. Target (heating issue): under 100 ms of compute.

Run: python benchmarks/bench_duty.py
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from coilstage.analysis.duty import continuous_duty, simulate  # noqa: E402
from coilstage.drawing.load import load_drawing  # noqa: E402


def main() -> None:
    d = load_drawing(ROOT / "configs" / "coach-24v-4stage.toml")
    t = time.perf_counter()
    r = simulate(d)
    first = time.perf_counter() - t
    best = float("inf")
    for _ in range(10):
        t = time.perf_counter()
        r = simulate(d)
        best = min(best, time.perf_counter() - t)
    events = sum(1 for a, b in zip(d.duty.steps, d.duty.steps[1:], strict=False) if a.stages != b.stages)
    print(
        f"30-min descent, {len(d.duty.steps)} steps ({events} switching events), {len(d.stages)} stages, "
        f"{len(r.cable_ids)} cables: {best * 1e3:.0f} ms (best of 10; target < 100 ms); "
        f"first run {first * 1e3:.0f} ms "
        f"(includes the cables' heat-balance tables); {len(r.t)} recorded points"
    )
    t = time.perf_counter()
    c = simulate(d, continuous_duty(d))
    print(
        f"continuous full retardation, 2 h: {(time.perf_counter() - t) * 1e3:.0f} ms; windings settle at "
        + ", ".join(f"{x:.0f} °C" for x in c.stage_temperature[-1])
    )


if __name__ == "__main__":
    main()
