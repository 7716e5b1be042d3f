"""sv(...) in MZV expressions and in constraint relations (weight ≤ 10 only).

Expected values: F. Brown, "Single-valued motivic periods and multiple zeta
values", Forum Math. Sigma 2 (2014): sv ζ(2) = 0, sv ζ(2k+1) = 2 ζ(2k+1), sv
is a ring homomorphism, and ζ_sv(3,5) = -10 ζ(3)ζ(5), ζ_sv(3,7) = -28 ζ(3)ζ(7)
- 12 ζ(5)^2 in Brown's index order (first index on the SMALLEST summation
variable), i.e. for our ζ(5,3) and ζ(7,3) -- recalled from memory.  Our
ζ(3,5) then follows from the stuffle ζ(3)ζ(5) = ζ(3,5) + ζ(5,3) + ζ(8):
sv ζ(3,5) = 4 ζ(3)ζ(5) + 10 ζ(3)ζ(5) = 14 ζ(3)ζ(5).
"""

from __future__ import annotations

import pytest
from typer.testing import CliRunner

from lowenergy.cli import app
from lowenergy.constraints import check, constraints_from_text
from lowenergy.errors import InputError, ParseError
from lowenergy.expansion.engine import expand
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.zeta.element import zeta
from lowenergy.zeta.expression import evaluate

z3, z5, z7 = zeta(3), zeta(5), zeta(7)

CASES = [
    ("sv(zeta(3))", 2 * z3),
    ("sv(zeta(2))", 0),
    ("sv(pi^4)", 0),                                  # π^4 = 90 ζ(4), ζ(4) = 2/5 ζ(2)^2
    ("sv(zeta(5))", 2 * z5),
    ("sv(zeta(3)^2)", 4 * z3 * z3),                   # ring homomorphism
    ("sv(zeta(5,3))", -10 * z3 * z5),                 # Brown's ζ_sv(3,5), our order
    ("sv(zeta(3,5))", 14 * z3 * z5),
    ("sv(zeta(7,3))", -28 * z3 * z7 - 12 * z5 * z5),  # Brown's ζ_sv(3,7), our order
    ("sv(zeta(5,3)) + sv(zeta(3,5)) - sv(zeta(3)*zeta(5))", 0),
    ("2*sv(zeta(3)) - sv(2*zeta(3) + zeta(2))", 0),   # Q-linear, sv ζ(2) = 0
    ("sv(sv(zeta(3)))", 4 * z3),
]


@pytest.mark.parametrize("text, expected", CASES)
def test_sv_in_expressions(text, expected):
    assert evaluate(text) == expected


def test_sv_from_the_command_line():
    res = CliRunner().invoke(app, ["reduce", "sv(zeta(5,3))"])
    assert res.exit_code == 0, res.stderr
    assert res.stdout.splitlines()[0] == "-10*zeta(3)*zeta(5)"


@pytest.mark.parametrize("text", ["sv()", "sv(zeta(3), zeta(5))", "sv(1; 2)", "sv(q)"])
def test_bad_sv_calls(text):
    with pytest.raises((InputError, ParseError)):
        evaluate(text)


BETA = integrand_from_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"')


def test_sv_in_constraint_relations():
    # B(-s,-t): c[1,0] = ζ(2), c[1,1] = 2 ζ(3)  (A&S 6.1.33, expanded by hand)
    cs = constraints_from_text(
        'source = "A&S 6.1.33 expanded by hand; Brown 2014 for sv"\n'
        '[[constraint]]\nname = "a"\nrelation = "sv(zeta(3))*c[1,0]"\nkind = "="\nrhs = "2*zeta(2)*zeta(3)"\n'
        '[[constraint]]\nname = "b"\nrelation = "c[1,1] - sv(zeta(3))"\nkind = "="\nrhs = "0"\n'
        '[[constraint]]\nname = "c"\nrelation = "c[1,1]"\nkind = "="\nrhs = "sv(zeta(3))"\n',
        source="sv.toml",
    )
    report = check(expand(BETA, 2), cs)
    assert [r.status for r in report] == ["PASS", "PASS", "PASS"]


def test_sv_of_a_coefficient_is_refused():
    with pytest.raises(LowEnergyErrorTypes):
        constraints_from_text(
            'source = "x"\n[[constraint]]\nname = "a"\nrelation = "sv(c[1,0])"\nkind = "="\nrhs = "0"\n',
            source="bad.toml",
        )


LowEnergyErrorTypes = (InputError, ParseError)
