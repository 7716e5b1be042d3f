"""The 2D quadrature behind ``verify`` for sphere files, against closed forms.

Independent numbers: the complex Beta function (Dotsenko & Fateev, Nucl.
Phys. B 240 (1984); Kawai, Lewellen & Tye, Nucl. Phys. B 269 (1986))

    (1/π) ∫ d²z |z|^(2a-2) |1-z|^(2b-2) = Γ(a)Γ(b)Γ(1-a-b) / (Γ(1-a)Γ(1-b)Γ(a+b)),

evaluated with mpmath's Γ, and its a-derivative (mpmath ``diff``) for the
insertion log|z|² = L_0.  The points have small |S|, |T|, where the series
that ``verify`` compares with is most accurate: there the integrand is
close to |w|^(-2) at w -> 0 in every piece, the regime in which the
quadrature used to lose the real part of w (a relative error of 7e3 at
S = -0.1, T = -0.15, with an error estimate just as large).
"""

from __future__ import annotations

import mpmath
import pytest

from lowenergy.integrand.reader import integrand_from_text
from lowenergy.svpolylog.sphere_verify import sphere_integral

HEAD = 'domain = "sphere"\nvariables = ["S", "T"]\n'


def complex_beta(a, b):
    G = mpmath.gamma
    return G(a) * G(b) * G(1 - a - b) / (G(1 - a) * G(1 - b) * G(a + b))


@pytest.mark.parametrize("S, T", [("-0.05", "-0.08"), ("-0.1", "-0.15"), ("-0.02", "-0.03"), ("-0.3", "-0.45")])
def test_koba_nielsen_factor_at_small_S_T(S, T):
    integrand = integrand_from_text(HEAD + 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"\n', source="kn.toml")
    with mpmath.workdps(30):
        S, T = mpmath.mpf(S), mpmath.mpf(T)
        exact = complex_beta(-S, -T)
        value, err, _ = sphere_integral(integrand, {"S": S, "T": T}, digits=12, level=3)
        assert abs(value - exact) < 1e-9 * abs(exact)
        assert abs(value - exact) <= err + mpmath.mpf(10) ** -12 * abs(exact)


def test_log_insertion_at_small_S_T():
    # (1/π)∫ |z|^(2a-2)|1-z|^(2b-2) log|z|² = ∂_a C(a, b), a = -S, b = -T
    integrand = integrand_from_text(
        HEAD + 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*log(abs(z))"\n', source="log.toml")
    with mpmath.workdps(30):
        S, T = mpmath.mpf("-0.05"), mpmath.mpf("-0.08")
        exact = mpmath.diff(lambda a: complex_beta(a, -T), -S) / 2      # log|z| = L_0 / 2
        value, err, _ = sphere_integral(integrand, {"S": S, "T": T}, digits=12, level=3)
        assert abs(value - exact) < 1e-8 * abs(exact)


def test_depth_two_words_at_small_S_T():
    # L_01 + L_10 = L_0 ш L_1 = log|z|² log|1-z|² (shuffle product of the
    # single-valued polylogs), so the integral is ∂_a ∂_b C(a, b), a = -S, b = -T.
    # At this point the radial map r = ρ u^(1/α) gave the error estimate 9e-4.
    integrand = integrand_from_text(
        HEAD + 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*(svpolylog(0,1; z)+svpolylog(1,0; z))"\n',
        source="l01.toml")
    with mpmath.workdps(30):
        S, T = mpmath.mpf("-0.02"), mpmath.mpf("-0.03")
        exact = mpmath.diff(complex_beta, (-S, -T), (1, 1))
        value, err, _ = sphere_integral(integrand, {"S": S, "T": T}, digits=12, level=3)
        assert abs(value - exact) < 1e-11 * abs(exact)
        assert err < 1e-5 * abs(exact)


def test_region_hint_follows_the_exponents(tmp_path):
    # |z|^(-2S-2)|1-z|^(-2T) converges at 0 for S < 0, at 1 for T < 1 and at
    # ∞ (|z|^(-2S-2T-2)) for S + T > 0; the hint used to quote the region of
    # the unshifted factor whatever the file said.
    from typer.testing import CliRunner

    from lowenergy.cli import app

    f = tmp_path / "shifted.toml"
    f.write_text(HEAD + 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T)"\n')
    res = CliRunner().invoke(app, ["verify", str(f), "--at", "S=-0.05,T=-0.03", "--order", "2"])
    assert res.exit_code == 2
    assert "S < 0, T < 1, S + T > 0" in res.output
