"""Benchmarks of the steady-state check. Prints its figures; asserts nothing.

1. ``coilstage check`` on the four-stage demo drawing as a whole process (wall time, median of runs).
2. The network solve of a synthetic 200-stage drawing: one corner solve, and its steady-state
   analysis (three corners, the cold duty of every element, the prospective short-circuit current at
   every fuse); then the full check (switching, duty, field, every rule) of 4, 8 and 16 stages: the
   switching rules grow with the square of the number of stages.

Targets: demo check under 1 s wall on a 2-core machine; the 200-stage
solve under 50 ms.

Run: python benchmarks/bench_check.py
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "configs" / "coach-24v-4stage.toml"


def synthetic(stages: int) -> str:
    """A 24 V drawing with one fuse, relay, branch, stage and return per stage (invented values)."""
    head = """[drawing]
title = "synthetic benchmark drawing (invented)"
[supply]
system = "24 V"
code = "F"
base_load = "40 A"
[supply.battery]
emf = "25.2 V"
internal_resistance = "2 mohm"
[supply.alternator]
setpoint = "28 V"
tolerance = "0.3 V"
source_resistance = "20 mohm"
limit_idle = "300 A"
limit_rated = "500 A"
[environment]
ambient_min = "-30 degC"
ambient_max = "40 degC"
[environment.zones]
chassis = "60 degC"
[coils.C]
resistance = "8 ohm @ 20 degC"
inductance = "0.5 H"
turns = 400
insulation_class = "H"
hot_temperature = "150 degC"
[[harness]]
id = "WM"
kind = "cable"
from = "B+"
to = "DIST"
size = "120 mm^2"
length = "2 m"
insulation = "C"
zone = "chassis"
[[harness]]
id = "WR"
kind = "ground"
from = "GSTUD"
to = "B-"
size = "120 mm^2"
length = "2 m"
insulation = "C"
zone = "chassis"
"""
    parts = [head]
    for k in range(stages):
        parts.append(f"""[[harness]]
id = "F{k}"
kind = "fuse"
from = "DIST"
to = "F{k}o"
type = "C"
rating = "10 A"
breaking_capacity = "20 kA"
resistance = "5 mohm"
zone = "chassis"
[[harness]]
id = "K{k}"
kind = "relay"
from = "F{k}o"
to = "K{k}o"
rating_24v = "20 A"
resistance = "2 mohm"
rated_ambient = "85 degC"
zone = "chassis"
[[harness]]
id = "W{k}"
kind = "cable"
from = "K{k}o"
to = "S{k}+"
size = "1.5 mm^2"
length = "{1 + (k % 7) * 0.3:.1f} m"
insulation = "C"
zone = "chassis"
[[harness]]
id = "S{k}"
kind = "stage"
coil = "C"
from = "S{k}+"
to = "S{k}-"
[[harness]]
id = "W{k}R"
kind = "ground"
from = "S{k}-"
to = "GSTUD"
size = "1.5 mm^2"
length = "1 m"
insulation = "C"
zone = "chassis"
""")
    return "\n".join(parts)


def best_of(fn, repeat: int) -> tuple[float, float]:
    times = []
    for _ in range(repeat):
        t = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t)
    return min(times), statistics.median(times)


def main() -> None:
    # An installed package runs from its cached bytecode; where the environment forbids writing it
    # (PYTHONDONTWRITEBYTECODE), every run compiles the sources again (≈0.15 s). The processes below
    # keep their bytecode in a scratch folder, as an install would, and the first run warms it.
    env = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
    env["PYTHONPYCACHEPREFIX"] = tempfile.mkdtemp(prefix="coilstage-bench-pyc-")

    def run(cmd: list[str]) -> None:
        subprocess.run(cmd, check=False, capture_output=True, env=env)

    cmd = [sys.executable, "-m", "coilstage", "check", str(DEMO), "-f", "json", "-o", "/dev/null"]
    run(cmd)  # warm the file cache and the bytecode
    lo, med = best_of(lambda: run(cmd), 7)
    print(
        f"demo check, whole process (python -m coilstage check, JSON): best {lo * 1e3:.0f} ms, "
        f"median {med * 1e3:.0f} ms  (target < 1000 ms)"
    )
    cmd_text = [sys.executable, "-m", "coilstage", "check", str(DEMO)]
    lo, med = best_of(lambda: run(cmd_text), 5)
    print(f"demo check, whole process (text report): best {lo * 1e3:.0f} ms, median {med * 1e3:.0f} ms")

    sys.path.insert(0, str(ROOT))
    from coilstage.analysis.circuit import Circuit
    from coilstage.analysis.conditions import corner_sources
    from coilstage.analysis.run import analyse
    from coilstage.drawing.load import parse_drawing

    t = time.perf_counter()
    d = parse_drawing(synthetic(200), "synthetic-200")
    print(f"200-stage drawing: {len(d.elements)} elements, parsed in {(time.perf_counter() - t) * 1e3:.0f} ms")
    circuit = Circuit(d)
    temps, src = corner_sources(d)["hot"]
    circuit.solve(temps, src)
    lo, med = best_of(lambda: circuit.solve(temps, src), 20)
    print(
        f"200-stage solve, one corner (hot, alternator limited): best {lo * 1e3:.1f} ms, median {med * 1e3:.1f} ms"
        "  (target < 50 ms)"
    )
    lo, med = best_of(lambda: analyse(d, switching=False, heating=False), 5)
    print(
        f"200-stage steady-state analysis (3 corners, cold duty of every element, 200 fault currents): "
        f"best {lo * 1e3:.0f} ms, median {med * 1e3:.0f} ms"
    )
    from coilstage import check

    for n in (4, 8, 16):
        dn = parse_drawing(synthetic(n), f"synthetic-{n}")
        lo, med = best_of(lambda dn=dn: check(dn), 3)
        print(
            f"{n}-stage full check (switching scenarios, duty, field and every rule): best {lo * 1e3:.0f} ms, "
            f"median {med * 1e3:.0f} ms"
        )


if __name__ == "__main__":
    main()
