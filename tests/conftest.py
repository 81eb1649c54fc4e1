"""Shared helpers: paths of the demo drawings and a small generator of drawing text."""

from __future__ import annotations

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
