"""Mass shifts per level and spin (lowenergy.spectrum.shifts).

Pole parts are built here with sympy from amplitudes whose shifts are known
by construction, expanded in ε exactly; the code must recover the shifts.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
import sympy

from lowenergy.errors import InputError
from lowenergy.spectrum.partial_waves import gegenbauer_power_coefficients
from lowenergy.spectrum.residues import ResidueTable
from lowenergy.spectrum.shifts import plot_shifts, spectrum_shifts
from lowenergy.zeta.element import MZV

t, eps = sympy.symbols("t epsilon")


def _q(x) -> Fraction:
    x = sympy.Rational(x)
    return Fraction(int(x.p), int(x.q))


def tables_from_pole_terms(pole_terms, orders=2):
    """ResidueTables (orders ε⁰..ε^orders) at s = n of Σ_n Σ_states rho(t, ε)/(s - mu(ε)).

    ``pole_terms = {n: [(rho, mu), ...]}`` (sympy, rho in t and ε, mu in ε, mu(0) = n).  Exactly:
    1/(s - mu) = Σ_m (mu - n)^m/(s - n)^(m+1) (geometric series) and rho, mu by Taylor in ε.
    """
    tables = []
    for k in range(orders + 1):
        poles = {}
        for n, states in pole_terms.items():
            total = {}
            for rho, mu in states:
                rho_t = sum(sympy.diff(rho, eps, j).subs(eps, 0) / sympy.factorial(j) * eps ** j
                            for j in range(orders + 1))
                delta = sympy.expand(sum(sympy.diff(mu, eps, j).subs(eps, 0) / sympy.factorial(j) * eps ** j
                                         for j in range(1, orders + 1)))
                for m in range(k + 1):
                    c = sympy.expand(rho_t * delta ** m).coeff(eps, k)
                    total[m + 1] = total.get(m + 1, 0) + c
            orders_n = {}
            for order, c in total.items():
                c = sympy.expand(c)
                if c == 0:
                    continue
                for (pt,), v in sympy.Poly(c, t).terms():
                    orders_n.setdefault(order, {}).setdefault(pt, {})[()] = MZV.rational(_q(v))
            if orders_n:
                poles[(0, Fraction(n))] = orders_n
        tables.append(ResidueTable(("s", "t"), (), max(pole_terms), poles, source=f"order{k}"))
    return tables


def gamma_pole_terms(c, levels):
    """Pole terms of Γ(-s/(1+εc)) Γ(-t)/Γ(-s/(1+εc) - t) at s = n(1+εc).

    With u = s/(1+εc): Res_{u=n} Γ(-u) = -(-1)^n/n! (Γ has residue (-1)^n/n! at
    z = -n, from memory; checked numerically in test_gamma_residue_formula), the
    Jacobian ds = (1+εc) du, and Γ(-t)/Γ(-n-t) = Π_{k=1..n} (-t-k) by
    Γ(z+1) = zΓ(z) (A&S 6.1.15).  So the pole term is
    -(1+εc) Π_k (t+k)/n! / (s - n(1+εc)): masses n + ε c n exactly (δ1 = c n, δ2 = 0).
    """
    out = {}
    for n in range(1, levels + 1):
        rho = -(1 + eps * c) * sympy.prod([t + k for k in range(1, n + 1)]) / sympy.factorial(n)
        out[n] = [(rho, n * (1 + eps * c))]
    return out


def test_gamma_residue_formula():
    # the residue of Γ at z = -n, checked against mpmath: (z + n) Γ(z) -> (-1)^n/n!
    with mpmath.workdps(30):
        for n in range(4):
            h = mpmath.mpf(10) ** -12
            val = h * mpmath.gamma(-n + h)
            assert abs(val - mpmath.mpf(-1) ** n / mpmath.factorial(n)) < 1e-10
        # and the whole pole term at a point: residue of Γ(-s')Γ(-t)/Γ(-s'-t) at s' = 2, t = 0.3
        tv, n, h = mpmath.mpf("0.3"), 2, mpmath.mpf(10) ** -15
        res = h * mpmath.gamma(-(n + h)) * mpmath.gamma(-tv) / mpmath.gamma(-(n + h) - tv)
        assert abs(res - (-(tv + 1) * (tv + 2) / 2)) < 1e-10


@pytest.mark.parametrize("c", [Fraction(1, 3), Fraction(-2)])
def test_gamma_amplitude_recovers_c_on_every_level(c):
    tables = tables_from_pole_terms(gamma_pole_terms(sympy.Rational(c.numerator, c.denominator), 5))
    table = spectrum_shifts(tables, 10)
    assert table.consistent, table.residuals
    assert table.levels() == [Fraction(n) for n in range(1, 6)]
    for (n, J), e in table.entries.items():
        assert e.delta1 == MZV.rational(c * n), (n, J)          # δ1 = c n on every (n, J)
        assert not e.variance, (n, J)                            # one mass per level
        assert e.delta2 == MZV(), (n, J)                         # μ = n(1 + εc): no ε² shift
    # the leading trajectory of B(-s,-t) has J = n
    assert [e.spin for e in table.trajectory()] == [1, 2, 3, 4, 5]


def _gegenbauer_t(J, mu, alpha):
    """C_J^(α)(1 + 2t/μ) as a sympy polynomial in t (coefficients from the package's A&S 22.3.4 table
    are checked separately in test_partial_waves)."""
    x = 1 + 2 * t / mu
    return sum(sympy.Rational(c.numerator, c.denominator) * x ** p
               for p, c in enumerate(gegenbauer_power_coefficients(J, alpha)))


def test_second_order_shift_with_angle_dependence():
    # states (n, J, c, c1, δ1, δ2): pole terms (c + ε c1) C_J(1 + 2t/μ)/(s - μ), μ = n + εδ1 + ε²δ2,
    # invented numbers; the angle depends on μ, which feeds R1_1 and R2_2 (module docstring)
    alpha = Fraction(7, 2)
    states = [(1, 1, 2, 1, sympy.Rational(1, 2), 3), (2, 2, 1, -1, 2, sympy.Rational(-1, 4)),
              (2, 0, 5, 0, -1, 7), (3, 1, 3, 2, sympy.Rational(5, 3), 1)]
    terms = {}
    for n, J, c, c1, d1, d2 in states:
        mu = n + eps * d1 + eps ** 2 * d2
        terms.setdefault(n, []).append(((c + eps * c1) * _gegenbauer_t(J, mu, alpha), mu))
    table = spectrum_shifts(tables_from_pole_terms(terms), 10)
    assert table.consistent, table.residuals
    for n, J, c, c1, d1, d2 in states:
        e = table.entries[(Fraction(n), J)]
        assert e.residue == MZV.rational(c)
        assert e.delta1 == MZV.rational(_q(d1))
        assert e.residue1 == MZV.rational(c1)
        assert not e.variance
        assert e.delta2 == MZV.rational(_q(d2))


def test_degenerate_states_report_variance():
    # two spin-1 states at level 2 with shifts 1 and 3, equal weights: <δ1> = 2, variance 1
    alpha = Fraction(7, 2)
    states = [(_gegenbauer_t(1, 2 + eps * d1, alpha), 2 + eps * d1) for d1 in (1, 3)]
    table = spectrum_shifts(tables_from_pole_terms({2: states}), 10)
    e = table.entries[(Fraction(2), 1)]
    assert e.residue == MZV.rational(2)
    assert e.delta1 == MZV.rational(2)
    assert e.variance == MZV.rational(1)
    assert e.delta2 is None and "degenerate" in e.note


def test_inconsistent_pole_order_is_reported():
    # a triple pole at order ε¹ cannot come from mass shifts
    tables = tables_from_pole_terms({1: [(-(t + 1), 1 + eps)]})
    tables[1].poles[(0, Fraction(1))][3] = {1: {(): MZV.one()}}
    table = spectrum_shifts(tables, 10)
    assert not table.consistent
    assert any("pole of order 3" in r["what"] for r in table.residuals)


def test_mismatched_variables_refused():
    tables = tables_from_pole_terms(gamma_pole_terms(1, 2))
    other = ResidueTable(("S", "T"), (), 2, tables[1].poles, source="other")
    with pytest.raises(InputError, match="variables differ"):
        spectrum_shifts([tables[0], other], 10)


def test_plot_leading_trajectory(tmp_path):
    tables = tables_from_pole_terms(gamma_pole_terms(sympy.Rational(1, 2), 4))
    table = spectrum_shifts(tables, 10)
    out = plot_shifts(table, tmp_path / "shifts.png")
    assert (tmp_path / "shifts.png").stat().st_size > 1000
    assert list(out["delta1"]) == [0.5, 1.0, 1.5, 2.0]
