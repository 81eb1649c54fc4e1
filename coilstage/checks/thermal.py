"""Heating rules: winding temperature and time to its limit, cable conductor temperature over the
duty, the battery's charge, and the fuses' thermal state along the duty."""

from __future__ import annotations

import math

import numpy as np

from coilstage.analysis.run import Analysis
from coilstage.checks.base import (
    Rule,
    Status,
    Verdict,
    at_most,
    not_checked,
)
from coilstage.drawing.schema import Cable, Fuse

NO_MODEL = "the coil has no thermal model (thermal_resistance and heat_capacity or conductor_mass)"


def _headroom(value: float, limit: float) -> str:
    """A temperature's distance from its limit in kelvin: "30 K of headroom" or "15 K over"."""
    gap = limit - value
    if gap >= 0:
        return f"{gap:.0f} K of headroom" if gap >= 0.5 else f"{gap:.1f} K of headroom"
    return f"{-gap:.0f} K over" if -gap >= 0.5 else f"{-gap:.1f} K over"


def _minutes(t: float) -> str:
    return f"{t:.0f} s" if t < 120 else f"{t / 60:.1f} min"


def _conditions(r) -> str:
    c = getattr(r, "conditions", None)
    if c is None or not c.words:
        return ""
    return "; conditions: " + "; ".join(f"{k} {v}" for k, v in c.words)


def _winding_temperature(a: Analysis) -> list[Verdict]:
    out = []
    r = a.descent
    for k, s in enumerate(a.drawing.stages):
        if r is None or s.id not in r.modelled_stages:
            out.append(not_checked(WINDING, s.id, NO_MODEL, "degC"))
            continue
        peak = float(np.max(r.stage_temperature[:, k]))
        lim = s.coil.limit_temperature
        end_i = r.stage_current[-1, k]
        reach = ""
        if peak >= lim:
            reach = f"; it reaches the limit after {_minutes(r.time_to(k, lim))} of the duty"
        melt = r.melting_point.get(s.id)
        if melt is not None and peak >= melt - 1e-6:
            reach += f" and its metal's melting point ({melt:.0f} °C) after {_minutes(r.time_to(k, melt))} (held there)"
        zone = ""
        if r.zone_temperature is not None:
            tz = float(np.max(r.zone_temperature[:, k]))
            zone = f"; its surroundings from {s.coil.zone_temperature:g} °C to {tz:.0f} °C"
        out.append(
            at_most(
                WINDING,
                s.id,
                peak,
                lim,
                "degC",
                f"highest average winding temperature over the duty ({a.drawing.duty.name}, "
                f"{r.duty.duration / 60:.0f} min) {peak:.0f} °C against class {s.coil.insulation_class} less "
                f"{s.coil.class_allowance:g} K = {lim:g} °C: {_headroom(peak, lim)}{reach}; at its end "
                f"{r.stage_temperature[-1, k]:.0f} °C, {end_i:.1f} A, "
                f"{s.coil.turns * end_i * s.coil_current_factor:.0f} ampere-turns per coil{zone}{_conditions(r)}",
                "",
            )
        )
    return out


def _time_to_limit(a: Analysis) -> list[Verdict]:
    out = []
    r = a.continuous
    need = a.drawing.duty.duration if a.drawing.duty else 0.0
    for k, s in enumerate(a.drawing.stages):
        if r is None or s.id not in r.modelled_stages:
            out.append(not_checked(TIME_TO_LIMIT, s.id, NO_MODEL, "min"))
            continue
        lim = s.coil.limit_temperature
        t = r.time_to(k, lim)
        # the figure quoted beside the time comes from the same run (one set of conditions)
        steady = float(r.stage_temperature[-1, k])
        span = float(r.t[-1] - r.t[0]) / 60
        cond = _conditions(r)
        if math.isinf(t):
            out.append(
                Verdict(
                    TIME_TO_LIMIT.id,
                    s.id,
                    Status.PASS,
                    None,
                    need / 60,
                    "min",
                    None,
                    TIME_TO_LIMIT.clause,
                    f"under continuous full retardation the winding stands at {steady:.0f} °C after "
                    f"{span:.0f} min, {_headroom(steady, lim)} below its {lim:g} °C limit: no time limit "
                    f"within that{cond}",
                    "",
                )
            )
            continue
        ok = t >= need
        out.append(
            Verdict(
                TIME_TO_LIMIT.id,
                s.id,
                Status.PASS if ok else Status.FAIL,
                t / 60,
                need / 60,
                "min",
                (t - need) / need if need else None,
                TIME_TO_LIMIT.clause,
                f"continuous full retardation from {s.coil.zone_temperature:g} °C reaches the "
                f"{lim:g} °C limit after {t / 60:.1f} min (same run: {steady:.0f} °C "
                f"after {span:.0f} min), against the {need / 60:.0f} min duty{cond}",
                "",
            )
        )
    return out


def _cable_temperature(a: Analysis) -> list[Verdict]:
    out = []
    r = a.descent
    cables = {c.id: c for c in a.drawing.of_kind(Cable)}
    if r is None:
        return [not_checked(CABLE_TEMP, "cables", "no duty was simulated", "degC")]
    for k, cid in enumerate(r.cable_ids):
        c = cables[cid]
        peak = float(np.max(r.cable_temperature[:, k]))
        what = ""
        if peak >= c.class_max:
            t_lim = r.cable_time_to(k, c.class_max)
            what = (
                f"; its zone ({c.zone_temperature:g} °C) is already above its insulation's limit"
                if c.zone_temperature >= c.class_max
                else f"; the conductor passes its insulation's limit ({c.class_max:g} °C) after {_minutes(t_lim)}"
            )
            melt = r.melting_point.get(cid)
            if melt is not None and peak >= melt - 1e-6:
                what += (
                    f" and {c.material}'s melting point ({melt:.0f} °C, CRC Handbook) after "
                    f"{_minutes(r.cable_time_to(k, melt))}: it melts open there (the simulation holds it at that "
                    f"temperature; the figures after it are not those of an intact cable)"
                )
        out.append(
            at_most(
                CABLE_TEMP,
                cid,
                peak,
                c.class_max,
                "degC",
                f"highest conductor temperature over the duty {peak:.0f} °C in zone {c.zone} "
                f"({c.zone_temperature:g} °C) "
                f"against its class {c.class_max:g} °C: {_headroom(peak, c.class_max)}{what}; {r.cable_models[cid]}",
                "",
            )
        )
    return out


def _battery(a: Analysis) -> list[Verdict]:
    b = a.drawing.supply.battery
    r = a.descent
    if r is None:
        return [not_checked(BATTERY, "battery", "no duty was simulated", "A*h")]
    peak_drawn = float(np.max(r.charge_drawn)) / 3600.0
    if b.capacity is None or r.state_of_charge is None or r.conditions is None or not r.conditions.capacity:
        return [
            not_checked(
                BATTERY, "battery", f"no battery capacity given (the duty draws {peak_drawn:.1f} A·h at most)", "A*h"
            )
        ]
    cond = r.conditions
    cap = cond.capacity / 3600.0
    du = r.duty
    usable = (du.start_soc - du.min_soc) * cap
    # the charge used, weighted for its rate (Peukert); a battery cannot give more than it holds
    used = float(np.max(r.states[:, r.soc_column])) / 3600.0
    held = du.start_soc * cap
    value = min(used, held)
    end_soc = float(r.state_of_charge[-1])
    low_soc = float(np.min(r.state_of_charge))
    flat = r.time_to_charge(0.0)
    floor_t = r.time_to_charge(du.min_soc)
    if math.isfinite(flat):
        state = (
            f"the battery is flat after {_minutes(flat)} (below its {du.min_soc:.0%} floor after "
            f"{_minutes(floor_t)}); after that the bus is what the alternator alone holds (the simulation keeps "
            f"the flat battery's open-circuit voltage: optimistic)"
        )
    elif math.isfinite(floor_t):
        state = f"it falls below its {du.min_soc:.0%} floor after {_minutes(floor_t)} and ends at {end_soc:.0%}"
    else:
        state = f"from {du.start_soc:.0%} it ends at {end_soc:.0%} (lowest {low_soc:.0%}; floor {du.min_soc:.0%})"
    emf = r.battery_emf
    return [
        at_most(
            BATTERY,
            "battery",
            value,
            usable,
            "A*h",
            f"charge used over the duty {value:.1f} A·h of {cap:.0f} A·h usable at {cond.battery_temperature:g} °C "
            f"(drawn {peak_drawn:.1f} A·h, weighted for its rate by Peukert's law, k = {cond.peukert:g}); {state}; "
            f"EMF {float(emf[0]):.2f} → {float(emf[-1]):.2f} V and resistance "
            f"{float(r.battery_resistance[0]) * 1e3:.1f} → {float(r.battery_resistance[-1]) * 1e3:.1f} mΩ as it "
            f"empties; charge returned while charging is counted in full (optimistic){_conditions(r)}",
            "",
        )
    ]


def _fuse_duty(a: Analysis) -> list[Verdict]:
    out = []
    r = a.descent
    for f in a.drawing.of_kind(Fuse):
        if r is None:
            out.append(not_checked(FUSE_DUTY, f.id, "no duty was simulated"))
            continue
        fd = a.fuse_duty[f.id]
        if isinstance(fd, str):
            out.append(not_checked(FUSE_DUTY, f.id, fd))
            continue
        used, peak, carry = fd.used, fd.peak, fd.carry
        out.append(
            at_most(
                FUSE_DUTY,
                f.id,
                used,
                1.0,
                "1",
                f"share of the must-not-open time used along the duty (sum of dt / t_min(I)); highest current "
                f"{peak:.1f} A = {peak / carry:.2f} x the {carry:.1f} A rerated rating",
                "",
            )
        )
    return out


WINDING = Rule(
    "winding.temperature",
    "Average winding temperature over the duty within its insulation class less the hot-spot allowance",
    "IEC 60085 thermal classes; hot-spot allowance 10 K (<= 155) / 15 K (above), machine convention (common practice)",
    _winding_temperature,
    (
        "thermal.winding_heating_rate",
        "thermal.winding_steady_temperature",
        "thermal.rotor_zone_rate",
        "conductor.resistance_at_temperature",
        "numeric.integrate_dopri",
    ),
)
TIME_TO_LIMIT = Rule(
    "winding.time_to_limit",
    "Under continuous full retardation the winding takes longer than the duty to reach its limit",
    "Lumped winding model C dT/dt = I^2 R(T) - (T - Ta)/Rth coupled through the network, the "
    "surroundings Ta heated by the rotors (first-order node)",
    _time_to_limit,
    ("thermal.winding_heating_rate", "thermal.rotor_zone_rate", "numeric.integrate_dopri"),
)
CABLE_TEMP = Rule(
    "cable.conductor_temperature",
    "Conductor temperature over the duty within the cable's ISO 6722 class",
    "Still-air heat balance (Churchill-Chu convection and radiation via ht; insulation ln(D/d)/(2 pi k)); "
    "ISO 6722 classes",
    _cable_temperature,
    ("cable_heat.heat_shed", "thermal.cable_loss_coefficient", "numeric.integrate_dopri"),
)
BATTERY = Rule(
    "battery.charge",
    "Charge the battery gives over the duty within its usable share",
    "Charge balance of the duty with the rate weighted by Peukert's law (W. Peukert 1897); EMF from the "
    "open-circuit voltage line; usable share from the drawing's state of charge and floor (50 % floor: "
    "common practice)",
    _battery,
    (
        "network.charging_source_state",
        "battery.peukert_usable_charge",
        "battery.open_circuit_voltage",
        "battery.internal_resistance",
        "numeric.integrate_dopri",
    ),
)
FUSE_DUTY = Rule(
    "fuse.duty_thermal_state",
    "Fuse current along the duty stays clear of its must-not-open gate",
    "Linear sum of dt/t_min(I) along the duty (common practice, no source) on the fuse's time-current gates",
    _fuse_duty,
    ("network.charging_source_state",),
)
RULES = [WINDING, TIME_TO_LIMIT, CABLE_TEMP, BATTERY, FUSE_DUTY]
