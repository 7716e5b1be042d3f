"""The ``reduce`` and ``tables`` commands."""

from __future__ import annotations

import json
import os
import subprocess
import sys

import mpmath
import pytest
from typer.testing import CliRunner

from lowenergy.cli import app

runner = CliRunner()


def run(*args):
    return runner.invoke(app, list(args))


def test_reduce_plain():
    res = run("reduce", "zeta(2,1) - zeta(3)")
    assert res.exit_code == 0
    assert res.stdout.splitlines()[0] == "0"


def test_reduce_json_keys_and_value():
    res = run("reduce", "zeta(5,3)", "--json", "--digits", "40")
    assert res.exit_code == 0
    out = json.loads(res.stdout)
    assert {"exact", "numeric", "weight"} <= set(out)
    assert out["weight"] == 8
    # ζ(5,3) ≈ 0.03770767 (METHOD.md §1); more digits from an mpmath nested sum:
    with mpmath.workdps(50):
        ref = mpmath.nsum(lambda m: (mpmath.zeta(3) - mpmath.zeta(3, m)) / m**5, [2, mpmath.inf])
        assert abs(mpmath.mpf(out["numeric"]) - ref) < mpmath.mpf(10) ** -35


def test_reduce_f_basis():
    res = run("reduce", "zeta(3)*zeta(5)", "--basis", "f")
    assert res.exit_code == 0
    assert res.stdout.splitlines()[0] == "f3*f5 + f5*f3"


def test_reduce_pi_display():
    res = run("reduce", "zeta(4)", "--pi")
    assert res.stdout.splitlines()[0] == "1/90*pi^4"  # ζ(4) = π^4/90 (Euler)


@pytest.mark.parametrize(
    "expr, needle",
    [
        ("zeta(3,", "column 8"),
        ("2 zeta(3)", "column 3"),
        ("zeta(1,2)", "diverges"),
        ("zeta(2.5)", "positive integers"),
        ("zeta(0,3)", "positive integers"),
        ("zeta(3)/zeta(2)", "non-rational"),
        ("pi^3", "odd power of pi"),
        ("sin(3)", "unknown function"),
        ("zeta(11,10)", "up to weight 20 only"),
        ("import os", "column"),
        ("__import__('os')", "column"),
    ],
)
def test_reduce_bad_input(expr, needle):
    res = run("reduce", expr)
    assert res.exit_code == 2
    assert needle in res.stderr
    assert "Traceback" not in res.stderr + res.stdout


def test_bad_options():
    assert run("reduce", "zeta(3)", "--basis", "g").exit_code == 2
    assert run("reduce", "zeta(3)", "--digits", "0").exit_code == 2
    assert run("reduce", "zeta(1,2)", "--regularize", "magic").exit_code == 2


def test_regularized_reduce():
    res = run("reduce", "zeta(1,2)", "--regularize", "shuffle")
    assert res.exit_code == 0 and res.stdout.splitlines()[0] == "-2*zeta(3)"


def test_tables_info():
    res = run("tables", "info")
    assert res.exit_code == 0
    assert "weight 12: dimension  12" in res.stdout


def test_console_script_subprocess_exit_code():
    # the real entry point, in a fresh interpreter: one line, exit 2, no traceback
    proc = subprocess.run(
        [sys.executable, "-c", "from lowenergy.cli import main; main()", "reduce", "zeta(3"],
        capture_output=True,
        text=True,
        env=dict(os.environ),
    )
    assert proc.returncode == 2
    assert proc.stderr.count("\n") == 1 and "Traceback" not in proc.stderr
