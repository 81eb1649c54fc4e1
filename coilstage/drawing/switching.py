"""The ``[switching]`` section (switch positions, the switching window) and the ``[duty]`` section (a duty
profile: the drawing's own steps or a shipped one).
"""

from __future__ import annotations

from typing import Any

from coilstage import tables
from coilstage.units import (
    parse_dimensionless,
    parse_quantity,
)

from .defaults import default
from .reader import Reader
from .schema import (
    Duty,
    DutyStep,
    Position,
    Switching,
)

#: key path -> the keys allowed there
KEYS = {
    "switching": {"cycles", "duration", "off_at", "positions", "release_fraction", "release_limit"},
    "position": {"at", "name", "stages"},
    "duty": {"min_state_of_charge", "profile", "state_of_charge", "steps"},
    "duty_step": {"duration", "engine", "moving", "stages"},
}


def read_switching(r: Reader, raw: dict, stage_ids: set[str]) -> Switching | None:
    sw = r.table(raw, "switching", "switching", required=False) or {}
    r.unknown(sw, KEYS["switching"], "switching")
    duration = r.quantity(sw, "duration", "switching", "time", default=default("switching.duration"), positive=True)
    off_at = r.quantity(sw, "off_at", "switching", "time", default=None, positive=True)
    rel = r.quantity(sw, "release_limit", "switching", "time", default=None, positive=True)
    frac = r.value(
        sw, "release_fraction", "switching", parse_dimensionless, default=default("switching.release_fraction")
    )
    cycles = r.integer(sw, "cycles", "switching", default=default("switching.cycles"))
    positions = []
    raw_pos = sw.get("positions", [])
    if not isinstance(raw_pos, list):
        r.problem("switching.positions", raw_pos, "a list of [[switching.positions]] tables")
        raw_pos = []
    last = -1.0
    for k, p in enumerate(raw_pos):
        pw = f"switching.positions[{k}]"
        if not isinstance(p, dict):
            r.problem(pw, p, "a table with name, at and stages")
            continue
        r.unknown(p, KEYS["position"], pw)
        name = r.text(p, "name", pw, default=str(k + 1))
        at = r.value(p, "at", pw, lambda t: parse_quantity(t, "time"))
        st = p.get("stages", None)
        if not isinstance(st, list) or not all(isinstance(x, str) for x in st):
            r.problem(f"{pw}.stages", st, "a list of stage ids (empty for off)")
            continue
        bad = [x for x in st if x not in stage_ids]
        if bad:
            r.problem(f"{pw}.stages", bad, "stage ids from the harness: " + ", ".join(sorted(stage_ids)))
        if at is not None:
            if at < 0 or at <= last:
                r.problem(f"{pw}.at", p["at"], "a time of at least 0 s, later than the position before")
            last = at
            positions.append(Position(name, at, tuple(st)))
    if None in (duration, frac, cycles):
        return None
    off = off_at if off_at is not None else duration * default("switching.off_share")
    if not off < duration:
        r.problem("switching.off_at", sw.get("off_at"), "a time before switching.duration")
        return None
    if not 0 < frac < 1:
        r.problem("switching.release_fraction", sw.get("release_fraction"), "a fraction between 0 and 1")
        return None
    return Switching(tuple(positions), duration, off, rel, frac, cycles)


def _step_stages(spec: Any, stage_ids: list[str], switching: Switching | None) -> tuple[str, ...]:
    """A duty step's stages: "all", "none", a switching position's name, or a list of stage ids."""
    if spec == "all":
        return tuple(stage_ids)
    if spec in ("none", "off"):
        return ()
    if isinstance(spec, str) and switching is not None:
        for p in switching.positions:
            if p.name == spec:
                return p.stages
    if isinstance(spec, list) and all(isinstance(x, str) and x in stage_ids for x in spec):
        return tuple(spec)
    names = [p.name for p in switching.positions] if switching else []
    raise ValueError(
        '"all", "none", a switching position (' + ", ".join(names or ["none defined"]) + ") or a list of stage ids"
    )


def shipped_steps(name: str, stage_ids: list[str], switching: Switching | None) -> tuple[DutyStep, ...]:
    """The steps of the shipped duty profile ``name`` (coilstage/data/duty_profiles.toml) for a drawing
    with these stages and switching positions: the one expansion of a shipped profile, used by the
    loader, by the check's continuous duty (:func:`coilstage.analysis.duty.shipped_duty`) and by the
    ``descent --profile`` command. Raises ValueError, its message saying what was expected, where
    ``name`` is no shipped profile or a step's stage column names no stage or position of the drawing."""
    profiles = tables.duty_profiles()
    if name not in profiles:
        raise ValueError(f"{name!r} is no shipped profile; expected one of {', '.join(profiles)}")
    steps = []
    for k, (dur, stg, eng, mov) in enumerate(profiles[name]["steps"]):
        try:
            on = _step_stages(stg, stage_ids, switching)
        except ValueError as exc:
            raise ValueError(
                f"step {k + 1} of the shipped profile {name} runs {stg!r}, which this drawing lacks; expected {exc}"
            ) from None
        steps.append(DutyStep(parse_quantity(dur, "time"), on, eng, mov, f"step {k + 1}"))
    return tuple(steps)


def read_duty(r: Reader, raw: dict, stage_ids: list[str], switching: Switching | None) -> Duty | None:
    """The duty profile: the drawing's own steps, or a shipped profile (default: endurance)."""
    du = r.table(raw, "duty", "duty", required=False) or {}
    r.unknown(du, KEYS["duty"], "duty")
    soc = r.share(du, "state_of_charge", "duty", default=None)
    if soc is None and "state_of_charge" not in du:
        soc = default("duty.state_of_charge")
        r.assume("duty.state_of_charge not given: the battery starts the duty fully charged")
    min_soc = r.share(du, "min_state_of_charge", "duty", default=None)
    if min_soc is None and "min_state_of_charge" not in du:
        min_soc = default("duty.min_state_of_charge")
        r.assume(
            f"duty.min_state_of_charge not given: {min_soc * 100:g} % (common practice: a lead-acid battery kept "
            "above half charge can still start the engine)"
        )
    profiles = tables.duty_profiles()
    steps: list[DutyStep] = []
    if "steps" in du and "profile" in du:
        r.problem("duty.profile", du["profile"], "either a shipped profile or steps, not both")
        return None
    if "steps" in du:
        name, desc = "drawing", "duty profile given in the drawing"
        raw_steps = du["steps"]
        if not isinstance(raw_steps, list) or not raw_steps:
            r.problem("duty.steps", raw_steps, "a list of [[duty.steps]] tables")
            return None
        for k, st in enumerate(raw_steps):
            w = f"duty.steps[{k}]"
            if not isinstance(st, dict):
                r.problem(w, st, "a table with duration, stages, engine")
                continue
            r.unknown(st, KEYS["duty_step"], w)
            dur = r.quantity(st, "duration", w, "time", positive=True)
            stg = r.value(st, "stages", w, lambda x: _step_stages(x, stage_ids, switching))
            eng = r.text(st, "engine", w, default="driving", choices=["idle", "driving"])
            mov = st.get("moving", True)
            if not isinstance(mov, bool):
                r.problem(f"{w}.moving", mov, "true or false")
                continue
            if None not in (dur, stg, eng):
                steps.append(DutyStep(dur, stg, eng, mov, f"step {k + 1}"))
    else:
        name = du.get("profile", default("duty.profile"))
        if "profile" not in du:
            r.assume("duty.profile not given: the shipped endurance descent (about 12 min of full retardation)")
        if not isinstance(name, str) or name not in profiles:
            r.problem("duty.profile", name, f"one of the shipped profiles {', '.join(profiles)} (or [[duty.steps]])")
            return None
        row = profiles[name]
        desc = f"{row['description']} ({row['status']})"
        try:
            steps.extend(shipped_steps(name, stage_ids, switching))
        except ValueError as exc:
            r.problem("duty.profile", name, f"a shipped profile this drawing can run ({exc})")
            return None
    if soc is None or min_soc is None:
        return None
    if not 0 <= min_soc < soc <= 1:
        r.problem(
            "duty.state_of_charge",
            du.get("state_of_charge", soc),
            "0 <= min_state_of_charge < state_of_charge <= 100 %",
        )
        return None
    return Duty(name, desc, tuple(steps), soc, min_soc)
