"""Every command of README.md and examples/README.md, as pasted.

The commands are written `.venv/bin/lowenergy ...` (runnable at the
repository root without activating the venv); each one is run here in a copy
of examples/ and constraints/, in the order of the README, and must end with
the exit code the README states (1 where it says "exit 1", else 0).
"""

from __future__ import annotations

import re
import shlex
import shutil
from pathlib import Path

import pytest
from typer.testing import CliRunner

from lowenergy.cli import app

ROOT = Path(__file__).resolve().parents[1]
PREFIX = ".venv/bin/lowenergy"


def commands(readme: Path):
    """The lowenergy command lines of the ``sh`` blocks (``$ `` prompts removed)."""
    text = readme.read_text(encoding="utf-8")
    out = []
    for block in re.findall(r"```sh\n(.*?)```", text, flags=re.S):
        block = re.sub(r"\\\n\s*", " ", block)  # join continuation lines
        for line in block.splitlines():
            line = line.removeprefix("$ ").strip()
            if "lowenergy" in line.split("#")[0] and not line.startswith(("python3 ", "source ")):
                out.append(line)
    return out


README_FILES = [ROOT / "README.md", ROOT / "examples" / "README.md"]


@pytest.mark.parametrize("readme", README_FILES, ids=lambda p: p.parent.name + "/" + p.name)
def test_commands_run_without_activating_the_venv(readme):
    found = commands(readme)
    assert found
    for line in found:
        assert line.startswith(PREFIX + " "), line


@pytest.mark.parametrize("readme", README_FILES, ids=lambda p: p.parent.name + "/" + p.name)
def test_every_command_runs_as_stated(readme, tmp_path, monkeypatch):
    shutil.copytree(ROOT / "examples", tmp_path / "examples")
    shutil.copytree(ROOT / "constraints", tmp_path / "constraints")
    monkeypatch.chdir(tmp_path)
    runner = CliRunner()
    ran = 0
    for line in commands(readme):
        code, _, comment = line.partition("#")
        args = shlex.split(code)[1:]
        if args[:2] == ["tables", "build"]:
            continue  # builds weight 17: minutes; the on-demand builds are tested elsewhere
        res = runner.invoke(app, args)
        expected = 1 if "exit 1" in comment or "exit code 1" in comment else 0
        assert res.exit_code == expected, (line, res.output)
        assert "Traceback" not in res.output
        ran += 1
    assert ran >= 5
