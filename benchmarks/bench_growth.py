"""Growth of the check with the number of stages, phase by phase. Prints a table; asserts nothing.

A synthetic 24 V drawing (invented values: one fuse, relay, branch cable, stage and return per stage,
coils with a thermal model, the shipped endurance duty profile) is built for 8 … 128 stages (256 with
``--max 256``) and each phase of the check is timed in process. Each phase is repeated (at least
``--runs`` times, more while it stays inside a short time budget) and the minimum is kept: the
minimum is the figure least disturbed by other work on the machine. The growth exponent p
(time ∝ nᵖ) is the least-squares slope of log time against log n over the upper stage counts only
(``--fit``, the largest three by default), where fixed costs no longer hide the growth. A phase that
stays below ``NOISE_FLOOR`` at the largest size is marked: its exponent is not meaningful. Where the
network is larger than the corner search's model takes, the check leaves that search out (and says so
on its verdicts): those cells are marked * and the search's exponent is fitted where it ran.

Targets: a 64-stage check under 1 s in process; no phase growing faster than n².

Run: python benchmarks/bench_growth.py [--threads N] [--max 128] [--runs 3] [--fit 3]
(--threads N sets the BLAS thread count before numpy loads; the program itself sets one.)
"""

from __future__ import annotations

import argparse
import math
import os
import sys
import time
from collections.abc import Callable
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

#: A phase below this at the largest size [s] is too short for its exponent to mean anything.
NOISE_FLOOR = 2e-3
#: More repeats of a phase while the ones so far took less than this in all [s].
BUDGET = 1.0
MAX_RUNS = 30


def drawing_text(n: int) -> str:
    text = synthetic(n).replace("turns = 400\n", THERMAL, 1)
    return text + '\n[duty]\nprofile = "endurance"\n'


def minimum(fn: Callable[[], object], runs: int) -> tuple[float, object]:
    """The shortest of at least ``runs`` timings of ``fn()`` (more while inside the budget) [s], and
    its last result."""
    out, lo, spent, k = None, math.inf, 0.0, 0
    while k < runs or (spent < BUDGET and k < MAX_RUNS):
        t = time.perf_counter()
        out = fn()
        dt = time.perf_counter() - t
        lo, spent, k = min(lo, dt), spent + dt, k + 1
    return lo, out


#: the words a verdict carries where the corner search was not made (a network too large for its model)
SKIPPED = "sensitivities not computed"


def phases(n: int, runs: int) -> tuple[dict[str, float], str | None]:
    """The shortest time of each phase of the check of an n-stage drawing [s], and why the corner
    search was not made (None where it was)."""
    import coilstage.checks
    from coilstage.analysis import overvoltage
    from coilstage.analysis.circuit import Circuit
    from coilstage.analysis.conditions import _STEADY_CACHE, conditions
    from coilstage.analysis.corners import cold_duty, fault_currents, solve_corner
    from coilstage.analysis.duty import continuous_duty, simulate
    from coilstage.analysis.field import analyse_field
    from coilstage.analysis.linear import CaseNetwork, case_networks
    from coilstage.analysis.ratings import ratings
    from coilstage.analysis.run import analyse
    from coilstage.analysis.switching import analyse_switching
    from coilstage.analysis.topology import protected_cables
    from coilstage.analysis.worst import worst_cases
    from coilstage.checks import RULES, run_checks
    from coilstage.drawing.load import parse_drawing
    from coilstage.drawing.schema import Cable
    from coilstage.report.document import build

    text = drawing_text(n)
    t: dict[str, float] = {}
    t["load"], d = minimum(lambda: parse_drawing(text, f"synthetic-{n}"), runs)
    circuit = Circuit(d)

    def cond():
        _STEADY_CACHE.clear()
        return conditions(d)

    t["conditions"], cases = minimum(cond, runs)
    t["corners"], corners = minimum(
        lambda: {k: solve_corner(circuit, cases[k]) for k in ("cold", "hot", "limit")}, runs
    )
    protected = protected_cables(d)
    t["faults"], (_f, far, _b) = minimum(lambda: fault_currents(circuit, cases["fault"], protected), runs)
    # the case networks factorise on first use: each phase that uses them gets fresh ones, so it pays
    # for that (in analyse() they are shared, so these phases add up to a little more than the check)
    t["cold duty"], (duty, _w) = minimum(lambda: cold_duty(case_networks(circuit, cases)["cold"]), runs)
    t["worst cases"], worst = minimum(lambda: worst_cases(d, cases, protected, duty), runs)
    b = worst.largest_break

    def switching():
        # as analyse(): the cold and hot corners' scenarios, and the per-stage figures at the largest break
        net = CaseNetwork(Circuit(b.drawing), b.temperatures, b.sources)
        return analyse_switching(d, case_networks(circuit, cases), largest=(b.drawing, net))

    t["switching"], sw = minimum(switching, runs)
    t["heating"], _h = minimum(lambda: (simulate(d), simulate(d, continuous_duty(d))), runs)
    t["field"], _fi = minimum(lambda: analyse_field(d, corners, case_networks(circuit, cases)["cold"]), runs)
    sw_ = worst.duty_sweep
    zones = (
        {c.id: tuple(sw_.zone(c.zone_temperature, j) for j in range(len(sw_.ambients))) for c in d.of_kind(Cable)}
        if sw_ is not None
        else None
    )
    t["ratings"], _r = minimum(
        lambda: ratings(
            d, protected, far, duty, sw, corners["hot"], worst.smallest_fault.far_end, worst.largest_current, zones
        ),
        runs,
    )
    a = analyse(d)

    def rules():
        # the overvoltage case is made once per analysis, by the first rule that reads it: forget it, so
        # that every run of the rules pays for it as a check does
        if hasattr(overvoltage, "_CASES"):
            overvoltage._CASES.clear()
        return [v for rule in RULES for v in rule.evaluate(a)]

    t["rules"], verdicts = minimum(rules, runs)
    # what run_checks does after the rules: each worst-case verdict's sensitivities and worst corner
    worst_corners = getattr(coilstage.checks, "with_worst_corners", None) or coilstage.checks._with_sensitivities
    t["corner search"], checked = minimum(lambda: worst_corners(a, verdicts), runs)
    why = next((w for v in checked if v.worst is not None for w in v.worst.deciding if SKIPPED in w), None)
    t["report"], _doc = minimum(lambda: build(a, checked), runs)

    def whole():
        _STEADY_CACHE.clear()
        return run_checks(analyse(d))

    t["whole check"], _x = minimum(whole, runs)
    return t, why


def slope(xs: list[float], ys: list[float]) -> float:
    """Least-squares slope of ys against xs."""
    mx, my = sum(xs) / len(xs), sum(ys) / len(ys)
    return sum((x - mx) * (y - my) for x, y in zip(xs, ys, strict=True)) / sum((x - mx) ** 2 for x in xs)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--threads", type=int, default=0, help="BLAS threads (0: the program's own setting, one)")
    ap.add_argument("--max", type=int, default=128, help="largest stage count (8 … 256)")
    ap.add_argument("--runs", type=int, default=3, help="least number of repeats of each phase")
    ap.add_argument("--fit", type=int, default=3, help="fit the exponent on this many of the largest sizes")
    args = ap.parse_args()
    if args.threads:  # before numpy is imported
        for var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
            os.environ[var] = str(args.threads)
    import coilstage  # noqa: F401  (first: it sets one BLAS thread before numpy loads, as the command line does)

    t0 = time.perf_counter()
    import scipy.sparse.linalg  # noqa: F401  (the sparse path's import, once per process, above 150 unknowns)

    scipy_import = time.perf_counter() - t0
    sizes = [n for n in (8, 16, 24, 32, 48, 64, 96, 128, 192, 256) if n <= args.max]
    rows, skipped = {}, {}
    for n in sizes:
        rows[n], why = phases(n, args.runs)
        if why is not None:
            skipped[n] = why
        print(f"  {n} stages: whole check {rows[n]['whole check'] * 1e3:.0f} ms", file=sys.stderr, flush=True)
    names = list(rows[sizes[0]])
    k = min(args.fit, len(sizes))
    print(f"| phase | {' | '.join(str(n) for n in sizes)} | growth n^p (largest {k} sizes) |")
    print("|---|" + "---:|" * len(sizes) + "---:|")
    worst_p = None
    for name in names:
        partial = name in ("corner search", "whole check")  # the corner search is left out at some sizes
        mark = {n: "*" if partial and n in skipped else "" for n in sizes}
        cells = " | ".join(f"{rows[n][name] * 1e3:.1f}{mark[n]}" for n in sizes)
        # fit on the largest sizes where the phase did its whole work
        fit = [n for n in sizes if not mark[n]][-k:]
        if len(fit) < 2:
            grow = "–"
        else:
            p = slope([math.log(n) for n in fit], [math.log(max(rows[n][name], 1e-9)) for n in fit])
            span = f" ({fit[0]}–{fit[-1]})" if fit != sizes[-k:] else ""
            if rows[fit[-1]][name] < NOISE_FLOOR:
                grow = f"({p:.2f}: below {NOISE_FLOOR * 1e3:g} ms)"
            else:
                grow = f"{p:.2f}{span}"
                if name != "whole check" and (worst_p is None or p > worst_p[1]):
                    worst_p = (name, p)
        print(f"| {name} | {cells} | {grow} |")
    print()
    if skipped:
        n0 = min(skipped)
        print(f"* corner search not made from {n0} stages on: {skipped[n0]}")
    print(
        f"Times in ms, in process, the minimum of at least {args.runs} runs of each phase (more while a phase "
        f"took under {BUDGET:g} s in all). scipy.sparse.linalg import, once per process: {scipy_import * 1e3:.0f} ms "
        "(before the first size)."
    )
    if 64 in rows:
        w = rows[64]["whole check"]
        verdict = "met" if w < 1 else "MISSED"
        without = " (without the corner search, see *)" if 64 in skipped else ""
        print(f"64-stage whole check in process: {w * 1e3:.0f} ms{without} (target under 1000 ms: {verdict})")
    if worst_p is not None:
        print(
            f"Fastest-growing phase: {worst_p[0]}, n^{worst_p[1]:.2f} "
            f"(target no worse than n^2: {'met' if worst_p[1] <= 2.0 else 'MISSED'})"
        )


if __name__ == "__main__":
    main()
