"""Ground and return rules: each return lost in turn (a loose ground stud, a broken strap), where the
current then goes and whether anything on that path opens or overheats. Judged at the cold corner (the
largest currents the corners give)."""

from __future__ import annotations

from coilstage import tables
from coilstage.analysis.ground import lose_return, returns
from coilstage.analysis.run import Analysis
from coilstage.checks.base import Rule, Status, Verdict, ceiling, not_checked
from coilstage.drawing.schema import Cable, Fuse, Relay


def _lost_return(a: Analysis) -> list[Verdict]:
    d = a.drawing
    cold = a.conditions["cold"]
    intact = a.corners["cold"].solution
    out = []
    by_id = {e.id: e for e in d.elements}
    for g in returns(d):
        try:
            lr = lose_return(d, g.id, cold.temperatures, cold.sources, intact)
        except (ValueError, ArithmeticError) as exc:  # a network that cannot be solved (reported, not hidden)
            out.append(not_checked(LOST_RETURN, g.id, f"the network without {g.id} could not be solved: {exc}"))
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
RULES = [LOST_RETURN]
