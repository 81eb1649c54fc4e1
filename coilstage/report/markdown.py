"""Markdown report: the same document as pipe tables.

The document passes :func:`coilstage.report.safe.guard` first (no control character, no NaN); every
string from the drawing is escaped for Markdown (:func:`_esc`), so an id or note cannot open a
table cell, a heading, a link or an HTML tag.
"""

from __future__ import annotations

import re
from typing import Any

from coilstage.report import actions as actions_mod
from coilstage.report import record as record_mod
from coilstage.report import safe
from coilstage.report.fmt import margin_text, num, pct, qv, worst_lines

_MD_SPECIAL = re.compile(r"([\\`*_\[\]<>|#~])")


def _esc(text: object) -> str:
    """Literal text inside a Markdown paragraph or table cell: special characters backslashed, line
    breaks as spaces."""
    s = str(text).replace("\r\n", " ").replace("\n", " ").replace("\r", " ")
    return _MD_SPECIAL.sub(r"\\\1", s)


def _code(text: object) -> str:
    """``text`` as a code span, fenced by more backticks than it holds in a row."""
    s = str(text).replace("\n", " ").replace("|", "\\|")
    longest = max((len(m) for m in re.findall(r"`+", s)), default=0)
    fence = "`" * (longest + 1)
    pad = " " if s.startswith("`") or s.endswith("`") else ""
    return f"{fence}{pad}{s}{pad}{fence}"


_ACTION_HEADS = {
    "failures": "Failures — change these before the vehicle goes into service",
    "warnings": "Warnings — look at these",
    "missing": "Could not be checked — data missing from the drawing",
}


def _opening(doc: dict[str, Any], record: dict[str, Any] | None) -> list[str]:
    """The drawing's metadata, the action list and the record block."""
    out: list[str] = []
    meta = (record or {}).get("drawing") or {}
    given = [(k, meta[k]) for k in ("revision", "author", "vehicle") if meta.get(k)]
    if given:
        out += [" · ".join(f"{k}: {_esc(v)}" for k, v in given), ""]
    acts = actions_mod.build(doc)
    out += ["## What to do", ""]
    for name in ("failures", "warnings", "missing"):
        n = actions_mod.count(acts, name)
        out += [f"### {_ACTION_HEADS[name]} ({n})", ""]
        if not n:
            out += ["none", ""]
        for g in acts[name]:
            out.append(f"- **{_esc(g['part'])}**")
            for v in g["items"]:
                subj = "" if v["subject"] == g["part"] else f" ({_esc(v['subject'])})"
                out.append(
                    f"  - {v['status'].upper()} {_code(v['rule'])}{subj}: {qv(v['value'])} against "
                    f"{qv(v['limit'])}, margin {margin_text(v)}. {_esc(v['note'])}"
                    + "".join(f" {_esc(w[:1].upper() + w[1:])}." for w in worst_lines(v))
                    + (f" What would pass: {_esc(v['suggestion'])}" if v.get("suggestion") else "")
                )
        if n:
            out.append("")
    # the record after the action list: a fitter reads what to do first, an inspector files both
    if record is not None:
        out += ["## Record", "", "| | |", "|---|---|"]
        out += [f"| {_esc(label)} | {_esc(value)} |" for label, value in record_mod.lines(record)]
        out.append("")
    return out


def render(doc: dict[str, Any], *, brief: bool = False, record: dict[str, Any] | None = None) -> str:
    """The report as Markdown text: the result, the action list and the record, then (unless
    ``brief``) the evidence."""
    doc = safe.guard(doc)
    record = safe.guard(record) if record is not None else None
    d, s, summ = doc["drawing"], doc["supply"], doc["summary"]
    out = [f"# {_esc(d['title'])}", ""]
    if d["note"]:
        out += [f"_{_esc(d['note'])}_", ""]
    out += [
        f"Drawing {_code(d['path'])} · {qv(s['system_voltage'], 0)} system · "
        f"limits {qv(s['v_min'], 1)}–{qv(s['v_max'], 1)} "
        f"({_esc(s['limits_source'])}) · coilstage {doc['tool']['version']}",
        "",
        f"**Result: {summ['result'].upper()}** — {summ['fail']} fail, {summ['warn']} warn, {summ['pass']} pass, "
        f"{summ['not_checked']} not checked",
        "",
    ]
    out += _opening(doc, record)
    if brief:
        out += ["## Cautions", ""] + [f"- **{_esc(c['hazard'])}**: {_esc(c['text'])}" for c in doc["cautions"]]
        out += ["", "_Brief report: the result and the action list only; run without --brief for the evidence._", ""]
        return "\n".join(out)
    out += ["# Evidence", ""]
    for c in doc["corners"]:
        out += [f"## {_esc(c['name'].capitalize())} corner — {_esc(c['purpose'])}", ""]
        out += [f"- {_esc(k)}: {_esc(v)}" for k, v in c["conditions"].items()]
        out += [
            f"- bus {qv(c['bus_voltage'], 2)}; stages {qv(c['total_stage_current'], 1)}; base load "
            f"{qv(c['base_load'], 1)}; alternator {qv(c['alternator_current'], 1)} ({_esc(c['alternator_mode'])}); "
            f"battery {qv(c['battery_current'], 1)}",
            "",
            "| stage | winding | R | I | terminal V | power | N·I per coil | drop | ½LI² |",
            "|---|---:|---:|---:|---:|---:|---:|---:|---:|",
        ]
        for st in c["stages"]:
            out.append(
                f"| {_esc(st['id'])} | {qv(st['winding_temperature'], 0)} | {qv(st['resistance'])} | "
                f"{qv(st['current'], 1)} | "
                f"{qv(st['terminal_voltage'], 2)} | {qv(st['power'])} | {num(st['ampere_turns'], places=0)} A | "
                f"{qv(st['voltage_drop'], 3)} ({num(st['voltage_drop_fraction'], 100, 1)}%) | "
                f"{qv(st['stored_energy'], 1)} |"
            )
        out.append("")
    sw = doc["switching"]
    if sw["stages"]:
        out += [
            "## Switching",
            "",
            f"| stage | corner | L/R | T0.95 alone | T0.95 all | I break | ½LI² | suppression | to zero | "
            f"to {pct(sw['release_fraction'])} | suppressor energy | contact voltage |",
            "|---|---|---:|---:|---:|---:|---:|---|---:|---:|---:|---:|",
        ]
        for x in sw["stages"]:
            out.append(
                f"| {_esc(x['id'])} | {_esc(x['corner'])} | {qv(x['time_constant'])} | {qv(x['t95_alone'])} | "
                f"{qv(x['t95_all'])} | "
                f"{qv(x['break_current'], 1)} | {qv(x['stored_energy'], 1)} | {_esc(x['suppression'])} | "
                f"{qv(x['time_to_zero'])} | {qv(x['release_time'])} | {qv(x['suppressor_energy'], 1)} | "
                f"{'arc' if x['contact_voltage'] is None else qv(x['contact_voltage'], 1)} |"
            )
        out += [
            "",
            *(
                f"- bus dip, {_esc(s['corner'])} corner, {_esc(s['name'])}: {qv(s['bus_dip'], 2)}"
                for s in sw["scenarios"]
            ),
            "",
        ]
    he = doc["heating"]
    if he["duty"] is not None:
        du = he["duty"]
        out += [
            f"## Heating — {_esc(du['name'])} duty, {qv(du['duration'])}",
            "",
            f"_{_esc(du['description'])}_",
            "",
            "| stage | hot corner | peak | end | limit | time to limit | end current | end N·I |",
            "|---|---:|---:|---:|---:|---:|---:|---:|",
        ]
        for x in he["stages"]:
            ttl = x["time_to_limit"]
            out.append(
                f"| {_esc(x['id'])} | {qv(x['hot_corner_temperature'], 0)} | {qv(x['peak_temperature'], 0)} | "
                f"{qv(x['end_temperature'], 0)} | {qv(x['limit'], 0)} | "
                f"{('never' if x['modelled'] else '—') if ttl is None else qv(ttl)} | {qv(x['end_current'], 1)} | "
                f"{num(x['end_ampere_turns'], places=0)} |"
            )
        out += ["", "| cable | table ampacity | heat-balance ampacity | peak | class |", "|---|---:|---:|---:|---:|"]
        for x in he["cables"]:
            out.append(
                f"| {_esc(x['id'])} | {qv(x['table_ampacity'], 0)} | {qv(x['computed_ampacity'], 0)} | "
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
            f"| {_esc(x['id'])} | {_esc(x['corner'])} | {qv(x['coil_current'], 1)} | "
            f"{num(x['ampere_turns'], places=0)} A | "
            f"{qv(x['gap_flux_density'])} | {qv(x['flux'])} | {qv(x['iron_flux_density'])} | {qv(x['knee'])} | "
            f"{qv(x['apparent_inductance'])} | {qv(x['incremental_inductance'])} |"
        )
    br = fd["braking"]
    if br["ratio_hot_cold"] is not None:
        out += [
            "",
            f"- braking effort left hot: {pct(br['ratio_hot_cold'])} of cold (hot windings alone "
            f"{pct(br['ratio_temperature'])}, the sagging bus alone {pct(br['ratio_bus'])})",
        ]
    if br["torque"]:
        out.append(f"- estimated torque: cold {qv(br['torque'].get('cold'), 0)}, hot {qv(br['torque'].get('hot'), 0)}")
    for s in fd["switch_on"]:
        out.append(
            f"- {_esc(s['stage'])} alone, cold: T0.95 {qv(s['t95_saturating'])} saturating, "
            f"{qv(s['t95_linear'])} linear"
        )
    for x in fd["ac"]:
        out.append(
            f"- AC, coil {_esc(x['coil'])}: {qv(x['current_ac'])} at {qv(x['frequency'])} against "
            f"{qv(x['current_dc'])} DC"
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
            f"| {_esc(v['status'].upper())} | {_code(v['rule'])} | {_esc(v['subject'])} | {qv(v['value'])} | "
            f"{qv(v['limit'])} | "
            f"{margin_text(v)} | {_esc(' — '.join([v['note'], *worst_lines(v)]))} | {_esc(v['clause'])} |"
        )
    out += ["", "## Prospective short-circuit currents (cold corner)", ""]
    out.append(f"- battery terminals: {qv(doc['faults']['battery_terminals'])}")
    out += [f"- load side of {_esc(f['id'])}: {qv(f['prospective_current'])}" for f in doc["faults"]["fuses"]]
    if doc["assumptions"]:
        out += ["", "## Assumptions (defaults applied)", ""] + [f"- {_esc(x)}" for x in doc["assumptions"]]
    out += ["", "## Cautions", ""] + [f"- **{_esc(c['hazard'])}**: {_esc(c['text'])}" for c in doc["cautions"]]
    return "\n".join(out) + "\n"
