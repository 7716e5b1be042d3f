"""Every reduction of weight ≤ 10 against an independent numerical evaluation.

Reference: ``tests/reference.py`` (mpmath arithmetic, Hölder convolution split
at 1/3 -- Borwein, Bradley, Broadhurst, Lisoněk, Trans. AMS 353 (2001)),
written separately from the package's numerics and from its algebra.  The
canonical form is evaluated from mpmath values of its generators computed by
the same reference, so the check covers the exact rational coefficients.
"""

from __future__ import annotations

import mpmath
import pytest

from lowenergy.words import admissible_indices
from lowenergy.zeta.element import zeta
from tests.reference import reference_mzv

DIGITS = 50


def reference_value(x, digits):
    with mpmath.workdps(digits + 20):
        total = mpmath.mpf(0)
        for mono, c in x.terms():
            term = mpmath.mpf(c.numerator) / c.denominator
            for g in mono:
                term *= reference_mzv(g, digits + 20)
            total += term
        return total


@pytest.mark.parametrize("w", range(2, 11))
def test_all_reductions_agree_with_reference(w):
    for idx in admissible_indices(w):
        exact = zeta(*idx)
        with mpmath.workdps(DIGITS + 20):
            lhs = reference_mzv(idx, DIGITS + 20)
            rhs = reference_value(exact, DIGITS)
            assert abs(lhs - rhs) <= abs(lhs) * mpmath.mpf(10) ** (-DIGITS), (idx, exact)


def test_weight_12_sample_against_reference():
    # a few weight-12 values, including the depth-4 generator ζ(2,2,3,5)'s neighbours
    for idx in [(3, 9), (9, 3), (5, 7), (7, 5), (2, 2, 3, 5), (3, 3, 3, 3), (2, 1, 2, 1, 2, 4), (6, 6)]:
        exact = zeta(*idx)
        with mpmath.workdps(60):
            lhs = reference_mzv(idx, 40)
            rhs = reference_value(exact, 40)
            assert abs(lhs - rhs) <= abs(lhs) * mpmath.mpf(10) ** -40, idx


def test_element_numeric_matches_reference():
    x = zeta(5, 3) * 3 - zeta(2) ** 2 + 7
    with mpmath.workdps(120):
        assert abs(x.numeric(100) - reference_value(x, 100)) < mpmath.mpf(10) ** -99
