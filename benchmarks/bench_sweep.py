"""Benchmark of the tolerance sweep on the four-stage demo's steady-state rules. Prints its figures;
asserts nothing.

1. 10 000 samples (median of 3 runs) and 100 000 samples (one run): drawing the samples, evaluating
   the steady-state rules (coilstage.analysis.params.evaluate, in chunks of sweep.CHUNK) and the statistics;
   the worst-corner search (analysis.sensitivities, independent of N) timed apart, and the share of
   the time spent inside params.evaluate.
2. Peak memory (tracemalloc, numpy's buffers included) of the 10 000- and 100 000-sample sweeps:
   flat in N, because samples are drawn, evaluated and reduced chunk by chunk.

Targets: 10 000 samples under 1 s, 100 000 under 10 s, on a 2-core machine.

Run: python benchmarks/bench_sweep.py
"""

from __future__ import annotations

import statistics
import time
import tracemalloc
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "configs" / "coach-24v-4stage.toml"


def main() -> None:
    from coilstage import load_drawing, sweep
    from coilstage.analysis import params, sensitivities

    d = load_drawing(DEMO)
    ps = params.parameters(d)
    spent = [0.0]

    def evaluate(x):
        t = time.perf_counter()
        out = params.evaluate(d, x)
        spent[0] += time.perf_counter() - t
        return out

    evaluate(sweep.samples(ps, 0, 0, 10))  # build the model once (cached per drawing), as a run does

    def timed(n: int) -> tuple[float, float]:
        spent[0] = 0.0
        t = time.perf_counter()
        sweep.run(ps, evaluate, n, seed=1, worst={}, worst_note="timed apart")
        return time.perf_counter() - t, spent[0]

    print(f"drawing: {DEMO.name}, {len(ps)} declared parameters, chunks of {sweep.CHUNK} samples")
    runs = [timed(10_000) for _ in range(3)]
    wall = statistics.median(r[0] for r in runs)
    inside = statistics.median(r[1] for r in runs)
    print(f"sweep 10 000 samples:  {wall:6.3f} s (median of 3; params.evaluate {inside:.3f} s)  target < 1 s")
    wall, inside = timed(100_000)
    print(f"sweep 100 000 samples: {wall:6.3f} s (params.evaluate {inside:.3f} s)  target < 10 s")
    t = time.perf_counter()
    sensitivities.analyse_sensitivities(d)
    print(f"worst-corner search (once per sweep, any N): {time.perf_counter() - t:.3f} s")

    peaks = {}
    for n in (10_000, 100_000):
        tracemalloc.start()
        tracemalloc.reset_peak()
        sweep.run(ps, lambda x: params.evaluate(d, x), n, seed=1, worst={}, worst_note="")
        peaks[n] = tracemalloc.get_traced_memory()[1]
        tracemalloc.stop()
    for n, peak in peaks.items():
        print(f"peak memory, {n:>7} samples: {peak / 2**20:7.1f} MiB (tracemalloc)")
    print(f"ratio 100k / 10k: {peaks[100_000] / peaks[10_000]:.2f} (flat: about 1; ten times the samples)")


if __name__ == "__main__":
    main()
