"""The shipped constraint sets in ``constraints/``: independent numbers and the engine.

Independent numbers: the Taylor coefficients of the Gamma-function closed
forms are computed here with mpmath's Gamma function alone, as discrete
Cauchy integrals on the torus ``|s| = |t| = r``:

    f_ij = (1/n^2) Σ_{k,l} f(r ω^k, r ω^l) ω^(-ik-jl) / r^(i+j),  ω = e^(2πi/n),

(the trapezoidal rule for Cauchy's formula; its error is the aliasing
``f_(i+n),j r^n + ...``, i.e. relative ``(r/ρ)^n`` for a radius of
convergence ρ).  The MZVs on the right-hand sides are evaluated with
``mpmath.zeta`` (all of them are polynomials in single zetas here), so no
numerical code of the package takes part.

Closed forms (A&S = Abramowitz & Stegun):

* open superstring: ``∫ x^(-s-1)(1-x)^(-t) dx = Γ(-s)Γ(1-t)/Γ(1-s-t)``
  (A&S 6.2.1, 6.2.2) ``= -Γ(1-s)Γ(1-t)/(s Γ(1-s-t))`` (A&S 6.1.15);
* closed string: ``V = Γ(1-s)Γ(1-t)Γ(1-u)/(Γ(1+s)Γ(1+t)Γ(1+u))``, u = -s-t,
  as stated in the file;
* B(-s,-t) is symmetric (A&S 6.2.2), the open-superstring factor is not.
"""

from __future__ import annotations

from pathlib import Path

import mpmath
import pytest

from lowenergy.constraints import check, read_constraints
from lowenergy.expansion.engine import expand
from lowenergy.expansion.result import Expansion
from lowenergy.integrand.model import Integrand
from lowenergy.zeta.element import MZV
from lowenergy.zeta.expression import evaluate_tree

from .support import koba_nielsen

ROOT = Path(__file__).resolve().parents[2] / "constraints"
OPEN = ROOT / "open_superstring_order4.toml"
CLOSED = ROOT / "closed_string_virasoro_shapiro.toml"
CROSSING = ROOT / "crossing_st_order6.toml"
TEMPLATE = ROOT / "localization_template.toml"

DPS = 30


def cauchy_coefficients(values, n: int, r, order: int):
    """Taylor coefficients f_ij (i + j <= order) from samples values[k][l] = f(r ω^k, r ω^l)."""
    w = [mpmath.expjpi(2 * mpmath.mpf(k) / n) for k in range(n)]
    inner = [[mpmath.fsum(values[k][l] * w[(-j * l) % n] for l in range(n)) / n for j in range(order + 1)] for k in range(n)]
    out = {}
    for i in range(order + 1):
        for j in range(order + 1 - i):
            a = mpmath.fsum(inner[k][j] * w[(-i * k) % n] for k in range(n)) / n / r ** (i + j)
            out[(i, j)] = a.real  # the functions are real on the real axes
    return out


def mzv_numeric(x: MZV):
    """An MZV polynomial in single zetas, evaluated with mpmath.zeta."""
    total = mpmath.mpf(0)
    for mono, q in x.as_dict().items():
        term = mpmath.mpf(q.numerator) / q.denominator
        for g in mono:
            assert len(g) == 1, "only single zetas expected in the shipped sets"
            term *= mpmath.zeta(g[0])
        total += term
    return total


def rhs_value(constraint) -> MZV:
    return evaluate_tree(constraint.rhs_tree)


@pytest.fixture(scope="module")
def open_taylor():
    """Taylor coefficients of G(s,t) = -Γ(1-s)Γ(1-t)/Γ(1-s-t) = s·I(s,t) to order 5.

    G is analytic for |s|, |t| < 1 (poles at s = 1, t = 1; 1/Γ is entire):
    r = 1/4 and n = 40 leave an aliasing error of about 4^-40 ~ 1e-24.
    """
    n, order = 40, 5
    with mpmath.workdps(DPS):
        r = mpmath.mpf(1) / 4
        pts = [r * mpmath.expjpi(2 * mpmath.mpf(k) / n) for k in range(n)]
        g1 = [mpmath.gamma(1 - p) for p in pts]
        values = [[-g1[k] * g1[l] * mpmath.rgamma(1 - pts[k] - pts[l]) for l in range(n)] for k in range(n)]
        return cauchy_coefficients(values, n, r, order)


@pytest.fixture(scope="module")
def closed_taylor():
    """Taylor coefficients of V(s,t) to order 7.

    V has poles where 1 + s + t = 0 (Γ(1+s+t) = Γ(1-u)); on |s| = |t| = r the
    aliasing error is about (2r)^n: r = 1/5, n = 48 gives 0.4^48 ~ 1e-19.
    """
    n, order = 48, 7
    with mpmath.workdps(DPS):
        r = mpmath.mpf(1) / 5
        pts = [r * mpmath.expjpi(2 * mpmath.mpf(k) / n) for k in range(n)]
        single = [mpmath.gamma(1 - p) * mpmath.rgamma(1 + p) for p in pts]
        values = [[None] * n for _ in range(n)]
        for k in range(n):
            for l in range(k, n):
                w = pts[k] + pts[l]
                v = single[k] * single[l] * mpmath.gamma(1 + w) * mpmath.rgamma(1 - w)
                values[k][l] = values[l][k] = v  # V(s,t) = V(t,s)
        return cauchy_coefficients(values, n, r, order)


# --------------------------------------------------------------------------
# all files
# --------------------------------------------------------------------------


def test_every_shipped_set_reads_and_names_its_source():
    files = sorted(ROOT.glob("*.toml"))
    assert {f.name for f in files} >= {OPEN.name, CLOSED.name, CROSSING.name, TEMPLATE.name}
    for f in files:
        cs = read_constraints(f)
        assert cs.provenance.strip() and cs.title.strip(), f
        assert cs.template == (f == TEMPLATE), f
        assert len(set(cs.names)) == len(cs)


def test_template_is_clearly_marked():
    cs = read_constraints(TEMPLATE)
    assert cs.template and "TEMPLATE" in cs.title and "invented" in cs.provenance
    assert "INVENTED" in TEMPLATE.read_text(encoding="utf-8")
    assert {c.kind for c in cs} == {"=", "<=", ">="}
    assert any(c.exact for c in cs) and any(not c.exact for c in cs)
    assert cs.required_order() == 5


# --------------------------------------------------------------------------
# (a) open superstring
# --------------------------------------------------------------------------


def test_open_superstring_values_against_mpmath(open_taylor):
    cs = read_constraints(OPEN)
    assert len(cs) == 21 and cs.required_order() == 4
    with mpmath.workdps(DPS):
        for c in cs:
            (ref,) = c.refs
            assert ref.family == "c" and c.name == ref.name
            expected = open_taylor[(ref.a + 1, ref.b)]  # I = G/s
            got = mzv_numeric(rhs_value(c))
            assert abs(got - expected) < mpmath.mpf(10) ** -18, (c.name, got, expected)


def test_open_superstring_against_the_engine():
    e = expand(Integrand([koba_nielsen(-1, 0)]), 4)
    report = check(e, read_constraints(OPEN))
    assert report.ok, report.to_text()


# --------------------------------------------------------------------------
# (b) closed string
# --------------------------------------------------------------------------


def test_closed_string_values_against_mpmath(closed_taylor):
    cs = read_constraints(CLOSED)
    c_constraints = [c for c in cs if c.refs[0].family == "c"]
    assert len(c_constraints) == 36  # every c[i,j], i + j <= 7
    with mpmath.workdps(DPS):
        for c in c_constraints:
            (ref,) = c.refs
            expected = closed_taylor[(ref.a, ref.b)]
            got = mzv_numeric(rhs_value(c))
            assert abs(got - expected) < mpmath.mpf(10) ** -15 * max(1, abs(expected)), (c.name, got, expected)


def test_closed_string_sigma_values_agree_with_its_c_values():
    # the sigma[a,b] constraints are checked on the expansion whose c[i,j] are
    # the (numerically verified) c values of the same file
    cs = read_constraints(CLOSED)
    coefficients = {}
    for c in cs:
        if c.refs[0].family == "c":
            value = rhs_value(c)
            if value:
                coefficients[(c.refs[0].a, c.refs[0].b)] = {(): value}
    candidate = Expansion(("s", "t"), (), 7, coefficients)
    report = check(candidate, cs)
    assert report.ok, report.to_text()
    sigma = [r for r in report if r.name.startswith("sigma")]
    assert len(sigma) == 8 and all(r.warnings == () for r in sigma)  # V is crossing symmetric


# --------------------------------------------------------------------------
# (c) crossing
# --------------------------------------------------------------------------


def test_crossing_holds_for_symmetric_integrands():
    cs = read_constraints(CROSSING)
    assert len(cs) == 20 and cs.required_order() == 6
    beta = expand(Integrand([koba_nielsen(-1, -1)]), 6)
    assert check(beta, cs).ok
    # log(x) log(1-x) = G(0;x)G(1;x) = G(0,1;x) + G(1,0;x) is symmetric under x <-> 1-x
    logs = Integrand([koba_nielsen(-1, -1, word=(0, 1)), koba_nielsen(-1, -1, word=(1, 0))])
    assert check(expand(logs, 6), cs).ok


def test_crossing_fails_exactly_where_the_open_superstring_is_asymmetric():
    cs = read_constraints(CROSSING)
    e = expand(Integrand([koba_nielsen(-1, 0)]), 6)
    report = check(e, cs)
    expected_fail = {
        c.name for c in cs
        if e.coefficients.get((c.refs[0].a, c.refs[0].b), {}) != e.coefficients.get((c.refs[1].a, c.refs[1].b), {})
    }
    assert set(report.failed) == expected_fail
    assert "cross[0,-1]" in expected_fail and "cross[1,0]" in expected_fail  # poles -1/s vs none; ζ(2)
    assert report["cross[1,0]"].residual == {(): -MZV({((2,),): 1})}
