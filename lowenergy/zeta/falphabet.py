"""The f-alphabet: Brown's decomposition of motivic MZVs.

Every (motivic) MZV maps to ``Q[f2] ⊗ Q<f3, f5, f7, ...>`` where the odd
letters multiply by the shuffle product (F. Brown, "On the decomposition of
motivic multiple zeta values", Adv. Stud. Pure Math. 63 (2012)).  We build
the map from the infinitesimal coaction (Goncharov, Duke Math. J. 128 (2005);
Brown 2012, eq. for D_r):

    D_r I(a0; a1..aN; a_{N+1}) = Σ_p I^L(a_p; a_{p+1}..a_{p+r}; a_{p+r+1})
                                   ⊗ I(a0; a1..a_p, a_{p+r+1}..aN; a_{N+1})

in Goncharov's order (``a1`` next to the lower end point; our words put the
first letter next to the upper end point, so ``G(w; 1) = I(0; reversed w; 1)``).
For r odd the left factor is a rational multiple of ``ζ(r)`` in the Lie
coalgebra; its coefficient is the coefficient of the generator ``ζ(r)`` in
our canonical form.  Then

    φ(ξ) = Σ_{r odd} f_r · φ(right factors)   (+ c f_N or c f2^{N/2}),

with ``f_r`` concatenated on the left (Brown's deconcatenation convention).
The undetermined top coefficient ``c`` is a normalization of the map: we put
``φ(ζ(2)) = f2``, ``φ(ζ(2k+1)) = f_{2k+1}`` and ``c = 0`` for every depth ≥ 2
generator of the conventional basis (see :mod:`lowenergy.zeta.reduction`).
Products map to shuffle products, so the image of any element is canonical.

An f-alphabet element is a ``dict[(f2_power, odd_letters), Fraction]``.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Dict, Mapping, Tuple

from ..words import Indices, indices_to_word, regularize_word, shuffle, word_to_indices
from .format import join_terms, term_text

__all__ = [
    "FKey",
    "f_multiply",
    "generator_falphabet",
    "monomial_falphabet",
    "coaction_part",
    "g_value_terms",
    "f_to_text",
]

FKey = Tuple[int, Tuple[int, ...]]


def f_multiply(a: Mapping[FKey, Fraction], b: Mapping[FKey, Fraction]) -> Dict[FKey, Fraction]:
    """Product in the f-alphabet: f2 powers add, odd letters shuffle."""
    out: Dict[FKey, Fraction] = {}
    for (pa, la), ca in a.items():
        for (pb, lb), cb in b.items():
            for word, m in shuffle(la, lb).items():
                key = (pa + pb, word)
                out[key] = out.get(key, 0) + ca * cb * m
    return {k: v for k, v in out.items() if v}


def g_value_terms(word: Tuple[int, ...], store) -> Dict[tuple, Fraction]:
    """Shuffle-regularized ``G(word; 1)`` in the canonical monomial basis."""
    out: Dict[tuple, Fraction] = {}
    for w, c in regularize_word(word).items():
        idx = word_to_indices(w)
        sign = -1 if len(idx) % 2 else 1
        for mono, d in store.reduction(idx).items():
            out[mono] = out.get(mono, 0) + sign * c * d
    return {k: v for k, v in out.items() if v}


def monomial_falphabet(mono, store) -> Dict[FKey, Fraction]:
    """Image of a product of generators."""
    result: Dict[FKey, Fraction] = {(0, ()): Fraction(1)}
    for g in mono:
        result = f_multiply(result, store.falphabet_of_generator(g))
    return result


def _element_falphabet(terms: Mapping[tuple, Fraction], store) -> Dict[FKey, Fraction]:
    out: Dict[FKey, Fraction] = {}
    for mono, c in terms.items():
        for k, v in monomial_falphabet(mono, store).items():
            out[k] = out.get(k, 0) + c * v
    return {k: v for k, v in out.items() if v}


def coaction_part(indices: Indices, store) -> Dict[FKey, Fraction]:
    """``Σ_{r odd, 3 ≤ r < N} f_r · φ(D_r ζ(indices))``, everything but the top term.

    Needs the tables of all weights below N only.
    """
    word = indices_to_word(indices)
    n = len(word)
    b = (0,) + tuple(reversed(word)) + (1,)
    out: Dict[FKey, Fraction] = {}
    sign_mzv = -1 if len(indices) % 2 else 1  # ζ = (-1)^k G
    for r in range(3, n, 2):
        zr = ((r,),)
        for p in range(0, n - r + 1):
            lo, hi = b[p], b[p + r + 1]
            if lo == hi:
                continue
            sub = b[p + 1 : p + r + 1]
            if lo == 0:  # I(0; sub; 1) = G(reversed sub; 1)
                left = g_value_terms(tuple(reversed(sub)), store)
                coef = left.get(zr, 0)
            else:  # I(1; sub; 0) = (-1)^r I(0; reversed sub; 1) = (-1)^r G(sub; 1)
                left = g_value_terms(tuple(sub), store)
                coef = -left.get(zr, 0)
            if not coef:
                continue
            rest = b[1 : p + 1] + b[p + r + 1 : n + 1]
            right = g_value_terms(tuple(reversed(rest)), store)
            for (pw, letters), v in _element_falphabet(right, store).items():
                key = (pw, (r,) + letters)
                out[key] = out.get(key, 0) + sign_mzv * coef * v
    return {k: v for k, v in out.items() if v}


def generator_falphabet(g: Indices, store) -> Dict[FKey, Fraction]:
    """Image of a generator of the conventional basis (normalization above)."""
    g = tuple(g)
    if g == (2,):
        return {(1, ()): Fraction(1)}
    if len(g) == 1:
        return {(0, g): Fraction(1)}
    return coaction_part(g, store)


def f_to_text(f: Mapping[FKey, Fraction]) -> str:
    """Plain text such as ``-5*f5*f3 + 3/2*f2^4`` (letters in word order)."""
    if not f:
        return "0"
    parts = []
    for (p, letters), c in sorted(f.items(), key=lambda kv: (kv[0][0], len(kv[0][1]), kv[0])):
        factors = []
        if p:
            factors.append("f2" if p == 1 else f"f2^{p}")
        factors.extend(f"f{a}" for a in letters)
        parts.append(term_text(Fraction(c), "*".join(factors)))
    return join_terms(parts)
