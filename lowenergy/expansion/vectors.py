"""Expansion series as exact vectors over the MZV monomial basis (the fast path).

:func:`lowenergy.expansion.engine.raw_series` builds one MZV object per
Laurent coefficient and sums word values one word at a time.  Here the same
numbers are computed in bulk:

* **Shuffle values.**  The coefficient of ``(cv)^m (dv')^n`` needs
  ``V(w, m, n) = Σ_u e(w, u) (p0·G(0u; 1) - p1·G(1u; 1))`` over the words u
  with ``m + #0(w)`` zeros and ``n + #1(w)`` ones, ``e(w, u)`` the number of
  ways w sits in u as a subsequence (METHOD.md §4).  For all words u of a
  length L at once, ``e(w, ·)`` is one vectorized recursion over the letters
  of u (shared between words with a common prefix); the sums are matrix
  products of these counts with the word-value rows of
  :mod:`lowenergy.expansion.values` modulo 26-bit primes, done in float64
  with every partial sum below 2^53 (so exact), grouped by the number of ones
  in u.  The exact rationals are recovered by Chinese remaindering and
  rational reconstruction, adding primes until the reconstruction is
  confirmed by one further prime (the rule of
  :class:`~lowenergy.expansion.values.ModularWordValues`).
* **Positive shifts by integration by parts.**  With
  ``J(a, b) = ∫_0^1 x^(a-1+α) (1-x)^(b-1+β) G(w; x) dx`` (α, β linear in s, t),
  ``∫_0^1 d[x^(a+α) (1-x)^(b+β) G(w; x)] = 0`` for ``a, b ≥ 0`` (in the
  convergent region; both sides are meromorphic) gives, with ``w = w1 w'``,
  ``(a+α) J(a,b+1) - (b+β) J(a+1,b) + [w1=0] J_{w'}(a,b+1) - [w1=1] J_{w'}(a+1,b) = 0``,
  and ``J(a,b) = J(a+1,b) + J(a,b+1)`` (multiply the integrand by x + (1-x)).
  Eliminating one of the two unknowns:

      (a+b+α+β) J(a+1,b) = (a+α) J(a,b) + [w1=0] J_{w'}(a,b+1) - [w1=1] J_{w'}(a+1,b)
      (a+b+α+β) J(a,b+1) = (b+β) J(a,b) - [w1=0] J_{w'}(a,b+1) + [w1=1] J_{w'}(a+1,b)

  For ``a + b ≥ 1`` the factor ``a+b+α+β`` is an invertible power series, so
  every ``J(A, B)`` with ``A + B ≥ 2`` follows from the cheap cases
  ``J(1, 0)``, ``J(0, 1)`` of w and its suffixes without any loss of order —
  instead of integrating ``x^j G(u; x)`` for every word u of every shuffle.

A vector is a python-flint ``fmpq_poly`` whose coefficient k is the
coordinate on the monomial in column k of a :class:`ColumnSpace`; a series is
``{(i, j): vector}``.
"""

from __future__ import annotations

from collections import defaultdict
from fractions import Fraction
from math import isqrt
from typing import Dict, Iterable, List, Optional, Tuple

import numpy as np

from ..zeta.element import MZV, _mono_mul
from ..linalg import rational_reconstruct
from ..zeta.reduction import Monomial, monomials_of_weight
from ..zeta.table import TableStore

__all__ = ["ColumnSpace", "shuffle_values", "embedding_counts", "VSeries", "fraction", "poly_from"]

Word = Tuple[int, ...]
Mode = Tuple[int, int]  # (p0, p1): weights of the rows G(0u; 1) and -G(1u; 1)
VSeries = Dict[Tuple[int, int], "object"]  # {(i, j): fmpq_poly}


def _flint():
    import flint

    return flint


class ColumnSpace:
    """Columns for the MZV monomials of all weights (one space per table store).

    A monomial gets a column the first time it is met; ``basis_cols(W)`` lists
    the columns of the monomial basis of weight W in the order of the
    word-value rows.
    """

    def __init__(self, store: TableStore) -> None:
        self.store = store
        self.index: Dict[Monomial, int] = {}
        self.monos: List[Monomial] = []
        self._bases: Dict[int, List[int]] = {}
        self._times: Dict[Tuple[Monomial, int], int] = {}

    def col(self, mono: Monomial) -> int:
        got = self.index.get(mono)
        if got is None:
            got = len(self.monos)
            self.index[mono] = got
            self.monos.append(mono)
        return got

    def basis_cols(self, weight: int) -> List[int]:
        got = self._bases.get(weight)
        if got is None:
            gens = self.store.all_generators(weight) if weight >= 2 else []
            basis = monomials_of_weight(gens, weight) if weight else [()]
            got = [self.col(m) for m in basis]
            self._bases[weight] = got
        return got

    def times(self, mono: Monomial, col: int) -> int:
        """Column of ``mono · (monomial of col)`` (generators commute freely)."""
        key = (mono, col)
        got = self._times.get(key)
        if got is None:
            got = self.col(_mono_mul(mono, self.monos[col])) if mono else col
            self._times[key] = got
        return got

    def vector(self, x: MZV):
        """An MZV as a vector."""
        coeffs: Dict[int, Fraction] = {self.col(m): c for m, c in x.as_dict().items()}
        return poly_from(coeffs)

    def to_mzv(self, vec) -> MZV:
        terms = {}
        for k, c in enumerate(vec.coeffs()):
            if c:
                terms[self.monos[k]] = fraction(c)
        return MZV.from_canonical(terms)


def fraction(q) -> Fraction:
    """A python-flint ``fmpq`` as a ``Fraction`` (already in lowest terms, so
    the normalizing gcd of ``Fraction(n, d)`` is skipped)."""
    out = object.__new__(Fraction)
    out._numerator = int(q.p)
    out._denominator = int(q.q)
    return out


def poly_from(coeffs: Dict[int, Fraction]):
    flint = _flint()
    if not coeffs:
        return flint.fmpq_poly()
    out = [0] * (max(coeffs) + 1)
    for k, c in coeffs.items():
        out[k] = flint.fmpq(c.numerator, c.denominator) if isinstance(c, Fraction) else c
    return flint.fmpq_poly(out)


# ---------------------------------------------------------------------------
# subsequence counts for all words of one length
# ---------------------------------------------------------------------------

def embedding_counts(words: Iterable[Word], length: int) -> Dict[Word, np.ndarray]:
    """``{w: e}`` with ``e[k]`` = number of ways w occurs as a subsequence of the
    word of ``length`` letters whose binary digits are k (first letter = highest bit).

    Walks the prefix tree of the words: the counts for a prefix of length r over
    all prefixes of u are one cumulative sum of those for length r - 1.

    >>> e = embedding_counts([(0, 1)], 3)[(0, 1)]
    >>> [int(e[k]) for k in (0b001, 0b011, 0b101, 0b010)]   # 001, 011, 101, 010
    [2, 2, 1, 1]
    """
    words = [tuple(w) for w in words]
    out = {w: e.astype(np.int64) for w, e in _walk_embeddings(words, length)}
    for w in words:
        out.setdefault(w, np.zeros(1 << length, dtype=np.int64))
    return out


def _walk_embeddings(words: Iterable[Word], length: int):
    """Yield ``(w, counts)`` for the words of at most ``length`` letters (counts is
    a view into a work array: use it before the next step).  int32 counts: a
    count is at most C(length, len(w)) < 2^31 for length ≤ 33."""
    words = sorted(set(tuple(w) for w in words if len(w) <= length))
    n = 1 << length
    idx = np.arange(n, dtype=np.int64)
    # masks[a][i] = 1 where the (i+1)-th letter of u is a, i = 0 .. length-1
    ones = np.empty((length, n), dtype=np.int32)
    for i in range(length):
        ones[i] = (idx >> (length - 1 - i)) & 1
    masks = (1 - ones, ones)
    wanted = set(words)
    children: Dict[Word, set] = defaultdict(set)
    for w in words:
        for r in range(1, len(w) + 1):
            children[w[: r - 1]].add(w[r - 1])
    # work[depth][i] = embeddings of the current prefix (of that length) into u[:i]
    work = [np.ones((length + 1, n), dtype=np.int32)]

    def walk(prefix: Word, depth: int):
        table = work[depth]
        if prefix in wanted:
            yield prefix, table[length]
        for a in sorted(children.get(prefix, ())):
            if len(work) <= depth + 1:
                work.append(np.empty((length + 1, n), dtype=np.int32))
            nxt = work[depth + 1]
            nxt[0] = 0
            # nxt[i] = Σ_{i' ≤ i, u_{i'} = a} table[i' - 1]
            np.multiply(table[:-1], masks[a], out=nxt[1:])
            np.cumsum(nxt, axis=0, out=nxt)
            yield from walk(prefix + (a,), depth + 1)

    yield from walk((), 0)


# ---------------------------------------------------------------------------
# bulk shuffle values
# ---------------------------------------------------------------------------

def _popcount_order(length: int):
    n = 1 << length
    idx = np.arange(n, dtype=np.int64)
    pc = np.zeros(n, dtype=np.int64)
    for b in range(length):
        pc += (idx >> b) & 1
    order = np.argsort(pc, kind="stable")
    bounds = np.searchsorted(pc[order], np.arange(length + 2))
    return order, bounds


class _Reconstruction:
    """Residues of one integer-combination vector modulo growing sets of primes.

    The rule of :class:`~lowenergy.expansion.values.ModularWordValues`: accept
    the rational reconstruction from k primes once the reconstruction from
    k + 1 primes is the same.  By uniqueness of rational reconstruction (a
    fraction with |n|, d ≤ sqrt(M/2) congruent to the residue is the only
    one), that holds exactly when the k-prime fractions are congruent to the
    residues modulo prime k + 1 — a cheap test instead of a second
    reconstruction.
    """

    __slots__ = ("crt", "modulus", "count", "candidate", "done")

    def __init__(self) -> None:
        self.crt: Optional[List[int]] = None
        self.modulus = 1
        self.count = 0
        self.candidate: Optional[List[Fraction]] = None
        self.done: Optional[List[Fraction]] = None

    def add(self, p: int, residues: np.ndarray) -> None:
        vec = residues.tolist()
        if self.candidate is not None:
            if all((q.numerator - v * q.denominator) % p == 0 for q, v in zip(self.candidate, vec)):
                self.done = self.candidate
                return
            self.candidate = None
        if self.crt is None:
            self.crt = vec
        else:
            inv = pow(self.modulus, -1, p)
            m = self.modulus
            self.crt = [r + m * (((v - r) * inv) % p) for r, v in zip(self.crt, vec)]
        self.modulus *= p
        self.count += 1
        if self.count < 2:
            return
        coords: List[Fraction] = []
        modulus = self.modulus
        bound = isqrt(modulus // 2)
        den = 0
        for r in self.crt:
            if r == 0:
                coords.append(_ZERO)
                continue
            if den:
                # the denominator of the previous coordinate often fits: then n/den
                # (|n|, den ≤ sqrt(M/2)) is the unique reconstruction
                n = (r * den) % modulus
                if n > modulus // 2:
                    n -= modulus
                if -bound <= n <= bound:
                    coords.append(Fraction(n, den))
                    continue
            q = rational_reconstruct(r, modulus)
            if q is None:
                return
            coords.append(q)
            den = q.denominator
        self.candidate = coords


_ZERO = Fraction(0)


def shuffle_values(
    requests: Iterable[Tuple[Word, int, Mode]],
    store: TableStore,
    space: ColumnSpace,
) -> Dict[Tuple[Word, int, int, Mode], object]:
    """``V(w, m, n)`` (see the module docstring) for every request ``(w, total_max, mode)``.

    Returns ``{(w, total, n, mode): vector}`` for ``0 ≤ n ≤ total ≤ total_max``
    (``m = total - n``); ``mode = (p0, p1)``.
    """
    from ..errors import LowEnergyError
    from ..zeta.motivic import SMALL_PRIMES
    from .values import word_values

    by_length: Dict[int, Dict[Mode, set]] = defaultdict(lambda: defaultdict(set))
    for w, total_max, mode in requests:
        w = tuple(w)
        for total in range(total_max + 1):
            by_length[len(w) + total][mode].add(w)
    if not by_length:
        return {}
    states: Dict[Tuple[Word, int, int, Mode], _Reconstruction] = {}
    # one (length, mode) block at a time: its count matrix is the big array
    for length in sorted(by_length):
        order, bounds = _popcount_order(length)
        table = word_values(length + 1, store, exact=False)
        n_u = 1 << length
        for mode, words in sorted(by_length[length].items()):
            words = sorted(words)
            row_of = {w: k for k, w in enumerate(words)}
            emb = np.empty((len(words), n_u), dtype=np.float64)
            for w, counts in _walk_embeddings(words, length):
                emb[row_of[w]] = counts[order]
            biggest = float(emb.max()) if emb.size else 0.0
            block = {}
            for w in words:
                total = length - len(w)
                for n in range(total + 1):
                    block[(w, n)] = states[(w, total, n, mode)] = _Reconstruction()
            ones_w = [sum(w) for w in words]
            for p in SMALL_PRIMES:
                if all(st.done is not None for st in block.values()):
                    break
                half = p // 2
                rows = table._rows(p)
                diff = np.zeros((n_u, rows.shape[1]), dtype=np.int64)
                if mode[0]:
                    diff += rows[:n_u]
                if mode[1]:
                    diff -= rows[n_u:]
                diff %= p
                diff[diff > half] -= p
                diff = diff[order].astype(np.float64)
                # every partial sum stays below 2^53: |count| ≤ biggest, |entry| ≤ p/2
                chunk = max(1, int(2.0 ** 52 // max(1.0, biggest * (half + 1))))
                for c in range(length + 1):
                    lo, hi = int(bounds[c]), int(bounds[c + 1])
                    needed = [k for k, w in enumerate(words)
                              if 0 <= c - ones_w[k] <= length - len(w) and block[(w, c - ones_w[k])].done is None]
                    if lo == hi or not needed:
                        continue
                    acc = np.zeros((len(words), diff.shape[1]), dtype=np.int64)
                    for start in range(lo, hi, chunk):
                        stop = min(hi, start + chunk)
                        part = emb[:, start:stop] @ diff[start:stop]
                        acc = (acc + np.rint(part).astype(np.int64) % p) % p
                    for k in needed:
                        block[(words[k], c - ones_w[k])].add(p, acc[k])
            del emb
    out = {}
    for (w, total, n, mode), st in states.items():
        if st.done is None:
            raise LowEnergyError(
                f"exact reconstruction of a weight-{len(w) + total + 1} shuffle value failed with "
                f"{len(SMALL_PRIMES)} primes"
            )
        cols = space.basis_cols(len(w) + total + 1)
        out[(w, total, n, mode)] = poly_from({cols[k]: q for k, q in enumerate(st.done) if q})
    return out
