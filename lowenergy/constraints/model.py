"""Constraint files: the format, the safe reader and the data model.

A constraint file is a small TOML document listing relations that the Wilson
coefficients of an expansion must satisfy::

    title  = "Open superstring, flat space"
    source = "Gamma-function closed form, expanded with A&S 6.1.33"

    [[constraint]]
    name     = "c[0,1]"
    relation = "c[0,1]"
    kind     = "="
    rhs      = "zeta(2)"

    [[constraint]]
    name      = "order-2 sum"
    relation  = "c[2,0] - 2*c[1,1] + zeta(3)*c[0,2]"
    kind      = "<="
    rhs_value = 1.25
    abs_tol   = 1e-6
    note      = "invented example"

Top-level keys (exactly these; anything else is an error with a did-you-mean
hint):

``source`` (string, required, non-empty)
    Provenance: the publication, handbook equation or derivation the numbers
    come from.
``title``, ``notes`` (strings, optional)
    Free text.
``template`` (boolean, optional, default false)
    Marks a file whose numbers are invented (a template to copy); check
    reports carry a warning for it.
``constraint`` (array of tables)
    The constraints on Wilson coefficients, written as ``[[constraint]]``
    tables; required unless the file has ``[[pole]]`` tables or a
    ``[crossing]`` table (below).
``pole``, ``crossing``
    Pole-structure and crossing constraints (below).

Keys of a ``[[constraint]]`` table:

``name`` (string, required)
    Unique within the file; at most 100 printable characters.
``relation`` (string, required)
    A polynomial in coefficient names with MZV coefficients, in the
    expression grammar of :mod:`lowenergy.parse` extended by coefficient
    references (below): rationals and decimals (``0.25`` is exactly 1/4),
    ``zeta(n1, ..., nk)`` (convergent, first index ≥ 2), ``G(a1, ..., an;
    1)`` (letters 0 and 1, shuffle-regularized), ``pi`` (even total powers),
    ``+ - * / ^`` and parentheses.  Exponents and divisors must be rational
    constants (numbers and arithmetic only): relations are polynomials in
    the coefficients.  A multi-line string may be used; line breaks count as
    blanks.
``kind`` (string, required)
    ``"="``, ``"<="`` or ``">="``: the relation compared with the right-hand
    side.
``rhs`` (string or integer) -- the exact right-hand side
    An MZV expression (same grammar, without coefficient names), e.g.
    ``"zeta(2)"``, ``"-2/5*zeta(2)^2"``, ``"pi^4/90"``, ``0``.
``rhs_value`` (number, or a string holding a decimal such as
``"1.6449340668482264365"`` to keep more than 17 digits) -- a numeric
right-hand side, which needs a tolerance:
``abs_tol``, ``rel_tol`` (non-negative numbers or decimal strings)
    The relation holds numerically when
    ``|lhs − rhs_value| ≤ abs_tol + rel_tol·|rhs_value|`` (missing tolerances
    count as 0); for ``<=`` the test is ``lhs − rhs_value ≤ tol`` and for
    ``>=`` it is ``lhs − rhs_value ≥ −tol``.
``uncertainty`` (non-negative number or decimal string)
    An absolute uncertainty of ``rhs_value``; it plays the role of
    ``abs_tol`` (so the two may not be given together; ``rel_tol`` may).
``note`` (string, optional)

Exactly one of ``rhs`` and ``rhs_value`` must be present; tolerances only go
with ``rhs_value``, and ``rhs_value`` needs at least one of ``abs_tol``,
``rel_tol``, ``uncertainty``.  An inequality may have an exact ``rhs``: it is
decided from the sign of the exact residual.

Pole-structure tables, ``[[pole]]`` (any number; a file may hold only
these).  They speak about the pole parts ``Σ_k R_k/(s−n)^k`` of the
integral at ``s = n`` (or at ``t = n``), whose numerators ``R_k`` are
polynomials in the other variable; ``R_1`` is the residue, with no sign
flipped: for ``B(−s,−t) = ∫ x^(−s−1)(1−x)^(−t−1) dx`` it is
``−(t+1)⋯(t+n)/n!``.  Keys:

``variable`` (required) -- ``"s"`` (poles at s = n, numerators in t), ``"t"``
    (poles at t = n, numerators in s) or, for sphere integrands only,
    ``"u"``: poles at ``u = n`` with ``u = −s−t`` (from z → ∞), numerators
    polynomials in **s** -- ``Σ_k R_k(s)/(u−n)^k`` is the Laurent expansion
    in u at fixed s, the form in which ``residues`` prints the U rows (a
    pole of a closed-string amplitude at fixed u = n, its numerator as a
    polynomial in the momentum transfer s of that channel).  Constraint
    files always write the
    variables in lower case (``s``, ``t``, ``u``), whatever an integrand file
    calls them (``S``, ``T``): the first variable is ``s``, the second ``t``.
    A ``"u"`` table with an integrand over 0 < x < 1 (no poles in u) is
    refused.
``levels`` (required) -- a list of distinct integers ``0 ≤ n ≤ 200``: the
    levels imposed.
``max_order`` (required) -- an integer ≥ 0: no ``1/(s−n)^k`` with
    ``k > max_order`` at these levels (0: no pole at all).
``max_degree`` (optional) -- every numerator of order ≤ ``max_order`` has
    degree ≤ this in the other variable: an integer, or a string linear in
    the level ``n`` with integer coefficients, such as ``"n+1"`` (parsed by
    :mod:`lowenergy.parse`, never evaluated as code); a negative bound at
    some level means the numerators vanish there.
``residues`` (optional) -- a table from level to the exact numerator, a
    polynomial in the other variable with MZV coefficients in the
    expression grammar (``zeta(...)``, ``G(...; 1)``, ``pi``, rationals),
    e.g. ``residues = { 1 = "-t - 1", 2 = "-(t+1)*(t+2)/2" }``.  Levels in
    ``check_levels`` are compared, not imposed.
``pole_order`` (optional, default 1, needs ``residues``, at most
    ``max_order``) -- the order k whose numerators ``residues`` gives.
    Numerators of several orders take several tables.
``check_levels`` (optional) -- levels checked on the solution but not
    imposed (default: the three levels after the largest of ``levels``);
    ``fix`` reports them as the check that the solution also meets levels
    it was not asked to.
``name`` (optional; default ``"pole s"``, ``"pole t"`` or ``"pole u"``,
    numbered when needed), ``note``.

For example the complex Beta function
``(1/π)∫ d²z |z|^(−2S−2)|1−z|^(−2T−2) = Γ(−S)Γ(−T)Γ(1−U)/(Γ(1+S)Γ(1+T)Γ(U))``
has at ``U = 1`` the simple pole ``−1/(U−1)`` and at ``U = 2`` the residue
``−(s+1)²`` (numerator in s at fixed s), written
``variable = "u"``, ``residues = { 1 = "-1", 2 = "-(s+1)^2" }``.

Crossing, ``[crossing]`` (one table; ``crossing = "symmetric"`` is short for
a table with only ``symmetry``):

``symmetry`` (required) -- ``"symmetric"`` or ``"antisymmetric"``: the
    integral is (anti)symmetric under s ↔ t (for an integrand, x ↔ 1−x).
``order`` (default 4) -- imposed on the Laurent coefficients around
    s = t = 0: ``c[i,j] = ±c[j,i]`` for ``i + j ≤ order`` (poles included).
``levels`` (default: 0 up to the largest level of the file's ``[[pole]]``
    tables, else 0, 1, 2) -- imposed on the pole parts: the numerator of
    ``1/(s−n)^k`` equals ± that of ``1/(t−n)^k`` with s and t exchanged.
``check_levels`` (default: the next three levels), ``name``, ``note``.

All of these are exact linear conditions on the parameters of an ansatz;
:mod:`lowenergy.constraints.fix` solves them together with the
``[[constraint]]`` tables, and :mod:`lowenergy.constraints.check` reports
them per level and order.

Coefficient names (shared with the tables, :mod:`lowenergy.tables.bases`):

``c[i,j]``
    The coefficient of ``s^i t^j`` (``i``, ``j`` integers; poles negative,
    e.g. ``c[-1,0]`` multiplies ``1/s``).  Order ``i + j``.
``c[i,0,k]`` (``i ≥ 0``, ``k < 0``)
    Sphere expansions only: the U-channel pole row, coefficient of
    ``s^i u^k`` with ``u = −s−t`` (as ``expand`` names it in tables, JSON
    and CSV); 0 for an expansion without such rows.  Order ``i + k``.
``sym[i,j]`` (``i ≥ j ≥ 0``)
    The coefficient of the symmetric-basis element ``s^i t^j + s^j t^i``
    (``s^i t^i`` when ``i = j``), i.e. ``(c[i,j] + c[j,i])/2`` for
    ``i ≠ j``.  Order ``i + j``.
``sigma[a,b]`` (``a, b ≥ 0``)
    The coefficient of ``σ2^a σ3^b`` (``σ2 = s²+t²+u²``, ``σ3 = s³+t³+u³``,
    ``u = −s−t``) in the average of the contact terms over the six
    permutations of ``(s, t, u)``.  Order ``2a + 3b``.

Blanks are allowed inside the brackets (``c[ 2, -1 ]``).  Coefficient
references are part of the expression grammar (:mod:`lowenergy.parse`,
``coefficients=``): each is one token and one
:class:`~lowenergy.parse.Coef` node, checked by :func:`_check_reference` as
the parser meets it, so every column in an error message is the column of
the original text.

Nothing is evaluated as Python code: TOML is read by :mod:`tomllib`, the
relations by the hand-written parser, and trees are walked iteratively.
Every problem is reported as :class:`~lowenergy.errors.ParseError`
(malformed TOML or expression) or :class:`~lowenergy.errors.InputError`
(well-formed but unsupported or inconsistent) with the file name, line,
column (when the value can be located exactly), the offending term and a
hint.

Examples
--------
>>> cs = constraints_from_text('''
... source = "by hand"
... [[constraint]]
... name = "crossing 1"
... relation = "c[2, 1] - c[1,2]"
... kind = "="
... rhs = 0
... ''', source="x.toml")
>>> [ref.name for ref in cs.constraints[0].refs], cs.required_order()
(['c[2,1]', 'c[1,2]'], 3)
>>> constraints_from_text('source = "s"\\n[[constraint]]\\nname = "a"\\n'
...                       'relation = "d[1,0]"\\nkind = "="\\nrhs = 0\\n', source="y.toml")
Traceback (most recent call last):
    ...
lowenergy.errors.ParseError: y.toml, line 4, column 13: unknown coefficient family 'd' (in the relation of constraint 'a') (term: 'd[1,0]'); hint: coefficients are written c[i,j], sym[i,j] (i >= j >= 0) or sigma[a,b]
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass, field
from decimal import Decimal, InvalidOperation
from fractions import Fraction
from typing import Dict, Iterator, List, Optional, Sequence, Tuple

from ..errors import InputError, LowEnergyError, ParseError
from ..limits import MAX_INT_DIGITS, int_text
from ..parse import Call, Coef, Neg, Node, Num, Pow, Product, Rules, Sum, Sym, evaluate, parse_expression, to_text, walk
from .. import tomlpos
from ..zeta.expression import zeta_indices

__all__ = [
    "CoefficientRef",
    "Constraint",
    "ConstraintSet",
    "read_constraints",
    "constraints_from_text",
    "required_order",
    "KINDS",
    "FAMILIES",
    "TOP_LEVEL_KEYS",
    "CONSTRAINT_KEYS",
    "PoleConstraint",
    "CrossingConstraint",
    "POLE_KEYS",
    "POLE_VARIABLES",
    "CROSSING_KEYS",
    "SYMMETRIES",
    "pole_levels_needed",
    "MAX_FILE_SIZE",
    "MAX_CONSTRAINTS",
    "MAX_INDEX",
    "MAX_MZV_WEIGHT",
]

#: The comparison kinds.
KINDS = ("=", "<=", ">=")
#: The coefficient families.
FAMILIES = ("c", "sym", "sigma")
#: Keys allowed at the top level of a constraint file.
TOP_LEVEL_KEYS = ("title", "source", "notes", "template", "constraint", "pole", "crossing")
#: Keys allowed in a ``[[pole]]`` table.
POLE_KEYS = ("name", "variable", "levels", "max_order", "max_degree", "residues", "pole_order",
             "check_levels", "note")
#: Values of ``variable`` in a ``[[pole]]`` table (``u = -s-t``: sphere integrands only).
POLE_VARIABLES = ("s", "t", "u")
#: Keys allowed in the ``[crossing]`` table.
CROSSING_KEYS = ("name", "symmetry", "order", "levels", "check_levels", "note")
#: The crossing symmetries and their signs.
SYMMETRIES = {"symmetric": 1, "antisymmetric": -1}
#: Largest level in a ``[[pole]]`` or ``[crossing]`` table.
MAX_LEVEL = 200
#: Largest pole order in a ``[[pole]]`` table.
MAX_POLE_ORDER = 40
#: Levels checked, not imposed, after the largest imposed one (default of ``check_levels``).
DEFAULT_CHECK_LEVELS = 3
#: Default ``order`` of the crossing table.
DEFAULT_CROSSING_ORDER = 4
#: Keys allowed in a ``[[constraint]]`` table.
CONSTRAINT_KEYS = ("name", "relation", "kind", "rhs", "rhs_value", "abs_tol", "rel_tol", "uncertainty", "note")
#: Largest constraint file, in bytes.
MAX_FILE_SIZE = 1_000_000
#: Most constraints in one file.
MAX_CONSTRAINTS = 10_000
#: Largest absolute value of an index in ``c[i,j]``, ``sym[i,j]``, ``sigma[a,b]``.
MAX_INDEX = 200
#: Largest weight of a single ``zeta(...)`` or ``G(...; 1)`` in a relation.
MAX_MZV_WEIGHT = 40
#: Longest constraint name.
MAX_NAME_LENGTH = 100

_FAMILY_HINT = "coefficients are written c[i,j], sym[i,j] (i >= j >= 0) or sigma[a,b]"
_CONSTANT_HINT = "numbers here are rationals, zeta(...), G(...; 1) and pi"
_TOML_HINT = 'a constraint file is TOML: source = "...", then [[constraint]] tables'


def _short(text: str, limit: int = 60) -> str:
    return text if len(text) <= limit else text[: limit - 3] + "..."


# ==========================================================================
# data model
# ==========================================================================


@dataclass(frozen=True)
class CoefficientRef:
    """One coefficient name in a relation, e.g. ``c[2,-1]``.

    ``column`` is the 1-based column of its first character in the relation
    text (where its :class:`~lowenergy.parse.Coef` node starts), ``text``
    its spelling there.
    """

    family: str
    a: int
    b: int
    column: int = field(default=0, compare=False)
    text: str = field(default="", compare=False)
    #: third index of a U-channel pole row ``c[i,0,k]`` (power k < 0 of U = -s-t), else None
    u: Optional[int] = None

    @property
    def name(self) -> str:
        """Canonical spelling, ``c[2,-1]`` (``c[0,0,-1]`` for a U-channel row)."""
        if self.u is not None:
            return f"{self.family}[{self.a},{self.b},{self.u}]"
        return f"{self.family}[{self.a},{self.b}]"

    @property
    def order(self) -> int:
        """Total order in s, t: ``i + j`` (``c``, ``sym``), ``i + k`` (``c[i,0,k]``) or ``2a + 3b`` (``sigma``)."""
        if self.u is not None:
            return self.a + self.u
        return 2 * self.a + 3 * self.b if self.family == "sigma" else self.a + self.b

    def __str__(self) -> str:
        return self.name


Position = Tuple[int, Optional[int]]


@dataclass(frozen=True)
class Constraint:
    """One ``[[constraint]]`` table after reading.

    Attributes
    ----------
    name, relation, kind, note:
        As in the file (``relation`` with line breaks turned into blanks).
    tree:
        The parsed relation (coefficient references are
        :class:`~lowenergy.parse.Coef` nodes; see :attr:`refs`).
    refs:
        The coefficient references, in order of appearance (repeats included).
    rhs:
        The exact right-hand side as text, or None; ``rhs_tree`` its parse.
    rhs_value, abs_tol, rel_tol, uncertainty:
        The numeric right-hand side and tolerances as exact fractions, or None.
    source, line:
        File name and the line of the ``[[constraint]]`` header (or of the
        ``name`` key).
    """

    name: str
    relation: str
    tree: Node = field(repr=False)
    refs: Tuple[CoefficientRef, ...]
    kind: str
    rhs: Optional[str] = None
    rhs_tree: Optional[Node] = field(default=None, repr=False)
    rhs_value: Optional[Fraction] = None
    abs_tol: Optional[Fraction] = None
    rel_tol: Optional[Fraction] = None
    uncertainty: Optional[Fraction] = None
    note: str = ""
    source: str = "<constraints>"
    line: Optional[int] = None
    _relation_at: Tuple[Position, ...] = field(default=(), repr=False, compare=False)
    _rhs_at: Tuple[Position, ...] = field(default=(), repr=False, compare=False)

    @property
    def exact(self) -> bool:
        """True when the right-hand side is exact (``rhs``)."""
        return self.rhs_tree is not None

    @property
    def order(self) -> int:
        """The order an expansion needs for this constraint (at least 0)."""
        return max([0] + [r.order for r in self.refs])

    def tolerance(self) -> Optional[Fraction]:
        """``abs_tol + rel_tol·|rhs_value|`` exactly (``uncertainty`` counts as
        ``abs_tol``); None for an exact right-hand side."""
        if self.rhs_value is None:
            return None
        absolute = self.abs_tol if self.abs_tol is not None else (self.uncertainty or Fraction(0))
        return absolute + (self.rel_tol or Fraction(0)) * abs(self.rhs_value)

    def coefficient_names(self) -> Tuple[str, ...]:
        """Distinct coefficient names in order of first appearance."""
        seen: Dict[str, None] = {}
        for r in self.refs:
            seen.setdefault(r.name, None)
        return tuple(seen)

    def ref_for(self, node: Coef) -> Optional[CoefficientRef]:
        """The reference of a :class:`~lowenergy.parse.Coef` node of :attr:`tree` (None if none)."""
        for r in self.refs:
            if r.column == node.col:
                return r
        return None

    def position(self, column: Optional[int], where: str = "relation") -> Position:
        """``(line, column)`` in the file of a column of the relation (or rhs) text."""
        table = self._relation_at if where == "relation" else self._rhs_at
        if not table:
            return (self.line, None)
        if column is None:
            return table[0]
        index = min(max(column, 1), len(table)) - 1
        return table[index]

    def locate(self, err: LowEnergyError, where: str = "relation") -> LowEnergyError:
        """Turn a column of the relation (or rhs) text in ``err`` into file line/column."""
        line, col = self.position(err.column, where)
        err.source = err.source or self.source
        err.line = line
        err.column = col
        return err


@dataclass(frozen=True)
class PoleConstraint:
    """One ``[[pole]]`` table after reading.

    Attributes
    ----------
    name:
        From the file, or ``"pole s"`` / ``"pole t"`` (numbered when a file
        has several tables of one variable).
    variable:
        ``"s"`` (poles at s = n, numerators polynomials in t), ``"t"`` or
        ``"u"`` (sphere integrands: poles at u = −s−t = n, numerators
        polynomials in s, Laurent expansion in u at fixed s).
    levels, check_levels:
        The levels n imposed, and those only checked afterwards.
    max_order:
        No pole of order above this at the imposed levels.
    max_degree:
        ``(a, b)``: every numerator of order ≤ ``max_order`` at level n has
        degree ≤ ``a·n + b`` in the other variable (a negative bound means
        the numerator vanishes); None: no bound.  ``max_degree_text`` as
        written.
    residues:
        ``((level, text, tree), ...)``: the exact numerator of order
        ``pole_order`` at these levels (a polynomial in the other variable).
        Levels among ``check_levels`` are compared, not imposed.
    """

    name: str
    variable: str
    levels: Tuple[int, ...]
    max_order: int
    max_degree: Optional[Tuple[int, int]] = None
    max_degree_text: Optional[str] = None
    residues: Tuple[Tuple[int, str, Node], ...] = field(default=(), repr=False)
    pole_order: int = 1
    check_levels: Tuple[int, ...] = ()
    note: str = ""
    source: str = "<constraints>"
    line: Optional[int] = None
    key_lines: Dict[str, Optional[int]] = field(default_factory=dict, repr=False, compare=False)

    @property
    def var_index(self) -> int:
        """0 for s, 1 for t (the position of the variable in the integrand), 2 for u."""
        return POLE_VARIABLES.index(self.variable)

    @property
    def other(self) -> str:
        """The variable of the numerators (s for poles in u)."""
        return "t" if self.variable == "s" else "s"

    def degree_at(self, level: int) -> Optional[int]:
        """The degree bound at ``level`` (None: no bound)."""
        if self.max_degree is None:
            return None
        a, b = self.max_degree
        return a * level + b

    def residue_at(self, level: int) -> Optional[Tuple[str, Node]]:
        """``(text, tree)`` of the given numerator at ``level``, or None."""
        for n, text, tree in self.residues:
            if n == level:
                return text, tree
        return None

    def where(self, key: Optional[str] = None) -> Optional[int]:
        """The line of ``key`` in the file (else of the table header)."""
        if key is not None and self.key_lines.get(key) is not None:
            return self.key_lines[key]
        return self.line


@dataclass(frozen=True)
class CrossingConstraint:
    """The ``[crossing]`` table after reading: the integral is symmetric
    (``sign = 1``) or antisymmetric (``sign = -1``) under s ↔ t.

    Imposed on the Laurent coefficients ``c[i,j] = sign·c[j,i]`` with
    ``i + j ≤ order`` and on the pole parts at the ``levels``: the numerator
    of ``1/(s−n)^k`` (a polynomial in t) equals ``sign`` times that of
    ``1/(t−n)^k`` with s and t exchanged.  ``check_levels`` are checked only.
    """

    name: str
    sign: int
    order: int
    levels: Tuple[int, ...]
    check_levels: Tuple[int, ...] = ()
    note: str = ""
    source: str = "<constraints>"
    line: Optional[int] = None

    @property
    def symmetry(self) -> str:
        return "symmetric" if self.sign == 1 else "antisymmetric"


@dataclass(frozen=True)
class ConstraintSet:
    """A whole constraint file after reading.

    ``provenance`` is the file's ``source`` key; ``source`` is the file name
    (as for integrands).
    """

    constraints: Tuple[Constraint, ...]
    provenance: str
    title: str = ""
    notes: str = ""
    template: bool = False
    source: str = "<constraints>"
    poles: Tuple["PoleConstraint", ...] = ()
    crossing: Optional["CrossingConstraint"] = None

    def __iter__(self) -> Iterator[Constraint]:
        return iter(self.constraints)

    def __len__(self) -> int:
        return len(self.constraints)

    @property
    def names(self) -> Tuple[str, ...]:
        return tuple(c.name for c in self.constraints)

    def required_order(self) -> int:
        return required_order(self)

    def __getitem__(self, name: str) -> Constraint:
        for c in self.constraints:
            if c.name == name:
                return c
        raise KeyError(name)


def required_order(constraints) -> int:
    """The smallest expansion order N that every referenced coefficient needs.

    ``c[i,j]`` and ``sym[i,j]`` need ``N ≥ i + j``, ``sigma[a,b]`` needs
    ``N ≥ 2a + 3b``, a ``[crossing]`` table its ``order``; the result is at
    least 0.  Accepts a :class:`ConstraintSet`, one :class:`Constraint`, or
    an iterable of constraints or of constraint sets.
    """
    if isinstance(constraints, Constraint):
        constraints = (constraints,)
    need = 0
    for c in ([constraints] if isinstance(constraints, ConstraintSet) else constraints):
        if isinstance(c, ConstraintSet):
            need = max([need] + [x.order for x in c.constraints])
            if c.crossing is not None:
                need = max(need, c.crossing.order)
        else:
            need = max(need, c.order)
    return need


def pole_levels_needed(constraints) -> int:
    """The largest level any ``[[pole]]`` or ``[crossing]`` table imposes or
    checks (-1 if there are none): residues must be computed that far.

    Accepts a :class:`ConstraintSet` or an iterable of them (other items are
    ignored).
    """
    sets = [constraints] if isinstance(constraints, ConstraintSet) else list(constraints)
    top = -1
    for cs in sets:
        if not isinstance(cs, ConstraintSet):
            continue
        for p in cs.poles:
            top = max([top] + list(p.levels) + list(p.check_levels))
        if cs.crossing is not None:
            top = max([top] + list(cs.crossing.levels) + list(cs.crossing.check_levels))
    return top


# ==========================================================================
# reading
# ==========================================================================


def read_constraints(path) -> ConstraintSet:
    """Read a constraint file (TOML; see the module docstring).

    Raises only :class:`~lowenergy.errors.LowEnergyError` subclasses:
    :class:`~lowenergy.errors.InputError` for unreadable files and
    inconsistent content, :class:`~lowenergy.errors.ParseError` for malformed
    TOML or relations.
    """
    source, raw = tomlpos.read_file(path, "a constraint file", MAX_FILE_SIZE)
    return constraints_from_text(raw, source=source)


def constraints_from_text(text, source: str = "<constraints>") -> ConstraintSet:
    """Read a constraint set from TOML text (``str`` or UTF-8 ``bytes``)."""
    text = tomlpos.decode_toml_text(
        text, source, what="constraint", max_size=MAX_FILE_SIZE, size_hint="split the constraint set"
    )
    data = tomlpos.load_toml(text, source, _TOML_HINT)
    layout = _Layout(text)
    return _Reader(data, layout, source).read()


# --------------------------------------------------------------------------
# where things are in the file (for messages only; tomllib reads the data)
# --------------------------------------------------------------------------


_ARRAY_HEADER = re.compile(rf"[ \t]*\[\[[ \t]*({tomlpos.KEY_PART})[ \t]*\]\]")
_TABLE_HEADER = re.compile(rf"[ \t]*\[[ \t]*({tomlpos.KEY_PART})")


class _Layout:
    """Lines of keys and ``[[constraint]]`` headers, and offsets of values.

    ``top[key]`` and ``tables[k][key]`` are ``(line, value offset)``;
    ``headers[k]`` is the line of the k-th ``[[constraint]]`` header.
    A best-effort lexer: it skips comments, strings (all four kinds) and
    nested arrays, so that text inside them is never taken for a key.
    """

    def __init__(self, text: str) -> None:
        self.text = text
        self.top: Dict[str, Tuple[int, int]] = {}
        self.tables: List[Dict[str, Tuple[int, int]]] = []
        self.headers: List[int] = []
        self.other_headers: Dict[str, int] = {}
        # [[pole]] tables and the [crossing] table, like the constraints
        self.pole_tables: List[Dict[str, Tuple[int, int]]] = []
        self.pole_headers: List[int] = []
        self.crossing: Dict[str, Tuple[int, int]] = {}
        self._lines = tomlpos.LineIndex(text)
        self._scan()

    def _scan(self) -> None:
        text = self.text
        context: Optional[Dict[str, Tuple[int, int]]] = self.top

        def visit(offset: int, line: int) -> Optional[int]:
            nonlocal context
            header = _ARRAY_HEADER.match(text, offset)
            if header:
                name = tomlpos.key_name(header.group(1))
                if name == "constraint":
                    self.headers.append(line)
                    context = {}
                    self.tables.append(context)
                elif name == "pole":
                    self.pole_headers.append(line)
                    context = {}
                    self.pole_tables.append(context)
                else:
                    self.other_headers.setdefault(name, line)
                    context = None
                return header.end()
            header = _TABLE_HEADER.match(text, offset)
            if header:
                name = tomlpos.key_name(header.group(1))
                self.other_headers.setdefault(name, line)
                context = self.crossing if name == "crossing" and text[header.end():header.end() + 1] != "." else None
                # skip the rest of the header line
                end = text.find("\n", header.end())
                return len(text) if end < 0 else end
            key = tomlpos.KEY_LINE.match(text, offset)
            if key:
                if context is not None:
                    context.setdefault(tomlpos.key_name(key.group(1)), (line, key.end()))
                return key.end()
            return None

        tomlpos.scan_lines(text, visit)

    def string_positions(self, offset: Optional[int], value: str) -> Tuple[Position, ...]:
        """``(line, column)`` of every character of the string value at ``offset``.

        Empty when the value cannot be located exactly.  One extra entry at
        the end stands for the closing quote.
        """
        positions = tomlpos.string_positions(self.text, offset, value, self._lines)
        return tuple(positions) if positions is not None else ()


# --------------------------------------------------------------------------
# coefficient references
# --------------------------------------------------------------------------

def _check_reference(family: str, indices: Optional[Tuple[int, ...]], term: str, column: int) -> None:
    """The constraint families' rules for a reference ``family[...]`` the parser found.

    Called by :func:`lowenergy.parse.parse_expression` (``coefficients=``)
    for each reference, left to right; raises to refuse it.
    """
    if family not in FAMILIES:
        hint = _FAMILY_HINT
        close_match = difflib.get_close_matches(family, FAMILIES, n=1, cutoff=0.6)
        if close_match:
            hint = f"did you mean {close_match[0]}[...]? " + hint
        elif family in ("zeta", "G", "pi"):
            hint = f"MZVs use round parentheses, e.g. zeta(3); {hint}"
        raise ParseError(f"unknown coefficient family '{_short(family, 30)}'", column=column, term=_short(term), hint=hint)
    if indices is None or not (len(indices) == 2 or (family == "c" and len(indices) == 3)):
        inner = term[term.index("[") + 1 : -1]
        raise ParseError(f"malformed coefficient reference '{_short(term, 40)}'", column=column, term=_short(term),
                         hint=_ref_hint(family, inner))
    if max(abs(i) for i in indices) > MAX_INDEX:
        raise InputError(f"index too large in {_short(term, 40)}", column=column, term=_short(term),
                         hint=f"indices are at most {MAX_INDEX} in absolute value")
    if len(indices) == 3:
        a, b, k = indices
        if b != 0 or k >= 0 or a < 0:
            raise InputError(
                f"invalid U-channel coefficient name {_short(term, 40)}", column=column, term=_short(term),
                hint="c[i,0,k] (i >= 0, k < 0) is the coefficient of s^i U^k, U = -s-t, as expand writes it",
            )
        return
    a, b = indices
    if family == "sym" and not (a >= b >= 0):
        hint = f"write sym[{b},{a}]" if b >= a >= 0 else "sym[i,j] needs i >= j >= 0 (contact terms only)"
        raise InputError(f"invalid symmetric-basis name {term}", column=column, term=term, hint=hint)
    if family == "sigma" and (a < 0 or b < 0):
        raise InputError(f"invalid sigma-basis name {term}", column=column, term=term, hint="sigma[a,b] needs a, b >= 0")


def _ref_hint(family: str, inner: str) -> str:
    """The hint for a malformed ``family[inner]``: c[i,j], or the U-channel rows
    c[i,0,k] of sphere expansions when three indices were meant."""
    if family not in FAMILIES:
        family = "c"
    if family != "c":
        return f"write {family}[i,j] with two integers, e.g. {family}[2,0]"
    u_row = "c[i,0,k] with integers i >= 0, k < 0 (coefficient of s^i U^k, U = -s-t; sphere expansions)"
    if inner.count(",") >= 2:
        return f"a U-channel pole row is {u_row}, e.g. c[1,0,-1]; other coefficients are c[i,j], e.g. c[2,0]"
    return "write c[i,j] with two integers, e.g. c[2,0] (U-channel pole rows of sphere expansions: c[i,0,k], k < 0)"


def _reference(node: Coef, text: str) -> CoefficientRef:
    """The :class:`CoefficientRef` of a parsed reference (``text`` is the parsed text)."""
    start = (node.col or 1) - 1
    spelled = text[start : text.index("]", start) + 1]
    a, b = node.indices[0], node.indices[1]
    u = node.indices[2] if len(node.indices) == 3 else None
    return CoefficientRef(node.family, a, b, column=start + 1, text=spelled, u=u)


def _parse_with_refs(text: str) -> Tuple[Node, Tuple[CoefficientRef, ...]]:
    """Parse a relation (coefficient references are :class:`Coef` nodes); errors carry columns of ``text``."""
    try:
        tree = parse_expression(text, coefficients=_check_reference)
    except ParseError as err:
        if err.message.startswith("unclosed '['") and err.term and "[" in err.term:
            # the parser's hint is generic; name the U-channel rows when three indices were meant
            family, _, inner = err.term.partition("[")
            err.hint = _ref_hint(family.strip(), inner)
        raise
    refs = tuple(_reference(node, text) for node in walk(tree) if isinstance(node, Coef))
    return tree, refs


# --------------------------------------------------------------------------
# static checks of a parsed relation
# --------------------------------------------------------------------------


def _subtree_nodes(node: Node) -> Iterator[Node]:
    return walk(node)


def _divisors(node: Node) -> Iterator[Node]:
    """The divisors of a product (the factors after each ``/``)."""
    if isinstance(node, Product):
        for op, item in zip(node.ops, node.items[1:]):
            if op == "/":
                yield item


def _node_text(node: Node) -> str:
    return _short(to_text(node))


def _validate(tree: Node, *, allow_refs: bool) -> None:
    """Static checks; raise with a column of the text.

    Coefficient references are allowed when ``allow_refs``; the only name is
    ``pi``; calls are ``zeta(...)`` and ``G(...; 1)`` with literal indices;
    exponents and divisors are rational constants.
    """

    def fail(node: Node, message: str, hint: Optional[str] = None) -> InputError:
        return InputError(message, column=getattr(node, "col", None), term=_node_text(node), hint=hint)

    for node in _subtree_nodes(tree):
        if isinstance(node, Coef):
            if not allow_refs:
                raise fail(
                    node,
                    "the exact right-hand side may not contain coefficients",
                    "move coefficients into 'relation'; rhs is a number such as zeta(3) or 0",
                )
            continue
        if isinstance(node, Sym):
            if node.name == "pi":
                continue
            name = node.name
            if name in FAMILIES:
                hint = f"write {name}[i,j] with two integers"
            elif name in ("s", "t", "u", "x"):
                hint = "relations are between coefficients: c[i,j] is the coefficient of s^i t^j"
            else:
                hint = (_FAMILY_HINT + "; " + _CONSTANT_HINT) if allow_refs else _CONSTANT_HINT
            raise fail(node, f"unknown name '{_short(name, 30)}'", hint)
        elif isinstance(node, Call):
            _validate_call(node, fail)
        elif isinstance(node, Pow):
            if any(isinstance(k, (Sym, Call, Coef)) for k in _subtree_nodes(node.exponent)):
                raise fail(node.exponent, "exponents must be rational numbers", "write e.g. c[2,0]^2")
        else:
            for divisor in _divisors(node):
                if any(isinstance(k, (Sym, Call, Coef)) for k in _subtree_nodes(divisor)):
                    raise fail(
                        divisor,
                        "division is by rational numbers only",
                        "relations are polynomials in the coefficients; multiply through instead",
                    )


def _validate_call(node: Call, fail) -> None:
    name = node.name
    if name == "zeta":
        indices = zeta_indices(node, fail)
        if indices[0] == 1:
            raise fail(node, "zeta with first index 1 diverges", "the first index must be at least 2")
        if sum(indices) > MAX_MZV_WEIGHT:
            raise fail(node, f"MZV of weight {sum(indices)} is too heavy", f"weights up to {MAX_MZV_WEIGHT} are accepted")
        return
    if name == "G":
        if node.letters is None or len(node.args) != 1:
            raise fail(node, "G needs letters and the argument 1", "write G(0,1,1; 1)")
        arg = node.args[0]
        if not (isinstance(arg, Num) and arg.value == 1):
            raise fail(arg, "only G(...; 1) is a number here", "write G(0,1; 1)")
        for a in node.letters:
            if not isinstance(a, Num) or a.value not in (0, 1):
                raise fail(a, "letters of G must be 0 or 1")
        if len(node.letters) > MAX_MZV_WEIGHT:
            raise fail(node, "G word too long", f"words up to length {MAX_MZV_WEIGHT} are accepted")
        return
    if name == "sv":
        if node.letters is not None or len(node.args) != 1:
            raise fail(node, "sv takes one MZV expression", "write sv(zeta(5,3))")
        for k in _subtree_nodes(node.args[0]):
            if isinstance(k, Coef) or (isinstance(k, Sym) and k.name != "pi"):
                raise fail(k, "sv applies to MZV constants only", "write e.g. sv(zeta(5,3))*c[2,0]")
        return
    if name in FAMILIES:
        raise fail(node, f"unknown function '{name}'", f"coefficients use square brackets: {name}[i,j]")
    raise fail(node, f"unknown function '{_short(name, 30)}'", "known here: zeta(...), G(...; 1), sv(...)")


# --------------------------------------------------------------------------
# the reader proper
# --------------------------------------------------------------------------

_DECIMAL = re.compile(r"[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?\Z")


class _Reader:
    def __init__(self, data: dict, layout: _Layout, source: str) -> None:
        self.data = data
        self.layout = layout
        self.source = source

    # -- helpers -----------------------------------------------------------

    def top_line(self, key: str) -> Optional[int]:
        spot = self.layout.top.get(key)
        return spot[0] if spot else self.layout.other_headers.get(key)

    def table_line(self, index: int, key: Optional[str] = None) -> Optional[int]:
        if index < len(self.layout.tables):
            if key is not None and key in self.layout.tables[index]:
                return self.layout.tables[index][key][0]
            return self.layout.headers[index]
        return self.top_line("constraint")

    def error(self, cls, message: str, line: Optional[int], term: Optional[str] = None, hint=None, column=None):
        return cls(message, source=self.source, line=line, column=column, term=term, hint=hint)

    def unknown_key(self, key: str, allowed: Sequence[str], line: Optional[int], where: str) -> InputError:
        close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
        hint = f"did you mean '{close[0]}'? " if close else ""
        hint += "allowed keys: " + ", ".join(allowed)
        return self.error(InputError, f"unknown key '{_short(key, 40)}'{where}", line, _short(key, 40), hint)

    # -- top level ---------------------------------------------------------

    def read(self) -> ConstraintSet:
        data = self.data
        for key in data:
            if key not in TOP_LEVEL_KEYS:
                extra = ""
                if key in CONSTRAINT_KEYS:
                    extra = "; constraint keys belong in a [[constraint]] table"
                err = self.unknown_key(key, TOP_LEVEL_KEYS, self.top_line(key), "")
                err.hint = (err.hint or "") + extra
                raise err
        if "source" not in data:
            raise self.error(
                InputError,
                "missing required key 'source'",
                1,
                hint='every constraint set names where its numbers come from: source = "paper, equation"',
            )
        provenance = self.string_top("source")
        if not provenance.strip():
            raise self.error(InputError, "'source' is empty", self.top_line("source"), "source",
                             hint="name the publication, handbook equation or derivation")
        title = self.string_top("title") if "title" in data else ""
        notes = self.string_top("notes") if "notes" in data else ""
        template = data.get("template", False)
        if not isinstance(template, bool):
            raise self.error(InputError, f"'template' must be true or false, not {tomlpos.toml_type(template)}",
                             self.top_line("template"), "template", hint="write template = true")
        poles = self.pole_tables()
        crossing = self.crossing_table(poles)
        if "constraint" not in data:
            if poles or crossing is not None:
                return ConstraintSet((), provenance, title, notes, template, self.source, poles, crossing)
            raise self.error(InputError, "no constraints: missing [[constraint]] tables", None,
                             hint="add [[constraint]] tables with name, relation, kind and rhs "
                             "(or [[pole]] tables, or a [crossing] table)")
        tables = data["constraint"]
        if isinstance(tables, dict):
            raise self.error(InputError, "'constraint' must be an array of tables", self.top_line("constraint"),
                             "constraint", hint="write each constraint under [[constraint]] (double brackets)")
        if not isinstance(tables, list) or not tables:
            raise self.error(InputError, "'constraint' must be a non-empty array of tables", self.top_line("constraint"),
                             "constraint", hint="write each constraint under [[constraint]]")
        if len(tables) > MAX_CONSTRAINTS:
            raise self.error(InputError, f"more than {MAX_CONSTRAINTS} constraints", None,
                             hint="split the constraint set")
        constraints: List[Constraint] = []
        seen: Dict[str, Optional[int]] = {}
        for index, table in enumerate(tables):
            if not isinstance(table, dict):
                raise self.error(InputError, f"constraint {index + 1} is {tomlpos.toml_type(table)}, not a table",
                                 self.top_line("constraint"), "constraint", hint="write each constraint under [[constraint]]")
            c = self.constraint(index, table)
            if c.name in seen:
                where = f" (first at line {seen[c.name]})" if seen[c.name] else ""
                raise self.error(InputError, f"duplicate constraint name '{_short(c.name, 40)}'{where}",
                                 self.table_line(index, "name"), _short(c.name, 40), hint="names must be unique")
            seen[c.name] = self.table_line(index, "name")
            constraints.append(c)
        return ConstraintSet(tuple(constraints), provenance, title, notes, template, self.source, poles, crossing)

    def string_top(self, key: str) -> str:
        value = self.data[key]
        if not isinstance(value, str):
            raise self.error(InputError, f"'{key}' must be a string, not {tomlpos.toml_type(value)}", self.top_line(key), key,
                             hint=f'write {key} = "..."')
        return value

    # -- one constraint ----------------------------------------------------

    def constraint(self, index: int, table: dict) -> Constraint:
        label = f" in constraint {index + 1}"
        line = self.table_line(index)
        for key in table:
            if key not in CONSTRAINT_KEYS:
                raise self.unknown_key(key, CONSTRAINT_KEYS, self.table_line(index, key), label)

        def string(key: str, required: bool) -> Optional[str]:
            if key not in table:
                if required:
                    raise self.error(InputError, f"missing required key '{key}'{label}", line, key,
                                     hint=_REQUIRED_HINTS[key])
                return None
            value = table[key]
            if not isinstance(value, str):
                raise self.error(InputError, f"'{key}' must be a string, not {tomlpos.toml_type(value)}{label}",
                                 self.table_line(index, key), key, hint=f'write {key} = "..."')
            return value

        name = string("name", True)
        assert name is not None
        label = f" in constraint '{_short(name, 40)}'"
        if not name.strip():
            raise self.error(InputError, f"empty constraint name (constraint {index + 1})", self.table_line(index, "name"),
                             "name", hint="give every constraint a short unique name")
        if len(name) > MAX_NAME_LENGTH or any(not ch.isprintable() for ch in name):
            raise self.error(InputError, f"invalid constraint name{label}", self.table_line(index, "name"),
                             _short(name, 40), hint=f"at most {MAX_NAME_LENGTH} printable characters")
        relation = string("relation", True)
        kind = string("kind", True)
        assert relation is not None and kind is not None
        note = string("note", False) or ""
        kind_line = self.table_line(index, "kind")
        if kind.strip() not in KINDS:
            hints = {"==": "write kind = \"=\"", "<": "strict inequalities are not supported; use \"<=\"",
                     ">": "strict inequalities are not supported; use \">=\"", "\u2264": "write \"<=\"",
                     "\u2265": "write \">=\"", "=<": "write \"<=\"", "=>": "write \">=\""}
            raise self.error(InputError, f"unknown kind '{_short(kind, 20)}'{label}", kind_line, _short(kind, 20),
                             hint=hints.get(kind.strip(), "kind is one of \"=\", \"<=\", \">=\""))
        kind = kind.strip()

        # -- the relation --
        rel_line, rel_offset = self.table_spot(index, "relation")
        rel_text = relation.replace("\r", " ").replace("\n", " ")
        rel_at = self.layout.string_positions(rel_offset, relation) if rel_offset is not None else ()
        if not rel_at and rel_line is not None:
            rel_at = ()
        for bad in ("<=", ">=", "==", "="):
            if bad in rel_text:
                col = rel_text.index(bad) + 1
                err = ParseError(
                    f"the relation contains '{bad}'",
                    column=col,
                    term=bad,
                    hint="write only the left-hand side in 'relation'; put the comparison in 'kind' "
                    "and the right-hand side in 'rhs' or 'rhs_value'",
                )
                raise self.place(err, rel_at, rel_line, label)
        try:
            tree, refs = _parse_with_refs(rel_text)
            _validate(tree, allow_refs=True)
        except LowEnergyError as err:
            raise self.place(err, rel_at, rel_line, label) from None

        # -- right-hand side --
        has_rhs = "rhs" in table
        has_value = "rhs_value" in table
        tol_keys = [k for k in ("abs_tol", "rel_tol", "uncertainty") if k in table]
        if has_rhs and has_value:
            raise self.error(InputError, f"both 'rhs' and 'rhs_value' are given{label}", self.table_line(index, "rhs_value"),
                             "rhs_value", hint="give either an exact rhs or a numeric rhs_value with a tolerance")
        if not has_rhs and not has_value:
            raise self.error(InputError, f"missing right-hand side{label}", line, name,
                             hint='add rhs = "zeta(3)" (exact) or rhs_value = 1.2 with abs_tol/rel_tol')
        rhs_text = rhs_tree = None
        rhs_at: Tuple[Position, ...] = ()
        rhs_value = abs_tol = rel_tol = uncertainty = None
        if has_rhs:
            if tol_keys:
                raise self.error(InputError, f"'{tol_keys[0]}' given with an exact rhs{label}",
                                 self.table_line(index, tol_keys[0]), tol_keys[0],
                                 hint="tolerances belong to a numeric rhs_value; an exact rhs is compared exactly")
            value = table["rhs"]
            rhs_line, rhs_offset = self.table_spot(index, "rhs")
            if isinstance(value, bool) or not isinstance(value, (str, int)):
                hint = 'write the exact value as a string, e.g. rhs = "zeta(3)"'
                if isinstance(value, float):
                    hint = "a decimal number is not exact: use rhs_value with abs_tol/rel_tol, or an exact string such as \"1/4\""
                raise self.error(InputError, f"'rhs' must be a string or an integer, not {tomlpos.toml_type(value)}{label}",
                                 rhs_line, "rhs", hint=hint)
            if isinstance(value, int):
                # compare before converting: str() of a huge int (a TOML hex
                # literal is read without Python's digit limit) would raise
                if abs(value) >= 10**MAX_INT_DIGITS:
                    raise self.error(InputError, f"'rhs' is too large (more than {MAX_INT_DIGITS} digits){label}",
                                     rhs_line, "rhs")
                rhs_text = str(value)
            else:
                rhs_text = value.replace("\r", " ").replace("\n", " ")
                rhs_at = self.layout.string_positions(rhs_offset, value) if rhs_offset is not None else ()
            try:
                rhs_tree, _ = _parse_with_refs(rhs_text)
                _validate(rhs_tree, allow_refs=False)
            except LowEnergyError as err:
                raise self.place(err, rhs_at, rhs_line, label, what="rhs") from None
        else:
            rhs_value = self.number(index, "rhs_value", table["rhs_value"], label, signed=True)
            if not tol_keys:
                raise self.error(InputError, f"'rhs_value' needs a tolerance{label}", self.table_line(index, "rhs_value"),
                                 "rhs_value", hint="add abs_tol, rel_tol or uncertainty")
            if "abs_tol" in table and "uncertainty" in table:
                raise self.error(InputError, f"both 'abs_tol' and 'uncertainty' are given{label}",
                                 self.table_line(index, "uncertainty"), "uncertainty",
                                 hint="uncertainty is an absolute tolerance: keep one of the two")
            if "abs_tol" in table:
                abs_tol = self.number(index, "abs_tol", table["abs_tol"], label)
            if "rel_tol" in table:
                rel_tol = self.number(index, "rel_tol", table["rel_tol"], label)
            if "uncertainty" in table:
                uncertainty = self.number(index, "uncertainty", table["uncertainty"], label)
        return Constraint(
            name=name,
            relation=rel_text,
            tree=tree,
            refs=refs,
            kind=kind,
            rhs=rhs_text,
            rhs_tree=rhs_tree,
            rhs_value=rhs_value,
            abs_tol=abs_tol,
            rel_tol=rel_tol,
            uncertainty=uncertainty,
            note=note,
            source=self.source,
            line=line,
            _relation_at=rel_at or ((rel_line, None),),
            _rhs_at=rhs_at or ((self.table_spot(index, "rhs")[0] or line, None),),
        )

    # -- [[pole]] tables ------------------------------------------------------

    def pole_line(self, index: int, key: Optional[str] = None) -> Optional[int]:
        if index < len(self.layout.pole_tables):
            if key is not None and key in self.layout.pole_tables[index]:
                return self.layout.pole_tables[index][key][0]
            return self.layout.pole_headers[index]
        return self.top_line("pole")

    def pole_tables(self) -> Tuple[PoleConstraint, ...]:
        if "pole" not in self.data:
            return ()
        tables = self.data["pole"]
        if not isinstance(tables, list) or not tables:
            raise self.error(InputError, "'pole' must be a non-empty array of tables", self.top_line("pole"), "pole",
                             hint="write each pole constraint under [[pole]] (double brackets)")
        out: List[PoleConstraint] = []
        counts: Dict[str, int] = {}
        for table in tables:
            if isinstance(table, dict) and table.get("variable") in POLE_VARIABLES:
                counts[table["variable"]] = counts.get(table["variable"], 0) + 1
        seen: Dict[str, Optional[int]] = {}
        numbers: Dict[str, int] = {}
        for index, table in enumerate(tables):
            if not isinstance(table, dict):
                raise self.error(InputError, f"pole table {index + 1} is {tomlpos.toml_type(table)}, not a table",
                                 self.top_line("pole"), "pole", hint="write each pole constraint under [[pole]]")
            p = self.pole(index, table, counts, numbers)
            if p.name in seen:
                where = f" (first at line {seen[p.name]})" if seen[p.name] else ""
                raise self.error(InputError, f"duplicate pole-table name '{_short(p.name, 40)}'{where}",
                                 p.where("name"), _short(p.name, 40), hint="give each [[pole]] table its own name")
            seen[p.name] = p.where("name")
            out.append(p)
        return tuple(out)

    def _levels(self, value, key: str, line: Optional[int], label: str, allow_empty: bool = False) -> Tuple[int, ...]:
        if not isinstance(value, list) or any(isinstance(v, bool) or not isinstance(v, int) for v in value):
            raise self.error(InputError, f"'{key}' must be a list of integers{label}", line, key,
                             hint=f"write {key} = [1, 2, 3] (levels n >= 0)")
        if not value and not allow_empty:
            raise self.error(InputError, f"'{key}' is empty{label}", line, key, hint=f"write {key} = [1, 2, 3]")
        for v in value:
            if v < 0 or v > MAX_LEVEL:
                raise self.error(InputError, f"level {int_text(v)} in '{key}' is out of range{label}", line, key,
                                 hint=f"levels are integers 0..{MAX_LEVEL} (poles at s = n or t = n, n >= 0)")
        dup = sorted({v for v in value if value.count(v) > 1})
        if dup:
            raise self.error(InputError, f"level {dup[0]} appears twice in '{key}'{label}", line, key,
                             hint="list every level once")
        return tuple(sorted(value))

    def _small_int(self, value, key: str, line: Optional[int], label: str, lo: int, hi: int) -> int:
        if isinstance(value, bool) or not isinstance(value, int) or not lo <= value <= hi:
            if isinstance(value, int) and not isinstance(value, bool):
                shown = int_text(value)  # repr() of a huge int may raise
            elif isinstance(value, float):
                shown = repr(value)
            else:
                shown = tomlpos.toml_type(value)
            raise self.error(InputError, f"'{key}' must be an integer from {lo} to {hi}, not {shown}{label}",
                             line, key, hint=f"write {key} = {max(lo, 1)}")
        return value

    def pole(self, index: int, table: dict, counts: Dict[str, int], numbers: Dict[str, int]) -> PoleConstraint:
        label = f" in pole table {index + 1}"
        line = self.pole_line(index)
        for key in table:
            if key not in POLE_KEYS:
                err = self.unknown_key(key, POLE_KEYS, self.pole_line(index, key), label)
                if key == "order":
                    err.hint = "did you mean 'max_order' (or 'pole_order' for the residues)? " + (err.hint or "")
                raise err
        where = {key: self.pole_line(index, key) for key in table}
        for key in ("variable", "levels", "max_order"):
            if key not in table:
                raise self.error(InputError, f"missing required key '{key}'{label}", line, key,
                                 hint=_POLE_REQUIRED_HINTS[key])
        variable = table["variable"]
        if variable not in POLE_VARIABLES:
            shown = repr(variable) if isinstance(variable, str) else tomlpos.toml_type(variable)
            hint = 'poles at s = n: variable = "s"; at t = n: "t"; at u = -s-t = n (sphere integrands): "u"'
            if isinstance(variable, str) and variable.lower() in POLE_VARIABLES:
                hint = (f'constraint files name the variables in lower case whatever the integrand calls them: '
                        f'variable = "{variable.lower()}"')
            raise self.error(InputError, f"'variable' must be \"s\", \"t\" or \"u\", not {_short(shown, 30)}{label}",
                             where["variable"], "variable", hint=hint)
        other = "t" if variable == "s" else "s"
        if "name" in table:
            name = table["name"]
            if not isinstance(name, str) or not name.strip() or len(name) > MAX_NAME_LENGTH or any(
                not ch.isprintable() for ch in name
            ):
                raise self.error(InputError, f"invalid pole-table name{label}", where["name"], "name",
                                 hint=f'a string of at most {MAX_NAME_LENGTH} printable characters, e.g. name = "poles in s"')
        else:
            numbers[variable] = numbers.get(variable, 0) + 1
            name = f"pole {variable}" + (f" #{numbers[variable]}" if counts.get(variable, 0) > 1 else "")
        label = f" in pole table '{_short(name, 40)}'"
        levels = self._levels(table["levels"], "levels", where["levels"], label)
        max_order = self._small_int(table["max_order"], "max_order", where["max_order"], label, 0, MAX_POLE_ORDER)
        if "check_levels" in table:
            check_levels = self._levels(table["check_levels"], "check_levels", where["check_levels"], label, True)
            both = sorted(set(check_levels) & set(levels))
            if both:
                raise self.error(InputError, f"level {both[0]} is both imposed and only checked{label}",
                                 where["check_levels"], "check_levels",
                                 hint="check_levels lists levels that are NOT imposed, to test the solution on")
        else:
            top = max(levels)
            check_levels = tuple(range(top + 1, min(top + DEFAULT_CHECK_LEVELS, MAX_LEVEL) + 1))
        max_degree = max_degree_text = None
        if "max_degree" in table:
            max_degree, max_degree_text = self._max_degree(table["max_degree"], where["max_degree"], label)
        pole_order = 1
        if "pole_order" in table:
            pole_order = self._small_int(table["pole_order"], "pole_order", where["pole_order"], label, 1, MAX_POLE_ORDER)
            if "residues" not in table:
                raise self.error(InputError, f"'pole_order' without 'residues'{label}", where["pole_order"],
                                 "pole_order", hint="pole_order says which order the numerators in 'residues' belong to")
        residues: List[Tuple[int, str, Node]] = []
        if "residues" in table:
            value = table["residues"]
            rline = where["residues"]
            if not isinstance(value, dict) or not value:
                raise self.error(InputError, f"'residues' must be a non-empty table from level to numerator{label}",
                                 rline, "residues", hint=f'write residues = {{ 1 = "{other} + 1" }}')
            if pole_order > max_order:
                raise self.error(InputError, f"'pole_order' {pole_order} exceeds 'max_order' {max_order}{label}",
                                 where.get("pole_order", rline), "pole_order",
                                 hint="numerators can only be given for orders up to max_order")
            allowed = set(levels) | set(check_levels)
            for key, text in value.items():
                if not re.fullmatch(r"\d{1,6}", key):
                    raise self.error(InputError, f"residues key '{_short(key, 20)}' is not a level{label}", rline,
                                     f"residues.{_short(key, 20)}", hint='keys are levels n >= 0: residues = { 2 = "..." }')
                level = int(key)
                if level not in allowed:
                    raise self.error(InputError, f"residue at level {level}, which is neither in 'levels' nor in "
                                     f"'check_levels'{label}", rline, f"residues.{key}",
                                     hint="add the level to levels (imposed) or check_levels (checked only)")
                if isinstance(text, int) and not isinstance(text, bool):
                    text = str(text)
                if not isinstance(text, str):
                    raise self.error(InputError, f"the residue at level {level} must be a string, not "
                                     f"{tomlpos.toml_type(text)}{label}", rline, f"residues.{key}",
                                     hint=f'write the numerator as text, e.g. {key} = "{other} + 1"')
                flat = text.replace("\r", " ").replace("\n", " ")
                try:
                    tree = parse_expression(flat)
                    _validate_numerator(tree, other, variable)
                except LowEnergyError as err:
                    col = err.column
                    err.source, err.line, err.column = self.source, rline, None
                    err.message += f" (column {col} of the residue at level {level}{label}; key residues.{key})" if col \
                        else f" (in the residue at level {level}{label}; key residues.{key})"
                    err.args = (err.message,)
                    raise err from None
                residues.append((level, flat, tree))
        note = table.get("note", "")
        if not isinstance(note, str):
            raise self.error(InputError, f"'note' must be a string{label}", where["note"], "note", hint='write note = "..."')
        return PoleConstraint(name, variable, levels, max_order, max_degree, max_degree_text, tuple(sorted(residues)),
                              pole_order, check_levels, note, self.source, line, where)

    def _max_degree(self, value, line: Optional[int], label: str) -> Tuple[Tuple[int, int], str]:
        if isinstance(value, int) and not isinstance(value, bool):
            if abs(value) > 10**6:
                raise self.error(InputError, f"'max_degree' is too large{label}", line, "max_degree")
            return (0, value), str(value)
        if not isinstance(value, str):
            raise self.error(InputError, f"'max_degree' must be an integer or a linear expression in n, not "
                             f"{tomlpos.toml_type(value)}{label}", line, "max_degree",
                             hint='write max_degree = 2 or max_degree = "n+1"')
        try:
            tree = parse_expression(value.replace("\n", " "))
            a, b = _linear_in_n(tree)
        except LowEnergyError as err:
            err.source, err.line = self.source, line
            col, err.column = err.column, None
            err.message += f" (column {col} of 'max_degree'{label})" if col else f" (in 'max_degree'{label})"
            if not err.term:
                err.term = "max_degree"
            err.args = (err.message,)
            raise err from None
        if a.denominator != 1 or b.denominator != 1:
            raise self.error(InputError, f"'max_degree' must have integer coefficients{label}", line, _short(value, 40),
                             hint='write e.g. "n+1" or "2*n-1"')
        if abs(a) > 1000 or abs(b) > 10**6:
            raise self.error(InputError, f"'max_degree' is too large{label}", line, _short(value, 40))
        return (int(a), int(b)), value

    # -- [crossing] -----------------------------------------------------------

    def crossing_table(self, poles: Sequence[PoleConstraint]) -> Optional[CrossingConstraint]:
        if "crossing" not in self.data:
            return None
        value = self.data["crossing"]
        line = self.top_line("crossing")
        spots = self.layout.crossing
        where = {key: (spots[key][0] if key in spots else line) for key in CROSSING_KEYS}
        if isinstance(value, str):
            value = {"symmetry": value}
            where["symmetry"] = line
        if not isinstance(value, dict):
            raise self.error(InputError, f"'crossing' must be a string or a table, not {tomlpos.toml_type(value)}", line,
                             "crossing", hint='write crossing = "symmetric" or a [crossing] table')
        label = " in the crossing table"
        for key in value:
            if key not in CROSSING_KEYS:
                raise self.unknown_key(key, CROSSING_KEYS, where.get(key, line), label)
        if "symmetry" not in value:
            raise self.error(InputError, f"missing required key 'symmetry'{label}", line, "symmetry",
                             hint='write symmetry = "symmetric" or "antisymmetric"')
        symmetry = value["symmetry"]
        if symmetry not in SYMMETRIES:
            shown = repr(symmetry) if isinstance(symmetry, str) else tomlpos.toml_type(symmetry)
            raise self.error(InputError, f"unknown symmetry {_short(shown, 30)}{label}", where["symmetry"], "symmetry",
                             hint='"symmetric" or "antisymmetric" (under s <-> t)')
        name = value.get("name", f"crossing ({symmetry})")
        if not isinstance(name, str) or not name.strip() or len(name) > MAX_NAME_LENGTH:
            raise self.error(InputError, f"invalid name{label}", where["name"], "name", hint='write name = "crossing"')
        order = DEFAULT_CROSSING_ORDER
        if "order" in value:
            order = self._small_int(value["order"], "order", where["order"], label, 0, MAX_INDEX)
        if "levels" in value:
            levels = self._levels(value["levels"], "levels", where["levels"], label, True)
        elif poles:
            levels = tuple(range(0, max(max(p.levels) for p in poles) + 1))
        else:
            levels = (0, 1, 2)
        if "check_levels" in value:
            check_levels = self._levels(value["check_levels"], "check_levels", where["check_levels"], label, True)
            both = sorted(set(check_levels) & set(levels))
            if both:
                raise self.error(InputError, f"level {both[0]} is both imposed and only checked{label}",
                                 where["check_levels"], "check_levels", hint="check_levels lists levels NOT imposed")
        else:
            top = max(levels, default=-1)
            check_levels = tuple(range(top + 1, min(top + DEFAULT_CHECK_LEVELS, MAX_LEVEL) + 1))
        note = value.get("note", "")
        if not isinstance(note, str):
            raise self.error(InputError, f"'note' must be a string{label}", where["note"], "note")
        return CrossingConstraint(name, SYMMETRIES[symmetry], order, levels, check_levels, note, self.source, line)

    def table_spot(self, index: int, key: str) -> Tuple[Optional[int], Optional[int]]:
        if index < len(self.layout.tables) and key in self.layout.tables[index]:
            return self.layout.tables[index][key]
        return self.table_line(index), None

    def place(self, err: LowEnergyError, positions, line, label: str, what: str = "relation") -> LowEnergyError:
        column = err.column
        if positions:
            err.line, err.column = tomlpos.position_at(positions, column)
        else:
            err.line, err.column = line, None
        err.source = self.source
        of = label.replace(" in constraint", " of constraint")
        suffix = f" (in the {what}{of})"
        if column is not None and not positions:
            suffix = f" (column {column} of the {what}{of})"
        err.message = err.message + suffix
        err.args = (err.message,)
        return err

    def number(self, index: int, key: str, value, label: str, signed: bool = False) -> Fraction:
        line = self.table_line(index, key)
        q: Optional[Fraction] = None
        if isinstance(value, bool):
            q = None
        elif isinstance(value, int):
            if abs(value) <= 10**1000:
                q = Fraction(value)
        elif isinstance(value, float):
            if math.isfinite(value):
                q = Fraction(Decimal(repr(value)))
            else:
                raise self.error(InputError, f"'{key}' must be finite{label}", line, key, hint="write an ordinary number")
        elif isinstance(value, str):
            text = value.strip().replace("_", "")
            if len(text) <= 1000 and _DECIMAL.match(text):
                try:
                    dec = Decimal(text)
                except InvalidOperation:  # pragma: no cover - the regex only admits valid decimals
                    dec = None
                if dec is not None and abs(dec.as_tuple().exponent) <= 1000:
                    q = Fraction(dec)
        if q is None:
            raise self.error(
                InputError,
                f"'{key}' must be a number, not {tomlpos.toml_type(value) if not isinstance(value, str) else repr(_short(value, 30))}{label}",
                line,
                key,
                hint=f"write {key} = 1.5e-8 or a decimal string such as \"1.6449340668482264365\"",
            )
        if not signed and q < 0:
            raise self.error(InputError, f"'{key}' must not be negative{label}", line, key, hint="tolerances are >= 0")
        return q


_POLE_REQUIRED_HINTS = {
    "variable": 'add variable = "s" (poles at s = n), "t" or "u" (u = -s-t, sphere integrands)',
    "levels": "add levels = [0, 1, 2] (the levels n imposed)",
    "max_order": "add max_order = 1 (no 1/(s-n)^k with k > max_order)",
}


class _NotConstant(Exception):
    """Raised inside :func:`_rational_constant` when the tree is not a rational constant."""


class _ConstantRules(Rules):
    def leaf(self, n: Node):
        if isinstance(n, Num):
            return n.value
        if isinstance(n, (Sym, Call, Coef)):
            raise _NotConstant
        return None

    def neg(self, a, node):
        return -a

    def add(self, a, b, node, k):
        return a + b

    def sub(self, a, b, node, k):
        return a - b

    def mul(self, a, b, node, k):
        return a * b

    def div(self, a, b, node, k):
        if not b:
            raise _NotConstant
        return a / b

    def power(self, base, e, node):
        if e.denominator != 1 or abs(e) > 64 or (base == 0 and e < 0):
            raise _NotConstant
        return base ** int(e)


def _rational_constant(node: Node) -> Optional[Fraction]:
    """The value of a tree of numbers and + - * / ^ (integer powers), else None."""
    try:
        return evaluate(node, _ConstantRules())
    except _NotConstant:
        return None


class _LinearRules(Rules):
    """``(a, b)`` for ``a·n + b``."""

    @staticmethod
    def fail(node: Node, message: str) -> InputError:
        return InputError(message, column=getattr(node, "col", None), term=_short(to_text(node)),
                          hint='max_degree is an integer or linear in the level n, e.g. "n+1" or "2*n-1"')

    def leaf(self, node: Node):
        if isinstance(node, Num):
            return (Fraction(0), node.value)
        if isinstance(node, Sym) and node.name == "n":
            return (Fraction(1), Fraction(0))
        if isinstance(node, Sym):
            raise self.fail(node, f"unknown name '{_short(node.name, 20)}'")
        if isinstance(node, (Call, Coef)):
            raise self.fail(node, "no functions here")
        return None

    def neg(self, v, node):
        return (-v[0], -v[1])

    def add(self, v, w, node, k):
        return (v[0] + w[0], v[1] + w[1])

    def sub(self, v, w, node, k):
        return (v[0] - w[0], v[1] - w[1])

    def mul(self, v, w, node, k):
        (a1, b1), (a2, b2) = v, w
        if a1 and a2:
            raise self.fail(node.prefix(k), "not linear in n")
        return (a1 * b2 + a2 * b1, b1 * b2)

    def div(self, v, w, node, k):
        (a1, b1), (a2, b2) = v, w
        if a2 or not b2:
            raise self.fail(node.prefix(k), "division by n or by zero")
        return (a1 / b2, b1 / b2)

    def power(self, v, w, node):
        (a1, b1), (a2, b2) = v, w
        if a2 or b2.denominator != 1 or b2 < 0 or b2 > 64:
            raise self.fail(node, "exponents must be small non-negative integers")
        if b2 == 0:
            return (Fraction(0), Fraction(1))
        if b2 == 1:
            return (a1, b1)
        if a1:
            raise self.fail(node, "not linear in n")
        return (Fraction(0), b1 ** int(b2))


def _linear_in_n(tree: Node) -> Tuple[Fraction, Fraction]:
    """``(a, b)`` with ``tree = a·n + b`` (rationals); the only name allowed is ``n``."""
    return evaluate(tree, _LinearRules())


def _validate_numerator(tree: Node, other: str, variable: Optional[str] = None) -> None:
    """Static checks of a pole numerator: a polynomial in ``other`` with MZV
    coefficients (``zeta(...)``, ``G(...; 1)``, ``pi``), divisions by
    rational numbers, non-negative integer powers of the variable."""

    def fail(node: Node, message: str, hint: Optional[str] = None) -> InputError:
        return InputError(message, column=getattr(node, "col", None), term=_short(to_text(node)), hint=hint)

    for node in _subtree_nodes(tree):
        if isinstance(node, Sym):
            if node.name in (other, "pi"):
                continue
            hint = f"a numerator is a polynomial in {other} with MZV coefficients"
            if node.name in POLE_VARIABLES:
                pole_var = variable or ("s" if other == "t" else "t")
                hint = f"the numerator of a pole in {pole_var} is a polynomial in {other} only"
            raise fail(node, f"unknown name '{_short(node.name, 30)}'", hint)
        if isinstance(node, Call):
            _validate_call(node, fail)
        elif isinstance(node, Pow):
            if any(isinstance(k, (Sym, Call)) for k in _subtree_nodes(node.exponent)):
                raise fail(node.exponent, "exponents must be integers", f"write e.g. {other}^2")
            e = _rational_constant(node.exponent)
            if e is None or e.denominator != 1 or e < 0 or e > 1000:
                if any(isinstance(k, Sym) and k.name == other for k in _subtree_nodes(node.base)):
                    raise fail(node.exponent, f"powers of {other} must be integers from 0 to 1000",
                               "a numerator is a polynomial")
        else:
            for divisor in _divisors(node):
                if any(isinstance(k, (Sym, Call, Coef)) for k in _subtree_nodes(divisor)):
                    raise fail(divisor, "division is by rational numbers only",
                               "a numerator is a polynomial; write (t+1)*(t+2)/2")


_REQUIRED_HINTS = {
    "name": 'add name = "..." (unique within the file)',
    "relation": 'add relation = "c[2,0] - c[0,2]" (coefficient names c[i,j], sym[i,j], sigma[a,b])',
    "kind": 'add kind = "=" (or "<=", ">=")',
}
