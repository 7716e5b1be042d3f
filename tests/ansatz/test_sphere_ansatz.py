"""``lowenergy ansatz --domain sphere``: closed-string ansätze of single-valued
polylogarithms, fixed by [[pole]] + [crossing] + one low-energy relation.

Expected values come from the complex Beta function
``(1/π) ∫ d²z |z|^(2a-2)|1-z|^(2b-2) = Γ(a)Γ(b)Γ(1-a-b)/(Γ(1-a)Γ(1-b)Γ(a+b))``
(Dotsenko & Fateev, Nucl. Phys. B 240 (1984); Kawai, Lewellen & Tye, Nucl.
Phys. B 269 (1986)), the Virasoro–Shapiro-type closed-string factor at
a = -S, b = -T: its Laurent series from A&S 6.1.33 (built with Fractions in
tests/svpolylog/test_sphere.py) and its residues by sympy from the Gamma
form (tests/svpolylog/test_sphere_residues.py).
"""

from __future__ import annotations

from fractions import Fraction

import pytest
import sympy
from typer.testing import CliRunner

from lowenergy.ansatz.generate import AnsatzSpec, generate
from lowenergy.cli import app
from lowenergy.errors import InputError
from lowenergy.integrand.reader import integrand_from_text, read_integrand
from lowenergy.svpolylog.sphere import expand_sphere
from lowenergy.svpolylog.sphere_residues import sphere_residues
from lowenergy.zeta.element import MZV

from ..svpolylog.test_sphere import expected_beta
from ..svpolylog.test_sphere_residues import S, T, _poly, closed_residue

runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_sphere_ansatz_file_reads_back():
    a = generate(AnsatzSpec(weight=2, degree=1, domain="sphere"))
    # distinct L_w(z) are independent: 1 + 2 + 4 words, each with 3 monomials
    assert (a.functions, a.independent_functions, len(a.parameters)) == (7, 7, 21)
    itg = integrand_from_text(a.to_toml(), "ans.toml")
    assert itg.domain == "sphere" and itg.variables == ("S", "T") and len(itg.parameters) == 21
    assert "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)" in a.to_toml()
    assert "--domain sphere" in a.spec.command()


def test_sphere_symmetric_images_reduced():
    a = generate(AnsatzSpec(weight=1, degree=1, symmetry="symmetric", domain="sphere"))
    # weight 0: 2·1 and S+T; weight 1: L_0 + L_1 (= image of L_1 + L_0), S L_0 + T L_1, S L_1 + T L_0
    assert [row["parameters"] for row in a.per_weight] == [2, 3]
    assert "svpolylog(0; 1-z)" in a.to_toml()


@pytest.mark.parametrize("spec, fragment", [
    (dict(weight=1, family="mpl", domain="sphere"), "multivalued"),
    (dict(weight=1, x_shift=1, y_shift=1, domain="sphere"), "p + q <= 1"),
    (dict(weight=1, domain="disc"), "unknown --domain"),
])
def test_sphere_refusals(spec, fragment):
    with pytest.raises(InputError, match=fragment.replace("+", r"\+")):
        generate(AnsatzSpec(**spec))


def test_svpolylog_at_one_minus_z_is_the_reflected_integral():
    # (1/π)∫ |z|^(-2S-2)|1-z|^(-2T-2) L_w(1-z) = same with S <-> T and L_w(z) (z -> 1-z)
    head = 'domain = "sphere"\nvariables = ["S", "T"]\n'
    a = integrand_from_text(head + 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(0,0,1,1; 1-z)"',
                            "a.toml")
    b = integrand_from_text(head + 'integrand = "abs(z)^(-2*T-2)*abs(1-z)^(-2*S-2)*svpolylog(0,0,1,1; z)"',
                            "b.toml")
    ea, eb = expand_sphere(a, 3), expand_sphere(b, 3)
    assert ea.coefficients and ea.coefficients == eb.coefficients


def test_generated_ansatz_fixed_by_poles_reproduces_the_closed_string_factor(tmp_path):
    ans = tmp_path / "ans.toml"
    res = run("ansatz", "--weight", 2, "--degree", 2, "--symmetry", "symmetric", "--domain", "sphere",
              "--write", ans)
    assert res.exit_code == 0, res.output
    cons = tmp_path / "cons.toml"
    # the closed-string spectrum: simple poles only, degree 2n at level n, and the
    # residue at S = 1 of the complex Beta form, -(T+1)^2; crossing; one normalization
    cons.write_text('''source = "test: complex Beta form"
[[pole]]
variable = "s"
levels = [0, 1, 2]
max_order = 1
max_degree = "2*n"
residues = { 1 = "-(t+1)^2" }
[crossing]
symmetry = "symmetric"
order = 2
[[constraint]]
name = "massless pole"
relation = "c[-1,0]"
kind = "="
rhs = -1
''')
    fixed = tmp_path / "fixed.toml"
    res = run("fix", ans, cons, "--write", fixed)
    assert res.exit_code == 0, res.output
    assert "a1 = 1/2" in res.output                      # 2*a1 = 1: the bare factor
    integrand = read_integrand(fixed)
    # what is left free multiplies functions whose integral vanishes identically
    # (odd under z -> conj(z), e.g. L_01 - L_10 = -4i D(z)): every coefficient is
    # free of them and equals the closed form
    order = 6
    expansion = expand_sphere(integrand, order)
    zero = (0,) * len(integrand.parameters)
    got = {}
    for key, pp in expansion.coefficients.items():
        assert set(pp) <= {zero}, (key, pp)
        got[key] = pp[zero]
    assert got == expected_beta(order)
    assert not expansion.u_poles
    table = sphere_residues(integrand, 3)
    for n in range(0, 4):
        rp = {p: {(): pp[zero]} for p, pp in table.residue(n).items() if zero in pp}
        assert all(set(pp) <= {zero} for pp in table.residue(n).values())
        assert sympy.expand(_poly(rp, T) - closed_residue("S", n)) == 0
