"""Brown's single-valued polylogarithms ``L_w(z)`` in one variable, exactly.

References: F. Brown, "Single-valued multiple polylogarithms in one
variable", C. R. Acad. Sci. Paris, Ser. I 338 (2004) 527-532; O. Schnetz,
"Graphical functions and single-valued multiple polylogarithms", Commun.
Number Theory Phys. 8 (2014) 589-675.  The derivation below is ours, in the
package's conventions; the tests check every consequence numerically.

Conventions
-----------
Words ``w = a1 ... an`` over {0, 1}; ``G(a1, ..., an; z) = ∫_0^z dt/(t - a1)
G(a2, ..., an; t)``, ``G(0^n; z) = log(z)^n / n!`` (tangential base point 1
at 0), as in :mod:`lowenergy.words`.  Non-commuting letters ``x0, x1``,
``x_w = x_{a1} ... x_{an}``.

* Generating series ``L(z) = Σ_w G(w; z) x_w``.  Then
  ``∂_z L = (x0/z + x1/(z - 1)) L`` and ``L(z) ~ exp(x0 log z)`` at 0.
  (A generating series normalized with ``x1/(1 - z)`` instead, as in Brown
  (2004), gives functions that differ from ours by the sign
  ``(-1)^(number of letters 1)``.)
* Drinfeld associator ``Z = Σ_w G_reg(w; 1) x_w`` with the shuffle
  regularization of :func:`lowenergy.words.regularize_word`
  (``G(0; 1) = G(1; 1) = 0``): ``L(z) = L^(1)(z) Z`` with ``L^(1)`` the
  solution normalized as ``exp(x1 log(1 - z))`` at 1.
* Monodromies (continuation of ``z`` once counter-clockwise, ``L -> L M``):
  around 0, ``M0 = exp(2πi x0)``; around 1, ``M1 = Z^-1 exp(2πi x1) Z``.
* ``~`` is the anti-automorphism of ``Q<<x0, x1>>`` reversing every word.
  ``σ`` is the substitution homomorphism ``x0 -> y0 = x0``, ``x1 -> y1``
  for a series ``y1 = x1 + ...`` to be found; ``Y_v = σ(x_v) = y_{v1} ... y_{vk}``,
  ``Z_y = σ(Z)``.

The single-valued series is

    L_sv(z) = L(z) · ~σ(L(z̄)) = Σ_{u, v} G(u; z) G(v; z̄) x_u ~Y_v  =: Σ_w L_w(z) x_w .

When ``z`` runs once counter-clockwise around 1, ``z̄`` runs once clockwise
around 1, so ``L(z) -> L(z) Z^-1 exp(2πi x1) Z`` and, σ being a homomorphism
and ``~`` an anti-homomorphism,
``~σ(L(z̄)) -> ~Z_y exp(-2πi ~y1) ~Z_y^-1 · ~σ(L(z̄))``.  Hence ``L_sv`` is
invariant iff ``Z^-1 exp(2πi x1) Z = ~Z_y exp(2πi ~y1) ~Z_y^-1``, i.e. (taking
logarithms, unique for series ``x1 + (degree ≥ 2)``)
``Z^-1 x1 Z = ~Z_y ~y1 ~Z_y^-1``.  Applying ``~`` gives the fixed-point
equation we solve,

    y1 = Z_y · (~Z x1 ~Z^-1) · Z_y^-1,        Z_y = Z(x0, y1),

degree by degree from ``y1 = x1`` (the first correction has degree 4 and is
a multiple of ``ζ(3)``; the degree-d part of the right side needs ``y1`` only
below degree d - 1, so the iteration settles).  Around 0, ``y0 = x0`` makes
``exp(2πi x0)`` and ``exp(-2πi x0)`` cancel.  By Brown's uniqueness argument
(2004) these conditions together with ``∂_z L_sv = (x0/z + x1/(z-1)) L_sv``
and ``L_sv ~ exp(x0 log|z|^2)`` at 0 fix ``L_sv``.

Consequences (all tested):

* ``∂_z L_{a w}(z) = L_w(z) / (z - a)`` (only ``L(z)`` depends on ``z``);
* ``L_{0^n}(z) = log^n|z|^2 / n!``, ``L_1(z) = log|1 - z|^2``;
* ``L_01 - L_10 = -4i D(z)`` with the Bloch-Wigner dilogarithm
  ``D(z) = Im Li2(z) + arg(1 - z) log|z|``;
* the regularized value at 1 is ``Z · ~Z_y``; its coefficients are Brown's
  single-valued MZVs ``sv G(w; 1)`` (see :mod:`.svmap`).

Computation
-----------
The fixed point is not iterated: it is solved degree by degree, exactly.

* ``Z`` has no linear term (``G(0; 1) = G(1; 1) = 0``), so the degree-D part
  of ``Z_y = Σ_v z_v Y_v`` has ``|v| ≥ 2`` and involves ``y1`` only below
  degree D.  ``T = ~Z x1 ~Z^-1 = x1 + ...`` has no constant term, so the
  degree-d part of ``Z_y T Z_y^-1`` involves ``Z_y`` only below degree d,
  hence ``y1`` only below degree d - 1.  For d = 2, 3, ...: the degree-(d-1)
  parts of all ``Y_v`` and of ``Z_y``, then ``y1_d``.  Every part is computed
  once and is final.
* ``Z_y^-1 = S(Z_y)`` with the antipode ``S(x_w) = (-1)^|w| x_rev(w)``:
  ``y1`` is a Lie series (by induction on the degree: if its parts below d
  form a Lie series ℓ, then ``Z(x0, ℓ)`` is group-like, because substituting
  primitive elements is a morphism of Hopf algebras, and the conjugate
  ``Z(x0, ℓ) T Z(x0, ℓ)^-1`` of the Lie series T is Lie; its degree-d part is
  ``y1_d``), so ``Z_y`` is group-like.  Likewise ``~Z^-1 = Σ (-1)^|w| z_w x_w``.
* The products ``Y_v = y_{v1} Y_{v2...}`` are kept graded, ``Y_v[D] =
  Σ_e (y_{v1})_e Y_{v2...}[D - e]``, so a product only pairs degrees that
  fit under the truncation.
* The associator's divergent words come from the shuffle recursion of
  :func:`_associator_graded`, not from regularizing every word into
  convergent ones.
* Coefficients are ``{monomial id: flint.fmpq}`` during the construction and
  become :class:`MZV` at the end.
* ``L_w(1)`` needs only ``Z`` and ``Z_y`` (:func:`sv_value_at_one`), not the
  table of all ``A_s``.

The tests compare all of this with the first, straightforward construction
(iterated on whole series, ``Z_y^-1`` by substitution; kept in
``tests/svpolylog/fixed_point_reference.py``) at weights ≤ 8; measured times
are printed by ``bench/bench_sv_table.py``.

Data layout
-----------
Write ``~σ(L(z̄)) = Σ_s A_s(z̄) x_s`` with ``A_s(z̄) = Σ_v a_{s,v} G(v; z̄)``,
``a_{s,v}`` the coefficient of ``x_s`` in ``~Y_v`` (an MZV of weight
``|s| - |v|``).  Then

    L_w(z) = Σ_{j=0}^{|w|} G(w_1 ... w_j; z) · A_{w_(j+1) ... w_n}(z̄).

A :class:`SVTable` holds the ``A_s`` for all words ``s`` up to a weight.
Tables are built once per process and store (and optionally cached as JSON
next to the MZV tables, ``<cache>/mzv-v1/svpolylog-weight-N.json``).

Examples
--------
>>> L = sv_polylog((0, 1))
>>> sorted((u, v, str(c)) for (u, v), c in L.items())
[((), (1, 0), '1'), ((0,), (1,), '1'), ((0, 1), (), '1')]
>>> # On 0 < x < 1 the antisymmetric weight-2 combination vanishes (D(x) = 0):
>>> real_line_restriction((0, 1)) == real_line_restriction((1, 0))
True
"""

from __future__ import annotations

import json
import time
from fractions import Fraction
from typing import Dict, Iterable, Mapping, Tuple

import flint

from ..errors import InputError, InternalError
from ..fileio import write_atomic
from ..words import all_words, regularize_word, shuffle, word_to_indices
from ..zeta.element import MZV
from ..zeta.table import TableStore, default_store

__all__ = [
    "Word",
    "SVTable",
    "build_sv_table",
    "sv_table",
    "drinfeld_associator",
    "y1_series",
    "sv_polylog",
    "real_line_restriction",
    "sv_value_at_one",
    "SV_FORMAT_VERSION",
]

Word = Tuple[int, ...]
# A series in x0, x1: {x-word: coefficient}; coefficients are MZV.
Series = Dict[Word, MZV]

SV_FORMAT_VERSION = 1


# --------------------------------------------------------------------------
# exact coefficient arithmetic
#
# Coefficients are kept as plain dicts {monomial: Fraction} (the internal form
# of MZV) while series are multiplied: the MZV class re-canonicalizes on
# every operation, which dominates the run time otherwise.
# --------------------------------------------------------------------------

Coef = Dict[tuple, Fraction]


def _gen_key(g):
    return (sum(g), g)


def _cmul(a: Coef, b: Coef) -> Coef:
    out: Coef = {}
    for ka, va in a.items():
        for kb, vb in b.items():
            if not ka:
                k = kb
            elif not kb:
                k = ka
            else:
                k = tuple(sorted(ka + kb, key=_gen_key))
            out[k] = out.get(k, 0) + va * vb
    return out


def _cadd_into(target: Coef, src: Coef, factor=1) -> None:
    for k, v in src.items():
        target[k] = target.get(k, 0) + factor * v


def _clean(c: Coef) -> Coef:
    return {k: v for k, v in c.items() if v}


_ONE: Coef = {(): Fraction(1)}

RawSeries = Dict[Word, Coef]


# --------------------------------------------------------------------------
# the construction (see "Computation" in the module docstring)
#
# Inside the construction a coefficient is {monomial id: flint.fmpq}: the
# monomials (sorted tuples of generators, the keys of MZV) are interned in a
# _Ring, products of monomials are looked up in a table, and the rational
# arithmetic runs on flint.fmpq (measured: a product or sum costs ~0.08 µs
# against ~1 µs for fractions.Fraction).  Series are graded: a list whose
# entry d is {word of length d: coefficient}.
# --------------------------------------------------------------------------

class _Ring:
    """Interned monomials and exact products of coefficients ``{id: fmpq}``."""

    def __init__(self) -> None:
        self.monos: list = [()]
        self.ids: Dict[tuple, int] = {(): 0}
        self.products: Dict[Tuple[int, int], int] = {}
        self.fractions: dict = {}  # fmpq -> Fraction, for the conversion to MZV

    def intern(self, mono: tuple) -> int:
        i = self.ids.get(mono)
        if i is None:
            canon = tuple(sorted(mono, key=_gen_key))
            i = self.ids.get(canon)
            if i is None:
                i = len(self.monos)
                self.monos.append(canon)
                self.ids[canon] = i
            self.ids[mono] = i
        return i

    def _product(self, i: int, j: int) -> int:
        k = self.intern(self.monos[i] + self.monos[j])
        self.products[(i, j)] = k
        return k

    def addmul(self, acc: dict, a: dict, b: dict) -> None:
        """``acc += a * b``."""
        products = self.products
        for i, x in a.items():
            for j, y in b.items():
                k = products.get((i, j))
                if k is None:
                    k = self._product(i, j)
                acc[k] = acc.get(k, 0) + x * y

    def fraction(self, v) -> Fraction:
        f = self.fractions.get(v)
        if f is None:
            f = self.fractions[v] = Fraction(int(v.p), int(v.q))
        return f

    def to_mzv(self, c: dict) -> MZV:
        monos, fractions, fraction = self.monos, self.fractions, self.fraction
        return MZV.from_canonical({monos[k]: fractions.get(v) or fraction(v) for k, v in c.items() if v})


_FONE = flint.fmpq(1)


def _nonzero(level: dict) -> dict:
    """Drop zero coefficients and words whose coefficient vanishes."""
    out = {}
    for w, c in level.items():
        c = {k: v for k, v in c.items() if v}
        if c:
            out[w] = c
    return out


def _hmul_into(out: dict, a: dict, b: dict, ring: _Ring) -> None:
    """``out += a · b`` for homogeneous parts ``{word: coefficient}``."""
    addmul = ring.addmul
    for wa, ca in a.items():
        for wb, cb in b.items():
            w = wa + wb
            acc = out.get(w)
            if acc is None:
                acc = out[w] = {}
            addmul(acc, ca, cb)


def _run_length(w: Word, letter: int) -> int:
    """Number of leading ``letter``s of ``w``."""
    i = 0
    while i < len(w) and w[i] == letter:
        i += 1
    return i


def _negated_sum(level: dict, words, divisor: int) -> dict:
    """``-(Σ_{u in words} level[u]) / divisor`` (absent words count as 0)."""
    acc: dict = {}
    for u in words:
        c = level.get(u)
        if c:
            for m, v in c.items():
                acc[m] = acc.get(m, 0) + v
    factor = flint.fmpq(-1, divisor)
    return {m: v * factor for m, v in acc.items() if v}


def _associator_graded(n: int, store: TableStore, ring: _Ring) -> list:
    """``Z`` up to degree n, graded, coefficients in ``ring``.

    Convergent words (first letter 0, last letter 1) are read from the MZV
    tables, ``G(w; 1) = (-1)^depth ζ(indices)``.  The others follow from the
    shuffle-character property with ``G(0; 1) = G(1; 1) = 0`` (the
    regularization of :func:`lowenergy.words.regularize_word`), word length by
    word length, without expanding each word into convergent ones:

    * ``w = 1^a u`` (``a ≥ 1``, ``u`` convergent): ``0 = G(1) G(1^(a-1) u)``
      ``= a G(1^a u) + Σ_{i=1}^{|u|} G(1^(a-1) u_1..u_i 1 u_(i+1)..)``, and
      the words in the sum have ``a - 1`` leading ones;
    * ``w = u 0^m`` (``m ≥ 1``, ``u`` ending in 1): ``0 = G(0) G(u 0^(m-1))``
      ``= m G(u 0^m) + Σ_{i=0}^{|u|-1} G(u_1..u_i 0 u_(i+1).. 0^(m-1))``, and
      the words in the sum have ``m - 1`` trailing zeros;
    * ``G(1^a) = G(0^m) = 0``.
    """
    z = [{(): {0: _FONE}}]
    for k in range(1, n + 1):
        level: Dict[Word, dict] = {}
        words = all_words(k)
        for w in sorted((w for w in words if w[-1] == 1), key=lambda w: _run_length(w, 1)):
            a = _run_length(w, 1)
            if a == 0:
                idx = word_to_indices(w)
                sign = -1 if len(idx) % 2 else 1
                c = {}
                for m, num, den in store.reduction_raw(idx):
                    i = ring.intern(m)
                    c[i] = c.get(i, 0) + flint.fmpq(sign * num, den)
            elif a == k:
                continue
            else:
                head, u = w[:a - 1], w[a:]
                c = _negated_sum(level, (head + u[:i] + (1,) + u[i:] for i in range(1, len(u) + 1)), a)
            c = {m: v for m, v in c.items() if v}
            if c:
                level[w] = c
        for w in sorted((w for w in words if w[-1] == 0), key=lambda w: _run_length(w[::-1], 0)):
            m = _run_length(w[::-1], 0)
            if m == k:
                continue
            u, tail = w[:k - m], (0,) * (m - 1)
            c = _negated_sum(level, (u[:i] + (0,) + u[i:] + tail for i in range(len(u))), m)
            if c:
                level[w] = c
        z.append(level)
    return z


def _antipode_level(level: dict, degree: int) -> dict:
    """Degree-``degree`` part of ``S(X)``, ``S(x_w) = (-1)^|w| x_rev(w)``."""
    if degree % 2:
        return {w[::-1]: {k: -v for k, v in c.items()} for w, c in level.items()}
    return {w[::-1]: c for w, c in level.items()}


class _Construction:
    """``Z``, ``y1``, ``Z_y`` and the products ``Y_v`` up to degree ``n`` (internal form)."""

    def __init__(self, n: int, store: TableStore) -> None:
        self.n = n
        self.ring = ring = _Ring()
        self.z = z = _associator_graded(n, store, ring)
        if n >= 1 and z[1]:
            raise InternalError("the regularized associator has a linear term")  # pragma: no cover
        # T = ~Z x1 ~Z^-1, with ~Z^-1 = Σ (-1)^|w| z_w x_w (antipode of the group-like ~Z)
        zt = [{w[::-1]: c for w, c in lvl.items()} for lvl in z]
        zt_inv = [_antipode_level(zt[k], k) for k in range(n + 1)]
        t = [dict() for _ in range(n + 1)]
        for i in range(n):
            left = {w + (1,): c for w, c in zt[i].items()}
            for j in range(n - i):
                _hmul_into(t[i + 1 + j], left, zt_inv[j], ring)
        t = [_nonzero(lvl) for lvl in t]
        y1 = [dict() for _ in range(n + 1)]
        if n >= 1:
            y1[1] = {(1,): {0: _FONE}}
        # products[v][D]: degree-D part of Y_v (only non-empty parts stored)
        products: Dict[Word, Dict[int, dict]] = {(): {0: {(): {0: _FONE}}}}
        if n >= 1:
            products[(0,)] = {1: {(0,): {0: _FONE}}}
            products[(1,)] = {d: y1[d] for d in range(1, n + 1)}  # filled as y1 grows (same dicts)
        zy = [dict() for _ in range(n + 1)]
        zy[0] = {(): {0: _FONE}}
        s_zy = [dict() for _ in range(n + 1)]
        s_zy[0] = zy[0]
        m = [dict() for _ in range(n + 1)]  # M = Z_y T, graded (T has no constant term)
        if n >= 1:
            m[1] = t[1]
        for d in range(2, n + 2):
            big = d - 1
            self._products_level(products, y1, big)
            zy[big] = self._zy_level(products, big)
            s_zy[big] = _antipode_level(zy[big], big)
            if d > n:
                break
            # M_d = Σ_{i<d} Z_y[i] T[d-i];  y1_d = Σ_{k=1}^{d} M_k S(Z_y)[d-k]
            for i in range(d):
                _hmul_into(m[d], zy[i], t[d - i], ring)
            m[d] = _nonzero(m[d])
            level: dict = {}
            for k in range(1, d + 1):
                _hmul_into(level, m[k], s_zy[d - k], ring)
            y1[d].update(_nonzero(level))
        self.y1 = y1
        self.zy = zy
        self.products = products

    def _products_level(self, products, y1, big: int) -> None:
        """Add the degree-``big`` parts of ``Y_v`` for ``2 ≤ |v| ≤ big``."""
        ring = self.ring
        for k in range(2, min(big, self.n) + 1):
            for v in all_words(k):
                rest = products.get(v[1:])
                if not rest:
                    continue
                if v[0] == 0:
                    src = rest.get(big - 1)
                    if src:
                        products.setdefault(v, {})[big] = {(0,) + w: c for w, c in src.items()}
                    continue
                level: dict = {}
                for e in range(1, big - k + 2):
                    src = rest.get(big - e)
                    if y1[e] and src:
                        _hmul_into(level, y1[e], src, ring)
                level = _nonzero(level)
                if level:
                    products.setdefault(v, {})[big] = level

    def _zy_level(self, products, big: int) -> dict:
        """Degree-``big`` part of ``Z_y = Σ_v z_v Y_v`` (``z_v = 0`` for ``|v| = 1``)."""
        addmul = self.ring.addmul
        out: dict = {}
        for k in range(2, big + 1):
            for v, zv in self.z[k].items():
                src = products.get(v, {}).get(big)
                if not src:
                    continue
                for w, c in src.items():
                    acc = out.get(w)
                    if acc is None:
                        acc = out[w] = {}
                    addmul(acc, zv, c)
        return _nonzero(out)


class _ValuesAtOne:
    """``Z`` and ``Z_y`` up to a degree, enough for every regularized ``L_w(1)``."""

    def __init__(self, built: _Construction) -> None:
        self.max_weight = built.n
        self.ring, self.z, self.zy = built.ring, built.z, built.zy

    def value(self, word: Word) -> MZV:
        """The coefficient of ``x_word`` in ``Z · ~Z_y``: ``Σ_j z_{w_1..w_j} (Z_y)_{w_n..w_(j+1)}``."""
        acc: dict = {}
        for j in range(len(word) + 1):
            a = self.z[j].get(word[:j])
            b = self.zy[len(word) - j].get(word[j:][::-1])
            if a and b:
                self.ring.addmul(acc, a, b)
        return self.ring.to_mzv(acc)


# --------------------------------------------------------------------------
# the table
# --------------------------------------------------------------------------

class SVTable:
    """The antiholomorphic parts ``A_s`` of ``L_sv`` up to a weight.

    ``parts[s]`` is ``{v: MZV}`` with ``A_s(z̄) = Σ_v parts[s][v] G(v; z̄)``.
    """

    def __init__(self, max_weight: int, parts: Mapping[Word, Mapping[Word, MZV]],
                 y1: Mapping[Word, MZV], build_seconds: float = 0.0) -> None:
        self.max_weight = max_weight
        self.parts: Dict[Word, Dict[Word, MZV]] = {s: dict(p) for s, p in parts.items()}
        self.y1: Dict[Word, MZV] = dict(y1)
        self.build_seconds = build_seconds

    def terms(self, word: Word) -> Dict[Tuple[Word, Word], MZV]:
        """``L_w = Σ c G(u; z) G(v; z̄)`` as ``{(u, v): c}``."""
        word = _check_word(word, self.max_weight)
        out: Dict[Tuple[Word, Word], MZV] = {}
        for j in range(len(word) + 1):
            u = word[:j]
            for v, c in self.parts.get(word[j:], {}).items():
                out[(u, v)] = c
        return out

    def real_line(self, word: Word) -> Dict[Word, MZV]:
        """``L_w(x)`` for real ``0 < x < 1`` as ``{G-word: MZV}`` (shuffled out)."""
        acc: Dict[Word, Dict[tuple, Fraction]] = {}
        for (u, v), c in self.terms(word).items():
            raw = c.as_dict()
            for w, m in shuffle(u, v).items():
                _cadd_into(acc.setdefault(w, {}), raw, m)
        return {w: MZV(c) for w, c in acc.items() if _clean(c)}


def _check_word(word: Iterable[int], max_weight: int | None = None) -> Word:
    try:
        word = tuple(word)
    except TypeError:
        raise InputError(f"a word is a sequence of letters 0 and 1, got {word!r}") from None
    if any(a not in (0, 1) or isinstance(a, bool) for a in word):
        raise InputError(f"letters of words are 0 and 1, got {word!r}")
    if max_weight is not None and len(word) > max_weight:
        raise InputError(f"word {word} has weight {len(word)} above the table's {max_weight}")
    return word


def build_sv_table(max_weight: int, store: TableStore | None = None) -> SVTable:
    """Build the table of ``L_w`` for all words up to ``max_weight`` (no caching).

    Needs MZV tables up to ``max_weight``.
    """
    if isinstance(max_weight, bool) or not isinstance(max_weight, int) or max_weight < 0:
        raise InputError(f"max_weight must be a non-negative integer, got {max_weight!r}")
    store = store or default_store()
    t0 = time.perf_counter()
    n = max_weight
    built = _Construction(n, store)
    _remember_values_at_one(built, store)
    to_mzv = built.ring.to_mzv
    # ~Y_v: reverse every x-word of Y_v; A_s collects the coefficient of x_s.
    parts: Dict[Word, Dict[Word, MZV]] = {}
    for v, graded in built.products.items():
        for level in graded.values():
            for w, c in level.items():
                parts.setdefault(w[::-1], {})[v] = to_mzv(c)
    y1 = {w: to_mzv(c) for level in built.y1 for w, c in level.items()}
    return SVTable(n, parts, y1, time.perf_counter() - t0)


# --------------------------------------------------------------------------
# caching: process memory, and JSON next to the MZV tables
# --------------------------------------------------------------------------

_TABLES: Dict[str, SVTable] = {}


def _json_path(store: TableStore, max_weight: int):
    return store.directory / f"svpolylog-weight-{max_weight}.json"


def _mzv_to_json(x: MZV) -> list:
    return [[[",".join(map(str, g)) for g in mono], str(c)] for mono, c in x.terms()]


def _mzv_from_json(data: list) -> MZV:
    return MZV({tuple(tuple(int(n) for n in g.split(",")) for g in mono): Fraction(c) for mono, c in data})


def _word_str(w: Word) -> str:
    return "".join(map(str, w))


def _word_parse(s: str) -> Word:
    return tuple(int(a) for a in s)


def _save_json(table: SVTable, store: TableStore) -> None:
    if not store.directory.is_dir():
        return
    data = {
        "format": SV_FORMAT_VERSION,
        "max_weight": table.max_weight,
        "build_seconds": table.build_seconds,
        # the exact coefficients are written in the generators of these tables
        "generators": [",".join(map(str, g)) for g in store.all_generators(table.max_weight)],
        "y1": {_word_str(w): _mzv_to_json(c) for w, c in table.y1.items()},
        "parts": {
            _word_str(s): {_word_str(v): _mzv_to_json(c) for v, c in p.items()} for s, p in table.parts.items()
        },
    }
    try:
        write_atomic(_json_path(store, table.max_weight), json.dumps(data, separators=(",", ":")))
    except OSError:
        pass  # the cache is optional


def _load_json(store: TableStore, max_weight: int) -> SVTable | None:
    path = _json_path(store, max_weight)
    if not path.exists():
        return None
    try:
        data = json.loads(path.read_text())
        if data.get("format") != SV_FORMAT_VERSION or data.get("max_weight") != max_weight:
            return None
        gens = [",".join(map(str, g)) for g in store.all_generators(max_weight)]
        if data.get("generators") != gens:
            return None
        parts = {
            _word_parse(s): {_word_parse(v): _mzv_from_json(c) for v, c in p.items()}
            for s, p in data["parts"].items()
        }
        y1 = {_word_parse(w): _mzv_from_json(c) for w, c in data["y1"].items()}
        return SVTable(max_weight, parts, y1, data.get("build_seconds", 0.0))
    except (OSError, ValueError, KeyError, TypeError):
        return None


def sv_table(max_weight: int, store: TableStore | None = None, *, use_disk: bool = True) -> SVTable:
    """The table of ``L_w`` up to ``max_weight``, built once per process and store.

    A table of a higher weight serves lower weights too.  With ``use_disk``
    the table is also read from / written to
    ``<store directory>/svpolylog-weight-N.json``.
    """
    store = store or default_store()
    if isinstance(max_weight, bool) or not isinstance(max_weight, int) or max_weight < 0:
        raise InputError(f"max_weight must be a non-negative integer, got {max_weight!r}")
    key = str(store.directory)
    hit = _TABLES.get(key)
    if hit is not None and hit.max_weight >= max_weight:
        return hit
    table = _load_json(store, max_weight) if use_disk else None
    if table is None:
        table = build_sv_table(max_weight, store)
        if use_disk:
            _save_json(table, store)
    _TABLES[key] = table
    return table


def _default_weight(word: Word) -> int:
    # build at least weight 6 at once: the cost is small and saves rebuilds
    return max(len(word), 6)


# --------------------------------------------------------------------------
# public helpers
# --------------------------------------------------------------------------

def drinfeld_associator(max_weight: int, store: TableStore | None = None) -> Dict[Word, MZV]:
    """``Z = Σ_w G_reg(w; 1) x_w`` up to ``max_weight`` (zero coefficients omitted)."""
    if isinstance(max_weight, bool) or not isinstance(max_weight, int) or max_weight < 0:
        raise InputError(f"max_weight must be a non-negative integer, got {max_weight!r}")
    store = store or default_store()
    ring = _Ring()
    return {w: ring.to_mzv(c) for level in _associator_graded(max_weight, store, ring) for w, c in level.items()}


def y1_series(max_weight: int, store: TableStore | None = None) -> Dict[Word, MZV]:
    """The solution ``y1 = x1 + ...`` of the fixed-point equation, up to ``max_weight``."""
    table = sv_table(max_weight, store)
    return {w: c for w, c in table.y1.items() if len(w) <= max_weight}


def sv_polylog(word: Iterable[int], store: TableStore | None = None) -> Dict[Tuple[Word, Word], MZV]:
    """``L_w(z) = Σ_{(u, v)} c_{u,v} G(u; z) G(v; z̄)`` as ``{(u, v): c}``.

    >>> sv_polylog((1,)) == {((1,), ()): 1, ((), (1,)): 1}     # log|1-z|^2
    True
    """
    word = _check_word(word)
    return sv_table(_default_weight(word), store).terms(word)


def real_line_restriction(word: Iterable[int], store: TableStore | None = None) -> Dict[Word, MZV]:
    """``L_w(x)`` on ``0 < x < 1`` (``z = z̄ = x``) as ``{G-word: MZV}``.

    The products ``G(u; x) G(v; x)`` are shuffled into single words, so
    ``L_w(x) = Σ c_word G(word; x)``.

    >>> r = real_line_restriction((0,))                  # log x^2 = 2 G(0; x)
    >>> r == {(0,): 2}
    True
    """
    word = _check_word(word)
    return sv_table(_default_weight(word), store).real_line(word)


_AT_ONE: Dict[str, _ValuesAtOne] = {}


def _remember_values_at_one(built: _Construction, store: TableStore) -> None:
    key = str(store.directory)
    hit = _AT_ONE.get(key)
    if hit is None or hit.max_weight < built.n:
        _AT_ONE[key] = _ValuesAtOne(built)


def sv_value_at_one(word: Iterable[int], store: TableStore | None = None) -> MZV:
    """Regularized ``L_w(1)``: the coefficient of ``x_w`` in ``Z · ~Z_y``.

    ``log|1 - z|^2`` is set to 0; by Brown (2014) this equals ``sv(G_reg(w; 1))``
    (checked in the tests against :func:`lowenergy.svpolylog.svmap.sv`).

    With ``L_w(z) = Σ_j G(w_1..w_j; z) A_{w_(j+1)..w_n}(z̄)`` and
    ``A_s(1) = Σ_v a_{s,v} G_reg(v; 1)`` = the coefficient of ``x_s`` in
    ``~σ(Z) = ~Z_y``, the value is ``Σ_j z_{w_1..w_j} (Z_y)_{w_n..w_(j+1)}``:
    only ``Z`` and ``Z_y`` are needed, not the table of all ``A_s``.  They are
    built once per process and store, up to ``max(|w|, 6)``.
    """
    word = _check_word(word)
    store = store or default_store()
    hit = _AT_ONE.get(str(store.directory))
    if hit is None or hit.max_weight < len(word):
        _remember_values_at_one(_Construction(_default_weight(word), store), store)
        hit = _AT_ONE[str(store.directory)]
    return hit.value(word)
