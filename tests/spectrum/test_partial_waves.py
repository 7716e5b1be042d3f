"""Gegenbauer decomposition of residues, and unitarity of the superstring form factor.

Sources:
* Gegenbauer polynomials: A&S 22.3.4 (explicit sum), 22.2.3 (orthogonality,
  weight (1-x^2)^(α-1/2), norm π 2^(1-2α) Γ(n+2α)/(n!(n+α)Γ(α)^2)); sympy's
  ``gegenbauer`` and the recurrence A&S 22.7.3 are used as independent
  implementations; Chebyshev T_n for D = 3 (A&S 22.3.6, sympy ``chebyshevt``).
* The open-superstring form factor Γ(-s)Γ(-t)/Γ(1-s-t) (α' = 1, the
  four-gluon amplitude with its kinematic factor stripped — from memory) has
  residues (t+1)...(t+n-1)/n! at s = n (checked against sympy in
  test_residues.py).  That their partial waves are
  non-negative exactly up to D = 10, the critical dimension, is a known result
  (Arkani-Hamed, Eberhardt, Huang, Mizera, "On unitarity of tree-level string
  amplitudes", JHEP 2022 — from memory).  What is verified here: all
  coefficients ≥ 0 for D = 3..10 at levels n = 1..20, and for D > 10 the first
  negative coefficient is the scalar (J = 0) at level n = 3, whose value is
  (10 - D)/(24 (D - 1)) (derived in :func:`test_level_three_scalar_closed_form`).
"""

from __future__ import annotations

from fractions import Fraction
from functools import lru_cache

import mpmath
import pytest
import sympy

from lowenergy.errors import InputError
from lowenergy.spectrum.partial_waves import (
    alpha_of_dimension,
    decompose,
    gegenbauer_power_coefficients,
    partial_waves,
    unitarity_scan,
)
from lowenergy.spectrum.residues import residues
from lowenergy.zeta.element import MZV

from .common import beta, beta_one_minus_t, beta_type

X = sympy.symbols("x")
LEVELS = 20


@lru_cache(maxsize=None)
def superstring_table():
    # Γ(-s)Γ(-t)/Γ(1-s-t) = ∫ x^(-s-1)(1-x)^(-t) dx / (-t)
    return residues(beta_one_minus_t(), LEVELS).divided({1: -1}, strict=False)


def _q(c):
    return sympy.Rational(c.numerator, c.denominator)


@pytest.mark.parametrize("alpha", [Fraction(1, 2), Fraction(1), Fraction(3, 2), Fraction(7, 2), Fraction(5)])
def test_gegenbauer_against_sympy(alpha):
    for J in range(9):
        ours = sum(_q(c) * X ** p for p, c in enumerate(gegenbauer_power_coefficients(J, alpha)))
        ref = sympy.expand(sympy.gegenbauer(J, _q(alpha), X))
        assert sympy.expand(ours - ref) == 0, (J, alpha)


def test_chebyshev_for_three_dimensions():
    assert alpha_of_dimension(3) == 0
    for J in range(9):
        ours = sum(_q(c) * X ** p for p, c in enumerate(gegenbauer_power_coefficients(J, 0)))
        assert sympy.expand(ours - sympy.chebyshevt(J, X)) == 0


def test_decompose_reconstructs():
    poly = [Fraction(3), Fraction(-2, 7), Fraction(5, 3), Fraction(1, 9), Fraction(-4)]
    for alpha in (Fraction(0), Fraction(1, 2), Fraction(7, 2)):
        coeffs = decompose(poly, alpha)
        rebuilt = sum(_q(a) * (sympy.chebyshevt(J, X) if alpha == 0 else sympy.gegenbauer(J, _q(alpha), X))
                      for J, a in coeffs.items())
        assert sympy.expand(rebuilt - sum(_q(c) * X ** p for p, c in enumerate(poly))) == 0


def _gegenbauer_recurrence(J, alpha, x):
    prev, cur = mpmath.mpf(1), 2 * alpha * x
    if J == 0:
        return prev
    for k in range(1, J):
        prev, cur = cur, (2 * (k + alpha) * x * cur - (k + 2 * alpha - 1) * prev) / (k + 1)
    return cur


@pytest.mark.parametrize("D,n", [(10, 6), (4, 5), (7, 4)])
def test_projection_by_orthogonality(D, n):
    # a_J = ∫ w P C_J / h_J with A&S 22.2.3, C_J from the recurrence A&S 22.7.3
    # (n+1) C_(n+1) = 2(n+α) x C_n - (n+2α-1) C_(n-1), C_0 = 1, C_1 = 2αx; P(x) = R_n(t = n(x-1)/2)
    table = superstring_table()
    pw = partial_waves(table, D)
    alpha = mpmath.mpf(D - 3) / 2
    rpoly = table.residue(n)
    with mpmath.workdps(30):
        def P(x):
            tt = n * (x - 1) / 2
            return sum(mpmath.mpf(c[()].rational_value().numerator) / c[()].rational_value().denominator
                       * tt ** p for p, c in rpoly.items())
        for J in range(n):
            h = mpmath.pi * 2 ** (1 - 2 * alpha) * mpmath.gamma(J + 2 * alpha) / (
                mpmath.factorial(J) * (J + alpha) * mpmath.gamma(alpha) ** 2)
            proj = mpmath.quad(lambda x: (1 - x * x) ** (alpha - mpmath.mpf(1) / 2) * P(x)
                               * _gegenbauer_recurrence(J, alpha, x), [-1, 1]) / h
            w = pw.waves[n].get(J)
            ours = w.value if w is not None else 0
            assert abs(proj - ours) < mpmath.mpf(10) ** -15 * max(1, abs(proj)), (D, n, J)


@pytest.mark.parametrize("D", range(3, 11))
def test_superstring_non_negative_up_to_ten_dimensions(D):
    pw = partial_waves(superstring_table(), D)
    assert pw.levels() == list(range(1, LEVELS + 1))
    assert pw.is_unitary() is True
    assert pw.negatives() == []
    for n in range(1, LEVELS + 1):
        # the residue has degree n - 1: top spin J = n - 1, positive
        top = max(pw.waves[n])
        assert top == n - 1 and pw.waves[n][top].sign == 1
    assert pw.top_spin_negative == []


def test_level_three_scalar_closed_form():
    # R_3(t) = (t+1)(t+2)/6 and t = 3(x-1)/2 give (9x^2 - 1)/24.  A&S 22.3.4:
    # C_2 = 2α(α+1)x^2 - α, C_0 = 1, so x^2 = C_2/(2α(α+1)) + 1/(2(α+1)) and
    # a_0 = (9/(2(α+1)) - 1)/24 = (10 - D)/(24 (D - 1)) with 2α = D - 3.
    table = superstring_table()
    for D in list(range(4, 31)) + [Fraction(21, 2), Fraction(41, 4)]:
        pw = partial_waves(table, D, levels=[3])
        expected = Fraction(10 - Fraction(D), 24 * (Fraction(D) - 1))
        got = pw.coefficient(3, 0)
        if expected == 0:
            assert got == {}
        else:
            assert got == {(): MZV.rational(expected)}


def test_first_negative_above_ten_dimensions():
    scan = unitarity_scan(superstring_table(), [10] + list(range(11, 27)) + [Fraction(21, 2)])
    assert scan[Fraction(10)] is None
    for D in list(range(11, 27)) + [Fraction(21, 2)]:
        assert scan[Fraction(D)] == (3, 0), D


def test_beta_sign_convention_flag():
    # B(-s,-t) has residues -(t+1)_n/n!: as they come (sign +1) the top spin is negative at
    # every level and the table says so; with sign -1 the top spins are positive
    table = residues(beta(), 6)
    plus = partial_waves(table, 4, sign=1)
    minus = partial_waves(table, 4, sign=-1)
    assert plus.top_spin_negative == list(range(1, 7))
    assert minus.top_spin_negative == []
    for n in range(1, 7):
        assert max(minus.waves[n]) == n       # degree n in t


def test_dimension_below_three_refused():
    with pytest.raises(InputError, match="D ="):
        partial_waves(superstring_table(), 2)
    with pytest.raises(InputError):
        partial_waves(superstring_table(), 10, sign=2)


def test_double_poles_flagged():
    # log x insertion: only double poles at s = n; the simple-pole part is zero
    table = residues(beta_type(word=(0,)), 3)
    pw = partial_waves(table, 10)
    assert pw.higher_poles == [1, 2, 3]
    assert pw.waves == {}


def test_parameters_leave_signs_open():
    i = beta_type(coefficient={(0, 0, 0): MZV.one(), (0, 0, 1): MZV.rational(2)}, parameters=("a",))
    pw = partial_waves(residues(i, 3), 10, sign=-1)
    assert pw.is_unitary() is None
    w = pw.waves[1][1]
    assert set(w.coefficient) == {(0,), (1,)} and w.sign is None
    with pytest.raises(InputError):
        unitarity_scan(residues(i, 3), [10])


def test_partial_wave_exports(tmp_path):
    pw = partial_waves(superstring_table(), 11, levels=[1, 2, 3])
    rows = pw.to_rows()
    neg = [r for r in rows if r["negative"] == "yes"]
    assert [(r["level"], r["spin"], r["exact"]) for r in neg] == [("3", 0, "-1/240")]
    assert len(pw.to_dataframe()) == len(rows)
    text = pw.write(tmp_path / "pw.csv").read_text()
    assert "-1/240" in text and text.splitlines()[0] == "level,spin,param,exact,numeric,negative"
