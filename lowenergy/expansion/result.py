"""The result of an expansion: exact Laurent coefficients in s and t.

``coefficients[(i, j)]`` is the coefficient of ``s^i t^j`` (i or j negative
for poles) as a polynomial in the free parameters with MZV coefficients:
``{parameter exponent tuple: MZV}`` (the empty tuple when there are no
parameters).  Only non-zero coefficients are stored.  ``order`` is N: every
Laurent monomial with ``i + j <= N`` is present (if non-zero).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Dict, Iterator, Tuple

from ..zeta.element import MZV

__all__ = ["Expansion", "ParamPoly"]

ParamPoly = Dict[Tuple[int, ...], MZV]


@dataclass
class Expansion:
    """Exact low-energy expansion of one integrand.

    Attributes
    ----------
    variables:
        Names of the two expansion variables, e.g. ("s", "t").
    parameters:
        Names of the free parameters.
    order:
        Total order N kept: all s^i t^j with i + j <= N.
    coefficients:
        ``{(i, j): {param exponents: MZV}}``.
    title, source:
        From the integrand.
    """

    variables: Tuple[str, str]
    parameters: Tuple[str, ...]
    order: int
    coefficients: Dict[Tuple[int, int], ParamPoly]
    title: str = ""
    source: str = ""
    meta: dict = field(default_factory=dict)

    def coefficient(self, i: int, j: int) -> ParamPoly:
        """Coefficient of s^i t^j ({} if zero)."""
        return dict(self.coefficients.get((i, j), {}))

    def value(self, i: int, j: int) -> MZV:
        """Coefficient of s^i t^j when there are no free parameters."""
        if self.parameters:
            raise ValueError("value() needs an integrand without free parameters; use coefficient()")
        return self.coefficients.get((i, j), {}).get((), MZV())

    @staticmethod
    def is_pole(i: int, j: int) -> bool:
        return i < 0 or j < 0

    def monomials(self) -> Iterator[Tuple[int, int]]:
        """Non-zero monomials, poles first, then by total order, then by power of s (descending)."""
        keys = sorted(self.coefficients, key=lambda k: (not self.is_pole(*k), k[0] + k[1], -k[0]))
        return iter(keys)
