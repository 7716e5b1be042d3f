"""``[[pole]]`` tables with ``variable = "u"``: poles at u = -s-t = n of sphere
integrands, numerators polynomials in s (Laurent expansion in u at fixed s).

Sources
-------
* Complex Beta function (Dotsenko & Fateev, Nucl. Phys. B 240 (1984) 312;
  Kawai, Lewellen & Tye, Nucl. Phys. B 269 (1986) 1):
  ``(1/π) ∫ d²z |z|^(-2S-2)|1-z|^(-2T-2) = Γ(-S)Γ(-T)Γ(1+S+T)/(Γ(1+S)Γ(1+T)Γ(-S-T))``.
  Its residues at U = n (T = -S-U substituted, residue in U at fixed S) are
  computed here by sympy from this Gamma form
  (:func:`tests.svpolylog.test_sphere_residues.closed_residue`), never by the
  code under test.  Its Laurent series is the A&S 6.1.33 exponential built
  with Fractions in :func:`tests.svpolylog.test_sphere.expected_beta`.
* ``(1/π) ∫ d²z |z|^(-2S-2)|1-z|^(-2T) = T/(S U)·(1 + O(STU))`` (same
  sources): the massless pole ``-1/U`` at U = 0 (T/(SU) = -1/S - 1/U).
"""

from __future__ import annotations

import pytest
import sympy
from typer.testing import CliRunner

from lowenergy.ansatz.generate import AnsatzSpec, generate
from lowenergy.cli import app
from lowenergy.constraints import constraints_from_text
from lowenergy.constraints.poles import pole_conditions
from lowenergy.errors import LowEnergyError
from lowenergy.integrand.reader import read_integrand
from lowenergy.svpolylog.sphere import expand_sphere
from lowenergy.svpolylog.sphere_residues import sphere_residues

from .test_sphere import expected_beta
from .test_sphere_residues import S, _poly, closed_residue

runner = CliRunner()

BETA = 'domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"\n'
SHIFTED = 'domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T)"\n'


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def _text(expr) -> str:
    """A sympy polynomial in S as numerator text in the constraint files' lower-case s."""
    return str(sympy.expand(expr).subs(S, sympy.Symbol("s"))).replace("**", "^")


def _u_table(residues: dict, levels, extra="") -> str:
    body = ", ".join(f'{n} = "{text}"' for n, text in residues.items())
    return (f'source = "sympy residues of the Gamma form"\n[[pole]]\nvariable = "u"\nlevels = {list(levels)}\n'
            f"max_order = 1\n{extra}residues = {{ {body} }}\n")


def test_reader_u_tables():
    cs = constraints_from_text(_u_table({2: "-(s+1)^2"}, [1, 2]), source="u.toml")
    pole = cs.poles[0]
    assert (pole.variable, pole.var_index, pole.other, pole.name) == ("u", 2, "s", "pole u")
    assert pole.check_levels == (3, 4, 5)


@pytest.mark.parametrize("text, needle, hint", [
    ('variable = "w"', "must be \"s\", \"t\" or \"u\"", "sphere integrands"),
    ('variable = "U"', "not 'U'", 'variable = "u"'),
])
def test_reader_refuses_other_variables(text, needle, hint):
    with pytest.raises(LowEnergyError) as err:
        constraints_from_text(f'source = "x"\n[[pole]]\n{text}\nlevels = [1]\nmax_order = 1\n', source="u.toml")
    assert needle in str(err.value) and "u.toml, line 3" in str(err.value) and hint in err.value.hint


def test_reader_refuses_t_in_a_u_numerator():
    with pytest.raises(LowEnergyError) as err:
        constraints_from_text(_u_table({1: "t + 1"}, [1]), source="u.toml")
    assert "polynomial in s only" in err.value.hint and "line 6" in str(err.value)


def test_complex_beta_u_residues_pass_and_wrong_ones_fail(tmp_path):
    f = tmp_path / "beta.toml"
    f.write_text(BETA)
    truth = {n: closed_residue("U", n) for n in (1, 2, 3)}
    assert truth[1] == -1 and sympy.expand(truth[2] + (S + 1) ** 2) == 0     # sympy, not the code under test
    good = tmp_path / "good.toml"
    good.write_text(_u_table({n: _text(r) for n, r in truth.items()}, [1, 2, 3], 'max_degree = "2*n-2"\n'))
    res = run("check", f, good)
    assert res.exit_code == 0, res.output
    assert "PASS    pole u: u=3, order 1, numerator  [imposed]" in res.output
    assert "pole u: u=4, order 1, degree <= 6  [checked only]" in res.output
    # wrong numerators: a plausible slip (s+1)(s+2) for (s+1)^2, a sign, a missing level
    for wrong in ({2: "-(s+1)*(s+2)"}, {2: "(s+1)^2"}, {3: _text(truth[2])}):
        bad = tmp_path / "bad.toml"
        bad.write_text(_u_table(wrong, [1, 2, 3]))
        res = run("check", f, bad)
        assert res.exit_code == 1 and "FAIL    pole u: u=" in res.output, (wrong, res.output)
    # the degree bound 2n-2 is tight: 2n-3 fails
    tight = tmp_path / "tight.toml"
    tight.write_text(_u_table({1: "-1"}, [1, 2], 'max_degree = "2*n-3"\n'))
    res = run("check", f, tight)
    assert res.exit_code == 1 and "FAIL    pole u: u=2, order 1, degree <= 1" in res.output


def test_massless_u_pole_and_no_double_poles(tmp_path):
    f = tmp_path / "shifted.toml"
    f.write_text(SHIFTED)
    c = tmp_path / "c.toml"
    c.write_text(_u_table({0: "-1"}, [0]))
    assert run("check", f, c).exit_code == 0
    c.write_text(_u_table({0: "1"}, [0]))
    assert run("check", f, c).exit_code == 1
    # the complex Beta function has no pole at U = 0 at all
    b = tmp_path / "beta.toml"
    b.write_text(BETA)
    c.write_text('source = "x"\n[[pole]]\nvariable = "u"\nlevels = [0]\nmax_order = 0\ncheck_levels = []\n')
    assert run("check", b, c).exit_code == 0
    assert run("check", f, c).exit_code == 1


def test_u_table_with_an_interval_integrand_refused(tmp_path):
    a = tmp_path / "a.toml"
    a.write_text('parameters = ["a"]\nintegrand = "a*x^(-s-1)*(1-x)^(-t-1)"\n')
    c = tmp_path / "c.toml"
    c.write_text(_u_table({1: "-1"}, [1]))
    out = tmp_path / "fixed.toml"
    for args in (("check", a, c), ("fix", a, c, "--write", out)):
        res = run(*args)
        assert res.exit_code == 2 and not out.exists() and "Traceback" not in res.output
        message = res.stderr.strip()
        assert len(message.splitlines()) == 1
        assert "c.toml, line 3" in message and "only sphere integrands" in message
    # the same from Python with an interval pole table
    from lowenergy.spectrum.residues import residues

    table = residues(read_integrand(a), 2)
    cs = constraints_from_text(c.read_text(), source="c.toml")
    with pytest.raises(LowEnergyError, match="only sphere integrands"):
        pole_conditions(cs.poles[0], table, [1])


S_POLES = '''source = "closed-string spectrum: simple poles, spin <= 2n"
[[pole]]
variable = "s"
levels = [0, 1, 2]
max_order = 1
max_degree = "2*n"
[crossing]
symmetry = "symmetric"
order = 2
'''


def test_fix_generated_ansatz_with_u_data(tmp_path):
    """S poles (order and degree only, no numerator) and crossing leave the
    normalization and one more structure free; the U residues at U = 1, 2 of the
    complex Beta form (sympy) fix both, without any S numerator or low-energy
    coefficient, and the result is the complex Beta function."""
    ans = tmp_path / "ans.toml"
    ans.write_text(generate(AnsatzSpec(weight=2, degree=2, symmetry="symmetric", domain="sphere")).to_toml())
    s_poles = tmp_path / "s.toml"
    s_poles.write_text(S_POLES)
    res = run("fix", ans, s_poles)
    assert res.exit_code == 0 and "free parameters: a1, a15, a19, a22" in res.output, res.output
    u_poles = tmp_path / "u.toml"
    u_poles.write_text(_u_table({n: _text(closed_residue("U", n)) for n in (1, 2)}, [0, 1, 2],
                                'max_degree = "2*n-2"\n'))
    fixed = tmp_path / "fixed.toml"
    res = run("fix", ans, s_poles, u_poles, "--write", fixed)
    assert res.exit_code == 0, res.output
    assert "a1 = 1/2\n" in res.output and "a22 = 0\n" in res.output
    # a15, a19 multiply S L_10(z) + T L_10(1-z) - (S L_01(z) + ...) type combinations, odd
    # under z -> conj(z), whose integrals vanish identically (see test_sphere_ansatz.py)
    assert "free parameters: a15, a19\n" in res.output
    assert "further levels, not imposed (3, 4, 5): 15 passed, 0 failed" in res.output
    integrand = read_integrand(fixed)
    zero = (0,) * len(integrand.parameters)
    order = 5
    expansion = expand_sphere(integrand, order)
    got = {}
    for key, pp in expansion.coefficients.items():
        assert set(pp) <= {zero}, (key, pp)
        got[key] = pp[zero]
    assert got == expected_beta(order) and not expansion.u_poles
    table = sphere_residues(integrand, 3)
    for n in (1, 2, 3):
        rp = table.u_poles[n][1]
        assert all(set(pp) <= {zero} for pp in rp.values())
        assert sympy.expand(_poly({p: {(): pp[zero]} for p, pp in rp.items()}, S) - closed_residue("U", n)) == 0
    # a wrong U numerator makes the set inconsistent, and the conflict names it
    u_poles.write_text(_u_table({1: "-1", 2: "-(s+1)*(s+2)"}, [0, 1, 2]))
    res = run("fix", ans, s_poles, u_poles)
    assert res.exit_code == 1 and "inconsistent" in res.output and "pole u: u=2, order 1, numerator" in res.output


@pytest.mark.parametrize("ref, needle", [
    ("c[1,0,x]", "c[i,0,k]"),
    ("c[1,0,]", "c[i,0,k]"),
    ("c[1,0,-1", "c[i,0,k]"),
    ("c[1,x]", "c[i,j]"),
])
def test_malformed_u_row_hint(tmp_path, ref, needle):
    f = tmp_path / "beta.toml"
    f.write_text(BETA)
    c = tmp_path / "c.toml"
    c.write_text(f'source = "x"\n[[constraint]]\nname = "r"\nrelation = "c[0,1] + {ref}"\nkind = "="\nrhs = "0"\n')
    res = run("check", f, c)
    assert res.exit_code == 2 and "Traceback" not in res.output
    message = res.stderr.strip()
    assert len(message.splitlines()) == 1 and "c.toml, line 4, column" in message
    assert needle in message.split("hint:")[1]
    if needle == "c[i,0,k]":
        assert "e.g. c[1,0,-1]" in message


def test_shipped_closed_string_pole_example(tmp_path):
    # examples/closed_string_poles.toml: every numerator equals sympy's residue of the Gamma
    # form of the closed-string factor, and check passes on examples/closed_string.toml
    from pathlib import Path

    from lowenergy.constraints import read_constraints
    from lowenergy.constraints.poles import evaluate_numerator

    ex = Path(__file__).resolve().parents[2] / "examples"
    tt, uu = sympy.symbols("T U")
    v = (sympy.gamma(-S) * sympy.gamma(1 - tt) * sympy.gamma(S + tt)
         / (sympy.gamma(1 + S) * sympy.gamma(tt) * sympy.gamma(1 - S - tt)))
    cs = read_constraints(str(ex / "closed_string_poles.toml"))
    assert [p.variable for p in cs.poles] == ["s", "u"]
    for pole in cs.poles:
        for n, _text, tree in pole.residues:
            got = evaluate_numerator(tree, pole.other)
            if pole.variable == "s":
                want, var = sympy.residue(v, S, n), tt
            else:
                want, var = sympy.residue(v.subs(tt, -S - uu), uu, n), S
            mine = sum(sympy.Rational(c.rational_value().numerator, c.rational_value().denominator) * var ** p
                       for p, c in got.items())
            assert sympy.expand(sympy.gammasimp(want) - mine) == 0, (pole.variable, n)
    res = run("check", ex / "closed_string.toml", ex / "closed_string_poles.toml")
    assert res.exit_code == 0 and "0 failed" in res.output, res.output
