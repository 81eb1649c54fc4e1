"""Terminal report drawn with rich."""

from __future__ import annotations

from typing import Any

from coilstage.report.fmt import margin, qv

_STYLE = {"pass": "green", "warn": "yellow", "fail": "bold red", "not checked": "magenta"}


def _num(d: dict[str, Any] | None, scale: float = 1.0, places: int = 1) -> str:
    return "—" if d is None else f"{d['value'] * scale:.{places}f}"


def render(doc: dict[str, Any], console: Any, details: bool = False) -> None:
    """Print the report on a rich Console; ``details`` adds the note of every passing verdict."""
    from rich import box
    from rich.panel import Panel
    from rich.table import Table
    from rich.text import Text

    d, s, summ = doc["drawing"], doc["supply"], doc["summary"]
    head = Text()
    head.append(d["title"] + "\n", style="bold")
    if d["note"]:
        head.append(d["note"] + "\n", style="italic")
    head.append(
        f"{d['path']} · {qv(s['system_voltage'], 0)} system · operating limits {qv(s['v_min'], 1)}–{qv(s['v_max'], 1)} "
        f"({s['limits_source']})"
    )
    console.print(Panel(head, title=f"coilstage {doc['tool']['version']}", expand=False))

    for c in doc["corners"]:
        t = Table(title=f"{c['name'].upper()} corner — {c['purpose']}", box=box.SIMPLE_HEAD, title_justify="left")
        t.add_column("stage")
        for col in ("winding °C", "R mΩ", "I A", "U V", "P W", "N·I A/coil", "drop V", "drop %", "½LI² J"):
            t.add_column(col, justify="right")
        for st in c["stages"]:
            t.add_row(
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
        console.print(t)
        for k, v in c["conditions"].items():
            console.print(f"  {k}: {v}", style="dim")
        console.print(
            f"  bus {qv(c['bus_voltage'], 2)} · stages {qv(c['total_stage_current'], 1)} + base load "
            f"{qv(c['base_load'], 1)} · alternator {qv(c['alternator_current'], 1)} ({c['alternator_mode']}) · "
            f"battery {qv(c['battery_current'], 1)}\n"
        )

    v = Table(title="Verdicts", box=box.SIMPLE_HEAD, title_justify="left")
    for col in ("status", "rule", "subject", "value", "limit", "margin"):
        v.add_column(col, justify="right" if col in ("value", "limit", "margin") else "left")
    notes = []
    for x in doc["verdicts"]:
        st = x["status"]
        v.add_row(
            Text(st.upper(), style=_STYLE[st]),
            x["rule"],
            x["subject"],
            qv(x["value"]),
            qv(x["limit"]),
            margin(x["margin"]),
        )
        if details or st != "pass":
            notes.append(x)
    console.print(v)
    if notes:
        console.print("[bold]Why[/bold]" + ("" if details else " (verdicts other than pass; --details for all)"))
        for x in notes:
            line = Text("  ")
            line.append(f"{x['status'].upper()} ", style=_STYLE[x["status"]])
            line.append(f"{x['rule']} {x['subject']}: ", style="bold")
            line.append(x["note"])
            console.print(line)
    rules: dict[str, str] = {}
    for x in doc["verdicts"]:
        rules.setdefault(x["rule"], x["clause"])
    console.print("\n[bold]Clauses[/bold]")
    for rid, clause in rules.items():
        console.print(f"  {rid}: {clause}")

    console.print(
        "\n[bold]Prospective short-circuit currents[/bold] (cold corner, bolted short to chassis): battery terminals "
        f"{qv(doc['faults']['battery_terminals'])}; "
        + "; ".join(f"load side of {f['id']} {qv(f['prospective_current'])}" for f in doc["faults"]["fuses"])
    )
    if doc["assumptions"]:
        console.print("\n[bold]Assumptions[/bold] (defaults applied)")
        for a in doc["assumptions"]:
            console.print(f"  - {a}")
    caut = Text()
    for i, c in enumerate(doc["cautions"]):
        caut.append(("\n" if i else "") + c["hazard"].upper() + ": ", style="bold")
        caut.append(c["text"])
    console.print(Panel(caut, title="Cautions", border_style="yellow"))
    style = _STYLE["fail" if summ["result"] == "fail" else summ["result"]]
    console.print(
        Text(
            f"RESULT: {summ['result'].upper()} — {summ['fail']} fail, {summ['warn']} warn, {summ['pass']} pass, "
            f"{summ['not_checked']} not checked",
            style=style,
        )
    )
