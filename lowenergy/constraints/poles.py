"""Pole-structure and crossing constraints as exact linear conditions.

A ``[[pole]]`` table (format: :mod:`lowenergy.constraints.model`) speaks
about the pole parts of the integral at ``s = n`` (or ``t = n``),
``Σ_k R_k / (s − n)^k``, with numerators ``R_k`` polynomials in the other
variable.  This module turns the demands of the tables into *conditions*:
named lists of residuals, each a polynomial in the free parameters with MZV
coefficients (``{parameter exponents: MZV}``), that must all vanish.

* order above ``max_order``: every power of the other variable in ``R_k``;
* ``max_degree`` D(n): the powers above D(n) of every ``R_k``, k ≤ max_order;
* ``residues``: ``R_{pole_order} − given`` power by power.

A ``[crossing]`` table gives ``c[i,j] − sign·c[j,i]`` for the Laurent
coefficients with ``i + j ≤ order`` (one condition per order) and
``R^s_{n,k}(t) − sign·R^t_{n,k}(s)`` power by power at each level (one
condition per level).

This module does not compute pole parts itself: it reads them from a *pole
table*, any object with the attributes of
:class:`lowenergy.spectrum.residues.ResidueTable` (``poles``, ``levels``,
``parameters``), as plain data: ``poles[(v, Fraction(n))] = {k: {power:
{parameter exponents: MZV}}}`` with v = 0 for s and 1 for t, and for
tables with ``variable = "u"`` (sphere integrands) ``u_poles[Fraction(n)] =
{k: {power of s: {parameter exponents: MZV}}}``, the pole parts
``Σ_k R_k(s)/(u − n)^k`` in ``u = −s−t`` at fixed s
(:func:`lowenergy.svpolylog.sphere_residues.sphere_residues`, which marks its
tables with ``meta["domain"] = "sphere"``; a ``u`` table with any other pole
table -- an integral over 0 < x < 1 has no poles in u -- is refused).  The spectrum
layer computes them exactly (METHOD.md §6-§7): at ``s = n`` from the
``x^n log^k x`` terms of ``(1−x)^(−t−1) F(x)`` at x = 0 (rational
polynomials in t), at ``t = n`` from x = 1 (MZV coefficients).  Because the
integrand is linear in the parameters, so are the numerators.

Examples
--------
>>> from lowenergy.constraints.model import constraints_from_text
>>> cs = constraints_from_text('''source = "doctest"
... [[pole]]
... variable = "s"
... levels = [1]
... max_order = 1
... residues = { 1 = "-t - 1" }
... ''')
>>> class Table:                     # the pole part -(t+1)/(s-1) of B(-s,-t)
...     levels, parameters = 4, ()
...     poles = {(0, Fraction(1)): {1: {1: {(): MZV.rational(-1)}, 0: {(): MZV.rational(-1)}}}}
>>> [(c.label, c.satisfied()) for c in pole_conditions(cs.poles[0], Table(), [1])]
[('pole s: s=1, no order above 1', True), ('pole s: s=1, order 1, numerator', True)]
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Dict, List, Optional, Sequence, Tuple

from ..errors import InputError, LowEnergyError
from ..expansion.result import Expansion
from ..parse import LEAVES, Node, Pow, Product, Rules, Sym, evaluate, walk
from ..zeta.element import MZV
from ..zeta.expression import evaluate_tree
from .model import CrossingConstraint, PoleConstraint

__all__ = [
    "Condition",
    "evaluate_numerator",
    "pole_conditions",
    "crossing_pole_conditions",
    "crossing_contact_conditions",
    "check_table",
    "is_sphere_table",
    "refuse_u_tables",
    "PASS",
    "FAIL",
    "DEPENDS",
]

PASS, FAIL, DEPENDS = "PASS", "FAIL", "DEPENDS"

ParamPoly = Dict[Tuple[int, ...], MZV]
UniPoly = Dict[int, MZV]


@dataclass
class Condition:
    """A named group of residuals that must all vanish.

    Attributes
    ----------
    label:
        E.g. ``"poles in s: s=2, order 1, degree <= 3"``: names the table,
        the level, the order and the demand (used in conflicts and reports).
    table:
        The name of the ``[[pole]]`` or ``[crossing]`` table.
    kind:
        ``"pole"`` or ``"crossing"``.
    level:
        The level n (None for crossing of the Laurent coefficients).
    order:
        The pole order k the condition speaks about (None when it spans
        several orders).
    residuals:
        ``[(what, {parameter exponents: MZV})]``: ``what`` names the power
        of the other variable or the coefficient pair.
    source, line:
        Where the demand is written.
    """

    label: str
    table: str
    kind: str
    level: Optional[int]
    order: Optional[int]
    residuals: List[Tuple[str, ParamPoly]] = field(default_factory=list)
    source: str = ""
    line: Optional[int] = None

    def satisfied(self) -> bool:
        """True when every residual is identically zero."""
        return not any(pp for _, pp in self.residuals)

    def status(self) -> str:
        """PASS (all residuals zero), FAIL (some residual cannot vanish for
        any parameter values: a canonical MZV monomial with a constant
        non-zero coefficient and no parameter) or DEPENDS."""
        if self.satisfied():
            return PASS
        for _, pp in self.residuals:
            by_mono: Dict[tuple, set] = {}
            for pe, x in pp.items():
                for mono in x.as_dict():
                    by_mono.setdefault(mono, set()).add(any(pe))
            if any(flags == {False} for flags in by_mono.values()):
                return FAIL
        return DEPENDS


# ---------------------------------------------------------------------------
# given numerators
# ---------------------------------------------------------------------------


def _uadd(a: UniPoly, b: UniPoly, sign: int = 1) -> UniPoly:
    out = dict(a)
    for k, v in b.items():
        y = out.get(k, MZV()) + (v if sign == 1 else -v)
        if y:
            out[k] = y
        else:
            out.pop(k, None)
    return out


def _umul(a: UniPoly, b: UniPoly) -> UniPoly:
    out: UniPoly = {}
    for ka, va in a.items():
        for kb, vb in b.items():
            y = out.get(ka + kb, MZV()) + va * vb
            if y:
                out[ka + kb] = y
            else:
                out.pop(ka + kb, None)
    return out


def _has_name(node: Node, name: str) -> bool:
    return any(isinstance(item, Sym) and item.name == name for item in walk(node))


class _NumeratorRules(Rules):
    """``{power of the variable: MZV}``; sub-trees free of the variable are MZV constants."""

    def __init__(self, variable: str, store) -> None:
        self.variable = variable
        self.store = store

    def leaf(self, node: Node) -> Optional[UniPoly]:
        if not _has_name(node, self.variable):
            value = evaluate_tree(node, store=self.store)
            return {0: value} if value else {}
        if isinstance(node, Sym):
            return {1: MZV.one()}
        if isinstance(node, LEAVES):
            raise InputError("unexpected term in a numerator")  # pragma: no cover - the reader refuses it
        return None

    def neg(self, value: UniPoly, node: Node) -> UniPoly:
        return {k: -v for k, v in value.items()}

    def add(self, left: UniPoly, right: UniPoly, node: Node, k: int) -> UniPoly:
        return _uadd(left, right, 1)

    def sub(self, left: UniPoly, right: UniPoly, node: Node, k: int) -> UniPoly:
        return _uadd(left, right, -1)

    def mul(self, left: UniPoly, right: UniPoly, node: Node, k: int) -> UniPoly:
        return _umul(left, right)

    def div(self, left: UniPoly, right: UniPoly, node: Product, k: int) -> UniPoly:
        d = right.get(0)
        if set(right) != {0} or not d or not d.is_rational():
            raise InputError("division by zero or by an irrational number in a numerator", term=str(node.items[k]))
        q = 1 / d.rational_value()
        return {key: v * q for key, v in left.items()}

    def power(self, base: UniPoly, exponent: UniPoly, node: Pow) -> UniPoly:
        e = exponent.get(0, MZV())
        if set(exponent) - {0} or not e.is_rational() or e.rational_value().denominator != 1 or e.rational_value() < 0:
            raise InputError("powers of the variable must be non-negative integers", term=str(node.exponent))
        out: UniPoly = {0: MZV.one()}
        for _ in range(int(e.rational_value())):
            out = _umul(out, base)
        return out


def evaluate_numerator(tree: Node, variable: str, store=None) -> UniPoly:
    """A numerator tree (a polynomial in ``variable`` with MZV coefficients,
    already checked by the reader) as ``{power: MZV}``.

    Sub-trees free of the variable are reduced by
    :func:`lowenergy.zeta.expression.evaluate_tree` (so ``pi^2`` and
    ``zeta(2)`` agree); powers of the variable must be non-negative integers.

    >>> from lowenergy.parse import parse_expression
    >>> p = evaluate_numerator(parse_expression("(t+1)*(t+2)/2"), "t")
    >>> {k: v.to_text() for k, v in sorted(p.items())}
    {0: '1', 1: '3/2', 2: '1/2'}
    """
    return evaluate(tree, _NumeratorRules(variable, store))


# ---------------------------------------------------------------------------
# conditions
# ---------------------------------------------------------------------------


def _table_levels_ok(table, levels: Sequence[int], what: str) -> None:
    top = max(levels, default=-1)
    if top > table.levels:
        raise InputError(
            f"{what} needs the pole parts up to level {top}, but they were computed to level {table.levels} only",
            hint=f"compute residues(integrand, {top}) or more",
        )


def _pole(table, var: int, level: int) -> Dict[int, Dict[int, ParamPoly]]:
    if var == 2:
        return (getattr(table, "u_poles", None) or {}).get(Fraction(level), {})
    return table.poles.get((var, Fraction(level)), {})


def _var_name(var: int) -> str:
    return "stu"[var]


def _power_name(var: int, power: int) -> str:
    other = "t" if var == 0 else "s"  # numerators of poles in u are polynomials in s
    return "1" if power == 0 else (other if power == 1 else f"{other}^{power}")


def is_sphere_table(table) -> bool:
    """True for pole tables of sphere integrands (the only ones with poles in u)."""
    meta = getattr(table, "meta", None)
    return isinstance(meta, dict) and meta.get("domain") == "sphere"


def refuse_u_tables(poles: Sequence[PoleConstraint], table) -> None:
    """Refuse ``[[pole]]`` tables with ``variable = "u"`` when ``table`` is not
    the pole table of a sphere integrand (file and line of ``variable``)."""
    if table is None or is_sphere_table(table):
        return
    for pole in poles:
        if pole.variable == "u":
            raise InputError(
                f"pole table '{pole.name}' speaks about poles in u = -s-t, which only sphere integrands have "
                "(an integral over 0 < x < 1 has poles in s and t only)",
                source=pole.source, line=pole.where("variable"), term='variable = "u"',
                hint='use variable = "s" or "t" for this integrand, or a sphere integrand (domain = "sphere")',
            )


def pole_conditions(pole: PoleConstraint, table, levels: Sequence[int], store=None) -> List[Condition]:
    """The conditions of one ``[[pole]]`` table at ``levels`` (imposed or checked).

    One condition per level and order: orders above ``max_order`` must be
    absent; at orders up to ``max_order`` the powers above the degree bound
    vanish; at ``pole_order`` the numerator equals the given one (levels
    that have one).
    """
    _table_levels_ok(table, levels, f"pole table '{pole.name}'")
    if pole.variable == "u":
        refuse_u_tables([pole], table)
    v = pole.var_index
    out: List[Condition] = []
    for n in levels:
        orders = _pole(table, v, n)
        given = pole.residue_at(n)
        given_poly: Optional[UniPoly] = None
        if given is not None:
            try:
                given_poly = evaluate_numerator(given[1], pole.other, store)
            except LowEnergyError as err:
                err.source, err.line = pole.source, pole.where("residues")
                err.message += f" (in the residue at level {n} of pole table '{pole.name}')"
                err.args = (err.message,)
                raise
        bound = pole.degree_at(n)
        high_orders = [(f"order {k}, {_power_name(v, p)}", dict(pp))
                       for k in sorted(orders) if k > pole.max_order for p, pp in sorted(orders[k].items())]
        out.append(Condition(f"{pole.name}: {pole.variable}={n}, no order above {pole.max_order}", pole.name, "pole",
                             n, pole.max_order + 1, high_orders, pole.source, pole.where("max_order")))
        for k in range(1, pole.max_order + 1):
            rk = orders.get(k, {})
            head = f"{pole.name}: {pole.variable}={n}, order {k}"
            if bound is not None:
                high = [(p, pp) for p, pp in sorted(rk.items()) if p > bound]
                out.append(Condition(f"{head}, degree <= {bound}", pole.name, "pole", n, k,
                                     [(_power_name(v, p), dict(pp)) for p, pp in high],
                                     pole.source, pole.where("max_degree")))
            if given_poly is not None and k == pole.pole_order:
                residuals = []
                zero = (0,) * len(table.parameters)
                for p in sorted(set(rk) | set(given_poly)):
                    pp = dict(rk.get(p, {}))
                    if p in given_poly:
                        y = pp.get(zero, MZV()) - given_poly[p]
                        if y:
                            pp[zero] = y
                        else:
                            pp.pop(zero, None)
                    residuals.append((_power_name(v, p), pp))
                out.append(Condition(f"{head}, numerator", pole.name, "pole", n, k, residuals,
                                     pole.source, pole.where("residues")))
    return out


def crossing_pole_conditions(crossing: CrossingConstraint, table, levels: Sequence[int]) -> List[Condition]:
    """``R^s_{n,k}(t) = sign·R^t_{n,k}(s)`` power by power, one condition per level."""
    _table_levels_ok(table, levels, f"crossing table '{crossing.name}'")
    out: List[Condition] = []
    for n in levels:
        ps, pt = _pole(table, 0, n), _pole(table, 1, n)
        residuals = []
        for k in sorted(set(ps) | set(pt)):
            rs, rt = ps.get(k, {}), pt.get(k, {})
            for p in sorted(set(rs) | set(rt)):
                pp = dict(rs.get(p, {}))
                for pe, x in rt.get(p, {}).items():
                    y = pp.get(pe, MZV()) - (x if crossing.sign == 1 else -x)
                    if y:
                        pp[pe] = y
                    else:
                        pp.pop(pe, None)
                residuals.append((f"order {k}, {_power_name(0, p)}", pp))
        out.append(Condition(f"{crossing.name}: poles at s={n} and t={n}", crossing.name, "crossing", n, None,
                             residuals, crossing.source, crossing.line))
    return out


def crossing_contact_conditions(crossing: CrossingConstraint, expansion: Expansion) -> List[Condition]:
    """``c[i,j] − sign·c[j,i]`` for the Laurent coefficients with ``i + j ≤ order``,
    one condition per total order (pole coefficients such as ``c[-1,2]`` included)."""
    if crossing.order > expansion.order:
        raise InputError(
            f"crossing table '{crossing.name}' needs the expansion to order {crossing.order}, "
            f"but it has order {expansion.order}",
            source=crossing.source, line=crossing.line,
            hint=f"expand to order {crossing.order} or lower 'order' in the crossing table",
        )
    keys = {k for k in expansion.coefficients if k[0] + k[1] <= crossing.order}
    keys |= {(j, i) for (i, j) in keys}
    by_order: Dict[int, List[Tuple[str, ParamPoly]]] = {}
    for (i, j) in sorted(keys):
        if i > j or (i == j and crossing.sign == 1):
            continue
        a = expansion.coefficients.get((i, j), {})
        b = expansion.coefficients.get((j, i), {})
        pp = dict(a)
        for pe, x in b.items():
            y = pp.get(pe, MZV()) - (x if crossing.sign == 1 else -x)
            if y:
                pp[pe] = y
            else:
                pp.pop(pe, None)
        what = f"c[{i},{j}] - c[{j},{i}]" if crossing.sign == 1 else (
            f"c[{i},{j}] + c[{j},{i}]" if i != j else f"2*c[{i},{i}]")
        by_order.setdefault(i + j, []).append((what, pp))
    return [Condition(f"{crossing.name}: Laurent coefficients of order {d}", crossing.name, "crossing", None, None,
                      residuals, crossing.source, crossing.line)
            for d, residuals in sorted(by_order.items())]


def check_table(sets, table, expansion: Optional[Expansion], store=None) -> List[Tuple[Condition, bool]]:
    """Every pole and crossing condition of the constraint sets, imposed levels
    and checked levels alike: ``[(condition, imposed?)]``."""
    out: List[Tuple[Condition, bool]] = []
    for cs in sets:
        for pole in cs.poles:
            out += [(c, True) for c in pole_conditions(pole, table, pole.levels, store)]
            out += [(c, False) for c in pole_conditions(pole, table, pole.check_levels, store)]
        if cs.crossing is not None:
            cr = cs.crossing
            if expansion is not None:
                out += [(c, True) for c in crossing_contact_conditions(cr, expansion)]
            out += [(c, True) for c in crossing_pole_conditions(cr, table, cr.levels)]
            out += [(c, False) for c in crossing_pole_conditions(cr, table, cr.check_levels)]
    return out
