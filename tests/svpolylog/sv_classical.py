"""Independent single-valued polylogarithms of weight ≤ 4 from classical
polylogarithms, and a 2D quadrature of sphere integrands, for the tests only.

Nothing here imports :mod:`lowenergy`; the numbers come from python-flint's
``acb.polylog`` (ball arithmetic) and elementary functions.

Holomorphic functions (principal branches on ``C \\ ((-∞, 0] ∪ [1, ∞))``,
``G(a1, ..., an; z) = ∫_0^z dt/(t - a1) G(a2, ..., an; t)``, ``G(0; z) = log z``)::

    G(1; z) = log(1 - z)              G(1,1; z) = log²(1 - z)/2
    G(0,1; z) = -Li2(z)               G(0,1,1; z) = S12(z)

with Nielsen's ``S12(z) = (1/2) ∫_0^z log²(1 - t) dt/t``
(N. Nielsen, "Der Eulersche Dilogarithmus und seine Verallgemeinerungen",
Nova Acta Leopoldina 90 (1909); K. S. Kölbig, SIAM J. Math. Anal. 17 (1986)
1232, from memory), evaluated as

* ``|z| ≤ 1/2``: ``S12(z) = Σ_{n≥2} z^n H_{n-1} / n²`` (``H_m`` harmonic
  numbers; expand ``log²(1-t)/2 = Σ_{n>m≥1} t^n/(n m)`` and integrate);
* otherwise ``S12(z) = ζ(3) - Li3(1-z) + log(1-z) Li2(1-z) + (1/2) log z log²(1-z)``
  (differentiate: the derivative is ``log²(1-z)/(2z)``, and both sides vanish
  as z -> 0 along (0, 1)),

and ``Li2(z) = ζ(2) - log z log(1 - z) - Li2(1 - z)`` (Euler's reflection;
L. Lewin, "Polylogarithms and associated functions" (1981) eq. (1.11), from
memory) when ``|1 - z| < 1/2``.  The caller passes ``1 - z`` separately so
that it carries full relative precision near z = 1.  Words ending in 0 follow
from the shuffle product (``G(u) G(v) = Σ G(u ш v)``)::

    G(1,0)   = G(1) G(0) - G(0,1)
    G(1,0,1) = G(1) G(0,1) - 2 G(0,1,1)
    G(1,1,0) = G(0) G(1,1) - G(1) G(0,1) + G(0,1,1)

and at weight 4 the words with three letters 1 (``S13`` is Nielsen's
``S_{1,3}``, ``Li_{2,1,1}(z) = Σ_{n>m>k} z^n/(n² m k)``)::

    G(0,1,1,1; z) = -Li_{2,1,1}(z)                              (|z| ≤ 1/2)
                  = -ζ(4) + [log z log³(1-z) + 3 Li2(1-z) log²(1-z)
                             - 6 Li3(1-z) log(1-z) + 6 Li4(1-z)] / 6   (otherwise)
    G(1,0,1,1) = G(1) G(0,1,1) - 3 G(0,1,1,1)
    G(1,1,0,1) = G(1,1) G(0,1) - 3 G(0,1,1,1) - 2 G(1,0,1,1)
    G(1,1,1,0) = G(0) G(1,1,1) - G(0,1,1,1) - G(1,0,1,1) - G(1,1,0,1)

(derived here: ``G(0,1,1,1; z) = (1/6) ∫_{1-z}^1 log³s ds/(1-s)`` and
repeated integration by parts with ``d Li_{n+1}(s) = Li_n(s) ds/s``,
``d Li2(s) = -log(1-s) ds/s``).

Single-valued candidates::

    Lsv(w; z) = Σ_{j=0}^{n} G(w1..wj; z) · conj G(wn, ..., w(j+1); z) + δ_w

with ``δ_w = 0`` for weight ≤ 3 and ``δ_{0111} = -2ζ(3) conj log(1-z)``.  The
correction comes from Brown's construction (F. Brown, C. R. Acad. Sci. Paris
338 (2004) 527): the antiholomorphic side uses ``y1 = x1 + 2[Z3, x1] + ...``
with ``Z3 = ζ(3)(-[x0,[x0,x1]] + [x1,[x1,x0]])`` the weight-3 part of the
Drinfeld associator (``G(0,0,1; 1) = -ζ(3)``, ``G(0,1,1; 1) = ζ(3)``), whose
reversal contributes ``-2[Z3, x1]`` with coefficient ``-2ζ(3)`` at ``x0x1x1x1``.
None of this is relied upon: the tests
check the three properties that characterize ``L_{aw}`` given ``L_w``,
namely ``∂_z L_{aw} = L_w / (z - a)``, single-valuedness on C \\ {0, 1}
(no jump across the cuts) and ``L_{aw}(z) -> 0`` as z -> 0.  Two such
functions differ by an antiholomorphic single-valued function of logarithmic
growth at 0, 1, ∞, i.e. by a constant (removable singularities and
Liouville), and the constant is fixed at 0.)
"""

from __future__ import annotations

import mpmath
from flint import acb, arb, ctx

def _zeta(n):
    return acb(n).zeta()


def _s12_series(z):
    """Σ_{n≥2} z^n H_{n-1}/n² for |z| ≤ 1/2."""
    total = acb(0)
    power = z
    harmonic = arb(0)
    eps = arb(2) ** (-ctx.prec - 10)
    n = 1
    while True:
        harmonic += arb(1) / n
        n += 1
        power *= z
        term = power * harmonic / (n * n)
        total += term
        if abs(power) * n < eps:  # remaining terms ≤ |z|^n H_n / n² Σ 2^-k
            return total


def _s13_series(z):
    """``Li_{2,1,1}(z) = Σ_n z^n/n² · Σ_{n>m>k≥1} 1/(m k)`` for |z| ≤ 1/2;
    ``Σ_{n>m>k} 1/(mk) = (H_{n-1}² - H^(2)_{n-1})/2``."""
    total = acb(0)
    power = z
    h1 = arb(0)
    h2 = arb(0)
    eps = arb(2) ** (-ctx.prec - 10)
    n = 1
    while True:
        h1 += arb(1) / n
        h2 += arb(1) / (n * n)
        n += 1
        power *= z
        total += power * (h1 * h1 - h2) / (2 * n * n)
        if abs(power) * n < eps:
            return total


def holomorphic(z, zc, top=4):
    """``{word: G(word; z)}`` for the words up to weight ``top`` (≤ 4) that the tests use;
    ``zc = 1 - z`` given separately (full relative precision near z = 1)."""
    lz, l1 = z.log(), zc.log()
    if abs(zc) < 0.5:
        li2 = _zeta(2) - lz * l1 - zc.polylog(2)
    else:
        li2 = z.polylog(2)
    if abs(z) <= 0.5:
        s12 = _s12_series(z)
    else:
        s12 = _zeta(3) - zc.polylog(3) + l1 * zc.polylog(2) + lz * l1 * l1 / 2
    g = {(): acb(1), (0,): lz, (1,): l1, (1, 1): l1 * l1 / 2, (0, 1): -li2, (0, 1, 1): s12}
    g[(0, 0)] = lz * lz / 2
    g[(1, 0)] = l1 * lz - g[(0, 1)]
    g[(1, 0, 1)] = l1 * g[(0, 1)] - 2 * s12
    g[(1, 1, 0)] = lz * g[(1, 1)] - l1 * g[(0, 1)] + s12
    g[(1, 1, 1)] = l1 ** 3 / 6
    if top < 4:
        return g
    if abs(z) <= 0.5:
        g0111 = -_s13_series(z)
    else:
        g0111 = -_zeta(4) + (lz * l1 ** 3 + 3 * zc.polylog(2) * l1 * l1 - 6 * zc.polylog(3) * l1
                             + 6 * zc.polylog(4)) / 6
    g[(0, 1, 1, 1)] = g0111
    g[(1, 0, 1, 1)] = l1 * s12 - 3 * g0111
    g[(1, 1, 0, 1)] = g[(1, 1)] * g[(0, 1)] - 3 * g0111 - 2 * g[(1, 0, 1, 1)]
    g[(1, 1, 1, 0)] = lz * g[(1, 1, 1)] - g0111 - g[(1, 0, 1, 1)] - g[(1, 1, 0, 1)]
    return g


def single_valued(words, z, zc):
    """``{w: Lsv(w; z)}`` (formula in the module docstring)."""
    g = holomorphic(z, zc, max(len(w) for w in words))
    out = {}
    for w in words:
        total = acb(0)
        for j in range(len(w) + 1):
            total += g[tuple(w[:j])] * g[tuple(reversed(w[j:]))].conjugate()
        out[tuple(w)] = total
    if (0, 1, 1, 1) in out:
        out[(0, 1, 1, 1)] += -2 * _zeta(3) * g[(1,)].conjugate()
    return out


# ---------------------------------------------------------------------------
# 2D quadrature
# ---------------------------------------------------------------------------


def _de_nodes(h, tmax, a, b):
    """tanh-sinh nodes (Takahasi & Mori, Publ. RIMS 9 (1974)) as arb pairs."""
    out = []
    with mpmath.workdps(45):
        n = int(tmax / h)
        for k in range(-n, n + 1):
            u = mpmath.pi / 2 * mpmath.sinh(k * h)
            w = mpmath.pi / 2 * mpmath.cosh(k * h) / mpmath.cosh(u) ** 2 * h * (b - a) / 2
            x = mpmath.mpf(a) + (b - a) / (mpmath.exp(-2 * u) + 1)
            if w > mpmath.mpf(10) ** -40 and 0 < x:
                out.append((arb(mpmath.nstr(x, 42)), arb(mpmath.nstr(w, 42)), k))
    return out


def sphere_quadrature(words, points, h=0.0625, tmax=3.6, prec=128, vanishing=(0, 0)):
    """``(1/π) ∫_C d²z |z|^(-2S-2) |1-z|^(-2T-2) Re Lsv(w; z)`` for every word
    and every point (S, T) of the convergent region (S, T < 0, S + T > -1).

    Returns ``{(point, word): (value with step h, value with step 2h)}`` as
    mpmath numbers.

    The plane is split into the regions where |z|, |1-z| or 1 is the
    smallest of |z|, |1-z|, 1 (by |z| ≶ 1 and Re z ≶ 1/2); z -> 1-z and
    z -> 1/z (``d²(1/w) = d²w/|w|^4``) map them onto
    ``R0 = {|w| < 1, Re w < 1/2}``, so ``∫_C g = ∫_R0 [g(w) + g(1-w) + g(1/w)/|w|^4]``.
    ``Lsv(w; z̄) = conj Lsv(w; z)`` (real coefficients), so the lower half
    of R0 doubles the real part of the upper half.  Polar coordinates around
    0 with θ split at the corner π/3, ``r = ρ(θ) u^(1/α)`` with one α per
    piece for all points (the smallest power of r in ``r dr`` times the
    integrand at w = 0: ``-2S``, ``-2T``, ``2(1+S+T)``; the other points then
    carry a positive power of u), tanh-sinh in u and θ, which absorbs the
    logarithms at u = 0.  (An exp-sinh rule in log r was tried and needed
    many more nodes.)  ``vanishing = (v0, v1)``: the insertions vanish like
    ``|w|^v0`` at 0 and ``|1-w|^v1`` at 1 (up to logarithms), which raises
    the powers to ``v0 - 2S`` and ``v1 - 2T``.
    """
    saved = ctx.prec
    ctx.prec = prec
    try:
        pts = [(arb(mpmath.nstr(mpmath.mpf(s), 40)), arb(mpmath.nstr(mpmath.mpf(t), 40))) for s, t in points]
        alphas = [min(vanishing[0] - 2 * s for s, _ in pts), min(vanishing[1] - 2 * t for _, t in pts),
                  min(2 * (1 + s + t) for s, t in pts)]
        un = _de_nodes(h, tmax, 0, 1)
        third = mpmath.pi / 3
        tn = _de_nodes(h, tmax, 0, third) + _de_nodes(h, tmax, third, mpmath.pi)
        fine = {}
        coarse = {}
        one = acb(1)
        for th, wt, kt in tn:
            c, s = th.cos(), th.sin()
            rho = 1 / (2 * c) if c > 0.5 else arb(1)
            for u, wu, ku in un:
                for piece, alpha in enumerate(alphas):
                    r = rho * u ** (1 / alpha)
                    jac = 2 * wt * wu * rho * rho * u ** (2 / alpha - 1) / alpha   # r dr dθ; 2: the lower half
                    w = acb(r * c, r * s)
                    a0 = 2 * r.log()                 # log|w|²
                    a1 = 2 * abs(one - w).log()      # log|1-w|²
                    if piece == 0:
                        L = single_valued(words, w, one - w)
                    elif piece == 1:
                        L = single_valued(words, one - w, w)
                    else:
                        L = single_valued(words, 1 / w, (w - 1) / w)
                    for p, (S, T) in enumerate(pts):
                        # g(w) = |w|^(-2S-2) |1-w|^(-2T-2); g(1-w) swaps; g(1/w)/|w|^4 = |w|^(2S+2T) |1-w|^(-2T-2)
                        if piece == 0:
                            f = ((-S - 1) * a0 + (-T - 1) * a1).exp()
                        elif piece == 1:
                            f = ((-S - 1) * a1 + (-T - 1) * a0).exp()
                        else:
                            f = ((S + T) * a0 + (-T - 1) * a1).exp()
                        for word in words:
                            val = f * L[word].real * jac
                            key = (p, word)
                            fine[key] = fine.get(key, arb(0)) + val
                            if kt % 2 == 0 and ku % 2 == 0:
                                coarse[key] = coarse.get(key, arb(0)) + 4 * val
        out = {}
        for (p, word), v in fine.items():
            a = mpmath.mpf((v / arb.pi()).mid().str(35, radius=False))
            b = mpmath.mpf((coarse[(p, word)] / arb.pi()).mid().str(35, radius=False))
            out[(points[p], word)] = (a, b)
        return out
    finally:
        ctx.prec = saved
