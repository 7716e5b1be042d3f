"""Brown's single-valued polylogarithms ``L_w(z)`` in one variable, exactly.

References: F. Brown, "Single-valued multiple polylogarithms in one
variable", C. R. Acad. Sci. Paris, Ser. I 338 (2004) 527-532; O. Schnetz,
"Graphical functions and single-valued multiple polylogarithms", Commun.
Number Theory Phys. 8 (2014) 589-675.  The derivation below is ours, in the
package's conventions; the tests check every consequence numerically.

Conventions
-----------
Words ``w = a1 ... an`` over {0, 1}; ``G(a1, ..., an; z) = ∫_0^z dt/(t - a1)
G(a2, ..., an; t)``, ``G(0^n; z) = log(z)^n / n!`` (tangential base point 1
at 0), as in :mod:`lowenergy.words`.  Non-commuting letters ``x0, x1``,
``x_w = x_{a1} ... x_{an}``.

* Generating series ``L(z) = Σ_w G(w; z) x_w``.  Then
  ``∂_z L = (x0/z + x1/(z - 1)) L`` and ``L(z) ~ exp(x0 log z)`` at 0.
  (A generating series normalized with ``x1/(1 - z)`` instead, as in Brown
  (2004), gives functions that differ from ours by the sign
  ``(-1)^(number of letters 1)``.)
* Drinfeld associator ``Z = Σ_w G_reg(w; 1) x_w`` with the shuffle
  regularization of :func:`lowenergy.words.regularize_word`
  (``G(0; 1) = G(1; 1) = 0``): ``L(z) = L^(1)(z) Z`` with ``L^(1)`` the
  solution normalized as ``exp(x1 log(1 - z))`` at 1.
* Monodromies (continuation of ``z`` once counter-clockwise, ``L -> L M``):
  around 0, ``M0 = exp(2πi x0)``; around 1, ``M1 = Z^-1 exp(2πi x1) Z``.
* ``~`` is the anti-automorphism of ``Q<<x0, x1>>`` reversing every word.
  ``σ`` is the substitution homomorphism ``x0 -> y0 = x0``, ``x1 -> y1``
  for a series ``y1 = x1 + ...`` to be found; ``Y_v = σ(x_v) = y_{v1} ... y_{vk}``,
  ``Z_y = σ(Z)``.

The single-valued series is

    L_sv(z) = L(z) · ~σ(L(z̄)) = Σ_{u, v} G(u; z) G(v; z̄) x_u ~Y_v  =: Σ_w L_w(z) x_w .

When ``z`` runs once counter-clockwise around 1, ``z̄`` runs once clockwise
around 1, so ``L(z) -> L(z) Z^-1 exp(2πi x1) Z`` and, σ being a homomorphism
and ``~`` an anti-homomorphism,
``~σ(L(z̄)) -> ~Z_y exp(-2πi ~y1) ~Z_y^-1 · ~σ(L(z̄))``.  Hence ``L_sv`` is
invariant iff ``Z^-1 exp(2πi x1) Z = ~Z_y exp(2πi ~y1) ~Z_y^-1``, i.e. (taking
logarithms, unique for series ``x1 + (degree ≥ 2)``)
``Z^-1 x1 Z = ~Z_y ~y1 ~Z_y^-1``.  Applying ``~`` gives the fixed-point
equation we solve,

    y1 = Z_y · (~Z x1 ~Z^-1) · Z_y^-1,        Z_y = Z(x0, y1),

degree by degree from ``y1 = x1`` (the first correction has degree 4 and is
a multiple of ``ζ(3)``; the degree-d part of the right side needs ``y1`` only
below degree d - 1, so the iteration settles).  Around 0, ``y0 = x0`` makes
``exp(2πi x0)`` and ``exp(-2πi x0)`` cancel.  By Brown's uniqueness argument
(2004) these conditions together with ``∂_z L_sv = (x0/z + x1/(z-1)) L_sv``
and ``L_sv ~ exp(x0 log|z|^2)`` at 0 fix ``L_sv``.

Consequences (all tested):

* ``∂_z L_{a w}(z) = L_w(z) / (z - a)`` (only ``L(z)`` depends on ``z``);
* ``L_{0^n}(z) = log^n|z|^2 / n!``, ``L_1(z) = log|1 - z|^2``;
* ``L_01 - L_10 = -4i D(z)`` with the Bloch-Wigner dilogarithm
  ``D(z) = Im Li2(z) + arg(1 - z) log|z|``;
* the regularized value at 1 is ``Z · ~Z_y``; its coefficients are Brown's
  single-valued MZVs ``sv G(w; 1)`` (see :mod:`.svmap`).

Data layout
-----------
Write ``~σ(L(z̄)) = Σ_s A_s(z̄) x_s`` with ``A_s(z̄) = Σ_v a_{s,v} G(v; z̄)``,
``a_{s,v}`` the coefficient of ``x_s`` in ``~Y_v`` (an MZV of weight
``|s| - |v|``).  Then

    L_w(z) = Σ_{j=0}^{|w|} G(w_1 ... w_j; z) · A_{w_(j+1) ... w_n}(z̄).

A :class:`SVTable` holds the ``A_s`` for all words ``s`` up to a weight.
Tables are built once per process and store (and optionally cached as JSON
next to the MZV tables, ``<cache>/mzv-v1/svpolylog-weight-N.json``).

Examples
--------
>>> L = sv_polylog((0, 1))
>>> sorted((u, v, str(c)) for (u, v), c in L.items())
[((), (1, 0), '1'), ((0,), (1,), '1'), ((0, 1), (), '1')]
>>> # On 0 < x < 1 the antisymmetric weight-2 combination vanishes (D(x) = 0):
>>> real_line_restriction((0, 1)) == real_line_restriction((1, 0))
True
"""

from __future__ import annotations

import json
import os
import tempfile
import time
from fractions import Fraction
from typing import Dict, Iterable, Mapping, Tuple

from ..errors import InputError, InternalError
from ..words import all_words, regularize_word, shuffle, word_to_indices
from ..zeta.element import MZV
from ..zeta.table import TableStore, default_store

__all__ = [
    "Word",
    "SVTable",
    "build_sv_table",
    "sv_table",
    "drinfeld_associator",
    "y1_series",
    "sv_polylog",
    "real_line_restriction",
    "sv_value_at_one",
    "SV_FORMAT_VERSION",
]

Word = Tuple[int, ...]
# A series in x0, x1: {x-word: coefficient}; coefficients are MZV.
Series = Dict[Word, MZV]

SV_FORMAT_VERSION = 1


# --------------------------------------------------------------------------
# exact coefficient arithmetic
#
# Coefficients are kept as plain dicts {monomial: Fraction} (the internal form
# of MZV) while series are multiplied: the MZV class re-canonicalizes on
# every operation, which dominates the run time otherwise.
# --------------------------------------------------------------------------

Coef = Dict[tuple, Fraction]


def _gen_key(g):
    return (sum(g), g)


def _cmul(a: Coef, b: Coef) -> Coef:
    out: Coef = {}
    for ka, va in a.items():
        for kb, vb in b.items():
            if not ka:
                k = kb
            elif not kb:
                k = ka
            else:
                k = tuple(sorted(ka + kb, key=_gen_key))
            out[k] = out.get(k, 0) + va * vb
    return out


def _cadd_into(target: Coef, src: Coef, factor=1) -> None:
    for k, v in src.items():
        target[k] = target.get(k, 0) + factor * v


def _clean(c: Coef) -> Coef:
    return {k: v for k, v in c.items() if v}


_ONE: Coef = {(): Fraction(1)}

RawSeries = Dict[Word, Coef]


def _smul(a: RawSeries, b: RawSeries, n: int) -> RawSeries:
    """Product of two series truncated above degree n."""
    out: RawSeries = {}
    for wa, ca in a.items():
        la = len(wa)
        for wb, cb in b.items():
            if la + len(wb) > n:
                continue
            w = wa + wb
            acc = out.get(w)
            if acc is None:
                acc = out[w] = {}
            _cadd_into(acc, _cmul(ca, cb))
    return {w: c for w, c in ((w, _clean(c)) for w, c in out.items()) if c}


def _reverse(a: RawSeries) -> RawSeries:
    return {tuple(reversed(w)): c for w, c in a.items()}


# --------------------------------------------------------------------------
# the associator and y1
# --------------------------------------------------------------------------

def _g_value_raw(word: Word, store: TableStore) -> Coef:
    out: Coef = {}
    for w, c in regularize_word(word).items():
        idx = word_to_indices(w)
        sign = -1 if len(idx) % 2 else 1
        for mono, d in store.reduction(idx).items():
            out[mono] = out.get(mono, 0) + sign * c * d
    return _clean(out)


def _associator_raw(n: int, store: TableStore) -> RawSeries:
    z: RawSeries = {(): dict(_ONE)}
    for k in range(1, n + 1):
        for w in all_words(k):
            c = _g_value_raw(w, store)
            if c:
                z[w] = c
    return z


def _inverse_grouplike(z: RawSeries) -> RawSeries:
    """Inverse of a group-like series by the antipode ``x_w -> (-1)^|w| x_rev(w)``."""
    return {tuple(reversed(w)): ({k: -v for k, v in c.items()} if len(w) % 2 else c) for w, c in z.items()}


def _products(y1: RawSeries, n: int) -> Dict[Word, RawSeries]:
    """``Y_v = y_{v1} ... y_{vk}`` for all words v with ``|v| ≤ n`` (y0 = x0)."""
    prods: Dict[Word, RawSeries] = {(): {(): dict(_ONE)}}
    for k in range(1, n + 1):
        for v in all_words(k):
            rest = prods[v[1:]]
            if v[0] == 0:
                prods[v] = {(0,) + w: c for w, c in rest.items() if len(w) < n}
            else:
                prods[v] = _smul(y1, rest, n)
    return prods


def _substitute(z: RawSeries, prods: Dict[Word, RawSeries], n: int) -> RawSeries:
    out: RawSeries = {}
    for v, c in z.items():
        for w, d in prods[v].items():
            acc = out.get(w)
            if acc is None:
                acc = out[w] = {}
            _cadd_into(acc, _cmul(c, d))
    return {w: c for w, c in ((w, _clean(c)) for w, c in out.items()) if c}


def _solve_y1(z: RawSeries, n: int) -> Tuple[RawSeries, Dict[Word, RawSeries]]:
    """Solve ``y1 = Z_y (~Z x1 ~Z^-1) Z_y^-1`` up to degree n; return y1 and the Y_v."""
    zt = _reverse(z)
    zt_inv = _inverse_grouplike(zt)
    x1: RawSeries = {(1,): dict(_ONE)}
    target = _smul(_smul(zt, x1, n), zt_inv, n)  # ~Z x1 ~Z^-1
    z_inv = _inverse_grouplike(z)
    y1: RawSeries = {(1,): dict(_ONE)}
    for _ in range(n + 1):
        prods = _products(y1, n)
        zy = _substitute(z, prods, n)
        zy_inv = _substitute(z_inv, prods, n)
        new = _smul(_smul(zy, target, n), zy_inv, n)
        if new == y1:
            return y1, prods
        y1 = new
    raise InternalError(f"the fixed-point iteration for y1 did not settle at degree {n}")  # pragma: no cover


# --------------------------------------------------------------------------
# the table
# --------------------------------------------------------------------------

class SVTable:
    """The antiholomorphic parts ``A_s`` of ``L_sv`` up to a weight.

    ``parts[s]`` is ``{v: MZV}`` with ``A_s(z̄) = Σ_v parts[s][v] G(v; z̄)``.
    """

    def __init__(self, max_weight: int, parts: Mapping[Word, Mapping[Word, MZV]],
                 y1: Mapping[Word, MZV], build_seconds: float = 0.0) -> None:
        self.max_weight = max_weight
        self.parts: Dict[Word, Dict[Word, MZV]] = {s: dict(p) for s, p in parts.items()}
        self.y1: Dict[Word, MZV] = dict(y1)
        self.build_seconds = build_seconds

    def terms(self, word: Word) -> Dict[Tuple[Word, Word], MZV]:
        """``L_w = Σ c G(u; z) G(v; z̄)`` as ``{(u, v): c}``."""
        word = _check_word(word, self.max_weight)
        out: Dict[Tuple[Word, Word], MZV] = {}
        for j in range(len(word) + 1):
            u = word[:j]
            for v, c in self.parts.get(word[j:], {}).items():
                out[(u, v)] = c
        return out

    def real_line(self, word: Word) -> Dict[Word, MZV]:
        """``L_w(x)`` for real ``0 < x < 1`` as ``{G-word: MZV}`` (shuffled out)."""
        acc: Dict[Word, Dict[tuple, Fraction]] = {}
        for (u, v), c in self.terms(word).items():
            raw = c.as_dict()
            for w, m in shuffle(u, v).items():
                _cadd_into(acc.setdefault(w, {}), raw, m)
        return {w: MZV(c) for w, c in acc.items() if _clean(c)}


def _check_word(word: Iterable[int], max_weight: int | None = None) -> Word:
    try:
        word = tuple(word)
    except TypeError:
        raise InputError(f"a word is a sequence of letters 0 and 1, got {word!r}") from None
    if any(a not in (0, 1) or isinstance(a, bool) for a in word):
        raise InputError(f"letters of words are 0 and 1, got {word!r}")
    if max_weight is not None and len(word) > max_weight:
        raise InputError(f"word {word} has weight {len(word)} above the table's {max_weight}")
    return word


def build_sv_table(max_weight: int, store: TableStore | None = None) -> SVTable:
    """Build the table of ``L_w`` for all words up to ``max_weight`` (no caching).

    Needs MZV tables up to ``max_weight``.
    """
    if isinstance(max_weight, bool) or not isinstance(max_weight, int) or max_weight < 0:
        raise InputError(f"max_weight must be a non-negative integer, got {max_weight!r}")
    store = store or default_store()
    t0 = time.perf_counter()
    n = max_weight
    z = _associator_raw(n, store)
    y1, prods = _solve_y1(z, n)
    # ~Y_v: reverse every x-word of Y_v; A_s collects the coefficient of x_s.
    parts: Dict[Word, Dict[Word, MZV]] = {}
    for v, series in prods.items():
        for w, c in series.items():
            parts.setdefault(tuple(reversed(w)), {})[v] = MZV(c)
    table = SVTable(n, parts, {w: MZV(c) for w, c in y1.items()}, time.perf_counter() - t0)
    return table


# --------------------------------------------------------------------------
# caching: process memory, and JSON next to the MZV tables
# --------------------------------------------------------------------------

_TABLES: Dict[str, SVTable] = {}


def _json_path(store: TableStore, max_weight: int):
    return store.directory / f"svpolylog-weight-{max_weight}.json"


def _mzv_to_json(x: MZV) -> list:
    return [[[",".join(map(str, g)) for g in mono], str(c)] for mono, c in x.terms()]


def _mzv_from_json(data: list) -> MZV:
    return MZV({tuple(tuple(int(n) for n in g.split(",")) for g in mono): Fraction(c) for mono, c in data})


def _word_str(w: Word) -> str:
    return "".join(map(str, w))


def _word_parse(s: str) -> Word:
    return tuple(int(a) for a in s)


def _save_json(table: SVTable, store: TableStore) -> None:
    if not store.directory.is_dir():
        return
    data = {
        "format": SV_FORMAT_VERSION,
        "max_weight": table.max_weight,
        "build_seconds": table.build_seconds,
        # the exact coefficients are written in the generators of these tables
        "generators": [",".join(map(str, g)) for g in store.all_generators(table.max_weight)],
        "y1": {_word_str(w): _mzv_to_json(c) for w, c in table.y1.items()},
        "parts": {
            _word_str(s): {_word_str(v): _mzv_to_json(c) for v, c in p.items()} for s, p in table.parts.items()
        },
    }
    try:
        fd, tmp = tempfile.mkstemp(dir=store.directory, suffix=".tmp")
        with os.fdopen(fd, "w") as fh:
            json.dump(data, fh, separators=(",", ":"))
        os.replace(tmp, _json_path(store, table.max_weight))
    except OSError:
        pass  # the cache is optional


def _load_json(store: TableStore, max_weight: int) -> SVTable | None:
    path = _json_path(store, max_weight)
    if not path.exists():
        return None
    try:
        data = json.loads(path.read_text())
        if data.get("format") != SV_FORMAT_VERSION or data.get("max_weight") != max_weight:
            return None
        gens = [",".join(map(str, g)) for g in store.all_generators(max_weight)]
        if data.get("generators") != gens:
            return None
        parts = {
            _word_parse(s): {_word_parse(v): _mzv_from_json(c) for v, c in p.items()}
            for s, p in data["parts"].items()
        }
        y1 = {_word_parse(w): _mzv_from_json(c) for w, c in data["y1"].items()}
        return SVTable(max_weight, parts, y1, data.get("build_seconds", 0.0))
    except (OSError, ValueError, KeyError, TypeError):
        return None


def sv_table(max_weight: int, store: TableStore | None = None, *, use_disk: bool = True) -> SVTable:
    """The table of ``L_w`` up to ``max_weight``, built once per process and store.

    A table of a higher weight serves lower weights too.  With ``use_disk``
    the table is also read from / written to
    ``<store directory>/svpolylog-weight-N.json``.
    """
    store = store or default_store()
    if isinstance(max_weight, bool) or not isinstance(max_weight, int) or max_weight < 0:
        raise InputError(f"max_weight must be a non-negative integer, got {max_weight!r}")
    key = str(store.directory)
    hit = _TABLES.get(key)
    if hit is not None and hit.max_weight >= max_weight:
        return hit
    table = _load_json(store, max_weight) if use_disk else None
    if table is None:
        table = build_sv_table(max_weight, store)
        if use_disk:
            _save_json(table, store)
    _TABLES[key] = table
    return table


def _default_weight(word: Word) -> int:
    # build at least weight 6 at once: the cost is small and saves rebuilds
    return max(len(word), 6)


# --------------------------------------------------------------------------
# public helpers
# --------------------------------------------------------------------------

def drinfeld_associator(max_weight: int, store: TableStore | None = None) -> Dict[Word, MZV]:
    """``Z = Σ_w G_reg(w; 1) x_w`` up to ``max_weight`` (zero coefficients omitted)."""
    store = store or default_store()
    return {w: MZV(c) for w, c in _associator_raw(max_weight, store).items()}


def y1_series(max_weight: int, store: TableStore | None = None) -> Dict[Word, MZV]:
    """The solution ``y1 = x1 + ...`` of the fixed-point equation, up to ``max_weight``."""
    table = sv_table(max_weight, store)
    return {w: c for w, c in table.y1.items() if len(w) <= max_weight}


def sv_polylog(word: Iterable[int], store: TableStore | None = None) -> Dict[Tuple[Word, Word], MZV]:
    """``L_w(z) = Σ_{(u, v)} c_{u,v} G(u; z) G(v; z̄)`` as ``{(u, v): c}``.

    >>> sv_polylog((1,)) == {((1,), ()): 1, ((), (1,)): 1}     # log|1-z|^2
    True
    """
    word = _check_word(word)
    return sv_table(_default_weight(word), store).terms(word)


def real_line_restriction(word: Iterable[int], store: TableStore | None = None) -> Dict[Word, MZV]:
    """``L_w(x)`` on ``0 < x < 1`` (``z = z̄ = x``) as ``{G-word: MZV}``.

    The products ``G(u; x) G(v; x)`` are shuffled into single words, so
    ``L_w(x) = Σ c_word G(word; x)``.

    >>> r = real_line_restriction((0,))                  # log x^2 = 2 G(0; x)
    >>> r == {(0,): 2}
    True
    """
    word = _check_word(word)
    return sv_table(_default_weight(word), store).real_line(word)


def sv_value_at_one(word: Iterable[int], store: TableStore | None = None) -> MZV:
    """Regularized ``L_w(1)``: the coefficient of ``x_w`` in ``Z · ~Z_y``.

    ``log|1 - z|^2`` is set to 0; by Brown (2014) this equals ``sv(G_reg(w; 1))``
    (checked in the tests against :func:`lowenergy.svpolylog.svmap.sv`).
    """
    word = _check_word(word)
    table = sv_table(_default_weight(word), store)
    store = store or default_store()
    total: Dict[tuple, Fraction] = {}
    for (u, v), c in table.terms(word).items():
        gu, gv = _g_value_raw(u, store), _g_value_raw(v, store)
        if gu and gv:
            _cadd_into(total, _cmul(_cmul(gu, gv), c.as_dict()))
    return MZV(total)
