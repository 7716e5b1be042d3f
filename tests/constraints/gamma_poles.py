"""Independent pole data for the pole-constraint tests (no lowenergy imports).

Everything here is derived from the Gamma-function closed form of the Euler
beta integral, never from the package:

* ``B(-s,-t) = ∫_0^1 x^(-s-1) (1-x)^(-t-1) dx = Γ(-s)Γ(-t)/Γ(-s-t)``
  (Abramowitz & Stegun 6.2.1 and 6.2.2, for Re s, Re t < 0, continued
  meromorphically).
* Simple poles: with ``Γ(z+n+1) = z(z+1)...(z+n)Γ(z)`` (A&S 6.1.16) Γ has
  residue ``(-1)^n/n!`` at ``z = -n``, so near ``s = n`` (``z = -s``)
  ``Γ(-s) ≈ -(-1)^n/(n!(s-n))``, and ``Γ(-t)/Γ(-t-n) = (-t-1)...(-t-n)
  = (-1)^n (t+1)...(t+n)``; hence

      Res_{s=n} B(-s,-t) = -(t+1)(t+2)...(t+n)/n!.

  :func:`flat_numerator` builds it with sympy; the tests compare it with a
  numerical limit of ``(s-n)B(-s,-t)`` from mpmath.
* Logarithms: ``∂_s x^(-s-1) = -log(x) x^(-s-1)``, so ``∫ KN log x = -∂_s B``
  and, with ``∂_z Γ(z) = ψ(z)Γ(z)`` (A&S 6.3.1),

      -∂_s B = B (ψ(-s) - ψ(-s-t)),     -∂_t B = B (ψ(-t) - ψ(-s-t)),
      ∂_s∂_t B = B [(ψ(-s)-ψ(-s-t))(ψ(-t)-ψ(-s-t)) - ψ'(-s-t)]

  (the digamma closed forms of :func:`log_integrals`).
* Laurent coefficients at a pole: the trapezoid rule on a circle,
  ``c_k = (1/2πi)∮ f(v)(v-n)^(k-1) dv``, which converges geometrically for a
  function analytic in an annulus (here radius 1/16 around n, the next pole
  at distance 1: error ~ 16^-N).
"""

from __future__ import annotations

from fractions import Fraction
from typing import Callable, Dict, List

import mpmath
import sympy


def flat_numerator(n: int, other: str) -> str:
    """``-(v+1)...(v+n)/n!`` as text in the package's grammar (``^`` for powers)."""
    v = sympy.Symbol(other)
    poly = sympy.expand(-sympy.rf(v + 1, n) / sympy.factorial(n))
    return str(poly).replace("**", "^")


def flat_numerator_coefficients(n: int) -> List[Fraction]:
    """The coefficients of ``-(t+1)...(t+n)/n!`` by power of t."""
    t = sympy.Symbol("t")
    poly = sympy.Poly(sympy.expand(-sympy.rf(t + 1, n) / sympy.factorial(n)), t)
    return [Fraction(int(c.p), int(c.q)) for c in reversed(poly.all_coeffs())]


def beta(s, t):
    return mpmath.gamma(-s) * mpmath.gamma(-t) / mpmath.gamma(-s - t)


def log_integrals(s, t) -> Dict[str, object]:
    """∫ x^(-s-1)(1-x)^(-t-1) F dx for F = 1, log x, log(1-x), log x log(1-x) (digamma forms)."""
    b = beta(s, t)
    ps, pt, pst = mpmath.psi(0, -s), mpmath.psi(0, -t), mpmath.psi(0, -s - t)
    return {
        "1": b,
        "log(x)": b * (ps - pst),
        "log(1-x)": b * (pt - pst),
        "log(x)*log(1-x)": b * ((ps - pst) * (pt - pst) - mpmath.psi(1, -s - t)),
    }


def laurent_coefficients(f: Callable, n, kmax: int, points: int = 24, radius=None) -> List:
    """``[c_1, ..., c_kmax]``: ``f(v) = Σ_k c_k/(v-n)^k + regular`` near ``v = n``."""
    r = mpmath.mpf(1) / 16 if radius is None else radius
    samples = []
    for j in range(points):
        z = r * mpmath.expj(2 * mpmath.pi * j / points)
        samples.append((z, f(n + z)))
    return [sum(fz * z**k for z, fz in samples) / points for k in range(1, kmax + 1)]


def recognize(value, constants: Dict[str, object], tol) -> str:
    """An exact text ``q0 + q1*c1 + ...`` for a number, by integer relations (mpmath.pslq)."""
    if abs(value) < tol:
        return "0"
    names = list(constants)
    rel = mpmath.pslq([value, 1] + [constants[k] for k in names], tol=tol, maxcoeff=10**4, maxsteps=5000)
    if rel is None or rel[0] == 0:
        raise AssertionError(f"no relation found for {value}")
    parts = [f"({Fraction(-rel[1], rel[0])})"]
    parts += [f"({Fraction(-c, rel[0])})*{name}" for c, name in zip(rel[2:], names) if c]
    return " + ".join(parts)


def numerator_texts(f2: Callable, var: str, n: int, kmax: int, degree: int, digits: int = 24) -> Dict[int, str]:
    """The numerators of ``1/(var-n)^k``, k = 1..kmax, of ``f2(s, t)`` as polynomials
    in the other variable (exact texts with ζ(2)), by Laurent coefficients at
    ``degree + 1`` values of the other variable and an exact Vandermonde solve."""
    other = "t" if var == "s" else "s"
    with mpmath.workdps(digits + 15):
        pts = [mpmath.mpf(1) / 7 + mpmath.mpf(j) / 5 for j in range(degree + 1)]
        table = []
        for p in pts:
            g = (lambda v, p=p: f2(v, p)) if var == "s" else (lambda v, p=p: f2(p, v))
            table.append([mpmath.re(c) for c in laurent_coefficients(g, n, kmax)])
        vander = mpmath.matrix([[p**e for e in range(degree + 1)] for p in pts])
        out = {}
        tol = mpmath.mpf(10) ** (-digits + 8)
        for k in range(1, kmax + 1):
            coeffs = mpmath.lu_solve(vander, mpmath.matrix([row[k - 1] for row in table]))
            terms = []
            for e in range(degree + 1):
                text = recognize(coeffs[e], {"zeta(2)": mpmath.zeta(2)}, tol)
                if text != "0":
                    terms.append(f"({text})*{other}^{e}")
            out[k] = " + ".join(terms) or "0"
        return out
