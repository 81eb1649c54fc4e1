"""Benchmarks of sizing. Prints its figures; asserts nothing.

1. Suggestions for every failing verdict of the flawed demo, against its check alone (in-process,
   warm imports, median of runs): the time suggestions add.
2. ``size`` of the flawed demo (in-process, median of runs), and once with the invented workshop
   parts library (configs/parts/).
3. ``size`` of a synthetic 16-stage drawing with undersized branches, 12 V-only relays and no
   suppression (in-process, one run).

Targets: suggestions add < 0.3 s to the flawed demo's
check; size of the flawed demo < 2 s; size of a 16-stage drawing < 10 s.

Run: python benchmarks/bench_sizing.py
"""

from __future__ import annotations

import statistics
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
FLAWED = ROOT / "configs" / "flawed-retrofit-24v.toml"


def synthetic(stages: int) -> str:
    """A 24 V drawing (invented values) with a main fuse and feed, and per stage a branch fuse, a
    relay rated at 12 V only, a thin branch and return, and no suppression: every part needs sizing."""
    head = """[drawing]
title = "synthetic sizing benchmark (invented)"
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
source_resistance = "15 mohm"
limit_idle = "150 A"
limit_rated = "300 A"
[environment]
ambient_min = "-30 degC"
ambient_max = "40 degC"
[environment.zones]
chassis = "60 degC"
[coils.C]
resistance = "2.0 ohm @ 20 degC"
inductance = "80 mH"
turns = 150
insulation_class = "H"
hot_temperature = "150 degC"
[[harness]]
id = "FM"
kind = "fuse"
from = "B+"
to = "F0"
type = "single-bolt"
rating = "300 A"
breaking_capacity = "20 kA"
zone = "chassis"
[[harness]]
id = "WM"
kind = "cable"
from = "F0"
to = "DIST"
size = "70 mm^2"
length = "2 m"
insulation = "C"
zone = "chassis"
[[harness]]
id = "WR"
kind = "ground"
from = "GSTUD"
to = "B-"
size = "95 mm^2"
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
to = "F{k}.2"
type = "SF30"
rating = "40 A"
zone = "chassis"
[[harness]]
id = "K{k}"
kind = "relay"
from = "F{k}.2"
to = "K{k}.87"
rating_12v = "30 A"
rated_ambient = "85 degC"
zone = "chassis"
[[harness]]
id = "W{k}"
kind = "cable"
from = "K{k}.87"
to = "S{k}+"
size = "1.5 mm^2"
length = "{1.5 + 0.25 * k} m"
insulation = "C"
zone = "chassis"
[[harness]]
id = "S{k}"
kind = "stage"
coil = "C"
count = 1
connection = "series"
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


def _median(f, runs: int) -> tuple[float, object]:
    times, out = [], None
    for _ in range(runs):
        t = time.perf_counter()
        out = f()
        times.append(time.perf_counter() - t)
    return statistics.median(times), out


def main() -> None:
    import coilstage
    from coilstage import sizing

    text = FLAWED.read_text(encoding="utf-8")
    d = coilstage.load_drawing(FLAWED)
    coilstage.check(d)  # warm imports and caches
    t_check, (_, verdicts) = _median(lambda: coilstage.check(coilstage.load_drawing(FLAWED)), 5)
    t_sug, sug = _median(lambda: sizing.suggestions(text, str(FLAWED), FLAWED.parent), 3)
    d_checked = coilstage.load_drawing(FLAWED)
    a_checked, v_checked = coilstage.check(d_checked)
    t_given, _ = _median(
        lambda: sizing.suggestions(text, str(FLAWED), FLAWED.parent, checked=(d_checked, a_checked, v_checked)),
        3,
    )
    failing = [v for v in verdicts if v.status.value == "fail"]
    answered = sizing.suggestions_by_verdict(verdicts, sug)
    print(
        f"flawed demo: check {t_check * 1e3:.0f} ms; check + suggestions {t_sug * 1e3:.0f} ms "
        f"(suggestions add {(t_sug - t_check) * 1e3:.0f} ms; target < 300 ms)"
    )
    print(
        f"  suggestions given the check already made (checked=...): {t_given * 1e3:.0f} ms on top of the check "
        "(target < 300 ms)"
    )
    n_ans = sum(1 for v in failing if (v.rule, v.subject) in answered)
    said = sum(
        1
        for v in failing
        if (v.rule, v.subject) not in answered
        and sizing.cannot_change_text(v.rule, v.subject, v.status.value, v.value, v.limit, v.unit) is not None
    )
    print(
        f"  {len(sug)} parts with a suggestion; {n_ans} of {len(failing)} failing verdicts answered by a part, "
        f"{said} by a statement of what sizing does not change, {len(failing) - n_ans - said} by neither"
    )
    t_size, r = _median(lambda: sizing.size_drawing(text, str(FLAWED), FLAWED.parent), 3)
    print(
        f"size flawed demo: {t_size:.2f} s ({len(r.changes)} changes, {r.rounds} rounds, "
        f"{r.evaluations['screen']} screened, {r.evaluations['full']} full checks; target < 2 s)"
    )
    lib = (ROOT / "configs" / "parts",)
    t_lib, r_lib = _median(lambda: sizing.size_drawing(text, str(FLAWED), FLAWED.parent, parts_dirs=lib), 1)
    chosen = sorted({c.new.rsplit("#", 1)[-1] for c in r_lib.changes if c.key == "part"})
    print(
        f"size flawed demo with the invented workshop library: {t_lib:.2f} s (library parts chosen: "
        f"{', '.join(chosen) or 'none'})"
    )
    syn = synthetic(16)
    t = time.perf_counter()
    r16 = sizing.size_drawing(syn, "synthetic-16")
    t16 = time.perf_counter() - t
    left = sum(1 for x in r16.remaining if x["status"] == "fail")
    print(
        f"size synthetic 16 stages: {t16:.2f} s ({len(r16.changes)} changes, {r16.rounds} rounds, "
        f"{r16.evaluations['screen']} screened, {r16.evaluations['full']} full checks, {left} failures left; "
        "target < 10 s)"
    )


if __name__ == "__main__":
    main()
