"""The result of an expansion: exact Laurent coefficients in s and t.

``coefficients[(i, j)]`` is the coefficient of ``s^i t^j`` (i or j negative
for poles) as a polynomial in the free parameters with MZV coefficients:
``{parameter exponent tuple: MZV}`` (the empty tuple when there are no
parameters).  Only non-zero coefficients are stored.  ``order`` is N: every
Laurent monomial with ``i + j <= N`` is present (if non-zero).

Sphere integrals (``domain = "sphere"``) can also have poles in
``U = -S-T`` (the second variable's partner, z -> infinity): they are kept
apart in ``u_poles[(i, k)]``, the coefficient of ``S^i U^k`` with ``k < 0``
(numerators written in the first variable), total order ``i + k``.  Their
names extend the ``c[i,j]`` scheme by a third index, the power of U:
``c[i,0,k]`` (see :func:`u_pole_name`).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Dict, Iterator, Tuple

from ..zeta.element import MZV

__all__ = ["Expansion", "ParamPoly", "u_pole_name"]

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
    u_poles:
        ``{(i, k): {param exponents: MZV}}``, the coefficients of ``S^i U^k``
        (k < 0, ``U = -S-T``), sphere integrands only.
    domain:
        ``"interval"`` or ``"sphere"``.
    """

    variables: Tuple[str, str]
    parameters: Tuple[str, ...]
    order: int
    coefficients: Dict[Tuple[int, int], ParamPoly]
    title: str = ""
    source: str = ""
    meta: dict = field(default_factory=dict)
    u_poles: Dict[Tuple[int, int], ParamPoly] = field(default_factory=dict)
    domain: str = "interval"

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


def u_pole_name(i: int, k: int) -> str:
    """``c[i,0,k]``: the coefficient of ``S^i U^k`` (``U = -S-T``, ``k < 0``).

    >>> u_pole_name(0, -1)
    'c[0,0,-1]'
    """
    return f"c[{i},0,{k}]"
