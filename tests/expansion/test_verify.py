"""Tests of lowenergy.integrand.gnumeric (numeric G(w; x)) and lowenergy.expansion.verify.

Every expected number is computed here with mpmath (log, polylog, zeta, beta,
psi, diff, quad), at a higher local precision than the value under test, from
a closed form whose source is named beside the check.  None comes from the
package's own numerics.  Quadrature references follow the project notes
(METHOD.md §3): split at 1/2 and substitute ``1 - x = v^(1/b)`` near 1,
passing ``1 - x`` separately.

Sections: G(w; x) against polylogarithms; the quadrature (with analytic
continuation) against Euler's Beta integral and its derivatives; verify()
against a series built here from the Gamma-function expansion; and, when the
engine is present, engine → verify end to end.
"""

from __future__ import annotations

import math
from fractions import Fraction as Fr

import mpmath
import pytest

from lowenergy.errors import InputError, NumericError
from lowenergy.expansion.result import Expansion
from lowenergy.expansion.verify import VerifyReport, integral_value, series_value, verify
from lowenergy.integrand.gnumeric import (
    g_numeric,
    g_regularized_at_one,
    integrand_numeric,
    reflection_decomposition,
    trailing_zero_decomposition,
)
from lowenergy.integrand.model import Integrand, LinearExponent, Term, poly_add, poly_mul, poly_scale
from lowenergy.zeta.element import MZV, zeta

mp = mpmath
REF_DPS = 60


def assert_close(value, expected, digits, scale=None):
    """``|value - expected| ≤ 10^-digits · max(|expected|, scale)``."""
    with mp.workdps(digits + 30):
        size = abs(expected) if scale is None else max(abs(expected), mp.mpf(scale))
        err = abs(mp.mpf(value) - expected)
        assert err <= mp.mpf(10) ** (-digits) * size, (
            f"{mp.nstr(value, digits + 5)} vs {mp.nstr(expected, digits + 5)} (error {mp.nstr(err, 3)})"
        )


def ref(x) -> mp.mpf:
    """A Fraction, "p/q" string or float as mpf at the current (test) precision (floats exactly)."""
    if isinstance(x, float):
        return mp.mpf(x)
    x = Fr(x)
    return mp.mpf(x.numerator) / x.denominator


# ==========================================================================
# 1. G(w; x) against mpmath
# ==========================================================================

XS = [Fr(1, 10), Fr(1, 2), Fr(9, 10), Fr(999, 1000)]


def nielsen(n, p, x):
    # S_{n,p}(x) = (-1)^(n+p-1) / ((n-1)! p!) ∫_0^1 log^(n-1)(t) log^p(1 - x t) / t dt
    # (K. S. Kölbig, "Nielsen's generalized polylogarithms", SIAM J. Math. Anal. 17 (1986)),
    # with S_{n-1,1} = Li_n.  In G-words S_{n,p}(x) = (-1)^p G(0^n, 1^p; x)  (n zeros, not
    # n - 1: see test_nielsen_index_convention).
    c = mp.mpf(-1) ** (n + p - 1) / (mp.factorial(n - 1) * mp.factorial(p))
    return c * mp.quad(lambda t: mp.log(t) ** (n - 1) * mp.log(1 - x * t) ** p / t, [0, mp.mpf(1) / 2, 1])


def g_inner(word, t):
    """Closed forms of short words, for the defining integral of longer ones."""
    if word == (0, 0):
        return mp.log(t) ** 2 / 2                       # convention G(0^n; x) = log^n x / n!
    if word == (1, 0):
        return mp.log(t) * mp.log(1 - t) + mp.polylog(2, t)  # G(1)G(0) = G(1,0) + G(0,1) (shuffle; Ree 1958)
    if word == (0, 1):
        return -mp.polylog(2, t)                        # G(0,1; x) = -Li2(x) (Lewin 1981)
    raise KeyError(word)


def nested(letter, word, x):
    # definition: G(a, w; x) = ∫_0^x dt/(t - a) G(w; t) (METHOD §1); points clustered
    # towards x = 1 where 1/(t - 1) is steep
    pts = [0, x / 2] + [p for p in (mp.mpf("0.9"), mp.mpf("0.99")) if p < x] + [x]
    return mp.quad(lambda t: g_inner(word, t) / (t - letter), pts)


CLOSED_FORMS = {
    # word: (reference as a function of x, source)
    (0,): (lambda x: mp.log(x), "G(0; x) = log x (convention, METHOD §1)"),
    (1,): (lambda x: mp.log(1 - x), "G(1; x) = log(1-x)"),
    (0, 0): (lambda x: mp.log(x) ** 2 / 2, "G(0,0; x) = log^2 x / 2 (convention)"),
    (1, 1, 1): (lambda x: mp.log(1 - x) ** 3 / 6, "G(1^n; x) = log^n(1-x)/n!"),
    (0, 1): (lambda x: -mp.polylog(2, x), "G(0^(n-1),1; x) = -Li_n(x) (Lewin, Polylogarithms 1981)"),
    (0, 0, 1): (lambda x: -mp.polylog(3, x), "-Li3"),
    (0, 0, 0, 1): (lambda x: -mp.polylog(4, x), "-Li4"),
    (0, 0, 0, 0, 1): (lambda x: -mp.polylog(5, x), "-Li5"),
    (1, 1): (lambda x: mp.log(1 - x) ** 2 / 2, "G(1,1; x) = log^2(1-x)/2"),
    (0, 1, 1): (lambda x: nielsen(1, 2, x), "S_{1,2} = G(0,1,1) (Kölbig 1986)"),
    (0, 0, 1, 1): (lambda x: nielsen(2, 2, x), "S_{2,2} = G(0,0,1,1) (Kölbig 1986)"),
    (0, 1, 1, 1): (lambda x: -nielsen(1, 3, x), "S_{1,3} = -G(0,1,1,1) (Kölbig 1986)"),
    (0, 0, 0, 1, 1): (lambda x: nielsen(3, 2, x), "S_{3,2} = G(0,0,0,1,1) (Kölbig 1986)"),
    (1, 0): (lambda x: g_inner((1, 0), x), "shuffle G(1)G(0) = G(1,0) + G(0,1)"),
    (1, 0, 0): (lambda x: nested(1, (0, 0), x), "defining integral"),
    (0, 1, 0): (lambda x: nested(0, (1, 0), x), "defining integral"),
    (1, 1, 0): (lambda x: nested(1, (1, 0), x), "defining integral"),
    (1, 0, 1): (lambda x: nested(1, (0, 1), x), "defining integral"),
}


@pytest.mark.parametrize("x", XS, ids=str)
@pytest.mark.parametrize("word", list(CLOSED_FORMS), ids=lambda w: "G" + "".join(map(str, w)))
def test_g_numeric_closed_forms(word, x):
    with mp.workdps(REF_DPS):
        expected = CLOSED_FORMS[word][0](ref(x))
    assert_close(g_numeric(word, x, digits=30), expected, 30, scale=mp.mpf(10) ** -5)


def test_nielsen_index_convention():
    # Kölbig's integral with n = p = 1 is ∫_0^1 -log(1 - x t)/t dt... times (-1)^1: S_{1,1} = Li_2
    # (Kölbig 1986: S_{n-1,1} = Li_n), so S_{n,p} = (-1)^p G(0^n, 1^p).  With 0^(n-1) one
    # would get S_{1,1} = -G(1; x) = -log(1-x), which is wrong.
    x = Fr(3, 10)
    with mp.workdps(REF_DPS):
        X = ref(x)
        assert_close(nielsen(1, 1, X), mp.polylog(2, X), 40)
        assert_close(nielsen(2, 1, X), mp.polylog(3, X), 40)
        s11 = nielsen(1, 1, X)
        assert abs(s11 + mp.log(1 - X)) > mp.mpf("0.01")
        expected = -s11  # (negate inside the local precision)
    assert_close(g_numeric((0, 1), x, 30), expected, 28)


@pytest.mark.parametrize("digits", [15, 50, 100])
def test_g_numeric_precision_follows_digits(digits):
    x = Fr(7, 10)  # reflection branch
    with mp.workdps(digits + 30):
        expected = -mp.polylog(3, ref(x))
    assert_close(g_numeric((0, 0, 1), x, digits), expected, digits)


def test_g_numeric_near_one_with_one_minus_x():
    eps = Fr(1, 10 ** 40)
    with mp.workdps(100):
        y = ref(eps)
        x = 1 - y
        # Euler's reflection Li2(x) = ζ(2) - log(x) log(1-x) - Li2(1-x) (Lewin 1981, eq. 1.11;
        # from memory), so that only small arguments enter
        li2 = mp.zeta(2) - mp.log(x) * mp.log(y) - mp.polylog(2, y)
        got1 = g_numeric((1,), 1 - eps, 30, one_minus_x=eps)
        got2 = g_numeric((0, 1), 1 - eps, 30, one_minus_x=eps)
        assert_close(got1, mp.log(y), 30)
        assert_close(got2, -li2, 30)


REGULARIZED_AT_ONE = {
    (0,): (lambda: mp.mpf(0), "G(0; 1) = log 1"),
    (1,): (lambda: mp.mpf(0), "G(1; 1) := 0 (shuffle regularization, METHOD §1)"),
    (0, 1): (lambda: -mp.zeta(2), "ζ(2) = -G(0,1; 1)"),
    (1, 0): (lambda: mp.zeta(2), "0 = G(1;1)G(0;1) = G(1,0;1) + G(0,1;1)"),
    (0, 0, 1): (lambda: -mp.zeta(3), "ζ(3) = -G(0,0,1; 1)"),
    (0, 1, 1): (lambda: mp.zeta(3), "ζ(2,1) = G(0,1,1; 1) = ζ(3) (Euler)"),
    (0, 0, 0, 1): (lambda: -mp.zeta(4), "ζ(4)"),
    # ζ(2)ζ(2) = 2ζ(2,2) + ζ(4) (stuffle; Hoffman, Pacific J. Math. 152 (1992))
    (0, 1, 0, 1): (lambda: (mp.zeta(2) ** 2 - mp.zeta(4)) / 2, "ζ(2,2) = G(0,1,0,1; 1)"),
}


@pytest.mark.parametrize("word", list(REGULARIZED_AT_ONE), ids=lambda w: "G" + "".join(map(str, w)))
def test_g_regularized_at_one(word):
    with mp.workdps(REF_DPS):
        expected = REGULARIZED_AT_ONE[word][0]()
    assert_close(g_regularized_at_one(word, 40), expected, 40, scale=1)


def test_exact_decompositions():
    # G(1,0) = G(0) G(1) - G(0,1): log x · log(1-x) + Li2(x)
    assert trailing_zero_decomposition((1, 0)) == {(1, (1,)): 1, (0, (0, 1)): -1}
    assert trailing_zero_decomposition((0, 0, 0)) == {(3, ()): 1}
    assert trailing_zero_decomposition((0, 1)) == {(0, (0, 1)): 1}
    assert reflection_decomposition((0, 1)) == {((), (0, 1)): 1, ((1,), (1,)): 1, ((1, 0), ()): 1}


@pytest.mark.parametrize("bad", [0, 1, Fr(3, 2), -0.5])
def test_g_numeric_rejects_points_outside(bad):
    with pytest.raises(InputError):
        g_numeric((0, 1), bad, 20)


def test_g_numeric_rejects_bad_input():
    with pytest.raises(InputError):
        g_numeric((0, 2), 0.5, 20)
    with pytest.raises(InputError):
        g_numeric((0, 1), 0.5, 0)
    with pytest.raises(InputError):
        g_numeric((0, 1), "zero point five", 20)


def kn(ax=-1, by=-1, cs=Fr(-1), ct=Fr(-1)):
    """x^(ax + cs·s), (1-x)^(by + ct·t) exponents."""
    return LinearExponent(ax, cs, 0), LinearExponent(by, ct, 1)


def term(coeff, word=(), ax=-1, by=-1, cs=Fr(-1), ct=Fr(-1)):
    xe, ye = kn(ax, by, cs, ct)
    return Term(coefficient=coeff, x_exp=xe, y_exp=ye, word=tuple(word))


def test_integrand_numeric():
    # (1 + c s) x^(-s-1) (1-x)^(-t-1) G(0,1; x) + 2 x^(-s) (1-x)^(-t-1) G(1; x)
    one = MZV.one()
    itg = Integrand(
        terms=[term({(0, 0, 0): one, (1, 0, 1): one}, (0, 1)), term({(0, 0, 0): 2 * one}, (1,), ax=0)],
        parameters=("c",),
    )
    s, t, c, x = Fr(1, 10), Fr(-3, 20), Fr(2, 7), Fr(4, 5)
    with mp.workdps(REF_DPS):
        S, T, C, X = map(ref, (s, t, c, x))
        F = -(1 + C * S) * mp.polylog(2, X) + 2 * X * mp.log(1 - X)
        full = F * X ** (-S - 1) * (1 - X) ** (-T - 1)
    assert_close(integrand_numeric(itg, s, t, {"c": c}, x, 30), F, 30)
    assert_close(integrand_numeric(itg, s, t, [c], x, 30, full=True), full, 30)
    with pytest.raises(InputError):
        integrand_numeric(itg, s, t, {"d": c}, x, 30)


# ==========================================================================
# 2. quadrature with analytic continuation against Euler's Beta integral
# ==========================================================================
#
# B(a, b) = ∫_0^1 x^(a-1) (1-x)^(b-1) dx = Γ(a)Γ(b)/Γ(a+b)  (A&S 6.2.1, 6.2.2),
# continued meromorphically; here a = -s, b = -t.  Derivatives in a, b insert
# log x, log(1-x):  ∂_a B = B (ψ(a) - ψ(a+b)),
# ∂_a ∂_b B = B [(ψ(a) - ψ(a+b))(ψ(b) - ψ(a+b)) - ψ'(a+b)]   (differentiating A&S 6.2.2).

ONE = {(0, 0): MZV.one()}


def integrand(*terms, parameters=()):
    return Integrand(terms=list(terms), parameters=parameters)


def coef(c, nparams=0):
    return {(0, 0) + (0,) * nparams: MZV.rational(c) if not isinstance(c, MZV) else c}


BETA_CASES = {
    # name: (integrand, reference(a, b, params))
    "beta": (integrand(term(ONE)), lambda a, b: mp.beta(a, b)),
    "log x": (integrand(term(ONE, (0,))), lambda a, b: mp.beta(a, b) * (mp.psi(0, a) - mp.psi(0, a + b))),
    "log(1-x)": (integrand(term(ONE, (1,))), lambda a, b: mp.beta(a, b) * (mp.psi(0, b) - mp.psi(0, a + b))),
    "x shift +1": (integrand(term(ONE, ax=0)), lambda a, b: mp.beta(a + 1, b)),
    "(1-x) shift +1": (integrand(term(ONE, by=0)), lambda a, b: mp.beta(a, b + 1)),
    "x shift -1 (continued only)": (integrand(term(ONE, ax=-2)), lambda a, b: mp.beta(a - 1, b)),
    "log x log(1-x)": (
        integrand(term(ONE, (0, 1)), term(ONE, (1, 0))),  # G(0)G(1) = G(0,1) + G(1,0)
        lambda a, b: mp.beta(a, b) * ((mp.psi(0, a) - mp.psi(0, a + b)) * (mp.psi(0, b) - mp.psi(0, a + b))
                                      - mp.psi(1, a + b)),
    ),
    "log^2 x log(1-x)": (
        integrand(*(term(coef(2), w) for w in [(0, 0, 1), (0, 1, 0), (1, 0, 0)])),  # 2 G(0,0) ш G(1)
        lambda a, b: mp.diff(mp.beta, (a, b), (2, 1)),
    ),
    "log^3(1-x)": (integrand(term(coef(6), (1, 1, 1))), lambda a, b: mp.diff(mp.beta, (a, b), (0, 3))),
    "x^(-s/2-1)": (integrand(term(ONE, cs=Fr(-1, 2))), lambda a, b: mp.beta(a / 2, b)),
    "two exponent groups": (
        integrand(term(ONE), term(coef(3), ax=0, by=0)),
        lambda a, b: mp.beta(a, b) + 3 * mp.beta(a + 1, b + 1),
    ),
    "zeta(3) coefficient": (integrand(term({(0, 0): MZV({((3,),): 1})})),  # the generator ζ(3)
                            lambda a, b: mp.zeta(3) * mp.beta(a, b)),
}

CONVERGENT = [(Fr(-1, 10), Fr(-7, 100)), (Fr(-1, 5), Fr(-1, 8))]
CONTINUED = [(Fr(13, 100), Fr(7, 100)), (Fr(1, 5), Fr(-3, 20)), (Fr(-3, 20), Fr(1, 5)), (Fr(1, 50), Fr(1, 5))]


def point(s, t):
    return {"s": s, "t": t}


@pytest.mark.parametrize("st", CONVERGENT + CONTINUED, ids=lambda p: f"s={p[0]},t={p[1]}")
@pytest.mark.parametrize("name", list(BETA_CASES))
def test_quadrature_against_beta(name, st):
    itg, closed = BETA_CASES[name]
    s, t = st
    with mp.workdps(REF_DPS):
        expected = closed(-ref(s), -ref(t))
    result = integral_value(itg, point(s, t), digits=30)
    assert_close(result.value, expected, 28, scale=1)
    assert result.error < mp.mpf(10) ** -28 * max(abs(expected), 1)


def test_quadrature_with_parameter():
    # (1 + c·s) x^(-s-1) (1-x)^(-t-1): (1 + c s) B(-s, -t)  (A&S 6.2.1)
    itg = integrand(term({(0, 0, 0): MZV.one(), (1, 0, 1): MZV.one()}), parameters=("c",))
    s, t, c = Fr(3, 20), Fr(1, 10), Fr(-5, 3)
    with mp.workdps(REF_DPS):
        expected = (1 + ref(c) * ref(s)) * mp.beta(-ref(s), -ref(t))
    assert_close(integral_value(itg, {"s": s, "t": t, "c": c}, 30).value, expected, 28)


@pytest.mark.parametrize(
    "st",
    [(Fr(3, 2), Fr(-3, 10)), (Fr(-27, 10), Fr(-1, 3)), (Fr(-1, 10), Fr(50, 3)), (Fr(-301, 10), Fr(1, 7)),
     (Fr(-7, 3), Fr(-11, 2))],
    ids=str,
)
def test_quadrature_far_from_the_origin(st):
    # beyond the first massive pole (s = 1), at s < -1 and at large |t| (the endpoint series
    # then has coefficients growing like n^16; an early cut of that series once cost 15
    # digits here): still A&S 6.2.1 continued
    s, t = st
    with mp.workdps(REF_DPS):
        expected = mp.beta(-ref(s), -ref(t))
    assert_close(integral_value(integrand(term(ONE)), point(s, t), 30).value, expected, 28)


@pytest.mark.parametrize("digits", [15, 50, 80])
def test_quadrature_precision_follows_digits(digits):
    s, t = Fr(1, 10), Fr(-7, 100)
    with mp.workdps(digits + 30):
        expected = mp.beta(-ref(s), -ref(t)) * (mp.psi(0, -ref(s)) - mp.psi(0, -ref(s) - ref(t)))
    assert_close(integral_value(integrand(term(ONE, (0,))), point(s, t), digits).value, expected, digits)


def test_quadrature_li2_against_plain_mpmath_quadrature():
    # -G(0,1; x) = Li2(x): ∫_0^1 x^(-s-1) (1-x)^(-t-1) Li2(x) dx at a convergent point,
    # by mpmath quad with the substitution 1 - x = v^(1/b) near x = 1 (METHOD §3)
    s, t = Fr(3, 10), Fr(-1, 5)
    with mp.workdps(50):
        a, b = -ref(s), -ref(t)
        left = mp.quad(lambda x: x ** (a - 1) * (1 - x) ** (b - 1) * mp.polylog(2, x), [0, mp.mpf(1) / 2])

        def g(v):
            y = v ** (1 / b)
            return (1 - y) ** (a - 1) * (mp.zeta(2) - mp.log(1 - y) * mp.log(y) - mp.polylog(2, y)) if y else 0

        right = mp.quad(g, [0, mp.mpf(2) ** (-b)]) / b  # Li2(1-y) by Euler's reflection (Lewin 1981)
        expected = left + right
    assert_close(integral_value(integrand(term(coef(-1), (0, 1))), point(s, t), 30).value, expected, 28)


def test_quad_and_termwise_agree_on_a_long_word():
    itg = integrand(term(ONE, (0, 1, 0, 0, 1, 1)), term(coef(Fr(2, 3)), (1, 1, 0, 1, 0), ax=0))
    p = point(Fr(1, 10), Fr(-1, 20))
    q = integral_value(itg, p, 30, method="quad")
    w = integral_value(itg, p, 30, method="termwise")
    assert_close(q.value, w.value, 32, scale=1)


@pytest.mark.parametrize("st", [(0, Fr(-1, 10)), (Fr(-1, 10), 0), (1, Fr(-1, 10))], ids=str)
def test_quadrature_refuses_poles(st):
    with pytest.raises(NumericError):
        integral_value(integrand(term(ONE)), point(*st), 20)


def test_quadrature_point_errors():
    itg = integrand(term(ONE))
    with pytest.raises(InputError):
        integral_value(itg, {"s": 0.1}, 20)
    with pytest.raises(InputError):
        integral_value(itg, {"s": 0.1, "t": 0.1, "u": 0.2}, 20)
    with pytest.raises(InputError):
        integral_value(itg, {"s": 0.1, "t": 0.1}, 20, method="simpson")


# ==========================================================================
# 3. verify() against a series built here from the Gamma function
# ==========================================================================
#
# B(-s, -t) = Γ(-s)Γ(-t)/Γ(-s-t) = -(1/s + 1/t) Γ(1-s)Γ(1-t)/Γ(1-s-t)
#           = -(1/s + 1/t) exp( Σ_{k≥2} ζ(k)/k (s^k + t^k - (s+t)^k) )
# from log Γ(1-z) = γ z + Σ_{k≥2} ζ(k) z^k / k  (A&S 6.1.33).

def beta_expansion(order: int) -> Expansion:
    deg = order + 1
    exponent = {}
    for k in range(2, deg + 1):
        part = {(k, 0): MZV.one(), (0, k): MZV.one()}
        part = poly_add(part, {(i, k - i): MZV.rational(math.comb(k, i)) for i in range(k + 1)}, -1)
        exponent = poly_add(exponent, poly_scale(part, zeta(k) * Fr(1, k)))
    expo, power = {(0, 0): MZV.one()}, {(0, 0): MZV.one()}
    for m in range(1, deg // 2 + 1):
        power = {k: v for k, v in poly_mul(power, exponent).items() if sum(k) <= deg}
        expo = poly_add(expo, poly_scale(power, Fr(1, math.factorial(m))))
    coeffs = {}
    for (i, j), c in expo.items():
        for key in [(i - 1, j), (i, j - 1)]:
            if sum(key) <= order:
                coeffs[key] = coeffs.get(key, MZV()) - c
    return Expansion(("s", "t"), (), order, {k: {(): v} for k, v in coeffs.items() if v})


BETA = integrand(term(ONE))
VERIFY_POINTS = [point(-0.1, -0.07), point(Fr(13, 100), Fr(7, 100)), point("1/5", "-3/20")]


@pytest.fixture(scope="module")
def beta10():
    return beta_expansion(10)


def test_hand_built_expansion_starts_right(beta10):
    # METHOD §4 sanity check: B(-s,-t) = -1/s - 1/t + ζ(2)(s+t) + ...
    assert beta10.value(-1, 0) == -1 and beta10.value(0, -1) == -1
    assert beta10.value(1, 0) == zeta(2) and beta10.value(0, 0) == 0


@pytest.mark.parametrize("pt", VERIFY_POINTS, ids=str)
def test_verify_consistent(beta10, pt):
    report = verify(BETA, beta10, pt, digits=30)
    assert isinstance(report, VerifyReport)
    assert report.consistent, report.summary()
    assert report.digits_agreement >= 6
    assert report.quadrature_error < mp.mpf(10) ** -25 * abs(report.quadrature)
    # the quadrature is independent of the series: compare it with A&S 6.2.1 as well
    with mp.workdps(REF_DPS):
        expected = mp.beta(-ref(pt["s"]), -ref(pt["t"]))
    assert_close(report.quadrature, expected, 28)


def test_verify_truncation_estimate_brackets_true_error(beta10):
    pt = point(Fr(-1, 10), Fr(-7, 100))
    report = verify(BETA, beta10, pt, digits=30)
    sums = report.details["order_sums"]
    with mp.workdps(40):
        expected = max(abs(sums[10]), abs(sums[9]))
    assert_close(report.truncation_estimate, expected, 25)
    assert abs(report.difference) <= report.truncation_estimate


@pytest.mark.parametrize("monomial", [(1, 1), (0, 3), (-1, 0), (2, 2)], ids=str)
def test_verify_flags_corrupted_coefficient(beta10, monomial):
    coeffs = dict(beta10.coefficients)
    old = coeffs.get(monomial, {}).get((), MZV())
    coeffs[monomial] = {(): old + Fr(1, 1000)}
    bad = Expansion(beta10.variables, beta10.parameters, beta10.order, coeffs)
    report = verify(BETA, bad, point(Fr(-1, 10), Fr(-7, 100)), digits=30)
    assert not report.consistent, report.summary()
    assert "NO" in report.summary()


def test_verify_lower_order_is_still_consistent_but_less_accurate():
    low = beta_expansion(4)
    pt = point(Fr(-1, 10), Fr(-7, 100))
    r4 = verify(BETA, low, pt, digits=30)
    assert r4.consistent
    assert 2 < r4.digits_agreement < 8


def test_series_value_order_sums(beta10):
    value, sums = series_value(beta10, point(Fr(1, 10), Fr(1, 20)), 30)
    with mp.workdps(40):
        assert_close(sums[-1], -(mp.mpf(10) + 20), 35)  # -1/s - 1/t
        assert_close(value, mp.fsum(sums.values()), 35)


def test_verify_rejects_mismatched_names(beta10):
    other = Integrand(terms=[term(ONE)], variables=("u", "v"))
    with pytest.raises(InputError):
        verify(other, beta10, {"u": 0.1, "v": 0.1})


# ==========================================================================
# 4. end to end: engine → verify (independent numbers only on the verify side)
# ==========================================================================

ENGINE_CASES = {
    "beta": integrand(term(ONE)),
    "weight-3 words": integrand(term(ONE, (0, 1, 0)), term(coef(2), (1, 1, 0))),
    "shifted log-word": integrand(term(ONE, (1, 0), ax=0, by=1)),
}


@pytest.fixture(scope="module")
def engine():
    return pytest.importorskip("lowenergy.expansion.engine")


@pytest.mark.parametrize("pt", VERIFY_POINTS, ids=str)
def test_engine_beta_order_10_verifies(engine, pt):
    expansion = engine.expand(BETA, 10)
    report = verify(BETA, expansion, pt, digits=30)
    assert report.consistent, report.summary()
    assert report.digits_agreement >= 6


def test_engine_corrupted_coefficient_is_flagged(engine):
    expansion = engine.expand(BETA, 10)
    coeffs = dict(expansion.coefficients)
    coeffs[(1, 2)] = {(): coeffs[(1, 2)][()] + Fr(1, 1000)}
    bad = Expansion(expansion.variables, expansion.parameters, expansion.order, coeffs)
    assert verify(BETA, expansion, point(-0.1, -0.07)).consistent
    assert not verify(BETA, bad, point(-0.1, -0.07)).consistent


@pytest.mark.parametrize("name", [n for n in ENGINE_CASES if n != "beta"])
def test_engine_other_integrands_verify(engine, name):
    itg = ENGINE_CASES[name]
    expansion = engine.expand(itg, 7)
    for pt in VERIFY_POINTS[:2]:
        report = verify(itg, expansion, pt, digits=30)
        assert report.consistent, report.summary()
        assert report.digits_agreement >= 5
