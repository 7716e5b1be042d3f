"""The single-valued map on motivic MZVs, through the f-alphabet.

F. Brown, "Single-valued motivic periods and multiple zeta values", Forum
Math. Sigma 2 (2014), defines a ring homomorphism ``sv`` on motivic MZVs by
``sv = μ ∘ (σ̃ ⊗ id) ∘ Δ``: cut with the coaction, apply to the left-hand
(de Rham) factor the antipode twisted by the real Frobenius, multiply.  In the
f-alphabet ``Q[f2] ⊗ Q<f3, f5, ...>`` (odd letters multiplied by the shuffle
product; :mod:`lowenergy.zeta.falphabet`) the coaction is deconcatenation and
the twisted antipode reverses a word without a sign (the antipode's
``(-1)^r`` and Frobenius' ``-1`` per odd letter cancel), with ``sv(f2) = 0``.
Which end of a word the reversed piece is cut from depends on how the f-words
are read.

**Our reading.** :mod:`lowenergy.zeta.falphabet` writes the letter ``f_r``
split off by the infinitesimal coaction ``D_r`` *left-most*
(``φ(ζ(5,3)) = -5 f5 f3 - …``), i.e. a word ``f_{a1} … f_{ar}`` is read from
the outermost coaction step inwards; Brown's formula is stated for the
opposite reading.  Translated into ours it reverses the *tail*:

    sv(f2) = 0,
    sv(f_{a1} ... f_{ar}) = Σ_{j=0}^{r} (f_{a1} ... f_{aj}) ш (f_{ar} ... f_{a(j+1)}).

The mirrored formula ``Σ_j rev(a[:j]) ш a[j:]`` agrees with this one on
words of at most two letters and on ``f3 f3 f3`` (it differs already on
``f3 f3 f5``), so the two readings are indistinguishable below weight 11; the first MZV that
tells them apart is ``ζ(3,5,3)`` (and ``ζ(3,3,5)``, …).  The tests pin the
convention there: ``sv ζ(3,5,3) = 2ζ(3,5,3) − 2ζ(3)ζ(5,3) − 10ζ(3)²ζ(5)``
(Brown's value, in our index order) and ``sv ζ(w) = (−1)^depth L_w(1)``, the
value at ``z = 1`` of the single-valued polylogarithm built independently in
:mod:`.construct`.  (Before this was pinned, the mirrored formula was used and
gave wrong values from weight 11 on.)

:func:`sv` maps an :class:`~lowenergy.zeta.element.MZV` to the f-alphabet,
applies :func:`sv_falphabet` and maps back: per weight, the f-alphabet images
of the basis monomials (products of the generators, whose images come from
``store.falphabet_of_generator``) are linearly independent, and the image is
solved for by exact Gaussian elimination (:func:`falphabet_to_mzv`).  A
residual that does not vanish raises, so an inconsistent table cannot pass
silently.

Examples
--------
>>> from lowenergy.zeta.element import zeta
>>> sv(zeta(3)) == 2 * zeta(3)
True
>>> sv(zeta(2)) == 0
True
>>> print(sv(zeta(5, 3)))          # our index order; Brown writes ζ(3,5)
-10*zeta(3)*zeta(5)
"""

from __future__ import annotations

from fractions import Fraction
from typing import Dict, List, Mapping, Tuple

from ..errors import InputError, InternalError
from ..words import shuffle
from ..zeta.element import MZV
from ..zeta.falphabet import FKey, monomial_falphabet
from ..zeta.reduction import Monomial, monomials_of_weight
from ..zeta.table import TableStore, default_store

__all__ = ["sv_word", "sv_falphabet", "falphabet_to_mzv", "sv"]


def sv_word(letters: Tuple[int, ...]) -> Dict[Tuple[int, ...], int]:
    """``sv`` of one word in the odd letters: ``Σ_j a[:j] ш rev(a[j:])``.

    In our reading of f-words (``f_r`` is the left-most, deconcatenated
    letter); see the module docstring for the derivation.

    >>> sorted(sv_word((3, 5)).items())
    [((3, 5), 2), ((5, 3), 2)]
    >>> sorted(sv_word((3, 5, 7)).items())     # by hand: j = 0, 1, 2, 3 give
    [((3, 5, 7), 2), ((3, 7, 5), 2), ((7, 3, 5), 2), ((7, 5, 3), 2)]
    """
    letters = tuple(letters)
    out: Dict[Tuple[int, ...], int] = {}
    for j in range(len(letters) + 1):
        tail = tuple(reversed(letters[j:]))
        for word, m in shuffle(letters[:j], tail).items():
            out[word] = out.get(word, 0) + m
    return {k: v for k, v in out.items() if v}


def sv_falphabet(element: Mapping[FKey, Fraction]) -> Dict[FKey, Fraction]:
    """The single-valued map on an f-alphabet element ``{(f2_power, letters): c}``.

    Terms with a positive power of ``f2`` are killed (``sv(f2) = 0``).

    >>> sorted(sv_falphabet({(0, (3, 5)): 1}).items())
    [((0, (3, 5)), Fraction(2, 1)), ((0, (5, 3)), Fraction(2, 1))]
    >>> sv_falphabet({(1, (3,)): 1})
    {}
    """
    out: Dict[FKey, Fraction] = {}
    for (p, letters), c in element.items():
        if p:
            continue
        for word, m in sv_word(letters).items():
            key = (0, word)
            out[key] = out.get(key, Fraction(0)) + Fraction(c) * m
    return {k: v for k, v in out.items() if v}


# cache of the weight-w basis images, per store directory
_BASES: Dict[Tuple[str, int], Tuple[List[Monomial], List[Dict[FKey, Fraction]]]] = {}


def _basis_images(weight: int, store: TableStore):
    key = (str(store.directory), weight)
    hit = _BASES.get(key)
    if hit is None:
        gens = store.all_generators(weight)
        monos = monomials_of_weight(gens, weight)
        if len(monos) != store.dimension(weight):
            raise InternalError(
                f"weight {weight}: {len(monos)} basis monomials but the table says dimension "
                f"{store.dimension(weight)} (inconsistent MZV tables in {store.directory})"
            )
        hit = (monos, [monomial_falphabet(m, store) for m in monos])
        _BASES[key] = hit
    return hit


def _fkey_weight(key: FKey) -> int:
    return 2 * key[0] + sum(key[1])


def falphabet_to_mzv(element: Mapping[FKey, Fraction], store: TableStore | None = None) -> MZV:
    """The MZV (canonical form) whose f-alphabet image is ``element``.

    Solved weight by weight by exact elimination against the images of the
    basis monomials.  The map is an isomorphism onto the whole f-alphabet
    of each weight when the tables are complete (Brown 2012), so an
    :class:`~lowenergy.errors.InternalError` here means an inconsistent table.

    >>> from lowenergy.zeta.element import zeta
    >>> falphabet_to_mzv({(0, (3, 5)): 1, (0, (5, 3)): 1}) == zeta(3) * zeta(5)
    True
    """
    store = store or default_store()
    by_weight: Dict[int, Dict[FKey, Fraction]] = {}
    for k, c in element.items():
        if c:
            by_weight.setdefault(_fkey_weight(k), {})[k] = Fraction(c)
    result: Dict[Monomial, Fraction] = {}
    for w, part in by_weight.items():
        if w == 0:
            result[()] = result.get((), Fraction(0)) + part.get((0, ()), Fraction(0))
            continue
        monos, images = _basis_images(w, store)
        coeffs = _solve(images, part)
        if coeffs is None:
            raise InternalError(f"the f-alphabet element at weight {w} is not in the image of the MZVs")
        for m, c in zip(monos, coeffs):
            if c:
                result[m] = result.get(m, Fraction(0)) + c
    return MZV(result)


def _solve(columns: List[Dict[FKey, Fraction]], target: Dict[FKey, Fraction]):
    """Exact solution of ``Σ_i a_i columns[i] = target`` (None if inconsistent)."""
    keys = sorted({k for col in columns for k in col} | set(target))
    index = {k: i for i, k in enumerate(keys)}
    n = len(columns)
    # augmented rows: one per f-alphabet key
    rows = [[Fraction(0)] * (n + 1) for _ in keys]
    for j, col in enumerate(columns):
        for k, v in col.items():
            rows[index[k]][j] = Fraction(v)
    for k, v in target.items():
        rows[index[k]][n] = Fraction(v)
    r = 0
    for j in range(n):
        p = next((i for i in range(r, len(rows)) if rows[i][j]), None)
        if p is None:
            raise InternalError("the f-alphabet images of the basis monomials are linearly dependent")
        rows[r], rows[p] = rows[p], rows[r]
        piv = rows[r][j]
        rows[r] = [x / piv for x in rows[r]]
        for i in range(len(rows)):
            if i != r and rows[i][j]:
                f = rows[i][j]
                rows[i] = [a - f * b for a, b in zip(rows[i], rows[r])]
        r += 1
    if any(rows[i][n] for i in range(r, len(rows))):
        return None
    return [rows[i][n] for i in range(n)]


def sv(x: MZV, store: TableStore | None = None) -> MZV:
    """Brown's single-valued map ``sv: MZV -> MZV`` (a ring homomorphism).

    ``sv ζ(2) = 0``, ``sv ζ(2k+1) = 2 ζ(2k+1)``; in our index order (first
    index on the largest summation variable) ``sv ζ(5,3) = -10 ζ(3)ζ(5)`` and
    ``sv ζ(3,5) = 14 ζ(3)ζ(5)``.
    """
    if not isinstance(x, MZV):
        coerced = MZV._coerce(x)
        if coerced is None:
            raise InputError(f"sv() needs an MZV, got {type(x).__name__}")
        x = coerced
    store = store or default_store()
    return falphabet_to_mzv(sv_falphabet(x.f_alphabet(store)), store)
