"""Switching rules: inductive breaking at the relays, suppressors, release time, relay pick-up."""

from __future__ import annotations

import dataclasses
from typing import TypeVar

from coilstage import tables
from coilstage.analysis.conditions import LARGEST, LIGHTEST
from coilstage.analysis.contacts import RelayFigures, highest_bus
from coilstage.analysis.load_dump import applicable_test
from coilstage.analysis.ratings import (
    category_for,
    category_order,
    category_tau_limit,
    category_test_tau,
    frequent_switching_above,
)
from coilstage.analysis.relay_coil import PICKUP_MARGIN, CoilAt
from coilstage.analysis.run import Analysis
from coilstage.analysis.switching import StageSwitching
from coilstage.checks.base import (
    _RANK,
    Rule,
    Status,
    Verdict,
    at_least,
    at_most,
    ceiling,
    decided_at_worst,
    floor,
    not_checked,
)
from coilstage.drawing.schema import Relay, Stage

_T = TypeVar("_T")


def _highest_bus(a: Analysis) -> tuple[float, str]:
    """The highest voltage the bus reaches in service [V] and what sets it: the supply code's maximum
    (ISO 16750-2) or the regulator's highest end (set-point, tolerance and cold compensation), the
    higher of the two."""
    d = a.drawing
    code = max(d.supply.v_max, d.corners.limit_bus)  # for the words; the figure is highest_bus's
    reg = a.worst.bus_high
    u = highest_bus(d, reg) if reg is not None else code
    if reg is not None and u == reg and reg > code:
        return u, f"the regulator's highest end {reg:.2f} V (above the supply maximum {code:g} V)"
    extra = f"; the regulator's highest end is {reg:.2f} V" if reg is not None else ""
    return code, f"the supply maximum {code:g} V{extra}"


def _made(x: _T | None, what: str) -> _T:
    """``x``, which the analysis makes wherever this check reads it; a typed guard that holds under
    ``python -O`` too (a bare assert vanishes there)."""
    if x is None:
        raise RuntimeError(f"analysis figure missing: {what}")
    return x


def _stage_map(a: Analysis) -> dict[str, Stage]:
    return {s.id: s for s in a.drawing.stages}


def _worst(vs: list[Verdict]) -> Verdict:
    """The harshest of some verdicts (the smallest margin among equals)."""
    return max(vs, key=lambda v: (_RANK[v.status], -(v.margin if v.margin is not None else 0.0)))


def _contact_voltages(a: Analysis, relay: Relay, ids: list[str]) -> list[Verdict]:
    """The relay's switching voltage rating against what its opening contact sees: in service, the
    highest bus plus the stage suppressor's voltage (a diode its forward drop, a zener, TVS or varistor
    its clamp); during the load dump that applies (ISO 16750-2 Test A without central suppression or
    where the drawing does not say, Test B with it), the pulse's peak loaded by the stage plus the same
    suppressor voltage. One function for ``relay.voltage_rating`` and ``relay.inductive_break``, so the
    two never disagree on one relay."""
    u_hi, hi_words = _highest_bus(a)
    rating = relay.voltage_rating
    stages = _stage_map(a)
    bare = [s for s in ids if stages[s].suppression.kind == "none"]
    fig = a.contacts.relays[relay.id]
    big = a.contacts.largest.get(relay.id)
    # the suppressor's voltage at the break that drives it hardest (a diode's or a clamp's rises with the
    # current it takes over): the largest-current case's where it was analysed
    u_sup = max(fig.suppressor_voltage, big.suppressor_voltage if big is not None else 0.0)
    kinds = ", ".join(sorted({stages[s].suppression.kind for s in ids if s not in bare})) or "none"
    central = getattr(a.drawing.supply, "load_dump_suppression", "not known") or "not known"
    test, assumed = applicable_test(central)
    if not ids:
        what, cv = f"it switches no stage: the contact sees the highest bus, {hi_words}", u_hi
    elif bare:
        what = (
            f"unsuppressed stage(s) {', '.join(bare)}: the contact breaks by an arc (judged by "
            f"relay.inductive_break) against the highest bus, {hi_words}"
        )
        cv = u_hi
    else:
        what = f"{hi_words} plus the {kinds} suppressor's {u_sup:.1f} V across the opening contact"
        cv = u_hi + u_sup
    out = []
    if rating is None:
        out.append(
            not_checked(RELAY_VOLTAGE, relay.id, f"no voltage_rating given (needs >= {cv:.1f} V: {what})", "V", "limit")
        )
    else:
        worst = at_least(RELAY_VOLTAGE, relay.id, rating, cv, "V", f"switching voltage rating: {what}", "limit")
        # nominal: the cold corner's regulated bus, plus the suppressor's voltage at the cold corner's break
        bus = a.corners["cold"].bus_voltage
        cv_n = bus + (fig.suppressor_voltage if ids and not bare else 0.0)
        nominal = at_least(
            RELAY_VOLTAGE,
            relay.id,
            rating,
            cv_n,
            "V",
            f"switching voltage rating: the cold corner's {bus:.2f} V regulated bus"
            + (f" plus the suppressor's {fig.suppressor_voltage:.1f} V" if ids and not bare else ""),
            "cold",
        )
        out.append(decided_at_worst(worst, nominal, "highest voltage", (hi_words,)))
    if not ids or a.switching is None:
        return out
    dm, r_load = fig.dump, fig.load_resistance
    dm = _made(dm, f"{relay.id}: load-dump figure")  # analysis.contacts makes both wherever the relay switches
    r_load = _made(r_load, f"{relay.id}: load resistance")
    said = (
        "central load-dump suppression not stated: Test A (unclamped) assumed"
        if assumed
        else ("no central load-dump suppression: Test A (unclamped)" if test == "A" else "central suppression: Test B")
    )
    dnote = (
        f"opening during the load dump ({said}, ISO 16750-2 4.6.4): the bus peaks at {dm.bus_peak:.1f} V "
        f"({dm.pairing}, loaded by the {r_load:.3f} ohm of {', '.join(ids)})"
        + (" and the contact arcs (no suppressor)" if bare else f", plus the suppressor's {u_sup:.1f} V")
    )
    subject = f"{relay.id} load dump"
    light = fig.dump_lightest
    need = dm.contact_voltage if light is None else max(dm.contact_voltage, light.contact_voltage)
    if rating is None:
        out.append(not_checked(RELAY_VOLTAGE, subject, f"no voltage_rating (needs >= {need:.1f} V: {dnote})", "V"))
        return out
    nominal = at_least(RELAY_VOLTAGE, subject, rating, dm.contact_voltage, "V", dnote, f"load dump {test}")
    if light is None:
        out.append(nominal)
        return out
    lnote = (
        f"opening during the load dump ({said}, ISO 16750-2 4.6.4) at the lightest load: the bus peaks at "
        f"{light.bus_peak:.1f} V ({light.pairing}, loaded by the {light.load_resistance:.3f} ohm of {', '.join(ids)}"
        " with the coils hot at the high end of their resistance tolerance)"
        + (
            " and the contact arcs (no suppressor)"
            if bare
            else f", plus the suppressor's {light.suppressor_voltage:.1f} V"
        )
    )
    worst = at_least(RELAY_VOLTAGE, subject, rating, light.contact_voltage, "V", lnote, f"load dump {test}")
    b = a.worst.braking
    deciding = () if b is None else tuple(f"{k} {v}" for k, v in b.words if k in ("battery", "coils", "cables"))
    out.append(decided_at_worst(worst, nominal, LIGHTEST, deciding))
    return out


def _relay_voltage(a: Analysis) -> list[Verdict]:
    return [v for r in a.drawing.of_kind(Relay) for v in _contact_voltages(a, r, a.switched.get(r.id, []))]


def _slowed_opening(fig: RelayFigures) -> tuple[bool, str]:
    """Whether the relay's own coil suppression slows its opening, and the arc figures at its contact
    (duration and energy at the normal and the slowed release, analysis.contacts) for the break's note."""
    op, normal, slow = fig.opening, fig.arc_normal, fig.arc_slowed
    if normal is None or slow is None:
        return False, ""
    return True, (
        f"the relay's own coil {op.suppression} slows its opening {op.factor[0]:g}-{op.factor[1]:g} x "
        f"({op.factor_source}): the contacts part in up to {slow.duration * 1e3:.0f} ms instead of "
        f"{normal.duration * 1e3:.0f} ms ({op.release_source}), so the arc at the contact lasts that long and takes "
        f"about {slow.energy:.0f} J instead of {normal.energy:.0f} J (U_bus x I x t + 1/2 L I^2; an estimate, "
        "common practice); a category or break rating is tested with the maker's normal opening"
    )


def _relay_breaking(a: Analysis) -> list[Verdict]:
    """Each relay's break: where it breaks an unsuppressed stage, decided at the switch-off that breaks
    the most (coils cold at the low end of their resistance and the high end of their inductance, the
    bus at the regulator's highest end: the largest current and the longest L/R), the cold corner as
    nominal; where every stage it switches is suppressed, the opening contact's voltage."""
    if a.switching is None:
        return [not_checked(RELAY_BREAKING, "relays", "switching was not analysed")]
    out = []
    stages = _stage_map(a)
    per = a.switching.stages.get(LARGEST)
    words = _break_words(a)
    for relay in a.drawing.of_kind(Relay):
        ids = a.switched.get(relay.id, [])
        if not ids:
            out.append(not_checked(RELAY_BREAKING, relay.id, "this relay switches no stage", "ms"))
            continue
        nominal = _breaking(a, relay, ids, a.switching.stages["cold"], a.contacts.relays[relay.id], "cold")
        big = a.contacts.largest.get(relay.id)
        if per is None or big is None or all(stages[s].suppression.kind != "none" for s in ids):
            out.append(nominal)
            continue
        worst = _breaking(a, relay, ids, per, big, LARGEST)
        out.append(decided_at_worst(worst, nominal, LARGEST, words))
    return out


def _breaking(
    a: Analysis, relay: Relay, ids: list[str], cold: dict[str, StageSwitching], fig: RelayFigures, corner: str
) -> Verdict:
    """The break of ``relay`` (switching the stages ``ids``) from one case's stage figures ``cold`` and
    relay figures ``fig`` (analysis.switching, analysis.contacts), reported under ``corner``."""
    stages = _stage_map(a)
    order = category_order()
    i_break = fig.i_break
    bare = [s for s in ids if stages[s].suppression.kind == "none"]
    slowed, slow_note = _slowed_opening(fig)
    if not bare:
        vs = _contact_voltages(a, relay, ids)
        w = _worst(vs)
        kinds = ", ".join(stages[s].suppression.kind for s in ids)
        note = (
            f"suppressed at the coil ({kinds}): the current commutates into the suppressor, a DC-1-like "
            f"break of {i_break:.1f} A; the opening contact's voltage is relay.voltage_rating's: "
            + "; ".join(
                f"{v.subject}: {v.status.value}"
                + ("" if v.value is None else f", rated {v.value:g} V against {v.limit:.1f} V")
                for v in vs
            )
        )
        if slowed:
            note += (
                f"; {slow_note.split(': the contacts')[0]}: the contact arcs until the current has moved into "
                "the suppressor, a little longer with the slow opening"
            )
        if w.status is Status.NOT_CHECKED:
            return not_checked(RELAY_BREAKING, relay.id, note + f" ({w.note})", "V", w.corner)
        return Verdict(
            RELAY_BREAKING.id,
            relay.id,
            w.status,
            w.value,
            w.limit,
            "V",
            w.margin,
            RELAY_BREAKING.clause,
            note,
            w.corner,
        )
    tau = max(cold[s].tau for s in bare)
    need = category_for(tau)
    rated = set(relay.categories)
    ib = relay.inductive_break
    rated_fig = None
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
        status, note, rated_fig = _category_rating(a, relay, covering, need, tau, i_break)
    else:
        status, note = (
            Status.WARN,
            (f"unsuppressed, L/R {tau * 1e3:.1f} ms needs a contact rated {need}; the drawing gives no such rating"),
        )
    if slowed:
        note += "; " + slow_note
        if status is Status.PASS:
            status = Status.WARN
            note += ": the rating does not cover the slowed break; fit suppression at the stage's coil, or a "
            note += "diode with a zener on the relay's own coil"
    if rated_fig is not None:
        return Verdict(
            RELAY_BREAKING.id,
            relay.id,
            status,
            rated_fig[0],
            rated_fig[1],
            rated_fig[2],
            ceiling(rated_fig[0], rated_fig[1]),
            RELAY_BREAKING.clause,
            note,
            corner,
        )
    lim = None if need is None else category_tau_limit(need)
    return Verdict(
        RELAY_BREAKING.id,
        relay.id,
        status,
        tau * 1e3,
        None if lim is None else lim * 1e3,
        "ms",
        None if lim is None else ceiling(tau, lim),
        RELAY_BREAKING.clause,
        note,
        corner,
    )


def _category_rating(a: Analysis, relay: Relay, covering: list[str], need: str, tau: float, i_break: float):
    """Status, note and (value, limit, unit) of an unsuppressed break against the relay's rated categories:
    a category covers the load only within its rated current I_e at its voltage U_e (IEC 60947-4-1 / -5-1),
    and, for a contact switched more often than the make/break test's operations, within the durability
    test's time constant."""
    u_max, _words = _highest_bus(a)
    cycles = a.drawing.switching.cycles
    frequent = cycles > frequent_switching_above()
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
        t_lim = category_test_tau(cat, u_e, i_e, frequent)
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


def _break_words(a: Analysis) -> tuple[str, ...]:
    """The conditions of the switch-off that breaks the most, in words (analysis.worst.BreakCase)."""
    b = a.worst.largest_break
    return () if b is None else tuple(f"{k} {v}" for k, v in b.words)


def _suppressors(a: Analysis) -> list[Verdict]:
    """Peak current and energy per break decided at the switch-off that breaks the most (the cold corner
    as nominal); the stand-off voltage at the highest bus and the clamped load dump."""
    if a.switching is None:
        return [not_checked(SUPPRESSOR, "stages", "switching was not analysed")]
    out = []
    central = getattr(a.drawing.supply, "load_dump_suppression", "not known") or "not known"
    test, assumed = applicable_test(central)
    u_hi, hi_words = _highest_bus(a)
    largest = a.switching.stages.get(LARGEST, {})
    words = _break_words(a)

    def at_worst(nominal: Verdict, make, sid: str) -> Verdict:
        w = largest.get(sid)
        return nominal if w is None else decided_at_worst(make(w, LARGEST), nominal, LARGEST, words)

    for s in a.drawing.stages:
        sup = s.suppression
        if sup.kind == "none":
            continue
        sw = a.switching.stages["cold"][s.id]
        if sup.peak_current is None:
            i_hi = max(sw.i_break, largest[s.id].i_break if s.id in largest else 0.0)
            out.append(
                not_checked(
                    SUPPRESSOR,
                    f"{s.id} peak current",
                    f"no peak_current rating (break current up to {i_hi:.1f} A)",
                    "A",
                )
            )
        else:

            def peak(x: StageSwitching, corner: str, sup=sup, s=s) -> Verdict:
                return at_most(
                    SUPPRESSOR,
                    f"{s.id} peak current",
                    x.i_break,
                    sup.peak_current,
                    "A",
                    f"{sup.kind} carries the break current {x.i_break:.1f} A as it commutates",
                    corner,
                )

            out.append(at_worst(peak(sw, "cold"), peak, s.id))
        what = "stand-off" if sup.bidirectional else "reverse"
        # blocking or standing off the load-dump pulse that applies (Test A / B): suppressor.load_dump
        clamped = tables.load_dump_clamped(a.drawing.supply.system_voltage)
        need_v = max(clamped, u_hi)
        if sup.reverse_voltage is None:
            out.append(
                not_checked(
                    SUPPRESSOR, f"{s.id} {what} voltage", f"no reverse_voltage rating (needs >= {need_v:g} V)", "V"
                )
            )
        else:

            def blocks(bus: float, bus_words: str, corner: str, sup=sup, s=s, what=what, clamped=clamped) -> Verdict:
                why = (
                    f"must block the clamped load dump ({clamped:g} V, ISO 16750-2 Test B) and the {bus_words} "
                    f"({bus:g} V); the load dump that applies here (Test {test}{', assumed' if assumed else ''}) "
                    "is suppressor.load_dump's"
                )
                return at_least(
                    SUPPRESSOR, f"{s.id} {what} voltage", sup.reverse_voltage, max(clamped, bus), "V", why, corner
                )

            # decided at the highest bus, the cold corner's regulated bus as nominal (as the voltage ratings)
            normal = a.corners["cold"].bus_voltage
            out.append(
                decided_at_worst(
                    blocks(u_hi, "highest bus", "limit"),
                    blocks(normal, "cold corner's regulated bus", "cold"),
                    "highest voltage",
                    (hi_words,),
                )
            )
        if sup.energy_rating is None:
            e_hi = max(sw.decay.e_suppressor, largest[s.id].decay.e_suppressor if s.id in largest else 0.0)
            out.append(
                not_checked(
                    SUPPRESSOR, f"{s.id} energy", f"no energy_rating (it takes up to {e_hi:.1f} J per break)", "J"
                )
            )
        else:

            def energy(x: StageSwitching, corner: str, sup=sup, s=s) -> Verdict:
                return at_most(
                    SUPPRESSOR,
                    f"{s.id} energy",
                    x.decay.e_suppressor,
                    sup.energy_rating,
                    "J",
                    f"energy per break from the decay through the {sup.kind} (of ½LI² = {x.stored_energy:.1f} J)",
                    corner,
                )

            out.append(at_worst(energy(sw, "cold"), energy, s.id))
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
    a_dumps = a.contacts.stage_dumps["none"]
    b_dumps = a.contacts.stage_dumps["central"]
    sups = {s.id: s.suppression for s in a.drawing.stages}
    for sid in a_dumps:
        sup = sups[sid]
        test, assumed = applicable_test(central)
        if not assumed:
            v = _dump_verdict(sid, sup, (b_dumps if test == "B" else a_dumps)[sid], Status.FAIL)
            said = "central load-dump suppression stated" if test == "B" else "no central load-dump suppression stated"
            out.append(dataclasses.replace(v, note=f"{v.note}; {said}"))
            continue
        va = _dump_verdict(sid, sup, a_dumps[sid], Status.FAIL)
        if va.status is not Status.FAIL:
            out.append(
                dataclasses.replace(
                    va, note=f"{va.note}; central load-dump suppression not stated: Test A (unclamped) assumed"
                )
            )
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
    """Decided at the switch-off that breaks the most (the largest current and the longest L/R: the
    slowest decay), the cold corner as nominal."""
    if a.switching is None:
        return [not_checked(RELEASE, "stages", "switching was not analysed")]
    lim = a.drawing.switching.release_limit
    frac = a.drawing.switching.release_fraction
    out = []
    largest = a.switching.stages.get(LARGEST, {})
    words = _break_words(a)
    for s in a.drawing.stages:
        sw = a.switching.stages["cold"][s.id]
        t = max(sw.decay.t_release, largest[s.id].decay.t_release if s.id in largest else 0.0)
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
                    f"no switching.release_limit in the drawing (release takes up to "
                    f"{t * 1e3:.0f} ms to {frac:.0%} of the current)",
                    "ms",
                    "cold",
                )
            )
            continue
        lim_ms = lim * 1e3

        def release(x: StageSwitching, corner: str, s: Stage = s, lim_ms: float = lim_ms) -> Verdict:
            t_ms = x.decay.t_release * 1e3
            note = f"{s.suppression.kind}: current falls to {frac:.0%} of {x.i_break:.1f} A in {t_ms:.0f} ms"
            return at_most(RELEASE, s.id, t_ms, lim_ms, "ms", note, corner)

        nominal = release(sw, "cold")
        w = largest.get(s.id)
        out.append(nominal if w is None else decided_at_worst(release(w, LARGEST), nominal, LARGEST, words))
    return out


def _pickup_at(r: Relay, x: CoilAt | None, where: str, corner: str) -> Verdict:
    """The pick-up verdict of ``r`` from its coil's figures ``x`` (analysis.contacts: hot coil, zone +
    own rise, fed from the bus of ``where``)."""
    c = _made(r.coil, f"{r.id}: coil data")
    x = _made(x, f"{r.id}: coil figures")
    bus = x.bus
    limit = PICKUP_MARGIN * x.need
    status = Status.PASS if x.have >= limit else Status.WARN if x.have >= x.need else Status.FAIL
    return Verdict(
        PICKUP.id,
        r.id,
        status,
        x.have,
        limit,
        "V",
        floor(x.have, limit),
        PICKUP.clause,
        f"coil at {x.temperature:g} °C ({x.resistance:.1f} ohm) needs {x.need:.2f} V to operate "
        f"({c.operate_voltage:g} V at {c.t_ref:g} °C, same ampere-turns); it gets {x.have:.2f} V from the "
        f"{bus:.2f} V {where} through {c.feed_resistance:g} ohm; pass at >= 110 % of need",
        corner,
    )


def _pickup(a: Analysis) -> list[Verdict]:
    """Pick-up decided at the lowest bus (a half-discharged cold battery, the alternator hot and derated,
    the coil hot), with the hot corner's figure as nominal."""
    out = []
    for r in a.drawing.of_kind(Relay):
        if r.coil is None:
            out.append(
                not_checked(
                    PICKUP, r.id, "no coil data for this relay (coil = { voltage, resistance, operate_voltage })", "V"
                )
            )
            continue
        fig = a.contacts.relays[r.id]
        nominal = _pickup_at(r, fig.pickup_hot, "hot-corner bus", "hot")
        low = a.worst.lowest_bus
        worst = _pickup_at(r, fig.pickup_lowest, "lowest bus", "lowest bus")
        out.append(decided_at_worst(worst, nominal, "lowest bus", tuple(f"{k} {v}" for k, v in low.words)))
    return out


#: A coil's feed fuse should carry the coil's cold current with room: above 75 % of its rating the
#: fuse ages (the continuous-load rule of fuse.continuous; common practice).
COIL_FUSE_LOAD = 0.75
#: The next fuse size up may exceed the wire's ampacity by at most 150 % (ABYC E-11).
NEXT_SIZE_UP = 1.5


def _coil_circuit(a: Analysis) -> list[Verdict]:
    """A relay's own coil circuit: the coil's cold current against its feed fuse, the fuse against its
    wire's ampacity."""
    out = []
    _bus, hi_words = _highest_bus(a)
    for r in a.drawing.of_kind(Relay):
        if r.coil is None:
            continue
        cc = _made(
            a.contacts.relays[r.id].coil, f"{r.id}: coil figures"
        )  # analysis.contacts: every relay with coil data
        i = cc.cold.current
        base = (
            f"coil at the lowest ambient {cc.cold.temperature:g} °C ({cc.cold.resistance:.1f} ohm) on {hi_words} "
            f"through {r.coil.feed_resistance:g} ohm draws {i:.3f} A"
        )
        if cc.fuse_rating is None:
            out.append(
                not_checked(COIL_CIRCUIT, f"{r.id} coil fuse", base + "; no coil fuse_rating in the drawing", "A")
            )
        else:
            lim = COIL_FUSE_LOAD * cc.fuse_rating
            status = Status.PASS if i <= lim else Status.WARN if i <= cc.fuse_rating else Status.FAIL
            out.append(
                Verdict(
                    COIL_CIRCUIT.id,
                    f"{r.id} coil fuse",
                    status,
                    i,
                    lim,
                    "A",
                    ceiling(i, lim),
                    COIL_CIRCUIT.clause,
                    f"{base}; its {cc.fuse_rating:g} A feed fuse carries at most 75 % continuously (common practice); "
                    "above its rating it opens and the stage drops out",
                    "cold",
                )
            )
        subject = f"{r.id} coil wire"
        if cc.wire_area is None or cc.fuse_rating is None:
            missing = " and ".join(
                x for x, v in (("wire_area", cc.wire_area), ("fuse_rating", cc.fuse_rating)) if v is None
            )
            out.append(not_checked(COIL_CIRCUIT, subject, f"no coil {missing} in the drawing", "A"))
            continue
        if isinstance(cc.wire_ampacity, str) or cc.wire_ampacity is None:
            out.append(
                not_checked(COIL_CIRCUIT, subject, f"{cc.wire_area * 1e6:g} mm² coil wire: {cc.wire_ampacity}", "A")
            )
            continue
        amp = cc.wire_ampacity.value
        f = cc.fuse_rating
        status = Status.PASS if f <= amp else Status.WARN if f <= NEXT_SIZE_UP * amp else Status.FAIL
        out.append(
            Verdict(
                COIL_CIRCUIT.id,
                subject,
                status,
                f,
                amp,
                "A",
                ceiling(f, amp),
                COIL_CIRCUIT.clause,
                f"the {f:g} A coil fuse against the {cc.wire_area * 1e6:g} mm² coil wire's {amp:.1f} A ampacity "
                f"(33 CFR 183.425 table, {cc.wire_class_max:g} °C insulation assumed (ISO 6722 class "
                f"{cc.wire_class}), {r.zone_temperature:g} °C zone); the next size up is allowed to 150 % (ABYC E-11) "
                "as a warning",
                "limit",
            )
        )
    return out


RELAY_BREAKING = Rule(
    "relay.inductive_break",
    "Relay contact can break its stage: DC category by L/R, or contact voltage when suppressed",
    "IEC 60947-4-1 DC-1/DC-3/DC-5 and IEC 60947-5-1 DC-13 (T0.95 = 6 x P ms with P = U_e x I_e of the rating, "
    "300 ms cap): a category covers a break only within its rated current I_e at U_e and its test L/R "
    "(durability L/R above 50 switchings); a diode on the relay's own coil slows its opening 5-10 x (relay "
    "maker's application note) and lengthens the arc",
    _relay_breaking,
    ("transient.LinearRL", "transient.clamp_decay", "transient.time_constant_from_t95"),
)
SUPPRESSOR = Rule(
    "suppressor.rating",
    "Suppressor peak current, reverse (stand-off) voltage and energy per break",
    "Break current and energy at the switch-off that breaks the most (coils cold, resistance at the low end "
    "and inductance at the high end of their tolerances, the regulator's highest bus); ISO 16750-2 Test B "
    "clamped load dump (35 V / 58 V) and the highest bus (the pulse that applies: suppressor.load_dump); clamp "
    "energy computed",
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
    "Maker's must-operate voltage scaled by coil R(T) (copper, IEC 60028 alpha) at the lowest bus (battery "
    "half-discharged and cold, alternator hot and derated); 110 % margin (transport-agency relay rules)",
    _pickup,
    ("conductor.resistance_at_temperature",),
)
RELAY_VOLTAGE = Rule(
    "relay.voltage_rating",
    "Relay switching voltage rating at least what the opening contact sees, in service and in a load dump",
    "Highest bus (ISO 16750-2 supply maximum or the regulator's highest end) plus the stage suppressor's "
    "voltage; ISO 16750-2 4.6.4 load dump (Test A without central suppression or not stated, Test B with it) "
    "loaded by the stage; maker's rated switching voltage",
    _relay_voltage,
    ("load_dump.loaded_bus_peak", "load_dump.opening_contact_voltage", "transient.clamp_decay"),
)
COIL_CIRCUIT = Rule(
    "relay.coil_circuit",
    "Relay coil feed: the coil's cold current within its fuse, the fuse within its wire's ampacity",
    "Coil current at the lowest ambient and highest bus (copper R(T), IEC 60028); 75 % continuous load on the "
    "fuse (common practice); fuse not above the wire's ampacity (33 CFR 183.425 table; ABYC E-11 150 % "
    "next size up as a warning)",
    _coil_circuit,
    ("conductor.resistance_at_temperature", "conductor.ampacity_ambient_factor"),
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
#: The opening contact's voltage rating and the relay coil circuit, registered after the fuse and relay
#: rules (coilstage.checks.RULES keeps the report's order).
NEW_RULES = [RELAY_VOLTAGE, COIL_CIRCUIT]
