"""Independent numerics for the svpolylog tests (no package numerics used).

* :func:`start_values` — all ``G(w; 1/3)`` from ``tests/reference.py``
  (``G(0^(m1-1) 1 ... 0^(md-1) 1; y) = (-1)^d Li_{m1..md}(y)``, nested sums
  written separately from the package), words ending in 0 by shuffling out
  the trailing zeros with ``G(0; y) = log y`` (the shuffle product of
  :mod:`lowenergy.words`, the tested bottom layer).
* :func:`continue_along` — the linear system ``d/dt G(a w; t) = G(w; t) / (t - a)``
  integrated along a parametrized path ``t(τ)`` by Gauss-Legendre
  collocation (``s`` stages, order ``2s``).  The system is strictly
  triangular in the word length, so the collocation equations are solved
  exactly word by word, without iteration.  Nothing here shares code with
  the Taylor stepping of :mod:`lowenergy.svpolylog.numeric`.

Gauss-Legendre nodes by Newton's method on ``mpmath.legendre``; the
collocation matrix ``A_ij = ∫_0^{c_i} ℓ_j`` by the same Gauss rule on
``[0, c_i]`` (exact for the degree ``s-1`` Lagrange polynomials).  E. Hairer,
S. P. Nørsett, G. Wanner, "Solving Ordinary Differential Equations I",
§II.7 (collocation methods), from memory.
"""

from __future__ import annotations

from fractions import Fraction
from functools import lru_cache
from typing import Callable, Dict, List, Tuple

import mpmath

from lowenergy.words import all_words, shuffle
from tests.reference import reference_li

Word = Tuple[int, ...]


def words_upto(n: int) -> List[Word]:
    out: List[Word] = [()]
    for k in range(1, n + 1):
        out.extend(all_words(k))
    return out


def _indices(word: Word) -> Tuple[int, ...]:
    out, zeros = [], 0
    for a in word:
        if a == 1:
            out.append(zeros + 1)
            zeros = 0
        else:
            zeros += 1
    return tuple(out)


@lru_cache(maxsize=None)
def _trailing(word: Word) -> Tuple[Tuple[Tuple[int, Word], Fraction], ...]:
    """``G(word) = Σ c G(0)^k / k! G(v)``, v empty or ending in 1 (local recursion)."""
    m = 0
    while m < len(word) and word[len(word) - 1 - m] == 0:
        m += 1
    if m == 0:
        return (((0, word), Fraction(1)),)
    if m == len(word):
        return (((m, ()), Fraction(1)),)
    # G(0) G(u 0^(m-1)) = Σ over the shuffles; the term u 0^m appears m times,
    # and G(0) · G(0)^k/k! = (k+1) G(0)^(k+1)/(k+1)!
    out: Dict[Tuple[int, Word], Fraction] = {}
    for (k, v), c in _trailing(word[:-1]):
        key = (k + 1, v)
        out[key] = out.get(key, 0) + c * (k + 1) / m
    for w, mult in shuffle((0,), word[:-1]).items():
        if w == word:
            continue
        for key, c in _trailing(w):
            out[key] = out.get(key, 0) - c * mult / m
    return tuple((k, c) for k, c in out.items() if c)


def start_values(n: int, dps: int) -> Dict[Word, mpmath.mpc]:
    """All ``G(w; 1/3)``, ``|w| ≤ n``, independently of the package numerics."""
    prec = int(dps * 3.33) + 30
    out = {}
    with mpmath.workprec(prec):
        ell = mpmath.log(mpmath.mpf(1) / 3)
        for w in words_upto(n):
            total = mpmath.mpf(0)
            for (k, v), c in _trailing(w):
                if v:
                    idx = _indices(v)
                    g = reference_li(idx, 1, prec)
                    g = g if len(idx) % 2 == 0 else -g
                else:
                    g = mpmath.mpf(1)
                total += mpmath.mpf(c.numerator) / c.denominator * ell ** k / mpmath.factorial(k) * g
            out[w] = mpmath.mpc(total)
    return out


@lru_cache(maxsize=None)
def gauss_collocation(s: int, dps: int):
    """Nodes ``c``, weights ``b`` on [0, 1] and the matrix ``A`` of ``s``-stage Gauss collocation."""
    with mpmath.workdps(dps + 20):
        xs = []
        for i in range(1, s + 1):
            x = mpmath.cos(mpmath.pi * (i - mpmath.mpf(1) / 4) / (s + mpmath.mpf(1) / 2))
            for _ in range(100):
                p, q = mpmath.legendre(s, x), mpmath.legendre(s - 1, x)
                dp = s * (x * p - q) / (x * x - 1)
                dx = p / dp
                x -= dx
                if abs(dx) < mpmath.mpf(10) ** (-dps - 15):
                    break
            p, q = mpmath.legendre(s, x), mpmath.legendre(s - 1, x)
            dp = s * (x * p - q) / (x * x - 1)
            xs.append((x, 2 / ((1 - x * x) * dp * dp)))
        c = [(1 + x) / 2 for x, _ in xs]
        b = [w / 2 for _, w in xs]

        def lagrange(j, x):
            val = mpmath.mpf(1)
            for m in range(s):
                if m != j:
                    val *= (x - c[m]) / (c[j] - c[m])
            return val

        A = [[c[i] * mpmath.fsum(b[k] * lagrange(j, c[i] * c[k]) for k in range(s)) for j in range(s)]
             for i in range(s)]
    return c, b, A


def continue_along(values: Dict[Word, mpmath.mpc], path: Callable, dpath: Callable,
                   tau0, tau1, steps: int, s: int, dps: int) -> Dict[Word, mpmath.mpc]:
    """Continue all ``G(w; t)`` along ``t = path(τ)``, ``τ0 ≤ τ ≤ τ1`` (``dpath = dt/dτ``)."""
    words = sorted(values, key=len)
    c, b, A = gauss_collocation(s, dps)
    with mpmath.workdps(dps + 10):
        y = {w: mpmath.mpc(v) for w, v in values.items()}
        h = (mpmath.mpf(tau1) - tau0) / steps
        for n in range(steps):
            ta = tau0 + n * h
            phi = {0: [], 1: []}
            for j in range(s):
                tj = ta + c[j] * h
                t, dt = path(tj), dpath(tj)
                phi[0].append(dt / t)
                phi[1].append(dt / (t - 1))
            stage: Dict[Word, List] = {(): [mpmath.mpc(1)] * s}
            new = {(): mpmath.mpc(1)}
            for w in words[1:]:
                f = [phi[w[0]][j] * stage[w[1:]][j] for j in range(s)]
                stage[w] = [y[w] + h * mpmath.fsum(A[i][j] * f[j] for j in range(s)) for i in range(s)]
                new[w] = y[w] + h * mpmath.fsum(b[j] * f[j] for j in range(s))
            y = new
    return y


def to_mpc(x) -> mpmath.mpc:
    """Exact-ish conversion at the current precision (Fractions rounded once)."""
    if isinstance(x, Fraction):
        return mpmath.mpc(mpmath.mpf(x.numerator) / x.denominator)
    return mpmath.mpc(x)


def segment(a, b, dps: int):
    """Straight path from ``a`` to ``b``, τ in [0, 1]."""
    with mpmath.workdps(dps + 10):
        a, b = to_mpc(a), to_mpc(b)
    return (lambda tau: a + (b - a) * tau), (lambda tau: b - a)


def circle(center, start, dps: int, turns: int = 1):
    """``turns`` counter-clockwise circles around ``center`` through ``start``.

    Returns ``(path, dpath, tau_end)``, τ from 0 to ``tau_end = 2π turns``
    (negative ``turns`` run clockwise).
    """
    with mpmath.workdps(dps + 10):
        center, start = to_mpc(center), to_mpc(start)
        r = start - center
        tau_end = 2 * mpmath.pi * turns
    return (lambda tau: center + r * mpmath.expj(tau)), (lambda tau: 1j * r * mpmath.expj(tau)), tau_end


_MZV_CACHE: Dict[Tuple, mpmath.mpf] = {}


def mzv_value(x, dps: int) -> mpmath.mpf:
    """Numerical value of an :class:`~lowenergy.zeta.element.MZV` from ``tests/reference.py``
    (each generator ``ζ(g)`` evaluated there, not by the package)."""
    from tests.reference import reference_mzv

    with mpmath.workdps(dps + 10):
        total = mpmath.mpf(0)
        for mono, q in x.terms():
            term = mpmath.mpf(q.numerator) / q.denominator
            for g in mono:
                key = (g, dps)
                if key not in _MZV_CACHE:
                    _MZV_CACHE[key] = reference_mzv(g, dps + 10)
                term *= _MZV_CACHE[key]
            total += term
    return total


def sv_combination(terms, g: Dict[Word, mpmath.mpc], dps: int) -> mpmath.mpc:
    """``Σ c G(u; z) conj(G(v; z))`` for ``terms = {(u, v): MZV}``."""
    with mpmath.workdps(dps + 10):
        return mpmath.fsum(mzv_value(c, dps) * g[u] * mpmath.conj(g[v]) for (u, v), c in terms.items())
