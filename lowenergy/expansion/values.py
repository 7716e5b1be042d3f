"""Regularized values ``G(w; 1)`` of *all* words of a weight, as integer vectors.

For each weight W the values of the 2^W words are stored as the rows of an
integer matrix over the canonical monomial basis of weight W, with one
common denominator.  An expansion coefficient is then an integer combination
of rows: one matrix-vector product (python-flint ``fmpz_mat``).

The rows are computed from the MZV tables by the shuffle regularization
recursion of :mod:`lowenergy.words`, but on short vectors (length d_W)
instead of on words, so each word costs a handful of vector additions.
Indexing: the word ``(a1, ..., aW)`` is row ``Σ a_i 2^(W-i)`` (binary).
"""

from __future__ import annotations

from fractions import Fraction
from functools import reduce
from math import gcd
from typing import Dict, List, Tuple

from ..words import word_to_indices
from ..zeta.element import MZV
from ..zeta.reduction import Monomial, monomials_of_weight
from ..zeta.table import TableStore, default_store

__all__ = ["WordValues", "word_values", "word_index"]


def word_index(word: Tuple[int, ...]) -> int:
    k = 0
    for a in word:
        k = (k << 1) | a
    return k


class WordValues:
    """Values of all words of one weight (see module docstring).

    Attributes
    ----------
    weight, basis, denominator, matrix (flint.fmpz_mat of shape 2^W × len(basis))
    """

    def __init__(self, weight: int, store: TableStore) -> None:
        import flint

        self.weight = weight
        gens = store.all_generators(weight) if weight >= 2 else []
        self.basis: List[Monomial] = monomials_of_weight(gens, weight) if weight else [()]
        col = {m: i for i, m in enumerate(self.basis)}
        dim = len(self.basis)
        zero = (Fraction(0),) * dim
        memo: Dict[Tuple[int, ...], Tuple[Fraction, ...]] = {}

        def convergent(word: Tuple[int, ...]) -> Tuple[Fraction, ...]:
            idx = word_to_indices(word)
            sign = -1 if len(idx) % 2 else 1
            vec = [Fraction(0)] * dim
            for mono, c in store.reduction(idx).items():
                vec[col[mono]] += sign * c
            return tuple(vec)

        def value(word: Tuple[int, ...]) -> Tuple[Fraction, ...]:
            got = memo.get(word)
            if got is not None:
                return got
            n = len(word)
            if n == 0:
                res = (Fraction(1),)
            elif word[0] == 0 and word[-1] == 1:
                res = convergent(word)
            elif word[-1] == 0:
                m = 0
                while m < n and word[n - 1 - m] == 0:
                    m += 1
                if m == n:
                    res = zero
                else:
                    u, tail = word[: n - m], (0,) * (m - 1)
                    acc = [Fraction(0)] * dim
                    for i in range(len(u)):
                        v = value(u[:i] + (0,) + u[i:] + tail)
                        for k in range(dim):
                            if v[k]:
                                acc[k] -= v[k]
                    res = tuple(a / m for a in acc)
            else:
                m = 0
                while m < n and word[m] == 1:
                    m += 1
                if m == n:
                    res = zero
                else:
                    u, head = word[m:], (1,) * (m - 1)
                    acc = [Fraction(0)] * dim
                    for i in range(1, len(u) + 1):
                        v = value(head + u[:i] + (1,) + u[i:])
                        for k in range(dim):
                            if v[k]:
                                acc[k] -= v[k]
                    res = tuple(a / m for a in acc)
            memo[word] = res
            return res

        rows = []
        for k in range(2 ** weight):
            word = tuple((k >> (weight - 1 - i)) & 1 for i in range(weight))
            rows.append(value(word))
        dens = [q.denominator for r in rows for q in r if q]
        self.denominator = reduce(lambda a, b: a * b // gcd(a, b), dens, 1)
        flat = [int(q * self.denominator) for r in rows for q in r]
        self.matrix = flint.fmpz_mat(len(rows), dim, flat)

    def combine(self, coeffs: Dict[int, int]) -> MZV:
        """``Σ coeffs[row] · value(row)`` as an exact MZV."""
        import flint

        if not coeffs:
            return MZV()
        n = self.matrix.nrows()
        vec = [0] * n
        for r, c in coeffs.items():
            vec[r] += c
        prod = flint.fmpz_mat(1, n, vec) * self.matrix
        terms = {}
        for k, mono in enumerate(self.basis):
            v = int(prod[0, k])
            if v:
                terms[mono] = Fraction(v, self.denominator)
        return MZV(terms)


_CACHE: Dict[Tuple[str, int], WordValues] = {}


def word_values(weight: int, store: TableStore | None = None) -> WordValues:
    """The (process-cached) values of all words of a weight."""
    store = store or default_store()
    key = (str(store.directory), weight)
    if key not in _CACHE:
        _CACHE[key] = WordValues(weight, store)
    return _CACHE[key]
