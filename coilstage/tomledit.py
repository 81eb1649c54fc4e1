"""Edit a drawing's TOML text in place: change, add or remove one key of a table, keeping every other
character (comments, blank lines, order, quoting) as the user wrote it.

Only what a drawing needs: top-level tables (``[supply]``), arrays of tables (``[[harness]]``) and their
sub-tables (``[harness.suppression]`` belongs to the last ``[[harness]]``), with ``key = value`` lines whose
value may be a string, number, boolean, inline table or array (an array or triple-quoted string may span
lines). Dotted keys are kept as written and looked up by their full text.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any


class TomlEditError(ValueError):
    """The text has a shape this editor does not handle (it never guesses)."""


@dataclass
class Entry:
    key: str
    value_start: int  # offset of the value's first character
    value_end: int  # offset just past the value
    line_start: int  # offset of the line holding the key
    line_end: int  # offset just past the line's newline (after any trailing comment)


@dataclass
class Block:
    name: str  # table name as written, "" for the top of the file
    array: bool  # [[name]]
    index: int  # position among the arrays of this name (0 for plain tables)
    parent_index: int | None  # for [harness.x]: the [[harness]] it belongs to
    header_end: int  # offset just past the header line
    entries: dict[str, Entry] = field(default_factory=dict)


def _skip_ws(t: str, i: int) -> int:
    while i < len(t) and t[i] in " \t":
        i += 1
    return i


def _eol(t: str, i: int) -> int:
    j = t.find("\n", i)
    return len(t) if j < 0 else j + 1


def _string_end(t: str, i: int) -> int:
    """Offset just past the string starting at ``t[i]``."""
    q = t[i]
    if t.startswith(q * 3, i):
        j = t.find(q * 3, i + 3)
        if j < 0:
            raise TomlEditError(f"unterminated multi-line string at offset {i}")
        while t.startswith(q, j + 3):  # up to two quotes may close a multi-line string
            j += 1
        return j + 3
    j = i + 1
    while j < len(t):
        c = t[j]
        if c == "\\" and q == '"':
            j += 2
            continue
        if c == q:
            return j + 1
        if c == "\n":
            break
        j += 1
    raise TomlEditError(f"unterminated string at offset {i}")


def _value_end(t: str, i: int) -> int:
    """Offset just past the TOML value starting at ``t[i]``."""
    if i >= len(t):
        raise TomlEditError("a key without a value at the end of the text")
    c = t[i]
    if c in "\"'":
        return _string_end(t, i)
    if c in "[{":
        close = {"[": "]", "{": "}"}
        stack = [close[c]]
        j = i + 1
        while j < len(t):
            ch = t[j]
            if ch in "\"'":
                j = _string_end(t, j)
                continue
            if ch == "#":
                j = _eol(t, j)
                continue
            if ch in "[{":
                stack.append(close[ch])
            elif ch in "]}":
                if not stack or ch != stack[-1]:
                    raise TomlEditError(f"unbalanced bracket at offset {j}")
                stack.pop()
                if not stack:
                    return j + 1
            j += 1
        raise TomlEditError(f"unterminated array or inline table at offset {i}")
    j = i
    while j < len(t) and t[j] not in " \t\r\n#,":
        j += 1
    return j


def scan(text: str) -> list[Block]:
    """The tables of ``text`` in order, each with its key spans."""
    blocks = [Block("", False, 0, None, 0)]
    counts: dict[str, int] = {}
    i = 0
    n = len(text)
    while i < n:
        j = _skip_ws(text, i)
        if j >= n:
            break
        c = text[j]
        if c in "\r\n":
            i = _eol(text, j)
            continue
        if c == "#":
            i = _eol(text, j)
            continue
        if c == "[":
            array = text.startswith("[[", j)
            close = text.find("]]" if array else "]", j)
            if close < 0:
                raise TomlEditError(f"unterminated table header at offset {j}")
            name = text[j + (2 if array else 1) : close].strip()
            end = _eol(text, close)
            if array:
                idx = counts.get(name, 0)
                counts[name] = idx + 1
                blocks.append(Block(name, True, idx, None, end))
            else:
                root = name.split(".", 1)[0]
                parent = counts[root] - 1 if "." in name and root in counts else None
                blocks.append(Block(name, False, 0, parent, end))
            i = end
            continue
        eq = text.find("=", j)
        if eq < 0 or "\n" in text[j:eq]:
            raise TomlEditError(f"a line that is neither a table header nor key = value at offset {j}")
        key = text[j:eq].strip()
        vs = _skip_ws(text, eq + 1)
        ve = _value_end(text, vs)
        le = _eol(text, ve)
        blocks[-1].entries[key] = Entry(key, vs, ve, i, le)
        i = le
    return blocks


def format_value(value: Any) -> str:
    """A Python value as TOML text (str, bool, int, float, dict as an inline table)."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if not math.isfinite(value):
            raise TomlEditError(f"no TOML text for {value!r}")
        return repr(value)
    if isinstance(value, str):
        return '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'
    if isinstance(value, dict):
        return "{ " + ", ".join(f"{k} = {format_value(v)}" for k, v in value.items()) + " }"
    if isinstance(value, list | tuple):
        return "[" + ", ".join(format_value(v) for v in value) + "]"
    raise TomlEditError(f"no TOML text for {value!r}")


class TomlText:
    """A drawing's text with edits by (array name, index, key)."""

    def __init__(self, text: str) -> None:
        self.text = text
        self._blocks = scan(text)

    def _block(self, name: str, index: int) -> Block:
        for b in self._blocks:
            if b.name == name and (b.index == index or not b.array):
                return b
        raise TomlEditError(f"no table {name} number {index}")

    def _sub(self, name: str, index: int, key: str) -> Block | None:
        for b in self._blocks:
            if b.name == f"{name}.{key}" and b.parent_index == index:
                return b
        return None

    def count(self, name: str) -> int:
        return sum(1 for b in self._blocks if b.name == name and b.array)

    def get(self, name: str, index: int, key: str) -> str | None:
        """The raw text of a key's value, or None where the key is absent."""
        e = self._block(name, index).entries.get(key)
        return None if e is None else self.text[e.value_start : e.value_end]

    def keys(self, name: str, index: int) -> list[str]:
        return list(self._block(name, index).entries)

    def set(self, name: str, index: int, key: str, value_text: str) -> None:
        """Replace the value of ``key`` (keeping the line's comment), or add ``key = value`` after the
        table's last key."""
        if self._sub(name, index, key) is not None:
            raise TomlEditError(f"{name}[{index}].{key} is written as a sub-table; edit it by hand")
        b = self._block(name, index)
        e = b.entries.get(key)
        if e is not None:
            self.text = self.text[: e.value_start] + value_text + self.text[e.value_end :]
            if not self._shifted(e, len(value_text)):
                self._blocks = scan(self.text)
        else:
            at = max((x.line_end for x in b.entries.values()), default=b.header_end)
            prefix = "" if at == 0 or self.text[at - 1] == "\n" else "\n"
            self.text = self.text[:at] + f"{prefix}{key} = {value_text}\n" + self.text[at:]
            self._blocks = scan(self.text)

    def _shifted(self, e: Entry, length: int) -> bool:
        """After the value of ``e`` was replaced by ``length`` characters: the tables as :func:`scan`
        would find them, by moving every offset past the old value (the text before it is unchanged
        and the text after it only moved, so the scan would read the same entries there), where the
        new value ends where the scan would end it; False (nothing changed) where it does not."""
        end = e.value_start + length
        # (an empty value is no TOML value: the scan would skip the blanks after it)
        if length == 0 or _value_end(self.text, e.value_start) != end:
            return False
        delta = end - e.value_end
        old_end = e.value_end

        def moved(x: int) -> int:
            return x + delta if x >= old_end else x

        for b in self._blocks:
            b.header_end = moved(b.header_end)
            for k, x in b.entries.items():
                b.entries[k] = (
                    Entry(k, x.value_start, end, x.line_start, x.line_end + delta)
                    if x is e
                    else Entry(k, moved(x.value_start), moved(x.value_end), moved(x.line_start), moved(x.line_end))
                )
        return True

    def delete(self, name: str, index: int, key: str) -> None:
        """Remove the line of ``key`` (with its trailing comment); nothing where it is absent."""
        b = self._block(name, index)
        e = b.entries.get(key)
        if e is None:
            return
        start = self.text.rfind("\n", 0, e.value_start) + 1
        self.text = self.text[:start] + self.text[e.line_end :]
        self._blocks = scan(self.text)
