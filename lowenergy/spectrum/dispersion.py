"""Low-energy coefficients from the residues: fixed-t dispersion sums.

Formula
-------
Fix t near 0 and look at ``I(s, t)`` as a function of s.  Its only
singularities are the poles ``Σ_m R_{p,m}(t)/(s - p)^m`` at the locations p
of :func:`~lowenergy.spectrum.residues.residues`.  If, in addition, ``I`` grows
slower than ``|s|^k`` on large circles with radii between the poles (Regge
behaviour: for
``x^(-s-1)(1-x)^(-t-1+b) F(x)``, ``|I| ~ |s|^(t-b) log^j|s|`` away from the
positive axis, so any ``k ≥ 1`` is fine at small t when ``b ≥ 0``), Cauchy's
theorem on ``I(s,t)/s^(k+1)`` leaves only the poles, and with

    1/(s - p)^m = (-1)^m p^(-m) Σ_k binom(m+k-1, k) (s/p)^k      (|s| < |p|)

the coefficient of ``s^k`` of the regular part at ``s = 0`` is

    c_k(t) = Σ_{p ≠ 0} Σ_m (-1)^m binom(m+k-1, k) R_{p,m}(t) / p^(m+k).

For simple poles this is ``c_k(t) = -Σ_{n ≥ 1} R_n(t)/n^(k+1)``.  The pole at
``p = 0`` is the massless pole itself and is left out; every other location
(massive levels, tachyons, rational locations) enters.  Expanding both sides
in t, the coefficient of ``s^k t^j`` is the sum of the ``t^j`` coefficients,

    c_{k,j} = Σ_{p ≠ 0} Σ_m (-1)^m binom(m+k-1, k) [t^j] R_{p,m}(t) / p^(m+k),

valid when (i) ``I(s,t)/s^(k+1)`` vanishes on large circles (no subtraction
at order k) and (ii) the sum converges uniformly for t near 0, so that it can
be expanded term by term.  Example: ``B(-s,-t)`` has ``R_n(t) = -(t+1)_n/n!``;
``k = 2, j = 0`` gives ``Σ 1/n^3 = ζ(3)``, ``k = 1, j = 1`` gives
``Σ H_n/n^2 = 2ζ(3)``.  At ``k = 0`` (i) holds for t < 0 but (ii) fails:
``c_0(t) = -1/t + ...`` carries the t-channel pole, which the s-channel sum
only builds up through its divergent tail, so those coefficients cannot be
reconstructed this way (the error estimate then comes out large).

Sphere integrands
-----------------
For ``I(S, T) = (1/π)∫ d²z |z|^(2A)|1-z|^(2B) F(z)`` (closed strings) the
function of S at fixed T has two sets of poles: at ``S = n`` (z → 0, pole
parts ``Σ_m R_{n,m}(T)/(S - n)^m`` as above) and at ``U = n``, i.e.
``S = S_n := -T - n`` (z → ∞).  The U-channel pole parts are known as
``Σ_M P_{n,M}(S)/(U - n)^M`` with ``P_{n,M}(S) = Σ_a p_{n,M,a} S^a``
polynomials in S -- the Laurent expansion in U at *fixed S*
(:attr:`~lowenergy.spectrum.residues.ResidueTable.u_poles`).  At fixed T,
``U - n = -(S - S_n)`` and ``S = S_n - (U - n)``; Taylor-expanding
``P_{n,M}`` around ``S_n`` moves powers of ``U - n`` between the orders, and
the singular part in S at ``S_n`` is ``Σ_m (-1)^m Q_{n,m}(T)/(S - S_n)^m``
with

    Q_{n,m}(T) = Σ_{M ≥ m} Σ_a (-1)^a p_{n,M,a} binom(a, M-m) (T + n)^(a-M+m)

(the terms with ``M - m > a`` vanish).  The massless rows (``1/S^k``,
``1/T^k`` and the U rows ``S^i U^k``, ``c[i,0,k]``) are not part of the
regular coefficients ``c[i,j]``; what is left, ``I_reg``, has exactly the
massive poles.  If ``I_reg(S,T)/S^(k+1) → 0`` on large circles between the
poles, Cauchy's theorem gives ``c_k(T) = Σ_poles [S^k] (singular part)``,
and with ``[S^k] (S - S_n)^(-m) = (-1)^k binom(m+k-1, k) (T+n)^(-m-k)``
the U channel adds, per level n ≠ 0,

    Σ_m (-1)^(m+k) binom(m+k-1, k) [T^j] Q_{n,m}(T) (T + n)^(-m-k)

to ``c_{k,j}``, next to the S-channel term of the same level (the two are
summed level by level before the tail is extrapolated).  At fixed S (poles
in T, ``var = 1``) no Taylor shift is needed: the U pole part in T at
``T = -S - n`` has the numerators ``(-1)^m P_{n,m}(S)``, so the term is
``Σ_m (-1)^(m+k) binom(m+k-1, k) [S^j] P_{n,m}(S) (S + n)^(-m-k)``.

Validity.  For the complex Beta function
``C(S,T) = Γ(-S)Γ(-T)Γ(1+S+T)/(Γ(1+S)Γ(1+T)Γ(-S-T))`` (Dotsenko & Fateev
1984; Kawai, Lewellen & Tye 1986) at fixed T,
``Γ(-S)/Γ(-S-T) ~ (-S)^T`` and ``Γ(1+S+T)/Γ(1+S) ~ S^T`` (A&S 6.1.47), so
``|C| = O(|S|^(2 Re T))`` on the circles ``|S| = N + 1/2`` (the tests
measure ``max |C|/|S|^(2T)`` ≈ 11.2-11.6 at T = 0.1 for N = 10, 40, 160):
condition (i) holds for ``k + 1 > 2T``.  The level-n terms behave like
``n^(2T-1-k)`` times powers of ``log n`` after the expansion in T, so (ii)
needs ``k ≥ 1``; at ``k = 0`` the sums diverge logarithmically at T = 0
(the massless T pole is built up by the tail), as on the interval.  In
general ``|S|^(2a·T - 2b + d)`` replaces ``|S|^(2T)`` for
``|z|^(2A)|1-z|^(-2a·T-2+2b) × S^d × L_w(z)`` (the Regge region is
z → 1, ``|1 - z| ~ 1/|S|``; logarithms of ``|1 - z|`` in L_w add powers of
``log |S|``), and the massless rows must decay or be beaten by
``S^(k+1)`` too.  The closed-superstring factor
``Γ(-S)Γ(1-T)Γ(S+T)/(Γ(1+S)Γ(T)Γ(1-S-T))`` (b = 1) grows like
``|S|^(2T-2)`` (measured ≈ 0.11-0.12 for the ratio) and its rows are
``-1/S - 1/U``, so every ``k ≥ 0`` is valid there.

Summation
---------
The terms are exact; the sum over the levels is truncated at the table's
last level L and the tail is removed by extrapolating the partial sums
``S_N`` (N = the location reached):

* ``"fit"``: ``S_N = S + Σ_{a=1..A} Σ_{b=0..B} c_ab log(N)^b / N^a``
  solved exactly through the last ``1 + A(B+1)`` partial sums at high
  precision (a generalized Richardson extrapolation; the logs come from
  harmonic sums in the t-expansion of the residues and from letters 1 of the
  words; B runs over ``j + (pole order − 1)`` to three more, and the fit with
  the smallest error estimate is kept).  The error estimate is the change
  when the window is moved down by B + 1 levels and A lowered by one.
* ``"richardson"``: :func:`mpmath.richardson` on the partial sums (only for
  poles at 1, 2, 3, ... and tails that are series in 1/N without logs).
* ``"none"``: the last partial sum.
* ``"auto"`` (default): ``"fit"`` and ``"richardson"``, keeping the one with
  the smaller error estimate (Richardson wins for pure power tails such as
  ``Σ 1/n^3``, the fit as soon as logs appear).

Examples
--------
>>> from fractions import Fraction
>>> from lowenergy.integrand.model import Integrand, Term, LinearExponent
>>> from lowenergy.zeta.element import MZV
>>> beta = Integrand([Term({(0, 0): MZV.one()}, LinearExponent(-1, Fraction(-1), 0),
...                        LinearExponent(-1, Fraction(-1), 1))])
>>> r = check_dispersion(beta, 2, 0, levels=30)      # s^2: ζ(3)
>>> str(r.exact), r.digits > 12
('zeta(3)', True)
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Dict, List, Optional, Tuple

import mpmath

from ..errors import InputError
from ..expansion.engine import expand
from ..expansion.result import Expansion
from ..integrand.model import Integrand
from ..zeta.element import MZV
from .residues import ResidueTable, VarSpec, residues

__all__ = ["DispersiveSum", "dispersive_terms", "dispersive_sum", "check_dispersion"]


@dataclass
class DispersiveSum:
    """A coefficient of ``v^k w^j`` (v the pole variable) from the residues.

    Attributes
    ----------
    k, j, variable:
        The monomial ``variable^k · other^j``.
    value, error:
        The extrapolated sum and an estimate of its error (absolute).
    levels:
        Number of pole locations summed; ``max_location`` the last one.
    method:
        Extrapolation used.
    partial_sums:
        ``[(location, S_N)]``.
    exact, exact_value, digits:
        Filled by :func:`check_dispersion`: the coefficient from
        :func:`~lowenergy.expansion.engine.expand`, its value and the number of
        agreeing decimal digits ``-log10 |value - exact|/|exact|`` (absolute
        difference when the exact value is 0).
    """

    k: int
    j: int
    variable: str
    value: mpmath.mpf
    error: mpmath.mpf
    levels: int
    max_location: Fraction
    method: str
    log_power: Optional[int] = None
    partial_sums: List[Tuple[Fraction, mpmath.mpf]] = field(default_factory=list)
    exact: Optional[MZV] = None
    exact_value: Optional[mpmath.mpf] = None
    digits: Optional[float] = None


def dispersive_terms(
    table: ResidueTable, k: int, j: int, var: VarSpec = 0, params: Optional[Tuple[int, ...]] = None
) -> List[Tuple[Fraction, MZV]]:
    """Exact contribution of each pole location ``p ≠ 0`` to ``c_{k,j}`` (see the module docstring).

    Returns ``[(p, term)]`` sorted by ``|p|``; ``params`` picks a parameter
    monomial (default: the constant one).
    """
    if k < 0 or j < 0:
        raise InputError(f"dispersion sums give the regular coefficients (k, j ≥ 0), got ({k}, {j})")
    v = table.var_index(var)
    key = tuple(params) if params is not None else (0,) * len(table.parameters)
    u_terms = _u_channel_terms(table, k, j, v, key)
    out: List[Tuple[Fraction, MZV]] = []
    for p in sorted(set(table.locations(v)) | set(u_terms), key=lambda q: (abs(q), q)):
        if p == 0:
            continue
        total = u_terms.get(p, MZV())
        for m, rpoly in (table.pole(p, v).items() if abs(p) <= table.levels else ()):
            coef = rpoly.get(j, {}).get(key)
            if coef:
                total = total + coef * (Fraction((-1) ** m * math.comb(m + k - 1, k)) / p ** (m + k))
        out.append((p, total))
    return out


def _gbinom(e: int, j: int) -> int:
    """``binom(e, j)`` for any integer e (negative too) and j ≥ 0: ``e(e-1)…(e-j+1)/j!``."""
    num = 1
    for i in range(j):
        num *= e - i
    return num // math.factorial(j)


def _u_channel_terms(table: ResidueTable, k: int, j: int, v: int, key: Tuple[int, ...]) -> Dict[Fraction, MZV]:
    """The U-channel contribution of each level n ≠ 0 to ``c_{k,j}`` (sphere tables;
    formulas in the module docstring), ``{n: term}``; ``{}`` without U poles."""
    out: Dict[Fraction, MZV] = {}
    for n, orders in (getattr(table, "u_poles", None) or {}).items():
        if n == 0:
            continue  # the massless U pole: its rows c[i,0,k] are not in c[i,j]
        total = MZV()
        for big_m, rpoly in orders.items():
            for a, pp in rpoly.items():
                r = pp.get(key)
                if not r:
                    continue
                if v == 1:
                    # poles in T at fixed S: numerators (-1)^M P_M(S), no Taylor shift
                    if a > j:
                        continue
                    e = -big_m - k
                    c = (-1) ** (big_m + k) * math.comb(big_m + k - 1, k) * _gbinom(e, j - a) * n ** (e - (j - a))
                    total = total + r * Fraction(c)
                    continue
                # poles in S at fixed T: Taylor shift of P_M(S) around S = -T - n
                for m in range(max(1, big_m - a), big_m + 1):
                    e = a - big_m - k
                    c = ((-1) ** (m + k + a) * math.comb(m + k - 1, k) * math.comb(a, big_m - m)
                         * _gbinom(e, j) * n ** (e - j))
                    total = total + r * Fraction(c)
        out[n] = total
    return out


def _value(x: MZV, dps: int) -> mpmath.mpf:
    if x.is_rational():
        q = x.rational_value()
        return mpmath.mpf(q.numerator) / q.denominator
    return x.numeric(dps)


def _fit(points: List[Tuple[mpmath.mpf, mpmath.mpf]], A: int, B: int) -> mpmath.mpf:
    """Limit S of ``S_N = S + Σ c_ab log(N)^b/N^a`` through ``1 + A(B+1)`` points."""
    n = 1 + A * (B + 1)
    pts = points[-n:]
    rows, rhs = [], []
    for x, y in pts:
        lx = mpmath.log(x)
        row = [mpmath.mpf(1)]
        for a in range(1, A + 1):
            xa = x ** (-a)
            for b in range(B + 1):
                row.append(xa * lx ** b)
        rows.append(row)
        rhs.append(y)
    sol = mpmath.lu_solve(mpmath.matrix(rows), mpmath.matrix(rhs))
    return sol[0]


def _fit_with_error(partial, B: int) -> Tuple[mpmath.mpf, mpmath.mpf]:
    L = len(partial)
    usable = max(L // 2, 2)  # the upper half of the range: the asymptotic regime
    A = min(12, max(1, (usable - 1) // (B + 1)))
    value = _fit(partial, A, B)
    # error estimate: move the window down by B + 1 levels and drop one power of 1/N
    shift = B + 1
    A2 = max(1, A - 1)
    if L - shift >= 1 + A2 * (B + 1):
        alt = _fit(partial[:-shift], A2, B)
        error = abs(value - alt)
    else:
        error = mpmath.inf
    return value, error


def _best_fit(partial, candidates) -> Tuple[mpmath.mpf, mpmath.mpf, int]:
    best = None
    for B in candidates:
        if len(partial) < 2 + (B + 1):
            continue
        value, error = _fit_with_error(partial, B)
        if best is None or error < best[1]:
            best = (value, error, B)
    if best is None:
        raise InputError("too few pole locations for the fit", hint="compute more levels")
    return best


def dispersive_sum(
    table: ResidueTable,
    k: int,
    j: int,
    var: VarSpec = 0,
    *,
    params: Optional[Tuple[int, ...]] = None,
    method: str = "auto",
    log_power: Optional[int] = None,
    digits: int = 30,
) -> DispersiveSum:
    """Sum the residues into the coefficient of ``var^k other^j`` with tail extrapolation.

    Parameters
    ----------
    table:
        Residues; more levels mean a better extrapolation (30-60 is typical).
    k, j:
        The monomial; k ≥ 1 usually (see the module docstring for k = 0).
    var:
        The pole variable of the dispersion relation (default s: fixed t).
    params:
        Parameter monomial (default the constant one).
    method:
        ``"auto"``, ``"fit"``, ``"richardson"`` or ``"none"``.
    log_power:
        B of the fit (default ``j + highest pole order - 1``).
    digits:
        Working precision is a few times this (the extrapolation cancels digits).

    Returns
    -------
    DispersiveSum
    """
    if method not in ("auto", "fit", "richardson", "none"):
        raise InputError(f"unknown summation method {method!r}", hint="use auto, fit, richardson or none")
    v = table.var_index(var)
    terms = dispersive_terms(table, k, j, v, params)
    consecutive = [p for p, _ in terms] == list(range(1, len(terms) + 1))
    if method == "auto":
        a = dispersive_sum(table, k, j, var, params=params, method="fit", log_power=log_power, digits=digits)
        if not consecutive:
            return a
        b = dispersive_sum(table, k, j, var, params=params, method="richardson", digits=digits)
        return a if a.error <= b.error else b
    if method == "richardson" and not consecutive:
        raise InputError(
            "Richardson extrapolation needs the pole locations 1, 2, 3, ...",
            hint="use method='fit'",
        )
    if len(terms) < 2:
        raise InputError("too few pole locations for a dispersion sum", hint="compute more levels")
    max_order = max((table.max_order(p, v) for p, _ in terms if abs(p) <= table.levels), default=1)
    u_orders = [m for orders in (getattr(table, "u_poles", None) or {}).values() for m in orders]
    max_order = max([max_order] + u_orders)
    base = j + max(max_order, 1) - 1
    # words with letters 1 at the far end point add powers of log(n) to the
    # residues (Regge behaviour s^t log^j s): try a few B and keep the fit
    # with the smallest error estimate
    B_candidates = [log_power] if log_power is not None else list(range(base, base + 4))
    B = B_candidates[0]
    dps = 3 * digits + 20
    with mpmath.workdps(dps):
        partial: List[Tuple[mpmath.mpf, mpmath.mpf]] = []
        acc = mpmath.mpf(0)
        for p, term in terms:
            acc += _value(term, dps)
            partial.append((mpmath.mpf(abs(p.numerator)) / p.denominator, acc))
        L = len(partial)
        if method == "none":
            value = partial[-1][1]
            error = abs(partial[-1][1] - partial[-2][1]) * L  # crude: last term times the count
        elif method == "richardson":
            # mpmath's N-term formula assumes seq[i] is the partial sum up to level i + 1
            seq = [y for _, y in partial]
            value = mpmath.richardson(seq)[0]
            other = mpmath.richardson(seq[:-2])[0] if L > 4 else value
            error = abs(value - other)
        else:
            value, error, B = _best_fit(partial, B_candidates)
        ps = [(p, y) for (_, y), (p, _) in zip(partial, terms)]
    return DispersiveSum(
        k=k, j=j, variable=table.variables[v], value=value, error=error,
        levels=L, max_location=terms[-1][0], method=method, partial_sums=ps,
        log_power=B if method == "fit" else None,
    )


def check_dispersion(
    integrand: Integrand,
    k: int,
    j: int,
    *,
    levels: int = 40,
    var: VarSpec = 0,
    method: str = "auto",
    digits: int = 30,
    table: Optional[ResidueTable] = None,
    expansion: Optional[Expansion] = None,
    log_power: Optional[int] = None,
) -> DispersiveSum:
    """Dispersion sum of ``var^k other^j`` compared with the exact coefficient from ``expand``.

    ``table`` and ``expansion`` may be passed to reuse earlier work (the
    expansion must reach order ``k + j``).  The returned
    :class:`DispersiveSum` has ``exact``, ``exact_value`` and ``digits`` (of
    agreement) filled in.  Sphere integrands take their poles (S, T and U
    channels) from :func:`lowenergy.svpolylog.sphere_residues.sphere_residues`
    and the exact coefficient from :func:`lowenergy.svpolylog.sphere.expand_sphere`.
    """
    sphere = getattr(integrand, "domain", "interval") == "sphere"
    if table is None:
        if sphere:
            from ..svpolylog.sphere_residues import sphere_residues  # a later layer, as in highenergy.py

            table = sphere_residues(integrand, levels)
        else:
            table = residues(integrand, levels)
    v = table.var_index(var)
    result = dispersive_sum(table, k, j, v, method=method, digits=digits, log_power=log_power)
    if expansion is None or expansion.order < k + j:
        if sphere:
            from ..svpolylog.sphere import expand_sphere

            expansion = expand_sphere(integrand, k + j)
        else:
            expansion = expand(integrand, k + j)
    i_s, i_t = (k, j) if v == 0 else (j, k)
    pkey = (0,) * len(integrand.parameters)
    exact = expansion.param_coefficient(i_s, i_t).get(pkey, MZV())
    dps = 3 * digits + 20
    with mpmath.workdps(dps):
        ev = _value(exact, dps)
        diff = abs(result.value - ev)
        if diff == 0:
            agree = float(dps)
        elif ev != 0:
            agree = float(-mpmath.log10(diff / abs(ev)))
        else:
            agree = float(-mpmath.log10(diff))
    result.exact = exact
    result.exact_value = ev
    result.digits = agree
    return result
