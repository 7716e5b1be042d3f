"""Sphere integrands on the command line: expand (U-channel rows in the
terminal, JSON and CSV), --basis sv, verify (2D quadrature), refusals."""

from __future__ import annotations

import json

import mpmath
import pytest
from typer.testing import CliRunner

from lowenergy.cli import app
from lowenergy.tables import read_csv
from lowenergy.zeta.element import MZV, zeta

runner = CliRunner()

SHIFTED = 'domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T)"\n'


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_expand_u_pole_rows_json_and_csv(tmp_path):
    # γ(-S)γ(1-T)γ(S+T) = T/(S U) exp(2ζ(3) S T U + ...) = (-1/S - 1/U)(1 + ...)
    f = tmp_path / "shifted.toml"
    f.write_text(SHIFTED)
    res = run("expand", f, "--order", 3, "--json")
    assert res.exit_code == 0, res.output
    terms = {t["name"]: t for t in json.loads(res.stdout)["terms"]}
    assert terms["c[0,0,-1]"]["powers"] == [0, 0, -1] and terms["c[0,0,-1]"]["exact"] == "-1"
    assert terms["c[0,0,-1]"]["kind"] == "pole"
    assert terms["c[-1,0]"]["exact"] == "-1"
    assert terms["c[0,2]"]["exact"] == "2*zeta(3)"     # T/(SU) · 2ζ(3)STU = 2ζ(3) T²
    csv = tmp_path / "t.csv"
    res = run("expand", f, "--order", 3, "--csv", csv)
    assert res.exit_code == 0, res.output
    back = read_csv(csv)
    assert back.u_poles == {(0, -1): {(): MZV.rational(-1)}}
    assert back.coefficients[(0, 2)][()] == 2 * zeta(3)


def test_basis_sv(tmp_path):
    f = tmp_path / "w4.toml"
    f.write_text('domain = "sphere"\nvariables = ["S", "T"]\n'
                 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(0,0,1,1; z)"\n')
    res = run("expand", f, "--order", 1, "--basis", "sv", "--json")
    assert res.exit_code == 0, res.output
    out = json.loads(res.stdout)
    assert out["basis"] == "sv"
    for t in out["terms"]:
        assert "zeta(2)" not in t["exact"] and "exact_conventional" in t
    # an interval integrand with ζ(2) in its coefficients is refused (exit 2)
    g = tmp_path / "open.toml"
    g.write_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"\n')
    res = run("expand", g, "--order", 2, "--basis", "sv")
    assert res.exit_code == 2 and "not a single-valued MZV" in res.output


@pytest.mark.slow
def test_verify_sphere_shifted_beta(tmp_path):
    # convergent region of this integral: S < 0, S + T > 0 (the U-channel)
    f = tmp_path / "shifted.toml"
    f.write_text(SHIFTED)
    res = run("verify", f, "--at", "S=-0.05,T=0.08", "--order", 10, "--digits", 12)
    assert res.exit_code == 0, res.output
    assert "consistent       yes" in res.output
    # independent number: mpmath Γ, γ(-S)γ(1-T)γ(S+T)
    g = lambda x: mpmath.gamma(x) / mpmath.gamma(1 - x)  # noqa: E731
    S, T = mpmath.mpf("-0.05"), mpmath.mpf("0.08")
    value = g(-S) * g(1 - T) * g(S + T)
    quad = mpmath.mpf(res.output.split("quadrature")[1].split()[0])
    assert abs(quad - value) < 1e-9 * abs(value)


def test_verify_outside_the_region_is_a_user_error(tmp_path):
    f = tmp_path / "shifted.toml"
    f.write_text(SHIFTED)
    res = run("verify", f, "--at", "S=-0.05,T=-0.03", "--order", 4)
    assert res.exit_code == 2 and "converges" in res.output


def test_bad_sphere_file_exit_2_no_output(tmp_path):
    f = tmp_path / "bad.toml"
    f.write_text('domain = "sphere"\nintegrand = "z^(-s-1)*(1-z)^(-t-1)"\n')
    out = tmp_path / "out.csv"
    res = run("expand", f, "--order", 2, "--csv", out)
    assert res.exit_code == 2 and "bad.toml" in res.output and "line 2" in res.output
    assert "interval syntax" in res.output and not out.exists()


def test_example_sphere_ansatz_is_fixed(tmp_path):
    from pathlib import Path

    ex = Path(__file__).resolve().parents[2] / "examples"
    fixed = tmp_path / "fixed.toml"
    res = run("fix", ex / "sphere_ansatz.toml", ex / "sphere_constraints.toml", "--write", fixed)
    assert res.exit_code == 0, res.output
    assert "b1 = 1/2" in res.output and "b2 = -1/2" in res.output
    assert run("check", fixed, ex / "sphere_constraints.toml").exit_code == 0


def test_residues_of_sphere_files(tmp_path):
    # γ(-S)γ(1-T)γ(S+T) = Γ(-S)Γ(1-T)Γ(S+T)/(Γ(1+S)Γ(T)Γ(1-S-T)): by hand,
    # Res_{S=1} = (+1)·Γ(1-T)Γ(1+T)/(Γ(T)Γ(-T)) = -T², Res_{S=0} = -1, Res_{U=0} = -1
    f = tmp_path / "shifted.toml"
    f.write_text(SHIFTED)
    res = run("residues", f, "--levels", 1, "--json")
    assert res.exit_code == 0, res.output
    rows = {(r["variable"], r["location"], r["order"], r["power"]): r["exact"] for r in json.loads(res.stdout)}
    assert rows[("S", "1", 1, 2)] == "-1" and rows[("S", "0", 1, 0)] == "-1"
    assert rows[("U", "0", 1, 0)] == "-1"
    assert not any(k[0] == "S" and k[1] == "1" and k[3] != 2 for k in rows)
    csv = tmp_path / "r.csv"
    res = run("residues", f, "--levels", 1, "--csv", csv)
    assert res.exit_code == 0 and "U,0,1,0,1,-1" in csv.read_text()
