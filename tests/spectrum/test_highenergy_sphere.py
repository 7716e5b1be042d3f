"""The sphere saddle (lowenergy.spectrum.highenergy.SphereSaddle) against the complex Beta closed form.

Closed form (Dotsenko & Fateev, Nucl. Phys. B 240 (1984); Kawai, Lewellen & Tye,
Nucl. Phys. B 269 (1986)):

    J(A, B) = (1/π) ∫ d²z |z|^(2A-2) |1-z|^(2B-2) = Γ(A)Γ(B)Γ(1-A-B) / (Γ(1-A)Γ(1-B)Γ(A+B)),

continued in A = -S, B = -T.  Insertions of log|z|² are derivatives in A.
Large |S|, |T| are taken on complex rays E = |E| e^(iθ), S = -E x*, T = -E (1-x*),
where the saddle prediction holds (module docstring of SphereSaddle).
"""

from __future__ import annotations

from fractions import Fraction

import mpmath
import pytest
import sympy

from lowenergy.errors import InputError
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.spectrum.highenergy import (
    SphereSaddle,
    exponentiation_check,
    high_energy,
    leading_term,
    saddle_for,
    validate_ray,
)
from lowenergy.spectrum.xfunctions import XFunction

KN = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"
X = sympy.Symbol("x", positive=True)
E = sympy.Symbol("E", positive=True)


def sph(body: str, name: str = "sphere-test"):
    return integrand_from_text(f'domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "{body}"', source=name)


def rational_to_sympy(f: XFunction):
    assert f.is_rational_function()
    i, j, num = f.parts[()]
    poly = sum(sympy.Rational(c.rational_value().numerator, c.rational_value().denominator) * X ** p
               for p, c in enumerate(num))
    return X ** i * (1 - X) ** j * poly


def log_gamma_stirling(z):
    """Stirling's series, A&S 6.1.41 (valid for |arg z| < π): ln Γ(z) ~ (z - 1/2) ln z - z + ln(2π)/2 + 1/(12 z) - 1/(360 z^3)."""
    return (z - sympy.Rational(1, 2)) * sympy.log(z) - z + sympy.log(2 * sympy.pi) / 2 + 1 / (12 * z) - 1 / (360 * z ** 3)


def test_saddle_dispatch_and_location():
    sad = saddle_for([sph(KN)])
    assert isinstance(sad, SphereSaddle)
    # z* = S/(S+T): S = -1, T = -3 -> 1/4
    assert sad.saddle_of_direction(-1, -3) == Fraction(1, 4)
    with pytest.raises(InputError, match="outside 0 < z"):
        sad.check_saddle(Fraction(2))


def test_reflection_gives_beta_squared_times_a_phase():
    # Γ(z)Γ(1-z) = π/sin(πz) (A&S 6.1.17) turns J into Θ · B(A,B)², Θ = sin πA sin πB/(π sin π(A+B));
    # with q = e^(2πi A): Θ = (i/2π)(1-q_A)(1-q_B)/(1-q_A q_B) -> i/(2π) for Im A, Im B -> +∞.
    A, B = sympy.symbols("A B")
    J = sympy.gamma(A) * sympy.gamma(B) * sympy.gamma(1 - A - B) / (
        sympy.gamma(1 - A) * sympy.gamma(1 - B) * sympy.gamma(A + B))
    refl = lambda z: sympy.pi / (sympy.sin(sympy.pi * z) * sympy.gamma(z))      # Γ(1-z), A&S 6.1.17
    J_refl = sympy.gamma(A) * sympy.gamma(B) * refl(A + B) / (refl(A) * refl(B) * sympy.gamma(A + B))
    theta = sympy.sin(sympy.pi * A) * sympy.sin(sympy.pi * B) / (sympy.pi * sympy.sin(sympy.pi * (A + B)))
    beta2 = (sympy.gamma(A) * sympy.gamma(B) / sympy.gamma(A + B)) ** 2
    assert sympy.simplify(J_refl - theta * beta2) == 0
    qa, qb = sympy.exp(2 * sympy.pi * sympy.I * A), sympy.exp(2 * sympy.pi * sympy.I * B)
    phase = sympy.I / (2 * sympy.pi) * (1 - qa) * (1 - qb) / (1 - qa * qb)
    assert sympy.simplify((theta - phase).rewrite(sympy.exp)) == 0
    # numerically, at one point, the closed form itself against Θ B² (mpmath)
    with mpmath.workdps(30):
        a, b = mpmath.mpc(0.3, 0.7), mpmath.mpc(-1.2, 0.4)
        j = mpmath.gamma(a) * mpmath.gamma(b) * mpmath.gamma(1 - a - b) / (
            mpmath.gamma(1 - a) * mpmath.gamma(1 - b) * mpmath.gamma(a + b))
        th = mpmath.sin(mpmath.pi * a) * mpmath.sin(mpmath.pi * b) / (mpmath.pi * mpmath.sin(mpmath.pi * (a + b)))
        assert abs(j - th * mpmath.beta(a, b) ** 2) < 1e-25 * abs(j)


def test_flat_factor_saddle_and_first_correction_from_stirling():
    # Off the real axis J = (iσ/2π) B(A,B)² (1 + O(e^(-2π|Im A|))); Stirling's series (A&S 6.1.41) for
    # Γ(A), Γ(B), Γ(A+B) with A = E x*, B = E (1-x*) gives log[J/(iσ K_sph)] in powers of 1/E,
    # K_sph = x*^(2A) (1-x*)^(2B) x*(1-x*)/E.
    lt = leading_term(sph(KN))
    assert lt.degree == 0
    A, B = E * X, E * (1 - X)
    log_beta2 = 2 * (log_gamma_stirling(A) + log_gamma_stirling(B) - log_gamma_stirling(A + B))
    log_ksph = 2 * A * sympy.log(X) + 2 * B * sympy.log(1 - X) + sympy.log(X * (1 - X) / E)
    log_ratio = sympy.expand(sympy.expand_log(log_beta2 - sympy.log(2 * sympy.pi) - log_ksph, force=True))
    h = sympy.Symbol("h")
    series = sympy.series(log_ratio.subs(E, 1 / h), h, 0, 2).removeO()
    lead = sympy.simplify(sympy.exp(series.coeff(h, 0)))
    first = sympy.simplify(series.coeff(h, 1))
    assert sympy.simplify(rational_to_sympy(lt.leading) - lead) == 0            # 1/(x(1-x))^2
    assert sympy.simplify(rational_to_sympy(lt.next) - lead * first) == 0
    # hand value: twice the interval's (1/x + 1/(1-x) - 1)/12 from the 1/(12 z) terms
    assert sympy.simplify(first - (1 / X + 1 / (1 - X) - 1) / 6) == 0


def _closed_forms(A, B):
    """J and its first two A-derivatives divided by J, from the closed form (mpmath; A&S 6.3.1, 6.4.1)."""
    psi = mpmath.digamma
    j = mpmath.gamma(A) * mpmath.gamma(B) * mpmath.gamma(1 - A - B) / (
        mpmath.gamma(1 - A) * mpmath.gamma(1 - B) * mpmath.gamma(A + B))
    d1 = psi(A) - psi(1 - A - B) + psi(1 - A) - psi(A + B)   # ∂_A log J
    d2 = (mpmath.psi(1, A) + mpmath.psi(1, 1 - A - B) - mpmath.psi(1, 1 - A) - mpmath.psi(1, A + B))
    return j, d1, d1 ** 2 + d2


@pytest.mark.parametrize("body, which", [(KN, 0), (KN + "*log(abs(z))", 1), (KN + "*log(abs(z))^2", 2),
                                         (KN + "*svpolylog(0, 0; z)", 2)])
def test_complex_ray_approaches_saddle_with_one_over_e(body, which):
    # J, ∂_A J = J ∂_A log J (insertion log|z|² = 2 log|z|), ∂_A² J (insertion log²|z|² = 4 log²|z| = 2 L_00)
    # from mpmath's Gamma/digamma/trigamma; the ratio to iσ K_sph E^d L tends to 1 + N/(L E) with O(1/E²).
    lt = leading_term(sph(body))
    factor = {0: 1, 1: mpmath.mpf(1) / 2, 2: mpmath.mpf(1) / 4}[which]
    if "svpolylog" in body:
        factor = mpmath.mpf(1) / 2          # L_00 = log²|z|²/2
    xs = Fraction(1, 3)
    rems, firsts = [], []
    with mpmath.workdps(40):
        x = mpmath.mpf(1) / 3
        L, N = lt.leading.numeric(xs, 40), lt.next.numeric(xs, 40)
        for R in (20, 80, 320):
            Ev = R * mpmath.expjpi(mpmath.mpf(1) / 4)           # θ = π/4, Im E > 0: σ = +1
            A, B = Ev * x, Ev * (1 - x)
            j, d1, d2 = _closed_forms(A, B)
            value = j * (1, d1, d2)[which] * factor
            ksph = mpmath.exp(2 * A * mpmath.log(x) + 2 * B * mpmath.log(1 - x)) * x * (1 - x) / Ev
            ratio = value / (1j * ksph * L)
            rems.append(abs(ratio - 1 - N / (L * Ev)))
            firsts.append(abs(ratio - 1))
    assert firsts[0] > 5 * rems[0]
    assert rems[1] < rems[0] / 10 and rems[2] < rems[1] / 10       # ~1/16 per factor 4 in E
    assert rems[2] < 1e-4


def test_log_insertion_against_digamma_asymptotics():
    # ∂_A log J = ψ(A) + ψ(1-A) - ψ(1-A-B) - ψ(A+B) = 2ψ(A) - 2ψ(A+B) + π(cot πA - cot π(A+B))
    # (A&S 6.3.7); off the real axis the cotangents cancel up to e^(-2π|Im A|), and
    # ψ(z) ~ ln z - 1/(2z) + O(z^-2) (A&S 6.3.18): 2ψ(E x) - 2ψ(E) = 2 log x + (1 - 1/x)/E + O(E^-2).
    # log(abs(z)) is half of that insertion.
    flat = leading_term(sph(KN))
    lt = leading_term(sph(KN + "*log(abs(z))"))
    logx = XFunction.word((0,))
    assert lt.leading == flat.leading * logx
    half_corr = XFunction.constant(Fraction(1, 2)) - XFunction.monomial(-1, 0, Fraction(1, 2))
    assert lt.next == flat.next * logx + flat.leading * half_corr
    # the same through ∂_B for log|1-z|: 2ψ(E(1-x)) - 2ψ(E) = 2 log(1-x) + (1 - 1/(1-x))/E
    lt1 = leading_term(sph(KN + "*log(abs(1-z))"))
    assert lt1.leading == flat.leading * XFunction.word((1,))
    assert lt1.next == flat.next * XFunction.word((1,)) + flat.leading * (
        XFunction.constant(Fraction(1, 2)) - XFunction.monomial(0, -1, Fraction(1, 2)))


def test_log_squared_insertion_against_trigamma_asymptotics():
    # ∂_A² J / J = (∂_A log J)² + 2ψ'(A) - 2ψ'(A+B) + O(e^(-2π|Im A|)); ψ'(z) ~ 1/z + O(z^-2) (A&S 6.4.12):
    # J_00/J = 4 log²x + [4 log x (1 - 1/x) + 2/x - 2]/E + O(E^-2).  log(abs(z))^2 is a quarter of it;
    # the cross term checks the product rule D_ξ + D_η of the two-dimensional Gaussian.
    flat = leading_term(sph(KN))
    lt = leading_term(sph(KN + "*log(abs(z))^2"))
    logx = XFunction.word((0,))
    assert lt.leading == flat.leading * logx * logx
    inv_x = XFunction.monomial(-1, 0)
    one = XFunction.constant(1)
    corr = logx * (one - inv_x) + (inv_x - one).scale(Fraction(1, 2))
    assert lt.next == flat.next * logx * logx + flat.leading * corr


def test_exponentiation_on_the_sphere():
    # invented: f1 = S T log|z| log|1-z|, f2 = f1²/2 holds; f2 = f1² fails by f1²/2
    fam = [KN, KN + "*S*T*log(abs(z))*log(abs(1-z))", KN + "*S^2*T^2*log(abs(z))^2*log(abs(1-z))^2/2"]
    lts = [leading_term(sph(b)) for b in fam]
    (res,) = exponentiation_check(lts)
    assert res.holds and res.degree == 4
    bad = [leading_term(sph(b)) for b in fam[:2] + [KN + "*S^2*T^2*log(abs(z))^2*log(abs(1-z))^2"]]
    (res,) = exponentiation_check(bad, grid=[Fraction(1, 3)])
    assert not res.holds
    with mpmath.workdps(30):
        lx, ly = mpmath.log(mpmath.mpf(1) / 3), mpmath.log(mpmath.mpf(2) / 3)
        want = (mpmath.mpf(2) / 9 * lx * ly) ** 2 / 2     # S T = E² x(1-x) on the ray
    r, _ = res.grid[Fraction(1, 3)]
    assert abs(r - want) < 1e-15


def test_refusals():
    with pytest.raises(InputError, match="domains differ"):
        saddle_for([sph(KN), integrand_from_text('variables = ["S", "T"]\nintegrand = "x^(-S-1)*(1-x)^(-T-1)"')])
    i = sph(KN)
    lt = leading_term(i)
    with pytest.raises(InputError, match="no quadrature check on the sphere"):
        validate_ray(i, lt, Fraction(1, 2), [-10])
    with pytest.raises(InputError, match="no quadrature check on the sphere"):
        high_energy([i], grid=[Fraction(1, 2)], ray=Fraction(1, 2), s_values=[-10])
    with pytest.raises(InputError, match="no fixed-angle saddle"):
        saddle_for([sph("abs(z)^(-2*S-2)*abs(1-z)^(-2)")])


def test_report_text_names_the_sphere_factor():
    rep = high_energy([sph(KN)], grid=[Fraction(1, 2)], digits=10)
    text = rep.to_text()
    assert "z* = S/(S + T)" in text and "two-dimensional Gaussian" in text
