"""The engine against Gamma-function closed forms, exactly.

Expected series are built here from Abramowitz & Stegun 6.1.33,
``log Γ(1+z) = -γ z + Σ_{k≥2} (-1)^k ζ(k) z^k / k``, and 6.3.14,
``ψ(1+z) = -γ + Σ_{k≥2} (-1)^k ζ(k) z^(k-1)``, with Euler's
``ζ(2k) = (-1)^(k+1) B_2k (2π)^(2k) / (2 (2k)!)`` (A&S 23.2.16) to write even
zetas as rational multiples of ζ(2)^k.  The arithmetic is plain polynomial
arithmetic in the symbols ζ(2), ζ(3), ζ(5), ... (the MZV class used as a
commutative ring; no reduction table is consulted).
"""

from __future__ import annotations

from fractions import Fraction
from math import comb, factorial

import pytest
import sympy

from lowenergy.expansion.engine import raw_series
from lowenergy.expansion.fast import series_vectors
from lowenergy.zeta.table import default_store
from lowenergy.integrand.model import LinearExponent
from lowenergy.zeta.element import MZV

S, T = 0, 1


def zeta_k(k: int) -> MZV:
    """ζ(k) as a polynomial in the generators ζ(2), ζ(odd)."""
    if k % 2:
        return MZV({((k,),): 1})
    n = k // 2
    # ζ(2n) = (-1)^(n+1) B_2n (2π)^(2n) / (2 (2n)!) and π^2 = 6 ζ(2)
    b = Fraction(int(sympy.bernoulli(2 * n).p), int(sympy.bernoulli(2 * n).q))
    c = (-1) ** (n + 1) * b * Fraction(2) ** (2 * n) * Fraction(6) ** n / (2 * factorial(2 * n))
    return MZV({tuple([(2,)] * n): c})


# truncated power series in s, t: {(i, j): MZV}

def mul(a, b, order):
    out = {}
    for (i, j), x in a.items():
        for (k, l), y in b.items():
            if i + j + k + l <= order:
                out[(i + k, j + l)] = out.get((i + k, j + l), MZV()) + x * y
    return {k: v for k, v in out.items() if v}


def add(a, b, factor=1):
    out = dict(a)
    for k, v in b.items():
        out[k] = out.get(k, MZV()) + v * factor
    return {k: v for k, v in out.items() if v}


def exp_series(x, order):
    result = {(0, 0): MZV.one()}
    term = {(0, 0): MZV.one()}
    for n in range(1, order + 1):
        term = {k: v * Fraction(1, n) for k, v in mul(term, x, order).items()}
        if not term:
            break
        result = add(result, term)
    return result


def gamma_ratio(order):
    """Γ(1-s)Γ(1-t)/Γ(1-s-t) = exp(Σ_k ζ(k)/k (s^k + t^k - (s+t)^k)) (A&S 6.1.33)."""
    x = {}
    for k in range(2, order + 1):
        z = zeta_k(k) * Fraction(1, k)
        poly = {(k, 0): 1, (0, k): 1}
        for i in range(k + 1):
            poly[(i, k - i)] = poly.get((i, k - i), 0) - comb(k, i)
        x = add(x, {m: z * c for m, c in poly.items() if c})
    return exp_series(x, order)


def shift(series, di, dj):
    return {(i + di, j + dj): v for (i, j), v in series.items()}


def truncate(series, order):
    return {k: v for k, v in series.items() if k[0] + k[1] <= order}


@pytest.fixture(params=["termwise", "bulk"])
def engine(request):
    """Both code paths: raw_series (one word, MZV arithmetic) and the bulk vector path
    (shifted exponents there by integration by parts)."""

    def run(xshift, yshift, word, order, cx=-1, cy=-1):
        x_exp = LinearExponent(xshift, Fraction(cx), S)
        y_exp = LinearExponent(yshift, Fraction(cy), T)
        if request.param == "termwise":
            return raw_series(x_exp, y_exp, tuple(word), order)
        return series_vectors(x_exp, y_exp, tuple(word), order, default_store())

    return run


ORDER = 11  # weight 12: the test tables


def test_beta_function_to_order_11(engine):
    # B(-s,-t) = Γ(-s)Γ(-t)/Γ(-s-t) = -(s+t)/(s t) · Γ(1-s)Γ(1-t)/Γ(1-s-t)   (A&S 6.2.2, 6.1.15)
    # -(s+t)/(s t) = -1/t - 1/s, so B = -(ratio)/t - (ratio)/s.
    minus_r = {k: -v for k, v in gamma_ratio(ORDER + 1).items()}
    expected = truncate(add(shift(minus_r, 0, -1), shift(minus_r, -1, 0)), ORDER)
    assert engine(-1, -1, (), ORDER) == expected


def test_open_superstring_factor(engine):
    # ∫ x^(-s-1)(1-x)^(-t) = Γ(-s)Γ(1-t)/Γ(1-s-t) = -(1/s) Γ(1-s)Γ(1-t)/Γ(1-s-t)   (A&S 6.2.2)
    expected = truncate(shift({k: -v for k, v in gamma_ratio(ORDER + 1).items()}, -1, 0), ORDER)
    assert engine(-1, 0, (), ORDER) == expected
    # ∫ x^(-s)(1-x)^(-t-1) = -(1/t) Γ(1-s)Γ(1-t)/Γ(1-s-t)
    expected = truncate(shift({k: -v for k, v in gamma_ratio(ORDER + 1).items()}, 0, -1), ORDER)
    assert engine(0, -1, (), ORDER) == expected


def test_both_shifted_factor(engine):
    # ∫ x^(-s)(1-x)^(-t) = Γ(1-s)Γ(1-t)/Γ(2-s-t) = ratio / (1-s-t)   (A&S 6.2.2, 6.1.15)
    geo = {}
    for k in range(ORDER + 1):
        for i in range(k + 1):
            geo[(i, k - i)] = MZV.rational(comb(k, i))
    expected = mul(gamma_ratio(ORDER), geo, ORDER)
    assert engine(0, 0, (), ORDER) == expected


def test_higher_shift_against_gamma(engine):
    # ∫ x^(-s+1)(1-x)^(-t) = Γ(2-s)Γ(1-t)/Γ(3-s-t) = (1-s)/((2-s-t)(1-s-t)) · ratio
    order = 8
    # 1/((1-s-t)(2-s-t)) = Σ_k (1 - 2^-(k+1)) (s+t)^k
    inv = {}
    for k in range(order + 1):
        c = 1 - Fraction(1, 2 ** (k + 1))
        for i in range(k + 1):
            inv[(i, k - i)] = MZV.rational(c * comb(k, i))
    expected = mul(mul(gamma_ratio(order), inv, order), {(0, 0): MZV.one(), (1, 0): MZV.rational(-1)}, order)
    assert engine(1, 0, (), order) == expected


def test_log_x_insertion_digamma(engine):
    # ∫ x^(-s-1)(1-x)^(-t-1) log x dx = B(-s,-t) (ψ(-s) - ψ(-s-t))  (derivative of A&S 6.2.1)
    # With ψ(-s) = ψ(1-s) + 1/s (A&S 6.3.5) and ψ(1-s) - ψ(1-s-t) = t·D(s,t),
    # D = Σ_k ζ(k) Σ_{j=1}^{k-1} C(k-1,j) s^(k-1-j) t^(j-1)  (A&S 6.3.14), one finds
    # s^2 · I = -ratio - s (s+t) · ratio · D.
    order = 8
    n = order + 2
    r = gamma_ratio(n)
    d = {}
    for k in range(2, n + 2):
        z = zeta_k(k)
        for j in range(1, k):
            key = (k - 1 - j, j - 1)
            d[key] = d.get(key, MZV()) + z * comb(k - 1, j)
    d = truncate(d, n)
    s_spt = {(2, 0): MZV.one(), (1, 1): MZV.one()}
    s2i = add({k: -v for k, v in r.items()}, mul(mul(s_spt, r, n), d, n), -1)
    expected = truncate(shift(s2i, -2, 0), order)
    got = engine(-1, -1, (0,), order)
    assert got[(-2, 0)] == MZV.rational(-1)  # the exact double pole -1/s^2
    assert got == expected


def test_log_one_minus_x_insertion_by_symmetry(engine):
    # x -> 1-x exchanges s and t and log x with log(1-x)
    order = 8
    a = engine(-1, -1, (0,), order)
    b = engine(-1, -1, (1,), order)
    assert b == {(j, i): v for (i, j), v in a.items()}


def test_modular_word_values_agree_with_exact_rows():
    # The high-weight path (rows modulo primes + rational reconstruction) must give the
    # same exact coefficients as the exact Fraction rows where both exist.
    import random

    from lowenergy.expansion.values import word_values

    rng = random.Random(5)
    for w in (4, 8, 11):
        exact, modular = word_values(w, exact=True), word_values(w, exact=False)
        for _ in range(10):
            coeffs = {rng.randrange(2**w): rng.randint(-(10**9), 10**9) for _ in range(40)}
            assert exact.combine(coeffs) == modular.combine(coeffs)
