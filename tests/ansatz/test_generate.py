"""The ansatz generator (lowenergy.ansatz.generate).

Independence is checked against the outside:

* G-words: 2^k words of length k (all independent), and with MZV constants
  Σ_k d_(W-k) 2^k with Zagier's dimensions d_n (d_0..d_2 = 1, 0, 1,
  d_n = d_(n-2) + d_(n-3); D. Zagier, "Values of zeta functions and their
  applications", 1994, conjecture; from memory).
* single-valued family, weights ≤ 4: the numerical rank of L_w(x) at 40
  points of (0, 1), evaluated by the independent reference of
  tests/svpolylog/test_integrand_sv.py (derived there from the differential
  equation and the monodromy; it uses neither the package's construction nor
  its numerics), must equal the number of functions the generator keeps; the
  kept ones must be numerically independent and every dropped one in their
  span.
* with MZV constants at weights ≤ 4: the Q-rank of {m · L_w} rebuilt from the
  same independent reference (L_w = naive shuffle sum + κ_w ζ(3) log(1-x)),
  MZV monomials ζ(2), ζ(3), ζ(2)^2 as independent symbols, ranked by sympy.
* s ↔ t symmetry: the expansion of a symmetric ansatz has c[i,j] = c[j,i]
  for all parameter values (x -> 1-x in the integral), an antisymmetric one
  c[i,j] = -c[j,i], and when the function space is closed under x -> 1-x
  (uniform weight with MZV constants) the symmetric and antisymmetric counts
  add up to the unsymmetrized one (V = V+ ⊕ V-).
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
import sympy

from lowenergy.ansatz.generate import AnsatzSpec, generate, independent_subset
from lowenergy.errors import InputError
from lowenergy.expansion.engine import expand
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.words import all_words
from tests.svpolylog.test_integrand_sv import g_function, kappa, naive_real_line, reference_lsv

DPS = 40


def zagier_dims(n):
    d = [1, 0, 1]
    while len(d) <= n:
        d.append(d[-2] + d[-3])
    return d[: n + 1]


@pytest.mark.parametrize("big_w", range(7))
def test_g_words_count(big_w):
    a = generate(AnsatzSpec(weight=big_w, family="mpl"))
    assert [row["functions"] for row in a.per_weight] == [2**k for k in range(big_w + 1)]
    assert a.independent_functions == a.functions == 2 ** (big_w + 1) - 1
    u = generate(AnsatzSpec(weight=big_w, family="mpl", mzv=True, uniform=True))
    d = zagier_dims(big_w)
    assert u.independent_functions == sum(d[big_w - k] * 2**k for k in range(big_w + 1))


def _values(functions, points):
    with mpmath.workdps(DPS):
        return mpmath.matrix([[f(x, 1 - x) for f in functions] for x in points])


def _singular_values(m):
    with mpmath.workdps(DPS):
        return sorted(mpmath.svd_r(m, compute_uv=False), reverse=True)


POINTS = [mpmath.mpf(k) / 41 for k in range(1, 41)]


@pytest.mark.parametrize("weight", [2, 3, 4])
def test_sv_independence_numerically(weight):
    a = generate(AnsatzSpec(weight=weight, family="sv", uniform=True))
    words = list(all_words(weight))
    kept = [c.word for c in a.independent]
    assert all(c.constant == () for c in a.independent)
    with mpmath.workdps(DPS):
        allv = _values([reference_lsv(w) for w in words], POINTS)
        sv_all = _singular_values(allv)
        tiny = mpmath.mpf(10) ** (-DPS + 12)
        numerical_rank = sum(1 for s in sv_all if s > tiny)
        # a clear gap: the rank is not a matter of threshold
        assert all(s < tiny or s > mpmath.mpf(10) ** -15 for s in sv_all)
        assert numerical_rank == len(kept)
        keptv = _values([reference_lsv(w) for w in kept], POINTS)
        assert min(_singular_values(keptv)) > mpmath.mpf(10) ** -15
        # every dropped function is a combination of the kept ones (least squares residual)
        for w in words:
            if w in kept:
                continue
            col = _values([reference_lsv(w)], POINTS)
            coef = mpmath.lu_solve(keptv.T * keptv, keptv.T * col)
            assert mpmath.norm(keptv * coef - col) < tiny


def test_g_words_independent_numerically():
    # the 2^4 words of length 4 really are independent functions (independent evaluator)
    words = list(all_words(4))
    a = generate(AnsatzSpec(weight=4, family="mpl", uniform=True))
    assert [c.word for c in a.independent] == words
    with mpmath.workdps(DPS):
        assert min(_singular_values(_values([g_function(w) for w in words], POINTS))) > mpmath.mpf(10) ** -20  # smallest is ~1e-10 (near-degenerate, not dependent)


def _reference_vectors(big_w):
    """{(MZV symbol, word): rational} for m · L_w at total weight big_w, from the reference."""
    monos = {0: [1], 1: [], 2: ["z2"], 3: ["z3"], 4: ["z2^2"]}
    vectors = []
    for k in range(big_w, -1, -1):
        for w in all_words(k) if k else [()]:
            base = {("1", u): Fraction(c) for u, c in naive_real_line(w).items()}
            kap = kappa(w)
            if kap:
                base[("z3", (1,))] = base.get(("z3", (1,)), 0) + kap
            for m in monos[big_w - k]:
                if m == 1:
                    vectors.append(base)
                else:  # m has weight big_w - k > 0, the reference has m only when k ≤ 1
                    assert not kap
                    vectors.append({(m, u): c for (_, u), c in base.items()})
    return vectors


@pytest.mark.parametrize("big_w", range(5))
def test_sv_with_mzv_independence_against_reference(big_w):
    a = generate(AnsatzSpec(weight=big_w, family="sv", mzv=True, uniform=True))
    vectors = _reference_vectors(big_w)
    keys = sorted({k for v in vectors for k in v}, key=str)
    m = sympy.Matrix([[v.get(k, 0) for v in vectors] for k in keys]) if keys else sympy.zeros(1, 1)
    assert a.functions == len(vectors)
    assert a.independent_functions == m.rank()


def test_independent_subset_is_greedy():
    assert independent_subset([{1: 1, 2: 1}, {1: 2, 2: 2}, {1: 1}, {2: 5}]) == [0, 2]
    assert independent_subset([]) == []


def _expansion(a, order=3):
    return expand(integrand_from_text(a.to_toml(), source="gen.toml"), order)


def _swap_sign(expansion):
    out = set()
    for (i, j), poly in expansion.coefficients.items():
        other = expansion.coefficients.get((j, i), {})
        if poly == other:
            out.add(1)
        elif poly == {k: -v for k, v in other.items()}:
            out.add(-1)
        else:
            out.add(0)
    return out


@pytest.mark.parametrize("family", ["mpl", "sv"])
def test_symmetry(family):
    base = dict(weight=2, family=family, degree=1)
    sym = generate(AnsatzSpec(symmetry="symmetric", **base))
    anti = generate(AnsatzSpec(symmetry="antisymmetric", **base))
    assert _swap_sign(_expansion(sym)) == {1}
    assert _swap_sign(_expansion(anti)) <= {-1}  # diagonal entries vanish: both signs hold
    none = generate(AnsatzSpec(**base))
    assert len(sym.terms) + len(anti.terms) >= len(none.terms)


@pytest.mark.parametrize("family", ["mpl", "sv"])
def test_symmetric_and_antisymmetric_add_up(family):
    base = dict(weight=3, family=family, degree=2, mzv=True, uniform=True)
    n = len(generate(AnsatzSpec(**base)).terms)
    n_sym = len(generate(AnsatzSpec(symmetry="symmetric", **base)).terms)
    n_anti = len(generate(AnsatzSpec(symmetry="antisymmetric", **base)).terms)
    assert n_sym + n_anti == n and n_sym > 0 and n_anti > 0


def test_degree_rules():
    fixed = generate(AnsatzSpec(weight=2, family="mpl", degree=1))
    assert len(fixed.terms) == 7 * 3
    falling = generate(AnsatzSpec(weight=2, family="mpl", degree_rule="falling"))
    # weight 0: degree ≤ 2 (6 monomials), weight 1: ≤ 1 (3), weight 2: 0 (1)
    assert len(falling.terms) == 1 * 6 + 2 * 3 + 4 * 1
    rising = generate(AnsatzSpec(weight=2, family="mpl", degree_rule="rising", exact_degree=True))
    # weight w gets exactly the w + 1 monomials of degree w
    assert [t.monomial for t in rising.terms[:3]] == [(0, 0), (1, 0), (0, 1)]
    assert len(rising.terms) == 1 * 1 + 2 * 2 + 4 * 3


def test_shifts_in_the_koba_nielsen_factor():
    a = generate(AnsatzSpec(weight=1, family="mpl", x_shift=1, y_shift=2))
    assert "x^(-s)*(1-x)^(-t+1)" in a.to_toml()
    itg = integrand_from_text(a.to_toml())
    assert {(t.x_exp.shift, t.y_exp.shift) for t in itg.terms} == {(0, 1)}


def test_file_parses_and_says_how_it_was_made():
    a = generate(AnsatzSpec(weight=3, family="sv", mzv=True, degree=2))
    text = a.to_toml()
    itg = integrand_from_text(text, source="gen.toml")
    assert list(itg.parameters) == [f"a{k}" for k in range(1, len(a.terms) + 1)]
    assert "lowenergy ansatz --weight 3 --family sv --mzv --degree 2" in itg.provenance
    assert text.startswith("# Generated by lowenergy")
    assert "zeta(2)" in text and "zeta(3)" in text


@pytest.mark.parametrize(
    "spec, message",
    [
        (dict(weight=-1), "--weight must be"),
        (dict(weight=9), "--weight must be"),
        (dict(weight=13, family="mpl"), "--weight must be"),
        (dict(weight=2, family="polylog"), "unknown --family"),
        (dict(weight=2, degree=-1), "--degree must be"),
        (dict(weight=2, degree_rule="up"), "unknown --degree-rule"),
        (dict(weight=2, symmetry="odd"), "unknown --symmetry"),
        (dict(weight=2, x_shift=-1), "--x-shift must be"),
        (dict(weight=2, symmetry="symmetric", x_shift=1), "needs equal --x-shift"),
        (dict(weight=2, prefix="s"), "reserved"),
        (dict(weight=2, prefix="a1"), "--prefix must be letters"),
        (dict(weight=2, domain="disk"), "unknown --domain"),
        (dict(weight=12, family="mpl"), "4096 candidate functions"),
        (dict(weight=0, degree_rule="falling", exact_degree=True, degree=0, uniform=True, symmetry="antisymmetric"),
         "no term"),
    ],
)
def test_bad_options(spec, message):
    with pytest.raises(InputError, match=message.replace("-", "\\-")):
        generate(AnsatzSpec(**spec))
