"""The low-energy expansion of ``∫_0^1 x^(A) (1-x)^(B) G(w; x) dx``.

Method (METHOD.md §4; Broedel, Schlotterer, Stieberger, Terasoma, Phys. Rev.
D 89 (2014) organise the same numbers through the Drinfeld associator).
Write ``A = a - 1 + c·v``, ``B = b - 1 + d·v'`` with integers a, b ≥ 0,
rationals c, d and expansion variables v, v' (s or t).  With
``P(x) = x^a (1-x)^b`` and the partial fractions

    P(x)/(x(1-x)) = P(0)/x + P(1)/(1-x) + Q(x),   Q a polynomial,

the integral splits into three pieces.

* ``P(0) ∫ x^(cv-1) (1-x)^(dv') F``: near x = 0, ``(1-x)^(dv') G(w; x)``
  tends to ``G(0^k; x)`` if ``w = 0^k`` and to 0 otherwise, so the pole part is
  ``∫ x^(cv-1) G(0^k; x) dx = (-1)^k/(cv)^(k+1)``; after subtracting it,
  ``x^(cv) = Σ (cv)^m G(0^m; x)`` and ``(1-x)^(dv') = Σ (dv')^n G(1^n; x)``
  expand term by term into shuffle-regularized values
  ``Reg ∫ dx/x G(u; x) = G(0, u; 1)``.
* ``P(1) ∫ x^(cv) (1-x)^(dv'-1) F``: near x = 1, ``G(w; x) = Σ_k d_k(w)
  G(1^k; x) + o(1)``; the pole part is ``Σ_k d_k (-1)^k/(dv')^(k+1)`` and the
  rest gives ``-G(1, u; 1)`` (``dx/(1-x) = -dx/(x-1)``).
* ``∫ x^(cv) (1-x)^(dv') Q(x) F``: no poles; ``J(j, u) = ∫_0^1 x^j G(u; x) dx``
  by integration by parts against ``(x^(j+1) - 1)/(j+1)``.

The coefficient of ``(cv)^m (dv')^n`` needs the words of ``0^m ш 1^n ш w``
with multiplicity; the multiplicity of a word u with the right letter counts
is the number of ways w sits in u as a subsequence.  So the expansion is
integer combinatorics over words plus a cache of regularized values
``G(0u;1) - G(1u;1)`` (each reduced once through the MZV tables).

Everything is exact.  Negative shifts (a or b < 0) are refused with a clear
message; so are integrals that diverge for all s, t (e.g. ``x^(-1)`` with no
expansion variable and a non-vanishing endpoint value).
"""

from __future__ import annotations

from fractions import Fraction
from functools import lru_cache
from itertools import combinations
from typing import Callable, Dict, List, Optional, Tuple

from ..errors import InputError
from ..integrand.model import Integrand, LinearExponent, Term
from ..poly import add_term as poly_add_term
from ..zeta.element import MZV, g_value
from ..zeta.table import TableStore, default_store
from .result import Expansion, add_term
from .values import word_index, word_values

__all__ = [
    "expand", "expand_termwise", "raw_series", "endpoint_coefficients_at_one", "moment", "required_weight", "check_order",
]

Series = Dict[Tuple[int, int], MZV]


# ---------------------------------------------------------------------------
# word combinatorics
# ---------------------------------------------------------------------------

def embeddings(w: Tuple[int, ...], u: Tuple[int, ...]) -> int:
    """Number of ways ``w`` occurs in ``u`` as a subsequence."""
    if not w:
        return 1
    counts = [0] * (len(w) + 1)
    counts[0] = 1
    for letter in u:
        for k in range(len(w), 0, -1):
            if w[k - 1] == letter:
                counts[k] += counts[k - 1]
    return counts[len(w)]


def words_with_counts(zeros: int, ones: int):
    """All words with the given numbers of letters 0 and 1."""
    n = zeros + ones
    for pos in combinations(range(n), ones):
        word = [0] * n
        for p in pos:
            word[p] = 1
        yield tuple(word)


# ---------------------------------------------------------------------------
# cached regularized values
# ---------------------------------------------------------------------------

@lru_cache(maxsize=None)
def _g(word: Tuple[int, ...], store: Optional[TableStore] = None) -> MZV:
    return g_value(word, store=store)


@lru_cache(maxsize=None)
def moment(j: int, u: Tuple[int, ...], store: Optional[TableStore] = None) -> MZV:
    """``J(j, u) = ∫_0^1 x^j G(u; x) dx`` (j ≥ 0), exactly.

    Integration by parts against ``(x^(j+1) - 1)/(j+1)``, which vanishes at
    x = 1; the boundary term at 0 is the regularized value 0 for non-empty u.
    ``u = (1, u')``: ``J = -(1/(j+1)) Σ_{i≤j} J(i, u')``;
    ``u = (0, u')``: ``J = (G(u; 1) - J(j, u'))/(j+1)``.
    """
    if not u:
        return MZV.rational(Fraction(1, j + 1))
    rest = u[1:]
    if u[0] == 1:
        total = MZV()
        for i in range(j + 1):
            total = total + moment(i, rest, store)
        return total * Fraction(-1, j + 1)
    return (_g(u, store) - moment(j, rest, store)) * Fraction(1, j + 1)


@lru_cache(maxsize=None)
def endpoint_coefficients_at_one(w: Tuple[int, ...], store: Optional[TableStore] = None) -> Tuple[MZV, ...]:
    """``(d_0, d_1, ...)`` with ``G(w; x) = Σ_k d_k G(1^k; x) + o(1)`` as x → 1.

    Words not starting with 1 tend to their (regularized) value at 1.  For
    ``w = 1^m u`` the shuffle ``1 ш 1^(m-1)u = m·1^m u + Σ_{i≥1} 1^(m-1) u[:i] 1 u[i:]``
    and ``d_k(G(1)·G(y)) = k·d_(k-1)(y)`` give a recursion.
    """
    if not w or w[0] == 0:
        return (_g(w, store),)
    m = 0
    while m < len(w) and w[m] == 1:
        m += 1
    u = w[m:]
    if not u:
        return tuple([MZV()] * m + [MZV.one()])
    head = (1,) * (m - 1)
    base = endpoint_coefficients_at_one(head + u, store)
    acc: Dict[int, MZV] = {}
    for k, dk in enumerate(base):
        if dk:
            acc[k + 1] = acc.get(k + 1, MZV()) + dk * (k + 1)
    for i in range(1, len(u) + 1):
        other = head + u[:i] + (1,) + u[i:]
        for k, dk in enumerate(endpoint_coefficients_at_one(other, store)):
            if dk:
                acc[k] = acc.get(k, MZV()) - dk
    top = max(acc) if acc else 0
    return tuple(acc.get(k, MZV()) * Fraction(1, m) for k in range(top + 1))


# ---------------------------------------------------------------------------
# one integral
# ---------------------------------------------------------------------------

def _split(exp: LinearExponent, where: str) -> Tuple[int, Fraction, Optional[int]]:
    a = exp.shift + 1
    if a < 0:
        raise InputError(
            f"the exponent of {where} has integer part {exp.shift} < -1: negative shifts are not supported yet",
            hint=f"write the integrand with {where}^(-1 + ...) or higher powers",
        )
    return a, exp.coeff, exp.var


def _poly_x_times(a: int, b: int) -> List[Fraction]:
    """Coefficients of ``P(x) = x^a (1-x)^b`` (index = power of x)."""
    coeffs = [Fraction(0)] * (a + b + 1)
    binom = 1
    for k in range(b + 1):
        coeffs[a + k] = Fraction((-1) ** k * binom)
        binom = binom * (b - k) // (k + 1)
    return coeffs


def _q_polynomial(a: int, b: int) -> List[Fraction]:
    """``Q(x) = (P(x) - P(0)(1-x) - P(1) x)/(x(1-x))`` for ``P = x^a (1-x)^b``."""
    p = _poly_x_times(a, b)
    p0 = p[0]
    p1 = sum(p)
    num = list(p) + [Fraction(0)] * 2
    num[0] -= p0
    num[1] += p0
    num[1] -= p1
    # divide by x(1-x) = x - x^2: first by x (num[0] must be 0) ...
    assert num[0] == 0
    num = num[1:]
    # ... then by (1 - x): synthetic division (num(1) must vanish)
    while num and num[-1] == 0:
        num.pop()
    if not num:
        return []
    q: List[Fraction] = [Fraction(0)] * (len(num) - 1)
    carry = Fraction(0)
    # num(x) = (1 - x) q(x): num_k = q_k - q_{k-1}  =>  q_k = num_k + q_{k-1}
    for k in range(len(num) - 1):
        carry = num[k] + carry
        q[k] = carry
    assert num[-1] + carry == 0, "P(1) subtraction failed"
    return q


def raw_series(
    x_exp: LinearExponent,
    y_exp: LinearExponent,
    word: Tuple[int, ...],
    order: int,
    progress: Optional[Callable[[str], None]] = None,
    store: Optional[TableStore] = None,
) -> Series:
    """Laurent series of ``∫_0^1 x^(x_exp) (1-x)^(y_exp) G(word; x) dx`` in (s, t).

    Returns ``{(i, j): MZV}`` for all ``i + j ≤ order`` (poles included).
    One word at a time with MZV arithmetic (the reference path; the bulk
    path of :mod:`lowenergy.expansion.fast` gives the same numbers).
    ``store``: the MZV tables (default :func:`~lowenergy.zeta.table.default_store`).
    """
    store = store or default_store()
    a, c, vx = _split(x_exp, "x")
    b, d, vy = _split(y_exp, "(1-x)")
    word = tuple(word)
    out: Series = {}

    def add(i: int, j: int, value: MZV) -> None:
        if not value:
            return
        if i + j > order:
            return
        poly_add_term(out, (i, j), value)

    def mono(var: Optional[int], power: int) -> Tuple[int, int]:
        if var is None or power == 0:
            return (0, 0)
        return (power, 0) if var == 0 else (0, power)

    p0 = 1 if a == 0 else 0
    p1 = 1 if b == 0 else 0
    q = _q_polynomial(a, b) if (a or b) else []

    # ---- pole parts --------------------------------------------------------
    if p0:
        if all(letter == 0 for letter in word):
            k = len(word)
            if vx is None:
                raise InputError(
                    "the integral diverges at x = 0 for all values of the expansion variables",
                    hint="the factor x^(-1) needs an expansion variable in its exponent, e.g. x^(-s-1)",
                )
            i, j = mono(vx, -(k + 1))
            add(i, j, MZV.rational(Fraction((-1) ** k) / c ** (k + 1)))
    if p1:
        ds = endpoint_coefficients_at_one(word, store)
        for k, dk in enumerate(ds):
            if not dk:
                continue
            if vy is None:
                raise InputError(
                    "the integral diverges at x = 1 for all values of the expansion variables",
                    hint="the factor (1-x)^(-1) needs an expansion variable in its exponent, e.g. (1-x)^(-t-1)",
                )
            i, j = mono(vy, -(k + 1))
            add(i, j, dk * (Fraction((-1) ** k) / d ** (k + 1)))

    # ---- regular part --------------------------------------------------------
    zeros_w = sum(1 for letter in word if letter == 0)
    ones_w = len(word) - zeros_w
    max_m = order if vx is not None else 0
    for m in range(0, max_m + 1):
        max_n = (order - m) if vy is not None else 0
        for n in range(0, max_n + 1):
            e1 = mono(vx, m)
            e2 = mono(vy, n)
            i, j = e1[0] + e2[0], e1[1] + e2[1]
            if i + j > order:
                continue
            scale = (c ** m if m else Fraction(1)) * (d ** n if n else Fraction(1))
            length = m + n + len(word)
            table = word_values(length + 1, store) if (p0 or p1) else None
            top = 1 << length  # row of (1,) + u is top + row of u
            rows: Dict[int, int] = {}
            total = MZV()
            for u in words_with_counts(m + zeros_w, n + ones_w):
                mult = embeddings(word, u)
                if not mult:
                    continue
                if table is not None:
                    r = word_index(u)
                    if p0:
                        rows[r] = rows.get(r, 0) + mult
                    if p1:
                        rows[top + r] = rows.get(top + r, 0) - mult
                for jj, qj in enumerate(q):
                    if qj:
                        total = total + moment(jj, u, store) * (qj * mult)
            if table is not None:
                total = total + table.combine(rows)
            add(i, j, total * scale)
        if progress:
            progress(f"order {m}/{max_m}")
    return out


# ---------------------------------------------------------------------------
# whole integrands
# ---------------------------------------------------------------------------

def required_weight(integrand: Integrand, order: int) -> int:
    """Highest MZV weight the expansion of ``integrand`` to ``order`` needs.

    Mirrors :func:`raw_series`: the regular part at total degree ``m + n``
    needs the words of length ``m + n + len(w)`` (one more, ``G(0u; 1)`` and
    ``G(1u; 1)``, when there is an endpoint pole), and the pole part needs the
    endpoint values ``G(w; 1)``.
    """
    need = 0
    for term in integrand.terms:
        if not term.coefficient:
            continue
        raw_order = order - min(k[0] + k[1] for k in term.coefficient)
        n = len(term.word)
        if raw_order < -(n + 1):
            continue
        need = max(need, n)
        a, b = term.x_exp.shift + 1, term.y_exp.shift + 1
        if a < 0 or b < 0:
            continue  # refused by raw_series with its own message
        top = raw_order if (term.x_exp.var is not None or term.y_exp.var is not None) else 0
        if top >= 0:
            need = max(need, top + n + (1 if (a == 0 or b == 0) else 0))
    return need


def check_order(integrand: Integrand, order: int) -> int:
    """The weight :func:`required_weight` gives, after checking that MZV
    tables of that weight can be built (:data:`~lowenergy.zeta.table.MAX_WEIGHT`);
    :class:`~lowenergy.errors.InputError` naming the limit and the highest
    order that works otherwise."""
    from ..zeta.table import MAX_WEIGHT

    if not isinstance(order, int) or isinstance(order, bool) or order < 0:
        raise InputError(f"the order must be a non-negative integer, got {order!r}")
    need = required_weight(integrand, order)
    if need <= MAX_WEIGHT:
        return need
    best = order - (need - MAX_WEIGHT)
    while best >= 0 and required_weight(integrand, best) > MAX_WEIGHT:
        best -= 1
    hint = f"ask for order {best} or lower" if best >= 0 else "this integrand needs shorter words"
    raise InputError(
        f"order {order} needs MZV tables of weight {need}, but lowenergy builds them up to weight {MAX_WEIGHT} only",
        source=integrand.source,
        hint=hint,
    )


def expand(
    integrand: Integrand,
    order: int,
    progress: Optional[Callable[[str], None]] = None,
    *,
    store: Optional[TableStore] = None,
    method: str = "bulk",
) -> Expansion:
    """Exact low-energy expansion of an integrand to total order ``order``.

    Parameters
    ----------
    integrand:
        The integrand (see :mod:`lowenergy.integrand.model`).
    order:
        Keep every Laurent monomial ``s^i t^j`` with ``i + j ≤ order``.
    progress:
        Optional callback receiving status strings (one call per term).
    store:
        The MZV tables (default :func:`~lowenergy.zeta.table.default_store`).
    method:
        ``"bulk"`` (default): each distinct word series is computed once as
        exact vectors over the MZV basis and the coefficients are applied as
        one linear map (:mod:`lowenergy.expansion.fast`); ``"termwise"``:
        the reference path, one term at a time with MZV arithmetic.  Both
        give identical results.

    Returns
    -------
    Expansion
    """
    if not isinstance(order, int) or order < 0:
        raise InputError(f"the order must be a non-negative integer, got {order!r}")
    if getattr(integrand, "domain", "interval") != "interval":
        raise InputError(
            f"{integrand.source} is a {integrand.domain} integrand; this engine expands interval integrands",
            hint="use lowenergy.svpolylog.sphere.expand_sphere (the command line chooses it by itself)",
        )
    if method == "termwise":
        return expand_termwise(integrand, order, progress, store=store)
    if method != "bulk":
        raise InputError(f"unknown expansion method {method!r}", hint="use bulk or termwise")
    from .fast import expand_bulk

    return expand_bulk(integrand, order, progress, store=store or default_store())


def expand_termwise(
    integrand: Integrand,
    order: int,
    progress: Optional[Callable[[str], None]] = None,
    *,
    store: Optional[TableStore] = None,
) -> Expansion:
    """Exact low-energy expansion, one term at a time with MZV arithmetic (reference path).

    Parameters
    ----------
    integrand:
        The integrand (see :mod:`lowenergy.integrand.model`).
    order:
        Keep every Laurent monomial ``s^i t^j`` with ``i + j ≤ order``.
    progress:
        Optional callback receiving status strings.

    Returns
    -------
    Expansion

    Missing MZV tables are built first (see :mod:`lowenergy.zeta.table` for
    how builds are reported); an order that needs a weight above
    :data:`~lowenergy.zeta.table.MAX_WEIGHT` raises
    :class:`~lowenergy.errors.InputError` before any work.
    """
    if getattr(integrand, "domain", "interval") != "interval":
        raise InputError(
            f"{integrand.source} is a {integrand.domain} integrand; this engine expands interval integrands",
            hint="use lowenergy.svpolylog.sphere.expand_sphere (the command line chooses it by itself)",
        )
    store = store or default_store()
    # refuse an order beyond the buildable tables before any work, then build
    # the missing tables in one go (reported as the store's module describes)
    store.ensure(check_order(integrand, order))
    nparams = len(integrand.parameters)
    result: Dict[Tuple[int, int], Dict[Tuple[int, ...], MZV]] = {}
    terms: List[Term] = list(integrand.terms)
    for index, term in enumerate(terms):
        if not term.coefficient:
            continue
        min_deg = min(k[0] + k[1] for k in term.coefficient)
        raw_order = order - min_deg
        if raw_order < -(len(term.word) + 1):
            continue  # even the highest pole times the lowest monomial is beyond the order
        try:
            series = raw_series(term.x_exp, term.y_exp, term.word, raw_order, store=store)
        except InputError as err:
            raise err.located(source=integrand.source, line=term.source_line, term=term.text)
        for (i, j), value in series.items():
            for key, coef in term.coefficient.items():
                ii, jj = i + key[0], j + key[1]
                if ii + jj > order:
                    continue
                add_term(result, (ii, jj), tuple(key[2 : 2 + nparams]), value * coef)
        if progress:
            progress(f"term {index + 1}/{len(terms)}")
    return Expansion.of_integrand(integrand, order, result)
