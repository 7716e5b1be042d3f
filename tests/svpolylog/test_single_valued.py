"""Single-valuedness of L_w(z), checked by independent analytic continuation.

The values G(w; z) are continued from x = 1/3 (nested sums of tests/reference.py)
along paths and closed loops by Gauss-Legendre collocation (tests/svpolylog/
continuation.py), sharing no code with the package's numerics.  Continuing z
along a loop γ continues z̄ along the conjugate loop, so the continued L_w is
Σ c_{u,v} G^γ(u) conj(G^γ(v)) with the exact coefficients of the construction
(MZV values from tests/reference.py).  Single-valuedness (F. Brown, C. R. Acad.
Sci. Paris 338 (2004)) says this equals L_w before the loop.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest

from lowenergy.svpolylog.construct import sv_table
from lowenergy.svpolylog.numeric import g_vector_numeric, sv_polylogs_numeric
from lowenergy.words import all_words

from .continuation import circle, continue_along, segment, start_values, sv_combination, words_upto

N = 6
DPS = 32
STAGES = 14
TOL = mpmath.mpf(10) ** -25
Z0 = mpmath.mpc(0.4, 0.3)     # |z0| = 1/2, |1 - z0| = 0.67
Z1 = mpmath.mpc(1.3, 0.5)     # |z1 - 1| = 0.58, |z1| = 1.39


def _continue_to(z, steps):
    g = start_values(N, DPS + 5)
    path, dpath = segment(Fraction(1, 3), z, DPS)
    return continue_along(g, path, dpath, 0, 1, steps, STAGES, DPS)


@pytest.fixture(scope="module")
def at_z0():
    return _continue_to(Z0, 8)


@pytest.fixture(scope="module")
def at_z1():
    return _continue_to(Z1, 12)


@pytest.fixture(scope="module")
def around_one_z0(at_z0):
    return _loop(at_z0, 1, Z0, 40)


@pytest.fixture(scope="module")
def table():
    return sv_table(N)


WORDS = [w for k in range(1, N + 1) for w in all_words(k)]


def _loop(g, center, start, steps, turns=1):
    path, dpath, tau_end = circle(center, start, DPS, turns)
    return continue_along(g, path, dpath, 0, tau_end, steps, STAGES, DPS)


WORST = {}


def _assert_single_valued(table, before, after, label):
    moved = sum(1 for w in before if abs(after[w] - before[w]) > 1e-3)
    assert moved > 40  # the G(w) themselves have monodromy
    worst = 0
    for w in WORDS:
        terms = table.terms(w)
        a = sv_combination(terms, before, DPS)
        b = sv_combination(terms, after, DPS)
        rel = abs(a - b) / max(1, abs(a))
        worst = max(worst, rel)
        assert rel < TOL, (w, a, b)
    WORST[label] = worst  # for -s runs: print(WORST)


def test_package_numerics_at_z0(at_z0):
    # the package's Taylor continuation against the collocation values
    pkg = g_vector_numeric(Z0, N, 30)
    for w in words_upto(N):
        assert abs(pkg[w] - at_z0[w]) < TOL, w
    # and L_w(z0) itself
    vals = sv_polylogs_numeric(WORDS, Z0, 28)
    table = sv_table(N)
    for w in WORDS[:: 7]:
        assert abs(vals[w] - sv_combination(table.terms(w), at_z0, DPS)) < TOL


def test_loop_around_zero(table, at_z0):
    after = _loop(at_z0, 0, Z0, 24)
    with mpmath.workdps(DPS):
        # sanity of the continuation: log z -> log z + 2πi, Li_n analytic at 0
        assert abs(after[(0,)] - at_z0[(0,)] - 2j * mpmath.pi) < TOL
        assert abs(after[(0, 0, 0, 1)] - at_z0[(0, 0, 0, 1)]) < TOL
    _assert_single_valued(table, at_z0, after, 'z0 around 0')


def test_loop_around_one(table, at_z0, around_one_z0):
    after = around_one_z0
    with mpmath.workdps(DPS):
        # Li_n(z) -> Li_n(z) - 2πi log^(n-1)(z)/(n-1)! around 1 (D. Zagier, "The
        # dilogarithm function" (2007), §I.1 for n = 2; general n from memory);
        # G(0^(n-1) 1) = -Li_n
        for n in range(1, N + 1):
            w = (0,) * (n - 1) + (1,)
            jump = 2j * mpmath.pi * at_z0[(0,)] ** (n - 1) / mpmath.factorial(n - 1)
            assert abs(after[w] - at_z0[w] - jump) < TOL, n
    _assert_single_valued(table, at_z0, after, 'z0 around 1')


def test_naive_product_is_not_single_valued(at_z0, around_one_z0):
    # Without the y1 correction, Σ_j G(w_1..w_j; z) G(w_n..w_(j+1); z̄) fails from weight 4:
    # the test above can tell.
    after = around_one_z0
    from lowenergy.zeta.element import MZV

    w = (0, 1, 0, 1)
    naive = {(w[:j], tuple(reversed(w[j:]))): MZV.one() for j in range(len(w) + 1)}
    a, b = sv_combination(naive, at_z0, DPS), sv_combination(naive, after, DPS)
    assert abs(a - b) > 1e-3


def test_loop_around_one_from_outside_the_unit_disk(table, at_z1):
    _assert_single_valued(table, at_z1, _loop(at_z1, 1, Z1, 32), 'z1 around 1')


def test_loop_around_zero_and_one(table, at_z1):
    # a circle around 0 through z1 encloses 0 and 1; run it clockwise
    _assert_single_valued(table, at_z1, _loop(at_z1, 0, Z1, 48, turns=-1), 'z1 around 0 and 1')
    print(WORST)


@pytest.mark.slow
def test_weights_seven_and_eight_around_one():
    table = sv_table(8)
    g = start_values(8, DPS + 5)
    path, dpath = segment(Fraction(1, 3), Z0, DPS)
    before = continue_along(g, path, dpath, 0, 1, 8, STAGES, DPS)
    path, dpath, tau_end = circle(1, Z0, DPS)
    after = continue_along(before, path, dpath, 0, tau_end, 40, STAGES, DPS)
    for k in (7, 8):
        for w in all_words(k):
            terms = table.terms(w)
            a, b = sv_combination(terms, before, DPS), sv_combination(terms, after, DPS)
            assert abs(a - b) < TOL * max(1, abs(a)), w
