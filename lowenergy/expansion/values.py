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

__all__ = ["WordValues", "ModularWordValues", "word_values", "word_index", "prepare_rows"]


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


def word_values(weight: int, store: TableStore | None = None, exact: bool | None = None):
    """The (process-cached) values of all words of a weight.

    Exact Fraction rows up to :data:`EXACT_MAX_WEIGHT`, modular rows above
    (``exact`` forces one or the other).
    """
    store = store or default_store()
    if exact is None:
        exact = weight <= EXACT_MAX_WEIGHT
    key = (str(store.directory), weight, exact)
    if key not in _CACHE:
        _CACHE[key] = WordValues(weight, store) if exact else ModularWordValues(weight, store)
    return _CACHE[key]


# ---------------------------------------------------------------------------
# high weights: the same rows modulo 26-bit primes
# ---------------------------------------------------------------------------

EXACT_MAX_WEIGHT = 8


class ModularWordValues:
    """Values of all words of one weight modulo several primes (numpy int64).

    Used above :data:`EXACT_MAX_WEIGHT`, where exact Fraction rows would be
    slow to build.  :meth:`combine` forms the integer combination modulo each
    prime and recovers the exact rational coordinates by Chinese remaindering
    and rational reconstruction, adding primes until the result is stable
    (it must be confirmed by one further prime; at most all eight primes of
    :data:`lowenergy.zeta.motivic.SMALL_PRIMES`, else an error).
    """

    def __init__(self, weight: int, store: TableStore) -> None:
        from ..zeta.motivic import _PrimeData

        self.weight = weight
        self.store = store
        self._data = {}
        self._factory = _PrimeData
        gens = store.all_generators(weight) if weight >= 2 else []
        self.basis: List[Monomial] = monomials_of_weight(gens, weight) if weight else [()]

    def _rows(self, p: int):
        """Rows modulo p, cached in memory and on disk (``rows/`` beside the tables).

        The disk cache holds int32 arrays (entries are below 2^26); it is a
        pure cache: deleting it only costs the time to rebuild.
        """
        import numpy as np

        if p in self._data:
            return self._data[p]
        folder = self.store.directory / "rows"
        path = folder / f"weight-{self.weight}-p{p}.npy"
        rows = None
        if path.exists():
            try:
                # memory-mapped: only the rows an expansion touches are read
                rows = np.load(path, mmap_mode="r", allow_pickle=False)
            except (OSError, ValueError):
                rows = None
            if rows is not None and rows.shape != (1 << self.weight, len(self.basis)):
                rows = None
        if rows is None:
            rows = self._build_rows(p, folder, path)
        self._data[p] = rows
        return rows

    def _build_rows(self, p: int, folder, path):
        """Build the rows modulo p one class of words (fixed number of ones) at a
        time (:meth:`~lowenergy.zeta.motivic._PrimeData.word_values_of_class`),
        written straight into the memory-mapped cache file: never 2^W × d
        integers in memory at once.  Without a writable cache directory the
        classes are collected in memory instead.
        """
        import os

        import numpy as np
        from numpy.lib.format import open_memmap

        from ..fileio import atomic_path

        data = self._factory(p, self.store)
        shape = (1 << self.weight, len(self.basis))
        try:
            folder.mkdir(parents=True, exist_ok=True)
            writable = os.access(folder, os.W_OK)
        except OSError:
            writable = False
        if not writable:
            rows = np.zeros(shape, dtype=np.int32)  # a read-only cache only costs time
            for ones in range(self.weight + 1):
                idx, vals = data.word_values_of_class(self.weight, ones)
                rows[idx] = vals
            return rows
        with atomic_path(path, durable=False) as tmp:
            out = open_memmap(tmp, mode="w+", dtype=np.int32, shape=shape)
            for ones in range(self.weight + 1):
                idx, vals = data.word_values_of_class(self.weight, ones)
                out[idx] = vals
            out.flush()
            del out
        return np.load(path, mmap_mode="r", allow_pickle=False)

    def combine(self, coeffs: Dict[int, int]) -> MZV:
        import numpy as np

        from ..errors import InternalError
        from ..zeta.motivic import SMALL_PRIMES
        from ..linalg import crt_rational

        if not coeffs:
            return MZV()
        rows = np.fromiter(coeffs.keys(), dtype=np.int64, count=len(coeffs))
        mults = list(coeffs.values())
        residues = []
        previous = None
        for count, p in enumerate(SMALL_PRIMES, start=1):
            vals = np.asarray(self._rows(p)[rows], dtype=np.int64)
            m = np.array([c % p for c in mults], dtype=np.int64)
            acc = np.zeros(vals.shape[1], dtype=np.int64)
            for start in range(0, len(m), 1024):  # keep partial sums below 2^63
                acc = (acc + m[start : start + 1024] @ vals[start : start + 1024]) % p
            residues.append((p, [int(v) for v in acc]))
            if count < 2:
                continue
            primes = [q for q, _ in residues]
            modulus = 1
            for q in primes:
                modulus *= q
            coords = []
            ok = True
            for k in range(len(self.basis)):
                frac = crt_rational([vec[k] for _, vec in residues], primes, modulus)
                if frac is None:
                    ok = False
                    break
                coords.append(frac)
            if ok and previous == coords:
                return MZV({mono: c for mono, c in zip(self.basis, coords) if c})
            previous = coords if ok else None
        raise InternalError(
            f"exact reconstruction of a weight-{self.weight} coefficient failed with {len(SMALL_PRIMES)} primes"
        )


def prepare_rows(max_weight: int, store: TableStore | None = None, progress=None) -> None:
    """Build the disk cache of modular word rows for weights above the exact ones.

    Optional: rows are built on first use anyway; doing it once after
    ``tables build`` makes the first expansion of high order fast.
    """
    from ..zeta.motivic import SMALL_PRIMES

    store = store or default_store()
    for w in range(EXACT_MAX_WEIGHT + 1, max_weight + 1):
        table = word_values(w, store, exact=False)
        for p in SMALL_PRIMES:
            table._rows(p)
        if progress:
            progress(w)
