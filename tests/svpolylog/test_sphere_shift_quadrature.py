"""A shifted sphere integral with a depth ≥ 2 insertion against 2D quadrature.

``(1/π) ∫ d²z |z|^(-2S) |1-z|^(-2T) D(z)²`` (a = b = 1) with the Bloch-Wigner
function ``D(z) = Im Li2(z) + arg(1-z) log|z|`` (Zagier, "The dilogarithm
function", 2007, from memory; ``L_01 - L_10 = -4i D``, tested in
tests/svpolylog/test_construct.py), so ``D² = -(L_01 - L_10)²/16``: the
weight-4 words 0101, 0110, ... of depth 2 and 3.  ``D`` vanishes like
``|z| log|z|`` at 0 and (``D(1-z) = D(1/z) = -D(z)``) at 1 and ∞, so the
integral converges for ``S < 2``, ``T < 2``, ``S + T > 0`` — a region that
touches S = T = 0, where the engine's U-pole (``1/U³``) sits.

Quadrature (nothing from lowenergy): the plane is split as in
:mod:`.plane_quadrature` into the regions closest to 0, 1 and ∞, mapped onto
``R0 = {|w| < 1, Re w < 1/2}`` by w, 1-w and 1/w (``d²(1/w) = d²w/|w|^4``);
each piece in polar coordinates around 0 with ``r = ρ(θ) u^β``: β = 1 for
the pieces at 0 and 1 (integrand ~ r^(3-2S) there) and ``β = 1/(2(S+T))``
for the piece at ∞, where the integrand is ``~ r^(2(S+T)-1) log² r dr``;
then it is ``~ log² u du``, which the tanh-sinh rule (Takahasi & Mori,
Publ. RIMS 9 (1974)) absorbs.  ``D`` from python-flint's ``acb.polylog``.
"""

from __future__ import annotations

import mpmath
import pytest
from flint import acb, arb, ctx

from lowenergy.svpolylog.sphere import expand_sphere

from .plane_quadrature import D, de_nodes
from .test_sphere import sphere

D2 = "-1/16*(svpolylog(0,1; z) - svpolylog(1,0; z))^2"


def _F(z, S, T, a, b):
    l0 = 2 * abs(z).log()
    l1 = 2 * abs(1 - z).log()
    d = D(z)
    return ((a - 1 - S) * l0 + (b - 1 - T) * l1).exp() * d * d


def _F_inf(w, S, T, a, b):
    """``F(1/w)/|w|^4`` written with ``|1/w| = 1/|w|``, ``|1 - 1/w| = |1-w|/|w|`` and
    ``D(1/w) = -D(w)``, so that tiny w costs no precision."""
    l0 = 2 * abs(w).log()
    l1 = 2 * abs(1 - w).log()
    d = D(w)
    return ((-(a - 1 - S) - (b - 1 - T) - 2) * l0 + (b - 1 - T) * l1).exp() * d * d


def shifted_quadrature(S, T, a, b, h, tmax=3.5, prec=120):
    saved = ctx.prec
    ctx.prec = prec
    try:
        Sa, Ta = arb(mpmath.nstr(S, 40)), arb(mpmath.nstr(T, 40))
        un = [(arb(mpmath.nstr(x, 40)), arb(mpmath.nstr(w, 40))) for x, w in de_nodes(h, tmax, 0, 1)]
        third = mpmath.pi / 3
        tn = de_nodes(h, tmax, 0, third) + de_nodes(h, tmax, third, mpmath.pi)
        tn = [(arb(mpmath.nstr(x, 40)), arb(mpmath.nstr(w, 40))) for x, w in tn]
        beta_inf = 1 / (2 * (Sa + Ta))
        total = arb(0)
        for th, wt in tn:
            c, s = th.cos(), th.sin()
            rho = 1 / (2 * c) if c > 0.5 else arb(1)
            for u, wu in un:
                # pieces at 0 and 1: r = ρ u, r dr = ρ² u du
                r = rho * u
                w = acb(r * c, r * s)
                jac = wt * wu * rho * rho * u
                total += jac * (_F(w, Sa, Ta, a, b) + _F(1 - w, Sa, Ta, a, b))
                # piece at ∞: r = ρ u^β, r dr = ρ² β u^(2β-1) du
                ub = u ** beta_inf
                r = rho * ub
                w = acb(r * c, r * s)
                jac = wt * wu * rho * rho * beta_inf * ub * ub / u
                total += jac * _F_inf(w, Sa, Ta, a, b)
        # the lower half of R0 mirrors the upper one (the integrand is symmetric under z -> z̄)
        value = 2 * total / arb.pi()
        return mpmath.mpf(value.mid().str(30, radius=False))
    finally:
        ctx.prec = saved


POINTS = [("0.01", "0.008"), ("0.007", "0.013")]


@pytest.mark.slow
def test_bloch_wigner_squared_with_shift_against_quadrature():
    """≥ 15 digits at two points (S + T = 0.018 and 0.020).  The value is dominated
    by the U-pole rows (``-1/(4U³) + 1/(2U²) - 1/(2U)``, ~4e4), so the Laurent part
    in S, T (~1) is checked to ~1e-11 absolute, ≥ 10 digits of its own.  Truncation:
    the order-6 terms are checked to be below 1e-14 of the value, the omitted
    orders smaller by another factor ~|S| + |T|.  Quadrature: measured when this
    test was written, |Q(1/8) - Q(1/16)| ~ 1.5e-13 |Q| and Q(1/16) agrees with the
    series to 2.5e-17 |Q|."""
    order = 6
    e = expand_sphere(sphere(f"abs(z)^(-2*S)*abs(1-z)^(-2*T)*{D2}"), order)
    assert e.u_poles, "D² at a = b = 1: a U-pole from z = ∞"
    with mpmath.workdps(30):
        for p in POINTS:
            S, T = mpmath.mpf(p[0]), mpmath.mpf(p[1])
            U = -S - T
            series = top = mpmath.mpf(0)
            for (i, j), v in e.coefficients.items():
                term = v[()].numeric(30) * S ** i * T ** j
                series += term
                if i + j == order:
                    top += term
            for (i, k), v in e.u_poles.items():
                term = v[()].numeric(30) * S ** i * U ** k
                series += term
                if i + k == order:
                    top += term
            fine = shifted_quadrature(S, T, 1, 1, h=1 / 16)
            coarse = shifted_quadrature(S, T, 1, 1, h=1 / 8)
            assert abs(top) < 1e-14 * abs(series), (p, top, series)
            assert abs(fine - coarse) < 1e-10 * abs(fine), (p, fine, coarse)
            assert abs(fine - series) < 1e-15 * abs(fine), (p, fine, series)
