"""Independent reference evaluator of multiple zeta values, for the tests only.

It shares no numerical code with :mod:`lowenergy.zeta.numeric` and is written
differently on purpose, so that agreement between the two is a real check:

* plain ``mpmath.mpf`` floating-point arithmetic at a local ``workprec``
  (the package uses fixed-point Python integers);
* the path of the iterated integral is split at ``1/3`` instead of ``1/2``
  (Hölder convolution; Borwein, Bradley, Broadhurst, Lisoněk, "Special values
  of multiple polylogarithms", Trans. AMS 353 (2001), section 7):

      I(0; a1..aN; 1) = Σ_k I(1/3; a1..ak; 1) · I(0; a(k+1)..aN; 1/3),
      I(1/3; a1..ak; 1) = (-1)^k G(1-ak, ..., 1-a1; 2/3),

  with ``G(0^(m1-1) 1 ... 0^(md-1) 1; y) = (-1)^d Li_{m1..md}(y)``;
* each ``Li_s(y) = Σ_{n1>...>nd≥1} y^n1 / (n1^m1 ... nd^md)`` is summed on its
  own, carrying all ``d - 1`` nested tail sums along in one loop over ``n``
  (the package instead shares arrays between polylogarithms);
* words and index lists are converted by local code, not by
  :mod:`lowenergy.words`.

Values of ``Li_s(y)`` are memoized per (working precision, y, s) in a
module-level dictionary; that is a pure cache and touches no mpmath state.
"""

from __future__ import annotations

import math
from typing import Dict, Sequence, Tuple

import mpmath

__all__ = ["reference_mzv", "reference_word", "reference_li"]

_LI_CACHE: Dict[Tuple[int, int, Tuple[int, ...]], mpmath.mpf] = {}


def _to_word(indices: Sequence[int]) -> Tuple[int, ...]:
    letters = []
    for n in indices:
        letters += [0] * (n - 1) + [1]
    return tuple(letters)


def _to_indices(word: Sequence[int]) -> Tuple[int, ...]:
    assert not word or word[-1] == 1, word
    out, zeros = [], 0
    for a in word:
        if a == 1:
            out.append(zeros + 1)
            zeros = 0
        else:
            zeros += 1
    return tuple(out)


def _terms_needed(third: int, depth: int, prec: int) -> int:
    """Number of terms so that the tail of Li_s(third/3) is below 2^-prec.

    Terms are ≤ y^n (1 + ln n)^(depth-1); for n ≥ 4 depth consecutive terms
    shrink by a factor ≤ (2/3) e^(1/4) < 0.86, so the tail is ≤ 8 times the
    first omitted term.
    """
    rate = math.log2(3.0 / third)
    n = 4 * depth + 1
    while n * rate < prec + 3 + (depth - 1) * math.log2(1.0 + math.log(n + 1.0)):
        n += 16
    return n


def reference_li(s: Tuple[int, ...], third: int, prec: int) -> mpmath.mpf:
    """``Li_s(third/3)`` for ``third`` in (1, 2), at working precision ``prec`` bits."""
    key = (prec, third, s)
    hit = _LI_CACHE.get(key)
    if hit is not None:
        return hit
    d = len(s)
    nterms = _terms_needed(third, d, prec)
    with mpmath.workprec(prec):
        y = mpmath.mpf(third) / 3
        # tails[j] = Σ_{n > n_j > ... > n_(d-1)} Π_{i ≥ j} n_i^-s_i  (j = 1..d-1); tails[d] = 1
        tails = [mpmath.mpf(0)] * d + [mpmath.mpf(1)]
        power = mpmath.mpf(1)
        total = mpmath.mpf(0)
        for n in range(1, nterms + 1):
            power *= y
            total += power * tails[1] / (n ** s[0])
            for j in range(1, d):  # ascending: tails[j+1] is still the sum over n_(j+1) < n
                tails[j] += tails[j + 1] / (n ** s[j])
        _LI_CACHE[key] = total
    return total


def _g(word: Tuple[int, ...], third: int, prec: int) -> mpmath.mpf:
    """``G(word; third/3)`` for a word that is empty or ends in 1."""
    if not word:
        return mpmath.mpf(1)
    idx = _to_indices(word)
    value = reference_li(idx, third, prec)
    return value if len(idx) % 2 == 0 else -value


def _working_prec(word: Tuple[int, ...], digits: int) -> int:
    # One precision for all words of up to 12 letters, so that they share the
    # cache of polylogarithm values.
    length = max(len(word), 12)
    n_terms = _terms_needed(2, length, math.ceil(digits * 3.33) + 128)
    # relative rounding errors: ≤ (ops per Li) · (number of products) · 2^-prec
    # (every sum here has terms of one sign); the MZV is ≥ its first term
    # 1/(d^n1 (d-1)^n2 ...) ≥ 2^-(weight·log2(weight)).
    small = math.ceil(length * math.log2(length + 1))
    guard = (n_terms * (length + 2) ** 2).bit_length() + 16
    return math.ceil(digits * math.log2(10)) + small + guard


def reference_word(word: Sequence[int], digits: int = 50) -> mpmath.mpf:
    """``G(word; 1)`` for a convergent word (starts with 0, ends with 1)."""
    w = tuple(word)
    assert all(a in (0, 1) for a in w), w
    assert not w or (w[0] == 0 and w[-1] == 1), w
    prec = _working_prec(w, digits)
    with mpmath.workprec(prec):
        total = mpmath.mpf(0)
        for k in range(len(w) + 1):
            head = tuple(1 - a for a in reversed(w[:k]))
            term = _g(head, 2, prec) * _g(w[k:], 1, prec)
            total += term if k % 2 == 0 else -term
    with mpmath.workprec(math.ceil(digits * math.log2(10)) + 8):
        return +total


def reference_mzv(indices: Sequence[int], digits: int = 50) -> mpmath.mpf:
    """``ζ(n1, ..., nk)`` (first index on the largest variable), convergent only."""
    idx = tuple(indices)
    assert all(isinstance(n, int) and n >= 1 for n in idx), idx
    assert not idx or idx[0] >= 2, idx
    g = reference_word(_to_word(idx), digits)
    with mpmath.workprec(math.ceil(digits * math.log2(10)) + 8):
        return g if len(idx) % 2 == 0 else -g
