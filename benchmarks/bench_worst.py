"""Benchmark of the worst-case analysis with sensitivities. Prints its figures; asserts nothing.

1. In process, on the four-stage demo drawing: the analysis (``analyse``), the rules with the
   sensitivities and worst corners attached (``run_checks``), the sensitivities alone
   (``analysis.sensitivities.analyse_sensitivities``: exact gradients, central differences, the
   corner search), the effects by re-analysis of the rules outside the model
   (``coilstage.effects.with_effects``), and all of it together (every rule with sensitivities or
   effects, as ``coilstage check`` makes them), best of several runs.
2. The vectorised margins (``analysis.params.evaluate``) of 1 000 and 10 000 samples.
3. ``coilstage check`` of the demo as a whole process (wall time, median of runs).

Targets: worst-case analysis of every rule with sensitivities under 0.5 s compute; the whole check
process under 1 s (on a 2-core machine). The batched solves are many small matrix products: on a
shared machine the BLAS library's threads can wait on each other for longer than the work takes, so
run it also with ``OPENBLAS_NUM_THREADS=1`` (one thread) to see the compute alone.

Run: python benchmarks/bench_worst.py [--runs N]
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "configs" / "coach-24v-4stage.toml"


def best(fn, runs: int) -> tuple[float, object]:
    out = None
    times = []
    for _ in range(runs):
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return min(times), out


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--runs", type=int, default=5)
    args = ap.parse_args()
    import numpy as np

    from coilstage.analysis import params, sensitivities
    from coilstage.analysis.conditions import _STEADY_CACHE
    from coilstage.analysis.run import analyse
    from coilstage.checks import run_checks
    from coilstage.drawing.load import load_drawing

    def fresh():
        d = load_drawing(DEMO)
        _STEADY_CACHE.clear()
        return d

    d = fresh()
    t_an, _a = best(lambda: analyse(fresh()), args.runs)
    t_ck, verdicts = best(lambda: run_checks(analyse(fresh())), args.runs)
    t_sens, found = best(lambda: sensitivities.analyse_sensitivities(fresh()), args.runs)
    print(f"four-stage demo, in process (best of {args.runs}):")
    print(f"  analyse                                  {t_an * 1e3:8.1f} ms")
    print(f"  analyse + run_checks with sensitivities  {t_ck * 1e3:8.1f} ms")
    print(f"  sensitivities and worst corners alone    {t_sens * 1e3:8.1f} ms   ({len(found)} verdicts)")
    from coilstage.effects import with_effects

    a0 = analyse(fresh())
    v0 = run_checks(a0)
    t_eff, with_eff = best(lambda: with_effects(a0, v0), args.runs)
    n_eff = sum(1 for v in with_eff if v.worst is not None and v.worst.sensitivities) - sum(
        1 for v in v0 if v.worst is not None and v.worst.sensitivities
    )
    print(f"  effects by re-analysis alone             {t_eff * 1e3:8.1f} ms   ({n_eff} more verdicts)")
    t_all, _x = best(lambda: (lambda a: with_effects(a, run_checks(a)))(analyse(fresh())), args.runs)
    print(f"  every rule: analyse, checks, sensitivities and effects {t_all * 1e3:8.1f} ms   (target < 500 ms)")
    ps = params.parameters(d)
    x0 = params.nominal(ps)
    params.evaluate(d, x0[None])
    for n in (1_000, 10_000):
        x = np.tile(x0, (n, 1))
        t, _ = best(lambda x=x: params.evaluate(d, x), max(1, args.runs // 2))
        print(f"  params.evaluate, {n:>6} samples          {t * 1e3:8.1f} ms")
    with_sens = [v for v in verdicts if v.worst is not None and v.worst.sensitivities]
    print(f"  verdicts decided at a worst case with sensitivities: {len(with_sens)}")
    for v in with_sens:
        if v.subject in ("F-MAIN", "bus", "F1", "S4", "W-ALT", "K1", "F-MAIN → W-MAIN"):
            top = "; ".join(
                f"{s.words} {s.change:+.3g} takes {-s.margin_change * 100:.1f} points"
                for s in v.worst.sensitivities[:3]
            )
            print(f"    {v.rule} {v.subject}: margin {v.margin:.1%}: {top}")
    walls = []
    cmd = [sys.executable, "-m", "coilstage", "check", str(DEMO), "-f", "json", "-o", "/dev/null"]
    for _ in range(args.runs):
        t = time.perf_counter()
        r = subprocess.run(cmd, cwd=ROOT, capture_output=True, text=True, check=False)
        walls.append(time.perf_counter() - t)
        if r.returncode not in (0, 1):  # 1: the drawing has findings; anything else is a failed run
            print(f"coilstage check failed ({r.returncode}): {r.stderr.strip()[-300:]}")
            return
    print(
        f"coilstage check of the demo, whole process (JSON): best {min(walls):.2f} s, "
        f"median {statistics.median(walls):.2f} s (target < 1 s)"
    )


if __name__ == "__main__":
    main()
