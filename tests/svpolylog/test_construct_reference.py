"""The fast construction of ``L_w`` against the first, straightforward one.

:mod:`tests.svpolylog.fixed_point_reference` keeps the code the package used
before it was made fast: regularization of every word into convergent words,
dense products of whole series, the fixed point iterated on whole series,
``Z_y^-1`` by substitution into ``Z^-1``.  The package now solves degree by
degree, inverts ``Z_y`` by the antipode, computes the associator's divergent
words by the shuffle recursion and does the arithmetic on python-flint.  The
two must agree exactly; the reference is too slow beyond weight ~9.
"""

from __future__ import annotations

import pytest

from lowenergy.svpolylog import construct
from lowenergy.words import all_words
from lowenergy.zeta.table import default_store
from tests.svpolylog.fixed_point_reference import reference_construction, reference_value_at_one

MAXW = 8


@pytest.fixture(scope="module")
def reference():
    return reference_construction(MAXW, default_store())


def test_associator_identical(reference):
    _, _, z, _ = reference
    assert construct.drinfeld_associator(MAXW) == z
    assert len(z) > 2 ** (MAXW - 1)


def test_table_identical(reference):
    y1, parts, _, _ = reference
    table = construct.build_sv_table(MAXW)
    assert table.y1 == y1
    assert table.parts == parts
    # the comparison is not empty: many entries carry MZVs, some of them products (ζ(3)²)
    assert sum(1 for p in parts.values() for c in p.values() if not c.is_rational()) > 1000
    assert any(len(mono) >= 2 for p in parts.values() for c in p.values() for mono, _ in c.terms())


@pytest.mark.parametrize("n", [0, 1, 2, 3, 5])
def test_small_tables_identical(n):
    y1, parts, _, _ = reference_construction(n, default_store())
    table = construct.build_sv_table(n)
    assert table.y1 == y1 and table.parts == parts


def test_values_at_one_identical(reference):
    _, _, z, zy = reference
    # a fresh computation, not the in-process cache another test filled
    fresh = construct._ValuesAtOne(construct._Construction(MAXW, default_store()))
    for k in range(MAXW + 1):
        for w in all_words(k):
            expected = reference_value_at_one(w, z, zy)
            assert fresh.value(w) == expected, w
            assert construct.sv_value_at_one(w) == expected, w
