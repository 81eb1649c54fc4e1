"""The record block: hashes against hashlib, the run time, the command line, the source revision.

Reference for every hash: Python's hashlib (FIPS 180-4 SHA-256), computed here on the file bytes.
"""

from __future__ import annotations

import hashlib
import re
import shutil
import subprocess
from datetime import UTC, datetime, timedelta, timezone
from pathlib import Path
from types import SimpleNamespace

import pytest

from coilstage import check, load_drawing, tables
from coilstage.report import record

from .conftest import FLAWED, TRUCK


def _hash(p: Path) -> str:
    return hashlib.sha256(p.read_bytes()).hexdigest()


def test_drawing_hash_is_sha256_of_the_file(tmp_path):
    p = tmp_path / "d.toml"
    shutil.copy(FLAWED, p)
    rec = record.build(load_drawing(p), argv=["coilstage", "check", str(p)], revision=None)
    assert rec["drawing"]["sha256"] == _hash(p)
    assert rec["drawing"]["path"] == str(p)
    # the same file with one byte changed (a comment, so it still loads) hashes differently
    text = p.read_bytes()
    p.write_bytes(text.replace(b"# ", b"#-", 1))
    rec2 = record.build(load_drawing(p), revision=None)
    assert rec2["drawing"]["sha256"] == _hash(p) != rec["drawing"]["sha256"]


def test_run_time_is_utc_iso8601():
    t = datetime(2026, 3, 4, 7, 8, 9, 654321, tzinfo=timezone(timedelta(hours=2)))
    rec = record.build(load_drawing(TRUCK), now=t, revision=None)
    assert rec["run_at"] == "2026-03-04T05:08:09Z"
    now = record.build(load_drawing(TRUCK), revision=None)["run_at"]
    assert re.fullmatch(r"\d{4}-\d\d-\d\dT\d\d:\d\d:\d\dZ", now)
    got = datetime.strptime(now, "%Y-%m-%dT%H:%M:%SZ").replace(tzinfo=UTC)
    assert abs((got - datetime.now(UTC)).total_seconds()) < 60
    with pytest.raises(ValueError):
        record.iso_utc(datetime(2026, 1, 1))  # a naive time has no zone: refused, not guessed


def test_command_line_is_quoted_for_a_shell():
    assert record.command_line(["/usr/local/bin/coilstage", "check", "my drawing.toml", "-f", "html"]) == (
        "coilstage check 'my drawing.toml' -f html"
    )
    assert record.command_line(["/x/coilstage/__main__.py", "diff", "a", "b"]) == "coilstage diff a b"


def test_every_table_listed_is_hashed_from_its_file():
    d = load_drawing(FLAWED)
    check(d)
    rec = record.build(d, revision=None)
    assert rec["tables"], "a check reads tables; the record must list them"
    for t in rec["tables"]:
        assert t["path"] and Path(t["path"]).is_file()
        assert t["sha256"] == _hash(Path(t["path"])), t["file"]
        assert t["title"] and t["standard"] and t["status"]
        assert t["origin"] in ("shipped", "user")
    names = {t["file"] for t in rec["tables"]}
    # the fuse and conductor tables are certainly read by a check of a drawing with fuses and cables
    assert {"fuses_iso8820.toml", "conductors_iso6722-1.toml"} <= names


def test_one_byte_in_a_table_changes_its_hash(tmp_path):
    src = Path(str(__import__("importlib.resources").resources.files("coilstage.data"))) / "conductors_iec60228.toml"
    p = tmp_path / "my-cables.toml"
    shutil.copy(src, p)
    entry = {"path": p, "title": "t", "standard": "s", "status": "published", "origin": "user"}
    h1 = record.build(load_drawing(TRUCK), tables=[entry], revision=None)["tables"][0]["sha256"]
    b = bytearray(p.read_bytes())
    b[-2] = ord("x") if b[-2] != ord("x") else ord("y")
    p.write_bytes(bytes(b))
    h2 = record.build(load_drawing(TRUCK), tables=[entry], revision=None)["tables"][0]["sha256"]
    assert h1 != h2 and h2 == _hash(p)


@pytest.mark.skipif(not hasattr(tables, "used_tables"), reason="tables.used_tables() is not in this version yet")
def test_a_user_table_the_drawing_names_is_recorded(tmp_path):
    src = Path(str(__import__("importlib.resources").resources.files("coilstage.data"))) / "conductors_iso6722-1.toml"
    shutil.copy(src, tmp_path / "my-cables.toml")
    text = FLAWED.read_text(encoding="utf-8").replace(
        'size = "10 mm^2"', 'size = "10 mm^2"\nconductor_table = "my-cables.toml"', 1
    )
    (tmp_path / "d.toml").write_text(text, encoding="utf-8")
    d = load_drawing(tmp_path / "d.toml")
    check(d)
    rec = record.build(d, revision=None)
    mine = [t for t in rec["tables"] if t["file"] == "my-cables.toml"]
    assert len(mine) == 1 and mine[0]["origin"] == "user"
    assert mine[0]["sha256"] == _hash(tmp_path / "my-cables.toml")


def test_source_revision_is_the_checkout_head():
    root = Path(record.__file__).resolve().parents[2]
    if not (root / ".git").exists() or shutil.which("git") is None:
        pytest.skip("not running from a git checkout")
    head = subprocess.run(["git", "-C", str(root), "rev-parse", "HEAD"], capture_output=True, text=True).stdout.strip()
    rev = record.source_revision()
    assert rev is not None and rev["commit"] == head and isinstance(rev["modified"], bool)


def test_drawing_metadata_read_from_the_drawing():
    stub = SimpleNamespace(title="T", revision="C", author="A. Fitter", vehicle="fleet no. 12", note="")
    assert record.drawing_metadata(stub) == {
        "title": "T",
        "revision": "C",
        "author": "A. Fitter",
        "vehicle": "fleet no. 12",
        "note": None,
    }


def test_drawing_metadata_from_the_info_block():
    info = SimpleNamespace(revision="D", author="B. Inspector", vehicle="VIN-INVENTED-0001", note="after repair")
    stub = SimpleNamespace(title="T", note="", info=info)
    m = record.drawing_metadata(stub)
    assert (m["revision"], m["author"], m["vehicle"], m["note"]) == (
        "D",
        "B. Inspector",
        "VIN-INVENTED-0001",
        "after repair",
    )


def test_lines_name_every_table():
    d = load_drawing(TRUCK)
    rec = record.build(d, revision={"commit": "0" * 40, "modified": True})
    labels = [k for k, _ in record.lines(rec)]
    assert labels[:6] == ["run at (UTC)", "coilstage", "source revision", "command", "drawing file", "drawing SHA-256"]
    assert len(labels) == 6 + len(rec["tables"])
    assert dict(record.lines(rec))["source revision"] == "0" * 40 + " (with local changes)"


def test_the_table_list_does_not_depend_on_the_order_tables_were_read(monkeypatch):
    """A refactor that reads the same tables in another order leaves the record as it was: shipped
    tables first, then the user's, each by path."""
    from coilstage import tables
    from coilstage.report.record import tables_read

    use = [
        tables.TableUse("/x/user_b.toml", "1" * 64, "B", "", "", "user"),
        tables.TableUse("/s/b.toml", "2" * 64, "b", "", "", "shipped"),
        tables.TableUse("/s/a.toml", "3" * 64, "a", "", "", "shipped"),
    ]
    monkeypatch.setattr(tables, "used_tables", lambda: list(use))
    first, _ = tables_read()
    monkeypatch.setattr(tables, "used_tables", lambda: list(reversed(use)))
    second, _ = tables_read()
    assert first == second
    assert [t["sha256"][0] for t in first] == ["3", "2", "1"]
