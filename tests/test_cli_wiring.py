"""The commands other modules provide, reached through ``coilstage.cli.main``: exit codes and files.

Figures checked here come from outside the project where there are any: file hashes against
:mod:`hashlib`, the HTML against :mod:`html.parser` of the standard library, CSV against :mod:`csv`.
"""

from __future__ import annotations

import csv
import hashlib
import json
from html.parser import HTMLParser
from pathlib import Path

import pytest

from coilstage import cli, tables
from coilstage.cli import main
from coilstage.errors import DataError, Problem

from .conftest import COACH, CONFIGS, FLAWED, TRUCK, drawing_text


class _Tags(HTMLParser):
    def __init__(self) -> None:
        super().__init__()
        self.tags: list[str] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)

    def handle_data(self, data):
        self.text.append(data)


def _parsed(path: Path) -> _Tags:
    p = _Tags()
    p.feed(path.read_text(encoding="utf-8"))
    return p


def test_every_plug_in_command_is_registered_and_has_help(capsys):
    assert set(cli.COMMAND_MODULES) == {"size", "diff", "import", "export", "init", "sweep"}
    with pytest.raises(SystemExit) as exc:
        main(["--help"])
    assert exc.value.code == 0
    out = capsys.readouterr().out
    for name in ("check", "size", "diff", "import", "export", "init", "sweep", "rules", "tables"):
        assert name in out
    assert "folder" in out and "file" in out  # the one meaning of -o, said in --help


def test_html_report_is_one_file_with_the_drawing_hash(tmp_path):
    out = tmp_path / "r.html"
    assert main(["check", str(COACH), "-f", "html", "-o", str(out)]) == 0
    digest = hashlib.sha256(COACH.read_bytes()).hexdigest()  # hashlib, not the project's own hashing
    text = out.read_text(encoding="utf-8")
    assert digest in text
    p = _parsed(out)
    assert "svg" in p.tags  # plots inline
    assert "script" not in p.tags
    assert "http://" not in text.replace("http://www.w3.org", "") and "https://" not in text


def test_html_brief_leaves_out_the_evidence(tmp_path):
    full, brief = tmp_path / "f.html", tmp_path / "b.html"
    assert main(["check", str(FLAWED), "-f", "html", "-o", str(full)]) == 1
    assert main(["check", str(FLAWED), "-f", "html", "--brief", "-o", str(brief)]) == 1
    assert "svg" not in _parsed(brief).tags
    assert brief.stat().st_size < full.stat().st_size / 3
    assert "FAIL" in "".join(_parsed(brief).text)


def test_fleet_mode_through_check(tmp_path, capsys):
    code = main(["check", str(CONFIGS), "--summary", "--summary-format", "csv", "-j", "1"])
    assert code == 1  # the flawed demo fails
    rows = list(csv.DictReader(capsys.readouterr().out.splitlines()))
    names = {Path(r["drawing"]).name for r in rows}
    assert {COACH.name, TRUCK.name, FLAWED.name} <= names
    assert "wirelist-example.base.toml" not in names
    folder = tmp_path / "reports"
    assert main(["check", str(COACH), str(TRUCK), "--summary", "-f", "json", "-o", str(folder), "-j", "1"]) == 0
    assert json.loads((folder / "coach-24v-4stage.json").read_text())["summary"]["fail"] == 0
    assert json.loads((folder / "coilstage-summary.json").read_text())


def test_several_drawings_without_summary_is_a_usage_error(capsys):
    assert main(["check", str(COACH), str(TRUCK)]) == 2
    assert "--summary" in capsys.readouterr().err
    assert main(["check", str(CONFIGS), "--summary", "-j", "0"]) == 2


def test_init_size_diff_export_import_round(tmp_path):
    start = tmp_path / "start.toml"
    assert main(["init", "-o", str(start)]) == 0
    assert main(["check", str(start), "-f", "json", "-o", str(tmp_path / "s.json")]) in (0, 1)
    assert main(["init", "-o", str(start)]) == 2  # never replaced without --force
    new = tmp_path / "new.toml"
    before = FLAWED.read_bytes()
    code = main(["size", str(FLAWED), "-o", str(new)])
    assert code in (0, 1) and new.is_file()
    assert FLAWED.read_bytes() == before  # the drawing is never modified
    out = tmp_path / "d.json"
    assert main(["diff", str(FLAWED), str(new), "-f", "json", "-o", str(out)]) in (0, 1)
    d = json.loads(out.read_text())
    assert d["verdicts"]["new_failures"] == [] or code == 1
    # a drawing against itself: nothing moved, exit 0
    assert main(["diff", str(COACH), str(COACH), "-f", "markdown", "-o", str(tmp_path / "same.md")]) == 0
    wl = tmp_path / "w.csv"
    assert main(["export", str(COACH), "-o", str(wl)]) == 0
    assert list(csv.reader(wl.read_text(encoding="utf-8").splitlines()))
    assert main(["import", str(CONFIGS / "wirelist-example.csv"), "-o", str(tmp_path / "imp.toml")]) in (0, 2)


def test_diff_reports_a_new_failure_with_exit_1(tmp_path):
    assert main(["diff", str(COACH), str(FLAWED), "-o", str(tmp_path / "d.txt")]) == 1


def test_waveforms_refuses_a_huge_request_before_writing(tmp_path, capsys):
    out = tmp_path / "w"
    assert main(["waveforms", str(COACH), "--step", "1 us", "-o", str(out)]) == 2
    assert "time points" in capsys.readouterr().err
    assert not out.exists() or not any(out.iterdir())


def test_descent_refuses_a_profile_over_max_duty(tmp_path, capsys):
    d = tmp_path / "d.toml"
    d.write_text(drawing_text(extra='[limits]\nmax_duty = "15 min"\n'), encoding="utf-8")
    out = tmp_path / "out"
    assert main(["descent", str(d), "--profile", "continuous", "-o", str(out)]) == 2
    err = capsys.readouterr().err
    assert "7200 s" in err and "max_duty" in err  # the shipped continuous profile is 2 h = 7200 s
    assert not out.exists() or not any(out.iterdir())


def test_a_table_error_outside_the_loader_is_exit_2(tmp_path, monkeypatch, capsys):
    def broken():
        raise DataError("duty_profiles.toml", [Problem("profiles.endurance", "x", "a list of steps")])

    monkeypatch.setattr(tables, "duty_profiles", broken)
    assert main(["descent", str(COACH), "--profile", "endurance", "-o", str(tmp_path / "o")]) == 2
    err = capsys.readouterr().err
    assert "duty_profiles.toml" in err and "Traceback" not in err


def test_rules_name_their_physics(capsys):
    from coilstage.analysis.laws import rule_laws
    from coilstage.checks import RULES

    assert main(["rules"]) == 0
    out = capsys.readouterr().out
    with_laws = [r for r in RULES if getattr(r, "laws", ())]
    assert with_laws
    for r in with_laws:
        for law in rule_laws(r.laws):
            assert law.name in out


def test_parts_option_gives_the_run_a_library(tmp_path):
    """--parts DIR resolves bare part names in a drawing that names no library itself;
    without it the same drawing is bad input (exit 2) with the reference named."""
    from .conftest import coach_with_parts

    drawing = tmp_path / "coach-parts.toml"
    drawing.write_text(coach_with_parts().replace('parts = "parts/workshop-parts.toml"', ""), encoding="utf-8")
    out = tmp_path / "r.json"
    assert main(["check", str(drawing), "-f", "json", "-o", str(out)]) == 2
    assert not out.exists()
    assert main(["check", str(drawing), "--parts", str(CONFIGS / "parts"), "-f", "json", "-o", str(out)]) == 0
    parts = {p["id"]: p for p in json.loads(out.read_text())["parts"]["parts"]}
    assert any(r["origin"] == "library" for r in parts["K1"]["values"])
