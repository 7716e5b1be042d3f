"""The data model of a worldsheet integrand, shared by reader, engine and checks.

An integrand is ``Σ_terms  P(s, t, params) · x^(A) (1-x)^(B) · G(w; x)`` with

* ``P`` a polynomial in the two expansion variables and the free rational
  parameters whose coefficients are exact :class:`~lowenergy.zeta.element.MZV`
  elements (see :class:`Poly`);
* ``A = shift + coeff · var`` and ``B`` likewise (:class:`LinearExponent`):
  an integer plus a rational multiple of one expansion variable (or none);
* ``w`` one word over {0, 1} (products of G-words, logs and polylogs are
  shuffled into single words by the reader).

Everything is exact.  Variables are referred to by position: index 0 is the
first expansion variable (default name ``s``), index 1 the second (``t``),
indices 2, 3, ... the free parameters in the order of the file.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Dict, Optional, Tuple

from .. import poly as _poly
from ..zeta.element import MZV

__all__ = ["Poly", "LinearExponent", "Term", "Integrand", "poly_add", "poly_mul", "poly_scale"]

# A polynomial: {exponent tuple (one entry per variable: s, t, params...): MZV}
Poly = Dict[Tuple[int, ...], MZV]


# The polynomial arithmetic is the package's one copy in lowenergy.poly; the
# names stay here for code that imported them from the model.
poly_add = _poly.add
poly_mul = _poly.mul
poly_scale = _poly.scale


@dataclass(frozen=True)
class LinearExponent:
    """``shift + coeff * variable``; ``var`` is 0 (s), 1 (t) or None."""

    shift: int
    coeff: Fraction = Fraction(0)
    var: Optional[int] = None

    def __post_init__(self) -> None:
        if (self.var is None) != (self.coeff == 0):
            raise ValueError("LinearExponent: give both coeff != 0 and var, or neither")


@dataclass(frozen=True)
class Term:
    """One term ``coefficient · x^x_exp (1-x)^y_exp · G(word; x)``.

    ``source_line`` and ``text`` locate the piece of the input it came from
    (for error messages), when known.
    """

    coefficient: Poly
    x_exp: LinearExponent
    y_exp: LinearExponent
    word: Tuple[int, ...] = ()
    source_line: Optional[int] = None
    text: Optional[str] = None


@dataclass
class Integrand:
    """A whole integrand file after reading.

    Attributes
    ----------
    terms:
        The terms (their sum is the integrand).
    variables:
        The user's names of the two expansion variables, e.g. ("s", "t").
    parameters:
        Names of the free rational parameters (variables 2, 3, ...).
    integration_variable:
        The user's name of x.
    title, notes, provenance:
        Free text from the file.
    source:
        The file name, for messages.
    expression:
        The integrand text as written.
    domain:
        ``"interval"`` (0 < x < 1) or ``"sphere"`` ((1/π) ∫ d²z over the
        complex plane).  On the sphere ``Term.x_exp``/``y_exp`` are the
        exponents of ``|z|²`` and ``|1-z|²`` and ``Term.word`` is the word of
        Brown's single-valued polylogarithm ``L_w(z)``.
    """

    terms: list
    variables: Tuple[str, str] = ("s", "t")
    parameters: Tuple[str, ...] = ()
    integration_variable: str = "x"
    title: str = ""
    notes: str = ""
    provenance: str = ""
    source: str = "<integrand>"
    expression: str = ""
    extra: dict = field(default_factory=dict)
    domain: str = "interval"

    @property
    def nvars(self) -> int:
        return 2 + len(self.parameters)
