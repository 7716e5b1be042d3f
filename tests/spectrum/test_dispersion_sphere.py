"""Fixed-T dispersion sums of sphere integrals: S-channel and U-channel poles.

Sources
-------
* Complex Beta function (Dotsenko & Fateev, Nucl. Phys. B 240 (1984) 312;
  Kawai, Lewellen & Tye, Nucl. Phys. B 269 (1986) 1):
  ``C(S,T) = (1/π)∫ d²z |z|^(-2S-2)|1-z|^(-2T-2)
  = Γ(-S)Γ(-T)Γ(1+S+T)/(Γ(1+S)Γ(1+T)Γ(-S-T))``, and the closed-superstring
  factor ``V(S,T) = (1/π)∫ d²z |z|^(-2S-2)|1-z|^(-2T)
  = Γ(-S)Γ(1-T)Γ(S+T)/(Γ(1+S)Γ(T)Γ(1-S-T))`` (examples/closed_string.toml).
* Their Laurent series from A&S 6.1.33, ``log Γ(1+z) = -γz + Σ_{k≥2}
  (-1)^k ζ(k) z^k/k``: with ``E = Σ_{k odd ≥ 3} 2ζ(k)/k (S^k + T^k - (S+T)^k)``
  (derived by hand: the even-k and the γ terms cancel between Γ(1±x)),
  ``C = -(1/S + 1/T) e^E`` and ``V = T/(S U) e^E``, U = -S-T.  Every term of E
  is divisible by ``S T (S+T)``, so with ``Q = (e^E - 1)/(S T (S+T))`` the
  regular parts are ``-(S+T)² Q`` and ``-T² Q`` (the pole rows being
  ``-1/S - 1/T`` and ``-1/S - 1/U``).  Built below with sympy, ζ(k) from
  mpmath -- not from the package.
* Regge behaviour: ``Γ(z+a)/Γ(z+b) ~ z^(a-b)`` (A&S 6.1.47), so
  ``|C| = O(|S|^(2T))`` and ``|V| = O(|S|^(2T-2)) `` at fixed T on circles
  between the poles; measured below with mpmath Gamma functions.
"""

from __future__ import annotations

import json
from fractions import Fraction
from functools import lru_cache
from pathlib import Path

import mpmath
import pytest
import sympy
from typer.testing import CliRunner

from lowenergy.cli import app
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.spectrum.dispersion import check_dispersion, dispersive_terms
from lowenergy.spectrum.residues import ResidueTable
from lowenergy.svpolylog.sphere import expand_sphere
from lowenergy.svpolylog.sphere_residues import sphere_residues
from lowenergy.zeta.element import MZV

EXAMPLES = Path(__file__).resolve().parents[2] / "examples"
HEAD = 'domain = "sphere"\nvariables = ["S", "T"]\n'
BETA = HEAD + 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"\n'
SUPER = HEAD + 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T)"\n'
LEVELS = 30
S, T = sympy.symbols("S T")


@lru_cache(maxsize=None)
def reference(order: int):
    """{name: {(i, j): sympy coefficient in zeta symbols}} for the regular parts of C and V."""
    zs = {k: sympy.Symbol(f"z{k}") for k in range(3, order + 4, 2)}
    top = order + 3
    E = sum(2 * zs[k] / k * (S ** k + T ** k - (S + T) ** k) for k in zs)
    E = sympy.expand(E)
    exp_e = sympy.Integer(0)
    power = sympy.Integer(1)
    for m in range(1, top // 3 + 1):
        power = sympy.expand(power * E / m)
        exp_e += power
    poly = sympy.Poly(exp_e, S, T)
    trunc = sum(c * S ** a * T ** b for (a, b), c in poly.terms() if a + b <= top)
    q, r = sympy.div(sympy.Poly(trunc, S, T), sympy.Poly(S * T * (S + T), S, T))
    assert r.is_zero
    out = {}
    for name, factor in (("C", -(S + T) ** 2), ("V", -T ** 2)):
        reg = sympy.Poly(sympy.expand(factor * q.as_expr()), S, T)
        out[name] = {(a, b): c for (a, b), c in reg.terms() if a + b <= order}
    return out, zs


def ref_value(name: str, i: int, j: int, order: int = 6):
    coeffs, zs = reference(order)
    c = coeffs[name].get((i, j), sympy.Integer(0))
    with mpmath.workdps(40):
        value = mpmath.mpf(0)
        for mono, coef in sympy.Poly(c, *zs.values()).terms() if c != 0 else ():
            term = mpmath.mpf(coef.p) / coef.q
            for k, e in zip(zs, mono):
                term *= mpmath.zeta(k) ** e
            value += term
        return value


@lru_cache(maxsize=None)
def data(name: str):
    itg = integrand_from_text(BETA if name == "C" else SUPER, source=f"{name}.toml")
    return itg, sphere_residues(itg, LEVELS), expand_sphere(itg, 5)


def test_reference_series_sanity():
    # C = -1/S - 1/T + 2ζ(3)(S² + 2ST + T²)... (README, sphere section) and V: -T²Q, Q = -2ζ(3) + ...
    coeffs, zs = reference(4)
    assert coeffs["C"][(2, 0)] == 2 * zs[3] and coeffs["C"][(1, 1)] == 4 * zs[3]
    assert coeffs["V"][(0, 2)] == 2 * zs[3] and (2, 0) not in coeffs["V"]


# digits required at 30 levels (measured: 17-18 for the pure ζ(3), ζ(5) tails, 11 for
# S^2 T and S^4 T, 6.6 for S^2 T^2, 4.3 for S T^2, 9.3 for S T^4 of V: the tails carry
# (2 log n)^j from the squared Pochhammer residues, and more levels help, see the note)
@pytest.mark.parametrize("name, k, j, digits", [
    ("C", 2, 0, 16), ("C", 1, 1, 16), ("C", 4, 0, 16), ("C", 3, 1, 16), ("C", 2, 1, 9), ("C", 4, 1, 9),
    ("C", 2, 2, 5), ("C", 1, 2, 3.5),
    ("V", 2, 2, 16), ("V", 1, 3, 16), ("V", 1, 4, 8), ("V", 4, 1, 16),
])
def test_fixed_t_sums_against_the_gamma_series(name, k, j, digits):
    itg, table, ex = data(name)
    r = check_dispersion(itg, k, j, table=table, expansion=ex)
    ref = ref_value(name, k, j)
    with mpmath.workdps(40):
        diff = abs(r.value - ref)
        scale = max(abs(ref), mpmath.mpf(1))
        assert diff < mpmath.mpf(10) ** -digits * scale, (name, k, j, r.value, ref)
        assert diff < 10 * r.error + mpmath.mpf(10) ** -25 * scale   # the error estimate is honest


def test_u_channel_is_needed():
    # without the U-channel poles the S-channel sum alone misses c[2,0] = 2ζ(3) of C by a lot
    itg, table, ex = data("C")
    s_only = ResidueTable(table.variables, table.parameters, table.levels, table.poles)
    from lowenergy.spectrum.dispersion import dispersive_sum

    with mpmath.workdps(40):
        assert abs(dispersive_sum(s_only, 2, 0).value - 2 * mpmath.zeta(3)) > mpmath.mpf("0.1")
        full = dispersive_sum(table, 2, 0).value
        assert abs(full - 2 * mpmath.zeta(3)) < mpmath.mpf(10) ** -16


def test_fixed_s_sums():
    # poles in T at fixed S: T = n and U = n (T = -S-n); C and V are not symmetric in the same way
    for name, k, j, digits in (("C", 2, 1, 9), ("C", 3, 0, 30), ("V", 2, 0, 16), ("V", 3, 1, 16),
                               ("V", 2, 2, 5), ("V", 4, 1, 9)):
        itg, table, ex = data(name)
        r = check_dispersion(itg, k, j, var="T", table=table, expansion=ex)
        ref = ref_value(name, j, k)
        with mpmath.workdps(40):
            diff = abs(r.value - ref)
            assert diff < mpmath.mpf(10) ** -digits * max(abs(ref), 1), (name, k, j, r.value, ref)
            assert diff <= 10 * r.error + mpmath.mpf(10) ** -25


def test_k_zero_valid_for_the_superstring_factor_only():
    # V grows like |S|^(2T-2): the unsubtracted sums converge (c[0,2] = 2ζ(3));
    # C grows like |S|^(2T): at k = 0 the sum diverges at T = 0 (the -1/T pole)
    itg, table, ex = data("V")
    r = check_dispersion(itg, 0, 2, table=table, expansion=ex)
    with mpmath.workdps(40):
        assert abs(r.value - ref_value("V", 0, 2)) < mpmath.mpf(10) ** -15
    itg, table, ex = data("C")
    r = check_dispersion(itg, 0, 1, table=table, expansion=ex)
    assert r.digits < 2 and r.error > mpmath.mpf("0.01")


def test_regge_growth_of_the_closed_forms():
    # the growth rates stated in the module docstring, measured on |S| = N + 1/2 (A&S 6.1.47)
    def g(x):
        return mpmath.gamma(x) / mpmath.gamma(1 - x)

    with mpmath.workdps(20):
        tt = mpmath.mpf("0.1")
        ratios = {}
        for big_n in (10, 40, 160):
            r = big_n + mpmath.mpf(1) / 2
            pts = [r * mpmath.expj(th) for th in mpmath.linspace(0.01, 2 * mpmath.pi - 0.01, 120)]
            ratios[big_n] = (max(abs(g(-s) * g(-tt) * g(1 + s + tt)) for s in pts) / r ** (2 * tt),
                             max(abs(g(-s) * g(1 - tt) * g(s + tt)) for s in pts) / r ** (2 * tt - 2))
        for c_ratio, v_ratio in ratios.values():
            assert 5 < c_ratio < 20 and mpmath.mpf("0.05") < v_ratio < mpmath.mpf("0.2")


def test_u_channel_terms_against_sympy_partial_fractions():
    # a made-up U-channel pole part with S-dependent numerators and a double pole,
    # P2(S)/(U-2)^2 + P1(S)/(U-2), U = -S-T; at fixed T its singular part in S comes
    # from sympy's apart, independently of the Taylor-shift formula
    u = -S - T
    p2, p1 = 3 * S ** 2 - S + 5, -S ** 3 + 2
    f = p2 / (u - 2) ** 2 + p1 / (u - 2)
    parts = sympy.Add.make_args(sympy.apart(sympy.together(f), S))
    singular = sum(p for p in parts if sympy.denom(p).has(S))
    table = ResidueTable(("S", "T"), (), 3, {}, u_poles={
        Fraction(2): {2: {0: {(): MZV.rational(5)}, 1: {(): MZV.rational(-1)}, 2: {(): MZV.rational(3)}},
                      1: {0: {(): MZV.rational(2)}, 3: {(): MZV.rational(-1)}}},
    })
    series = sympy.series(sympy.series(singular, S, 0, 5).removeO(), T, 0, 4).removeO()
    poly = sympy.Poly(sympy.expand(series), S, T)
    for k in range(0, 4):
        for j in range(0, 3):
            (p, term), = dispersive_terms(table, k, j)
            assert p == 2
            expected = poly.coeff_monomial(S ** k * T ** j)
            assert term == MZV.rational(Fraction(int(expected.p), int(expected.q))), (k, j)
    # fixed S: the singular part in T at T = -S-2
    parts = sympy.Add.make_args(sympy.apart(sympy.together(f), T))
    singular = sum(p for p in parts if sympy.denom(p).has(T))
    series = sympy.series(sympy.series(singular, T, 0, 5).removeO(), S, 0, 4).removeO()
    poly = sympy.Poly(sympy.expand(series), S, T)
    for k in range(0, 4):
        for j in range(0, 3):
            (p, term), = dispersive_terms(table, k, j, var=1)
            expected = poly.coeff_monomial(T ** k * S ** j)
            assert term == MZV.rational(Fraction(int(expected.p), int(expected.q))), (k, j)


def test_cli_closed_string_example():
    res = CliRunner().invoke(app, ["dispersion", str(EXAMPLES / "closed_string.toml"), "--order", "4",
                                   "--levels", str(LEVELS), "--json"])
    assert res.exit_code == 0, res.output
    out = json.loads(res.stdout)
    assert out["ok"] and out["variable"] == "S"
    rows = {(r["k"], r["j"]): r for r in out["rows"]}
    assert set(rows) == {(k, t - k) for t in range(1, 5) for k in range(1, t + 1)}
    with mpmath.workdps(30):
        for (k, j), row in rows.items():
            ref = ref_value("V", k, j)
            assert abs(mpmath.mpf(row["dispersive_sum"]) - ref) < mpmath.mpf(10) ** -12 * max(abs(ref), 1), (k, j)
    assert ref_value("V", 2, 2) != 0
    text = CliRunner().invoke(app, ["dispersion", str(EXAMPLES / "closed_string.toml"), "--order", "2",
                                    "--levels", "10"])
    assert text.exit_code == 0 and "poles in S and U = -S-T" in text.stdout
