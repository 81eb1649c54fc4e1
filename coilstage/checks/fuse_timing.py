"""Fuse time-current rules: no nuisance opening, cable overload and short-circuit protection, the
length of cable ahead of the first fuse, and the pulse rule for repeated switching."""

from __future__ import annotations

import math

from coilstage import tables
from coilstage.analysis.insulation import short_circuit_limit
from coilstage.analysis.ratings import fuse_gates
from coilstage.analysis.run import Analysis
from coilstage.analysis.unfused import unfused_runs
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
from coilstage.drawing.schema import Cable, Fuse

#: ABYC E-11 distances for a conductor ahead of its overcurrent device [m]: 7 in; 40 in if sheathed;
#: 72 in if sheathed and connected directly to the battery terminal.
ABYC_DISTANCES = (0.178, 1.02, 1.83)


def _nuisance(a: Analysis) -> list[Verdict]:
    """Each fuse's peak current against its must-not-open gate, decided at the largest continuous
    current (coils at the low end of their resistance tolerance, bus at the regulator's highest end)."""
    out = []
    for f in a.drawing.of_kind(Fuse):
        g = fuse_gates(f)
        if g is None:
            out.append(
                not_checked(
                    NUISANCE, f.id, f"no time-current gates for type {f.fuse_type}; give the maker's curve", "A"
                )
            )
            continue
        nominal = _nuisance_at(f, g, a.ratings.fuses[f.id].peak_current, "cold", "")
        w = a.ratings.fuses_worst.get(f.id)
        if w is None:
            out.append(nominal)
            continue
        worst = _nuisance_at(f, g, w.peak_current, "largest current", " scaled to the largest continuous current")
        deciding = tuple(f"{k} {v}" for k, v in a.worst.largest_current_words)
        out.append(decided_at_worst(worst, nominal, "largest current", deciding))
    return out


def _nuisance_at(f: Fuse, g, i_max: float, corner: str, how: str) -> Verdict:
    carry = f.rating * tables.fuse_rerating(f.zone_temperature)
    m = i_max / carry
    t_min = g.t_min(m)
    ok = math.isinf(t_min)
    first = g.points[0][0]
    note = (
        f"highest current {i_max:.1f} A over the switch-on, the sequence and continuous cold duty{how} = {m:.2f} x "
        f"the {carry:.1f} A rerated rating ({g.source})"
    )
    note += "; below the must-not-open gate" if ok else f"; it may open after {t_min:.3g} s"
    return Verdict(
        NUISANCE.id,
        f.id,
        Status.PASS if ok else Status.FAIL,
        i_max,
        first * carry,
        "A",
        ceiling(i_max, first * carry),
        NUISANCE.clause,
        note,
        corner,
    )


def _cable_overload(a: Analysis) -> list[Verdict]:
    out = []
    cables = {c.id: c for c in a.drawing.of_kind(Cable)}
    for f in a.drawing.of_kind(Fuse):
        for cid in a.protected.get(f.id, []):
            subject = f"{f.id} → {cid}"
            c = cables.get(cid)
            if c is None:
                continue
            ov = a.ratings.overload[(f.id, cid)]
            if isinstance(ov, str):
                out.append(not_checked(OVERLOAD, subject, ov, "degC"))
                continue
            conv, i, t, theta = ov.multiple, ov.current, ov.time, ov.temperature
            limit = float(tables.cable_class_rows()[c.insulation_class]["short_term"])
            ok = theta <= limit
            shown = theta if math.isfinite(theta) else None
            out.append(
                Verdict(
                    OVERLOAD.id,
                    subject,
                    Status.PASS if ok else Status.FAIL,
                    shown,
                    limit,
                    "degC",
                    None if shown is None else ceiling_temperature(theta, limit),
                    OVERLOAD.clause,
                    f"at the conventional fusing current {conv:.2f} x {f.rating:g} A = {i:.0f} A the fuse may "
                    f"take {t:.0f} s; the conductor ({c.size_label}, from {c.zone_temperature:g} °C) reaches "
                    f"{'thermal runaway' if shown is None else f'{theta:.0f} °C'} against the class "
                    f"{c.insulation_class} short-term limit (class + 50 K, from memory); already its worst case: "
                    "the conductor starts at its zone's highest temperature and the fuse is taken at its full "
                    "rating (its zone's hot rerating would open it sooner)",
                    "",
                )
            )
    return out


def _short_circuit(a: Analysis) -> list[Verdict]:
    """Each protected cable's far-end short, decided at the smallest fault current (the longest clearing
    and, in the fuse's time-lag region, the largest let-through I²t) with the nominal fault beside it."""
    out = []
    cables = {c.id: c for c in a.drawing.of_kind(Cable)}
    sf = a.worst.smallest_fault
    for f in a.drawing.of_kind(Fuse):
        for cid in a.protected.get(f.id, []):
            c = cables.get(cid)
            if c is None:
                continue
            subject = f"{f.id} → {cid}"
            sh = a.ratings.far_end[(f.id, cid)]
            if isinstance(sh, str):
                out.append(not_checked(SHORT, subject, sh, "degC"))
                continue
            nominal = _short_at(f, c, sh, subject, "cold")
            sw = a.ratings.far_end_worst.get((f.id, cid))
            if sw is None or isinstance(sw, str):
                out.append(nominal)
                continue
            worst = _short_at(f, c, sw, subject, sf.name)
            out.append(decided_at_worst(worst, nominal, sf.name, tuple(f"{k} {v}" for k, v in sf.words)))
    return out


def _short_at(f: Fuse, c: Cable, sh, subject: str, corner: str) -> Verdict:
    """The far-end short ``sh`` (:class:`coilstage.analysis.ratings.FarEndShort`) of cable ``c``
    behind fuse ``f`` against the insulation's short-circuit limit."""
    g = fuse_gates(f)
    i_sc, m, t = sh.current, sh.multiple, sh.clear_time
    if sh.theta_final is None:
        return Verdict(
            SHORT.id,
            subject,
            Status.FAIL,
            None,
            None,
            "degC",
            None,
            SHORT.clause,
            f"a short at the far end ({c.b}) draws only {i_sc:.0f} A = {m:.2f} x rating: the fuse "
            "need not open at all within its gates",
            corner,
        )
    theta_i, theta_f = sh.theta_initial, sh.theta_final
    lim = short_circuit_limit(c)
    limit = lim.limit
    whose = (
        f"class {c.insulation_class}'s usual material, {lim.name} (not stated on the cable)"
        if lim.assumed
        else lim.name
    )
    note = (
        f"short at the far end ({c.b}): {i_sc:.0f} A = {m:.1f} x rating, cleared by {t:.3g} s at the latest "
        f"({g.source}); I²t {i_sc * i_sc * t:.3g} A²s heats {c.size_label} adiabatically from "
        f"{theta_i:g} °C to {theta_f:.0f} °C (IEC 60949) against {limit:g} °C for {whose} ({lim.status})"
    )
    if not math.isfinite(theta_f):
        # I²t/(K S)² beyond what the adiabatic law can carry: the conductor would pass its melting
        # point long before the fuse clears, so there is no finite figure to compare.
        note = (
            f"short at the far end ({c.b}): {i_sc:.0f} A = {m:.1f} x rating, cleared by {t:.3g} s at the "
            f"latest ({g.source}); I²t {i_sc * i_sc * t:.3g} A²s heats {c.size_label} far beyond any "
            f"temperature it can reach (it melts first; IEC 60949 adiabatic equation) against {limit:g} °C "
            f"for {whose}: a larger cable or a smaller fuse"
        )
        return Verdict(SHORT.id, subject, Status.FAIL, None, limit, "degC", None, SHORT.clause, note, corner)
    if t > 5:
        note += "; beyond the 5 s adiabatic range, so the real conductor ends cooler"
    return at_most(SHORT, subject, theta_f, limit, "degC", note, corner)


def _ahead_of_fuse(a: Analysis) -> list[Verdict]:
    d = a.drawing
    pos = d.supply.battery.node
    alt_node = d.supply.alternator.node if d.supply.alternator else None
    runs = unfused_runs(d, list(a.unfused), pos)
    cables = {c.id: c for c in d.of_kind(Cable)}
    out = []
    for cid in a.unfused:
        c = cables.get(cid)
        if c is None:
            continue
        on_alt = alt_node is not None and alt_node != pos and alt_node in (c.a, c.b)
        if on_alt and c.length < ABYC_DISTANCES[1] and c.sheathed and pos not in (c.a, c.b):
            out.append(
                Verdict(
                    AHEAD.id,
                    c.id,
                    Status.PASS,
                    c.length,
                    ABYC_DISTANCES[1],
                    "m",
                    ceiling(c.length, ABYC_DISTANCES[1]),
                    AHEAD.clause,
                    "alternator output cable shorter than 40 in, sheathed throughout and not connected to the "
                    "battery: exempt (ABYC E-11, self-limiting alternator); route it protected",
                    "",
                )
            )
            continue
        run = runs.get(c.id)
        length, sheathed, on_battery = (
            (run.length, run.sheathed, run.on_battery) if run else (c.length, c.sheathed, pos in (c.a, c.b))
        )
        limit = ABYC_DISTANCES[2] if (sheathed and on_battery) else ABYC_DISTANCES[1] if sheathed else ABYC_DISTANCES[0]
        what = (
            "sheathed, on the battery terminal"
            if sheathed and on_battery
            else "sheathed throughout"
            if sheathed
            else "not sheathed throughout"
        )
        where = " → ".join(run.path) if run and len(run.path) > 1 else c.id
        note = f"{length:.3g} m of unfused conductor from the battery terminal along {where} ({what})"
        if on_alt:
            note += (
                "; alternator cable not exempt: ABYC E-11 exempts it only when shorter than 40 in (1.02 m), "
                "sheathed throughout and not connected to the battery"
            )
        if length > limit:
            note += (
                "; an unfused battery run must be as short as possible and protected against chafe and impact "
                "(ADR 9.2.2.2-9.2.2.3 where ADR applies; TMC RP 111C)"
            )
        out.append(at_most(AHEAD, c.id, length, limit, "m", note, "", over=Status.WARN))
    return out


NUISANCE = Rule(
    "fuse.no_nuisance_opening",
    "Fuse current over switch-on, sequence and continuous cold duty below its must-not-open gate",
    "Fuse time-current gates (shipped ISO 8820 gates from memory, or the maker's curve); rerating for the zone",
    _nuisance,
    ("transient.LinearRL", "network.mna_matrix"),
)
OVERLOAD = Rule(
    "fuse.cable_overload",
    "At the fuse's conventional fusing current the cable stays within its short-term limit until the fuse opens",
    "Conventional fusing current and its longest time from the gates; first-order cable heating implied by its "
    "ampacity; ISO 6722 short-term limit class + 50 K (from memory)",
    _cable_overload,
    ("thermal.cable_loss_coefficient", "thermal.conductor_temperature"),
)
SHORT = Rule(
    "fuse.cable_short_circuit",
    "A short at the far end of each protected cable, at the smallest fault current, is cleared before the "
    "insulation's short-circuit limit",
    "IEC 60949 adiabatic equation (K = 226 for copper); clearing time from the gates; final temperature by "
    "insulation material (IEC 60364-4-43 Table 43A / IEC 60364-5-54 Annex A; vehicle and fluoropolymer rows common "
    "practice), the ISO 6722 class's usual material where none is stated",
    _short_circuit,
    ("network.short_circuit_currents", "fault.material_k", "fault.adiabatic_final_temperature"),
)
AHEAD = Rule(
    "cable.ahead_of_fuse",
    "Conductor ahead of the first fuse, measured along the path from the source, within the ABYC E-11 distances",
    "ABYC E-11 (7 in; 40 in sheathed; 72 in sheathed on the battery terminal; alternator conductors exempt only "
    "when under 40 in, sheathed and not connected to the battery); ADR 9.2.2.3 unfused battery circuits",
    _ahead_of_fuse,
    (),
)
#: The pulse rule of earlier versions (the I²t of the first 10 ms of each switch-on against a pulse
#: fraction of the melting I²t) is gone: an RL stage has no inrush, so it could not fail; the fuse's
#: heating over each on-period of the duty is ``fuse.cyclic_duty`` (checks/cyclic.py).
RULES = [NUISANCE, OVERLOAD, SHORT, AHEAD]
