"""Markdown report: the same document as pipe tables."""

from __future__ import annotations

from typing import Any

from coilstage.report.fmt import margin, qv


def _esc(text: str) -> str:
    return text.replace("|", "\\|").replace("\n", " ")


def render(doc: dict[str, Any]) -> str:
    d, s, summ = doc["drawing"], doc["supply"], doc["summary"]
    out = [f"# {_esc(d['title'])}", ""]
    if d["note"]:
        out += [f"_{_esc(d['note'])}_", ""]
    out += [
        f"Drawing `{d['path']}` · {qv(s['system_voltage'], 0)} system · limits {qv(s['v_min'], 1)}–{qv(s['v_max'], 1)} "
        f"({s['limits_source']}) · coilstage {doc['tool']['version']}",
        "",
        f"**Result: {summ['result'].upper()}** — {summ['fail']} fail, {summ['warn']} warn, {summ['pass']} pass, "
        f"{summ['not_checked']} not checked",
        "",
    ]
    for c in doc["corners"]:
        out += [f"## {c['name'].capitalize()} corner — {c['purpose']}", ""]
        out += [f"- {k}: {v}" for k, v in c["conditions"].items()]
        out += [
            f"- bus {qv(c['bus_voltage'], 2)}; stages {qv(c['total_stage_current'], 1)}; base load "
            f"{qv(c['base_load'], 1)}; alternator {qv(c['alternator_current'], 1)} ({c['alternator_mode']}); "
            f"battery {qv(c['battery_current'], 1)}",
            "",
            "| stage | winding | R | I | terminal V | power | N·I per coil | drop | ½LI² |",
            "|---|---:|---:|---:|---:|---:|---:|---:|---:|",
        ]
        for st in c["stages"]:
            out.append(
                f"| {st['id']} | {qv(st['winding_temperature'], 0)} | {qv(st['resistance'])} | "
                f"{qv(st['current'], 1)} | "
                f"{qv(st['terminal_voltage'], 2)} | {qv(st['power'])} | {st['ampere_turns']['value']:.0f} A | "
                f"{qv(st['voltage_drop'], 3)} ({st['voltage_drop_fraction']['value']:.1%}) | "
                f"{qv(st['stored_energy'], 1)} |"
            )
        out.append("")
    sw = doc["switching"]
    if sw["stages"]:
        out += [
            "## Switching",
            "",
            f"| stage | corner | L/R | T0.95 alone | T0.95 all | I break | ½LI² | suppression | to zero | "
            f"to {sw['release_fraction']:.0%} | suppressor energy | contact voltage |",
            "|---|---|---:|---:|---:|---:|---:|---|---:|---:|---:|---:|",
        ]
        for x in sw["stages"]:
            out.append(
                f"| {x['id']} | {x['corner']} | {qv(x['time_constant'])} | {qv(x['t95_alone'])} | {qv(x['t95_all'])} | "
                f"{qv(x['break_current'], 1)} | {qv(x['stored_energy'], 1)} | {x['suppression']} | "
                f"{qv(x['time_to_zero'])} | {qv(x['release_time'])} | {qv(x['suppressor_energy'], 1)} | "
                f"{'arc' if x['contact_voltage'] is None else qv(x['contact_voltage'], 1)} |"
            )
        out += [
            "",
            *(f"- bus dip, {s['corner']} corner, {s['name']}: {qv(s['bus_dip'], 2)}" for s in sw["scenarios"]),
            "",
        ]
    he = doc["heating"]
    if he["duty"] is not None:
        du = he["duty"]
        out += [
            f"## Heating — {du['name']} duty, {qv(du['duration'])}",
            "",
            f"_{_esc(du['description'])}_",
            "",
            "| stage | hot corner | peak | end | limit | time to limit | end current | end N·I |",
            "|---|---:|---:|---:|---:|---:|---:|---:|",
        ]
        for x in he["stages"]:
            ttl = x["time_to_limit"]
            out.append(
                f"| {x['id']} | {qv(x['hot_corner_temperature'], 0)} | {qv(x['peak_temperature'], 0)} | "
                f"{qv(x['end_temperature'], 0)} | {qv(x['limit'], 0)} | "
                f"{('never' if x['modelled'] else '—') if ttl is None else qv(ttl)} | {qv(x['end_current'], 1)} | "
                f"{'—' if x['end_ampere_turns'] is None else round(x['end_ampere_turns']['value'])} |"
            )
        out += ["", "| cable | table ampacity | heat-balance ampacity | peak | class |", "|---|---:|---:|---:|---:|"]
        for x in he["cables"]:
            out.append(
                f"| {x['id']} | {qv(x['table_ampacity'], 0)} | {qv(x['computed_ampacity'], 0)} | "
                f"{qv(x['peak_temperature'], 0)} | {qv(x['class_temperature'], 0)} |"
            )
        bt = he["battery"]
        out += [
            "",
            f"- battery: {qv(bt['charge_drawn'], 1)} drawn; capacity {qv(bt['capacity'], 0)}; end state of "
            f"charge {qv(bt['end_state_of_charge'])}",
            "",
        ]
    fd = doc["field"]
    out += [
        "## Field",
        "",
        "| stage | corner | I per coil | N·I | B gap | Φ | B iron | knee | L apparent | L incremental |",
        "|---|---|---:|---:|---:|---:|---:|---:|---:|---:|",
    ]
    for x in fd["stages"]:
        out.append(
            f"| {x['id']} | {x['corner']} | {qv(x['coil_current'], 1)} | {x['ampere_turns']['value']:.0f} A | "
            f"{qv(x['gap_flux_density'])} | {qv(x['flux'])} | {qv(x['iron_flux_density'])} | {qv(x['knee'])} | "
            f"{qv(x['apparent_inductance'])} | {qv(x['incremental_inductance'])} |"
        )
    br = fd["braking"]
    if br["ratio_hot_cold"] is not None:
        out += [
            "",
            f"- braking effort left hot: {br['ratio_hot_cold']:.0%} of cold (hot windings alone "
            f"{br['ratio_temperature']:.0%}, the sagging bus alone {br['ratio_bus']:.0%})",
        ]
    if br["torque"]:
        out.append(f"- estimated torque: cold {qv(br['torque']['cold'], 0)}, hot {qv(br['torque']['hot'], 0)}")
    for s in fd["switch_on"]:
        out.append(
            f"- {s['stage']} alone, cold: T0.95 {qv(s['t95_saturating'])} saturating, {qv(s['t95_linear'])} linear"
        )
    for x in fd["ac"]:
        out.append(
            f"- AC, coil {x['coil']}: {qv(x['current_ac'])} at {qv(x['frequency'])} against {qv(x['current_dc'])} DC"
        )
    out.append("")
    out += [
        "## Verdicts",
        "",
        "| status | rule | subject | value | limit | margin | note | clause |",
        "|---|---|---|---:|---:|---:|---|---|",
    ]
    for v in doc["verdicts"]:
        out.append(
            f"| {v['status'].upper()} | `{v['rule']}` | {_esc(v['subject'])} | {qv(v['value'])} | {qv(v['limit'])} | "
            f"{margin(v['margin'])} | {_esc(v['note'])} | {_esc(v['clause'])} |"
        )
    out += ["", "## Prospective short-circuit currents (cold corner)", ""]
    out.append(f"- battery terminals: {qv(doc['faults']['battery_terminals'])}")
    out += [f"- load side of {f['id']}: {qv(f['prospective_current'])}" for f in doc["faults"]["fuses"]]
    if doc["assumptions"]:
        out += ["", "## Assumptions (defaults applied)", ""] + [f"- {_esc(x)}" for x in doc["assumptions"]]
    out += ["", "## Cautions", ""] + [f"- **{c['hazard']}**: {c['text']}" for c in doc["cautions"]]
    return "\n".join(out) + "\n"
