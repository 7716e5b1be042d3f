"""Poles of sphere integrals at the massive levels, exactly.

For ``I(S, T) = Σ_terms (1/π) ∫_C d²z P · |z|^(2A) |1-z|^(2B) L_w(z)``
(:mod:`.sphere` for the notation: ``A = a - 1 + c·v``, ``B = b - 1 + d·v'``)
the poles come from the neighbourhoods of z = 0 (in the variable of A),
z = 1 (in that of B) and z = ∞ (in ``U = -S-T`` when A and B carry S and T
with equal coefficients).  Away from small discs around these three points
the integral is entire in S and T, so each pole part is that of the integral
over a small disc, and it is computed exactly as on the interval
(:mod:`lowenergy.spectrum.residues`, METHOD.md §6).

Derivation
----------
1. *Single-valued expansion at 0.*  ``L_w(z) = Σ c_{u,v} G(u; z) G(v; z̄)``
   (:func:`.construct.sv_polylog`) and every ``G(u; z)`` is a convergent
   series ``Σ_{p,k} g^u_{k,p} z^p log(z)^k/k!`` for ``|z| < 1`` (rational
   coefficients, :func:`lowenergy.spectrum.residues.g_series_at_zero`).  So
   ``L_w(z) = Σ_{p,q} z^p z̄^q P_{p,q}(X, Y)`` with ``X = log z``,
   ``Y = log z̄`` and polynomials ``P_{p,q}``.  ``L_w`` is single-valued: a
   loop around 0 sends ``X -> X + 2πi``, ``Y -> Y - 2πi`` and leaves every
   ``P_{p,q}`` unchanged (the functions ``z^p z̄^q X^k Y^l`` are independent
   on the universal cover).  A polynomial with ``P(X+λ, Y-λ) = P(X, Y)`` for
   infinitely many λ has it for all λ; λ = Y gives ``P(X, Y) = P(X+Y, 0)``.
   Hence only the terms of ``G(v; z̄)`` *without* ``log z̄`` are needed, and
   ``log z`` becomes ``log|z|²``:

       L_w(z) = Σ_{p,q,k} z^p z̄^q (log|z|²)^k/k! · Σ_{u,v} c_{u,v} g^u_{k,p} g^v_{0,q}.

   (The same argument with the roles of X and Y exchanged gives the
   expansion from the ``log z̄`` terms; the tests compare both.)
2. *Only the diagonal contributes.*  ``|1-z|^(2B) = (1-z)^B (1-z̄)^B =
   Σ_{m,m'} β_m β_{m'} z^m z̄^(m')`` with ``β_m = (-1)^m binom(B, m)``
   polynomials in the variable of B.  In polar coordinates the angular
   integral of ``z^p z̄^q`` over a disc vanishes unless p = q, and with
   ``x = |z|²`` (``(1/π) d²z = dx dθ/(2π)``)

       (1/π) ∫_{|z|<1} |z|^(2A + 2N) (log|z|²)^k/k! d²z = ∫_0^1 x^(A+N) log^k x/k! dx
                                                        = (-1)^k / (A + N + 1)^(k+1),

   so the coefficient ``E_{N,k}`` of ``|z|^(2N) log^k|z|²/k!`` in
   ``P · |1-z|^(2B) L_w`` gives the pole at ``A + N + 1 = 0`` exactly as the
   coefficient of ``x^N log^k x/k!`` does on the interval
   (:func:`~lowenergy.spectrum.residues.poles_from_expansions`).  For
   ``A = -S-1`` the pole at S = n comes from ``|z|^(2n)``: terms
   ``z^a z̄^b`` with ``a = b = n``.
3. *z → 1.*  With ψ exchanging ``x0`` and ``x1``, ``ψ(L_sv(1-z))`` solves
   the same equation as ``L_sv(z)`` and behaves like ``exp(x1 log|1-z|²)``
   at 1, and ``L_sv(z) = exp(x1 log|1-z|²) Z_sv + o(1)`` there (:mod:`.sphere`),
   so by uniqueness of single-valued solutions with given asymptotics
   (Brown 2004) ``L_sv(z) = ψ(L_sv(1-z)) Z_sv``, i.e. with ``y = 1 - z``

       L_w(1-y) = Σ_{w = pq} L_{ψ(p)}(y) · (-1)^|q| Z_sv(reverse ψ(q))

   (the inverse of the group-like ``Z_sv`` by the antipode).  Near y = 0 the
   factor ``|z|^(2A) = |1-y|^(2A)`` plays the role of ``|1-z|^(2B)`` above.
4. *z → ∞.*  ``L_sv(1/y) = φ(L_sv(y)) K`` with φ: ``x0 -> -x0-x1``,
   ``x1 -> x1`` and ``K = φ(Z_sv)^(-1) Z_sv`` (:mod:`.sphere`, step 2), so
   ``L_w(1/y) = Σ_{w = pq} K(q) Σ_v (-1)^(zeros of v) L_v(y)`` over the words v
   with ``v_i = 0`` where ``p_i = 0``.  ``(1/π) d²z = (1/π) d²y/|y|^4`` and
   ``|z|^(2A)|1-z|^(2B) = |y|^(2(-A-B-2)) |1-y|^(2B)``: step 2 with the exponent
   ``-A-B-2`` at 0 and ``|1-y|^(2B)``.  For ``A = -S-1 + ...``, ``B = -T-1 +
   ...`` the exponent is ``(shift) - U``: poles in U, kept apart
   (:attr:`~lowenergy.spectrum.residues.ResidueTable.u_poles`, numerators in
   the first variable after ``T = -S-U``).

Examples
--------
The complex Beta function ``(1/π)∫|z|^(-2S-2)|1-z|^(-2T-2) d²z`` has the
residue ``-(T+1)²`` at S = 1 and ``-1`` at U = 1 (from the closed form
``Γ(-S)Γ(-T)Γ(1-U)/(Γ(1+S)Γ(1+T)Γ(U))``, see the tests):

>>> from fractions import Fraction
>>> from lowenergy.integrand.model import Integrand, Term, LinearExponent
>>> from lowenergy.zeta.element import MZV
>>> beta = Integrand([Term({(0, 0): MZV.one()}, LinearExponent(-1, Fraction(-1), 0),
...                        LinearExponent(-1, Fraction(-1), 1))], variables=("S", "T"), domain="sphere")
>>> table = sphere_residues(beta, 2)
>>> table.residue_text(1)
'-T^2 - 2*T - 1'
>>> table.u_residue_text(1)
'-1'
"""

from __future__ import annotations

from fractions import Fraction
from math import comb
from typing import Dict, Optional, Tuple

import flint

from ..errors import InputError
from ..integrand.model import Integrand, LinearExponent, Poly
from ..spectrum.residues import (
    ResidueTable,
    _binomial_series,
    _m_range,
    _mzv_from_flat,
    _padd,
    g_series_at_zero,
    group_pole_numerators,
    poles_from_expansions,
)
from ..words import ones_relaxed
from ..zeta.element import MZV
from ..zeta.table import TableStore, default_store
from .construct import sv_polylog
from .sphere import SphereValues

__all__ = ["sv_series_at_zero", "sphere_residues", "words_at_one", "words_at_infinity"]

Word = Tuple[int, ...]


def sv_series_at_zero(word: Word, order: int, store: TableStore | None = None,
                      from_conjugate: bool = False) -> Dict[Tuple[int, int, int], MZV]:
    """``L_w(z) = Σ z^p z̄^q (log|z|²)^k/k! · c[(p, q, k)] + O(|z|^(order+1))`` near 0.

    Step 1 of the module docstring: the logarithms of the holomorphic factor
    with the log-free part of the antiholomorphic one (``from_conjugate``:
    the other way round; both give the same series).

    >>> s = sv_series_at_zero((1,), 2)              # log|1-z|^2 = -z - z̄ - z^2/2 - ...
    >>> {key: str(v) for key, v in sorted(s.items())}
    {(0, 1, 0): '-1', (0, 2, 0): '-1/2', (1, 0, 0): '-1', (2, 0, 0): '-1/2'}
    """
    out: Dict[Tuple[int, int, int], MZV] = {}
    for (u, v), c in sv_polylog(tuple(word), store).items():
        if from_conjugate:
            u, v = v, u
        gu = g_series_at_zero(u, order)
        gv = g_series_at_zero(v, order).get(0)
        if not gv:
            continue
        for k, coeffs in gu.items():
            for p, x in enumerate(coeffs):
                if not x:
                    continue
                for q, y in enumerate(gv):
                    if y:
                        key = (q, p, k) if from_conjugate else (p, q, k)
                        _padd(out, key, c * (x * y))
    return out


def words_at_one(word: Word, values: SphereValues) -> Dict[Word, MZV]:
    """``L_w(1-y) = Σ_u coefficient_u L_u(y)`` (step 3), as ``{u: MZV}``.

    >>> words_at_one((1,), SphereValues("direct"))      # log|1-z|^2 = log|y|^2
    {(0,): MZV('1')}
    """
    out: Dict[Word, MZV] = {}
    for j in range(len(word) + 1):
        p, q = word[:j], word[j:]
        rq = tuple(1 - a for a in reversed(q))
        value = values.z(rq)
        if not value:
            continue
        if len(q) % 2:
            value = -value
        _padd(out, tuple(1 - a for a in p), value)
    return out


def words_at_infinity(word: Word, values: SphereValues) -> Dict[Word, MZV]:
    """``L_w(1/y) = Σ_v coefficient_v L_v(y)`` (step 4), as ``{v: MZV}``.

    >>> words_at_infinity((0,), SphereValues("direct"))  # log|z|^2 = -log|y|^2
    {(0,): MZV('-1')}
    """
    out: Dict[Word, MZV] = {}
    for j in range(len(word) + 1):
        p, q = word[:j], word[j:]
        value = values.k(q)
        if not value:
            continue
        for v, sign in ones_relaxed(p):
            _padd(out, v, value if sign > 0 else -value)
    return out


def _levels_range(near: LinearExponent, levels: int) -> range:
    if near.var is None:
        top = -near.shift - 1
        return range(0, top + 1) if top >= 0 else range(0)
    return _m_range(near.shift, near.coeff, levels)


def _diagonal_expansions(words: Dict[Word, MZV], far_shift: int, far_coeff: Fraction, far_var: Optional[int],
                         order: int, nvars: int, store: TableStore) -> Dict[Tuple[int, int], Poly]:
    """``E_{N,k}`` for N ≤ order: the coefficient of ``|z|^(2N) log^k|z|²/k!`` in
    ``|1-z|^(2·far) Σ_u words[u] L_u(z)`` (step 2), full exponent keys."""
    binom = [flint.fmpq_poly([flint.fmpq(c.numerator, c.denominator) for c in b])
             for b in _binomial_series(far_shift, far_coeff, order)]
    series: Dict[Tuple[int, int, int], MZV] = {}
    for u, cu in words.items():
        for key, x in sv_series_at_zero(u, order, store).items():
            _padd(series, key, cu * x)
    # rational work in python-flint: acc[(n, k)][power][MZV monomial]
    acc: Dict[Tuple[int, int], Dict[int, Dict[tuple, "flint.fmpq"]]] = {}
    for (p, q, k), x in series.items():
        flat = [(mono, flint.fmpq(c.numerator, c.denominator)) for mono, c in x.as_dict().items() if c]
        for n in range(max(p, q), order + 1):
            prod = binom[n - p] * binom[n - q]
            by_power = acc.setdefault((n, k), {})
            for power in range(prod.degree() + 1):
                c = prod[power]
                if not c:
                    continue
                if far_var is None and power:
                    raise AssertionError("binomial series without variable has degree 0")
                slot = by_power.setdefault(power, {})
                for mono, v in flat:
                    slot[mono] = slot[mono] + v * c if mono in slot else v * c
    out: Dict[Tuple[int, int], Poly] = {}
    for nk, by_power in acc.items():
        for power, terms in by_power.items():
            value = _mzv_from_flat(terms)
            if not value:
                continue
            key = [0] * nvars
            if far_var is not None:
                key[far_var] = power
            out.setdefault(nk, {})[tuple(key)] = value
    return out


def _endpoint(coefficient: Poly, near: LinearExponent, far: LinearExponent, words: Dict[Word, MZV],
              levels: int, nvars: int, store: TableStore, out) -> None:
    m_values = _levels_range(near, levels)
    if not m_values or not words:
        return
    expansions = _diagonal_expansions(words, far.shift, far.coeff, far.var, m_values[-1], nvars, store)
    expansions = {key: poly for key, poly in expansions.items() if key[0] in m_values}
    poles_from_expansions(coefficient, near, expansions, levels, out)


def _to_su(poly: Poly) -> Poly:
    """A polynomial in (S, T, params) rewritten in (S, U, params) with T = -S-U."""
    out: Poly = {}
    for key, value in poly.items():
        i, j = key[0], key[1]
        for r in range(j + 1):
            # T^j = (-1)^j (S + U)^j = (-1)^j Σ_r C(j,r) S^(j-r) U^r
            c = comb(j, r) * (-1) ** j
            _padd(out, (i + j - r, r) + tuple(key[2:]), value * c)
    return out


def sphere_residues(integrand: Integrand, levels: int, *, store: TableStore | None = None,
                    method: str = "direct") -> ResidueTable:
    """Exact pole parts of a sphere integral at ``S = p``, ``T = p`` and ``U = p``, ``|p| ≤ levels``.

    Parameters
    ----------
    integrand:
        A sphere integrand (``domain = "sphere"``); exponents as supported by
        :func:`.sphere.expand_sphere` or any other integer shifts.
    levels:
        Keep the poles with ``|location| ≤ levels``.
    store:
        MZV tables (default: the user's cache).
    method:
        ``"direct"`` (``L_w(1)`` from the single-valued polylogarithms) or
        ``"sv"`` (the sv map of ``G(w; 1)``); the two agree (tests).

    Returns
    -------
    ResidueTable
        ``poles`` as for the interval (variable 0 = S, 1 = T, numerators in
        the other variable), ``u_poles[location]`` with numerators in S;
        ``meta["domain"] = "sphere"`` (``[[pole]]`` tables in u need it).
    """
    if not isinstance(levels, int) or isinstance(levels, bool) or levels < 0:
        raise InputError(f"levels must be a non-negative integer, got {levels!r}")
    if getattr(integrand, "domain", "interval") != "sphere":
        raise InputError("sphere_residues needs a sphere integrand", source=integrand.source,
                         hint="use lowenergy.spectrum.residues for integrals over 0 < x < 1")
    store = store or default_store()
    values = SphereValues(method, store)
    nvars = integrand.nvars
    raw: Dict[Tuple[int, Fraction], Dict[int, Poly]] = {}
    uraw: Dict[Tuple[int, Fraction], Dict[int, Poly]] = {}
    for term in integrand.terms:
        if not term.coefficient:
            continue
        word = tuple(term.word)
        a_exp, b_exp = term.x_exp, term.y_exp
        try:
            # z -> 0
            _endpoint(term.coefficient, a_exp, b_exp, {word: MZV.one()}, levels, nvars, store, raw)
            # z -> 1: y = 1 - z, |z|^(2A) = |1-y|^(2A)
            at_one = {u: values.finish(c) for u, c in words_at_one(word, values).items()}
            _endpoint(term.coefficient, b_exp, a_exp, at_one, levels, nvars, store, raw)
            # z -> ∞: y = 1/z, |y|^(2(-A-B-2)) |1-y|^(2B)
            at_inf = {u: values.finish(c) for u, c in words_at_infinity(word, values).items()}
            at_inf = {u: c for u, c in at_inf.items() if c}
            shift = -a_exp.shift - b_exp.shift - 2
            if a_exp.var is not None and b_exp.var is not None and a_exp.var != b_exp.var:
                if a_exp.coeff != b_exp.coeff:
                    raise InputError(
                        "the poles from z = ∞ would be in a combination of the variables other than U = -S-T",
                        hint="use equal coefficients of the variables in the exponents of |z| and |1-z|")
                # -A-B-2 = shift - c·(S+T) = shift + c·U; variables (S, U, params) below
                near = LinearExponent(shift, a_exp.coeff, 1)
                far_shift, far_coeff = b_exp.shift, b_exp.coeff
                part: Dict[Tuple[int, Fraction], Dict[int, Poly]] = {}
                m_values = _levels_range(near, levels)
                if m_values and at_inf:
                    exp = _diagonal_expansions(at_inf, far_shift, far_coeff, b_exp.var, m_values[-1], nvars, store)
                    exp = {key: _to_su(poly) for key, poly in exp.items() if key[0] in m_values}
                    poles_from_expansions(_to_su(term.coefficient), near, exp, levels, part)
                for (_v, p), orders in part.items():
                    for m, poly in orders.items():
                        slot = uraw.setdefault((2, p), {}).setdefault(m, {})
                        for key, value in poly.items():
                            _padd(slot, key, value)
            else:
                if a_exp.var is None or b_exp.var is None or a_exp.var == b_exp.var:
                    var = a_exp.var if a_exp.var is not None else b_exp.var
                    coeff = -(a_exp.coeff if a_exp.var is not None else 0) - (b_exp.coeff if b_exp.var is not None else 0)
                    near = LinearExponent(shift, coeff, var) if coeff else LinearExponent(shift)
                _endpoint(term.coefficient, near, b_exp, at_inf, levels, nvars, store, raw)
        except InputError as err:
            raise err.located(source=integrand.source, line=term.source_line, term=term.text)
    poles = group_pole_numerators(raw, lambda place: 1 - place[0])
    upoles = {p: orders for (_v, p), orders in group_pole_numerators(uraw, lambda place: 0).items()}
    return ResidueTable.of_integrand(integrand, levels, poles, meta={"domain": "sphere"}, u_poles=upoles)
