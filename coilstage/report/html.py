"""The printable report: one self-contained HTML file (inline CSS and SVG; no script, font or image
is fetched from anywhere), laid out for A4.

The first part says what a fitter and an inspector need at once: the result, the drawing it is
about, the action list (failures by part, then warnings, then what could not be checked for want of
data), the record block that makes the report traceable, and a sign-off block. The evidence follows,
a section to a printed page or more: the operating corners, switching, heating, field, every verdict
with its reason and clause, the parts list as read, the plots, the assumptions and the cautions.

Status is always a word and a symbol (readable in black and white); all drawing text is escaped.
Printing: ``@page`` margin boxes carry the drawing's SHA-256 and "page n of m" on every page
(Chromium 131 and later print them; older engines leave them out, and every section heading carries
the short hash as well).
"""

from __future__ import annotations

from html import escape
from typing import Any

from coilstage.report import actions as actions_mod
from coilstage.report.fmt import duration, margin_text, percent, qv, si, turns, worst_lines

#: How each status is shown: symbol, word, CSS class.
STATUS = {
    "fail": ("✗", "FAIL", "fail"),
    "warn": ("▲", "WARN", "warn"),
    "pass": ("✓", "PASS", "pass"),
    "not checked": ("?", "NOT CHECKED", "nc"),
}

CSP = "default-src 'none'; style-src 'unsafe-inline'; img-src data:; font-src 'none'; form-action 'none'"

# ---------------------------------------------------------------- numbers as a practitioner reads them


def e(x: Any) -> str:
    """Escaped text of anything (None as a dash)."""
    return "—" if x is None else escape(str(x), quote=True)


def status_badge(status: str) -> str:
    sym, word, cls = STATUS.get(status, ("·", status.upper(), "nc"))
    return f'<span class="st st-{cls}"><span class="sym" aria-hidden="true">{sym}</span> {escape(word)}</span>'


# ---------------------------------------------------------------- page frame

_CSS = """
:root { --ink:#1b1f24; --rule:#9aa3ab; --soft:#eef1f3; --accent:#24515f; }
* { box-sizing: border-box; }
html { font-family: "DejaVu Sans", "Liberation Sans", Arial, sans-serif; color: var(--ink); font-size: 9.5pt;
  line-height: 1.35; }
body { margin: 0 auto; max-width: 190mm; padding: 6mm 4mm; }
h1 { font-size: 15pt; margin: 0 0 2mm 0; }
h2 { font-size: 12pt; margin: 0 0 2mm 0; border-bottom: 1.5pt solid var(--accent); padding-bottom: 1mm;
  display: flex; justify-content: space-between; align-items: baseline; gap: 4mm; }
h2 .hash, .sheet-id { font-size: 7pt; font-weight: normal; font-family: "DejaVu Sans Mono", monospace;
  color: #4a545c; white-space: nowrap; }
h3 { font-size: 10pt; margin: 4mm 0 1.5mm 0; }
section { margin-bottom: 8mm; }
section.evidence { break-before: page; }
p { margin: 1mm 0 2mm 0; }
.mono, code { font-family: "DejaVu Sans Mono", "Liberation Mono", monospace; font-size: 8pt; }
.hashfull { font-family: "DejaVu Sans Mono", monospace; font-size: 7.5pt; overflow-wrap: anywhere; }
td .hashfull { font-size: 6.5pt; }
table.verdicts col.c-status { width: 19mm; } table.verdicts col.c-subject { width: 22mm; }
table.verdicts col.c-num { width: 15mm; } table.verdicts col.c-head { width: 14mm; }
table.tables col.c-file { width: 36mm; } table.tables col.c-origin { width: 13mm; }
table.tables col.c-status { width: 22mm; } table.tables col.c-hash { width: 31mm; }
table { border-collapse: collapse; width: 100%; margin: 1mm 0 3mm 0; }
th, td { border: 0.5pt solid var(--rule); padding: 0.8mm 1.4mm; vertical-align: top; text-align: left;
  overflow-wrap: break-word; }
td code { overflow-wrap: anywhere; }
th { background: var(--soft); font-weight: bold; font-size: 8pt; }
td.n, th.n { text-align: right; white-space: nowrap; }
table.ev { font-size: 7.8pt; }
tr, .keep { break-inside: avoid; page-break-inside: avoid; }
thead { display: table-header-group; }
.titleblock { border: 1.2pt solid var(--ink); display: grid; grid-template-columns: 1fr auto; margin-bottom: 4mm; }
.titleblock .what { padding: 2.5mm 3mm; border-right: 1.2pt solid var(--ink); }
.titleblock .brand { font-size: 7.5pt; letter-spacing: 0.08em; text-transform: uppercase; color: #4a545c; }
.titleblock .result { padding: 2.5mm 4mm; display: flex; flex-direction: column; justify-content: center;
  align-items: center; min-width: 42mm; text-align: center; }
.result .word { font-size: 20pt; font-weight: bold; letter-spacing: 0.04em; }
.result.r-fail { background: #1b1f24; color: #fff; }
.result.r-warn { border-left: 3pt double var(--ink); }
.result .counts { font-size: 8pt; }
table.meta th { width: 34mm; background: none; font-weight: normal; color: #4a545c; }
.st { white-space: nowrap; font-weight: bold; font-size: 7.8pt; padding: 0 1mm; border: 0.8pt solid var(--ink); }
.st-fail { background: #1b1f24; color: #fff; }
.st-warn { border-width: 1.6pt; }
.st-pass { border-color: var(--rule); font-weight: normal; }
.st-nc { border-style: dashed; font-weight: normal; font-style: italic; }
.actions .group { border-left: 2.5pt solid var(--ink); padding: 0.5mm 0 0.5mm 2.5mm; margin: 0 0 2.5mm 0;
  break-inside: avoid; }
.actions .warnings .group { border-left-style: double; border-left-width: 3pt; }
.actions .missing .group { border-left-style: dashed; border-left-width: 1.5pt; }
.actions .part { font-weight: bold; }
.actions ul { margin: 0.5mm 0 0 0; padding-left: 4.5mm; }
.actions li { margin: 0.3mm 0; }
.actions .why { color: #333; }
.worst { color: #444; font-size: 0.92em; }
.actions .suggest { margin: 0.5mm 0 0 0; font-style: italic; }
.actions .suggest::before { content: "→ what would pass: "; font-style: normal; font-weight: bold; }
.signoff { border: 1.2pt solid var(--ink); padding: 3mm; break-inside: avoid; margin-top: 4mm; }
.signoff table td { border: none; padding: 5mm 2mm 0.5mm 0; }
.signoff .line { border-bottom: 0.8pt solid var(--ink); min-width: 55mm; }
.note { color: #4a545c; font-size: 8pt; }
figure { margin: 0 0 5mm 0; break-inside: avoid; }
figure svg { width: 100%; height: auto; display: block; }
figcaption { font-size: 8pt; color: #4a545c; }
.plots figure + figure { break-before: page; }
.caution { border: 1pt solid var(--ink); border-left-width: 4pt; padding: 1.5mm 3mm; margin: 0 0 2.5mm 0;
  break-inside: avoid; }
.caution b { text-transform: uppercase; letter-spacing: 0.04em; font-size: 8.5pt; }
.rulehead td { background: var(--soft); font-size: 7.5pt; }
.origin-default { font-weight: bold; }
.origin-default::before { content: "◆\\00a0"; }
.origin-absent { font-style: italic; color: #4a545c; }
table.parts { font-size: 7pt; }
table.parts th { font-size: 6.8pt; }
ol.notes { font-size: 7pt; color: #4a545c; margin: 0 0 3mm 0; padding-left: 6mm; }
.kvgrid { display: grid; grid-template-columns: 1fr 1fr; gap: 0 5mm; }
.kvgrid h3 { margin-top: 2mm; }
.brief-note { border: 1pt dashed var(--ink); padding: 2mm; }
@media screen { body { background: #fafbfc; } }
@page { size: A4; margin: 14mm 12mm 16mm 12mm; }
@media print { body { max-width: none; padding: 0; } a { color: inherit; text-decoration: none; } }
"""


def _page_css(footer: str) -> str:
    # Only fixed words and hex digits reach the CSS string (no drawing text), so no escaping is needed.
    safe = "".join(ch for ch in footer if ch.isalnum() or ch in " -:.·/()")
    return (
        '@page { @bottom-left { content: "' + safe + "\"; font: 7pt 'DejaVu Sans Mono', monospace; color: #4a545c; }"
        ' @bottom-right { content: "page " counter(page) " of " counter(pages); font: 7.5pt \'DejaVu Sans\', '
        "sans-serif; } }"
    )


def page(title: str, body: str, footer: str) -> str:
    """A whole HTML document around ``body`` (already escaped HTML)."""
    return (
        "<!DOCTYPE html>\n"
        '<html lang="en">\n<head>\n<meta charset="utf-8">\n'
        f'<meta http-equiv="Content-Security-Policy" content="{CSP}">\n'
        '<meta name="viewport" content="width=device-width, initial-scale=1">\n'
        '<meta name="generator" content="coilstage">\n'
        f"<title>{escape(title)}</title>\n"
        f"<style>{_CSS}{_page_css(footer)}</style>\n</head>\n<body>\n{body}\n</body>\n</html>\n"
    )


def _h2(text: str, short_hash: str) -> str:
    return f'<h2><span>{escape(text)}</span><span class="hash">drawing {escape(short_hash)}</span></h2>'


def _table(
    head: list[str], rows: list[list[str]], numeric: set[int] = frozenset(), cls: str = "ev", cols: str = ""
) -> str:
    """A table from already-escaped cells; columns in ``numeric`` right-aligned; ``cols`` a colgroup."""
    th = "".join(f"<th{' class=n' if i in numeric else ''}>{h}</th>" for i, h in enumerate(head))
    body = "".join(
        "<tr>" + "".join(f"<td{' class=n' if i in numeric else ''}>{c}</td>" for i, c in enumerate(r)) + "</tr>"
        for r in rows
    )
    return f'<table class="{cls}">{cols}<thead><tr>{th}</tr></thead><tbody>{body}</tbody></table>'


# ---------------------------------------------------------------- first part


def _titleblock(doc: dict, rec: dict) -> str:
    summ = doc["summary"]
    result = summ["result"]
    sym, word, _ = STATUS[result]
    d = rec["drawing"]
    return (
        '<div class="titleblock keep">'
        '<div class="what"><div class="brand">coilstage · coil-stage supply check</div>'
        f"<h1>{e(d.get('title') or doc['drawing']['title'])}</h1>"
        f'<div class="note">{e(d.get("note") or doc["drawing"].get("note") or "")}</div></div>'
        f'<div class="result r-{result}"><div class="word">{sym} {word}</div>'
        f'<div class="counts">{summ["fail"]} fail · {summ["warn"]} warn · {summ["pass"]} pass · '
        f"{summ['not_checked']} not checked</div></div></div>"
        f'<p class="resultline"><b>Result: {word}</b> — {summ["fail"]} fail, {summ["warn"]} warn, '
        f"{summ['pass']} pass, {summ['not_checked']} not checked.</p>"
    )


def _meta(doc: dict, rec: dict) -> str:
    d = rec["drawing"]
    s = doc["supply"]
    rows = [
        ("revision", d.get("revision") or "not given in the drawing"),
        ("author", d.get("author") or "not given in the drawing"),
        ("vehicle", d.get("vehicle") or "not given in the drawing"),
        ("drawing file", d["path"]),
        (
            "system",
            f"{qv(s['system_voltage'], 0)}; operating limits {qv(s['v_min'], 1)} to {qv(s['v_max'], 1)} "
            f"({s['limits_source']})",
        ),
    ]
    body = "".join(f"<tr><th>{e(k)}</th><td>{e(v)}</td></tr>" for k, v in rows)
    body += f'<tr><th>drawing SHA-256</th><td class="hashfull">{e(d["sha256"] or "(no file)")}</td></tr>'
    return f'<table class="meta keep">{body}</table>'


def _figure_of(v: dict) -> str:
    val, lim = v.get("value"), v.get("limit")
    if val is None:
        return ""
    text = _vq(val)
    if lim is not None:
        text += f" against {_vq(lim)}"
    return text


def _vq(d: dict) -> str:
    return si(d["value"], d["unit"]) if d["unit"] not in ("", "count") else f"{d['value']:.3g}"


def _actions(doc: dict) -> str:
    acts = actions_mod.build(doc)
    out = ['<section class="actions">', "<h2><span>What to do</span></h2>"]
    heads = {
        "failures": "Failures — change these before the vehicle goes into service",
        "warnings": "Warnings — look at these",
        "missing": "Could not be checked — data missing from the drawing",
    }
    for name in ("failures", "warnings", "missing"):
        n = actions_mod.count(acts, name)
        out.append(f'<div class="{name}"><h3>{escape(heads[name])} ({n})</h3>')
        if not n:
            out.append('<p class="note">none</p>')
        for g in acts[name]:
            out.append(f'<div class="group"><span class="part">{e(g["part"])}</span><ul>')
            for v in g["items"]:
                subj = "" if v["subject"] == g["part"] else f" ({e(v['subject'])})"
                fig = _figure_of(v)
                out.append(
                    f"<li>{status_badge(v['status'])} <code>{e(v['rule'])}</code>{subj}"
                    + (f": {escape(fig)}" if fig else "")
                    + (f", {escape(margin_text(v))}" if fig else "")
                    + f'<div class="why">{e(v["note"])}</div>'
                    + "".join(f'<div class="worst">{e(w)}</div>' for w in worst_lines(v))
                    + (f'<p class="suggest">{e(v["suggestion"])}</p>' if v.get("suggestion") else "")
                    + "</li>"
                )
            out.append("</ul></div>")
        out.append("</div>")
    out.append("</section>")
    return "".join(out)


def _caution_strip(doc: dict, brief: bool) -> str:
    names = ", ".join(c["hazard"] for c in doc["cautions"] if c["hazard"] != "scope")
    where = "below" if brief else "in the last section of this report"
    return (
        f'<div class="caution keep"><b>⚠ before working on this installation</b><br>Mind the {e(names)}: the '
        f"cautions {where} give this drawing's own figures. Follow the vehicle maker's instructions, local codes "
        "and licensed practice; this report does not replace them.</div>"
    )


def _signoff() -> str:
    return (
        '<div class="signoff keep"><b>Sign-off</b>'
        "<table><tr><td>Checked by</td><td class=line></td><td>Date</td><td class=line></td></tr>"
        "<tr><td>Signature</td><td class=line></td><td>Workshop / licence no.</td><td class=line></td></tr></table>"
        '<p class="note">The signatory confirms that the drawing checked is the installation on the vehicle named '
        "above, and that the results were weighed against the vehicle maker's instructions and local rules.</p>"
        "</div>"
    )


def _record(rec: dict) -> str:
    from coilstage.report.record import revision_text

    rows = [
        ("run at (UTC)", rec["run_at"]),
        ("coilstage", rec["tool"]["version"]),
        ("source revision", revision_text(rec)),
        ("command", rec["command"]),
    ]
    body = "".join(f"<tr><th>{e(k)}</th><td class='mono'>{e(v)}</td></tr>" for k, v in rows)
    out = [f'<div class="keep"><h3>Record</h3><table class="meta">{body}</table></div>']
    trows = [
        [
            e(t["file"]) + (f'<div class="note">{e(t["path"])}</div>' if t["origin"] == "user" else ""),
            e(t["origin"]),
            e(t["title"]) + f'<div class="note">{e(t["standard"])}</div>',
            e(t["status"]),
            f'<span class="hashfull">{e(t["sha256"])}</span>',
        ]
        for t in rec["tables"]
    ]
    out.append(f'<p class="note">Tables: {e(rec["tables_listed"])}.</p>')
    cols = (
        '<colgroup><col class="c-file"><col class="c-origin"><col><col class="c-status"><col class="c-hash"></colgroup>'
    )
    out.append(
        _table(["table file", "origin", "title and standard", "status", "SHA-256"], trows, cls="ev tables", cols=cols)
    )
    return "".join(out)


# ---------------------------------------------------------------- evidence


def _corners(doc: dict, h: str) -> str:
    out = [f'<section class="evidence">{_h2("Operating corners", h)}']
    for c in doc["corners"]:
        out.append(f'<div class="keep"><h3>{e(c["name"].capitalize())} corner — {e(c["purpose"])}</h3><ul>')
        out += [f"<li>{e(k)}: {e(v)}</li>" for k, v in c["conditions"].items()]
        out.append(
            f"<li>bus {qv(c['bus_voltage'], 2)}; stages {qv(c['total_stage_current'], 1)}; base load "
            f"{qv(c['base_load'], 1)}; alternator {qv(c['alternator_current'], 1)} ({e(c['alternator_mode'])}); "
            f"battery {qv(c['battery_current'], 1)}</li></ul></div>"
        )
        rows = [
            [
                e(st["id"]),
                qv(st["winding_temperature"], 0),
                qv(st["resistance"]),
                qv(st["current"], 1),
                qv(st["terminal_voltage"], 2),
                qv(st["power"]),
                turns(st["ampere_turns"]),
                f"{qv(st['voltage_drop'], 3)} ({percent(st['voltage_drop_fraction']['value'])})",
                qv(st["stored_energy"], 1),
            ]
            for st in c["stages"]
        ]
        out.append(
            _table(
                ["stage", "winding", "R", "I", "terminal V", "power", "N·I per coil", "drop", "½LI²"],
                rows,
                set(range(1, 9)),
            )
        )
    f = doc["faults"]
    out.append("<h3>Prospective short-circuit currents (cold corner)</h3>")
    rows = [["battery terminals", qv(f["battery_terminals"])]] + [
        [f"load side of {e(x['id'])}", qv(x["prospective_current"])] for x in f["fuses"]
    ]
    out.append(_table(["where", "current"], rows, {1}))
    out.append("</section>")
    return "".join(out)


def _switching(doc: dict, h: str) -> str:
    sw = doc["switching"]
    out = [f'<section class="evidence">{_h2("Switching", h)}']
    if not sw["stages"]:
        out.append("<p>No switching analysis in this report.</p></section>")
        return "".join(out)
    rows = [
        [
            e(x["id"]),
            e(x["corner"]),
            qv(x["time_constant"]),
            qv(x["t95_alone"]),
            qv(x["t95_all"]),
            qv(x["break_current"], 1),
            qv(x["stored_energy"], 1),
            e(x["suppression"]),
            qv(x["time_to_zero"]),
            qv(x["release_time"]),
            qv(x["suppressor_energy"], 1),
            "arc" if x["contact_voltage"] is None else qv(x["contact_voltage"]),
        ]
        for x in sw["stages"]
    ]
    out.append(
        _table(
            [
                "stage",
                "corner",
                "L/R",
                "T0.95 alone",
                "T0.95 all",
                "I break",
                "½LI²",
                "suppression",
                "to zero",
                f"to {percent(sw['release_fraction'], 0)}",
                "suppressor energy",
                "contact voltage",
            ],
            rows,
            {2, 3, 4, 5, 6, 8, 9, 10, 11},
        )
    )
    rows = [
        [
            e(sc["name"]),
            e(sc["corner"]),
            "; ".join(
                f"{duration(ev['at']['value'])}: {e(', '.join(ev['stages']) or 'all off')}" for ev in sc["events"]
            ),
            qv(sc["bus_dip"], 2),
        ]
        for sc in sw["scenarios"]
    ]
    out.append("<h3>Scenarios</h3>")
    out.append(_table(["scenario", "corner", "events", "bus dip"], rows, {3}))
    out.append("</section>")
    return "".join(out)


def _heating(doc: dict, h: str) -> str:
    ht = doc["heating"]
    out = [f'<section class="evidence">{_h2("Heating", h)}']
    duty = ht["duty"]
    if duty:
        out.append(
            f"<p>Duty <b>{e(duty['name'])}</b>, {duration(duty['duration']['value'])} in {duty['steps']} "
            f"step{'s' * (duty['steps'] != 1)}: "
            f"{e(duty['description'])}</p>"
        )
    else:
        out.append("<p>No duty was simulated.</p>")
    rows = [
        [
            e(s["id"]),
            qv(s["hot_corner_temperature"], 0),
            qv(s["peak_temperature"], 0),
            qv(s["end_temperature"], 0),
            qv(s["limit"], 0),
            (f"{s['limit']['value'] - s['peak_temperature']['value']:+.1f} K" if s["peak_temperature"] else "—"),
            qv(s["time_to_limit"]) if s["time_to_limit"] else ("never" if s["modelled"] else "—"),
            qv(s["end_current"], 1),
            turns(s["end_ampere_turns"]),
        ]
        for s in ht["stages"]
    ]
    out.append("<h3>Windings</h3>")
    out.append(
        _table(
            ["stage", "hot corner", "peak", "end", "limit", "headroom", "time to limit", "end current", "end N·I"],
            rows,
            set(range(1, 9)),
        )
    )
    rows = [
        [
            e(c["id"]),
            qv(c["table_ampacity"], 0),
            qv(c["computed_ampacity"], 0),
            qv(c["peak_temperature"], 0),
            qv(c["class_temperature"], 0),
            (
                f"{c['class_temperature']['value'] - c['peak_temperature']['value']:+.1f} K"
                if c["peak_temperature"]
                else "—"
            ),
        ]
        for c in ht["cables"]
    ]
    out.append("<h3>Cables</h3>")
    out.append(
        _table(
            ["cable", "table ampacity", "heat-balance ampacity", "peak", "class", "headroom"], rows, set(range(1, 6))
        )
    )
    b = ht["battery"]
    soc = b["end_state_of_charge"]
    out.append(
        f"<p>Battery: {qv(b['charge_drawn'])} drawn; capacity {qv(b['capacity'])}; state of charge at the end "
        f"{percent(soc['value'], 0) if soc else '—'}.</p></section>"
    )
    return "".join(out)


def _field(doc: dict, h: str) -> str:
    f = doc["field"]
    out = [f'<section class="evidence">{_h2("Field", h)}']
    rows = [
        [
            e(x["id"]),
            e(x["corner"]),
            qv(x["coil_current"], 1),
            turns(x["ampere_turns"]),
            qv(x["gap_flux_density"]),
            qv(x["flux"]),
            qv(x["iron_flux_density"]),
            qv(x["knee"]),
            qv(x["apparent_inductance"]),
            qv(x["incremental_inductance"]),
        ]
        for x in f["stages"]
    ]
    out.append(
        _table(
            ["stage", "corner", "I per coil", "N·I", "B gap", "Φ", "B iron", "knee", "L apparent", "L incremental"],
            rows,
            set(range(2, 10)),
        )
    )
    br = f["braking"]
    if br["ratio_hot_cold"] is not None:
        out.append(
            f"<p>Braking effort left hot: {percent(br['ratio_hot_cold'], 0)} of cold (hot windings alone "
            f"{percent(br['ratio_temperature'], 0)}, the sagging bus alone {percent(br['ratio_bus'], 0)}).</p>"
        )
    if br.get("torque"):
        out.append("<p>Torque estimate: " + "; ".join(f"{e(k)} {qv(v)}" for k, v in br["torque"].items()) + ".</p>")
    if f["switch_on"]:
        rows = [
            [
                e(s["stage"]),
                qv(s["t95_saturating"]),
                qv(s["t95_linear"]),
                qv(s["energy_saturating"], 1),
                qv(s["energy_linear"], 1),
            ]
            for s in f["switch_on"]
        ]
        out.append("<h3>Switch-on with saturation</h3>")
        out.append(
            _table(
                ["stage", "T0.95 saturating", "T0.95 linear", "energy saturating", "energy linear"], rows, {1, 2, 3, 4}
            )
        )
    if f["ac"]:
        rows = [
            [
                e(x["coil"]),
                f"{qv(x['voltage'])} at {qv(x['frequency'])}",
                qv(x["impedance"]),
                f"{qv(x['current_ac'], 2)} / {qv(x['current_dc'], 2)}",
                f"{turns(x['ampere_turns_ac'])} / {turns(x['ampere_turns_dc'])}",
                f"{qv(x['flux_density_ac'])} / {qv(x['flux_density_dc'])}",
            ]
            for x in f["ac"]
        ]
        out.append("<h3>The same coil on AC, for comparison</h3>")
        out.append(_table(["coil", "supply", "impedance", "I AC / DC", "N·I AC / DC", "B AC / DC"], rows, {2, 3, 4, 5}))
    out.append("</section>")
    return "".join(out)


def _verdicts(doc: dict, h: str) -> str:
    out = [f'<section class="evidence">{_h2("Verdicts", h)}']
    out.append(
        '<p class="note">Every rule applied, in report order, with its figures, its reason and the clause it rests on. '
        "Headroom is positive on the safe side: in K for a temperature, else as a percentage of the limit.</p>"
    )
    head = ["status", "subject", "value", "limit", "headroom", "reason"]
    th = "".join(f"<th{' class=n' if i in (2, 3, 4) else ''}>{x}</th>" for i, x in enumerate(head))
    body = []
    last = None
    for v in doc["verdicts"]:
        if v["rule"] != last:
            last = v["rule"]
            body.append(
                f'<tr class="rulehead"><td colspan="6"><code>{e(v["rule"])}</code> — {e(v["clause"])}</td></tr>'
            )
        body.append(
            "<tr>"
            f"<td>{status_badge(v['status'])}</td><td>{e(v['subject'])}"
            + (f'<div class="note">{e(v["corner"])} corner</div>' if v.get("corner") else "")
            + f"</td><td class=n>{_vq(v['value']) if v['value'] else '—'}</td>"
            f"<td class=n>{_vq(v['limit']) if v['limit'] else '—'}</td>"
            f"<td class=n>{e(margin_text(v))}</td><td>{e(v['note'])}"
            + "".join(f'<div class="worst">{e(w)}</div>' for w in worst_lines(v))
            + "</td></tr>"
        )
    cols = (
        '<colgroup><col class="c-status"><col class="c-subject"><col class="c-num"><col class="c-num">'
        '<col class="c-head"><col></colgroup>'
    )
    out.append(
        f'<table class="ev verdicts">{cols}<thead><tr>{th}</tr></thead><tbody>{"".join(body)}</tbody></table></section>'
    )
    return "".join(out)


_KIND_TITLES = {
    "cable": "Cables and grounds",
    "fuse": "Fuses",
    "relay": "Relays and contactors",
    "stage": "Stages",
    "resistor": "Joints, busbars and measured grounds",
}


def _cell(r: dict, notes: dict[str, int]) -> str:
    shown = e(r["shown"])
    if r["origin"] == "default":
        shown = f'<span class="origin-default">{shown}</span>'
    elif r["origin"] == "absent":
        shown = '<span class="origin-absent">not given</span>'
    elif r["origin"] == "library":
        shown = f'<span class="origin-library">{shown} (library)</span>'
    if r["note"]:
        k = notes.setdefault(r["note"], len(notes) + 1)
        shown += f"<sup>{k}</sup>"
    return shown


def _notes(notes: dict[str, int]) -> str:
    if not notes:
        return ""
    items = "".join(f"<li value={k}>{e(n)}</li>" for n, k in notes.items())
    return f'<ol class="notes">{items}</ol>'


def _kind_table(ps: list[dict]) -> str:
    """One table for parts of one kind: a row per part, a column per value (union, in order)."""
    cols: dict[str, str] = {}
    for p in ps:
        for r in p["values"]:
            cols.setdefault(r["key"], r["label"])
    notes: dict[str, int] = {}
    rows = []
    for p in ps:
        vals = {r["key"]: r for r in p["values"]}
        rows.append(
            [f"<b>{e(p['id'])}</b>", f"{e(p['from'])} → {e(p['to'])}"]
            + [_cell(vals[k], notes) if k in vals else "" for k in cols]
        )
    head = ["id", "from → to", *(e(x) for x in cols.values())]
    return _table(head, rows, cls="ev parts") + _notes(notes)


def _kv_table(p: dict) -> str:
    notes: dict[str, int] = {}
    rows = [[e(r["label"]), _cell(r, notes)] for r in p["values"]]
    conn = f" · {e(p['from'])} → {e(p['to'])}" if p["from"] or p["to"] else ""
    return (
        f'<div class="kv keep"><h3>{e(p["id"])} <span class="note">{e(p["kind"])}{conn}</span></h3>'
        + _table(["value", "as resolved"], rows, cls="ev")
        + _notes(notes)
        + "</div>"
    )


def _parts(parts: dict, h: str) -> str:
    out = [f'<section class="evidence">{_h2("Parts list (as read from the drawing)", h)}']
    out.append(
        '<p class="note">Every part with its resolved values. <span class="origin-default">bold with ◆</span>: a '
        "default — the drawing does not give it and the program put it in (see the assumptions); "
        '<span class="origin-absent">not given</span>: missing, and checks that need it say NOT CHECKED; plain: '
        "as drawn, or looked up in a table from what the drawing gives. Numbered notes give the source. "
        f"Defaults found from {e(', '.join(parts['defaults_from']))}.</p>"
    )
    supply = [p for p in parts["parts"] if p["section"] in ("supply", "coils")]
    out.append('<div class="kvgrid">' + "".join(_kv_table(p) for p in supply) + "</div>")
    harness = [p for p in parts["parts"] if p["section"] == "harness"]
    groups: dict[str, list[dict]] = {}
    for p in harness:
        k = "cable" if p["kind"] in ("cable", "ground") and any(r["key"] == "size" for r in p["values"]) else p["kind"]
        k = k if k in _KIND_TITLES else "resistor"
        groups.setdefault(k, []).append(p)
    for k, title in _KIND_TITLES.items():
        if k in groups:
            out.append(f"<h3>{escape(title)}</h3>" + _kind_table(groups[k]))
    out.append("</section>")
    return "".join(out)


def _plots(plots: list[dict], h: str) -> str:
    out = [f'<section class="evidence plots">{_h2("Plots", h)}']
    for pl in plots:
        out.append(
            f"<figure>{pl['svg']}<figcaption>{e(pl['title'])}"
            + (f" — {e(pl['caption'])}" if pl.get("caption") else "")
            + "</figcaption></figure>"
        )
    out.append("</section>")
    return "".join(out)


def _closing(doc: dict, h: str) -> str:
    out = [f'<section class="evidence">{_h2("Assumptions and cautions", h)}']
    out.append("<h3>Assumptions (defaults applied by the program)</h3>")
    if doc["assumptions"]:
        out.append("<ul>" + "".join(f"<li>{e(a)}</li>" for a in doc["assumptions"]) + "</ul>")
    else:
        out.append('<p class="note">none</p>')
    out.append("<h3>Cautions</h3>")
    for c in doc["cautions"]:
        out.append(f'<div class="caution"><b>⚠ {e(c["hazard"])}</b><br>{e(c["text"])}</div>')
    out.append(
        '<div class="caution"><b>⚠ this report</b><br>This report supports, and does not replace, the vehicle maker\'s '
        "instructions, local codes and the judgement of a licensed installer. Work on the supply only with the "
        "battery disconnected.</div></section>"
    )
    return "".join(out)


# ---------------------------------------------------------------- public


def render(
    doc: dict[str, Any],
    record: dict[str, Any],
    parts: dict[str, Any],
    *,
    plots: list[dict[str, str]] | None = None,
    brief: bool = False,
) -> str:
    """The printable report as one HTML document.

    ``doc`` is :func:`coilstage.report.document.build`'s document, ``record`` is
    :func:`coilstage.report.record.build`'s block, ``parts`` is :func:`coilstage.report.parts.build`'s
    list; ``plots`` are ``{"title", "svg", "caption"}`` from :func:`make_plots` (None: none drawn);
    ``brief`` keeps the result and the action list only. A verdict that carries a ``suggestion``
    text shows it under its action."""
    digest = record["drawing"]["sha256"] or ""
    short = digest[:12] + "…" if digest else "(no file)"
    footer = f"coilstage {record['tool']['version']} · drawing SHA-256 {digest or '(no file)'}"
    title = record["drawing"].get("title") or doc["drawing"]["title"]
    body = [
        f'<section class="cover">{_titleblock(doc, record)}{_meta(doc, record)}{_caution_strip(doc, brief)}</section>',
        _actions(doc),
    ]
    if brief:
        body.append(
            '<p class="brief-note">Brief report: the result and the action list only. The full report adds the '
            "record block, the sign-off and the evidence.</p>"
        )
        body.append(
            "<section><h3>Cautions</h3>"
            + "".join(
                f'<div class="caution"><b>⚠ {e(c["hazard"])}</b><br>{e(c["text"])}</div>' for c in doc["cautions"]
            )
            + "</section>"
        )
        return page(f"{title} — coilstage (brief)", "\n".join(body), footer)
    body.append(f"<section>{_record(record)}{_signoff()}</section>")
    body.append(_corners(doc, short))
    body.append(_switching(doc, short))
    body.append(_heating(doc, short))
    body.append(_field(doc, short))
    body.append(_verdicts(doc, short))
    body.append(_parts(parts, short))
    if plots:
        body.append(_plots(plots, short))
    body.append(_closing(doc, short))
    return page(f"{title} — coilstage report", "\n".join(body), footer)


def make_plots(analysis: Any, max_points: int = 1500) -> list[dict[str, str]]:
    """The waveform, descent and field plots of an analysis as inline SVG (matplotlib; about 1 s).

    The waveforms are sampled with at most ``max_points`` points per scenario."""
    from coilstage.report import descent, field_plot, svgplot, waveforms

    plt = svgplot.pyplot()
    out = []
    a = analysis
    title = svgplot.literal(a.drawing.title)
    if a.switching is not None and a.switching.scenarios:
        t_end = max(sc.t_end for sc in a.switching.scenarios.values())
        step = max(t_end / max_points, 1e-6)
        fig = waveforms.figure(waveforms.series(a, step), title)
        out.append(
            {
                "title": "Switching waveforms",
                "svg": svgplot.svg_text(fig, "wave"),
                "caption": f"sampled every {duration(step)}; cold corner solid, hot corner dashed",
            }
        )
        plt.close(fig)
    if getattr(a, "descent", None) is not None:
        fig = descent.figure(a.descent, a.drawing, title)
        out.append({"title": "Heating over the duty", "svg": svgplot.svg_text(fig, "duty"), "caption": ""})
        plt.close(fig)
    fig = field_plot.figure(a, title) if a.field is not None else None
    if fig is not None:
        out.append({"title": "Braking field", "svg": svgplot.svg_text(fig, "field"), "caption": ""})
        plt.close(fig)
    return out
