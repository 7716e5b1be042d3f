"""Exact reduction of MZVs of one weight by regularized double shuffle.

The algorithm, weight by weight (all lower weights already reduced):

1. Unknowns are the convergent index lists of weight N, glued into duality
   classes (``ζ(w) = ζ(dual w)``; Zagier/Hoffman duality is a theorem, so
   this only shrinks the system).
2. Relations, all exact with small integer coefficients:

   * double shuffle: ``ζ(u) ζ(v)`` expanded once by the shuffle product of
     words and once by the stuffle product of index lists, for every pair of
     convergent u, v with ``|u| + |v| = N``;
   * Hoffman's relation ``ζ_ш(1) ζ(v) = ζ_*(1) ζ(v)`` for convergent v of
     weight N - 1: the divergent term ``ζ(1, v)`` appears once on each side and
     cancels (Ihara, Kaneko, Zagier, Compositio Math. 142 (2006), the
     "finite double shuffle" relations);
   * one definition row per *product* of lower-weight generators of total
     weight N, linking a new unknown (the product) to its stuffle expansion.

3. Row reduction modulo a few 62-bit primes (python-flint ``nmod_mat``), with
   the columns ordered ``[other words, candidate generators (least preferred
   first), products]``.  Non-pivot columns form a basis of the quotient and
   they are the right-most possible: all products, then the most preferred
   candidates.  Those candidates become the new generators of weight N.
4. The rational coefficients expressing every word in the basis are recovered
   by Chinese remaindering and rational reconstruction, and checked against
   one further prime.

The dimension found at weight N is ``#words - rank``; Zagier's conjecture says
it is d_N (``Σ d_N x^N = 1/(1 - x^2 - x^3)``).  It is at most d_N by Terasoma
(2002) and Deligne-Goncharov (2005); the tests compare it with d_N.

The core works on plain tuples and dicts; :mod:`lowenergy.zeta.table` wraps
it with caching.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Callable, Dict, List, Optional, Sequence, Tuple

from ..errors import InternalError
from ..linalg import crt_rational, to_mod
from ..words import (
    Indices,
    admissible_indices,
    dual_indices,
    indices_to_word,
    shuffle,
    stuffle,
    word_to_indices,
)

__all__ = [
    "Monomial",
    "WeightTable",
    "reduce_weight",
    "zagier_dimension",
    "generator_preference",
    "monomials_of_weight",
    "expand_monomial",
    "monomial_key",
]

# A monomial in the generators: a sorted tuple of generator index lists, with
# repetition, e.g. ((2,), (2,), (3,)) for ζ(2)^2 ζ(3).  The empty tuple is 1.
Monomial = Tuple[Indices, ...]

# The eight largest primes below 2^62 (sympy.prevprime; checked in tests/zeta/test_reduction.py).
PRIMES = (
    4611686018427387847,
    4611686018427387817,
    4611686018427387787,
    4611686018427387761,
    4611686018427387751,
    4611686018427387737,
    4611686018427387733,
    4611686018427387709,
)


def zagier_dimension(weight: int) -> int:
    """d_w with ``Σ d_w x^w = 1/(1 - x^2 - x^3)`` (Zagier 1994).

    >>> [zagier_dimension(w) for w in range(13)]
    [1, 0, 1, 1, 1, 2, 2, 3, 4, 5, 7, 9, 12]
    """
    d = [1, 0, 1]
    while len(d) <= weight:
        d.append(d[-2] + d[-3])
    return d[weight]


def monomial_key(mono: Monomial) -> tuple:
    return tuple((sum(g), g) for g in mono)


def sort_monomial(gens: Sequence[Indices]) -> Monomial:
    return tuple(sorted(gens, key=lambda g: (sum(g), g)))


def generator_preference(indices: Indices) -> tuple:
    """Sort key: smaller means *more* preferred as a generator.

    Indices that are odd and at least 3 first (the conventional choice
    ζ(3,5), ζ(3,7), ζ(3,3,5), ...), then small depth, then lexicographic
    order.
    """
    return (sum(1 for n in indices if n % 2 == 0 or n == 1), len(indices), indices)


@dataclass
class WeightTable:
    """The reduction of every convergent MZV of one weight.

    Attributes
    ----------
    weight:
        N.
    generators:
        New generators of this weight (index lists), most preferred first.
    reductions:
        ``{index list: {monomial: Fraction}}`` for every convergent index
        list of weight N, or None when a build streamed them straight to the
        table file (:func:`lowenergy.zeta.motivic.reduce_weight_motivic`).
    dimension:
        Dimension of the weight-N space found (``#words - rank``).
    """

    weight: int
    generators: List[Indices]
    reductions: Optional[Dict[Indices, Dict[Monomial, Fraction]]]
    dimension: int
    stats: Dict[str, float] = field(default_factory=dict)


def monomials_of_weight(generators: Sequence[Indices], weight: int) -> List[Monomial]:
    """All monomials of exact weight in the given generators (sorted)."""
    gens = sorted(set(generators), key=lambda g: (sum(g), g))
    out: List[Monomial] = []

    def rec(start: int, remaining: int, prefix: list) -> None:
        if remaining == 0:
            out.append(tuple(prefix))
            return
        for i in range(start, len(gens)):
            w = sum(gens[i])
            if w <= remaining:
                prefix.append(gens[i])
                rec(i, remaining - w, prefix)
                prefix.pop()

    rec(0, weight, [])
    return out


def expand_monomial(mono: Monomial) -> Dict[Indices, int]:
    """A product of generators as a combination of index lists (stuffle)."""
    result: Dict[Indices, int] = {(): 1}
    for g in mono:
        nxt: Dict[Indices, int] = {}
        for a, ca in result.items():
            for b, cb in stuffle(a, g).items():
                nxt[b] = nxt.get(b, 0) + ca * cb
        result = {k: v for k, v in nxt.items() if v}
    return result


def _shuffle_indices(u: Indices, v: Indices) -> Dict[Indices, int]:
    """``ζ(u) ζ(v)`` by the shuffle product, as index lists with signs."""
    ku, kv = len(u), len(v)
    out: Dict[Indices, int] = {}
    for w, c in shuffle(indices_to_word(u), indices_to_word(v)).items():
        idx = word_to_indices(w)
        sign = -1 if (ku + kv + len(idx)) % 2 else 1
        out[idx] = out.get(idx, 0) + sign * c
    return out


def _relations(weight: int) -> List[Dict[Indices, int]]:
    """Double shuffle and Hoffman relations among convergent lists of a weight."""
    rows: List[Dict[Indices, int]] = []
    for wu in range(2, weight - 1):
        wv = weight - wu
        if wv < wu:
            break
        for u in admissible_indices(wu):
            for v in admissible_indices(wv):
                if wu == wv and v < u:
                    continue
                row = _shuffle_indices(u, v)
                for w, c in stuffle(u, v).items():
                    row[w] = row.get(w, 0) - c
                row = {k: c for k, c in row.items() if c}
                if row:
                    rows.append(row)
    for v in admissible_indices(weight - 1):
        row = _shuffle_indices((1,), v)
        for w, c in stuffle((1,), v).items():
            row[w] = row.get(w, 0) - c
        row = {k: c for k, c in row.items() if c}
        for k in row:
            if k[0] == 1:  # pragma: no cover - would be a bug in the products
                raise AssertionError(f"divergent term {k} survived in Hoffman relation for {v}")
        if row:
            rows.append(row)
    return rows


def reduce_weight(
    weight: int,
    lower_generators: Sequence[Indices],
    progress: Callable[[str], None] | None = None,
) -> WeightTable:
    """Reduce every convergent MZV of ``weight`` to the monomial basis.

    Parameters
    ----------
    weight:
        N ≥ 2.
    lower_generators:
        Generators of all weights < N (from earlier calls), which define the
        product monomials of weight N.
    progress:
        Optional callback receiving short status strings.

    Returns
    -------
    WeightTable
    """
    import time

    import flint

    say = progress or (lambda _msg: None)
    t0 = time.perf_counter()
    words = admissible_indices(weight)

    # duality classes: representative = most preferred member
    rep: Dict[Indices, Indices] = {}
    for w in words:
        if w in rep:
            continue
        d = dual_indices(w)
        r = min((w, d), key=generator_preference)
        rep[w] = r
        rep[d] = r
    classes = sorted(set(rep.values()), key=generator_preference)  # most preferred first
    products = monomials_of_weight(lower_generators, weight)

    # column order: [non-candidates..., candidates least->most preferred, products]
    # Every class is a candidate, ordered by preference; so the list is simply
    # the classes from least to most preferred, then the products.
    col_of: Dict[object, int] = {}
    for c in reversed(classes):
        col_of[("w", c)] = len(col_of)
    for p in products:
        col_of[("p", p)] = len(col_of)
    ncols = len(col_of)

    say(f"weight {weight}: generating relations")
    sparse_rows: List[Dict[int, int]] = []

    def add_row(row_in: Dict[Indices, int], extra: Dict[int, int] | None = None) -> None:
        row: Dict[int, int] = {}
        for k, c in row_in.items():
            j = col_of[("w", rep[k])]
            row[j] = row.get(j, 0) + c
        if extra:
            for j, c in extra.items():
                row[j] = row.get(j, 0) + c
        row = {j: c for j, c in row.items() if c}
        if row:
            sparse_rows.append(row)

    for rel in _relations(weight):
        add_row(rel)
    for p in products:
        add_row(expand_monomial(p), {col_of[("p", p)]: -1})
    t1 = time.perf_counter()
    say(f"weight {weight}: {len(sparse_rows)} relations on {ncols} unknowns; eliminating")

    nrows = len(sparse_rows)

    def rref_mod(prime: int):
        flat = [0] * (nrows * ncols)
        for i, row in enumerate(sparse_rows):
            base = i * ncols
            for j, c in row.items():
                flat[base + j] = c % prime
        mat = flint.nmod_mat(nrows, ncols, flat, prime)
        red, rank = mat.rref()
        return red, rank

    results = []
    pivots_ref = None
    free_ref = None
    rank_ref = None
    for prime in PRIMES:
        red, rank = rref_mod(prime)
        # pivot columns
        pivots = []
        i = 0
        for j in range(ncols):
            if i < rank and int(red[i, j]) != 0:
                pivots.append(j)
                i += 1
        if pivots_ref is None:
            pivots_ref, rank_ref = pivots, rank
            free_ref = [j for j in range(ncols) if j not in set(pivots)]
        elif pivots != pivots_ref:  # pragma: no cover - unlucky prime
            continue
        results.append((prime, red))
        if len(results) >= 2:
            recon = _reconstruct(results, pivots_ref, free_ref, rank_ref)
            if recon is not None:
                # verify with the next prime
                check_prime = PRIMES[PRIMES.index(prime) + 1]
                red_c, rank_c = rref_mod(check_prime)
                if rank_c == rank_ref and _verify(recon, red_c, check_prime, pivots_ref, free_ref):
                    break
                results.append((check_prime, red_c))
    else:  # pragma: no cover
        raise InternalError(f"rational reconstruction failed at weight {weight}; need more primes")
    t2 = time.perf_counter()

    col_names = [None] * ncols
    for key, j in col_of.items():
        col_names[j] = key
    free_set = set(free_ref)
    for key in col_names:
        if key[0] == "p" and col_of[key] not in free_set:
            raise InternalError(
                f"products of lower-weight generators are dependent at weight {weight}: "
                "the lower-weight tables are inconsistent"
            )
    new_gens = [col_names[j][1] for j in free_ref if col_names[j][0] == "w"]
    new_gens.sort(key=generator_preference)

    # basis element of each free column as a monomial
    def free_monomial(j: int) -> Monomial:
        kind, obj = col_names[j]
        return obj if kind == "p" else (obj,)

    class_red: Dict[Indices, Dict[Monomial, Fraction]] = {}
    for j in free_ref:
        if col_names[j][0] == "w":
            class_red[col_names[j][1]] = {free_monomial(j): Fraction(1)}
    for i, j in enumerate(pivots_ref):
        kind, obj = col_names[j]
        if kind != "w":
            continue
        red_row = recon[i]
        class_red[obj] = {free_monomial(k): -c for k, c in red_row.items() if c}
    reductions = {w: class_red[rep[w]] for w in words}
    dimension = len(classes) + len(products) - rank_ref
    t3 = time.perf_counter()
    return WeightTable(
        weight=weight,
        generators=new_gens,
        reductions=reductions,
        dimension=dimension,
        stats={
            "relations_s": t1 - t0,
            "elimination_s": t2 - t1,
            "assemble_s": t3 - t2,
            "rows": nrows,
            "columns": ncols,
            "primes": len(results) + 1,
        },
    )


def _reconstruct(results, pivots, free, rank):
    """CRT + rational reconstruction of the RREF entries at free columns."""
    primes = [prime for prime, _ in results]
    modulus = 1
    for prime in primes:
        modulus *= prime
    out = []
    for i in range(rank):
        row: Dict[int, Fraction] = {}
        for j in free:
            if j < pivots[i]:
                continue
            q = crt_rational([red[i, j] for _, red in results], primes, modulus)
            if q is None:
                return None
            if q:
                row[j] = q
        out.append(row)
    return out


def _verify(recon, red, prime, pivots, free) -> bool:
    for i in range(len(pivots)):
        row = recon[i]
        for j in free:
            if j < pivots[i]:
                continue
            if int(red[i, j]) != to_mod(row.get(j, Fraction(0)), prime):
                return False
    return True
