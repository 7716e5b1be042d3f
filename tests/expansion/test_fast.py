"""The bulk expansion path (lowenergy.expansion.fast, .vectors) against the termwise one.

* A named table of integrands — ansatz-like sums of single-valued
  polylogarithms with free parameters, shifted exponents (handled in the bulk
  path by integration by parts, in the termwise path by moments of every word
  of every shuffle), rational multiples of s and t, MZV coefficients of mixed
  weight — is expanded both ways; the results must be identical exactly.
* Independent of both paths: a shifted log insertion against the derivative of
  the Beta function, ∫ x^(1-s) (1-x)^(-t-1) log x dx = -∂_s B(2-s, -t), with
  B from Gamma functions expanded by Abramowitz & Stegun 6.1.33 (the helpers
  of test_engine_exact; no reduction table involved).
* The subsequence counts against a brute-force count; the table store passed
  to expand() is the one used.
"""

from __future__ import annotations

import itertools
import random
from fractions import Fraction
from math import comb

import pytest

from lowenergy.errors import InputError, TableError
from lowenergy.expansion.engine import embeddings, expand
from lowenergy.expansion.fast import series_vectors
from lowenergy.expansion.vectors import embedding_counts
from lowenergy.integrand.model import Integrand, LinearExponent
from lowenergy.integrand.reader import terms_from_expression
from lowenergy.zeta.element import MZV
from lowenergy.zeta.table import TableStore, default_store
from tests.expansion.test_engine_exact import gamma_ratio, mul, shift, truncate


def ansatz_text(max_weight: int, max_degree: int = 2):
    """An invented ansatz: Σ a_(w,i,j) s^i t^j svpolylog(w; x) in the Koba–Nielsen factor."""
    params, parts = [], []
    for n in range(max_weight + 1):
        for w in itertools.product((0, 1), repeat=n):
            for d in range(max_degree + 1):
                for i in range(d, -1, -1):
                    name = "a" + "".join(map(str, w)) + f"_{i}{d - i}"
                    params.append(name)
                    f = f"svpolylog({','.join(map(str, w))}; x)" if w else "1"
                    parts.append(f"{name}*s^{i}*t^{d - i}*{f}")
    return "x^(-s-1)*(1-x)^(-t-1)*(" + " + ".join(parts) + ")", params


CASES = {
    "beta": ("x^(-s-1)*(1-x)^(-t-1)", [], 6),
    "weight-6 word": ("x^(-s-1)*(1-x)^(-t-1)*G(0,0,1,0,1,1; x)", [], 4),
    "product of polylogs": ("x^(-s-1)*(1-x)^(-t)*Li(2,x)*log(1-x)", [], 5),
    "x shifted by one": ("x^(-s)*(1-x)^(-t-1)*G(1,0,1; x)", [], 5),
    "x shifted by two": ("x^(1-s)*(1-x)^(-t-1)*G(0,0,1; x)", [], 5),
    "both shifted, G at 1-x": ("x^(1-s)*(1-x)^(1-t)*G(0,1,0; 1-x)*Li(3, x)", [], 3),
    "(1-x) shifted by three": ("x^(-s-1)*(1-x)^(2-t)*G(1,0,0,1; x)", [], 4),
    "rational multiples": ("x^(2-2*s)*(1-x)^(1-t/2)*G(0,1; x)", [], 4),
    "constant x exponent": ("x^2*(1-x)^(-t-1)*G(0,1; x)", [], 4),
    "constant (1-x) exponent": ("x^(1-s)*(1-x)^3*G(1,0; x)", [], 4),
    "one variable twice": ("x^(-s-1)*(1-x)^(-s)*(1 + s*log(x))", [], 5),
    "same variable, shifted": ("x^(1-s)*(1-x)^(1-s)*G(0,1; x)", [], 4),
    "parameters and zeta": (
        "x^(-s-1)*(1-x)^(-t-1)*(a*s*svpolylog(0,1;x) + b*t^2*svpolylog(1,0,1;x)"
        " + zeta(3)*a*svpolylog(1;x) + c + zeta(2)*b*s^3*G(0,1;x))",
        ["a", "b", "c"],
        5,
    ),
    "shifted ansatz": ("x^(1-s)*(1-x)^(-t)*(a*svpolylog(0,1;x) + b*s*svpolylog(1,0;x) + c*t)", ["a", "b", "c"], 4),
    "order zero, poles only": ("x^(-s-1)*(1-x)^(-t-1)*s*G(1,0,1;x)", [], 0),
    "ansatz weight <= 2": (*ansatz_text(2), 4),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_bulk_equals_termwise(name):
    text, params, order = CASES[name]
    integrand = Integrand(terms=terms_from_expression(text, parameters=params), parameters=tuple(params))
    bulk = expand(integrand, order)
    termwise = expand(integrand, order, method="termwise")
    assert bulk.coefficients == termwise.coefficients
    assert bulk.coefficients  # not vacuous


def test_shifted_log_insertion_against_beta_derivative():
    # I(s,t) = ∫ x^(1-s)(1-x)^(-t-1) dx = Γ(2-s)Γ(-t)/Γ(2-s-t)            (A&S 6.2.1-2)
    #        = -(1-s)/(t(1-s-t)) · Γ(1-s)Γ(1-t)/Γ(1-s-t)                  (A&S 6.1.15)
    # and ∫ x^(1-s)(1-x)^(-t-1) log x dx = -∂I/∂s.
    order = 8
    n = order + 2
    geo = {}
    for k in range(n + 1):
        for i in range(k + 1):
            geo[(i, k - i)] = MZV.rational(comb(k, i))
    one_minus_s = {(0, 0): MZV.one(), (1, 0): MZV.rational(-1)}
    big_i = shift({k: -v for k, v in mul(mul(one_minus_s, geo, n), gamma_ratio(n), n).items()}, 0, -1)
    expected = {}
    for (i, j), v in big_i.items():
        if i:
            expected[(i - 1, j)] = expected.get((i - 1, j), MZV()) - v * i
    expected = truncate({k: v for k, v in expected.items() if v}, order)
    got = series_vectors(LinearExponent(1, Fraction(-1), 0), LinearExponent(-1, Fraction(-1), 1), (0,), order,
                         default_store())
    assert got == expected
    assert len(got) > 30


def test_embedding_counts_brute_force():
    rng = random.Random(3)
    words = [tuple(rng.randint(0, 1) for _ in range(rng.randint(0, 4))) for _ in range(12)]
    length = 7
    counts = embedding_counts(words, length)
    for w in words:
        for k in range(1 << length):
            u = tuple((k >> (length - 1 - i)) & 1 for i in range(length))
            assert counts[w][k] == embeddings(w, u)


@pytest.mark.parametrize("method", ["bulk", "termwise"])
def test_expand_uses_the_given_store(tmp_path, method):
    integrand = Integrand(terms=terms_from_expression("x^(-s-1)*(1-x)^(-t-1)*G(0,1; x)"))
    empty = TableStore(tmp_path / "no-tables", auto_build=False)  # refuse, do not build
    with pytest.raises(TableError) as info:
        expand(integrand, 3, store=empty, method=method)
    assert "no-tables" in str(info.value)
    same = TableStore(default_store().directory)
    assert expand(integrand, 3, store=same, method=method) == expand(integrand, 3, method=method)


@pytest.mark.parametrize(
    "text, message",
    [
        ("x^(-2-s)*(1-x)^(-t-1)", "negative shifts"),
        ("x^(-1)*(1-x)^(-t-1)", "diverges at x = 0"),
        ("x^(-s-1)*(1-x)^(-1)*G(1;x)", "diverges at x = 1"),
    ],
)
def test_errors_match_termwise(text, message):
    integrand = Integrand(terms=terms_from_expression(text), source="demo.toml")
    errors = []
    for method in ("bulk", "termwise"):
        with pytest.raises(InputError) as info:
            expand(integrand, 3, method=method)
        errors.append(str(info.value))
    assert errors[0] == errors[1]
    assert message in errors[0]
