"""Truncated series from the engine against independent mpmath quadrature.

The integrals ∫_0^1 x^(-s-1) (1-x)^(-t-1) P(s,t) F(x) dx at points with
negative s, t (where they converge) are computed here with mpmath alone:

* the path is split at 1/2 and, following METHOD.md §3, x = u^(1/(-s)) near 0
  and 1-x = v^(1/(-t)) near 1, with 1-x passed separately (no cancellation);
* F is evaluated with mpmath: log, polylog (Li_n), and for genuine depth-2
  words the Nielsen generalized polylogarithms by quadrature of their integral
  representation S_{n,p}(x) = (-1)^(n+p-1)/((n-1)! p!) ∫_0^1 log^(n-1)(τ)
  log^p(1-xτ)/τ dτ (K. S. Kölbig, SIAM J. Math. Anal. 17 (1986), eq. (1.1)),
  with S_{n,p}(x) = (-1)^p G(0^n, 1^p; x) in our conventions (checked below
  against Li_2 = S_{1,1}).

The series is evaluated from the exact coefficients with generator values from
tests/reference.py (not the package's numerics).  Points are close to the
origin (|s|, |t| ≤ 0.0021) and the order is as high as the test tables allow
(weight ≤ 14): the required agreement is 25 significant digits plus an
estimate of the truncation error, 10·max(|s|,|t|) times the size of the
order-N terms.
"""

from __future__ import annotations

import mpmath
import pytest

from lowenergy.expansion.engine import expand
from lowenergy.integrand.reader import integrand_from_text
from tests.reference import reference_mzv

DPS = 40
# (integrand text, weight of the word, lowest degree of the polynomial in s, t)
WEIGHT = {"log(x)": 1, "log(1-x)": 1, "Li(2,x)": 2, "Li(3,x)": 3, "Li(2,1-x)": 2,
          "G(0,1,1;x)": 3, "G(0,0,1,1;x)": 4, "G(0,1,1,1;x)": 4}
LOW_DEGREE = {"log(1-x)": 2, "Li(3,x)": 1, "Li(2,1-x)": 1, "G(0,0,1,1;x)": 1}


def order_for(name):
    """Highest order whose coefficients stay within weight 14 (the test tables)."""
    return min(10, 13 - WEIGHT[name] + LOW_DEGREE.get(name, 0))
POINTS = [(-0.001, -0.0013), (-0.0021, -0.0007), (-0.0015, -0.0018)]


def nielsen(n, p, x):
    """S_{n,p}(x) by quadrature of Kölbig's integral representation."""
    c = mpmath.mpf(-1) ** (n + p - 1) / (mpmath.factorial(n - 1) * mpmath.factorial(p))
    return c * mpmath.quad(lambda tau: mpmath.log(tau) ** (n - 1) * mpmath.log(1 - x * tau) ** p / tau, [0, 1])


# F(x, y) with y = 1 - x, written independently of the package
CASES = {
    "log(x)": ("log(x)", lambda x, y: mpmath.log(x)),
    "log(1-x)": ("s*t*log(1-x)", lambda x, y: mpmath.log(y)),
    "Li(2,x)": ("(1+s)*Li(2, x)", lambda x, y: mpmath.polylog(2, x)),
    "Li(3,x)": ("t*Li(3, x)", lambda x, y: mpmath.polylog(3, x)),
    "Li(2,1-x)": ("(s-t)*Li(2, 1-x)", lambda x, y: mpmath.polylog(2, y)),
    # G(0,1,1;x) = S_{1,2}(x);  G(0,0,1,1;x) = S_{2,2}(x);  G(0,1,1,1;x) = -S_{1,3}(x)
    "G(0,1,1;x)": ("G(0,1,1; x)", lambda x, y: nielsen(1, 2, x)),
    "G(0,0,1,1;x)": ("s*G(0,0,1,1; x)", lambda x, y: nielsen(2, 2, x)),
    "G(0,1,1,1;x)": ("(1+t)*G(0,1,1,1; x)", lambda x, y: -nielsen(1, 3, x)),
}
POLY = {
    "log(x)": lambda s, t: 1,
    "log(1-x)": lambda s, t: s * t,
    "Li(2,x)": lambda s, t: 1 + s,
    "Li(3,x)": lambda s, t: t,
    "Li(2,1-x)": lambda s, t: s - t,
    "G(0,1,1;x)": lambda s, t: 1,
    "G(0,0,1,1;x)": lambda s, t: s,
    "G(0,1,1,1;x)": lambda s, t: 1 + t,
}


def reference_integral(F, P, s, t):
    s, t = mpmath.mpf(s), mpmath.mpf(t)
    a, b = -s, -t  # x^(-s-1) = x^(a-1), (1-x)^(-t-1) = (1-x)^(b-1)

    def left(u):  # x = u^(1/a) on [0, 1/2]: x^(a-1) dx = du / a
        x = u ** (1 / a)
        y = 1 - x
        return y ** (b - 1) * F(x, y) / a

    def right(v):  # 1-x = v^(1/b) on [1/2, 1]
        y = v ** (1 / b)
        x = 1 - y
        return x ** (a - 1) * F(x, y) / b

    half = mpmath.mpf(1) / 2
    total = mpmath.quad(left, [0, half**a]) + mpmath.quad(right, [0, half**b])
    return P(s, t) * total


def series_value(expansion, s, t, only_order=None):
    s, t = mpmath.mpf(s), mpmath.mpf(t)
    total = mpmath.mpf(0)
    for (i, j), poly in expansion.coefficients.items():
        if only_order is not None and i + j != only_order:
            continue
        x = poly[()]
        for mono, c in x.terms():
            term = mpmath.mpf(c.numerator) / c.denominator
            for g in mono:
                term *= reference_mzv(g, DPS)
            total += term * s**i * t**j
    return total


def test_nielsen_convention():
    # S_{1,1}(x) = Li_2(x) (Kölbig 1986, eq. (1.3)) and Li_2(x) = -G(0,1;x):
    # so S_{n,p} = (-1)^p G(0^n, 1^p) holds at p = 1.
    with mpmath.workdps(30):
        x = mpmath.mpf("0.37")
        assert abs(nielsen(1, 1, x) - mpmath.polylog(2, x)) < mpmath.mpf(10) ** -25


@pytest.mark.parametrize("name", list(CASES))
def test_series_against_quadrature(name):
    text, F = CASES[name]
    P = POLY[name]
    integrand = integrand_from_text(f'integrand = "x^(-s-1)*(1-x)^(-t-1)*{text}"\n', source=name)
    order = order_for(name)
    expansion = expand(integrand, order)
    with mpmath.workdps(DPS):
        for s, t in POINTS:
            ref = reference_integral(F, P, s, t)
            ser = series_value(expansion, s, t)
            top = abs(series_value(expansion, s, t, only_order=order))
            truncation = 10 * max(abs(s), abs(t)) * top
            assert truncation < abs(ref) * mpmath.mpf(10) ** -22, "point too far out for this order"
            assert abs(ser - ref) <= abs(ref) * mpmath.mpf(10) ** -25 + truncation, (name, s, t, ser, ref)
