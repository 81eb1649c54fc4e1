"""``coilstage diff OLD NEW``: what changed between two revisions of a drawing, and which verdicts moved.

Parts are matched by id (the battery, alternator, bus, each coil type and each harness element)
and compared value by value on their resolved values as the parts list shows them; verdicts are
matched by rule, subject and corner. A new failure is a FAIL in the new revision that was not a
FAIL in the old (or did not exist); a fixed failure the reverse. Margins that moved by more than
the threshold (in points of the limit, default 5) are listed too.

Exit code 1 when the new revision has a failure the old one did not; 2 for a drawing that cannot
be read or analysed; 0 otherwise.
"""

from __future__ import annotations

import argparse
import json
import sys
from pathlib import Path
from typing import Any

HELP = "what changed between two revisions of a drawing: parts, and the verdicts that moved"
FORMATS = ("text", "markdown", "json", "html")
DIFF_SCHEMA = "coilstage-diff-1"
DEFAULT_THRESHOLD = 0.05


def _key(v: dict) -> tuple[str, str, str]:
    return (v["rule"], v["subject"], v.get("corner") or "")


def _parts_index(parts: dict) -> dict[tuple[str, str], dict]:
    return {(p["section"], p["id"]): p for p in parts["parts"]}


def compare_parts(old: dict, new: dict) -> dict[str, list[dict]]:
    """Parts added, removed and changed (each change: label, old and new as shown)."""
    a, b = _parts_index(old), _parts_index(new)
    added = [{"id": k[1], "section": k[0], "kind": b[k]["kind"]} for k in b if k not in a]
    removed = [{"id": k[1], "section": k[0], "kind": a[k]["kind"]} for k in a if k not in b]
    changed = []
    for k in b:
        if k not in a:
            continue
        pa, pb = a[k], b[k]
        changes = []
        if pa["kind"] != pb["kind"]:
            changes.append({"key": "kind", "label": "kind", "old": pa["kind"], "new": pb["kind"]})
        if (pa["from"], pa["to"]) != (pb["from"], pb["to"]):
            changes.append(
                {
                    "key": "connection",
                    "label": "connected",
                    "old": f"{pa['from']} → {pa['to']}",
                    "new": f"{pb['from']} → {pb['to']}",
                }
            )
        va = {r["key"]: r for r in pa["values"]}
        vb = {r["key"]: r for r in pb["values"]}
        for key in list(va) + [x for x in vb if x not in va]:
            ra, rb = va.get(key), vb.get(key)
            sa = None if ra is None else ra["shown"]
            sb = None if rb is None else rb["shown"]
            oa = None if ra is None else ra["origin"]
            ob = None if rb is None else rb["origin"]
            if sa != sb or (oa == "default") != (ob == "default"):
                changes.append(
                    {
                        "key": key,
                        "label": (rb or ra)["label"],
                        "old": sa if sa is not None else "—",
                        "new": sb if sb is not None else "—",
                        "old_origin": oa,
                        "new_origin": ob,
                    }
                )
        if changes:
            changed.append({"id": k[1], "section": k[0], "kind": pb["kind"], "changes": changes})
    return {"added": added, "removed": removed, "changed": changed}


def compare_verdicts(old: list[dict], new: list[dict], threshold: float = DEFAULT_THRESHOLD) -> dict[str, list]:
    """Verdicts that moved between two reports' verdict lists (document dicts)."""
    a = {_key(v): v for v in old}
    b = {_key(v): v for v in new}

    def brief(v: dict | None) -> dict | None:
        if v is None:
            return None
        return {k: v.get(k) for k in ("status", "value", "limit", "margin", "note")}

    def entry(k, va, vb) -> dict:
        return {"rule": k[0], "subject": k[1], "corner": k[2], "old": brief(va), "new": brief(vb)}

    new_fail, fixed, other, margins, gone, appeared = [], [], [], [], [], []
    for k in list(a) + [x for x in b if x not in a]:
        va, vb = a.get(k), b.get(k)
        sa = va["status"] if va else None
        sb = vb["status"] if vb else None
        if sb == "fail" and sa != "fail":
            new_fail.append(entry(k, va, vb))
        elif sa == "fail" and sb != "fail":
            fixed.append(entry(k, va, vb))
        elif va is None:
            appeared.append(entry(k, va, vb))
        elif vb is None:
            gone.append(entry(k, va, vb))
        elif sa != sb:
            other.append(entry(k, va, vb))
        elif va.get("margin") is not None and vb.get("margin") is not None:
            if abs(vb["margin"] - va["margin"]) > threshold:
                margins.append(entry(k, va, vb))
    return {
        "new_failures": new_fail,
        "fixed_failures": fixed,
        "status_changed": other,
        "margins_changed": margins,
        "verdicts_added": appeared,
        "verdicts_removed": gone,
    }


def build(
    old_doc: dict,
    new_doc: dict,
    old_parts: dict,
    new_parts: dict,
    old_rec: dict,
    new_rec: dict,
    threshold: float = DEFAULT_THRESHOLD,
) -> dict[str, Any]:
    """The whole comparison as plain data (JSON-ready)."""
    v = compare_verdicts(old_doc["verdicts"], new_doc["verdicts"], threshold)
    return {
        "schema": DIFF_SCHEMA,
        "threshold": threshold,
        "old": {"record": old_rec, "summary": old_doc["summary"]},
        "new": {"record": new_rec, "summary": new_doc["summary"]},
        "parts": compare_parts(old_parts, new_parts),
        "verdicts": v,
        "result": "new failures" if v["new_failures"] else "no new failure",
    }


# ---------------------------------------------------------------- rendering


def _fig(x: dict | None) -> str:
    if x is None:
        return "—"
    from coilstage.report.html import si

    val = x.get("value")
    return si(val["value"], val["unit"]) if val else "—"


def _status(x: dict | None) -> str:
    return "absent" if x is None else x["status"].upper()


def _margin(x: dict | None) -> str:
    return "—" if x is None or x.get("margin") is None else f"{x['margin'] * 100:+.0f} %"


_TITLES = (
    ("new_failures", "New failures"),
    ("fixed_failures", "Fixed failures"),
    ("status_changed", "Other status changes"),
    ("margins_changed", "Margins that moved"),
    ("verdicts_added", "Verdicts only in the new revision"),
    ("verdicts_removed", "Verdicts only in the old revision"),
)


def _verdict_line(x: dict) -> str:
    subj = x["subject"] + (f" ({x['corner']} corner)" if x["corner"] else "")
    return (
        f"{x['rule']} · {subj}: {_status(x['old'])} → {_status(x['new'])}; value {_fig(x['old'])} → {_fig(x['new'])}; "
        f"margin {_margin(x['old'])} → {_margin(x['new'])}"
    )


def _head_lines(d: dict) -> list[str]:
    o, n = d["old"], d["new"]
    out = []
    for label, side in (("old", o), ("new", n)):
        r = side["record"]["drawing"]
        s = side["summary"]
        rev = f" revision {r['revision']}" if r.get("revision") else ""
        out.append(
            f"{label}: {r['path']}{rev} (SHA-256 {r['sha256']}): {s['result'].upper()}, {s['fail']} fail, "
            f"{s['warn']} warn, {s['pass']} pass, {s['not_checked']} not checked"
        )
    return out


def render_text(d: dict) -> str:
    out = ["coilstage diff", *_head_lines(d), f"result: {d['result']}", ""]
    p = d["parts"]
    out.append(f"Parts: {len(p['added'])} added, {len(p['removed'])} removed, {len(p['changed'])} changed")
    out += [f"  + {x['id']} ({x['kind']})" for x in p["added"]]
    out += [f"  - {x['id']} ({x['kind']})" for x in p["removed"]]
    for x in p["changed"]:
        out.append(f"  ~ {x['id']} ({x['kind']})")
        out += [f"      {c['label']}: {c['old']} → {c['new']}" for c in x["changes"]]
    out.append("")
    for key, title in _TITLES:
        rows = d["verdicts"][key]
        if key in ("verdicts_added", "verdicts_removed") and not rows:
            continue
        out.append(
            f"{title} ({len(rows)})"
            + (f", more than {d['threshold'] * 100:g} points" if key == "margins_changed" else "")
        )
        out += [f"  {_verdict_line(x)}" for x in rows] or ["  none"]
        out.append("")
    return "\n".join(out).rstrip() + "\n"


def _md(t: str) -> str:
    return t.replace("|", "\\|").replace("\n", " ")


def render_markdown(d: dict) -> str:
    out = ["# coilstage diff", ""]
    out += [f"- {_md(x)}" for x in _head_lines(d)]
    out += ["", f"**{d['result'].capitalize()}**", "", "## Parts", ""]
    p = d["parts"]
    if not (p["added"] or p["removed"] or p["changed"]):
        out.append("No part changed.")
    else:
        out += ["| part | change | old | new |", "|---|---|---|---|"]
        out += [f"| {_md(x['id'])} | added ({_md(x['kind'])}) | — | present |" for x in p["added"]]
        out += [f"| {_md(x['id'])} | removed ({_md(x['kind'])}) | present | — |" for x in p["removed"]]
        for x in p["changed"]:
            out += [f"| {_md(x['id'])} | {_md(c['label'])} | {_md(c['old'])} | {_md(c['new'])} |" for c in x["changes"]]
    out.append("")
    for key, title in _TITLES:
        rows = d["verdicts"][key]
        if key in ("verdicts_added", "verdicts_removed") and not rows:
            continue
        out += [f"## {title} ({len(rows)})", ""]
        if not rows:
            out += ["none", ""]
            continue
        out += ["| rule | subject | status | value | margin |", "|---|---|---|---|---|"]
        for x in rows:
            subj = x["subject"] + (f" ({x['corner']})" if x["corner"] else "")
            out.append(
                f"| `{_md(x['rule'])}` | {_md(subj)} | {_status(x['old'])} → {_status(x['new'])} | "
                f"{_fig(x['old'])} → {_fig(x['new'])} | {_margin(x['old'])} → {_margin(x['new'])} |"
            )
        out.append("")
    return "\n".join(out)


def render_json(d: dict) -> str:
    return json.dumps(d, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def render_html(d: dict) -> str:
    from coilstage.report import html as H

    new_rec = d["new"]["record"]
    short = (new_rec["drawing"]["sha256"] or "")[:12] + "…"
    body = [
        '<section class="cover"><div class="titleblock keep"><div class="what">'
        '<div class="brand">coilstage · drawing comparison</div>'
        f"<h1>{H.e(new_rec['drawing'].get('title') or '')}</h1></div>"
    ]
    bad = bool(d["verdicts"]["new_failures"])
    body.append(
        f'<div class="result r-{"fail" if bad else "pass"}"><div class="word">{"✗" if bad else "✓"} '
        f"{H.e(d['result'].upper())}</div></div></div>"
    )
    body.append(f'<p class="resultline"><b>Result: {H.e(d["result"])}</b></p>')
    body.append('<table class="meta">')
    for label, side in (("old", d["old"]), ("new", d["new"])):
        r, s = side["record"]["drawing"], side["summary"]
        body.append(
            f"<tr><th>{label}</th><td>{H.e(r['path'])}"
            + (f" · revision {H.e(r['revision'])}" if r.get("revision") else "")
            + f" · {H.status_badge(s['result'])} {s['fail']} fail, {s['warn']} warn, {s['pass']} pass, "
            f"{s['not_checked']} not checked<div class='hashfull'>SHA-256 {H.e(r['sha256'])}</div></td></tr>"
        )
    body.append(
        f"<tr><th>run</th><td class='mono'>{H.e(new_rec['run_at'])} · coilstage {H.e(new_rec['tool']['version'])} · "
        f"{H.e(new_rec['command'])}</td></tr>"
    )
    body.append("</table></section>")
    p = d["parts"]
    body.append(f"<section>{H._h2('Parts', short)}")
    rows = [[H.e(x["id"]), f"added ({H.e(x['kind'])})", "—", "present"] for x in p["added"]]
    rows += [[H.e(x["id"]), f"removed ({H.e(x['kind'])})", "present", "—"] for x in p["removed"]]
    for x in p["changed"]:
        rows += [[H.e(x["id"]), H.e(c["label"]), H.e(c["old"]), H.e(c["new"])] for c in x["changes"]]
    body.append(H._table(["part", "change", "old", "new"], rows) if rows else "<p>No part changed.</p>")
    body.append("</section>")
    for key, title in _TITLES:
        xs = d["verdicts"][key]
        if key in ("verdicts_added", "verdicts_removed") and not xs:
            continue
        body.append(f"<section class='keep'><h3>{H.e(title)} ({len(xs)})</h3>")
        if not xs:
            body.append('<p class="note">none</p></section>')
            continue
        rows = [
            [
                f"<code>{H.e(x['rule'])}</code>",
                H.e(x["subject"] + (f" ({x['corner']})" if x["corner"] else "")),
                (H.status_badge(x["old"]["status"]) if x["old"] else "absent")
                + " → "
                + (H.status_badge(x["new"]["status"]) if x["new"] else "absent"),
                f"{H.e(_fig(x['old']))} → {H.e(_fig(x['new']))}",
                f"{H.e(_margin(x['old']))} → {H.e(_margin(x['new']))}",
            ]
            for x in xs
        ]
        body.append(H._table(["rule", "subject", "status", "value", "margin"], rows) + "</section>")
    footer = f"coilstage diff · new drawing SHA-256 {new_rec['drawing']['sha256'] or ''}"
    return H.page("coilstage diff", "".join(body), footer)


RENDERERS = {"text": render_text, "markdown": render_markdown, "json": render_json, "html": render_html}


# ---------------------------------------------------------------- command


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.add_argument("old", metavar="OLD", help="the earlier revision of the drawing (TOML)")
    parser.add_argument("new", metavar="NEW", help="the later revision of the drawing (TOML)")
    parser.add_argument("--format", "-f", choices=FORMATS, default="text", help="output format (text)")
    parser.add_argument("--output", "-o", metavar="FILE", help="write the comparison to FILE instead of the terminal")
    parser.add_argument(
        "--threshold",
        default="5 %",
        metavar="POINTS",
        help='list margins that moved by more than this many points of their limit (default "5 %%")',
    )


def _threshold(text: str) -> float:
    t = text.strip().rstrip("%").strip()
    x = float(t)
    if not 0 <= x <= 1000:
        raise ValueError
    return x / 100


def analyse_one(path: Path, argv: list[str] | None = None) -> tuple[dict, dict, dict]:
    """(document, parts, record) of one drawing; raises the loader's and analysis' errors."""
    from coilstage import check, load_drawing
    from coilstage.report import document, parts, record

    drawing = load_drawing(path)
    analysis, verdicts = check(drawing)
    return document.build(analysis, verdicts), parts.build(drawing), record.build(drawing, argv=argv)


def run(args: argparse.Namespace) -> int:
    """Compare, write, and return the exit code (0, 1 new failures, 2 bad input)."""
    from coilstage.errors import AnalysisError, DataError, DrawingError

    try:
        threshold = _threshold(args.threshold)
    except ValueError:
        print(f'coilstage: --threshold: found "{args.threshold}"; expected points such as "5 %"', file=sys.stderr)
        return 2
    old_p, new_p = Path(args.old), Path(args.new)
    results = []
    bad = False
    for p in (old_p, new_p):
        try:
            results.append(analyse_one(p))
        except (DrawingError, DataError) as exc:
            bad = True
            print(f"coilstage: {exc.source}: cannot be used ({len(exc.problems)} problem(s)):", file=sys.stderr)
            for pr in exc.problems:
                print(f"  {pr}", file=sys.stderr)
        except AnalysisError as exc:
            bad = True
            print(f"coilstage: {exc.source}: {exc.reason}", file=sys.stderr)
    if bad:
        return 2
    (od, op, orec), (nd, np_, nrec) = results
    d = build(od, nd, op, np_, orec, nrec, threshold)
    text = RENDERERS[args.format](d)
    if args.output:
        from coilstage.outputs import write_text

        write_text(args.output, text, protected=[old_p, new_p])
        print(f"coilstage: diff written to {args.output} ({d['result']})", file=sys.stderr)
    else:
        sys.stdout.write(text)
    return 1 if d["verdicts"]["new_failures"] else 0


def main(argv: list[str] | None = None) -> int:
    """Stand-alone entry (``python -m coilstage.report.diff OLD NEW``) until the CLI registers it."""
    p = argparse.ArgumentParser(prog="coilstage diff", description=HELP)
    add_arguments(p)
    return run(p.parse_args(argv))


if __name__ == "__main__":
    raise SystemExit(main())
