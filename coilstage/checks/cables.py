"""Cable rules: ampacity, temperature class, voltage drop to each stage."""

from __future__ import annotations

from coilstage.analysis.corners import stage_results
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
)
from coilstage.drawing.schema import Cable


def _ampacity(a: Analysis) -> list[Verdict]:
    out = []
    for c in a.drawing.of_kind(Cable):
        nominal = _ampacity_at(a, c, a.duty[c.id], "cold")
        if a.worst is None or nominal.status is Status.NOT_CHECKED:
            out.append(nominal)
            continue
        worst = _ampacity_at(a, c, a.worst.largest_current[c.id], "largest current")
        deciding = tuple(f"{k} {v}" for k, v in a.worst.largest_current_words)
        out.append(decided_at_worst(worst, nominal, "largest current", deciding))
    return out


def _ampacity_at(a: Analysis, c: Cable, i: float, corner: str) -> Verdict:
    """The cable's current ``i`` [A] against its ampacity in its zone and bundle."""
    rating = a.ratings.cables[c.id]
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
            f"zone {c.zone} at {c.zone_temperature:g} °C leaves no ampacity for a {amp.column} °C insulation rating",
            corner,
        )
    comp = rating.heat_balance
    table_value = amp.base * amp.ambient_factor * amp.bundle_factor
    note = (
        f"{c.size_label} ({amp.method}): table {amp.base:.0f} A x ambient {amp.ambient_factor:.3f} "
        f"({c.zone}, {c.zone_temperature:g} °C) x bundle {amp.bundle_factor:.2f} ({c.bundle} loaded) = "
        f"{table_value:.0f} A; heat balance (still air, class {c.insulation_class} at {c.class_max:g} °C) "
        + ("not available (no outside diameter)" if comp is None else f"{comp:.0f} A")
        + f"; current {i:.1f} A with {a.duty_state[c.id]} on"
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
    big = a.worst.largest_current_solution if a.worst is not None else None
    at_big = {s.id: s for s in stage_results(d, big, a.corners["cold"].temperatures)} if big is not None else {}

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
    "Cable current at the cold corner within its ampacity in its zone and bundle",
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
