"""coilstage init: the starter drawing loads, checks without a FAIL, and explains every key."""

from __future__ import annotations

import argparse
import re

import pytest

from coilstage import check
from coilstage.checks.base import Status
from coilstage.drawing.load import load_drawing, parse_drawing
from coilstage.starter import STAGES, add_arguments, run, starter_text

CASES = [(system, n) for system, counts in STAGES.items() for n in counts]


@pytest.mark.parametrize("system, stages", CASES, ids=[f"{s}V-{n}" for s, n in CASES])
def test_starter_checks_without_a_fail(system, stages):
    drawing = parse_drawing(starter_text(system, stages), "starter")
    assert drawing.supply.system_voltage == system
    assert len(drawing.stages) == stages
    _analysis, verdicts = check(drawing)
    fails = [(v.rule, v.subject, v.note) for v in verdicts if v.status is Status.FAIL]
    assert fails == []
    # the only warnings allowed: the example alternator smaller than the retarder's demand, and a fuse
    # whose cyclic duty is judged on the shipped default factor (the rule then asks for the maker's own)
    warns = {v.rule for v in verdicts if v.status is Status.WARN}
    assert warns <= {"supply.alternator", "fuse.cyclic_duty"}
    for v in verdicts:
        if v.rule == "fuse.cyclic_duty" and v.status is Status.WARN:
            assert "maker's cyclic rating decides" in v.note


def test_every_key_explained_and_invented_values_marked():
    text = starter_text(24, 4)
    assert text.startswith("# STARTER DRAWING — an INVENTED example")
    assert "Caution" in text and "maker's instructions" in text
    keys: dict[str, bool] = {}
    for line in text.splitlines():
        m = re.match(r"^([A-Za-z_][\w.]*)\s*=", line)
        if m:
            keys[m.group(1)] = keys.get(m.group(1), False) or "#" in line.split("=", 1)[1]
    # suppression is explained on the comment line that follows it
    unexplained = sorted(k for k, ok in keys.items() if not ok and k != "suppression")
    assert unexplained == []
    assert "# suppression:" in text
    # every figure describing a vehicle says it is invented
    for key in ("emf", "internal_resistance", "limit_idle", "limit_rated", "resistance", "inductance", "rating"):
        line = next(ln for ln in text.splitlines() if ln.startswith(f"{key} ="))
        assert "invented" in line, line


def _args(argv):
    p = argparse.ArgumentParser()
    add_arguments(p)
    return p.parse_args(argv)


def test_run_writes_a_drawing_that_loads(tmp_path):
    out = tmp_path / "new.toml"
    assert run(_args(["--system", "12V", "--stages", "2", "-o", str(out)])) == 0
    d = load_drawing(out)
    assert d.supply.system_voltage == 12 and [s.id for s in d.stages] == ["S1", "S2"]


def test_run_never_overwrites_without_force(tmp_path):
    out = tmp_path / "mine.toml"
    out.write_text("my own work", encoding="utf-8")
    assert run(_args(["-o", str(out)])) == 2
    assert out.read_text(encoding="utf-8") == "my own work"
    assert run(_args(["-o", str(out), "--force"])) == 0
    assert len(load_drawing(out).stages) == 4  # the defaults: 24 V, four stages


def test_bad_arguments(tmp_path, capsys):
    assert run(_args(["--stages", "9", "-o", str(tmp_path / "x.toml")])) == 2
    assert "expected 1 to 6 for a 24 V system" in capsys.readouterr().err
    assert not (tmp_path / "x.toml").exists()
    with pytest.raises(SystemExit):
        _args(["--system", "48V", "-o", "x.toml"])
