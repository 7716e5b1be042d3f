"""Tests of lowenergy.integrand.reader: integrand files -> exact terms.

Expected terms are written by hand.  The conversions (log, Li, G of x and
1-x, shuffle products, π^2 = 6ζ(2)) are also checked numerically: the terms
are evaluated with mpmath (G(w; x) by the independent series evaluator of
test_transform.py, MZVs by MZV.numeric) and compared with the integrand
computed directly from mpmath.log / mpmath.polylog / quadrature.
"""

from __future__ import annotations

import tomllib
from fractions import Fraction

import mpmath
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from lowenergy.errors import InputError, LowEnergyError, ParseError, RegularizationError, TableError
from lowenergy.integrand.model import Integrand, LinearExponent, Term
from lowenergy.integrand.reader import (
    ALLOWED_KEYS,
    MAX_TERMS,
    integrand_from_text,
    read_integrand,
    terms_from_expression,
)
from lowenergy.zeta.element import MZV
from lowenergy.zeta.expression import evaluate

from .test_transform import DPS, close, g_numeric, nielsen

ONE = MZV.one()
FUZZ = settings(
    max_examples=2000,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture],
)


def E(shift=0, coeff=0, var=None) -> LinearExponent:
    return LinearExponent(shift, Fraction(coeff), var if coeff else None)


KN_X = E(-1, -1, 0)  # x^(-s-1)
KN_Y = E(-1, -1, 1)  # (1-x)^(-t-1)


def as_map(terms):
    """{(x_exp, y_exp, word): coefficient} of a list of terms (order-free)."""
    out = {}
    for t in terms:
        key = (t.x_exp, t.y_exp, t.word)
        assert key not in out, "terms must be merged"
        assert t.coefficient and all(c for c in t.coefficient.values()), "zero coefficients must be dropped"
        out[key] = t.coefficient
    return out


def R(q) -> MZV:
    return MZV.rational(Fraction(q))


def read(text, tmp_path=None, name="integrand.toml"):
    if tmp_path is None:
        return integrand_from_text(text, source=name)
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return read_integrand(path)


# --------------------------------------------------------------------------
# numerical evaluation of terms
# --------------------------------------------------------------------------


def evaluate_terms(terms, x, values):
    """Σ P(values) x^A (1-x)^B G(w; x) with mpmath (values = (s, t, params...))."""
    with mpmath.workdps(DPS):
        x = mpmath.mpf(x)
        vals = [mpmath.mpf(v) for v in values]
        total = mpmath.mpf(0)
        for term in terms:
            poly = mpmath.mpf(0)
            for exps, c in term.coefficient.items():
                mono = c.numeric(DPS)
                for v, e in zip(vals, exps):
                    mono *= v**e
                poly += mono

            def power(base, e: LinearExponent):
                a = e.shift + (e.coeff.numerator * vals[e.var] / e.coeff.denominator if e.var is not None else 0)
                return base**a

            total += poly * power(x, term.x_exp) * power(1 - x, term.y_exp) * g_numeric(term.word, x)
        return total


# --------------------------------------------------------------------------
# valid files
# --------------------------------------------------------------------------


def test_minimal_file(tmp_path):
    itg = read('integrand = "x^(-s-1)*(1-x)^(-t-1)"\n', tmp_path)
    assert isinstance(itg, Integrand)
    assert itg.variables == ("s", "t") and itg.parameters == () and itg.integration_variable == "x"
    assert itg.title == itg.notes == itg.provenance == ""
    assert itg.source.endswith("integrand.toml")
    assert itg.expression == "x^(-s-1)*(1-x)^(-t-1)"
    assert len(itg.terms) == 1
    term = itg.terms[0]
    assert isinstance(term, Term)
    assert term == Term({(0, 0): ONE}, KN_X, KN_Y, (), source_line=1, text=term.text)
    assert term.text == "x^(-s - 1)*(1 - x)^(-t - 1)"


def test_all_keys(tmp_path):
    text = """\
title = "Veneziano-type integral with a parameter"
notes = "checks all keys"
provenance = "hand-written test"
variables = ["s", "t"]
integration_variable = "y"
parameters = ["a", "b"]
integrand = "y^(-s-1)*(1-y)^(-t-1)*(a*s - b^2 + 1/2)"
"""
    itg = read(text, tmp_path)
    assert itg.title == "Veneziano-type integral with a parameter"
    assert itg.notes == "checks all keys" and itg.provenance == "hand-written test"
    assert itg.integration_variable == "y" and itg.parameters == ("a", "b") and itg.nvars == 4
    assert as_map(itg.terms) == {
        (KN_X, KN_Y, ()): {(1, 0, 1, 0): ONE, (0, 0, 0, 2): R(-1), (0, 0, 0, 0): R("1/2")}
    }
    assert itg.terms[0].source_line == 7


def test_capital_variable_names():
    itg = read('variables = ["S", "T"]\nintegrand = "x^(-S-1)*(1-x)^(-T-1)*(S + T)^2"')
    assert itg.variables == ("S", "T")
    assert as_map(itg.terms) == {(KN_X, KN_Y, ()): {(2, 0): ONE, (1, 1): R(2), (0, 2): ONE}}


def test_parameters_polynomially():
    itg = read('parameters = ["alpha"]\nintegrand = "x^(-s)*(1-x)^(-t)*(alpha*s - 2*alpha^3*t) / 4"')
    assert as_map(itg.terms) == {
        (E(0, -1, 0), E(0, -1, 1), ()): {(1, 0, 1): R("1/4"), (0, 1, 3): R("-1/2")}
    }


def test_multi_line_string_and_source_lines():
    text = '''title = "two lines"
integrand = """
    x^(-s-1)*(1-x)^(-t-1)
  + s*x^(-s)*(1-x)^(-t-1)*log(x)
"""
'''
    itg = read(text)
    assert as_map(itg.terms) == {
        (KN_X, KN_Y, ()): {(0, 0): ONE},
        (E(0, -1, 0), KN_Y, (0,)): {(1, 0): ONE},
    }
    lines = {t.word: t.source_line for t in itg.terms}
    assert lines == {(): 3, (0,): 4}


def test_multi_line_literal_and_escapes():
    text = "integrand = '''\nx^(-s-1)*\n(1 - x)^(-t-1)'''\n"
    assert as_map(read(text).terms) == {(KN_X, KN_Y, ()): {(0, 0): ONE}}
    text = 'integrand = "x^(-s-1)\\t* (1-x)^(-t-1)"'  # a TOML escape \t is a blank
    assert as_map(read(text).terms) == {(KN_X, KN_Y, ()): {(0, 0): ONE}}


EXPRESSIONS = [
    # (expression, {(x_exp, y_exp, word): {exponents: MZV}})
    ("x^(-s-1+2)", {(E(1, -1, 0), E(), ()): {(0, 0): ONE}}),
    ("x^(2*s-1)*(1-x)^(-t)", {(E(-1, 2, 0), E(0, -1, 1), ()): {(0, 0): ONE}}),
    ("x^2*(1-x)^(-1)", {(E(2), E(-1), ()): {(0, 0): ONE}}),
    ("x^(-1)/(1 - x)", {(E(-1), E(-1), ()): {(0, 0): ONE}}),
    ("x*(1-x)", {(E(1), E(1), ()): {(0, 0): ONE}}),
    ("x^(s/2)*x^(s/2)", {(E(0, 1, 0), E(), ()): {(0, 0): ONE}}),
    ("(x*(1-x))^(-s)", {(E(0, -1, 0), E(0, -1, 0), ()): {(0, 0): ONE}}),
    ("0.5*s*t", {(E(), E(), ()): {(1, 1): R("1/2")}}),
    ("log(x)", {(E(), E(), (0,)): {(0, 0): ONE}}),
    ("log(1-x)", {(E(), E(), (1,)): {(0, 0): ONE}}),
    ("log(x)^2", {(E(), E(), (0, 0)): {(0, 0): R(2)}}),
    ("Li(1, x)", {(E(), E(), (1,)): {(0, 0): R(-1)}}),
    ("Li(3, x)", {(E(), E(), (0, 0, 1)): {(0, 0): R(-1)}}),
    # Li2(1-x) = ζ(2) - G(1,0; x)  (Euler's reflection, in words)
    ("Li(2, 1-x)", {(E(), E(), ()): {(0, 0): "zeta(2)"}, (E(), E(), (1, 0)): {(0, 0): R(-1)}}),
    ("G(0,1; x)*G(1; x)", {(E(), E(), (0, 1, 1)): {(0, 0): R(2)}, (E(), E(), (1, 0, 1)): {(0, 0): ONE}}),
    ("G(; x)", {(E(), E(), ()): {(0, 0): ONE}}),
    ("G(1,1; 1-x)", {(E(), E(), (0, 0)): {(0, 0): ONE}}),
    ("G(0,1; 1)", {(E(), E(), ()): {(0, 0): "-zeta(2)"}}),
    ("pi^2*s - 6*zeta(2)*s", {}),
    ("pi^4/90", {(E(), E(), ()): {(0, 0): "zeta(4)"}}),
    ("zeta(2,1)*t^2", {(E(), E(), ()): {(0, 2): "zeta(3)"}}),
    ("x^(-s-1) + 2*x^(-s-1) - s*x", {(E(-1, -1, 0), E(), ()): {(0, 0): R(3)}, (E(1), E(), ()): {(1, 0): R(-1)}}),
    ("(s + log(x))*(t - log(1-x))", {
        (E(), E(), ()): {(1, 1): ONE},
        (E(), E(), (1,)): {(1, 0): R(-1)},
        (E(), E(), (0,)): {(0, 1): ONE},
        (E(), E(), (0, 1)): {(0, 0): R(-1)},
        (E(), E(), (1, 0)): {(0, 0): R(-1)},
    }),
    ("1 + 2*x + x^2", {(E(), E(), ()): {(0, 0): ONE}, (E(1), E(), ()): {(0, 0): R(2)}, (E(2), E(), ()): {(0, 0): ONE}}),
    ("-x + 1", {(E(), E(1), ()): {(0, 0): ONE}}),
    ("x^(-s)^1", {(E(0, -1, 0), E(), ()): {(0, 0): ONE}}),
    ("s - s", {}),
]


@pytest.mark.parametrize("expression,expected", EXPRESSIONS, ids=[e for e, _ in EXPRESSIONS])
def test_expressions_by_hand(expression, expected):
    # MZV coefficients are written as text and evaluated when the tables exist
    expected = {
        key: {exps: evaluate(c) if isinstance(c, str) else c for exps, c in poly.items()}
        for key, poly in expected.items()
    }
    assert as_map(terms_from_expression(expression)) == expected
    assert as_map(read(f'integrand = "{expression}"').terms) == expected


def test_term_text_and_lines():
    terms = terms_from_expression("s*x^(-s-1) + t*(1-x)^(-t-1)", source="f", line=5)
    assert [(t.text, t.source_line) for t in terms] == [
        ("s*x^(-s - 1)", 5),
        ("t*(1 - x)^(-t - 1)", 5),
    ]
    long = "+".join(["s*x"] * 50)
    (term,) = terms_from_expression(long)
    assert term.coefficient == {(1, 0): R(50)}
    assert len(term.text) <= 60


def test_one_minus_x_at_the_start_of_a_longer_sum_is_the_binomial():
    # 1 - x + s is (1-x) + s, as when + and - were binary nodes (now one n-ary sum)
    def shape(text):
        return [(t.coefficient, t.x_exp, t.y_exp, t.word) for t in terms_from_expression(text)]

    assert shape("1 - x + s") == shape("(1 - x) + s") == [
        ({(0, 0): R(1)}, LinearExponent(0), LinearExponent(1), ()),
        ({(1, 0): R(1)}, LinearExponent(0), LinearExponent(0), ()),
    ]
    assert shape("-x + 1 - s") == shape("(1 - x) - s")
    with pytest.raises(InputError, match="x is added to other terms") as info:
        terms_from_expression("s + x + t")
    assert (info.value.column, info.value.term) == (1, "s + x")  # the sum up to the offending term


def test_errors_in_long_products_name_the_product_up_to_the_failing_factor():
    with pytest.raises(InputError, match="would contain both s and t") as info:
        terms_from_expression("s*x^(-s-1)*x^(-t)*t*s")
    assert (info.value.column, info.value.term) == (1, "s*x^(-s - 1)*x^(-t)")


def test_long_flat_sum_is_not_recursive():
    text = "x^(-s-1)*(" + "+".join(f"s^{k % 7}" for k in range(12000)) + ")"
    (term,) = terms_from_expression(text)
    assert sum(term.coefficient.values(), MZV()) == R(12000)
    text = "+".join(["log(x)*s"] * 4000)
    (term,) = terms_from_expression(text)
    assert term.coefficient == {(1, 0): R(4000)}


# -- numerical checks of the conversions -------------------------------------


NUMERIC = [
    # (integrand, direct mpmath function of (x, s, t))
    ("log(x)*log(1-x)^2", lambda x, s, t: mpmath.log(x) * mpmath.log(1 - x) ** 2),
    ("Li(3, x) - 2*Li(2, x)*log(x)", lambda x, s, t: mpmath.polylog(3, x) - 2 * mpmath.polylog(2, x) * mpmath.log(x)),
    ("Li(2, 1-x)", lambda x, s, t: mpmath.polylog(2, 1 - x)),
    ("Li(4, 1-x)*log(x)", lambda x, s, t: mpmath.polylog(4, 1 - x) * mpmath.log(x)),
    ("log(1-x)^3", lambda x, s, t: mpmath.log(1 - x) ** 3),
    # G(0,1,1; 1-x) = S_{1,2}(1-x) (Kölbig 1986, with the relation of test_transform.py)
    ("G(0,1,1; 1-x)", lambda x, s, t: nielsen(1, 2, 1 - x)),
    ("G(0,0,1,1; 1-x)*s", lambda x, s, t: s * nielsen(2, 2, 1 - x)),
    ("G(1,0; 1-x)*G(0,1; x)", lambda x, s, t: (
        mpmath.log(1 - x) * mpmath.log(x) + mpmath.polylog(2, 1 - x)) * -mpmath.polylog(2, x)),
    ("x^(-s-1)*(1-x)^(-t-1)*(s*log(x) + t*Li(2, 1-x) + pi^2)", lambda x, s, t: (
        x ** (-s - 1) * (1 - x) ** (-t - 1) * (s * mpmath.log(x) + t * mpmath.polylog(2, 1 - x) + mpmath.pi**2))),
    ("(1-x)^(2*t+3)*zeta(3)*G(0,1; 1)", lambda x, s, t: (1 - x) ** (2 * t + 3) * mpmath.zeta(3) * -mpmath.zeta(2)),
]


@pytest.mark.parametrize("x", ["0.3", "0.6"])
@pytest.mark.parametrize("expression,direct", NUMERIC, ids=[e for e, _ in NUMERIC])
def test_conversions_numerically(expression, direct, x):
    values = ("0.37", "-0.21")
    terms = terms_from_expression(expression)
    with mpmath.workdps(DPS):
        expected = direct(mpmath.mpf(x), *(mpmath.mpf(v) for v in values))
        assert close(evaluate_terms(terms, x, values), expected, mpmath.mpf(10) ** -18)


# --------------------------------------------------------------------------
# malformed and unsupported files
# --------------------------------------------------------------------------


def expr_file(expression: str, before: str = "") -> str:
    return f'{before}integrand = "{expression}"\n'


KN = "x^(-s-1)*(1-x)^(-t-1)"
BAD = [
    # (id, file text, exception, message substring, line, column or None)
    ("missing integrand", 'title = "no integrand"\n', InputError, "missing required key 'integrand'", None, None),
    ("unknown key", f'intgrand = "{KN}"\n', InputError, "unknown key 'intgrand'", 1, None),
    ("unknown table", f'integrand = "{KN}"\n[extra]\na = 1\n', InputError, "unknown key 'extra'", 2, None),
    ("variables not a list", f'integrand = "{KN}"\nvariables = "s,t"\n', InputError, "must be a list", 2, None),
    ("three variables", f'variables = ["s", "t", "u"]\nintegrand = "{KN}"\n', InputError, "exactly two", 1, None),
    ("variable not a string", f'variables = ["s", 2]\nintegrand = "{KN}"\n', InputError, "names (strings)", 1, None),
    ("bad identifier", f'parameters = ["2a"]\nintegrand = "{KN}"\n', InputError, "not a valid name", 1, None),
    ("duplicate parameter", f'integrand = "{KN}"\n\nparameters = ["a", "a"]\n', InputError, "'a' appears twice", 3, None),
    ("reserved parameter", f'parameters = ["zeta"]\nintegrand = "{KN}"\n', InputError, "reserved name", 1, None),
    ("reserved variable", f'variables = ["pi", "t"]\nintegrand = "{KN}"\n', InputError, "reserved name", 1, None),
    ("name collision", f'parameters = ["s"]\nintegrand = "{KN}"\n', InputError, "used both in 'variables' and in 'parameters'", 1, None),
    ("x collides", f'integration_variable = "t"\nintegrand = "{KN}"\n', InputError, "used both", 1, None),
    ("title not a string", f'integrand = "{KN}"\ntitle = 3\n', InputError, "'title' must be a string", 2, None),
    ("integrand not a string", "integrand = 3\n", InputError, "'integrand' must be a string", 1, None),
    ("integrand table", "[integrand]\nx = 1\n", InputError, "'integrand' must be a string", 1, None),
    ("sin", expr_file(f"{KN}*sin(x)", "# comment\n"), InputError, "unknown function 'sin'", 2, 36),
    ("square root", expr_file("x^(1/2)"), InputError, "non-integer power of x", 1, 14),
    ("x^(s+t)", expr_file("x^(s+t)"), InputError, "both s and t", 1, 14),
    ("(1+x)^2", expr_file("(1+x)^2"), InputError, "only binomial in x is (1-x)", 1, 15),
    ("x+1", expr_file("x+1"), InputError, "only binomial", 1, 14),
    ("G letter 2", expr_file("G(0,2;x)"), InputError, "letters of G must be 0 or 1", 1, 18),
    ("Li(0,x)", expr_file("Li(0,x)"), InputError, "positive integer", 1, 17),
    ("Li(2.5,x)", expr_file("Li(2.5,x)"), InputError, "positive integer", 1, 17),
    ("1/s", expr_file("x^(-s-1)*(1-x)^(-t-1)/s"), InputError, "not a polynomial in s", 1, 36),
    ("s^-1", expr_file("s^(-1)"), InputError, "not a polynomial in s", 1, 14),
    ("log(2*x)", expr_file("log(2*x)"), InputError, "only log(x) and log(1-x)", 1, 14),
    ("divergent zeta", expr_file("zeta(1,2)"), RegularizationError, "diverges", 1, 14),
    ("unknown symbol", expr_file("u*x^(-s-1)"), InputError, "unknown symbol 'u'", 1, 14),
    ("implicit product", expr_file("2x"), ParseError, "missing operator", 1, 15),
    ("unclosed paren", expr_file("(x^(-s-1)"), ParseError, "never closed", 1, 23),
    ("malformed TOML", f'integrand = "{KN}"\ntitle = \n', ParseError, "malformed TOML", 2, None),
    ("unterminated string", 'title = "a"\nintegrand = "x\n', ParseError, "malformed TOML", 2, None),
    ("two variables after combining", expr_file("x^(-s-1)*x^(-t)"), InputError, "both s and t", 1, 14),
    ("beyond the tables", expr_file("zeta(11,10)*x"), TableError, "up to weight 20", 1, 14),
    ("huge exponent", expr_file("x^(-s-1)*s^65"), InputError, "larger than 64", 1, 25),
    ("huge shift", expr_file("x^(-s-100)"), InputError, "larger than 64", 1, 14),
    ("empty integrand", 'integrand = ""\n', ParseError, "empty expression", 1, None),
    ("blank integrand", 'integrand = """\n   \n"""\n', ParseError, "empty expression", None, None),
    ("parameter in exponent", 'parameters = ["a"]\n' + expr_file("x^(a-1)"), InputError, "parameter 'a' may not appear in an exponent", 2, None),
    ("x in exponent", expr_file("x^x"), InputError, "may not appear in an exponent", 1, None),
    ("zeta in exponent", expr_file("x^zeta(3)"), InputError, "exponents must be rational", 1, None),
    ("quadratic exponent", expr_file("x^(s^2)"), InputError, "not linear", 1, None),
    ("2^s", expr_file("2^s"), InputError, "only x and (1-x)", 1, 14),
    ("odd pi", expr_file("pi^3*x"), InputError, "odd power of pi", 1, 14),
    ("divide by zeta", expr_file("x/zeta(3)"), InputError, "division only by non-zero rational", 1, 16),
    ("divide by zero", expr_file("x/(s-s)"), InputError, "division by zero", 1, None),
    ("inverse zeta", expr_file("zeta(3)^(-1)"), InputError, "negative powers", 1, 14),
    ("word too long", expr_file("G(" + ",".join(["0"] * 31) + ";x)"), InputError, "longer than 30", 1, None),
    ("shuffle too long", expr_file("log(x)^31"), InputError, "longer than 30", 1, None),
    ("Li of 2x", expr_file("Li(2, 2*x)"), InputError, "only at x and 1-x", 1, None),
    ("G without ;", expr_file("G(0,1)"), InputError, "G needs letters", 1, 14),
    ("x as a function", expr_file("x(2)"), InputError, "not a function", 1, 14),
    ("log as a symbol", expr_file("log*x"), InputError, "is a function", 1, 14),
    ("duplicate key", f'integrand = "{KN}"\nintegrand = "x"\n', ParseError, "malformed TOML", None, None),
    ("too many terms", expr_file("(s+t+1)^30*(s+t+1)^30"), InputError, f"exceed {MAX_TERMS} terms", 1, None),
    ("multi-line error position", 'integrand = """\n  x^(-s-1)*\n  (1-x)^(-t-1)\n  * Li(0, x)"""\n', InputError, "positive integer", 4, 8),
]


@pytest.mark.parametrize("name,text,exc,message,line,column", BAD, ids=[b[0] for b in BAD])
def test_bad_files(tmp_path, name, text, exc, message, line, column):
    path = tmp_path / "bad.toml"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(LowEnergyError) as info:
        read_integrand(path)
    err = info.value
    assert type(err) is exc, (type(err), str(err))
    assert message in str(err), str(err)
    assert err.source == str(path)
    if line is not None:
        assert err.line == line, str(err)
    if column is not None:
        assert err.column == column, str(err)
    assert str(path) in str(err)


def test_enough_bad_files():
    assert len(BAD) >= 22


def test_unknown_key_hint():
    with pytest.raises(InputError) as info:
        read('intgrand = "x"\n')
    assert "did you mean 'integrand'?" in info.value.hint
    assert info.value.term == "intgrand"
    for key in ALLOWED_KEYS:
        assert key in info.value.hint


def test_error_fields():
    with pytest.raises(InputError) as info:
        read(f'title = "t"\nintegrand = "{KN}*sin(x)"\n', name="f.toml")
    err = info.value
    assert (err.source, err.line, err.column, err.term) == ("f.toml", 2, 36, "sin(x)")
    assert err.hint
    assert str(err).startswith("f.toml, line 2, column 36: unknown function 'sin'")


def test_error_after_escape_keeps_columns():
    # "\t" is two characters in the file but one in the value
    with pytest.raises(InputError) as info:
        read('integrand = "s\\t*u"')
    assert (info.value.line, info.value.column) == (1, 18)


def test_terms_from_expression_locations():
    with pytest.raises(InputError) as info:
        terms_from_expression("s*x +\n  2*u", source="cli", line=10)
    err = info.value
    assert (err.source, err.line, err.column, err.term) == ("cli", 11, 5, "u")
    with pytest.raises(InputError):
        terms_from_expression("s", variables=("s", "s"))
    with pytest.raises(InputError):
        terms_from_expression("s", parameters=("G",))
    with pytest.raises(InputError):
        terms_from_expression(3)


def test_unreadable_files(tmp_path):
    with pytest.raises(InputError, match="no such file"):
        read_integrand(tmp_path / "missing.toml")
    with pytest.raises(InputError):
        read_integrand(tmp_path)
    bad = tmp_path / "latin1.toml"
    bad.write_bytes(b'title = "caf\xe9"\nintegrand = "x"\n')
    with pytest.raises(ParseError, match="UTF-8") as info:
        read_integrand(bad)
    assert info.value.line == 1
    big = tmp_path / "big.toml"
    big.write_bytes(b"#" * 2_000_000)
    with pytest.raises(InputError, match="larger than"):
        read_integrand(big)


def test_bytes_and_bom():
    itg = integrand_from_text("\ufeffintegrand = 'x'".encode("utf-8"))
    assert as_map(itg.terms) == {(E(1), E(), ()): {(0, 0): ONE}}
    with pytest.raises(InputError):
        integrand_from_text(None)


def test_deeply_nested_toml():
    with pytest.raises(LowEnergyError):
        integrand_from_text("a = " + "[" * 5000 + "]" * 5000)


def test_no_code_is_executed():
    # Python syntax is not the grammar: nothing reaches eval
    for text in ['__import__("os")', "x.__class__", "lambda: 1", "[x for x in s]", "x**2"]:
        with pytest.raises(LowEnergyError):
            terms_from_expression(text)


# --------------------------------------------------------------------------
# fuzzing: only the package's own errors may escape
# --------------------------------------------------------------------------

_EXPR_TOKENS = [
    "x", "s", "t", "a", "(1-x)", "(1 - x)", "log", "Li", "G", "zeta", "pi", "u", "sin",
    "0", "1", "2", "3", "0.5", "64", "65", "+", "-", "*", "/", "^", "(", ")", ";", ",", " ",
    "x^(-s-1)", "(1-x)^(-t-1)", "G(0,1;x)", "G(1,0;1-x)", "Li(2,x)", "Li(3,1-x)", "log(x)",
    "log(1-x)", "zeta(3)", "zeta(2,1)", "zeta(1,2)", "pi^2", "s^2", "x^(s/2)", "1/2", "\n",
]


def _check_terms(terms, nvars):
    for term in terms:
        assert isinstance(term, Term)
        for e in (term.x_exp, term.y_exp):
            assert isinstance(e.shift, int) and abs(e.shift) <= 64
            assert e.var in (None, 0, 1)
        assert all(a in (0, 1) for a in term.word) and len(term.word) <= 30
        assert term.coefficient
        for exps, c in term.coefficient.items():
            assert len(exps) == nvars and all(isinstance(k, int) and k >= 0 for k in exps)
            assert isinstance(c, MZV) and c


@FUZZ
@given(st.lists(st.sampled_from(_EXPR_TOKENS), max_size=25))
def test_fuzz_expressions(tokens):
    text = "".join(tokens)
    try:
        terms = terms_from_expression(text, parameters=("a",), source="fuzz", line=1)
    except LowEnergyError as err:
        assert err.source == "fuzz"
        return
    _check_terms(terms, 3)


_ATOMS = [
    "x", "s", "t", "a", "u", "(1-x)", "1-x", "2", "0", "1/3", "0.25", "pi", "zeta(3)", "zeta(2,1)", "zeta(1,2)",
    "log(x)", "log(1-x)", "log(2*x)", "Li(2,x)", "Li(3,1-x)", "Li(0,x)", "G(0,1;x)", "G(1,0,1;1-x)", "G(0,1;1)",
    "G(;x)", "G(2;x)", "sin(x)",
]
_EXPONENTS = ["0", "1", "2", "3", "-1", "-2", "(-s-1)", "(-t)", "(2*s-1)", "(1/2)", "s", "(s+t)", "a", "x", "65"]


def _combine(children):
    return st.one_of(
        st.tuples(children, st.sampled_from(["+", "-", "*", "/"]), children).map(lambda p: f"{p[0]}{p[1]}{p[2]}"),
        st.tuples(children, st.sampled_from(_EXPONENTS)).map(lambda p: f"({p[0]})^{p[1]}"),
        children.map(lambda c: f"-({c})"),
        children.map(lambda c: f"x^(-s-1)*(1-x)^(-t-1)*({c})"),
    )


_STRUCTURED = st.recursive(st.sampled_from(_ATOMS), _combine, max_leaves=10)


@FUZZ
@given(_STRUCTURED)
def test_fuzz_structured_expressions(text):
    """Well-formed expressions built from a small grammar reach the evaluator."""
    try:
        terms = terms_from_expression(text, parameters=("a",), source="fuzz")
    except LowEnergyError as err:
        assert err.source == "fuzz"
        return
    _check_terms(terms, 3)


_TOML_PIECES = [
    "integrand", "title", "variables", "parameters", "integration_variable", "notes", "provenance",
    "intgrand", " = ", "=", '"', "'", '"""', "'''", "[", "]", "{", "}", ",", "\n", "#", " ", "\\",
    '"x^(-s-1)*(1-x)^(-t-1)"', '"log(x)*s"', '["s", "t"]', '["a"]', '["a", "a"]', '"y"', "3", "true",
    '"zeta"', "[table]", "a.b", '"G(0,1;1-x)"', "x", "s", "(", ")", "^", "-", "1", "\t", "\\n", "\\u00e9",
]


@FUZZ
@given(st.lists(st.sampled_from(_TOML_PIECES), max_size=30))
def test_fuzz_toml_documents(pieces):
    text = "".join(pieces)
    try:
        itg = integrand_from_text(text, source="doc.toml")
    except LowEnergyError as err:
        assert err.source == "doc.toml"
        if err.line is not None:
            assert 1 <= err.line <= text.count("\n") + 2
        return
    _check_terms(itg.terms, itg.nvars)


@FUZZ
@given(
    st.sampled_from(["integrand = ", 'variables = ["s","t"]\nintegrand = ', "title='t'\nintegrand = "]),
    st.sampled_from(['"', "'", '"""\n', "'''"]),
    st.lists(st.sampled_from(_EXPR_TOKENS), max_size=20),
)
def test_fuzz_integrand_values(prefix, quote, tokens):
    closing = quote.strip("\n")
    text = prefix + quote + "".join(tokens) + closing + "\n"
    try:
        itg = integrand_from_text(text, source="v.toml")
    except LowEnergyError as err:
        assert err.source == "v.toml"
        if err.line is not None:
            assert 1 <= err.line <= text.count("\n") + 1
        return
    _check_terms(itg.terms, itg.nvars)


@FUZZ
@given(st.text(max_size=80))
def test_fuzz_arbitrary_text(text):
    try:
        integrand_from_text(text)
    except LowEnergyError:
        pass
    try:
        terms_from_expression(text)
    except LowEnergyError:
        pass


@FUZZ
@given(
    st.sampled_from(["integrand = ", "# c\ntitle = 'a = \"\"\"'\nintegrand=", 'notes = """\nintegrand = "no"\n"""\nintegrand = ']),
    st.sampled_from(['"', "'", '"""', "'''", '"""\n', "'''\n"]),
    st.lists(st.sampled_from([t for t in _EXPR_TOKENS if t != "\n"] + ["\n", "\n  "]), min_size=1, max_size=20),
)
def test_fuzz_error_positions_point_at_the_text(prefix, quote, tokens):
    """A located error in the file points at the same character as in the bare expression."""
    value = "".join(tokens)
    closing = quote.strip("\n")
    if len(closing) == 1 and "\n" in value:
        value = value.replace("\n", " ")
    text = prefix + quote + value + closing + "\n"
    try:
        value = tomllib.loads(text)["integrand"]  # as TOML decodes it (a first newline is trimmed)
    except tomllib.TOMLDecodeError:
        return
    try:
        direct = terms_from_expression(value, parameters=())
    except LowEnergyError as err:
        direct = err
    try:
        integrand_from_text(text)
    except LowEnergyError as err:
        assert isinstance(direct, LowEnergyError) and type(direct) is type(err)
        assert err.message == direct.message
        joined = value.replace("\n", " ")
        if direct.column is not None and 1 <= direct.column <= len(joined):
            line = text.split("\n")[err.line - 1] + "\n"
            assert line[err.column - 1] == value[direct.column - 1], (text, str(err))
        return
    assert not isinstance(direct, LowEnergyError)
