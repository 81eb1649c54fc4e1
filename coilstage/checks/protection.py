"""Fuse and relay rules."""

from __future__ import annotations

from coilstage import tables
from coilstage.analysis.params import RELAY_WARN_SHARE
from coilstage.analysis.ratings import RelayContact
from coilstage.analysis.run import Analysis
from coilstage.checks.base import (
    Rule,
    Status,
    Verdict,
    at_most,
    ceiling,
    decided_at_worst,
    floor,
    not_checked,
    worst_over_sweep,
)
from coilstage.drawing.schema import Cable, Fuse, Relay


def _fuse_continuous(a: Analysis) -> list[Verdict]:
    """Each fuse's continuous current against its rerated share in one consistent vehicle state: the
    ambient swept over the drawing's range with the fuse's zone, the coils and the bus following it
    (analysis.worst.DutySweep, as cable.ampacity), decided at the worst ambient with tolerances, the
    same sweep with nominal parts beside it; the cold corner where no sweep was made."""
    out = []
    frac = float(tables.fuse_rules()["continuous_fraction"])
    sw = a.worst.duty_sweep
    sn = a.worst.duty_sweep_nominal
    for f in a.drawing.of_kind(Fuse):

        def verdict(i: float, zone_t: float, state: str, corner: str, f=f) -> Verdict:
            rer = tables.fuse_rerating(zone_t)
            carry = f.rating * rer
            limit = frac * carry
            status = Status.PASS if i <= limit else Status.WARN if i <= carry else Status.FAIL
            note = (
                f"{i:.1f} A against {f.rating:g} A {f.part} type {f.fuse_type} x {rer:.3f} rerating at "
                f"{zone_t:g} °C ({f.zone}) = {carry:.1f} A; pass <= {frac:.0%} of that, warn up to "
                f"100 %; current with {state} on"
            )
            return Verdict(
                FUSE_CONTINUOUS.id, f.id, status, i, limit, "A", ceiling(i, limit), FUSE_CONTINUOUS.clause, note, corner
            )

        if sw is None or sn is None:
            out.append(verdict(a.duty[f.id], f.zone_temperature, a.duty_state[f.id], "cold"))
            continue

        def at(j: int, corner: str, s, f=f, verdict=verdict) -> Verdict:
            return verdict(s.currents[f.id][j], s.zone(f.zone_temperature, j), s.states[f.id][j], corner)

        nominal, _ = worst_over_sweep(lambda j, c: at(j, c, sn), sn, "")
        worst, j = worst_over_sweep(lambda j, c: at(j, c, sw), sw, "largest current")
        deciding = (sw.point_words(j), *(f"{k} {v}" for k, v in sw.words))
        out.append(decided_at_worst(worst, nominal, "largest current", deciding))
    return out


def _fuse_protects(a: Analysis) -> list[Verdict]:
    out = []
    cables = {c.id: c for c in a.drawing.of_kind(Cable)}
    for f in a.drawing.of_kind(Fuse):
        ids = a.protected.get(f.id, [])
        unknown = [i for i in ids if i not in cables]
        if unknown:
            out.append(not_checked(FUSE_PROTECTS, f.id, f"protects names no cable with id {', '.join(unknown)}", "A"))
            continue
        if not ids:
            out.append(
                not_checked(FUSE_PROTECTS, f.id, "no cable found downstream of this fuse (name them in protects)", "A")
            )
            continue
        amps = []
        for cid in ids:
            amp = a.ratings.cables[cid].ampacity
            if isinstance(amp, str):
                out.append(not_checked(FUSE_PROTECTS, f.id, f"ampacity of {cid} unknown: {amp}", "A"))
                break
            amps.append((amp.value, cid))
        else:
            weakest, cid = min(amps)
            if weakest <= 0:
                status, note = Status.FAIL, f"{cid} has no ampacity left in its zone, so no rating can protect it"
            elif f.rating <= weakest:
                status, note = Status.PASS, f"rating within the ampacity of {cid}, the weakest cable it protects"
            elif f.rating <= 1.5 * weakest:
                between = [s for s in f.series if weakest < s < f.rating]
                if f.series and not between:
                    status = Status.PASS
                    note = (
                        f"next standard size above the {weakest:.1f} A ampacity of {cid}, "
                        "within 150 % (allowed by E-11)"
                    )
                elif f.series:
                    status = Status.FAIL
                    sizes = ", ".join(f"{s:g}" for s in between)
                    note = (
                        f"not the next size up: {sizes} A lie between the {weakest:.1f} A ampacity of {cid} "
                        "and the rating"
                    )
                else:
                    status = Status.WARN
                    note = (
                        f"above the {weakest:.1f} A ampacity of {cid} but within 150 %; the type has no shipped "
                        "rating series, so 'next size up' could not be confirmed"
                    )
            else:
                status, note = Status.FAIL, f"rating above 150 % of the {weakest:.1f} A ampacity of {cid}"
            out.append(
                Verdict(
                    FUSE_PROTECTS.id,
                    f.id,
                    status,
                    f.rating,
                    weakest,
                    "A",
                    ceiling(f.rating, weakest),
                    FUSE_PROTECTS.clause,
                    note + f" (protects {', '.join(ids)})",
                )
            )
    return out


def highest_bus(a: Analysis) -> tuple[float, str]:
    """The highest voltage the bus can reach [V] with words: the larger of the supply code's maximum
    (ISO 16750-2 Tables 1-2, or the drawing's limit corner) and the regulator's highest end
    (``a.worst.bus_high``: set-point plus its tolerance)."""
    d = a.drawing
    code = max(d.supply.v_max, d.corners.limit_bus)
    code_words = f"{code:g} V code maximum ({d.supply.limits_source or 'drawing'})"
    if a.worst.bus_high > code:
        return a.worst.bus_high, f"{a.worst.bus_high:.2f} V regulator's highest end (above the {code_words})"
    return code, code_words


def _fuse_voltage_at(f: Fuse, v: float, words: str, corner: str) -> Verdict:
    """Fuse ``f``'s rated voltage against the bus ``v`` [V] (``words`` say what sets it)."""
    r = f.voltage_rating
    if r < v:
        status, why = Status.FAIL, "below the highest voltage the bus can reach"
    elif r <= v * (1.0 + 1e-9):
        status = Status.WARN
        why = (
            "exactly at the highest voltage, with no headroom: any excursion above it (a regulator "
            "fault, a load dump) is beyond the fuse's rated voltage and it may not clear an arc; "
            "choose the next rated voltage up (58 V)"
        )
    else:
        status, why = Status.PASS, "above the highest voltage"
    return Verdict(
        FUSE_VOLTAGE.id,
        f.id,
        status,
        r,
        v,
        "V",
        floor(r, v),
        FUSE_VOLTAGE.clause,
        f"fuse rated {r:g} V against the {words}: {why}",
        corner,
    )


def _fuse_voltage(a: Analysis) -> list[Verdict]:
    """Decided at the highest voltage the bus reaches in service (the supply code's maximum or the
    regulator's highest end), the cold corner's regulated bus as nominal."""
    v, words = highest_bus(a)
    normal = a.corners["cold"].bus_voltage
    normal_words = f"{normal:.2f} V regulated bus of the cold corner"
    out = []
    for f in a.drawing.of_kind(Fuse):
        nominal = _fuse_voltage_at(f, normal, normal_words, "cold")
        out.append(decided_at_worst(_fuse_voltage_at(f, v, words, "limit"), nominal, "highest voltage", (words,)))
    return out


def _fuse_breaking(a: Analysis) -> list[Verdict]:
    out = []
    lf = a.worst.largest_fault
    for f in a.drawing.of_kind(Fuse):
        i = a.fault_current[f.id]
        nominal = at_most(
            FUSE_BREAKING,
            f.id,
            i,
            f.breaking_capacity,
            "A",
            f"bolted short from the load terminal ({f.b}) to chassis ({a.drawing.supply.chassis_node}) "
            "at the cold corner, battery "
            f"and alternator feeding; breaking capacity {f.breaking_capacity:g} A ({f.breaking_source})",
            "cold",
        )
        iw = lf.at_fuse[f.id]
        worst = at_most(
            FUSE_BREAKING,
            f.id,
            iw,
            f.breaking_capacity,
            "A",
            f"bolted short from the load terminal ({f.b}) to chassis at the largest fault current {iw:.0f} A; "
            f"breaking capacity {f.breaking_capacity:g} A ({f.breaking_source})",
            lf.name,
        )
        out.append(decided_at_worst(worst, nominal, lf.name, tuple(f"{k} {v}" for k, v in lf.words)))
    return out


def _relay_contact(a: Analysis) -> list[Verdict]:
    """Each relay's contact current against its rating derated to its zone (analysis.ratings), in one
    consistent vehicle state swept over the ambient range (as fuse.continuous); the cold corner where no
    sweep was made."""
    out = []
    sw = a.worst.duty_sweep
    sn = a.worst.duty_sweep_nominal
    over = a.ratings.relay_contacts_sweep
    for r in a.drawing.of_kind(Relay):
        if sw is None or sn is None or r.id not in over.get("worst", {}) or r.id not in over.get("nominal", {}):
            out.append(_relay_contact_at(a.ratings.relay_contacts[r.id], a.duty[r.id], "cold", a.duty_state[r.id]))
            continue

        def at(j: int, corner: str, s, name: str, r=r) -> Verdict:
            return _relay_contact_at(over[name][r.id][j], s.currents[r.id][j], corner, s.states[r.id][j])

        nominal, _ = worst_over_sweep(lambda j, c: at(j, c, sn, "nominal"), sn, "")
        if nominal.limit is None:
            out.append(nominal)
            continue
        worst, j = worst_over_sweep(lambda j, c: at(j, c, sw, "worst"), sw, "largest current")
        deciding = (sw.point_words(j), *(f"{k} {v}" for k, v in sw.words))
        out.append(decided_at_worst(worst, nominal, "largest current", deciding))
    return out


def _relay_contact_at(rc: RelayContact, i: float, corner: str, state: str) -> Verdict:
    """The relay's contact current ``i`` [A] against its rating at its zone temperature (``rc``)."""
    rating, rnote, tnote, limit = rc.rating, rc.rating_words, rc.factor_words, rc.limit
    if rating is None:
        return Verdict(RELAY_CONTACT.id, rc.relay, Status.FAIL, i, None, "A", None, RELAY_CONTACT.clause, rnote, corner)
    if limit is None:
        return Verdict(RELAY_CONTACT.id, rc.relay, Status.FAIL, i, None, "A", None, RELAY_CONTACT.clause, tnote, corner)
    status = Status.PASS if i <= RELAY_WARN_SHARE * limit else Status.WARN if i <= limit else Status.FAIL
    if status is Status.PASS and rc.held_to_warn:
        status = Status.WARN
    return Verdict(
        RELAY_CONTACT.id,
        rc.relay,
        status,
        i,
        limit,
        "A",
        ceiling(i, limit),
        RELAY_CONTACT.clause,
        f"{rnote} {rating:g} A; {tnote}; warn above 90 % (common practice); current {i:.1f} A with {state} on",
        corner,
    )


FUSE_CONTINUOUS = Rule(
    "fuse.continuous",
    "Fuse continuous current within 75 % of its rating rerated for its zone",
    "75 % continuous-load rule (common practice; circuitprotection.ca fuseology); rerating curve from memory",
    _fuse_continuous,
    ("network.mna_matrix",),
)
FUSE_PROTECTS = Rule(
    "fuse.protects_cable",
    "Fuse rating not above the ampacity of the cable it protects (next size up at most 150 %)",
    "ABYC E-11 overcurrent protection of conductors (150 % next-size-up allowance)",
    _fuse_protects,
    ("conductor.ampacity_ambient_factor", "cable_heat.computed_ampacity"),
)
FUSE_VOLTAGE = Rule(
    "fuse.voltage_rating",
    "Fuse voltage rating above the highest voltage the bus can reach (exactly at it: warn)",
    "ISO 8820-1/-3: rated voltage 32 V or 58 V; system maximum from ISO 16750-2 Tables 1-2 or the "
    "regulator's highest end, the larger",
    _fuse_voltage,
    (),
)
FUSE_BREAKING = Rule(
    "fuse.breaking_capacity",
    "Fuse breaking capacity at least the prospective short-circuit current at its place",
    "ISO 8820-3/-4 (1 000 A), -5/-6 (2 000 A) breaking capacity; fault current computed from the network",
    _fuse_breaking,
    ("network.short_circuit_currents",),
)
RELAY_CONTACT = Rule(
    "relay.contact_rating",
    "Relay contact current within its rating at the system voltage and zone temperature",
    "Maker's contact rating at 12 V / 24 V (a 12 V rating is about twice the 24 V one: arcs sustain at 24-28 V)",
    _relay_contact,
    ("network.mna_matrix",),
)
RULES = [FUSE_CONTINUOUS, FUSE_PROTECTS, FUSE_VOLTAGE, FUSE_BREAKING, RELAY_CONTACT]
