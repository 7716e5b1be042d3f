"""Exact linear algebra over Q for :mod:`lowenergy.constraints.fix`, on python-flint.

Rows are sparse: ``{column: rational}`` (``Fraction``, ``int`` or
``flint.fmpq``), the last column ``ncols − 1`` holding the right-hand side of
an augmented system.  :class:`Echelon` keeps the reduced row echelon form of
all rows added so far (``flint.fmpq_mat.rref``, exact), so that the rank can
be read after every batch -- the stabilisation of pole constraints level by
level needs exactly that.

Examples
--------
>>> e = Echelon(3)                      # unknowns a, b | rhs
>>> e.add([{0: 1, 1: 1, 2: 3}])         # a + b = 3
>>> e.rank, e.consistent
(1, True)
>>> e.add([{0: 1, 1: -1, 2: 1}])        # a - b = 1
>>> e.solution_rows()
[(0, {2: Fraction(2, 1)}), (1, {2: Fraction(1, 1)})]
>>> e.add([{0: 2, 1: 2, 2: 5}])         # 2a + 2b = 5: no solution
>>> e.consistent
False
"""

from __future__ import annotations

from fractions import Fraction
from typing import Dict, Iterable, List, Sequence, Tuple

import flint

__all__ = ["Echelon", "IncrementalBasis", "consistent", "greedy_independent", "greedy_independent_image", "SparseRow"]

SparseRow = Dict[int, object]


def _fmpq(x) -> "flint.fmpq":
    if isinstance(x, flint.fmpq):
        return x
    if isinstance(x, Fraction):
        return flint.fmpq(x.numerator, x.denominator)
    return flint.fmpq(x)


def _fraction(x: "flint.fmpq") -> Fraction:
    return Fraction(int(x.p), int(x.q))


class Echelon:
    """The reduced row echelon form of the rows added so far (exact).

    ``rank`` counts pivots among the unknowns (all columns but the last);
    ``consistent`` is False once a pivot falls on the right-hand side.
    """

    def __init__(self, ncols: int) -> None:
        self.ncols = ncols
        self.rows: List[Dict[int, "flint.fmpq"]] = []
        self.pivots: List[int] = []

    def add(self, rows: Iterable[SparseRow]) -> None:
        new = [{c: _fmpq(v) for c, v in r.items() if v} for r in rows]
        new = [r for r in new if r]
        if not new:
            return
        stack = self.rows + new
        ncols = self.ncols
        zero = flint.fmpq(0)
        flat = [zero] * (len(stack) * ncols)
        for i, r in enumerate(stack):
            base = i * ncols
            for c, v in r.items():
                flat[base + c] = v
        reduced, rank = flint.fmpq_mat(len(stack), ncols, flat).rref()
        entries = reduced.entries()
        rows: List[Dict[int, "flint.fmpq"]] = []
        pivots: List[int] = []
        for i in range(rank):
            base = i * ncols
            row = {c: v for c, v in enumerate(entries[base : base + ncols]) if v != zero}
            rows.append(row)
            pivots.append(min(row))
        self.rows, self.pivots = rows, pivots

    @property
    def rank(self) -> int:
        return sum(1 for p in self.pivots if p != self.ncols - 1)

    @property
    def consistent(self) -> bool:
        return (self.ncols - 1) not in self.pivots

    def solution_rows(self) -> List[Tuple[int, Dict[int, Fraction]]]:
        """``[(pivot column, {other column: value})]`` with Fractions: the
        pivot unknown equals ``row[rhs] − Σ row[f]·x_f``."""
        out = []
        for p, row in zip(self.pivots, self.rows):
            out.append((p, {c: _fraction(v) for c, v in row.items() if c != p}))
        return out


def consistent(rows: Sequence[SparseRow], ncols: int) -> bool:
    """Whether the augmented system has a solution."""
    e = Echelon(ncols)
    e.add(rows)
    return e.consistent


#: The prime of :func:`greedy_independent` (a Mersenne prime below 2^64).
GREEDY_PRIME = 2**61 - 1


def greedy_independent(rows: Sequence[SparseRow], ncols: int) -> List[int]:
    """Indices of the rows that are linearly independent of all rows before them.

    The same choice as adding the rows one by one to an
    :class:`IncrementalBasis` and keeping those that raise the rank: the pivot
    columns of the matrix whose *columns* are the rows.  They are computed
    with one ``nmod_mat.rref`` modulo the prime :data:`GREEDY_PRIME`.  Rows
    found independent modulo the prime are independent over Q (a rational
    dependency would reduce to one modulo the prime), so every chosen row is a
    genuine new direction; a row could be passed over only if the prime
    divides one of the matrix's minors (probability of order 1e-15 for
    entries of this size).  Only the *advice* of ``fix`` (which pole
    numerators would fix the free parameters) uses this; solutions and ranks
    are computed exactly (:class:`Echelon`).  A denominator divisible by the
    prime (never seen) switches to the exact rref.

    >>> greedy_independent([{0: 1, 1: 2}, {0: 2, 1: 4}, {1: 1}, {0: 3}], 2)
    [0, 2]
    >>> greedy_independent([{0: Fraction(1, 3), 1: 2}, {0: 1, 1: 6}, {1: Fraction(-5, 7)}], 2)
    [0, 2]
    """
    rows = list(rows)
    if not rows:
        return []
    n = len(rows)
    p = GREEDY_PRIME
    mat = flint.nmod_mat(ncols, n, p)
    for j, r in enumerate(rows):
        for c, v in r.items():
            if not v:
                continue
            q = _fmpq(v)
            den = int(q.q) % p
            if den == 0:
                return _greedy_exact(rows, ncols)
            mat[c, j] = int(q.p) * pow(den, -1, p) % p
    reduced, rank = mat.rref()
    return _pivot_columns(reduced, rank, n)


def _pivot_columns(reduced, rank: int, n: int) -> List[int]:
    """The pivot columns of a matrix in reduced row echelon form (first ``rank`` rows)."""
    pivots: List[int] = []
    for i in range(rank):
        for j in range(pivots[-1] + 1 if pivots else 0, n):
            if reduced[i, j] != 0:
                pivots.append(j)
                break
    return pivots


def _mod(v) -> int | None:
    q = _fmpq(v)
    den = int(q.q) % GREEDY_PRIME
    if den == 0:
        return None
    return int(q.p) * pow(den, -1, GREEDY_PRIME) % GREEDY_PRIME


def greedy_independent_image(rows: Sequence[SparseRow], columns: Sequence[Dict[int, object]], nout: int) -> List[int]:
    """:func:`greedy_independent` of the images ``Σ_c row[c]·columns[c]`` (a linear
    map given column by column, ``columns[c] = {output index: value}``).

    The images are formed and reduced modulo :data:`GREEDY_PRIME` (one matrix
    product and one rref; same guarantees as :func:`greedy_independent`):
    this is what lets ``fix`` advise on hundreds of free parameters without
    rational arithmetic per row.  Falls back to the exact images if a
    denominator is divisible by the prime.

    >>> greedy_independent_image([{0: 1}, {1: 1}, {0: 1, 1: 1}], [{0: 1, 1: 1}, {0: 2, 1: 2}], 2)
    [0]
    """
    rows = list(rows)
    if not rows or nout == 0:
        return []
    p = GREEDY_PRIME
    nin = len(columns)
    left = flint.nmod_mat(len(rows), nin, p)
    right = flint.nmod_mat(nin, nout, p)
    exact = False
    for i, r in enumerate(rows):
        for c, v in r.items():
            if v and c < nin:
                m = _mod(v)
                if m is None:
                    exact = True
                    break
                left[i, c] = m
    for c, col in enumerate(columns):
        for k, v in col.items():
            if v:
                m = _mod(v)
                if m is None:
                    exact = True
                    break
                right[c, k] = m
    if exact:
        images = []
        for r in rows:
            img: Dict[int, Fraction] = {}
            for c, v in r.items():
                if c < nin:
                    for k, w in columns[c].items():
                        img[k] = img.get(k, Fraction(0)) + Fraction(v) * Fraction(w)
            images.append({k: v for k, v in img.items() if v})
        return _greedy_exact(images, nout)
    reduced, rank = (left * right).transpose().rref()
    n = len(rows)
    return _pivot_columns(reduced, rank, n)


def _greedy_exact(rows: Sequence[SparseRow], ncols: int) -> List[int]:
    n = len(rows)
    zero = flint.fmpq(0)
    flat = [zero] * (ncols * n)
    for j, r in enumerate(rows):
        for c, v in r.items():
            if v:
                flat[c * n + j] = _fmpq(v)
    reduced, rank = flint.fmpq_mat(ncols, n, flat).rref()
    return _pivot_columns(reduced, rank, n)


class IncrementalBasis:
    """A basis of the row space built one row at a time (exact, in Fractions).

    :meth:`add` reduces a sparse row against the rows kept so far and keeps
    the remainder if it is not zero: a cheap independence test when rows
    arrive one by one and are short (the greedy choice of pole numerators
    that would fix the free parameters).

    >>> b = IncrementalBasis()
    >>> b.add({0: 1, 1: 2}), b.add({0: 2, 1: 4}), b.add({1: 1}), b.rank
    (True, False, True, 2)
    """

    def __init__(self) -> None:
        self.rows: Dict[int, Dict[int, Fraction]] = {}   # pivot column -> row with 1 at the pivot

    @property
    def rank(self) -> int:
        return len(self.rows)

    def add(self, row: SparseRow) -> bool:
        r = {c: Fraction(v) for c, v in row.items() if v}
        while r:
            pivot = min(r)
            if pivot not in self.rows:
                inv = 1 / r[pivot]
                self.rows[pivot] = {c: v * inv for c, v in r.items()}
                return True
            f = r[pivot]
            for c, v in self.rows[pivot].items():
                y = r.get(c, Fraction(0)) - f * v
                if y:
                    r[c] = y
                else:
                    r.pop(c, None)
        return False
