"""Growth of the check with the number of stages, phase by phase. Prints a table; asserts nothing.

A synthetic 24 V drawing (invented values: one fuse, relay, branch cable, stage and return per stage,
coils with a thermal model, the shipped endurance duty profile) is built for 4 … 128 stages and each
phase of the analysis is timed in process (best of a few runs), then the exponent of its growth
between the last two sizes (time ∝ nᵖ). Targets (issue: one way through the house): a 64-stage check
under 1 s in process; no phase worse than n².

Run: python benchmarks/bench_growth.py [--threads N] [--max 128]
(--threads N sets the BLAS thread count before numpy loads; the program itself sets one.)
"""

from __future__ import annotations

import argparse
import math
import os
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT / "benchmarks"))

from bench_check import synthetic  # noqa: E402

THERMAL = """turns = 400
thermal_resistance = "0.35 K/W"
thermal_resistance_moving = "0.25 K/W"
conductor_mass = "9 kg"
iron_mass = "12 kg"
iron_share = "50 %"
"""


def drawing_text(n: int) -> str:
    text = synthetic(n).replace("turns = 400\n", THERMAL, 1)
    return text + '\n[duty]\nprofile = "endurance"\n'


def best(fn, runs: int) -> tuple[float, object]:
    out, lo = None, math.inf
    for _ in range(runs):
        t = time.perf_counter()
        out = fn()
        lo = min(lo, time.perf_counter() - t)
    return lo, out


def phases(n: int, runs: int) -> dict[str, float]:
    from coilstage.analysis.circuit import Circuit
    from coilstage.analysis.conditions import _STEADY_CACHE, conditions
    from coilstage.analysis.corners import cold_duty, fault_currents, solve_corner
    from coilstage.analysis.duty import continuous_duty, simulate
    from coilstage.analysis.field import analyse_field
    from coilstage.analysis.linear import case_networks
    from coilstage.analysis.ratings import ratings
    from coilstage.analysis.run import analyse
    from coilstage.analysis.switching import analyse_switching
    from coilstage.analysis.topology import protected_cables
    from coilstage.checks import run_checks
    from coilstage.drawing.load import parse_drawing
    from coilstage.report.document import build

    text = drawing_text(n)
    t = {}
    t0 = time.perf_counter()
    import scipy.sparse.linalg  # noqa: F401  (the sparse path's import, once per process, above 150 unknowns)

    t["scipy import"] = time.perf_counter() - t0
    t["load"], d = best(lambda: parse_drawing(text, f"synthetic-{n}"), runs)
    circuit = Circuit(d)

    def cond():
        _STEADY_CACHE.clear()
        return conditions(d)

    t["conditions"], cases = best(cond, runs)
    t["corners"], corners = best(lambda: {k: solve_corner(circuit, cases[k]) for k in ("cold", "hot", "limit")}, runs)
    protected = protected_cables(d)
    t["faults"], (_f, far, _b) = best(lambda: fault_currents(circuit, cases["fault"], protected), runs)
    t["cold duty"], (duty, _w) = best(lambda: cold_duty(case_networks(circuit, cases)["cold"]), runs)
    t["switching"], sw = best(lambda: analyse_switching(d, case_networks(circuit, cases)), runs)
    t["heating"], _h = best(lambda: (simulate(d), simulate(d, continuous_duty(d))), max(2, runs // 2))
    nets = case_networks(circuit, cases)
    t["field"], _fi = best(lambda: analyse_field(d, corners, nets["cold"]), runs)
    t["ratings"], _r = best(lambda: ratings(d, protected, far, duty, sw, corners["hot"]), runs)
    a = analyse(d)
    t["checks"], verdicts = best(lambda: run_checks(a), runs)
    t["report"], _doc = best(lambda: build(a, verdicts), runs)
    _STEADY_CACHE.clear()
    t["whole check"], _x = best(lambda: (_STEADY_CACHE.clear(), run_checks(analyse(d))), max(2, runs // 2))
    return t


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--threads", type=int, default=0, help="BLAS threads (0: the program's own setting, one)")
    ap.add_argument("--max", type=int, default=128)
    args = ap.parse_args()
    if args.threads:  # before numpy is imported
        for var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
            os.environ[var] = str(args.threads)
    sizes = [n for n in (4, 8, 16, 32, 64, 128) if n <= args.max]
    rows = {n: phases(n, 3 if n <= 32 else 2) for n in sizes}
    names = list(rows[sizes[0]])
    print(f"{'phase':12s}" + "".join(f"{n:>9d}" for n in sizes) + "   growth (last two sizes)")
    for name in names:
        cells = "".join(f"{rows[n][name] * 1e3:9.1f}" for n in sizes)
        a, b = sizes[-2], sizes[-1]
        p = math.log(max(rows[b][name], 1e-6) / max(rows[a][name], 1e-6)) / math.log(b / a)
        print(f"{name:12s}{cells}   n^{p:.2f}")
    print("times in ms, in process, best of 3 (2 at 64 and 128 stages); target: 64 stages under 1000 ms")


if __name__ == "__main__":
    main()
