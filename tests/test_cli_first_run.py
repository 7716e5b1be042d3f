"""A first run on an empty cache, clean failures and the help texts.

Every command builds the MZV tables it needs on first use (one status line
per weight on a non-terminal stderr), refuses an order beyond the buildable
weights up front, and fails in one line: exit code 2 for the user's
mistakes, 70 for internal errors.
"""

from __future__ import annotations

import json
import sys
from pathlib import Path

import pytest
from typer.testing import CliRunner

from lowenergy.cli import app

ROOT = Path(__file__).resolve().parents[1]
EX = ROOT / "examples"
runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


@pytest.fixture
def empty_cache(tmp_path, monkeypatch):
    where = tmp_path / "cache"
    monkeypatch.setenv("LOWENERGY_CACHE_DIR", str(where))
    return where


def test_single_zeta_needs_no_table(empty_cache):
    res = run("reduce", "zeta(3)", "--json")
    assert res.exit_code == 0, res.output
    assert json.loads(res.stdout)["exact"] == "zeta(3)"
    res = run("reduce", "pi^6/945")  # = ζ(6) (A&S 23.2.16)
    assert res.stdout.splitlines()[0] == "8/35*zeta(2)^3"
    assert not empty_cache.exists() and res.stderr == ""


def test_reduce_builds_its_tables(empty_cache):
    res = run("reduce", "zeta(5,3)")
    assert res.exit_code == 0, res.output
    # ζ(5,3) ≈ 0.0377076729848 (README; METHOD.md §1)
    assert res.stdout.splitlines()[1].startswith("≈ 0.03770767298")
    lines = res.stderr.splitlines()
    assert lines[0].startswith("building MZV tables of weights 2-8")
    assert sum("done" in line for line in lines) == 7 and "ready" in lines[-1]
    assert (empty_cache / "mzv-v3" / "weight-8.sqlite").exists()
    res = run("reduce", "zeta(5,3)")  # cached now: silent
    assert res.exit_code == 0 and res.stderr == ""


def test_expand_builds_its_tables(empty_cache):
    res = run("expand", EX / "open_superstring.toml", "--order", 4, "--json")
    assert res.exit_code == 0, res.output
    terms = {tuple(t["powers"]): t["exact"] for t in json.loads(res.stdout)["terms"]}
    # Γ(-s)Γ(1-t)/Γ(1-s-t): the s^2 t^2 coefficient 2ζ(5) - ζ(2)ζ(3) (A&S 6.1.33, examples/README.md)
    assert terms[(2, 2)] == "2*zeta(5) - zeta(2)*zeta(3)"
    assert "building MZV tables of weights 2-5" in res.stderr


def test_check_and_fix_build_their_tables(empty_cache):
    res = run("check", EX / "open_superstring.toml", ROOT / "constraints" / "open_superstring_order4.toml")
    assert res.exit_code == 0, res.output
    assert "building MZV tables" in res.stderr


def test_order_beyond_the_buildable_weights_is_refused_up_front(empty_cache):
    res = run("expand", EX / "open_superstring.toml", "--order", 30)
    assert res.exit_code == 2
    assert "order 30 needs MZV tables of weight 31" in res.stderr
    assert "up to weight 20" in res.stderr and "ask for order 19 or lower" in res.stderr
    assert "tables build" not in res.stderr and "Traceback" not in res.output
    assert not empty_cache.exists()  # nothing was built
    res = run("verify", EX / "open_superstring.toml", "--at", "s=-0.05,t=-0.03", "--order", 40)
    assert res.exit_code == 2 and "ask for order 19 or lower" in res.stderr


def test_cache_directory_that_is_a_file(tmp_path, monkeypatch):
    where = tmp_path / "cache"
    where.write_text("a file")
    monkeypatch.setenv("LOWENERGY_CACHE_DIR", str(where))
    for args in (["reduce", "zeta(5,3)"], ["tables", "build", "--weight", "4"]):
        res = run(*args)
        assert res.exit_code == 2, res.output
        assert len(res.stderr.strip().splitlines()) == 1
        assert "cannot write MZV tables to the cache directory" in res.stderr and "Traceback" not in res.output
    assert where.read_text() == "a file"


def test_cache_directory_that_cannot_be_created(tmp_path, monkeypatch):
    import os

    if os.geteuid() == 0:
        pytest.skip("root can create directories anywhere")
    locked = tmp_path / "locked"
    locked.mkdir()
    locked.chmod(0o500)
    monkeypatch.setenv("LOWENERGY_CACHE_DIR", str(locked / "cache"))
    res = run("reduce", "zeta(5,3)")
    assert res.exit_code == 2 and "cannot write MZV tables" in res.stderr


# --- output paths checked before any computation --------------------------

@pytest.fixture
def no_computation(monkeypatch):
    """Make any expansion or residue computation an internal error (exit 70)."""
    import lowenergy.spectrum as spectrum
    from lowenergy import cli

    def boom(*args, **kwargs):
        raise AssertionError("the computation started")

    monkeypatch.setattr(cli, "_expand_with_progress", boom)
    monkeypatch.setattr(spectrum, "residues", boom)


@pytest.mark.parametrize(
    "args",
    [
        ["expand", EX / "open_superstring.toml", "--order", 2, "--csv", "{missing}/out.csv"],
        ["expand", EX / "open_superstring.toml", "--order", 2, "--latex", "{missing}/out.tex"],
        ["expand", EX / "open_superstring.toml", "--order", 2, "--csv", "{dir}"],
        ["residues", EX / "open_superstring.toml", "--levels", 2, "--csv", "{missing}/r.csv"],
        ["residues", EX / "open_superstring.toml", "--levels", 2, "--waves", "--plot", "{missing}/p.png"],
        ["residues", EX / "open_superstring.toml", "--levels", 2, "--waves", "--plot", "{file}/p.png"],
    ],
)
def test_unwritable_output_is_refused_before_computing(tmp_path, no_computation, args):
    a_file = tmp_path / "plain"
    a_file.write_text("x")
    args = [str(a).format(missing=tmp_path / "nope", dir=tmp_path, file=a_file) for a in args]
    res = run(*args)
    assert res.exit_code == 2, res.output
    assert res.stderr.startswith("error: cannot write --") and len(res.stderr.strip().splitlines()) == 1
    assert "Traceback" not in res.output
    assert not (tmp_path / "nope").exists()


def test_missing_matplotlib_for_plot(tmp_path, monkeypatch, no_computation):
    monkeypatch.setitem(sys.modules, "matplotlib", None)  # import matplotlib -> ImportError
    out = tmp_path / "p.png"
    res = run("residues", EX / "open_superstring.toml", "--levels", 2, "--waves", "--plot", out)
    assert res.exit_code == 2, res.output
    assert "matplotlib" in res.stderr and len(res.stderr.strip().splitlines()) == 1
    assert not out.exists() and not list(tmp_path.iterdir())


def test_missing_matplotlib_in_python_raises_a_user_error(monkeypatch):
    from lowenergy.errors import InputError
    from lowenergy.spectrum.plots import require_matplotlib

    monkeypatch.setitem(sys.modules, "matplotlib", None)
    with pytest.raises(InputError, match="matplotlib"):
        require_matplotlib()


# --- internal errors --------------------------------------------------------

def test_internal_error_is_not_dressed_as_a_user_error(monkeypatch):
    from lowenergy.errors import InternalError, LowEnergyError
    from lowenergy.zeta import expression

    assert not issubclass(InternalError, LowEnergyError)

    def broken(*args, **kwargs):
        raise InternalError("weight 8: products are dependent (tables inconsistent)")

    monkeypatch.setattr(expression, "evaluate", broken)
    res = run("reduce", "zeta(5,3)")
    assert res.exit_code == 70
    assert res.stderr.startswith("internal error: weight 8: products are dependent")
    assert "please report" in res.stderr and "hint" not in res.stderr
    assert len(res.stderr.strip().splitlines()) == 1


def test_unexpected_exception_is_an_internal_error(monkeypatch):
    from lowenergy.zeta import expression

    def broken(*args, **kwargs):
        raise ZeroDivisionError("oops")

    monkeypatch.setattr(expression, "evaluate", broken)
    res = run("reduce", "zeta(5,3)")
    assert res.exit_code == 70 and "internal error: ZeroDivisionError: oops" in res.stderr


def test_failed_reconstruction_is_internal():
    # the modular word values give up after all primes: an InternalError
    import inspect

    from lowenergy.expansion import values

    assert "raise InternalError(" in inspect.getsource(values.ModularWordValues.combine)


# --- help and version -------------------------------------------------------

COMMANDS = [[], ["reduce"], ["expand"], ["verify"], ["check"], ["fix"], ["residues"], ["demo"],
            ["tables", "build"], ["tables", "info"]]


@pytest.mark.parametrize("cmd", COMMANDS, ids=lambda c: " ".join(c) or "lowenergy")
def test_help_shows_flags_types_and_exit_codes(cmd, monkeypatch):
    monkeypatch.setenv("COLUMNS", "80")
    res = run(*cmd, "--help")
    assert res.exit_code == 0
    text = res.stdout
    assert "<bool>" not in text and "<str>" not in text and "<int>" not in text
    assert "Exit codes" in text and "  2 bad input" in text and "  70 internal error" in text
    assert max(len(line) for line in text.splitlines()) <= 80


def test_help_of_flag_options():
    text = run("expand", "--help").stdout
    assert "--json " in text and "--order N " in text and "--csv FILE " in text


def test_version():
    from importlib.metadata import version

    res = run("--version")
    assert res.exit_code == 0 and res.stdout.strip() == f"lowenergy {version('lowenergy')}"


def test_one_digits_default():
    from lowenergy.cli import DEFAULT_DIGITS

    for cmd in ("reduce", "expand", "verify", "check", "residues"):
        text = " ".join(run(cmd, "--help").stdout.split())
        assert f"[default: {DEFAULT_DIGITS}]" in text.split("--digits", 1)[1].split("--", 1)[0], cmd
