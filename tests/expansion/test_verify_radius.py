"""verify near and beyond the radius of convergence.

B(-s,-t) = Γ(-s)Γ(-t)/Γ(-s-t) has poles at s = 1, 2, ... and t = 1, 2, ...
(Γ has poles at 0, -1, -2, ...: A&S 6.1.3), so its Laurent series around 0
converges for |s|, |t| < 1 and diverges beyond.
"""

from __future__ import annotations

from fractions import Fraction

import pytest

from lowenergy.expansion.engine import expand
from lowenergy.expansion.verify import convergence_radii, verify
from lowenergy.integrand.reader import integrand_from_text

BETA = integrand_from_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"')


@pytest.fixture(scope="module")
def beta8():
    return expand(BETA, 8)


def test_radii_of_the_beta_function():
    assert convergence_radii(BETA) == {0: 1, 1: 1}
    # x^(1-2s): poles where 2 - 2s + n = 0 -> nearest s = 1; (1-x)^(-t/3-1): t = 3, 6, ...
    other = integrand_from_text('integrand = "x^(1-2*s)*(1-x)^(-t/3-1)"')
    assert convergence_radii(other) == {0: Fraction(1), 1: Fraction(3)}


def test_well_inside_no_warning(beta8):
    r = verify(BETA, beta8, {"s": Fraction(-1, 20), "t": Fraction(-3, 100)}, digits=20)
    assert r.status == "consistent" and r.consistent and r.warnings == ()
    assert r.digits_agreement > 10


def test_near_the_radius_few_digits_is_inconclusive(beta8):
    r = verify(BETA, beta8, {"s": Fraction(-9, 10), "t": Fraction(-17, 20)}, digits=20)
    # the truncation estimate is large enough to excuse the difference ...
    assert abs(r.difference) <= r.safety * r.truncation_estimate + r.quadrature_error
    # ... but with < 1 digit of agreement this close to |s| = 1 it is not called consistent
    assert r.digits_agreement < 1
    assert r.status == "inconclusive" and not r.consistent
    assert any("near the radius of convergence" in w for w in r.warnings)
    assert "INCONCLUSIVE" in r.summary()


def test_beyond_the_radius_is_inconclusive(beta8):
    r = verify(BETA, beta8, {"s": Fraction(6, 5), "t": Fraction(-1, 10)}, digits=20)
    assert r.status == "inconclusive" and not r.consistent
    assert any("beyond the radius of convergence" in w for w in r.warnings)
