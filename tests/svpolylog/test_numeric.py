"""Numerical G(w; z) at complex z and L_w(z) (lowenergy.svpolylog.numeric)."""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest

from lowenergy.errors import InputError
from lowenergy.svpolylog.construct import real_line_restriction, sv_polylog
from lowenergy.svpolylog.numeric import (
    continuation_path,
    g_numeric_complex,
    g_vector_numeric,
    sv_polylog_numeric,
    sv_polylogs_numeric,
)
from lowenergy.words import all_words

from .continuation import mzv_value, start_values, words_upto

POINTS = [
    mpmath.mpc(0.3, 0.4),
    mpmath.mpc(0.8, 0.3),
    mpmath.mpc(2, 1),
    mpmath.mpc(-3, 0.5),
    mpmath.mpc(0.5, 0.8660254),   # next to exp(iπ/3), where no Möbius map helps
    mpmath.mpc(1.2, -0.01),       # just below the cut [1, ∞)
    mpmath.mpc(5, -7),
    mpmath.mpc(-0.7, 0),
    mpmath.mpc(1e-3, 1e-3),
    mpmath.mpc(1 - 1e-6, 1e-6),
]


def _close(a, b, digits, scale=1):
    return abs(a - b) <= mpmath.mpf(10) ** -digits * max(1, abs(b), scale)


@pytest.mark.parametrize("z", POINTS, ids=str)
def test_classical_polylogs(z):
    # G(0^(n-1), 1; z) = -Li_n(z); G(1^n; z) = log^n(1-z)/n!; G(0^n; z) = log^n(z)/n!
    # (METHOD.md §1 conventions; principal branches of mpmath.polylog / log)
    g = g_vector_numeric(z, 6, 30)
    with mpmath.workdps(40):
        for n in range(1, 7):
            assert _close(g[(0,) * (n - 1) + (1,)], -mpmath.polylog(n, z), 26), n
            assert _close(g[(1,) * n], mpmath.log(1 - z) ** n / mpmath.factorial(n), 26), n
            assert _close(g[(0,) * n], mpmath.log(z) ** n / mpmath.factorial(n), 26), n
        # G(1, 0; z) = log z log(1-z) + Li2(z)  (shuffle G(1)G(0) = G(1,0) + G(0,1))
        assert _close(g[(1, 0)], mpmath.log(z) * mpmath.log(1 - z) + mpmath.polylog(2, z), 26)


def test_real_axis_against_reference():
    # all words up to weight 6 at x = 1/3 against tests/reference.py nested sums
    g = g_vector_numeric(Fraction(1, 3), 6, 35)
    ref = start_values(6, 40)
    with mpmath.workdps(40):
        for w in words_upto(6):
            assert _close(g[w], ref[w], 33), w


def test_cut_is_limit_from_above():
    # on (1, ∞) the value is the limit from above: log(1 - z) → log(z - 1) - iπ
    with mpmath.workdps(40):
        z = mpmath.mpf(3) / 2
        assert _close(g_numeric_complex((1,), z, 30), mpmath.log(mpmath.mpf(1) / 2) - 1j * mpmath.pi, 28)


def test_path_avoids_one():
    for z in [mpmath.mpc(1.5, 0), mpmath.mpc(1.1, -1e-9), mpmath.mpc(3, 0.1)]:
        corners = continuation_path(z)
        assert abs(corners[0]) <= 0.5 + 1e-20
        assert corners[-1] == z
        if len(corners) == 3:
            assert mpmath.im(corners[1]) * (1 if mpmath.im(z) >= 0 else -1) > 0


@pytest.mark.parametrize("z", POINTS[:6], ids=str)
def test_log_and_weight_one(z):
    vals = sv_polylogs_numeric([(0,), (1,), (0, 0, 0)], z, 30)
    with mpmath.workdps(40):
        assert _close(vals[(0,)], mpmath.log(abs(z) ** 2), 27)             # L_0 = log|z|^2
        assert _close(vals[(1,)], mpmath.log(abs(1 - z) ** 2), 27)         # L_1 = log|1-z|^2
        assert _close(vals[(0, 0, 0)], mpmath.log(abs(z) ** 2) ** 3 / 6, 27)


def _bloch_wigner(z):
    # D(z) = Im Li2(z) + arg(1-z) log|z|  (D. Zagier, "The dilogarithm function",
    # in Frontiers in Number Theory, Physics and Geometry II (2007), §I.3)
    return mpmath.im(mpmath.polylog(2, z)) + mpmath.arg(1 - z) * mpmath.log(abs(z))


@pytest.mark.parametrize("z", POINTS, ids=str)
def test_bloch_wigner(z):
    # Exact relation in our conventions: L_01(z) - L_10(z) = -4i D(z).
    # (1) from the exact terms with mpmath's own Li2 and log only:
    #     G(0,1; z) = -Li2(z), G(1,0; z) = log z log(1-z) + Li2(z)
    with mpmath.workdps(40):
        G = {(): 1, (0,): mpmath.log(z), (1,): mpmath.log(1 - z),
             (0, 1): -mpmath.polylog(2, z),
             (1, 0): mpmath.log(z) * mpmath.log(1 - z) + mpmath.polylog(2, z)}
        diff = 0
        for word, sign in (((0, 1), 1), ((1, 0), -1)):
            for (u, v), c in sv_polylog(word).items():
                diff += sign * int(c.rational_value()) * G[u] * mpmath.conj(G[v])
        assert _close(diff, -4j * _bloch_wigner(z), 30)
    # (2) from the package numerics
    vals = sv_polylogs_numeric([(0, 1), (1, 0)], z, 30)
    with mpmath.workdps(40):
        assert _close(vals[(0, 1)] - vals[(1, 0)], -4j * _bloch_wigner(z), 27)
        # and the symmetric part is real: L_01 + L_10 = 2 Re(...)
        assert abs(mpmath.im(vals[(0, 1)] + vals[(1, 0)])) < mpmath.mpf(10) ** -27


def test_real_line_restriction_numerically():
    # L_w(1/3) from the complex construction (package numerics) against the
    # real-line polynomial in G-words evaluated with the independent reference values.
    ref = start_values(6, 40)
    words = words_upto(6)
    vals = sv_polylogs_numeric(words, Fraction(1, 3), 30)
    with mpmath.workdps(40):
        for w in words:
            rl = real_line_restriction(w)
            value = mpmath.fsum(mzv_value(c, 35) * ref[u] for u, c in rl.items())
            assert _close(vals[w], value, 27), w
            assert abs(mpmath.im(vals[w])) < mpmath.mpf(10) ** -27


def test_holomorphic_derivative_numerically():
    # ∂_z L_{aw} = L_w/(z - a), with ∂_z = (∂_x - i ∂_y)/2 by mpmath.diff (which
    # differences at twice the working precision, hence 70 digits for 30)
    z0 = mpmath.mpc(0.35, 0.55)
    for word in [(0, 1, 1), (1, 0, 0, 1), (1, 1, 0)]:
        with mpmath.workdps(30):
            fx = mpmath.diff(lambda x: sv_polylog_numeric(word, mpmath.mpc(x, z0.imag), 70), z0.real)
            fy = mpmath.diff(lambda y: sv_polylog_numeric(word, mpmath.mpc(z0.real, y), 70), z0.imag)
            lhs = (fx - 1j * fy) / 2
            rhs = sv_polylog_numeric(word[1:], z0, 30) / (z0 - word[0])
            assert _close(lhs, rhs, 20), word


def test_single_valued_across_the_cuts():
    # Continuations above and below a cut end at (almost) the same point: L_w agrees
    # there although each G(u; z) jumps (the package takes different paths).
    words = [w for k in range(1, 6) for w in all_words(k)]
    for x in (mpmath.mpf(2), mpmath.mpf(-1.5)):
        with mpmath.workdps(40):
            above, below = mpmath.mpc(x, 1e-35), mpmath.mpc(x, -1e-35)
        a = sv_polylogs_numeric(words, above, 28)
        b = sv_polylogs_numeric(words, below, 28)
        ga, gb = g_vector_numeric(above, 2, 20), g_vector_numeric(below, 2, 20)
        assert abs(ga[(1,)] - gb[(1,)]) > 1 or abs(ga[(0,)] - gb[(0,)]) > 1
        for w in words:
            assert _close(a[w], b[w], 25), w


def test_errors():
    with pytest.raises(InputError):
        g_numeric_complex((0, 1), 0)
    with pytest.raises(InputError):
        sv_polylog_numeric((0, 1), 1)
    with pytest.raises(InputError):
        g_numeric_complex((0, 2), 0.5)
    with pytest.raises(InputError):
        sv_polylog_numeric((0, 1), 0.5, digits=0)
