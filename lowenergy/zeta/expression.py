"""Turn a parsed plain-text expression into an exact :class:`MZV`.

Syntax (see :mod:`lowenergy.parse` for the grammar): rationals and decimals,
``zeta(n1, ..., nk)`` (first index on the largest summation variable),
``G(a1, ..., an; 1)`` (shuffle-regularized value at 1, letters 0 and 1),
``pi``, ``sv(<expression>)`` (the single-valued map, :func:`sv_of_tree`),
``+ - * / ^`` and parentheses.  ``pi`` may only appear in even total
powers in each term (``π^2 = 6 ζ(2)``); division is by rationals only;
exponents are non-negative integers (negative ones only for rationals).

Nothing is evaluated as Python code: the tree from the hand-written parser
is evaluated by :func:`lowenergy.parse.evaluate` with the rules here.

>>> print(evaluate("zeta(2,1) - zeta(3)"))
0
>>> print(evaluate("pi^4/90"))          # ζ(4) = π^4/90 (Euler)
2/5*zeta(2)^2
"""

from __future__ import annotations

from fractions import Fraction
from typing import Dict

from ..errors import InputError, LowEnergyError, RegularizationError
from ..parse import Call, Coef, Node, Num, Pow, Product, Rules, Sym, parse_expression
from ..parse import evaluate as evaluate_tree_value
from ..poly import add as poly_add, add_term
from .element import MZV, g_value, zeta
from .table import TableStore

__all__ = ["evaluate", "evaluate_tree", "sv_of_tree", "zeta_indices", "MAX_EXPONENT"]

from ..limits import MAX_EXPONENT, MAX_MZV_PRODUCT_WORK, MAX_RATIONAL_BITS, MAX_TERMS, check_rational

#: Highest total power of pi in one term (pi^(2k) becomes (6*zeta(2))^k).
MAX_PI_POWER = 2 * MAX_EXPONENT

# An intermediate value: {power of pi: MZV}
PiValue = Dict[int, MZV]


def _add(a: PiValue, b: PiValue, sign: int = 1) -> PiValue:
    return poly_add(a, b, sign)


def _mul(a: PiValue, b: PiValue, budget: list | None = None) -> PiValue:
    size = sum(len(x.as_dict()) for x in a.values()) * sum(len(x.as_dict()) for x in b.values())
    if size > MAX_TERMS:
        raise InputError(f"the expanded product would have more than {MAX_TERMS} terms")
    if budget is not None:
        # the work budget for products: counted before each product is formed
        budget[0] += size
        if budget[0] > MAX_MZV_PRODUCT_WORK:
            raise InputError(
                f"evaluating the products needs more than {MAX_MZV_PRODUCT_WORK} multiplications of terms",
                hint="simplify the expression (e.g. lower powers of long sums)",
            )
    out: PiValue = {}
    for pa, xa in a.items():
        for pb, xb in b.items():
            if pa + pb > MAX_PI_POWER:
                raise InputError(f"power of pi above {MAX_PI_POWER}")
            add_term(out, pa + pb, xa * xb)
    return out


def _checked(v: PiValue) -> PiValue:
    """Refuse rationals beyond :data:`~lowenergy.limits.MAX_RATIONAL_BITS` bits."""
    for x in v.values():
        for c in x.as_dict().values():
            check_rational(c)
    return v


def _rational_of(v: PiValue) -> Fraction | None:
    if not v:
        return Fraction(0)
    if set(v) != {0} or not v[0].is_rational():
        return None
    return v[0].rational_value()


def evaluate(
    text: str,
    *,
    regularize: str | None = None,
    store: TableStore | None = None,
    source: str | None = None,
    line: int | None = None,
) -> MZV:
    """Parse and evaluate ``text`` to a canonical :class:`MZV`.

    Parameters
    ----------
    text:
        The expression.
    regularize:
        ``None`` refuses divergent ``zeta(1, ...)``; ``"shuffle"`` or
        ``"stuffle"`` regularizes them.
    store:
        Table store (default: the user's cache).
    source, line:
        Where the text came from, for error messages.
    """
    tree = parse_expression(text, source=source or "<expression>", line=line)
    try:
        return evaluate_tree(tree, regularize=regularize, store=store)
    except LowEnergyError as err:
        raise err.located(source=source or "<expression>", line=line)


def _fail(node: Node, message: str, hint: str | None = None, cls=InputError):
    from ..parse import to_text

    term = None
    try:
        term = to_text(node)
    except Exception:  # pragma: no cover - to_text handles every node
        term = None
    return cls(message, column=getattr(node, "col", None), term=term, hint=hint)


def zeta_indices(node: Call, fail) -> list:
    """The indices of a ``zeta(n1, ..., nk)`` call, checked to be positive integers.

    ``fail(node, message, hint)`` builds the caller's error (with its own
    source and line); convergence and weight limits are the caller's policy.
    """
    if node.letters is not None:
        raise fail(node, "zeta takes indices only, without ';'", "write zeta(3,5)")
    if not node.args:
        raise fail(node, "zeta needs at least one index", "write zeta(3)")
    indices = []
    for a in node.args:
        if not isinstance(a, Num) or a.value.denominator != 1 or a.value < 1:
            raise fail(a, "MZV indices must be positive integers", "write zeta(3,5)")
        indices.append(int(a.value))
    return indices


def _zeta_call(node: Call, regularize, store) -> PiValue:
    indices = zeta_indices(node, _fail)
    if indices[0] == 1 and regularize is None:
        raise _fail(
            node,
            "zeta with first index 1 diverges",
            "ask for a regularization (--regularize shuffle or stuffle)",
            RegularizationError,
        )
    try:
        return {0: zeta(*indices, regularize=regularize, store=store)}
    except LowEnergyError as err:
        raise err.located(column=node.col)


def _g_call(node: Call, store) -> PiValue:
    if node.letters is None or len(node.args) != 1:
        raise _fail(node, "G needs letters and the argument 1", "write G(0,1,1; 1)")
    arg = node.args[0]
    if not (isinstance(arg, Num) and arg.value == 1):
        raise _fail(arg, "only G(...; 1) is a number here", "write G(0,1; 1)")
    letters = []
    for a in node.letters:
        if not isinstance(a, Num) or a.value not in (0, 1):
            raise _fail(a, "letters of G must be 0 or 1")
        letters.append(int(a.value))
    try:
        return {0: g_value(tuple(letters), store=store)}
    except LowEnergyError as err:
        raise err.located(column=node.col)


def sv_of_tree(node: Call, fail, *, regularize: str | None = None, store: TableStore | None = None) -> MZV:
    """``sv(x)`` for a call ``sv(<expression>)``: Brown's single-valued map on MZVs.

    The argument is evaluated as an MZV expression, then mapped with
    :func:`lowenergy.svpolylog.svmap.sv` (through the f-alphabet: sv f2 = 0,
    sv ζ(2k+1) = 2 ζ(2k+1)).  ``fail(node, message, hint)`` builds the
    caller's error.  The svpolylog layer sits above this one, so it is
    imported here, at call time.
    """
    if node.letters is not None or len(node.args) != 1:
        raise fail(node, "sv takes one MZV expression", "write sv(zeta(5,3))")
    value = evaluate_tree(node.args[0], regularize=regularize, store=store)
    if not value:
        return value
    from ..svpolylog.svmap import sv  # lazy: a later layer (single-valued polylogarithms)

    try:
        return sv(value, store=store)
    except LowEnergyError as err:
        raise err.located(column=node.col)


class _MZVRules(Rules):
    """:func:`lowenergy.parse.evaluate` over ``{power of pi: MZV}`` values."""

    def __init__(self, regularize: str | None, store: TableStore | None) -> None:
        self.regularize = regularize
        self.store = store
        self.budget = [0]

    def leaf(self, node: Node) -> PiValue | None:
        if isinstance(node, Num):
            return {0: MZV.rational(node.value)} if node.value else {}
        if isinstance(node, Sym):
            if node.name == "pi":
                return {1: MZV.one()}
            raise _fail(node, f"unknown name {node.name!r}", "numbers here use zeta(...), G(...; 1) and pi")
        if isinstance(node, Coef):
            raise _fail(node, "coefficients are not numbers", "numbers here use zeta(...), G(...; 1) and pi")
        if not isinstance(node, Call):
            return None
        if node.name == "zeta":
            return _zeta_call(node, self.regularize, self.store)
        if node.name == "G":
            return _g_call(node, self.store)
        if node.name == "sv":
            return {0: sv_of_tree(node, _fail, regularize=self.regularize, store=self.store)}
        raise _fail(node, f"unknown function {node.name!r}", "known here: zeta(...), G(...; 1), sv(...)")

    def neg(self, value: PiValue, node: Node) -> PiValue:
        return {p: -x for p, x in value.items()}

    def add(self, left: PiValue, right: PiValue, node: Node, k: int) -> PiValue:
        return _add(left, right)

    def sub(self, left: PiValue, right: PiValue, node: Node, k: int) -> PiValue:
        return _add(left, right, -1)

    def mul(self, left: PiValue, right: PiValue, node: Node, k: int) -> PiValue:
        try:
            return _checked(_mul(left, right, self.budget))
        except LowEnergyError as err:
            raise err.located(column=node.col)

    def div(self, left: PiValue, right: PiValue, node: Product, k: int) -> PiValue:
        divisor = node.items[k]
        q = _rational_of(right)
        if q is None:
            raise _fail(divisor, "division by a non-rational quantity", "divide by rational numbers only")
        if q == 0:
            raise _fail(divisor, "division by zero")
        try:
            return _checked({p: x / q for p, x in left.items()})
        except LowEnergyError as err:
            raise err.located(column=node.col)

    def power(self, base: PiValue, exponent: PiValue, node: Pow) -> PiValue:
        e = _rational_of(exponent)
        if e is None or e.denominator != 1:
            raise _fail(node.exponent, "exponents must be integers", "write e.g. zeta(3)^2")
        n = int(e)
        if abs(n) > MAX_EXPONENT:
            raise _fail(node.exponent, f"exponent larger than {MAX_EXPONENT}")
        if n < 0:
            q = _rational_of(base)
            if q is None:
                raise _fail(node, "negative powers are allowed for rational numbers only")
            if q == 0:
                raise _fail(node, "division by zero")
            if abs(n) * max(q.numerator.bit_length(), q.denominator.bit_length()) > MAX_RATIONAL_BITS:
                raise _fail(node, f"number too large (more than {MAX_RATIONAL_BITS} bits)")
            return {0: MZV.rational(q ** n)}
        res = {0: MZV.one()}
        try:
            for _ in range(n):
                res = _checked(_mul(res, base, self.budget))
        except LowEnergyError as err:
            raise err.located(column=node.col)
        return res


def evaluate_tree(tree: Node, *, regularize: str | None = None, store: TableStore | None = None) -> MZV:
    """Evaluate a parsed tree (with :func:`lowenergy.parse.evaluate`; see :func:`evaluate`)."""
    final = evaluate_tree_value(tree, _MZVRules(regularize, store))
    total = MZV()
    for p, x in final.items():
        if p % 2:
            raise InputError(
                "odd power of pi: the result is not a combination of MZVs",
                column=tree.col,
                hint="only even powers of pi are MZVs (pi^2 = 6*zeta(2))",
            )
        total = total + x * (MZV.rational(6) * zeta(2, store=store)) ** (p // 2) if p else total + x
    return total
