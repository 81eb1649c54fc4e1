"""Shared helpers: paths of the demo drawings and a small generator of drawing text."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
CONFIGS = ROOT / "configs"
COACH = CONFIGS / "coach-24v-4stage.toml"
TRUCK = CONFIGS / "light-truck-12v-2stage.toml"
FLAWED = CONFIGS / "flawed-retrofit-24v.toml"


def drawing_text(
    *,
    stages: int = 2,
    system: int = 24,
    feed: str = "35 mm^2",
    feed_length: str = "3 m",
    branch: str = "10 mm^2",
    branch_lengths: list[float] | None = None,
    coil_r: list[float] | None = None,
    coil_count: int = 1,
    connection: str = "series",
    battery_r: str = "8 mohm",
    alt_idle: str = "60 A",
    alt_rated: str = "100 A",
    base_load: str = "20 A",
    extra: str = "",
    harness_extra: str = "",
) -> str:
    """TOML text of a simple harness: battery -> fuse -> feed -> DIST -> per stage relay, branch, stage,
    return -> GSTUD -> return cable -> B-."""
    branch_lengths = branch_lengths or [2.0] * stages
    coil_r = coil_r or [1.0] * stages
    code = "F" if system == 24 else "C"
    emf, setpoint = (25.2, 28.0) if system == 24 else (12.6, 14.0)
    rating_key = "rating_24v" if system == 24 else "rating_12v"
    parts = [
        f"""[drawing]
title = "generated"
[supply]
system = "{system} V"
code = "{code}"
base_load = "{base_load}"
[supply.battery]
emf = "{emf} V"
internal_resistance = "{battery_r}"
[supply.alternator]
setpoint = "{setpoint} V"
tolerance = "0.3 V"
source_resistance = "20 mohm"
limit_idle = "{alt_idle}"
limit_rated = "{alt_rated}"
[environment]
ambient_min = "-30 degC"
ambient_max = "40 degC"
[environment.zones]
chassis = "60 degC"
{extra}
"""
    ]
    for k in range(stages):
        parts.append(
            f"""[coils.C{k}]
resistance = "{coil_r[k]} ohm @ 20 degC"
inductance = "50 mH"
turns = 150
insulation_class = "H"
hot_temperature = "150 degC"
"""
        )
    parts.append(
        f"""[[harness]]
id = "FM"
kind = "fuse"
from = "B+"
to = "F0"
type = "single-bolt"
rating = "300 A"
breaking_capacity = "20 kA"
resistance = "0.2 mohm"
zone = "chassis"
[[harness]]
id = "WM"
kind = "cable"
from = "F0"
to = "DIST"
size = "{feed}"
length = "{feed_length}"
insulation = "C"
zone = "chassis"
[[harness]]
id = "WR"
kind = "ground"
from = "GSTUD"
to = "B-"
size = "{feed}"
length = "{feed_length}"
insulation = "C"
zone = "chassis"
"""
    )
    for k in range(stages):
        parts.append(
            f"""[[harness]]
id = "K{k}"
kind = "relay"
from = "DIST"
to = "K{k}.87"
{rating_key} = "150 A"
rated_ambient = "85 degC"
resistance = "0.5 mohm"
zone = "chassis"
[[harness]]
id = "W{k}"
kind = "cable"
from = "K{k}.87"
to = "S{k}+"
size = "{branch}"
length = "{branch_lengths[k]} m"
insulation = "C"
zone = "chassis"
[[harness]]
id = "S{k}"
kind = "stage"
coil = "C{k}"
count = {coil_count}
connection = "{connection}"
from = "S{k}+"
to = "S{k}-"
[[harness]]
id = "W{k}R"
kind = "ground"
from = "S{k}-"
to = "GSTUD"
size = "{branch}"
length = "1 m"
insulation = "C"
zone = "chassis"
"""
        )
    parts.append(harness_extra)
    return "\n".join(parts)


@pytest.fixture
def coach_path() -> Path:
    return COACH


def problems(text: str) -> list[str]:
    """Every problem the loader reports for a drawing ``text`` that must be refused, one line each."""
    from coilstage.drawing.load import parse_drawing
    from coilstage.errors import DrawingError

    with pytest.raises(DrawingError) as exc:
        parse_drawing(text, "test.toml")
    return [str(p) for p in exc.value.problems]


def one(text: str, where: str) -> str:
    """The first problem reported at the key path ``where`` (the test fails if there is none)."""
    found = [p for p in problems(text) if p.startswith(where)]
    assert found, f"no problem at {where}: {problems(text)}"
    return found[0]


def coach_with_parts() -> str:
    """The coach with F1 from the invented workshop library (its rating written over), K1 by name
    alone and S1's suppressor from the library; the [tables] parts entry names the library."""
    import tomllib

    from coilstage.wirelist import toml_dumps

    raw = tomllib.loads(COACH.read_text(encoding="utf-8"))
    el = {e["id"]: e for e in raw["harness"]}
    for k in ("type", "rating", "voltage_rating", "breaking_capacity", "melting_i2t", "resistance"):
        del el["F1"][k]
    el["F1"]["part"] = "parts/workshop-parts.toml#F-100-B"
    el["F1"]["rating"] = "80 A"
    for k in ("rating_24v", "rating_12v", "rated_ambient", "derating", "voltage_rating", "resistance"):
        del el["K1"][k]
    el["K1"]["part"] = "K-150-24-HV"  # its 110 V version: the coach's contactors
    el["K1"]["coil"] = {"feed_resistance": "1.5 ohm", "rise": "25 K"}
    el["S1"]["suppression"] = {"part": "DZ-24-150"}
    raw.setdefault("tables", {})["parts"] = "parts/workshop-parts.toml"
    return toml_dumps(raw)


# ---------------------------------------------------------------- editing one element of a drawing text


def _block(text: str, elem_id: str) -> tuple[int, int]:
    i = text.index(f'id = "{elem_id}"')
    s = text.rindex("[[harness]]", 0, i)
    e = text.find("[[harness]]", i)
    return s, (len(text) if e < 0 else e)


def set_key(text: str, elem_id: str, key: str, value: str) -> str:
    """The drawing text with ``key = value`` set in the harness element ``elem_id``."""
    s, e = _block(text, elem_id)
    b = text[s:e]
    if re.search(rf"^{key} = .*$", b, flags=re.M):
        b = re.sub(rf"^{key} = .*$", lambda m: f"{key} = {value}", b, flags=re.M)
    else:
        b = b.rstrip("\n") + f"\n{key} = {value}\n\n"
    return text[:s] + b + text[e:]


def del_key(text: str, elem_id: str, key: str) -> str:
    """The drawing text with ``key`` removed from the harness element ``elem_id``."""
    s, e = _block(text, elem_id)
    return text[:s] + re.sub(rf"^{key} = .*\n", "", text[s:e], flags=re.M) + text[e:]


def drawing_at_sample(d, ps, x):
    """The drawing changed to one sample ``x`` of its declared parameters ``ps`` (in their order), by
    hand: each coil's reference resistance and each cable's length scaled by its tolerance (R is
    proportional to both). Returns the drawing and the sample as parameter key -> value."""
    import dataclasses

    from coilstage.drawing.schema import Cable, Stage

    col = {p.key: v for p, v in zip(ps, x, strict=True)}
    scale = {}
    for p, v in zip(ps, x, strict=True):
        for eid in p.elements:
            scale[eid] = 1.0 + v
    els = []
    for e in d.elements:
        if isinstance(e, Stage) and e.id in scale:
            e = dataclasses.replace(e, coil=dataclasses.replace(e.coil, r_ref=e.coil.r_ref * scale[e.id]))
        elif isinstance(e, Cable) and e.id in scale:
            e = dataclasses.replace(e, length=e.length * scale[e.id])
        els.append(e)
    return dataclasses.replace(d, elements=tuple(els)), col
