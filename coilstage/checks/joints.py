"""Joint rules: a joint's current against its rating derated for its zone, its I²R heat, a lug's conductor
range against its cable. Decided at the largest continuous current (coil resistance at its low end, bus
at the regulator's highest end), with the cold corner's largest current as nominal."""

from __future__ import annotations

from coilstage.analysis.joints import limits
from coilstage.analysis.run import Analysis
from coilstage.checks.base import Rule, Status, Verdict, at_most, ceiling, decided_at_worst, not_checked
from coilstage.drawing.schema import Joint


def _words(a: Analysis) -> tuple[str, ...]:
    return tuple(f"{k} {v}" for k, v in a.worst.largest_current_words)


def _current(a: Analysis) -> list[Verdict]:
    out = []
    for j in a.drawing.of_kind(Joint):
        if j.rating is None:
            continue
        fig = a.joints[j.id]
        cur, rt = fig.current, fig.rating
        if cur is None or rt is None:
            out.append(not_checked(JOINT_CURRENT, j.id, "its current is not known (not in the network, no cable)", "A"))
            continue

        def at(i: float, corner: str, cur=cur, rt=rt, j=j) -> Verdict:
            return at_most(
                JOINT_CURRENT,
                j.id,
                i,
                rt.at_zone,
                "A",
                f"{j.joint_kind or 'joint'} carries {i:.1f} A (from {cur.source}) against {rt.words}",
                corner,
            )

        nominal = at(cur.nominal, "cold")
        out.append(decided_at_worst(at(cur.worst, "largest current"), nominal, "largest current", _words(a)))
    return out


def _heat(a: Analysis) -> list[Verdict]:
    out = []
    lim = limits()
    for j in a.drawing.of_kind(Joint):
        fig = a.joints[j.id]
        cur = fig.current
        if cur is None or fig.heat_nominal is None or fig.heat_worst is None:
            out.append(not_checked(JOINT_HEAT, j.id, "its current is not known (not in the network, no cable)", "W"))
            continue
        deg = fig.degraded
        extra = ""
        if deg is not None and fig.heat_degraded is not None:
            extra = (
                f"; loosened or corroded ({deg[0] * 1e3:g} mohm, {deg[1]}) it would make "
                f"{fig.heat_degraded:.1f} W: inspect and torque it to the maker's figure"
            )

        def at(i: float, p: float, corner: str, j=j, cur=cur, extra=extra) -> Verdict:
            status = Status.PASS if p <= lim.heat_pass else Status.WARN if p <= lim.heat_fail else Status.FAIL
            return Verdict(
                JOINT_HEAT.id,
                j.id,
                status,
                p,
                lim.heat_pass,
                "W",
                ceiling(p, lim.heat_pass),
                JOINT_HEAT.clause,
                f"I²R = ({i:.1f} A)² x {j.resistance * 1e6:g} µohm = {p:.2f} W (current from {cur.source}); pass "
                f"up to {lim.heat_pass:g} W, warn up to {lim.heat_fail:g} W ({lim.heat_status}){extra}",
                corner,
            )

        nominal = at(cur.nominal, fig.heat_nominal, "cold")
        out.append(
            decided_at_worst(at(cur.worst, fig.heat_worst, "largest current"), nominal, "largest current", _words(a))
        )
    return out


def _lug(a: Analysis) -> list[Verdict]:
    out = []
    for j in a.drawing.of_kind(Joint):
        if j.joint_kind != "lug" and j.conductor_range is None:
            continue
        fit = a.joints[j.id].lug
        if fit is None:
            out.append(
                not_checked(
                    JOINT_LUG,
                    j.id,
                    "no conductor_range or no cable for this lug (the barrel must match its conductor)",
                    "mm^2",
                )
            )
            continue
        rng = f"{fit.low * 1e6:g}-{fit.high * 1e6:g} mm²" if fit.low != fit.high else f"{fit.low * 1e6:g} mm²"
        if fit.fits:
            status, why = Status.PASS, "within its range"
        elif fit.mismatch < 0:
            status, why = Status.FAIL, f"{-fit.mismatch:.0%} smaller than its smallest size: the crimp stays loose"
        else:
            status, why = Status.FAIL, f"{fit.mismatch:.0%} larger than its largest size: it does not enter the barrel"
        limit = fit.low if fit.mismatch < 0 else fit.high
        out.append(
            Verdict(
                JOINT_LUG.id,
                j.id,
                status,
                fit.area * 1e6,
                limit * 1e6,
                "mm^2",
                None,
                JOINT_LUG.clause,
                f"lug for {rng} on {fit.cable}'s {fit.area * 1e6:g} mm² conductor: {why}",
            )
        )
    return out


JOINT_CURRENT = Rule(
    "joint.current",
    "Joint, lug, stud, connector or fuse holder current within its rating at its zone temperature",
    "Maker's rating and linear derating where given; otherwise a rise proportional to I^2 up to the contact's "
    "upper limiting temperature (IEC 60512-5-2 Test 5b reading; tin ULT 105 °C from memory); current at the "
    "largest continuous current",
    _current,
    ("joints.derated_current", "joints.derated_linear"),
)
JOINT_HEAT = Rule(
    "joint.heat",
    "Heat per joint I²R within a limit",
    "Joule's law; pass up to 2 W, warn up to 5 W per joint (common practice, no source: about 20 K / 50 K above "
    "its cable at some 10 K/W); degraded resistance from joints_common_practice.toml shown",
    _heat,
    ("joints.joint_heat",),
)
JOINT_LUG = Rule(
    "joint.lug_size",
    "Lug conductor range takes its cable's conductor",
    "DIN 46235 compression lugs are marked with the one cross-section they take (common practice: the "
    "barrel's marked size must equal the conductor's)",
    _lug,
    ("joints.lug_fits",),
)
RULES = [JOINT_CURRENT, JOINT_HEAT, JOINT_LUG]
