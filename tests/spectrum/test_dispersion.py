"""Fixed-t dispersion sums against the exact expansion and against mpmath.

Sources:
* B(-s,-t) = Γ(-s)Γ(-t)/Γ(-s-t) = -1/s - 1/t + ζ(2)(s+t) + ζ(3)(s+t)^2 + ...
  (METHOD.md §4 sanity check; from Γ(1-s)Γ(1-t)/Γ(1-s-t) =
  exp(Σ_k ζ(k)/k (s^k + t^k - (s+t)^k)), A&S 6.1.33).  So the coefficient of
  s^2 is ζ(3), of s^4 is ζ(5), of s·t is 2ζ(3).
* The dispersion sums are elementary: Σ 1/n^3 = ζ(3), Σ 1/n^5 = ζ(5)
  (A&S 23.2.1), and Euler's Σ H_n/n^2 = 2ζ(3) (from memory).
* ∫ x^(-s-1)(1-x)^(-t-1) log x dx = B(-s,-t)(ψ(-s) - ψ(-s-t)) has regular part
  -ζ(2) - 2ζ(3)(s+t) + ... (METHOD.md §4), i.e. -2ζ(3) at s^1 t^0, reached
  here through double poles.
The reference numbers ζ(3), ζ(5) come from mpmath.zeta, not from the package.
"""

from __future__ import annotations

from fractions import Fraction
from functools import lru_cache

import mpmath
import pytest

from lowenergy.errors import InputError
from lowenergy.expansion.engine import expand
from lowenergy.spectrum.dispersion import check_dispersion, dispersive_sum, dispersive_terms
from lowenergy.spectrum.residues import residues
from lowenergy.zeta.element import MZV, zeta

from .common import beta, beta_type


@lru_cache(maxsize=None)
def beta_data(levels):
    i = beta()
    return i, residues(i, levels), expand(i, 5)


def test_dispersion_terms_are_exact():
    # -R_n(0)/n^(k+1) with R_n(0) = -1: the terms of Σ 1/n^3
    _, table, _ = beta_data(30)
    terms = dispersive_terms(table, 2, 0)
    assert [p for p, _ in terms] == list(range(1, 31))
    assert all(c == MZV.rational(Fraction(1, int(p) ** 3)) for p, c in terms)
    # s t: -[t^1]R_n/n^2 = H_n/n^2
    terms = dispersive_terms(table, 1, 1)
    h = Fraction(0)
    for p, c in terms:
        h += Fraction(1, int(p))
        assert c == MZV.rational(h / int(p) ** 2)


@pytest.mark.parametrize("k,j,z,factor", [(2, 0, 3, 1), (4, 0, 5, 1), (1, 1, 3, 2)])
def test_beta_zeta_coefficients_from_dispersion(k, j, z, factor):
    i, table, ex = beta_data(40)
    r = check_dispersion(i, k, j, table=table, expansion=ex)
    assert r.exact == zeta(z) * factor
    with mpmath.workdps(40):
        ref = factor * mpmath.zeta(z)
        assert abs(r.value - ref) < mpmath.mpf(10) ** -10 * ref, (k, j, r.value, ref)
        assert abs(r.exact_value - ref) < mpmath.mpf(10) ** -30
    assert r.digits >= 10
    assert r.levels == 40 and r.max_location == 40
    # the error estimate is honest: the true error is below it (times a safety factor 100)
    assert abs(r.value - r.exact_value) <= 100 * r.error + mpmath.mpf(10) ** -40


def test_richardson_and_fit_agree_on_pure_power_tails():
    _, table, _ = beta_data(40)
    a = dispersive_sum(table, 2, 0, method="richardson")
    b = dispersive_sum(table, 2, 0, method="fit")
    with mpmath.workdps(40):
        ref = mpmath.zeta(3)
        assert abs(a.value - ref) < mpmath.mpf(10) ** -25
        assert abs(b.value - ref) < mpmath.mpf(10) ** -15
    raw = dispersive_sum(table, 2, 0, method="none")
    assert abs(raw.value - ref) > mpmath.mpf(10) ** -4     # without extrapolation: ~1/(2·40^2)


def test_symmetric_t_channel_dispersion():
    i, table, ex = beta_data(40)
    # t-channel poles (x = 1 end point): the coefficient of t^2 s^1
    r = check_dispersion(i, 2, 1, var="t", table=table, expansion=ex)
    assert r.exact == ex.value(1, 2)
    assert r.digits >= 10


def test_double_poles_of_log_insertion():
    # the s^1 t^0 coefficient -2ζ(3) from the double poles -(t+1)_n/n!/(s-n)^2:
    # (-1)^2 binom(2,1) [t^0]R_{n,2}/n^3 = -2/n^3 summed
    i = beta_type(word=(0,))
    r = check_dispersion(i, 1, 0, levels=40)
    with mpmath.workdps(40):
        assert abs(r.value + 2 * mpmath.zeta(3)) < mpmath.mpf(10) ** -10
    assert r.exact == zeta(3) * -2


def test_log_one_minus_x_needs_log_terms_in_the_fit():
    # log(1-x): residues grow like log n; the fit with log powers still gets ≥ 10 digits at 60 levels
    i = beta_type(word=(1,))
    r = check_dispersion(i, 2, 0, levels=60)
    assert r.digits >= 10
    assert r.exact == zeta(2) ** 2 * Fraction(-1, 2)


def test_unsubtracted_sum_fails_where_it_must():
    # s^0 t^1 of B(-s,-t): the fixed-t sum diverges (the -1/t pole); the estimate says so
    i, table, ex = beta_data(40)
    r = check_dispersion(i, 0, 1, table=table, expansion=ex)
    assert r.digits < 2
    assert r.error > mpmath.mpf("0.01")


def test_half_integer_locations():
    # B(-2s,-t): poles at s = n/2; coefficient of s^2 is 4ζ(3); Richardson refuses the spacing
    i = beta_type(x_coeff=-2)
    table = residues(i, 30)
    with pytest.raises(InputError):
        dispersive_sum(table, 2, 0, method="richardson")
    r = check_dispersion(i, 2, 0, table=table)
    with mpmath.workdps(40):
        assert abs(r.value - 4 * mpmath.zeta(3)) < mpmath.mpf(10) ** -10
    assert r.method == "fit"


def test_bad_arguments():
    _, table, _ = beta_data(30)
    with pytest.raises(InputError):
        dispersive_sum(table, -1, 0)
    with pytest.raises(InputError):
        dispersive_sum(table, 2, 0, method="magic")
    with pytest.raises(InputError):
        dispersive_sum(residues(beta(), 1), 2, 0)
