"""Cable rules: ampacity, temperature class, voltage drop to each stage."""

from __future__ import annotations

from coilstage.analysis.run import Analysis
from coilstage.checks.base import (
    Rule,
    Status,
    Verdict,
    at_most,
    ceiling,
    ceiling_temperature,
    decided_at_worst,
    not_checked,
    worst_over_sweep,
)
from coilstage.drawing.schema import Cable


def _ampacity(a: Analysis) -> list[Verdict]:
    """Each cable's current against its ampacity in one consistent vehicle state: the ambient swept over
    the drawing's range with the zone, the coils and the bus following it (analysis.worst.DutySweep),
    decided at the worst ambient with tolerances, the same sweep with nominal parts beside it."""
    out = []
    sw = a.worst.duty_sweep
    sn = a.worst.duty_sweep_nominal
    for c in a.drawing.of_kind(Cable):
        rates = a.ratings.cables_sweep.get(c.id)
        if sw is None or sn is None or not rates:
            out.append(
                _ampacity_at(c, a.ratings.cables[c.id], a.duty[c.id], c.zone_temperature, a.duty_state[c.id], "cold")
            )
            continue
        nominal, _ = worst_over_sweep(
            lambda j, corner, c=c, rates=rates: _ampacity_at(
                c, rates[j], sn.currents[c.id][j], sn.zone(c.zone_temperature, j), sn.states[c.id][j], corner
            ),
            sn,
            "",
        )
        if nominal.status is Status.NOT_CHECKED:
            out.append(nominal)
            continue
        worst, j = worst_over_sweep(
            lambda j, corner, c=c, rates=rates: _ampacity_at(
                c, rates[j], sw.currents[c.id][j], sw.zone(c.zone_temperature, j), sw.states[c.id][j], corner
            ),
            sw,
            "largest current",
        )
        deciding = (sw.point_words(j), *(f"{k} {v}" for k, v in sw.words))
        out.append(decided_at_worst(worst, nominal, "largest current", deciding))
    return out


def _ampacity_at(c: Cable, rating, i: float, zone_t: float, state: str, corner: str) -> Verdict:
    """The cable's current ``i`` [A] against its ampacity ``rating`` with its zone at ``zone_t`` [°C]."""
    amp = rating.ampacity
    if isinstance(amp, str):
        return not_checked(AMPACITY, c.id, amp, "A", corner)
    if amp.value <= 0:
        return Verdict(
            AMPACITY.id,
            c.id,
            Status.FAIL,
            i,
            0.0,
            "A",
            None,
            AMPACITY.clause,
            f"zone {c.zone} at {zone_t:g} °C leaves no ampacity for a {amp.column} °C insulation rating",
            corner,
        )
    comp = rating.heat_balance
    table_value = amp.base * amp.ambient_factor * amp.bundle_factor
    note = (
        f"{c.size_label} ({amp.method}): table {amp.base:.0f} A x ambient {amp.ambient_factor:.3f} "
        f"({c.zone}, {zone_t:g} °C) x bundle {amp.bundle_factor:.2f} ({c.bundle} loaded) = "
        f"{table_value:.0f} A; heat balance (still air, class {c.insulation_class} at {c.class_max:g} °C) "
        + ("not available (no outside diameter)" if comp is None else f"{comp:.0f} A")
        + f"; current {i:.1f} A with {state} on"
    )
    return at_most(AMPACITY, c.id, i, amp.value, "A", note, corner)


def _temperature_class(a: Analysis) -> list[Verdict]:
    out = []
    for c in a.drawing.of_kind(Cable):
        ok = c.zone_temperature < c.class_max
        note = f"ISO 6722 class {c.insulation_class} ({c.class_max:g} °C) in zone {c.zone} ({c.zone_temperature:g} °C)"
        if not ok:
            note += ": the zone alone reaches the class limit, leaving nothing for self-heating"
        out.append(
            Verdict(
                TEMPERATURE_CLASS.id,
                c.id,
                Status.PASS if ok else Status.FAIL,
                c.zone_temperature,
                c.class_max,
                "degC",
                ceiling_temperature(c.zone_temperature, c.class_max),
                TEMPERATURE_CLASS.clause,
                note,
            )
        )
    return out


def _voltage_drop(a: Analysis) -> list[Verdict]:
    out = []
    d = a.drawing
    lim = d.limits
    nominal = d.supply.system_voltage
    at_big = a.largest_current_stages.stages

    def verdict(sid: str, f: float, drop: float, corner: str, how: str) -> Verdict:
        status = Status.PASS if f <= lim.drop_pass else Status.WARN if f <= lim.drop_warn else Status.FAIL
        note = (
            f"{drop:.3f} V of {nominal} V nominal from the battery terminals to the stage, {how}; "
            f"pass <= {lim.drop_pass:.0%}, warn <= {lim.drop_warn:.0%}"
        )
        return Verdict(
            VOLTAGE_DROP.id,
            sid,
            status,
            f * 100,
            lim.drop_pass * 100,
            "%",
            ceiling(f, lim.drop_pass),
            VOLTAGE_DROP.clause,
            note,
            corner,
        )

    for sid in [s.id for s in d.stages]:
        corner, s = max(
            ((name, next(s for s in a.corners[name].stages if s.id == sid)) for name in ("cold", "hot")),
            key=lambda t: t[1].drop_fraction,
        )
        nom = verdict(sid, s.drop_fraction, s.drop, corner, f"{corner} corner (worse of cold and hot)")
        if sid not in at_big:
            out.append(nom)
            continue
        w = at_big[sid]
        worst = verdict(sid, w.drop_fraction, w.drop, "largest current", "at the largest continuous current")
        deciding = tuple(f"{k} {v}" for k, v in a.worst.largest_current_words)
        out.append(decided_at_worst(worst, nom, "largest current", deciding))
    return out


AMPACITY = Rule(
    "cable.ampacity",
    "Cable current within its ampacity in its zone and bundle, in one vehicle state swept over the ambient range",
    "33 CFR 183.425 Table 5 (= ABYC E-11 ampacity table); ambient factor sqrt((Tc-Ta)/(Tc-30)) (derived); "
    "bundle factors of the USCG Electrical System Compliance Guideline; the lower of that and a still-air heat "
    "balance (Churchill-Chu via ht)",
    _ampacity,
    ("conductor.ampacity_ambient_factor", "cable_heat.computed_ampacity", "network.mna_matrix"),
)
TEMPERATURE_CLASS = Rule(
    "cable.temperature_class",
    "Cable temperature class above the highest temperature of its zone",
    "ISO 6722-1 temperature classes A-H (class = ambient + self-heating)",
    _temperature_class,
    (),
)
VOLTAGE_DROP = Rule(
    "circuit.voltage_drop",
    "Voltage drop from the battery to each stage's terminals",
    "ABYC E-11: 3 % for critical circuits (a retarder is a braking device), 10 % otherwise; limits per drawing",
    _voltage_drop,
    ("network.solve_with_limited_source", "conductor.resistance_at_temperature"),
)
RULES = [AMPACITY, TEMPERATURE_CLASS, VOLTAGE_DROP]
