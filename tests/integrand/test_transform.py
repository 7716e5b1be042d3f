"""Tests of lowenergy.integrand.transform: G(w; 1-x) in terms of G(u; x).

The numerical checks use an evaluator of ``G(w; x)`` written here from the
definition only (power series in x times powers of log x, integrated letter
by letter), independent of the shuffle algebra and of the transform; it is
itself checked against mpmath's ``log``, ``polylog`` and a quadrature of
Nielsen's generalized polylogarithms.
"""

from __future__ import annotations

import itertools
from fractions import Fraction
from functools import lru_cache

import mpmath
import pytest

from lowenergy.errors import InputError, TableError
from lowenergy.integrand.transform import g_of_one_minus_x
from lowenergy.zeta.element import MZV, zeta

DPS = 40
TERMS = 260  # series length; enough for |x| <= 0.75 at 40 digits
TOL = mpmath.mpf(10) ** -25
POINTS = ("0.25", "0.5", "0.75")


# --------------------------------------------------------------------------
# an independent numerical G(w; x) for 0 < x <= 3/4
# --------------------------------------------------------------------------


def _integrate_log_power(n: int, j: int):
    """``∫_0^x t^(n-1) log(t)^j dt = x^n Σ_i (-1)^i j!/(j-i)! log(x)^(j-i) / n^(i+1)``
    (n >= 1; repeated integration by parts) as ``[(power of log, factor)]``."""
    out = []
    falling = 1
    for i in range(j + 1):
        out.append((j - i, (-1) ** i * falling / mpmath.mpf(n) ** (i + 1)))
        falling *= j - i
    return out


@lru_cache(maxsize=None)
def _series(word: tuple) -> tuple:
    """``G(word; x) = Σ_j log(x)^j Σ_n c[j][n] x^n`` truncated at x^TERMS.

    Built from the definition ``G(a, w; x) = ∫_0^x dt/(t-a) G(w; t)``,
    innermost letter first; ``∫_0^x log(t)^j dt/t := log(x)^(j+1)/(j+1)``
    is the tangential base point (``G(0^n; x) = log(x)^n/n!``), and
    ``1/(t-1) = -Σ_k t^k``.
    """
    with mpmath.workdps(DPS):
        coeffs = {0: [mpmath.mpf(1)] + [mpmath.mpf(0)] * TERMS}
        for letter in reversed(word):
            new: dict = {}

            def bump(j, n, value):
                row = new.setdefault(j, [mpmath.mpf(0)] * (TERMS + 1))
                row[n] += value

            for j, row in coeffs.items():
                if letter == 0:
                    if row[0]:
                        bump(j + 1, 0, row[0] / (j + 1))
                    for n in range(1, TERMS + 1):
                        if row[n]:
                            for power, factor in _integrate_log_power(n, j):
                                bump(power, n, row[n] * factor)
                else:
                    prefix = mpmath.mpf(0)
                    for n in range(0, TERMS):
                        prefix += row[n]
                        if prefix:
                            for power, factor in _integrate_log_power(n + 1, j):
                                bump(power, n + 1, -prefix * factor)
            coeffs = new
        return tuple(sorted((j, tuple(row)) for j, row in coeffs.items()))


def g_numeric(word, x) -> mpmath.mpf:
    """Independent numerical ``G(word; x)`` for ``0 < x <= 3/4``."""
    with mpmath.workdps(DPS):
        x = mpmath.mpf(x)
        log_x = mpmath.log(x)
        total = mpmath.mpf(0)
        for j, row in _series(tuple(word)):
            total += log_x**j * mpmath.polyval(list(reversed(row)), x)
        return total


def nielsen(n: int, p: int, x) -> mpmath.mpf:
    """Nielsen's generalized polylogarithm by quadrature,
    ``S_{n,p}(x) = (-1)^(n+p-1)/((n-1)! p!) ∫_0^1 log^(n-1)(t) log^p(1-xt)/t dt``
    (K. S. Kölbig, "Nielsen's generalized polylogarithms", SIAM J. Math.
    Anal. 17 (1986) 1232, eq. (1.1))."""
    with mpmath.workdps(DPS):
        x = mpmath.mpf(x)
        integral = mpmath.quad(lambda t: mpmath.log(t) ** (n - 1) * mpmath.log(1 - x * t) ** p / t, [0, 0.5, 1])
        return (-1) ** (n + p - 1) / (mpmath.factorial(n - 1) * mpmath.factorial(p)) * integral


def transform_numeric(word, x) -> mpmath.mpf:
    """Right-hand side ``Σ_u c_u G(u; x)`` of :func:`g_of_one_minus_x`."""
    with mpmath.workdps(DPS):
        total = mpmath.mpf(0)
        for u, c in g_of_one_minus_x(word).items():
            total += c.numeric(DPS) * g_numeric(u, x)
        return total


def close(a, b, tol=TOL) -> bool:
    with mpmath.workdps(DPS):
        return abs(a - b) <= tol * max(1, abs(a), abs(b))


# --------------------------------------------------------------------------
# the independent evaluator against mpmath
# --------------------------------------------------------------------------


@pytest.mark.parametrize("x", POINTS)
def test_g_numeric_elementary(x):
    with mpmath.workdps(DPS):
        X = mpmath.mpf(x)
        # G(0; x) = log x, G(1; x) = log(1-x), G(0^3; x) = log^3(x)/3!
        assert close(g_numeric((0,), x), mpmath.log(X))
        assert close(g_numeric((1,), x), mpmath.log(1 - X))
        assert close(g_numeric((0, 0, 0), x), mpmath.log(X) ** 3 / 6)
        # G(1,1; x) = log^2(1-x)/2; G(1,0; x) + G(0,1; x) = log x log(1-x) (shuffle)
        assert close(g_numeric((1, 1), x), mpmath.log(1 - X) ** 2 / 2)
        assert close(g_numeric((1, 0), x) + g_numeric((0, 1), x), mpmath.log(X) * mpmath.log(1 - X))


@pytest.mark.parametrize("x", POINTS)
@pytest.mark.parametrize("n", [1, 2, 3, 4, 5])
def test_g_numeric_polylog(n, x):
    """``Li_n(x) = -G(0^(n-1), 1; x)`` (Li_n(x) = Σ x^k/k^n; mpmath.polylog)."""
    with mpmath.workdps(DPS):
        word = (0,) * (n - 1) + (1,)
        assert close(-g_numeric(word, x), mpmath.polylog(n, mpmath.mpf(x)))


@pytest.mark.parametrize("x", ["0.3", "0.7"])
@pytest.mark.parametrize("n,p", [(1, 1), (1, 2), (2, 2), (1, 3), (3, 2), (2, 3)])
def test_nielsen_relation(n, p, x):
    """``S_{n,p}(x) = (-1)^p G(0^n, 1^p; x)``, quadrature against series.

    Note the n zeros (weight n+p): S_{1,1} = Li_2 = -G(0,1; x).  The
    variant with n-1 zeros is checked to be *wrong* in
    :func:`test_nielsen_off_by_one`."""
    word = (0,) * n + (1,) * p
    with mpmath.workdps(DPS):
        assert close(nielsen(n, p, x), (-1) ** p * g_numeric(word, x), mpmath.mpf(10) ** -20)


def test_nielsen_off_by_one():
    """``(-1)^p G(0^(n-1), 1^p; x)`` is not S_{n,p}: S_{1,1}(x) = Li_2(x) != -log(1-x)."""
    with mpmath.workdps(DPS):
        assert not close(nielsen(1, 1, "0.3"), -g_numeric((1,), "0.3"), mpmath.mpf(10) ** -5)


def test_nielsen_contains_polylog():
    # S_{n-1,1}(x) = Li_n(x) (Kölbig 1986, eq. (1.2))
    with mpmath.workdps(DPS):
        assert close(nielsen(2, 1, "0.4"), mpmath.polylog(3, mpmath.mpf("0.4")), mpmath.mpf(10) ** -20)


# --------------------------------------------------------------------------
# the transform
# --------------------------------------------------------------------------


def test_small_words_by_hand():
    one = MZV.one()
    assert g_of_one_minus_x(()) == {(): one}
    # log(1-x) = G(1; x), log(x) = G(0; x)
    assert g_of_one_minus_x((0,)) == {(1,): one}
    assert g_of_one_minus_x((1,)) == {(0,): one}
    # Euler: Li2(1-x) = ζ(2) - log x log(1-x) - Li2(x), i.e. with G(0,1;y) = -Li2(y)
    # and log x log(1-x) = G(0,1;x) + G(1,0;x):  G(0,1; 1-x) = -ζ(2) + G(1,0; x)
    assert g_of_one_minus_x((0, 1)) == {(): -zeta(2), (1, 0): one}
    assert g_of_one_minus_x((1, 0)) == {(): zeta(2), (0, 1): one}
    # G(1,1; 1-x) = log^2(x)/2 = G(0,0; x)
    assert g_of_one_minus_x((1, 1)) == {(0, 0): one}


def test_accepts_lists_and_rejects_bad_letters():
    assert g_of_one_minus_x([0, 1]) == g_of_one_minus_x((0, 1))
    for bad in [(2,), (0, -1), ("0",), (True,)]:
        with pytest.raises(InputError):
            g_of_one_minus_x(bad)


def test_result_is_a_fresh_dict():
    a = g_of_one_minus_x((0, 1))
    a.clear()
    assert g_of_one_minus_x((0, 1))


@pytest.mark.parametrize("length", [1, 2, 3, 4, 5, 6])
def test_weight_and_shape(length):
    """Coefficients are homogeneous of weight |w| - |u|; u are prefixes of the flipped word."""
    for word in itertools.product((0, 1), repeat=length):
        flipped = tuple(1 - a for a in word)
        result = g_of_one_minus_x(word)
        assert result[flipped] == MZV.one()
        for u, c in result.items():
            assert flipped[: len(u)] == u
            assert c
            if len(u) < length:
                assert c.weight == length - len(u)


@pytest.mark.parametrize("length", [1, 2, 3, 4, 5])
def test_involution(length):
    """x -> 1-x twice is the identity: Σ_u c_u(w) Σ_v c_v(u) G(v; x) = G(w; x)."""
    for word in itertools.product((0, 1), repeat=length):
        total: dict = {}
        for u, c in g_of_one_minus_x(word).items():
            for v, d in g_of_one_minus_x(u).items():
                y = total.get(v, MZV()) + c * d
                if y:
                    total[v] = y
                else:
                    total.pop(v)
        assert total == {word: MZV.one()}, word


@pytest.mark.parametrize("x", POINTS)
@pytest.mark.parametrize("length", [1, 2, 3, 4, 5])
def test_numeric_all_words(length, x):
    """G(w; 1-x) from the series at 1-x against the transform at x, all words."""
    y = str(1 - Fraction(x))
    for word in itertools.product((0, 1), repeat=length):
        assert close(g_numeric(word, y), transform_numeric(word, x)), (word, x)


@pytest.mark.parametrize("x", ["0.3", "0.6"])
@pytest.mark.parametrize("n", [1, 2, 3, 4, 5, 6])
def test_numeric_polylog_of_one_minus_x(n, x):
    """Li_n(1-x) = -G(0^(n-1),1; 1-x), checked against mpmath.polylog directly."""
    with mpmath.workdps(DPS):
        word = (0,) * (n - 1) + (1,)
        expected = mpmath.polylog(n, 1 - mpmath.mpf(x))
        assert close(-transform_numeric(word, x), expected)


@pytest.mark.parametrize("x", ["0.3", "0.6"])
@pytest.mark.parametrize("n,p", [(1, 2), (2, 2), (1, 3), (2, 3)])
def test_numeric_nielsen_of_one_minus_x(n, p, x):
    """S_{n,p}(1-x) by quadrature against the transform of (-1)^p G(0^n,1^p; 1-x)."""
    word = (0,) * n + (1,) * p
    with mpmath.workdps(DPS):
        y = 1 - mpmath.mpf(x)
        assert close(nielsen(n, p, y), (-1) ** p * transform_numeric(word, x), mpmath.mpf(10) ** -20)


def test_needs_tables(tmp_path):
    from lowenergy.zeta.table import TableStore

    empty = TableStore(tmp_path, auto_build=False)
    assert g_of_one_minus_x((1, 1), store=empty)  # no MZV needed
    with pytest.raises(TableError, match="lowenergy tables build"):
        g_of_one_minus_x((0, 1), store=empty)


def test_no_global_precision_change():
    dps = mpmath.mp.dps
    transform_numeric((0, 1, 1), "0.5")
    assert mpmath.mp.dps == dps
