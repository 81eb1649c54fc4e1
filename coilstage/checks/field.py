"""Field rules: stated against geometry inductance, iron saturation, braking effort that remains hot."""

from __future__ import annotations

from coilstage.analysis.conditions import LARGEST
from coilstage.analysis.field import INDUCTANCE_TOLERANCE, StageField
from coilstage.analysis.run import Analysis
from coilstage.checks.base import (
    Rule,
    Status,
    Verdict,
    at_least,
    at_most,
    decided_at_worst,
    not_checked,
)
from coilstage.drawing.schema import Stage


def _inductance(a: Analysis) -> list[Verdict]:
    f = a.field
    out = []
    for name, _coil in a.drawing.coils.items():
        if f is None or name not in f.inductance_check:
            out.append(
                not_checked(
                    INDUCTANCE,
                    name,
                    "no magnetic circuit given for this coil (pole_area, gap_length, iron_length)",
                    "1",
                )
            )
            continue
        stated, geo = f.inductance_check[name]
        dev = abs(geo - stated) / stated
        out.append(
            Verdict(
                INDUCTANCE.id,
                name,
                Status.PASS if dev <= INDUCTANCE_TOLERANCE else Status.WARN,
                dev,
                INDUCTANCE_TOLERANCE,
                "1",
                (INDUCTANCE_TOLERANCE - dev) / INDUCTANCE_TOLERANCE,
                INDUCTANCE.clause,
                f"stated {stated * 1e3:.1f} mH per coil; the magnetic circuit gives N²/ℛ = {geo * 1e3:.1f} mH "
                f"unsaturated; warn beyond {INDUCTANCE_TOLERANCE:.0%}",
                "",
            )
        )
    return out


def _saturation(a: Analysis) -> list[Verdict]:
    """Decided at the largest continuous current (the most ampere-turns: coils at the low end of their
    resistance, the bus at the regulator's highest end), the cold corner as nominal."""
    f = a.field
    out = []
    words = tuple(f"{k} {v}" for k, v in a.worst.largest_current_words)
    for s in a.drawing.stages:
        x = f.stages["cold"][s.id] if f is not None else None
        if x is None or x.b_iron is None:
            out.append(not_checked(SATURATION, s.id, "no magnetic circuit given for this stage's coil", "T", "cold"))
            continue

        def at(x: StageField, corner: str, where: str, s: Stage = s) -> Verdict:
            note = (
                f"iron at {x.b_iron:.2f} T with {x.ampere_turns:.0f} A per coil (gap {x.b_gap:.2f} T) at the {where}; "
                f"knee of the curve {x.knee:.2f} T"
            )
            if x.b_iron > x.knee:
                h = f.stages["hot"][s.id]
                note += (
                    f": saturated, so the cold current buys heat more than braking (hot corner: {h.b_iron:.2f} T "
                    f"with {h.ampere_turns:.0f} A)"
                )
            return at_most(SATURATION, s.id, x.b_iron, x.knee, "T", note, corner, over=Status.WARN)

        nominal = at(x, "cold", "cold corner")
        w = f.stages.get(LARGEST, {}).get(s.id)
        if w is None or w.b_iron is None:
            out.append(nominal)
            continue
        out.append(decided_at_worst(at(w, LARGEST, "largest continuous current"), nominal, LARGEST, words))
    return out


def _retained(a: Analysis) -> list[Verdict]:
    """The braking effort the hot corner leaves, decided at the lowest bus (battery half charged, cold and
    aged, alternator hot at idle, coils hot at the high end of their tolerance), the hot corner beside it."""
    f = a.field
    lim = a.drawing.retarder.min_braking_ratio
    if f is None:
        return [not_checked(RETAINED, "retarder", "the field was not analysed")]
    basis = "B² from the magnetic circuit" if f.modelled else "(N·I)², the coils taken as unsaturated"
    note = (
        f"braking effort hot / cold {f.ratio_corners:.0%} ({basis}; low-speed law T ∝ σB²ω): hot windings alone "
        f"leave {f.ratio_temperature:.0%}, the sagging bus alone {f.ratio_bus:.0%}"
    )
    if f.torque:
        note += f"; estimated torque {f.torque['cold']:.0f} N·m cold, {f.torque['hot']:.0f} N·m hot"
    b = a.worst.braking
    if lim is None:
        if b is not None:
            note += f"; at the lowest bus ({b.bus_voltage:.2f} V) {b.ratio:.0%}"
        return [not_checked(RETAINED, "retarder", note + "; no retarder.min_braking_ratio in the drawing", "1")]
    nominal = at_least(RETAINED, "retarder", f.ratio_corners, lim, "1", note, "hot")
    if b is None:
        return [nominal]
    words = (
        f"braking effort at the lowest bus / cold {b.ratio:.0%} ({basis}; low-speed law T ∝ σB²ω), bus "
        f"{b.bus_voltage:.2f} V at the battery terminals"
    )
    if f.torque and b.effort_cold:
        words += f"; estimated torque {f.torque['cold'] * b.ratio:.0f} N·m"
    worst = at_least(RETAINED, "retarder", b.ratio, lim, "1", words, b.name)
    return [decided_at_worst(worst, nominal, b.name, tuple(f"{k} {v}" for k, v in b.words))]


INDUCTANCE = Rule(
    "field.inductance_crosscheck",
    "Stated inductance and the magnetic circuit's agree within 25 %",
    "L = N²/ℛ of the lumped circuit (fringing and leakage left out; 25 % tolerance: common practice)",
    _inductance,
    ("magnetic.MagneticCircuit",),
)
SATURATION = Rule(
    "field.saturation",
    "Iron below the knee of its B-H curve at the largest continuous current",
    "Ampère's law around the pole circuit on the B-H curve; knee at d(ln B)/d(ln H) = 0.2 (after IEC 61869-2)",
    _saturation,
    ("magnetic.MagneticCircuit", "magnetic.BHCurve"),
)
RETAINED = Rule(
    "field.braking_retained",
    "Braking effort the hot coils leave at the lowest bus, against the drawing's minimum",
    "Low-speed eddy-current law T ∝ σ·B²·ω (Smythe; Schieber); B from the magnetic circuit",
    _retained,
    ("magnetic.MagneticCircuit", "network.solve_with_limited_source"),
)
RULES = [INDUCTANCE, SATURATION, RETAINED]
