"""The guard every renderer applies before it writes: drawing text stays text, no NaN or inf.

1. **Terminal safety.** Text that comes from a drawing (titles, ids, notes, any string) may hold
   terminal control characters: C0 and C1 controls (ESC sequences that recolour, move the cursor
   or retitle the window), bidirectional overrides that reorder what is shown (Unicode TR #36,
   CVE-2021-42574), zero-width and other format characters, line and paragraph separators.
   :func:`clean` replaces each with a visible escape (``\\x1b``, ``\\u202e``) so it is shown, never
   obeyed. The JSON report keeps the text exactly, with those characters written as ``\\uXXXX``
   escapes (:func:`json_safe`), which every JSON reader decodes back.
2. **No NaN or inf.** A non-finite figure on a report is a bug in coilstage, never a result.
   :func:`guard` finds every one (quantities, plain numbers, and the words "nan"/"inf" in computed
   notes). Under ``COILSTAGE_STRICT_FINITE=1`` (the test suite) it raises :class:`NonFiniteError`;
   otherwise it shows "n/a (not finite)" in its place and adds a NOT CHECKED verdict
   ``report.finite`` naming where it was, so nothing is silently dropped.
"""

from __future__ import annotations

import functools
import math
import os
import re
import unicodedata
from typing import Any

NOT_FINITE = "n/a (not finite)"
FINITE_RULE = "report.finite"

# quick test: anything outside printable ASCII plus newline/tab needs a closer look
_SUSPECT = re.compile(r"[^\x20-\x7e\n\t]")
# the characters clean() and json_safe() visit one by one (a report is mostly ASCII)
_NOT_PRINTABLE_ASCII = re.compile(r"[^\x20-\x7e]")
_ABOVE_ASCII = re.compile(r"[^\x00-\x7e]")
#: the letters of a non-finite word anywhere, boundaries or not (a cheap first test)
_NONFINITE_LETTERS = re.compile(r"nan|inf", re.IGNORECASE)
_NONFINITE_WORD = re.compile(r"(?<![A-Za-z0-9_])[+-]?(?:nan|inf(?:inity)?)(?![A-Za-z0-9_])", re.IGNORECASE)


class NonFiniteError(RuntimeError):
    """A NaN or inf on its way into a report (a bug); raised in strict mode only."""

    def __init__(self, where: list[str]) -> None:
        self.where = where
        super().__init__("not finite on the report at " + ", ".join(where))


@functools.lru_cache(maxsize=4096)
def _unsafe(ch: str) -> bool:
    cat = unicodedata.category(ch)
    return cat in ("Cc", "Cf", "Cs", "Zl", "Zp")


def _escape(ch: str) -> str:
    o = ord(ch)
    return f"\\x{o:02x}" if o < 0x100 else f"\\u{o:04x}" if o < 0x10000 else f"\\U{o:08x}"


def clean(text: Any, keep_newlines: bool = False) -> str:
    """``text`` with every control, format or separator character shown as a visible escape.

    Tabs become a space; newlines are kept with ``keep_newlines``, else escaped.

    >>> clean("stage\\x1b[31mRED")
    'stage\\\\x1b[31mRED'
    >>> clean("abc\\u202edef")
    'abc\\\\u202edef'
    >>> clean("[bold] 1½ mm² Ω")
    '[bold] 1½ mm² Ω'
    """
    s = str(text)
    if not _SUSPECT.search(s):
        return s.replace("\t", " ") if "\t" in s else (s if keep_newlines or "\n" not in s else s.replace("\n", "\\n"))

    def shown(m: re.Match[str]) -> str:
        ch = m.group()
        if ch == "\n" and keep_newlines:
            return ch
        if ch == "\t":
            return " "
        return _escape(ch) if _unsafe(ch) else ch

    return _NOT_PRINTABLE_ASCII.sub(shown, s)


def json_safe(text: str) -> str:
    """JSON text with C1 controls, format characters and separators as ``\\uXXXX`` escapes (C0 are
    escaped by :mod:`json` already). Valid only on the output of ``json.dumps``: such characters can
    only occur inside its strings, where an escape means the same character.

    Only the characters above ASCII are visited (a report is mostly ASCII, with a few thousand
    degree, ohm and arrow signs), each by a regular expression's callback."""
    if not _SUSPECT.search(text):
        return text
    return _ABOVE_ASCII.sub(_json_escape, text)


def _json_escape(m: re.Match[str]) -> str:
    ch = m.group()
    if not _unsafe(ch):
        return ch
    o = ord(ch)
    if o >= 0x10000:  # a JSON escape is UTF-16: a surrogate pair
        o -= 0x10000
        return f"\\u{0xD800 + (o >> 10):04x}\\u{0xDC00 + (o & 0x3FF):04x}"
    return f"\\u{o:04x}"


def strict() -> bool:
    """True where a non-finite figure must fail loudly (tests): ``COILSTAGE_STRICT_FINITE=1``."""
    return os.environ.get("COILSTAGE_STRICT_FINITE", "") not in ("", "0")


# keys whose strings come from the drawing (data, not computed text): never scanned for "nan"
_DATA_KEYS = {"title", "note", "path", "id", "subject", "stage", "coil", "name", "description", "code", "file"}
# keys whose strings are computed prose: scanned for a formatted nan/inf
_PROSE_KEYS = {"note", "text", "purpose", "clause", "reason", "limits_source"}


def _ids(doc: dict[str, Any]) -> list[str]:
    """Every id and subject in the document, longest first (masked before a prose scan)."""
    found: set[str] = set()

    def walk(x: Any, depth: int = 0) -> None:
        if depth > 60:
            return
        if isinstance(x, dict):
            for k, v in x.items():
                if k in ("id", "subject", "stage", "coil", "name") and isinstance(v, str):
                    found.add(v)
                walk(v, depth + 1)
        elif isinstance(x, list):
            for v in x:
                walk(v, depth + 1)

    walk(doc)
    found |= {str(doc.get("drawing", {}).get("title", "")), str(doc.get("drawing", {}).get("path", ""))}
    return sorted((s for s in found if s), key=len, reverse=True)


def guard(doc: dict[str, Any], for_json: bool = False) -> dict[str, Any]:
    """A copy of the report document fit to render (see the module docstring).

    ``for_json`` keeps strings exactly (the JSON writer escapes them) and writes a non-finite
    quantity as null; otherwise strings are :func:`clean` and a non-finite quantity keeps its unit
    with a ``None`` value, which :mod:`coilstage.report.fmt` shows as "n/a (not finite)".
    """
    bad: list[str] = []
    ids = _ids(doc)

    def prose(s: str, where: str) -> str:
        if not _NONFINITE_LETTERS.search(s):  # masking ids only removes text: no word can appear
            return s
        probe = s
        for i in ids:
            if i in probe:
                probe = probe.replace(i, " ")
        if _NONFINITE_WORD.search(probe):
            bad.append(where)
            parts = s
            # replace the words outside the ids only: rebuild from the probe positions is complex;
            # a plain substitution is enough when no id holds the word
            if not any(_NONFINITE_WORD.search(i) for i in ids):
                parts = _NONFINITE_WORD.sub(NOT_FINITE, s)
            return parts
        return s

    def walk(x: Any, where: str, key: str, depth: int) -> Any:
        if depth > 60:
            return None
        if isinstance(x, dict):
            if set(x) == {"value", "unit"} and isinstance(x.get("value"), int | float | type(None)):
                v = x["value"]
                if isinstance(v, float) and not math.isfinite(v):
                    bad.append(where)
                    return None if for_json else {"value": None, "unit": x["unit"]}
                return dict(x)
            return {k: walk(v, f"{where}.{k}" if where else str(k), str(k), depth + 1) for k, v in x.items()}
        if isinstance(x, list | tuple):
            return [walk(v, f"{where}[{i}]", key, depth + 1) for i, v in enumerate(x)]
        if isinstance(x, bool) or x is None or isinstance(x, int):
            return x
        if isinstance(x, float):
            if not math.isfinite(x):
                bad.append(where)
                return None
            return x
        if isinstance(x, str):
            s = x if key in _DATA_KEYS and key not in _PROSE_KEYS else prose(x, where)
            if key == "note" and where.startswith("drawing."):
                s = x
            return s if for_json else clean(s, keep_newlines=key in ("note", "text", "description"))
        return clean(str(x)) if not for_json else str(x)

    out = walk(doc, "", "", 0)
    if bad:
        if strict():
            raise NonFiniteError(bad)
        verdicts = out.setdefault("verdicts", [])
        for w in bad:
            verdicts.append(
                {
                    "rule": FINITE_RULE,
                    "subject": w,
                    "status": "not checked",
                    "value": None,
                    "limit": None,
                    "margin": None,
                    "clause": "coilstage's own guard: every figure on a report is finite",
                    "note": (
                        f"the figure at {w} came out not finite and is shown as {NOT_FINITE}; this is a bug in "
                        "coilstage: please report it with the drawing"
                    ),
                    "corner": "",
                }
            )
        summ = out.get("summary")
        if isinstance(summ, dict) and isinstance(summ.get("not_checked"), int):
            summ["not_checked"] += len(bad)
    return out
