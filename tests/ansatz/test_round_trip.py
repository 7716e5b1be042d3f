"""Round trip: a hidden integrand, written by hand in other spellings, is
expanded; its Wilson coefficients become exact constraints; ``fix`` on the
generated ansatz must find the unique parameters derived here by hand.

Hand conversions (all standard): on 0 < x < 1, L_0 = 2 log x, L_1 = 2 log(1-x),
L_00 = 2 log^2 x, L_01 = 2 log x log(1-x), L_11 = 2 log^2(1-x) (Brown's
L_{0^n} = log^n|z|^2/n!, L_1 = log|1-z|^2, and L_01 = L_10 on the real line;
lowenergy/svpolylog/construct.py docstring); log x log(1-x) = G(0,1;x) + G(1,0;x)
(shuffle); Li_2(x) = -G(0,1;x); Li_2(1-x) = ζ(2) - log x log(1-x) - Li_2(x)
(Euler's reflection, Abramowitz & Stegun 27.7.3, from memory).
"""

from __future__ import annotations

from fractions import Fraction

import pytest

from lowenergy.ansatz.generate import AnsatzSpec, generate
from lowenergy.constraints import fix
from lowenergy.constraints.model import constraints_from_text
from lowenergy.expansion.engine import expand
from lowenergy.integrand.reader import integrand_from_text

KN = "x^(-s-1)*(1-x)^(-t-1)"
ORDER = 4


def _constraints(target, keys):
    lines = ['source = "hidden integrand of tests/ansatz/test_round_trip.py"\n']
    for i, j in sorted(keys):
        value = target.coefficients.get((i, j), {}).get((), None)
        lines.append("[[constraint]]\n")
        lines.append(f'name = "c[{i},{j}]"\nrelation = "c[{i},{j}]"\nkind = "="\n')
        lines.append(f'rhs = "{value.to_text() if value is not None else 0}"\n')
    return constraints_from_text("".join(lines), source="hidden.toml")


CASES = {
    "sv": (
        AnsatzSpec(weight=2, family="sv", degree=1),
        "3 - s*log(x) + 1/2*t*log(x)*log(1-x) + 5*log(1-x)^2 + 2*s*log(x)^2",
        # (word, MZV monomial, (i, j)) -> value
        {((), (), (0, 0)): 3, ((0,), (), (1, 0)): Fraction(-1, 2), ((0, 1), (), (0, 1)): Fraction(1, 4),
         ((1, 1), (), (0, 0)): Fraction(5, 2), ((0, 0), (), (1, 0)): 1},
    ),
    "mpl": (
        AnsatzSpec(weight=2, family="mpl", degree=1, mzv=True, uniform=True),
        "zeta(2)*s + t*G(0,1; x) - 2*s*log(x)*log(1-x) + 3*t*Li(2, 1-x)",
        {((), ((2,),), (1, 0)): 1, ((0, 1), (), (0, 1)): 1, ((0, 1), (), (1, 0)): -2, ((1, 0), (), (1, 0)): -2,
         ((), ((2,),), (0, 1)): 3, ((1, 0), (), (0, 1)): -3},
    ),
}


@pytest.mark.parametrize("name", CASES)
def test_fix_recovers_the_hidden_integrand(name):
    spec, hidden, expected = CASES[name]
    a = generate(spec)
    ansatz = expand(integrand_from_text(a.to_toml(), source="ansatz.toml"), ORDER)
    target = expand(integrand_from_text(f'integrand = "{KN}*({hidden})"', source="hidden.toml"), ORDER)
    keys = set(ansatz.coefficients) | set(target.coefficients)
    report = fix(ansatz, _constraints(target, keys))
    assert report.status == "unique", report.to_text()
    want = {}
    for t in a.terms:
        want[t.parameter] = Fraction(expected.get((t.candidate.word, t.candidate.constant, t.monomial), 0))
    assert len(expected) == sum(1 for v in want.values() if v)  # every hand value names a real term
    assert report.solution == want
