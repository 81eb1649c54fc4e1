"""Ground and return rules: the ground offset the intact returns leave at each stage's return terminal
and at the chassis (the returns as a resistance every stage shares); each return lost in turn (a loose
ground stud, a broken strap), where the current then goes and whether anything on that path opens or
overheats. The lost returns are judged at the cold corner (the largest currents the corners give); the
offset at the largest continuous current, with the cold corner as nominal."""

from __future__ import annotations

from coilstage import tables
from coilstage.analysis.circuit import Solution
from coilstage.analysis.ground import lose_returns, offset_limit, return_offsets, returns
from coilstage.analysis.run import Analysis
from coilstage.checks.base import Rule, Status, Verdict, at_most, ceiling, decided_at_worst, not_checked
from coilstage.drawing.schema import Cable, Fuse, Relay


def _lost_return(a: Analysis) -> list[Verdict]:
    d = a.drawing
    cold = a.conditions["cold"]
    intact = a.corners["cold"].solution
    out = []
    by_id = {e.id: e for e in d.elements}
    by_return = lose_returns(d, [g.id for g in returns(d)], cold.temperatures, cold.sources, intact)
    for g in returns(d):
        lr = by_return[g.id]
        if isinstance(lr, Exception):  # a network that cannot be solved (reported, not hidden)
            out.append(not_checked(LOST_RETURN, g.id, f"the network without {g.id} could not be solved: {lr}"))
            continue
        over, already, unrated, parts = [], [], [], []
        worst: tuple[float, float, float] | None = None  # (ratio, current, limit)
        for r in lr.rerouted:
            e = by_id[r.element]
            parts.append(f"{r.element} {r.before:.1f} -> {r.after:.1f} A")
            limit = None
            if isinstance(e, Cable):
                amp = a.ratings.cables[e.id].ampacity
                limit = amp.value if isinstance(amp, tables.Ampacity) else None
                what = "overheats (above its ampacity)"
            elif isinstance(e, Fuse):
                limit = e.rating
                what = "opens (above its rating)"
            elif isinstance(e, Relay):
                limit = e.rating_24v if d.supply.system_voltage == 24 else e.rating_12v
                what = "runs above its contact rating"
            if limit is None:
                unrated.append(f"{r.element} ({r.after:.1f} A, no rating in the drawing)")
                continue
            if worst is None or r.after / limit > worst[0]:
                worst = (r.after / limit, r.after, limit)
            if r.after > limit >= r.before:
                over.append(f"{r.element} {what}: {r.after:.1f} A against {limit:.1f} A")
            elif r.after > limit:
                already.append(f"{r.element} ({r.before:.1f} A already above its {limit:.1f} A in service)")
        lost = [f"{s.element} {s.before:.1f} -> {s.after:.1f} A" for s in lr.stages]
        note = f"{g.id} lost (it carried {lr.carried:.1f} A at the cold corner): " + (
            "the current goes through " + ", ".join(parts) if parts else "no other path takes its current"
        )
        if lost:
            note += "; stages lose current: " + ", ".join(lost) + " (their braking drops out)"
        note += f"; {lr.gap_voltage:.2f} V across the open return"
        if lr.carried < 1e-3 and d.supply.chassis_node in (g.a, g.b):
            note += (
                "; it carries no current in service but is the path of a short to the body: with it lost a chassis "
                "short finds no way back to the battery and no fuse clears it"
            )
        if already:
            note += "; " + ", ".join(already) + ": its own rule reports it"
        if over:
            status = Status.FAIL
            note += "; the loss pushes " + "; ".join(over)
        elif unrated or (lost and parts) or (lr.carried < 1e-3 and d.supply.chassis_node in (g.a, g.b)):
            status = Status.WARN
            if unrated:
                note += "; through parts with no rating: " + ", ".join(unrated) + ": state their ratings"
        else:
            status = Status.PASS
            if lost:
                note += "; it fails safe: no other part takes the current and only the stage's braking is lost"
        note += "; a lost return is a fault to find and repair (inspect and torque ground studs to the maker's figure)"
        if worst is not None:
            out.append(
                Verdict(
                    LOST_RETURN.id,
                    g.id,
                    status,
                    worst[1],
                    worst[2],
                    "A",
                    ceiling(worst[1], worst[2]),
                    LOST_RETURN.clause,
                    note,
                    "cold",
                )
            )
        else:
            out.append(
                Verdict(LOST_RETURN.id, g.id, status, lr.gap_voltage, None, "V", None, LOST_RETURN.clause, note, "cold")
            )
    return out


LOST_RETURN = Rule(
    "ground.lost_return",
    "A lost return (loose ground stud, broken strap): where the current goes and whether anything opens or overheats",
    "Kirchhoff's laws on the network re-solved without the return (cold corner); cables against their "
    "ampacity (33 CFR 183.425), fuses against their rating; a stage that loses its current is a warning (its "
    "braking drops out)",
    _lost_return,
    ("network.mna_matrix",),
)


def _return_offset_at(a: Analysis, solution: Solution, where: str, corner: str) -> dict[str, Verdict]:
    """The return-offset verdicts of ``solution`` (the network at one operating case), by subject;
    ``where`` names the case in the notes."""
    d = a.drawing
    limit, source = offset_limit(d)
    neg = d.supply.negative_node
    out = {}
    for ro in return_offsets(d, solution):
        path = ", ".join(f"{eid} {i:.1f} A {u * 1000:.0f} mV" for eid, i, u in ro.drops) or "no return element"
        if ro.stage_voltage is not None:
            lost = ro.offset / ro.feed_voltage if ro.feed_voltage else 0.0
            head = (
                f"return terminal {ro.node} {ro.offset:.3f} V above {neg} at the {where}: the coil has "
                f"{ro.stage_voltage:.2f} V across it, the return takes {lost:.1%} of the {ro.feed_voltage:.2f} V "
                f"its feed end has over {neg}"
            )
        else:
            head = f"the chassis ({ro.node}) {ro.offset:.3f} V above {neg} at the {where}"
        note = (
            f"{head}; through {path} (a shared return carries every stage's current); limit {limit:g} V "
            f"({source}): beyond it equipment grounded at this point is outside the offset it was tested for; "
            f"measure it with the retarder on, between the ground point and the battery negative post"
        )
        out[ro.subject] = at_most(RETURN_OFFSET, ro.subject, abs(ro.offset), limit, "V", note, corner, over=Status.WARN)
    return out


def _return_offset(a: Analysis) -> list[Verdict]:
    """Decided at the largest continuous current (coil resistance at its low end, the bus at the
    regulator's highest end: the most current through the shared returns), with the cold corner as
    nominal; where the analysis has no largest-current network, at the cold corner alone."""
    nominal = _return_offset_at(a, a.corners["cold"].solution, "cold corner", "cold")
    worst_sol = a.worst.largest_current_solution
    if worst_sol is None:
        return list(nominal.values())
    worst = _return_offset_at(a, worst_sol, "largest continuous current", "largest current")
    words = tuple(f"{k} {v}" for k, v in a.worst.largest_current_words)
    return [decided_at_worst(worst[k], v, "largest current", words) if k in worst else v for k, v in nominal.items()]


RETURN_OFFSET = Rule(
    "ground.return_offset",
    "Ground offset between each stage's return terminal (and the chassis) and the battery negative",
    "Ohm's law on the solved network (largest continuous current; cold corner as nominal): the returns "
    "shared by every stage; limit the ISO 16750-2 clause 4.8 ground offset test voltage (1.0 V from memory), a warning",
    _return_offset,
    ("network.mna_matrix", "conductor.resistance_at_temperature"),
)
RULES = [RETURN_OFFSET, LOST_RETURN]
