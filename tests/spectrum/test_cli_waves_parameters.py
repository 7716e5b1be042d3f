"""`residues --waves` with free parameters: never "0 negative" above negative rows.

With parameters the signs are undecided and the summary says so; `--at`
fixes parameter values, after which the output equals that of the integrand
with the value put in by hand.
"""

from __future__ import annotations

from typer.testing import CliRunner

from lowenergy.cli import app

runner = CliRunner()


def _run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_parameters_make_the_sign_undecided(tmp_path):
    f = tmp_path / "p.toml"
    f.write_text('parameters = ["a"]\nintegrand = "x^(-s-1)*(1-x)^(-t)*(1 + a*s)"\n')
    res = _run("residues", f, "--levels", 3, "--waves", "--dim", 12)
    assert res.exit_code == 0, res.stderr
    last = res.stdout.strip().splitlines()[-1]
    assert "depend on the free parameters a" in last and "not decided" in last and "--at a=" in last
    assert "0 negative" not in res.stdout


def test_at_fixes_the_parameters(tmp_path):
    with_param = tmp_path / "p.toml"
    with_param.write_text('parameters = ["a", "b"]\nintegrand = "x^(-s-1)*(1-x)^(-t)*(1 + a*s + b*s*t)"\n')
    by_hand = tmp_path / "h.toml"
    by_hand.write_text('integrand = "x^(-s-1)*(1-x)^(-t)*(1 - 1/2*s)"\n')
    a = _run("residues", with_param, "--levels", 3, "--waves", "--dim", 12, "--at", "a=-1/2,b=0")
    b = _run("residues", by_hand, "--levels", 3, "--waves", "--dim", 12)
    assert a.exit_code == b.exit_code == 0
    assert a.stdout == b.stdout
    assert "negative partial-wave coefficient(s)" in a.stdout.strip().splitlines()[-1]


def test_at_names_only_parameters(tmp_path):
    f = tmp_path / "p.toml"
    f.write_text('parameters = ["a"]\nintegrand = "x^(-s-1)*(1-x)^(-t)*(1 + a*s)"\n')
    res = _run("residues", f, "--levels", 2, "--waves", "--at", "q=1")
    assert res.exit_code == 2 and "q" in res.stderr and "Traceback" not in res.stderr
