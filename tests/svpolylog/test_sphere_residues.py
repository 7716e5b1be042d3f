"""Pole parts of sphere integrals (:mod:`lowenergy.svpolylog.sphere_residues`).

Sources
-------
* Complex Beta function (Dotsenko & Fateev, Nucl. Phys. B 240 (1984) 312;
  Kawai, Lewellen & Tye, Nucl. Phys. B 269 (1986) 1):
  ``(1/π) ∫ d²z |z|^(2a-2) |1-z|^(2b-2) = Γ(a)Γ(b)Γ(1-a-b) / (Γ(1-a)Γ(1-b)Γ(a+b))``.
  With a = -S, b = -T, U = -S-T:
  ``f(S, T) = Γ(-S)Γ(-T)Γ(1+S+T) / (Γ(1+S)Γ(1+T)Γ(-S-T))``.
  Its residues are computed here by sympy (``sympy.residue``, ``gammasimp``)
  from this Gamma form, and checked once more by an mpmath limit.
* Insertions: ``log|1-z|² = ∂_b``, ``log|z|² = ∂_a`` under the integral, i.e.
  ``-∂_T f`` and ``-∂_S f``; the pole parts of a derivative are the
  derivatives of the pole parts (``∂_T [R(T)/(S-n)] = R'(T)/(S-n)``,
  ``-∂_S [R/(S-n)] = R/(S-n)²``).
* Shuffle: ``L_01 + L_10 = L_0 L_1 = log|z|² log|1-z|²`` (= ``∂_S ∂_T f``
  under the integral), and the Bloch-Wigner function ``D(z) = Im Li2(z) +
  arg(1-z) log|z|`` (Zagier, "The dilogarithm function", 2007, from memory)
  is odd under ``z -> z̄`` while the measure and ``|z|, |1-z|`` are even, so
  every pole part of ``L_01 - L_10 = -4i D`` vanishes.
* The expansions of ``L_w`` at 0, 1, ∞ used by the module are compared with
  the package's numerical ``L_w`` (:mod:`lowenergy.svpolylog.numeric`, tested
  against mpmath's polylog) at points away from the real axis.
"""

from __future__ import annotations

from fractions import Fraction
from functools import lru_cache

import mpmath
import pytest
import sympy

from lowenergy.errors import InputError
from lowenergy.integrand.model import Integrand, LinearExponent, Term
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.svpolylog.numeric import sv_polylogs_numeric
from lowenergy.svpolylog.sphere import SphereValues, expand_sphere
from lowenergy.svpolylog.sphere_residues import (
    sphere_residues,
    sv_series_at_zero,
    words_at_infinity,
    words_at_one,
)
from lowenergy.zeta.element import MZV

S, T, U = sympy.symbols("S T U")
LEVELS = 3


def _mzv_sympy(x: MZV):
    total = sympy.Integer(0)
    for mono, c in x.terms():
        term = sympy.Rational(c.numerator, c.denominator)
        for g in mono:
            assert len(g) == 1, g
            term *= sympy.zeta(g[0])
        total += term
    return total


def _frac(q: Fraction):
    return mpmath.mpf(q.numerator) / q.denominator


def _poly(rpoly, var):
    out = sympy.Integer(0)
    for power, pp in rpoly.items():
        for key, c in pp.items():
            assert not any(key)
            out += _mzv_sympy(c) * var ** power
    return sympy.expand(out)


def _term(word=(), a_shift=-1, b_shift=-1):
    return Term({(0, 0): MZV.one()}, LinearExponent(a_shift, Fraction(-1), 0),
                LinearExponent(b_shift, Fraction(-1), 1), tuple(word))


def _sphere(*terms):
    return Integrand(list(terms), variables=("S", "T"), domain="sphere")


F = sympy.gamma(-S) * sympy.gamma(-T) * sympy.gamma(1 + S + T) / (
    sympy.gamma(1 + S) * sympy.gamma(1 + T) * sympy.gamma(-S - T))
F_SU = F.subs(T, -S - U)


@lru_cache(maxsize=None)
def closed_residue(var: str, n: int):
    """Res of the complex Beta form f at S = n ('S'), T = n ('T') or U = n ('U', numerator in S)."""
    if var == "S":
        r = sympy.residue(F, S, n)
    elif var == "T":
        r = sympy.residue(F, T, n)
    else:
        r = sympy.residue(F_SU, U, n)
    return sympy.expand(sympy.gammasimp(r))


@lru_cache(maxsize=None)
def beta_table():
    return sphere_residues(_sphere(_term()), LEVELS)


# ---------------------------------------------------------------------------
# complex Beta function
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("n", range(0, LEVELS + 1))
def test_complex_beta_residues_in_s_and_t(n):
    table = beta_table()
    assert table.max_order(n) == 1 and table.max_order(n, "T") == 1
    assert sympy.expand(_poly(table.residue(n), T) - closed_residue("S", n)) == 0
    assert sympy.expand(_poly(table.residue(n, "T"), S) - closed_residue("T", n)) == 0
    assert closed_residue("S", n) != 0


@pytest.mark.parametrize("n", range(1, LEVELS + 1))
def test_complex_beta_residues_in_u(n):
    table = beta_table()
    assert set(table.u_poles[Fraction(n)]) == {1}
    assert sympy.expand(_poly(table.u_poles[Fraction(n)][1], S) - closed_residue("U", n)) == 0


def test_complex_beta_has_no_pole_at_u_zero_and_none_at_negative_levels():
    table = beta_table()
    assert Fraction(0) not in table.u_poles
    assert table.locations(0) == [0, 1, 2, 3] and table.locations(1) == [0, 1, 2, 3]
    assert sorted(table.u_poles) == [1, 2, 3]


def test_complex_beta_residue_numeric_limit():
    # independent of sympy: ε f(n + ε, T) with mpmath Gamma at 60 digits
    table = beta_table()

    def f(s, t):
        g = mpmath.gamma
        return g(-s) * g(-t) * g(1 + s + t) / (g(1 + s) * g(1 + t) * g(-s - t))

    with mpmath.workdps(60):
        eps = mpmath.mpf(10) ** -30
        for n in (1, 3):
            for tv in ("-0.3", "0.45", "1.7"):
                tt = mpmath.mpf(tv)
                lim = eps * f(n + eps, tt)
                ours = sum(_frac(c[()].rational_value()) * tt ** p for p, c in table.residue(n).items())
                assert abs(lim - ours) < mpmath.mpf(10) ** -25 * max(1, abs(ours))


# ---------------------------------------------------------------------------
# insertions: derivatives of the closed form
# ---------------------------------------------------------------------------

@lru_cache(maxsize=None)
def insertion_table(word):
    return sphere_residues(_sphere(_term(word)), LEVELS)


@pytest.mark.parametrize("n", range(0, LEVELS + 1))
def test_log_one_minus_z_insertion(n):
    # log|1-z|^2 = L_1: -∂_T f; S poles simple with numerator -R'(T), T poles double
    table = insertion_table((1,))
    assert set(table.pole(n)) == ({1} if n else set())      # R_0 = -1 is constant
    assert sympy.expand(_poly(table.residue(n), T) + sympy.diff(closed_residue("S", n), T)) == 0
    assert set(table.pole(n, "T")) == {2}
    assert sympy.expand(_poly(table.coefficient(n, 2, "T"), S) - closed_residue("T", n)) == 0


@pytest.mark.parametrize("n", range(0, LEVELS + 1))
def test_log_z_insertion(n):
    # log|z|^2 = L_0: -∂_S f
    table = insertion_table((0,))
    assert set(table.pole(n)) == {2}
    assert sympy.expand(_poly(table.coefficient(n, 2), T) - closed_residue("S", n)) == 0
    assert sympy.expand(_poly(table.residue(n, "T"), S) + sympy.diff(closed_residue("T", n), S)) == 0


@pytest.mark.parametrize("n", range(1, LEVELS + 1))
def test_log_z_insertion_u_poles(n):
    # -∂_S f at fixed T, with g(S, U) = f: ∂_S|_T = ∂_S|_U - ∂_U|_S, so near U = n
    # -∂_S f = -R'(S)/(U-n) - R(S)/(U-n)^2
    table = insertion_table((0,))
    r = closed_residue("U", n)
    up = table.u_poles[Fraction(n)]
    assert sympy.expand(_poly(up[2], S) + r) == 0
    assert sympy.expand(_poly(up.get(1, {}), S) + sympy.diff(r, S)) == 0


@pytest.mark.parametrize("n", range(0, LEVELS))
def test_weight_two_words_against_the_shuffle_product(n):
    # L_01 + L_10 = log|z|^2 log|1-z|^2 (∂_S∂_T f) and L_01 - L_10 = -4i D has no poles at all
    t01, t10 = insertion_table((0, 1)), insertion_table((1, 0))
    rs = closed_residue("S", n)
    # ∂_S∂_T [R(T)/(S-n)] = -R'(T)/(S-n)^2
    assert sympy.expand(_poly(t01.coefficient(n, 2), T) + _poly(t10.coefficient(n, 2), T)
                        + sympy.diff(rs, T)) == 0
    for var in ("S", "T"):
        p01, p10 = t01.pole(n, var), t10.pole(n, var)
        assert set(p01) == set(p10) and (p01 or n == 0)
        for order in p01:
            other = T if var == "S" else S
            assert sympy.expand(_poly(p01[order], other) - _poly(p10[order], other)) == 0
    if n >= 1:
        u01, u10 = t01.u_poles[Fraction(n)], t10.u_poles[Fraction(n)]
        assert set(u01) == set(u10)
        for order in u01:
            assert sympy.expand(_poly(u01[order], S) - _poly(u10[order], S)) == 0


@pytest.mark.parametrize("pair", [((0, 0, 1), (1, 0, 0)), ((0, 1, 1), (1, 1, 0))])
def test_weight_three_odd_combinations_have_no_poles(pair):
    # D(z) log|z|^2 = (i/4) L_0 (L_01 - L_10) = (i/2)(L_001 - L_100) and
    # D(z) log|1-z|^2 = (i/4) L_1 (L_01 - L_10) = (i/2)(L_011 - L_110) (shuffle products)
    # are odd under z -> conj(z): every pole part of the pair's difference vanishes,
    # while the single words have poles with ζ(3) in the numerators at T = n.
    a, b = (sphere_residues(_sphere(_term(w)), 2) for w in pair)
    assert a.poles == b.poles and a.u_poles == b.u_poles
    numerators = [c for orders in a.poles.values() for rp in orders.values() for pp in rp.values()
                  for c in pp.values()]
    assert any(not c.is_rational() for c in numerators)


# ---------------------------------------------------------------------------
# the expansions at 0, 1, ∞ against the numerical L_w
# ---------------------------------------------------------------------------

WORDS3 = [(0, 1), (1, 0), (0, 0, 1), (0, 1, 1), (1, 0, 1), (1, 1, 0), (0, 1, 0, 1)]


def _num(x: MZV, digits=30):
    return x.numeric(digits)


@pytest.mark.parametrize("word", WORDS3)
def test_functional_equations_at_one_and_infinity(word):
    values = SphereValues("direct")
    y = mpmath.mpc("0.31", "0.22")
    with mpmath.workdps(30):
        for image, rule in ((1 - y, words_at_one), (1 / y, words_at_infinity)):
            mapped = rule(word, values)
            need = list(mapped) + [word]
            at_y = sv_polylogs_numeric(need, y, 25)
            at_image = sv_polylogs_numeric([word], image, 25)[word]
            total = sum(_num(c) * at_y[u] for u, c in mapped.items())
            assert abs(total - at_image) < mpmath.mpf(10) ** -20, (word, rule.__name__)


@pytest.mark.parametrize("word", WORDS3)
def test_series_at_zero_both_ways_and_numerically(word):
    order = 24
    a = sv_series_at_zero(word, order)
    b = sv_series_at_zero(word, order, from_conjugate=True)
    assert a == b
    z = mpmath.mpc("0.05", "0.08")
    with mpmath.workdps(30):
        lz = mpmath.log(abs(z) ** 2)
        total = sum(_num(c) * z ** p * mpmath.conj(z) ** q * lz ** k / mpmath.factorial(k)
                    for (p, q, k), c in a.items())
        exact = sv_polylogs_numeric([word], z, 25)[word]
        assert abs(total - exact) < mpmath.mpf(10) ** -20


# ---------------------------------------------------------------------------
# agreement with the expansion engine, methods, files
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("word", [(0, 1, 1), (1, 0, 1, 1), (1, 1, 0, 0, 1), (0, 0, 1)])
def test_massless_poles_agree_with_the_engine(word):
    # The pole parts at S = 0 and T = 0 are Laurent coefficients of the expansion
    # (a different computation: regularized values at 1, no series at the end
    # points).  Poles at S = 0 come from z -> 0 alone and those at T = 0 from z -> 1,
    # so there are no mixed terms 1/(S T) and the numerators are constants:
    # c[-k, j] = 0 for j > 0 and c[-k, 0] = numerator of 1/S^k, likewise in T.
    integrand = _sphere(_term(word))
    table = sphere_residues(integrand, 0)
    exp = expand_sphere(integrand, 2)
    compared = 0
    for (i, j), pp in exp.coefficients.items():
        if i >= 0 and j >= 0:
            continue
        assert i >= 0 or j >= 0, (i, j)
        var, order, power = (0, -i, j) if i < 0 else (1, -j, i)
        want = table.coefficient(0, order, var).get(power, {}).get((), MZV())
        assert pp.get((), MZV()) == want, (i, j)
        compared += 1
    for var in (0, 1):
        for order, rpoly in table.pole(0, var).items():
            assert set(rpoly) == {0}
            key = (-order, 0) if var == 0 else (0, -order)
            assert exp.coefficients[key][()] == rpoly[0][()]
    assert compared >= 1


def test_methods_agree():
    integrand = _sphere(_term((1, 0, 1)), _term((0, 1, 1, 0), a_shift=0))
    a = sphere_residues(integrand, 2, method="direct")
    b = sphere_residues(integrand, 2, method="sv")
    assert a.poles == b.poles and a.u_poles == b.u_poles


def test_massless_u_pole_of_the_shifted_factor():
    # |z|^(-2S)|1-z|^(-2T-2) = f(S-1, T) ... = S Γ(-S)... : at U = 0 the residue of
    # Γ(1-S)Γ(-T)Γ(S+T)/(Γ(S)Γ(1+T)Γ(1-S-T)) in U, computed by sympy
    table = sphere_residues(_sphere(_term(a_shift=0)), 2)
    g = sympy.gamma(1 - S) * sympy.gamma(-T) * sympy.gamma(S + T) / (
        sympy.gamma(S) * sympy.gamma(1 + T) * sympy.gamma(1 - S - T))
    g = g.subs(T, -S - U)
    for n in (0, 1, 2):
        want = sympy.expand(sympy.gammasimp(sympy.residue(g, U, n)))
        assert sympy.expand(_poly(table.u_poles[Fraction(n)][1], S) - want) == 0


def test_file_and_parameters():
    text = '''domain = "sphere"
variables = ["S", "T"]
parameters = ["b1"]
integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*(1 + b1*svpolylog(0,1; z) + b1*svpolylog(1,0; z))"
'''
    integrand = integrand_from_text(text, source="p.toml")
    table = sphere_residues(integrand, 1)
    # b1-part: log|z|^2 log|1-z|^2 = ∂_S∂_T f; at S = 1 the b1 coefficient of order 2 is -R'(T)
    r2 = table.coefficient(1, 2)
    got = sympy.Integer(0)
    for power, pp in r2.items():
        assert set(pp) == {(1,)}
        got += _mzv_sympy(pp[(1,)]) * T ** power
    assert sympy.expand(got + sympy.diff(closed_residue("S", 1), T)) == 0
    # no simple pole from the b1 part (-R'(T)/(S-1)^2 only); at U = 1 the b1 part is
    # ∂_S∂_T g = -∂_S∂_U g + ∂_U^2 g -> 2 R_U(S)/(U-1)^3 with R_U = -1
    assert table.residue_text(1) == "-T^2 - 2*T - 1"
    assert table.u_residue_text(1, 3) == "-2*b1" and table.u_residue_text(1) == "-1"


def test_refusals():
    interval = Integrand([_term()], variables=("s", "t"))
    with pytest.raises(InputError):
        sphere_residues(interval, 1)
    with pytest.raises(InputError):
        sphere_residues(_sphere(_term()), -1)
    bad = Integrand([Term({(0, 0): MZV.one()}, LinearExponent(-1, Fraction(-1), 0),
                          LinearExponent(-1, Fraction(-2), 1))], variables=("S", "T"), domain="sphere")
    with pytest.raises(InputError, match="U = -S-T"):
        sphere_residues(bad, 1)
