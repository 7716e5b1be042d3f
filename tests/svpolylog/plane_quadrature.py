"""Independent 2D quadrature over the complex plane for the sphere tests.

``plane(funcs)`` returns ``(1/π) ∫_C f(D(z), L0(z), L1(z)) dμ`` with
``dμ = d²z / (|z|² |1-z|²)``, ``L0 = log|z|²``, ``L1 = log|1-z|²`` and the
Bloch-Wigner function ``D(z) = Im Li2(z) + arg(1-z) log|z|`` (evaluated with
python-flint's ``acb.polylog``; nothing from lowenergy), for functions ``f``
symmetric under ``z -> z̄``.

The plane is split into the three regions where |z|, |1-z| or 1 is the
smallest of the three; z -> 1-z and z -> 1/z map the last two onto the first,
R0 = {|z| < 1, Re z < 1/2}, with ``D(1-z) = D(1/z) = -D(z)``,
``L0 <-> L1`` resp. ``L0 -> -L0, L1 -> L1 - L0``, ``dμ`` invariant under
z -> 1-z and ``dμ(1/w) = |w|² dμ(w)``.  R0 is integrated in polar coordinates
around 0 (θ split at the corner π/3, r = ρ(θ) u) with the tanh-sinh rule
(H. Takahasi, M. Mori, Publ. RIMS 9 (1974)), which absorbs the logarithmic
singularity at z = 0.  Step h = 1/16 agrees with h = 1/8 to ~1e-16 on the
test integrands (checked by hand when this file was written).
"""

import mpmath
from flint import acb, arb, ctx


def de_nodes(h, tmax, a, b):
    out = []
    with mpmath.workdps(40):
        n = int(tmax / h)
        for k in range(-n, n + 1):
            u = mpmath.pi / 2 * mpmath.sinh(k * h)
            w = mpmath.pi / 2 * mpmath.cosh(k * h) / mpmath.cosh(u) ** 2 * h * (b - a) / 2
            if w > mpmath.mpf(10) ** -30:
                out.append((mpmath.mpf(a) + (b - a) / (mpmath.exp(-2 * u) + 1), w))
    return out

def D(z):
    return z.polylog(2).imag + (1 - z).arg() * abs(z).log()

def plane(funcs, h=0.125, tmax=3.5, prec=110):
    """(1/π)∫_C f(D, L0, L1) dμ for f symmetric under z -> conj(z), as three integrals over
    R0 = {Re z < 1/2, |z| < 1} (closest to 0) in polar coordinates around 0."""
    saved = ctx.prec
    ctx.prec = prec
    try:
        return _plane(funcs, h, tmax)
    finally:
        ctx.prec = saved


def _plane(funcs, h, tmax):
    un = [(arb(mpmath.nstr(x, 40)), arb(mpmath.nstr(w, 40))) for x, w in de_nodes(h, tmax, 0, 1)]
    third = mpmath.pi / 3
    tn = de_nodes(h, tmax, 0, third) + de_nodes(h, tmax, third, mpmath.pi)
    tn = [(arb(mpmath.nstr(x, 40)), arb(mpmath.nstr(w, 40))) for x, w in tn]
    tot = [arb(0)] * len(funcs)
    for th, wt in tn:
        c, s = th.cos(), th.sin()
        rho = 1 / (2 * c) if c > 0.5 else arb(1)
        for u, wu in un:
            r = rho * u
            z = acb(r * c, r * s)
            l0 = 2 * r.log(); l1 = 2 * abs(1 - z).log()
            d = D(z)
            mu = 1 / (r ** 2 * abs(1 - z) ** 2)
            jac = 2 * wt * wu * rho * r * mu     # 2: the mirror half θ < 0
            for i, f in enumerate(funcs):
                # z, 1-z (D -> -D, L0 <-> L1), 1/z (D -> -D, L0 -> -L0, L1 -> L1 - L0)
                tot[i] += jac * (f(d, l0, l1) + f(-d, l1, l0) + r * r * f(-d, -l0, l1 - l0))
    return [t / arb.pi() for t in tot]

