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

from ..poly import add_term as poly_add_term
from ..zeta.element import MZV
from ..zeta.format import join_terms

__all__ = ["Expansion", "ParamPoly", "u_pole_name", "add_term"]

ParamPoly = Dict[Tuple[int, ...], MZV]


@dataclass(repr=False)
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

    @classmethod
    def of_integrand(cls, integrand, order: int, coefficients: Dict, **extra) -> "Expansion":
        """The expansion of ``integrand`` to ``order`` with these coefficients;
        variables, parameters, title and source come from the integrand."""
        return cls(
            variables=tuple(integrand.variables),
            parameters=tuple(integrand.parameters),
            order=order,
            coefficients=coefficients,
            title=integrand.title,
            source=integrand.source,
            **extra,
        )

    def coefficient(self, i: int, j: int):
        """Coefficient of s^i t^j.

        Without free parameters an :class:`~lowenergy.zeta.element.MZV`
        (zero if absent).  With free parameters a dict
        ``{parameter exponents: MZV}`` (``{}`` if zero): the exponents follow
        :attr:`parameters`, e.g. ``(2, 0)`` is ``a1^2`` for ``("a1", "a2")``.
        :meth:`param_coefficient` always returns the dict.
        """
        if self.parameters:
            return self.param_coefficient(i, j)
        return self.coefficients.get((i, j), {}).get((), MZV())

    def param_coefficient(self, i: int, j: int) -> ParamPoly:
        """Coefficient of s^i t^j as ``{parameter exponents: MZV}`` ({} if zero), keys sorted."""
        return dict(sorted(self.coefficients.get((i, j), {}).items()))

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

    # -- display -------------------------------------------------------------
    def series_text(self, style: str = "plain", limit: int | None = None) -> str:
        """The series as one sum, e.g. ``-s^-1 - t^-1 + zeta(2) + ...``.

        ``style="latex"`` gives math-mode LaTeX.  With ``limit`` only the first
        ``limit`` monomials are written, followed by ``+ ...``.
        """
        parts = []
        keys = list(self.monomials())
        shown = keys if limit is None else keys[:limit]
        for i, j in shown:
            parts.append(_term(self.coefficients[(i, j)], i, j, self.variables, self.parameters, style))
        text = join_terms(parts)
        if len(shown) < len(keys):
            text += " + \\ldots" if style == "latex" else " + ..."
        return text

    def __repr__(self) -> str:
        n = len(self.coefficients)
        title = f" {self.title!r}" if self.title else ""
        params = f", parameters {', '.join(self.parameters)}" if self.parameters else ""
        head = (
            f"<Expansion{title} in {', '.join(self.variables)} to order {self.order}{params}: "
            f"{n} non-zero coefficient{'s' if n != 1 else ''}>"
        )
        return head + "\n" + self.series_text(limit=_REPR_TERMS)

    def _repr_latex_(self) -> str:
        """Jupyter display: the series as one formula (first 200 terms)."""
        return "$" + self.series_text(style="latex", limit=200) + "$"


_REPR_TERMS = 12


def _power(name: str, e: int, style: str) -> str:
    if e == 1:
        return name
    return f"{name}^{{{e}}}" if style == "latex" else f"{name}^{e}"


def _monomial(powers, names, style: str) -> str:
    parts = [_power(v, e, style) for v, e in zip(names, powers) if e]
    return (" " if style == "latex" else "*").join(parts)


def _term(pp: ParamPoly, i: int, j: int, variables, parameters, style: str) -> str:
    """One signed term ``(coefficient) * s^i t^j`` of the series."""
    pieces = []
    for pe in sorted(pp, key=lambda e: (-sum(e), tuple(-x for x in e))):
        value = pp[pe]
        body = _monomial(pe, parameters, style)
        items = list(value.terms())
        if len(items) == 1:
            mono_text = value.to_text(style=style)
            # a single term c*zeta...: multiply its coefficient into the parameter monomial
            if body:
                mono_text = _times(mono_text, body, style)
            pieces.append(mono_text)
        else:
            inner = value.to_text(style=style)
            if body:
                pieces.append(_times(_paren(inner, style), body, style))
            else:
                pieces.append(inner)
    inner = join_terms(pieces)
    mono = _monomial((i, j), variables, style)
    if not mono:
        return inner
    if len(pieces) == 1 and " + " not in inner and " - " not in inner[1:]:
        return _times(inner, mono, style)
    return _times(_paren(inner, style), mono, style)


def _paren(text: str, style: str) -> str:
    return f"\\left({text}\\right)" if style == "latex" else f"({text})"


def _times(coef: str, body: str, style: str) -> str:
    """``coef * body`` with ``1``/``-1`` written as signs."""
    if coef == "1":
        return body
    if coef == "-1":
        return "-" + body
    return f"{coef}\\, {body}" if style == "latex" else f"{coef}*{body}"

def u_pole_name(i: int, k: int) -> str:
    """``c[i,0,k]``: the coefficient of ``S^i U^k`` (``U = -S-T``, ``k < 0``).

    >>> u_pole_name(0, -1)
    'c[0,0,-1]'
    """
    return f"c[{i},0,{k}]"


def add_term(target: Dict, key: Tuple[int, int], pkey: Tuple[int, ...], value: MZV) -> None:
    """Add ``value`` to ``target[key][pkey]`` (coefficients keyed by powers and
    parameter monomial), dropping entries and slots that become zero."""
    slot = target.setdefault(key, {})
    poly_add_term(slot, pkey, value)
    if not slot:
        del target[key]
