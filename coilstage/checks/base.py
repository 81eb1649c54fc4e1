"""Verdicts and rules.

A rule has an id, a title, the clause it rests on, and a function from an Analysis to Verdicts.
Margin convention (one for the whole program): the headroom as a fraction of the limit, positive
when the value is on the safe side — ``(limit − value)/limit`` for a ceiling, ``(value − limit)/limit``
for a floor; temperatures on the kelvin scale.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import Callable
from dataclasses import dataclass
from enum import StrEnum
from typing import TYPE_CHECKING

if TYPE_CHECKING:
    from coilstage.analysis.worst import DutySweep


class Status(StrEnum):
    PASS = "pass"
    WARN = "warn"
    FAIL = "fail"
    NOT_CHECKED = "not checked"


@dataclass(frozen=True)
class Sensitivity:
    """How much one declared parameter moves a verdict's margin: ``parameter`` (its tolerance key, e.g.
    ``coils.*.resistance_tolerance``), ``words`` (what it is, for a reader), ``change`` (the move over
    which the effect is stated, in the parameter's unit: its tolerance end towards the worst case) and
    ``margin_change`` (the margin's change over that move, as a fraction: -0.05 is 5 points less)."""

    parameter: str
    words: str
    change: float
    margin_change: float


#: how :mod:`coilstage.effects` says that no declared tolerance moves a verdict its rule decides at the
#: conditions it names (the start of one of its deciding lines; the reports read it)
UNMOVED = "no declared tolerance moves this margin"


@dataclass(frozen=True)
class WorstOf:
    """How a verdict decided at its worst case compares with the nominal case: the nominal status,
    value and margin, the name of the worst-case conditions, and the inputs that decided them."""

    nominal_status: Status
    nominal_value: float | None
    nominal_margin: float | None
    conditions: str
    deciding: tuple[str, ...] = ()
    sensitivities: tuple[Sensitivity, ...] = ()  # largest effect first


@dataclass(frozen=True)
class Verdict:
    rule: str
    subject: str
    status: Status
    value: float | None
    limit: float | None
    unit: str
    margin: float | None
    clause: str
    note: str
    corner: str = ""
    worst: WorstOf | None = None  # set where the verdict is decided at its own worst case

    def __post_init__(self) -> None:
        if self.status is Status.NOT_CHECKED and not self.note:
            raise ValueError("a verdict that could not be reached needs its reason")
        for x in (self.value, self.limit, self.margin):
            if x is not None and not math.isfinite(x):
                raise ValueError(f"non-finite figure in verdict {self.rule} {self.subject}")


@dataclass(frozen=True)
class Rule:
    """A rule: its id, title, the clause it rests on, the function from an Analysis to its verdicts, and
    the physics functions its figures come from (names relative to ``coilstage.physics``, e.g.
    ``"thermal.conductor_temperature"``; empty for a plain comparison of stated ratings): from a
    verdict to its rule, and from the rule to each law and its source."""

    id: str
    title: str
    clause: str
    evaluate: Callable[..., list[Verdict]]
    laws: tuple[str, ...] = ()


def ceiling(value: float, limit: float) -> float | None:
    """Margin of a value that must not exceed ``limit`` (None where the limit is zero)."""
    return (limit - value) / limit if limit > 0 else None


def ceiling_temperature(value: float, limit: float) -> float | None:
    """Margin of a temperature [°C] that must not exceed ``limit`` [°C], taken on the kelvin scale
    (a fraction of a Celsius value means nothing: the scale has an arbitrary zero)."""
    return ceiling(value + 273.15, limit + 273.15)


def floor(value: float, limit: float) -> float | None:
    """Margin of a value that must not fall below ``limit`` (None where the limit is zero)."""
    return (value - limit) / limit if limit > 0 else None


def at_most(
    rule: Rule,
    subject: str,
    value: float,
    limit: float,
    unit: str,
    note: str,
    corner: str = "",
    over: Status = Status.FAIL,
) -> Verdict:
    """PASS when ``value`` <= ``limit``, else ``over`` (FAIL, or WARN for an advisory rule); margin
    as :func:`ceiling` (on the kelvin scale for a temperature)."""
    m = ceiling_temperature(value, limit) if unit == "degC" else ceiling(value, limit)
    return Verdict(
        rule.id, subject, Status.PASS if value <= limit else over, value, limit, unit, m, rule.clause, note, corner
    )


def at_least(
    rule: Rule,
    subject: str,
    value: float,
    limit: float,
    unit: str,
    note: str,
    corner: str = "",
    under: Status = Status.FAIL,
) -> Verdict:
    """PASS when ``value`` >= ``limit``, else ``under``; margin as :func:`floor`."""
    return Verdict(
        rule.id,
        subject,
        Status.PASS if value >= limit else under,
        value,
        limit,
        unit,
        floor(value, limit),
        rule.clause,
        note,
        corner,
    )


def not_checked(rule: Rule, subject: str, reason: str, unit: str = "", corner: str = "") -> Verdict:
    return Verdict(rule.id, subject, Status.NOT_CHECKED, None, None, unit, None, rule.clause, reason, corner)


_RANK = {Status.PASS: 0, Status.NOT_CHECKED: 1, Status.WARN: 2, Status.FAIL: 3}


def worst_over_sweep(verdict_at: Callable[[int, str], Verdict], sweep: DutySweep, corner: str) -> tuple[Verdict, int]:
    """The verdict at an ambient sweep's worst point (``analysis.worst.DutySweep``): ``verdict_at(j,
    corner)`` at each ambient j, the lowest margin chosen (a failure with no margin first, a point not
    checked last), with that ambient named in its note; and that ambient's index."""
    vs = [verdict_at(j, corner) for j in range(len(sweep.ambients))]

    def margin(j: int) -> float | None:
        v = vs[j]
        if v.status is Status.NOT_CHECKED:
            return math.inf
        if v.margin is None:
            return None if v.status is Status.FAIL else math.inf
        return v.margin

    j = sweep.worst(margin)
    v = vs[j]
    return dataclasses.replace(v, note=v.note + f" (ambient {sweep.ambients[j]:g} °C, the worst of the sweep)"), j


def decided_at_worst(worst: Verdict, nominal: Verdict, conditions: str, deciding: tuple[str, ...] = ()) -> Verdict:
    """The verdict at the worst case, carrying the nominal status, value and margin beside it.

    The status and margin are the worst case's; where the nominal case is the harsher of the two (a
    bounding envelope can be), the nominal verdict is kept and its note gives the other. A
    nominal pass that does not pass at its worst case says that first in its note."""
    if _RANK[nominal.status] > _RANK[worst.status] or (
        nominal.status is worst.status
        and nominal.margin is not None
        and worst.margin is not None
        and nominal.margin < worst.margin
    ):
        tag = WorstOf(nominal.status, nominal.value, nominal.margin, nominal.corner or "nominal", ())
        here = nominal.corner or "nominal"
        note = f"{nominal.note} (the {here} case is the worse here; at the {conditions}: {worst.note})"
        return dataclasses.replace(nominal, note=note, worst=tag)
    tag = WorstOf(nominal.status, nominal.value, nominal.margin, nominal.corner or "nominal", deciding)
    note = worst.note
    if nominal.status is not worst.status:
        note = f"{nominal.status.value} nominally, {worst.status.value.upper()} at the {conditions}: {note}"
    elif nominal.margin is not None and worst.margin is not None:
        note = f"margin {nominal.margin:.0%} nominally, {worst.margin:.0%} at the {conditions}: {note}"
    if deciding:
        note += "; decided by " + "; ".join(deciding)
    return dataclasses.replace(worst, note=note, corner=conditions, worst=tag)
