"""Benchmark of the switching analysis. Prints its figures; asserts nothing.

The coupled switch-on and switch-off of the four-stage demo (all stages on at 0 s, off at 1.5 s,
3 s in all) sampled at 1 ms, in the cold corner (bus held) and in the hot corner (the alternator
changes state during the switch-on). Target (switching issue): under 20 ms of compute, agreeing with
scipy.integrate.solve_ivp (rtol 1e-9) to 1e-6 relative.

Run: python benchmarks/bench_switching.py
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))

from reference_ivp import integrate  # noqa: E402

from coilstage.analysis.circuit import Circuit  # noqa: E402
from coilstage.analysis.conditions import conditions  # noqa: E402
from coilstage.analysis.linear import case_networks  # noqa: E402
from coilstage.analysis.switching import run  # noqa: E402
from coilstage.drawing.load import load_drawing  # noqa: E402


def main() -> None:
    d = load_drawing(ROOT / "configs" / "coach-24v-4stage.toml")
    ids = tuple(s.id for s in d.stages)
    events = [(0.0, ids), (1.5, ())]
    times = np.arange(0.0, 3.0 + 1e-12, 1e-3)
    for corner in ("cold", "hot"):
        circuit = Circuit(d)
        best = float("inf")
        for _ in range(20):
            t = time.perf_counter()
            net = case_networks(circuit, conditions(d))[corner]  # its factorisations are part of the time
            sc = run(net, corner, "all stages", events, 3.0)
            ours = sc.sample(times, list(ids))
            best = min(best, time.perf_counter() - t)
        t = time.perf_counter()
        ref = integrate(circuit, corner, events, 3.0, times, rtol=1e-9, atol=1e-9)
        t_ref = time.perf_counter() - t
        scale = max(np.max(np.abs(v)) for v in ref.values())
        dev = max(np.max(np.abs(ours[s] - ref[s])) for s in ids) / scale
        modes = " -> ".join(seg.lin.mode for seg in sc.segments)
        print(
            f"{corner:4s} corner: {len(times)} samples of {len(ids)} stages in {best * 1e3:.1f} ms (best of 20; target"
            f" < 20 ms); solve_ivp (DOP853, rtol 1e-9) {t_ref * 1e3:.0f} ms; largest deviation {dev:.1e} of the peak"
            f" current (target < 1e-6); alternator: {modes}"
        )


if __name__ == "__main__":
    main()
