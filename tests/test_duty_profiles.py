"""A shipped duty profile has one expansion (coilstage.drawing.switching.shipped_steps), whichever way it
is reached: the loader's ``[duty] profile``, the check's continuous run (analysis.duty.continuous_duty)
and ``coilstage descent --profile``; each honours the profile's stage column. A profile the drawing
cannot run is bad input: exit 2 with a message, no traceback."""

from __future__ import annotations

import pytest

from coilstage import tables
from coilstage.analysis import duty as duty_module
from coilstage.analysis.duty import continuous_duty, shipped_duty
from coilstage.cli import main
from coilstage.drawing.load import parse_drawing
from tests.conftest import drawing_text

#: two switching positions and a duty naming a shipped profile (the profile itself is patched in below)
SWITCHING = """
[switching]
[[switching.positions]]
name = "low"
at = "0 s"
stages = ["S0"]
[[switching.positions]]
name = "high"
at = "0.2 s"
stages = ["S0", "S1"]
[duty]
profile = "stepped"
"""

#: a profile whose stage column matters: a position, "none", a list of ids
STEPPED = {
    "name": "stepped",
    "description": "test profile: low, coast, one stage",
    "status": "test",
    "steps": [["20 s", "low", "driving", True], ["10 s", "none", "idle", False], ["10 s", ["S1"], "driving", True]],
}


@pytest.fixture
def profiles(monkeypatch):
    """The shipped profiles plus ``stepped``, and ``continuous`` run on the position ``low`` only."""
    real = tables.duty_profiles()
    patched = dict(real)
    patched["stepped"] = STEPPED
    patched["continuous"] = {**real["continuous"], "steps": [["30 s", "low", "driving", True]]}
    monkeypatch.setattr(tables, "duty_profiles", lambda: patched)
    return patched


def _drawing(extra: str = SWITCHING):
    return parse_drawing(drawing_text(extra=extra), "d.toml")


def test_the_check_expansions_honour_the_stage_column(profiles):
    d = _drawing()
    on = [st.stages for st in d.duty.steps]  # the loader's expansion of [duty] profile = "stepped"
    assert on == [("S0",), (), ("S1",)]
    assert [st.duration for st in d.duty.steps] == [20.0, 10.0, 10.0]
    assert shipped_duty(d, "stepped").steps == d.duty.steps
    # the check's continuous run: the position "low" is S0 alone, not every stage of the drawing
    assert [st.stages for st in continuous_duty(d).steps] == [("S0",)]


def test_descent_profile_runs_the_expansion_the_check_runs(profiles, monkeypatch, tmp_path):
    seen = []
    real = duty_module.simulate

    def recording(d, duty=None, **kw):
        seen.append(duty)
        return real(d, duty, **kw)

    monkeypatch.setattr(duty_module, "simulate", recording)
    path = tmp_path / "d.toml"
    path.write_text(drawing_text(extra=SWITCHING), encoding="utf-8")
    d = _drawing()
    for name, expected in (("stepped", d.duty.steps), ("continuous", continuous_duty(d).steps)):
        seen.clear()
        assert main(["descent", str(path), "--profile", name, "-o", str(tmp_path / name)]) == 0
        assert [s.steps for s in seen] == [expected]


@pytest.mark.parametrize("name", ["nonesuch", ""])
def test_descent_refuses_an_unknown_profile(name, tmp_path, capsys):
    path = tmp_path / "d.toml"
    path.write_text(drawing_text(), encoding="utf-8")
    out = tmp_path / "o"
    assert main(["descent", str(path), "--profile", name, "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert "--profile" in err and "continuous, endurance" in err and "Traceback" not in err
    assert not out.exists() or not any(out.iterdir())


def test_descent_refuses_a_profile_the_drawing_cannot_run(profiles, tmp_path, capsys):
    # no [switching]: the position "low" of the stepped profile names nothing in this drawing
    path = tmp_path / "d.toml"
    path.write_text(drawing_text(), encoding="utf-8")
    assert main(["descent", str(path), "--profile", "stepped", "-o", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert "step 1 of the shipped profile stepped" in err and "'low'" in err and "Traceback" not in err


def test_the_loader_reports_a_profile_the_drawing_cannot_run(profiles):
    from coilstage.errors import DrawingError

    with pytest.raises(DrawingError) as exc:
        _drawing('[duty]\nprofile = "stepped"\n')
    assert [p.where for p in exc.value.problems] == ["duty.profile"]
    assert "'low'" in exc.value.problems[0].expected


def test_a_drawing_whose_duty_is_the_continuous_profile_runs_it_once(monkeypatch):
    """The flawed demo's own duty is the shipped continuous profile: analyse simulates it once per set of
    conditions (worst and nominal), and each result names its own profile with the figures of a
    separate simulation of the continuous profile, to the last bit. (A profile with the same steps and
    another starting charge cannot be written today: the shipped profiles take the drawing's; the
    match on the starting charge is defensive.)"""
    import numpy as np

    from coilstage.analysis.duty import duty_conditions, nominal_conditions, simulate
    from coilstage.analysis.run import analyse
    from coilstage.drawing.load import load_drawing

    d = load_drawing("configs/flawed-retrofit-24v.toml")
    runs = []
    real = duty_module.simulate

    def counted(*args, **kwargs):
        runs.append(1)
        return real(*args, **kwargs)

    monkeypatch.setattr(duty_module, "simulate", counted)
    a = analyse(d)
    assert len(runs) == 2  # the worst and the nominal run, once each
    cond = duty_conditions(d)
    for got, c in ((a.continuous, cond), (a.continuous_nominal, nominal_conditions(cond))):
        alone = simulate(d, continuous_duty(d), conditions=c)
        assert got.duty == continuous_duty(d)
        for name in ("t", "stage_temperature", "cable_temperature", "charge_drawn", "bus_voltage"):
            np.testing.assert_array_equal(getattr(got, name), getattr(alone, name))
    assert a.descent.duty == d.duty and a.descent.duty.description != a.continuous.duty.description
