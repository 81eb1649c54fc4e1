"""Cable rules: ampacity, temperature class, voltage drop to each stage."""

from __future__ import annotations

from coilstage import tables
from coilstage.analysis.run import Analysis
from coilstage.checks.base import (
    Rule,
    Status,
    Verdict,
    at_most,
    ceiling,
    ceiling_temperature,
    not_checked,
)
from coilstage.drawing.schema import Cable


def cable_ampacity(a: Analysis, cable: Cable) -> tables.Ampacity | str:
    """Ampacity of a cable in its zone and bundle, or why it cannot be given: the table's
    (33 CFR 183.425), and where the cable's diameters are known the lower of that and the still-air
    heat balance's (a second opinion, with the same bundle factor)."""
    if cable.material != "copper":
        return f"the ampacity table is for copper; this cable is {cable.material}"
    amp = tables.ampacity(cable.awg, cable.area, cable.class_max, cable.zone_temperature, cable.bundle)
    if isinstance(amp, str):
        return amp
    comp = computed_ampacity(cable)
    if comp is not None and comp < amp.value:
        return tables.Ampacity(
            comp,
            amp.base,
            amp.column,
            amp.ambient_factor,
            amp.bundle_factor,
            amp.method + f"; the heat balance gives less, {comp:.0f} A, and governs",
        )
    return amp


def computed_ampacity(cable: Cable) -> float | None:
    """Current that holds the conductor at its class temperature in still air in its zone, by the
    heat balance (``ht`` correlations), times the bundle factor [A]; None without diameters."""
    if cable.outer_diameter is None or cable.conductor_diameter is None or cable.zone_temperature >= cable.class_max:
        return None
    from coilstage.physics.cable_heat import computed_ampacity as heat_balance_ampacity

    k_ins, _name = tables.cable_insulation(cable.insulation_class)
    i = heat_balance_ampacity(
        cable.class_max,
        cable.r20_per_m,
        cable.alpha20,
        cable.conductor_diameter,
        cable.outer_diameter,
        k_ins,
        tables.cable_emissivity(),
        cable.zone_temperature,
    )
    return i * tables.bundle_factor(cable.bundle)


def _ampacity(a: Analysis) -> list[Verdict]:
    out = []
    for c in a.drawing.of_kind(Cable):
        i = a.duty[c.id]
        amp = cable_ampacity(a, c)
        if isinstance(amp, str):
            out.append(not_checked(AMPACITY, c.id, amp, "A", "cold"))
            continue
        if amp.value <= 0:
            out.append(
                Verdict(
                    AMPACITY.id,
                    c.id,
                    Status.FAIL,
                    i,
                    0.0,
                    "A",
                    None,
                    AMPACITY.clause,
                    f"zone {c.zone} at {c.zone_temperature:g} °C leaves no ampacity for a "
                    f"{amp.column} °C insulation rating",
                    "cold",
                )
            )
            continue
        comp = computed_ampacity(c)
        table_value = amp.base * amp.ambient_factor * amp.bundle_factor
        note = (
            f"{c.size_label} ({amp.method}): table {amp.base:.0f} A x ambient {amp.ambient_factor:.3f} "
            f"({c.zone}, {c.zone_temperature:g} °C) x bundle {amp.bundle_factor:.2f} ({c.bundle} loaded) = "
            f"{table_value:.0f} A; heat balance (still air, class {c.insulation_class} at {c.class_max:g} °C) "
            + ("not available (no outside diameter)" if comp is None else f"{comp:.0f} A")
            + f"; current with {a.duty_state[c.id]} on"
        )
        out.append(at_most(AMPACITY, c.id, i, amp.value, "A", note, "cold"))
    return out


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
    lim = a.drawing.limits
    nominal = a.drawing.supply.system_voltage
    for sid in [s.id for s in a.drawing.stages]:
        worst = max(
            ((name, next(s for s in a.corners[name].stages if s.id == sid)) for name in ("cold", "hot")),
            key=lambda t: t[1].drop_fraction,
        )
        corner, s = worst
        f = s.drop_fraction
        status = Status.PASS if f <= lim.drop_pass else Status.WARN if f <= lim.drop_warn else Status.FAIL
        note = (
            f"{s.drop:.3f} V of {nominal} V nominal from the battery terminals to the stage, {corner} corner "
            f"(worse of cold and hot); pass <= {lim.drop_pass:.0%}, warn <= {lim.drop_warn:.0%}"
        )
        out.append(
            Verdict(
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
        )
    return out


AMPACITY = Rule(
    "cable.ampacity",
    "Cable current at the cold corner within its ampacity in its zone and bundle",
    "33 CFR 183.425 Table 5 (= ABYC E-11 ampacity table); ambient factor sqrt((Tc-Ta)/(Tc-30)) (derived); "
    "bundle factors of the USCG Electrical System Compliance Guideline; the lower of that and a still-air heat "
    "balance (Churchill-Chu via ht)",
    _ampacity,
)
TEMPERATURE_CLASS = Rule(
    "cable.temperature_class",
    "Cable temperature class above the highest temperature of its zone",
    "ISO 6722-1 temperature classes A-H (class = ambient + self-heating)",
    _temperature_class,
)
VOLTAGE_DROP = Rule(
    "circuit.voltage_drop",
    "Voltage drop from the battery to each stage's terminals",
    "ABYC E-11: 3 % for critical circuits (a retarder is a braking device), 10 % otherwise; limits per drawing",
    _voltage_drop,
)
RULES = [AMPACITY, TEMPERATURE_CLASS, VOLTAGE_DROP]
