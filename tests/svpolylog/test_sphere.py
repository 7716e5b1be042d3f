"""Sphere integrals (1/π) ∫ d²z |z|^(2A) |1-z|^(2B) F(z): the engine of
:mod:`lowenergy.svpolylog.sphere` against closed forms and 2D quadrature.

Sources
-------
* Complex Beta function (Dotsenko & Fateev, Nucl. Phys. B 240 (1984) 312;
  Kawai, Lewellen & Tye, Nucl. Phys. B 269 (1986) 1):
  ``(1/π) ∫ d²z |z|^(2a-2) |1-z|^(2b-2) = γ(a) γ(b) γ(1-a-b)``,
  ``γ(x) = Γ(x)/Γ(1-x)``.
* Abramowitz & Stegun 6.1.33: ``log Γ(1+x) = -γ_E x + Σ_{k≥2} (-1)^k ζ(k) x^k / k``.
  Hence (derived here) ``γ(x) = (1/x) exp(-2 γ_E x - Σ_{k odd ≥ 3} 2 ζ(k) x^k / k)``
  and, with γ(1-y) = 1/γ(y),
  ``γ(a)γ(b)γ(1-a-b) = (a+b)/(ab) · exp(-Σ_{k odd} 2ζ(k)/k (a^k + b^k - (a+b)^k))``.
  The series are built in this file with plain Fractions (no package code).
* Insertions of log|z|², log|1-z|²: derivatives of the closed form in a, b.
* The Bloch-Wigner function (Zagier, "The dilogarithm function", 2007, from
  memory): ``D(z) = Im Li2(z) + arg(1-z) log|z|``; ``L_01 - L_10 = -4i D``
  (:mod:`lowenergy.svpolylog.construct`, tested there).
"""

from __future__ import annotations

from fractions import Fraction
from itertools import product

import mpmath
import pytest

from lowenergy.errors import InputError
from lowenergy.integrand.model import LinearExponent as E
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.svpolylog.sphere import SphereValues, expand_sphere, sphere_raw_series
from lowenergy.svpolylog.svmap import sv
from lowenergy.zeta.element import MZV, zeta
from lowenergy.zeta.reduction import monomials_of_weight
from lowenergy.zeta.table import default_store

from .plane_quadrature import plane

# ---------------------------------------------------------------------------
# closed forms as bivariate series {(i, j): {tuple of odd zeta arguments: Fraction}}
# ---------------------------------------------------------------------------


def _padd(a, b, f=1):
    out = dict(a)
    for k, v in b.items():
        y = out.get(k, 0) + f * v
        if y:
            out[k] = y
        else:
            out.pop(k, None)
    return out


def _pmul(a, b):
    out = {}
    for ka, va in a.items():
        for kb, vb in b.items():
            k = tuple(sorted(ka + kb))
            out[k] = out.get(k, 0) + va * vb
    return {k: v for k, v in out.items() if v}


def _smul(a, b, top):
    out = {}
    for (i1, j1), p in a.items():
        for (i2, j2), q in b.items():
            if i1 + j1 + i2 + j2 > top:
                continue
            key = (i1 + i2, j1 + j2)
            out[key] = _padd(out.get(key, {}), _pmul(p, q))
    return {k: v for k, v in out.items() if v}


def _binom_lin(p, q, n):
    """(p S + q T)^n as {(i, j): Fraction}."""
    from math import comb

    return {(i, n - i): Fraction(comb(n, i)) * Fraction(p) ** i * Fraction(q) ** (n - i) for i in range(n + 1)}


def beta_exponential(top):
    """exp(Σ_{k odd ≥ 3} 2ζ(k)/k (S^k + T^k - (S+T)^k)) to total degree ``top``."""
    f = {}
    for k in range(3, top + 1, 2):
        poly = _padd(_padd(_binom_lin(1, 0, k), _binom_lin(0, 1, k)), _binom_lin(1, 1, k), -1)
        for key, c in poly.items():
            if c:
                f[key] = _padd(f.get(key, {}), {(k,): Fraction(2, k) * c})
    result = {(0, 0): {(): Fraction(1)}}
    term = {(0, 0): {(): Fraction(1)}}
    for n in range(1, top // 3 + 1):
        term = _smul(term, f, top)
        term = {k: {m: c / n for m, c in v.items()} for k, v in term.items()}
        result = {k: _padd(result.get(k, {}), term.get(k, {})) for k in set(result) | set(term)}
    return {k: v for k, v in result.items() if v}


def to_mzv(poly):
    out = MZV()
    for key, c in poly.items():
        x = MZV.rational(c)
        for k in key:
            x = x * zeta(k)
        out = out + x
    return out


def expected_beta(order):
    """-(1/S + 1/T) · exp(...) as {(i, j): MZV} for i + j ≤ order."""
    ex = beta_exponential(order + 1)
    out = {}
    for (i, j), p in ex.items():
        for key in ((i - 1, j), (i, j - 1)):
            if key[0] + key[1] <= order:
                out[key] = out.get(key, MZV()) - to_mzv(p)
    return {k: v for k, v in out.items() if v}


def sphere(text, params=""):
    head = 'domain = "sphere"\nvariables = ["S", "T"]\n' + (f"parameters = [{params}]\n" if params else "")
    return integrand_from_text(head + f'integrand = "{text}"', source="test.toml")


def flat(expansion):
    return {k: v.get((), MZV()) for k, v in expansion.coefficients.items()}


KN = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"


# ---------------------------------------------------------------------------
# complex Beta function
# ---------------------------------------------------------------------------


@pytest.mark.slow
def test_closed_string_factor_order_12():
    order = 12
    got = flat(expand_sphere(sphere(KN), order))
    assert got == expected_beta(order)


def test_closed_string_factor_order_10():
    order = 10
    got = flat(expand_sphere(sphere(KN), order))
    assert got == expected_beta(order)
    assert got[(2, 0)] == 2 * zeta(3)  # -(1/T)·(-2ζ(3) S² T)


def test_beta_only_odd_zetas_numerically():
    # independent numbers: mpmath Γ at a small point against the truncated series
    got = flat(expand_sphere(sphere(KN), 10))
    with mpmath.workdps(40):
        S, T = mpmath.mpf("-0.003"), mpmath.mpf("-0.002")
    g = lambda x: mpmath.gamma(x) / mpmath.gamma(1 - x)  # noqa: E731
    with mpmath.workdps(40):
        closed = g(-S) * g(-T) * g(1 + S + T)
        series = sum(v.numeric(40) * S**i * T**j for (i, j), v in got.items())
        assert abs(closed - series) < mpmath.mpf(10) ** -22


@pytest.mark.parametrize("text,u_sign", [
    ("abs(z)^(-2*S)*abs(1-z)^(-2*T-2)", 1),     # γ(1-S)γ(-T)γ(S+T) = S/(T U) exp(...)
    ("abs(z)^(-2*S-2)*abs(1-z)^(-2*T)", 0),     # γ(-S)γ(1-T)γ(S+T) = T/(S U) exp(...)
])
def test_shifted_beta_with_u_channel_pole(text, u_sign):
    """U·T·I = S·exp(...) (first) and U·S·I = T·exp(...) (second), U = -S-T:
    multiply the engine's Laurent series (S, T poles and U-pole rows) back."""
    order = 8
    e = expand_sphere(sphere(text), order)
    assert e.u_poles == {(0, -1): {(): MZV.rational(-1)}}   # -1/U in both cases
    # the series as {(i, j, k): MZV} with U^k kept symbolic, then times U·(T or S)
    other = (0, 1) if u_sign else (1, 0)
    total = {}

    def put(i, j, x):
        total[(i, j)] = total.get((i, j), MZV()) + x

    for (i, j), pp in e.coefficients.items():
        x = pp[()]
        # times U = -S - T, times the other variable
        put(i + 1 + other[0], j + other[1], -x)
        put(i + other[0], j + 1 + other[1], -x)
    for (i, k), pp in e.u_poles.items():
        assert k == -1
        put(i + other[0], other[1], pp[()])      # S^i U^-1 · U · other
    ex = beta_exponential(order + 1)
    want = {}
    for (i, j), p in ex.items():
        key = (i + 1, j) if u_sign else (i, j + 1)
        want[key] = to_mzv(p)
    for key in set(total) | set(want):
        if key[0] + key[1] <= order + 1:
            assert total.get(key, MZV()) == want.get(key, MZV()), key


# ---------------------------------------------------------------------------
# log insertions: derivatives of the closed form
# ---------------------------------------------------------------------------


def _derivative(series, var):
    out = {}
    for (i, j), v in series.items():
        p = (i, j)[var]
        if p:
            key = (i - 1, j) if var == 0 else (i, j - 1)
            out[key] = out.get(key, MZV()) + v * p
    return {k: v for k, v in out.items() if v}


@pytest.mark.parametrize("insertion,derivs", [
    ("log(abs(z))", (0,)),                 # log|z| = L0/2: (1/2)·(-∂_S)
    ("log(abs(1-z))", (1,)),
    ("log(abs(z))*log(abs(1-z))", (0, 1)),
    ("log(abs(z))^2", (0, 0)),
])
def test_log_insertions_are_derivatives(insertion, derivs):
    order = 8
    got = flat(expand_sphere(sphere(f"{KN}*{insertion}"), order))
    want = expected_beta(order + len(derivs))
    for var in derivs:
        want = _derivative(want, var)  # |z|^(-2S) log|z|² = -∂_S |z|^(-2S); log|z| = (1/2) log|z|²
    factor = Fraction((-1) ** len(derivs), 2 ** len(derivs))
    want = {k: v * factor for k, v in want.items() if k[0] + k[1] <= order}
    assert got == {k: v for k, v in want.items() if v}


# ---------------------------------------------------------------------------
# genuinely single-valued insertions against 2D quadrature
# ---------------------------------------------------------------------------

D2 = "-1/16*(svpolylog(0,1; z) - svpolylog(1,0; z))^2"      # D(z)² (weight 4)


def test_bloch_wigner_alone_integrates_to_zero():
    # D(z̄) = -D(z) and the measure is symmetric under z -> z̄
    e = expand_sphere(sphere(f"{KN}*(svpolylog(0,1; z) - svpolylog(1,0; z))"), 6)
    assert e.coefficients == {}


def test_bloch_wigner_squared_against_quadrature():
    """c[0,0] = (1/π)∫ D² dμ, c[1,0] = -(1/π)∫ L0 D² dμ, c[2,0] = (1/π)∫ L0²/2 D² dμ,
    c[1,1] = (1/π)∫ L0 L1 D² dμ: all convergent integrals (D vanishes at 0, 1, ∞)."""
    e = flat(expand_sphere(sphere(f"{KN}*{D2}"), 2))
    funcs = {
        (0, 0): lambda d, l0, l1: d * d,
        (1, 0): lambda d, l0, l1: -d * d * l0,
        (0, 1): lambda d, l0, l1: -d * d * l1,
        (2, 0): lambda d, l0, l1: d * d * l0 * l0 / 2,
        (1, 1): lambda d, l0, l1: d * d * l0 * l1,
    }
    keys = list(funcs)
    values = plane([funcs[k] for k in keys], h=0.0625)
    with mpmath.workdps(30):
        for key, v in zip(keys, values):
            exact = e[key].numeric(30)
            quad = mpmath.mpf(v.mid().str(28, radius=False))
            assert abs(exact - quad) < mpmath.mpf(10) ** -17 * abs(exact), (key, exact, quad)


def test_two_routes_agree_depth_two():
    """Z_sv from the sv map on interval values (default) and from the
    single-valued polylogarithms themselves (:func:`sv_value_at_one`): two
    independent constructions of the same numbers."""
    for word in [(0, 1, 1), (0, 0, 1, 1), (0, 1, 0, 1), (1, 0, 0, 1)]:
        a, _ = sphere_raw_series(E(-1, -1, 0), E(-1, -1, 1), word, 3, SphereValues("sv"))
        b, _ = sphere_raw_series(E(-1, -1, 0), E(-1, -1, 1), word, 3, SphereValues("direct"))
        assert a == b, word
    for word in [(0, 1), (1, 0, 1)]:
        a, ua = sphere_raw_series(E(0, -1, 0), E(-1, -1, 1), word, 3, SphereValues("sv"))
        b, ub = sphere_raw_series(E(0, -1, 0), E(-1, -1, 1), word, 3, SphereValues("direct"))
        assert a == b and ua == ub, word


def test_coefficients_lie_in_the_image_of_sv():
    """Each coefficient is in the span of sv(basis monomials) of its weight
    (exact linear algebra with sympy)."""
    import sympy

    e = flat(expand_sphere(sphere(f"{KN}*svpolylog(0,0,1,1; z)"), 4))
    store = default_store()
    assert e
    for key, x in e.items():
        w = x.weight
        gens = store.all_generators(w)
        images = [sv(MZV({m: Fraction(1)})).as_dict() for m in monomials_of_weight(gens, w)]
        monos = sorted({m for im in images for m in im} | set(x.as_dict()), key=repr)
        A = sympy.Matrix([[sympy.Rational(im.get(m, 0)) for im in images] for m in monos])
        b = sympy.Matrix([sympy.Rational(x.as_dict().get(m, 0)) for m in monos])
        assert A.rank() == A.row_join(b).rank(), (key, x)
        # in particular no zeta(2)
        assert all(all(g != (2,) for g in mono) for mono in x.as_dict()), (key, x)


# ---------------------------------------------------------------------------
# the reader
# ---------------------------------------------------------------------------


def test_reader_accepts_the_sphere_forms():
    itg = sphere(f"{KN}*(S*log(abs(z))^2 + T*svpolylog(0,1; z) + zeta(3))")
    assert itg.domain == "sphere" and itg.integration_variable == "z"
    words = sorted(t.word for t in itg.terms)
    assert words == [(), (0, 0), (0, 1)]


@pytest.mark.parametrize("text,fragment", [
    ("z^(-S-1)*(1-z)^(-T-1)", "interval syntax"),
    (f"{KN}*G(0,1; z)", "multivalued"),
    (f"{KN}*log(z)", "multivalued"),
    (f"{KN}*Li(2, z)", "multivalued"),
    ("abs(z)^(-S-1)*abs(1-z)^(-2*T-2)", "even integer"),
    ("abs(z)*abs(1-z)^(-2*T-2)", "raised to a power"),
    ("abs(z)^(-2*S-2)*abs(1-z)^(-2*S-2*T-2)", "both"),
    ("abs(z)^(-2*S-2)*abs(1+z)^(-2*T-2)", "abs(z) and abs(1-z)"),
])
def test_reader_refusals(text, fragment):
    with pytest.raises(InputError) as info:
        sphere(text)
    msg = str(info.value)
    assert fragment in msg and "test.toml" in msg and "line" in msg


def test_abs_in_an_interval_file_is_refused():
    with pytest.raises(InputError, match='domain = "sphere"'):
        integrand_from_text('integrand = "abs(x)^(-2*s-2)"', source="i.toml")


def test_unknown_domain():
    with pytest.raises(InputError, match="unknown domain"):
        integrand_from_text('domain = "torus"\nintegrand = "1"', source="i.toml")


def test_unsupported_shifts_refused_with_location():
    # a power divergence at 0 that no variable regulates (integer shifts themselves are
    # supported: tests/svpolylog/test_sphere_shift.py)
    with pytest.raises(InputError, match="diverges at z = 0") as err:
        expand_sphere(sphere("abs(z)^(-4)*abs(1-z)^(-2*T-2)"), 2)
    assert "test.toml" in str(err.value)


def test_interval_engine_refuses_sphere_integrands():
    from lowenergy.expansion.engine import expand

    with pytest.raises(InputError, match="sphere integrand"):
        expand(sphere(KN), 2)
