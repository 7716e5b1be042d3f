"""Fixed-angle high energy (lowenergy.spectrum.highenergy) against Stirling, digamma and mpmath."""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
import sympy

from lowenergy.errors import InputError, ParseError
from lowenergy.integrand.reader import integrand_from_text, terms_from_expression
from lowenergy.spectrum.highenergy import (
    exponentiation_check,
    high_energy,
    leading_term,
    parse_relation,
    saddle_for,
    validate_ray,
)
from lowenergy.spectrum.xfunctions import XFunction

KN = "x^(-s-1)*(1-x)^(-t-1)"
X = sympy.Symbol("x")
E = sympy.Symbol("E", positive=True)


def itg(body: str, name: str = "test"):
    return integrand_from_text(f'integrand = "{body}"', source=name)


def rational_to_sympy(f: XFunction):
    assert f.is_rational_function()
    if not f.parts:
        return sympy.Integer(0)
    i, j, num = f.parts[()]
    poly = sum(sympy.Rational(c.rational_value().numerator, c.rational_value().denominator) * X ** p
               for p, c in enumerate(num))
    return X ** i * (1 - X) ** j * poly


def log_gamma_stirling(z):
    """Stirling's series, A&S 6.1.41: ln Γ(z) ~ (z - 1/2) ln z - z + ln(2π)/2 + 1/(12 z) - 1/(360 z^3) + ..."""
    return (z - sympy.Rational(1, 2)) * sympy.log(z) - z + sympy.log(2 * sympy.pi) / 2 + 1 / (12 * z) - 1 / (360 * z ** 3)


def test_beta_saddle_and_first_correction_from_stirling():
    # B(A, B) = Γ(A)Γ(B)/Γ(A+B) (A&S 6.2.2) with A = E x*, B = E (1-x*): Stirling's series gives
    # log[B / K] as a series in 1/E, K = x*^A (1-x*)^B sqrt(2π x*(1-x*)/E).
    lt = leading_term(itg(KN))
    assert lt.degree == 0
    A, B = E * X, E * (1 - X)
    logK = A * sympy.log(X) + B * sympy.log(1 - X) + sympy.log(2 * sympy.pi * X * (1 - X) / E) / 2
    log_ratio = log_gamma_stirling(A) + log_gamma_stirling(B) - log_gamma_stirling(A + B) - logK
    log_ratio = sympy.expand(sympy.expand_log(log_ratio, force=True))
    # leading: exp(E^0 part); next: coefficient of 1/E
    series = sympy.series(log_ratio.subs(E, 1 / sympy.Symbol("h")), sympy.Symbol("h"), 0, 2).removeO()
    h = sympy.Symbol("h")
    lead = sympy.simplify(sympy.exp(series.coeff(h, 0)))
    first = sympy.simplify(series.coeff(h, 1))
    assert sympy.simplify(rational_to_sympy(lt.leading) - lead) == 0          # 1/(x(1-x))
    assert sympy.simplify(rational_to_sympy(lt.next) - lead * first) == 0     # × (1/x + 1/(1-x) - 1)/12
    # and the hand value of the correction, from the 1/(12 z) terms of A&S 6.1.41
    assert sympy.simplify(first - (1 / X + 1 / (1 - X) - 1) / 12) == 0


def test_log_insertion_against_digamma_asymptotics():
    # ∫ x^(A-1)(1-x)^(B-1) log x dx = B(A,B) (ψ(A) - ψ(A+B)) (derivative of A&S 6.2.1 in A; ψ = Γ'/Γ, A&S 6.3.1),
    # and ψ(z) ~ ln z - 1/(2z) - 1/(12 z^2) + ... (A&S 6.3.18): ψ(E x) - ψ(E) = log x + (1 - 1/x)/(2E) + O(E^-2).
    beta = leading_term(itg(KN))
    lt = leading_term(itg(KN + "*log(x)"))
    logx = XFunction.word((0,))
    assert lt.leading == beta.leading * logx
    correction = XFunction.constant(Fraction(1, 2)) - XFunction.monomial(-1, 0, Fraction(1, 2))
    assert lt.next == beta.next * logx + beta.leading * correction


def test_prefactor_top_degree_and_lower_degree_enter():
    # (s^2 + s) B: on the ray s = -E x*, so E^2 x*^2 leads and -E x* enters the next order
    beta = leading_term(itg(KN))
    lt = leading_term(itg(f"(s^2 + s)*{KN}"))
    assert lt.degree == 2
    assert lt.leading == XFunction.monomial(2, 0) * beta.leading
    assert lt.next == XFunction.monomial(2, 0) * beta.next - XFunction.monomial(1, 0) * beta.leading


def test_leading_text_reads_back():
    lt = leading_term(itg(f"s*t*zeta(3)*{KN}*Li(2, x) + t^2*{KN}*log(1-x)^2"))
    text = lt.leading.text()
    terms = terms_from_expression(text)
    back = XFunction()
    for term in terms:
        for _k, c in term.coefficient.items():
            back = back + XFunction.monomial(term.x_exp.shift, term.y_exp.shift, c, term.word)
    assert back == lt.leading


def _beta_reduced(xs, Ev, dps=30):
    with mpmath.workdps(dps):
        x = mpmath.mpf(xs.numerator) / xs.denominator
        A, B = Ev * x, Ev * (1 - x)
        K = mpmath.exp(A * mpmath.log(x) + B * mpmath.log(1 - x)) * mpmath.sqrt(2 * mpmath.pi * x * (1 - x) / Ev)
        return mpmath.beta(A, B) / K, mpmath.beta(A, B) * (mpmath.digamma(A) - mpmath.digamma(A + B)) / K


@pytest.mark.parametrize("xs", [Fraction(1, 4), Fraction(1, 2), Fraction(4, 5)])
def test_quadrature_on_the_ray_matches_closed_forms(xs):
    # the package's quadrature against mpmath's Beta and digamma (A&S 6.2.2, 6.3.1)
    for body, which in ((KN, 0), (KN + "*log(x)", 1)):
        i = itg(body)
        lt = leading_term(i)
        pts = validate_ray(i, lt, xs, [-12], digits=20)
        p = pts[0]
        exact = _beta_reduced(xs, mpmath.mpf(p.energy.numerator) / p.energy.denominator)[which]
        assert abs(p.reduced - exact) < 1e-15 * abs(exact)


def test_quadrature_approaches_saddle_with_one_over_e_corrections():
    # Laplace: ratio = 1 + next/(leading E) + O(1/E^2): the remainder falls like 1/E^2
    i = itg(KN + "*(s*t*Li(2, x) + s^2)")
    lt = leading_term(i)
    xs = Fraction(1, 3)
    pts = validate_ray(i, lt, xs, [-10, -40, -160], digits=20)
    rem = [abs(p.ratio - p.predicted) for p in pts]
    lo = [abs(p.ratio - 1) for p in pts]
    assert lo[0] > 10 * rem[0]                    # the 1/E term is most of the deviation
    assert rem[1] < rem[0] / 8 and rem[2] < rem[1] / 8   # ~1/16 per factor 4 in E
    assert lo[2] < lo[1] / 3                      # the leading ratio tends to 1 like 1/E


FAMILY = [KN, KN + "*s*t*log(x)*log(1-x)", KN + "*s^2*t^2*log(x)^2*log(1-x)^2/2"]


def test_exponentiation_holds_by_construction():
    # invented: f1 = s t log x log(1-x), f2 = f1^2/2: the family is exp(ε f1) to second order
    lts = [leading_term(itg(b)) for b in FAMILY]
    (res,) = exponentiation_check(lts)
    assert res.holds and res.degree == 4
    assert all(abs(r) < 1e-25 for r, _ in res.grid.values())


def test_exponentiation_fails_when_second_order_is_off():
    # invented: f2 = f1^2 (twice the exponentiated value): residual f1^2/2, exactly
    bad = FAMILY[:2] + [KN + "*s^2*t^2*log(x)^2*log(1-x)^2"]
    lts = [leading_term(itg(b)) for b in bad]
    (res,) = exponentiation_check(lts)
    assert not res.holds
    a1 = lts[1].leading * lts[0].leading.inverse_monomial()
    assert res.divided and res.residual == a1 * a1 * Fraction(1, 2)
    x = Fraction(1, 3)
    with mpmath.workdps(30):
        lx, ly = mpmath.log(mpmath.mpf(1) / 3), mpmath.log(mpmath.mpf(2) / 3)
        # A1 = E^2 x (1-x) log x log(1-x) on the ray (s t = E^2 x (1-x)); residual = A1^2/2 per E^4
        want = (mpmath.mpf(2) / 9 * lx * ly) ** 2 / 2
    r, _scale = exponentiation_check(lts, grid=[x])[0].grid[x]
    assert abs(r - want) < 1e-15


def test_exponentiation_fails_on_wrong_growth():
    # invented: second order grows like E^3 instead of E^4
    bad = FAMILY[:2] + [KN + "*s^2*t*log(x)^2*log(1-x)"]
    lts = [leading_term(itg(b)) for b in bad]
    (res,) = exponentiation_check(lts)
    assert not res.holds and res.degree == 4


def test_user_relation():
    lts = [leading_term(itg(b)) for b in FAMILY]
    (ok,) = exponentiation_check(lts, [parse_relation("2*A2 - A1^2 = 0", 2)])
    assert ok.holds
    (bad,) = exponentiation_check(lts, [parse_relation("A2 = A1^2", 2)])
    assert not bad.holds


@pytest.mark.parametrize("text, err", [
    ("A3 = A1^3/6", InputError), ("A2 == A1", InputError), ("A2 = A1/A1", InputError),
    ("A2 = __import__('os')", ParseError), ("A2 = A1^(1/2)", InputError), ("A2 = x", InputError),
])
def test_bad_relations(text, err):
    with pytest.raises(err):
        parse_relation(text, 2)


def test_bad_inputs():
    with pytest.raises(InputError, match="variables differ"):
        saddle_for([itg(KN), integrand_from_text('variables = ["S", "T"]\nintegrand = "x^(-S-1)*(1-x)^(-T-1)"')])
    with pytest.raises(InputError, match="ambiguous"):
        leading_term(itg(f"(s*(1-x) - t*x)*{KN}"))
    with pytest.raises(InputError, match="no fixed-angle saddle"):
        saddle_for([itg("x^2*(1-x)^(-t-1)")])
    with pytest.raises(InputError, match="different Koba-Nielsen"):
        saddle_for([itg("x^(-s-1)*(1-x)^(-t-1) + x^(-2*s-1)*(1-x)^(-t-1)")])
    sad = saddle_for([itg(KN)])
    with pytest.raises(InputError, match="outside the interval"):
        sad.saddle_of_direction(1, -2)
    with pytest.raises(InputError, match="minimum"):
        sad.saddle_of_direction(1, 2)
    with pytest.raises(InputError, match="outside the interval"):
        sad.check_saddle(Fraction(3, 2))
    assert sad.saddle_of_direction(-1, -3) == Fraction(1, 4)


def test_report_tables(tmp_path):
    rep = high_energy([itg(b) for b in FAMILY], grid=[Fraction(1, 2)], digits=10)
    assert rep.ok
    assert "holds exactly" in rep.to_text()
    rep.write(tmp_path / "he.csv")
    rep.write(tmp_path / "he.json")
    assert "relation" in (tmp_path / "he.csv").read_text()
