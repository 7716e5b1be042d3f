"""Sphere integrals: the low-energy expansion of closed-string integrands.

We expand, to total order N in the expansion variables (S, T; U = -S-T),

    I(S, T) = (1/π) ∫_C d²z |z|^(2A) |1-z|^(2B) F(z),     d²z = d(Re z) d(Im z),

with ``A = a - 1 + c·v``, ``B = b - 1 + d·v'`` (integers a, b; rationals c, d;
v, v' expansion variables) and ``F = Σ_w f_w L_w(z)`` a combination of Brown's
single-valued polylogarithms (:mod:`.construct`; products of L's are
shuffled into single words because ``L_u L_v = L_{u ш v}``).  Supported
shifts: ``a, b ≥ 0`` and ``a + b ≤ 1`` (at most a simple power of |z|^-2 at
infinity), which covers ``|z|^(-2S-2)|1-z|^(-2T-2)`` and the shifts that
produce a massless U-channel pole.

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


def _radd(acc: _Raw, x: _Raw, f=1) -> None:
    for k, v in x.items():
        y = acc.get(k, 0) + f * v
        if y:
            acc[k] = y
        else:
            acc.pop(k, None)


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
        ones = [i for i, a in enumerate(w) if a == 1]
        acc: _Raw = {}
        for mask in range(1 << len(ones)):
            v = [0] * len(w)
            for bit, pos in enumerate(ones):
                if mask >> bit & 1:
                    v[pos] = 1
            zeros = len(w) - bin(mask).count("1")
            _radd(acc, self.z_raw(tuple(v)), -1 if zeros % 2 else 1)
        self._phi[w] = acc
        return acc

    def k_raw(self, w: Word) -> _Raw:
        """``K(w)``: coefficient of ``x_w`` in ``φ(Z)^(-1) Z``; the inverse of
        the group-like ``φ(Z)`` is its antipode ``x_p -> (-1)^|p| x_rev(p)``."""
        got = self._k.get(w)
        if got is not None:
            return got
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
        self._k[w] = acc
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
    a, b = x_exp.shift + 1, y_exp.shift + 1
    if a < 0 or b < 0 or a + b > 1:
        raise InputError(
            f"the exponents |z|^({2 * x_exp.shift}+...) |1-z|^({2 * y_exp.shift}+...) are not supported on the sphere",
            hint="supported: |z|^(2*A) |1-z|^(2*B) with A, B = -1 + (multiple of a variable), or one of them "
            "0 + (multiple of a variable), e.g. abs(z)^(-2*S-2)*abs(1-z)^(-2*T) (a massless U-channel pole)",
        )
    return a, b


def sphere_raw_series(
    x_exp: LinearExponent,
    y_exp: LinearExponent,
    word: Word,
    order: int,
    values: Optional[SphereValues] = None,
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
    c, vx = x_exp.coeff, x_exp.var
    d, vy = y_exp.coeff, y_exp.var
    out: Series = {}
    upoles: UPoles = {}

    def add(target, key, value: MZV) -> None:
        if not value:
            return
        y = target.get(key, MZV()) + value
        if y:
            target[key] = y
        else:
            target.pop(key, None)

    def mono(var: Optional[int], power: int) -> Tuple[int, int]:
        if var is None or power == 0:
            return (0, 0)
        return (power, 0) if var == 0 else (0, power)

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
    zeros_w = sum(1 for letter in word if letter == 0)
    ones_w = len(word) - zeros_w
    max_m = order if vx is not None else 0
    for m in range(0, max_m + 1):
        max_n = (order - m) if vy is not None else 0
        for n in range(0, max_n + 1):
            e1, e2 = mono(vx, m), mono(vy, n)
            i, j = e1[0] + e2[0], e1[1] + e2[1]
            if i + j > order:
                continue
            acc: _Raw = {}
            for u in words_with_counts(m + zeros_w, n + ones_w):
                mult = embeddings(word, u)
                if not mult:
                    continue
                if a == 0 and b == 0:
                    _radd(acc, values.z_raw((0,) + u), mult)
                    _radd(acc, values.z_raw((1,) + u), -mult)
                elif a == 1:
                    _radd(acc, values.k_raw((1,) + u), mult)
                    _radd(acc, values.z_raw((1,) + u), -mult)
                else:
                    _radd(acc, values.k_raw((0,) + u), mult)
            if acc:
                scale = (c ** m if m else Fraction(1)) * (d ** n if n else Fraction(1))
                add(out, (i, j), values.finish(MZV(acc)) * scale)
    return out, upoles


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
