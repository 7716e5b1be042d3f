"""`lowenergy dispersion`: coefficients rebuilt from the residues, from the CLI.

B(-s,-t) = Γ(-s)Γ(-t)/Γ(-s-t) (A&S 6.1.33 by hand; also METHOD.md §6 and the
module docstring of lowenergy.spectrum.dispersion): the s^2 coefficient is
Σ_n 1/n^3 = ζ(3), the s t coefficient Σ_n H_n/n^2 = 2 ζ(3) (Euler).
"""

from __future__ import annotations

import json

import mpmath
from typer.testing import CliRunner

from lowenergy.cli import app

runner = CliRunner()


def test_beta_function_dispersive_sums(tmp_path):
    f = tmp_path / "beta.toml"
    f.write_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"\n')
    res = runner.invoke(app, ["dispersion", str(f), "--order", "2", "--levels", "30", "--json"])
    assert res.exit_code == 0, res.stderr
    out = json.loads(res.stdout)
    rows = {r["monomial"]: r for r in out["rows"]}
    assert set(rows) == {"s", "s^2", "s*t"} and out["ok"]
    with mpmath.workdps(30):
        expected = {"s": mpmath.zeta(2), "s^2": mpmath.zeta(3), "s*t": 2 * mpmath.zeta(3)}
        for name, value in expected.items():
            got = mpmath.mpf(rows[name]["dispersive_sum"])
            assert abs(got - value) < mpmath.mpf(10) ** -10 * value, name
    text = runner.invoke(app, ["dispersion", str(f), "--order", "2", "--levels", "30"])
    assert text.exit_code == 0 and text.stdout.rstrip().endswith("all agree with the expansion")


def test_parameters_need_values(tmp_path):
    f = tmp_path / "p.toml"
    f.write_text('parameters = ["a"]\nintegrand = "x^(-s-1)*(1-x)^(-t-1)*(1 + a*t)"\n')
    res = runner.invoke(app, ["dispersion", str(f), "--order", "2"])
    assert res.exit_code == 2 and "--at a=" in res.stderr and "Traceback" not in res.stderr
    res = runner.invoke(app, ["dispersion", str(f), "--order", "2", "--levels", "30", "--at", "a=0", "--json"])
    assert res.exit_code == 0, res.stderr
    rows = {r["monomial"]: r for r in json.loads(res.stdout)["rows"]}
    with mpmath.workdps(30):
        assert abs(mpmath.mpf(rows["s^2"]["dispersive_sum"]) - mpmath.zeta(3)) < mpmath.mpf(10) ** -10
