"""check(): exact and numeric comparisons, parameters, bases, reports.

Mathematical inputs and where they come from:

* ``∫_0^1 x^(-s-1)(1-x)^(-t) dx = Γ(-s)Γ(1-t)/Γ(1-s-t)`` (A&S 6.2.1-6.2.2); its
  coefficients are in ``constraints/open_superstring_order4.toml`` (derived
  there from A&S 6.1.33 and checked numerically in test_shipped.py).
* ``ζ(2) = π^2/6`` and ``ζ(4) = π^4/90`` (Euler; A&S 23.2.24).
* ``ζ(3)ζ(5) = ζ(3,5) + ζ(5,3) + ζ(8)``: the stuffle (harmonic) product of
  the defining sums (Hoffman, J. Algebraic Combin. 11 (2000) 49, eq. (2)).
* ``ζ(2,1) = ζ(3)`` (Euler).
"""

from __future__ import annotations

import json
from fractions import Fraction

import mpmath
import pytest

from lowenergy.constraints import check, read_constraints
from lowenergy.constraints.check import DEPENDS, FAIL, PASS, sign_of
from lowenergy.errors import InputError
from lowenergy.expansion.engine import expand
from lowenergy.integrand.model import Integrand
from lowenergy.zeta.element import MZV, zeta

from .support import cset, eq, expansion, koba_nielsen

OPEN_SET = "constraints/open_superstring_order4.toml"


@pytest.fixture(scope="module")
def open_string():
    """The engine's expansion of x^(-s-1)(1-x)^(-t) to order 4."""
    return expand(Integrand([koba_nielsen(-1, 0)]), 4)


def z(*idx) -> MZV:
    return zeta(*idx)


def test_engine_expansion_passes_exactly(open_string):
    report = check(open_string, read_constraints(OPEN_SET))
    assert report.ok and report.summary == {PASS: 21, FAIL: 0, DEPENDS: 0, "total": 21}
    for r in report:
        assert r.mode == "exact" and r.residual == {} and r.residual_is_zero
        assert r.tolerance is None


def test_single_wrong_coefficient_is_caught_exactly(open_string):
    # c[2,1] = ζ(4) = 2/5 ζ(2)^2; replace it by ζ(2)^2 (a plausible slip)
    wrong = expansion({k: dict(v) for k, v in open_string.coefficients.items()}, order=4)
    wrong.coefficients[(2, 1)] = {(): z(2) ** 2}
    report = check(wrong, read_constraints(OPEN_SET))
    assert report.failed == ("c[2,1]",)
    r = report["c[2,1]"]
    assert r.residual == {(): z(2) ** 2 * Fraction(3, 5)}
    with mpmath.workdps(30):
        # 3/5 ζ(2)^2 = 3/5 (π^2/6)^2 = π^4/60
        assert abs(r.residual_numeric[()] - mpmath.pi ** 4 / 60) < mpmath.mpf(10) ** -25


def test_tiny_error_is_caught_exactly_but_not_numerically(open_string):
    # c[0,1] off by 10^-40: the exact residual sees it, a numeric rhs with a
    # tolerance of 10^-20 does not (as documented)
    wrong = expansion({k: dict(v) for k, v in open_string.coefficients.items()}, order=4)
    wrong.coefficients[(0, 1)] = {(): z(2) + Fraction(1, 10**40)}
    cs = cset(
        eq("exact", "c[0,1]", "zeta(2)"),
        {"name": "numeric", "relation": "c[0,1]", "kind": "=", "rhs_value": "1.6449340668482264364724151666460251892", "abs_tol": "1e-20"},
    )
    report = check(wrong, cs)
    assert report["exact"].status == FAIL and report["exact"].residual == {(): MZV.rational(Fraction(1, 10**40))}
    assert report["numeric"].status == PASS
    # and a numeric rhs does catch an error above its tolerance
    wrong.coefficients[(0, 1)] = {(): z(2) + Fraction(1, 10**15)}
    assert check(wrong, cs)["numeric"].status == FAIL


def test_equal_numbers_written_differently_pass():
    # ζ(3)ζ(5) = ζ(3,5) + ζ(5,3) + ζ(8) (stuffle), ζ(2,1) = ζ(3), π^4/90 = ζ(4)
    cand = expansion({(0, 2): {(): z(3) * z(5)}, (1, 0): {(): z(3)}, (2, 1): {(): z(4)}}, order=3)
    cs = cset(
        eq("stuffle", "c[0,2]", "zeta(3,5) + zeta(5,3) + zeta(8)"),
        eq("euler", "c[1,0] - zeta(2,1)", 0),
        eq("pi", "90*c[2,1]", "pi^4"),
        eq("g", "c[1,0]", "-G(0,0,1; 1)"),  # G(0,0,1;1) = -ζ(3) with this package's sign convention
    )
    report = check(cand, cs)
    assert report.ok, report.to_text()


def test_polynomial_relations_are_exact():
    cand = expansion({(0, 1): {(): z(2)}, (0, 3): {(): z(4)}}, order=3)
    # ζ(2)^2 = 5/2 ζ(4)  (Euler)
    report = check(cand, cset(eq("square", "c[0,1]^2 - 5/2*c[0,3]", 0), eq("cube", "(c[0,1]*2)^3/8", "zeta(2)^3")))
    assert report.ok


# --------------------------------------------------------------------------
# numeric right-hand sides: |lhs - rhs| <= abs_tol + rel_tol |rhs|
# --------------------------------------------------------------------------


def _decimal(x, digits: int = 40) -> str:
    return mpmath.nstr(x, digits, min_fixed=-50, max_fixed=50)


@pytest.fixture(scope="module")
def zeta2_candidate():
    return expansion({(0, 1): {(): MZV({((2,),): 1})}}, order=1)


@pytest.mark.parametrize("shrink, status", [(Fraction(1) - Fraction(1, 10**12), FAIL), (Fraction(1) + Fraction(1, 10**12), PASS)])
def test_absolute_tolerance_just_outside_and_inside(zeta2_candidate, shrink, status):
    # rhs 1.6449 is below ζ(2) = 1.64493406684822643647... by d = 3.4066848...e-5
    with mpmath.workdps(50):
        d = mpmath.pi ** 2 / 6 - mpmath.mpf("1.6449")
        tol = _decimal(d * mpmath.mpf(shrink.numerator) / shrink.denominator)
    cs = cset({"name": "n", "relation": "c[0,1]", "kind": "=", "rhs_value": 1.6449, "abs_tol": tol})
    r = check(zeta2_candidate, cs)["n"]
    assert r.status == status
    with mpmath.workdps(40):
        assert abs(r.tolerance / mpmath.mpf(tol) - 1) < mpmath.mpf(10) ** -35


@pytest.mark.parametrize("shrink, status", [(Fraction(1) - Fraction(1, 10**12), FAIL), (Fraction(1) + Fraction(1, 10**12), PASS)])
def test_relative_tolerance_just_outside_and_inside(zeta2_candidate, shrink, status):
    # tol = rel_tol * |rhs| with rhs = 1.645 above ζ(2) by 6.5933...e-5
    with mpmath.workdps(50):
        d = mpmath.mpf("1.645") - mpmath.pi ** 2 / 6
        rel = _decimal(d / mpmath.mpf("1.645") * mpmath.mpf(shrink.numerator) / shrink.denominator)
    cs = cset({"name": "n", "relation": "c[0,1]", "kind": "=", "rhs_value": "1.645", "rel_tol": rel})
    assert check(zeta2_candidate, cs)["n"].status == status


def test_both_tolerances_add_up(zeta2_candidate):
    # d = 6.5933...e-5 = abs_tol + rel_tol*|rhs| with each part about half
    base = {"name": "n", "relation": "c[0,1]", "kind": "=", "rhs_value": "1.645"}
    inside = cset({**base, "abs_tol": "0.00004", "rel_tol": "0.0000160"})  # 4e-5 + 2.632e-5 > d
    outside = cset({**base, "abs_tol": "0.00004", "rel_tol": "0.0000150"})  # 4e-5 + 2.4675e-5 < d
    assert check(zeta2_candidate, inside)["n"].status == PASS
    assert check(zeta2_candidate, outside)["n"].status == FAIL


def test_uncertainty_is_an_absolute_tolerance(zeta2_candidate):
    base = {"name": "n", "relation": "c[0,1]", "kind": "=", "rhs_value": "1.6449"}
    assert check(zeta2_candidate, cset({**base, "uncertainty": "0.00003407"}))["n"].status == PASS
    assert check(zeta2_candidate, cset({**base, "uncertainty": "0.00003406"}))["n"].status == FAIL


@pytest.mark.parametrize(
    "kind, rhs_value, tol, status",
    [
        ("<=", "1.7", "0", PASS),
        ("<=", "1.6", "0", FAIL),
        ("<=", "1.6", "0.045", PASS),  # lhs - rhs = 0.0449... <= tol
        ("<=", "1.6", "0.044", FAIL),
        (">=", "1.6", "0", PASS),
        (">=", "1.7", "0", FAIL),
        (">=", "1.7", "0.056", PASS),  # lhs - rhs = -0.0551 >= -tol
        (">=", "1.7", "0.055", FAIL),
    ],
)
def test_numeric_inequalities(zeta2_candidate, kind, rhs_value, tol, status):
    cs = cset({"name": "n", "relation": "c[0,1]", "kind": kind, "rhs_value": rhs_value, "abs_tol": tol})
    assert check(zeta2_candidate, cs)["n"].status == status


@pytest.mark.parametrize(
    "kind, rhs, status",
    [
        ("<=", "pi^2/6", PASS),  # equal: the residual is exactly 0
        (">=", "pi^2/6", PASS),
        ("<=", "zeta(2) - 1/10^40", FAIL),  # needs more than 30 digits to see the sign
        (">=", "zeta(2) - 1/10^40", PASS),
        (">=", "zeta(2) + 1/10^40", FAIL),
        ("<=", "zeta(3)", FAIL),  # ζ(2) > ζ(3)
        (">=", "zeta(3) + zeta(5) - 1", PASS),  # 1.2020 + 1.0369 - 1 = 1.2390 < ζ(2)
    ],
)
def test_exact_inequalities(zeta2_candidate, kind, rhs, status):
    r = check(zeta2_candidate, cset({"name": "n", "relation": "c[0,1]", "kind": kind, "rhs": rhs}))["n"]
    assert r.status == status and r.mode == "exact" and r.residual is not None


def test_sign_of_nearly_cancelling_combinations():
    tiny = Fraction(1, 10**100)
    assert sign_of(z(2) - z(2)) == 0
    assert sign_of(z(3) * z(5) - z(8) - z(3, 5) - z(5, 3) + tiny) == 1
    assert sign_of(z(2) - tiny - z(2) * 1) == -1


# --------------------------------------------------------------------------
# free parameters
# --------------------------------------------------------------------------


@pytest.fixture(scope="module")
def with_parameters():
    # c[0,0] = a ζ(2) + b,  c[1,0] = ζ(3) (parameter-free),  c[0,1] = a
    return expansion(
        {(0, 0): {(1, 0): z(2), (0, 1): 1}, (1, 0): {(0, 0): z(3)}, (0, 1): {(1, 0): 1}},
        parameters=("a", "b"),
        order=2,
    )


def test_residual_is_a_polynomial_in_the_parameters(with_parameters):
    cs = cset(eq("c00", "c[0,0]", "zeta(2) + 1/2"), eq("c10", "c[1,0]", "zeta(3)"), eq("c10 wrong", "c[1,0]", "zeta(2)"))
    report = check(with_parameters, cs)
    r = report["c00"]
    assert r.status == DEPENDS and not r.passed
    assert r.residual == {(1, 0): z(2), (0, 1): MZV.one(), (0, 0): -z(2) - Fraction(1, 2)}
    assert r.residual_text() == "-1/2 - zeta(2) + (zeta(2))*a + b"
    assert report["c10"].status == PASS  # identically zero
    assert report["c10 wrong"].status == FAIL
    assert report.summary == {PASS: 1, FAIL: 1, DEPENDS: 1, "total": 3}


def test_unsatisfiable_parameter_dependence_fails(with_parameters):
    # a ζ(2) + b = ζ(3) needs the ζ(3) part to vanish: impossible for rational a, b
    r = check(with_parameters, cset(eq("x", "c[0,0]", "zeta(3)")))["x"]
    assert r.status == FAIL and r.residual == {(1, 0): z(2), (0, 1): MZV.one(), (0, 0): -z(3)}


def test_numeric_and_inequality_constraints_with_parameters(with_parameters):
    cs = cset(
        {"name": "num", "relation": "c[0,1]", "kind": "=", "rhs_value": 1, "abs_tol": 0.1},
        {"name": "ineq", "relation": "c[0,0]", "kind": ">=", "rhs": 0},
        {"name": "free of a", "relation": "c[1,0]", "kind": ">=", "rhs": 1},
    )
    report = check(with_parameters, cs)
    assert report["num"].status == DEPENDS and report["ineq"].status == DEPENDS
    assert report["free of a"].status == PASS
    assert any("not decided" in w for w in report["ineq"].warnings)


# --------------------------------------------------------------------------
# bases
# --------------------------------------------------------------------------


def test_sym_values_and_warning(open_string):
    # open string: c[2,1] = ζ(4), c[1,2] = ζ(4)/4 -> sym[2,1] = 5/8 ζ(4); c[1,1] = ζ(3)
    cs = cset(eq("s21", "sym[2,1]", "5/8*zeta(4)"), eq("s11", "sym[1,1]", "zeta(3)"))
    report = check(open_string, cs)
    assert report.ok
    assert any("not symmetric under s <-> t" in w for w in report["s21"].warnings)
    assert report["s11"].warnings == ()


def test_sigma_values_of_a_symmetric_candidate():
    # σ2 = 2(s^2 + s t + t^2), σ3 = -3 s t (s + t); the candidate 5 σ2 + ζ(3) σ3 + σ2 σ3
    c = {(2, 0): {(): 10}, (1, 1): {(): 10}, (0, 2): {(): 10},
         (2, 1): {(): z(3) * -3}, (1, 2): {(): z(3) * -3},
         (4, 1): {(): -6}, (3, 2): {(): -12}, (2, 3): {(): -12}, (1, 4): {(): -6}}
    cand = expansion(c, order=5)
    report = check(cand, cset(eq("a", "sigma[1,0]", 5), eq("b", "sigma[0,1]", "zeta(3)"), eq("c", "sigma[1,1]", 1),
                              eq("d", "sigma[2,0]", 0), eq("e", "sigma[0,0]", 0)))
    assert report.ok, report.to_text()
    assert all(r.warnings == () for r in report)


def test_sigma_of_a_non_symmetric_candidate_warns(open_string):
    # degree 2: ζ(3)(s t + t^2).  Averaged over the permutations of (s, t, u):
    # s t -> (s t + s u + t u)/3 = -σ2/6 and t^2 -> σ2/3, so sigma[1,0] = ζ(3)/6.
    r = check(open_string, cset(eq("a", "sigma[1,0]", "zeta(3)/6")))["a"]
    assert r.status == PASS
    assert any("not symmetric under permutations" in w for w in r.warnings)


# --------------------------------------------------------------------------
# numeric fallback, long relations, reports
# --------------------------------------------------------------------------


def test_numeric_fallback_beyond_the_tables(zeta2_candidate):
    # tables are built on demand up to weight 20 (lowenergy.zeta.table.MAX_WEIGHT);
    # ζ(3,19) has weight 22 and ζ(3,18) weight 21
    cs = cset(eq("ok", "c[0,1]*zeta(3,19)", "zeta(2)*zeta(3,19)"), eq("bad", "c[0,1]*zeta(3,19)", "zeta(3,19)"),
              eq("mixed", "c[0,1] - zeta(3,18)", "zeta(2) - zeta(3,18)"))
    report = check(zeta2_candidate, cs)
    for name, status in (("ok", PASS), ("bad", FAIL), ("mixed", PASS)):
        r = report[name]
        assert (r.status, r.mode) == (status, "numeric"), name
        assert r.lhs is None and r.residual is None
        assert any("compared numerically" in w for w in r.warnings)


def test_single_zetas_stay_exact_at_any_weight(zeta2_candidate):
    # ζ(17) and ζ(30) = rational·ζ(2)^15 need no table (A&S 23.2.16 for the even one)
    cs = cset(eq("odd", "c[0,1]*zeta(17)", "zeta(2)*zeta(17)"), eq("even", "c[0,1]*zeta(30)", "zeta(2)*zeta(30)"))
    report = check(zeta2_candidate, cs)
    for name in ("odd", "even"):
        assert (report[name].status, report[name].mode) == (PASS, "exact"), name


def test_numeric_fallback_sees_tiny_non_zero_values(zeta2_candidate):
    # ζ({2}^20) = π^40/41! ≈ 2.5e-30 (Hoffman 1992; Zagier): tiny but not zero.
    # The fallback tolerance follows the size of the terms, not an absolute floor.
    twos = ",".join(["2"] * 20)
    r = check(zeta2_candidate, cset(eq("tiny", f"c[0,1]*zeta({twos})", 0)))["tiny"]
    assert (r.status, r.mode) == (FAIL, "numeric")
    with mpmath.workdps(40):
        expected = mpmath.pi ** 40 / mpmath.factorial(41) * mpmath.zeta(2)
        assert abs(r.residual_numeric[()] / expected - 1) < mpmath.mpf(10) ** -25
    ok = check(zeta2_candidate, cset(eq("ok", f"(c[0,1] - zeta(2))*zeta({twos})", 0)))["ok"]
    assert (ok.status, ok.mode) == (PASS, "numeric")


def test_long_flat_sums_are_evaluated_iteratively(zeta2_candidate):
    relation = " + ".join(["c[0,1]"] * 5000)
    r = check(zeta2_candidate, cset(eq("long", relation, "5000*zeta(2)")))["long"]
    assert r.status == PASS


def test_report_text_and_dict(open_string):
    wrong = expansion({k: dict(v) for k, v in open_string.coefficients.items()}, order=4, title="my candidate")
    wrong.coefficients[(1, 1)] = {(): z(3) * 2}
    report = check(wrong, read_constraints(OPEN_SET))
    text = report.to_text()
    assert "FAIL    c[1,1]" in text and "residual = zeta(3)" in text
    assert "summary: 20 passed, 1 failed, 0 depend on free parameters (21 constraints): failed" in text
    assert "candidate: my candidate (order 4)" in text
    data = json.loads(json.dumps(report.to_dict()))
    assert data["ok"] is False and data["summary"]["FAIL"] == 1
    failed = [r for r in data["results"] if r["status"] == "FAIL"]
    assert failed[0]["residual_exact"] == "zeta(3)" and failed[0]["residual_numeric"].startswith("1.20205690315959428")


def test_template_sets_warn():
    cs = read_constraints("constraints/localization_template.toml")
    cand = expansion({(0, 0): {(): 1}}, order=5)
    report = check(cand, cs)
    assert report.template and any("TEMPLATE" in w for w in report.warnings)
    assert "TEMPLATE" in report.to_text()


def test_order_beyond_the_candidate(zeta2_candidate):
    with pytest.raises(InputError, match=r"c\[2,0\] is of order 2, beyond the order 1") as info:
        check(zeta2_candidate, cset(eq("a", "c[0,1] + c[2,0]", 0)))
    assert info.value.term == "c[2,0]" and "order 2" in info.value.hint


def test_single_constraints_and_lists(zeta2_candidate):
    cs = cset(eq("a", "c[0,1]", "zeta(2)"), eq("b", "c[1,0]", 0))
    assert check(zeta2_candidate, cs.constraints[0]).ok
    assert check(zeta2_candidate, list(cs)).ok
    with pytest.raises(InputError, match="digits"):
        check(zeta2_candidate, cs, digits=5)
    with pytest.raises(TypeError):
        check({}, cs)


def test_more_digits(zeta2_candidate):
    cs = cset({"name": "n", "relation": "c[0,1]", "kind": "=", "rhs_value": "1.6449340668482264364724151666460251892189499012", "abs_tol": "1e-45"})
    # the rhs is ζ(2) truncated after 46 decimals (error 6.8e-48, mpmath below)
    with mpmath.workdps(60):
        value = cs.constraints[0].rhs_value
        assert 0 < mpmath.zeta(2) - mpmath.mpf(value.numerator) / value.denominator < mpmath.mpf(10) ** -47
    assert check(zeta2_candidate, cs, digits=60)["n"].status == PASS
