"""Bulk expansion of whole integrands: word series once, coefficients as a linear map.

An integrand ``Σ_terms P_T(s, t, params) x^(A_T) (1-x)^(B_T) G(w_T; x)`` is
expanded in three steps:

1. every distinct (exponents, word) series is computed once, as exact vectors
   over the MZV monomial basis (:mod:`lowenergy.expansion.vectors`): the
   shuffle values of all words in one bulk modular computation, shifted
   exponents by integration by parts from the unshifted-at-one-end cases;
2. each polynomial coefficient ``P_T`` is split into rational numbers times
   (monomial ``s^k t^l``) × (MZV monomial m) × (parameter monomial);
3. for every ``s^k t^l`` the rational numbers form a matrix (parameter
   monomials × (term, m)) that multiplies the matrix of the series times m
   (one python-flint ``fmpq_mat`` product); the result, shifted by
   ``s^k t^l``, is the expansion.

This is the same mathematics as :func:`~lowenergy.expansion.engine.expand_termwise`
(METHOD.md §4) organised for many terms; tests compare the two exactly.
"""

from __future__ import annotations

from collections import defaultdict
from fractions import Fraction
from typing import Callable, Dict, List, Optional, Tuple

from ..errors import InputError
from ..integrand.model import Integrand, LinearExponent
from ..poly import add as poly_add, add_term
from ..zeta.element import MZV
from ..zeta.table import TableStore
from .engine import _split, endpoint_coefficients_at_one, raw_series
from .result import Expansion
from .vectors import ColumnSpace, VSeries, fraction, shuffle_values

__all__ = ["expand_bulk", "series_vectors", "SeriesPlan"]

Word = Tuple[int, ...]
SeriesKey = Tuple[LinearExponent, LinearExponent, Word]

_PARAM_BLOCK = 128  # rows of the coefficient matrix multiplied at once

_SPACES: Dict[int, Tuple[TableStore, ColumnSpace]] = {}


def column_space(store: TableStore) -> ColumnSpace:
    """One column space per table store (kept for the process)."""
    got = _SPACES.get(id(store))
    if got is None or got[0] is not store:
        got = (store, ColumnSpace(store))
        _SPACES[id(store)] = got
    return got[1]


# ---------------------------------------------------------------------------
# series arithmetic on {(i, j): fmpq_poly}
# ---------------------------------------------------------------------------

def _add_into(out: VSeries, key: Tuple[int, int], vec, factor=1) -> None:
    """``out[key] += vec * factor`` (zeros dropped by :func:`lowenergy.poly.add_term`)."""
    if vec:
        add_term(out, key, vec * factor)


def _linear_times(series: VSeries, const: int, lin: Tuple[Fraction, Fraction], order: int) -> VSeries:
    """``(const + lin_s s + lin_t t) · series``, truncated at total order."""
    import flint

    out: VSeries = {}
    ls, lt = (flint.fmpq(q.numerator, q.denominator) for q in lin)
    for (i, j), v in series.items():
        if const:
            _add_into(out, (i, j), v, const)
        if i + j + 1 <= order:
            if ls:
                _add_into(out, (i + 1, j), v, ls)
            if lt:
                _add_into(out, (i, j + 1), v, lt)
    return out


def _divide_linear(series: VSeries, const: int, lin: Tuple[Fraction, Fraction], order: int) -> VSeries:
    """``series / (const + lin_s s + lin_t t)`` for an integer ``const ≥ 1``.

    Solved coefficient by coefficient in increasing total degree:
    ``const·X(i,j) = Y(i,j) - lin_s X(i-1,j) - lin_t X(i,j-1)`` (no loss of order).
    """
    import flint

    if not series:
        return {}
    ls, lt = (flint.fmpq(q.numerator, q.denominator) for q in lin)
    inv = flint.fmpq(1, const)
    imin = min(i for i, _ in series)
    jmin = min(j for _, j in series)
    dmin = min(i + j for i, j in series)
    out: VSeries = {}
    for d in range(dmin, order + 1):
        for i in range(imin, d - jmin + 1):
            j = d - i
            if i < 0 and j < 0:
                continue  # poles come in s or in t, never in both
            acc = series.get((i, j))
            if ls:
                prev = out.get((i - 1, j))
                if prev is not None:
                    acc = -ls * prev if acc is None else acc - ls * prev
            if lt:
                prev = out.get((i, j - 1))
                if prev is not None:
                    acc = -lt * prev if acc is None else acc - lt * prev
            if acc:
                out[(i, j)] = acc * inv
    return out


def _plus(a: VSeries, b: VSeries, factor: int = 1) -> VSeries:
    return poly_add(a, b, factor)


# ---------------------------------------------------------------------------
# one series
# ---------------------------------------------------------------------------

def _mono(var: Optional[int], power: int) -> Tuple[int, int]:
    if var is None or power == 0:
        return (0, 0)
    return (power, 0) if var == 0 else (0, power)


def _pole_part(x_exp, y_exp, word: Word, space: ColumnSpace, store: TableStore) -> VSeries:
    """The pole terms of :func:`raw_series` (same checks, same messages)."""
    a, c, vx = _split(x_exp, "x")
    b, d, vy = _split(y_exp, "(1-x)")
    out: VSeries = {}
    if a == 0 and all(letter == 0 for letter in word):
        k = len(word)
        if vx is None:
            raise InputError(
                "the integral diverges at x = 0 for all values of the expansion variables",
                hint="the factor x^(-1) needs an expansion variable in its exponent, e.g. x^(-s-1)",
            )
        _add_into(out, _mono(vx, -(k + 1)), space.vector(MZV.rational(Fraction((-1) ** k) / c ** (k + 1))))
    if b == 0:
        for k, dk in enumerate(endpoint_coefficients_at_one(word, store)):
            if not dk:
                continue
            if vy is None:
                raise InputError(
                    "the integral diverges at x = 1 for all values of the expansion variables",
                    hint="the factor (1-x)^(-1) needs an expansion variable in its exponent, e.g. (1-x)^(-t-1)",
                )
            _add_into(out, _mono(vy, -(k + 1)), space.vector(dk * (Fraction((-1) ** k) / d ** (k + 1))))
    return out


class SeriesPlan:
    """Which series an expansion needs, and the shuffle values behind them.

    ``kind`` of a series: ``"direct"`` (exponent shifts with ``P(x)/(x(1-x))``
    free of a polynomial part: ``x^(-1+α)(1-x)^(-1+β)``, ``x^α(1-x)^(-1+β)``,
    ``x^(-1+α)(1-x)^β``), ``"ibp"`` (larger shifts with expansion variables in
    both exponents) or ``"termwise"`` (larger shifts with a constant exponent:
    computed by :func:`raw_series`, whose moments are cheap there).
    """

    def __init__(self, store: TableStore, space: ColumnSpace) -> None:
        self.store = store
        self.space = space
        self.orders: Dict[SeriesKey, int] = {}
        self.kinds: Dict[SeriesKey, str] = {}
        self.poles: Dict[SeriesKey, VSeries] = {}
        self.requests: Dict[Tuple[Word, Tuple[int, int]], int] = {}
        self.values: Dict = {}
        self.done: Dict[SeriesKey, VSeries] = {}
        self._ibp_memo: Dict[tuple, Dict[Tuple[Word, int, int], VSeries]] = {}

    def _request(self, word: Word, order: int, mode: Tuple[int, int]) -> None:
        if order >= 0:
            key = (word, mode)
            self.requests[key] = max(self.requests.get(key, -1), order)

    def add(self, x_exp: LinearExponent, y_exp: LinearExponent, word: Word, order: int) -> SeriesKey:
        """Register a series (raises the user errors of :func:`raw_series`)."""
        key = (x_exp, y_exp, tuple(word))
        a, _, vx = _split(x_exp, "x")
        b, _, vy = _split(y_exp, "(1-x)")
        if (a, b) in ((0, 0), (1, 0), (0, 1)):
            kind = "direct"
            if key not in self.poles:
                self.poles[key] = _pole_part(x_exp, y_exp, key[2], self.space, self.store)
        elif vx is not None and vy is not None:
            kind = "ibp"
        else:
            kind = "termwise"
        if order <= self.orders.get(key, -10 ** 9):
            return key
        self.orders[key] = order
        self.kinds[key] = kind
        if kind == "direct":
            self._request(key[2], order, (1 if a == 0 else 0, 1 if b == 0 else 0))
        elif kind == "ibp":
            for k in range(len(word) + 1):
                self._request(key[2][k:], order, (0, 1))  # J(1, 0)
                self._request(key[2][k:], order, (1, 0))  # J(0, 1)
        else:
            self.done[key] = self._from_mzv(raw_series(x_exp, y_exp, key[2], order, store=self.store))
        return key

    def _from_mzv(self, series) -> VSeries:
        return {k: self.space.vector(v) for k, v in series.items() if v}

    def compute(self) -> None:
        """The bulk shuffle values, then every registered series."""
        reqs = [(w, order, mode) for (w, mode), order in sorted(self.requests.items())]
        self.values = shuffle_values(reqs, self.store, self.space)
        for key, order in self.orders.items():
            if key in self.done:
                continue
            if self.kinds[key] == "direct":
                self.done[key] = self._direct(key[0], key[1], key[2], order)
            else:
                self.done[key] = self._ibp(key[0], key[1], key[2], order)

    def _direct(self, x_exp, y_exp, word: Word, order: int) -> VSeries:
        """As :func:`raw_series` for shifts without a polynomial part, from bulk values."""
        key = (x_exp, y_exp, word)
        if key not in self.poles:
            self.poles[key] = _pole_part(x_exp, y_exp, word, self.space, self.store)
        out: VSeries = {k: v for k, v in self.poles[key].items() if k[0] + k[1] <= order}
        a, c, vx = _split(x_exp, "x")
        b, d, vy = _split(y_exp, "(1-x)")
        mode = (1 if a == 0 else 0, 1 if b == 0 else 0)
        max_m = order if vx is not None else 0
        for m in range(max_m + 1):
            max_n = (order - m) if vy is not None else 0
            for n in range(max_n + 1):
                e1, e2 = _mono(vx, m), _mono(vy, n)
                i, j = e1[0] + e2[0], e1[1] + e2[1]
                if i + j > order:
                    continue
                vec = self.values[(word, m + n, n, mode)]
                if not vec:
                    continue
                scale = (c ** m if m else Fraction(1)) * (d ** n if n else Fraction(1))
                if scale != 1:
                    import flint

                    vec = vec * flint.fmpq(scale.numerator, scale.denominator)
                _add_into(out, (i, j), vec)
        return out

    def _ibp(self, x_exp: LinearExponent, y_exp: LinearExponent, word: Word, order: int) -> VSeries:
        """``J_w(A, B)`` by the integration-by-parts recursion (module docstring of vectors)."""
        big_a, big_b = x_exp.shift + 1, y_exp.shift + 1
        alpha = (x_exp.coeff if x_exp.var == 0 else Fraction(0), x_exp.coeff if x_exp.var == 1 else Fraction(0))
        beta = (y_exp.coeff if y_exp.var == 0 else Fraction(0), y_exp.coeff if y_exp.var == 1 else Fraction(0))
        lam = (alpha[0] + beta[0], alpha[1] + beta[1])
        # shared by all terms with these exponents (their words share suffixes)
        memo: Dict[Tuple[Word, int, int], VSeries] = self._ibp_memo.setdefault(
            (x_exp.coeff, x_exp.var, y_exp.coeff, y_exp.var, order), {})

        def J(w: Word, a: int, b: int) -> VSeries:
            got = memo.get((w, a, b))
            if got is not None:
                return got
            if (a, b) in ((1, 0), (0, 1)):
                xe = LinearExponent(a - 1, x_exp.coeff, x_exp.var)
                ye = LinearExponent(b - 1, y_exp.coeff, y_exp.var)
                res = self._direct(xe, ye, w, order)
            elif a >= 1:
                # (a-1+b+α+β) J(a,b) = (a-1+α) J(a-1,b) + [w1=0] J_w'(a-1,b+1) - [w1=1] J_w'(a,b)
                y = _linear_times(J(w, a - 1, b), a - 1, alpha, order)
                if w:
                    y = _plus(y, J(w[1:], a - 1, b + 1)) if w[0] == 0 else _plus(y, J(w[1:], a, b), -1)
                res = _divide_linear(y, a - 1 + b, lam, order)
            else:
                # (b-1+α+β) J(0,b) = (b-1+β) J(0,b-1) - [w1=0] J_w'(0,b) + [w1=1] J_w'(1,b-1)
                y = _linear_times(J(w, 0, b - 1), b - 1, beta, order)
                if w:
                    y = _plus(y, J(w[1:], 0, b), -1) if w[0] == 0 else _plus(y, J(w[1:], 1, b - 1))
                res = _divide_linear(y, b - 1, lam, order)
            memo[(w, a, b)] = res
            return res

        return J(word, big_a, big_b)


def series_vectors(x_exp: LinearExponent, y_exp: LinearExponent, word, order: int, store: TableStore):
    """The series of one integral as ``{(i, j): MZV}``, by the bulk path (as :func:`raw_series`)."""
    space = column_space(store)
    plan = SeriesPlan(store, space)
    key = plan.add(x_exp, y_exp, tuple(word), order)
    plan.compute()
    return {k: space.to_mzv(v) for k, v in plan.done[key].items() if v and k[0] + k[1] <= order}


# ---------------------------------------------------------------------------
# whole integrands
# ---------------------------------------------------------------------------

def expand_bulk(
    integrand: Integrand,
    order: int,
    progress: Optional[Callable[[str], None]] = None,
    *,
    store: TableStore,
) -> Expansion:
    """See :func:`lowenergy.expansion.engine.expand` (``method="bulk"``)."""
    import flint

    space = column_space(store)
    plan = SeriesPlan(store, space)
    nparams = len(integrand.parameters)
    terms = list(integrand.terms)
    used: List[Tuple[object, SeriesKey]] = []
    for index, term in enumerate(terms):
        if term.coefficient:
            min_deg = min(k[0] + k[1] for k in term.coefficient)
            raw_order = order - min_deg
            if raw_order >= -(len(term.word) + 1):
                try:
                    key = plan.add(term.x_exp, term.y_exp, tuple(term.word), raw_order)
                except InputError as err:
                    raise err.located(source=integrand.source, line=term.source_line, term=term.text)
                used.append((term, key))
        if progress:
            progress(f"term {index + 1}/{len(terms)}")
    plan.compute()

    # rows: (series, MZV monomial m); per s^k t^l: {parameter monomial: {row: rational}}
    rows: Dict[Tuple[SeriesKey, tuple], int] = {}
    pindex: Dict[tuple, int] = {}
    groups: Dict[Tuple[int, int], Dict[int, Dict[int, Fraction]]] = defaultdict(lambda: defaultdict(dict))
    for term, key in used:
        for ckey, coef in term.coefficient.items():
            kl = (ckey[0], ckey[1])
            pkey = tuple(ckey[2 : 2 + nparams])
            pi = pindex.setdefault(pkey, len(pindex))
            slot = groups[kl][pi]
            for mono, r in coef.as_dict().items():
                row = rows.setdefault((key, mono), len(rows))
                slot[row] = slot.get(row, 0) + r
    # the series times m, flattened over (Laurent monomial, column)
    flat_index: Dict[Tuple[Tuple[int, int], int], int] = {}
    flat_keys: List[Tuple[Tuple[int, int], int]] = []
    row_entries: List[Dict[int, object]] = [None] * len(rows)
    for (key, mono), row in rows.items():
        entries: Dict[int, object] = {}
        for ij, vec in plan.done[key].items():
            for col, c in enumerate(vec.coeffs()):
                if c:
                    fk = (ij, space.times(mono, col))
                    f = flat_index.get(fk)
                    if f is None:
                        f = len(flat_keys)
                        flat_index[fk] = f
                        flat_keys.append(fk)
                    entries[f] = c
        row_entries[row] = entries

    # acc[(Laurent monomial, parameter index)] = {column: fmpq}
    acc: Dict[Tuple[Tuple[int, int], int], Dict[int, object]] = {}
    for (k, l), by_param in groups.items():
        pis = [pi for pi, r in by_param.items() if any(r.values())]
        if not pis:
            continue
        used_rows = sorted({row for pi in pis for row, r in by_param[pi].items() if r})
        # keep only columns whose Laurent monomial lands within the order after the shift
        cols = sorted({f for row in used_rows for f in row_entries[row]
                       if flat_keys[f][0][0] + flat_keys[f][0][1] + k + l <= order})
        if not cols:
            continue
        col_pos = {f: n for n, f in enumerate(cols)}
        row_pos = {row: n for n, row in enumerate(used_rows)}
        zmat = flint.fmpq_mat(len(used_rows), len(cols))
        for row in used_rows:
            ri = row_pos[row]
            for f, c in row_entries[row].items():
                n = col_pos.get(f)
                if n is not None:
                    zmat[ri, n] = c
        targets = [((flat_keys[f][0][0] + k, flat_keys[f][0][1] + l), flat_keys[f][1]) for f in cols]
        width = len(cols)
        # a few parameter monomials at a time: the product's entries are Python objects
        for start in range(0, len(pis), _PARAM_BLOCK):
            block = pis[start : start + _PARAM_BLOCK]
            rmat = flint.fmpq_mat(len(block), len(used_rows))
            for n, pi in enumerate(block):
                for row, r in by_param[pi].items():
                    if r:
                        rmat[n, row_pos[row]] = flint.fmpq(r.numerator, r.denominator)
            prod = (rmat * zmat).entries()
            for n_p, pi in enumerate(block):
                base = n_p * width
                for n, y in enumerate(prod[base : base + width]):
                    if y:
                        ij, col = targets[n]
                        target = acc.get((ij, pi))
                        if target is None:
                            acc[(ij, pi)] = {col: y}
                        else:
                            got = target.get(col)
                            target[col] = y if got is None else got + y
    pkeys = list(pindex)
    monos = space.monos
    result: Dict[Tuple[int, int], Dict[Tuple[int, ...], MZV]] = {}
    for ij, pi in sorted(acc):
        terms_ = {monos[col]: fraction(y) for col, y in acc[(ij, pi)].items() if y}
        if terms_:
            result.setdefault(ij, {})[pkeys[pi]] = MZV.from_canonical(terms_)
    return Expansion.of_integrand(integrand, order, result)
