"""Rules for the regulator-failure overvoltage (ISO 16750-2 4.3.1: 18 V / 36 V for 60 min), the duty
case of :mod:`coilstage.analysis.overvoltage`.

What an electrician accepts: a fuse that opens on a failed regulator protects the wiring (the
retarder is lost while the fault lasts, which the driver must be told: warn). What is not accepted:
a cable carried above its ampacity while its fuse holds, and a coil that reaches its class limit
within the 60 min while nothing opens.

Each verdict is decided at the case with the coils at the low end of their resistance tolerance
(:data:`coilstage.analysis.overvoltage.WORST`), the stated coils' case beside it as the nominal.
"""

from __future__ import annotations

from collections.abc import Callable

from coilstage import tables
from coilstage.analysis.overvoltage import DURATION, WORST, OvervoltageCase, overvoltage_case_of
from coilstage.analysis.run import Analysis
from coilstage.checks.base import Rule, Status, Verdict, decided_at_worst, not_checked
from coilstage.drawing.schema import Cable, Fuse, Stage

#: ISO 8820 fuse-links must open within 30 min at 1.35 x rating (shipped gates, from memory)
OPENS_AT = 1.35


def _decided(a: Analysis, judge: Callable[[OvervoltageCase], Verdict]) -> Verdict:
    """``judge`` of the case the rules are decided at, with its judgement of the stated coils' case
    beside it as the nominal (both made once per analysis and read by the three rules)."""
    worst = judge(overvoltage_case_of(a.drawing, a.circuit, worst=True))
    nominal = judge(overvoltage_case_of(a.drawing, a.circuit))
    if worst.status is Status.NOT_CHECKED or nominal.status is Status.NOT_CHECKED:
        return worst
    return decided_at_worst(worst, nominal, WORST)


def _fuse_of(a: Analysis) -> dict[str, Fuse]:
    fuses = {f.id: f for f in a.drawing.of_kind(Fuse)}
    out = {}
    for fid, cids in a.protected.items():
        for cid in cids:
            if fid in fuses and cid not in out:
                out[cid] = fuses[fid]
    return out


def _opens(f: Fuse, i: float) -> bool:
    return i > OPENS_AT * f.rating * tables.fuse_rerating(f.zone_temperature)


def _fuses(a: Analysis) -> list[Verdict]:
    return [_decided(a, lambda case, f=f: _fuse(f, case)) for f in a.drawing.of_kind(Fuse)]


def _fuse(f: Fuse, case: OvervoltageCase | None) -> Verdict:
    if case is None:
        return not_checked(OV_FUSE, f.id, "no long-term overvoltage is given for this system voltage", "A")
    i = case.current[f.id]
    carry = f.rating * tables.fuse_rerating(f.zone_temperature)
    if i <= carry:
        status, why = Status.PASS, "the fuse holds"
    else:
        status = Status.WARN
        why = (
            "the fuse opens (it protects the wiring), and the retarder is lost while the regulator fault "
            "lasts: the driver must be warned (a charge-warning lamp or overvoltage indicator)"
        )
    return Verdict(
        OV_FUSE.id,
        f.id,
        status,
        i,
        carry,
        "A",
        (carry - i) / carry,
        OV_FUSE.clause,
        f"{why}: {i:.1f} A ({case.normal_current[f.id]:.1f} A at the {case.normal_bus:g} V set-point) "
        f"against {carry:.1f} A rerated; {case.words}",
        "overvoltage",
    )


def _cables(a: Analysis) -> list[Verdict]:
    fuse_of = _fuse_of(a)
    return [_decided(a, lambda case, c=c: _cable(a, c, fuse_of.get(c.id), case)) for c in a.drawing.of_kind(Cable)]


def _cable(a: Analysis, c: Cable, f: Fuse | None, case: OvervoltageCase | None) -> Verdict:
    if case is None:
        return not_checked(OV_CABLE, c.id, "no long-term overvoltage is given for this system voltage", "A")
    amp = a.ratings.cables[c.id].ampacity
    if isinstance(amp, str):
        return not_checked(OV_CABLE, c.id, f"ampacity unknown: {amp}", "A")
    i, iz = case.current[c.id], amp.value
    if i <= iz:
        status, why = Status.PASS, "within its ampacity"
    elif f is not None and _opens(f, case.current[f.id]) and i <= 1.45 * iz:
        status = Status.WARN
        why = (
            f"above its ampacity, but {f.id} opens within its conventional time ({OPENS_AT:g} x rating) "
            "and the overload stays within 1.45 x Iz (IEC 60364-4-43 433.1)"
        )
    else:
        status = Status.FAIL
        if f is None:
            why = "above its ampacity for the 60 min while no fuse protects it"
        elif _opens(f, case.current[f.id]):
            why = f"above 1.45 x its ampacity before {f.id} opens (IEC 60364-4-43 433.1)"
        else:
            why = f"above its ampacity for the 60 min while {f.id} holds"
    return Verdict(
        OV_CABLE.id,
        c.id,
        status,
        i,
        iz,
        "A",
        (iz - i) / iz if iz > 0 else None,
        OV_CABLE.clause,
        f"{why}: {i:.1f} A against {iz:.1f} A; {case.words}",
        "overvoltage",
    )


def _coils(a: Analysis) -> list[Verdict]:
    return [_decided(a, lambda case, s=s: _coil(a, s, case)) for s in a.drawing.of_kind(Stage)]


def _coil(a: Analysis, s: Stage, case: OvervoltageCase | None) -> Verdict:
    if case is None:
        return not_checked(OV_COIL, s.id, "no long-term overvoltage is given for this system voltage", "degC")
    c = case.coils[s.id]
    if c.steady_temperature is None:
        return not_checked(OV_COIL, s.id, c.how, "degC")
    opened = [f.id for f in a.drawing.of_kind(Fuse) if _opens(f, case.current[f.id]) and s.id in case.cuts[f.id]]
    # the regulator failure lasts its 60 min; the retarder is held on for the drawing's duty at most
    span = min(DURATION, a.drawing.duty.duration) if a.drawing.duty is not None else DURATION
    held = (
        f"the {span / 60:.0f} min duty" if span < DURATION else f"the {DURATION / 60:.0f} min of the regulator failure"
    )
    head = (
        f"{c.steady_temperature:.0f} °C in steady state against the {c.limit:g} °C class limit: "
        f"{c.limit - c.steady_temperature:+.0f} K"
    )
    if c.steady_temperature <= c.limit:
        status, why = Status.PASS, "the winding stays within its class at the overvoltage"
    elif c.time_to_limit is None:
        status = Status.FAIL
        why = "above its class in steady state; no heat capacity is given, so the time to the limit is unknown"
    elif c.time_to_limit >= span:
        status, why = (
            Status.PASS,
            f"reaches its class limit only after {c.time_to_limit / 60:.0f} min, beyond {held}",
        )
    elif opened:
        status = Status.WARN
        why = (
            f"would reach its class limit after {c.time_to_limit / 60:.0f} min, but {', '.join(opened)} "
            "open first at this current"
        )
    else:
        status = Status.FAIL
        why = (
            f"reaches its class limit after {c.time_to_limit / 60:.0f} min (at most: the starting power held) "
            f"of retardation on a failed regulator, within {held}, while no fuse opens: fit an overvoltage "
            "cut-out (supply.overvoltage_cutout) or a "
            "winding thermal switch that drops the stage, or coils rated for the overvoltage"
        )
    by_time = c.steady_temperature > c.limit and c.time_to_limit is not None
    value, limit, unit = (c.time_to_limit, span, "s") if by_time else (c.steady_temperature, c.limit, "degC")
    margin = (c.time_to_limit - span) / span if by_time else (c.limit - c.steady_temperature) / (c.limit + 273.15)
    return Verdict(
        OV_COIL.id,
        s.id,
        status,
        value,
        limit,
        unit,
        margin,
        OV_COIL.clause,
        f"{why}; {head}; {c.how}; {case.words}. Caution: hot coils burn; follow the vehicle maker's "
        "instructions and local codes",
        "overvoltage",
    )


_CLAUSE = "ISO 16750-2 4.3.1 long-term overvoltage (regulator failure: 18 V / 36 V, 60 min, T_max - 20 °C)"
OV_COIL = Rule(
    "overvoltage.coil",
    "Coil within its insulation class through a regulator-failure overvoltage, or a fuse opens first",
    _CLAUSE + "; IEC 60085 class limit",
    _coils,
    ("network.mna_matrix", "thermal.winding_steady_temperature"),
)
OV_FUSE = Rule(
    "overvoltage.fuse",
    "Fuse current at the regulator-failure overvoltage (opening protects the wiring; warns: retarder lost)",
    _CLAUSE + "; ISO 8820 rated current",
    _fuses,
    ("network.mna_matrix",),
)
OV_CABLE = Rule(
    "overvoltage.cable",
    "Cable current at the regulator-failure overvoltage within its ampacity, or its fuse opens",
    _CLAUSE + "; 33 CFR 183.425 ampacity; IEC 60364-4-43 433.1 (1.45 Iz)",
    _cables,
    ("network.mna_matrix", "conductor.ampacity_ambient_factor", "cable_heat.computed_ampacity"),
)
RULES = [OV_COIL, OV_FUSE, OV_CABLE]
