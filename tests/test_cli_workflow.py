"""The command-line workflow: expand, verify, check, fix, and the examples."""

from __future__ import annotations

import json
from pathlib import Path

import mpmath
import pytest
from typer.testing import CliRunner

from lowenergy.cli import app

ROOT = Path(__file__).resolve().parents[1]
EX = ROOT / "examples"
runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_expand_json_matches_the_beta_function(tmp_path):
    f = tmp_path / "beta.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"\n')
    res = run("expand", f, "--order", 3, "--json")
    assert res.exit_code == 0, res.stderr
    out = json.loads(res.stdout)
    assert out["variables"] == ["s", "t"] and out["order"] == 3
    terms = {tuple(t["powers"]): t for t in out["terms"]}
    # B(-s,-t) = -1/s - 1/t + ζ(2)(s+t) + ζ(3)(s^2 + 2st + t^2) + ...  (METHOD.md §4; A&S 6.1.33)
    assert terms[(-1, 0)]["exact"] == "-1" and terms[(0, -1)]["exact"] == "-1"
    assert terms[(1, 1)]["exact"] == "2*zeta(3)"
    with mpmath.workdps(30):
        assert abs(mpmath.mpf(terms[(1, 0)]["numeric"]) - mpmath.zeta(2)) < mpmath.mpf(10) ** -18


def test_expand_writes_csv_and_latex_and_round_trips(tmp_path):
    from lowenergy.tables import read_csv

    f = tmp_path / "i.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t-1)*log(x)"\n')
    csv, tex = tmp_path / "o.csv", tmp_path / "o.tex"
    res = run("expand", f, "--order", 4, "--csv", csv, "--latex", tex)
    assert res.exit_code == 0, res.stderr
    back = read_csv(csv)
    assert back.value(-2, 0) == -1  # the exact double pole -1/s^2 (METHOD.md §4)
    text = tex.read_text()
    assert text.startswith("\\begin{tabular}") and text.rstrip().endswith("\\end{tabular}")


def test_bad_integrand_writes_nothing(tmp_path):
    f = tmp_path / "bad.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t-1)*sin(x)"\n')
    out = tmp_path / "never.csv"
    res = run("expand", f, "--order", 2, "--csv", out)
    assert res.exit_code == 2
    assert "bad.toml" in res.stderr and "line 1" in res.stderr and "sin" in res.stderr
    assert "Traceback" not in res.stderr
    assert not out.exists()


def test_verify_command(tmp_path):
    f = tmp_path / "beta.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t)"\n')
    res = run("verify", f, "--at", "s=-0.05,t=-0.03", "--order", 8)
    assert res.exit_code == 0, res.stdout + res.stderr
    assert "consistent       yes" in res.stdout


def test_verify_bad_point(tmp_path):
    f = tmp_path / "beta.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t)"\n')
    assert run("verify", f, "--at", "s=abc").exit_code == 2
    assert run("verify", f, "--at", "q=0.1,t=0.2").exit_code == 2


def test_open_superstring_example_passes_the_shipped_constraints():
    # constraints/open_superstring_order4.toml was derived from the Gamma-function
    # closed form (A&S 6.1.33) and checked against mpmath in tests/constraints.
    res = run("check", EX / "open_superstring.toml", ROOT / "constraints" / "open_superstring_order4.toml")
    assert res.exit_code == 0, res.stdout
    assert "0 failed" in res.stdout


def test_curved_example_walkthrough(tmp_path):
    # invented scenario (examples/curved_*): fix -> check passes; the candidate table fails once
    fixed = tmp_path / "fixed.toml"
    res = run("fix", EX / "curved_ansatz.toml", EX / "curved_constraints.toml", "--write", fixed)
    assert res.exit_code == 0, res.stdout + res.stderr
    assert "a1 = 1" in res.stdout and "a2 = -1/2" in res.stdout and "a3 = 2" in res.stdout
    assert run("check", fixed, EX / "curved_constraints.toml").exit_code == 0
    bad = run("check", EX / "curved_candidate.csv", EX / "curved_constraints.toml")
    assert bad.exit_code == 1
    assert "1 failed" in bad.stdout and "FAIL    order-2 mixed" in bad.stdout


def test_check_bad_constraint_file(tmp_path):
    f = tmp_path / "c.toml"
    f.write_text('title = "x"\n[[constraint]]\nname = "a"\nrelation = "c[1,1"\nkind = "="\nrhs = "0"\n')
    res = run("check", EX / "open_superstring.toml", f)
    assert res.exit_code == 2 and "Traceback" not in res.stderr


def test_residues_command(tmp_path):
    # x^(-s-1)(1-x)^(-t): residue at s = 1 is -t (from Γ(-s) with Γ(1-t)/Γ(-t) = -t; A&S 6.1.3)
    f = tmp_path / "v.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t)"\n')
    res = run("residues", f, "--levels", 2, "--json")
    assert res.exit_code == 0, res.stderr
    rows = json.loads(res.stdout)
    at1 = [r for r in rows if r["variable"] == "s" and r["location"] == "1"]
    assert [(r["power"], r["exact"]) for r in at1] == [(1, "-1")]
    png = tmp_path / "spec.png"
    res = run("residues", f, "--levels", 3, "--waves", "--dim", "11", "--sign", "-1", "--plot", png)
    assert res.exit_code == 0 and png.read_bytes()[:4] == b"\x89PNG"
    assert "negative partial-wave coefficient(s) (unitarity violation)" in res.stdout
    assert run("residues", f, "--levels", 2, "--plot", png).exit_code == 2


@pytest.mark.parametrize(
    "expr, needle",
    [
        ("x^(-s-2)*(1-x)^(-t-1)", "negative shifts are not supported"),
        ("x^(-1)*(1-x)^(-t-1)", "diverges at x = 0"),
        ("x^(-s-1)*(1-x)^(-1)", "diverges at x = 1"),
    ],
)
def test_engine_refuses_clearly(tmp_path, expr, needle):
    f = tmp_path / "i.toml"
    f.write_text(f'integrand = "{expr}"\n')
    out = tmp_path / "o.csv"
    res = run("expand", f, "--order", 3, "--csv", out)
    assert res.exit_code == 2 and needle in res.stderr and "i.toml" in res.stderr
    assert not out.exists()


def test_demo_runs_and_its_check_passes():
    res = run("demo")
    assert res.exit_code == 0, res.stdout + res.stderr
    assert "zeta(2,1)                    = zeta(3)" in res.stdout
    assert "3 passed, 0 failed" in res.stdout


def test_expand_in_sigma_and_user_bases(tmp_path):
    # σ-basis: the open-superstring factor is not fully crossing symmetric, so a
    # remainder is reported; a user basis spanning order 2 decomposes it exactly.
    f = tmp_path / "v.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"\n')
    res = run("expand", f, "--order", 2, "--basis", "symmetric", "--json")
    assert res.exit_code == 0 and json.loads(res.stdout)["in_basis"] is True
    res = run("expand", f, "--order", 2, "--user-basis", "A=s+t", "--user-basis", "B=s^2+t^2", "--user-basis", "C=s*t", "--json")
    assert res.exit_code == 0, res.stderr
    out = json.loads(res.stdout)
    assert out["in_basis"] is True
    exact = {t["name"]: t["exact"] for t in out["terms"]}
    # B(-s,-t) = -1/s - 1/t + ζ(2)(s+t) + ζ(3)(s^2+t^2) + 2ζ(3) st + ...  (A&S 6.1.33)
    assert exact["A"] == "zeta(2)" and exact["B"] == "zeta(3)" and exact["C"] == "2*zeta(3)"
    assert run("expand", f, "--order", 2, "--user-basis", "A=s+").exit_code == 2
    assert run("verify", f, "--at", "s=1e999999999,t=0").exit_code == 2


def test_residues_divide_by_gives_the_superstring_partial_waves(tmp_path):
    # x^(-s-1)(1-x)^(-t) = -t Γ(-s)Γ(-t)/Γ(1-s-t) (A&S 6.1.15); dividing by -t gives the
    # superstring residues (t+1)...(t+n-1)/(n-1)!.  In D = 11 the level-3 scalar
    # coefficient is (10-D)/(24(D-1)) = -1/240 < 0, the only negative one up to level 4
    # (exact value from the Gegenbauer decomposition, A&S 22.3.4).
    f = tmp_path / "v.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t)"\n')
    res = run("residues", f, "--levels", 4, "--divide-by", "-t", "--waves", "--dim", "11", "--json")
    assert res.exit_code == 0, res.stderr
    neg = [r for r in json.loads(res.stdout) if r["negative"] == "yes"]
    assert [(r["level"], r["spin"], r["exact"]) for r in neg] == [("3", 0, "-1/240")]
    assert run("residues", f, "--levels", 4, "--divide-by", "s*t").exit_code == 2
