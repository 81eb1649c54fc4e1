"""Benchmark of the wire-list import. Prints its figures; asserts nothing.

A 500-row wire list (a main feed and return, then 99 branches of fuse, contactor, cable, stage and
return, and three spare rows of joints; invented values) is imported with the base of the example
wire list: reading the CSV, making every harness entry, writing the drawing text and loading it
(every value and the topology checked) — what ``coilstage import`` does, without the final write.
The same wire list as .xlsx is timed too when openpyxl is installed.

Target (issue: drawings from what the workshop already has): a 500-row wire list imported in under 1 s.

Run: python benchmarks/bench_wirelist.py
"""

from __future__ import annotations

import csv
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

from coilstage.wirelist import build_drawing, read_sheet, write_wirelist

ROOT = Path(__file__).resolve().parent.parent
BASE = ROOT / "configs" / "wirelist-example.base.toml"
HEADER = [
    "id",
    "kind",
    "from",
    "to",
    "size [mm²]",
    "length [m]",
    "insulation",
    "zone",
    "type",
    "rating",
    "voltage_rating",
    "resistance",
    "coil",
    "count",
    "connection",
    "suppression.kind",
]


def rows(n: int = 500) -> list[list[str]]:
    """``n`` rows of a harness that loads (invented values)."""
    out = [
        ["F-MAIN", "fuse", "B+", "F0", "", "", "", "chassis_rail", "SF51", "500 A", "32 V", "0.1 mohm", "", "", "", ""],
        ["W-MAIN", "cable", "F0", "DIST", "120", "3", "C", "chassis_rail", "", "", "", "", "", "", "", ""],
        ["W-RET", "ground", "GSTUD", "B-", "120", "3", "C", "chassis_rail", "", "", "", "", "", "", "", ""],
        ["W-ALT", "cable", "ALT", "B+", "95", "3", "D", "engine_bay", "", "", "", "", "", "", "", ""],
        ["W-STRAP", "ground", "CHASSIS", "B-", "95", "0.6", "C", "chassis_rail", "", "", "", "", "", "", "", ""],
    ]
    k = 0
    while len(out) + 5 <= n:
        k += 1
        out += [
            [
                f"F{k}",
                "fuse",
                "DIST",
                f"K{k}.30",
                "",
                "",
                "",
                "retarder_box",
                "B",
                "100 A",
                "32 V",
                "0.3 mohm",
                "",
                "",
                "",
                "",
            ],
            [
                f"K{k}",
                "relay",
                f"K{k}.30",
                f"K{k}.87",
                "",
                "",
                "",
                "retarder_box",
                "",
                "150 A",
                "60 V",
                "0.5 mohm",
                "",
                "",
                "",
                "",
            ],
            [
                f"W{k}",
                "cable",
                f"K{k}.87",
                f"S{k}+",
                "16",
                f"{2 + 0.01 * k:.2f}",
                "C",
                "chassis_rail",
                "",
                "",
                "",
                "",
                "",
                "",
                "",
                "",
            ],
            [f"S{k}", "stage", f"S{k}+", f"S{k}-", "", "", "", "", "", "", "", "", "RX3", "2", "parallel", "diode"],
            [f"W{k}R", "ground", f"S{k}-", "GSTUD", "16", "1.5", "C", "chassis_rail", "", "", "", "", "", "", "", ""],
        ]
    j = 0
    while len(out) < n:
        j += 1
        out.append([f"J{j}", "joint", "GSTUD", f"J{j}", "", "", "", "", "", "", "", "0.1 mohm", "", "", "", ""])
        out[-1][3] = "B-"  # a joint in parallel with the return: a real element, no dangling node
    return out


def _time(f, repeat: int = 5) -> float:
    runs = []
    for _ in range(repeat):
        t = time.perf_counter()
        f()
        runs.append(time.perf_counter() - t)
    return statistics.median(runs)


def main() -> None:
    with tempfile.TemporaryDirectory() as tmp:
        data = rows(500)
        wl = Path(tmp) / "big.csv"
        with wl.open("w", newline="", encoding="utf-8") as f:
            w = csv.writer(f)
            w.writerow(HEADER)
            w.writerows(data)
        result = build_drawing(wl, BASE, Path(tmp) / "big.toml")  # warm (and checks it loads)
        print(f"wire list: {result.rows} rows, drawing text {len(result.text) / 1000:.0f} kB")
        t_read = _time(lambda: read_sheet(wl))
        t_all = _time(lambda: build_drawing(wl, BASE, Path(tmp) / "big.toml"))
        print(f"read the CSV:                     {t_read * 1e3:7.1f} ms")
        print(f"import (read, build, load):       {t_all * 1e3:7.1f} ms   target < 1000 ms")
        out = Path(tmp) / "big-process.toml"
        code = (
            "import argparse, sys; from coilstage.wirelist import run_import; "
            f"sys.exit(run_import(argparse.Namespace(wirelist={str(wl)!r}, output={str(out)!r}, base={str(BASE)!r})))"
        )
        t_proc = _time(lambda: subprocess.run([sys.executable, "-c", code], check=True, capture_output=True), 3)
        print(f"the same as a whole process:      {t_proc * 1e3:7.1f} ms   (interpreter start, imports, write)")
        try:
            import openpyxl  # noqa: F401
        except ImportError:
            print("xlsx: openpyxl not installed, not timed")
            return
        x = Path(tmp) / "big.xlsx"
        write_wirelist(x, HEADER, data)
        t_x = _time(lambda: build_drawing(x, BASE, Path(tmp) / "big.toml"))
        print(f"import of the same as .xlsx:      {t_x * 1e3:7.1f} ms")


if __name__ == "__main__":
    main()
