"""Each fuse's thermal state along the drawing's duty: the share of its must-not-open time the duty
uses, by Miner's linear damage sum Σ dt / t_min(I) over the steps of the duty simulation (the
current of each step taken at its midpoint, the trapezoid rule), t_min read from the fuse's
time-current gates at I over its rating rerated for its zone. A step whose current lies below the
gates (t_min infinite: the fuse carries it indefinitely) adds nothing. Common practice (no source):
the linear sum is the usual reading of a varying load against a time-current gate."""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from coilstage import tables
from coilstage.analysis.duty import DutyResult
from coilstage.drawing.schema import Drawing, Fuse


@dataclass(frozen=True)
class FuseDuty:
    """A fuse along the duty: the share of its must-not-open time used [-] (1: at its gate), its
    highest current [A] and its rating rerated for its zone [A]."""

    fuse: str
    used: float
    peak: float
    carry: float
    model: str = (
        "Miner's linear sum of dt / t_min(I) over the duty simulation's steps, I at each step's midpoint "
        "(trapezoid), t_min from the fuse's time-current gates (common practice, no source)"
    )


def fuse_duty(d: Drawing, descent: DutyResult | None) -> dict[str, FuseDuty | str]:
    """Each fuse's figures along ``descent`` (the simulated duty profile), or why there are none;
    empty where no duty was simulated."""
    if descent is None:
        return {}
    out: dict[str, FuseDuty | str] = {}
    dt = np.diff(descent.t)
    for f in d.of_kind(Fuse):
        if not f.gates:
            out[f.id] = f"no time-current gates for type {f.fuse_type}"
            continue
        g = tables.FuseGates(f.gates, f.gates_source)
        carry = f.rating * tables.fuse_rerating(f.zone_temperature)
        i = np.abs(descent.device_current[f.id])
        im = 0.5 * (i[1:] + i[:-1])
        t_min = [g.t_min(x / carry) for x in im]  # once per step
        used = float(sum(s / t for s, t in zip(dt, t_min, strict=True) if math.isfinite(t) and t > 0))
        out[f.id] = FuseDuty(f.id, used, float(np.max(i)) if len(i) else 0.0, carry)
    return out
