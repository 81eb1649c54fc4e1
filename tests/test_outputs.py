"""Outputs and exit codes: all-or-nothing files, the drawing known by identity, output faults exit 2,
broken pipes and closed streams, terminal-safe text and no NaN/inf on any report.

Each test is the smallest reproducer of one case; expected behaviour is the POSIX semantics of
rename(2) and link(2) (same file = same device and inode) and the Python documentation's advice on
SIGPIPE ("Note on SIGPIPE", library/signal.html).
"""

from __future__ import annotations

import errno
import fcntl
import json
import math
import os
import subprocess
import sys
import types
from pathlib import Path

import pytest

from coilstage import outputs
from coilstage.cli import COMMAND_MODULES, main
from coilstage.report import safe

from .conftest import COACH, ROOT, TRUCK


def _leftovers(folder: Path) -> list[str]:
    return sorted(p.name for p in folder.iterdir() if p.name.startswith("."))


@pytest.fixture
def drawing(tmp_path: Path) -> Path:
    d = tmp_path / "d.toml"
    d.write_bytes(COACH.read_bytes())
    return d


# ------------------------------------------------------------------ the drawing by identity


@pytest.mark.parametrize("how", ["hardlink", "symlink", "dotdot", "same"])
def test_check_never_writes_over_the_drawing(drawing: Path, how: str, capsys):
    folder = drawing.parent
    (folder / "x").mkdir()
    if how == "hardlink":
        target = folder / "hard.toml"
        os.link(drawing, target)
    elif how == "symlink":
        target = folder / "sym.toml"
        target.symlink_to(drawing.name)
    elif how == "dotdot":
        target = folder / "x" / ".." / "d.toml"
    else:
        target = drawing
    before = drawing.read_bytes()
    assert main(["check", str(drawing), "-f", "json", "-o", str(target)]) == 2
    assert drawing.read_bytes() == before
    assert "same file on disk" in capsys.readouterr().err
    assert _leftovers(folder) == []


@pytest.mark.parametrize("command", ["waveforms", "field", "descent"])
def test_folder_commands_never_write_over_the_drawing(tmp_path: Path, command: str, capsys):
    # the drawing is itself named like the file the command would write, inside the output folder
    out = tmp_path / "out"
    out.mkdir()
    stem = "d"
    victim = out / f"{stem}-{command}.png"
    victim.write_bytes(TRUCK.read_bytes() if command == "descent" else COACH.read_bytes())
    link = tmp_path / f"{stem}.toml"
    os.link(victim, link)  # the drawing under another name: same inode as the plot it would write
    before = victim.read_bytes()
    code = main([command, str(link), "-o", str(out)])
    assert code == 2, capsys.readouterr().err
    assert victim.read_bytes() == before
    assert _leftovers(out) == []


def test_a_table_the_drawing_names_is_protected(tmp_path: Path, capsys):
    from coilstage.cli import protected_paths

    table = tmp_path / "my-cables.toml"
    table.write_text("# a user's table\n")
    d = tmp_path / "d.toml"
    d.write_text(COACH.read_text() + '\n[zz_unused]\nconductor_table = "my-cables.toml"\n')
    assert any(outputs.same_file(p, table) for p in protected_paths(d))
    hard = tmp_path / "other-name.toml"
    os.link(table, hard)
    with pytest.raises(outputs.OutputError):
        outputs.check_target(hard, protected_paths(d))


# ------------------------------------------------------------------ bad targets: exit 2, nothing left


def test_output_at_a_folder_a_missing_folder_and_a_file_for_a_folder(drawing: Path, capsys):
    folder = drawing.parent
    (folder / "sub").mkdir()
    assert main(["check", str(drawing), "-o", str(folder / "sub")]) == 2
    assert "it is a folder" in capsys.readouterr().err
    assert main(["check", str(drawing), "-o", str(folder / "nope" / "r.json")]) == 2
    assert "does not exist" in capsys.readouterr().err
    assert not (folder / "nope").exists()
    (folder / "plain").write_text("x")
    assert main(["field", str(drawing), "-o", str(folder / "plain")]) == 2
    assert "not a folder" in capsys.readouterr().err
    assert main(["field", str(drawing), "-o", str(folder / "nope" / "deeper")]) == 2
    assert not (folder / "nope").exists()
    assert (folder / "plain").read_text() == "x"


def test_unwritable_place_exits_2(drawing: Path, capsys):
    # /proc refuses new files even to root: mkstemp fails there
    assert main(["check", str(drawing), "-o", "/proc/coilstage-report.json"]) == 2
    assert "cannot write" in capsys.readouterr().err


def test_full_disk_dev_full_exits_2(drawing: Path, capsys):
    if not os.path.exists("/dev/full"):
        pytest.skip("no /dev/full")
    assert main(["check", str(drawing), "-f", "json", "-o", "/dev/full"]) == 2
    assert "disk is full" in capsys.readouterr().err


def test_injected_enospc_keeps_the_earlier_report(drawing: Path, monkeypatch, capsys):
    out = drawing.parent / "r.json"
    out.write_text("earlier report\n")
    from coilstage.report import jsonout

    def full(doc, *a, **k):
        raise OSError(errno.ENOSPC, "No space left on device")

    monkeypatch.setattr(jsonout, "render", full)
    assert main(["check", str(drawing), "-f", "json", "-o", str(out)]) == 2
    assert "disk is full" in capsys.readouterr().err
    assert out.read_text() == "earlier report\n"
    assert _leftovers(drawing.parent) == []


def test_ctrl_c_while_writing_leaves_no_half_file(drawing: Path, monkeypatch):
    out = drawing.parent / "r.md"
    out.write_text("earlier\n")
    from coilstage.report import markdown

    def interrupted(doc, *a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(markdown, "render", interrupted)
    assert main(["check", str(drawing), "-f", "markdown", "-o", str(out)]) == 130
    assert out.read_text() == "earlier\n"
    assert _leftovers(drawing.parent) == []


def test_ctrl_c_in_a_folder_command_removes_the_folder_it_made(drawing: Path, monkeypatch):
    from coilstage.report import field_plot

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(field_plot, "plot", interrupted)
    out = drawing.parent / "new"
    assert main(["field", str(drawing), "-o", str(out)]) == 130
    assert not out.exists()


def test_a_bad_drawing_does_not_touch_an_earlier_report(tmp_path: Path):
    bad = tmp_path / "bad.toml"
    bad.write_text(COACH.read_text().replace('rating = "100 A"', 'rating = "100 V"'))
    out = tmp_path / "r.json"
    out.write_text("earlier\n")
    assert main(["check", str(bad), "-f", "json", "-o", str(out)]) == 2
    assert out.read_text() == "earlier\n"


def test_report_replaces_an_earlier_one_atomically_and_keeps_its_mode(drawing: Path):
    out = drawing.parent / "r.json"
    out.write_text("earlier\n")
    os.chmod(out, 0o640)
    assert main(["check", str(drawing), "-f", "json", "-o", str(out)]) == 0
    assert json.loads(out.read_text())["schema_version"]
    assert oct(os.stat(out).st_mode & 0o777) == oct(0o640)
    assert _leftovers(drawing.parent) == []


def test_staged_keeps_extensions_and_commits_together(tmp_path: Path):
    a, b = tmp_path / "a.png", tmp_path / "b.svg"
    with pytest.raises(RuntimeError), outputs.staged([a, b]) as (ta, tb):
        assert ta.suffix == ".png" and tb.suffix == ".svg" and ta.parent == tmp_path
        ta.write_text("1")
        raise RuntimeError
    assert list(tmp_path.iterdir()) == []
    with outputs.staged([a, b]) as (ta, tb):
        ta.write_text("1")
        tb.write_text("2")
    assert a.read_text() == "1" and b.read_text() == "2"


# ------------------------------------------------------------------ exit codes


def test_analysis_error_is_exit_2_with_its_reason(drawing: Path, monkeypatch, capsys):
    from coilstage.analysis import run as corners
    from coilstage.errors import AnalysisError

    def refuse(*a, **k):
        raise AnalysisError(str(drawing), "the duty simulation needs over 10 million steps")

    monkeypatch.setattr(corners, "analyse", refuse)
    assert main(["check", str(drawing)]) == 2
    err = capsys.readouterr().err
    assert "10 million steps" in err and "internal error" not in err


def test_a_genuine_bug_is_exit_3(drawing: Path, monkeypatch, capsys):
    from coilstage.analysis import run as corners

    monkeypatch.setattr(corners, "analyse", lambda *a, **k: 1 / 0)
    assert main(["check", str(drawing)]) == 3
    assert "internal error" in capsys.readouterr().err


def _run_shell(cmd: str) -> subprocess.CompletedProcess:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.run(["bash", "-c", cmd], capture_output=True, text=True, cwd=ROOT, env=env)


def test_closed_stdout_is_a_clear_message_not_exit_3():
    r = _run_shell(f"'{sys.executable}' -m coilstage check '{COACH}' >&-")
    assert r.returncode == 2, r.stderr
    assert "standard output" in r.stderr and "Traceback" not in r.stderr


def test_stdout_on_a_full_disk_exits_2():
    r = _run_shell(f"'{sys.executable}' -m coilstage check '{COACH}' -f json > /dev/full")
    assert r.returncode == 2, r.stderr
    assert "disk is full" in r.stderr and "Traceback" not in r.stderr


@pytest.mark.parametrize("fmt", ["text", "json", "markdown"])
def test_report_into_a_pipe_closed_early_exits_0(fmt: str):
    read, write = os.pipe()
    try:
        fcntl.fcntl(write, 1031, 4096)  # F_SETPIPE_SZ: a small pipe, so the writer blocks and then breaks
    except OSError:
        pass
    env = {**os.environ, "PYTHONPATH": str(ROOT), "COLUMNS": "120"}
    p = subprocess.Popen(
        [sys.executable, "-m", "coilstage", "check", str(COACH), "-f", fmt, "--details"],
        stdout=write,
        stderr=subprocess.PIPE,
        cwd=ROOT,
        env=env,
    )
    os.close(write)
    with os.fdopen(read, "rb") as fh:
        fh.read(100)  # like `head -c 100`
    err = p.communicate(timeout=60)[1].decode()
    assert p.returncode == 0, err
    assert "Traceback" not in err and "Exception ignored" not in err


# ------------------------------------------------------------------ terminal safety


HOSTILE = "A\x1b]0;owned\x07\x1b[2J\u202eevil\u2066[/x][bold]:fire:\x9b31m|pipe\nnext"


def _hostile_doc() -> dict:
    from coilstage import check, load_drawing
    from coilstage.report import document

    a, verdicts = check(load_drawing(COACH))
    doc = document.build(a, verdicts)
    doc["drawing"]["title"] = HOSTILE
    doc["drawing"]["note"] = HOSTILE
    doc["corners"][0]["stages"][0]["id"] = "[/x]"
    doc["verdicts"][0]["subject"] = HOSTILE
    doc["verdicts"][0]["note"] = HOSTILE
    doc["verdicts"][0]["status"] = "fail"
    doc["assumptions"] = [*doc["assumptions"], HOSTILE]
    return doc


def _assert_no_controls(text: str) -> None:
    bad = [c for c in text if safe._unsafe(c) and c not in "\n"]
    assert not bad, f"control characters reached the output: {[hex(ord(c)) for c in bad]}"


def test_text_report_shows_hostile_text_as_text():
    import io

    from coilstage.cli import make_console
    from coilstage.report import text

    buf = io.StringIO()
    text.render(_hostile_doc(), make_console(buf, True), details=True)
    out = buf.getvalue()
    _assert_no_controls(out)
    assert "[/x]" in out and "[bold]" in out and ":fire:" in out
    assert "\\x1b" in out and "\\u202e" in out


def test_markdown_escapes_cells_and_controls():
    from coilstage.report import markdown

    out = markdown.render(_hostile_doc())
    _assert_no_controls(out)
    row = next(line for line in out.splitlines() if line.startswith("| FAIL"))
    assert "\\|pipe" in row and "next" in row  # the pipe escaped, the newline folded into the cell
    assert row.count(" | ") == 7  # eight cells, none opened by the drawing's text


def test_json_keeps_hostile_text_exactly_but_escaped():
    from coilstage.report import jsonout

    out = jsonout.render(_hostile_doc())
    _assert_no_controls(out)
    assert json.loads(out)["drawing"]["title"] == HOSTILE


def test_problems_on_stderr_are_terminal_safe(tmp_path: Path, capsys):
    bad = tmp_path / "bad.toml"
    bad.write_text(COACH.read_text().replace('rating = "100 A"', 'rating = "100 \x1b[2J\u202eV"'))
    assert main(["check", str(bad)]) == 2
    err = capsys.readouterr().err
    _assert_no_controls(err)


# ------------------------------------------------------------------ no NaN or inf on a report


def _doc_with_nan() -> dict:
    from coilstage import check, load_drawing
    from coilstage.report import document

    a, verdicts = check(load_drawing(TRUCK))
    doc = document.build(a, verdicts)
    doc["corners"][0]["stages"][0]["current"]["value"] = math.nan
    doc["verdicts"][0]["margin"] = math.inf
    doc["verdicts"][1]["note"] = "the current reaches nan A"
    return doc


def test_guard_fails_loudly_in_strict_mode(monkeypatch):
    monkeypatch.setenv("COILSTAGE_STRICT_FINITE", "1")
    with pytest.raises(safe.NonFiniteError) as e:
        safe.guard(_doc_with_nan())
    assert sorted(e.value.where) == ["corners[0].stages[0].current", "verdicts[0].margin", "verdicts[1].note"]


@pytest.mark.parametrize("fmt", ["text", "json", "markdown"])
def test_guard_in_production_shows_na_and_a_not_checked_reason(monkeypatch, fmt: str):
    import io

    from coilstage.cli import make_console
    from coilstage.report import jsonout, markdown, text

    monkeypatch.delenv("COILSTAGE_STRICT_FINITE", raising=False)
    doc = _doc_with_nan()
    before = doc["summary"]["not_checked"]
    if fmt == "json":
        out = jsonout.render(doc)
        got = json.loads(out)
        assert got["corners"][0]["stages"][0]["current"] is None
        finite = [v for v in got["verdicts"] if v["rule"] == safe.FINITE_RULE]
        assert len(finite) == 3 and all(v["status"] == "not checked" for v in finite)
        assert got["summary"]["not_checked"] == before + 3
    elif fmt == "markdown":
        out = markdown.render(doc)
    else:
        buf = io.StringIO()
        text.render(doc, make_console(buf, True), details=True)
        out = buf.getvalue()
    assert safe.NOT_FINITE in out or fmt == "json"
    assert safe.FINITE_RULE in out
    low = out.lower()
    assert " nan" not in low and "nan " not in low and " inf " not in low and "infinity" not in low


def test_guard_leaves_ids_that_spell_nan_alone(monkeypatch):
    monkeypatch.setenv("COILSTAGE_STRICT_FINITE", "1")
    doc = {"verdicts": [{"subject": "inf", "note": "cable inf carries 3 A", "status": "pass"}], "summary": {}}
    assert safe.guard(doc)["verdicts"][0]["note"] == "cable inf carries 3 A"


# ------------------------------------------------------------------ the command registry


def test_a_plug_in_command_runs_through_the_registry(monkeypatch, capsys):
    mod = types.ModuleType("coilstage_test_plugin")
    mod.HELP = "a test command"
    mod.add_arguments = lambda p: p.add_argument("word")
    mod.run = lambda args: print(f"got {args.word}") or 0
    monkeypatch.setitem(sys.modules, "coilstage_test_plugin", mod)
    monkeypatch.setitem(COMMAND_MODULES, "echo", "coilstage_test_plugin")
    assert main(["echo", "hello"]) == 0
    assert "got hello" in capsys.readouterr().out
    with pytest.raises(SystemExit):
        main(["--help"])
    assert "a test command" in capsys.readouterr().out


def test_a_plug_in_command_error_is_exit_2(monkeypatch, capsys):
    from coilstage.errors import DrawingError, Problem

    mod = types.ModuleType("coilstage_test_plugin2")
    mod.HELP = "fails on purpose"
    mod.add_arguments = lambda p: None

    def run(args):
        raise DrawingError("x.toml", [Problem("a.b", "1", "a text")])

    mod.run = run
    monkeypatch.setitem(sys.modules, "coilstage_test_plugin2", mod)
    monkeypatch.setitem(COMMAND_MODULES, "bad", "coilstage_test_plugin2")
    assert main(["bad"]) == 2
    assert "a.b: found 1; expected a text" in capsys.readouterr().err


def test_registered_modules_expose_the_interface():
    import importlib

    for name, path in COMMAND_MODULES.items():
        m = importlib.import_module(path)
        assert isinstance(m.HELP, str) and m.HELP, name
        assert callable(m.add_arguments) and callable(m.run), name


def test_help_states_one_meaning_of_o(capsys):
    with pytest.raises(SystemExit):
        main(["--help"])
    out = capsys.readouterr().out
    assert "-o is a file for a command that writes one file" in " ".join(out.split())
    with pytest.raises(SystemExit):
        main(["waveforms", "--help"])
    assert "folder" in capsys.readouterr().out
