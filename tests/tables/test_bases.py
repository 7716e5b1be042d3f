"""Tests of lowenergy.tables.bases: naming, polynomials and the four bases.

Expected values are derived in the tests (tests/tables/series.py, sympy) or
by hand in the comments, never taken from the code under test.
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
import sympy as sp

from lowenergy.errors import InputError, LowEnergyError, ParseError
from lowenergy.expansion.result import Expansion
from lowenergy.tables import (
    UserBasis,
    coefficient_name,
    contact_part,
    decompose,
    decompose_sigma,
    decompose_symmetric,
    element_name,
    lies_in_basis,
    parse_element_name,
    parse_polynomial,
    pole_part,
    sigma_polynomial,
    to_dataframe,
)
from lowenergy.zeta.element import MZV, zeta
from tests.tables.series import (
    S,
    T,
    beta_expansion,
    beta_sympy,
    expansion_from_sympy,
    laurent_coefficients,
    mzv_of,
    virasoro_contact_sympy,
    zeta_poly_numeric,
)

U = -S - T
SIGMA2 = sp.expand(S**2 + T**2 + U**2)
SIGMA3 = sp.expand(S**3 + T**3 + U**3)


def sympy_poly2(expr):
    """{(i, j): Fraction} of a rational polynomial in s, t built with sympy."""
    out = {}
    for (i, j), c in sp.Poly(sp.expand(expr), S, T).terms():
        out[(i, j)] = Fraction(int(c.p), int(c.q))
    return out


def r(q):
    return MZV.rational(Fraction(q))


# --------------------------------------------------------------------------
# the independent series themselves
# --------------------------------------------------------------------------


def test_beta_series_matches_gamma_functions_numerically():
    # checks the derivation in series.py against mpmath's Gamma function
    order = 6
    expr = beta_sympy(order)
    s0, t0 = mpmath.mpf("0.011"), mpmath.mpf("0.017")
    with mpmath.workdps(30):
        exact = mpmath.gamma(-s0) * mpmath.gamma(-t0) / mpmath.gamma(-s0 - t0)
        series = mpmath.mpf(0)
        for (i, j), c in laurent_coefficients(expr).items():
            series += zeta_poly_numeric(c, 30) * s0**i * t0**j
        # first neglected terms are of size (s+t)^(order+1) ~ 1e-11
        assert abs(series - exact) < mpmath.mpf("1e-9")


def test_beta_low_orders_by_hand():
    # B(-s,-t) = -1/s - 1/t + ζ(2)(s+t) + ζ(3)(s+t)^2 + ... (from A&S 6.1.33)
    e = beta_expansion(2)
    assert e.coefficients[(-1, 0)] == {(): r(-1)}
    assert e.coefficients[(0, -1)] == {(): r(-1)}
    assert e.coefficients[(1, 0)] == {(): zeta(2)}
    assert e.coefficients[(1, 1)] == {(): 2 * zeta(3)}
    assert (0, 0) not in e.coefficients


def test_virasoro_contact_series_numerically():
    order = 5
    expr = virasoro_contact_sympy(order)
    s0, t0 = mpmath.mpf("0.013"), mpmath.mpf("-0.021")
    with mpmath.workdps(30):
        u0 = -s0 - t0
        full = mpmath.gamma(-s0) * mpmath.gamma(-t0) * mpmath.gamma(-u0) / (
            mpmath.gamma(1 + s0) * mpmath.gamma(1 + t0) * mpmath.gamma(1 + u0)
        )
        contact = full + 1 / (s0 * t0 * u0)
        series = sum(zeta_poly_numeric(c, 30) * s0**i * t0**j for (i, j), c in laurent_coefficients(expr).items())
        assert abs(series - contact) < mpmath.mpf("1e-10")


# --------------------------------------------------------------------------
# names and polynomials
# --------------------------------------------------------------------------


def test_names():
    assert coefficient_name(2, 1) == "c[2,1]"
    assert coefficient_name(-1, 0) == "c[-1,0]"
    assert element_name("sym", 3, 1) == "sym[3,1]"
    assert element_name("sigma", 0, 2) == "sigma[0,2]"
    assert parse_element_name("c[-1,0]") == ("c", -1, 0)
    assert parse_element_name(" sym[ 3 , 1 ] ") == ("sym", 3, 1)
    assert parse_element_name("sym[1,3]") is None  # needs i >= j
    assert parse_element_name("sigma[-1,0]") is None
    assert parse_element_name("c[1]") is None
    assert parse_element_name("d[1,2]") is None
    with pytest.raises(ValueError):
        element_name("x", 1, 1)


def test_parse_polynomial_forms():
    assert parse_polynomial("(s+t)^2") == sympy_poly2((S + T) ** 2)
    assert parse_polynomial("u") == sympy_poly2(U)
    assert parse_polynomial("sigma2") == sympy_poly2(SIGMA2)
    assert parse_polynomial("sigma3 / 3") == sympy_poly2(S * T * U)
    assert parse_polynomial("0.5*s - 3/4*t^2 + 1/2") == {
        (1, 0): Fraction(1, 2),
        (0, 2): Fraction(-3, 4),
        (0, 0): Fraction(1, 2),
    }
    assert parse_polynomial("x*y", ("x", "y")) == {(1, 1): Fraction(1)}
    assert parse_polynomial("s - s") == {}


def test_sigma_polynomials_against_sympy():
    for a in range(4):
        for b in range(3):
            assert sigma_polynomial(a, b) == sympy_poly2(SIGMA2**a * SIGMA3**b)


@pytest.mark.parametrize(
    "text, cls, fragment",
    [
        ("s*zeta(3)", InputError, "function 'zeta'"),
        ("s + a1", InputError, "unknown name 'a1'"),
        ("s/t", InputError, "division by a non-constant"),
        ("s/(t-t)", InputError, "division by zero"),
        ("s^-1", InputError, "non-negative integers"),
        ("s^(1/2)", InputError, "non-negative integers"),
        ("s^t", InputError, "non-negative integers"),
        ("2s", ParseError, "missing operator"),
        ("(s+t", ParseError, "unbalanced"),
        ("s^65", InputError, "degree larger"),
        ("(s+t)^40*(s-t)^30", InputError, "degree larger"),
        ("pi*s", InputError, "unknown name 'pi'"),
    ],
)
def test_parse_polynomial_errors(text, cls, fragment):
    with pytest.raises(cls) as info:
        parse_polynomial(text, source="basis.txt", line=7)
    err = info.value
    assert fragment in str(err)
    assert err.source == "basis.txt" and err.line == 7
    assert err.term is not None


# --------------------------------------------------------------------------
# parts of an expansion
# --------------------------------------------------------------------------


def test_contact_and_pole_parts_of_beta():
    e = beta_expansion(3)
    assert set(pole_part(e)) == {(-1, 0), (0, -1)}
    assert all(i >= 0 and j >= 0 for i, j in contact_part(e))
    assert set(contact_part(e)) | set(pole_part(e)) == set(e.coefficients)


def test_malformed_expansion_is_refused():
    bad = Expansion(("s", "t"), (), 1, {(2, 0): {(): zeta(3)}})
    with pytest.raises(InputError, match="beyond the order"):
        decompose(bad)
    bad = Expansion(("s", "t"), ("a",), 2, {(1, 0): {(): zeta(3)}})
    with pytest.raises(InputError, match="parameter exponent"):
        decompose(bad)
    with pytest.raises(TypeError):
        decompose({"not": "an expansion"})
    with pytest.raises(InputError, match="unknown basis"):
        decompose(beta_expansion(1), "triangular")


# --------------------------------------------------------------------------
# monomial and symmetric bases
# --------------------------------------------------------------------------


def test_monomial_basis_is_trivial():
    e = beta_expansion(4)
    d = decompose(e, "monomial")
    assert d.in_basis
    contact = contact_part(e)
    assert d.coefficients == {coefficient_name(i, j): pp for (i, j), pp in contact.items()}
    coefficients, remainder = d
    assert remainder == {}
    assert d.reconstruct() == contact


def test_beta_symmetric_basis():
    # B(-s,-t) is symmetric under s <-> t, so it lies in the sym basis with
    # sym[i,j] = c[i,j] (independent coefficients from the A&S series)
    order = 6
    expected = laurent_coefficients(beta_sympy(order))
    d = decompose(beta_expansion(order), "symmetric")
    assert d.in_basis and d.remainder == {}
    for (i, j), c in expected.items():
        if i < 0 or j < 0 or i < j:
            continue
        assert d.coefficients[element_name("sym", i, j)] == {(): mzv_of(c)}
    assert len(d.coefficients) == sum(1 for (i, j) in expected if i >= j >= 0)
    # the element polynomials
    assert d.element("sym[2,1]").polynomial == {(2, 1): 1, (1, 2): 1}
    assert d.element("sym[2,2]").polynomial == {(2, 2): 1}
    assert d.element("sym[2,1]").label == "s^2*t + s*t^2"
    assert lies_in_basis(beta_expansion(3), "symmetric")


def test_nonsymmetric_expansion_reports_the_antisymmetric_part():
    # c[1,0] = ζ(3), c[0,1] = ζ(2), c[2,0] = 1  (made up, not s<->t symmetric)
    e = Expansion(("s", "t"), (), 2, {(1, 0): {(): zeta(3)}, (0, 1): {(): zeta(2)}, (2, 0): {(): r(1)}})
    d = decompose(e, "symmetric")
    assert not d.in_basis
    half = Fraction(1, 2)
    assert d.coefficients == {"sym[1,0]": {(): half * (zeta(3) + zeta(2))}, "sym[2,0]": {(): r(half)}}
    assert d.remainder == {
        (1, 0): {(): half * (zeta(3) - zeta(2))},
        (0, 1): {(): half * (zeta(2) - zeta(3))},
        (2, 0): {(): r(half)},
        (0, 2): {(): r(-half)},
    }
    assert d.reconstruct() == contact_part(e)
    df = to_dataframe(e, basis="symmetric", digits=10)
    assert df.attrs["in_basis"] is False
    rem = df[df["kind"] == "remainder"]
    assert sorted(rem["name"]) == ["c[0,1]", "c[0,2]", "c[1,0]", "c[2,0]"]
    assert all("antisymmetric" in note for note in rem["note"])
    assert set(df[df["kind"] == "contact"]["name"]) == {"sym[1,0]", "sym[2,0]"}


# --------------------------------------------------------------------------
# sigma basis
# --------------------------------------------------------------------------


def _expansion_from_sigma(coeffs, order, parameters=()):
    """Σ coeff · σ2^a σ3^b expanded with sympy; coeffs {(a, b): ParamPoly}."""
    out = {}
    for (a, b), pp in coeffs.items():
        poly = sp.Poly(sp.expand(SIGMA2**a * SIGMA3**b), S, T)
        for (i, j), c in poly.terms():
            q = Fraction(int(c.p), int(c.q))
            slot = out.setdefault((i, j), {})
            for pe, x in pp.items():
                slot[pe] = slot.get(pe, MZV()) + x * q
    out = {k: {pe: x for pe, x in v.items() if x} for k, v in out.items()}
    return Expansion(("s", "t"), tuple(parameters), order, {k: v for k, v in out.items() if v})


def test_sigma_basis_of_constructed_polynomial():
    coeffs = {
        (0, 0): {(): zeta(3)},
        (1, 0): {(): 2 * zeta(5)},
        (0, 1): {(): zeta(3) ** 2 - r(Fraction(1, 7))},
        (2, 0): {(): zeta(2) * zeta(5)},
        (1, 1): {(): zeta(3, 5)},
        (0, 2): {(): r(3)},
        (3, 0): {(): zeta(7) * zeta(2) ** 2},  # mixed MZV coefficients are fine
    }
    order = 7
    e = _expansion_from_sigma(coeffs, order)
    d = decompose(e, "sigma")
    assert d.in_basis
    assert d.coefficients == {element_name("sigma", a, b): pp for (a, b), pp in coeffs.items()}
    assert d.element("sigma[1,1]").degree == 5
    assert d.element("sigma[1,1]").label == "sigma2*sigma3"


def test_sigma_basis_with_parameters():
    coeffs = {
        (0, 0): {(1, 0): zeta(3), (0, 0): r(2)},
        (1, 0): {(0, 2): zeta(5), (1, 1): -zeta(2)},
        (0, 1): {(2, 0): zeta(3) ** 2},
    }
    e = _expansion_from_sigma(coeffs, 3, ("a1", "a2"))
    d = decompose(e, "sigma")
    assert d.in_basis
    assert d.coefficients == {element_name("sigma", a, b): pp for (a, b), pp in coeffs.items()}


def test_virasoro_shapiro_sigma_coefficients():
    # by hand from the exponent 2ζ(3)p3/3 + 2ζ(5)p5/5 + ... with p3 = 3stu,
    # p5 = (5/6) σ2 σ3 and -(exp(X) - 1)/(stu):
    #   σ^0: -2ζ(3);  σ2: -ζ(5);  σ3: -(2/3) ζ(3)^2
    order = 7
    e = expansion_from_sympy(virasoro_contact_sympy(order), order)
    d = decompose(e, "sigma")
    assert d.in_basis
    assert d.coefficients["sigma[0,0]"] == {(): -2 * zeta(3)}
    assert d.coefficients["sigma[1,0]"] == {(): -zeta(5)}
    assert d.coefficients["sigma[0,1]"] == {(): Fraction(-2, 3) * zeta(3) ** 2}
    # and everything together reproduces the series
    rebuilt = {
        k: v for k, v in _expansion_from_sigma(
            {parse_element_name(n)[1:]: pp for n, pp in d.coefficients.items()}, order
        ).coefficients.items()
    }
    assert rebuilt == e.coefficients


def test_beta_sigma_remainder_is_the_nonsymmetric_part():
    # remainder = B - (average of B over the six permutations of s, t, u),
    # the average computed here with sympy substitutions
    order = 5
    expr = sum(
        c * S**i * T**j for (i, j), c in laurent_coefficients(beta_sympy(order)).items() if i >= 0 and j >= 0
    )
    perms = [(S, T), (T, S), (S, U), (U, S), (T, U), (U, T)]
    avg = sp.expand(sum(expr.subs({S: x, T: y}, simultaneous=True) for x, y in perms) / 6)
    rest = laurent_coefficients(sp.expand(expr - avg))
    d = decompose(beta_expansion(order), "sigma")
    assert not d.in_basis
    assert d.remainder == {k: {(): mzv_of(c)} for k, c in rest.items() if mzv_of(c)}
    # the symmetric part: degree 1 averages to zero (s + t + u = 0)
    assert "sigma[0,0]" not in d.coefficients
    # B's degree-2 part ζ(3)(s+t)^2 = ζ(3) u^2 averages to ζ(3) σ2 / 3
    assert d.coefficients["sigma[1,0]"] == {(): zeta(3) / 3}
    assert d.reconstruct() == contact_part(beta_expansion(order))
    assert decompose_sigma(contact_part(beta_expansion(order)), order).remainder == d.remainder


# --------------------------------------------------------------------------
# user bases
# --------------------------------------------------------------------------


def test_user_basis_decomposition_of_beta():
    # B(-s,-t) to order 2: ζ(2)(s+t) + ζ(3)(s+t)^2; s*t is not needed
    e = beta_expansion(2)
    basis = [("L", "s + t"), ("Q", "(s+t)^2"), ("P", "s*t")]
    d = decompose(e, basis)
    assert d.in_basis
    assert d.coefficients == {"L": {(): zeta(2)}, "Q": {(): zeta(3)}}
    assert [x.name for x in d.elements] == ["L", "Q", "P"]
    assert d.element("Q").label == "s^2 + 2*s*t + t^2"
    # the same written with u = -s-t
    d2 = decompose(e, [("L", "-u"), ("Q", "u^2"), ("P", "s*t")])
    assert d2.coefficients == d.coefficients


def test_user_basis_remainder_beyond_its_span():
    # at order 4 the degree-3 and degree-4 terms are orthogonal to the basis
    e = beta_expansion(4)
    d = decompose(e, [("L", "s + t"), ("Q", "(s+t)^2")])
    assert not d.in_basis
    assert d.coefficients == {"L": {(): zeta(2)}, "Q": {(): zeta(3)}}
    expected = {k: v for k, v in contact_part(e).items() if sum(k) >= 3}
    assert d.remainder == expected
    df = to_dataframe(e, basis=[("L", "s + t"), ("Q", "(s+t)^2")])
    assert (df["kind"] == "remainder").sum() == len(expected)
    assert all("user basis" in n for n in df[df["kind"] == "remainder"]["note"])


def test_user_basis_least_squares_remainder():
    # c[2,0] = ζ(3) on the single element A = s^2 + t^2:
    # best coefficient <A, b>/<A, A> = ζ(3)/2, remainder ζ(3)/2 (s^2 - t^2)
    e = Expansion(("s", "t"), (), 2, {(2, 0): {(): zeta(3)}})
    d = decompose(e, [("A", "s^2 + t^2")])
    half = Fraction(1, 2)
    assert d.coefficients == {"A": {(): half * zeta(3)}}
    assert d.remainder == {(2, 0): {(): half * zeta(3)}, (0, 2): {(): -half * zeta(3)}}


def test_user_basis_inhomogeneous_and_beyond_order():
    # E = 1 + s (inhomogeneous), F = s^2 t, G = s^9 (beyond order 3: skipped)
    e = Expansion(
        ("s", "t"),
        ("a",),
        3,
        {(0, 0): {(1,): zeta(3)}, (1, 0): {(1,): zeta(3)}, (2, 1): {(0,): zeta(2), (2,): r(5)}},
    )
    d = decompose(e, [("E", "1 + s"), ("F", "s^2*t"), ("G", "s^9")])
    assert d.in_basis
    assert d.beyond_order == ("G",)
    assert d.coefficients == {"E": {(1,): zeta(3)}, "F": {(0,): zeta(2), (2,): r(5)}}


def test_user_basis_in_other_variable_names():
    e = Expansion(("x", "y"), (), 2, {(1, 1): {(): zeta(3)}, (2, 0): {(): zeta(3)}})
    d = decompose(e, [("A", "x*y + x^2")])
    assert d.in_basis and d.coefficients == {"A": {(): zeta(3)}}
    ub = UserBasis.parse([("A", "s*t")])
    with pytest.raises(InputError, match="variables"):
        decompose(e, ub)


def test_dependent_user_basis_is_an_error():
    e = beta_expansion(3)
    with pytest.raises(InputError) as info:
        decompose(e, [("A", "s + t"), ("B", "s"), ("C", "t")])
    assert "linearly dependent" in str(info.value)
    assert "C = A - B" in str(info.value)
    assert info.value.term == "C"
    # dependent only up to the order of the expansion
    with pytest.raises(InputError, match="B = A"):
        decompose(e, [("A", "s^2"), ("B", "s^2 + s^5")])
    with pytest.raises(InputError, match="linearly dependent"):
        decompose(e, [("A", "sigma2"), ("B", "s^2"), ("C", "t^2"), ("D", "s*t")])


@pytest.mark.parametrize(
    "pairs, fragment, line",
    [
        ([("A", "s"), ("A", "t")], "used twice", 2),
        ([("A", "s"), ("", "t")], "invalid basis element name", 2),
        ([("A\nB", "s")], "invalid basis element name", 1),
        ([("#A", "s")], "may not start with '#'", 1),
        ([("Z", "s - s")], "is zero", 1),
        ([("A", "s"), ("B", "s*zeta(2)")], "not allowed", 2),
        ([("A", "s"), ("B", "s t")], "missing operator", 2),
        ([("A", "s", "t")], "pair", 1),
        ([], "empty", None),
    ],
)
def test_bad_user_basis(pairs, fragment, line):
    with pytest.raises(LowEnergyError) as info:
        UserBasis.parse(pairs, source="mybasis.txt")
    assert fragment in str(info.value)
    assert info.value.source == "mybasis.txt"
    assert info.value.line == line


def test_user_basis_lines_argument():
    with pytest.raises(LowEnergyError) as info:
        UserBasis.parse([("A", "s"), ("B", "q")], source="f.txt", lines=[10, 12])
    assert info.value.line == 12 and info.value.term == "q"


@pytest.mark.parametrize("basis", ["monomial", "symmetric", "sigma", [("A", "s+t"), ("B", "s^2*t - 1/3*t^3")]])
def test_reconstruction_identity_all_bases(basis):
    # contact = Σ coefficient · element + remainder, for a parameter-dependent expansion
    e = Expansion(
        ("s", "t"),
        ("a1", "a2"),
        3,
        {
            (-1, 0): {(0, 0): r(-1)},
            (1, 0): {(1, 0): zeta(3), (0, 0): zeta(2)},
            (0, 1): {(0, 1): zeta(5)},
            (2, 1): {(0, 0): zeta(3) ** 2, (1, 1): r(Fraction(2, 3))},
            (0, 3): {(0, 0): zeta(2) * zeta(3)},
        },
    )
    d = decompose(e, basis)
    assert d.reconstruct() == contact_part(e)
    if basis == "monomial":
        assert d.in_basis
    else:
        assert not d.in_basis


def test_symmetric_helper_refuses_poles():
    with pytest.raises(InputError, match="pole"):
        decompose_symmetric({(-1, 0): {(): zeta(2)}}, 2)
