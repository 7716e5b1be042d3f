"""`reduce -` and `reduce @FILE`: a leading minus or a long expression needs no shell tricks."""

from __future__ import annotations

import mpmath
from typer.testing import CliRunner

from lowenergy.cli import app
from tests.reference import reference_mzv

runner = CliRunner()


def _numeric(stdout: str):
    line = [x for x in stdout.splitlines() if x.startswith("≈")][0]
    return mpmath.mpf(line[1:].strip())


def test_leading_minus_from_stdin():
    res = runner.invoke(app, ["reduce", "-"], input="-zeta(5,3)  # a comment\n")
    assert res.exit_code == 0, res.stderr
    assert res.stdout.splitlines()[0] == "zeta(3,5) - zeta(3)*zeta(5) + 24/175*zeta(2)^4"
    with mpmath.workdps(30):
        assert abs(_numeric(res.stdout) + reference_mzv((5, 3), 30)) < mpmath.mpf(10) ** -25


def test_long_expression_from_a_file(tmp_path):
    # Σ_{a+b=8} ζ(a,b) over a ≥ 2 = ζ(8)... use the sum theorem (Granville 1997):
    # Σ over n1 ≥ 2, depth 2, weight 8 of ζ(n1, n2) = ζ(8)
    terms = [f"zeta({a},{8 - a})" for a in range(2, 8)]
    f = tmp_path / "sum.txt"
    f.write_text("# the sum theorem, depth 2, weight 8\n" + "\n+ ".join(terms) + "\n- pi^8/9450\n")
    res = runner.invoke(app, ["reduce", f"@{f}"])
    assert res.exit_code == 0, res.stderr
    assert res.stdout.splitlines()[0] == "0"


def test_bad_sources_are_user_errors(tmp_path):
    res = runner.invoke(app, ["reduce", f"@{tmp_path / 'missing.txt'}"])
    assert res.exit_code == 2 and "cannot read the expression file" in res.stderr
    res = runner.invoke(app, ["reduce", "-"], input="# only a comment\n")
    assert res.exit_code == 2 and "no expression" in res.stderr
    res = runner.invoke(app, ["reduce", "-"], input="zeta(3\n")
    assert res.exit_code == 2 and "<stdin>" in res.stderr and "Traceback" not in res.stderr
