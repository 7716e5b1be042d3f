"""The low-order expansions of ``L_w`` at 0, 1, ∞ (:mod:`lowenergy.svpolylog.sphere_local`,
a recursion on the word from the two differential equations) against the
expansions of :mod:`lowenergy.svpolylog.sphere_residues`, which are built a
different way: from the full form ``L_w = Σ c_{u,v} G(u; z) G(v; z̄)`` of
:mod:`lowenergy.svpolylog.construct` (term by term Taylor series of the G's,
tested there against numerics), moved to 1 and ∞ by ``L_sv(1-y) = ψ(L_sv(y)) Z_sv``
and ``L_sv(1/y) = φ(L_sv(y)) K``.  The series of both are exact; every
coefficient with ``p, q ≤ 2`` is compared, for all words up to weight 6
(so the degree-4..6 corrections of y1, which carry ζ(3) and ζ(5), enter).
"""

from __future__ import annotations

from itertools import product

import pytest

from lowenergy.svpolylog.sphere import SphereValues, _y1_raw
from lowenergy.svpolylog.sphere_local import LocalExpansion
from lowenergy.svpolylog.sphere_residues import sv_series_at_zero, words_at_infinity, words_at_one
from lowenergy.zeta.element import MZV
from lowenergy.zeta.table import default_store

TOP = 2
WORDS = [w for n in range(1, 7) for w in product((0, 1), repeat=n)]


def _reference(point, word, values, store):
    """{(p, q, k): MZV} for p, q ≤ TOP from sphere_residues."""
    if point == "0":
        moved = {tuple(word): MZV.one()}
    elif point == "1":
        moved = words_at_one(tuple(word), values)
    else:
        moved = words_at_infinity(tuple(word), values)
    out = {}
    for u, cu in moved.items():
        for key, x in sv_series_at_zero(u, TOP, store).items():
            if key[0] <= TOP and key[1] <= TOP:
                if point == "1":   # sphere_residues uses y = 1 - z, sphere_local t = z - 1 = -y
                    x = x * (-1) ** (key[0] + key[1])
                out[key] = out.get(key, MZV()) + cu * x
    return {k: v for k, v in out.items() if v}


@pytest.fixture(scope="module")
def expansions():
    store = default_store()
    values = SphereValues("direct", store)
    y1 = _y1_raw(7, store)
    constants = {
        "0": lambda w: {} if w else {(): 1},
        "1": lambda w: values.z(w).as_dict(),
        "inf": lambda w: values.k(w).as_dict(),
    }
    local = {p: LocalExpansion(p, TOP, TOP, constants[p], y1) for p in constants}
    return store, values, local


@pytest.mark.parametrize("point", ["0", "1", "inf"])
def test_local_expansions_agree_with_sphere_residues(expansions, point):
    store, values, local = expansions
    compared = 0
    for w in WORDS:
        got = {k: MZV(v) for k, v in local[point].coefficients(w).items()}
        got = {k: v for k, v in got.items() if v}
        assert got == _reference(point, w, values, store), (point, w)
        compared += len(got)
    assert compared > 1000


def test_subleading_antiholomorphic_terms_at_infinity_are_not_zero(expansions):
    # the coefficients of t̄^q (q ≥ 1) without logs at ∞ are what a + b ≥ 2 needs beyond K(w)
    _, _, local = expansions
    e = local["inf"].coefficients((0, 1, 1, 0))
    assert any(e.get((0, q, 0)) for q in (1, 2))


@pytest.mark.parametrize("kind", ["sv", "direct"])
def test_value_at_infinity_two_formulas(kind):
    # K = φ(Z)^(-1) Z (definition, with products) and K = χ(Z) (z -> z/(z-1), no products);
    # with the interval values ("sv") the two agree after the sv map (not before)
    values = SphereValues(kind)
    for w in [w for n in range(1, 8) for w in product((0, 1), repeat=n)]:
        assert values.finish(MZV(values.k_raw(w))) == values.finish(MZV(values.k_raw_via_phi(w))), w
