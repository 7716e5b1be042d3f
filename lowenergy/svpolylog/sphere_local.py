"""Low orders of ``L_w`` around z = 0, 1 and ∞, from the two differential equations.

The shifted sphere integrals of :mod:`.sphere` need, for thousands of words
w, a few coefficients of the expansion of ``L_w`` at z = 0, 1 or ∞ in the
local coordinate ``t`` (``t = z``, ``t = z - 1``, ``t = 1/z``):

    L_w(z) = Σ_{p, q ≥ 0} Σ_{k ≥ 0} e_w[p, q, k] t^p t̄^q (log|t|²)^k / k!

(single-valuedness collapses ``log t`` and ``log t̄`` into ``log|t|²``,
:mod:`.sphere_residues` step 1), only for ``p ≤ pmax``, ``q ≤ qmax``.
:mod:`.sphere_residues` builds such series from the full ``G(u; z) G(v; z̄)``
form of ``L_w``; that costs seconds per word at weight 11, so here the
coefficients come from a recursion on the word instead (the tests compare
the two).

Derivation
----------
Holomorphic equation (:mod:`.construct`): ``∂_z L_{a u} = L_u / (z - a)``.
In the local coordinate, ``∂_t L_{a u} = L_u · ω_a(t)`` with the Laurent series

* at 0:  ``ω_0 = 1/t``,                ``ω_1 = 1/(t - 1) = -Σ_n t^n``;
* at 1:  ``ω_0 = 1/(1 + t) = Σ_n (-t)^n``, ``ω_1 = 1/t``;
* at ∞:  ``ω_0 = -1/t``,               ``ω_1 = -1/(t(1 - t)) = -1/t - Σ_n t^n``
  (``dz/dt = -1/t²``).

Antiholomorphic equation: ``L_sv = L(z) · ~σ(L(z̄))`` (:mod:`.construct`),
σ a homomorphism (``x0 -> x0``, ``x1 -> y1``) and ``~`` an anti-homomorphism,
so ``∂_z̄ L_sv = L_sv · (x0/z̄ + ~y1/(z̄ - 1))``, i.e.

    ∂_t̄ L_w = Σ_{w = u v, |v| ≥ 1} L_u · κ_v(t̄),   κ_v = [v = 0] ω_0 + y1(reversed v) · ω_1,

with ``y1(s)`` the coefficient of ``x_s`` in y1 (``y1(1) = 1``, the next
terms have degree 4).  With ``∂_t (t^p (log|t|²)^k/k!) = p t^(p-1) (...)^k/k! +
t^(p-1) (...)^(k-1)/(k-1)!`` the coefficient of ``t^(p-1) t̄^q (log|t|²)^k/k!``
of the first equation reads

    p e_w[p, q, k] + e_w[p, q, k+1] = Σ_{p'} ω_{w_1}[p - 1 - p'] e_u[p', q, k]   (u = w without w_1),

which fixes every ``e_w[p, q, k]`` with ``p ≥ 1`` (downwards from the top k)
or ``k ≥ 1``; the second equation, at ``t^0 t̄^(q-1) (log|t|²)^0``,

    q e_w[0, q, 0] + e_w[0, q, 1] = Σ_{w = u v} Σ_{q'} κ_v[q - 1 - q'] e_u[0, q', 0],

fixes ``e_w[0, q, 0]`` for ``q ≥ 1``.  What is left is the regularized value
``e_w[0, 0, 0]``: ``δ_{w,∅}`` at 0, ``Z_sv(w) = L_w(1)`` at 1 and
``K(w)`` at ∞ (:mod:`.sphere`), given by the caller.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Callable, Dict, Tuple

from ..poly import add_into as _radd
from .construct import _cmul

__all__ = ["POINTS", "LocalExpansion", "omega"]

Word = Tuple[int, ...]
Raw = Dict[tuple, Fraction]
Key = Tuple[int, int, int]

#: The three points, as names.
POINTS = ("0", "1", "inf")


def omega(point: str, letter: int, top: int) -> Dict[int, Fraction]:
    """Laurent coefficients ``{n: c}`` (n ≥ -1, n ≤ top) of ``ω_letter`` at ``point``.

    >>> omega("inf", 1, 2) == {-1: -1, 0: -1, 1: -1, 2: -1}
    True
    """
    if point == "0":
        return {-1: Fraction(1)} if letter == 0 else {n: Fraction(-1) for n in range(top + 1)}
    if point == "1":
        return {n: Fraction((-1) ** n) for n in range(top + 1)} if letter == 0 else {-1: Fraction(1)}
    if point == "inf":
        out = {-1: Fraction(-1)}
        if letter == 1:
            out.update({n: Fraction(-1) for n in range(top + 1)})
        return out
    raise ValueError(f"unknown point {point!r}")


class LocalExpansion:
    """The coefficients ``e_w[p, q, k]`` (``p ≤ pmax``, ``q ≤ qmax``) at one point, memoized.

    Parameters
    ----------
    point:
        ``"0"``, ``"1"`` or ``"inf"``.
    pmax, qmax:
        The largest powers of ``t`` and ``t̄`` kept.
    constant:
        ``w -> e_w[0, 0, 0]`` as a raw MZV dict (single-valued values).
    y1:
        ``{word: raw MZV}``, the coefficients of y1 (:func:`.construct.y1_series`),
        up to the longest word asked for.

    >>> from fractions import Fraction as F
    >>> at0 = LocalExpansion("0", 2, 2, lambda w: {} if w else {(): F(1)}, {(1,): {(): F(1)}})
    >>> e = at0.coefficients((1,))           # log|1-z|^2 = -z - z̄ - z^2/2 - z̄^2/2 - ...
    >>> sorted((key, v[()]) for key, v in e.items())
    [((0, 1, 0), Fraction(-1, 1)), ((0, 2, 0), Fraction(-1, 2)), ((1, 0, 0), Fraction(-1, 1)), ((2, 0, 0), Fraction(-1, 2))]
    """

    def __init__(self, point: str, pmax: int, qmax: int, constant: Callable[[Word], Raw],
                 y1: Dict[Word, Raw]) -> None:
        self.point, self.pmax, self.qmax = point, pmax, qmax
        self.constant = constant
        self.y1 = y1
        top = max(pmax, qmax)
        self._omega = {a: omega(point, a, top) for a in (0, 1)}
        self._memo: Dict[Word, Dict[Key, Raw]] = {(): {(0, 0, 0): {(): Fraction(1)}}}

    def _kappa(self, v: Word) -> Dict[int, Raw]:
        """``κ_v`` as ``{n: raw MZV}`` (Laurent coefficients in ``t̄``)."""
        out: Dict[int, Raw] = {}
        if v == (0,):
            for n, c in self._omega[0].items():
                out[n] = {(): c}
        y = self.y1.get(tuple(reversed(v)))
        if y:
            for n, c in self._omega[1].items():
                acc = out.setdefault(n, {})
                _radd(acc, y, c)
        return {n: x for n, x in out.items() if x}

    def coefficients(self, w: Word) -> Dict[Key, Raw]:
        """``{(p, q, k): raw MZV}`` with zero coefficients left out."""
        w = tuple(w)
        got = self._memo.get(w)
        if got is not None:
            return got
        pmax, qmax = self.pmax, self.qmax
        eu = self.coefficients(w[1:])
        om = self._omega[w[0]]
        # right side of the holomorphic equation, at t^(p-1) t̄^q log^k
        rhs: Dict[Key, Raw] = {}
        for (p1, q, k), x in eu.items():
            for n, c in om.items():
                p = p1 + n + 1
                if 0 <= p <= pmax:
                    _radd(rhs.setdefault((p, q, k), {}), x, c)
        e: Dict[Key, Raw] = {}
        kmax = len(w)
        for q in range(qmax + 1):
            # p = 0 first: e[0, q, k] = rhs[0, q, k-1] (k ≥ 1), then e[0, q, 0]
            for k in range(kmax, 0, -1):
                x = rhs.get((0, q, k - 1))
                if x:
                    e[(0, q, k)] = dict(x)
            if q == 0:
                c0 = self.constant(w)
                if c0:
                    e[(0, 0, 0)] = dict(c0)
            else:
                acc: Raw = {}
                for j in range(len(w)):
                    kappa = self._kappa(w[j:])
                    if not kappa:
                        continue
                    eu2 = self.coefficients(w[:j])
                    for q1 in range(q + 1):
                        x = eu2.get((0, q1, 0))
                        if not x:
                            continue
                        kv = kappa.get(q - 1 - q1)
                        if kv:
                            _radd(acc, _cmul(kv, x), 1)
                nxt = e.get((0, q, 1))
                if nxt:
                    _radd(acc, nxt, -1)
                if acc:
                    e[(0, q, 0)] = {m: v / q for m, v in acc.items()}
            for p in range(1, pmax + 1):
                for k in range(kmax, -1, -1):
                    acc = dict(rhs.get((p, q, k), {}))
                    nxt = e.get((p, q, k + 1))
                    if nxt:
                        _radd(acc, nxt, -1)
                    if acc:
                        e[(p, q, k)] = {m: v / p for m, v in acc.items()}
        self._memo[w] = e
        return e
