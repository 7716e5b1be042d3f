"""`fix --write`: never replaces a file without --force; keeps the input's layout."""

from __future__ import annotations

import shutil
from pathlib import Path

from typer.testing import CliRunner

from lowenergy.cli import app

ROOT = Path(__file__).resolve().parents[1]
EX = ROOT / "examples"
runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_write_refuses_the_input_file(tmp_path):
    ansatz = tmp_path / "ansatz.toml"
    shutil.copy(EX / "curved_ansatz.toml", ansatz)
    before = ansatz.read_text()
    res = run("fix", ansatz, EX / "curved_constraints.toml", "--write", ansatz)
    assert res.exit_code == 2
    assert "refusing to overwrite" in res.stderr and "input file" in res.stderr and "--force" in res.stderr
    assert "Traceback" not in res.stderr and res.stdout == ""     # refused before any work
    assert ansatz.read_text() == before


def test_write_refuses_any_existing_file_and_force_replaces_it(tmp_path):
    target = tmp_path / "fixed.toml"
    target.write_text("keep me\n")
    res = run("fix", EX / "curved_ansatz.toml", EX / "curved_constraints.toml", "--write", target)
    assert res.exit_code == 2 and "the file exists" in res.stderr
    assert target.read_text() == "keep me\n"
    res = run("fix", EX / "curved_ansatz.toml", EX / "curved_constraints.toml", "--write", target, "--force")
    assert res.exit_code == 0, res.stderr
    text = target.read_text()
    # the invented example's header comment and multi-line integrand survive; values written tidily
    assert text.startswith("# INVENTED SCENARIO")
    assert "   + s*t*log(x)*log(1-x)\n   - 1/2*(s^2*Li(2, x)" in text
    assert "(1)" not in text and "  +" not in text.replace("\n   +", "").replace("\n   -", "")
    assert run("check", target, EX / "curved_constraints.toml").exit_code == 0


def test_force_may_replace_the_input(tmp_path):
    ansatz = tmp_path / "ansatz.toml"
    shutil.copy(EX / "curved_ansatz.toml", ansatz)
    res = run("fix", ansatz, EX / "curved_constraints.toml", "--write", ansatz, "--force")
    assert res.exit_code == 0, res.stderr
    assert 'parameters = []' in ansatz.read_text()
