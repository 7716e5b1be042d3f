"""Honest summaries of `check`: the verdict and the exit code agree; numeric
right-hand sides are tagged numeric."""

from __future__ import annotations

import json

import mpmath
from typer.testing import CliRunner

from lowenergy.cli import EXIT_UNDECIDED, app

runner = CliRunner()

# B(-s,-t) = -1/s - 1/t + ζ(2)(s + t) + ζ(3)(s^2 + 2 s t + t^2) + ...  (A&S 6.1.33, expanded by hand)
ANSATZ = 'title = "one free factor"\nparameters = ["a"]\nintegrand = "a*x^(-s-1)*(1-x)^(-t-1)"\n'
DEPENDS_ONLY = """source = "A&S 6.1.33 (Beta function), expanded by hand"
[[constraint]]
name = "s"
relation = "c[1,0]"
kind = "="
rhs = "zeta(2)"
[[constraint]]
name = "st"
relation = "c[1,1]"
kind = "="
rhs = "2*zeta(3)"
"""
WITH_FAILURE = DEPENDS_ONLY + """[[constraint]]
name = "no such term"
relation = "c[1,0] - c[0,1]"
kind = "="
rhs = "1"
"""


def _files(tmp_path, constraints):
    i = tmp_path / "ansatz.toml"
    i.write_text(ANSATZ)
    c = tmp_path / "c.toml"
    c.write_text(constraints)
    return i, c


def test_only_depends_is_undecided_with_its_own_exit_code(tmp_path):
    i, c = _files(tmp_path, DEPENDS_ONLY)
    res = runner.invoke(app, ["check", str(i), str(c)])
    assert res.exit_code == EXIT_UNDECIDED == 3
    assert "summary: 0 passed, 0 failed, 2 depend on free parameters (2 constraints): undecided" in res.stdout
    assert "undecided: no constraint failed" in res.stdout
    out = json.loads(runner.invoke(app, ["check", str(i), str(c), "--json"]).stdout)
    assert out["verdict"] == "undecided" and out["ok"] is False


def test_a_failure_wins_over_undecided(tmp_path):
    # c[1,0] - c[0,1] = a ζ(2) - a ζ(2) = 0 for every a: never 1
    i, c = _files(tmp_path, WITH_FAILURE)
    res = runner.invoke(app, ["check", str(i), str(c)])
    assert res.exit_code == 1
    assert res.stdout.rstrip().endswith("(3 constraints): failed")


def test_numeric_rhs_is_tagged_numeric(tmp_path):
    i = tmp_path / "beta.toml"
    i.write_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"\n')
    with mpmath.workdps(30):
        zeta2 = mpmath.nstr(mpmath.pi ** 2 / 6, 17)   # Euler: ζ(2) = π²/6
    c = tmp_path / "c.toml"
    c.write_text(
        'source = "A&S 6.1.33 (Beta function), expanded by hand; Euler zeta(2) = pi^2/6"\n'
        "[[constraint]]\nname = \"numeric\"\nrelation = \"c[1,0]\"\nkind = \"=\"\n"
        f"rhs_value = {zeta2}\nabs_tol = 1e-14\n"
        "[[constraint]]\nname = \"exact\"\nrelation = \"c[1,0]\"\nkind = \"=\"\nrhs = \"pi^2/6\"\n"
    )
    res = runner.invoke(app, ["check", str(i), str(c)])
    assert res.exit_code == 0, res.stdout
    lines = {line.split()[1]: line for line in res.stdout.splitlines() if line.startswith("PASS")}
    assert lines["numeric"].endswith("[numeric]") and lines["exact"].endswith("[exact]")
    out = json.loads(runner.invoke(app, ["check", str(i), str(c), "--json"]).stdout)
    assert [r["comparison"] for r in out["results"]] == ["numeric", "exact"]
    assert out["verdict"] == "passed"
