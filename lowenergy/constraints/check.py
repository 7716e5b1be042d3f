"""Check an expansion against a constraint set.

For every constraint the relation is evaluated on the candidate's
coefficients (see :mod:`lowenergy.constraints.model` for the file format and
the coefficient names) and compared with the right-hand side:

exact ``rhs``, kind ``=``
    The residual ``lhs − rhs`` is computed exactly in the canonical MZV basis
    and the constraint passes iff it is exactly 0 (equal numbers have
    identical canonical forms).
exact ``rhs``, kind ``<=`` / ``>=``
    Decided from the sign of the exact residual, evaluated numerically with
    enough digits to be sure of the sign (from 30 digits up, doubling; a
    non-zero canonical form is a non-zero number).
numeric ``rhs_value``
    With ``tol = abs_tol + rel_tol·|rhs_value|`` (``uncertainty`` counts as
    ``abs_tol``) and ``r = lhs − rhs_value`` evaluated to ``digits``
    (default 30) significant digits: ``=`` passes iff ``|r| ≤ tol``, ``<=``
    iff ``r ≤ tol``, ``>=`` iff ``r ≥ −tol``.

Candidates with free parameters: the residual is a polynomial in the
parameters with MZV coefficients and is reported as such.  A constraint
passes only when the residual is identically zero (or, for numeric and
inequality constraints, when it does not depend on the parameters and the
comparison holds).  Otherwise the status is ``FAIL`` when no rational
values of the parameters can satisfy an exact equality (some canonical MZV
monomial has a non-zero coefficient that does not depend on the parameters)
and ``DEPENDS`` when they might -- :func:`lowenergy.constraints.fix.fix`
then solves for them.

Missing MZV tables are built on first use (:mod:`lowenergy.zeta.table`).
When a relation contains an MZV of a weight beyond the buildable tables
(:data:`~lowenergy.zeta.table.MAX_WEIGHT`, single zetas excepted: they never
need a table), the constraint is evaluated numerically instead (``mode = "numeric"``; an
exact equality then passes when ``|r| ≤ 10^-(digits-5)·M``, where ``M`` is
the sum of the absolute values of all terms of ``lhs`` and ``rhs`` before
cancellation) and the result says so.

A coefficient beyond the candidate's order is an
:class:`~lowenergy.errors.InputError` naming the coefficient and both
orders; :func:`~lowenergy.constraints.model.required_order` tells how far to
expand first.

Examples
--------
>>> from lowenergy.expansion.result import Expansion
>>> from lowenergy.constraints.model import constraints_from_text
>>> cs = constraints_from_text('''source = "doctest"
... [[constraint]]
... name = "c10"
... relation = "2*c[1,0]"
... kind = "="
... rhs = "1"
... [[constraint]]
... name = "bound"
... relation = "c[1,0]"
... kind = "<="
... rhs_value = 0.4
... abs_tol = 0.1
... ''')
>>> cand = Expansion(("s", "t"), (), 1, {(1, 0): {(): MZV.rational(Fraction(1, 2))}})
>>> report = check(cand, cs)
>>> [(r.name, r.status) for r in report], report.ok
([('c10', 'PASS'), ('bound', 'PASS')], True)
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Callable, Dict, List, Optional, Sequence, Tuple

import mpmath

from ..errors import InputError, LowEnergyError, NumericError, TableError
from ..expansion.result import Expansion
from ..integrand.model import poly_add, poly_scale
from ..parse import Call, Coef, Node, Num, Pow, Product, Rules, Sym, evaluate
from ..words import regularize_word, word_to_indices
from ..zeta.element import MZV, g_value, zeta
from ..zeta.numeric import zeta_numeric
from ..zeta.table import TableStore
from .model import Constraint, ConstraintSet, CoefficientRef, required_order

__all__ = [
    "check",
    "CheckReport",
    "ConstraintResult",
    "CoefficientValues",
    "format_poly",
    "PASS",
    "FAIL",
    "DEPENDS",
    "DEFAULT_DIGITS",
    "MAX_EXPONENT",
    "MAX_TERMS",
]

PASS, FAIL, DEPENDS = "PASS", "FAIL", "DEPENDS"
#: Significant digits of numeric comparisons.
DEFAULT_DIGITS = 30
#: Largest absolute exponent in a relation.
MAX_EXPONENT = 64
#: Most terms in any intermediate product.
MAX_TERMS = 200_000
#: Most bits of any rational coefficient created by a power.
MAX_BITS = 200_000
#: Most term pairs multiplied in the evaluation of one relation.
MAX_WORK = 250_000

ParamPoly = Dict[Tuple[int, ...], MZV]


# ==========================================================================
# coefficient values of a candidate
# ==========================================================================


class CoefficientValues:
    """Values of ``c[i,j]``, ``sym[i,j]``, ``sigma[a,b]`` on one expansion.

    Each value is a polynomial in the expansion's parameters with MZV
    coefficients (``{parameter exponents: MZV}``), computed exactly and
    cached.  ``warnings[name]`` explains when a ``sym`` or ``sigma`` value is
    the coefficient of the symmetric part of a candidate that is not
    symmetric.
    """

    def __init__(self, expansion: Expansion) -> None:
        if not isinstance(expansion, Expansion):
            raise TypeError(f"expected an Expansion, not {type(expansion).__name__}")
        self.expansion = expansion
        self.nparams = len(expansion.parameters)
        self._cache: Dict[str, ParamPoly] = {}
        self._sigma: Dict[int, object] = {}
        self.warnings: Dict[str, str] = {}

    def c(self, i: int, j: int) -> ParamPoly:
        return {pe: x for pe, x in self.expansion.coefficients.get((i, j), {}).items() if x}

    def __call__(self, ref: CoefficientRef) -> ParamPoly:
        name = ref.name
        if name not in self._cache:
            self._cache[name] = self._compute(ref)
        return self._cache[name]

    def _compute(self, ref: CoefficientRef) -> ParamPoly:
        a, b = ref.a, ref.b
        if ref.u is not None:
            # U-channel pole row of a sphere expansion: the coefficient of s^a U^u
            upoles = getattr(self.expansion, "u_poles", None) or {}
            return {pe: x for pe, x in upoles.get((a, ref.u), {}).items() if x}
        if ref.family == "c":
            return self.c(a, b)
        if ref.family == "sym":
            if a == b:
                return self.c(a, a)
            x, y = self.c(a, b), self.c(b, a)
            if x != y:
                self.warnings[ref.name] = (
                    f"the candidate is not symmetric under s <-> t at c[{a},{b}], c[{b},{a}]; "
                    f"{ref.name} is the coefficient of its symmetric part"
                )
            return poly_scale(poly_add(x, y), Fraction(1, 2))
        # sigma: project the degree-d contact terms on sigma2^a sigma3^b
        from ..tables.bases import decompose_sigma

        d = ref.order
        if d not in self._sigma:
            contact = {
                k: {pe: x for pe, x in pp.items() if x}
                for k, pp in self.expansion.coefficients.items()
                if k[0] >= 0 and k[1] >= 0 and k[0] + k[1] == d
            }
            contact = {k: v for k, v in contact.items() if v}
            self._sigma[d] = decompose_sigma(contact, d, self.expansion.variables)
        dec = self._sigma[d]
        if dec.remainder:  # type: ignore[attr-defined]
            self.warnings[ref.name] = (
                f"the contact terms of order {d} are not symmetric under permutations of (s, t, u); "
                f"{ref.name} is the coefficient of their symmetrized part"
            )
        return dict(dec.coefficients.get(ref.name, {}))  # type: ignore[attr-defined]


# ==========================================================================
# evaluation of a relation: exact (MZV) and numeric (mpmath) rings
# ==========================================================================


class _ExactRing:
    numeric = False

    def __init__(self, store: Optional[TableStore]) -> None:
        self.store = store

    def rational(self, q: Fraction) -> MZV:
        return MZV.rational(q)

    def add(self, x, y):
        return x + y

    def neg(self, x):
        return -x

    def mul(self, x, y):
        return x * y

    def is_zero(self, x) -> bool:
        return not x

    def as_rational(self, x) -> Optional[Fraction]:
        return x.rational_value() if x.is_rational() else None

    def zeta(self, indices: Tuple[int, ...]):
        return zeta(*indices, store=self.store)

    def g(self, word: Tuple[int, ...]):
        return g_value(word, store=self.store)

    def coefficient(self, x: MZV):
        return x

    def pi_squared(self):
        return MZV({((2,),): Fraction(6)})  # pi^2 = 6 zeta(2)

    def size(self, x) -> int:
        return max(1, len(x.as_dict()))

    def bits(self, x) -> int:
        return max((max(q.numerator.bit_length(), q.denominator.bit_length()) for q in x.as_dict().values()), default=0)


class _NumericRing:
    """Scalars are exact Fractions as long as possible, else mpmath numbers.

    All arithmetic must run inside ``mpmath.workdps(self.work)``.
    """

    numeric = True

    def __init__(self, digits: int, absolute: bool = False) -> None:
        self.digits = digits
        self.work = digits + 20
        # absolute: every constant by its absolute value and every sign dropped,
        # which bounds the size of the terms before cancellation
        self.absolute = absolute

    @staticmethod
    def mpf(x):
        if isinstance(x, Fraction):
            return mpmath.mpf(x.numerator) / x.denominator
        return x

    def rational(self, q: Fraction):
        return abs(Fraction(q)) if self.absolute else Fraction(q)

    def add(self, x, y):
        if isinstance(x, Fraction) and isinstance(y, Fraction):
            return x + y
        return self.mpf(x) + self.mpf(y)

    def neg(self, x):
        return x if self.absolute else -x

    def mul(self, x, y):
        if isinstance(x, Fraction) and isinstance(y, Fraction):
            return x * y
        return self.mpf(x) * self.mpf(y)

    def is_zero(self, x) -> bool:
        return x == 0

    def as_rational(self, x) -> Optional[Fraction]:
        return x if isinstance(x, Fraction) else None

    def zeta(self, indices: Tuple[int, ...]):
        return zeta_numeric(tuple(indices), self.work)

    def g(self, word: Tuple[int, ...]):
        total = mpmath.mpf(0)
        for w, c in regularize_word(tuple(word)).items():
            idx = word_to_indices(w)
            sign = -1 if len(idx) % 2 else 1
            q = abs(Fraction(c)) if self.absolute else Fraction(c) * sign
            total += self.mpf(q) * zeta_numeric(idx, self.work)
        return total

    def coefficient(self, x: MZV):
        if isinstance(x, mpmath.mpf):  # a numeric-only candidate table
            return abs(x) if self.absolute else x
        if self.absolute:
            x = MZV({m: abs(q) for m, q in x.as_dict().items()})
        if x.is_rational():
            return x.rational_value()
        return x.numeric(self.work)

    def pi_squared(self):
        return mpmath.pi ** 2

    def size(self, x) -> int:
        return 1

    def bits(self, x) -> int:
        if isinstance(x, Fraction):
            return max(x.numerator.bit_length(), x.denominator.bit_length())
        return 0


# A value during evaluation: {(parameter exponents, power of pi): scalar}
_Key = Tuple[Tuple[int, ...], int]


def _fail(node: Node, message: str, hint: Optional[str] = None) -> InputError:
    return InputError(message, column=getattr(node, "col", None), hint=hint)


def _v_add(ring, a: dict, b: dict, sign: int = 1) -> dict:
    out = dict(a)
    for k, x in b.items():
        y = ring.add(out[k], x if sign == 1 else ring.neg(x)) if k in out else (x if sign == 1 else ring.neg(x))
        if ring.is_zero(y):
            out.pop(k, None)
        else:
            out[k] = y
    return out


def _v_mul(ring, a: dict, b: dict, node: Node, budget: Optional[List[int]] = None) -> dict:
    size = sum(ring.size(x) for x in a.values()) * sum(ring.size(x) for x in b.values())
    if size > MAX_TERMS:
        raise _fail(node, f"the expanded product would have more than {MAX_TERMS} terms", "simplify the relation")
    if budget is not None:
        budget[0] += size
        if budget[0] > MAX_WORK:
            raise _fail(node, "the relation is too expensive to expand", "simplify the relation (fewer or smaller products)")
    out: dict = {}
    for (pa, qa), xa in a.items():
        for (pb, qb), xb in b.items():
            k = (tuple(u + v for u, v in zip(pa, pb)), qa + qb)
            y = ring.mul(xa, xb)
            if k in out:
                y = ring.add(out[k], y)
            if ring.is_zero(y):
                out.pop(k, None)
            else:
                out[k] = y
    return out


def _v_rational(ring, v: dict, nparams: int) -> Optional[Fraction]:
    if not v:
        return Fraction(0)
    if len(v) != 1:
        return None
    (key, x), = v.items()
    if key != ((0,) * nparams, 0):
        return None
    return ring.as_rational(x)


class _RelationRules(Rules):
    """Values ``{(parameter exponents, power of pi): scalar}`` of a relation's nodes."""

    def __init__(self, constraint: Constraint, lookup, nparams: int, ring) -> None:
        self.constraint = constraint
        self.lookup = lookup
        self.nparams = nparams
        self.ring = ring
        self.zero = (0,) * nparams
        self.budget = [0]

    def leaf(self, node: Node) -> Optional[dict]:
        ring, zero = self.ring, self.zero
        if isinstance(node, Num):
            return {(zero, 0): ring.rational(node.value)} if node.value else {}
        if isinstance(node, Sym):
            if node.name == "pi":
                return {(zero, 1): ring.rational(Fraction(1))}
            raise _fail(node, f"unknown name '{node.name}'")
        if isinstance(node, Coef):
            ref = self.constraint.ref_for(node) if self.lookup is not None else None
            if ref is None:
                raise _fail(node, f"unknown name '{node.name}'")
            value = {}
            for pe, x in self.lookup(ref).items():
                if len(pe) != self.nparams:
                    raise InputError(f"{ref.name} has parameter exponents {pe!r} not matching the parameters")
                y = ring.coefficient(x)
                if not ring.is_zero(y):
                    value[(pe, 0)] = y
            return value
        if not isinstance(node, Call):
            return None
        if node.name == "zeta":
            y = ring.zeta(tuple(int(a.value) for a in node.args))  # type: ignore[attr-defined]
        elif node.name == "G":
            y = ring.g(tuple(int(a.value) for a in node.letters or ()))  # type: ignore[attr-defined]
        elif node.name == "sv":
            from ..zeta.expression import sv_of_tree

            y = ring.coefficient(sv_of_tree(node, _fail, store=getattr(ring, "store", None)))
        else:  # pragma: no cover - rejected by the static checks
            raise _fail(node, f"unknown function '{node.name}'")
        return {} if ring.is_zero(y) else {(zero, 0): y}

    def neg(self, value: dict, node: Node) -> dict:
        return {k: self.ring.neg(x) for k, x in value.items()}

    def add(self, left: dict, right: dict, node: Node, k: int) -> dict:
        return _v_add(self.ring, left, right)

    def sub(self, left: dict, right: dict, node: Node, k: int) -> dict:
        return _v_add(self.ring, left, right, 1 if getattr(self.ring, "absolute", False) else -1)

    def mul(self, left: dict, right: dict, node: Node, k: int) -> dict:
        return _v_mul(self.ring, left, right, node, self.budget)

    def div(self, left: dict, right: dict, node: Product, k: int) -> dict:
        divisor = node.items[k]
        q = _v_rational(self.ring, right, self.nparams)
        if q is None:  # pragma: no cover - the static checks allow rational divisors only
            raise _fail(divisor, "division by a non-rational quantity", "divide by rational numbers only")
        if q == 0:
            raise _fail(divisor, "division by zero")
        inv = self.ring.rational(1 / q)  # |1/q| in the absolute ring
        return {key: self.ring.mul(x, inv) for key, x in left.items()}

    def power(self, base: dict, exponent: dict, node: Pow) -> dict:
        return _power(self.ring, base, exponent, node, self.nparams, self.budget)


def _evaluate(
    tree: Node,
    constraint: Constraint,
    lookup: Optional[Callable[[CoefficientRef], ParamPoly]],
    nparams: int,
    ring,
) -> Dict[Tuple[int, ...], object]:
    """Evaluate a validated relation tree; ``{parameter exponents: scalar}``.

    Bottom-up through :func:`lowenergy.parse.evaluate` with :class:`_RelationRules`.
    Errors carry columns of the relation text.
    """
    final = evaluate(tree, _RelationRules(constraint, lookup, nparams, ring))
    out: Dict[Tuple[int, ...], object] = {}
    pi2 = None
    for (pe, p), x in final.items():
        if p % 2:
            raise InputError(
                "odd power of pi: the value is not a combination of MZVs",
                column=tree.col,
                hint="only even powers of pi are MZVs (pi^2 = 6*zeta(2))",
            )
        if p:
            pi2 = pi2 if pi2 is not None else ring.pi_squared()
            factor = ring.rational(Fraction(1))
            for _ in range(p // 2):
                factor = ring.mul(factor, pi2)
            x = ring.mul(x, factor)
        y = ring.add(out[pe], x) if pe in out else x
        if ring.is_zero(y):
            out.pop(pe, None)
        else:
            out[pe] = y
    return out


def _power(ring, base: dict, exponent: dict, node: Pow, nparams: int, budget: List[int]) -> dict:
    e = _v_rational(ring, exponent, nparams)
    if e is None or e.denominator != 1:
        raise _fail(node.exponent, "exponents must be integers", "write e.g. c[2,0]^2")
    n = int(e)
    if abs(n) > MAX_EXPONENT:
        raise _fail(node.exponent, f"exponent larger than {MAX_EXPONENT} in absolute value")
    bits = max((ring.bits(x) for x in base.values()), default=0)
    if bits * abs(n) > MAX_BITS:
        raise _fail(node, "the power would create too large numbers", "simplify the relation")
    q = _v_rational(ring, base, nparams)
    zero = ((0,) * nparams, 0)
    if q is not None:
        if n < 0 and q == 0:
            raise _fail(node, "division by zero")
        value = q ** n
        return {zero: ring.rational(value)} if value else {}
    if n < 0:
        raise _fail(node, "negative powers are allowed for rational numbers only")
    result: dict = {zero: ring.rational(Fraction(1))}
    square = base
    while n:
        if n & 1:
            result = _v_mul(ring, result, square, node, budget)
        n >>= 1
        if n:
            square = _v_mul(ring, square, square, node, budget)
    return result


def exact_sides(
    constraint: Constraint, values: CoefficientValues, store: Optional[TableStore] = None
) -> Tuple[ParamPoly, Optional[MZV]]:
    """Exact ``(lhs, rhs)`` of a constraint on a candidate (rhs None if numeric).

    Raises :class:`~lowenergy.errors.TableError` when an MZV in the text
    needs tables beyond the buildable weights; other errors are located in the file.
    """
    ring = _ExactRing(store)
    try:
        lhs = _evaluate(constraint.tree, constraint, values, values.nparams, ring)
    except TableError as err:
        raise err.located(source=constraint.source, line=constraint.line, term=constraint.name)
    except LowEnergyError as err:
        raise constraint.locate(err, "relation")
    rhs = None
    if constraint.rhs_tree is not None:
        try:
            value = _evaluate(constraint.rhs_tree, constraint, None, 0, ring)
        except TableError as err:
            raise err.located(source=constraint.source, line=constraint.line, term=constraint.name)
        except LowEnergyError as err:
            raise constraint.locate(err, "rhs")
        rhs = value.get((), MZV())
    return lhs, rhs  # type: ignore[return-value]


def _numeric_sides(
    constraint: Constraint, values: CoefficientValues, digits: int
) -> Tuple[Dict[Tuple[int, ...], object], object, object]:
    """Numeric ``(lhs, rhs, scale)`` (call inside ``mpmath.workdps``).

    ``scale`` bounds the size of the terms of ``lhs − rhs`` before
    cancellation (the same evaluation with absolute values).
    """
    out = []
    for absolute in (False, True):
        ring = _NumericRing(digits, absolute)
        try:
            lhs = _evaluate(constraint.tree, constraint, values, values.nparams, ring)
        except LowEnergyError as err:
            raise constraint.locate(err, "relation")
        if constraint.rhs_tree is not None:
            try:
                value = _evaluate(constraint.rhs_tree, constraint, None, 0, ring)
            except LowEnergyError as err:
                raise constraint.locate(err, "rhs")
            rhs = ring.mpf(value.get((), Fraction(0)))
        else:
            rhs = ring.mpf(constraint.rhs_value)
        out.append(({k: ring.mpf(v) for k, v in lhs.items()}, rhs))
    (lhs, rhs), (abs_lhs, abs_rhs) = out
    scale = mpmath.fsum(abs(v) for v in abs_lhs.values()) + abs(abs_rhs)
    return lhs, rhs, scale


# ==========================================================================
# results
# ==========================================================================


def _mono_text(pe: Tuple[int, ...], params: Sequence[str]) -> str:
    parts = []
    for name, e in zip(params, pe):
        if e == 1:
            parts.append(name)
        elif e > 1:
            parts.append(f"{name}^{e}")
    return "*".join(parts) or "1"


def format_poly(poly: Dict[Tuple[int, ...], object], params: Sequence[str], digits: int = 15) -> str:
    """A polynomial in the parameters as text: ``(zeta(2))*a1 + (-1)``.

    Coefficients are MZVs (canonical plain text) or numbers (``digits``
    significant digits).  ``0`` for the zero polynomial.
    """
    if not poly:
        return "0"
    out = []
    # by degree, then lexicographically (a before b)
    for pe in sorted(poly, key=lambda k: (sum(k), [-e for e in k])):
        x = poly[pe]
        text = x.to_text() if isinstance(x, MZV) else mpmath.nstr(x, digits)
        if not any(pe):
            out.append(text)
        elif text == "1":
            out.append(_mono_text(pe, params))
        elif text == "-1":
            out.append("-" + _mono_text(pe, params))
        else:
            out.append(f"({text})*{_mono_text(pe, params)}")
    return " + ".join(out)


@dataclass
class ConstraintResult:
    """The outcome of one constraint.

    Attributes
    ----------
    name, kind, relation, rhs_text, note:
        From the constraint file (``rhs_text`` is the exact rhs or the
        decimal ``rhs_value``).
    status:
        ``"PASS"``, ``"FAIL"`` or ``"DEPENDS"`` (on free parameters).
    mode:
        ``"exact"`` or ``"numeric"`` (MZV tables too small for an exact
        evaluation of the relation).
    lhs, rhs, residual:
        Exact values (``lhs`` and ``residual`` as ``{parameter exponents:
        MZV}``); ``rhs``/``residual`` are None for a numeric rhs, all are
        None in numeric mode.
    lhs_numeric, rhs_numeric, residual_numeric:
        The same numerically (``digits`` significant digits).
    tolerance:
        The tolerance used (None for an exact comparison).
    parameters:
        The candidate's parameter names (for the polynomials).
    warnings:
        E.g. a sym/sigma value of a non-symmetric candidate.
    """

    name: str
    kind: str
    status: str
    mode: str
    relation: str
    rhs_text: str
    lhs: Optional[ParamPoly]
    rhs: Optional[MZV]
    residual: Optional[ParamPoly]
    lhs_numeric: Dict[Tuple[int, ...], object]
    rhs_numeric: object
    residual_numeric: Dict[Tuple[int, ...], object]
    tolerance: Optional[object]
    parameters: Tuple[str, ...] = ()
    coefficients: Tuple[str, ...] = ()
    warnings: Tuple[str, ...] = ()
    note: str = ""
    line: Optional[int] = None

    @property
    def passed(self) -> bool:
        return self.status == PASS

    @property
    def comparison(self) -> str:
        """``"exact"`` when an exact residual was compared, else ``"numeric"``
        (a numeric ``rhs_value``, or MZV tables too small for the relation)."""
        return "exact" if self.residual is not None else "numeric"

    @property
    def residual_is_zero(self) -> Optional[bool]:
        """Whether the exact residual vanishes (None if there is none)."""
        return None if self.residual is None else not self.residual

    def residual_text(self, digits: int = 15) -> str:
        if self.residual is not None:
            return format_poly(self.residual, self.parameters)
        return format_poly(self.residual_numeric, self.parameters, digits)

    def lhs_text(self, digits: int = 15) -> str:
        if self.lhs is not None:
            return format_poly(self.lhs, self.parameters)
        return format_poly(self.lhs_numeric, self.parameters, digits)

    def to_dict(self, digits: int = 20) -> dict:
        def num(x) -> Optional[str]:
            return None if x is None else mpmath.nstr(x, digits)

        return {
            "name": self.name,
            "kind": self.kind,
            "status": self.status,
            "mode": self.mode,
            "comparison": self.comparison,
            "relation": self.relation,
            "rhs": self.rhs_text,
            "lhs_exact": None if self.lhs is None else format_poly(self.lhs, self.parameters),
            "rhs_exact": None if self.rhs is None else self.rhs.to_text(),
            "residual_exact": None if self.residual is None else format_poly(self.residual, self.parameters),
            "lhs_numeric": format_poly(self.lhs_numeric, self.parameters, digits),
            "rhs_numeric": num(self.rhs_numeric),
            "residual_numeric": format_poly(self.residual_numeric, self.parameters, digits),
            "tolerance": num(self.tolerance),
            "coefficients": list(self.coefficients),
            "warnings": list(self.warnings),
            "note": self.note,
        }


@dataclass
class CheckReport:
    """All results of :func:`check`, plus what was checked.

    Iterating gives the :class:`ConstraintResult` objects in file order;
    ``report["name"]`` picks one.
    """

    results: Tuple[ConstraintResult, ...]
    constraints_source: str = ""
    provenance: str = ""
    title: str = ""
    candidate_title: str = ""
    candidate_order: int = 0
    parameters: Tuple[str, ...] = ()
    template: bool = False
    digits: int = DEFAULT_DIGITS
    warnings: Tuple[str, ...] = field(default=())
    #: Pole and crossing conditions: ``(label, level, order, imposed, status, residual text)``
    #: (``imposed`` False for the ``check_levels``).
    pole_results: Tuple[Tuple[str, Optional[int], Optional[int], bool, str, str], ...] = field(default=())

    def __iter__(self):
        return iter(self.results)

    def __len__(self) -> int:
        return len(self.results)

    def __getitem__(self, name: str) -> ConstraintResult:
        for r in self.results:
            if r.name == name:
                return r
        raise KeyError(name)

    @property
    def ok(self) -> bool:
        """True when every constraint (and pole or crossing condition) passed."""
        return all(r.passed for r in self.results) and all(p[4] == PASS for p in self.pole_results)

    @property
    def verdict(self) -> str:
        """``"passed"`` (every constraint and pole condition passed), ``"failed"``
        (at least one failed) or ``"undecided"`` (none failed, some depend on
        free parameters)."""
        statuses = {r.status for r in self.results} | {p[4] for p in self.pole_results}
        if FAIL in statuses:
            return "failed"
        if statuses - {PASS}:
            return "undecided"
        return "passed"

    @property
    def summary(self) -> Dict[str, int]:
        counts = {PASS: 0, FAIL: 0, DEPENDS: 0}
        for r in self.results:
            counts[r.status] += 1
        for p in self.pole_results:
            counts[p[4]] += 1
        counts["total"] = len(self.results) + len(self.pole_results)
        return counts

    @property
    def failed(self) -> Tuple[str, ...]:
        return tuple(r.name for r in self.results if r.status == FAIL)

    def to_text(self, digits: int = 15, verbose: bool = False) -> str:
        """A plain-text report: one line per constraint, details for those
        that did not pass (for all with ``verbose``), then a summary."""
        lines = []
        head = self.title or self.constraints_source or "(untitled)"
        lines.append(f"constraints: {head}")
        if self.provenance:
            lines.append(f"source: {self.provenance}")
        params = f", parameters {', '.join(self.parameters)}" if self.parameters else ""
        lines.append(f"candidate: {self.candidate_title or '(untitled)'} (order {self.candidate_order}{params})")
        for w in self.warnings:
            lines.append(f"warning: {w}")
        width = max([len(r.name) for r in self.results] + [4])
        for r in self.results:
            lines.append(f"{r.status:<7} {r.name:<{width}}  {r.relation} {r.kind} {r.rhs_text}  [{r.comparison}]")
            if verbose or not r.passed:
                lines.append(f"        lhs      = {r.lhs_text(digits)}")
                if r.residual is not None:
                    lines.append(f"        residual = {format_poly(r.residual, r.parameters)}")
                tol = f"  (tolerance {mpmath.nstr(r.tolerance, 6)})" if r.tolerance is not None else ""
                lines.append(f"        residual ~ {format_poly(r.residual_numeric, r.parameters, digits)}{tol}")
            for w in r.warnings:
                lines.append(f"        warning: {w}")
        for label, _, _, imposed, status, residual in self.pole_results:
            lines.append(f"{status:<7} {label}  [{'imposed' if imposed else 'checked only'}]")
            if status != PASS and (verbose or status == FAIL):
                lines.append(f"        residual = {residual}")
        s = self.summary
        lines.append(
            f"summary: {s[PASS]} passed, {s[FAIL]} failed, {s[DEPENDS]} depend on free parameters "
            f"({s['total']} constraints): {self.verdict}"
        )
        if self.verdict == "undecided":
            lines.append(
                "undecided: no constraint failed, but the ones marked DEPENDS hold only for some values of "
                f"{', '.join(self.parameters) or 'the parameters'} (fix them first, e.g. with `lowenergy fix`)"
            )
        return "\n".join(lines)

    def to_dict(self, digits: int = 20) -> dict:
        return {
            "constraints": self.constraints_source,
            "title": self.title,
            "source": self.provenance,
            "template": self.template,
            "candidate": {"title": self.candidate_title, "order": self.candidate_order, "parameters": list(self.parameters)},
            "summary": self.summary,
            "ok": self.ok,
            "verdict": self.verdict,
            "warnings": list(self.warnings),
            "results": [r.to_dict(digits) for r in self.results],
            "poles": [{"condition": label, "level": level, "order": order, "imposed": imposed, "status": status,
                       "residual": residual}
                      for label, level, order, imposed, status, residual in self.pole_results],
        }


# ==========================================================================
# checking
# ==========================================================================


def _as_constraints(constraints) -> Tuple[Tuple[Constraint, ...], Optional[ConstraintSet]]:
    if isinstance(constraints, ConstraintSet):
        return constraints.constraints, constraints
    if isinstance(constraints, Constraint):
        return (constraints,), None
    items = tuple(constraints)
    for c in items:
        if not isinstance(c, Constraint):
            raise TypeError(f"expected Constraint objects, not {type(c).__name__}")
    return items, None


def check_order(candidate: Expansion, constraints) -> None:
    """Raise :class:`InputError` if a coefficient lies beyond the candidate's order."""
    items, _ = _as_constraints(constraints)
    need = required_order(items)
    for c in items:
        for r in c.refs:
            if r.order > candidate.order:
                err = InputError(
                    f"{r.name} is of order {r.order}, beyond the order {candidate.order} of the candidate expansion",
                    column=r.column,
                    term=r.text or r.name,
                    hint=f"expand to order {need} or more (the constraints need order {need})",
                )
                raise c.locate(err)


def sign_of(x: MZV, digits: int = DEFAULT_DIGITS) -> int:
    """The sign of an exact MZV combination, with as many digits as it takes.

    All MZVs are positive, so ``Σ |q_m| m`` bounds the size of the terms; a
    value is trusted when it exceeds that scale times ``10^(5-d)`` at ``d``
    digits.  ``d`` doubles up to 1920; a :class:`NumericError` after that.
    """
    if not x:
        return 0
    scale = MZV({m: abs(q) for m, q in x.as_dict().items()}).numeric(15)
    d = digits
    while d <= 1920:
        value = x.numeric(d)
        with mpmath.workdps(d + 10):
            if abs(value) > scale * mpmath.mpf(10) ** (5 - d):
                return 1 if value > 0 else -1
        d *= 2
    raise NumericError(  # pragma: no cover - a non-zero canonical form is a non-zero number
        "cannot decide the sign of an exact residual numerically",
        term=x.to_text(),
        hint="the residual cancels to more than 1900 digits",
    )


def _decide(kind: str, r, tol) -> bool:
    if kind == "=":
        return abs(r) <= tol
    if kind == "<=":
        return r <= tol
    return r >= -tol


def _impossible(residual: ParamPoly) -> bool:
    """True if no rational parameter values make the exact residual vanish.

    The residual vanishes iff, for every canonical MZV monomial, its
    rational coefficient (a polynomial in the parameters) does; a monomial
    whose coefficient is a non-zero constant can never vanish.
    """
    by_mono: Dict[tuple, set] = {}
    for pe, x in residual.items():
        for mono in x.as_dict():
            by_mono.setdefault(mono, set()).add(any(pe))
    return any(flags == {False} for flags in by_mono.values())


def _numeric_poly(pp: ParamPoly, digits: int) -> Dict[Tuple[int, ...], object]:
    return {pe: x.numeric(digits) for pe, x in pp.items()}


def _check_one(c: Constraint, values: CoefficientValues, params: Tuple[str, ...], digits: int, store) -> ConstraintResult:
    nparams = len(params)
    zero = (0,) * nparams
    warnings: List[str] = []
    mode = "exact"
    lhs = rhs = residual = None
    tolerance = None
    table_digits = values.expansion.meta.get("numeric_digits") if values.expansion.meta.get("numeric_only") else None
    if table_digits is not None:
        mode = "numeric"
    else:
        try:
            lhs, rhs = exact_sides(c, values, store)
        except TableError as err:
            mode = "numeric"
            warnings.append(f"compared numerically: {err.message}")
    for ref in c.refs:
        if ref.name in values.warnings and values.warnings[ref.name] not in warnings:
            warnings.append(values.warnings[ref.name])
    rhs_text = c.rhs if c.rhs is not None else _fraction_decimal(c.rhs_value)

    with mpmath.workdps(digits + 20):
        if mode == "exact":
            assert lhs is not None
            lhs_num = _numeric_poly(lhs, digits)
            if rhs is not None:
                residual = poly_add(lhs, {zero: rhs} if rhs else {}, -1)
                rhs_num = rhs.numeric(digits)
                res_num = _numeric_poly(residual, digits)
            else:
                rhs_num = _NumericRing.mpf(c.rhs_value)
                res_num = dict(lhs_num)
                res_num[zero] = res_num.get(zero, mpmath.mpf(0)) - rhs_num
        else:
            lhs_num, rhs_num, scale = _numeric_sides(c, values, digits)
            res_num = dict(lhs_num)
            res_num[zero] = res_num.get(zero, mpmath.mpf(0)) - rhs_num

        constant = res_num.get(zero, mpmath.mpf(0))
        if residual is not None:
            # exact comparison
            depends = any(any(pe) for pe in residual)
            if c.kind == "=":
                if not residual:
                    status = PASS
                elif depends and not _impossible(residual):
                    status = DEPENDS
                else:
                    status = FAIL
            elif depends:
                status = DEPENDS
            else:
                s = sign_of(residual.get(zero, MZV()), digits)
                status = PASS if (s <= 0 if c.kind == "<=" else s >= 0) else FAIL
        else:
            if lhs is not None:
                depends = any(any(pe) for pe in lhs)
            else:
                # numeric mode: anything above the rounding noise of the terms counts
                noise = scale * mpmath.mpf(10) ** (5 - digits)
                if table_digits is not None:
                    # the candidate's cells carry table_digits significant digits each
                    noise = max(noise, scale * mpmath.mpf(10) ** (2 - table_digits))
                depends = any(any(pe) and abs(v) > noise for pe, v in res_num.items())
            if c.rhs_value is not None:
                tolerance = _NumericRing.mpf(c.tolerance())
            else:
                tolerance = noise
            if depends:
                status = DEPENDS
            else:
                status = PASS if _decide(c.kind, constant, tolerance) else FAIL
    if c.kind != "=" and status == DEPENDS:
        warnings.append("an inequality that depends on free parameters is not decided")
    return ConstraintResult(
        name=c.name,
        kind=c.kind,
        status=status,
        mode=mode,
        relation=c.relation,
        rhs_text=rhs_text,
        lhs=lhs,
        rhs=rhs,
        residual=residual,
        lhs_numeric=lhs_num,
        rhs_numeric=rhs_num,
        residual_numeric={k: v for k, v in res_num.items() if v != 0},
        tolerance=tolerance,
        parameters=params,
        coefficients=c.coefficient_names(),
        warnings=tuple(warnings),
        note=c.note,
        line=c.line,
    )


def _fraction_decimal(q: Optional[Fraction]) -> str:
    if q is None:
        return ""
    with mpmath.workdps(40):
        return mpmath.nstr(mpmath.mpf(q.numerator) / q.denominator, 20)


def check(
    candidate: Expansion,
    constraints,
    *,
    digits: int = DEFAULT_DIGITS,
    store: Optional[TableStore] = None,
    poles=None,
) -> CheckReport:
    """Check ``candidate`` against ``constraints`` (a :class:`ConstraintSet`,
    a :class:`Constraint` or an iterable of them).

    Parameters
    ----------
    candidate:
        The expansion to check; its order must reach every referenced
        coefficient (:func:`~lowenergy.constraints.model.required_order`).
    digits:
        Significant digits of the numeric comparisons (at least 15).
    store:
        MZV table store (default: the user's cache).
    poles:
        The candidate integrand's pole parts (a
        :class:`lowenergy.spectrum.residues.ResidueTable` to level
        :func:`~lowenergy.constraints.model.pole_levels_needed`), needed when
        the set has ``[[pole]]`` or ``[crossing]`` tables; each of their
        conditions is reported per level and order (imposed levels and
        ``check_levels`` alike) with PASS, FAIL or DEPENDS.

    Returns
    -------
    CheckReport
    """
    if not isinstance(candidate, Expansion):
        raise TypeError(f"check needs an Expansion, not {type(candidate).__name__}")
    if isinstance(digits, bool) or not isinstance(digits, int) or digits < 15 or digits > 1000:
        raise InputError(f"digits must be an integer between 15 and 1000, got {digits!r}")
    items, cset = _as_constraints(constraints)
    check_order(candidate, items)
    values = CoefficientValues(candidate)
    params = tuple(candidate.parameters)
    results = tuple(_check_one(c, values, params, digits, store) for c in items)
    pole_results = ()
    if cset is not None and (cset.poles or cset.crossing is not None):
        pole_results = _check_poles(cset, candidate, poles, store)
    warnings = []
    if candidate.meta.get("numeric_only"):
        warnings.append(
            f"numeric-only candidate table ({candidate.meta.get('numeric_digits')} significant digits): "
            "every constraint is compared numerically"
        )
    if cset is not None and cset.template:
        warnings.append("this constraint set is a TEMPLATE with invented numbers; do not read physics into it")
    return CheckReport(
        results=results,
        constraints_source=cset.source if cset else "",
        provenance=cset.provenance if cset else "",
        title=cset.title if cset else "",
        candidate_title=candidate.title,
        candidate_order=candidate.order,
        parameters=params,
        template=bool(cset and cset.template),
        digits=digits,
        warnings=tuple(warnings),
        pole_results=pole_results,
    )


def _check_poles(cset: ConstraintSet, candidate: Expansion, poles, store):
    from .model import pole_levels_needed
    from .poles import check_table

    if poles is None:
        raise InputError(
            f"{cset.source} has [[pole]] or [crossing] tables, which need the pole parts of an integrand",
            source=cset.source,
            hint="check an integrand file (not a coefficient table), or pass "
            "poles=lowenergy.spectrum.residues(integrand, N) from Python",
        )
    need = pole_levels_needed(cset)
    if need > poles.levels:
        raise InputError(f"the constraints need pole parts up to level {need}, the table has {poles.levels}",
                         hint=f"compute residues(integrand, {need})")
    params = tuple(candidate.parameters)
    out = []
    for cond, imposed in check_table([cset], poles, candidate, store):
        residual = "; ".join(f"{what}: {format_poly(pp, params)}" for what, pp in cond.residuals if pp) or "0"
        out.append((cond.label, cond.level, cond.order, imposed, cond.status(), residual))
    return tuple(out)
