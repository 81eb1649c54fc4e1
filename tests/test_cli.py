"""The command as a user runs it: exit codes, formats, files, no tracebacks."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

from coilstage.cli import main

from .conftest import COACH, FLAWED, ROOT, TRUCK


def run(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "coilstage", *args], capture_output=True, text=True, cwd=ROOT)


def test_demo_drawings_exit_codes():
    assert main(["check", str(COACH), "-f", "json", "-o", "/dev/null"]) == 0
    assert main(["check", str(TRUCK), "-f", "json", "-o", "/dev/null"]) == 0
    assert main(["check", str(FLAWED), "-f", "json", "-o", "/dev/null"]) == 1


def test_text_report_as_a_process():
    r = run("check", str(COACH))
    assert r.returncode == 0, r.stderr
    for words in (
        "COLD corner",
        "HOT corner",
        "LIMIT corner",
        "Verdicts",
        "Cautions",
        "RESULT:",
        "qualified installer",
        "short-circuit",
    ):
        assert words in r.stdout
    assert "Traceback" not in r.stdout + r.stderr


def test_bad_drawing_exits_2_without_traceback(tmp_path):
    bad = tmp_path / "bad.toml"
    bad.write_text(COACH.read_text().replace('rating = "100 A"', 'rating = "100 V"'))
    r = run("check", str(bad))
    assert r.returncode == 2
    assert "Traceback" not in r.stderr
    assert r.stderr.count("expected a current") == 4  # all four branch fuses, at once


def test_missing_file_and_usage_exit_2(tmp_path):
    assert run("check", str(tmp_path / "none.toml")).returncode == 2
    assert run("check").returncode == 2
    assert run("frobnicate").returncode == 2


def test_output_file_and_refusal_to_overwrite_the_drawing(tmp_path):
    out = tmp_path / "r.md"
    assert main(["check", str(COACH), "-f", "markdown", "-o", str(out)]) == 0
    text = out.read_text()
    assert text.startswith("# Touring coach") and "## Verdicts" in text and "## Cautions" in text
    copy = tmp_path / "d.toml"
    copy.write_text(COACH.read_text())
    assert main(["check", str(copy), "-o", str(copy)]) == 2
    assert copy.read_text() == COACH.read_text()


def test_json_matches_documented_schema(tmp_path):
    jsonschema = pytest.importorskip("jsonschema")
    schema = json.loads((ROOT / "docs" / "report-schema.json").read_text())
    for drawing in (COACH, TRUCK, FLAWED):
        out = tmp_path / "r.json"
        main(["check", str(drawing), "-f", "json", "-o", str(out)])
        doc = json.loads(out.read_text())
        jsonschema.validate(doc, schema)
        assert doc["schema_version"] == "1.5"
        assert {"record", "parts", "actions"} <= set(doc)
        assert all(v["clause"] and v["rule"] for v in doc["verdicts"])


def test_tables_and_rules_listings():
    r = run("tables")
    assert r.returncode == 0 and "33 CFR 183.425" in r.stdout and "IEC 60228" in r.stdout
    r = run("rules")
    assert r.returncode == 0 and "fuse.breaking_capacity" in r.stdout
    assert run("--version").stdout.startswith("coilstage ")


def test_console_script_is_declared():
    text = (ROOT / "pyproject.toml").read_text()
    assert 'coilstage = "coilstage.cli:main"' in text
    assert Path(ROOT / "coilstage" / "__main__.py").exists()
