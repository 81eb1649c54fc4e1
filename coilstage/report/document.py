"""The report as a plain, JSON-ready document (schema in docs/report-schema.json).

Every figure is an SI float with its unit beside it: ``{"value": 53.4, "unit": "A"}``.
"""

from __future__ import annotations

import math
from collections import Counter
from typing import Any

from coilstage import __version__
from coilstage.analysis.conditions import LARGEST
from coilstage.analysis.params import RULES as MODELLED
from coilstage.analysis.run import Analysis
from coilstage.checks import DUTY_RULES, Status, Verdict

SCHEMA_VERSION = "1.0"


def q(value: float | None, unit: str) -> dict[str, Any] | None:
    return None if value is None else {"value": float(value), "unit": unit}


def cautions(a: Analysis) -> list[dict[str, str]]:
    """The usual cautions, with this drawing's own figures in them."""
    # each figure at its worst case: the battery short at the largest fault, the windings at the higher of
    # the hot corner and the peak of the duty simulations, the stored energy at the largest break
    short = max(a.battery_short_circuit, a.worst.largest_fault.battery)
    short_where = "largest fault" if a.worst.largest_fault.battery > a.battery_short_circuit else "cold corner"
    hot = max((s.temperature for s in a.corners["hot"].stages), default=0.0)
    hot_where = "in the hot corner"
    for run, words in ((a.descent, "over the drawing's duty"), (a.continuous, "under continuous retardation")):
        if run is not None and run.stage_temperature.size and float(run.stage_temperature.max()) > hot:
            hot, hot_where = float(run.stage_temperature.max()), words
    energy = max((s.stored_energy for s in a.corners["cold"].stages), default=0.0)
    energy_where = "cold corner"
    if a.switching is not None and LARGEST in a.switching.stages:
        big = max((x.stored_energy for x in a.switching.stages[LARGEST].values()), default=0.0)
        if big > energy:
            energy, energy_where = big, "largest break"
    return [
        {
            "hazard": "battery short-circuit energy",
            "text": (
                f"A short at the battery terminals could drive about {short / 1000:.1f} kA "
                f"(computed, {short_where}). It melts tools and rings and can burst the battery. Disconnect the "
                "battery negative first and reconnect it last; use insulated tools; keep the main fuse close to "
                "the battery; protect every cable ahead of the first fuse from chafing."
            ),
        },
        {
            "hazard": "hot coils",
            "text": (
                f"The windings are taken up to {hot:.0f} °C {hot_where}, and the rotor runs far hotter after a "
                "long descent. Let the retarder cool before touching it or the cables near it; keep fuel and "
                "brake lines clear of it."
            ),
        },
        {
            "hazard": "arcing contacts",
            "text": (
                f"Each stage stores up to {energy:.0f} J in its field at switch-off (½·L·I², {energy_where}). Opening "
                "a contact, pulling a fuse or unplugging a stage under load draws a sustained DC arc. Switch the "
                "retarder off before working on it and fit suppression at each coil."
            ),
        },
        {
            "hazard": "scope",
            "text": (
                "Check every result against the vehicle maker's instructions and local rules: this tool does not "
                "replace a qualified installer, and its shipped tables include values flagged as from memory."
            ),
        },
    ]


def summary(verdicts: list[Verdict]) -> dict[str, Any]:
    n = Counter(v.status for v in verdicts)
    result = "fail" if n[Status.FAIL] else "warn" if n[Status.WARN] else "pass"
    return {
        "result": result,
        "pass": n[Status.PASS],
        "warn": n[Status.WARN],
        "fail": n[Status.FAIL],
        "not_checked": n[Status.NOT_CHECKED],
    }


def qf(value: float | None, unit: str) -> dict[str, Any] | None:
    """As :func:`q`, with an unbounded figure (an arc, a pure exponential) as None."""
    return None if value is None or math.isinf(value) else q(value, unit)


def switching(a: Analysis) -> dict[str, Any]:
    sw = a.switching
    d = a.drawing
    out: dict[str, Any] = {
        "sequence_given": bool(sw.sequence_given) if sw else False,
        "release_fraction": d.switching.release_fraction,
        "stages": [],
        "scenarios": [],
    }
    if sw is None:
        return out
    kinds = {s.id: s.suppression.kind for s in d.stages}
    for corner, per in sw.stages.items():
        for sid, x in per.items():
            out["stages"].append(
                {
                    "id": sid,
                    "corner": corner,
                    "time_constant": q(x.tau, "s"),
                    "t95_alone": qf(x.t95_alone, "s"),
                    "t95_all": qf(x.t95_all, "s"),
                    "break_current": q(x.i_break, "A"),
                    "stored_energy": q(x.stored_energy, "J"),
                    "suppression": kinds[sid],
                    "time_to_zero": qf(x.decay.t_zero, "s"),
                    "release_time": q(x.decay.t_release, "s"),
                    "suppressor_energy": q(x.decay.e_suppressor, "J"),
                    "contact_voltage": qf(x.contact_voltage, "V"),
                }
            )
    for key, sc in sw.scenarios.items():
        out["scenarios"].append(
            {
                "name": sc.name,
                "corner": sc.corner,
                "events": [{"at": q(t, "s"), "stages": list(st)} for t, st in sc.events],
                "bus_dip": q(sw.bus_dip[key], "V"),
                "t_end": q(sc.t_end, "s"),
            }
        )
    return out


def heating(a: Analysis) -> dict[str, Any]:
    import numpy as np

    from coilstage.drawing.schema import Cable

    d = a.drawing
    r, cont = a.descent, a.continuous
    hot = {s.id: s.temperature for s in a.corners["hot"].stages}
    stages = []
    for k, s in enumerate(d.stages):
        modelled = r is not None and s.id in r.modelled_stages
        ttl = cont.time_to(k, s.coil.limit_temperature) if (cont is not None and modelled) else None
        stages.append(
            {
                "id": s.id,
                "modelled": modelled,
                "hot_corner_temperature": q(hot[s.id], "degC"),
                "peak_temperature": q(float(np.max(r.stage_temperature[:, k])), "degC") if modelled else None,
                "end_temperature": q(float(r.stage_temperature[-1, k]), "degC") if modelled else None,
                "limit": q(s.coil.limit_temperature, "degC"),
                "time_to_limit": qf(ttl, "s"),
                "end_current": q(float(r.stage_current[-1, k]), "A") if r is not None else None,
                "end_ampere_turns": q(float(r.stage_current[-1, k]) * s.coil_current_factor * s.coil.turns, "A")
                if r is not None
                else None,
            }
        )
    cables = []
    for c in d.of_kind(Cable):
        rating = a.ratings.cables[c.id]
        amp = rating.table
        k = r.cable_ids.index(c.id) if r is not None else None
        cables.append(
            {
                "id": c.id,
                "table_ampacity": None if isinstance(amp, str) else q(amp.value, "A"),
                "computed_ampacity": qf(rating.heat_balance, "A") if rating.heat_balance is not None else None,
                "peak_temperature": q(float(np.max(r.cable_temperature[:, k])), "degC") if k is not None else None,
                "class_temperature": q(c.class_max, "degC"),
            }
        )
    b = d.supply.battery
    drawn = float(r.charge_drawn[-1]) / 3600 if r is not None else None
    cap = b.capacity / 3600 if b.capacity else None
    end_soc = None
    if r is not None and r.state_of_charge is not None and len(r.state_of_charge):
        end_soc = float(r.state_of_charge[-1])  # the simulated state: rate-weighted, held at 0 once flat
    elif drawn is not None and cap and d.duty:
        end_soc = max(d.duty.start_soc - drawn / cap, 0.0)
    return {
        "duty": None
        if r is None
        else {
            "name": d.duty.name,
            "description": d.duty.description,
            "duration": q(d.duty.duration, "s"),
            "steps": len(d.duty.steps),
        },
        "stages": stages,
        "cables": cables,
        "battery": {
            "charge_drawn": qf(drawn, "A*h"),
            "end_state_of_charge": qf(end_soc, "1"),
            "capacity": qf(cap, "A*h"),
        },
    }


def field(a: Analysis) -> dict[str, Any]:
    f = a.field

    def fin(x):
        return None if x is None or not math.isfinite(x) else float(x)

    stages = [
        {
            "id": x.id,
            "corner": corner,
            "coil_current": q(x.coil_current, "A"),
            "ampere_turns": q(x.ampere_turns, "A"),
            "gap_flux_density": qf(x.b_gap, "T"),
            "flux": qf(x.flux, "Wb"),
            "iron_flux_density": qf(x.b_iron, "T"),
            "knee": qf(x.knee, "T"),
            "apparent_inductance": qf(x.l_apparent, "H"),
            "incremental_inductance": qf(x.l_incremental, "H"),
        }
        for corner, per in f.stages.items()
        for x in per.values()
    ]
    torque = None if f.torque is None else {k: q(v, "N*m") for k, v in f.torque.items()}
    ts = None
    if f.torque_speed is not None:
        ts = {k: [{"speed": q(w, "rad/s"), "torque": q(t, "N*m")} for w, t in v] for k, v in f.torque_speed.items()}
    return {
        "modelled": f.modelled,
        "stages": stages,
        "braking": {
            "ratio_hot_cold": fin(f.ratio_corners),
            "ratio_temperature": fin(f.ratio_temperature),
            "ratio_bus": fin(f.ratio_bus),
            "torque": torque,
            "torque_speed": ts,
        },
        "switch_on": [
            {
                "stage": s.stage,
                "t95_saturating": q(s.t95_saturating, "s"),
                "t95_linear": q(s.t95_linear, "s"),
                "energy_saturating": q(s.energy_saturating, "J"),
                "energy_linear": q(s.energy_linear, "J"),
            }
            for s in f.switch_on
        ],
        "ac": [
            {
                "coil": x.coil,
                "voltage": q(x.voltage, "V"),
                "frequency": q(x.frequency, "Hz"),
                "impedance": q(x.impedance, "ohm"),
                "current_ac": q(x.i_ac, "A"),
                "current_dc": q(x.i_dc, "A"),
                "ampere_turns_ac": q(x.ni_ac, "A"),
                "ampere_turns_dc": q(x.ni_dc, "A"),
                "flux_density_ac": qf(x.b_ac, "T"),
                "flux_density_dc": qf(x.b_dc, "T"),
            }
            for x in f.ac
        ],
    }


def _parameter_unit(key: str) -> str | None:
    """The unit of a declared parameter, from the shipped tolerance defaults (a coil type's or a
    cable's own key as its generic row); None where the key is not one of them."""
    from coilstage.analysis import worst

    rows = worst.defaults()
    parts = key.split(".")
    for k in (key, ".".join([parts[0], "*", *parts[2:]]) if len(parts) > 2 else key):
        if k in rows:
            return str(rows[k].get("unit"))
    if key.startswith("environment.ambient"):  # the ambient range: a temperature step
        return "degC"
    if parts[0] == "cables" and key.endswith("length_tolerance"):
        return str(rows.get("tolerances.cable_length", {}).get("unit")) if "tolerances.cable_length" in rows else None
    return None


def sensitivities(v: Verdict) -> list[dict[str, Any]]:
    """The parameters that move a worst-case verdict's margin most, largest first: the tolerance key,
    its words, the move stated (in the parameter's unit) and the margin's change over it (a
    fraction: -0.05 is 5 points less)."""
    return [
        {
            "parameter": s.parameter,
            "words": s.words,
            "change": s.change,
            "unit": _parameter_unit(s.parameter),
            "margin_change": s.margin_change,
        }
        for s in (v.worst.sensitivities if v.worst is not None else ())
        if math.isfinite(s.change) and math.isfinite(s.margin_change)
    ]


def sensitivity_note(v: Verdict) -> str | None:
    """Why a verdict carries no sensitivities, or None where it carries some (or was not checked):
    its rule is outside the tolerance model and its effects were not found by re-analysis (with the
    reason where one was tried: :mod:`coilstage.effects`), or the model or the re-analysis found no
    declared parameter that moves its margin."""
    if v.status is Status.NOT_CHECKED or (v.worst is not None and v.worst.sensitivities):
        return None
    deciding = v.worst.deciding if v.worst is not None else ()
    if any(x.startswith("effects: ") for x in deciding):
        return "computed by re-analysis: no declared parameter moves this margin by more than a thousandth of a point"
    tried = next((x for x in deciding if x.startswith("effects not computed")), None)
    if tried is not None:
        return "not computed: " + tried.removeprefix("effects not computed: ")
    if v.rule in MODELLED:
        return (
            "computed: no declared parameter moves this margin by more than a thousandth of a point"
            if v.worst is not None
            else "not computed: this verdict is decided without a figure the tolerance model varies"
        )
    if v.worst is None and v.margin is None:
        return "not computed: this verdict has no margin to move (its limit is missing or unbounded)"
    if v.rule in DUTY_RULES:
        return (
            "not computed: this rule reads the simulation of the duty (the heating over the duty profile), which "
            "the re-analyses leave out unless asked (coilstage check --duty-effects)"
            + ("; it is decided at the conditions it names, with no nominal beside it" if v.worst is None else "")
        )
    if v.worst is None:
        return (
            "not computed: this rule is decided at the conditions it names, with no worst case built from the "
            "declared tolerances (no nominal beside it); the re-analyses that give its nominal and effects were "
            "not made (coilstage check --no-effects, more than 16 stages, or the library's check())"
        )
    return (
        "not computed: this rule is outside the tolerance model of the steady-state rules "
        f"({', '.join(MODELLED)}); it is decided at the conditions its rule names, with no derivative "
        "or corner search over the declared tolerances (the effects by re-analysis were left out: "
        "coilstage check --no-effects, or the library's check())"
    )


def build(a: Analysis, verdicts: list[Verdict]) -> dict[str, Any]:
    """The whole report as plain data."""
    d = a.drawing
    s = d.supply
    corners = []
    for c in a.corners.values():
        corners.append(
            {
                "name": c.name,
                "purpose": c.purpose,
                "conditions": c.conditions,
                "bus_voltage": q(c.bus_voltage, "V"),
                "battery_current": q(c.battery_current, "A"),
                "alternator_current": q(c.alternator_current, "A"),
                "alternator_mode": c.alternator_mode,
                "base_load": q(c.base_load, "A"),
                "total_stage_current": q(c.total_stage_current, "A"),
                "stages": [
                    {
                        "id": st.id,
                        "winding_temperature": q(st.temperature, "degC"),
                        "resistance": q(st.resistance, "ohm"),
                        "current": q(st.current, "A"),
                        "coil_current": q(st.coil_current, "A"),
                        "terminal_voltage": q(st.terminal_voltage, "V"),
                        "power": q(st.power, "W"),
                        "ampere_turns": q(st.ampere_turns, "A"),
                        "voltage_drop": q(st.drop, "V"),
                        "voltage_drop_fraction": q(st.drop_fraction, "1"),
                        "stored_energy": q(st.stored_energy, "J"),
                    }
                    for st in c.stages
                ],
            }
        )
    return {
        "schema_version": SCHEMA_VERSION,
        "tool": {"name": "coilstage", "version": __version__},
        "drawing": {"title": d.title, "note": d.note, "path": d.path},
        "supply": {
            "system_voltage": q(s.system_voltage, "V"),
            "code": s.code,
            "v_min": q(s.v_min, "V"),
            "v_max": q(s.v_max, "V"),
            "limits_source": s.limits_source,
        },
        "corners": corners,
        "faults": {
            "battery_terminals": q(a.battery_short_circuit, "A"),
            "fuses": [{"id": k, "prospective_current": q(v, "A")} for k, v in a.fault_current.items()],
        },
        "verdicts": [
            {
                "rule": v.rule,
                "subject": v.subject,
                "status": v.status.value,
                "value": q(v.value, v.unit),
                "limit": q(v.limit, v.unit),
                "margin": v.margin,
                "clause": v.clause,
                "note": v.note,
                "corner": v.corner,
                "nominal": None
                if v.worst is None
                else {
                    "status": v.worst.nominal_status.value,
                    "value": q(v.worst.nominal_value, v.unit),
                    "margin": v.worst.nominal_margin,
                },
                "worst_conditions": None if v.worst is None else v.corner,
                "deciding": [] if v.worst is None else list(v.worst.deciding),
                "sensitivities": [] if v.worst is None else sensitivities(v),
                "sensitivity_note": sensitivity_note(v),
            }
            for v in verdicts
        ],
        "switching": switching(a),
        "heating": heating(a),
        "field": field(a),
        "summary": summary(verdicts),
        "assumptions": list(
            dict.fromkeys(
                (
                    *d.assumptions,
                    *(a.worst.assumptions if a.worst is not None else ()),
                    *(a.descent.assumptions if a.descent is not None else ()),
                )
            )
        ),
        "cautions": cautions(a),
    }
