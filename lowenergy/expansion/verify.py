"""Numerical verification of an expansion: quadrature of the integral against the series.

``verify(integrand, expansion, point)`` computes ``I(point)`` by numerical
integration, independently of the engine's algebra (no MZV tables, no
regularized-word tables), evaluates the truncated Laurent series of the
expansion at the same point, and reports whether the two agree within the
truncation error.

Quadrature with analytic continuation
-------------------------------------
Each group of terms with the same exponents contributes
``∫_0^1 x^A (1-x)^B F(x) dx``, ``F = Σ P_i G(w_i; x)``.  The interval is
split at 1/2 and each half is written as
``∫_0^(1/2) z^D (1-z)^C Φ(z) dz`` with ``z = x`` (``D, C = A, B``) or
``z = 1 - x`` (``D, C = B, A``), where

    Φ(z) = Σ_k log(z)^k/k! Σ_v e_(k,v) G(v; z),   v empty or ending in 1.

* Near ``x = 0`` the ``e_(k,v)`` are **exact**: the trailing zeros of each
  word are shuffled out (:func:`~lowenergy.integrand.gnumeric.trailing_zero_decomposition`).
* Near ``x = 1`` the path ``0 → x`` is split at 1 and ``t → 1 - t`` maps
  the piece ``1 → x`` onto ``0 → 1 - x`` (exact combinatorics,
  :func:`~lowenergy.integrand.gnumeric.reflection_decomposition`); the
  constants ``G_reg(u; 1)`` that appear are computed **numerically** by
  Hölder convolution in :mod:`lowenergy.integrand.gnumeric` (not from the MZV
  tables).

``(1-z)^C Σ_v e_(k,v) G(v; z) = Σ_n r_(k,n) z^n`` is a power series that
converges like ``2^-n`` on ``[0, 1/2]`` (Taylor coefficients of multiple
polylogarithms).  The endpoint behaviour ``Σ_{n ≤ N0, k} r_(k,n) z^(D+n)
log(z)^k/k!`` is subtracted (``N0`` the least ``n ≥ 0`` with
``D + N0 + 2 ≥ 1/2``, so the remainder is integrable) and added back exactly,

    ∫_0^c z^(α-1) log(z)^k/k! dz = c^α Σ_(j=0..k) (-1)^j log(c)^(k-j) / ((k-j)! α^(j+1)),

which is the analytic continuation in ``α`` (for ``c = 1`` it is the
``(-1)^k/(A+1)^(k+1)`` of the project notes).  So the integral is also
correct where ``∫_0^1`` itself diverges (``s, t > 0``).  The remainder
``z^D Σ_k log^k/k! Σ_(n > N0) r_(k,n) z^n`` is evaluated from its own series
(no cancellation at small ``z``) and integrated with mpmath's tanh-sinh
quadrature after the substitution ``u = z^α``, ``α = D + N0 + 2`` (project
notes §3), which removes the algebraic endpoint singularity.

The same data also give the integral term by term (``method="termwise"``:
``Σ r_(k,n) ∫_0^c z^(D+n) log^k/k!``); :func:`verify` computes both and
counts their difference as quadrature error.
"""

from __future__ import annotations

import time
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Dict, Mapping, Tuple

import mpmath

from ..errors import InputError, NumericError
from ..integrand.gnumeric import (
    _g_reg_one,
    _taylor_cached,
    exponent_value,
    poly_value,
    reflection_decomposition,
    to_mpf,
    trailing_zero_decomposition,
    working_prec,
)
from ..integrand.model import Integrand
from .result import Expansion

__all__ = ["VerifyReport", "IntegralValue", "verify", "integral_value", "series_value", "convergence_radii"]

Word = Tuple[int, ...]



# --------------------------------------------------------------------------
# results
# --------------------------------------------------------------------------

@dataclass
class IntegralValue:
    """Numerical value of the integral at one point.

    ``error`` is the estimated absolute error (mpmath's estimate for the
    quadrature, summed over pieces; 0 for ``method="termwise"`` beyond the
    working precision).  ``size`` is the sum of the absolute values of the
    pieces (half intervals), the scale for relative accuracy when the value
    itself nearly cancels.
    """

    value: mpmath.mpf
    error: mpmath.mpf
    method: str
    seconds: float
    pieces: int
    size: mpmath.mpf


@dataclass
class VerifyReport:
    """Outcome of :func:`verify`.

    Attributes
    ----------
    point:
        The point as given (user's names → values).
    quadrature:
        The integral at the point (numerical quadrature, analytically continued).
    series:
        The truncated Laurent series of the expansion at the point.
    difference:
        ``series - quadrature``.
    truncation_estimate:
        ``max(|S_N|, |S_(N-1)|)``, ``S_n`` the sum of the order-n terms kept
        (``N`` the expansion order): the size of the highest orders kept.
    quadrature_error:
        Estimated error of the quadrature value: the largest of mpmath's
        estimate, the difference to the term-by-term integral, and
        ``10^-digits · |quadrature|``.
    digits_agreement:
        ``-log10(|difference| / |quadrature|)`` (capped at ``digits``).
    consistent:
        ``|difference| ≤ safety · truncation_estimate + quadrature_error``,
        and the point well inside the convergence region (see ``status``).
    status:
        ``"consistent"``, ``"inconsistent"``, or ``"inconclusive"``: the point
        lies beyond the radius of convergence (``radius_ratio ≥ 1``), or near
        it (``radius_ratio ≥ NEAR_RADIUS``) with fewer than
        ``MIN_DIGITS_NEAR_RADIUS`` digits of agreement, where a large
        truncation estimate would excuse almost any difference.
    radius_ratio:
        ``max |v| / R_v`` over the expansion variables, ``R_v`` the distance
        from 0 to the nearest possible massive pole in ``v``
        (:func:`convergence_radii`).
    warnings:
        Sentences for people (the convergence region).
    """

    point: dict
    quadrature: mpmath.mpf
    series: mpmath.mpf
    difference: mpmath.mpf
    truncation_estimate: mpmath.mpf
    quadrature_error: mpmath.mpf
    digits_agreement: float
    consistent: bool
    order: int
    digits: int
    safety: float
    details: dict = field(default_factory=dict)
    status: str = "consistent"
    radius_ratio: float = 0.0
    warnings: Tuple[str, ...] = ()

    def summary(self) -> str:
        """A few lines for people."""
        pt = ", ".join(f"{k}={v}" for k, v in self.point.items())
        n = 8
        return "\n".join([
            f"point            {pt}",
            f"quadrature       {mpmath.nstr(self.quadrature, self.digits)}  (± {mpmath.nstr(self.quadrature_error, 2)})",
            f"{f'series (N={self.order})':<17}{mpmath.nstr(self.series, self.digits)}",
            f"difference       {mpmath.nstr(self.difference, n)}",
            f"truncation est.  {mpmath.nstr(self.truncation_estimate, n)}  (safety factor {self.safety:g})",
            f"agreement        {self.digits_agreement:.1f} digits",
            f"consistent       {_STATUS_TEXT[self.status]}",
        ] + [f"warning: {w}" for w in self.warnings])

    def __str__(self) -> str:
        return self.summary()


_STATUS_TEXT = {"consistent": "yes", "inconsistent": "NO", "inconclusive": "INCONCLUSIVE (see the warning)"}
#: ``radius_ratio`` from which a warning is given (terms shrink only like ratio^n).
NEAR_RADIUS = 0.5
#: Digits of agreement needed near the radius to call the comparison consistent.
MIN_DIGITS_NEAR_RADIUS = 3.0


def convergence_radii(integrand: Integrand) -> Dict[int, Fraction]:
    """Distance from 0 to the nearest possible massive pole, per expansion variable.

    ``∫ x^(a + c v) ...`` has its poles where ``a + c v + 1 + n = 0``,
    ``n = 0, 1, 2, ...`` (the Taylor orders at the end point; polylogarithms
    only raise the pole order), likewise for ``(1-x)^(b + d v')`` at
    ``x = 1``.  The pole at ``v = 0`` is the one the Laurent series keeps, so
    the nearest other one lies at ``|v| = m/|c|``, ``m = a + 1`` if that is
    positive, else 1.  Residues may vanish, so this is a lower bound on the
    true radius.  Variables whose exponents never contain them are absent.

    >>> from lowenergy.integrand.reader import integrand_from_text
    >>> convergence_radii(integrand_from_text('integrand = "x^(-s-1)*(1-x)^(-t/2+1)"'))
    {0: Fraction(1, 1), 1: Fraction(4, 1)}
    """
    radii: Dict[int, Fraction] = {}
    for term in integrand.terms:
        for e in (term.x_exp, term.y_exp):
            if e.var is None:
                continue
            m = e.shift + 1 if e.shift + 1 >= 1 else 1
            r = Fraction(m) / abs(e.coeff)
            if e.var not in radii or r < radii[e.var]:
                radii[e.var] = r
    return dict(sorted(radii.items()))


# --------------------------------------------------------------------------
# the point
# --------------------------------------------------------------------------

def _resolve_point(variables, parameters, point: Mapping) -> list:
    """[s, t, p1, ...] as mpf (current precision) from ``{name: value}``."""
    if not isinstance(point, Mapping):
        raise InputError("the point must map variable names to values", hint='e.g. {"s": -0.1, "t": -0.07}')
    names = tuple(variables) + tuple(parameters)
    unknown = [k for k in point if k not in names]
    if unknown:
        raise InputError(f"unknown name(s) {unknown} in the point; expected {list(names)}")
    missing = [n for n in names if n not in point]
    if missing:
        raise InputError(f"the point gives no value for {missing}", hint=f"give all of {list(names)}")
    return [to_mpf(point[n]) for n in names]


# --------------------------------------------------------------------------
# one half interval
# --------------------------------------------------------------------------

def _J(alpha: mpmath.mpf, k: int, c: mpmath.mpf, logc: mpmath.mpf) -> mpmath.mpf:
    """∫_0^c z^(α-1) log(z)^k/k! dz, continued analytically in α (α ≠ 0)."""
    total = mpmath.mpf(0)
    for j in range(k + 1):
        term = logc ** (k - j) / (mpmath.factorial(k - j) * alpha ** (j + 1))
        total += -term if j % 2 else term
    return c ** alpha * total


def _series_coefficients(C: mpmath.mpf, rep: Dict[Tuple[int, Word], mpmath.mpf], prec: int) -> Dict[int, list]:
    """``{k: [r_(k,0..nmax)]}`` with ``(1-z)^C Σ_v rep[k,v] G(v; z) = Σ_n r_(k,n) z^n``.

    ``nmax`` grows until the terms at ``z = 1/2`` have fallen below the
    working precision relative to the largest one.
    """
    nmax = prec + 64
    while True:
        b = [mpmath.mpf(1)]
        for m in range(1, nmax + 1):
            b.append(b[-1] * (m - 1 - C) / m)
        # Σ_v e_(k,v) G(v; z) first (linear), then one convolution with (1-z)^C per k
        sums: Dict[int, list] = {}
        for (k, v), e in rep.items():
            if not e:
                continue
            g = _taylor_cached(v, nmax, prec)
            a = sums.setdefault(k, [mpmath.mpf(0)] * (nmax + 1))
            for p in range(nmax + 1):
                if g[p]:
                    a[p] += e * g[p]
        out: Dict[int, list] = {}
        for k, a in sums.items():
            first = next((p for p in range(nmax + 1) if a[p]), None)
            if first is None:
                continue
            out[k] = [mpmath.mpf(0)] * first + [
                mpmath.fdot(a[first:n + 1], b[n - first::-1]) for n in range(first, nmax + 1)
            ]
        ok = True
        for r in out.values():
            sizes = [abs(r[n]) * mpmath.mpf(2) ** (-n) for n in range(nmax + 1)]
            scale = max(sizes)
            if scale and max(sizes[-8:]) > scale * mpmath.mpf(2) ** (-prec - 8):
                ok = False
        if ok:
            return out
        if nmax > 40 * prec:
            raise NumericError(
                f"endpoint series did not converge (nmax={nmax})",
                hint="the exponents are too large for this method; try a point with smaller |s|, |t|",
            )
        nmax *= 2


def _half_integral(D: mpmath.mpf, C: mpmath.mpf, rep, prec: int, method: str):
    """``∫_0^(1/2) z^D (1-z)^C Σ rep[k,v] log(z)^k/k! G(v; z) dz`` → (value, error estimate)."""
    coeffs = _series_coefficients(C, rep, prec)
    if not coeffs:
        return mpmath.mpf(0), mpmath.mpf(0)
    c = mpmath.mpf(1) / 2
    logc = -mpmath.ln2
    N0 = 0
    while D + N0 + 2 < mpmath.mpf(1) / 2:
        N0 += 1
    alpha = D + N0 + 2
    nmax = len(next(iter(coeffs.values()))) - 1

    def addback(nrange):
        total = mpmath.mpf(0)
        for k, r in coeffs.items():
            for n in nrange:
                if not r[n]:
                    continue
                a = D + n + 1
                if a == 0:
                    raise NumericError(
                        f"the integral has a pole at this point (exponent {mpmath.nstr(D, 10)} + {n} = -1)",
                        hint="choose a point away from the poles at integer s, t",
                    )
                total += r[n] * _J(a, k, c, logc)
        return total

    if method == "termwise":
        return addback(range(nmax + 1)), mpmath.mpf(0)

    exact = addback(range(N0 + 1))
    # The remainder z^D Σ_k log(z)^k/k! Σ_(n > N0) r_(k,n) z^n, with u = z^α:
    #   ∫_0^c z^(α-1) φ(z) dz = (1/α) ∫_0^(c^α) φ(u^(1/α)) du,
    #   φ(z) = Σ_k log(z)^k/k! T_k(z),  T_k(z) = Σ_(j ≥ 0) r_(k,N0+1+j) z^j.
    # T_k is summed from its own series (no cancellation at small z), by Horner's
    # rule in fixed point: integers scaled so that the largest |r| 2^-j is ~2^P;
    # each rounding is damped by later powers of z ≤ 1/2, so the absolute error
    # stays ~2^-P times that scale.
    P = prec + 16
    tails = {}
    for k, r in coeffs.items():
        tail = r[N0 + 1:]
        scale = max((abs(cj) * mpmath.mpf(2) ** (-j) for j, cj in enumerate(tail)), default=0)
        if not scale:
            continue
        e = int(mpmath.mag(scale))
        ints = [int(mpmath.nint(mpmath.ldexp(cj, P - e))) for cj in tail]
        while ints and ints[-1] == 0:
            ints.pop()
        tails[k] = (ints[::-1], e, mpmath.factorial(k))
    inv_alpha = 1 / alpha

    def f(u):
        if u <= 0:
            return mpmath.mpf(0)
        L = mpmath.log(u) * inv_alpha
        z = mpmath.exp(L)
        Z = int(mpmath.floor(mpmath.ldexp(z, P)))
        total = mpmath.mpf(0)
        for k, (ints, e, fact) in tails.items():
            # all terms, even at small z: the coefficients may grow like a power of j
            # (e.g. (1-z)^C with C ≪ -1), so no a-priori cut in j is safe
            acc = 0
            for cj in ints:
                acc = ((acc * Z) >> P) + cj
            val = mpmath.ldexp(mpmath.mpf(acc), e - P)
            if k:
                val *= L ** k / fact
            total += val
        return total * inv_alpha

    value, err = mpmath.quad(f, [0, c ** alpha], error=True)
    return exact + value, abs(err)


def _rep_at_zero(words: Dict[Word, mpmath.mpf]) -> Dict[Tuple[int, Word], mpmath.mpf]:
    rep: Dict[Tuple[int, Word], mpmath.mpf] = {}
    for w, p in words.items():
        for key, c in trailing_zero_decomposition(w).items():
            rep[key] = rep.get(key, 0) + p * (mpmath.mpf(c.numerator) / c.denominator)
    return rep


def _rep_at_one(words: Dict[Word, mpmath.mpf], prec: int) -> Dict[Tuple[int, Word], mpmath.mpf]:
    rep: Dict[Tuple[int, Word], mpmath.mpf] = {}
    for w, p in words.items():
        for (head, u), mult in reflection_decomposition(w).items():
            reg = _g_reg_one(u, prec)
            if not reg:
                continue
            for key, c in trailing_zero_decomposition(head).items():
                rep[key] = rep.get(key, 0) + p * mult * reg * (mpmath.mpf(c.numerator) / c.denominator)
    return rep


# --------------------------------------------------------------------------
# public entry points
# --------------------------------------------------------------------------

def _integral(integrand: Integrand, values: list, digits: int, prec: int, method: str):
    groups: Dict[tuple, Dict[Word, mpmath.mpf]] = {}
    for term in integrand.terms:
        p = poly_value(term.coefficient, values, digits + 15)
        if not p:
            continue
        words = groups.setdefault((term.x_exp, term.y_exp), {})
        w = tuple(term.word)
        words[w] = words.get(w, 0) + p
    total, error, size = mpmath.mpf(0), mpmath.mpf(0), mpmath.mpf(0)
    for (xe, ye), words in groups.items():
        A = exponent_value(xe, values)
        B = exponent_value(ye, values)
        v0, e0 = _half_integral(A, B, _rep_at_zero(words), prec, method)
        v1, e1 = _half_integral(B, A, _rep_at_one(words, prec), prec, method)
        total += v0 + v1
        error += e0 + e1
        size += abs(v0) + abs(v1)
    return total, error, size, 2 * len(groups)


def integral_value(integrand: Integrand, point: Mapping, digits: int = 30, method: str = "quad") -> IntegralValue:
    """The integral ``Σ_terms P · ∫_0^1 x^A (1-x)^B G(w; x) dx`` at a point.

    Parameters
    ----------
    integrand:
        The integrand.
    point:
        ``{name: value}`` for both expansion variables and every parameter
        (user's names; values int, Fraction, float, mpf or strings like ``"-1/10"``).
    digits:
        Target number of correct digits.
    method:
        ``"quad"`` (tanh-sinh quadrature of the endpoint-subtracted integrand)
        or ``"termwise"`` (the same power series integrated term by term).

    Raises
    ------
    InputError
        Bad point or method.
    NumericError
        The point sits on a pole, or the quadrature's error estimate exceeds
        ``10^-(digits/2)`` of the size of the pieces (no silently inaccurate value).
    """
    if method not in ("quad", "termwise"):
        raise InputError(f"unknown method {method!r}", hint="use 'quad' or 'termwise'")
    maxlen = max((len(term.word) for term in integrand.terms), default=0)
    prec = working_prec(digits, 50 + 4 * maxlen)
    start = time.perf_counter()
    with mpmath.workprec(prec):
        values = _resolve_point(integrand.variables, integrand.parameters, point)
        value, err, size, pieces = _integral(integrand, values, digits, prec, method)
        _check_accuracy(err, size, digits, "the quadrature reached only")
    return IntegralValue(value, err, method, time.perf_counter() - start, pieces, size)


def _check_accuracy(err, size, digits: int, what: str) -> None:
    if size and err > mpmath.mpf(10) ** (-(digits // 2)) * size:
        reached = max(0.0, -float(mpmath.log10(err / size)))
        raise NumericError(
            f"{what} about {reached:.0f} of {digits} digits (error estimate {mpmath.nstr(err, 3)})",
            hint="choose a point closer to s = t = 0, or ask for more digits",
        )


def series_value(expansion: Expansion, point: Mapping, digits: int = 30):
    """The truncated Laurent series at a point.

    Returns ``(value, order_sums)`` with ``order_sums[n]`` the sum of the terms
    ``s^i t^j`` with ``i + j = n``.
    """
    prec = working_prec(digits, 50)
    with mpmath.workprec(prec):
        values = _resolve_point(expansion.variables, expansion.parameters, point)
        s, t, params = values[0], values[1], values[2:]
        cache: Dict[object, mpmath.mpf] = {}
        sums: Dict[int, mpmath.mpf] = {}
        for (i, j), poly in expansion.coefficients.items():
            if (i < 0 and s == 0) or (j < 0 and t == 0):
                raise NumericError("the series has a pole at this point", hint="choose s, t ≠ 0")
            c = mpmath.mpf(0)
            for pexp, z in poly.items():
                if z not in cache:
                    cache[z] = mpmath.mpf(z.numeric(digits + 15))
                term = cache[z]
                for pv, e in zip(params, pexp):
                    if e:
                        term *= pv ** e
                c += term
            sums[i + j] = sums.get(i + j, 0) + c * s ** i * t ** j
        total = mpmath.fsum(sums.values())
    return total, sums


def verify(integrand: Integrand, expansion: Expansion, point: Mapping, digits: int = 30,
           safety: float = 10.0) -> VerifyReport:
    """Compare an expansion with the numerically integrated integral at one point.

    Parameters
    ----------
    integrand, expansion:
        The integrand and its expansion (same variable and parameter names).
    point:
        ``{name: value}`` for the expansion variables and the parameters,
        e.g. ``{"s": -0.1, "t": Fraction(-7, 100)}``.
    digits:
        Target digits of the quadrature (≥ 25 is typical for |s|, |t| ≤ 0.2).
    safety:
        The factor on the truncation estimate in the ``consistent`` test.

    Returns
    -------
    VerifyReport
    """
    if tuple(expansion.variables) != tuple(integrand.variables) or tuple(expansion.parameters) != tuple(integrand.parameters):
        raise InputError(
            f"the expansion is in {list(expansion.variables) + list(expansion.parameters)} "
            f"but the integrand in {list(integrand.variables) + list(integrand.parameters)}"
        )
    quad = integral_value(integrand, point, digits, "quad")
    termwise = integral_value(integrand, point, digits, "termwise")
    series, sums = series_value(expansion, point, digits)
    N = expansion.order
    with mpmath.workprec(working_prec(digits, 50)):
        zero = mpmath.mpf(0)
        trunc = max(abs(sums.get(N, zero)), abs(sums.get(N - 1, zero)))
        spread = abs(quad.value - termwise.value)
        _check_accuracy(spread, quad.size, digits, "quadrature and term-by-term integration agree to only")
        qerr = max(quad.error, spread, mpmath.mpf(10) ** (-digits) * abs(quad.value))
        diff = series - quad.value
        scale = abs(quad.value) or mpmath.mpf(1)
        if diff == 0:
            agree = float(digits)
        else:
            agree = max(0.0, min(float(digits), -float(mpmath.log10(abs(diff) / scale))))
        consistent = bool(abs(diff) <= safety * trunc + qerr)
        status, ratio, warnings = _radius_check(integrand, point, consistent, agree)
        details = {
            "termwise": termwise.value,
            "mpmath_error_estimate": quad.error,
            "order_sums": dict(sorted(sums.items())),
            "seconds_quadrature": quad.seconds,
            "seconds_termwise": termwise.seconds,
            "pieces": quad.pieces,
        }
    return VerifyReport(
        point=dict(point),
        quadrature=quad.value,
        series=series,
        difference=diff,
        truncation_estimate=trunc,
        quadrature_error=qerr,
        digits_agreement=agree,
        consistent=status == "consistent",
        order=N,
        digits=digits,
        safety=safety,
        details=details,
        status=status,
        radius_ratio=ratio,
        warnings=warnings,
    )


def _radius_check(integrand: Integrand, point: Mapping, consistent: bool, agree: float):
    """``(status, radius_ratio, warnings)`` from where the point lies."""
    radii = convergence_radii(integrand)
    names = list(integrand.variables)
    with mpmath.workdps(20):
        values = [float(abs(x)) for x in _resolve_point(integrand.variables, integrand.parameters, point)[:2]]
    ratio, worst, where = 0.0, None, 0.0
    for v, r in radii.items():
        q = values[v] / float(r)
        if q > ratio:
            ratio, worst, where = q, (names[v], r), values[v]
    warnings = []
    status = "consistent" if consistent else "inconsistent"
    if worst is not None and ratio >= 1:
        name, r = worst
        warnings.append(
            f"the point lies beyond the radius of convergence: |{name}| = {where:g} >= {r} "
            f"(a pole may sit at |{name}| = {r}); the series does not converge there, so the comparison "
            "decides nothing -- choose a point closer to 0"
        )
        status = "inconclusive"
    elif worst is not None and ratio >= NEAR_RADIUS:
        name, r = worst
        warnings.append(
            f"the point lies near the radius of convergence: |{name}|/{r} = {ratio:.2f}, so the terms shrink "
            f"only like {ratio:.2f}^n and the truncation estimate is large"
        )
        if consistent and agree < MIN_DIGITS_NEAR_RADIUS:
            warnings.append(
                f"only {agree:.1f} digits agree: not counted as consistent (need {MIN_DIGITS_NEAR_RADIUS:g} "
                "this close to the radius); choose a point closer to 0 or a higher --order"
            )
            status = "inconclusive"
    return status, ratio, tuple(warnings)
