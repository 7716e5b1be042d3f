"""Pole-structure and crossing constraints: reading, fixing, checking.

Every expected number comes from outside the package: the Gamma-function
closed form of the Euler beta integral and its digamma derivatives
(tests/constraints/gamma_poles.py, with the handbook equations), evaluated
with sympy and mpmath.
"""

from __future__ import annotations

import json
from fractions import Fraction
from pathlib import Path

import mpmath
import pytest
from typer.testing import CliRunner

from lowenergy.cli import app
from lowenergy.constraints import constraints_from_text, fix
from lowenergy.expansion.engine import expand
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.spectrum.residues import residues

from .gamma_poles import beta, flat_numerator, flat_numerator_coefficients, log_integrals, numerator_texts

runner = CliRunner()


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def ansatz(funcs, monos, prefix="a"):
    """``x^(-s-1)(1-x)^(-t-1) Σ a_{i,j} m_j F_i`` as integrand-file text, and the parameter names."""
    names, terms = [], []
    for i, f in enumerate(funcs):
        for j, m in enumerate(monos):
            name = f"{prefix}{i}_{j}"
            names.append(name)
            terms.append(f"{name}*{m}*{f}")
    quoted = ", ".join(f'"{n}"' for n in names)
    text = (f'title = "ansatz (test)"\nparameters = [{quoted}]\n'
            f'integrand = "x^(-s-1)*(1-x)^(-t-1)*({" + ".join(terms)})"\n')
    return text, names


def flat_poles_text(levels, variables=("s", "t"), extra=""):
    """[[pole]] tables: simple poles with the numerators of B(-s,-t) (derived in gamma_poles.py)."""
    out = 'source = "Gamma closed form of B(-s,-t), A&S 6.2.2 and 6.1.16 (derived in gamma_poles.py)"\n' + extra
    for var in variables:
        other = "t" if var == "s" else "s"
        res = ", ".join(f'{n} = "{flat_numerator(n, other)}"' for n in levels)
        out += f'[[pole]]\nvariable = "{var}"\nlevels = {list(levels)}\nmax_order = 1\nresidues = {{ {res} }}\n'
    return out


def solve(integrand_text, *constraint_texts, order=0):
    itg = integrand_from_text(integrand_text, "ansatz.toml")
    sets = [constraints_from_text(t, f"c{k}.toml") for k, t in enumerate(constraint_texts)]
    from lowenergy.constraints.model import pole_levels_needed, required_order

    e = expand(itg, max(order, required_order(sets)))
    table = residues(itg, max(pole_levels_needed(sets), 0))
    return fix(e, sets, poles=table)


# ---------------------------------------------------------------------------
# the independent data themselves
# ---------------------------------------------------------------------------


def test_beta_integral_convention():
    # A&S 6.2.1/6.2.2: ∫_0^1 x^(-s-1)(1-x)^(-t-1) dx = Γ(-s)Γ(-t)/Γ(-s-t) for s, t < 0;
    # quadrature after x = u^(1/0.3) near 0 and 1-x = v^(1/0.4) near 1 (METHOD.md §3).
    with mpmath.workdps(30):
        s, t = mpmath.mpf("-0.3"), mpmath.mpf("-0.4")
        left = mpmath.quad(lambda u: (1 - u ** (1 / -s)) ** (-t - 1) / -s, [0, mpmath.mpf(2) ** s])
        # the rest, x from 1/2 to 1, with 1 - x = v^(1/-t)
        right = mpmath.quad(lambda v: (1 - v ** (1 / -t)) ** (-s - 1) / -t, [0, mpmath.mpf(2) ** t])
        assert abs(left + right - beta(s, t)) < mpmath.mpf(10) ** -25


@pytest.mark.parametrize("n", [0, 1, 2, 3, 5])
def test_flat_numerators_are_the_residues_of_the_beta_function(n):
    # lim_{s->n} (s-n) B(-s,-t) at t = 0.37 (mpmath), against -(t+1)...(t+n)/n! (sympy, by hand)
    # (90 digits: n + 1e-30 must keep 60 digits of its distance to the pole)
    with mpmath.workdps(90):
        t = mpmath.mpf("0.37")
        eps = mpmath.mpf(10) ** -30
        limit = eps * beta(n + eps, t)
        closed = sum(mpmath.mpf(c.numerator) / c.denominator * t**k for k, c in enumerate(flat_numerator_coefficients(n)))
        assert abs(limit - closed) < mpmath.mpf(10) ** -25


def test_digamma_closed_forms_match_quadrature():
    # ∫ KN log^a x log^b(1-x) = (-∂_s)^a(-∂_t)^b B(-s,-t) (gamma_poles.py), checked by quadrature
    # at s = -0.3, t = -0.4 (plain quad on the log integrand: ~10 digits, METHOD.md §3)
    with mpmath.workdps(30):
        s, t = mpmath.mpf("-0.3"), mpmath.mpf("-0.4")
        closed = log_integrals(s, t)
        fs = {"1": lambda x: 1, "log(x)": mpmath.log, "log(1-x)": lambda x: mpmath.log(1 - x),
              "log(x)*log(1-x)": lambda x: mpmath.log(x) * mpmath.log(1 - x)}
        for name, f in fs.items():
            value = mpmath.quad(lambda x: x ** (-s - 1) * (1 - x) ** (-t - 1) * f(x), [0, 0.5, 1])
            assert abs(value - closed[name]) < mpmath.mpf(10) ** -8 * (1 + abs(value)), name


# ---------------------------------------------------------------------------
# flat space: an ansatz of weight <= 2 fixed by the poles of B(-s,-t) alone
# ---------------------------------------------------------------------------

FLAT_FUNCS = ["1", "G(0; x)", "G(1; x)", "G(0,0; x)", "G(0,1; x)", "G(1,0; x)", "G(1,1; x)", "zeta(2)"]
MONOS = ["1", "s", "t", "s^2", "s*t", "t^2"]


def test_flat_space_ansatz_is_fixed_by_the_poles_alone():
    text, names = ansatz(FLAT_FUNCS, MONOS)
    assert len(names) == 48
    report = solve(text, flat_poles_text(range(7)))
    # all G-words of letters 0, 1 of weight <= 2 and zeta(2), times 1, s, t, s^2, st, t^2:
    # the simple poles at s, t = 0..6 leave the flat-space integrand alone (a0_0 = 1: F = 1)
    assert report.status == "unique", report.to_text()
    assert report.solution == {n: Fraction(1 if n == "a0_0" else 0) for n in names}
    ranks = [rank for _, level, rank in report.stabilisation if level is not None]
    assert [level for _, level, _ in report.stabilisation] == list(range(7))
    assert ranks == sorted(ranks) and ranks[-1] == 48
    assert report.stable_after == next(lv for (_, lv, r) in report.stabilisation if r == 48)
    # levels 7, 8, 9 were not imposed; the solution meets them too
    assert report.further_levels == (7, 8, 9)
    assert report.further and report.further_ok
    d = report.to_dict()
    assert d["stable_after_level"] == report.stable_after and d["further_levels"] == [7, 8, 9]
    assert "nothing more fixed after level" in report.to_text()


# ---------------------------------------------------------------------------
# round trip: a hidden integrand from residues computed without the package
# ---------------------------------------------------------------------------

HIDDEN = {"b0_0": 2, "b1_2": -1, "b3_1": Fraction(1, 3), "b6_2": 1}


def hidden_value(s, t):
    # 2 - t log x + (s/3) log x log(1-x) + ζ(2) t log(1-x), integrated (digamma closed forms)
    i = log_integrals(s, t)
    return 2 * i["1"] - t * i["log(x)"] + s / 3 * i["log(x)*log(1-x)"] + mpmath.zeta(2) * t * i["log(1-x)"]


def hidden_constraints(levels):
    out = 'source = "digamma closed forms (A&S 6.3.1) and contour integrals in mpmath"\n'
    for var in "st":
        # numerators of degree <= n + 2 in the other variable (two more than flat space: s/3, t)
        nums = {n: numerator_texts(hidden_value, var, n, 2, n + 2) for n in levels}
        for k in (1, 2):
            res = ", ".join(f'{n} = "{nums[n][k]}"' for n in levels)
            out += (f'[[pole]]\nname = "{var} order {k}"\nvariable = "{var}"\nlevels = {list(levels)}\n'
                    f'max_order = 2\npole_order = {k}\nresidues = {{ {res} }}\n')
    return out


def test_round_trip_recovers_a_hidden_integrand():
    funcs = ["1", "log(x)", "log(1-x)", "log(x)*log(1-x)", "zeta(2)", "zeta(2)*log(x)", "zeta(2)*log(1-x)",
             "G(0,1; x)", "log(x)^2"]
    text, names = ansatz(funcs, ["1", "s", "t"], prefix="b")
    report = solve(text, hidden_constraints([0, 1, 2]))
    assert report.status == "unique", report.to_text()
    assert report.solution == {n: Fraction(HIDDEN.get(n, 0)) for n in names}
    assert report.further_ok and report.further_levels == (3, 4, 5)


# ---------------------------------------------------------------------------
# under-determined, inconsistent, crossing, several files
# ---------------------------------------------------------------------------


def test_underdetermined_names_free_parameters_and_numerators(tmp_path):
    # 1 and log(1-x) have only simple poles at s = n; log x brings 1/(s-n)^2 (from -∂_s B)
    text, _ = ansatz(["1", "log(x)", "log(1-x)"], ["1"])
    (tmp_path / "a.toml").write_text(text)
    (tmp_path / "c.toml").write_text('source = "test"\n[[pole]]\nvariable = "s"\nlevels = [0, 1, 2]\nmax_order = 1\n')
    res = run("fix", tmp_path / "a.toml", tmp_path / "c.toml")
    assert res.exit_code == 0, res.output
    assert "status: underdetermined" in res.stdout
    assert "a1_0 = 0" in res.stdout
    assert "free parameters: a0_0, a2_0" in res.stdout
    assert "pole numerators that would fix them: numerator of 1/(s-0)^1" in res.stdout
    js = json.loads(run("fix", tmp_path / "a.toml", tmp_path / "c.toml", "--json").stdout)
    assert js["status"] == "underdetermined" and js["free"] == ["a0_0", "a2_0"] and js["conflict"] == []
    assert len(js["residue_suggestions"]) == 2


def test_inconsistent_files_give_a_smallest_conflict(tmp_path):
    text, _ = ansatz(["1", "log(1-x)"], ["1", "t"])
    (tmp_path / "a.toml").write_text(text)
    (tmp_path / "good.toml").write_text(flat_poles_text([0, 1, 2], ("s",)))
    # a second file that wants +(t+1) at s = 1: against -(t+1) in the first
    (tmp_path / "bad.toml").write_text('source = "invented, to conflict"\n[[pole]]\nvariable = "s"\n'
                                       'levels = [1]\nmax_order = 1\nresidues = { 1 = "t + 1" }\n')
    res = run("fix", tmp_path / "a.toml", tmp_path / "good.toml", tmp_path / "bad.toml", "--write", tmp_path / "o.toml")
    assert res.exit_code == 2 and not (tmp_path / "o.toml").exists()
    res = run("fix", tmp_path / "a.toml", tmp_path / "good.toml", tmp_path / "bad.toml")
    assert res.exit_code == 1
    assert "status: inconsistent" in res.stdout
    # every numerator of good.toml fixes (a0_0, a0_1, a1_0, a1_1) = (1, 0, 0, 0) by itself, so the
    # smallest conflicts are pairs: the bad numerator and one of the good ones
    line = next(l for l in res.stdout.splitlines() if l.startswith("conflicting constraints (smallest set found): "))
    assert line.endswith(", pole s: s=1, order 1, numerator (bad.toml)") and line.count("(good.toml)") == 1
    assert ", order 1, numerator (good.toml)" in line
    js = json.loads(run("fix", tmp_path / "a.toml", tmp_path / "good.toml", tmp_path / "bad.toml", "--json").stdout)
    assert js["status"] == "inconsistent" and len(js["conflict"]) == 2 and js["solution"] == {}
    # with good.toml alone the same ansatz is fixed to B(-s,-t)
    res = run("fix", tmp_path / "a.toml", tmp_path / "good.toml", "--json")
    assert res.exit_code == 0 and json.loads(res.stdout)["solution"] == {"a0_0": "1", "a0_1": "0", "a1_0": "0", "a1_1": "0"}


def test_antisymmetric_crossing_with_a_wilson_coefficient(tmp_path):
    # ∫KN log x = -∂_s B has the Laurent pole -1/s^2 (B = -1/s - 1/t + ..., METHOD.md §4), and
    # log(1-x) gives -1/t^2.  a*log x + b*log(1-x) antisymmetric under s <-> t: a = -b;
    # c[-2,0] = -a = 1 then gives a = -1, b = 1.
    text, _ = ansatz(["log(x)", "log(1-x)"], ["1"])
    cross = 'source = "test"\n[crossing]\nsymmetry = "antisymmetric"\norder = 2\nlevels = [0, 1, 2]\n'
    wilson = 'source = "test"\n[[constraint]]\nname = "double pole"\nrelation = "c[-2,0]"\nkind = "="\nrhs = 1\n'
    report = solve(text, cross, wilson)
    assert report.status == "unique" and report.solution == {"a0_0": -1, "a1_0": 1}
    assert [step for step, _, _ in report.stabilisation][-2:] == ["crossing of the Laurent coefficients",
                                                                 "Wilson coefficients"]
    assert report.further_ok and report.further_levels == (3, 4, 5)
    only_cross = solve(text, cross)
    assert only_cross.status == "underdetermined" and len(only_cross.free) == 1


def test_symmetric_crossing_carries_s_poles_to_t_poles():
    # B(-s,-t) is symmetric; with crossing, the poles in s alone fix what poles in s and t fix
    text, names = ansatz(["1", "G(0; x)", "G(1; x)", "G(0,1; x)"], ["1", "s", "t"])
    report = solve(text, flat_poles_text(range(4), ("s",), extra='[crossing]\nsymmetry = "symmetric"\norder = 2\n'))
    assert report.status == "unique", report.to_text()
    assert report.solution == {n: Fraction(1 if n == "a0_0" else 0) for n in names}


def test_nonlinear_integrand_is_refused(tmp_path):
    (tmp_path / "a.toml").write_text('parameters = ["a", "b"]\nintegrand = "x^(-s-1)*(1-x)^(-t-1)*(a*b + a)"\n')
    (tmp_path / "c.toml").write_text(flat_poles_text([1], ("s",)))
    res = run("fix", tmp_path / "a.toml", tmp_path / "c.toml")
    assert res.exit_code == 2 and "not linear in the parameters" in res.stderr and "Traceback" not in res.output


# ---------------------------------------------------------------------------
# check with [[pole]] tables
# ---------------------------------------------------------------------------


def test_check_reports_pole_conditions_per_level_and_order(tmp_path):
    (tmp_path / "b.toml").write_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"\n')
    (tmp_path / "c.toml").write_text(flat_poles_text([0, 1, 2], ("s", "t")).replace(
        '[[pole]]\nvariable = "s"', '[[pole]]\nvariable = "s"\nmax_degree = "n"'))
    res = run("check", tmp_path / "b.toml", tmp_path / "c.toml")
    assert res.exit_code == 0, res.output
    assert "PASS    pole s: s=2, order 1, numerator  [imposed]" in res.stdout
    assert "PASS    pole s: s=2, order 1, degree <= 2  [imposed]" in res.stdout
    assert "PASS    pole t: t=5, no order above 1  [checked only]" in res.stdout
    # (t+1)(t+2)/2 with the wrong sign fails at level 2 only
    bad = (tmp_path / "c.toml").read_text().replace('2 = "-t^2/2 - 3*t/2 - 1"', '2 = "t^2/2 + 3*t/2 + 1"')
    (tmp_path / "bad.toml").write_text(bad)
    res = run("check", tmp_path / "b.toml", tmp_path / "bad.toml", "--json")
    assert res.exit_code == 1
    failed = [p for p in json.loads(res.stdout)["poles"] if p["status"] != "PASS"]
    assert [(p["condition"], p["level"], p["order"]) for p in failed] == [("pole s: s=2, order 1, numerator", 2, 1)]
    # a coefficient table has no poles to check
    csv = tmp_path / "x.csv"
    csv.write_text("i,j,exact\n")
    res = run("check", csv, tmp_path / "c.toml")
    assert res.exit_code == 2 and "not a coefficient table" in res.stderr


# ---------------------------------------------------------------------------
# malformed [[pole]] tables: one message naming file, line and key; exit 2; nothing written
# ---------------------------------------------------------------------------

GOOD_POLE = ['variable = "s"', "levels = [1, 2]", "max_order = 1"]

MALFORMED = [
    # (lines of the table, key expected in the message, text expected in the message)
    (['variable = "v"', "levels = [1]", "max_order = 1"], "variable", 'must be "s", "t" or "u"'),
    (['variable = "S"', "levels = [1]", "max_order = 1"], "variable", 'in lower case'),
    # poles in u = -s-t: sphere integrands only (a.toml below is an interval integrand)
    (['variable = "u"', "levels = [1]", "max_order = 1"], "variable", "only sphere integrands have"),
    (['variable = "u"', "levels = [1]", "max_order = 1", 'residues = { 1 = "t+1" }'], "residues.1",
     "the numerator of a pole in u is a polynomial in s only"),
    (["levels = [1]", "max_order = 1"], "variable", "missing required key 'variable'"),
    (['variable = "s"', "levels = 2", "max_order = 1"], "levels", "must be a list of integers"),
    (['variable = "s"', "levels = [1, -2]", "max_order = 1"], "levels", "out of range"),
    (['variable = "s"', "levels = [1, 1]", "max_order = 1"], "levels", "appears twice"),
    (['variable = "s"', "levels = []", "max_order = 1"], "levels", "is empty"),
    (['variable = "s"', "levels = [1]", "max_order = -1"], "max_order", "must be an integer from 0"),
    (['variable = "s"', "levels = [1]", "max_order = 1.5"], "max_order", "must be an integer from 0"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'max_degree = "n^2"'], "max_degree", "not linear in n"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'max_degree = "m + 1"'], "max_degree", "unknown name 'm'"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'max_degree = "n/2"'], "max_degree", "integer coefficients"),
    (['variable = "s"', "levels = [1]", "max_order = 1", "max_degree = 1.5"], "max_degree", "must be an integer"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'residues = "t+1"'], "residues", "non-empty table"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'residues = { x = "t+1" }'], "residues.x", "is not a level"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'residues = { 7 = "t+1" }'], "residues.7",
     "neither in 'levels'"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'residues = { 1 = "s+1" }'], "residues.1",
     "unknown name 's'"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'residues = { 1 = "t+" }'], "residues.1", ""),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'residues = { 1 = "t^(1/2)" }'], "residues.1",
     "powers of t must be integers"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'residues = { 1 = "1/t" }'], "residues.1",
     "division is by rational numbers only"),
    (['variable = "s"', "levels = [1]", "max_order = 1", 'residues = { 1 = 2.5 }'], "residues.1", "must be a string"),
    (['variable = "s"', "levels = [1]", "max_order = 1", "pole_order = 2", 'residues = { 1 = "t" }'], "pole_order",
     "exceeds 'max_order'"),
    (['variable = "s"', "levels = [1]", "max_order = 1", "pole_order = 1"], "pole_order", "without 'residues'"),
    (['variable = "s"', "levels = [1]", "max_order = 1", "order = 2"], "order", "did you mean 'max_order'"),
    (['variable = "s"', "levels = [1]", "max_order = 1", "check_levels = [1]"], "check_levels",
     "both imposed and only checked"),
    (['name = ""', 'variable = "s"', "levels = [1]", "max_order = 1"], "name", "invalid pole-table name"),
]


@pytest.mark.parametrize("lines,key,needle", MALFORMED, ids=[f"{m[1]}-{k}" for k, m in enumerate(MALFORMED)])
def test_malformed_pole_table(tmp_path, lines, key, needle):
    (tmp_path / "a.toml").write_text('parameters = ["a"]\nintegrand = "a*x^(-s-1)*(1-x)^(-t-1)"\n')
    body = 'source = "test"\n# a comment line\n[[pole]]\n' + "\n".join(GOOD_POLE) + "\n\n[[pole]]\n" + "\n".join(lines) + "\n"
    (tmp_path / "bad.toml").write_text(body)
    out = tmp_path / "out.toml"
    res = run("fix", tmp_path / "a.toml", tmp_path / "bad.toml", "--write", out)
    assert res.exit_code == 2, res.output
    assert "Traceback" not in res.output and not out.exists()
    message = res.stderr.strip()
    assert len(message.splitlines()) == 1 and "bad.toml" in message and needle in message
    # the line of the key (or, for a missing key, of the second [[pole]] header: line 8)
    all_lines = body.splitlines()
    top = key.split(".")[0]
    expected = next((k + 1 for k, l in enumerate(all_lines) if k >= 8 and l.startswith(top + " =")), 8)
    assert f"line {expected}" in message and key in message
