"""Sphere integrals with integer shifts of the exponents (a + b ≥ 2, a or b < 0):
:mod:`lowenergy.svpolylog.sphere` steps 5-6 against closed forms.

Sources
-------
* Complex Beta function (Dotsenko & Fateev, Nucl. Phys. B 240 (1984) 312;
  Kawai, Lewellen & Tye, Nucl. Phys. B 269 (1986) 1):
  ``C(x, y) = (1/π) ∫ d²z |z|^(2x-2) |1-z|^(2y-2) = γ(x) γ(y) / γ(x+y)``,
  ``γ(x) = Γ(x)/Γ(1-x)`` (``γ(1-y) = 1/γ(y)``).
* Γ recursion (A&S 6.1.15, ``Γ(x+1) = x Γ(x)``) gives, derived here,
  ``γ(x+1) = x Γ(x) / (Γ(1-x)/(-x)) = -x² γ(x)``, so
  ``γ(n + x) = ρ_n(x) γ(x)`` with ``ρ_n(x) = Π_{j=0}^{n-1} (-(x+j)²)`` (n ≥ 0)
  and ``ρ_{-m}(x) = 1 / Π_{j=1}^{m} (-(x-j)²)``.
* The exponents ``|z|^(2(a-1-S)) |1-z|^(2(b-1-T))`` are ``x = a - S``,
  ``y = b - T``, so the shifted integral is
  ``ρ_a(-S) ρ_b(-T) / ρ_{a+b}(U) · C(-S, -T)`` (``U = -S-T``) and
  ``C(-S, -T) = -(1/S + 1/T) exp(Σ_{k odd ≥ 3} 2ζ(k)/k (S^k + T^k - (S+T)^k))``
  (A&S 6.1.33; the exponential series is built with plain Fractions in
  :mod:`.test_sphere`, no package code).  With ``C(-S, -T) = U/(S T) · E``:
  ``S T D · I = N U E`` with polynomials N, D from the ρ's; the engine's
  series (S, T Laurent rows and U-pole rows) is multiplied by ``S T D``
  and compared coefficient by coefficient.
* log insertions: ``|z|^(2(a-1-S)) log|z|² = -∂_S`` of the integrand,
  ``log|1-z|²`` likewise ``-∂_T``: ``I_α = (-∂_S)^α0 (-∂_T)^α1 (N U E / (S T D))``,
  compared after multiplying by ``(S T D)^(α0+α1+1)`` (quotient rule).
"""

from __future__ import annotations

from fractions import Fraction

import pytest
import sympy

from lowenergy.errors import InputError
from lowenergy.integrand.model import LinearExponent as E
from lowenergy.svpolylog.sphere import SphereValues, expand_sphere, sphere_raw_series
from lowenergy.zeta.element import MZV

from .test_sphere import beta_exponential, sphere, to_mzv

S_, T_ = sympy.symbols("S T")
U_ = -S_ - T_


def _rho_factors(n, x):
    """(numerator, denominator) sympy polynomials with γ(n + x) = num/den · γ(x)."""
    if n >= 0:
        return sympy.prod([-(x + j) ** 2 for j in range(n)]), sympy.Integer(1)
    return sympy.Integer(1), sympy.prod([-(x - j) ** 2 for j in range(1, -n + 1)])


def closed_form_parts(a, b):
    """(P_num, P_den) with I = P_num/P_den · E: P_num = N U, P_den = S T D."""
    na, da = _rho_factors(a, -S_)
    nb, db = _rho_factors(b, -T_)
    nab, dab = _rho_factors(a + b, U_)
    num = sympy.expand(na * nb * dab * U_)
    den = sympy.expand(da * db * nab * S_ * T_)
    return num, den


def _poly_dict(expr):
    p = sympy.Poly(sympy.expand(expr), S_, T_)
    return {m: Fraction(int(c.p), int(c.q)) for m, c in p.terms()}


def _mindeg(d):
    return min(i + j for i, j in d)


# ---- series with coefficients {odd-zeta tuple: Fraction} --------------------------


def _zmul_poly(poly, series, top):
    out = {}
    for (i, j), c in poly.items():
        for (k, l), z in series.items():
            key = (i + k, j + l)
            if key[0] + key[1] > top:
                continue
            slot = out.setdefault(key, {})
            for m, v in z.items():
                slot[m] = slot.get(m, 0) + c * v
    return {k: {m: v for m, v in z.items() if v} for k, z in out.items() if any(z.values())}


def _zadd(x, y, f=1):
    out = {k: dict(v) for k, v in x.items()}
    for k, z in y.items():
        slot = out.setdefault(k, {})
        for m, v in z.items():
            slot[m] = slot.get(m, 0) + f * v
    return {k: {m: v for m, v in z.items() if v} for k, z in out.items() if any(z.values())}


def _zdiff(series, var):
    out = {}
    for (i, j), z in series.items():
        p = (i, j)[var]
        if p:
            key = (i - 1, j) if var == 0 else (i, j - 1)
            out[key] = {m: v * p for m, v in z.items()}
    return out


def expected_times_den(a, b, derivs, order):
    """``(P_den^(r+1), Y, top)`` with ``P_den^(r+1) · I_derivs = Y`` through total degree
    ``top`` (r = number of derivatives; quotient rule ``∂(Y/P^r) = (∂Y·P - r Y ∂P)/P^(r+1)``):
    the engine's series to ``order`` times ``P_den^(r+1)`` is right through
    ``top = order + (lowest degree of P_den^(r+1))``."""
    num, den = closed_form_parts(a, b)
    top = order + _mindeg(_poly_dict(den ** (len(derivs) + 1)))
    ex = beta_exponential(top + 4)
    y = _zmul_poly(_poly_dict(num), ex, top + 4)
    pden = _poly_dict(den)
    for r, var in enumerate(derivs, start=1):
        dp = _poly_dict(sympy.diff(den, (S_, T_)[var]))
        y = _zadd(_zmul_poly(pden, _zdiff(y, var), top + 4), _zmul_poly(dp, y, top + 4), -(r))
        y = {k: {m: -v for m, v in z.items()} for k, z in y.items()}   # -∂ for each log insertion
    want = {k: to_mzv(z) for k, z in y.items() if k[0] + k[1] <= top}
    return sympy.expand(den ** (len(derivs) + 1)), want, top


def engine_times(poly_expr, series, upoles):
    """``poly · (Σ series S^i T^j + Σ upoles S^i U^k)`` as {(i, j): MZV}; the U-pole rows
    are multiplied by ``poly`` after dividing it by the highest power of U they need."""
    out = {}

    def put(key, x):
        out[key] = out.get(key, MZV()) + x

    for (i, j), c in _poly_dict(poly_expr).items():
        for (k, l), x in series.items():
            put((i + k, j + l), x * c)
    if upoles:
        kmax = max(-k for _, k in upoles)
        quotient, rest = sympy.div(sympy.expand(poly_expr), sympy.expand(U_ ** kmax), S_, T_)
        assert rest == 0, "the closed form has no U-pole of that order"
        for (i, k), x in upoles.items():
            for key, c in _poly_dict(sympy.expand(quotient * U_ ** (k + kmax) * S_ ** i)).items():
                put(key, x * c)
    return {k: v for k, v in out.items() if v}


def check_against_closed_form(a, b, derivs, word, order, method="sv"):
    series, upoles = sphere_raw_series(E(a - 1, -1, 0), E(b - 1, -1, 1), word, order, SphereValues(method))
    pden, want, valid = expected_times_den(a, b, derivs, order)
    got = engine_times(pden, series, upoles)
    keys = {k for k in set(got) | set(want) if k[0] + k[1] <= valid}
    assert keys, "nothing compared"
    for key in sorted(keys):
        assert got.get(key, MZV()) == want.get(key, MZV()), (a, b, key)
    return series, upoles


# ---------------------------------------------------------------------------
# complex Beta function at integer shifts
# ---------------------------------------------------------------------------

SHIFTS = [(1, 1), (2, 0), (0, 2), (2, 1), (1, 2), (2, 2), (3, 0)]
NEGATIVE = [(2, -1), (-1, 1), (-1, 0), (0, -1), (-1, -1)]


@pytest.mark.parametrize("a,b", SHIFTS)
def test_beta_at_shifts_exact_order_8(a, b):
    series, upoles = check_against_closed_form(a, b, (), (), 8)
    # a + b ≥ 2: the massless U-pole is simple, and there are no S or T poles (a, b ≥ 1)
    assert upoles and all(k == -1 for _, k in upoles)
    if a >= 1 and b >= 1:
        assert all(i >= 0 and j >= 0 for i, j in series)


@pytest.mark.parametrize("a,b", NEGATIVE)
def test_beta_at_negative_shifts_exact(a, b):
    # a < 0: |z|^(-2S-2-2|a|); the pole at S = 0 has a numerator polynomial in T
    series, upoles = check_against_closed_form(a, b, (), (), 6)
    if a + b <= 0:
        assert not upoles


def test_beta_a1_b1_leading_terms():
    # by hand from the Γ recursion: ρ_1(-S) ρ_1(-T) / ρ_2(U) = S² T² / (U² (1+U)²), so
    # I = S² T² / (U² (1+U)²) · U/(S T) · E = S T / (U (1+U)²) · E, E = 1 + 2ζ(3) S T U + ...;
    # S T / U = S (-S - U) / U = -S²/U - S: the U-pole row -S²/U and the row -S
    series, upoles = sphere_raw_series(E(0, -1, 0), E(0, -1, 1), (), 3)
    assert upoles == {(2, -1): MZV.rational(-1)}
    assert series[(1, 0)] == MZV.rational(-1)


# ---------------------------------------------------------------------------
# log insertions: derivatives of the closed form
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("a,b,word,derivs", [
    (1, 1, (0,), (0,)),
    (1, 1, (1,), (1,)),
    (2, 0, (0,), (0,)),
    (2, 1, (1,), (1,)),
    (1, 1, (0, 0), (0, 0)),            # L_00 = L_0²/2: half of the second derivative
    (2, 0, (0, 1), (0, 1)),            # L_01 + L_10 = L_0 L_1
])
def test_log_insertions_at_shifts(a, b, word, derivs):
    order = 6
    if word == (0, 0):
        series, upoles = sphere_raw_series(E(a - 1, -1, 0), E(b - 1, -1, 1), word, order)
        series = {k: v * 2 for k, v in series.items()}
        upoles = {k: v * 2 for k, v in upoles.items()}
    elif word == (0, 1):
        s1, u1 = sphere_raw_series(E(a - 1, -1, 0), E(b - 1, -1, 1), (0, 1), order)
        s2, u2 = sphere_raw_series(E(a - 1, -1, 0), E(b - 1, -1, 1), (1, 0), order)
        series = {k: s1.get(k, MZV()) + s2.get(k, MZV()) for k in set(s1) | set(s2)}
        upoles = {k: u1.get(k, MZV()) + u2.get(k, MZV()) for k in set(u1) | set(u2)}
    else:
        series, upoles = sphere_raw_series(E(a - 1, -1, 0), E(b - 1, -1, 1), word, order)
    pden, want, valid = expected_times_den(a, b, derivs, order)
    got = engine_times(pden, {k: v for k, v in series.items() if v}, {k: v for k, v in upoles.items() if v})
    keys = {k for k in set(got) | set(want) if k[0] + k[1] <= valid}
    assert keys
    for key in sorted(keys):
        assert got.get(key, MZV()) == want.get(key, MZV()), (a, b, word, key)


def test_methods_agree_on_a_shift():
    # method "direct" (values at 1 and ∞ from the single-valued polylogarithms) and "sv"
    s1 = sphere_raw_series(E(0, -1, 0), E(0, -1, 1), (0, 1, 1), 4, SphereValues("sv"))
    s2 = sphere_raw_series(E(0, -1, 0), E(0, -1, 1), (0, 1, 1), 4, SphereValues("direct"))
    assert s1 == s2


@pytest.mark.parametrize("xs,ys", [(-1, -1), (0, -1), (-1, 0)])
@pytest.mark.parametrize("word", [(), (0,), (1,), (0, 1), (1, 0, 1), (0, 1, 1)])
def test_general_route_reproduces_the_unshifted_formulas(xs, ys, word):
    # steps 5-6 (any shift) against steps 2-3 (a + b ≤ 1) where both apply
    values = SphereValues("direct")
    assert sphere_raw_series(E(xs, -1, 0), E(ys, -1, 1), word, 4, values) == \
        sphere_raw_series(E(xs, -1, 0), E(ys, -1, 1), word, 4, values, _general=True)


# ---------------------------------------------------------------------------
# refusals
# ---------------------------------------------------------------------------


@pytest.mark.parametrize("text,message", [
    ("abs(z)^(-4)*abs(1-z)^(-2*T-2)", "diverges at z = 0"),
    ("abs(z)^(-2*S)*abs(1-z)^(-4)", "diverges at z = 1"),
    ("abs(z)^(-2*S)*abs(1-z)^(2*S)", "diverges at z = ∞"),
    ("abs(z)^(-2*S)*abs(1-z)^(-4*T)", "other than U"),
])
def test_unregulated_divergences_are_refused(text, message):
    with pytest.raises(InputError, match=message):
        expand_sphere(sphere(text), 3)


# ---------------------------------------------------------------------------
# command line
# ---------------------------------------------------------------------------


def test_cli_expand_shifted_file(tmp_path):
    import json

    from typer.testing import CliRunner

    from lowenergy.cli import app

    f = tmp_path / "a1b1.toml"
    f.write_text('domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "abs(z)^(-2*S)*abs(1-z)^(-2*T)"\n')
    res = CliRunner().invoke(app, ["expand", str(f), "--order", "3", "--json"])
    assert res.exit_code == 0, res.output
    terms = {t["name"]: t for t in json.loads(res.stdout)["terms"]}
    # S T/(U (1+U)²) · E (test_beta_a1_b1_leading_terms): -S²/U - S - 2 S T + ...
    pole = [t for t in terms.values() if t.get("kind") == "pole" and t["powers"] == [2, 0, -1]]
    assert pole and pole[0]["exact"] == "-1"
    assert terms["c[1,0]"]["exact"] == "-1"


def test_cli_unregulated_shift_exit_2_one_line_no_output(tmp_path):
    from typer.testing import CliRunner

    from lowenergy.cli import app

    f = tmp_path / "bad.toml"
    f.write_text('domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "abs(z)^(-4)*abs(1-z)^(-2*T-2)"\n')
    out = tmp_path / "out.csv"
    res = CliRunner().invoke(app, ["expand", str(f), "--order", "2", "--csv", str(out)])
    assert res.exit_code == 2
    assert "bad.toml" in res.output and "diverges at z = 0" in res.output
    assert "Traceback" not in res.output and not out.exists()
    lines = [line for line in res.output.splitlines() if line.strip()]
    assert len([line for line in lines if "diverges" in line]) == 1
