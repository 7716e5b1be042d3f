"""Sphere integrals: the low-energy expansion of closed-string integrands.

We expand, to total order N in the expansion variables (S, T; U = -S-T),

    I(S, T) = (1/π) ∫_C d²z |z|^(2A) |1-z|^(2B) F(z),     d²z = d(Re z) d(Im z),

with ``A = a - 1 + c·v``, ``B = b - 1 + d·v'`` (integers a, b; rationals c, d;
v, v' expansion variables) and ``F = Σ_w f_w L_w(z)`` a combination of Brown's
single-valued polylogarithms (:mod:`.construct`; products of L's are
shuffled into single words because ``L_u L_v = L_{u ш v}``).  Every pair of
integers (a, b) is supported, negative ones included (steps 5-6); a
divergence that no variable regulates (``abs(z)^(-4)`` with no variable,
exponents whose variables cancel at ∞, a pole at ∞ in a combination other
than U = -S-T) is refused with a message.  For ``(a, b) ∈ {(0,0), (1,0),
(0,1)}`` steps 2-4 below are used (faster); the general route reproduces
them (tests).

Method: single-valued integration
---------------------------------
This is the derivation used by the code; every step is checked by the tests
(complex Beta function exactly, 2D quadrature numerically).

1. *Expansion.*  ``|z|^(2cv) = exp(cv L_0) = Σ_m (cv)^m L_{0^m}`` (``L_0 =
   log|z|²``, ``L_{0^m} = L_0^m/m!``), likewise ``|1-z|^(2dv') = Σ_n (dv')^n
   L_{1^n}``, so the coefficient of ``(cv)^m (dv')^n`` is an integral of
   ``Σ_u mult(u) L_u`` over the words ``u`` of ``0^m ш 1^n ш w`` (the same
   integer combinatorics as on the interval, METHOD.md §4).
2. *Poles* come from the regions around 0, 1, ∞ where ``F`` tends to powers
   of logarithms (``(1/π)∫_{|z|<1} |z|^(2λ-2) L_{0^k} d²z = (-1)^k/λ^(k+1)``,
   exactly as ``∫_0^1 x^(λ-1) G(0^k; x) dx``):

   * z → 0 (only if a = 0): ``L_w → δ_{w,0^k} L_{0^k}`` (Brown's
     normalization ``L(z) ~ exp(x0 log|z|²)``), pole ``(-1)^k/(cv)^(k+1)``.
   * z → 1 (only if b = 0): ``L_sv(z) = exp(x1 L_1(z)) · Z_sv + o(1)``
     (single-valuedness turns ``exp(x1 log(1-z)) Z ~Z_y exp(~y1 log(1-z̄))``
     into this), so ``L_w → Σ_{w = 1^k w'} L_{1^k} Z_sv(w')`` and the pole is
     ``Σ_k Z_sv(w[k:]) (-1)^k/(dv')^(k+1)``, with ``Z_sv(w) = L_w(1)``
     (regularized, ``L_1(1) := 0``) = ``sv G(w; 1)`` (Brown 2014).
   * z → ∞ (only if a + b = 1): ``L_sv(z) = exp((x0 + x1) log|z|²) · K +
     O(log^p|z| / |z|)`` with ``K = φ(Z_sv)^(-1) Z_sv`` and φ the
     substitution ``x0 -> -x0 - x1``, ``x1 -> x1``.  Proof: ``L_sv(1/z)`` and
     ``φ(L_sv(z))`` solve the same equation ``∂_z X = ((-x0-x1)/z + x1/(z-1)) X``,
     so ``φ(L_sv(z))^(-1) L_sv(1/z)`` is antiholomorphic, single-valued and of
     logarithmic growth, hence constant; its value follows from z → 1.  With
     ``w = 1/z`` the measure is ``|w|^(2λ-2) d²w (1 + O(w))``,
     ``λ = -(cv + dv')``, and ``L_w(z) → Σ_j (log|z|²)^j/j! K(w[j:])``, so
     the pole is ``Σ_j K(w[j:]) / λ^(j+1)``.  For ``v = S``, ``v' = T`` and
     ``c = d`` this is a pole in ``U = -S-T``, kept as its own rows.

3. *Regular part.*  With the endpoint behaviour subtracted, each term is a
   regularized integral ``R_{a,b}[L_u] = (1/π) ∫ h(z) h(z̄) L_u d²z``,
   ``h(z) = z^(a-1) (1-z)^(b-1)``, in which the log-divergences at 0, 1, ∞
   are dropped (minimal subtraction in ``log ε``; it matches the analytic
   continuation in S, T because ``∫_0^1 u^(λ-1) log^k u du`` is a pure pole).
   Stokes' theorem with a single-valued primitive in z (Schnetz 2014; Brown &
   Dupont 2021): for ``r(z) ∈ {1/z, 1/(1-z)}`` the primitive of ``r(z) L_u``
   is ``Φ = L_{0u}`` resp. ``-L_{1u}``; ``d²z = (i/2) dz∧dz̄`` and
   ``d(Φ s(z̄) dz̄) = ∂_z(Φ) s(z̄) dz∧dz̄``, and a small circle around a
   point p with ``s(z̄) ~ σ/(z̄ - p̄)`` gives ``-2πi σ Φ_reg(p)``.  Hence

   * ``s = 1/z̄``:       ``(1/π) ∫ ∂_zΦ s d²z = Φ(∞) - Φ(0)``,
   * ``s = 1/(1-z̄)``:   ``(1/π) ∫ ∂_zΦ s d²z = Φ(1) - Φ(∞)``,

   with regularized values ``Φ(0) = 0`` (non-empty words), ``Φ(1) = Z_sv``,
   ``Φ(∞) = K``.  So
   ``R_{0,0}[L_u] = Z_sv(0u) - Z_sv(1u)`` (the ∞ terms cancel),
   ``R_{1,0}[L_u] = K(1u) - Z_sv(1u)`` and ``R_{0,1}[L_u] = K(0u)``.

4. *Closed = sv(open) at the level of values.*  ``Z_sv(w) = sv G(w; 1)`` and,
   sv being a ring homomorphism, ``K(w) = sv K_hol(w)`` with
   ``K_hol = φ(Z)^(-1) Z`` built from the interval values ``Z(w) = G(w; 1)``.
   The default route therefore computes every coefficient with the interval
   values (for a = b = 0 it *is* the interval expansion of
   ``x^(cv-1)(1-x)^(dv'-1) G(w; x)``, METHOD.md §4) and applies
   :func:`~lowenergy.svpolylog.svmap.sv` to the result (``method="sv"``).
   ``method="direct"`` uses ``Z_sv`` from the single-valued polylogarithms
   themselves (:func:`~lowenergy.svpolylog.construct.sv_value_at_one`,
   independent of the sv map); the tests compare the two.

Consequence: every coefficient (before multiplication by the integrand's own
MZV constants) lies in the image of sv, the single-valued MZVs.

5. *Any integer shifts: the regular part.*  Split the plane into discs around
   0, 1, ∞ and the rest.  In a disc the integrand is ``|t|^(2μ)`` (μ the local
   regulator: λ0 = c·v at 0, λ1 = d·v' at 1, -(λ0+λ1) at ∞, t the local
   coordinate z, z - 1, 1/z) times a series in ``t, t̄, log|t|²``; a term
   ``|t|^(2(μ+N)-2) log^k|t|²`` integrates to a function of ``μ + N`` alone:
   for N = 0 a pure pole in μ plus terms in the disc radius, for N ≠ 0 (the
   power divergences of a + b ≥ 2 at ∞, or of a < 0 at 0) a function regular
   at μ = 0 (a *massive* pole at μ = -N, which belongs in a Laurent expansion
   at S = T = 0 as its Taylor series).  Expanding ``|z|^(2λ0) |1-z|^(2λ1)`` inside
   the integral (step 1) and dropping, in the cut-off integrals, every term
   ``ε^N log^j ε`` (N ≠ 0 or j ≥ 1) and ``R^N log^j R`` gives exactly the
   Taylor coefficients of the analytic continuation (Hadamard finite part
   FP), so ``I = poles (step 6) + Σ λ0^m λ1^n Σ_u mult(u) R_{a,b}[L_u]`` with
   ``R_{a,b}[L_u] = (1/π) FP ∫ h(z) h(z̄) L_u d²z``, ``h = z^(a-1) (1-z)^(b-1)``.

   *Primitive.*  ``h`` is a rational function with poles at 0, 1 (partial
   fractions).  A single-valued primitive ``Φ = Σ_i r_i(z) L_{w_i}(z)`` of
   ``r(z) L_u(z)`` in z: ``c0/z · L_u -> c0 L_{0u}``, ``c1/(z-1) · L_u ->
   c1 L_{1u}`` (``∂_z L_{au} = L_u/(z-a)``, :mod:`.construct`), and for the
   rest ``R' L_u`` integration by parts, ``R L_u - ∫ R/(z - u_1) L_{u_2...}``,
   which lowers the weight (:func:`_primitive`).

   *Stokes* (Schnetz 2014; Brown & Dupont 2021): ``d(Φ g(z̄) dz̄) = ∂_zΦ g
   dz∧dz̄`` with ``g = h(z̄)``, ``d²z = (i/2) dz∧dz̄``.  On a circle ``|t| = ε``
   only ``t^p t̄^(p-1)`` survives the angular integral, with a factor
   ``ε^(2p)``; the finite part keeps p = 0.  With the orientations (clockwise
   around 0 and 1 as boundary of the outside; counter-clockwise ``|z| = R``,
   where ``z^0 z̄^(-1) = t^0 t̄^1``):

       R_{a,b}[L_u] = - [Φ g]_0(t^0 t̄^(-1)) - [Φ g]_1(t^0 t̄^(-1)) + [Φ g]_∞(t^0 t̄^1),

   ``[X]_P(t^p t̄^q)`` the coefficient without logarithms in the expansion at
   P.  With ``r_i = Σ_j ρ_{i,j} t^(-j) + ...`` and ``g = Σ_m g_m t̄^m`` at P,
   ``[Φ g]_P(t^0 t̄^q) = Σ_i Σ_{j ≥ 0} Σ_m ρ_{i,j} g_m e^P_{w_i}[j, q - m, 0]``,
   where ``e^P_w[p, q, k]`` are the coefficients of ``L_w`` at P
   (:mod:`.sphere_local`; only ``p, q ≥ 0`` occur).  At ∞,
   ``g = (-1)^(b-1) t̄^(2-a-b) (1-t̄)^(b-1)`` and ``r_i`` grows like
   ``z^(a+b-1)``: the *subleading* terms ``p, q ≤ a + b - 1`` of ``L_w`` at ∞
   enter — ``t^j`` from the polynomial growth of Φ, ``t̄^q`` from g.  At 0
   and 1 only ``a ≤ 0`` resp. ``b ≤ 0`` contribute (``q ≤ -a`` resp. ``-b``).
   Check: a = b = 0 gives ``Z_sv(0u) - Z_sv(1u)`` of step 3 (from the point 1;
   at 0 ``L_w(0) = 0``; at ∞ ``g = O(t̄^2)``).

6. *Any integer shifts: the poles.*  Near P the integrand is
   ``|t|^(2μ) |t|^(2α) |1 + σt|^(2(β + λ')) L_w`` with ``(α, β, σ, λ')`` =
   ``(a-1, b-1, -1, λ1)`` at 0, ``(b-1, a-1, +1, λ0)`` at 1 and
   ``(-(a+b), b-1, -1, λ1)`` at ∞ (``d²z = d²t/|t|^4``, ``h(1/t) =
   t^(2-a-b) (t-1)^(b-1)``).  The pole at μ = 0 comes from the coefficient of
   ``|t|^(-2) log^k|t|²/k!`` only (the others are the massive poles of step
   5): with ``n0 = -1 - α`` and ``F_n`` the coefficient of ``λ'^n`` in
   ``|1 + σt|^(2(β + λ'))``,

       pole = Σ_{n, k} λ'^n (-1)^k / μ^(k+1) Σ_{p, q ≤ n0} F_n[p, q] e^P_w[n0 - p, n0 - q, k].

   So a ≥ 1 (b ≥ 1) removes the pole at 0 (at 1); for a + b ≥ 2 the
   massless pole at ∞ stays, with a numerator that involves the subleading
   terms and, through ``λ' = d·T``, powers of T; with
   ``μ = c·U`` these are rewritten with ``T = -S - U`` into U-pole rows
   ``S^i U^k`` plus regular terms (:func:`_u_rewrite`).  a < 0 gives a pole at
   S = 0 with a numerator polynomial in T.  When μ carries no variable and
   ``n0 ≥ 1`` (a power divergence) or a pole coefficient is non-zero, the
   integral diverges for all values of the variables: refused.

   Tests: the complex Beta function at shifts (a, b) with a + b up to 4 and
   negative a or b, exactly to order 8 against the Γ recursion
   ``γ(x+1) = -x² γ(x)`` (A&S 6.1.15); log insertions as derivatives; ``D(z)²``
   at a = b = 1 against 2D quadrature (15 digits).

Examples
--------
>>> from lowenergy.integrand.model import LinearExponent as E
>>> series, upoles = sphere_raw_series(E(-1, -1, 0), E(-1, -1, 1), (), 3)
>>> series[(-1, 0)], series[(0, -1)], upoles
(MZV('-1'), MZV('-1'), {})
>>> print(series[(2, 0)])           # -(1/S + 1/T) exp(-2ζ(3) S T (S+T) + ...)
2*zeta(3)
"""

from __future__ import annotations

from fractions import Fraction
from math import comb
from typing import Callable, Dict, List, Optional, Tuple

from ..errors import InputError
from ..expansion.engine import embeddings, raw_series, words_with_counts
from ..expansion.result import Expansion, add_term
from ..integrand.model import Integrand, LinearExponent, Term
from ..poly import add_into as _radd
from ..poly import add_term as _add_to
from ..words import ones_relaxed
from ..zeta.element import MZV, g_value
from ..zeta.table import TableStore, default_store
from .construct import _cmul

__all__ = [
    "sphere_raw_series",
    "expand_sphere",
    "infinity_value",
    "SphereValues",
    "METHODS",
]

Series = Dict[Tuple[int, int], MZV]
#: U-channel poles: ``{(i, k): MZV}`` is the coefficient of ``S^i U^k`` (k < 0).
UPoles = Dict[Tuple[int, int], MZV]
Word = Tuple[int, ...]

METHODS = ("sv", "direct")

_Raw = Dict[tuple, Fraction]


def _mono(var: Optional[int], power: int) -> Tuple[int, int]:
    """The exponents ``(i, j)`` of ``S^i T^j`` for ``var^power`` (var 0 = S, 1 = T, None = 1)."""
    if var is None or power == 0:
        return (0, 0)
    return (power, 0) if var == 0 else (0, power)


def _regular_slots(word: Word, order: int, x_exp: LinearExponent, y_exp: LinearExponent):
    """The terms of the regular part (module docstring, steps 1 and 3).

    The coefficient of ``(c v)^m (d v')^n`` is a sum over the words ``u`` of
    ``0^m ш 1^n ш word`` with multiplicities; yields ``((i, j), scale,
    [(u, mult), ...])`` for every ``S^i T^j`` with ``i + j ≤ order``, where
    ``scale = c^m d^n``.
    """
    c, vx = x_exp.coeff, x_exp.var
    d, vy = y_exp.coeff, y_exp.var
    zeros_w = sum(1 for letter in word if letter == 0)
    ones_w = len(word) - zeros_w
    for m in range(0, (order if vx is not None else 0) + 1):
        for n in range(0, ((order - m) if vy is not None else 0) + 1):
            e1, e2 = _mono(vx, m), _mono(vy, n)
            i, j = e1[0] + e2[0], e1[1] + e2[1]
            if i + j > order:
                continue
            pairs = []
            for u in words_with_counts(m + zeros_w, n + ones_w):
                mult = embeddings(word, u)
                if mult:
                    pairs.append((u, mult))
            scale = (Fraction(c) ** m if m else Fraction(1)) * (Fraction(d) ** n if n else Fraction(1))
            yield (i, j), scale, pairs


class SphereValues:
    """Regularized values at 1 and ∞ used by the engine, with memoization.

    ``kind = "sv"``: the interval values ``Z(w) = G(w; 1)`` and
    ``K_hol = φ(Z)^(-1) Z`` (the caller applies sv to the results);
    ``kind = "direct"``: ``Z_sv(w) = L_w(1)`` from :mod:`.construct` and
    ``K = φ(Z_sv)^(-1) Z_sv`` (no sv needed afterwards).
    """

    def __init__(self, kind: str, store: TableStore | None = None) -> None:
        if kind not in METHODS:
            raise InputError(f"unknown method {kind!r}", hint="use 'sv' or 'direct'")
        self.kind = kind
        self.store = store or default_store()
        self._z: Dict[Word, _Raw] = {}
        self._phi: Dict[Word, _Raw] = {}
        self._k: Dict[Word, _Raw] = {}
        self._engines: Dict[Tuple[int, int], "_ShiftedEngine"] = {}

    def z_raw(self, w: Word) -> _Raw:
        got = self._z.get(w)
        if got is None:
            if not w:
                got = {(): Fraction(1)}
            elif self.kind == "sv":
                got = g_value(w, store=self.store).as_dict()
            else:
                from .construct import sv_value_at_one

                got = sv_value_at_one(w, store=self.store).as_dict()
            self._z[w] = got
        return got

    def phi_raw(self, w: Word) -> _Raw:
        """Coefficient of ``x_w`` in ``φ(Z)``: ``Σ_v (-1)^(zeros of v) Z(v)``
        over the words v with ``v_i = 0`` where ``w_i = 0``."""
        got = self._phi.get(w)
        if got is not None:
            return got
        acc: _Raw = {}
        for v, sign in ones_relaxed(w):
            _radd(acc, self.z_raw(v), sign)
        self._phi[w] = acc
        return acc

    def k_raw(self, w: Word) -> _Raw:
        """``K(w)``, the coefficient of ``x_w`` in ``φ(Z)^(-1) Z``, computed as that of
        ``χ(Z)``, χ the substitution ``x0 -> x0``, ``x1 -> -x0 - x1``:
        ``K(w) = Σ_v (-1)^(ones of v) Z(v)`` over the words v with ``v_i = 1``
        where ``w_i = 1`` (no products of MZVs).

        Why: with ``f(z) = z/(z-1)``, ``∂_z L_sv(f(z)) = (x0/z + (-x0-x1)/(z-1)) L_sv(f(z))``
        (``f'/f = 1/z - 1/(z-1)``, ``f'/(f-1) = -1/(z-1)``) and ``|f(z)| ~ |z|`` at 0,
        so ``L_sv(f(z)) = χ(L_sv(z))`` by the uniqueness of single-valued
        solutions with given behaviour at 0 (as in step 2).  As z -> 1,
        f(z) -> ∞ with ``log|f|² = -log|1-z|² + o(1)``; comparing
        ``exp((x0+x1) log|f|²) K`` with ``χ(exp(x1 log|1-z|²) Z_sv) =
        exp(-(x0+x1) log|1-z|²) χ(Z_sv)`` gives ``K = χ(Z_sv)``.  For the
        ``"sv"`` kind, ``sv(χ(Z)) = χ(Z_sv) = K`` because sv acts on the
        coefficients.  The tests compare with :meth:`k_raw_via_phi`.
        """
        got = self._k.get(w)
        if got is not None:
            return got
        zeros = [i for i, a in enumerate(w) if a == 0]
        ones_w = len(w) - len(zeros)
        acc: _Raw = {}
        for mask in range(1 << len(zeros)):
            v = list(w)
            flipped = 0
            for bit, pos in enumerate(zeros):
                if mask >> bit & 1:
                    v[pos] = 1
                    flipped += 1
            _radd(acc, self.z_raw(tuple(v)), -1 if (ones_w + flipped) % 2 else 1)
        self._k[w] = acc
        return acc

    def k_raw_via_phi(self, w: Word) -> _Raw:
        """``K(w)`` from its definition ``φ(Z)^(-1) Z``; the inverse of the
        group-like ``φ(Z)`` is its antipode ``x_p -> (-1)^|p| x_rev(p)``."""
        w = tuple(w)
        acc: _Raw = {}
        for j in range(len(w) + 1):
            p, q = w[:j], w[j:]
            left = self.phi_raw(tuple(reversed(p)))
            if not left:
                continue
            right = self.z_raw(q)
            if not right:
                continue
            _radd(acc, _cmul(left, right), -1 if j % 2 else 1)  # _radd drops the zeros
        return acc

    def z(self, w: Word) -> MZV:
        return MZV(self.z_raw(tuple(w)))

    def k(self, w: Word) -> MZV:
        return MZV(self.k_raw(tuple(w)))

    def finish(self, x: MZV) -> MZV:
        """Map a coefficient computed with these values to the sphere value."""
        if self.kind == "direct" or not x:
            return x
        from .svmap import sv

        return sv(x, store=self.store)


def infinity_value(word, store: TableStore | None = None) -> MZV:
    """The regularized value of ``L_w`` at ∞: ``L_w(z) = Σ_j log^j|z|²/j! ·
    infinity_value(w[j:]) + O(log^p|z|/|z|)`` (computed from ``L_w(1)``).

    >>> infinity_value((0,)) == 0 and infinity_value((1,)) == 0
    True
    """
    return SphereValues("direct", store).k(tuple(word))


def _check_shift(x_exp: LinearExponent, y_exp: LinearExponent) -> Tuple[int, int]:
    """``(a, b)`` from the exponents ``A = a - 1 + c·v``, ``B = b - 1 + d·v'``.

    Every pair of integers is accepted here; divergences that no variable
    regulates are refused where they are found (:func:`_shifted_poles`).
    """
    return x_exp.shift + 1, y_exp.shift + 1


def sphere_raw_series(
    x_exp: LinearExponent,
    y_exp: LinearExponent,
    word: Word,
    order: int,
    values: Optional[SphereValues] = None,
    _general: bool = False,
) -> Tuple[Series, UPoles]:
    """Laurent series of ``(1/π) ∫ d²z |z|^(2·x_exp) |1-z|^(2·y_exp) L_word(z)``.

    ``x_exp`` is the exponent of ``|z|²`` (so ``abs(z)^(-2*S-2)`` is
    ``LinearExponent(-1, -1, 0)``).  Returns ``(series, upoles)``: ``series``
    maps ``(i, j)`` to the coefficient of ``S^i T^j`` (poles in S or T
    included) for ``i + j ≤ order``; ``upoles`` maps ``(i, k)`` to the
    coefficient of ``S^i U^k`` (k < 0, ``U = -S-T``; only ``(0, k)`` occurs
    here).  Everything exact.
    """
    values = values or SphereValues("sv")
    word = tuple(word)
    a, b = _check_shift(x_exp, y_exp)
    if _general or (a, b) not in ((0, 0), (1, 0), (0, 1)):
        return _shifted_series(x_exp, y_exp, word, order, values, a, b)
    c, vx = x_exp.coeff, x_exp.var
    d, vy = y_exp.coeff, y_exp.var
    out: Series = {}
    upoles: UPoles = {}

    add, mono = _add_to, _mono

    # ---- the route through the interval expansion (a = b = 0) ---------------
    if values.kind == "sv" and a == 0 and b == 0:
        shadow = raw_series(x_exp, y_exp, word, order)
        return {k: v for k, v in ((k, values.finish(v)) for k, v in shadow.items()) if v}, {}

    # ---- pole at 0 ------------------------------------------------------------
    if a == 0 and all(letter == 0 for letter in word):
        k = len(word)
        if vx is None:
            raise InputError(
                "the integral diverges at z = 0 for all values of the expansion variables",
                hint="the factor abs(z)^(-2) needs a variable in its exponent, e.g. abs(z)^(-2*S-2)",
            )
        i, j = mono(vx, -(k + 1))
        if i + j <= order:
            add(out, (i, j), MZV.rational(Fraction((-1) ** k) / c ** (k + 1)))
    # ---- pole at 1 ------------------------------------------------------------
    if b == 0:
        k = 0
        while True:
            dk = values.z(word[k:])
            if dk:
                if vy is None:
                    raise InputError(
                        "the integral diverges at z = 1 for all values of the expansion variables",
                        hint="the factor abs(1-z)^(-2) needs a variable in its exponent, e.g. abs(1-z)^(-2*T-2)",
                    )
                i, j = mono(vy, -(k + 1))
                if i + j <= order:
                    add(out, (i, j), values.finish(dk) * (Fraction((-1) ** k) / d ** (k + 1)))
            if k >= len(word) or word[k] != 1:
                break
            k += 1
    # ---- pole at infinity -----------------------------------------------------
    if a + b == 1:
        for jj in range(len(word) + 1):
            ej = values.k(word[jj:])
            if not ej:
                continue
            ej = values.finish(ej)
            power = jj + 1
            if vx is None and vy is None:
                raise InputError(
                    "the integral diverges at z = ∞ for all values of the expansion variables",
                    hint="the total exponent at infinity needs a variable, e.g. abs(z)^(-2*S-2)*abs(1-z)^(-2*T)",
                )
            if vx is None or vy is None or vx == vy:
                var = vx if vx is not None else vy
                lam = -((c if vx is not None else 0) + (d if vy is not None else 0))
                if lam == 0:
                    raise InputError(
                        "the integral diverges at z = ∞ for all values of the expansion variables",
                        hint="the exponents of |z| and |1-z| cancel at infinity",
                    )
                i, j = mono(var, -power)
                if i + j <= order:
                    add(out, (i, j), ej * (Fraction(1) / lam ** power))
            else:
                if c != d:
                    raise InputError(
                        "the pole at z = ∞ would be in a combination of the variables other than U = -S-T",
                        hint="use equal coefficients of the variables in the exponents of |z| and |1-z|",
                    )
                # λ = -c (S + T) = c U
                if -power <= order:
                    add(upoles, (0, -power), ej * (Fraction(1) / c ** power))

    # ---- regular part -----------------------------------------------------------
    for key, scale, pairs in _regular_slots(word, order, x_exp, y_exp):
        acc: _Raw = {}
        for u, mult in pairs:
            if a == 0 and b == 0:
                _radd(acc, values.z_raw((0,) + u), mult)
                _radd(acc, values.z_raw((1,) + u), -mult)
            elif a == 1:
                _radd(acc, values.k_raw((1,) + u), mult)
                _radd(acc, values.z_raw((1,) + u), -mult)
            else:
                _radd(acc, values.k_raw((0,) + u), mult)
        if acc:
            add(out, key, values.finish(MZV(acc)) * scale)
    return out, upoles


# ---------------------------------------------------------------------------
# general integer shifts: Stokes with rational × L primitives (module docstring, step 5)
# ---------------------------------------------------------------------------

# A rational function of z with poles only at 0, 1 (and ∞) in partial fractions:
# {("z", k): c} for c z^k (k any integer), {("y", k): c} for c (z-1)^(-k) (k ≥ 1).
Rational = Dict[Tuple[str, int], Fraction]


def _qadd(acc: Rational, key, value) -> None:
    y = acc.get(key, 0) + value
    if y:
        acc[key] = y
    else:
        acc.pop(key, None)


def _rat_over(r: Rational, a: int) -> Rational:
    """``r(z) / (z - a)`` (a = 0 or 1) in partial fractions."""
    out: Rational = {}
    for (kind, k), c in r.items():
        if a == 0:
            if kind == "z":
                _qadd(out, ("z", k - 1), c)
            else:
                # 1/(z (z-1)^k) = (-1)^k/z + Σ_{j=1..k} (-1)^(k-j)/(z-1)^j
                _qadd(out, ("z", -1), c * (-1) ** k)
                for j in range(1, k + 1):
                    _qadd(out, ("y", j), c * (-1) ** (k - j))
        else:
            if kind == "y":
                _qadd(out, ("y", k + 1), c)
            elif k >= 0:
                # z^k/(z-1) = Σ_{j<k} z^j + 1/(z-1)
                for j in range(k):
                    _qadd(out, ("z", j), c)
                _qadd(out, ("y", 1), c)
            else:
                # 1/(z^m (z-1)) = 1/(z-1) - Σ_{j=1..m} z^(-j)
                _qadd(out, ("y", 1), c)
                for j in range(1, -k + 1):
                    _qadd(out, ("z", -j), -c)
    return out


def _rat_times_linear(r: Rational, a: int) -> Rational:
    """``r(z) · (z - a)`` (a = 0 or 1)."""
    out: Rational = {}
    for (kind, k), c in r.items():
        if kind == "z":
            _qadd(out, ("z", k + 1), c)
            if a == 1:
                _qadd(out, ("z", k), -c)
        else:
            lower = ("y", k - 1) if k > 1 else ("z", 0)
            _qadd(out, lower, c)
            if a == 0:  # z = (z - 1) + 1
                _qadd(out, ("y", k), c)
    return out


def _h_rational(a: int, b: int) -> Rational:
    """``h(z) = z^(a-1) (1-z)^(b-1)`` in partial fractions."""
    r: Rational = {("z", 0): Fraction(1)}
    for _ in range(abs(a - 1)):
        r = _rat_times_linear(r, 0) if a - 1 > 0 else _rat_over(r, 0)
    for _ in range(abs(b - 1)):
        # (1 - z) = -(z - 1)
        r = _rat_times_linear(r, 1) if b - 1 > 0 else _rat_over(r, 1)
        r = {key: -c for key, c in r.items()}
    return r


def _rat_primitive(r: Rational) -> Tuple[Rational, Fraction, Fraction]:
    """``(R, c0, c1)`` with ``r = R' + c0/z + c1/(z-1)``."""
    out: Rational = {}
    c0 = c1 = Fraction(0)
    for (kind, k), c in r.items():
        if kind == "z":
            if k == -1:
                c0 += c
            else:
                _qadd(out, ("z", k + 1), c / (k + 1))
        elif k == 1:
            c1 += c
        else:
            _qadd(out, ("y", k - 1), c / (1 - k))
    return out, c0, c1


def _primitive(r: Rational, word: Word) -> List[Tuple[Rational, Word]]:
    """A single-valued primitive in z of ``r(z) L_word(z)``: ``[(r_i, w_i)]``
    with ``Φ = Σ r_i(z) L_{w_i}(z)``.

    ``c0/z · L_u`` has the primitive ``c0 L_{0u}``, ``c1/(z-1) · L_u`` has
    ``c1 L_{1u}``; for the rest ``R' L_u`` integrate by parts:
    ``R L_u - ∫ R/(z - u_1) L_{u_2...}``.  Each step lowers the weight.
    """
    out: List[Tuple[Rational, Word]] = []
    u = tuple(word)
    while r:
        big_r, c0, c1 = _rat_primitive(r)
        if c0:
            out.append(({("z", 0): c0}, (0,) + u))
        if c1:
            out.append(({("z", 0): c1}, (1,) + u))
        if not big_r:
            break
        out.append((big_r, u))
        if not u:
            break
        r = {key: -c for key, c in _rat_over(big_r, u[0]).items()}
        u = u[1:]
    return out


def _rat_principal(r: Rational, point: str) -> Dict[int, Fraction]:
    """``{j: coefficient of t^(-j)}`` (j ≥ 0) of r at ``point`` (local coordinate t)."""
    out: Dict[int, Fraction] = {}
    for (kind, k), c in r.items():
        if point == "0":
            if kind == "z" and k <= 0:
                out[-k] = out.get(-k, 0) + c
            elif kind == "y":
                out[0] = out.get(0, 0) + c * (-1) ** k
        elif point == "1":
            if kind == "y":
                out[k] = out.get(k, 0) + c
            else:  # z^k = (1 + t)^k
                out[0] = out.get(0, 0) + c
        else:  # t = 1/z: only z^k, k ≥ 0, reaches t^(-j), j ≥ 0
            if kind == "z" and k >= 0:
                out[k] = out.get(k, 0) + c
    return {j: c for j, c in out.items() if c}


def _gbinom(x: int, n: int) -> Fraction:
    """Generalized binomial coefficient ``x (x-1) ... (x-n+1) / n!`` for any integer x."""
    out = Fraction(1)
    for i in range(n):
        out = out * (x - i) / (i + 1)
    return out


def _h_local(a: int, b: int, point: str, top: int) -> Dict[int, Fraction]:
    """``{m: coefficient of t^m}`` (m ≤ top) of ``h = z^(a-1)(1-z)^(b-1)`` at ``point``.

    At 0: ``t^(a-1) (1-t)^(b-1)``; at 1: ``(1+t)^(a-1) (-t)^(b-1)``;
    at ∞ (``t = 1/z``): ``(-1)^(b-1) t^(2-a-b) (1-t)^(b-1)``.
    """
    out: Dict[int, Fraction] = {}
    if point == "0":
        lead, x, sign, pre = a - 1, b - 1, -1, 1
    elif point == "1":
        lead, x, sign, pre = b - 1, a - 1, 1, -1 if (b - 1) % 2 else 1
    else:
        lead, x, sign, pre = 2 - a - b, b - 1, -1, -1 if (b - 1) % 2 else 1
    n = 0
    while lead + n <= top:
        c = pre * _gbinom(x, n) * sign ** n
        if c:
            out[lead + n] = c
        n += 1
    return out


#: ``(sign, q*)`` of the boundary term at each point: ``sign · coefficient of t^0 t̄^(q*)``.
_BOUNDARY = {"0": (-1, -1), "1": (-1, -1), "inf": (1, 1)}


class _ShiftedEngine:
    """Regularized integrals ``R_{a,b}[L_u]`` and pole numerators for one (a, b)."""

    def __init__(self, a: int, b: int, values: SphereValues, max_weight: int) -> None:
        from .sphere_local import LocalExpansion

        self.a, self.b = a, b
        self.values = values
        self.max_weight = max_weight
        self.h = _h_rational(a, b)
        # the largest powers of t, t̄ needed at each point (boundary terms and poles)
        need = {"0": max(-a, 0), "1": max(-b, 0), "inf": max(a + b - 1, 0)}
        y1 = _y1_raw(max_weight + 1, values.store)
        constants = {
            "0": lambda w: {} if w else {(): Fraction(1)},
            "1": lambda w: values.finish(values.z(w)).as_dict(),
            "inf": lambda w: values.finish(values.k(w)).as_dict(),
        }
        self.local = {p: LocalExpansion(p, need[p], need[p], constants[p], y1) for p in need}
        self.g = {p: _h_local(a, b, p, _BOUNDARY[p][1]) for p in need}
        self._prim: Dict[Word, List[Tuple[Rational, Word]]] = {}

    def regular(self, u: Word) -> _Raw:
        """``R_{a,b}[L_u] = (1/π) FP ∫ h(z) h(z̄) L_u d²z`` (step 5), single-valued."""
        phi = _primitive(self.h, u)
        acc: _Raw = {}
        for point, (sign, qstar) in _BOUNDARY.items():
            g = self.g[point]
            if not g:
                continue
            local = self.local[point]
            for r, w in phi:
                principal = _rat_principal(r, point)
                if not principal:
                    continue
                e = None
                for j, rc in principal.items():
                    for m, gc in g.items():
                        q = qstar - m
                        if q < 0:
                            continue
                        if e is None:
                            e = local.coefficients(w)
                        x = e.get((j, q, 0))
                        if x:
                            _radd(acc, x, sign * rc * gc)
        return acc


_Y1: Dict[Tuple[str, int], Dict[Word, _Raw]] = {}


def _y1_raw(max_weight: int, store: TableStore) -> Dict[Word, _Raw]:
    """y1 up to ``max_weight`` (raw dicts), built with the values at 1 and shared with them."""
    from .construct import _Construction, _default_weight, _remember_values_at_one

    key = str(store.directory)
    for (k, n), got in _Y1.items():
        if k == key and n >= max_weight:
            return got
    built = _Construction(_default_weight((0,) * max_weight), store)
    _remember_values_at_one(built, store)
    got = {w: built.ring.to_mzv(c).as_dict() for level in built.y1 for w, c in level.items()}
    _Y1[(key, built.n)] = got
    return got


def _bseries_mul(x: Dict[Tuple[int, int], Fraction], y: Dict[Tuple[int, int], Fraction],
                 top: int) -> Dict[Tuple[int, int], Fraction]:
    out: Dict[Tuple[int, int], Fraction] = {}
    for (p1, q1), c1 in x.items():
        for (p2, q2), c2 in y.items():
            p, q = p1 + p2, q1 + q2
            if p <= top and q <= top:
                out[(p, q)] = out.get((p, q), 0) + c1 * c2
    return {k: v for k, v in out.items() if v}


def _far_factor(beta: int, sigma: int, top: int, nmax: int) -> List[Dict[Tuple[int, int], Fraction]]:
    """``F_n``: the coefficient of ``λ^n`` in ``|1 + σt|^(2(β + λ))`` as a series in ``t, t̄``
    (powers ≤ top each), for n ≤ nmax."""
    base = {}
    for p in range(top + 1):
        for q in range(top + 1):
            c = _gbinom(beta, p) * _gbinom(beta, q) * sigma ** (p + q)
            if c:
                base[(p, q)] = c
    log1 = {}
    for m in range(1, top + 1):
        c = Fraction((-1) ** (m + 1) * sigma ** m, m)
        log1[(m, 0)] = log1.get((m, 0), 0) + c
        log1[(0, m)] = log1.get((0, m), 0) + c
    out = [base]
    power = {(0, 0): Fraction(1)}
    for n in range(1, nmax + 1):
        power = {k: v / n for k, v in _bseries_mul(power, log1, top).items()}
        out.append(_bseries_mul(base, power, top))
    return out


def _shifted_poles(engine: _ShiftedEngine, x_exp: LinearExponent, y_exp: LinearExponent, word: Word,
                   order: int, out: Series, upoles: UPoles, add, mono) -> None:
    """The pole parts at 0, 1, ∞ for any integer shifts (module docstring, step 6)."""
    a, b = engine.a, engine.b
    c, vx = Fraction(x_exp.coeff), x_exp.var
    d, vy = Fraction(y_exp.coeff), y_exp.var
    lam0 = {vx: c} if vx is not None else {}
    lam1 = {vy: d} if vy is not None else {}
    near_inf: Dict[int, Fraction] = {}
    for lam in (lam0, lam1):
        for v, x in lam.items():
            near_inf[v] = near_inf.get(v, 0) - x
    near_inf = {v: x for v, x in near_inf.items() if x}
    places = (
        # point, α (|t|^(2α)), β and σ of |1 + σt|^(2β), near regulator μ, far regulator
        ("0", a - 1, b - 1, -1, lam0, (vy, d)),
        ("1", b - 1, a - 1, 1, lam1, (vx, c)),
        ("inf", -(a + b), b - 1, -1, near_inf, (vy, d)),
    )
    where = {"0": "z = 0", "1": "z = 1", "inf": "z = ∞"}
    for point, alpha, beta, sigma, mu, (far_var, far_coeff) in places:
        top = -1 - alpha
        if top < 0:
            continue
        if not mu and top >= 1:
            raise InputError(
                f"the integral diverges at {where[point]} for all values of the expansion variables",
                hint="the exponent there needs a multiple of a variable (a power divergence cannot be "
                     "continued analytically without one)",
            )
        nmax = 2 * top if far_var is not None else 0
        far = _far_factor(beta, sigma, top, nmax)
        e = engine.local[point].coefficients(word)
        for n in range(nmax + 1):
            for k in range(len(word) + 1):
                acc: _Raw = {}
                for (p, q), fc in far[n].items():
                    x = e.get((top - p, top - q, k))
                    if x:
                        _radd(acc, x, fc)
                if not acc:
                    continue
                value = MZV(acc) * Fraction((-1) ** k)
                if not mu:
                    raise InputError(
                        f"the integral diverges at {where[point]} for all values of the expansion variables",
                        hint="the exponent there needs a multiple of a variable, e.g. abs(z)^(-2*S-2)",
                    )
                num = mono(far_var, n) if n else (0, 0)
                scale = far_coeff ** n if n else Fraction(1)
                if len(mu) == 1:
                    (v, gamma), = mu.items()
                    pole = mono(v, -(k + 1))
                    key = (num[0] + pole[0], num[1] + pole[1])
                    if key[0] + key[1] <= order:
                        add(out, key, value * (scale / gamma ** (k + 1)))
                    continue
                if c != d:
                    raise InputError(
                        "the pole at z = ∞ would be in a combination of the variables other than U = -S-T",
                        hint="use equal coefficients of the variables in the exponents of |z| and |1-z|",
                    )
                # μ = -c (S + T) = c U
                for (kind, i, j), q in _u_rewrite(num, -(k + 1)).items():
                    if i + j > order:
                        continue
                    add(upoles if kind == "u" else out, (i, j), value * (q * scale / c ** (k + 1)))


# ---------------------------------------------------------------------------
# whole integrands
# ---------------------------------------------------------------------------

def _u_rewrite(key: Tuple[int, ...], k: int):
    """``S^p T^q · U^k`` (k < 0) as ``{("u", i, kk) | ("st", i, j): rational}``:
    T = -S - U, the U-poles keep numerators in S, the rest goes back to S, T."""
    p, q = key[0], key[1]
    out: Dict[tuple, Fraction] = {}
    for l in range(q + 1):
        # (-S-U)^q = Σ_l C(q,l) (-S)^(q-l) (-U)^l
        coef = Fraction(comb(q, l) * (-1) ** q)
        spow, upow = p + q - l, l + k
        if upow < 0:
            kk = ("u", spow, upow)
            out[kk] = out.get(kk, 0) + coef
        else:
            # U^upow = (-S-T)^upow
            for r in range(upow + 1):
                kk = ("st", spow + upow - r, r)
                out[kk] = out.get(kk, 0) + coef * comb(upow, r) * (-1) ** upow
    return {kk: v for kk, v in out.items() if v}


def expand_sphere(
    integrand: Integrand,
    order: int,
    progress: Optional[Callable[[str], None]] = None,
    method: str = "sv",
) -> Expansion:
    """Exact low-energy expansion of a sphere integrand to total order ``order``.

    The result's ``coefficients[(i, j)]`` are those of ``S^i T^j`` (poles in
    S, T included); U-channel poles ``S^i U^k`` (k < 0, ``U = -S-T``) are in
    ``expansion.u_poles[(i, k)]`` (numerators written in S).  The total
    order of ``S^i U^k`` is ``i + k``.
    """
    if not isinstance(order, int) or isinstance(order, bool) or order < 0:
        raise InputError(f"the order must be a non-negative integer, got {order!r}")
    values = SphereValues(method)
    nparams = len(integrand.parameters)
    result: Dict[Tuple[int, int], Dict[Tuple[int, ...], MZV]] = {}
    upoles: Dict[Tuple[int, int], Dict[Tuple[int, ...], MZV]] = {}

    terms: List[Term] = list(integrand.terms)
    for index, term in enumerate(terms):
        if not term.coefficient:
            continue
        min_deg = min(k[0] + k[1] for k in term.coefficient)
        raw_order = order - min_deg
        if raw_order < -(len(term.word) + 1):
            continue
        try:
            series, up = sphere_raw_series(term.x_exp, term.y_exp, term.word, raw_order, values)
        except InputError as err:
            raise err.located(source=integrand.source, line=term.source_line, term=term.text)
        for (i, j), value in series.items():
            for key, coef in term.coefficient.items():
                ii, jj = i + key[0], j + key[1]
                if ii + jj > order:
                    continue
                add_term(result, (ii, jj), tuple(key[2 : 2 + nparams]), value * coef)
        for (i, k), value in up.items():
            for key, coef in term.coefficient.items():
                pkey = tuple(key[2 : 2 + nparams])
                for (kind, x, y), q in _u_rewrite((key[0] + i, key[1]), k).items():
                    if x + y > order:
                        continue
                    add_term(upoles if kind == "u" else result, (x, y), pkey, value * coef * q)
        if progress:
            progress(f"term {index + 1}/{len(terms)}")
    return Expansion.of_integrand(integrand, order, result, u_poles=upoles, domain="sphere")




def _shifted_series(x_exp: LinearExponent, y_exp: LinearExponent, word: Word, order: int,
                    values: SphereValues, a: int, b: int) -> Tuple[Series, UPoles]:
    """:func:`sphere_raw_series` for any integer shifts (steps 5 and 6 of the module docstring)."""
    longest = len(word) + max(order, 0) + 1
    engine = values._engines.get((a, b))
    if engine is None or engine.max_weight < longest:
        engine = _ShiftedEngine(a, b, values, longest)
        values._engines[(a, b)] = engine
    out: Series = {}
    upoles: UPoles = {}
    _shifted_poles(engine, x_exp, y_exp, word, order, out, upoles, _add_to, _mono)
    for key, scale, pairs in _regular_slots(word, order, x_exp, y_exp):
        acc: _Raw = {}
        for u, mult in pairs:
            _radd(acc, engine.regular(u), mult)
        if acc:
            _add_to(out, key, MZV(acc) * scale)
    return out, upoles
