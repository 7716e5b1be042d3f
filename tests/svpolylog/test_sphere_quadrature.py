"""Sphere integrals with genuinely single-valued insertions of depth 2 against
an independent 2D quadrature.

The insertions ``L_{011}``, ``L_{101}`` (weight 3, two letters 1) and
``L_{0111}`` (weight 4, three letters 1) are
evaluated by :mod:`tests.svpolylog.sv_classical` from classical polylogarithms
(python-flint), with no lowenergy code.  The first three tests establish that
those formulas ARE Brown's single-valued polylogarithms (F. Brown,
"Single-valued multiple polylogarithms in one variable", C. R. Acad. Sci.
Paris 338 (2004) 527; O. Schnetz, "Graphical functions and single-valued
multiple polylogarithms", Commun. Number Theory Phys. 8 (2014) 589): the
differential equation ``∂_z L_{aw} = L_w/(z - a)``, no jump across the cuts
(single-valuedness), and ``L_{aw}(0) = 0`` characterize them given the
shorter words (uniqueness argument in sv_classical's docstring).  The last
test integrates ``|z|^(-2S-2) |1-z|^(-2T-2) L_w(z)`` over the plane at three
points of the convergent region and compares with the package's truncated
Laurent series.
"""

from __future__ import annotations

import mpmath
import pytest
from flint import acb, ctx

from lowenergy.integrand.reader import integrand_from_text
from lowenergy.svpolylog.sphere import expand_sphere

from .sv_classical import single_valued, sphere_quadrature

# (word, letter a, shorter word w) with word = a w
CHAIN = [((0, 1), 0, (1,)), ((0, 1, 1), 0, (1, 1)), ((1, 0, 1), 1, (0, 1)), ((1, 1, 0), 1, (1, 0)),
         ((0, 1, 1, 1), 0, (1, 1, 1))]
WORDS = sorted({w for w, _, _ in CHAIN} | {v for _, _, v in CHAIN})


def _L(z):
    return single_valued(WORDS, z, 1 - z)


@pytest.fixture
def prec200():
    saved = ctx.prec
    ctx.prec = 200   # the difference quotients lose 12 digits
    yield
    ctx.prec = saved


def test_shortest_words_are_the_logarithms(prec200):
    # L_1 = log|1-z|², L_11 = L_1²/2, L_10 + L_01 = L_0 L_1 (shuffle)
    z = acb("0.37", "-1.3")
    L = _L(z)
    l0, l1 = 2 * abs(z).log(), 2 * abs(1 - z).log()
    assert abs(L[(1,)] - l1) < 1e-30
    assert abs(L[(1, 1)] - l1 * l1 / 2) < 1e-30
    assert abs(L[(0, 1)] + L[(1, 0)] - l0 * l1) < 1e-30


@pytest.mark.parametrize("z", [("0.3", "0.4"), ("-2.5", "0.7"), ("1.7", "-0.2"), ("0.05", "-0.02"), ("40", "9"),
                               ("0.999", "0.0013")])
def test_classical_forms_solve_the_differential_equation(prec200, z):
    """∂_z f = (∂_x f - i ∂_y f)/2 by central differences (step 1e-12, error ~1e-24)."""
    z = acb(*z)
    h = acb("1e-12")
    ih = acb(0, "1e-12")
    plus_x, minus_x, plus_y, minus_y = _L(z + h), _L(z - h), _L(z + ih), _L(z - ih)
    at = _L(z)
    for word, a, w in CHAIN:
        dz = ((plus_x[word] - minus_x[word]) - acb(0, 1) * (plus_y[word] - minus_y[word])) / (4 * h)
        want = at[w] / (z - a)
        assert abs(dz - want) < 1e-18 * (1 + abs(want)), (word, z)


@pytest.mark.parametrize("x", ["-0.7", "-3.5", "1.6", "6.0"])
def test_classical_forms_are_single_valued(prec200, x):
    """No jump across the cuts (-∞, 0] and [1, ∞) of the principal branches
    (the holomorphic pieces alone jump by O(1) there)."""
    eps = acb(0, "1e-25")
    x = acb(x)
    up, down = _L(x + eps), _L(x - eps)
    for word, _, _ in CHAIN:
        assert abs(up[word] - down[word]) < 1e-20, (word, x)
    # the check can fail: a holomorphic piece alone does jump
    assert abs((x + eps).log() - (x - eps).log()) > 1 or abs((1 - x - eps).log() - (1 - x + eps).log()) > 1


def test_classical_forms_vanish_at_zero(prec200):
    z = acb("1e-30", "3e-31")
    L = _L(z)
    for word, _, _ in CHAIN:
        assert abs(L[word]) < 1e-25, word


POINTS = [("-0.02", "-0.01"), ("-0.01", "-0.02"), ("-0.015", "-0.015")]


@pytest.mark.slow
def test_depth_two_insertions_against_plane_quadrature():
    """(1/π) ∫ d²z |z|^(-2S-2)|1-z|^(-2T-2) L_w(z), w = 011 and 101, at three
    points: quadrature against the package's Laurent series to order 10,
    ≥ 15 digits.

    Quadrature error: the tanh-sinh error roughly squares when the step
    halves; at these points |Q(1/16) - Q(1/8)| ~ 1e-8 |Q| and, measured once
    when this test was written (with one radial map for all three pieces,
    an earlier variant of sv_classical's rule), |Q(1/16) - Q(1/32)| ≤ 5e-16 |Q|;
    the present rule at h = 1/16 differs from that Q(1/32) by ~1e-16 |Q|.  Truncation:
    the order-10 terms are ≤ 1.4e-15 of the value, the omitted orders ≥ 11
    a further factor |S| + |T| ≤ 0.03 (times slowly growing coefficients)
    smaller.  Points this close to 0 are needed because the MZV tables of the
    test session stop at weight 14 = 3 + 10 + 1.
    """
    words = [(0, 1, 1), (1, 0, 1)]
    quad = sphere_quadrature(words, POINTS, h=0.0625)
    with mpmath.workdps(30):
        for w in words:
            text = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(%s; z)" % ",".join(map(str, w))
            itg = integrand_from_text(f'domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "{text}"', source="t.toml")
            e = expand_sphere(itg, 10)
            for p in POINTS:
                series, top = _series_and_top(e, p, 10)
                value, coarse = quad[(p, w)]
                assert abs(top) < 2e-15 * abs(series), (w, p)
                assert abs(value - coarse) < 1e-6 * abs(value), (w, p)
                assert abs(value - series) < 1e-15 * abs(value), (w, p, value, series)


def _series_and_top(e, point, order):
    """The truncated series at ``point`` = (S, T) and its order-``order`` part (30 digits)."""
    S, T = mpmath.mpf(point[0]), mpmath.mpf(point[1])
    series = top = mpmath.mpf(0)
    for (i, j), v in e.coefficients.items():
        term = v[()].numeric(30) * S ** i * T ** j
        series += term
        if i + j == order:
            top += term
    return series, top


SMALL_POINTS = [("-0.002", "-0.001"), ("-0.001", "-0.002"), ("-0.0015", "-0.0015")]


@pytest.mark.slow
def test_weight_four_depth_three_insertion_against_plane_quadrature():
    """The same for L_{0111} (weight 4, with the ζ(3) correction of
    sv_classical), order 9 (weight 4 + 9 + 1 = 14).  Its coefficients grow
    fast (the order-9 terms are 3e-12 of the value at |S|, |T| ~ 0.015), so
    the points are closer to 0: there the order-9 terms are ~3e-21 of the
    value.  The integrand stays integrable at S = T = 0 (L_{0111} vanishes at
    0 and 1 up to logarithms, since the series has no pole), so the radial
    map uses that (``vanishing=(1, 1)``); |Q(1/8) - Q(1/4)| ~ 1e-8 |Q|."""
    w = (0, 1, 1, 1)
    quad = sphere_quadrature([w], SMALL_POINTS, h=0.125, vanishing=(1, 1))
    text = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*svpolylog(0,1,1,1; z)"
    itg = integrand_from_text(f'domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "{text}"', source="t.toml")
    e = expand_sphere(itg, 9)
    assert all(i >= 0 and j >= 0 for i, j in e.coefficients)   # no poles
    with mpmath.workdps(30):
        for p in SMALL_POINTS:
            series, top = _series_and_top(e, p, 9)
            value, coarse = quad[(p, w)]
            assert abs(top) < 1e-18 * abs(series), p
            assert abs(value - coarse) < 1e-6 * abs(value), p
            assert abs(value - series) < 1e-15 * abs(value), (p, value, series)
