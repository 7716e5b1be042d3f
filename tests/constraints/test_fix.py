"""fix(): exact linear solving, inconsistency, under-determination, substitution.

Mathematical inputs:

* ``x^(-s-1)(1-x)^(-t) = x^(-s-1)(1-x)^(-t-1) - x^(-s)(1-x)^(-t-1)`` (since
  ``1 - x = (1-x)``... i.e. ``(1-x)^(-t) = (1-x)^(-t-1)(1-x)`` and
  ``x^(-s-1)(1-x) = x^(-s-1) - x^(-s)``): the open-superstring integrand is
  the Beta-function integrand minus the shifted one, so a fit of
  ``a1·B1 + a2·B2 + a3·B3`` to ``constraints/open_superstring_order4.toml``
  must give ``a1 = 1, a2 = -1, a3 = 0`` exactly.
* ``B(-s,-t) = ∫ x^(-s-1)(1-x)^(-t-1)`` is symmetric in s <-> t (substitute
  x -> 1-x); ``∫ x^(-s)(1-x)^(-t-1)`` is not (its only pole is -1/t).
"""

from __future__ import annotations

from fractions import Fraction

import pytest

from lowenergy.constraints import check, fix, read_constraints, substitute, write_fixed_integrand
from lowenergy.constraints.fix import INCONSISTENT, UNDERDETERMINED, UNIQUE
from lowenergy.errors import InputError, LowEnergyError
from lowenergy.expansion.engine import expand
from lowenergy.integrand.model import Integrand
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.zeta.element import MZV, zeta

from .support import cset, eq, expansion, koba_nielsen, param_key

OPEN_SET = "constraints/open_superstring_order4.toml"
CROSSING_SET = "constraints/crossing_st_order6.toml"


def z(*idx) -> MZV:
    return zeta(*idx)


def three_term_integrand() -> Integrand:
    """a1 x^(-s-1)(1-x)^(-t-1) + a2 x^(-s)(1-x)^(-t-1) + a3 x^(-s)(1-x)^(-t)."""
    return Integrand(
        [
            koba_nielsen(-1, -1, {param_key(3, 0): MZV.one()}),
            koba_nielsen(0, -1, {param_key(3, 1): MZV.one()}),
            koba_nielsen(0, 0, {param_key(3, 2): MZV.one()}),
        ],
        parameters=("a1", "a2", "a3"),
    )


@pytest.fixture(scope="module")
def three_terms():
    return expand(three_term_integrand(), 6)


# --------------------------------------------------------------------------
# unique solutions
# --------------------------------------------------------------------------


def test_open_string_combination_is_recovered_exactly(three_terms):
    report = fix(three_terms, read_constraints(OPEN_SET))
    assert report.status == UNIQUE
    assert report.solution == {"a1": 1, "a2": -1, "a3": 0}
    assert all(isinstance(v, Fraction) for v in report.solution.values())
    assert report.free == () and report.conflict == ()
    # over-determined but consistent: many more equations than unknowns
    assert report.rank == 3 and report.equations > 3 and len(report.used) == 21
    assert report.ok and report.check.ok
    assert report.fixed.parameters == ()


def test_rational_solution_from_one_constraint_split_over_mzvs():
    # c[0,1] = a ζ(2) + b ζ(3) + c ; one constraint gives three equations
    e = expansion({(0, 1): {(1, 0, 0): z(2), (0, 1, 0): z(3), (0, 0, 1): 1}}, parameters=("a", "b", "c"), order=1)
    report = fix(e, cset(eq("one", "c[0,1]", "3/7*zeta(2) - 2*zeta(3) + 5")))
    assert report.status == UNIQUE
    assert report.solution == {"a": Fraction(3, 7), "b": -2, "c": 5}
    assert report.equations == 3


def test_relations_mixing_coefficients_and_bases():
    # c[1,0] = a, c[0,1] = b, c[1,1] = a + b; sym[1,0] = (a + b)/2
    e = expansion(
        {(1, 0): {(1, 0): 1}, (0, 1): {(0, 1): 1}, (1, 1): {(1, 0): 1, (0, 1): 1}},
        parameters=("a", "b"),
        order=2,
    )
    cs = cset(eq("sym", "sym[1,0]", "1/2"), eq("diff", "c[1,0] - 3*c[0,1] + c[1,1]/2", "-1"))
    report = fix(e, cs)
    # a + b = 1 and a - 3b + (a + b)/2 = -1  ->  a = 3/8, b = 5/8
    assert report.solution == {"a": Fraction(3, 8), "b": Fraction(5, 8)}


def test_numeric_and_inequality_constraints_are_checked_at_the_solution(three_terms):
    cs = cset(
        eq("pole", "c[-1,0]", -1),
        eq("t pole", "c[0,-1]", 0),
        eq("c01", "c[0,1]", "zeta(2)"),
        {"name": "num ok", "relation": "c[1,1]", "kind": "=", "rhs_value": "1.2020569", "abs_tol": "1e-6"},
        {"name": "num bad", "relation": "c[1,1]", "kind": "=", "rhs_value": "1.3", "abs_tol": "1e-6"},
        {"name": "ineq", "relation": "c[0,2]", "kind": ">=", "rhs": "1"},
    )
    report = fix(three_terms, cs)
    assert report.status == UNIQUE and report.solution == {"a1": 1, "a2": -1, "a3": 0}
    assert report.deferred == ("num ok", "num bad", "ineq")
    statuses = {r.name: r.status for r in report.check}
    assert statuses == {"pole": "PASS", "t pole": "PASS", "c01": "PASS", "num ok": "PASS", "num bad": "FAIL", "ineq": "PASS"}
    assert not report.ok


def test_no_parameters_is_trivially_unique():
    e = expansion({(0, 1): {(): z(2)}}, order=1)
    assert fix(e, cset(eq("a", "c[0,1]", "zeta(2)"))).status == UNIQUE
    bad = fix(e, cset(eq("a", "c[0,1]", "zeta(3)")))
    assert bad.status == INCONSISTENT and bad.conflict == ("a",)


# --------------------------------------------------------------------------
# inconsistent systems
# --------------------------------------------------------------------------


def test_conflicting_pair_is_reported():
    # c[0,0] = a, c[1,0] = a, c[0,1] = b
    e = expansion({(0, 0): {(1, 0): 1}, (1, 0): {(1, 0): 1}, (0, 1): {(0, 1): z(2)}}, parameters=("a", "b"), order=1)
    cs = cset(eq("A", "c[0,0]", 1), eq("C", "c[0,1]", "zeta(2)"), eq("B", "c[1,0]", 2), eq("D", "c[0,0] + c[0,1]", "1 + zeta(2)"))
    report = fix(e, cs)
    assert report.status == INCONSISTENT
    # D splits into a = 1 (rational part) and b = 1 (ζ(2) part), so {A, B} and
    # {B, D} are the minimal conflicts; deletion filtering in file order drops
    # A first (B and D still conflict), then C, and keeps {B, D}
    assert report.conflict == ("B", "D")
    assert report.fixed is None and report.check is None
    assert "conflicting constraints" in report.to_text()
    with pytest.raises(InputError, match="inconsistent"):
        substitute(e, report)


def test_conflict_is_smallest_not_just_minimal():
    # c[0,0] = a, c[1,0] = b.  {P1, P2, P3} (a = 0, b = 0, a + b = 1) is a minimal
    # conflict -- deletion filtering in file order finds it -- but {P4, P1}
    # (a = 1 and a = 0) is smaller; the report must give the smaller one.
    e = expansion({(0, 0): {(1, 0): 1}, (1, 0): {(0, 1): 1}}, parameters=("a", "b"), order=1)
    cs = cset(eq("P4", "c[0,0]", 1), eq("P1", "c[0,0]", 0), eq("P2", "c[1,0]", 0), eq("P3", "c[0,0] + c[1,0]", 1))
    report = fix(e, cs)
    assert report.status == INCONSISTENT
    assert sorted(report.conflict) == ["P1", "P4"]


def test_conflict_is_minimal_with_the_engine(three_terms):
    base = read_constraints(OPEN_SET)
    wrong = cset(eq("wrong c[0,1]", "c[0,1]", "2*zeta(2)"))  # forces a1 = 2, but c[-1,0] = -a1 = -1
    both = list(base) + list(wrong)
    report = fix(three_terms, both)
    assert report.status == INCONSISTENT
    assert "wrong c[0,1]" in report.conflict
    chosen = [c for c in both if c.name in report.conflict]
    assert fix(three_terms, chosen).status == INCONSISTENT
    for dropped in chosen:  # dropping any one member makes the rest consistent
        rest = [c for c in chosen if c is not dropped]
        assert fix(three_terms, rest).status != INCONSISTENT
    assert len(report.conflict) <= 3


# --------------------------------------------------------------------------
# under-determined systems
# --------------------------------------------------------------------------


def test_crossing_fixes_only_the_antisymmetric_part():
    # a1 B(-s,-t) + a2 ∫x^(-s)(1-x)^(-t-1): crossing forces a2 = 0, a1 stays free
    itg = Integrand(
        [koba_nielsen(-1, -1, {param_key(2, 0): MZV.one()}), koba_nielsen(0, -1, {param_key(2, 1): MZV.one()})],
        parameters=("a1", "a2"),
    )
    report = fix(expand(itg, 6), read_constraints(CROSSING_SET))
    assert report.status == UNDERDETERMINED
    assert report.free == ("a1",) and report.solution == {"a2": 0} and report.dependent == {}
    assert report.unfixable == ()
    assert report.suggestions == ("c[0,-1]",)  # the first coefficient (table order) that depends on a1
    assert "c[0,1]" in report.depending and "c[-1,0]" in report.depending
    assert report.check.summary["PASS"] == 20
    assert "free parameters: a1" in report.to_text()


def test_dependent_parameters_and_suggestions():
    # c[0,0] = a + b, c[1,0] = c ζ(3) + a, c[0,1] = b ; d appears nowhere
    e = expansion(
        {(0, 0): {(1, 0, 0, 0): 1, (0, 1, 0, 0): 1}, (1, 0): {(0, 0, 1, 0): z(3), (1, 0, 0, 0): 1}, (0, 1): {(0, 1, 0, 0): 1}},
        parameters=("a", "b", "c", "d"),
        order=1,
    )
    report = fix(e, cset(eq("sum", "c[0,0]", 3)))
    assert report.status == UNDERDETERMINED
    assert report.free == ("b", "c", "d")
    assert report.dependent == {"a": (Fraction(3), {"b": Fraction(-1)})}
    assert report.substitution == {"a": (Fraction(3), {"b": Fraction(-1)})}
    # after a = 3 - b: c[1,0] = c ζ(3) + 3 - b, c[0,1] = b
    assert set(report.depending) == {"c[1,0]", "c[0,1]"}
    assert report.suggestions == ("c[1,0]",)  # fixes both b and c (separate MZV monomials)
    assert report.unfixable == ("d",)
    fixed = report.fixed
    assert fixed.parameters == ("b", "c", "d")
    assert fixed.coefficients[(0, 0)] == {(0, 0, 0): MZV.rational(3)}


def test_nothing_to_solve_leaves_all_parameters_free(three_terms):
    report = fix(three_terms, cset({"name": "n", "relation": "c[0,1]", "kind": "<=", "rhs": 2}))
    assert report.status == UNDERDETERMINED and report.free == ("a1", "a2", "a3") and report.used == ()


# --------------------------------------------------------------------------
# refusals
# --------------------------------------------------------------------------


def test_non_linear_relations_are_refused(three_terms):
    with pytest.raises(InputError, match="not linear in the parameters") as info:
        fix(three_terms, cset(eq("square", "c[-1,0]^2", 1)))
    assert "square" in info.value.message and info.value.term == "a1^2" and info.value.line == 2


def test_non_linear_expansions_are_refused():
    e = expansion({(0, 0): {(2,): 1}}, parameters=("a",), order=0)
    with pytest.raises(InputError, match=r"contains a\^2"):
        fix(e, cset(eq("x", "c[0,0]", 4)))
    # but check reports the residual polynomial
    assert check(e, cset(eq("x", "c[0,0]", 4)))["x"].status == "DEPENDS"


def test_order_is_checked_first(three_terms):
    with pytest.raises(InputError, match="beyond the order 6"):
        fix(three_terms, cset(eq("x", "c[7,0]", 0)))


# --------------------------------------------------------------------------
# substitution
# --------------------------------------------------------------------------


def test_expanding_commutes_with_substituting(three_terms):
    solution = {"a1": Fraction(2, 3), "a3": -5}
    itg = substitute(three_term_integrand(), solution)
    assert itg.parameters == ("a2",) and itg.extra["fixed"] == {"a1": "2/3", "a3": "-5"}
    left = expand(itg, 6)
    right = substitute(three_terms, solution)
    assert left.coefficients == right.coefficients and left.parameters == right.parameters == ("a2",)
    assert right.meta["fixed"] == {"a1": "2/3", "a3": "-5"}


def test_substitute_a_fix_report(three_terms):
    report = fix(three_terms, read_constraints(OPEN_SET))
    fixed_integrand = substitute(three_term_integrand(), report)
    assert expand(fixed_integrand, 4).coefficients == substitute(expand(three_term_integrand(), 4), report).coefficients
    assert check(expand(fixed_integrand, 4), read_constraints(OPEN_SET)).ok


@pytest.mark.parametrize(
    "solution, message",
    [
        ({"zz": 1}, "unknown parameter 'zz'"),
        ({"a1": 0.5}, "must be an exact rational"),
        ({"a1": True}, "must be an exact rational"),
        ({"a1": "1/2"}, "must be an exact rational"),
        ([("a1", 1)], "must be a mapping"),
    ],
)
def test_bad_solutions(solution, message):
    with pytest.raises(InputError, match=message):
        substitute(three_term_integrand(), solution)


# --------------------------------------------------------------------------
# the fixed integrand file
# --------------------------------------------------------------------------

INTEGRAND_FILE = '''# a fit of the open superstring
title = "fit"
parameters = ["a1", "a10", "a2"]
notes = "three terms"
integrand = """a1*x^(-s-1)*(1-x)^(-t-1)
   + a2*x^(-s)*(1-x)^(-t-1) + a10*x^(-s)*(1-x)^(-t)"""
'''


def test_fix_then_write_the_fixed_integrand():
    original = integrand_from_text(INTEGRAND_FILE, "fit.toml")
    report = fix(expand(original, 4), read_constraints(OPEN_SET))
    assert report.status == UNIQUE and report.solution == {"a1": 1, "a10": 0, "a2": -1}
    text = write_fixed_integrand(INTEGRAND_FILE, report, source="fit.toml")
    # a10 is replaced as a whole token, never as "a1" followed by "0"; written tidily:
    # a factor 1 disappears, -1 becomes a sign, a term with factor 0 is dropped
    assert 'integrand = """x^(-s-1)*(1-x)^(-t-1)\n   - x^(-s)*(1-x)^(-t-1)"""' in text
    assert "(1)" not in text and "a10" not in text.split('"""')[1]
    assert "parameters = []" in text and text.startswith("# a fit of the open superstring\n")  # comments kept
    assert "Parameters fixed by lowenergy: a1 = 1, a10 = 0, a2 = -1" in text
    itg = integrand_from_text(text, "fixed.toml")
    assert itg.parameters == () and itg.title == "fit" and itg.notes.startswith("three terms\n")
    assert check(expand(itg, 4), read_constraints(OPEN_SET)).ok


def test_write_fixed_integrand_substitutes_tokens_only():
    text = write_fixed_integrand(INTEGRAND_FILE, {"a1": Fraction(7, 2)}, source="fit.toml")
    assert "7/2*x^(-s-1)" in text and "a10*x^(-s)" in text and "a2*x^(-s)" in text
    assert 'parameters = ["a10", "a2"]' in text


def test_write_fixed_integrand_keeps_free_parameters_and_affine_values():
    source = 'parameters = ["a", "b"]\nintegrand = "a*x^(-s-1)*(1-x)^(-t-1) + b*x^(-s)*(1-x)^(-t-1)"\n'
    e = expand(integrand_from_text(source), 3)
    report = fix(e, cset(eq("pole sum", "c[-1,0] + c[0,-1]", -3)))  # -a - a - b = -3
    assert report.status == UNDERDETERMINED and report.dependent == {"a": (Fraction(3, 2), {"b": Fraction(-1, 2)})}
    text = write_fixed_integrand(source, report)
    assert "(3/2 - 1/2*b)*x^(-s-1)" in text and 'parameters = ["b"]' in text
    itg = integrand_from_text(text)
    assert itg.parameters == ("b",)
    assert expand(itg, 3).coefficients == report.fixed.coefficients


def test_write_fixed_integrand_reports_reader_errors():
    with pytest.raises(LowEnergyError):
        write_fixed_integrand('integrand = "x^(-s-1"\n', {}, source="broken.toml")
    with pytest.raises(InputError, match="unknown parameter 'q'"):
        write_fixed_integrand('parameters = ["a"]\nintegrand = "a*x^(-s-1)*(1-x)^(-t-1)"\n', {"q": 1})


def test_escapes_survive_rewriting():
    source = 'title = "quote \\" and tab \\t é"\nparameters = ["a"]\nintegrand = "a*x^(-s-1)*(1-x)^(-t-1)"\n'
    text = write_fixed_integrand(source, {"a": Fraction(1, 3)})
    assert integrand_from_text(text).title == 'quote " and tab \t é'


# --------------------------------------------------------------------------
# layout kept, polynomials tidy (tomlkit edits the document in place)
# --------------------------------------------------------------------------

LAYOUT_FILE = """# header comment: where the ansatz comes from
title = "layout"   # trailing comment

# the free coefficients
parameters = ["p", "q", "r", "w"]  # four of them
integrand = \"\"\"
x^(-s-1)*(1-x)^(-t-1) * (1
   + p*s*t*log(x)
   + q*s^2
   + r*t
   + s*t^2*w)
\"\"\"
[extra]
""".replace("[extra]\n", "")


@pytest.mark.parametrize(
    "values, lines",
    [
        # p = 1: no "(1)*"; q = -1/2: the sign moves in front; r = 0: the line goes; w = 3 at the end of a product
        ({"p": 1, "q": Fraction(-1, 2), "r": 0, "w": 3},
         ["   + s*t*log(x)", "   - 1/2*s^2", "   + s*t^2*3)"]),
        ({"p": -1, "q": 2, "r": Fraction(1, 3), "w": 1},
         ["   - s*t*log(x)", "   + 2*s^2", "   + 1/3*t", "   + s*t^2)"]),
    ],
)
def test_rewrite_keeps_comments_and_layout_and_is_tidy(values, lines):
    text = write_fixed_integrand(LAYOUT_FILE, {k: Fraction(v) for k, v in values.items()}, source="layout.toml")
    assert text.startswith("# header comment: where the ansatz comes from\ntitle = \"layout\"   # trailing comment\n\n")
    assert "# the free coefficients\nparameters = []  # four of them\n" in text
    assert 'integrand = """\nx^(-s-1)*(1-x)^(-t-1) * (1\n' in text
    body = text.split('"""')[1]
    assert body.splitlines()[2:] == lines, body
    assert "(" + str(values["p"]) + ")" not in body and "  +" not in body.replace("\n   +", "")
    # the rewritten file is the substituted integrand, exactly (the writer checks this too)
    original = integrand_from_text(LAYOUT_FILE)
    rewritten = integrand_from_text(text)
    assert rewritten.parameters == ()
    assert expand(rewritten, 3).coefficients == expand(substitute(original, values), 3).coefficients


@pytest.mark.parametrize(
    "expression, values, expected",
    [
        ("a*s + b*t", {"a": 0, "b": 0}, "0"),
        ("s*a", {"a": 1}, "s"),
        ("s*a", {"a": -2}, "s*(-2)"),
        ("a*s - b*t", {"a": -1, "b": -1}, "-s + t"),
        ("(a*s + t)", {"a": 0}, "(t)"),
        ("(t - a*s)", {"a": 0}, "(t)"),
        ("s^a", {"a": 2}, "s^(2)"),
        ("t/a", {"a": Fraction(1, 2)}, "t/(1/2)"),
        ("a", {"a": Fraction(-3, 4)}, "-3/4"),
        ("x^(-s-1)*a1 + a10", {"a1": 5, "a10": 0}, "x^(-s-1)*5"),
    ],
)
def test_tidy_substitute_cases(expression, values, expected):
    from lowenergy.constraints.rewrite import tidy_substitute

    got = tidy_substitute(expression, {k: (Fraction(v), {}) for k, v in values.items()})
    assert got == expected
