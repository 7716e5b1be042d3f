"""Single-valued polylogarithms in integrands: ``svpolylog(a1, ..., an; x)``.

Two parts.

1. The reader: accepted forms, refused forms (with their messages), and exact
   identities ``svpolylog(0; x) = 2 log x``, ``svpolylog(1; x) = 2 log(1-x)`` and, for
   every word of weight ≤ 4, ``svpolylog(w; x)`` = the combination derived below.
2. Weight-4 integrands expanded by the engine against mpmath quadrature,
   with ``L_w(x)`` evaluated by code in this file only.

The independent reference for ``L_w(x)`` on 0 < x < 1 (derived here; the
package's ``real_line_restriction`` / ``sv_polylog_numeric`` are not used)
--------------------------------------------------------------------------
Our own derivation, in the conventions of lowenergy.svpolylog.construct:
``L(z) = Σ_w G(w; z) x_w`` solves ``∂_z L = (x0/z + x1/(z-1)) L`` with
``L ~ exp(x0 log z)`` at 0.  The generating series ``L_sv = Σ L_w x_w`` of
Brown's functions satisfies the same equation in ``z`` (that is
``∂_z L_{aw} = L_w/(z - a)``), is single-valued, and ``L_sv ~ exp(x0 log|z|²)``
at 0.  Hence ``L_sv(z) = L(z) C(z̄)`` with ``C`` antiholomorphic and
``C ~ exp(x0 log z̄)`` at 0.  Try ``C = ~L(z̄) + D``, where ``~`` reverses
words (so ``L(z) ~L(z̄)`` has the right behaviour at 0 and is single-valued
around 0: the factors ``exp(±2πi x0)`` meet and cancel).

Around 1 (``z`` once counter-clockwise, so ``z̄`` once clockwise), by the
standard fact that ``L(z) = L^(1)(z) Z`` with ``L^(1) ~ exp(x1 log(1-z))`` at
1 and ``Z = Σ G_reg(w; 1) x_w`` (shuffle-regularized, ``G(0;1) = G(1;1) = 0``;
Drinfeld's associator):
``L(z) ~L(z̄) -> L(z) M ~L(z̄)``, ``M = Z^-1 e^{2πi x1} Z · ~Z e^{-2πi x1} ~Z^-1``.
We compute ``M`` numerically here (MZVs from tests/reference.py, our own
shuffle regularization) and find (asserted in ``test_monodromy_at_one``):
``M - 1`` has no terms of degree 1, 2, 3, and its degree-4 part is
``2πi ζ(3) × (integers)``.  So ``D = 0`` below weight 4, and at weight 4 the
antiholomorphic ``D_4`` must change by ``-(M - 1)_4`` under the loop, be
single-valued around 0, vanish at 0 and grow at most logarithmically; the
unique such function is ``D_4 = log(1 - z̄) · (M - 1)_4 / (2πi)`` (the
difference of two solutions is a single-valued antiholomorphic function on
P^1 minus {0, 1, ∞} of logarithmic growth, i.e. a constant, which vanishes at
0).  On the real line ``z = z̄ = x`` this gives, for ``|w| ≤ 4``,

    L_w(x) = Σ_j G(w_1...w_j; x) G(w_n...w_(j+1); x) + κ_w ζ(3) log(1 - x),

with ``κ_w = 0`` for ``|w| < 4`` and ``κ_w ζ(3)`` = coefficient of ``x_w`` in
``(M - 1)_4/(2πi)`` (e.g. ``κ_0101 = -4``, ``κ_1101 = -6``, ``κ_0011 = 2``).

Numerics of G(w; x) (our own code): products are shuffled into single words;
trailing zeros are split off by the shuffle identity with ``G(0; x) = log x``;
words ending in 1 are summed as power series in ``x`` for ``x ≤ 1/2``.  For
``x > 1/2``, ``G(w; x) = Σ_j G(1-w_1, ..., 1-w_j; 1-x) G_reg(w_(j+1)...; 1)``
(``L(x) = L^(1)(x) Z`` again, with ``L^(1)(x)`` = ``L`` of ``1-x`` with the
letters exchanged) and the same series in ``1 - x``.  This evaluator is
checked against mpmath.polylog, Kölbig's Nielsen integrals and direct
(double) quadrature of the iterated integrals.

Quadrature: as tests/expansion/test_engine_quadrature.py (METHOD.md §3),
split at 1/2 with ``x = u^(1/(-s))`` near 0 and ``1-x = v^(1/(-t))`` near 1.
"""

from __future__ import annotations

import itertools
from fractions import Fraction
from functools import lru_cache

import mpmath
import pytest

from lowenergy.errors import InputError
from lowenergy.expansion.engine import expand
from lowenergy.integrand.reader import integrand_from_text, terms_from_expression
from tests.reference import reference_mzv, reference_word

DPS = 40          # working precision of the quadrature and series
NSERIES = 180     # power-series terms: 2^-180 < 1e-54 at x or 1-x ≤ 1/2

# --------------------------------------------------------------------------
# words, shuffles, regularized values at 1 (written here, not the package's)
# --------------------------------------------------------------------------


def shuffle(u, v):
    """Shuffle product of two words: {word: multiplicity}."""
    u, v = tuple(u), tuple(v)

    @lru_cache(maxsize=None)
    def rec(i, j):
        if i == len(u):
            return {v[j:]: 1}
        if j == len(v):
            return {u[i:]: 1}
        out = {}
        for head, rest in ((u[i], rec(i + 1, j)), (v[j], rec(i, j + 1))):
            for w, c in rest.items():
                out[(head,) + w] = out.get((head,) + w, 0) + c
        return out

    return rec(0, 0)


def _run(word, letter):
    """Length of the run of ``letter`` at the start of ``word``."""
    n = 0
    for a in word:
        if a != letter:
            break
        n += 1
    return n


@lru_cache(maxsize=None)
def g_at_one(word, digits):
    """Shuffle-regularized ``G(word; 1)`` (``G(0;1) = G(1;1) = 0``), as an mpf.

    Trailing zeros: ``0 = G(v)G(0) = Σ_i G(v[:i] 0 v[i:])``, where the word
    ``v0`` occurs m = (trailing zeros of v0) times; leading ones likewise with
    ``G(1)G(v)``.  Convergent words from tests/reference.py.
    """
    w = tuple(word)
    if not w:
        return mpmath.mpf(1)
    if all(a == w[0] for a in w):
        return mpmath.mpf(0)
    m = _run(w[::-1], 0)
    if m:
        v = w[:-1]
        return -sum(g_at_one(v[:i] + (0,) + v[i:], digits) for i in range(len(v) - m + 1)) / m
    m = _run(w, 1)
    if m:
        v = w[1:]
        return -sum(g_at_one(v[:i] + (1,) + v[i:], digits) for i in range(m, len(v) + 1)) / m
    return reference_word(w, digits)


# --------------------------------------------------------------------------
# the monodromy of L(z) ~L(z̄) around 1 and the constants κ_w
# --------------------------------------------------------------------------


def _smul(a, b, n):
    out = {}
    for u, c in a.items():
        for v, d in b.items():
            if len(u) + len(v) <= n:
                out[u + v] = out.get(u + v, 0) + c * d
    return out


def _sinv(a, n):
    """Inverse of 1 + X as Σ (-X)^k, truncated at degree n."""
    minus_x = {w: -c for w, c in a.items() if w}
    out, power = {(): mpmath.mpf(1)}, {(): mpmath.mpf(1)}
    for _ in range(n):
        power = _smul(power, minus_x, n)
        for w, c in power.items():
            out[w] = out.get(w, 0) + c
    return out


def _rev(a):
    return {w[::-1]: c for w, c in a.items()}


@lru_cache(maxsize=None)
def monodromy_defect(n=4, digits=50):
    """``M - 1`` up to degree n, ``M = Z^-1 e^{2πi x1} Z ~Z e^{-2πi x1} ~Z^-1``."""
    with mpmath.workdps(digits):
        z = {w: g_at_one(w, digits + 5) for k in range(n + 1) for w in itertools.product((0, 1), repeat=k)}
        tpi = 2j * mpmath.pi
        e_plus = {(1,) * k: tpi**k / mpmath.factorial(k) for k in range(n + 1)}
        e_minus = {(1,) * k: (-tpi) ** k / mpmath.factorial(k) for k in range(n + 1)}
        m = _sinv(z, n)
        for factor in (e_plus, z, _rev(z), e_minus, _sinv(_rev(z), n)):
            m = _smul(m, factor, n)
        m[()] -= 1
        return {w: c for w, c in m.items()}


@lru_cache(maxsize=None)
def kappa(word):
    """κ_w: the ζ(3) log(1-x) coefficient of L_w(x) on 0<x<1 (0 below weight 4)."""
    if len(word) < 4:
        return Fraction(0)
    assert len(word) == 4, "derived here for weight ≤ 4 only"
    defect = monodromy_defect()
    with mpmath.workdps(50):
        value = defect[tuple(word)] / (2j * mpmath.pi) / reference_mzv((3,), 55)
        k = Fraction(int(mpmath.nint(mpmath.re(value))))
        assert abs(value - k) < mpmath.mpf(10) ** -40, (word, value)
    return k


def naive_real_line(word):
    """``Σ_j G(w_1..w_j; x) G(w_n..w_(j+1); x)`` shuffled: {G-word: integer}."""
    word = tuple(word)
    out = {}
    for j in range(len(word) + 1):
        for u, c in shuffle(word[:j], word[j:][::-1]).items():
            out[u] = out.get(u, 0) + c
    return out


# --------------------------------------------------------------------------
# numerics of combinations of G(w; x), 0 < x < 1
# --------------------------------------------------------------------------


def strip_trailing_zeros(word):
    """``G(w) = Σ c G(0)^k/k! G(w')``, w' empty or ending in 1: {(k, w'): Fraction}."""
    w = tuple(word)
    m = _run(w[::-1], 0)
    if m == 0:
        return {(0, w): Fraction(1)}
    if m == len(w):
        return {(m, ()): Fraction(1)}
    v = w[:-1]
    out = {}
    for (k, u), c in strip_trailing_zeros(v).items():  # G(v) G(0), with G(0)^k/k! G(0) = (k+1) G(0)^(k+1)/(k+1)!
        out[(k + 1, u)] = out.get((k + 1, u), 0) + c * (k + 1)
    for i in range(len(v) - m + 1):
        for key, c in strip_trailing_zeros(v[:i] + (0,) + v[i:]).items():
            out[key] = out.get(key, 0) - c
    return {key: c / m for key, c in out.items() if c}


def taylor(word, n):
    """Taylor coefficients of ``G(word; y)`` at 0 (word empty or ending in 1)."""
    c = [mpmath.mpf(1)] + [mpmath.mpf(0)] * n
    for a in reversed(word):
        new = [mpmath.mpf(0)] * (n + 1)
        if a == 0:  # ∫_0^y dt/t t^k = y^k/k
            for k in range(1, n + 1):
                new[k] = c[k] / k
        else:  # ∫_0^y dt/(t-1) Σ c_k t^k = -Σ_m (Σ_{k≤m} c_k) y^(m+1)/(m+1)
            acc = mpmath.mpf(0)
            for k in range(n):
                acc += c[k]
                new[k + 1] = -acc / (k + 1)
        c = new
    return c


class LogSeries:
    """``Σ_k log(y)^k P_k(y)`` for a combination {G-word of y: coefficient}."""

    def __init__(self, combination, n=NSERIES):
        self.rows = {}
        cache = {}
        for word, cw in combination.items():
            for (k, u), c in strip_trailing_zeros(word).items():
                if u not in cache:
                    cache[u] = taylor(u, n)
                row = self.rows.setdefault(k, [mpmath.mpf(0)] * (n + 1))
                f = cw * mpmath.mpf(c.numerator) / c.denominator / mpmath.factorial(k)
                for i, a in enumerate(cache[u]):
                    row[i] += f * a
        self.rows = {k: row[::-1] for k, row in self.rows.items()}  # highest power first

    def __call__(self, y):
        logy = mpmath.log(y)
        return sum(logy**k * mpmath.polyval(row, y) for k, row in self.rows.items())


def to_one_minus_x(combination, digits):
    """{G-word of x: c} -> {G-word of 1-x: c'} via G(w;x) = Σ_j G(1-w_1..1-w_j; 1-x) G_reg(w_(j+1)..; 1)."""
    out = {}
    for w, c in combination.items():
        for j in range(len(w) + 1):
            value = g_at_one(w[j:], digits)
            if value:
                u = tuple(1 - a for a in w[:j])
                out[u] = out.get(u, 0) + c * value
    return out


class RealLineFunction:
    """A combination of G(w; x), evaluated as F(x, y) with y = 1 - x given separately."""

    def __init__(self, combination):
        self.left = LogSeries(combination)
        self.right = LogSeries(to_one_minus_x(combination, mpmath.mp.dps + 5))

    def __call__(self, x, y=None):
        if y is None:
            y = 1 - x
        return self.left(x) if x <= 0.5 else self.right(y)


@lru_cache(maxsize=None)
def reference_lsv(word, dps=DPS):
    """L_w(x) on 0 < x < 1 from the derivation in the module docstring."""
    with mpmath.workdps(dps):
        combination = {w: mpmath.mpf(c) for w, c in naive_real_line(word).items()}
        k = kappa(tuple(word))
        if k:
            combination[(1,)] = combination.get((1,), 0) + mpmath.mpf(k.numerator) / k.denominator * reference_mzv(
                (3,), dps + 5
            )
        return RealLineFunction(combination)


def g_function(word):
    return RealLineFunction({tuple(word): mpmath.mpf(1)})


# --------------------------------------------------------------------------
# checks of the independent reference itself
# --------------------------------------------------------------------------


def test_monodromy_at_one():
    """M - 1 vanishes below degree 4; its degree-4 part is 2πi ζ(3) × integers."""
    defect = monodromy_defect()
    tol = mpmath.mpf(10) ** -40
    for w, c in defect.items():
        if len(w) < 4:
            assert abs(c) < tol, (w, c)
    ks = {w: kappa(w) for w in itertools.product((0, 1), repeat=4)}
    # a non-trivial correction, antisymmetric under reversal of the word
    assert ks[(0, 1, 0, 1)] == -4 and ks[(1, 1, 0, 1)] == -6 and ks[(0, 0, 1, 1)] == 2
    assert all(ks[w] == -ks[w[::-1]] for w in ks)


def test_g_at_one_small_words():
    # G(0,1;1) = -ζ(2), G(1,0;1) = ζ(2) (shuffle), G(0,1,0;1) = 2ζ(3), G(1,0,0;1) = -ζ(3)
    with mpmath.workdps(30):
        z2, z3 = reference_mzv((2,), 35), reference_mzv((3,), 35)
        tol = mpmath.mpf(10) ** -28
        assert abs(g_at_one((1, 0), 35) - z2) < tol
        assert abs(g_at_one((0, 1, 0), 35) - 2 * z3) < tol
        assert abs(g_at_one((1, 0, 0), 35) + z3) < tol
        # G(1,1,0) = -G(0,1,1) - G(1,0,1) = -ζ(2,1) + 2ζ(2,1) = ζ(3) (shuffles by hand; ζ(2,1) = ζ(3), Euler)
        assert abs(g_at_one((1, 1, 0), 35) - z3) < tol


def _nielsen(n, p, x):
    """S_{n,p}(x), Kölbig, SIAM J. Math. Anal. 17 (1986), eq. (1.1); S_{n,p} = (-1)^p G(0^n, 1^p)."""
    c = mpmath.mpf(-1) ** (n + p - 1) / (mpmath.factorial(n - 1) * mpmath.factorial(p))
    return c * mpmath.quad(lambda tau: mpmath.log(tau) ** (n - 1) * mpmath.log(1 - x * tau) ** p / tau, [0, 1])


# direct mpmath values of G(w; x), each from its definition as an iterated integral
DIRECT = {
    (0, 0, 0, 1): lambda x: -mpmath.polylog(4, x),
    (0, 0, 1, 1): lambda x: _nielsen(2, 2, x),
    # G(1,0,0,0;x) = ∫_0^x dt/(t-1) log^3(t)/6
    (1, 0, 0, 0): lambda x: mpmath.quad(lambda t: mpmath.log(t) ** 3 / 6 / (t - 1), [0, x]),
    # G(0,1,0,1;x) = ∫_0^x dt/t G(1,0,1;t), G(1,0,1;t) = ∫_0^t Li2(u)/(1-u) du, u = tτ
    (0, 1, 0, 1): lambda x: mpmath.quad(lambda t, tau: mpmath.polylog(2, t * tau) / (1 - t * tau), [0, x], [0, 1]),
    # G(1,1,0,1;x) = ∫_0^x dt/(t-1) G(1,0,1;t)
    (1, 1, 0, 1): lambda x: -mpmath.quad(
        lambda t, tau: t / (1 - t) * mpmath.polylog(2, t * tau) / (1 - t * tau), [0, x], [0, 1]
    ),
    # G(0,1,1,0;x) = ∫_0^x dt/t ∫_0^t du/(u-1) G(1,0;u), G(1,0;u) = log(1-u) log(u) + Li2(u)
    (0, 1, 1, 0): lambda x: mpmath.quad(
        lambda t, tau: (mpmath.log(1 - t * tau) * mpmath.log(t * tau) + mpmath.polylog(2, t * tau)) / (t * tau - 1),
        [0, x],
        [0, 1],
    ),
}


@pytest.mark.parametrize("word", list(DIRECT))
def test_g_evaluator_against_direct_integrals(word):
    with mpmath.workdps(22):
        f = g_function(word)
        for x in ("0.3", "0.8"):  # one point per branch (series in x, series in 1-x)
            x = mpmath.mpf(x)
            direct = DIRECT[word](x)
            assert abs(f(x) - direct) < mpmath.mpf(10) ** -19 * (1 + abs(direct)), (word, x, f(x), direct)


def test_reference_low_weight_closed_forms():
    # L_0 = log|z|^2, L_1 = log|1-z|^2, L_{0^n} = log^n|z|^2/n! (construct.py docstring);
    # L_01 = L_10 on the real line (the Bloch-Wigner function vanishes there).
    with mpmath.workdps(30):
        for x in (mpmath.mpf("0.2"), mpmath.mpf("0.7")):
            tol = mpmath.mpf(10) ** -27
            assert abs(reference_lsv((0,), 30)(x) - 2 * mpmath.log(x)) < tol
            assert abs(reference_lsv((1,), 30)(x) - 2 * mpmath.log(1 - x)) < tol
            assert abs(reference_lsv((0, 0, 0), 30)(x) - (2 * mpmath.log(x)) ** 3 / 6) < tol
            assert abs(reference_lsv((0, 1), 30)(x) - reference_lsv((1, 0), 30)(x)) < tol


# --------------------------------------------------------------------------
# weight-4 integrands: engine against quadrature
# --------------------------------------------------------------------------

# (integrand text after x^(-s-1)*(1-x)^(-t-1)*, [(polynomial P(s,t), word)])
CASES = {
    "0101": ("(1+s-2*t)*svpolylog(0,1,0,1; x)", [(lambda s, t: 1 + s - 2 * t, (0, 1, 0, 1))]),
    "1101+0011": (
        "((s-2*t)*svpolylog(1,1,0,1; x) + t*svpolylog(0,0,1,1; x))",
        [(lambda s, t: s - 2 * t, (1, 1, 0, 1)), (lambda s, t: t, (0, 0, 1, 1))],
    ),
}
# |s|, |t| ≤ 0.0011 so that order 6 is good to 20 digits (the series of
# L_0101 starts at order 0: the order-7 terms are ~ 1e-21 of the sum)
POINTS = [(-0.001, -0.0011), (-0.0009, -0.0005), (-0.0006, -0.0008)]
ORDERS = (6, 8)  # order 8 needs tables to weight 13 (test tables: 14)


def reference_integral(parts, s, t):
    """∫_0^1 x^(-s-1) (1-x)^(-t-1) Σ P(s,t) L_w(x) dx by mpmath quadrature; (value, error estimate)."""
    s, t = mpmath.mpf(s), mpmath.mpf(t)
    a, b = -s, -t
    funcs = [(p(s, t), reference_lsv(w)) for p, w in parts]

    def f(x, y):
        return sum(c * lw(x, y) for c, lw in funcs)

    def left(u):  # x = u^(1/a) on [0, 1/2]: x^(a-1) dx = du / a
        x = u ** (1 / a)
        return (1 - x) ** (b - 1) * f(x, 1 - x) / a

    def right(v):  # 1-x = v^(1/b) on [1/2, 1]
        y = v ** (1 / b)
        x = 1 - y
        return x ** (a - 1) * f(x, y) / b

    half = mpmath.mpf(1) / 2
    v1, e1 = mpmath.quad(left, [0, half**a], error=True)
    v2, e2 = mpmath.quad(right, [0, half**b], error=True)
    return v1 + v2, e1 + e2


def series_value(expansion, s, t, only_order=None):
    s, t = mpmath.mpf(s), mpmath.mpf(t)
    total = mpmath.mpf(0)
    for (i, j), poly in expansion.coefficients.items():
        if only_order is not None and i + j != only_order:
            continue
        for mono, c in poly[()].terms():
            term = mpmath.mpf(c.numerator) / c.denominator
            for g in mono:
                term *= reference_mzv(g, DPS)
            total += term * s**i * t**j
    return total


@pytest.mark.parametrize("name", list(CASES))
def test_weight4_integrand_against_quadrature(name):
    text, parts = CASES[name]
    integrand = integrand_from_text(f'integrand = "x^(-s-1)*(1-x)^(-t-1)*{text}"\n', source=name)
    expansions = {order: expand(integrand, order) for order in ORDERS}
    with mpmath.workdps(DPS):
        for s, t in POINTS:
            ref, quad_error = reference_integral(parts, s, t)
            assert quad_error < abs(ref) * mpmath.mpf(10) ** -30, (name, s, t, quad_error)
            for order, digits in ((6, 20), (8, 24)):
                ser = series_value(expansions[order], s, t)
                top = abs(series_value(expansions[order], s, t, only_order=order))
                truncation = 10 * max(abs(s), abs(t)) * top
                assert truncation < abs(ref) * mpmath.mpf(10) ** -digits, ("point too far out", name, order, s, t)
                assert abs(ser - ref) <= abs(ref) * mpmath.mpf(10) ** -28 + truncation, (name, order, s, t, ser, ref)


def test_zeta3_correction_is_visible():
    """Without κ ζ(3) log(1-x) the reference would miss by far more than the tolerance.

    ∫_0^1 x^(a-1) (1-x)^(b-1) log(1-x) dx = B(a, b) (ψ(b) - ψ(a+b))
    (differentiate the Beta integral in b; e.g. Abramowitz-Stegun 6.2.1, 6.3.1).
    """
    with mpmath.workdps(30):
        s, t = mpmath.mpf(POINTS[0][0]), mpmath.mpf(POINTS[0][1])
        a, b = -s, -t
        log_moment = mpmath.beta(a, b) * (mpmath.digamma(b) - mpmath.digamma(a + b))
        ref, _ = reference_integral(CASES["0101"][1], s, t)
        contribution = 4 * reference_mzv((3,), 35) * (1 + s - 2 * t) * log_moment
        assert abs(contribution) > abs(ref) * mpmath.mpf(10) ** -3


# --------------------------------------------------------------------------
# the reader
# --------------------------------------------------------------------------


def canonical(terms):
    return {(t.x_exp, t.y_exp, t.word): t.coefficient for t in terms if t.coefficient}


def same_terms(a, b, **kwargs):
    return canonical(terms_from_expression(a, **kwargs)) == canonical(terms_from_expression(b, **kwargs))


def g_text(combination, x="x"):
    return " + ".join(f"({c})*G({','.join(map(str, w))}; {x})" if w else f"({c})" for w, c in combination.items())


def test_lsv_0_and_1_are_twice_the_logarithms():
    # L_0 = log|z|^2 = 2 log x and L_1 = log|1-z|^2 = 2 log(1-x) on 0 < x < 1
    assert same_terms("svpolylog(0; x)", "2*log(x)")
    assert same_terms("svpolylog(1; x)", "2*log(1-x)")
    for body, other in (("svpolylog(0; x)", "2*log(x)"), ("svpolylog(1; x)", "2*log(1-x)")):
        a = integrand_from_text(f'integrand = "x^(-s-1)*(1-x)^(-t-1)*{body}"', source="a")
        b = integrand_from_text(f'integrand = "x^(-s-1)*(1-x)^(-t-1)*{other}"', source="b")
        assert canonical(a.terms) == canonical(b.terms)
        assert expand(a, 4).coefficients == expand(b, 4).coefficients


def test_lsv_low_weight_identities_by_hand():
    assert same_terms("svpolylog(; x)", "1")
    assert same_terms("svpolylog(0,0; x)", "2*log(x)^2")  # (log x^2)^2 / 2
    assert same_terms("svpolylog(0,0,0; x)", "4*log(x)^3/3")
    # L_01(z) = G(0,1;z) + G(0;z)G(1;z̄) + G(1,0;z̄); on the real line 2 log x log(1-x)
    assert same_terms("svpolylog(0,1; x)", "2*log(x)*log(1-x)")
    assert same_terms("svpolylog(0,1; x) - svpolylog(1,0; x)", "0")
    assert same_terms(
        "svpolylog(0,0,1; x)", "G(0,0,1; x) + log(x)*G(1,0; x) + log(x)^2*log(1-x)/2 + G(1,0,0; x)"
    )


@pytest.mark.parametrize("word", [w for n in range(1, 5) for w in itertools.product((0, 1), repeat=n)])
def test_lsv_equals_derived_combination(word):
    """Exactly: svpolylog(w; x) = Σ_j G(w_1..w_j) G(w_n..w_(j+1)) + κ_w ζ(3) log(1-x)."""
    expected = g_text(naive_real_line(word))
    k = kappa(word)
    if k:
        expected += f" + ({k})*zeta(3)*log(1-x)"
    assert same_terms(f"svpolylog({','.join(map(str, word))}; x)", expected)


@pytest.mark.parametrize(
    "text",
    [
        "svpolylog(0,1; x)",
        "svpolylog( 0 , 1 ;x )",
        "svpolylog(; x)",
        "s*svpolylog(1,0,1; x)*log(x) + t^2*svpolylog(0; x)^2",
        "svpolylog(0,1; x)*G(0,1; x)*Li(2, 1-x)",
        "(1+s)*svpolylog(0,0,1,0,1,1,0,1; x)",  # weight 8, the largest allowed
        "svpolylog(0,1; 1-x)",
        "svpolylog(0,1,1; 1 - x)*svpolylog(1; x)",
    ],
)
def test_accepted_forms(text):
    integrand = integrand_from_text(f'integrand = "x^(-s-1)*(1-x)^(-t-1)*{text}"', source="ok.toml")
    assert integrand.terms


def test_other_integration_variable():
    doc = 'integration_variable = "y"\nintegrand = "y^(-s-1)*(1-y)^(-t-1)*svpolylog(0,1; y)"'
    ref = 'integrand = "x^(-s-1)*(1-x)^(-t-1)*2*log(x)*log(1-x)"'
    assert canonical(integrand_from_text(doc).terms) == canonical(integrand_from_text(ref).terms)
    with pytest.raises(InputError, match="supported only at y"):
        integrand_from_text('integration_variable = "y"\nintegrand = "y^(-s-1)*svpolylog(0,1; x)"')


@pytest.mark.parametrize(
    "text, message, term",
    [
        ("svpolylog(0,2; x)", "letters of svpolylog must be 0 or 1", "2"),
        ("svpolylog(0,-1; x)", "letters of svpolylog must be 0 or 1", "-1"),
        ("svpolylog(1/2; x)", "letters of svpolylog must be 0 or 1", "1/2"),
        ("svpolylog(a; x)", "letters of svpolylog must be 0 or 1", "a"),
        ("svpolylog(0,0,0,0,0,0,0,0,1; x)", "built up to weight 8", None),
        ("svpolylog(1,1,1,1,1,1,1,1,1,1; x)", "built up to weight 8", None),
        ("svpolylog(0,1; 2*x)", "svpolylog is supported only at x and 1-x", "2*x"),
        ("svpolylog(0,1; 1)", "svpolylog is supported only at x and 1-x", "1"),
        ("svpolylog(0,1; x^2)", "svpolylog is supported only at x and 1-x", None),
        ("svpolylog(0,1; 1+x)", "svpolylog is supported only at x and 1-x", None),
        ("svpolylog(x)", "svpolylog needs letters, ';' and the argument", None),
        ("svpolylog(0,1)", "svpolylog needs letters, ';' and the argument", None),
        ("svpolylog(0,1; x, x)", "svpolylog needs letters, ';' and the argument", None),
        ("lsv(0,1; x)", "write svpolylog(...; x)", None),
        ("Lsv(0,1; x)", "the spelling 'Lsv' is not used", None),
        ("svpolylo(0,1; x)", "did you mean 'svpolylog'", None),
    ],
)
def test_refused_forms(text, message, term):
    with pytest.raises(InputError) as info:
        integrand_from_text(f'integrand = "x^(-s-1)*(1-x)^(-t-1)*{text}"', source="bad.toml")
    assert message in str(info.value)
    assert info.value.source == "bad.toml" and info.value.column is not None
    if term is not None:
        assert info.value.term == term


def test_lsv_is_a_reserved_name():
    with pytest.raises(InputError, match="reserved"):
        integrand_from_text('variables = ["svpolylog", "t"]\nintegrand = "x^(-svpolylog-1)"')


def test_bare_lsv_is_reported_as_a_function():
    from lowenergy.errors import InputError
    from lowenergy.integrand.reader import integrand_from_text

    with pytest.raises(InputError, match="'svpolylog' is a function"):
        integrand_from_text('integrand = "x^(-s-1)*(1-x)^(-t-1)*svpolylog"\n', source="bare.toml")


# --------------------------------------------------------------------------
# svpolylog(w; 1-x): L_w at the point 1 - x of the real line
# --------------------------------------------------------------------------


def test_lsv_at_one_minus_x_low_weight_identities():
    # L_0(1-x) = log|1-x|^2 = L_1(x), L_1(1-x) = log|x|^2 = L_0(x) (module docstring: L_0, L_1)
    assert same_terms("svpolylog(0; 1-x)", "svpolylog(1; x)")
    assert same_terms("svpolylog(1; 1-x)", "svpolylog(0; x)")
    # weight 2 on the real line is 2 log x log(1-x) for 01 and 10 (above), symmetric in x <-> 1-x
    assert same_terms("svpolylog(0,1; 1-x)", "2*log(x)*log(1-x)")
    assert same_terms("svpolylog(0,0; 1-x)", "2*log(1-x)^2")


@pytest.mark.parametrize("word", [(0, 0, 1), (0, 1, 1), (1, 0, 0), (0, 1, 0, 1), (1, 1, 0, 1), (0, 0, 1, 1)])
def test_lsv_at_one_minus_x_numerically(word):
    """svpolylog(w; 1-x), as read (a combination of G(u; x)), equals the independent
    reference L_w evaluated at the point 1 - x (derivation in the module docstring)."""
    terms = terms_from_expression(f"svpolylog({','.join(map(str, word))}; 1-x)")
    with mpmath.workdps(DPS):
        for x in (mpmath.mpf("0.2"), mpmath.mpf("0.45"), mpmath.mpf("0.7"), mpmath.mpf("0.93")):
            ours = mpmath.mpf(0)
            for t in terms:
                (c,) = t.coefficient.values()
                ours += c.numeric(DPS) * g_function(t.word)(x, 1 - x)
            ref = reference_lsv(tuple(word))(1 - x, x)
            assert abs(ours - ref) < mpmath.mpf(10) ** (10 - DPS) * (1 + abs(ref))
