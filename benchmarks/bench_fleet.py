"""Benchmark of fleet mode. Prints its figures; asserts nothing.

200 generated four-stage drawings (the 24 V starter drawing, each with its own base load and
branch lengths; invented values) are checked with ``fleet.run_many`` on 2 worker processes, as
``coilstage check DIR --summary -j 2`` does: every drawing loaded, analysed (corners, switching,
duty, field) and every rule run; the summary printed (to a buffer here). The per-drawing cost is
the wall time divided by the number of drawings, and the median of the workers' own timings.

Target: 200 four-stage drawings on 2 cores in
under a minute.

Run: python benchmarks/bench_fleet.py [N_DRAWINGS] [JOBS]
"""

from __future__ import annotations

import io
import json
import statistics
import sys
import tempfile
import time
from pathlib import Path

from coilstage import fleet
from coilstage.starter import starter_text


def variant(k: int) -> str:
    """The four-stage starter with a base load and branch lengths of its own (invented)."""
    text = starter_text(24, 4).replace('base_load = "40 A"', f'base_load = "{30 + k % 20} A"', 1)
    for s, base in ((1, 2.0), (2, 2.3), (3, 2.6), (4, 2.9)):
        old = f'to = "S{s}+"\nsize = "20 mm^2"\nlength = "{base:.1f} m"'
        assert old in text, old
        text = text.replace(old, f'to = "S{s}+"\nsize = "20 mm^2"\nlength = "{base + 0.01 * (k % 50):.2f} m"')
    return text


def main() -> None:
    n = int(sys.argv[1]) if len(sys.argv) > 1 else 200
    jobs = int(sys.argv[2]) if len(sys.argv) > 2 else 2
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp) / "fleet"
        folder.mkdir()
        for k in range(n):
            (folder / f"coach-{k:03d}.toml").write_text(variant(k), encoding="utf-8")
        out, err = io.StringIO(), io.StringIO()
        t = time.perf_counter()
        code = fleet.run_many([str(folder)], jobs=jobs, summary_format="json", stdout=out, stderr=err, progress=False)
        wall = time.perf_counter() - t
    data = json.loads(out.getvalue())
    counts = data["counts"]
    print(f"{n} four-stage drawings on {jobs} worker processes (machine: {fleet.default_jobs()} cores)")
    print(f"results: {counts}; exit code {code}")
    print(f"wall time:                    {wall:6.1f} s   target < 60 s")
    print(f"per drawing (wall / N):       {wall / n * 1e3:6.0f} ms")
    # the workers' own time per drawing is not in the JSON summary: time a few in this process
    times = []
    for k in range(5):
        with tempfile.TemporaryDirectory() as tmp:
            p = Path(tmp) / "one.toml"
            p.write_text(variant(k), encoding="utf-8")
            times.append(fleet.check_one(str(p)).seconds)
    print(f"one drawing in one process:   {statistics.median(times[1:]) * 1e3:6.0f} ms (median; load, analyse, rules)")


if __name__ == "__main__":
    main()
