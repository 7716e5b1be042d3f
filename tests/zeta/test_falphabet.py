"""The f-alphabet decomposition (Brown, Adv. Stud. Pure Math. 63 (2012))."""

from __future__ import annotations

from fractions import Fraction

import pytest

from lowenergy.words import admissible_indices
from lowenergy.zeta.element import zeta
from lowenergy.zeta.falphabet import coaction_part, f_multiply, f_to_text
from lowenergy.zeta.reduction import zagier_dimension
from lowenergy.zeta.table import default_store


def test_single_zetas():
    assert zeta(2).f_alphabet() == {(1, ()): 1}
    assert zeta(7).f_alphabet() == {(0, (7,)): 1}
    # ζ(4) = 2/5 ζ(2)^2 (Euler) -> 2/5 f2^2
    assert zeta(4).f_alphabet() == {(2, ()): Fraction(2, 5)}


def test_brown_weight_8_example():
    # Brown (2012), §1 (from memory): ζ^m(3,5) ↦ -5 f5 f3 + (multiple of f2^4) in the
    # convention ζ(3,5) = Σ_{k<l} k^-3 l^-5, i.e. our ζ(5,3).
    f = zeta(5, 3).f_alphabet()
    odd_part = {k: v for k, v in f.items() if k[1]}
    assert odd_part == {(0, (5, 3)): -5}


def test_products_map_to_shuffles():
    a, b = zeta(3), zeta(5)
    assert (a * b).f_alphabet() == f_multiply(a.f_alphabet(), b.f_alphabet())
    assert (a * b).f_alphabet() == {(0, (3, 5)): 1, (0, (5, 3)): 1}


@pytest.mark.parametrize("w", range(3, 12))
def test_coaction_of_every_word_matches_its_reduction(w):
    # Two independent routes to the non-top part of φ(ζ(w)): the coaction computed
    # from the word itself (Goncharov's formula) and the image of its canonical form.
    store = default_store()
    for idx in admissible_indices(w):
        from_word = coaction_part(idx, store)
        image = zeta(*idx).f_alphabet()
        top = {(0, (w,)), (w // 2, ())}
        non_top = {k: v for k, v in image.items() if k not in top}
        assert from_word == non_top, (idx, f_to_text(from_word), f_to_text(image))


@pytest.mark.parametrize("w", range(2, 13))
def test_images_span_the_weight_space(w):
    # φ is an isomorphism: the images of all words span a space of dimension d_w.
    import sympy

    keys, rows = {}, []
    for idx in admissible_indices(w):
        f = zeta(*idx).f_alphabet()
        for k in f:
            keys.setdefault(k, len(keys))
        rows.append(f)
    mat = sympy.Matrix([[r.get(k, 0) for k in keys] for r in rows])
    assert mat.rank() == zagier_dimension(w)
