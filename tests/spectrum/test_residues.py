"""Exact pole parts against closed forms computed independently (sympy, mpmath).

Sources:
* Γ(z) has simple poles at z = -n with residue (-1)^n/n! (A&S 6.1.3, via
  sympy.residue here); B(a, b) = Γ(a)Γ(b)/Γ(a+b) = ∫_0^1 x^(a-1)(1-x)^(b-1) dx
  (A&S 6.2.1, 6.2.2).
* ∂_a B(a,b) = B(a,b)(ψ(a) - ψ(a+b)), so ∫ x^(a-1)(1-x)^(b-1) log x dx =
  B(a,b)(ψ(a) - ψ(a+b)) and the same with log(1-x) and ψ(b) (A&S 6.2.2 and
  the definition of ψ, A&S 6.3.1).
* Euler's reflection Li_2(x) = ζ(2) - log x log(1-x) - Li_2(1-x) (A&S 27.7.3)
  and Li_2(x) = Σ x^k/k^2 (A&S 27.7.1).
"""

from __future__ import annotations

import csv
import json
from fractions import Fraction
from functools import lru_cache

import mpmath
import pytest
import sympy

from lowenergy.errors import InputError
from lowenergy.integrand.model import Integrand, LinearExponent, Term
from lowenergy.spectrum.residues import g_series_at_zero, residues
from lowenergy.zeta.element import MZV, zeta

from .common import S_SYM, T_SYM, beta, beta_one_minus_t, beta_type, rpoly_to_sympy

s, t = S_SYM, T_SYM
LEVELS = 10


@lru_cache(maxsize=None)
def beta_table():
    return residues(beta(), LEVELS)


# ---------------------------------------------------------------------------
# G-words near 0
# ---------------------------------------------------------------------------

def _g_reference(word, x):
    """Independent values of G(word; x) from mpmath (definitions of the words module)."""
    x = mpmath.mpf(x)
    log = mpmath.log
    if word == (1, 0):      # ∫_0^x log u/(u-1) du
        return mpmath.quad(lambda u: log(u) / (u - 1), [0, x])
    if word == (0, 1):      # -Li_2(x)
        return -mpmath.polylog(2, x)
    if word == (0, 0, 1):   # -Li_3(x)
        return -mpmath.polylog(3, x)
    if word == (1, 0, 0):   # ∫_0^x log^2 u/(2(u-1)) du
        return mpmath.quad(lambda u: log(u) ** 2 / (2 * (u - 1)), [0, x])
    if word == (0, 1, 0):   # ∫_0^x dt/t G(1,0;t), G(1,0;t) = ζ(2) - Li_2(1-t) (A&S 27.7.3 differentiated)
        return mpmath.quad(lambda u: (mpmath.zeta(2) - mpmath.polylog(2, 1 - u)) / u, [0, x])
    if word == (1, 1, 0):   # ∫_0^x dt/(t-1) G(1,0;t)
        return mpmath.quad(lambda u: (mpmath.zeta(2) - mpmath.polylog(2, 1 - u)) / (u - 1), [0, x])
    raise KeyError(word)


@pytest.mark.parametrize("word", [(1, 0), (0, 1), (0, 0, 1), (1, 0, 0), (0, 1, 0), (1, 1, 0)])
def test_g_series_against_mpmath(word):
    x = mpmath.mpf("0.15")
    order = 60  # 0.15^61 ~ 1e-50
    series = g_series_at_zero(word, order)
    with mpmath.workdps(30):
        L = mpmath.log(x)
        value = mpmath.mpf(0)
        for k, coeffs in series.items():
            for m, c in enumerate(coeffs):
                value += mpmath.mpf(c.numerator) / c.denominator * x ** m * L ** k / mpmath.factorial(k)
        ref = _g_reference(word, x)
        assert abs(value - ref) < mpmath.mpf(10) ** -20, (word, value, ref)


def test_g_series_log_power():
    # G(0,0;x) = log^2 x / 2 exactly: one k = 2 entry, constant term only
    ser = g_series_at_zero((0, 0), 5)
    assert list(ser) == [2] and ser[2] == [1, 0, 0, 0, 0, 0]


# ---------------------------------------------------------------------------
# Beta function and the superstring form factor
# ---------------------------------------------------------------------------

@lru_cache(maxsize=None)
def sympy_residue(expr_name, n, var):
    exprs = {
        "beta": sympy.gamma(-s) * sympy.gamma(-t) / sympy.gamma(-s - t),
        "super": sympy.gamma(-s) * sympy.gamma(-t) / sympy.gamma(1 - s - t),
        "beta_1_minus_s": sympy.gamma(1 - s) * sympy.gamma(-t) / sympy.gamma(1 - s - t),
        "tachyon": sympy.gamma(-1 - s) * sympy.gamma(-1 - t) / sympy.gamma(-2 - s - t),
        "beta_2s": sympy.gamma(-2 * s) * sympy.gamma(-t) / sympy.gamma(-2 * s - t),
    }
    v = s if var == 0 else t
    return sympy.expand(sympy.gammasimp(sympy.residue(exprs[expr_name], v, n)))


@pytest.mark.parametrize("n", range(0, LEVELS + 1))
def test_beta_residues_in_s_exact(n):
    # Res_{s=n} Γ(-s)Γ(-t)/Γ(-s-t) = -(t+1)...(t+n)/n!, computed by sympy
    table = beta_table()
    assert table.max_order(n) == 1
    ours = rpoly_to_sympy(table.residue(n), t)
    assert sympy.expand(ours - sympy_residue("beta", n, 0)) == 0


@pytest.mark.parametrize("n", [0, 1, 4, 10])
def test_beta_residues_in_t_exact(n):
    # the x = 1 end point (x -> 1 - x machinery): Res_{t=n} in s
    ours = rpoly_to_sympy(beta_table().residue(n, var="t"), s)
    assert sympy.expand(ours - sympy_residue("beta", n, 1)) == 0


def test_beta_residues_numeric_limit():
    # independent of sympy: (s - n) B(-s,-t) at s = n + ε, mpmath at 60 digits
    table = beta_table()
    with mpmath.workdps(60):
        eps = mpmath.mpf(10) ** -30
        for n in (1, 5, 10):
            for tv in ("-0.3", "0.7", "2.25"):
                tt = mpmath.mpf(tv)
                lim = eps * mpmath.beta(-(n + eps), -tt)
                ours = sum(mpmath.mpf(c[()].rational_value().numerator) / c[()].rational_value().denominator
                           * tt ** p for p, c in table.residue(n).items())
                assert abs(lim - ours) < mpmath.mpf(10) ** -25 * max(1, abs(ours))


def test_only_poles_at_the_levels():
    table = beta_table()
    assert table.locations("s") == list(range(0, LEVELS + 1))
    assert table.locations("t") == list(range(0, LEVELS + 1))
    assert table.pole(Fraction(1, 2)) == {}
    with pytest.raises(InputError):
        table.pole(LEVELS + 1)


@pytest.mark.parametrize("n", range(1, LEVELS + 1))
def test_superstring_form_factor_residues(n):
    # Γ(-s)Γ(-t)/Γ(1-s-t) = B(-s,1-t)/(-t): residues of x^(-s-1)(1-x)^(-t) divided by -t;
    # expected (t+1)...(t+n-1)/n! from sympy.residue
    table = residues(beta_one_minus_t(), LEVELS).divided({1: -1}, strict=False)
    ours = rpoly_to_sympy(table.residue(n), t)
    assert sympy.expand(ours - sympy_residue("super", n, 0)) == 0


def test_superstring_massless_pole_not_polynomial():
    # at s = 0 the residue of Γ(-s)Γ(-t)/Γ(1-s-t) is -1/t: not divisible, reported, not silently wrong
    table = residues(beta_one_minus_t(), 2)
    with pytest.raises(InputError):
        table.divided({1: -1})
    assert table.divided({1: -1}, strict=False).meta["not_divisible"] == [0]


# ---------------------------------------------------------------------------
# log insertions: double poles
# ---------------------------------------------------------------------------

def _logx_closed(sv, tv):
    # ∫ x^(-s-1)(1-x)^(-t-1) log x dx = B(-s,-t)(ψ(-s) - ψ(-s-t))
    return mpmath.beta(-sv, -tv) * (mpmath.digamma(-sv) - mpmath.digamma(-sv - tv))


def _log1mx_closed(sv, tv):
    # ∫ x^(-s-1)(1-x)^(-t-1) log(1-x) dx = B(-s,-t)(ψ(-t) - ψ(-s-t))
    return mpmath.beta(-sv, -tv) * (mpmath.digamma(-tv) - mpmath.digamma(-sv - tv))


def _laurent_numeric(f, n, h):
    """(R2, R1) of f ≈ R2/ε^2 + R1/ε near ε = 0 from ε = ±h (errors O(h^2))."""
    fp, fm = h ** 2 * f(n + h), h ** 2 * f(n - h)
    return (fp + fm) / 2, (fp - fm) / (2 * h)


def _eval(rpoly, x):
    total = mpmath.mpf(0)
    for p, pp in rpoly.items():
        c = pp[()]
        total += c.numeric(40) * mpmath.mpf(x) ** p
    return total


@pytest.mark.parametrize("n", [0, 1, 2, 5, 8])
def test_log_x_double_poles_in_s(n):
    table = residues(beta_type(word=(0,)), 8)
    # exact: (1-x)^(-t-1) = Σ (t+1)_n/n! x^n and ∫ x^(n-s-1) log x = -1/(s-n)^2, so the
    # double pole is -(t+1)_n/n! and there is no simple pole
    assert table.max_order(n) == 2
    assert rpoly_to_sympy(table.coefficient(n, 2), t) == sympy.expand(-sympy.rf(t + 1, n) / sympy.factorial(n))
    assert table.coefficient(n, 1) == {}
    with mpmath.workdps(80):
        h = mpmath.mpf(10) ** -25
        for tv in ("-0.4", "1.3"):
            tt = mpmath.mpf(tv)
            r2, r1 = _laurent_numeric(lambda sv: _logx_closed(sv, tt), n, h)
            assert abs(r2 - _eval(table.coefficient(n, 2), tt)) < mpmath.mpf(10) ** -30
            assert abs(r1) < mpmath.mpf(10) ** -30


@pytest.mark.parametrize("n", [1, 2, 6])
def test_log_x_simple_poles_in_t(n):
    # near x = 1, log x = log(1 - y) is regular: simple poles in t with polynomial residues in s
    table = residues(beta_type(word=(0,)), 6)
    assert table.max_order(n, "t") == 1
    with mpmath.workdps(80):
        h = mpmath.mpf(10) ** -25
        for sv in ("-0.4", "0.55"):
            ss = mpmath.mpf(sv)
            r2, r1 = _laurent_numeric(lambda tv: _logx_closed(ss, tv), n, h)
            assert abs(r2) < mpmath.mpf(10) ** -30
            assert abs(r1 - _eval(table.coefficient(n, 1, "t"), ss)) < mpmath.mpf(10) ** -30


@pytest.mark.parametrize("n", [0, 1, 3, 6])
def test_log_one_minus_x_double_poles_in_t(n):
    # the word (1,) becomes (0,) after x -> 1 - x: double poles in t, simple ones in s
    table = residues(beta_type(word=(1,)), 6)
    with mpmath.workdps(80):
        h = mpmath.mpf(10) ** -25
        for sv in ("-0.4", "0.55"):
            ss = mpmath.mpf(sv)
            r2, r1 = _laurent_numeric(lambda tv: _log1mx_closed(ss, tv), n, h)
            assert abs(r2 - _eval(table.coefficient(n, 2, "t"), ss)) < mpmath.mpf(10) ** -30
            assert abs(r1 - _eval(table.coefficient(n, 1, "t"), ss)) < mpmath.mpf(10) ** -30
        if n >= 1:
            for tv in ("-0.4", "1.3"):
                tt = mpmath.mpf(tv)
                r2, r1 = _laurent_numeric(lambda sv: _log1mx_closed(sv, tt), n, h)
                assert abs(r2) < mpmath.mpf(10) ** -30
                assert abs(r1 - _eval(table.coefficient(n, 1, "s"), tt)) < mpmath.mpf(10) ** -30


# ---------------------------------------------------------------------------
# Li_2(x): ζ(2) in the residues at t = n
# ---------------------------------------------------------------------------

@pytest.mark.parametrize("n", [0, 1, 2, 4])
def test_dilog_poles_in_t_carry_zeta2(n):
    # Li_2(x) = -G(0,1;x).  Near x = 1 (y = 1-x), by A&S 27.7.3,
    # x^(-s-1) Li_2(x) = (1-y)^(-s-1) [ζ(2) - Li_2(y) - log(1-y) log y], and with
    # ∫_0 y^(n-t-1) log^k y/k! dy = -1/(t-n)^(k+1):
    #   simple pole  = -[y^n] (1-y)^(-s-1) (ζ(2) - Li_2(y)),
    #   double pole  = -[y^n] (-(1-y)^(-s-1) log(1-y)).
    y = sympy.symbols("y")
    li2 = sum(y ** k / sympy.Integer(k) ** 2 for k in range(1, n + 2))   # A&S 27.7.1, truncated
    front = (1 - y) ** (-s - 1)
    simple = -sympy.series(front * (sympy.zeta(2) - li2), y, 0, n + 1).removeO().coeff(y, n)
    double = -sympy.series(-front * sympy.log(1 - y), y, 0, n + 1).removeO().coeff(y, n)
    table = residues(beta_type(word=(0, 1), coefficient={(0, 0): MZV.rational(-1)}), 4)
    assert sympy.simplify(rpoly_to_sympy(table.coefficient(n, 1, "t"), s) - sympy.expand(simple)) == 0
    assert sympy.simplify(rpoly_to_sympy(table.coefficient(n, 2, "t"), s) - sympy.expand(double)) == 0
    if n == 0:
        assert table.coefficient(0, 1, "t") == {0: {(): -zeta(2)}}   # -Li_2(1)/t


@pytest.mark.parametrize("n", [1, 3])
def test_dilog_poles_in_s(n):
    # near x = 0: Li_2(x) (1-x)^(-t-1) = Σ_n x^n Σ_{k=1}^n (1/k^2) [x^(n-k)](1-x)^(-t-1): simple poles
    x = sympy.symbols("x")
    li2 = sum(x ** k / sympy.Integer(k) ** 2 for k in range(1, n + 1))
    expected = -sympy.series((1 - x) ** (-t - 1) * li2, x, 0, n + 1).removeO().coeff(x, n)
    table = residues(beta_type(word=(0, 1), coefficient={(0, 0): MZV.rational(-1)}), 3)
    assert table.max_order(n) == 1
    assert sympy.expand(rpoly_to_sympy(table.residue(n), t) - sympy.expand(expected)) == 0


# ---------------------------------------------------------------------------
# parameters, shifts, rational coefficients, errors
# ---------------------------------------------------------------------------

def test_parameters_stay_polynomial():
    # x^(-s-1)(1-x)^(-t-1) + a·x^(-s)(1-x)^(-t-1) = B(-s,-t) + a B(1-s,-t)
    i = Integrand(
        [Term({(0, 0, 0): MZV.one()}, LinearExponent(-1, Fraction(-1), 0), LinearExponent(-1, Fraction(-1), 1)),
         Term({(0, 0, 1): MZV.one()}, LinearExponent(0, Fraction(-1), 0), LinearExponent(-1, Fraction(-1), 1))],
        parameters=("a",),
    )
    table = residues(i, 5)
    for n in range(1, 6):
        rp = table.residue(n)
        const = {p: {(): pp[(0,)]} for p, pp in rp.items() if (0,) in pp}
        lin = {p: {(): pp[(1,)]} for p, pp in rp.items() if (1,) in pp}
        assert all(set(pp) <= {(0,), (1,)} for pp in rp.values())
        assert sympy.expand(rpoly_to_sympy(const, t) - sympy_residue("beta", n, 0)) == 0
        assert sympy.expand(rpoly_to_sympy(lin, t) - sympy_residue("beta_1_minus_s", n, 0)) == 0
    # s = 0: only B(-s,-t) has the massless pole
    assert table.residue(0) == {0: {(0,): MZV.rational(-1)}}


def test_tachyon_pole_at_minus_one():
    # x^(-s-2)(1-x)^(-t-2) = B(-1-s,-1-t): poles at s = -1, 0, 1, ...
    table = residues(beta_type(x_shift=-2, y_shift=-2), 3)
    assert table.locations("s") == [-1, 0, 1, 2, 3]
    for n in (-1, 0, 2):
        assert sympy.expand(rpoly_to_sympy(table.residue(n), t) - sympy_residue("tachyon", n, 0)) == 0


def test_rational_coefficient_gives_half_integer_levels():
    # x^(-2s-1)(1-x)^(-t-1) = B(-2s,-t): poles at s = n/2 with half the residue in 2s
    table = residues(beta_type(x_coeff=-2), 2)
    assert table.locations("s") == [Fraction(k, 2) for k in range(0, 5)]
    for k in (1, 3):
        assert sympy.expand(rpoly_to_sympy(table.residue(Fraction(k, 2)), t)
                            - sympy_residue("beta_2s", sympy.Rational(k, 2), 0)) == 0


def test_same_variable_at_both_end_points():
    # x^(-s-1)(1-x)^(-s-1) = B(-s,-s) = Γ(-s)^2/Γ(-2s): both end points give poles at s = n
    # (with s-dependent coefficients, Taylor-shifted); their sum must be the residue of the
    # closed form, here ε·B(-(n+ε), -(n+ε)) at ε = 1e-30 (mpmath, 60 digits); the double
    # poles of Γ(-s)^2 cancel against the pole of Γ(-2s)
    i = Integrand([Term({(0, 0): MZV.one()}, LinearExponent(-1, Fraction(-1), 0), LinearExponent(-1, Fraction(-1), 0))])
    table = residues(i, 6)
    assert table.locations("t") == []
    with mpmath.workdps(60):
        eps = mpmath.mpf(10) ** -30
        for n in range(0, 7):
            pole = table.pole(n)
            assert set(pole) == {1} and set(pole[1]) == {0}
            ours = pole[1][0][()].rational_value()
            ref = eps * mpmath.beta(-(n + eps), -(n + eps))
            assert abs(ref - mpmath.mpf(ours.numerator) / ours.denominator) < mpmath.mpf(10) ** -25 * abs(ref)
    assert table.residue(1) == {0: {(): MZV.rational(-4)}}   # sympy.residue, n = 1 (run once by hand)


def test_divergent_endpoint_refused():
    i = Integrand([Term({(0, 0): MZV.one()}, LinearExponent(-1), LinearExponent(-1, Fraction(-1), 1))])
    with pytest.raises(InputError, match="diverges"):
        residues(i, 2)
    with pytest.raises(InputError):
        residues(beta(), -1)


def test_pole_coefficient_depending_on_the_pole_variable():
    # s·x^(-s-1)(1-x)^(-t-1) = s B(-s,-t): residue at s = n is n times that of B; at s = 0 none
    i = beta_type(coefficient={(1, 0): MZV.one()})
    table = residues(i, 4)
    assert table.residue(0) == {}
    for n in range(1, 5):
        assert sympy.expand(rpoly_to_sympy(table.residue(n), t) - n * sympy_residue("beta", n, 0)) == 0


# ---------------------------------------------------------------------------
# tables
# ---------------------------------------------------------------------------

def test_table_exports(tmp_path):
    table = residues(beta(), 3)
    rows = table.to_rows()
    # level 3 in s: -(t+1)(t+2)(t+3)/6 = -t^3/6 - t^2 - 11t/6 - 1
    got = {(r["power"]): r["exact"] for r in rows if r["variable"] == "s" and r["location"] == "3"}
    assert got == {0: "-1", 1: "-11/6", 2: "-1", 3: "-1/6"}
    df = table.to_dataframe()
    assert len(df) == len(rows) and list(df.columns)[:3] == ["variable", "location", "order"]
    p = table.write(tmp_path / "res.csv")
    with open(p, newline="") as fh:
        back = list(csv.DictReader(fh))
    assert [r["exact"] for r in back] == [r["exact"] for r in rows]
    data = json.loads(table.write(tmp_path / "res.json").read_text())
    assert len(data["rows"]) == len(rows)
    tex = table.write(tmp_path / "res.tex").read_text()
    assert "\\begin{tabular}" in tex and tex.count("\\\\") == len(rows) + 1
    with pytest.raises(InputError):
        table.write(tmp_path / "res.xyz")
    assert table.residue_text(3) == "-1/6*t^3 - t^2 - 11/6*t - 1"


def test_flat_fast_path_agrees_with_the_mzv_path():
    # the flat rational path (used for ansätze with many parameters) against the MZV-object path,
    # which the tests above compare with closed forms: same pole parts, term by term
    from fractions import Fraction as Q

    from lowenergy.integrand.model import LinearExponent
    from lowenergy.integrand.transform import g_of_one_minus_x
    from lowenergy.spectrum.residues import _endpoint_poles, _endpoint_poles_flat
    from lowenergy.zeta.element import MZV, zeta

    coefficient = {(0, 0, 1, 0): MZV.one(), (1, 2, 0, 1): zeta(3) * Q(2, 3), (2, 0, 0, 0): zeta(2) + 1}
    near = LinearExponent(-1, Q(-1), 0)
    far = LinearExponent(-1, Q(-1), 1)
    for words in ({(0, 1, 1): MZV.one()}, g_of_one_minus_x((0, 1, 1)), g_of_one_minus_x((1, 0, 0, 1))):
        slow: dict = {}
        _endpoint_poles(coefficient, near, far, words, 5, 4, slow)
        flat: dict = {}
        pkeys: list = []
        _endpoint_poles_flat(coefficient, near, far, words, 5, 4, flat, lambda k: pkeys.append(k) or len(pkeys) - 1)
        fast: dict = {}
        for place, orders in flat.items():
            for j, entries in orders.items():
                grouped: dict = {}
                for ((power, pk), mono), q in entries.items():
                    if q:
                        grouped.setdefault((power, pkeys[pk]), {})[mono] = Q(int(q.p), int(q.q))
                polys = {key: MZV(t) for key, t in grouped.items() if MZV(t)}
                if polys:
                    fast.setdefault(place, {})[j] = polys
        # the flat path keys by (power of the other variable t, parameter exponents)
        slow = {p: {j: {(k[1], k[2:]): x for k, x in poly.items() if x} for j, poly in o.items()}
                for p, o in slow.items()}
        slow = {p: {j: poly for j, poly in o.items() if poly} for p, o in slow.items()}
        slow = {p: o for p, o in slow.items() if o}
        assert fast == slow and fast
