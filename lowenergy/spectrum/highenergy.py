"""Fixed-angle high energy: the saddle point of the worldsheet integral, exactly.

For an interval integrand ``I(s, t) = Σ_terms ∫_0^1 P(s, t) x^(α + a·s)
(1-x)^(β + b·t) G(w; x) dx`` (one Koba–Nielsen pair ``a, b`` shared by all
terms, integer shifts ``α, β``) the factor ``x^(a s)(1-x)^(b t)`` has, where
``A = a·s > 0`` and ``B = b·t > 0`` (``s, t < 0`` for ``x^(-s-1)(1-x)^(-t-1)``),
its maximum at

    x* = A/(A + B)      (= s/(s + t) for a = b = -1),

and with ``E = A + B`` (``= -s - t`` for a = b = -1) the rays ``s = E x*/a``,
``t = E (1-x*)/b`` are the fixed-angle limits.  Laplace's method (the
Gaussian around the saddle; Gross & Mende, Phys. Lett. B 197 (1987) for the
flat case) gives

    I = K(E, x*) · E^d · [ L(x*) + N(x*)/E + O(1/E²) ],
    K(E, x*) = x*^A (1-x*)^B · sqrt(2π x*(1-x*)/E),

with ``d`` the top total degree of the prefactors in (s, t),

    L = Σ_terms P_d(x*/a, (1-x*)/b) · g(x*),    g(x) = x^α (1-x)^β G(w; x),

(the top-degree part of the prefactor times the functions at the saddle) and
the next order ``N`` = the degree ``d-1`` part at the saddle plus the Gaussian
correction of the top part.  With ``h(x) = x* log x + (1-x*) log(1-x)``,
``κ = -h''(x*) = 1/(x*(1-x*))`` and derivatives at ``x*``, the standard
second term of Laplace's method is

    g''/(2κ) + g' h'''/(2κ²) + g h''''/(8κ²) + 5 g h'''²/(24 κ³)

(e.g. Bender & Orszag, *Advanced Mathematical Methods for Scientists and
Engineers* (1978), §6.4; checked here against Stirling's series for the Beta
function, A&S 6.1.41, in the tests).  ``L`` and ``N`` are exact
:class:`~lowenergy.spectrum.xfunctions.XFunction` s of ``x*``.

If the top-degree part cancels on the saddle for every angle (``L ≡ 0``) the
leading term would mix the next degree with the Gaussian correction; that is
refused as ambiguous (:class:`~lowenergy.errors.InputError`).

Exponentiation: for a family ``I_0, I_1, I_2, ...`` (orders of a small
parameter ε) the ratios ``A_k = I_k/I_0 → E^(d_k - d_0) L_k/L_0``; if
``I_0 (1 + ε A_1 + ε² A_2 + ...) = I_0 exp(ε g_1 + ε² g_2 + ...)`` with each
``g_k`` growing more slowly than ``g_1^k``, the leading parts obey
``A_k = A_1^k/k!`` (METHOD.md §9).  :func:`exponentiation_check` tests these
(or user relations such as ``"A2 = A1^2/2"``) exactly: each relation is
multiplied by a power of ``L_0`` so that no division is needed, and the part
of the highest power of E must vanish.

The domain-specific parts (saddle, Gaussian, quadrature) live in
:class:`IntervalSaddle`; :class:`SphereSaddle` does the same for sphere
integrands ``(1/π) ∫ d²z |z|^(2aS)|1-z|^(2bT) …`` (real saddle ``z* = x*``,
two-dimensional Gaussian, single-valued ``L_w`` at ``z = z̄ = z*``; derived in
its docstring).  :data:`SADDLES` maps the integrand's ``domain`` to the class.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Dict, List, Optional, Sequence, Tuple

import mpmath

from ..errors import InputError, NumericError
from ..integrand.model import Integrand
from ..poly import add as poly_add, mul as poly_mul
from ..zeta.element import MZV
from .xfunctions import XFunction

__all__ = [
    "IntervalSaddle",
    "SphereSaddle",
    "SADDLES",
    "saddle_for",
    "LeadingTerm",
    "leading_term",
    "Relation",
    "parse_relation",
    "default_relations",
    "RelationResult",
    "exponentiation_check",
    "QuadraturePoint",
    "validate_ray",
    "HighEnergyReport",
    "high_energy",
    "DEFAULT_GRID",
]

#: Default angles: x* = 0.1, 0.2, ..., 0.9.
DEFAULT_GRID = tuple(Fraction(k, 10) for k in range(1, 10))


# ---------------------------------------------------------------------------
# the interval saddle
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class IntervalSaddle:
    """The saddle of ``x^(a s)(1-x)^(b t)`` on ``0 < x < 1``.

    ``a``, ``b``: the coefficients of s in the exponent of x and of t in the
    exponent of 1-x, common to every term (``a = b = -1`` for ``x^(-s-1)(1-x)^(-t-1)``).
    """

    a: Fraction
    b: Fraction
    domain: str = "interval"

    # -- geometry ------------------------------------------------------------------
    def saddle_of_direction(self, s, t) -> Fraction:
        """``x* = a s/(a s + b t)`` for a direction (s, t); refuses a saddle outside (0, 1)."""
        s, t = Fraction(s), Fraction(t)
        A, B = self.a * s, self.b * t
        if A <= 0 or B <= 0:
            where = "outside the interval" if A * B < 0 or A + B == 0 else "a minimum, not a maximum"
            raise InputError(
                f"no saddle for the direction s = {s}, t = {t}: x* = a s/(a s + b t) is {where}",
                hint="the interval saddle needs a*s > 0 and b*t > 0, e.g. s < 0 and t < 0 for x^(-s-1)*(1-x)^(-t-1)",
            )
        return A / (A + B)

    def check_saddle(self, xs) -> Fraction:
        xs = Fraction(xs)
        if not 0 < xs < 1:
            raise InputError(f"the saddle x* = {xs} lies outside the interval 0 < x* < 1",
                             hint="choose angles with 0 < x* < 1")
        return xs

    def point(self, xs, E) -> Tuple[Fraction, Fraction]:
        """(s, t) on the ray of angle x* at energy E = a s + b t."""
        xs, E = Fraction(xs), Fraction(E)
        return E * xs / self.a, E * (1 - xs) / self.b

    def energy_of_s(self, xs, s) -> Fraction:
        """E on the ray of angle x* where the first variable equals s."""
        return Fraction(s) * self.a / Fraction(xs)

    def description(self, variables: Tuple[str, str]) -> Dict[str, str]:
        s, t = variables
        a, b = self.a, self.b
        lin_s = _linear_text(a, s)
        lin_t = _linear_text(b, t)
        saddle = (f"x* = {s}/({s} + {t})" if a == b else
                  f"x* = ({lin_s})/({lin_s} + {lin_t})".replace("+ -", "- "))
        return {
            "saddle": saddle,
            "energy": f"E = {lin_s} + {lin_t}".replace("+ -", "- "),
            "factor": "K(E, x*) = x*^(E x*) (1-x*)^(E (1-x*)) sqrt(2 pi x* (1-x*)/E)",
            "form": "I = K(E, x*) * E^degree * (leading + next/E + ...)",
            "at": "x*",
        }

    # -- Laplace's method ----------------------------------------------------------
    def gaussian_correction(self, g: XFunction) -> XFunction:
        """The 1/E term of ``∫ g e^(E h)`` relative to ``K``, exact in x* (see the module docstring)."""
        inv_kappa = XFunction.monomial(1, 1)                      # x(1-x)
        h3 = XFunction.monomial(-2, 0, 2) - XFunction.monomial(0, -2, 2)
        h4 = XFunction.monomial(-3, 0, -6) - XFunction.monomial(0, -3, 6)
        g1 = g.derivative()
        g2 = g1.derivative()
        out = g2 * inv_kappa * Fraction(1, 2)
        out = out + g1 * h3 * inv_kappa ** 2 * Fraction(1, 2)
        out = out + g * h4 * inv_kappa ** 2 * Fraction(1, 8)
        out = out + g * h3 * h3 * inv_kappa ** 3 * Fraction(5, 24)
        return out

    def value_and_correction(self, term: "_SaddleTerm") -> Tuple[XFunction, XFunction]:
        """``(g(x*), Gaussian 1/E correction of g)`` for one term, exact in x*."""
        g = term.g()
        return g, self.gaussian_correction(g)

    # -- the integral itself -------------------------------------------------------
    def check_quadrature(self) -> None:
        """Quadrature on a ray is available on the interval (it converges for a*s, b*t > 0)."""

    def reduced_integral(self, terms: Sequence["_SaddleTerm"], xs: Fraction, E: Fraction,
                         digits: int = 20) -> Tuple[mpmath.mpf, mpmath.mpf]:
        """``I(s, t)/(K(E, x*) E^d)`` on the ray by quadrature, and its error estimate.

        The integrand divided by the peak value is ``exp(A log(x/x*) + B log((1-x)/(1-x*)))``
        times the rest: O(1) numbers.  The interval is split at x* and at
        multiples of the Gaussian width ``sqrt(x*(1-x*)/E)``; the right half is
        integrated in ``y = 1 - x`` so that 1-x is exact near 1 (METHOD.md §3);
        tanh-sinh quadrature (mpmath) on each piece.
        """
        from ..integrand.gnumeric import g_numeric

        s, t = self.point(xs, E)
        d = max(term.degree for term in terms)
        with mpmath.workdps(digits + 10):
            x0 = mpmath.mpf(xs.numerator) / xs.denominator
            y0 = mpmath.mpf((1 - xs).numerator) / (1 - xs).denominator
            e = mpmath.mpf(E.numerator) / E.denominator
            A, B = e * x0, e * y0
            width = mpmath.sqrt(x0 * y0 / e)
            sv = mpmath.mpf(s.numerator) / s.denominator
            tv = mpmath.mpf(t.numerator) / t.denominator
            prefs = []
            for term in terms:
                p = mpmath.mpf(0)
                for (i, j), c in term.prefactor.items():
                    p += _mzv_value(c, digits + 10) * sv ** i * tv ** j
                prefs.append(p / e ** d)
            norm = mpmath.log(2 * mpmath.pi * x0 * y0 / e) / 2

            def f(x, y):
                if x <= 0 or y <= 0:
                    return mpmath.mpf(0)
                lx, ly = mpmath.log(x), mpmath.log(y)
                peak = A * (lx - mpmath.log(x0)) + B * (ly - mpmath.log(y0)) - norm
                total = mpmath.mpf(0)
                for term, p in zip(terms, prefs):
                    if not p:
                        continue
                    val = p * mpmath.exp(peak + term.alpha * lx + term.beta * ly)
                    if term.word:
                        val *= g_numeric(term.word, x, digits + 5, one_minus_x=y)
                    total += val
                return total

            def pieces(centre):
                pts = [mpmath.mpf(0)]
                for k in (12, 6, 3, 1):
                    p = centre - k * width
                    if p > pts[-1]:
                        pts.append(p)
                pts.append(centre)
                return pts

            left = pieces(x0)
            right = pieces(y0)
            val1, err1 = mpmath.quad(lambda x: f(x, 1 - x), left, error=True, maxdegree=8)
            val2, err2 = mpmath.quad(lambda y: f(1 - y, y), right, error=True, maxdegree=8)
            value, error = val1 + val2, err1 + err2
            tol = mpmath.mpf(10) ** (-(digits // 2)) * max(abs(value), mpmath.mpf(10) ** (-digits))
            if error > tol:
                raise NumericError(
                    f"quadrature at x* = {xs}, E = {E} reached only an error of {mpmath.nstr(error, 3)} "
                    f"on {mpmath.nstr(value, 6)}",
                    hint="raise --digits or choose a larger |s|",
                )
            return +value, +error


# ---------------------------------------------------------------------------
# the sphere saddle
# ---------------------------------------------------------------------------

@dataclass(frozen=True)
class SphereSaddle(IntervalSaddle):
    """The saddle of ``|z|^(2 a S)|1-z|^(2 b T)`` on the plane (``(1/π) ∫ d²z``).

    ``a``, ``b``: the coefficients of S in the exponent of ``|z|²`` and of T in
    that of ``|1-z|²`` (``a = b = -1`` for ``abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)``).

    **Saddle.**  With ``A = a S``, ``B = b T`` the exponent is
    ``A log|z|² + B log|1-z|² = Re φ(z)``, ``φ(z) = 2 A log z + 2 B log(1-z)``
    holomorphic, so its critical points are those of ``φ``:
    ``φ'(z) = 2A/z - 2B/(1-z) = 0`` gives ``A(1-z) = B z``, i.e.

        z* = A/(A + B)      (= S/(S + T) for a = b = -1),

    real, and in ``(0, 1)`` exactly when ``A`` and ``B`` have the same sign
    (the interval's ``x*``).  A harmonic exponent has no maximum: ``z*`` is a
    genuine saddle, ``φ(z) ≈ φ(z*) - κ E (z - z*)²`` with ``E = A + B`` and
    ``κ = 1/(z*(1-z*))`` as on the interval, so ``Re φ`` falls along the real
    axis (``z = z* + u``) and rises along the imaginary one (``z = z* + i v``).

    **Gaussian, two-dimensional.**  The plane integral converges only for
    ``Re A > 0``, ``Re B > 0``, ``Re(A + B) < 1``; at large ``|S|, |T|`` it is
    its analytic continuation.  Rotating ``v = ±i w`` (the rotation of
    Kawai, Lewellen & Tye, Nucl. Phys. B 269 (1986)) turns ``z, z̄`` into
    independent real variables ``ξ = u - w``, ``η = u + w`` near ``z*``
    (``d²z = du dv = ±(i/2) dξ dη``), and the integrand factorizes:
    ``|z|^(2A) -> ξ^A η^A`` etc., ``L_w(z) = Σ c_uv G(u; z) G(v; z̄) ->
    Σ c_uv G(u; ξ) G(v; η)`` (:func:`lowenergy.svpolylog.construct.sv_polylog`;
    the G's are analytic near a point of (0, 1)).  Laplace's method in ξ and
    in η (the interval's, once each) gives

        I ≈ i σ · K_sph(E, z*) · E^d · [ L(z*) + N(z*)/E + O(1/E²) ],
        K_sph(E, z*) = z*^(2A) (1-z*)^(2B) · z*(1-z*)/E,

    the two-dimensional Gaussian ``(1/π) · π z*(1-z*)/E``, with
    ``σ = sign(Im E)`` fixed by the direction in which the rotation
    converges; ``L = g(z*, z*)`` (the top-degree prefactor times
    ``|z|^(2α)|1-z|^(2β) L_w`` at ``z = z̄ = z*``: real numbers), and the
    ``1/E`` term of a product ``p(ξ) q(η)`` is ``D[p] q + p D[q]`` with ``D``
    the interval's second Laplace term (:meth:`IntervalSaddle.gaussian_correction`).

    **Where it holds.**  For the flat factor the continuation is
    ``Θ(A, B) · B(A, B)²`` with ``Θ = sin πA sin πB/(π sin π(A+B))``
    (reflection A&S 6.1.17 applied to the Dotsenko–Fateev closed form), and
    ``Θ -> i σ/(2π)`` up to ``O(e^(-2π |Im A|))`` off the real axis: the
    prediction above holds on complex rays ``E = |E| e^(iθ)``, ``0 < |θ| < π``
    (the saddle ``z*`` stays real).  On real rays Θ oscillates and has the
    U-channel poles of ``Γ(1 + S + T)``; there the saddle terms describe the
    integral only up to such factors (for insertions they differ: e.g. for
    ``log|z|²`` by ``π(cot πA - cot π(A+B))``).  Exponentiation checks compare
    orders and are unaffected by the common factor.

    No quadrature check: at large ``|S|, |T|`` the plane integral diverges
    (it is defined by continuation), so :meth:`reduced_integral` refuses;
    the tests validate the saddle terms against the closed forms on complex
    rays (Stirling's series, A&S 6.1.41; digamma asymptotics, A&S 6.3.18).
    """

    domain: str = "sphere"

    def check_saddle(self, xs) -> Fraction:
        xs = Fraction(xs)
        if not 0 < xs < 1:
            raise InputError(f"the saddle z* = {xs} lies outside 0 < z* < 1 on the real axis",
                             hint="choose angles with 0 < z* < 1 (S and T of the same sign for |z|^(-2S-2)|1-z|^(-2T-2))")
        return xs

    def description(self, variables: Tuple[str, str]) -> Dict[str, str]:
        d = super().description(variables)
        d["saddle"] = d["saddle"].replace("x*", "z*")
        d["form"] = "I = i*sign(Im E) * K(E, z*) * E^degree * (leading + next/E + ...) on complex rays E"
        d["factor"] = ("K(E, z*) = z*^(2E z*) (1-z*)^(2E (1-z*)) z* (1-z*)/E (two-dimensional Gaussian; "
                       "on real rays an oscillating factor with the U-channel poles replaces i*sign(Im E)/(2 pi))")
        d["at"] = "z-bar = z*"
        return d

    def value_and_correction(self, term: "_SaddleTerm") -> Tuple[XFunction, XFunction]:
        """``g(z*, z*)`` and ``D_ξ g + D_η g`` at ``ξ = η = z*`` (see the class docstring)."""
        # lazy: a later layer (single-valued polylogarithms)
        from ..svpolylog.construct import sv_polylog

        pairs = sv_polylog(term.word) if term.word else {((), ()): MZV.one()}
        value = XFunction()
        correction = XFunction()
        memo: Dict[Tuple[int, ...], Tuple[XFunction, XFunction]] = {}

        def side(word):
            if word not in memo:
                p = XFunction.monomial(term.alpha, term.beta, 1, word)
                memo[word] = (p, self.gaussian_correction(p))
            return memo[word]

        for (u, v), c in pairs.items():
            if not c:
                continue
            p, dp = side(u)
            q, dq = side(v)
            value = value + (p * q).scale(c)
            correction = correction + (dp * q + p * dq).scale(c)
        return value, correction

    def check_quadrature(self) -> None:
        raise InputError(
            "no quadrature check on the sphere at large |S|, |T|: the plane integral converges only for "
            "Re(a*S) > 0, Re(b*T) > 0, Re(a*S + b*T) < 1 and is its analytic continuation beyond "
            "(with the U-channel poles on real rays)",
            hint="drop --ray for sphere files; the saddle terms are checked against closed forms in the tests")

    def reduced_integral(self, terms, xs, E, digits: int = 20):
        self.check_quadrature()


SADDLES = {"interval": IntervalSaddle, "sphere": SphereSaddle}


def _linear_text(c: Fraction, name: str) -> str:
    if c == 1:
        return name
    if c == -1:
        return f"-{name}"
    return f"{c}*{name}"


def _mzv_value(c, digits: int) -> mpmath.mpf:
    if isinstance(c, MZV):
        if c.is_rational():
            q = c.rational_value()
            return mpmath.mpf(q.numerator) / q.denominator
        return c.numeric(digits)
    q = Fraction(c)
    return mpmath.mpf(q.numerator) / q.denominator


# ---------------------------------------------------------------------------
# one integrand
# ---------------------------------------------------------------------------

@dataclass
class _SaddleTerm:
    prefactor: Dict[Tuple[int, int], MZV]   # {(i, j): c} for c s^i t^j
    alpha: int
    beta: int
    word: Tuple[int, ...]

    @property
    def degree(self) -> int:
        return max(i + j for (i, j) in self.prefactor)

    def g(self) -> XFunction:
        return XFunction.monomial(self.alpha, self.beta, 1, self.word)


def saddle_for(integrands: Sequence[Integrand]) -> IntervalSaddle:
    """The saddle shared by a family of integrands; refuses mismatches.

    All files must use the same variable names and integration variable,
    have no free parameters, live on the same domain, and every term must
    carry ``x^(α + a s) (1-x)^(β + b t)`` with one ``a`` and one ``b``.
    """
    if not integrands:
        raise InputError("no integrand given")
    first = integrands[0]
    a = b = None
    domain0 = getattr(first, "domain", "interval")
    for itg in integrands:
        domain = getattr(itg, "domain", "interval")
        if domain not in SADDLES:
            raise InputError(f"no saddle-point analysis for the domain {domain!r} yet", source=itg.source,
                             hint="the interval (0 < x < 1) and the sphere are supported")
        if domain != domain0:
            raise InputError(f"the domains differ between the files: {domain0} in {first.source} but "
                             f"{domain} in {itg.source}", source=itg.source,
                             hint="every file of the family must be an interval or every one a sphere integrand")
        if tuple(itg.variables) != tuple(first.variables) or itg.integration_variable != first.integration_variable:
            raise InputError(
                f"the variables differ between the files: {list(first.variables)} "
                f"(integration variable {first.integration_variable}) in {first.source} but "
                f"{list(itg.variables)} (integration variable {itg.integration_variable}) in {itg.source}",
                source=itg.source, hint="use the same variable names in every file of the family")
        if itg.parameters:
            raise InputError(f"free parameters {list(itg.parameters)}: the high-energy and spectrum checks need numbers",
                             source=itg.source, hint="give their values (command line: --set NAME=VALUE; library: "
                             "lowenergy.constraints.fix.substitute) or fix them first with `lowenergy fix ... --write`")
        s, t = itg.variables
        xn = itg.integration_variable
        for term in itg.terms:
            for what, e, want_var, name in (("x", term.x_exp, 0, s), ("1-x", term.y_exp, 1, t)):
                label = xn if what == "x" else f"(1-{xn})"
                if domain0 == "sphere":
                    label = f"abs({label.strip('()')})"
                if e.var != want_var:
                    raise InputError(
                        f"the exponent of {label} has no {name} in it, so the term has no fixed-angle saddle"
                        if e.var is None else f"the exponent of {label} contains the wrong variable",
                        source=itg.source, line=term.source_line, term=term.text,
                        hint=f"every term needs {xn}^(... {s} ...) and (1-{xn})^(... {t} ...), "
                        f"e.g. {xn}^(-{s}-1)*(1-{xn})^(-{t}-1)")
            if a is None:
                a, b = term.x_exp.coeff, term.y_exp.coeff
            elif (term.x_exp.coeff, term.y_exp.coeff) != (a, b):
                raise InputError(
                    "the terms have different Koba-Nielsen exponents "
                    f"({xn}^({a}*{s}) (1-{xn})^({b}*{t}) and {xn}^({term.x_exp.coeff}*{s}) "
                    f"(1-{xn})^({term.y_exp.coeff}*{t})): there is no common saddle",
                    source=itg.source, line=term.source_line, term=term.text,
                    hint="all terms (and files) must share the s- and t-dependence of the exponents")
    if a is None:
        raise InputError("the integrands are zero", source=first.source)
    return SADDLES[domain0](Fraction(a), Fraction(b))


def _saddle_terms(itg: Integrand) -> List[_SaddleTerm]:
    out = []
    for term in itg.terms:
        pref = {(k[0], k[1]): c for k, c in term.coefficient.items() if c}
        if pref:
            out.append(_SaddleTerm(pref, term.x_exp.shift, term.y_exp.shift, tuple(term.word)))
    return out


def _prefactor_on_ray(pref: Dict[Tuple[int, int], MZV], degree: int, sad: IntervalSaddle) -> XFunction:
    """``P_degree(x*/a, (1-x*)/b)``: the degree part of P on the ray, per E^degree."""
    out = XFunction()
    for (i, j), c in pref.items():
        if i + j == degree:
            out = out + XFunction.monomial(i, j, c * (Fraction(1) / sad.a ** i) * (Fraction(1) / sad.b ** j))
    return out


@dataclass
class LeadingTerm:
    """``I ≈ K(E, x*) E^degree [leading + next/E]`` for one integrand (see the module docstring)."""

    source: str
    degree: int
    leading: XFunction
    next: XFunction
    terms: list = field(repr=False, default_factory=list)

    def values(self, xs, digits: int = 20) -> Tuple[mpmath.mpf, mpmath.mpf]:
        return self.leading.numeric(xs, digits), self.next.numeric(xs, digits)


def leading_term(itg: Integrand, saddle: Optional[IntervalSaddle] = None) -> LeadingTerm:
    """The exact leading and next-to-leading saddle terms of one integrand."""
    sad = saddle or saddle_for([itg])
    terms = _saddle_terms(itg)
    if not terms:
        raise InputError("the integrand is zero", source=itg.source)
    d = max(t.degree for t in terms)
    lead = XFunction()
    nxt = XFunction()
    for term in terms:
        top = _prefactor_on_ray(term.prefactor, d, sad)
        below = _prefactor_on_ray(term.prefactor, d - 1, sad) if d >= 1 else XFunction()
        if not top and not below:
            continue
        g, correction = sad.value_and_correction(term)
        if top:
            lead = lead + top * g
            nxt = nxt + top * correction
        if below:
            nxt = nxt + below * g
    if not lead:
        s, t = itg.variables
        raise InputError(
            f"the degree-{d} part of the prefactor cancels on the saddle for every angle, so the leading term "
            f"would mix the degree-{d - 1} part with the Gaussian corrections: ambiguous",
            source=itg.source,
            hint=f"write the integrand so that its top-degree part in {s}, {t} does not vanish at "
            f"x* (e.g. integrate the total derivative by parts)")
    return LeadingTerm(itg.source, d, lead, nxt, terms)


# ---------------------------------------------------------------------------
# relations between orders
# ---------------------------------------------------------------------------

@dataclass
class Relation:
    """``lhs = rhs`` between the ratios ``A1, A2, ...``; ``poly`` is lhs - rhs as
    ``{exponents of (A1, A2, ...): MZV}``; ``monomials``: those of lhs and rhs before cancelling."""

    text: str
    poly: Dict[Tuple[int, ...], MZV]
    monomials: Tuple[Tuple[int, ...], ...]


def parse_relation(text: str, orders: int, source: str = "--relation") -> Relation:
    """Parse ``"A2 = A1^2/2"`` (names ``A1 ... A<orders>``; numbers, ``zeta(...)``,
    ``+ - *``, division by numbers, non-negative integer powers); never evaluated as code.

    >>> r = parse_relation("A2 = A1^2/2", 2)
    >>> sorted((k, str(v)) for k, v in r.poly.items())
    [((0, 1), '1'), ((2, 0), '-1/2')]
    """
    from ..parse import Call, Num, Rules, Sym, evaluate, parse_expression, to_text
    from ..zeta.expression import evaluate_tree

    if not isinstance(text, str) or text.count("=") != 1:
        raise InputError(f"a relation has exactly one '=', got {text!r}", source=source, term=str(text)[:60],
                         hint='write e.g. "A2 = A1^2/2"')
    lhs_text, rhs_text = text.split("=")
    zero = (0,) * orders

    class RelationRules(Rules):
        def leaf(self, node):
            if isinstance(node, Num):
                return {zero: MZV.rational(node.value)}
            if isinstance(node, Sym):
                name = node.name
                if name.startswith("A") and name[1:].isdigit() and 1 <= int(name[1:]) <= orders:
                    k = int(name[1:])
                    return {tuple(1 if i == k - 1 else 0 for i in range(orders)): MZV.one()}
                raise InputError(f"unknown name {name!r} in the relation", source=source, term=name,
                                 hint=f"the names are A1 ... A{orders} (order k over order 0)")
            if isinstance(node, Call) and node.name == "zeta":
                return {zero: evaluate_tree(node)}
            if isinstance(node, Call):
                raise InputError(f"not allowed in a relation: {to_text(node)!r}", source=source,
                                 term=to_text(node)[:60], hint="use A1, A2, ..., numbers, zeta(...), + - * / ^")
            return None

        def neg(self, value, node):
            return {k: -v for k, v in value.items()}

        def add(self, a, b, node, k):
            return poly_add(a, b)

        def sub(self, a, b, node, k):
            return poly_add(a, b, -1)

        def mul(self, a, b, node, k):
            return poly_mul(a, b)

        def div(self, a, den, node, k):
            if set(den) - {zero} or not den or not den[zero].is_rational() or not den[zero]:
                raise InputError("division only by non-zero rational numbers in a relation", source=source,
                                 term=to_text(node.prefix(k))[:60], hint="multiply the relation through instead")
            q = den[zero].rational_value()
            return {key: v * (1 / q) for key, v in a.items()}

        def power(self, base, ex, node):
            if set(ex) - {zero} or (ex and not ex[zero].is_rational()):
                raise InputError("powers must be non-negative integers", source=source, term=to_text(node)[:60])
            q = ex[zero].rational_value() if ex else Fraction(0)
            if q.denominator != 1 or q < 0 or q > 32:
                raise InputError("powers must be integers from 0 to 32", source=source, term=to_text(node)[:60])
            out = {zero: MZV.one()}
            for _ in range(int(q)):
                out = poly_mul(out, base)
            return out

    def evaluate_part(part: str):
        return evaluate(parse_expression(part.strip(), source=source), RelationRules())

    lhs, rhs = evaluate_part(lhs_text), evaluate_part(rhs_text)
    monos = tuple(sorted(set(lhs) | set(rhs)))
    return Relation(text.strip(), poly_add(lhs, rhs, -1), monos)


def default_relations(orders: int) -> List[Relation]:
    """``A_k = A_1^k/k!`` for k = 2..orders (exponentiation of the first correction)."""
    return [parse_relation(f"A{k} = A1^{k}/{math.factorial(k)}", orders, source="default") for k in range(2, orders + 1)]


@dataclass
class RelationResult:
    """One relation on the saddle.

    ``degree``: the highest power of E among its monomials; ``power``: the
    power M of ``L_0`` it was multiplied by; ``residual``: exact
    ``L_0^M · (lhs - rhs)`` at that power of E (an XFunction of x*), or
    ``residual/L_0^M`` when L_0 is a rational function (``divided``);
    ``grid``: ``{x*: (residual, scale)}`` numerically, residual of ``lhs - rhs``
    itself and the size of its largest monomial.
    """

    relation: Relation
    degree: int
    power: int
    residual: XFunction
    divided: bool
    grid: Dict[Fraction, Tuple[mpmath.mpf, mpmath.mpf]] = field(default_factory=dict)

    @property
    def holds(self) -> bool:
        return not self.residual


def exponentiation_check(leading: Sequence[LeadingTerm], relations: Optional[Sequence[Relation]] = None,
                         grid: Sequence = DEFAULT_GRID, digits: int = 20) -> List[RelationResult]:
    """Check relations between the leading saddle terms of orders 0, 1, 2, ...

    ``A_k = E^(d_k - d_0) L_k/L_0``; default relations :func:`default_relations`.
    """
    orders = len(leading) - 1
    if orders < 1:
        raise InputError("the exponentiation check needs at least two files (order 0 and order 1)")
    rels = list(relations) if relations is not None else default_relations(orders)
    L0 = leading[0].leading
    e = [lt.degree - leading[0].degree for lt in leading]
    out = []
    for rel in rels:
        degs = {m: sum(mk * e[k + 1] for k, mk in enumerate(m)) for m in rel.monomials}
        M = max((sum(m) for m in rel.monomials), default=0)
        D = max(degs.values(), default=0)
        res = XFunction()
        for m, c in rel.poly.items():
            if degs.get(m, sum(mk * e[k + 1] for k, mk in enumerate(m))) != D:
                continue
            term = XFunction.constant(c) * L0 ** (M - sum(m))
            for k, mk in enumerate(m):
                if mk:
                    term = term * leading[k + 1].leading ** mk
            res = res + term
        divided = False
        if L0.is_rational_function() and len(L0.parts[()][2]) == 1 and L0.parts[()][2][0].is_rational():
            res = res * (L0.inverse_monomial() ** M)
            divided = True
        result = RelationResult(rel, D, M, res, divided)
        for xs in grid:
            xs = Fraction(xs)
            l0 = L0.numeric(xs, digits)
            vals = [lt.leading.numeric(xs, digits) / l0 for lt in leading[1:]]
            scale = mpmath.mpf(0)
            for m in rel.monomials:
                if degs[m] != D:
                    continue
                mag = mpmath.mpf(1)
                for k, mk in enumerate(m):
                    mag *= abs(vals[k]) ** mk
                scale = max(scale, mag)
            r = res.numeric(xs, digits) if divided else res.numeric(xs, digits) / l0 ** M
            result.grid[xs] = (r, scale)
        out.append(result)
    return out


# ---------------------------------------------------------------------------
# validation along a ray
# ---------------------------------------------------------------------------

@dataclass
class QuadraturePoint:
    """One energy on the ray: ``ratio = I/(K E^d L)`` and the Laplace prediction ``1 + N/(L E)``."""

    energy: Fraction
    s: Fraction
    t: Fraction
    reduced: mpmath.mpf          # I/(K E^d)
    error: mpmath.mpf
    ratio: mpmath.mpf            # reduced / L
    predicted: mpmath.mpf        # 1 + N/(L E)


def validate_ray(itg: Integrand, lt: LeadingTerm, xs, s_values: Sequence, saddle: Optional[IntervalSaddle] = None,
                 digits: int = 20) -> List[QuadraturePoint]:
    """Quadrature of the integral on the ray of angle x* at the given values of the first variable."""
    sad = saddle or saddle_for([itg])
    sad.check_quadrature()
    xs = sad.check_saddle(xs)
    L = lt.leading.numeric(xs, digits)
    N = lt.next.numeric(xs, digits)
    if L == 0:
        raise InputError(f"the leading term vanishes at x* = {xs}; choose another angle", source=itg.source)
    out = []
    for sval in s_values:
        E = sad.energy_of_s(xs, Fraction(sval))
        if E <= 0:
            raise InputError(f"s = {sval} is not on the ray of x* = {xs} (E = {E} ≤ 0)",
                             hint="the interval saddle needs a*s > 0: e.g. s < 0 for x^(-s-1)")
        s, t = sad.point(xs, E)
        red, err = sad.reduced_integral(lt.terms, xs, E, digits)
        with mpmath.workdps(digits):
            ev = mpmath.mpf(E.numerator) / E.denominator
            out.append(QuadraturePoint(E, s, t, red, err, red / L, 1 + N / (L * ev)))
    return out


# ---------------------------------------------------------------------------
# the whole check
# ---------------------------------------------------------------------------

@dataclass
class HighEnergyReport:
    saddle: IntervalSaddle
    variables: Tuple[str, str]
    xname: str
    leading: List[LeadingTerm]
    grid: List[Fraction]
    relations: List[RelationResult]
    rays: Dict[int, List[QuadraturePoint]] = field(default_factory=dict)
    ray_angle: Optional[Fraction] = None
    digits: int = 15

    @property
    def ok(self) -> bool:
        return all(r.holds for r in self.relations)

    def grid_rows(self) -> List[Dict[str, object]]:
        rows = []
        for k, lt in enumerate(self.leading):
            for xs in self.grid:
                L, N = lt.values(xs, self.digits + 5)
                base = self.leading[0].leading.numeric(xs, self.digits + 5)
                s, t = self.saddle.point(xs, 1)
                rows.append({
                    "order": k, "file": lt.source, "x*": _frac_text(xs), "s/t": _frac_text(s / t),
                    "degree": lt.degree, "leading": _num(L, self.digits), "next": _num(N, self.digits),
                    "ratio_to_order0": _num(L / base, self.digits),
                })
        return rows

    def exact_rows(self) -> List[Dict[str, object]]:
        return [{"order": k, "file": lt.source, "degree": lt.degree,
                 "leading": lt.leading.text(self.xname), "next": lt.next.text(self.xname)}
                for k, lt in enumerate(self.leading)]

    def relation_rows(self) -> List[Dict[str, object]]:
        rows = []
        for r in self.relations:
            for xs, (res, scale) in r.grid.items():
                rows.append({"relation": r.relation.text, "x*": _frac_text(xs), "degree": r.degree,
                             "residual": _num(res, self.digits), "scale": _num(scale, self.digits),
                             "exact": "0" if r.holds else (r.residual.text(self.xname) if r.divided else
                                                          f"({r.residual.text(self.xname)})/L0^{r.power}"),
                             "status": "holds" if r.holds else "FAILS"})
        return rows

    def ray_rows(self) -> List[Dict[str, object]]:
        rows = []
        for k, pts in self.rays.items():
            for p in pts:
                rows.append({"order": k, "x*": _frac_text(self.ray_angle), "E": _frac_text(p.energy),
                             "s": _frac_text(p.s), "t": _frac_text(p.t),
                             "ratio": _num(p.ratio, self.digits), "predicted": _num(p.predicted, self.digits),
                             "E*(ratio-1)": _num((p.ratio - 1) * p.energy, self.digits),
                             "quad_error": mpmath.nstr(p.error, 3)})
        return rows

    def to_dict(self) -> Dict[str, object]:
        return {"variables": list(self.variables), **self.saddle.description(self.variables),
                "form": self.saddle.description(self.variables)["form"].replace("...", "O(1/E^2)")
                + f", functions at {self.xname} = {self.saddle.description(self.variables)['at']}",
                "exact": self.exact_rows(), "grid": self.grid_rows(),
                "relations": [{"relation": r.relation.text, "degree": r.degree, "holds": r.holds,
                               "exact_residual": "0" if r.holds else r.residual.text(self.xname),
                               "multiplied_by": None if r.divided else f"L0^{r.power}"} for r in self.relations],
                "relation_grid": self.relation_rows(), "ray": self.ray_rows()}

    def to_text(self) -> str:
        d = self.saddle.description(self.variables)
        lines = [f"saddle: {d['saddle']};  {d['energy']};  {d['form']}",
                 f"        {d['factor']}; functions below at {self.xname} = {d['at']}"]
        for row in self.exact_rows():
            lines.append(f"order {row['order']} ({row['file']}): degree {row['degree']}")
            lines.append(f"  leading = {row['leading']}")
            lines.append(f"  next    = {row['next']}")
        lines.append("")
        lines.append(_table(self.grid_rows(), ["order", "x*", "s/t", "degree", "leading", "next", "ratio_to_order0"]))
        for r in self.relations:
            status = "holds exactly" if r.holds else "FAILS"
            lines.append("")
            lines.append(f"relation {r.relation.text}: {status} (leading power E^{r.degree})")
            if not r.holds:
                ex = r.residual.text(self.xname)
                lines.append(f"  exact residual = {ex}" if r.divided else f"  exact residual * L0^{r.power} = {ex}")
                worst = max(r.grid.items(), key=lambda kv: abs(kv[1][0]), default=None)
                if worst:
                    lines.append(f"  largest |residual| on the grid: {_num(worst[1][0], 6)} at x* = {_frac_text(worst[0])}")
        if self.rays:
            lines.append("")
            lines.append(f"quadrature on the ray x* = {_frac_text(self.ray_angle)}: ratio = I/(K E^d leading) "
                         "-> predicted = 1 + next/(leading E)")
            lines.append(_table(self.ray_rows(), ["order", "E", "s", "t", "ratio", "predicted", "E*(ratio-1)"]))
        return "\n".join(lines)

    def write(self, path, fmt: Optional[str] = None) -> None:
        """Grid, relation and ray rows in one table (CSV) or all of :meth:`to_dict` (JSON)."""
        from pathlib import Path
        import json

        from ..tables.export import _atomic_write
        from .residues import write_rows

        fmt = (fmt or Path(path).suffix.lstrip(".")).lower()
        if fmt == "json":
            _atomic_write(path, json.dumps(self.to_dict(), indent=1, ensure_ascii=False) + "\n")
            return
        rows = []
        for r in self.exact_rows():
            rows.append({"table": "exact", **r})
        for r in self.grid_rows():
            rows.append({"table": "grid", **r})
        for r in self.relation_rows():
            rows.append({"table": "relation", **r})
        for r in self.ray_rows():
            rows.append({"table": "ray", **r})
        cols: List[str] = []
        for r in rows:
            for c in r:
                if c not in cols:
                    cols.append(c)
        write_rows(rows, path, fmt, columns=cols)


def _frac_text(q: Fraction) -> str:
    return str(q.numerator) if q.denominator == 1 else f"{q.numerator}/{q.denominator}"


def _num(v, digits: int) -> str:
    with mpmath.workdps(digits + 5):
        return mpmath.nstr(v, digits)


def _table(rows: List[Dict[str, object]], cols: Sequence[str]) -> str:
    widths = {c: max([len(c)] + [len(str(r.get(c, ""))) for r in rows]) for c in cols}
    out = ["  ".join(c.rjust(widths[c]) for c in cols)]
    for r in rows:
        out.append("  ".join(str(r.get(c, "")).rjust(widths[c]) for c in cols))
    return "\n".join(out)


def high_energy(integrands: Sequence[Integrand], *, grid: Sequence = DEFAULT_GRID,
                relations: Optional[Sequence[str]] = None, ray: Optional[Fraction] = None,
                s_values: Sequence = (), digits: int = 15) -> HighEnergyReport:
    """Leading saddle terms of each file, relations between them, optional quadrature on one ray."""
    sad = saddle_for(integrands)
    if ray is not None and s_values:
        sad.check_quadrature()
    grid = [sad.check_saddle(x) for x in grid]
    lts = [leading_term(itg, sad) for itg in integrands]
    orders = len(lts) - 1
    if relations:
        rels = [parse_relation(r, orders) for r in relations]
        results = exponentiation_check(lts, rels, grid, digits + 5)
    elif orders >= 2:
        results = exponentiation_check(lts, None, grid, digits + 5)
    else:
        results = []
    report = HighEnergyReport(sad, tuple(integrands[0].variables), integrands[0].integration_variable,
                              lts, grid, results, digits=digits)
    if ray is not None and s_values:
        report.ray_angle = sad.check_saddle(ray)
        for k, (itg, lt) in enumerate(zip(integrands, lts)):
            report.rays[k] = validate_ray(itg, lt, report.ray_angle, s_values, sad, digits + 5)
    return report
