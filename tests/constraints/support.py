"""Helpers shared by the constraint tests: small integrands, expansions, files."""

from __future__ import annotations

from fractions import Fraction
from typing import Dict, Tuple

from lowenergy.constraints.model import constraints_from_text
from lowenergy.expansion.result import Expansion
from lowenergy.integrand.model import LinearExponent, Term
from lowenergy.zeta.element import MZV

S, T = 0, 1


def koba_nielsen(xshift: int, yshift: int, coefficient: Dict[Tuple[int, ...], MZV] | None = None, word=()) -> Term:
    """``coefficient · x^(xshift - s)(1-x)^(yshift - t) G(word; x)``."""
    return Term(
        coefficient if coefficient is not None else {(0, 0): MZV.one()},
        LinearExponent(xshift, Fraction(-1), S),
        LinearExponent(yshift, Fraction(-1), T),
        tuple(word),
    )


def param_key(nparams: int, which: int | None, s: int = 0, t: int = 0) -> Tuple[int, ...]:
    """Exponent tuple (s, t, params...) with the parameter ``which`` to the first power."""
    p = [0] * nparams
    if which is not None:
        p[which] = 1
    return (s, t, *p)


def expansion(coefficients, parameters=(), order: int = 4, title: str = "") -> Expansion:
    """An Expansion from ``{(i, j): {param exponents: MZV or rational}}``."""
    coeffs = {}
    for key, pp in coefficients.items():
        coeffs[key] = {pe: (x if isinstance(x, MZV) else MZV.rational(x)) for pe, x in pp.items()}
        coeffs[key] = {pe: x for pe, x in coeffs[key].items() if x}
        if not coeffs[key]:
            del coeffs[key]
    return Expansion(("s", "t"), tuple(parameters), order, coeffs, title=title)


def constraint_text(*tables: dict, source: str = "tests", extra: str = "") -> str:
    """A constraint file from dicts (values written as TOML literals by repr-like rules)."""
    out = [f"source = {toml(source)}\n", extra]
    for table in tables:
        out.append("[[constraint]]\n")
        for key, value in table.items():
            out.append(f"{key} = {toml(value)}\n")
    return "".join(out)


def toml(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(value)
    if isinstance(value, str):
        return '"' + value.replace("\\", "\\\\").replace('"', '\\"') + '"'
    raise TypeError(value)


def cset(*tables: dict, **kwargs):
    return constraints_from_text(constraint_text(*tables), source=kwargs.get("source", "t.toml"))


def eq(name: str, relation: str, rhs, **more) -> dict:
    """An exact equality constraint table."""
    return {"name": name, "relation": relation, "kind": "=", "rhs": rhs, **more}
