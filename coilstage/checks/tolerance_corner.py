"""Steady-state verdicts decided at the worst corner of the declared tolerances.

A rule decides its verdict at its own worst operating case (``analysis.worst``: the largest current,
the lowest bus, the largest fault) with the tolerance ends that case is built from. The declared
tolerances can combine worse than that: the coil resistance low, the harness long, the regulator cold
and its compensation steep, all at once. :mod:`coilstage.analysis.sensitivities` finds that
combination (the worst corner, from the sensitivity signs and a corner search) for the steady-state
rules :mod:`coilstage.analysis.params` models, in the same consistent vehicle state as the rules (the
zones following the ambient). Where the corner gives a lower margin than the rule's own worst case,
the verdict is decided there: its status is the worse of the two, its value, limit and margin the
corner's, and its note and deciding inputs say so.
"""

from __future__ import annotations

import dataclasses
from collections.abc import Mapping

import numpy as np

from coilstage.analysis.params import Evaluated, evaluate, model, nominal
from coilstage.analysis.sensitivities import VerdictSensitivity
from coilstage.checks.base import Status, Verdict
from coilstage.drawing.schema import Drawing

_STATUS = (Status.PASS, Status.WARN, Status.FAIL)
_RANK = {Status.PASS: 0, Status.NOT_CHECKED: 1, Status.WARN: 2, Status.FAIL: 3}
#: a corner margin lower than the rule's by less than this (a fraction: a thousandth of a point) is the
#: same case reached two ways (interpolated limits, a solve's round-off), not a worse one
SAME = 1e-5
CONDITIONS = "worst corner of the declared tolerances"


def corner_figures(d: Drawing, found: Mapping[tuple[str, str], VerdictSensitivity]) -> dict[tuple[str, str], tuple]:
    """(value, limit, unit, margin, status) of each verdict at its worst corner: one batched evaluation of
    the distinct corners."""
    if not found:
        return {}
    keys = list(found)
    return _figures(d, keys, np.array([found[k].corner.x for k in keys]))


def corners_of(found: Mapping[tuple[str, str], VerdictSensitivity]) -> dict[tuple[str, str], dict[str, float]]:
    """Each verdict's worst corner as parameter key -> value (the parameters off nominal there), to judge
    other drawings at the same corners (:func:`figures_at`)."""
    out = {}
    for k, vs in found.items():
        out[k] = {p.key: float(x) for p, x in zip(vs.parameters, vs.corner.x, strict=True)}
    return out


def figures_at(d: Drawing, corners: Mapping[tuple[str, str], Mapping[str, float]]) -> dict[tuple[str, str], tuple]:
    """(value, limit, unit, margin, status) of each verdict of ``d`` at a corner given by parameter key
    (found on another drawing: a candidate part judged at the corners of the drawing it replaces a
    part of); a parameter ``d`` does not declare is left out, one the corner does not name is nominal.
    One batched evaluation of the distinct corners."""
    if not corners:
        return {}
    ps = model(d).params
    x0 = nominal(ps)
    keys = list(corners)
    xs = np.array([[corners[k].get(p.key, x0[j]) for j, p in enumerate(ps)] for k in keys])
    return _figures(d, keys, xs)


def _figures(d: Drawing, keys: list, xs: np.ndarray) -> dict[tuple[str, str], tuple]:
    uniq, row = np.unique(xs, axis=0, return_inverse=True)
    ev: dict[tuple[str, str], Evaluated] = evaluate(d, uniq, {k[0] for k in keys})  # only the networks read
    out = {}
    for k, r in zip(keys, np.ravel(row), strict=True):
        e = ev.get(k)
        if e is None:
            continue
        limit = e.limit[r] if isinstance(e.limit, np.ndarray) else e.limit
        out[k] = (float(e.value[r]), float(limit), e.unit, float(e.margin[r]), _STATUS[int(e.status[r])])
    return out


def decide_at_corner(v: Verdict, figures: tuple | None) -> Verdict:
    """The verdict ``v`` (decided at its rule's worst case) decided again at its worst tolerance corner
    where that is worse; otherwise ``v`` unchanged. The corner's words join the deciding inputs either
    way (the caller adds the sensitivities)."""
    if v.worst is None or figures is None or v.status is Status.NOT_CHECKED:
        return v
    value, limit, unit, margin, status = figures
    worse = _RANK[status] > _RANK[v.status] or (
        v.margin is not None and margin < v.margin - SAME and _RANK[status] >= _RANK[v.status]
    )
    if not worse or unit != v.unit:
        return v
    case = v.corner or "worst case"
    head = (
        f"{v.status.value} at the {case}, {status.value.upper()} at the {CONDITIONS}"
        if status is not v.status
        else f"margin {v.margin:.0%} at the {case}, {margin:.0%} at the {CONDITIONS}"
    )
    u = "" if unit == "1" else f" {unit}"  # a ratio is written bare
    note = f"{head} ({value:.4g}{u} against {limit:.4g}{u}); at the {case}: {v.note}"
    return dataclasses.replace(v, status=status, value=value, limit=limit, margin=margin, note=note, corner=CONDITIONS)


__all__ = ["CONDITIONS", "corner_figures", "corners_of", "decide_at_corner", "figures_at"]
