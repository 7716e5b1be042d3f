"""Words over {0, 1}, index lists, shuffle and stuffle products, regularization.

Conventions (see README, "Conventions"):

* A *word* is a tuple of letters 0 and 1.  ``G(a1, ..., an; x)`` is the
  iterated integral ``∫_0^x dt/(t - a1) G(a2, ..., an; t)``, so the first
  letter sits next to the upper end point.
* An *index list* ``(n1, ..., nk)`` stands for
  ``ζ(n1, ..., nk) = Σ_{m1 > ... > mk ≥ 1} 1/(m1^n1 ... mk^nk)``: the first
  index sits on the largest summation variable.  It is convergent iff
  ``n1 ≥ 2``.
* ``ζ(n1, ..., nk) = (-1)^k G(0^(n1-1), 1, ..., 0^(nk-1), 1; 1)``.

Linear combinations are plain ``dict[key, coefficient]`` (coefficients are
ints or :class:`fractions.Fraction`), so everything here is exact and works
without any class of the package.  This module is the bottom layer.

Examples
--------
>>> indices_to_word((2, 1))
(0, 1, 1)
>>> word_to_indices((0, 1, 1))
(2, 1)
>>> sorted(shuffle((0,), (1,)).items())
[((0, 1), 1), ((1, 0), 1)]
>>> sorted(stuffle((2,), (3,)).items())
[((2, 3), 1), ((3, 2), 1), ((5,), 1)]
>>> dual_word((0, 1, 1))   # ζ(2,1) = ζ(3)
(0, 0, 1)
"""

from __future__ import annotations

from fractions import Fraction
from functools import lru_cache
from math import comb
from typing import Dict, Iterable, Tuple

from .errors import InputError, RegularizationError
from .poly import add_into, add_term

__all__ = [
    "Word",
    "Indices",
    "indices_to_word",
    "word_to_indices",
    "is_convergent_word",
    "is_convergent_indices",
    "compositions",
    "admissible_indices",
    "all_words",
    "ones_relaxed",
    "shuffle",
    "stuffle",
    "shuffle_many",
    "dual_word",
    "dual_indices",
    "regularize_word",
    "regularize_indices",
    "add_into",
    "regularization_cost",
]

Word = Tuple[int, ...]
Indices = Tuple[int, ...]
Combination = Dict[tuple, Fraction]


# add_into(target, source, factor): ``target += factor * source`` for linear
# combinations of words, zeros removed -- the one copy is in lowenergy.poly
# (imported above; the name stays in this module's __all__).


# --------------------------------------------------------------------------
# index lists <-> words
# --------------------------------------------------------------------------

def indices_to_word(indices: Iterable[int]) -> Word:
    """The word ``0^(n1-1) 1 0^(n2-1) 1 ...`` of an index list."""
    word: list[int] = []
    for n in indices:
        if not isinstance(n, int) or isinstance(n, bool) or n < 1:
            raise InputError(
                f"MZV indices must be positive integers, got {n!r}",
                hint="write e.g. zeta(3,5)",
            )
        word.extend([0] * (n - 1))
        word.append(1)
    return tuple(word)


def word_to_indices(word: Word) -> Indices:
    """Inverse of :func:`indices_to_word`; the word must end in the letter 1."""
    if word and word[-1] != 1:
        raise InputError(f"word {word} ends in 0 and is not an index list")
    indices: list[int] = []
    run = 0
    for letter in word:
        if letter == 0:
            run += 1
        elif letter == 1:
            indices.append(run + 1)
            run = 0
        else:
            raise InputError(f"letters of words are 0 and 1, got {letter!r}")
    return tuple(indices)


def is_convergent_word(word: Word) -> bool:
    """True for the empty word and words starting with 0 and ending with 1."""
    return not word or (word[0] == 0 and word[-1] == 1)


def is_convergent_indices(indices: Indices) -> bool:
    """True iff ``ζ(indices)`` converges (empty list, or first index ≥ 2)."""
    return not indices or indices[0] >= 2


def compositions(weight: int, first_min: int = 1) -> list[Indices]:
    """All index lists of the given weight whose first index is ≥ first_min."""
    out: list[Indices] = []

    def rec(prefix: list[int], remaining: int) -> None:
        if remaining == 0:
            out.append(tuple(prefix))
            return
        lo = first_min if not prefix else 1
        for n in range(lo, remaining + 1):
            prefix.append(n)
            rec(prefix, remaining - n)
            prefix.pop()

    if weight == 0:
        return [()]
    rec([], weight)
    return out


def admissible_indices(weight: int) -> list[Indices]:
    """Convergent index lists of a weight (there are 2^(weight-2) for weight ≥ 2)."""
    if weight == 1:
        return []
    return compositions(weight, first_min=2)


def all_words(length: int) -> list[Word]:
    """All 2^length words of a length, in lexicographic order."""
    return [tuple((k >> (length - 1 - i)) & 1 for i in range(length)) for k in range(2 ** length)]


def ones_relaxed(word: Word):
    """The words ``v`` with ``v_i = 0`` wherever ``word_i = 0`` (each letter 1
    of ``word`` kept or turned into 0), with the sign ``(-1)^(zeros of v)``.

    This is the coefficient pattern of the substitution ``φ: x0 -> -x0 - x1,
    x1 -> x1``: the coefficient of ``x_word`` in ``φ(Σ_v Z(v) x_v)`` is
    ``Σ sign · Z(v)`` over these pairs.  Order: the subsets of the ones as
    binary numbers, the first 1 of ``word`` the lowest bit.

    >>> list(ones_relaxed((0, 1, 1)))
    [((0, 0, 0), -1), ((0, 1, 0), 1), ((0, 0, 1), 1), ((0, 1, 1), -1)]
    """
    ones = [i for i, a in enumerate(word) if a == 1]
    for mask in range(1 << len(ones)):
        v = [0] * len(word)
        for bit, pos in enumerate(ones):
            if mask >> bit & 1:
                v[pos] = 1
        zeros = len(word) - bin(mask).count("1")
        yield tuple(v), (-1 if zeros % 2 else 1)


# --------------------------------------------------------------------------
# products
# --------------------------------------------------------------------------

@lru_cache(maxsize=200_000)
def _shuffle_cached(u: Word, v: Word) -> tuple:
    if not u:
        return ((v, 1),)
    if not v:
        return ((u, 1),)
    out: dict = {}
    for w, c in _shuffle_cached(u[1:], v):
        key = (u[0],) + w
        out[key] = out.get(key, 0) + c
    for w, c in _shuffle_cached(u, v[1:]):
        key = (v[0],) + w
        out[key] = out.get(key, 0) + c
    return tuple(out.items())


def shuffle(u: Word, v: Word) -> Dict[Word, int]:
    """Shuffle product ``u ш v`` as ``{word: multiplicity}``.

    Works for any alphabet (tuples of hashable letters).
    """
    return dict(_shuffle_cached(tuple(u), tuple(v)))


def shuffle_many(*words: Word) -> Dict[Word, int]:
    """Shuffle product of several words."""
    result: Dict[Word, int] = {(): 1}
    for w in words:
        nxt: Dict[Word, int] = {}
        for a, ca in result.items():
            for b, cb in _shuffle_cached(a, tuple(w)):
                nxt[b] = nxt.get(b, 0) + ca * cb
        result = nxt
    return result


@lru_cache(maxsize=200_000)
def _stuffle_cached(u: Indices, v: Indices) -> tuple:
    if not u:
        return ((v, 1),)
    if not v:
        return ((u, 1),)
    out: dict = {}
    for w, c in _stuffle_cached(u[1:], v):
        key = (u[0],) + w
        out[key] = out.get(key, 0) + c
    for w, c in _stuffle_cached(u, v[1:]):
        key = (v[0],) + w
        out[key] = out.get(key, 0) + c
    for w, c in _stuffle_cached(u[1:], v[1:]):
        key = (u[0] + v[0],) + w
        out[key] = out.get(key, 0) + c
    return tuple(out.items())


def stuffle(u: Indices, v: Indices) -> Dict[Indices, int]:
    """Stuffle (quasi-shuffle) product of two index lists.

    ``ζ(u) ζ(v) = Σ c ζ(w)`` for convergent u, v (Hoffman 1997).
    """
    return dict(_stuffle_cached(tuple(u), tuple(v)))


# --------------------------------------------------------------------------
# duality
# --------------------------------------------------------------------------

def dual_word(word: Word) -> Word:
    """Duality ``a1...an -> (1-an)...(1-a1)``: ``G(w; 1) = G(dual(w); 1)``.

    For convergent words this is the duality ``ζ(w) = ζ(dual w)`` (the depths
    of a word and its dual have the sign (-1)^k absorbed consistently because
    both values are positive; see :func:`dual_indices`).
    """
    return tuple(1 - a for a in reversed(word))


def dual_indices(indices: Indices) -> Indices:
    """Dual index list: ``ζ(indices) = ζ(dual_indices(indices))``."""
    if not is_convergent_indices(indices):
        raise RegularizationError(f"duality needs a convergent MZV, got ζ{indices}")
    return word_to_indices(dual_word(indices_to_word(indices)))


# --------------------------------------------------------------------------
# shuffle regularization
# --------------------------------------------------------------------------

def _leading(word: tuple, letter) -> int:
    m = 0
    while m < len(word) and word[m] == letter:
        m += 1
    return m


def _trailing(word: tuple, letter) -> int:
    m = 0
    while m < len(word) and word[len(word) - 1 - m] == letter:
        m += 1
    return m


def _reduce_by_levels(start: tuple, level, step) -> tuple:
    """Apply a regularization recursion to a whole combination at once.

    ``level(key)`` is ``None`` for a convergent key, otherwise a tuple that
    ``step(key, coefficient, add)`` strictly lowers: it rewrites ``key`` as
    other keys (``add(other, c)``), all of a smaller level.  Processing the
    levels from the top down touches every key once, so the cost is the
    number of distinct keys (at most 2^weight) times the length of one step,
    and there is no recursion.  (Memoizing the value of every key separately
    instead costs up to 4^weight: each of the 2^weight values is itself a
    combination of up to 2^weight words.)
    """
    out: dict = {}
    pending: dict = {}
    buckets: dict = {}

    def add(key: tuple, c) -> None:
        lev = level(key)
        if lev is None:
            add_term(out, key, c)
            return
        if key not in pending:
            buckets.setdefault(lev, []).append(key)
        pending[key] = pending.get(key, 0) + c

    add(start, Fraction(1))
    while buckets:
        top = max(buckets)
        for key in buckets.pop(top):
            c = pending.pop(key)
            if c:
                step(key, c, add)
    return tuple(out.items())


def _regularize_leading_ones(word: Word, c, out: dict) -> None:
    """``out += c * reg(word)`` for a word ending in 1: ``1^m 0 u -> (-1)^m 0 (1^m ш u)``."""
    m = _leading(word, 1)
    if m == 0:
        out[word] = out.get(word, 0) + c
        return
    if m == len(word):  # 1^n: G(1;1)^n / n! = 0
        return
    sign = -c if m % 2 else c
    for w, k in _shuffle_cached((1,) * m, word[m + 1 :]):
        key = (0,) + w
        out[key] = out.get(key, 0) + sign * k


#: Above this estimated number of elementary steps the closed forms give way
#: to the level-by-level recursion (see :func:`regularization_cost`).
CLOSED_FORM_BUDGET = 4_000_000


def regularization_cost(word: Word) -> int:
    """An upper bound of the work of :func:`regularize_word` (elementary steps).

    With ``m`` leading ones, ``n`` trailing zeros and length ``L`` the closed
    forms below touch at most ``C(L, n) * C(L, m)`` words; words ``1^m 0^n``
    and convergent words cost nothing.  Callers facing users compare it with a
    budget before regularizing (:mod:`lowenergy.limits`).
    """
    word = tuple(word)
    n = _trailing(word, 0)
    m = _leading(word, 1)
    if not word or m + n == len(word) or (m == 0 and n == 0):
        return 1
    return comb(len(word), n) * comb(len(word), m)


def _regularize_closed(word: Word) -> tuple:
    out: dict = {}
    n = _trailing(word, 0)
    if n == 0:
        _regularize_leading_ones(word, Fraction(1), out)
    else:
        v, a = word[: len(word) - n - 1], word[len(word) - n - 1]
        sign = Fraction(-1 if n % 2 else 1)
        for w, k in _shuffle_cached(v, (0,) * n):
            _regularize_leading_ones(w + (a,), sign * k, out)
    return tuple((w, c) for w, c in out.items() if c)


@lru_cache(maxsize=20_000)
def _regularize_cached(word: Word) -> tuple:
    """Shuffle-regularized ``G(word; 1)`` as convergent words, G(0;1)=G(1;1)=0.

    Closed forms instead of the recursion ``0 ш (u 0^(m-1)) = m u 0^m + ...``
    (whose memoization word by word costs up to 4^length): with ``a = 1``,

    * ``reg(v a 0^n) = (-1)^n (v ш 0^n) a`` removes the trailing zeros,
    * ``reg(1^m 0 u) = (-1)^m 0 (1^m ш u)`` then the leading ones,
    * ``reg(1^m 0^n) = -(-1)^(m+n) 0^n 1^m``

    (the standard formulas for regularizing at the two end points; from
    memory, e.g. Ihara, Kaneko, Zagier 2006, §2; checked in
    tests/test_words.py against the recursive definition for every word up
    to length 12).  When :func:`regularization_cost` exceeds
    :data:`CLOSED_FORM_BUDGET` (massive cancellation, as for 1^9 0^9 with
    its 24310 x 24310 intermediate words), the recursion is run level by
    level on the whole combination instead (:func:`_reduce_by_levels`).
    """
    if not word:
        return (((), Fraction(1)),)
    if is_convergent_word(word):
        return ((word, Fraction(1)),)
    m, n = _leading(word, 1), _trailing(word, 0)
    if m + n == len(word):
        if m == 0 or n == 0:  # 0^n or 1^m: log(1)^n / n! = 0
            return ()
        return (((0,) * n + (1,) * m, Fraction(1 if (m + n) % 2 else -1)),)
    if regularization_cost(word) <= CLOSED_FORM_BUDGET:
        return _regularize_closed(word)
    return _reduce_by_levels(word, _shuffle_level, _shuffle_step)


def _shuffle_level(word: Word):
    if is_convergent_word(word):
        return None
    tz = _trailing(word, 0)
    return (tz, 0 if tz else _leading(word, 1))


def _shuffle_step(word: Word, c, add) -> None:
    n = len(word)
    if word[-1] == 0:
        # word = u 0^m with u empty or ending in 1.
        m = _trailing(word, 0)
        if m == n:  # 0^n, n >= 1: log(1)^n / n! = 0
            return
        u = word[: n - m]
        tail = (0,) * (m - 1)
        # 0 ш (u 0^(m-1)) = m u0^m + Σ_{i < len(u)} u[:i] 0 u[i:] 0^(m-1),
        # every other word with m-1 trailing zeros
        for i in range(len(u)):
            add(u[:i] + (0,) + u[i:] + tail, -c / m)
    else:
        # word = 1^m u with u empty or starting with 0 (and ending with 1).
        m = _leading(word, 1)
        if m == n:  # 1^n: G(1;1)^n / n! = 0
            return
        u = word[m:]
        head = (1,) * (m - 1)
        # 1 ш (1^(m-1) u) = m 1^m u + Σ_{i ≥ 1} 1^(m-1) u[:i] 1 u[i:],
        # every other word with m-1 leading ones
        for i in range(1, len(u) + 1):
            add(head + u[:i] + (1,) + u[i:], -c / m)


def regularize_word(word: Word) -> Dict[Word, Fraction]:
    """Shuffle-regularized value of ``G(word; 1)`` in convergent words.

    Conventions of METHOD.md §1: ``G(1; 1) := 0`` at the upper end point and
    the tangential base point at 0 (``G(0^n; x) = log(x)^n/n!``) at the lower
    one.  The result is a combination of convergent words.

    >>> regularize_word((1, 0))   # G(1,0;1) = -G(0,1;1) = ζ(2)
    {(0, 1): Fraction(-1, 1)}
    """
    word = tuple(word)
    for a in word:
        if a not in (0, 1):
            raise InputError(f"letters of words are 0 and 1, got {a!r}")
    return dict(_regularize_cached(word))


def regularize_indices(indices: Indices, scheme: str = "shuffle") -> Dict[Indices, Fraction]:
    """Regularized ``ζ(indices)`` (first index may be 1) in convergent index lists.

    ``scheme="shuffle"`` sets ``ζ_ш(1) = 0`` with shuffle products (the
    convention of iterated integrals, METHOD.md §1); ``scheme="stuffle"`` sets
    ``ζ_*(1) = 0`` with stuffle products.  The two agree on convergent lists
    and differ in general (Ihara, Kaneko, Zagier 2006, Theorem 1).
    """
    indices = tuple(indices)
    word = indices_to_word(indices)
    if scheme == "shuffle":
        k = len(indices)
        out: dict = {}
        for w, c in _regularize_cached(word):
            idx = word_to_indices(w)
            # ζ(idx) = (-1)^len(idx) G(w;1), and G(word;1) = (-1)^k ζ(indices)
            sign = (-1) ** (k + len(idx))
            out[idx] = out.get(idx, 0) + sign * c
        return {i: c for i, c in out.items() if c}
    if scheme == "stuffle":
        return dict(_stuffle_regularize_cached(indices))
    raise InputError(f"unknown regularization scheme {scheme!r}", hint="use 'shuffle' or 'stuffle'")


def _stuffle_level(indices: Indices):
    if is_convergent_indices(indices):
        return None
    return (_leading(indices, 1),)


def _stuffle_step(indices: Indices, c, add) -> None:
    m = _leading(indices, 1)
    if m == len(indices) == 1:
        return  # ζ_*(1) = T, regularized to 0
    rest = indices[m:]
    head = (1,) * (m - 1)
    # (1) * (1^(m-1) rest) = m 1^m rest + (terms with fewer leading ones),
    # and ζ_*(1) = 0 kills the left side
    target = (1,) * m + rest
    for w, d in _stuffle_cached((1,), head + rest):
        if w == target:
            assert d == m
            continue
        add(w, -c * d / m)


@lru_cache(maxsize=20_000)
def _stuffle_regularize_cached(indices: Indices) -> tuple:
    return _reduce_by_levels(indices, _stuffle_level, _stuffle_step)
