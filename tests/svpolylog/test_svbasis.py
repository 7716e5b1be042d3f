"""The single-valued subspace and its generators (lowenergy.svpolylog.svbasis).

Source for the structure: F. Brown, "Single-valued motivic periods and
multiple zeta values", Forum Math. Sigma 2 (2014): sv is a ring homomorphism
with sv ζ(2) = 0 and sv ζ(2k+1) = 2 ζ(2k+1); below weight 11 every
single-valued MZV is a polynomial in odd single zetas, and the first one that
is not occurs at weight 11 (ζ_sv(3,5,3); from memory).
"""

from __future__ import annotations

import random
from fractions import Fraction

import pytest

from lowenergy.errors import InputError
from lowenergy.svpolylog.svbasis import is_single_valued, sv_basis, sv_decompose, sv_generators, sv_text
from lowenergy.svpolylog.svmap import sv
from lowenergy.words import admissible_indices
from lowenergy.zeta.element import MZV, zeta


def _rebuild(dec, gens):
    total = MZV()
    for mono, c in dec.items():
        value = MZV.one()
        for i in mono:
            value = value * gens[i].value
        total = total + value * c
    return total


def test_generators_to_weight_11():
    gens = sv_generators(11)
    odd = [g for g in gens if len(g.indices) == 1]
    deep = [g for g in gens if len(g.indices) >= 2]
    assert [g.indices for g in odd] == [(3,), (5,), (7,), (9,), (11,)]
    assert all(g.value == zeta(*g.indices) for g in odd)
    # Brown (2014): nothing new below weight 11, one new generator at weight 11
    assert [g.weight for g in deep] == [11]
    assert deep[0].value == sv(zeta(*deep[0].indices))


def test_sv_353_needs_the_weight_11_generator():
    # Brown (2014): ζ_sv(3,5,3) is not a polynomial in odd single zetas
    gens = sv_generators(11)
    dec = sv_decompose(sv(zeta(3, 5, 3)))
    assert any(len(gens[i].indices) >= 2 for mono in dec for i in mono)
    assert _rebuild(dec, gens) == sv(zeta(3, 5, 3))


@pytest.mark.parametrize("weight", range(2, 13))
def test_every_sv_image_decomposes(weight):
    gens = sv_generators(weight)
    rng = random.Random(weight)
    indices = admissible_indices(weight)
    for idx in rng.sample(indices, min(len(indices), 40)):
        x = sv(zeta(*idx))
        dec = sv_decompose(x)
        assert _rebuild(dec, gens) == x, idx
        # odd letters only below weight 11 (Brown 2014)
        if weight < 11:
            assert all(len(gens[i].indices) == 1 for mono in dec for i in mono)


def test_basis_elements_are_independent_and_single_valued():
    for w in range(2, 13):
        basis = sv_basis(w)
        for k, (mono, value) in enumerate(basis):
            assert sv_decompose(value) == {mono: Fraction(1)}, (w, k)


@pytest.mark.parametrize("factors", [[(2,)], [(3, 5)], [(2,), (3,)], [(3, 3, 5)]])
def test_not_single_valued_is_refused(factors):
    x = MZV.one()
    for idx in factors:
        x = x * zeta(*idx)
    assert not is_single_valued(x)
    with pytest.raises(InputError, match="not a single-valued MZV"):
        sv_decompose(x)


def test_text():
    assert sv_text(zeta(3) * zeta(5) * -10) == "-10*zeta(3)*zeta(5)"
    assert sv_text(MZV()) == "0"
    assert sv_text(MZV.one() * Fraction(3, 2)) == "3/2"
