"""Fast numerical ``L_w`` at ``w``, ``1 - w`` and ``1/w`` for ``w`` in the region
``R0 = {|w| < 1, Re w < 1/2}`` (used by the 2D quadrature of sphere integrals).

Every point of the plane is ``w``, ``1 - w`` or ``1/w`` for some ``w`` in the
closure of ``R0`` (the regions where |z|, |1-z| or 1 is the smallest of
``|z|, |1-z|, 1``), so it suffices to evaluate the generating series at
``R0`` and transport it.

1. **Holomorphic values on R0** as power series in ``u = -log(1 - w)``
   (``w = 1 - e^(-u)``, ``dw/(w - 1) = -du``, ``dw/w = du/(e^u - 1)``):
   for words ``v`` ending in 1, ``G(1; w) = -u``,
   ``G(1v; w) = -∫_0^u G(v)``, ``G(0v; w) = ∫_0^u (G(v)/u) · B(u) du`` with
   ``B(u) = u/(e^u - 1) = Σ_k B_k u^k / k!`` (Bernoulli numbers; the
   classical series ``Li2(w) = Σ B_k u^(k+1)/(k+1)!`` is the case v = 1).
   The coefficients are real and independent of ``w``; the series converge
   for ``|u| < 2π`` and on R0 ``|u| ≤ π/3`` (at the corners ``e^(±iπ/3)``),
   so terms fall at least like ``6^-k``.  Words ending in ``0^m`` come from
   the shuffle product with ``G(0^m; w) = log^m(w)/m!`` (exact rational
   coefficients, :func:`trailing_split`).
2. ``L_w(w) = Σ c_{a,b} G(a; w) conj G(b; w)`` with the exact coefficients
   of :mod:`.construct`.
3. **Transport** (``L_sv = Σ_v L_v x_v``; ψ exchanges x0 and x1,
   φ: ``x0 -> -x0 - x1``, ``x1 -> x1``): ``L_sv(1 - z) = ψ(L_sv(z)) · Z_sv``
   and ``L_sv(1/z) = φ(L_sv(z)) · K``.  Proof: both sides solve the same
   equation ``∂_z X = Ω X`` (``Ω = x1/z + x0/(z-1)`` resp.
   ``(-x0-x1)/z + x1/(z-1)``), so ``(right factor)`` is antiholomorphic,
   single-valued and of logarithmic growth, hence constant; letting
   ``z -> 0`` (``L_sv(z) ~ exp(x0 log|z|²)``) it is the regularized value of
   ``L_sv`` at 1, ``Z_sv(w) = L_w(1)`` (:func:`.construct.sv_value_at_one`),
   resp. at ∞, ``K = φ(Z_sv)^(-1) Z_sv`` (:func:`.sphere.infinity_value`;
   the derivation is in :mod:`.sphere`).  In coefficients::

       L_w(1 - z) = Σ_{w = pq} L_{ψ(p)}(z) Z_sv(q)
       L_w(1/z)   = Σ_{w = pq} Σ_{v ≤ p} (-1)^(zeros of v) L_v(z) K(q)

   where ``v ≤ p`` runs over the words with ``v_i = 0`` wherever ``p_i = 0``
   (and either letter where ``p_i = 1``).

Arithmetic: python-flint balls at ``digits`` plus guard bits; the results
are returned as mpmath numbers.  Cost: one set of polynomial evaluations
per point, against a Taylor continuation per point in
:func:`.numeric.g_vector_numeric`; ``bench/bench_sphere_verify.py`` prints
both.

Examples
--------
>>> import mpmath
>>> ev = PlaneValues(2, 20)
>>> L0, L1, Linf = ev.images(mpmath.mpc(0.2, 0.3), [(0, 1), (1,)])
>>> z = mpmath.mpc(0.2, 0.3)
>>> bool(abs(L1[(1,)] - 2 * mpmath.log(abs(z))) < 1e-18)      # L_1(1 - z) = log|z|²
True
>>> D = lambda x: mpmath.im(mpmath.polylog(2, x)) + mpmath.arg(1 - x) * mpmath.log(abs(x))
>>> bool(abs(L0[(0, 1)].imag + 2 * D(z)) < 1e-18)     # L_01 - L_10 = -4i D, L_01 + L_10 real
True
"""

from __future__ import annotations

import math
from fractions import Fraction
from functools import lru_cache
from typing import Dict, Iterable, List, Sequence, Tuple

import mpmath
from flint import acb, acb_poly, arb, ctx, fmpq

from ..errors import InputError, NumericError
from ..words import all_words, ones_relaxed, shuffle
from ..zeta.table import TableStore
from .construct import Word, sv_table, sv_value_at_one

__all__ = ["PlaneValues", "trailing_split", "u_series"]


@lru_cache(maxsize=None)
def trailing_split(word: Word) -> Tuple[Tuple[int, Word, Fraction], ...]:
    """``G(word) = Σ c · G(0)^k / k! · G(v)`` with ``v`` empty or ending in 1:
    tuples ``(k, v, c)``.

    >>> trailing_split((1, 0))          # G(1,0) = G(0) G(1) - G(0,1)
    ((0, (0, 1), Fraction(-1, 1)), (1, (1,), Fraction(1, 1)))
    """
    m = 0
    while m < len(word) and word[len(word) - 1 - m] == 0:
        m += 1
    if m == 0:
        return ((0, word, Fraction(1)),)
    v = word[: len(word) - m]
    if not v:
        return ((m, (), Fraction(1)),)
    # G(v) G(0^m) = Σ_{u ∈ v ш 0^m} c_u G(u); u = word once, the others end in fewer zeros
    acc: Dict[Tuple[int, Word], Fraction] = {(m, v): Fraction(1)}
    for u, c in shuffle(v, (0,) * m).items():
        if u == word:
            continue
        for k, v2, d in trailing_split(u):
            acc[(k, v2)] = acc.get((k, v2), Fraction(0)) - c * d
    return tuple(sorted((k, v2, c) for (k, v2), c in acc.items() if c))


def u_series(words_ending_in_one: Sequence[Word], nterms: int) -> Dict[Word, List[fmpq]]:
    """Exact coefficients ``G(v; 1 - e^(-u)) = Σ_m a_m u^m`` (m < nterms).

    >>> [str(c) for c in u_series([(0, 1)], 5)[(0, 1)]]   # -Li2: -(u + ... ) with B_k
    ['0', '-1', '1/4', '-1/36', '0']
    """
    bern = [fmpq.bernoulli(k) / math.factorial(k) for k in range(nterms)]
    out: Dict[Word, List[fmpq]] = {}

    def get(v: Word) -> List[fmpq]:
        hit = out.get(v)
        if hit is not None:
            return hit
        if v == (1,):
            res = [fmpq(0), fmpq(-1)] + [fmpq(0)] * (nterms - 2)
        else:
            inner = get(v[1:])
            res = [fmpq(0)] * nterms
            if v[0] == 1:
                for m in range(nterms - 1):
                    res[m + 1] = -inner[m] / (m + 1)
            else:
                over = inner[1:] + [fmpq(0)]       # G(v)/u (G(v) vanishes at u = 0)
                for m in range(nterms - 1):
                    s = fmpq(0)
                    for i in range(m + 1):
                        if over[i] and bern[m - i]:
                            s += over[i] * bern[m - i]
                    res[m + 1] = s / (m + 1)
        out[v] = res
        return res

    for v in words_ending_in_one:
        get(tuple(v))
    return out


def _arb(x: mpmath.mpf) -> arb:
    """Exact conversion (mpmath keeps the sign apart from the mantissa)."""
    sign, man, exp, _ = x._mpf_
    if not man:
        if exp:
            raise NumericError(f"cannot use the non-finite number {x}")
        return arb(0)
    return arb((-man if sign else man, exp))


def _to_acb(z: mpmath.mpc) -> acb:
    return acb(_arb(mpmath.mpf(z.real)), _arb(mpmath.mpf(z.imag)))


def _to_mpc(x: acb) -> mpmath.mpc:
    a = x.real.mid().man_exp()
    b = x.imag.mid().man_exp()
    return mpmath.mpc(mpmath.mpf((int(a[0]), int(a[1]))), mpmath.mpf((int(b[0]), int(b[1]))))


class _Lazy:
    """``G`` and ``L`` values at one point, each computed when first needed."""

    def __init__(self, owner: "PlaneValues", u: acb, ell: acb) -> None:
        self.owner = owner
        self.u = u
        self.powers = [acb(1)]
        for _ in range(owner.n):
            self.powers.append(self.powers[-1] * ell)
        self.ends: Dict[Word, acb] = {(): acb(1)}
        self.g: Dict[Word, acb] = {}
        self.gbar: Dict[Word, acb] = {}
        self.values: Dict[Word, acb] = {}

    def _end(self, v: Word) -> acb:
        x = self.ends.get(v)
        if x is None:
            x = self.ends[v] = self.owner._polys[v](self.u)
        return x

    def _g(self, word: Word) -> acb:
        x = self.g.get(word)
        if x is None:
            x = acb(0)
            for k, v, c in self.owner._split[word]:
                x += c * self.powers[k] * self._end(v)
            self.g[word] = x
            self.gbar[word] = x.conjugate()
        return x

    def __getitem__(self, word: Word) -> acb:
        x = self.values.get(word)
        if x is None:
            x = acb(0)
            for a, b, c in self.owner._terms[word]:
                self._g(b)
                x += c * self._g(a) * self.gbar[b]
            self.values[word] = x
        return x


class PlaneValues:
    """``L_w`` for all words up to ``max_weight`` at ``w``, ``1 - w``, ``1/w``
    (``w ∈ R0``), to about ``digits`` digits relative to ``max(1, |L|)``."""

    def __init__(self, max_weight: int, digits: int, store: TableStore | None = None) -> None:
        if isinstance(max_weight, bool) or not isinstance(max_weight, int) or max_weight < 0:
            raise InputError(f"the weight must be a non-negative integer, got {max_weight!r}")
        self.n = n = max_weight
        self.digits = digits
        self.prec = int(digits * 3.33) + 30 + 4 * n
        self.words: List[Word] = [()] + [w for k in range(1, n + 1) for w in all_words(k)]
        ends_in_one = [w for w in self.words if w and w[-1] == 1]
        # (π/3)/(2π) = 1/6 per term on R0, plus growth of the coefficients
        self.nterms = int(self.prec / math.log2(6)) + 6 * n + 12
        saved = ctx.prec
        ctx.prec = self.prec
        try:
            coeffs = u_series(ends_in_one, self.nterms) if ends_in_one else {}
            self._polys = {v: acb_poly([arb(c.p) / arb(c.q) for c in cs]) for v, cs in coeffs.items()}
            self._split = {w: [(k, v, arb(c.numerator) / c.denominator / math.factorial(k))
                               for k, v, c in trailing_split(w)] for w in self.words}
            table = sv_table(max(n, 1), store) if n else None
            self._terms: Dict[Word, list] = {}
            for w in self.words:
                if not w:
                    self._terms[w] = [((), (), arb(1))]
                    continue
                self._terms[w] = [(a, b, self._real(c)) for (a, b), c in table.terms(w).items()]
            from .sphere import infinity_value

            self._zsv = {w: self._real(sv_value_at_one(w, store=store)) if w else arb(1) for w in self.words}
            self._kinf = {w: self._real(infinity_value(w, store=store)) if w else arb(1) for w in self.words}
        finally:
            ctx.prec = saved

    def _real(self, c) -> arb:
        if not c:
            return arb(0)
        with mpmath.workdps(self.digits + 25):
            return _arb(mpmath.mpf(c.numeric(self.digits + 25)))

    # -- evaluation --------------------------------------------------------------

    def _base(self, w: acb) -> "_Lazy":
        """``L_v(w)`` for the words v asked for (w in R0), computed on demand."""
        u = -(-w).log1p()
        if abs(u) > 2.5:
            raise NumericError(f"PlaneValues needs a point of |w| < 1, Re w < 1/2, got {_to_mpc(w)}")
        return _Lazy(self, u, w.log())

    def _one_minus(self, base: Dict[Word, acb], words: Iterable[Word]) -> Dict[Word, acb]:
        out = {}
        for word in words:
            total = acb(0)
            for j in range(len(word) + 1):
                z = self._zsv[word[j:]]
                if z == 0:
                    continue
                total += base[tuple(1 - a for a in word[:j])] * z
            out[word] = total
        return out

    def _inverse(self, base: Dict[Word, acb], words: Iterable[Word]) -> Dict[Word, acb]:
        cache: Dict[Word, acb] = {}

        def phi(p: Word) -> acb:
            hit = cache.get(p)
            if hit is not None:
                return hit
            total = acb(0)
            for v, sign in ones_relaxed(p):
                x = base[v]
                total += x if sign > 0 else -x
            cache[p] = total
            return total

        out = {}
        for word in words:
            total = acb(0)
            for j in range(len(word) + 1):
                k = self._kinf[word[j:]]
                if k == 0:
                    continue
                total += phi(word[:j]) * k
            out[word] = total
        return out

    def images(self, w, words: Iterable[Iterable[int]], which: Sequence[int] = (0, 1, 2)):
        """``L_v`` at ``w``, ``1 - w``, ``1/w`` (entries 0, 1, 2 of ``which``)
        for the given words: a tuple of ``{word: mpc}`` dicts, ``None`` for the
        images not asked for.  ``L_v(z̄) = conj L_v(z)`` (real coefficients)."""
        words = [tuple(v) for v in words]
        for v in words:
            if len(v) > self.n:
                raise InputError(f"word {v} is longer than the evaluator's weight {self.n}")
        saved = ctx.prec
        ctx.prec = self.prec
        try:
            base = self._base(_to_acb(mpmath.mpmathify(w)))
            res: List = [None, None, None]
            if 0 in which:
                res[0] = {v: base[v] for v in words}
            if 1 in which:
                res[1] = self._one_minus(base, words)
            if 2 in which:
                res[2] = self._inverse(base, words)
            return tuple(None if r is None else {v: _to_mpc(x) for v, x in r.items()} for r in res)
        finally:
            ctx.prec = saved
