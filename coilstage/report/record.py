"""The record block: what an inspector needs to file a report and find it again.

When the check ran (UTC, ISO 8601), which coilstage (version, and the source revision when it runs
from a git checkout), the command line, and the SHA-256 of the drawing and of every table the run
read, each table with its title, standard and status. With the drawing's own metadata (revision,
author, vehicle, note) it says exactly which drawing, which data and which program made a report.

The block is plain data (JSON-ready); :func:`lines` gives it as label/value pairs for any renderer.
"""

from __future__ import annotations

import hashlib
import os
import shlex
import subprocess
import sys
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

RECORD_VERSION = "1"


def sha256_file(path: str | Path) -> str:
    """SHA-256 of a file's bytes, as 64 lower-case hex digits (FIPS 180-4, via hashlib)."""
    h = hashlib.sha256()
    with Path(path).open("rb") as fh:
        for block in iter(lambda: fh.read(1 << 16), b""):
            h.update(block)
    return h.hexdigest()


def utc_now() -> datetime:
    return datetime.now(UTC)


def iso_utc(t: datetime) -> str:
    """``2026-12-02T08:15:03Z``: ISO 8601, UTC, whole seconds."""
    if t.tzinfo is None:
        raise ValueError("a run time must carry its time zone")
    return t.astimezone(UTC).replace(microsecond=0).isoformat().replace("+00:00", "Z")


def source_revision() -> dict[str, Any] | None:
    """The git commit of the source tree coilstage runs from, or None when it is not a checkout
    (an installed wheel) or git cannot be asked. ``modified`` is True when tracked files differ from
    that commit, so the revision alone does not describe the code that ran."""
    root = Path(__file__).resolve().parents[2]
    if not (root / ".git").exists():
        return None
    try:
        rev = subprocess.run(
            ["git", "-C", str(root), "rev-parse", "HEAD"], capture_output=True, text=True, timeout=5, check=True
        ).stdout.strip()
        status = subprocess.run(
            ["git", "-C", str(root), "status", "--porcelain", "--untracked-files=no", "--", "coilstage"],
            capture_output=True,
            text=True,
            timeout=5,
            check=True,
        ).stdout
    except (OSError, subprocess.SubprocessError):
        return None
    if len(rev) != 40:
        return None
    return {"commit": rev, "modified": bool(status.strip())}


def command_line(argv: list[str] | None = None) -> str:
    """The command as typed, quoted for a POSIX shell; the program as ``coilstage``."""
    args = list(sys.argv if argv is None else argv)
    if not args:
        return "coilstage"
    prog = os.path.basename(args[0])
    if prog in ("__main__.py", "-m", "-c") or prog.startswith("python"):
        prog = "coilstage"
    return shlex.join([prog if prog.endswith("coilstage") else "coilstage", *args[1:]])


def _get(entry: Any, *names: str, default: Any = None) -> Any:
    for n in names:
        if isinstance(entry, dict) and n in entry:
            return entry[n]
        if hasattr(entry, n):
            return getattr(entry, n)
    return default


def _table_entry(entry: Any) -> dict[str, Any]:
    path = _get(entry, "path", "file")
    digest = _get(entry, "sha256", "hash")
    if digest is None and path is not None and Path(path).is_file():
        digest = sha256_file(path)
    origin = _get(entry, "origin", "source_kind")
    if origin is None:
        shipped = _get(entry, "shipped")
        origin = None if shipped is None else ("shipped" if shipped else "user")
    return {
        "file": Path(path).name if path else "",
        "path": str(path) if path else "",
        "sha256": digest,
        "title": _get(entry, "title", default=""),
        "standard": _get(entry, "standard", default=""),
        "status": _get(entry, "status", default=""),
        "origin": origin or "",
    }


def tables_read() -> tuple[list[dict[str, Any]], str]:
    """Every table file this run read, and how that list was found.

    ``coilstage.tables.used_tables()`` lists the files the run actually read (listed shipped first,
    then the user's, each by path). Where that function
    is missing the list falls back to every shipped table (each hashed) and says so: a superset,
    never a guess that leaves one out."""
    from coilstage import tables

    used = getattr(tables, "used_tables", None)
    if callable(used):
        # by origin and file, not in the order first read: the record of a drawing stays the same
        # when the analysis reads its tables in another order
        rows = sorted(used(), key=lambda e: (e.origin != "shipped", str(e.path)))
        return [_table_entry(e) for e in rows], "every table file this run read"
    from importlib import resources

    out = []
    for row in tables.list_tables():
        path = Path(str(resources.files("coilstage.data").joinpath(row["file"])))
        out.append(
            _table_entry(
                {
                    "path": path,
                    "title": row["title"],
                    "standard": row["standard"],
                    "status": row["status"],
                    "origin": "shipped",
                }
            )
        )
    return out, "every shipped table (this version cannot tell which were read); user tables not listed"


def drawing_metadata(drawing: Any) -> dict[str, Any]:
    """Title, revision, author, vehicle and note of a drawing (None where the drawing gives none)."""

    def text(name: str) -> str | None:
        v = getattr(drawing, name, None)
        if v in (None, ""):
            meta = getattr(drawing, "info", None) or getattr(drawing, "metadata", None)
            v = _get(meta, name) if meta is not None else None
        return str(v) if v not in (None, "") else None

    return {k: text(k) for k in ("title", "revision", "author", "vehicle", "note")}


def build(
    drawing: Any,
    *,
    argv: list[str] | None = None,
    now: datetime | None = None,
    tables: list[Any] | None = None,
    revision: dict[str, Any] | bool | None = True,
) -> dict[str, Any]:
    """The record block of one run on ``drawing`` (a loaded Drawing; its ``path`` is hashed).

    ``argv`` defaults to ``sys.argv``, ``now`` to the present moment, ``tables`` to what
    :func:`tables_read` finds; ``revision=True`` asks git for the source revision (None or a dict
    to give it, e.g. in tests)."""
    from coilstage import __version__

    path = Path(drawing.path)
    digest = sha256_file(path) if path.is_file() else None
    if tables is None:
        listed, how = tables_read()
    else:
        listed, how = [_table_entry(t) for t in tables], "as given"
    return {
        "record_version": RECORD_VERSION,
        "run_at": iso_utc(now or utc_now()),
        "tool": {
            "name": "coilstage",
            "version": __version__,
            "source_revision": source_revision() if revision is True else (revision or None),
        },
        "command": command_line(argv),
        "drawing": {
            **drawing_metadata(drawing),
            "path": str(path),
            "sha256": digest,
        },
        "tables": listed,
        "tables_listed": how,
    }


def revision_text(rec: dict[str, Any]) -> str:
    rev = rec["tool"].get("source_revision")
    if not rev:
        return "not a source checkout"
    return rev["commit"] + (" (with local changes)" if rev.get("modified") else "")


def lines(rec: dict[str, Any]) -> list[tuple[str, str]]:
    """The record as (label, value) pairs in reading order (tables one pair each)."""
    d = rec["drawing"]
    out = [
        ("run at (UTC)", rec["run_at"]),
        ("coilstage", rec["tool"]["version"]),
        ("source revision", revision_text(rec)),
        ("command", rec["command"]),
        ("drawing file", d["path"]),
        ("drawing SHA-256", d["sha256"] or "(no file)"),
    ]
    for t in rec["tables"]:
        out.append(
            (
                f"table {t['file']} ({t['origin']})",
                f"SHA-256 {t['sha256']} · {t['title']} · {t['standard']} · {t['status']}",
            )
        )
    return out
