"""Known low-energy series, derived here independently of lowenergy.

Everything is computed with sympy on placeholder symbols ``z2, z3, ...``
standing for ζ(2), ζ(3), ...; only at the very end are these turned into
:class:`~lowenergy.zeta.element.MZV` elements (products of single zetas,
whose canonical form comes from the MZV algebra, not from the code under
test in ``lowenergy.tables``).

Sources
-------
* log-Gamma series, Abramowitz & Stegun 6.1.33:
  ``ln Γ(1+z) = -γ z + Σ_{k>=2} (-1)^k ζ(k) z^k / k``  (|z| < 1).
* Veneziano / Euler Beta function: with ``Γ(-x) = Γ(1-x)/(-x)``,
  ``B(-s,-t) = Γ(-s)Γ(-t)/Γ(-s-t)
             = -(s+t)/(s t) · exp(Σ_{k>=2} ζ(k)/k (s^k + t^k - (s+t)^k))``
  (the γ terms cancel), i.e. ``-1/s - 1/t + ζ(2)(s+t) + ζ(3)(s+t)^2 + ...``.
* Virasoro-Shapiro type ratio, s + t + u = 0:
  ``Γ(-s)Γ(-t)Γ(-u)/(Γ(1+s)Γ(1+t)Γ(1+u)) = -1/(stu) · exp(Σ_{k odd>=3} 2ζ(k)/k (s^k+t^k+u^k))``;
  its contact part ``-(exp(...) - 1)/(stu)`` is a power series in s, t.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Dict, Tuple

import mpmath
import sympy as sp

from lowenergy.expansion.result import Expansion
from lowenergy.zeta.element import MZV, zeta

S, T = sp.symbols("s t")
EPS = sp.Symbol("eps")


def zsym(k: int) -> sp.Symbol:
    return sp.Symbol(f"z{k}")


def _truncated_exp(x: sp.Expr, degree: int) -> sp.Expr:
    """exp(x) up to total degree ``degree`` in s, t (x has no constant term).

    With homogeneous parts x_k and E = exp(x) = Σ E_n, the derivative along
    the grading gives n E_n = Σ_{k=1..n} k x_k E_{n-k}, E_0 = 1.
    """
    graded = sp.Poly(sp.expand(x.subs({S: EPS * S, T: EPS * T}, simultaneous=True)), EPS)
    parts = {k: sp.expand(graded.coeff_monomial(EPS**k)) for k in range(1, degree + 1)}
    assert graded.coeff_monomial(1) == 0
    e = [sp.Integer(1)]
    for n in range(1, degree + 1):
        e.append(sp.expand(sum(k * parts[k] * e[n - k] for k in range(1, n + 1)) / n))
    return sp.expand(sum(e))


def beta_sympy(order: int) -> sp.Expr:
    """B(-s,-t) as a Laurent polynomial up to total degree ``order`` (ζ(k) -> z_k)."""
    x = sum(zsym(k) / k * (S**k + T**k - (S + T) ** k) for k in range(2, order + 2))
    e = _truncated_exp(x, order + 1)
    y, rem = sp.div(sp.Poly(sp.expand(e - 1), S, T), sp.Poly(S * T, S, T))
    assert rem.is_zero
    return sp.expand(-(S + T) / (S * T) - (S + T) * y.as_expr())


def virasoro_contact_sympy(order: int) -> sp.Expr:
    """-(exp(Σ_{k odd} 2 ζ(k)/k p_k) - 1)/(stu), u = -s-t, up to total degree ``order``."""
    u = -S - T
    x = sum(2 * zsym(k) / k * (S**k + T**k + u**k) for k in range(3, order + 4, 2))
    e = _truncated_exp(x, order + 3)
    q, rem = sp.div(sp.Poly(sp.expand(e - 1), S, T), sp.Poly(sp.expand(S * T * u), S, T))
    assert rem.is_zero
    return sp.expand(-q.as_expr())


def _zeta_poly_to_mzv(expr: sp.Expr) -> MZV:
    """A polynomial in the z_k with rational coefficients, as an MZV."""
    expr = sp.expand(expr)
    if expr == 0:
        return MZV()
    gens = sorted(expr.free_symbols, key=lambda s: int(s.name[1:]))
    if not gens:
        q = sp.Rational(expr)
        return MZV.rational(Fraction(int(q.p), int(q.q)))
    total = MZV()
    for monom, coeff in sp.Poly(expr, *gens).terms():
        term = MZV.rational(Fraction(int(coeff.p), int(coeff.q)))
        for g, e in zip(gens, monom):
            term = term * zeta(int(g.name[1:])) ** e
        total = total + term
    return total


def zeta_poly_numeric(expr: sp.Expr, digits: int) -> mpmath.mpf:
    """Numerical value of a z_k polynomial with mpmath's Riemann zeta (independent numerics)."""
    expr = sp.expand(expr)
    with mpmath.workdps(digits + 15):
        total = mpmath.mpf(0)
        if expr == 0:
            return total
        gens = sorted(expr.free_symbols, key=lambda s: int(s.name[1:]))
        if not gens:
            q = sp.Rational(expr)
            return mpmath.mpf(int(q.p)) / int(q.q)
        values = [mpmath.zeta(int(g.name[1:])) for g in gens]
        for monom, coeff in sp.Poly(expr, *gens).terms():
            term = mpmath.mpf(int(coeff.p)) / int(coeff.q)
            for v, e in zip(values, monom):
                term *= v**e
            total += term
        return +total


def laurent_coefficients(expr: sp.Expr) -> Dict[Tuple[int, int], sp.Expr]:
    """``{(i, j): coefficient}`` of a Laurent polynomial in s, t."""
    out: Dict[Tuple[int, int], sp.Expr] = {}
    for term in sp.Add.make_args(sp.expand(expr)):
        powers = term.as_powers_dict()
        i, j = int(powers.get(S, 0)), int(powers.get(T, 0))
        coeff = sp.expand(term / (S**i * T**j))
        out[(i, j)] = sp.expand(out.get((i, j), 0) + coeff)
    return {k: v for k, v in out.items() if v != 0}


def expansion_from_sympy(expr: sp.Expr, order: int, title: str = "") -> Expansion:
    coeffs = {}
    for key, c in laurent_coefficients(expr).items():
        x = _zeta_poly_to_mzv(c)
        if x:
            coeffs[key] = {(): x}
    return Expansion(("s", "t"), (), order, coeffs, title=title)


def beta_expansion(order: int) -> Expansion:
    return expansion_from_sympy(beta_sympy(order), order, title="B(-s,-t)")


def mzv_of(expr: sp.Expr) -> MZV:
    return _zeta_poly_to_mzv(expr)
