"""Exact linear algebra: the one front over python-flint for the whole package.

* Modular arithmetic and reconstruction: :func:`to_mod`,
  :func:`rational_reconstruct` and :func:`crt_rational` (Chinese remaindering
  of residues modulo several primes, then the smallest fraction with that
  residue) -- used by the MZV table builds (:mod:`lowenergy.zeta.reduction`,
  :mod:`lowenergy.zeta.motivic`), which eliminate modulo primes with
  ``flint.nmod_mat``.
* :func:`solve_gram`: exact solution of a Gram system over Q with the first
  dependent column found (``flint.fmpq_mat``) -- the projections of
  :mod:`lowenergy.tables.bases`.
* Sparse rows over Q for :mod:`lowenergy.constraints.fix`: :class:`Echelon`,
  :func:`consistent`, :func:`greedy_independent`,
  :func:`greedy_independent_image`, :class:`IncrementalBasis`.

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
from math import gcd, isqrt
from typing import Dict, Hashable, Iterable, List, Optional, Sequence, Tuple

import flint

__all__ = [
    "Echelon",
    "IncrementalBasis",
    "consistent",
    "greedy_independent",
    "greedy_independent_image",
    "SparseRow",
    "to_mod",
    "rational_reconstruct",
    "crt_rational",
    "solve_gram",
    "DependentColumn",
]

SparseRow = Dict[int, object]


# ==========================================================================
# modular arithmetic and rational reconstruction
# ==========================================================================


def to_mod(q: Fraction, p: int) -> int:
    """``q`` modulo the prime ``p`` (its denominator must be prime to ``p``).

    >>> to_mod(Fraction(1, 2), 7), to_mod(Fraction(-3), 7)
    (4, 4)
    """
    return (q.numerator * pow(q.denominator, -1, p)) % p


def rational_reconstruct(a: int, m: int) -> Optional[Fraction]:
    """Smallest fraction n/d with n ≡ a d (mod m), |n|, d ≤ sqrt(m/2); None
    if there is none (the extended Euclidean algorithm stopped half-way; see
    e.g. von zur Gathen & Gerhard, *Modern Computer Algebra*, section 5.10).

    >>> rational_reconstruct(4, 7), rational_reconstruct(to_mod(Fraction(-5, 13), 10**9 + 7), 10**9 + 7)
    (None, Fraction(-5, 13))
    """
    a %= m
    bound = isqrt(m // 2)
    r0, r1 = m, a
    s0, s1 = 0, 1
    while r1 > bound:
        q = r0 // r1
        r0, r1 = r1, r0 - q * r1
        s0, s1 = s1, s0 - q * s1
    if s1 == 0 or abs(s1) > bound:
        return None
    if gcd(r1, abs(s1)) != 1:
        return None
    return Fraction(r1, s1)


def crt_rational(residues: Sequence[int], primes: Sequence[int], modulus: Optional[int] = None) -> Optional[Fraction]:
    """The rational number with the given residues modulo distinct primes:
    Chinese remaindering (Garner's mixed-radix form) then
    :func:`rational_reconstruct` modulo the product (``modulus``, if the
    caller has it).  Zero residues give 0; None if reconstruction fails.

    >>> ps = [2**61 - 1, 2**31 - 1]
    >>> crt_rational([to_mod(Fraction(123456789, 1000003), p) for p in ps], ps)
    Fraction(123456789, 1000003)
    """
    residue, m = 0, 1
    for v, p in zip(residues, primes):
        t = ((int(v) - residue) * pow(m, -1, p)) % p
        residue += m * t
        m *= p
    if residue == 0:
        return Fraction(0)
    return rational_reconstruct(residue, modulus if modulus is not None else m)


# ==========================================================================
# Gram systems over Q
# ==========================================================================


class DependentColumn(Exception):
    """Raised by :func:`solve_gram`: column ``index`` lies in the span of the
    columns before it, with ``combination[i]`` the coefficient of column i."""

    def __init__(self, index: int, combination: Dict[int, Fraction]) -> None:
        super().__init__(index)
        self.index = index
        self.combination = combination


def solve_gram(
    gram: Sequence[Sequence[Fraction]], rhs: Sequence[Dict[Hashable, Fraction]]
) -> List[Dict[Hashable, Fraction]]:
    """Solve ``gram · x = rhs`` exactly, the right-hand sides being sparse
    vectors ``{key: rational}`` (one per row) and so the solutions too.

    ``gram`` is the Gram matrix of some vectors (symmetric, positive
    semi-definite).  If those vectors are dependent, :class:`DependentColumn`
    names the first one that lies in the span of those before it, with the
    combination (the same column Gaussian elimination without pivoting stops
    at, since a Gram matrix's leading blocks are singular exactly then).

    >>> solve_gram([[2, 1], [1, 1]], [{"a": 3}, {"a": 2, "b": 1}])
    [{'a': Fraction(1, 1), 'b': Fraction(-1, 1)}, {'a': Fraction(1, 1), 'b': Fraction(2, 1)}]
    >>> try:
    ...     solve_gram([[1, 2], [2, 4]], [{}, {}])
    ... except DependentColumn as dep:
    ...     print(dep.index, dep.combination)
    1 {0: Fraction(2, 1)}
    """
    n = len(gram)
    if n == 0:
        return []
    g = flint.fmpq_mat(n, n, [_fmpq(Fraction(x)) for row in gram for x in row])
    reduced, rank = g.rref()
    if rank < n:
        pivots = _pivot_columns(reduced, rank, n)
        k = next(j for j in range(n) if j >= len(pivots) or pivots[j] != j)
        # column k = Σ_{i<k} c_i column i: the entries of column k in the
        # reduced form (the first k columns are pivots)
        comb = {i: _fraction(reduced[i, k]) for i in range(k) if reduced[i, k] != 0}
        raise DependentColumn(k, comb)
    keys = list(dict.fromkeys(key for v in rhs for key in v))
    if not keys:
        return [{} for _ in range(n)]
    pos = {key: j for j, key in enumerate(keys)}
    zero = flint.fmpq(0)
    flat = [zero] * (n * len(keys))
    for i, v in enumerate(rhs):
        for key, x in v.items():
            flat[i * len(keys) + pos[key]] = _fmpq(Fraction(x))
    sol = g.solve(flint.fmpq_mat(n, len(keys), flat))
    out: List[Dict[Hashable, Fraction]] = []
    for i in range(n):
        out.append({key: _fraction(sol[i, j]) for j, key in enumerate(keys) if sol[i, j] != zero})
    return out


# ==========================================================================
# sparse rows over Q (constraints)
# ==========================================================================


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
