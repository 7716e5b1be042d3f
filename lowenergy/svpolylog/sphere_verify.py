"""Numerical verification of sphere expansions: 2D quadrature against the series.

``verify_sphere(integrand, expansion, point)`` integrates
``(1/π) ∫_C d²z |z|^(2A) |1-z|^(2B) F(z)`` numerically at a point of the
convergent region (S < 0, T < 0, S + T > -1 for the usual exponents),
independently of the engine's algebra (no regularized values, no sv map):

* the plane is split into the three regions where |z|, |1-z| or 1 is the
  smallest of the three; ``z -> 1-z`` and ``z -> 1/z`` (``d²(1/w) = d²w/|w|^4``)
  map the last two onto ``R0 = {|z| < 1, Re z < 1/2}``, so
  ``∫_C g = ∫_R0 [g(w) + g(1-w) + g(1/w)/|w|^4]``; the behaviour at 0, 1, ∞ all
  sits at ``w = 0``;
* ``R0`` is integrated in polar coordinates around 0 (θ split at the corner
  π/3; ``r = ρ(θ) u^q``) with the tanh-sinh rule (Takahasi & Mori 1974) on
  both axes, which absorbs the algebraic and logarithmic singularity at
  ``u = 0``.  A piece behaving as ``r^(α-1) dr`` at 0 gets ``q = min(1/α, 2)``:
  ``q = 1/α`` would make the u-integrand bounded, but for small α (small
  |S|, |T|) it squeezes all variation of the rest of the integrand into a
  layer of width ~α at ``u = 1``; with ``q ≤ 2`` the singularity
  ``u^(qα-1)`` stays at the end point, where the rule's nodes reach far
  enough (the range of t is chosen from ``qα``).  Measured on
  ``L_01 + L_10`` at S = -0.02, T = -0.03, level 3: error estimate 9e-4
  with ``q = 1/α``, 7e-7 with ``q ≤ 2``;
  the upper half ``0 < θ < π`` is used with ``g(z) + g(z̄)``;
* ``L_w`` at ``w``, ``1 - w``, ``1/w`` comes from
  :class:`~lowenergy.svpolylog.planar.PlaneValues` (series in ``-log(1 - w)``
  on R0, transported by ``z -> 1 - z``, ``z -> 1/z`` with the regularized
  values at 1 and ∞); ``L_w(z̄) = conj L_w(z)``; words ``0^n``, ``1^n`` are
  ``log^n|z|²/n!``, ``log^n|1-z|²/n!`` directly.

The quadrature error is estimated from the rule with the double step (its
nodes are a subset).  The series is the truncated Laurent series including
the U-channel rows.
"""

from __future__ import annotations

import time
from fractions import Fraction
from typing import Dict, List, Mapping, Tuple

import mpmath

from ..errors import InputError, NumericError
from ..expansion.result import Expansion
from ..expansion.verify import VerifyReport, _resolve_point, series_value
from ..integrand.model import Integrand
from .planar import PlaneValues

__all__ = ["verify_sphere", "sphere_integral"]

Word = Tuple[int, ...]
#: Largest power q in the radial map ``r = ρ u^q`` (see :func:`sphere_integral`).
_MAX_RADIAL_POWER = 2


def _de_nodes(h: mpmath.mpf, tmax: float, a, b) -> List[Tuple[mpmath.mpf, mpmath.mpf, int]]:
    """tanh-sinh nodes on [a, b]: (x, weight, k) with t = k h."""
    out = []
    n = int(tmax / h)
    for k in range(-n, n + 1):
        t = k * h
        u = mpmath.pi / 2 * mpmath.sinh(t)
        w = mpmath.pi / 2 * mpmath.cosh(t) / mpmath.cosh(u) ** 2 * h * (b - a) / 2
        x = a + (b - a) / (mpmath.exp(-2 * u) + 1)
        out.append((x, w, k))
    return out


def _log_moduli(w: mpmath.mpc, piece: int) -> Tuple[mpmath.mpf, mpmath.mpf]:
    """``(log|z|², log|1-z|²)`` at ``z = (w, 1 - w, 1/w)[piece]``, from ``|w|``
    and ``|1 - w|`` only.

    Forming ``z = 1 - w`` first and then ``1 - z`` loses ``Re w`` once
    ``|w|`` is below the working precision (the nodes reach ``|w| ~ 1e-300``),
    leaving ``|1 - z| = |Im w|``; near ``θ = 0`` that was wrong by the factor
    ``sin(θ)^(2B)`` and ruined the integral at small ``|T|``.
    """
    a = 2 * mpmath.log(abs(w))
    b = 2 * mpmath.log(abs(1 - w))
    if piece == 0:
        return a, b
    if piece == 1:
        return b, a
    return -a, b - a


class _LValues:
    """``L_w`` at the images ``w``, ``1 - w``, ``1/w`` of a node ``w ∈ R0``."""

    def __init__(self, words: List[Word], digits: int) -> None:
        self.words = words
        self.genuine = [w for w in words if len(set(w)) > 1]
        n = max((len(w) for w in self.genuine), default=0)
        self.plane = PlaneValues(n, digits) if self.genuine else None

    def at(self, w: mpmath.mpc, piece: int) -> Dict[Word, mpmath.mpc]:
        """``L_v(z)`` for all words, ``z = (w, 1 - w, 1/w)[piece]``;
        ``L_v(z̄) = conj L_v(z)``."""
        l0, l1 = _log_moduli(w, piece)
        out: Dict[Word, mpmath.mpc] = {}
        if self.plane is not None:
            out.update(self.plane.images(w, self.genuine, which=(piece,))[piece])
        for v in self.words:
            if len(set(v)) <= 1:
                out[v] = mpmath.mpc((l0 if (v and v[0] == 0) else l1) ** len(v) / mpmath.factorial(len(v)) if v else 1)
        return out


def _condition_text(const: Fraction, coeffs: Dict[str, Fraction]) -> str:
    """``const + Σ c_v v > 0`` written as a readable inequality."""
    coeffs = {v: c for v, c in coeffs.items() if c}
    if not coeffs:
        return "true" if const > 0 else "false"
    flip = all(c < 0 for c in coeffs.values())
    sign = -1 if flip else 1
    parts = []
    for v, c in coeffs.items():
        c = sign * c
        mag = "" if abs(c) == 1 else f"{abs(c)}*"
        if not parts:
            parts.append(("-" if c < 0 else "") + mag + v)
        else:
            parts.append(("- " if c < 0 else "+ ") + mag + v)
    return f"{' '.join(parts)} {'<' if flip else '>'} {sign * -const}"


def convergence_region(integrand: Integrand) -> str:
    r"""The region where every term of a sphere integrand converges, as text.

    A term ``|z|^(2A) |1-z|^(2B) L_w`` converges at 0, 1 and ∞ when
    ``A > -1``, ``B > -1`` and ``A + B < -1`` (the logarithms of L_w do
    not change this).

    >>> from lowenergy.integrand.reader import integrand_from_text
    >>> head = 'domain = "sphere"\nvariables = ["S", "T"]\n'
    >>> convergence_region(integrand_from_text(head + 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"'))
    'the integral converges for S < 0, T < 0, S + T > -1'
    >>> convergence_region(integrand_from_text(head + 'integrand = "abs(z)^(-2*S)*abs(1-z)^(-2*T)"'))
    'the integral converges for S < 1, T < 1, S + T > 1'
    """
    names = list(integrand.variables)
    conditions: List[str] = []

    def form(*exps) -> Tuple[Fraction, Dict[str, Fraction]]:
        const, coeffs = Fraction(0), {}
        for sign, e in exps:
            const += sign * e.shift
            if e.var is not None:
                coeffs[names[e.var]] = coeffs.get(names[e.var], Fraction(0)) + sign * e.coeff
        return const, coeffs

    for t in integrand.terms:
        # A + 1 > 0, B + 1 > 0, -A - B - 1 > 0
        for (const, coeffs), offset in ((form((1, t.x_exp)), 1), (form((1, t.y_exp)), 1),
                                        (form((-1, t.x_exp), (-1, t.y_exp)), -1)):
            text = _condition_text(const + offset, coeffs)
            if text not in conditions and text != "true":
                conditions.append(text)
    if "false" in conditions:
        return "no point: one term diverges for all values of the variables (the integral exists only by analytic continuation)"
    return "the integral converges for " + ", ".join(conditions)


def sphere_integral(integrand: Integrand, point: Mapping, digits: int = 12, level: int = 3):
    """``(value, error estimate, seconds)`` of the sphere integral at a point.

    ``level`` sets the tanh-sinh step ``h = 2^-level`` (the error estimate
    compares with ``2h``).
    """
    if getattr(integrand, "domain", "interval") != "sphere":
        raise InputError("sphere_integral needs a sphere integrand")
    t0 = time.perf_counter()
    with mpmath.workdps(digits + 10):
        values = _resolve_point(integrand.variables, integrand.parameters, point)
        words = sorted({t.word for t in integrand.terms})
        lv = _LValues(words, digits + 10)
        terms = []
        for t in integrand.terms:
            c = mpmath.mpf(0)
            for key, x in t.coefficient.items():
                m = mpmath.mpf(x.numeric(digits + 10))
                for v, e in zip(values, key):
                    if e:
                        m *= v ** e
                c += m
            A = t.x_exp.shift + (t.x_exp.coeff * values[t.x_exp.var] if t.x_exp.var is not None else 0)
            B = t.y_exp.shift + (t.y_exp.coeff * values[t.y_exp.var] if t.y_exp.var is not None else 0)
            terms.append((c, mpmath.mpf(A), mpmath.mpf(B), t.word))

        def g_pair(w, piece):
            """g(z) + g(z̄) at z = (w, 1 - w, 1/w)[piece]."""
            L = lv.at(w, piece)
            l0, l1 = _log_moduli(w, piece)
            tot = mpmath.mpc(0)
            for c, A, B, word in terms:
                f = mpmath.exp(A * l0 + B * l1)
                tot += c * f * 2 * mpmath.re(L[word])
            return tot

        # the three pieces: w, 1-w, 1/w (with d²(1/w) = d²w/|w|^4) and their
        # power of |w| at w = 0: r^(alpha-1) dr with alpha = 2*exponent + 2
        pieces = [
            (0, min(2 * A + 2 for _, A, _, _ in terms), 0),
            (1, min(2 * B + 2 for _, _, B, _ in terms), 0),
            (2, min(-2 * A - 2 * B - 2 for _, A, B, _ in terms), 4),
        ]
        for _, alpha, _ in pieces:
            if alpha <= 0:
                raise NumericError(
                    "the point lies outside the region where the sphere integral converges",
                    hint=convergence_region(integrand),
                )
        h = mpmath.mpf(2) ** -level
        qs = [min(1 / alpha, _MAX_RADIAL_POWER) for _, alpha, _ in pieces]
        lowest = min(q * alpha for q, (_, alpha, _) in zip(qs, pieces))
        tmax = float(mpmath.log((digits + 5) * mpmath.log(10) / (lowest * mpmath.pi / 2)))
        un = _de_nodes(h, max(tmax, 3.2), mpmath.mpf(0), mpmath.mpf(1))
        third = mpmath.pi / 3
        tn = _de_nodes(h, 3.2, mpmath.mpf(0), third) + _de_nodes(h, 3.2, third, mpmath.pi)
        fine = mpmath.mpc(0)
        coarse = mpmath.mpc(0)
        for th, wt, kt in tn:
            c, s = mpmath.cos(th), mpmath.sin(th)
            rho = 1 / (2 * c) if c > mpmath.mpf(1) / 2 else mpmath.mpf(1)
            for u, wu, ku in un:
                if u == 0 or wt * wu * u ** (lowest - 1) < mpmath.mpf(10) ** -(digits + 12):
                    continue
                contrib = mpmath.mpc(0)
                for (piece, alpha, power), q in zip(pieces, qs):
                    # r = rho u^q: r dr = q rho^2 u^(2q - 1) du
                    r = rho * u ** q
                    w = mpmath.mpc(r * c, r * s)
                    val = g_pair(w, piece)
                    if power:
                        val = val / r ** power
                    contrib += val * rho ** 2 * q * u ** (2 * q - 1)
                contrib *= wt * wu
                fine += contrib
                if kt % 2 == 0 and ku % 2 == 0:
                    coarse += 4 * contrib
        value = fine / mpmath.pi
        err = abs(fine - coarse) / mpmath.pi
        if abs(value.imag) > max(err * 10, mpmath.mpf(10) ** -(digits // 2)):
            raise NumericError(f"the sphere integral has an imaginary part {mpmath.nstr(value.imag, 3)}",
                               hint="the integrand should be real after integration; check the point")
        return +value.real, +err, time.perf_counter() - t0


def verify_sphere(integrand: Integrand, expansion: Expansion, point: Mapping, digits: int = 12,
                  safety: float = 10.0, level: int = 3) -> VerifyReport:
    """Compare a sphere expansion with the 2D quadrature at one point (see the module docstring)."""
    value, qerr, seconds = sphere_integral(integrand, point, digits, level)
    series, sums = series_value(expansion, point, digits)
    with mpmath.workdps(digits + 10):
        vals = _resolve_point(expansion.variables, expansion.parameters, point)
        S, T, params = vals[0], vals[1], vals[2:]
        U = -S - T
        for (i, k), pp in getattr(expansion, "u_poles", {}).items():
            c = mpmath.mpf(0)
            for pe, x in pp.items():
                m = mpmath.mpf(x.numeric(digits + 10))
                for pv, e in zip(params, pe):
                    if e:
                        m *= pv ** e
                c += m
            term = c * S ** i * U ** k
            series += term
            sums[i + k] = sums.get(i + k, 0) + term
        N = expansion.order
        zero = mpmath.mpf(0)
        trunc = max(abs(sums.get(N, zero)), abs(sums.get(N - 1, zero)))
        qerr = max(qerr, mpmath.mpf(10) ** (-digits) * abs(value))
        diff = series - value
        scale = abs(value) or mpmath.mpf(1)
        agree = float(digits) if diff == 0 else max(0.0, min(float(digits), -float(mpmath.log10(abs(diff) / scale))))
        consistent = bool(abs(diff) <= safety * trunc + qerr)
    return VerifyReport(
        point=dict(point), quadrature=value, series=series, difference=diff, truncation_estimate=trunc,
        quadrature_error=qerr, digits_agreement=agree, consistent=consistent, order=N, digits=digits,
        safety=safety, details={"seconds_quadrature": seconds, "domain": "sphere"},
    )
