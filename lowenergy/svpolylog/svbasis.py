"""The single-valued subspace of the MZVs and a basis of generators for it.

Single-valued MZVs are the image of Brown's map :func:`~.svmap.sv` (F. Brown,
"Single-valued motivic periods and multiple zeta values", Forum Math. Sigma 2
(2014)).  Since ``sv`` is a ring homomorphism with ``sv ζ(2) = 0``, the image
at weight ``w`` is spanned by products of the images ``sv(g)`` of the
conventional generators ``g`` (:mod:`lowenergy.zeta`).  We choose generators
of the image weight by weight:

* the odd single zetas ``ζ(3), ζ(5), …`` themselves (``sv ζ(2k+1) = 2ζ(2k+1)``),
* then, in the preference order of the conventional generators, the images
  ``sv(ζ(n1,…,nk))`` of depth ≥ 2 generators that are linearly independent of
  the products of lower-weight generators and of the ones already chosen.

The first such generator is ``sv(zeta(3,3,5))`` at weight 11 (below weight
11 every single-valued MZV is a polynomial in odd single zetas; e.g.
``sv ζ(3,5) = 14 ζ(3)ζ(5)`` in our index order).  A weight's basis is a
maximal independent set of products of generators, products of lower-weight
generators first.  Linear (in)dependence is decided exactly in the
f-alphabet (:meth:`lowenergy.zeta.element.MZV.f_alphabet`), where the map
from MZVs is an isomorphism onto each weight when the tables are complete.

:func:`sv_decompose` writes an MZV in this basis and refuses, with a clear
message, an element that is not single-valued (for instance anything with a
power of ``ζ(2)`` in its f-alphabet image).

Examples
--------
>>> from lowenergy.zeta.element import zeta
>>> print(sv_text(zeta(3) ** 2 * 4 + zeta(5)))
zeta(5) + 4*zeta(3)^2
>>> print(sv_text(zeta(2) * zeta(3)))       # sv ζ(2) = 0: not single-valued
Traceback (most recent call last):
...
lowenergy.errors.InputError: zeta(2)*zeta(3) is not a single-valued MZV (weight 5 has a part outside the image of sv); hint: single-valued MZVs are the image of sv: sums of products of odd zetas and sv(...) of depth >= 2 generators
"""

from __future__ import annotations

from dataclasses import dataclass
from fractions import Fraction
from typing import Dict, List, Mapping, Tuple

from ..errors import InputError
from ..poly import add as poly_add
from ..zeta.element import MZV, zeta
from ..zeta.falphabet import FKey
from ..zeta.format import join_terms, term_text
from ..zeta.table import TableStore, default_store

__all__ = ["SVGenerator", "sv_generators", "sv_basis", "sv_decompose", "sv_text", "is_single_valued"]

SVMonomial = Tuple[int, ...]  # positions in the generator list, non-decreasing


@dataclass(frozen=True)
class SVGenerator:
    """One generator of the single-valued MZVs.

    ``indices`` are those of the conventional generator ``ζ(indices)``;
    ``value`` is the generator as a canonical MZV (``ζ(2k+1)`` for the odd
    single zetas, ``sv(ζ(indices))`` otherwise).
    """

    name: str
    indices: Tuple[int, ...]
    weight: int
    value: MZV


class _Echelon:
    """Incremental exact row echelon form over Q of sparse vectors, tracking
    every pivot row as a combination of the inserted vectors.

    Each new row is reduced against the earlier ones before it is kept, so it
    vanishes at their pivots; reducing a vector against the rows in insertion
    order therefore clears every pivot (no back-substitution needed)."""

    def __init__(self) -> None:
        self.rows: List[Tuple[FKey, Dict[FKey, Fraction], Dict[int, Fraction]]] = []

    def reduce(self, vec: Mapping[FKey, Fraction]):
        v = {k: Fraction(c) for k, c in vec.items() if c}
        combo: Dict[int, Fraction] = {}
        for pivot, row, rcombo in self.rows:
            c = v.get(pivot)
            if c:
                v = poly_add(v, row, -c)
                combo = poly_add(combo, rcombo, c)
        return v, combo

    def insert(self, vec: Mapping[FKey, Fraction], label: int) -> bool:
        """Add ``vec`` (known as basis element ``label``); False if dependent."""
        v, combo = self.reduce(vec)
        if not v:
            return False
        pivot = min(v)
        c = v[pivot]
        row = {k: a / c for k, a in v.items()}
        rcombo = poly_add({label: 1 / c}, combo, -1 / c)
        self.rows.append((pivot, row, rcombo))
        return True

    def solve(self, vec: Mapping[FKey, Fraction]):
        """Coefficients ``{label: c}`` with ``Σ c·inserted[label] = vec``, or None."""
        v, combo = self.reduce(vec)
        return None if v else combo


class _SVData:
    def __init__(self) -> None:
        self.generators: List[SVGenerator] = []
        self.bases: Dict[int, Tuple[List[SVMonomial], List[MZV], _Echelon]] = {0: ([()], [MZV.one()], _Echelon())}
        self.bases[0][2].insert({(0, ()): Fraction(1)}, 0)


_CACHE: Dict[str, _SVData] = {}


def _products(gens: List[SVGenerator], weight: int, below: int) -> List[SVMonomial]:
    """Monomials of total ``weight`` in generators of weight < ``below`` (at least two factors)."""
    out: List[SVMonomial] = []

    def rec(start: int, remaining: int, prefix: List[int]) -> None:
        if remaining == 0:
            if len(prefix) >= 2:
                out.append(tuple(prefix))
            return
        for i in range(start, len(gens)):
            g = gens[i]
            if g.weight < below and g.weight <= remaining:
                prefix.append(i)
                rec(i, remaining - g.weight, prefix)
                prefix.pop()

    rec(0, weight, [])
    return out


def _monomial_value(mono: SVMonomial, gens: List[SVGenerator]) -> MZV:
    value = MZV.one()
    for i in mono:
        value = value * gens[i].value
    return value


def _data(max_weight: int, store: TableStore) -> _SVData:
    from .svmap import sv

    key = str(store.directory)
    data = _CACHE.setdefault(key, _SVData())
    for w in range(1, max_weight + 1):
        if w in data.bases:
            continue
        ech = _Echelon()
        monos: List[SVMonomial] = []
        values: List[MZV] = []

        def offer(mono: SVMonomial, value: MZV) -> bool:
            if ech.insert(value.f_alphabet(store), len(monos)):
                monos.append(mono)
                values.append(value)
                return True
            return False

        for mono in _products(data.generators, w, w):
            offer(mono, _monomial_value(mono, data.generators))
        candidates: List[Tuple[str, Tuple[int, ...], MZV]] = []
        if w % 2 == 1 and w >= 3:
            candidates.append((f"zeta({w})", (w,), zeta(w, store=store)))
        for g in store.generators(w) if w >= 2 else []:
            if len(g) >= 2:
                candidates.append((f"sv(zeta({','.join(map(str, g))}))", tuple(g), sv(zeta(*g, store=store), store)))
        for name, indices, value in candidates:
            if not value:
                continue
            gen = SVGenerator(name, indices, w, value)
            if offer((len(data.generators),), value):
                data.generators.append(gen)
        data.bases[w] = (monos, values, ech)
    return data


def sv_generators(max_weight: int, store: TableStore | None = None) -> List[SVGenerator]:
    """The generators of the single-valued MZVs up to ``max_weight``.

    >>> [g.name for g in sv_generators(11)]
    ['zeta(3)', 'zeta(5)', 'zeta(7)', 'zeta(9)', 'zeta(11)', 'sv(zeta(3,3,5))']
    """
    store = store or default_store()
    return [g for g in _data(max_weight, store).generators if g.weight <= max_weight]


def sv_basis(weight: int, store: TableStore | None = None) -> List[Tuple[SVMonomial, MZV]]:
    """A basis of the single-valued MZVs of one weight: (monomial, value) pairs.

    A monomial is a tuple of positions in :func:`sv_generators`.

    >>> len(sv_basis(11)), len(sv_basis(8))
    (3, 1)
    """
    store = store or default_store()
    monos, values, _ = _data(weight, store).bases[weight]
    return list(zip(monos, values))


def _fkey_weight(key: FKey) -> int:
    return 2 * key[0] + sum(key[1])


def sv_decompose(x: MZV, store: TableStore | None = None) -> Dict[SVMonomial, Fraction]:
    """``x`` as ``{monomial: coefficient}`` in the single-valued basis.

    Raises :class:`~lowenergy.errors.InputError` when ``x`` is not
    single-valued.

    >>> from lowenergy.zeta.element import zeta
    >>> from lowenergy.svpolylog.svmap import sv
    >>> sv_decompose(sv(zeta(5, 3)))                  # -10 ζ(3)ζ(5)
    {(0, 1): Fraction(-10, 1)}
    """
    store = store or default_store()
    by_weight: Dict[int, Dict[FKey, Fraction]] = {}
    for k, c in x.f_alphabet(store).items():
        if c:
            by_weight.setdefault(_fkey_weight(k), {})[k] = Fraction(c)
    data = _data(max(by_weight, default=0), store)
    out: Dict[SVMonomial, Fraction] = {}
    for w in sorted(by_weight):
        monos, _, ech = data.bases[w]
        combo = ech.solve(by_weight[w])
        if combo is None:
            raise InputError(
                f"{x} is not a single-valued MZV (weight {w} has a part outside the image of sv)",
                hint="single-valued MZVs are the image of sv: sums of products of odd zetas "
                "and sv(...) of depth >= 2 generators",
            )
        for i, c in combo.items():
            if c:
                out[monos[i]] = out.get(monos[i], Fraction(0)) + c
    return out


def is_single_valued(x: MZV, store: TableStore | None = None) -> bool:
    """Whether ``x`` lies in the image of ``sv``.

    >>> from lowenergy.zeta.element import zeta
    >>> is_single_valued(zeta(3) * zeta(5)), is_single_valued(zeta(2) * zeta(3))
    (True, False)
    """
    try:
        sv_decompose(x, store)
    except InputError:
        return False
    return True


def _monomial_text(mono: SVMonomial, gens: List[SVGenerator]) -> str:
    parts = []
    i = 0
    while i < len(mono):
        j = i
        while j < len(mono) and mono[j] == mono[i]:
            j += 1
        name = gens[mono[i]].name
        parts.append(name if j - i == 1 else f"{name}^{j - i}")
        i = j
    return "*".join(parts)


def sv_text(x: MZV, store: TableStore | None = None) -> str:
    """``x`` written in the single-valued generators (plain text)."""
    store = store or default_store()
    dec = sv_decompose(x, store)
    gens = _CACHE[str(store.directory)].generators
    items = sorted(dec.items(), key=lambda kv: (sum(gens[i].weight for i in kv[0]), kv[0]))
    return join_terms([term_text(c, _monomial_text(m, gens)) for m, c in items])
