"""``PlaneValues``: fast L_w at w, 1 - w, 1/w (w in R0) for the sphere quadrature.

Checked against
* the independent classical-polylog forms of :mod:`tests.svpolylog.sv_classical`
  (python-flint ``acb.polylog``; validated there by the differential
  equation, single-valuedness and L(0) = 0), at all three images;
* the Taylor continuation of :mod:`lowenergy.svpolylog.numeric` for every word
  up to weight 4 (a different algorithm: no series in -log(1 - w), no
  transport by z -> 1 - z, 1/z);
* the Bernoulli series of the dilogarithm against mpmath's ``polylog``
  (L. Lewin, "Polylogarithms and associated functions" (1981), eq. (1.16),
  from memory: ``Li2(w) = Σ_k B_k u^(k+1)/(k+1)!``, ``u = -log(1 - w)``).
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
from flint import acb, ctx

from lowenergy.errors import NumericError
from lowenergy.svpolylog.numeric import sv_polylogs_numeric
from lowenergy.svpolylog.planar import PlaneValues, trailing_split, u_series
from lowenergy.words import all_words, shuffle

from .sv_classical import single_valued

R0_POINTS = [(0.2, 0.3), (-0.9, 0.1), (0.49, 0.86), (1e-7, 3e-8), (-0.3, -0.9), (0.4999, 0.0001)]
CLASSICAL = [(0, 1), (0, 1, 1), (1, 0, 1), (1, 1, 0), (0, 1, 1, 1)]


@pytest.fixture(scope="module")
def ev():
    return PlaneValues(4, 25)


def _classical(z: mpmath.mpc, zc: mpmath.mpc):
    saved = ctx.prec
    ctx.prec = 160
    try:
        a = acb(mpmath.nstr(z.real, 45), mpmath.nstr(z.imag, 45))
        b = acb(mpmath.nstr(zc.real, 45), mpmath.nstr(zc.imag, 45))
        vals = single_valued(CLASSICAL, a, b)
        return {w: mpmath.mpc(v.real.mid().str(40, radius=False), v.imag.mid().str(40, radius=False))
                for w, v in vals.items()}
    finally:
        ctx.prec = saved


@pytest.mark.parametrize("point", R0_POINTS)
def test_against_classical_polylogarithms(ev, point):
    with mpmath.workdps(40):
        w = mpmath.mpc(*point)
        images = ev.images(w, CLASSICAL)
        refs = [_classical(w, 1 - w), _classical(1 - w, w), _classical(1 / w, (w - 1) / w)]
        for got, ref in zip(images, refs):
            for word in CLASSICAL:
                assert abs(got[word] - ref[word]) < 1e-22 * max(1, abs(ref[word])), (point, word)


@pytest.mark.parametrize("point", [(0.2, 0.3), (-0.6, -0.7), (0.45, 0.8)])
def test_all_words_against_taylor_continuation(ev, point):
    words = [w for k in range(1, 5) for w in all_words(k)]
    with mpmath.workdps(30):
        w = mpmath.mpc(*point)
        images = ev.images(w, words)
        for got, z in zip(images, (w, 1 - w, 1 / w)):
            ref = sv_polylogs_numeric(words, z, 25)
            for word in words:
                assert abs(got[word] - ref[word]) < 1e-20 * max(1, abs(ref[word])), (point, word)


def test_dilogarithm_bernoulli_series():
    coeffs = u_series([(0, 1)], 60)[(0, 1)]
    with mpmath.workdps(30):
        w = mpmath.mpc("0.3", "0.7")
        u = -mpmath.log(1 - w)
        total = sum(mpmath.mpf(int(c.p)) / int(c.q) * u ** m for m, c in enumerate(coeffs))
        assert abs(total + mpmath.polylog(2, w)) < mpmath.mpf(10) ** -25


@pytest.mark.parametrize("word", [(1, 0), (0, 1, 0, 0), (1, 1, 0, 0), (1, 0, 1, 0, 0)])
def test_trailing_split_is_the_shuffle_identity(word):
    """Σ c ℓ^k/k! G(v) is identically G(word): check with formal symbols,
    expanding ℓ^k/k! = G(0^k) and multiplying out with the shuffle product."""
    total = {}
    for k, v, c in trailing_split(word):
        for u, m in shuffle(v, (0,) * k).items():
            total[u] = total.get(u, Fraction(0)) + c * m
    assert {u: c for u, c in total.items() if c} == {word: 1}
    assert all(not v or v[-1] == 1 for _, v, _ in trailing_split(word))


def test_points_outside_the_region_are_refused(ev):
    with pytest.raises(NumericError, match="Re w < 1/2"):
        ev.images(mpmath.mpc(0.999, 0.0), [(0, 1)])
