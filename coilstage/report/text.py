"""Terminal report drawn with rich.

Every string reaches rich as a :class:`rich.text.Text` (never as markup), so an id such as "[/x]"
or ":fire:" is shown as written; the document passes :func:`coilstage.report.safe.guard` first, so
no control character and no NaN reaches the terminal.
"""

from __future__ import annotations

from typing import Any

from coilstage.report import actions as actions_mod
from coilstage.report import record as record_mod
from coilstage.report import safe
from coilstage.report.fmt import NOT_FINITE, margin_text, num, pct, qv, turns, worst_lines

_STYLE = {"pass": "green", "warn": "yellow", "fail": "bold red", "not checked": "magenta"}


def _num(d: dict[str, Any] | None, scale: float = 1.0, places: int = 1) -> str:
    return num(d, scale, places)


def _ms(d: dict[str, Any] | None) -> str:
    return num(d, 1e3, 0)


def _g(d: dict[str, Any] | None) -> str:
    if d is None:
        return "—"
    return NOT_FINITE if d["value"] is None else f"{d['value']:g}"


def _cells(*cells: Any) -> list[Any]:
    from rich.text import Text

    return [c if isinstance(c, Text) else Text(str(c)) for c in cells]


def _result_line(summ: dict[str, Any]) -> str:
    return (
        f"RESULT: {summ['result'].upper()} — {summ['fail']} fail, {summ['warn']} warn, {summ['pass']} pass, "
        f"{summ['not_checked']} not checked"
    )


_ACTION_HEADS = {
    "failures": "Failures — change these before the vehicle goes into service",
    "warnings": "Warnings — look at these",
    "missing": "Could not be checked — data missing from the drawing",
}


def render(
    doc: dict[str, Any],
    console: Any,
    details: bool = False,
    *,
    brief: bool = False,
    record: dict[str, Any] | None = None,
) -> None:
    """Print the report on a rich Console: the result, the drawing's metadata and the record block,
    the action list, then (unless ``brief``) the evidence; ``details`` adds the note of every passing
    verdict. No cell is cut short: every column folds its text onto further lines."""
    from rich import box
    from rich.panel import Panel
    from rich.table import Table
    from rich.text import Text

    doc = safe.guard(doc)
    record = safe.guard(record) if record is not None else None
    plain_print = console.print

    def say(line: Any = "", style: str | None = None) -> None:
        if isinstance(line, Table):
            for col in line.columns:
                col.overflow = "fold"
                col.no_wrap = False
        plain_print(line if not isinstance(line, str) else Text(line), style=style)

    d, s, summ = doc["drawing"], doc["supply"], doc["summary"]
    say(Text(_result_line(summ), style=_STYLE.get(summ["result"], "")))
    head = Text()
    head.append(d["title"] + "\n", style="bold")
    if d["note"]:
        head.append(d["note"] + "\n", style="italic")
    meta = (record or {}).get("drawing") or d
    for key in ("revision", "author", "vehicle"):
        if meta.get(key):
            head.append(f"{key}: {meta[key]}\n")
    head.append(
        f"{d['path']} · {qv(s['system_voltage'], 0)} system · operating limits {qv(s['v_min'], 1)}–{qv(s['v_max'], 1)} "
        f"({s['limits_source']})"
    )
    say(Panel(head, title=Text(f"coilstage {doc['tool']['version']}")))

    acts = actions_mod.build(doc)
    say(Text("What to do", style="bold"))
    for name in ("failures", "warnings", "missing"):
        n = actions_mod.count(acts, name)
        say(Text(f"{_ACTION_HEADS[name]} ({n})", style="bold"))
        if not n:
            say("  none")
        for g in acts[name]:
            say(Text(f"  {g['part']}", style="bold"))
            for v in g["items"]:
                line = Text("    ")
                line.append(v["status"].upper(), style=_STYLE.get(v["status"], ""))
                subj = "" if v["subject"] == g["part"] else f" ({v['subject']})"
                line.append(f" {v['rule']}{subj}: {qv(v['value'])} against {qv(v['limit'])}, margin {margin_text(v)}")
                say(line)
                say(f"      {v['note']}")
                for w in worst_lines(v):
                    say(f"      {w}")
                if v.get("suggestion"):
                    say(f"      what would pass: {v['suggestion']}")
    say()
    # the record after the action list: a fitter reads what to do first, an inspector files both
    if record is not None:
        rt = Table(title=Text("Record"), box=box.SIMPLE_HEAD, title_justify="left", show_header=False)
        rt.add_column("what", style="dim")
        rt.add_column("value")
        for label, value in record_mod.lines(record):
            rt.add_row(Text(label), Text(str(value)))
        say(rt)
    if brief:
        caut = Text()
        for i, c in enumerate(doc["cautions"]):
            caut.append(("\n" if i else "") + c["hazard"].upper() + ": ", style="bold")
            caut.append(c["text"])
        say(Panel(caut, title=Text("Cautions"), border_style="yellow"))
        say("Brief report: the result and the action list only; run without --brief for the evidence.")
        return
    say(Text("Evidence", style="bold underline"))

    for c in doc["corners"]:
        t = Table(title=Text(f"{c['name'].upper()} corner — {c['purpose']}"), box=box.SIMPLE_HEAD, title_justify="left")
        t.add_column("stage")
        for col in ("T °C", "R mΩ", "I A", "U V", "P W", "N·I A/coil", "drop V", "drop %", "½LI² J"):
            t.add_column(col, justify="right")
        for st in c["stages"]:
            t.add_row(
                *_cells(
                    st["id"],
                    _num(st["winding_temperature"], places=0),
                    _num(st["resistance"], 1e3, 0),
                    _num(st["current"]),
                    _num(st["terminal_voltage"], places=2),
                    _num(st["power"], places=0),
                    _num(st["ampere_turns"], places=0),
                    _num(st["voltage_drop"], places=3),
                    _num(st["voltage_drop_fraction"], 100),
                    _num(st["stored_energy"]),
                )
            )
        say(t)
        for k, v in c["conditions"].items():
            say(f"  {k}: {v}", style="dim")
        say(
            f"  bus {qv(c['bus_voltage'], 2)} · stages {qv(c['total_stage_current'], 1)} + base load "
            f"{qv(c['base_load'], 1)} · alternator {qv(c['alternator_current'], 1)} ({c['alternator_mode']}) · "
            f"battery {qv(c['battery_current'], 1)}\n"
        )

    sw = doc["switching"]
    if sw["stages"]:
        t = Table(
            title=Text("SWITCHING — switch-on in the network, switch-off through the suppressor"),
            box=box.SIMPLE_HEAD,
            title_justify="left",
        )
        short = {
            "none": "none",
            "diode": "diode",
            "diode_zener": "zener",
            "diode_resistor": "d+R",
            "tvs": "TVS",
            "varistor": "MOV",
        }
        t.caption = Text(
            "L/R, T95 (to 95 % of the final current, alone | all stages on), →0 (to zero) and "
            f"→{pct(sw['release_fraction'])} in ms; I, ½LI² and the suppressor's energy at the break; U: across the "
            "opening contact"
        )
        t.caption_justify = "left"
        t.add_column("stage")
        for col in (
            "L/R",
            "T95",
            "T95 all",
            "I A",
            "½LI² J",
            "suppr",
            "→0",
            f"→{pct(sw['release_fraction'])}",
            "E J",
            "U V",
        ):
            t.add_column(col, justify="right")
        for corner in ("cold", "hot"):
            t.add_row(Text(corner.upper(), style="bold"))
            for x in (y for y in sw["stages"] if y["corner"] == corner):
                t.add_row(
                    *_cells(
                        x["id"],
                        _num(x["time_constant"], 1e3, 0),
                        _ms(x["t95_alone"]),
                        _ms(x["t95_all"]),
                        _num(x["break_current"]),
                        _num(x["stored_energy"]),
                        short.get(x["suppression"], x["suppression"]),
                        _ms(x["time_to_zero"]),
                        _num(x["release_time"], 1e3, 0),
                        _num(x["suppressor_energy"]),
                        "arc" if x["contact_voltage"] is None else _num(x["contact_voltage"]),
                    )
                )
        say(t)
        dips = "; ".join(f"{s['corner']} {s['name']} {num(s['bus_dip'], places=2)} V" for s in sw["scenarios"])
        say(f"  bus dip at the battery terminals: {dips} (the cold corner holds the bus by definition)")
        if not sw["sequence_given"]:
            say("  the drawing gives no switching sequence ([[switching.positions]])", style="dim")
        say()

    he = doc["heating"]
    if he["duty"] is not None:
        du = he["duty"]
        t = Table(
            title=Text(f"HEATING — {du['name']} duty, {num(du['duration'], 1 / 60, 0)} min in {du['steps']} steps"),
            box=box.SIMPLE_HEAD,
            title_justify="left",
        )
        t.caption = Text(du["description"])
        t.caption_justify = "left"
        t.add_column("stage")
        for col in ("hot corner °C", "peak °C", "end °C", "limit °C", "to limit min", "end A", "end N·I"):
            t.add_column(col, justify="right")
        for x in he["stages"]:
            ttl = x["time_to_limit"]
            t.add_row(
                *_cells(
                    x["id"],
                    _num(x["hot_corner_temperature"], places=0),
                    _num(x["peak_temperature"], places=0),
                    _num(x["end_temperature"], places=0),
                    _num(x["limit"], places=0),
                    ("never" if x["modelled"] else "—") if ttl is None else num(ttl, 1 / 60, 1),
                    _num(x["end_current"]),
                    _num(x["end_ampere_turns"], places=0),
                )
            )
        say(t)
        c = Table(box=box.SIMPLE_HEAD)
        c.add_column("cable")
        for col in ("table A", "heat balance A", "peak °C", "class °C"):
            c.add_column(col, justify="right")
        for x in he["cables"]:
            c.add_row(
                *_cells(
                    x["id"],
                    _num(x["table_ampacity"], places=0),
                    _num(x["computed_ampacity"], places=0),
                    _num(x["peak_temperature"], places=0),
                    _num(x["class_temperature"], places=0),
                )
            )
        say(c)
        bt = he["battery"]
        soc = bt["end_state_of_charge"]
        say(
            f"  battery: {_num(bt['charge_drawn'])} A·h drawn over the duty"
            + (f" of {_num(bt['capacity'], places=0)} A·h, ending at {num(soc, 100, 0)} % charge" if soc else "")
            + "\n"
        )

    fd = doc["field"]
    t = Table(title=Text("FIELD — per coil, cold and hot corners"), box=box.SIMPLE_HEAD, title_justify="left")
    t.add_column("stage")
    for col in ("corner", "I/coil A", "N·I A", "B gap T", "Φ mWb", "B iron T", "knee T", "L app mH", "L inc mH"):
        t.add_column(col, justify="right")
    for x in fd["stages"]:
        t.add_row(
            *_cells(
                x["id"],
                x["corner"],
                _num(x["coil_current"]),
                _num(x["ampere_turns"], places=0),
                _num(x["gap_flux_density"], places=2),
                _num(x["flux"], 1e3, 2),
                _num(x["iron_flux_density"], places=2),
                _num(x["knee"], places=2),
                _num(x["apparent_inductance"], 1e3),
                _num(x["incremental_inductance"], 1e3),
            )
        )
    say(t)
    br = fd["braking"]
    basis = (
        "B² from the magnetic circuit"
        if fd["modelled"]
        else "(N·I)²: no magnetic circuit given, coils taken as unsaturated"
    )
    if br["ratio_hot_cold"] is not None:
        say(
            f"  braking effort left hot: {pct(br['ratio_hot_cold'])} of cold ({basis}); hot windings alone "
            f"{pct(br['ratio_temperature'])}, the sagging bus alone {pct(br['ratio_bus'])}"
        )
    if br["torque"]:
        say(
            f"  estimated braking torque (scaled from the rated figure, an estimate): cold "
            f"{num(br['torque'].get('cold'), places=0)} N·m, hot {num(br['torque'].get('hot'), places=0)} N·m"
        )
    if br["torque_speed"]:
        for corner, pts in br["torque_speed"].items():
            say(
                f"  torque against shaft speed, {corner}: "
                + ", ".join(
                    f"{num(p['speed'], 60 / (2 * 3.141592653589793), 0)} rpm {num(p['torque'], places=0)} N·m"
                    for p in pts
                )
            )
    for s in fd["switch_on"]:
        say(
            f"  {s['stage']} switched on alone (cold): T95 {num(s['t95_saturating'], 1e3, 0)} ms with the "
            f"saturating inductance, {num(s['t95_linear'], 1e3, 0)} ms with the stated linear one; field "
            f"energy {num(s['energy_saturating'])} J against ½LI² {num(s['energy_linear'])} J"
        )
    for x in fd["ac"]:
        say(
            f"  AC comparison, coil {x['coil']}: {_g(x['voltage'])} V at {_g(x['frequency'])} Hz drives "
            f"{num(x['current_ac'], places=2)} A (|Z| {num(x['impedance'])} Ω, "
            f"{turns(x['ampere_turns_ac'])}) against {num(x['current_dc'])} A on DC "
            f"({turns(x['ampere_turns_dc'])})"
        )
    say()

    v = Table(title=Text("Verdicts"), box=box.SIMPLE_HEAD, title_justify="left")
    for col in ("status", "rule", "subject", "value", "limit", "margin"):
        v.add_column(col, justify="right" if col in ("value", "limit", "margin") else "left")
    notes = []
    passes: dict[str, list[dict[str, Any]]] = {}
    for x in doc["verdicts"]:
        if x["status"] == "pass" and not details:
            passes.setdefault(x["rule"], []).append(x)
    shown: set[str] = set()
    for x in doc["verdicts"]:
        st = x["status"]
        group = passes.get(x["rule"]) if st == "pass" and not details else None
        if group is not None:
            if x["rule"] in shown:
                continue
            shown.add(x["rule"])
            tight = min(group, key=lambda y: y["margin"] if isinstance(y["margin"], int | float) else float("inf"))
            subject = tight["subject"] if len(group) == 1 else f"{len(group)}, tightest {tight['subject']}"
            v.add_row(
                *_cells(
                    Text("PASS", style=_STYLE["pass"]),
                    x["rule"],
                    subject,
                    qv(tight["value"]),
                    qv(tight["limit"]),
                    margin_text(tight),
                )
            )
            continue
        v.add_row(
            *_cells(
                Text(st.upper(), style=_STYLE.get(st, "")),
                x["rule"],
                x["subject"],
                qv(x["value"]),
                qv(x["limit"]),
                margin_text(x),
            )
        )
        if details or st != "pass":
            notes.append(x)
    say(v)
    if notes:
        say(
            Text.assemble(
                ("Why", "bold"),
                ""
                if details
                else " (verdicts other than pass; passes are grouped by rule: --details lists every verdict)",
            )
        )
        for x in notes:
            line = Text("  ")
            line.append(f"{x['status'].upper()} ", style=_STYLE.get(x["status"], ""))
            line.append(f"{x['rule']} {x['subject']}: ", style="bold")
            line.append(x["note"])
            say(line)
            for w in worst_lines(x):
                say(f"      {w}")
    rules: dict[str, str] = {}
    for x in doc["verdicts"]:
        rules.setdefault(x["rule"], x["clause"])
    say(Text.assemble("\n", ("Clauses", "bold")))
    for rid, clause in rules.items():
        say(f"  {rid}: {clause}")

    say(
        Text.assemble(
            "\n",
            ("Prospective short-circuit currents", "bold"),
            " (cold corner, bolted short to chassis): battery terminals "
            f"{qv(doc['faults']['battery_terminals'])}; "
            + "; ".join(f"load side of {f['id']} {qv(f['prospective_current'])}" for f in doc["faults"]["fuses"]),
        )
    )
    if doc["assumptions"]:
        say(Text.assemble("\n", ("Assumptions", "bold"), " (defaults applied)"))
        for a in doc["assumptions"]:
            say(f"  - {a}")
    caut = Text()
    for i, c in enumerate(doc["cautions"]):
        caut.append(("\n" if i else "") + c["hazard"].upper() + ": ", style="bold")
        caut.append(c["text"])
    say(Panel(caut, title=Text("Cautions"), border_style="yellow"))
    say(Text(_result_line(summ), style=_STYLE.get(summ["result"], "")))
