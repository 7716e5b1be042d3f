"""Numerical values of multiple zeta values to any number of digits.

Method: Hölder convolution (Borwein, Bradley, Broadhurst, Lisoněk, "Special
values of multiple polylogarithms", Trans. AMS 353 (2001), section 7).
Write ``I(a; a1, ..., aN; b)`` for the iterated integral from ``a`` to ``b``
whose first letter ``a1`` sits next to the upper end point ``b``, so that
``G(w; x) = I(0; w; x)``.  Splitting the path at ``1/2`` gives

    I(0; a1..aN; 1) = Σ_{k=0}^{N} I(1/2; a1..ak; 1) · I(0; a(k+1)..aN; 1/2),

and the substitution ``t -> 1 - t`` turns the first factor into
``(-1)^k G(1-ak, ..., 1-a1; 1/2)``.  For a word ``v = 0^(m1-1) 1 ... 0^(md-1) 1``
ending in 1,

    G(v; 1/2) = (-1)^d Li_{m1..md}(1/2),
    Li_{m1..md}(1/2) = Σ_{n1 > ... > nd ≥ 1} 2^(-n1) / (n1^m1 ... nd^md),

which converges like ``2^(-n)``.  For a convergent word all signs combine to
``(-1)^depth``, so ``ζ(n1..nk) = Σ_k Li_{v_k}(1/2) Li_{u_k}(1/2)`` is a sum of
positive terms (no cancellation).

Implementation: fixed-point arithmetic with Python integers scaled by
``2^P``.  For a tail ``t = (m2, ..., md)`` the scaled nested harmonic sums

    Ã_t[n] = 2^(P-n) Σ_{n > n2 > ... > nd ≥ 1} 1/(n2^m2 ... nd^md)

obey ``Ã_(m,)+t[n+1] = (Ã_(m,)+t[n] + Ã_t[n] / n^m) / 2`` and
``Li_(m,)+t(1/2) = Σ_n Ã_t[n] / n^m``, so one pass per node of the trie of
tails gives every value; the factor ``2^(-n)`` carried along keeps the
integers short for large ``n``.  All polylogarithms needed by a set of MZVs
are computed in one depth-first walk of that trie (memory: depth × terms).

Rounding and truncation errors are bounded a priori (see ``_precision``) and
covered by guard bits, so the result is correct to the requested number of
significant digits.  No global mpmath precision is read or changed.

Examples
--------
>>> import mpmath
>>> mpmath.nstr(zeta_numeric((2, 1), digits=25), 25)   # Euler: ζ(2,1) = ζ(3)
'1.202056903159594285399738'
>>> mpmath.nstr(word_numeric((0, 1), digits=20), 20)   # G(0,1;1) = -ζ(2)
'-1.6449340668482264365'
"""

from __future__ import annotations

import math
import numbers
from itertools import accumulate
from typing import Dict, Iterable, List, Sequence, Set, Tuple

import mpmath

from ..errors import InputError, RegularizationError
from ..words import indices_to_word, word_to_indices

__all__ = ["zeta_numeric", "word_numeric", "zeta_numeric_many"]

_LOG2_10 = math.log2(10.0)
# extra bits of the returned mpf beyond the requested digits
_OUT_GUARD = 8


# --------------------------------------------------------------------------
# input checking
# --------------------------------------------------------------------------

def _check_digits(digits: object) -> int:
    if isinstance(digits, bool) or not isinstance(digits, numbers.Integral) or digits < 1:
        raise InputError(
            f"digits must be a positive integer, got {digits!r}", hint="e.g. digits=30"
        )
    return int(digits)


def _check_indices(indices: object) -> Tuple[int, ...]:
    """Validated index tuple of a *convergent* MZV."""
    if isinstance(indices, (str, bytes)):
        raise InputError(f"MZV indices must be a tuple of integers, got {indices!r}")
    try:
        items = tuple(indices)  # type: ignore[arg-type]
    except TypeError:
        raise InputError(
            f"MZV indices must be a tuple of integers, got {indices!r}",
            hint="write e.g. (3, 5) for ζ(3,5)",
        ) from None
    out: List[int] = []
    for n in items:
        if isinstance(n, bool) or not isinstance(n, numbers.Integral) or n < 1:
            raise InputError(
                f"MZV indices must be positive integers, got {n!r} in {items!r}",
                hint="write e.g. (3, 5) for ζ(3,5)",
            )
        out.append(int(n))
    idx = tuple(out)
    if idx and idx[0] == 1:
        raise RegularizationError(
            f"ζ{idx} diverges (first index 1)",
            hint="regularize it first (lowenergy.words.regularize_indices)",
        )
    return idx


def _check_word(word: object) -> Tuple[int, ...]:
    """Validated convergent word (empty, or starting with 0 and ending with 1)."""
    if isinstance(word, (str, bytes)):
        raise InputError(f"a word must be a tuple of letters 0 and 1, got {word!r}")
    try:
        items = tuple(word)  # type: ignore[arg-type]
    except TypeError:
        raise InputError(f"a word must be a tuple of letters 0 and 1, got {word!r}") from None
    for a in items:
        if isinstance(a, bool) or not isinstance(a, numbers.Integral) or a not in (0, 1):
            raise InputError(f"letters of words are 0 and 1, got {a!r} in {items!r}")
    w = tuple(int(a) for a in items)
    if w and (w[0] != 0 or w[-1] != 1):
        raise RegularizationError(
            f"G({w}; 1) diverges (a convergent word starts with 0 and ends with 1)",
            hint="regularize it first (lowenergy.words.regularize_word)",
        )
    return w


# --------------------------------------------------------------------------
# precision bookkeeping
# --------------------------------------------------------------------------

def _small_bits(idx: Tuple[int, ...]) -> int:
    """Bits b with ζ(idx) ≥ 2^(-b): the first term m = (d, d-1, ..., 1) bounds it."""
    d = len(idx)
    return math.ceil(sum(n * math.log2(d - i) for i, n in enumerate(idx)))


def _precision(digits: int, small: int, length: int) -> Tuple[int, int, int]:
    """Working precision ``P`` (bits), number of terms ``N`` and output precision.

    Error budget, in units of ``2^-P`` (floor divisions err by < 1 unit):

    * ``Ã_()`` is exact up to < 1 unit (entries with n > P are dropped);
      each level of the trie adds at most 3 units to ``Ã``, so a depth-d tail
      is off by ≤ 3d + 1 units, and a polylogarithm (N terms, plus a
      truncated tail ≤ 1 unit, see below) by ``e ≤ N (3L + 2) + 2``.
    * All polylogarithms at 1/2 here are < 1 (they are bounded by
      ``Li_{1,...,1}(1/2) = (log 2)^d / d!``), so a product errs by ≤ 2e + 1
      and the sum of L + 1 products by ``E = (L + 1)(2e + 1) + 1``.
    * Tail: the n-th term of ``Li_s(1/2)`` is ≤ ``t_n = 2^-n (1 + log n)^L``
      (the nested harmonic sum is ≤ ``H_(n-1)^(d-1)``), and for ``n ≥ 2L``
      ``t_(n+1)/t_n ≤ e^(1/2)/2 < 0.83``, so the tail is ≤ ``5.7 t_(N+1) ≤
      2^(2.6-N) (1 + log(N+1))^L``; the choice of N below makes this ≤ 1 unit.

    ``P`` is chosen so that ``E 2^-P ≤ 2^-(target + small)`` where ``2^-small``
    bounds the MZV from below, i.e. the relative error is ≤ 2^-target.
    """
    target = math.ceil(digits * _LOG2_10) + _OUT_GUARD
    L = max(length, 1)
    guard = 16
    while True:
        P = target + small + guard
        N = max(P, 2 * L)
        while True:  # smallest fixed point of N = P + 3 + L log2(1 + log(N + 1))
            N_next = max(P + 3 + math.ceil(L * math.log2(1.0 + math.log(N + 1.0))), 2 * L)
            if N_next <= N:
                break
            N = N_next
        e = N * (3 * L + 2) + 2
        E = (L + 1) * (2 * e + 1) + 1
        need = E.bit_length() + 1
        if need <= guard:
            return P, N, target
        guard = need


# --------------------------------------------------------------------------
# the core: all Li_s(1/2) of a set of index tuples, as integers · 2^-P
# --------------------------------------------------------------------------

def _li_half_all(needed: Set[Tuple[int, ...]], P: int, N: int) -> Dict[Tuple[int, ...], int]:
    """``{s: round(Li_s(1/2) 2^P)}`` for every (non-empty) index tuple in needed."""
    children: Dict[Tuple[int, ...], Set[int]] = {(): set()}
    for s in needed:
        for i in range(len(s) - 1, -1, -1):
            children.setdefault(s[i + 1:], set()).add(s[i])
            children.setdefault(s[i:], set())

    ns = range(1, N + 1)
    powers: Dict[int, List[int]] = {}

    def power(m: int) -> List[int]:
        p = powers.get(m)
        if p is None:
            p = [n ** m for n in ns]
            powers[m] = p
        return p

    out: Dict[Tuple[int, ...], int] = {}
    halve_add = lambda a, d: (a + d) >> 1  # noqa: E731

    # Ã_()[n] = 2^(P-n) for n = 1..N (entries are zero for n > P)
    root = [1 << (P - n) if n <= P else 0 for n in ns]
    stack: List[Tuple[Tuple[int, ...], List[int]]] = [((), root)]
    while stack:
        tail, arr = stack.pop()
        for m in children[tail]:
            node = (m,) + tail
            if m == 1:
                D = [a // n for a, n in zip(arr, ns)]
            else:
                D = [a // q for a, q in zip(arr, power(m))]
            if node in needed:
                out[node] = sum(D)
            if children[node]:
                # Ã_node[1] = 0, Ã_node[n+1] = (Ã_node[n] + D[n]) / 2
                new = list(accumulate(D[:-1], halve_add, initial=0))
                stack.append((node, new))
        # arr is released here; the stack holds at most (depth × branching) arrays
    return out


def _split_terms(word: Tuple[int, ...]) -> List[Tuple[int, Tuple[int, ...], Tuple[int, ...]]]:
    """Hölder terms of ``G(word; 1)``: ``[(sign, idx_v, idx_u), ...]``.

    ``G(word; 1) = Σ sign · Li_{idx_v}(1/2) · Li_{idx_u}(1/2)`` with
    ``v = (1-ak, ..., 1-a1)`` and ``u = (a(k+1), ..., aN)``.
    """
    terms = []
    for k in range(len(word) + 1):
        prefix, suffix = word[:k], word[k:]
        v = tuple(1 - a for a in reversed(prefix))
        # (-1)^k from t -> 1-t, (-1)^depth from G = (-1)^d Li for each factor
        sign = (-1) ** (k + sum(v) + sum(suffix))
        terms.append((sign, word_to_indices(v), word_to_indices(suffix)))
    return terms


def _evaluate_words(
    words: Sequence[Tuple[int, ...]], digits: int, small: int, as_zeta: bool
) -> List[mpmath.mpf]:
    """``G(w; 1)`` (or ``ζ`` if as_zeta) for convergent words, to ``digits`` digits.

    The sign ``(-1)^depth`` relating the two is applied to the integer, so
    no mpf arithmetic happens outside the local precision context.
    """
    length = max((len(w) for w in words), default=0)
    P, N, target = _precision(digits, small, length)
    plans = [_split_terms(w) if w else [] for w in words]
    needed: Set[Tuple[int, ...]] = set()
    for plan in plans:
        for _, v, u in plan:
            if v:
                needed.add(v)
            if u:
                needed.add(u)
    li = _li_half_all(needed, P, N)
    one = 1 << P
    li[()] = one
    results = []
    with mpmath.workprec(target):
        for w, plan in zip(words, plans):
            if not w:
                results.append(mpmath.mpf(1))
                continue
            total = 0
            for sign, v, u in plan:
                if sign > 0:
                    total += li[v] * li[u]
                else:
                    total -= li[v] * li[u]
            if as_zeta and sum(w) % 2:
                total = -total
            results.append(mpmath.ldexp(mpmath.mpf(total), -2 * P))
    return results


# --------------------------------------------------------------------------
# public API
# --------------------------------------------------------------------------

class NumericValue(mpmath.mpf):
    """An ``mpmath.mpf`` that remembers how many digits were asked for.

    It behaves as any ``mpf`` (arithmetic gives plain ``mpf`` again); only
    ``str`` and ``repr`` show ``digits`` significant digits instead of the
    15 of mpmath's global precision, so that ``print(x.numeric(100))`` shows
    the 100 digits computed.

    >>> with mpmath.workdps(60):
    ...     v = NumericValue(mpmath.mpf(1) / 3, 50)
    >>> str(v) == "0." + "3" * 50
    True
    >>> type(v + 1) is mpmath.mpf
    True
    """

    __slots__ = ("digits",)

    def __new__(cls, value: mpmath.mpf, digits: int):
        # copy the mantissa as it is: ``mpf.__new__(cls, value)`` would round
        # it to the global precision
        self = mpmath.mpf.__new__(cls)
        self._mpf_ = value._mpf_
        self.digits = digits
        return self

    def __str__(self) -> str:
        return mpmath.nstr(self, self.digits)

    def __repr__(self) -> str:
        return f"mpf('{mpmath.nstr(self, self.digits, min_fixed=-5, max_fixed=5)}')"

    def __reduce__(self):
        return (_numeric_value, (self._mpf_, self.digits))


def _numeric_value(raw, digits: int) -> "NumericValue":
    """Unpickle a :class:`NumericValue` (its full precision is kept)."""
    value = mpmath.mpf.__new__(NumericValue)
    value._mpf_ = raw
    value.digits = digits
    return value


def zeta_numeric(indices: Tuple[int, ...], digits: int = 30) -> mpmath.mpf:
    """Value of the convergent MZV ``ζ(n1, ..., nk)`` to ``digits`` digits.

    ``ζ(n1, ..., nk) = Σ_{m1 > ... > mk ≥ 1} 1/(m1^n1 ... mk^nk)`` (first index
    on the largest summation variable).

    Parameters
    ----------
    indices:
        Positive integers ``(n1, ..., nk)`` with ``n1 ≥ 2``; ``()`` gives 1.
    digits:
        Number of correct significant decimal digits wanted.

    Returns
    -------
    mpmath.mpf
        The value, with a relative error below ``10^-digits`` (its mantissa
        carries a few bits more than ``digits``).

    Raises
    ------
    RegularizationError
        If ``n1 == 1`` (divergent MZV).
    InputError
        If an index is not a positive integer, or ``digits`` is not a
        positive integer.

    Examples
    --------
    >>> import mpmath
    >>> mpmath.nstr(zeta_numeric((5, 3), digits=20), 7)   # first index on the largest variable
    '0.03770767'
    >>> with mpmath.workdps(40):
    ...     abs(zeta_numeric((3, 1), digits=40) - mpmath.pi**4 / 360) < mpmath.mpf(10)**-40
    True
    """
    digits = _check_digits(digits)
    idx = _check_indices(indices)
    if not idx:
        with mpmath.workprec(math.ceil(digits * _LOG2_10) + _OUT_GUARD):
            return mpmath.mpf(1)
    word = indices_to_word(idx)
    (value,) = _evaluate_words([word], digits, _small_bits(idx), as_zeta=True)
    return value


def word_numeric(word: Tuple[int, ...], digits: int = 30) -> mpmath.mpf:
    """Value of the iterated integral ``G(word; 1)`` for a convergent word.

    ``G(a1, ..., an; x) = ∫_0^x dt/(t - a1) G(a2, ..., an; t)``; a convergent
    word starts with 0 and ends with 1 and then
    ``G(word; 1) = (-1)^k ζ(word_to_indices(word))`` with ``k`` the number of
    letters 1.

    Parameters
    ----------
    word:
        Letters 0 and 1, empty or starting with 0 and ending with 1.
    digits:
        Number of correct significant decimal digits wanted.

    Returns
    -------
    mpmath.mpf
        The value, with a relative error below ``10^-digits``.

    Raises
    ------
    RegularizationError
        If the word starts with 1 or ends with 0.
    InputError
        For letters other than 0 and 1, or bad ``digits``.

    Examples
    --------
    >>> import mpmath
    >>> mpmath.nstr(word_numeric((0, 1, 1), digits=20), 20)    # +ζ(2,1) = ζ(3)
    '1.2020569031595942854'
    >>> mpmath.nstr(word_numeric((0, 0, 1), digits=20), 20)    # -ζ(3)
    '-1.2020569031595942854'
    """
    digits = _check_digits(digits)
    w = _check_word(word)
    if not w:
        with mpmath.workprec(math.ceil(digits * _LOG2_10) + _OUT_GUARD):
            return mpmath.mpf(1)
    (g,) = _evaluate_words([w], digits, _small_bits(word_to_indices(w)), as_zeta=False)
    return g


def zeta_numeric_many(
    indices_list: Iterable[Tuple[int, ...]], digits: int = 30, *, small_bits: int | None = None
) -> Dict[Tuple[int, ...], mpmath.mpf]:
    """Values of many convergent MZVs, sharing all partial sums.

    Every polylogarithm ``Li_s(1/2)`` and every nested harmonic-sum array is
    computed once for the whole list (one walk of the trie of index tails at
    a common working precision), so a full table of all ``2^(w-2)`` MZVs of
    each weight ``w ≤ 14`` costs about as much as a few hundred single calls.

    Parameters
    ----------
    indices_list:
        Index tuples of convergent MZVs (duplicates allowed; ``()`` gives 1).
    digits:
        Number of correct significant decimal digits wanted for each value.
    small_bits:
        Optional: ``b`` with every value ``≥ 2^-b`` (at least the bound the
        list itself implies).  The working precision depends only on
        ``digits``, ``b`` and the longest word, so pieces of one list
        evaluated with the same ``b`` and word length give bit-identical
        values to the whole list (used to split a table build into tasks).

    Returns
    -------
    dict
        ``{indices: value}`` with tuple keys.

    Raises
    ------
    RegularizationError, InputError
        As :func:`zeta_numeric`, for the first offending entry.

    Examples
    --------
    >>> import mpmath
    >>> vals = zeta_numeric_many([(2,), (2, 1), (3,)], digits=20)
    >>> sorted(vals)
    [(2,), (2, 1), (3,)]
    >>> abs(vals[(2, 1)] - vals[(3,)]) < 1e-19   # Euler: ζ(2,1) = ζ(3)
    True
    """
    digits = _check_digits(digits)
    idxs = [_check_indices(i) for i in indices_list]
    unique = list(dict.fromkeys(idxs))
    nonempty = [i for i in unique if i]
    out: Dict[Tuple[int, ...], mpmath.mpf] = {}
    if () in unique:
        with mpmath.workprec(math.ceil(digits * _LOG2_10) + _OUT_GUARD):
            out[()] = mpmath.mpf(1)
    if nonempty:
        small = max(_small_bits(i) for i in nonempty)
        if small_bits is not None:
            small = max(small, int(small_bits))
        words = [indices_to_word(i) for i in nonempty]
        for i, value in zip(nonempty, _evaluate_words(words, digits, small, as_zeta=True)):
            out[i] = value
    return out
