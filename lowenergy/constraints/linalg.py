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

__all__ = ["Echelon", "consistent", "SparseRow"]

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
        m = flint.fmpq_mat(len(stack), self.ncols)
        for i, r in enumerate(stack):
            for c, v in r.items():
                m[i, c] = v
        reduced, rank = m.rref()
        rows: List[Dict[int, "flint.fmpq"]] = []
        pivots: List[int] = []
        zero = flint.fmpq(0)
        for i in range(rank):
            row = {}
            first = None
            for c in range(self.ncols):
                v = reduced[i, c]
                if v != zero:
                    row[c] = v
                    if first is None:
                        first = c
            rows.append(row)
            pivots.append(first)
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
