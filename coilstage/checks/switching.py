"""Switching rules: inductive breaking at the relays, suppressors, release time, relay pick-up."""

from __future__ import annotations

import math

from coilstage import tables
from coilstage.analysis.load_dump import stage_dumps
from coilstage.analysis.run import Analysis
from coilstage.checks.base import (
    Rule,
    Status,
    Verdict,
    at_least,
    at_most,
    ceiling,
    floor,
    not_checked,
)
from coilstage.drawing.schema import Relay, Stage

#: Energise a relay at no less than 110 % of its must-operate voltage (California Department of
#: Transportation, electrical quality standards, Electric-08 "Relays"): the margin of the pick-up rule.
PICKUP_MARGIN = 1.10


def category_for(tau: float, power: float) -> str | None:
    """The least demanding DC utilization category whose time constant covers ``tau`` [s] for a load
    of ``power`` [W], or None when the load lies outside every category."""
    for row in tables.utilization_categories():
        if tau <= _tau_limit(row["category"], power):
            return row["category"]
    return None


def _stage_map(a: Analysis) -> dict[str, Stage]:
    return {s.id: s for s in a.drawing.stages}


def _relay_breaking(a: Analysis) -> list[Verdict]:
    if a.switching is None:
        return [not_checked(RELAY_BREAKING, "relays", "switching was not analysed")]
    out = []
    stages = _stage_map(a)
    cold = a.switching.stages["cold"]
    order = [row["category"] for row in tables.utilization_categories()]
    switched = a.switched
    r_cold = {st.id: st.resistance for st in a.corners["cold"].stages}
    for relay in a.drawing.of_kind(Relay):
        ids = switched.get(relay.id, [])
        if not ids:
            out.append(not_checked(RELAY_BREAKING, relay.id, "this relay switches no stage", "ms"))
            continue
        i_break = sum(cold[s].i_break for s in ids)
        bare = [s for s in ids if stages[s].suppression.kind == "none"]
        if not bare:
            cv = max(cold[s].contact_voltage for s in ids)
            if relay.voltage_rating is None:
                out.append(
                    not_checked(
                        RELAY_BREAKING,
                        relay.id,
                        f"suppressed stage(s) {', '.join(ids)}: the contact sees {cv:.1f} V "
                        "(highest bus + suppressor) but the relay has no voltage_rating",
                        "V",
                        "cold",
                    )
                )
                continue
            out.append(
                at_most(
                    RELAY_BREAKING,
                    relay.id,
                    cv,
                    relay.voltage_rating,
                    "V",
                    f"suppressed at the coil ({', '.join(stages[s].suppression.kind for s in ids)}): the "
                    f"current commutates into the suppressor, a DC-1-like break of {i_break:.1f} A; the "
                    "opening contact sees the highest bus plus the suppressor voltage",
                    "cold",
                )
            )
            continue
        tau = max(cold[s].tau for s in bare)
        power = sum(cold[s].i_break ** 2 * r_cold[s] for s in bare)
        need = category_for(tau, power)
        rated = set(relay.categories)
        ib = relay.inductive_break
        if ib is not None and ib[1] >= tau and ib[0] >= i_break:
            status, note = (
                Status.PASS,
                (
                    f"unsuppressed, L/R {tau * 1e3:.0f} ms, {i_break:.1f} A: within the relay's "
                    f"stated inductive break rating {ib[0]:g} A at {ib[1] * 1e3:g} ms"
                ),
            )
        elif need is None:
            status = Status.FAIL
            note = (
                f"unsuppressed, L/R {tau * 1e3:.0f} ms at {i_break:.1f} A lies outside every IEC 60947 DC category; "
                "no inductive break rating covers it: fit suppression at the coil"
            )
            if ib is not None:
                note += f" (the stated {ib[0]:g} A at {ib[1] * 1e3:g} ms does not cover it)"
        elif any(order.index(c) >= order.index(need) for c in rated if c in order):
            covering = [c for c in rated if c in order and order.index(c) >= order.index(need)]
            status, note, fig = _category_rating(a, relay, covering, need, tau, i_break)
            if fig is not None:
                out.append(
                    Verdict(
                        RELAY_BREAKING.id,
                        relay.id,
                        status,
                        fig[0],
                        fig[1],
                        fig[2],
                        ceiling(fig[0], fig[1]),
                        RELAY_BREAKING.clause,
                        note,
                        "cold",
                    )
                )
                continue
        else:
            status, note = (
                Status.WARN,
                (
                    f"unsuppressed, L/R {tau * 1e3:.1f} ms needs a contact rated {need}; the "
                    "drawing gives no such rating"
                ),
            )
        out.append(
            Verdict(
                RELAY_BREAKING.id,
                relay.id,
                status,
                tau * 1e3,
                None if need is None else _tau_limit(need, power) * 1e3,
                "ms",
                None if need is None else ceiling(tau, _tau_limit(need, power)),
                RELAY_BREAKING.clause,
                note,
                "cold",
            )
        )
    return out


def _test_tau(category: str, u_e: float, i_e: float, frequent: bool) -> float:
    """L/R of a category's type test for a contact rated ``i_e`` [A] at ``u_e`` [V] [s]: the
    durability test's where the contact switches more often than the make/break test (IEC 60947-4-1),
    DC-13's T0.95 = 6·P ms (P = U_e·I_e, capped at 300 ms) over ln 20 (IEC 60947-5-1)."""
    rows = [r for r in tables.shipped("utilization_tests_iec60947.toml")["table"]["rows"] if r["category"] == category]
    if not rows:
        return _tau_limit(category, u_e * i_e)
    pick = [r for r in rows if r["test"] in (("durability", "normal") if frequent else ("make_break", "normal"))]
    row = (pick or rows)[0]
    if "t95_per_watt" in row:
        return min(row["t95_per_watt"] * u_e * i_e, row["t95_cap"]) / math.log(20.0)
    return float(row["tau"])


def _category_rating(a: Analysis, relay: Relay, covering: list[str], need: str, tau: float, i_break: float):
    """Status, note and (value, limit, unit) of an unsuppressed break against the relay's rated categories:
    a category covers the load only within its rated current I_e at its voltage U_e (IEC 60947-4-1 / -5-1),
    and, for a contact switched more often than the make/break test's operations, within the durability
    test's time constant."""
    u_max = a.drawing.corners.limit_bus
    cycles = a.drawing.switching.cycles
    frequent = cycles > int(tables.shipped("utilization_tests_iec60947.toml")["table"]["frequent_switching_above"])
    ratings = [x for x in relay.category_ratings if x[0] in covering]
    if not ratings:
        return (
            Status.WARN,
            f"unsuppressed, L/R {tau * 1e3:.1f} ms at {i_break:.1f} A needs {need}; the relay names "
            f"{', '.join(covering)} without its rated current and voltage, and a category covers a load only "
            "within its I_e at U_e (IEC 60947-4-1 / -5-1): give them, e.g. "
            '{ category = "DC-13", current = "2.5 A", voltage = "24 V" }',
            None,
        )
    worst = None
    for cat, i_e, u_e in ratings:
        t_lim = _test_tau(cat, u_e, i_e, frequent)
        test = "durability" if frequent and cat in ("DC-1", "DC-3", "DC-5") else "type"
        fails = []
        if i_break > i_e:
            fails.append(
                (f"the break current {i_break:.1f} A exceeds the {cat} rated current {i_e:g} A", i_break, i_e, "A")
            )
        if u_max > u_e:
            fails.append((f"the highest bus {u_max:g} V exceeds the {cat} rated voltage {u_e:g} V", u_max, u_e, "V"))
        if tau > t_lim:
            fails.append(
                (
                    f"L/R {tau * 1e3:.1f} ms exceeds the {cat} {test} test's {t_lim * 1e3:.1f} ms"
                    + (f" ({cycles:,} switchings: the durability test applies)" if test == "durability" else ""),
                    tau * 1e3,
                    t_lim * 1e3,
                    "ms",
                )
            )
        if not fails:
            return (
                Status.PASS,
                f"unsuppressed, L/R {tau * 1e3:.1f} ms at {i_break:.1f} A: within the relay's {cat} rating "
                f"{i_e:g} A at {u_e:g} V (test L/R {t_lim * 1e3:.1f} ms)",
                (i_break, i_e, "A"),
            )
        worst = worst or fails[0]
    why, v, lim, unit = worst
    return (
        Status.FAIL,
        f"unsuppressed, {why}: IEC 60947 rates a category only with its I_e at U_e and the test's L/R; "
        "fit suppression at the coil or a contact rated for this break",
        (v, lim, unit),
    )


def _tau_limit(category: str, power: float) -> float:
    """Largest L/R of a category [s]; DC-13's is min(2·P ms, 100 ms) with P in W (T0.95 = 3τ ≤ 6·P ms)."""
    row = next(r for r in tables.utilization_categories() if r["category"] == category)
    t = row["tau_max"]
    if "tau_per_watt" in row:
        t = min(t, row["tau_per_watt"] * power)
    return t


def _suppressors(a: Analysis) -> list[Verdict]:
    if a.switching is None:
        return [not_checked(SUPPRESSOR, "stages", "switching was not analysed")]
    out = []
    system = a.drawing.supply.system_voltage
    dump = tables.load_dump_clamped(system)
    need_v = max(dump, a.drawing.corners.limit_bus)
    for s in a.drawing.stages:
        sup = s.suppression
        if sup.kind == "none":
            continue
        sw = a.switching.stages["cold"][s.id]
        i0 = sw.i_break
        if sup.peak_current is None:
            out.append(
                not_checked(
                    SUPPRESSOR, f"{s.id} peak current", f"no peak_current rating (break current {i0:.1f} A)", "A"
                )
            )
        else:
            out.append(
                at_most(
                    SUPPRESSOR,
                    f"{s.id} peak current",
                    i0,
                    sup.peak_current,
                    "A",
                    f"{sup.kind} carries the break current {i0:.1f} A as it commutates",
                    "cold",
                )
            )
        what = "stand-off" if sup.bidirectional else "reverse"
        if sup.reverse_voltage is None:
            out.append(
                not_checked(
                    SUPPRESSOR, f"{s.id} {what} voltage", f"no reverse_voltage rating (needs >= {need_v:g} V)", "V"
                )
            )
        else:
            out.append(
                at_least(
                    SUPPRESSOR,
                    f"{s.id} {what} voltage",
                    sup.reverse_voltage,
                    need_v,
                    "V",
                    f"must block the clamped load dump ({dump:g} V, ISO 16750-2 Test B) and the highest bus "
                    f"({a.drawing.corners.limit_bus:g} V)",
                    "limit",
                )
            )
        e = sw.decay.e_suppressor
        if sup.energy_rating is None:
            out.append(
                not_checked(SUPPRESSOR, f"{s.id} energy", f"no energy_rating (it takes {e:.1f} J per break)", "J")
            )
        else:
            out.append(
                at_most(
                    SUPPRESSOR,
                    f"{s.id} energy",
                    e,
                    sup.energy_rating,
                    "J",
                    f"energy per break from the decay through the {sup.kind} (of ½LI² = {sw.stored_energy:.1f} J)",
                    "cold",
                )
            )
    return out


def _dump_verdict(sid: str, sup, dm, over: Status) -> Verdict | None:
    what = f"ISO 16750-2 Test {dm.test}"
    subject = f"{sid} load dump"
    if dm.energy is None:
        if sup.reverse_voltage is None:
            return not_checked(LOAD_DUMP, subject, f"no reverse_voltage (needs >= {dm.bus_peak:g} V, {what})", "V")
        return at_least(
            LOAD_DUMP,
            subject,
            sup.reverse_voltage,
            dm.bus_peak,
            "V",
            f"the {sup.kind} blocks the bus while the stage is on; the load-dump peak is {dm.bus_peak:g} V "
            f"({what}, open-circuit peak)",
            "limit",
            under=over,
        )
    if sup.energy_rating is None:
        return not_checked(LOAD_DUMP, subject, f"no energy_rating (it takes {dm.energy:.1f} J, {what})", "J")
    return at_most(
        LOAD_DUMP,
        subject,
        dm.energy,
        sup.energy_rating,
        "J",
        f"the {sup.kind} clamps at {sup.u0:g} V across the bus and takes {dm.energy:.1f} J per pulse "
        f"({what}; worst pairing {dm.pairing}; peak {dm.peak_current:.1f} A)",
        "limit",
        over=over,
    )


def _load_dump(a: Analysis) -> list[Verdict]:
    """Test A where central suppression is absent; Test B where it is present; where the drawing does not
    say, Test A first (the severer): a suppressor that passes it passes; one that fails it but passes
    Test B cannot be judged without knowing (not checked, with both figures); one that fails both fails."""
    central = getattr(a.drawing.supply, "load_dump_suppression", "not known") or "not known"
    out = []
    a_dumps = stage_dumps(a.drawing, "none")
    b_dumps = stage_dumps(a.drawing, "central")
    sups = {s.id: s.suppression for s in a.drawing.stages}
    for sid in a_dumps:
        sup = sups[sid]
        if central != "not known":
            v = _dump_verdict(sid, sup, (b_dumps if central == "central" else a_dumps)[sid], Status.FAIL)
            out.append(v)
            continue
        va = _dump_verdict(sid, sup, a_dumps[sid], Status.FAIL)
        if va.status is not Status.FAIL:
            out.append(va)
            continue
        vb = _dump_verdict(sid, sup, b_dumps[sid], Status.FAIL)
        if vb.status is Status.FAIL:
            out.append(vb)
            continue
        out.append(
            not_checked(
                LOAD_DUMP,
                va.subject,
                f"central load-dump suppression not stated: against Test A (unclamped) {va.value:g} {va.unit} "
                f"against {va.limit:g} {va.unit} fails; against Test B (clamped) it passes; state whether the "
                "alternator has central suppression",
                va.unit,
            )
        )
    return out


def _release(a: Analysis) -> list[Verdict]:
    if a.switching is None:
        return [not_checked(RELEASE, "stages", "switching was not analysed")]
    lim = a.drawing.switching.release_limit
    frac = a.drawing.switching.release_fraction
    out = []
    for s in a.drawing.stages:
        sw = a.switching.stages["cold"][s.id]
        t = sw.decay.t_release
        if s.suppression.kind == "none":
            arc = (
                f"no suppression: the {sw.i_break:.1f} A ({sw.stored_energy:.1f} J) is broken by an arc at the "
                "contact, so the release time is the arc's, not a designed decay (the 0 ms of an ideal switch is "
                "no result); fit suppression at the coil"
            )
            if lim is None:
                out.append(
                    not_checked(RELEASE, s.id, arc + "; no switching.release_limit in the drawing", "ms", "cold")
                )
            else:
                out.append(
                    Verdict(RELEASE.id, s.id, Status.FAIL, None, lim * 1e3, "ms", None, RELEASE.clause, arc, "cold")
                )
            continue
        if lim is None:
            out.append(
                not_checked(
                    RELEASE,
                    s.id,
                    f"no switching.release_limit in the drawing (release takes "
                    f"{t * 1e3:.0f} ms to {frac:.0%} of the current)",
                    "ms",
                    "cold",
                )
            )
            continue
        note = f"{s.suppression.kind}: current falls to {frac:.0%} of {sw.i_break:.1f} A in {t * 1e3:.0f} ms"
        out.append(at_most(RELEASE, s.id, t * 1e3, lim * 1e3, "ms", note, "cold"))
    return out


def _pickup(a: Analysis) -> list[Verdict]:
    out = []
    hot = a.corners["hot"]
    for r in a.drawing.of_kind(Relay):
        c = r.coil
        if c is None:
            out.append(
                not_checked(
                    PICKUP, r.id, "no coil data for this relay (coil = { voltage, resistance, operate_voltage })", "V"
                )
            )
            continue
        pick = a.ratings.relays[r.id]
        t, need, have = pick.temperature, pick.need, pick.have
        limit = PICKUP_MARGIN * need
        status = Status.PASS if have >= limit else Status.WARN if have >= need else Status.FAIL
        out.append(
            Verdict(
                PICKUP.id,
                r.id,
                status,
                have,
                limit,
                "V",
                floor(have, limit),
                PICKUP.clause,
                f"coil at {t:g} °C needs {need:.2f} V to operate ({c.operate_voltage:g} V at {c.t_ref:g} °C, "
                f"same ampere-turns); it gets {have:.2f} V from the {hot.bus_voltage:.2f} V hot-corner bus "
                f"through {c.feed_resistance:g} Ω; pass at >= 110 % of need",
                "hot",
            )
        )
    return out


RELAY_BREAKING = Rule(
    "relay.inductive_break",
    "Relay contact can break its stage: DC category by L/R, or contact voltage when suppressed",
    "IEC 60947-4-1 DC-1/DC-3/DC-5 and IEC 60947-5-1 DC-13 (6 x P ms, 300 ms cap): a category covers a break only "
    "within its rated current I_e at U_e and its test L/R (durability L/R above 50 switchings)",
    _relay_breaking,
    ("transient.LinearRL", "transient.clamp_decay"),
)
SUPPRESSOR = Rule(
    "suppressor.rating",
    "Suppressor peak current, reverse (stand-off) voltage and energy per break",
    "Break current at the cold corner; ISO 16750-2 Test B clamped load dump (35 V / 58 V); clamp energy computed",
    _suppressors,
    ("transient.clamp_decay",),
)
RELEASE = Rule(
    "stage.release_time",
    "Braking field gone within the drawing's release-time limit after switch-off",
    "Decay through the suppressor, closed form t = tau ln((I0 + U/R)/(x I0 + U/R)); limit from the drawing",
    _release,
    ("transient.clamp_decay",),
)
PICKUP = Rule(
    "relay.coil_pickup",
    "Relay coil gets enough voltage to operate at the lowest bus, hot",
    "Maker's must-operate voltage scaled by coil R(T) (copper, IEC 60028 alpha); "
    "110 % margin (transport-agency relay rules)",
    _pickup,
    ("conductor.resistance_at_temperature",),
)
LOAD_DUMP = Rule(
    "suppressor.load_dump",
    "Suppressor withstands the load dump that applies: blocks its peak, or absorbs its energy",
    "ISO 16750-2 4.6.4 Test A (no central suppression: 151-202 V / 79-101 V, R_i, t_d ranges; both pairings) or "
    "Test B (clamped at 58 V / 35 V); ideal clamp, exponential decay, load left out",
    _load_dump,
    ("load_dump.worst_clamp_energy", "load_dump.clamp_energy"),
)
RULES = [RELAY_BREAKING, SUPPRESSOR, LOAD_DUMP, RELEASE, PICKUP]
