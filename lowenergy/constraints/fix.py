"""Fix the free parameters of an expansion with a constraint set.

Method
------
Every equality constraint with an exact right-hand side gives a residual
``lhs − rhs`` that is a polynomial in the parameters with MZV coefficients.
Written in the canonical MZV basis (equal numbers have identical forms, and
the canonical monomials are linearly independent over Q) it vanishes iff the
rational coefficient of every canonical monomial vanishes, so each
constraint splits exactly into one rational equation per monomial.  Only
relations of degree ≤ 1 in the parameters are supported: a residual with a
product or power of parameters is refused with an
:class:`~lowenergy.errors.InputError` naming the constraint and the term.

The linear system is brought to reduced row echelon form over Q (Python
fractions), and the outcome is one of

``"unique"``
    every parameter has one rational value (:attr:`FixReport.solution`);
``"underdetermined"``
    the system is consistent but some parameters stay free
    (:attr:`FixReport.free`); the others are either fixed
    (:attr:`~FixReport.solution`) or affine in the free ones
    (:attr:`~FixReport.dependent`).  :attr:`~FixReport.depending` lists the
    coefficients of the expansion that still depend on the free parameters,
    and :attr:`~FixReport.suggestions` a smallest greedy choice among them
    whose values would fix all of them (judged by their linear part);
    :attr:`~FixReport.unfixable` names free parameters that no coefficient up
    to the expansion's order can fix;
``"inconsistent"``
    no parameter values satisfy all equalities;
    :attr:`~FixReport.conflict` is a smallest set of constraints that conflict
    (exhaustive search by size after deletion filtering, for systems of
    moderate size; otherwise the minimal set from deletion filtering:
    dropping any one of them leaves a
    consistent system; it is minimal, not necessarily of smallest size).

Constraints that are inequalities or have a numeric ``rhs_value`` do not
enter the system; they are checked (together with all others) on the fixed
expansion, :attr:`FixReport.check`.

Writing the fixed integrand
---------------------------
:func:`write_fixed_integrand` takes the TOML text of an integrand file and
returns a new TOML text in which

* every occurrence of a solved parameter in the ``integrand`` expression is
  replaced by its value in parentheses, e.g. ``a1`` → ``(1/2)`` (or by its
  affine expression in the free parameters, ``(1/2 - 3*a2)``, for an
  under-determined :class:`FixReport`).  The replacement is done on the
  tokens of the expression (identifiers equal to the parameter name and not
  followed by ``(``), never inside other names;
* the solved parameters are removed from ``parameters``;
* a line ``Parameters fixed by lowenergy: a1 = 1/2, ...`` is appended to
  ``notes``.

The document is edited in place (tomlkit, :mod:`lowenergy.constraints.rewrite`):
comments, key order, blank lines and a multi-line integrand string stay as
they were, and the substituted values are written tidily (``a1*s*t`` with
``a1 = 1`` becomes ``s*t``; a term whose parameter is 0 is dropped).  The
result is read back with the integrand reader
and its terms are compared exactly with :func:`substitute` applied to the
original integrand before it is returned.

Examples
--------
>>> from lowenergy.expansion.result import Expansion
>>> from lowenergy.constraints.model import constraints_from_text
>>> e = Expansion(("s", "t"), ("a", "b"), 1,
...               {(0, 0): {(1, 0): MZV.one(), (0, 1): MZV.one()},
...                (1, 0): {(1, 0): MZV.one(), (0, 0): MZV.rational(-1)}})
>>> cs = constraints_from_text('''source = "doctest"
... [[constraint]]
... name = "c00"
... relation = "c[0,0]"
... kind = "="
... rhs = "3"
... [[constraint]]
... name = "c10"
... relation = "c[1,0]"
... kind = "="
... rhs = "1"
... ''')
>>> report = fix(e, cs)
>>> report.status, report.solution
('unique', {'a': Fraction(2, 1), 'b': Fraction(1, 1)})
"""

from __future__ import annotations

import dataclasses
from pathlib import Path
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Dict, List, Mapping, Optional, Sequence, Tuple, Union

from ..errors import InputError, LowEnergyError
from ..expansion.result import Expansion
from ..integrand.model import Integrand
from ..poly import add_into, add_term, mul as poly_mul
from ..zeta.element import MZV
from ..zeta.table import TableStore
from ..zeta.format import fraction_text
from .check import CheckReport, CoefficientValues, DEFAULT_DIGITS, check, check_order, exact_sides
from ..linalg import Echelon, IncrementalBasis, greedy_independent_image
from ..linalg import consistent as linalg_consistent
from .model import Constraint, ConstraintSet, pole_levels_needed
from .rewrite import rewrite_toml
from .poles import Condition, crossing_contact_conditions, crossing_pole_conditions, pole_conditions

__all__ = ["fix", "FixReport", "substitute", "write_fixed_integrand", "UNIQUE", "UNDERDETERMINED", "INCONSISTENT"]

UNIQUE, UNDERDETERMINED, INCONSISTENT = "unique", "underdetermined", "inconsistent"

Affine = Tuple[Fraction, Dict[str, Fraction]]
Row = List[Fraction]


SMALLEST_CONFLICT_BUDGET = 20000


def _consistent(rows: Sequence[Dict[int, Fraction]], n: int) -> bool:
    """Whether the augmented system (column n = right-hand side) has a solution."""
    return linalg_consistent(rows, n + 1)


def _minimal_conflict(groups: Dict[str, List[Dict[int, Fraction]]], n: int) -> Tuple[str, ...]:
    """A smallest inconsistent subset of the groups (minimal if the search is too big).

    Deletion filtering gives a minimal set (dropping any member leaves a
    consistent system) of some size m; then all subsets of sizes 1..m-1 are
    tried in order, so the first inconsistent one found has the smallest
    possible size.  If that would need more than SMALLEST_CONFLICT_BUDGET
    consistency checks the minimal set is returned as it is.
    """
    from itertools import combinations
    from math import comb

    current = [name for name, rows in groups.items() if rows]
    for name in list(current):
        trial = [x for x in current if x != name]
        rows = [row for x in trial for row in groups[x]]
        if not _consistent(rows, n):
            current = trial
    names = [name for name, rows in groups.items() if rows]
    budget = sum(comb(len(names), k) for k in range(1, len(current)))
    if budget > SMALLEST_CONFLICT_BUDGET:
        return tuple(current)
    for k in range(1, len(current)):
        for subset in combinations(names, k):
            rows = [row for x in subset for row in groups[x]]
            if not _consistent(rows, n):
                return tuple(subset)
    return tuple(current)


def _mono_text(pe: Tuple[int, ...], params: Sequence[str]) -> str:
    parts = [name if e == 1 else f"{name}^{e}" for name, e in zip(params, pe) if e]
    return "*".join(parts) or "1"


def _equations(
    c: Constraint, values: CoefficientValues, params: Tuple[str, ...], store
) -> List[Row]:
    """One row ``[q_1, ..., q_n | -q_0]`` per canonical MZV monomial of the residual."""
    n = len(params)
    lhs, rhs = exact_sides(c, values, store)
    zero = (0,) * n
    residual = dict(lhs)
    if rhs:
        add_term(residual, zero, -rhs)
    rows: Dict[tuple, Row] = {}
    for pe, x in residual.items():
        if sum(pe) > 1:
            raise InputError(
                f"constraint '{c.name}' is not linear in the parameters (it contains {_mono_text(pe, params)})",
                source=c.source,
                line=c.line,
                term=_mono_text(pe, params),
                hint="fix solves linear systems only; check such constraints with `check` after fixing "
                "the parameters with linear ones",
            )
        col = pe.index(1) if any(pe) else n
        for mono, q in x.as_dict().items():
            row = rows.setdefault(mono, [Fraction(0)] * (n + 1))
            row[col] += q if col < n else -q
    return [r for r in rows.values() if any(r)]


# ==========================================================================
# the report
# ==========================================================================


@dataclass
class FixReport:
    """The outcome of :func:`fix`.

    Attributes
    ----------
    status:
        ``"unique"``, ``"underdetermined"`` or ``"inconsistent"``.
    parameters:
        All parameters of the expansion.
    solution:
        Parameters with a unique value: ``{name: Fraction}``.
    dependent:
        (under-determined) parameters fixed in terms of the free ones:
        ``{name: (constant, {free name: coefficient})}``.
    free:
        (under-determined) parameters left free.
    conflict:
        (inconsistent) a minimal set of conflicting constraint names.
    used, deferred:
        Names of the constraints that entered the linear system (exact
        equalities) and of those only checked afterwards.
    equations, rank:
        Number of rational equations and rank of the system.
    depending, suggestions, unfixable:
        (under-determined) coefficients still depending on the free
        parameters; a greedy smallest set of them that would fix all free
        parameters; free parameters no coefficient can fix.
    fixed:
        The expansion with the solution substituted (None if inconsistent).
    stabilisation:
        ``[(step, level, rank)]``: the rank of the system after the pole
        and crossing conditions of each level (ascending), then after the
        crossing of the Laurent coefficients, then after the Wilson
        coefficients.
    stable_after:
        The level after which the levels fixed nothing more (None without
        pole or crossing tables).
    further:
        ``[(condition, level, status)]``: the pole and crossing conditions of
        the levels that were checked, not imposed (``check_levels``), on the
        solution: PASS, FAIL or DEPENDS (on free parameters).
    residue_suggestions:
        (under-determined, with pole tables) a greedy smallest set of
        pole-numerator coefficients whose values would fix the free
        parameters.
    check:
        :func:`~lowenergy.constraints.check.check` of all constraints on
        :attr:`fixed` (None if inconsistent).
    """

    status: str
    parameters: Tuple[str, ...]
    solution: Dict[str, Fraction] = field(default_factory=dict)
    dependent: Dict[str, Affine] = field(default_factory=dict)
    free: Tuple[str, ...] = ()
    conflict: Tuple[str, ...] = ()
    used: Tuple[str, ...] = ()
    deferred: Tuple[str, ...] = ()
    equations: int = 0
    rank: int = 0
    depending: Tuple[str, ...] = ()
    suggestions: Tuple[str, ...] = ()
    unfixable: Tuple[str, ...] = ()
    fixed: Optional[Expansion] = None
    check: Optional[CheckReport] = None
    stabilisation: List[Tuple[str, Optional[int], int]] = field(default_factory=list)
    stable_after: Optional[int] = None
    further: List[Tuple[str, Optional[int], str]] = field(default_factory=list)
    residue_suggestions: Tuple[str, ...] = ()

    @property
    def further_levels(self) -> Tuple[int, ...]:
        """The levels checked on the solution without being imposed."""
        return tuple(sorted({lv for _, lv, _ in self.further if lv is not None}))

    @property
    def further_ok(self) -> bool:
        """Every condition at the further levels passes."""
        return all(status == "PASS" for _, _, status in self.further)

    @property
    def substitution(self) -> Dict[str, Affine]:
        """Every solved parameter as ``(constant, {free parameter: coefficient})``."""
        out: Dict[str, Affine] = {name: (value, {}) for name, value in self.solution.items()}
        out.update(self.dependent)
        return out

    @property
    def ok(self) -> bool:
        """Unique solution and every constraint passes on it."""
        return self.status == UNIQUE and self.check is not None and self.check.ok

    def to_text(self) -> str:
        lines = [f"status: {self.status} ({self.equations} rational equations of rank {self.rank} "
                 f"in {len(self.parameters)} parameters)"]
        if self.used:
            shown = list(self.used) if len(self.used) <= 12 else list(self.used[:6]) + [
                f"... ({len(self.used) - 6} more; --json lists them all)"]
            lines.append(f"solved with ({len(self.used)}): " + ", ".join(shown))
        if self.deferred:
            lines.append("checked afterwards: " + ", ".join(self.deferred))
        for name, value in self.solution.items():
            lines.append(f"  {name} = {value}")
        for name, aff in self.dependent.items():
            lines.append(f"  {name} = {_affine_text(aff)}")
        if self.free:
            lines.append("free parameters: " + ", ".join(self.free))
            if self.suggestions:
                lines.append("coefficients that would fix them: " + ", ".join(self.suggestions))
            if self.unfixable:
                lines.append("not fixed by any coefficient up to this order: " + ", ".join(self.unfixable))
            if self.residue_suggestions:
                lines.append("pole numerators that would fix them: " + "; ".join(self.residue_suggestions))
        if self.conflict:
            lines.append("conflicting constraints (smallest set found): " + ", ".join(self.conflict))
        if self.stabilisation and any(lv is not None for _, lv, _ in self.stabilisation):
            lines.append("stabilisation (rank after each step): "
                         + ", ".join(f"{name}: {rank}" for name, _, rank in self.stabilisation))
            lines.append(f"nothing more fixed after level {self.stable_after}")
        if self.further:
            counts = {k: sum(1 for *_, st in self.further if st == k) for k in ("PASS", "FAIL", "DEPENDS")}
            lines.append(f"further levels, not imposed ({', '.join(map(str, self.further_levels))}): "
                         f"{counts['PASS']} passed, {counts['FAIL']} failed, {counts['DEPENDS']} depend on free parameters")
            for label, _, st in self.further:
                if st != "PASS":
                    lines.append(f"  {st} {label}")
        if self.check is not None:
            s = self.check.summary
            lines.append(f"check at the solution: {s['PASS']} passed, {s['FAIL']} failed, "
                         f"{s['DEPENDS']} depend on free parameters")
            for r in self.check:
                if not r.passed:
                    lines.append(f"  {r.status} {r.name}: residual {r.residual_text()}")
        return "\n".join(lines)

    def to_dict(self) -> dict:
        return {
            "status": self.status,
            "parameters": list(self.parameters),
            "solution": {k: str(v) for k, v in self.solution.items()},
            "dependent": {k: _affine_text(v) for k, v in self.dependent.items()},
            "free": list(self.free),
            "conflict": list(self.conflict),
            "used": list(self.used),
            "deferred": list(self.deferred),
            "equations": self.equations,
            "rank": self.rank,
            "depending": list(self.depending),
            "suggestions": list(self.suggestions),
            "unfixable": list(self.unfixable),
            "check": None if self.check is None else self.check.to_dict(),
            "stabilisation": [{"step": name, "level": lv, "rank": rank} for name, lv, rank in self.stabilisation],
            "stable_after_level": self.stable_after,
            "further_levels": list(self.further_levels),
            "further": [{"condition": label, "level": lv, "status": st} for label, lv, st in self.further],
            "residue_suggestions": list(self.residue_suggestions),
        }


def _affine_text(aff: Affine) -> str:
    const, deps = aff
    parts: List[str] = []
    if const or not deps:
        parts.append(str(const))
    for name, q in deps.items():
        sign = "-" if q < 0 else "+"
        mag = abs(q)
        term = name if mag == 1 else f"{mag}*{name}"
        if not parts:
            parts.append(term if q > 0 else f"-{term}")
        else:
            parts.append(f"{sign} {term}")
    return " ".join(parts)


# ==========================================================================
# fix
# ==========================================================================


def _collect(constraints) -> Tuple[List[ConstraintSet], Tuple[Constraint, ...]]:
    """Constraint sets and all Wilson-coefficient constraints, names made unique.

    ``constraints`` is a :class:`ConstraintSet`, a :class:`Constraint`, or an
    iterable of either.  A name used in several files is qualified with the
    file name, ``"c10 (b.toml)"``.
    """
    if isinstance(constraints, (ConstraintSet, Constraint)):
        constraints = [constraints]
    sets: List[ConstraintSet] = []
    loose: List[Constraint] = []
    for item in constraints:
        if isinstance(item, ConstraintSet):
            sets.append(item)
        elif isinstance(item, Constraint):
            loose.append(item)
        else:
            raise TypeError(f"expected ConstraintSet or Constraint objects, not {type(item).__name__}")
    owners: List[Tuple[Constraint, str]] = [(c, cs.source) for cs in sets for c in cs.constraints]
    owners += [(c, c.source) for c in loose]
    count: Dict[str, int] = {}
    for c, _ in owners:
        count[c.name] = count.get(c.name, 0) + 1
    items = []
    for c, src in owners:
        if count[c.name] > 1:
            c = dataclasses.replace(c, name=f"{c.name} ({Path(src).name})")
        items.append(c)
    names = [c.name for c in items]
    dup = sorted({x for x in names if names.count(x) > 1})
    if dup:
        raise InputError(f"constraint '{dup[0]}' appears twice in the same file", term=dup[0],
                         hint="give constraints unique names")
    return sets, tuple(items)


_COLUMN_CACHE: Dict[int, Tuple[tuple, int]] = {}


def _pole_rows(cond: Condition, n: int, params: Sequence[str]) -> List[Dict[int, Fraction]]:
    """Sparse rows ``{column: q, n: -q0}`` of a condition, one per residual and MZV monomial."""
    out: List[Dict[int, Fraction]] = []
    for what, pp in cond.residuals:
        rows: Dict[tuple, Dict[int, Fraction]] = {}
        for pe, x in pp.items():
            # the column of an exponent tuple, cached by identity: the pole tables share
            # one tuple object per parameter, and for hundreds of parameters sum()
            # and index() on every entry would dominate
            hit = _COLUMN_CACHE.get(id(pe))
            if hit is not None and hit[0] is pe:
                col = hit[1]
            else:
                total = sum(pe)
                col = -1 if total > 1 else (pe.index(1) if total else n)
                if len(_COLUMN_CACHE) > 100_000:
                    _COLUMN_CACHE.clear()
                _COLUMN_CACHE[id(pe)] = (pe, col)
            if col < 0:
                raise InputError(
                    f"'{cond.label}' is not linear in the parameters ({what} contains {_mono_text(pe, params)})",
                    source=cond.source, line=cond.line, term=_mono_text(pe, params),
                    hint="pole and crossing constraints fix integrands that are linear in their parameters",
                )
            for mono, q in x.as_dict().items():
                row = rows.setdefault(mono, {})
                row[col] = row.get(col, Fraction(0)) + (q if col < n else -q)
        out.extend(r for r in rows.values() if any(r.values()))
    return out


def _dense_to_sparse(row: Row) -> Dict[int, Fraction]:
    return {k: v for k, v in enumerate(row) if v}


def _check_pole_table(poles, params: Tuple[str, ...], sets: Sequence[ConstraintSet]) -> None:
    if poles is None:
        raise InputError(
            "the constraints have [[pole]] or [crossing] tables, which need the pole parts of the integrand",
            hint="pass poles=lowenergy.spectrum.residues(integrand, N) with N = "
            "lowenergy.constraints.model.pole_levels_needed(constraints) (the command line does this)",
        )
    if tuple(poles.parameters) != params:
        raise InputError(
            f"the pole table has parameters {list(poles.parameters)}, the expansion {list(params)}",
            hint="compute both from the same integrand",
        )
    need = pole_levels_needed(sets)
    if need > poles.levels:
        raise InputError(
            f"the constraints need pole parts up to level {need}, the table has {poles.levels}",
            hint=f"compute residues(integrand, {need})",
        )


def fix(
    expansion: Expansion,
    constraints,
    *,
    digits: int = DEFAULT_DIGITS,
    store: Optional[TableStore] = None,
    poles=None,
) -> FixReport:
    """Solve the exact equality, pole and crossing constraints for the expansion's parameters.

    Parameters
    ----------
    expansion:
        The low-energy expansion of the integrand (to the order the
        constraints need, :func:`~lowenergy.constraints.model.required_order`).
    constraints:
        A :class:`ConstraintSet`, a :class:`Constraint`, or a list of them
        (several files are solved together).
    poles:
        The integrand's pole parts (a
        :class:`lowenergy.spectrum.residues.ResidueTable`, to level
        :func:`~lowenergy.constraints.model.pole_levels_needed`); needed
        only when the sets have ``[[pole]]`` or ``[crossing]`` tables.

    See the module docstring for the method and the report.  Raises
    :class:`~lowenergy.errors.InputError` for coefficients beyond the
    expansion's order, for constraints that are not linear in the
    parameters and for a missing or too short pole table,
    :class:`~lowenergy.errors.TableError` when an MZV in a relation needs
    tables that are not built.
    """
    if not isinstance(expansion, Expansion):
        raise TypeError(f"fix needs an Expansion, not {type(expansion).__name__}")
    sets, items = _collect(constraints)
    check_order(expansion, items)
    params = tuple(expansion.parameters)
    n = len(params)
    values = CoefficientValues(expansion)
    # -- the groups of rows, and the steps of the stabilisation record --
    groups: Dict[str, List[Dict[int, Fraction]]] = {}
    steps: Dict[object, List[str]] = {}
    deferred: List[str] = []
    further: List[Condition] = []
    has_poles = any(cs.poles or cs.crossing is not None for cs in sets)
    if has_poles:
        _check_pole_table(poles, params, sets)
        for cs in sets:
            conds: List[Condition] = []
            for pole in cs.poles:
                conds += pole_conditions(pole, poles, pole.levels, store)
                further += pole_conditions(pole, poles, pole.check_levels, store)
            if cs.crossing is not None:
                conds += crossing_pole_conditions(cs.crossing, poles, cs.crossing.levels)
                conds += crossing_contact_conditions(cs.crossing, expansion)
                further += crossing_pole_conditions(cs.crossing, poles, cs.crossing.check_levels)
            for cond in conds:
                label = cond.label if len(sets) == 1 else f"{cond.label} ({Path(cond.source).name})"
                groups[label] = _pole_rows(cond, n, params)
                steps.setdefault(cond.level if cond.level is not None else "crossing", []).append(label)
    for c in items:
        if c.kind == "=" and c.exact:
            groups[c.name] = [_dense_to_sparse(r) for r in _equations(c, values, params, store)]
            steps.setdefault("wilson", []).append(c.name)
        else:
            deferred.append(c.name)
    order = sorted(k for k in steps if isinstance(k, int)) + [k for k in ("crossing", "wilson") if k in steps]
    echelon = Echelon(n + 1)
    stabilisation: List[Tuple[str, Optional[int], int]] = []
    for key in order:
        echelon.add(row for label in steps[key] for row in groups[label])
        name = f"level {key}" if isinstance(key, int) else (
            "crossing of the Laurent coefficients" if key == "crossing" else "Wilson coefficients")
        stabilisation.append((name, key if isinstance(key, int) else None, echelon.rank))
    level_ranks = [(lv, r) for _, lv, r in stabilisation if lv is not None]
    stable_after = None
    if level_ranks:
        final = level_ranks[-1][1]
        stable_after = next(lv for lv, r in level_ranks if r == final)
    nrows = sum(len(g) for g in groups.values())
    base = dict(parameters=params, used=tuple(groups), deferred=tuple(deferred), equations=nrows,
                stabilisation=stabilisation, stable_after=stable_after)
    if not echelon.consistent:
        conflict = _minimal_conflict(groups, n)
        return FixReport(status=INCONSISTENT, conflict=conflict, rank=echelon.rank, **base)
    pivots = [p for p in echelon.pivots]
    pivot_set = set(pivots)
    free = tuple(params[k] for k in range(n) if k not in pivot_set)
    solution: Dict[str, Fraction] = {}
    dependent: Dict[str, Affine] = {}
    for col, row in echelon.solution_rows():
        deps = {params[f]: -q for f, q in sorted(row.items()) if f < n and q}
        const = row.get(n, Fraction(0))
        if deps:
            dependent[params[col]] = (const, deps)
        else:
            solution[params[col]] = const
    # keep the parameters' own order
    solution = {p: solution[p] for p in params if p in solution}
    dependent = {p: dependent[p] for p in params if p in dependent}
    substitution: Dict[str, Affine] = {name: (v, {}) for name, v in solution.items()}
    substitution.update(dependent)
    fixed = _substitute_expansion(expansion, substitution)
    report = check(fixed, items, digits=digits, store=store)
    status = UNIQUE if not free else UNDERDETERMINED
    depending, suggestions, unfixable = _suggest(fixed) if free else ((), (), ())
    further_results: List[Tuple[str, Optional[int], str]] = []
    residue_suggestions: Tuple[str, ...] = ()
    if has_poles:
        affine = _affine_map(params, substitution, free)
        for cond in further:
            further_results.append((cond.label, cond.level, _rows_status(_pole_rows(cond, n, params), affine, n)))
        if free:
            residue_suggestions = _suggest_residues(poles, affine, n, params, len(free))
    return FixReport(
        status=status,
        solution=solution,
        dependent=dependent,
        free=free,
        rank=echelon.rank,
        depending=depending,
        suggestions=suggestions,
        unfixable=unfixable,
        fixed=fixed,
        check=report,
        further=further_results,
        residue_suggestions=residue_suggestions,
        **base,
    )


AffineMap = List[Tuple[Fraction, Dict[int, Fraction]]]


def _affine_map(params: Sequence[str], substitution: Dict[str, Affine], free: Sequence[str]) -> AffineMap:
    """Every parameter as ``(constant, {index of a free parameter: coefficient})``."""
    index = {name: k for k, name in enumerate(free)}
    out: AffineMap = []
    for name in params:
        if name in substitution:
            const, deps = substitution[name]
            out.append((const, {index[f]: q for f, q in deps.items() if q}))
        else:
            out.append((Fraction(0), {index[name]: Fraction(1)}))
    return out


def _apply(row: Dict[int, Fraction], affine: AffineMap, n: int) -> Tuple[Fraction, Dict[int, Fraction]]:
    """A row ``Σ q_i a_i = rhs`` at the solution: ``(value of Σ q_i a_i − rhs, free part)``."""
    const = -row.get(n, Fraction(0))
    part: Dict[int, Fraction] = {}
    for col, q in row.items():
        if col == n:
            continue
        c, deps = affine[col]
        const += q * c
        for f, d in deps.items():
            part[f] = part.get(f, Fraction(0)) + q * d
    return const, {f: q for f, q in part.items() if q}


def _rows_status(rows, affine: AffineMap, n: int) -> str:
    """PASS (every row holds at the solution), FAIL (some row fails whatever the
    free parameters), DEPENDS (on free parameters)."""
    status = "PASS"
    for row in rows:
        const, part = _apply(row, affine, n)
        if not part and const:
            return "FAIL"
        if part:
            status = "DEPENDS"
    return status


def _suggest_residues(poles, affine: AffineMap, n: int, params: Sequence[str], nfree: int) -> Tuple[str, ...]:
    """A greedy smallest set of pole-numerator coefficients that would fix the free parameters.

    Candidates in a fixed order (level, order, power); a candidate is kept when
    one of its rows over the free parameters is independent of the rows of
    all candidates before it (one product and one rref modulo a 61-bit prime,
    :func:`.linalg.greedy_independent_image`; advice only, see there),
    until the kept rows reach the number of free parameters.
    """
    labels: List[str] = []
    owner: List[int] = []
    raw_rows: List[Dict[int, Fraction]] = []
    # poles in s, t, then (sphere integrands) in u = -s-t with numerators in s: v = 2
    places = {key: orders for key, orders in poles.poles.items()}
    places.update({(2, p): orders for p, orders in (getattr(poles, "u_poles", None) or {}).items()})
    for (v, p) in sorted(places, key=lambda k: (abs(k[1]), k[0])):
        for k in sorted(places[(v, p)], reverse=True):
            for power in sorted(places[(v, p)][k]):
                pp = places[(v, p)][k][power]
                cond = Condition("", "", "pole", None, None, [("", pp)])
                rows = [r for r in _pole_rows(cond, n, params) if any(c != n for c in r)]
                if not rows:
                    continue
                var, other = ("s", "t") if v == 0 else (("t", "s") if v == 1 else ("u", "s"))
                mono = "1" if power == 0 else (other if power == 1 else f"{other}^{power}")
                labels.append(f"numerator of 1/({var}-{fraction_text(p)})^{k}, coefficient of {mono}")
                for r in rows:
                    owner.append(len(labels) - 1)
                    raw_rows.append(r)
    # the free part of each row at the solution: Σ_col row[col] · (dependence of parameter col on the free ones)
    columns = [deps for _, deps in affine]
    chosen: List[str] = []
    rank = 0
    last = -1
    for j in greedy_independent_image(raw_rows, columns, nfree):
        rank += 1
        if owner[j] != last:
            chosen.append(labels[owner[j]])
            last = owner[j]
        if rank == nfree:
            break
    return tuple(chosen)


def _suggest(fixed: Expansion) -> Tuple[Tuple[str, ...], Tuple[str, ...], Tuple[str, ...]]:
    """Coefficients depending on the free parameters; a greedy fixing set; unfixable parameters.

    The greedy choice keeps a coefficient when one of its rational rows (one
    per canonical MZV monomial, over the free parameters) is independent of
    the rows kept so far (:class:`IncrementalBasis`); a free parameter is
    fixable when the reduced form of all kept rows has a row that is 1 at it
    and 0 elsewhere.
    """
    params = fixed.parameters
    n = len(params)
    depending: List[str] = []
    suggestions: List[str] = []
    basis = IncrementalBasis()
    kept: List[Dict[int, Fraction]] = []
    for key in fixed.monomials():
        pp = fixed.coefficients.get(key, {})
        if not any(any(pe) and x for pe, x in pp.items()):
            continue
        name = f"c[{key[0]},{key[1]}]"
        depending.append(name)
        if basis.rank >= n:
            continue
        rows: Dict[tuple, Dict[int, Fraction]] = {}
        for pe, x in pp.items():
            if sum(pe) == 1:
                col = pe.index(1)
                for mono, q in x.as_dict().items():
                    row = rows.setdefault(mono, {})
                    row[col] = row.get(col, Fraction(0)) + q
        new = [r for r in rows.values() if any(r.values()) and basis.add(r)]
        if new:
            suggestions.append(name)
            kept.extend(new)
    echelon = Echelon(n + 1)
    echelon.add(kept)
    fixable = set()
    for col, row in echelon.solution_rows():
        if not any(q for c, q in row.items() if c < n):
            fixable.add(col)
    unfixable = tuple(params[k] for k in range(n) if k not in fixable)
    return tuple(depending), tuple(suggestions), unfixable


# ==========================================================================
# substitution
# ==========================================================================

QPoly = Dict[Tuple[int, ...], Fraction]


def _normalize(parameters: Sequence[str], solution) -> Dict[str, Affine]:
    """``{name: (constant, {remaining name: coefficient})}`` from a mapping or a FixReport."""
    if isinstance(solution, FixReport):
        if solution.status == INCONSISTENT:
            raise InputError(
                "the constraints are inconsistent: there is no solution to substitute",
                hint="conflicting constraints: " + ", ".join(solution.conflict),
            )
        mapping: Dict[str, Affine] = solution.substitution
    elif isinstance(solution, Mapping):
        mapping = {}
        for name, value in solution.items():
            if isinstance(value, bool) or not isinstance(value, (int, Fraction)):
                raise InputError(
                    f"the value of parameter '{name}' must be an exact rational, not {type(value).__name__}",
                    term=str(name),
                    hint="use int or fractions.Fraction",
                )
            mapping[name] = (Fraction(value), {})
    else:
        raise InputError(
            f"a solution must be a mapping of parameter names to rationals or a FixReport, not {type(solution).__name__}"
        )
    for name, (_, deps) in mapping.items():
        if name not in parameters:
            raise InputError(
                f"unknown parameter '{name}'",
                term=str(name),
                hint="the parameters are: " + (", ".join(parameters) or "(none)"),
            )
        for other in deps:
            if other not in parameters or other in mapping:
                raise InputError(f"parameter '{name}' is expressed through '{other}', which is not a free parameter")
    return mapping


class _Substituter:
    def __init__(self, parameters: Sequence[str], mapping: Dict[str, Affine]) -> None:
        self.parameters = tuple(parameters)
        self.remaining = tuple(p for p in parameters if p not in mapping)
        index = {p: k for k, p in enumerate(self.remaining)}
        m = len(self.remaining)
        self.zero = (0,) * m
        self.polys: Dict[str, QPoly] = {}
        for name, (const, deps) in mapping.items():
            poly: QPoly = {self.zero: Fraction(const)} if const else {}
            for other, q in deps.items():
                key = tuple(1 if k == index[other] else 0 for k in range(m))
                if q:
                    poly[key] = poly.get(key, Fraction(0)) + Fraction(q)
            self.polys[name] = poly
        self.index = index
        self._powers: Dict[Tuple[str, int], QPoly] = {}

    def power(self, name: str, e: int) -> QPoly:
        key = (name, e)
        if key not in self._powers:
            result: QPoly = {self.zero: Fraction(1)}
            for _ in range(e):
                result = poly_mul(result, self.polys[name])
            self._powers[key] = result
        return self._powers[key]

    def poly(self, poly: Dict[tuple, MZV], prefix: int) -> Dict[tuple, MZV]:
        out: Dict[tuple, MZV] = {}
        for key, x in poly.items():
            if not x:
                continue
            head, pe = key[:prefix], key[prefix:]
            acc: QPoly = {self.zero: Fraction(1)}
            shift = [0] * len(self.remaining)
            for name, e in zip(self.parameters, pe):
                if not e:
                    continue
                if name in self.polys:
                    acc = poly_mul(acc, self.power(name, e))
                else:
                    shift[self.index[name]] += e
            for k, q in acc.items():
                add_term(out, head + tuple(a + b for a, b in zip(k, shift)), x * q)
        return out


def _fixed_note(mapping: Dict[str, Affine]) -> Dict[str, str]:
    return {name: _affine_text(aff) for name, aff in mapping.items()}


def _substitute_expansion(expansion: Expansion, mapping: Dict[str, Affine]) -> Expansion:
    sub = _Substituter(expansion.parameters, mapping)
    coefficients = {}
    for key, pp in expansion.coefficients.items():
        new = sub.poly(pp, 0)
        if new:
            coefficients[key] = new
    # the U-channel rows of sphere expansions carry the same parameter keys
    u_poles = {}
    for key, pp in (getattr(expansion, "u_poles", None) or {}).items():
        new = sub.poly(pp, 0)
        if new:
            u_poles[key] = new
    meta = dict(expansion.meta)
    meta["fixed"] = {**meta.get("fixed", {}), **_fixed_note(mapping)}
    return dataclasses.replace(expansion, parameters=sub.remaining, coefficients=coefficients, meta=meta,
                               u_poles=u_poles)


def _substitute_integrand(integrand: Integrand, mapping: Dict[str, Affine]) -> Integrand:
    sub = _Substituter(integrand.parameters, mapping)
    terms = []
    for term in integrand.terms:
        new = sub.poly(term.coefficient, 2)
        if new:
            terms.append(dataclasses.replace(term, coefficient=new))
    extra = dict(integrand.extra)
    extra["fixed"] = {**extra.get("fixed", {}), **_fixed_note(mapping)}
    return dataclasses.replace(integrand, terms=terms, parameters=sub.remaining, extra=extra)


def substitute(target: Union[Expansion, Integrand], solution) -> Union[Expansion, Integrand]:
    """Put parameter values into an expansion or an integrand.

    ``solution`` is ``{name: int | Fraction}`` or a :class:`FixReport` (whose
    solved and dependent parameters are substituted; free ones stay).  The
    substituted parameters disappear from ``parameters``; the values are
    recorded in ``meta["fixed"]`` (expansion) or ``extra["fixed"]``
    (integrand).  Expanding commutes with substituting.
    """
    if isinstance(target, Expansion):
        return _substitute_expansion(target, _normalize(target.parameters, solution))
    if isinstance(target, Integrand):
        return _substitute_integrand(target, _normalize(target.parameters, solution))
    raise TypeError(f"substitute needs an Expansion or an Integrand, not {type(target).__name__}")


# ==========================================================================
# writing the fixed integrand file
# ==========================================================================

def _term_sums(itg: Integrand) -> Dict[tuple, Dict[tuple, MZV]]:
    out: Dict[tuple, Dict[tuple, MZV]] = {}
    for term in itg.terms:
        key = (term.x_exp, term.y_exp, tuple(term.word))
        slot = out.setdefault(key, {})
        add_into(slot, term.coefficient)
    return {k: v for k, v in out.items() if v}


def write_fixed_integrand(source_toml_text, solution, *, source: str = "<integrand>", store=None) -> str:
    """A new integrand TOML text with the solved parameters put in.

    ``solution`` is ``{name: int | Fraction}`` or a :class:`FixReport`.  See
    the module docstring for what changes; the original text is first read
    with the integrand reader (so its errors are reported as usual), and the
    result is read back and compared exactly with
    ``substitute(original, solution)``.
    """
    from ..integrand.reader import integrand_from_text

    original = integrand_from_text(source_toml_text, source, store=store)
    mapping = _normalize(original.parameters, solution)
    text = source_toml_text.decode("utf-8-sig") if isinstance(source_toml_text, (bytes, bytearray)) else source_toml_text
    if text.startswith("\ufeff"):
        text = text[1:]
    line = ""
    if mapping:
        line = "Parameters fixed by lowenergy: " + ", ".join(f"{k} = {_affine_text(v)}" for k, v in mapping.items())
    new_text = rewrite_toml(text, mapping, line)
    try:
        rewritten = integrand_from_text(new_text, source, store=store)
    except LowEnergyError as err:  # pragma: no cover - would be a bug in the textual substitution
        raise InputError(
            f"the fixed integrand could not be read back: {err.message}",
            source=source,
            hint="report this; substitute() on the integrand still works",
        ) from None
    expected = _substitute_integrand(original, mapping)
    if _term_sums(rewritten) != _term_sums(expected) or tuple(rewritten.parameters) != tuple(expected.parameters):
        raise InputError(  # pragma: no cover - would be a bug in the textual substitution
            "the textual substitution does not reproduce the substituted integrand",
            source=source,
            hint="report this; substitute() on the integrand still works",
        )
    return new_text
