"""The safe reader of integrand files.

An integrand file is a small TOML document; the smallest valid one is::

    integrand = "x^(-s-1)*(1-x)^(-t-1)"

Keys (exactly these; anything else is an :class:`~lowenergy.errors.InputError`
naming the key, with a did-you-mean hint):

``integrand`` (string, required)
    The integrand, in the expression grammar of :mod:`lowenergy.parse`.  It
    may be a multi-line string (``\"\"\"...\"\"\"``): line breaks inside it are
    blanks, and error messages still point at the line and column in the file.
``title``, ``notes``, ``provenance`` (strings)
    Free text.
``variables`` (list of two distinct names, default ``["s", "t"]``)
    The two expansion variables.
``integration_variable`` (name, default ``"x"``)
``parameters`` (list of distinct names, default ``[]``)
    Free rational parameters; they may appear polynomially.

Names are identifiers (letters, digits, ``_``; not starting with a digit),
pairwise distinct and none of the reserved names ``zeta pi G Li log``.

What an integrand may contain (``x``, ``s``, ``t`` stand for the names chosen
in the file):

* rationals and decimals, ``+ - * /  ^`` and parentheses; ``s``, ``t`` and the
  parameters polynomially (division only by non-zero rationals, and by the
  factors below);
* MZVs: ``zeta(n1, ..., nk)`` (convergent, ``n1 ≥ 2``), ``G(a1, ..., an; 1)``
  (shuffle-regularized) and ``pi`` in even total powers per term;
* the factors ``x^(e)`` and ``(1-x)^(e)`` where ``e`` is an integer plus a
  rational multiple of *one* expansion variable (``x^(-s-1)``, ``x^(2*s-1)``,
  ``(1-x)^(-t)``, ``x^2``, ``x^(-1)``); bare ``x`` and ``(1-x)``; after
  multiplying out, each exponent may still contain only one of ``s``, ``t``
  (``x^s*x^t`` is refused);
* ``log(x)``, ``log(1-x)``, ``Li(n, x)``, ``Li(n, 1-x)`` (integer ``n ≥ 1``),
  ``G(a1, ..., an; x)`` and ``G(a1, ..., an; 1-x)`` (letters 0 and 1);
  ``svpolylog(a1, ..., an; x)``: Brown's single-valued polylogarithm L_w restricted
  to 0 < x < 1 (z = z̄ = x), weight ≤ 8 (:mod:`lowenergy.svpolylog`), and
  ``svpolylog(a1, ..., an; 1-x)`` (L_w at 1 - x, rewritten in ``G(u; x)``);
* products and non-negative integer powers of all these; products of sums
  are expanded.

``x`` may appear nowhere else: not in exponents, not in other functions
(``sin(x)``, ``log(2*x)``), not as a non-integer power (``x^(1/2)``), and a
bare ``x`` (or ``-x``) may not be an operand of ``+`` or ``-`` except in
``1-x`` (also written ``-x+1``): ``x+1``, ``1+x``, ``x-1`` and ``(1+x)^2``
are refused, since a binomial such as ``1+x`` (letter −1) is outside the
alphabet {0, 1}.  A polynomial in ``x`` can still be written with explicit
products or powers, ``1 + 2*x + x^2`` or ``1 + x^1``.

The exponents of ``x`` and of ``1-x`` may use different variables or the
same one (``x^(-s-1)*(1-x)^(-s-1)``, ``(x*(1-x))^(-s)`` and ``x^(-t)`` are
fine).  Division by a non-zero rational times ``x^a (1-x)^b`` is allowed
(``x^(-s)/x``); division by anything containing ``s``, ``t``, a parameter,
an MZV, a function or a sum is refused.

Conversions (all exact): ``log(x) = G(0; x)``, ``log(1-x) = G(1; x)``,
``Li_n(x) = -G(0^(n-1), 1; x)``; products of G-words are shuffled into single
words; ``G(w; 1-x)`` is rewritten in ``G(u; x)`` by
:func:`lowenergy.integrand.transform.g_of_one_minus_x`.

Sphere integrands
-----------------
``domain = "sphere"`` (default ``"interval"``) selects
``(1/π) ∫_C d²z ...`` over the complex plane, ``d²z = d(Re z) d(Im z)``;
the integration variable defaults to ``z``.  The integrand may then contain
``abs(z)^(e)`` and ``abs(1-z)^(e)`` with ``e`` an *even* integer plus a
rational multiple of one expansion variable (the 2 written out:
``abs(z)^(-2*s-2)``), ``log(abs(z))``, ``log(abs(1-z))``,
``svpolylog(a1, ..., an; z)`` (Brown's L_w(z), letters 0 and 1) and
``svpolylog(a1, ..., an; 1-z)`` (rewritten as a combination of L_u(z)),
polynomials in the variables and parameters and MZV constants.  Terms are
stored with ``x_exp``/``y_exp`` the exponents of ``|z|²`` and ``|1-z|²`` and
``word`` the L-word (``L_u L_v = L_{u ш v}``; ``log|z|² = L_0``,
``log|1-z|² = L_1``).  Refused with file, line and term: the interval
syntax (``z^(e)``, ``(1-z)^(e)``, ``log(z)``, ``G(...; z)``, ``Li(n, z)``,
which are multivalued on the sphere), a bare ``abs(z)`` or an odd power of
it, and ``abs`` in an interval file.

Hard limits (:class:`~lowenergy.errors.InputError`): integer exponents,
exponent shifts and the coefficient of ``s`` or ``t`` in an exponent up to
:data:`MAX_EXPONENT` in absolute value, at most
:data:`MAX_TERMS` terms in any intermediate or final result, words of length
at most :data:`MAX_WORD_LENGTH`, files of at most :data:`MAX_FILE_SIZE` bytes, and
at most :data:`MAX_WORK` multiplications of terms while expanding one integrand.

Nothing is evaluated as Python code: TOML is read by :mod:`tomllib`, the
expression by the hand-written parser, and the tree is walked iteratively.

Examples
--------
>>> itg = integrand_from_text('integrand = "x^(-s-1)*(1-x)^(-t-1)"')
>>> [(t.x_exp, t.y_exp, t.word) for t in itg.terms]   # doctest: +NORMALIZE_WHITESPACE
[(LinearExponent(shift=-1, coeff=Fraction(-1, 1), var=0),
  LinearExponent(shift=-1, coeff=Fraction(-1, 1), var=1), ())]
>>> terms = terms_from_expression("log(x)^2/2 - s*x")
>>> [(t.x_exp.shift, t.word, sorted(t.coefficient)) for t in terms]
[(0, (0, 0), [(0, 0)]), (1, (), [(1, 0)])]
"""

from __future__ import annotations

import difflib
import re
from fractions import Fraction
from math import comb
from typing import Dict, List, Optional, Sequence, Tuple

from ..errors import InputError, LowEnergyError, RegularizationError
from ..words import shuffle
from ..parse import Call, Neg, Node, Num, Pow, Product, Rules, Sum, Sym, children, evaluate, parse_expression, to_text
from ..poly import add_into, add_term
from .. import tomlpos
from ..limits import (
    MAX_EXPONENT,
    MAX_SUMMANDS,
    MAX_TERMS,
    MAX_TOML_BYTES,
    MAX_WORD_LENGTH,
    MAX_INTEGRAND_WORK as MAX_WORK,
    check_rational,
)
from ..zeta.element import MZV, g_value, zeta
from ..zeta.expression import zeta_indices
from ..zeta.table import TableStore, default_store
from .model import Integrand, LinearExponent, Term
from .transform import g_of_one_minus_x, require_weight

__all__ = [
    "read_integrand",
    "integrand_from_text",
    "terms_from_expression",
    "ALLOWED_KEYS",
    "RESERVED_NAMES",
    "MAX_EXPONENT",
    "MAX_TERMS",
    "MAX_WORD_LENGTH",
    "MAX_FILE_SIZE",
    "MAX_WORK",
    "DOMAINS",
]

#: The keys an integrand file may have.
ALLOWED_KEYS = (
    "integrand",
    "title",
    "variables",
    "integration_variable",
    "parameters",
    "notes",
    "provenance",
    "domain",
)
#: The integration domains: the interval 0 < x < 1 and the Riemann sphere.
DOMAINS = ("interval", "sphere")
#: Names that may not be used for variables or parameters.
RESERVED_NAMES = frozenset({"zeta", "pi", "G", "Li", "log", "svpolylog", "abs"})

# Single-valued polylogarithms L_w(x) (Brown 2004) are available to this weight.
MAX_SV_WEIGHT = 8
# The budgets live in lowenergy/limits.py (documented there); the old names
# stay importable from here.
MAX_FILE_SIZE = MAX_TOML_BYTES

_TEXT_LIMIT = 60
_IDENTIFIER = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")
_HINT_EXAMPLE = 'integrand = "x^(-s-1)*(1-x)^(-t-1)"'


def _short(text: str, limit: int = _TEXT_LIMIT) -> str:
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _node_text(node: Node) -> str:
    return _short(to_text(node))


# ==========================================================================
# public entry points
# ==========================================================================


def read_integrand(path, *, store: TableStore | None = None) -> Integrand:
    """Read an integrand file (TOML; see the module docstring).

    Raises only subclasses of :class:`~lowenergy.errors.LowEnergyError`:
    :class:`~lowenergy.errors.InputError` for unreadable files, unknown keys,
    wrong types and unsupported integrands, :class:`~lowenergy.errors.ParseError`
    for malformed TOML or expressions,
    :class:`~lowenergy.errors.RegularizationError` for divergent MZVs and
    :class:`~lowenergy.errors.TableError` when an MZV weight beyond the buildable tables is needed.
    """
    source, raw = tomlpos.read_file(path, "an integrand file", MAX_FILE_SIZE)
    return integrand_from_text(raw, source=source, store=store)


def integrand_from_text(
    toml_text, source: str = "<string>", *, store: TableStore | None = None
) -> Integrand:
    """Read an integrand from TOML text (``str``, or UTF-8 ``bytes``)."""
    text = tomlpos.decode_toml_text(
        toml_text, source, what="integrand", max_size=MAX_FILE_SIZE, size_hint="integrand files are small"
    )
    data = tomlpos.load_toml(text, source, f"an integrand file is TOML, e.g. {_HINT_EXAMPLE}")
    layout = _scan_toml(text)

    def where(key: str) -> Optional[int]:
        return layout.lines.get(key)

    for key in data:
        if key not in ALLOWED_KEYS:
            close = difflib.get_close_matches(key, ALLOWED_KEYS, n=1, cutoff=0.6)
            hint = f"did you mean '{close[0]}'? " if close else ""
            hint += "allowed keys: " + ", ".join(ALLOWED_KEYS)
            raise InputError(
                f"unknown key '{_short(key, 40)}'", source=source, line=where(key), term=_short(key, 40), hint=hint
            )
    if "integrand" not in data:
        raise InputError(
            "missing required key 'integrand'", source=source, hint=f"add a line such as {_HINT_EXAMPLE}"
        )

    def string(key: str, default: str) -> str:
        value = data.get(key, default)
        if not isinstance(value, str):
            raise InputError(
                f"'{key}' must be a string, not {tomlpos.toml_type(value)}",
                source=source,
                line=where(key),
                term=key,
                hint=f'write {key} = "..."',
            )
        return value

    integrand_text = string("integrand", "")
    title = string("title", "")
    notes = string("notes", "")
    provenance = string("provenance", "")
    domain = string("domain", "interval")
    if domain not in DOMAINS:
        raise InputError(
            f"unknown domain '{_short(domain, 40)}'",
            source=source,
            line=where("domain"),
            term="domain",
            hint='write domain = "interval" (0 < x < 1, the default) or domain = "sphere" (the complex plane)',
        )
    xname = string("integration_variable", "z" if domain == "sphere" else "x")
    _check_name(xname, "integration_variable", source, where("integration_variable"))

    variables = data.get("variables", ["s", "t"])
    if not isinstance(variables, list):
        raise InputError(
            f"'variables' must be a list of two names, not {tomlpos.toml_type(variables)}",
            source=source,
            line=where("variables"),
            term="variables",
            hint='write variables = ["s", "t"]',
        )
    if len(variables) != 2:
        raise InputError(
            f"'variables' must list exactly two names, found {len(variables)}",
            source=source,
            line=where("variables"),
            term="variables",
            hint='write variables = ["s", "t"]',
        )
    for name in variables:
        _check_name(name, "variables", source, where("variables"))

    parameters = data.get("parameters", [])
    if not isinstance(parameters, list):
        raise InputError(
            f"'parameters' must be a list of names, not {tomlpos.toml_type(parameters)}",
            source=source,
            line=where("parameters"),
            term="parameters",
            hint='write parameters = ["a", "b"]',
        )
    for name in parameters:
        _check_name(name, "parameters", source, where("parameters"))

    seen: Dict[str, str] = {}
    for key, names in (("variables", variables), ("parameters", parameters), ("integration_variable", [xname])):
        for name in names:
            if name in seen:
                other = seen[name]
                message = (
                    f"'{name}' appears twice in '{key}'"
                    if other == key
                    else f"'{name}' is used both in '{other}' and in '{key}'"
                )
                raise InputError(
                    message, source=source, line=where(key), term=name, hint="all names must be distinct"
                )
            seen[name] = key

    key_line = where("integrand")
    positions = tomlpos.string_positions(text, layout.values.get("integrand"), integrand_text)
    terms = terms_from_expression(
        integrand_text,
        variables=tuple(variables),
        parameters=tuple(parameters),
        xname=xname,
        source=source,
        line=key_line,
        positions=positions,
        store=store,
        domain=domain,
    )
    return Integrand(
        terms=terms,
        variables=(variables[0], variables[1]),
        parameters=tuple(parameters),
        integration_variable=xname,
        title=title,
        notes=notes,
        provenance=provenance,
        source=source,
        expression=integrand_text,
        domain=domain,
    )


def terms_from_expression(
    text: str,
    variables: Sequence[str] = ("s", "t"),
    parameters: Sequence[str] = (),
    xname: str = "x",
    *,
    source: Optional[str] = None,
    line: Optional[int] = None,
    positions: Optional[Sequence[Tuple[int, int]]] = None,
    store: TableStore | None = None,
    domain: str = "interval",
) -> List[Term]:
    """Turn an integrand expression into merged :class:`~lowenergy.integrand.model.Term` s.

    Parameters
    ----------
    text:
        The expression (see the module docstring).  Line breaks are blanks.
    variables, parameters, xname:
        Names of the two expansion variables, the free parameters and x.
    source, line:
        Where the text comes from (for messages): ``line`` is the line of its
        first character; later lines of a multi-line text are counted on.
    positions:
        Optional ``(line, column)`` in the file of every character of
        ``text`` (plus, optionally, one for the end of the text); overrides
        ``line``.
    store:
        MZV table store (default: the user's cache).
    domain:
        ``"interval"`` or ``"sphere"`` (see the module docstring).

    Returns
    -------
    Terms merged by ``(x_exp, y_exp, word)``, zero terms dropped, in the
    order of first appearance.  Coefficient keys are exponent tuples
    ``(s, t, params...)``.
    """
    if not isinstance(text, str):
        raise InputError(f"the integrand must be a string, not {type(text).__name__}", source=source, line=line)
    variables = tuple(variables)
    parameters = tuple(parameters)
    if len(variables) != 2:
        raise InputError("exactly two expansion variables are needed", source=source, line=line)
    names_seen: set = set()
    for role, names in (("variables", variables), ("parameters", parameters), ("integration_variable", (xname,))):
        for name in names:
            _check_name(name, role, source, line)
            if name in names_seen:
                raise InputError(f"the name '{name}' is used twice", source=source, line=line, term=name)
            names_seen.add(name)
    joined, mapping = _join_lines(text, line, positions)

    def locate(err: LowEnergyError) -> LowEnergyError:
        if err.source is None:
            err.source = source
        if err.column is not None and mapping is not None:
            err.line, err.column = mapping(err.column)
        elif err.line is None:
            err.line = line if positions is None or not positions else positions[0][0]
        return err

    try:
        tree = parse_expression(joined)
    except LowEnergyError as err:
        raise locate(err) from None
    evaluator_class = _SphereEvaluator if domain == "sphere" else _Evaluator
    evaluator = evaluator_class(variables, parameters, xname, store or default_store())
    merged: Dict[tuple, list] = {}
    total = 0
    try:
        summands = _summands(tree, evaluator)
        if len(summands) > MAX_SUMMANDS:
            # each summand costs about 0.1 ms: refuse before evaluating any
            raise InputError(
                f"the integrand has {len(summands)} top-level terms, more than {MAX_SUMMANDS}",
                column=1,
                hint="collect equal terms or split the integrand into several files",
            )
        for summand, sign in summands:
            value = evaluator.evaluate(summand)
            summand_line = None
            if mapping is not None and summand.col is not None:
                summand_line = mapping(summand.col)[0]
            elif mapping is None:
                summand_line = line
            snippet = _node_text(summand)
            for key, poly in evaluator.finish(value, summand).items():
                slot = merged.get(key)
                if slot is None:
                    merged[key] = slot = [{}, summand_line, snippet]
                target = slot[0]
                before = len(target)
                add_into(target, poly, 1 if sign > 0 else -1)
                total += len(target) - before
                if total > MAX_TERMS:
                    raise InputError(
                        f"the integrand has more than {MAX_TERMS} terms",
                        column=summand.col,
                        term=snippet,
                        hint="split the computation",
                    )
    except LowEnergyError as err:
        raise locate(err) from None
    terms: List[Term] = []
    for (xe, ye, word), (poly, summand_line, snippet) in merged.items():
        if not poly:
            continue
        terms.append(
            Term(
                coefficient=poly,
                x_exp=_linear(xe),
                y_exp=_linear(ye),
                word=word,
                source_line=summand_line,
                text=snippet,
            )
        )
    return terms


# ==========================================================================
# TOML helpers
# ==========================================================================


def _check_name(name, key: str, source, line) -> None:
    if not isinstance(name, str):
        raise InputError(
            f"'{key}' must contain names (strings), found {tomlpos.toml_type(name)}",
            source=source,
            line=line,
            term=key,
            hint='names are written in quotes, e.g. "s"',
        )
    if not _IDENTIFIER.match(name):
        raise InputError(
            f"'{_short(name, 40)}' in '{key}' is not a valid name",
            source=source,
            line=line,
            term=_short(name, 40),
            hint="names consist of letters, digits and _ and do not start with a digit",
        )
    if name in RESERVED_NAMES:
        raise InputError(
            f"'{name}' in '{key}' is a reserved name",
            source=source,
            line=line,
            term=name,
            hint="choose a name other than " + ", ".join(sorted(RESERVED_NAMES)),
        )


class _Layout:
    """Where top-level keys are: ``lines[key]`` and ``values[key]`` (offset of the value)."""

    def __init__(self) -> None:
        self.lines: Dict[str, int] = {}
        self.values: Dict[str, int] = {}


_HEADER = re.compile(rf"[ \t]*\[\[?[ \t]*({tomlpos.KEY_PART})")


def _scan_toml(text: str) -> _Layout:
    """Find the lines of top-level keys and table headers, and the offsets
    of the values of top-level keys (see :func:`lowenergy.tomlpos.scan_lines`).

    Only used for messages; the document itself is read by tomllib.
    """
    layout = _Layout()
    in_table = False

    def visit(offset: int, line: int) -> Optional[int]:
        nonlocal in_table
        header = _HEADER.match(text, offset)
        if header:
            in_table = True
            layout.lines.setdefault(tomlpos.key_name(header.group(1)), line)
            return header.end()
        key = tomlpos.KEY_LINE.match(text, offset)
        if key:
            if not in_table:
                name = tomlpos.key_name(key.group(1))
                if name not in layout.lines:
                    layout.lines[name] = line
                    layout.values[name] = key.end()
            return key.end()
        return None

    tomlpos.scan_lines(text, visit)
    return layout


def _join_lines(text: str, line: Optional[int], positions):
    """The one-line expression and a map from its columns to (line, column).

    Line breaks become blanks (``\\r\\n`` becomes two).  Returns
    ``(joined, mapping)``; ``mapping`` is None when nothing is known
    about the location.
    """
    joined = text.replace("\r", " ").replace("\n", " ")
    if positions is not None:
        pos = list(positions)
        if not pos:
            return joined, None

        def mapping(column: int) -> Tuple[Optional[int], Optional[int]]:
            return tomlpos.position_at(pos, column)

        return joined, mapping
    if line is None:
        return joined, None
    # map columns of a multi-line text with first line ``line``
    lines = tomlpos.LineIndex(text)

    def mapping(column: int) -> Tuple[Optional[int], Optional[int]]:
        row, col = lines.spot(max(column, 1) - 1)
        if row == 1:
            return line, column
        return line + row - 1, col

    return joined, mapping


# ==========================================================================
# the expression evaluator
# ==========================================================================

# Internal exponent of x or 1-x: (shift, coefficient, variable index or None).
_Exp = Tuple[int, Fraction, Optional[int]]
_ZERO_EXP: _Exp = (0, Fraction(0), None)
# Key of an intermediate term: (exponent of x, exponent of 1-x, word)
_Key = Tuple[_Exp, _Exp, Tuple[int, ...]]
# Coefficient: {(power of pi, exponents of s, t, params..., MZV monomial): rational}.
# MZVs are kept flat as monomials in the generators of the canonical basis
# (as in MZV.as_dict()); products of canonical monomials are canonical, so
# the arithmetic is plain Fraction arithmetic until the end (much faster
# than MZV objects in the inner loops).
_CoefKey = Tuple[int, Tuple[int, ...], tuple]
_Coef = Dict[_CoefKey, Fraction]
_Value = Dict[_Key, _Coef]


def _at_one_minus_x(combination: Dict[Tuple[int, ...], MZV], store: TableStore) -> Dict[Tuple[int, ...], MZV]:
    """``Σ_u c_u G(u; 1-x)`` rewritten as ``Σ_v d_v G(v; x)`` (exact)."""
    out: Dict[Tuple[int, ...], MZV] = {}
    for u, c in combination.items():
        for v, d in g_of_one_minus_x(u, store=store).items():
            out[v] = out.get(v, MZV()) + c * d
    return {v: c for v, c in out.items() if c}


def _gen_key(g: Tuple[int, ...]) -> tuple:
    return (sum(g), g)


def _mono_mul(a: tuple, b: tuple) -> tuple:
    if not a:
        return b
    if not b:
        return a
    return tuple(sorted(a + b, key=_gen_key))


def _linear(e: _Exp) -> LinearExponent:
    shift, coeff, var = e
    return LinearExponent(shift, coeff, var) if var is not None else LinearExponent(shift)


def _summands(tree: Node, evaluator: "_Evaluator"):
    """Top-level summands with their signs, left to right.

    Parenthesized sums among the terms are opened too (with their sign); a
    leading ``1 - x`` stays one summand.
    """
    out = []
    stack = [(tree, 1)]
    while stack:
        node, sign = stack.pop()
        if isinstance(node, Sum) and not _is_one_minus_x_shape(node, evaluator.xname):
            evaluator.check_sum(node)
            start = 2 if _has_one_minus_x_head(node, evaluator.xname) else 1
            parts = [(node.prefix(start - 1), sign)]
            parts += [(item, sign if op == "+" else -sign) for op, item in zip(node.ops[start - 1:], node.items[start:])]
            stack.extend(reversed(parts))
        else:
            out.append((node, sign))
    return out


def _is_one_minus_x_shape(node: Node, xname: Optional[str] = None) -> bool:
    """``1 - x`` or ``-x + 1``, the binomial of the alphabet {0, 1}."""
    def is_x(n: Node) -> bool:
        return isinstance(n, Sym) and (xname is None or n.name == xname)

    def is_one(n: Node) -> bool:
        return isinstance(n, Num) and n.value == 1

    if not isinstance(node, Sum) or len(node.items) != 2:
        return False
    first, second = node.items
    if node.ops == "-":
        return is_one(first) and is_x(second)
    return is_one(second) and isinstance(first, Neg) and is_x(first.operand)


def _has_one_minus_x_head(node: Sum, xname: Optional[str]) -> bool:
    """A longer sum starting with ``1 - x`` (or ``-x + 1``): ``1 - x + a`` is ``(1-x) + a``."""
    return len(node.items) > 2 and _is_one_minus_x_shape(node.prefix(1), xname)


class _ReaderRules(Rules):
    """:func:`lowenergy.parse.evaluate` driving an :class:`_Evaluator`.

    The operations keep their binary messages: an error of the k-th
    operation of a long product names the product up to that factor.
    """

    def __init__(self, evaluator: "_Evaluator") -> None:
        self.ev = evaluator

    def leaf(self, node: Node) -> Optional[_Value]:
        return self.ev.leaf(node)

    def head(self, node: Node) -> Optional[Tuple[int, _Value]]:
        return self.ev.head(node)

    def neg(self, value: _Value, node: Node) -> _Value:
        return self.ev.negate(value)

    def add(self, left: _Value, right: _Value, node: Node, k: int) -> _Value:
        return self.ev.add(left, right, 1)

    def sub(self, left: _Value, right: _Value, node: Node, k: int) -> _Value:
        return self.ev.add(left, right, -1)

    def mul(self, left: _Value, right: _Value, node: Product, k: int) -> _Value:
        try:
            return self.ev.mul(left, right, node)
        except LowEnergyError as err:
            raise _at_part(err, node, k) from None

    def div(self, left: _Value, right: _Value, node: Product, k: int) -> _Value:
        try:
            return self.ev.div(left, right, node, node.items[k])
        except LowEnergyError as err:
            raise _at_part(err, node, k) from None

    def power(self, base: _Value, exponent: _Value, node: Pow) -> _Value:
        return self.ev.power(base, exponent, node)


def _at_part(err: LowEnergyError, node: Product, k: int) -> LowEnergyError:
    """Name ``node.prefix(k)``, the product up to the k-th factor, in an error about ``node``."""
    if k < len(node.items) - 1 and err.term is not None and err.term == _node_text(node):
        err.term = _node_text(node.prefix(k))
    return err


class _Evaluator:
    def __init__(self, variables, parameters, xname: str, store: TableStore) -> None:
        self.variables = tuple(variables)
        self.parameters = tuple(parameters)
        self.xname = xname
        self.store = store
        self.nvars = 2 + len(self.parameters)
        self.zero_exps = (0,) * self.nvars
        self.names = {name: i for i, name in enumerate(self.variables + self.parameters)}
        self.work = 0

    # -- small constructors ------------------------------------------------------
    def flat(self, value: MZV, factor: int = 1, pi: int = 0) -> _Coef:
        return {(pi, self.zero_exps, mono): c * factor for mono, c in value.as_dict().items()}

    def const(self, value: MZV, pi: int = 0) -> _Value:
        if not value:
            return {}
        return {(_ZERO_EXP, _ZERO_EXP, ()): self.flat(value, pi=pi)}

    def rational(self, q: Fraction) -> _Value:
        if not q:
            return {}
        return {(_ZERO_EXP, _ZERO_EXP, ()): {(0, self.zero_exps, ()): Fraction(q)}}

    def words(self, combination: Dict[Tuple[int, ...], MZV], factor: int = 1) -> _Value:
        out: _Value = {}
        for word, c in combination.items():
            if c:
                out[(_ZERO_EXP, _ZERO_EXP, word)] = self.flat(c, factor)
        return out

    def fail(self, node: Node, message: str, hint: Optional[str] = None, cls=InputError) -> LowEnergyError:
        return cls(message, column=node.col, term=_node_text(node), hint=hint)

    # -- x patterns ----------------------------------------------------------------
    def x_argument(self, node: Node) -> Optional[str]:
        if isinstance(node, Sym) and node.name == self.xname:
            return "x"
        if _is_one_minus_x_shape(node, self.xname):
            return "1-x"
        return None

    def is_bare_x(self, node: Node) -> bool:
        while isinstance(node, Neg):
            node = node.operand
        return isinstance(node, Sym) and node.name == self.xname

    # -- evaluation ------------------------------------------------------------------
    def evaluate(self, tree: Node) -> _Value:
        """Evaluate a tree with :func:`lowenergy.parse.evaluate`."""
        return evaluate(tree, _ReaderRules(self))

    def one_minus_x(self) -> _Value:
        return {(_ZERO_EXP, (1, Fraction(0), None), ()): {(0, self.zero_exps, ()): Fraction(1)}}

    def leaf(self, node: Node) -> Optional[_Value]:
        """The value of a node that is evaluated as a whole, else None."""
        if isinstance(node, Num):
            return self.rational(node.value)
        if isinstance(node, Sym):
            return self.symbol(node)
        if isinstance(node, Call):
            return self.call(node)
        if isinstance(node, Sum):
            if _is_one_minus_x_shape(node, self.xname):
                return self.one_minus_x()
            self.check_sum(node)
        return None

    def head(self, node: Node) -> Optional[Tuple[int, _Value]]:
        """``1 - x + ...``: the binomial ``1 - x`` is one factor, then the other terms are added."""
        if isinstance(node, Sum) and _has_one_minus_x_head(node, self.xname):
            return 1, self.one_minus_x()
        return None

    def check_sum(self, node: Sum) -> None:
        """Refuse a bare x as a term of a sum (other than in 1-x).

        The message names the sum up to that term (the last such term is
        found first), as for a chain of binary ``+`` and ``-``.
        """
        items = node.items
        last = 1 if _has_one_minus_x_head(node, self.xname) else 0
        for k in range(len(items) - 1, last, -1):
            if self.is_bare_x(items[k]) or (k == 1 and self.is_bare_x(items[0])):
                raise self.added_x(node.prefix(k))

    def added_x(self, part: Node) -> LowEnergyError:
        x = self.xname
        return self.fail(
            part,
            f"{x} is added to other terms: the only binomial in {x} is (1-{x})",
            f"{x} enters through {x}^(e), (1-{x})^(e) and log, Li, G of {x} or 1-{x} "
            f"(the letter of e.g. 1+{x} is outside the alphabet {{0, 1}}); "
            f"for a polynomial in {x} write its monomials with explicit powers, e.g. 1 + {x}^1",
        )

    def symbol(self, node: Sym) -> _Value:
        name = node.name
        if name == self.xname:
            return {((1, Fraction(0), None), _ZERO_EXP, ()): {(0, self.zero_exps, ()): Fraction(1)}}
        if name in self.names:
            exps = [0] * self.nvars
            exps[self.names[name]] = 1
            return {(_ZERO_EXP, _ZERO_EXP, ()): {(0, tuple(exps), ()): Fraction(1)}}
        if name == "pi":
            return self.const(MZV.one(), pi=1)
        if name in ("zeta", "G", "Li", "log", "svpolylog"):
            example = {"zeta": "zeta(3)", "G": f"G(0,1; {self.xname})", "Li": f"Li(2, {self.xname})",
                       "svpolylog": f"svpolylog(0,1; {self.xname})"}
            raise self.fail(
                node,
                f"'{name}' is a function",
                f"write {example.get(name, f'log({self.xname})')}",
            )
        known = [self.xname, *self.variables, *self.parameters, "pi"]
        close = difflib.get_close_matches(name, known, n=1, cutoff=0.6)
        hint = f"did you mean '{close[0]}'? " if close else ""
        hint += "known names: " + ", ".join(known)
        if not self.parameters:
            hint += "; declare free parameters with parameters = [...]"
        raise self.fail(node, f"unknown symbol '{_short(name, 40)}'", hint)

    # -- functions -------------------------------------------------------------------
    def call(self, node: Call) -> _Value:
        name = node.name
        x = self.xname
        if name == "zeta":
            return self.zeta_call(node)
        if name == "log":
            if node.letters is not None or len(node.args) != 1:
                raise self.fail(node, "log takes one argument", f"write log({x}) or log(1-{x})")
            kind = self.x_argument(node.args[0])
            if kind is None:
                raise self.fail(
                    node,
                    f"only log({x}) and log(1-{x}) are supported",
                    "other logarithms are not functions of the alphabet {0, 1} or not MZVs",
                )
            return self.words({(0,) if kind == "x" else (1,): MZV.one()})
        if name == "Li":
            if node.letters is not None or len(node.args) != 2:
                raise self.fail(node, "Li takes two arguments, the weight and the argument", f"write Li(2, {x})")
            order = node.args[0]
            if not isinstance(order, Num) or order.value.denominator != 1 or order.value < 1:
                raise self.fail(order, "the weight n of Li(n, ...) must be a positive integer", f"write Li(2, {x})")
            n = int(order.value)
            if n > MAX_WORD_LENGTH:
                raise self.fail(order, f"Li of weight larger than {MAX_WORD_LENGTH}")
            kind = self.x_argument(node.args[1])
            if kind is None:
                raise self.fail(node.args[1], f"Li is supported only at {x} and 1-{x}", f"write Li({n}, {x})")
            word = (0,) * (n - 1) + (1,)
            return self.word_value(word, kind, node, factor=-1)
        if name == "G":
            if node.letters is None or len(node.args) != 1:
                raise self.fail(node, "G needs letters, ';' and one argument", f"write G(0,1; {x})")
            letters = self.letters(node)
            if len(letters) > MAX_WORD_LENGTH:
                raise self.fail(node, f"word longer than {MAX_WORD_LENGTH} letters")
            arg = node.args[0]
            if isinstance(arg, Num) and arg.value == 1:
                try:
                    if len(set(letters)) > 1:
                        require_weight(len(letters), self.store)
                    return self.const(g_value(tuple(letters), store=self.store))
                except LowEnergyError as err:
                    raise err.located(column=node.col, term=_node_text(node))
            kind = self.x_argument(arg)
            if kind is None:
                raise self.fail(arg, f"G is supported only at {x}, 1-{x} and 1", f"write G(0,1; {x})")
            return self.word_value(tuple(letters), kind, node)
        if name == "svpolylog":
            if node.letters is None or len(node.args) != 1:
                raise self.fail(node, "svpolylog needs letters, ';' and the argument", f"write svpolylog(0,1; {x})")
            letters = self.letters(node)
            if len(letters) > MAX_SV_WEIGHT:
                raise self.fail(node, f"single-valued polylogarithms are built up to weight {MAX_SV_WEIGHT}")
            kind = self.x_argument(node.args[0])
            if kind is None:
                raise self.fail(node.args[0], f"svpolylog is supported only at {x} and 1-{x}",
                                f"write svpolylog(0,1; {x})")
            from ..svpolylog.construct import real_line_restriction

            try:
                if letters:
                    require_weight(len(letters), self.store)
                combination = real_line_restriction(tuple(letters), store=self.store)
                if kind == "1-x":
                    # L_w(1-x) = Σ_u c_u G(u; 1-x): the restriction is an identity of
                    # functions on 0 < x < 1, so substitute x -> 1-x word by word.
                    combination = _at_one_minus_x(combination, self.store)
            except LowEnergyError as err:
                raise err.located(column=node.col, term=_node_text(node))
            return self.words(combination)
        if name == x or name in self.names or name == "pi":
            raise self.fail(node, f"'{name}' is not a function", f"write {name}*(...) for a product")
        if name == "abs":
            raise self.fail(node, "abs(...) belongs to sphere integrands",
                            'add domain = "sphere" to the file for (1/pi) * integral over the complex plane; '
                            f"on the interval write {x}^(e) and (1-{x})^(e)")
        if name.lower() == "lsv":
            raise self.fail(node, f"the spelling '{name}' is not used by lowenergy",
                            f"write svpolylog(...; {x}) for Brown's single-valued polylogarithm")
        known = ["zeta", "log", "Li", "G", "svpolylog"]
        aliases = {"ln": f"log({x})", "Li2": f"Li(2, {x})", "Li3": f"Li(3, {x})", "polylog": f"Li(2, {x})"}
        if name in aliases:
            hint = f"write {aliases[name]}"
        else:
            close = difflib.get_close_matches(name, known, n=1, cutoff=0.5)
            hint = (f"did you mean '{close[0]}'? " if close else "") + "known functions: zeta, log, Li, G, svpolylog"
        raise self.fail(node, f"unknown function '{_short(name, 40)}'", hint)

    def letters(self, node: Call) -> List[int]:
        """The letters of ``G(...; x)`` or ``svpolylog(...; x)``, each 0 or 1."""
        out = []
        for a in node.letters or ():
            if not isinstance(a, Num) or a.value not in (0, 1):
                raise self.fail(a, f"letters of {node.name} must be 0 or 1", f"write e.g. {node.name}(0,1; {self.xname})")
            out.append(int(a.value))
        return out

    def word_value(self, word: Tuple[int, ...], kind: str, node: Node, factor: int = 1) -> _Value:
        if kind == "x":
            return self.words({word: MZV.one()}, factor)
        try:
            combination = g_of_one_minus_x(word, store=self.store)
        except LowEnergyError as err:
            raise err.located(column=node.col, term=_node_text(node))
        return self.words(combination, factor)

    def zeta_call(self, node: Call) -> _Value:
        indices = zeta_indices(node, self.fail)
        if indices[0] == 1:
            raise self.fail(
                node,
                "zeta with first index 1 diverges",
                "integrands may contain convergent MZVs only (first index at least 2)",
                RegularizationError,
            )
        if sum(indices) > 10 * MAX_WORD_LENGTH:
            raise self.fail(node, "MZV weight too large")
        try:
            return self.const(zeta(*indices, store=self.store))
        except LowEnergyError as err:
            raise err.located(column=node.col, term=_node_text(node))

    # -- arithmetic ------------------------------------------------------------------
    @staticmethod
    def size(value: _Value) -> int:
        return sum(len(coef) for coef in value.values())

    def negate(self, value: _Value) -> _Value:
        for coef in value.values():
            for k in coef:
                coef[k] = -coef[k]
        return value

    def add(self, left: _Value, right: _Value, sign: int) -> _Value:
        """``left + sign*right``; consumes (mutates) both operands."""
        for key, coef in right.items():
            target = left.get(key)
            if target is None:
                left[key] = coef if sign > 0 else {k: -c for k, c in coef.items()}
                continue
            add_into(target, coef, 1 if sign > 0 else -1)
            if not target:
                del left[key]
        return left

    def combine(self, a: _Exp, b: _Exp, node: Node, which: str) -> _Exp:
        shift = a[0] + b[0]
        if a[2] is None or b[2] is None or a[2] == b[2]:
            var = a[2] if a[2] is not None else b[2]
            coeff = a[1] + b[1]
            if coeff == 0:
                var = None
            e = (shift, coeff, var)
            self.check_exponent(e, node, which)
            return e
        raise self.mixed(node, which)

    def mixed(self, node: Node, which: str) -> LowEnergyError:
        s, t = self.variables
        return self.fail(
            node,
            f"the exponent of {which} would contain both {s} and {t}",
            f"each exponent of {self.xname} and 1-{self.xname} may contain only one expansion variable",
        )

    def check_exponent(self, e: _Exp, node: Node, which: str) -> None:
        if abs(e[0]) > MAX_EXPONENT or abs(e[1]) > MAX_EXPONENT:
            raise self.fail(node, f"exponent of {which} larger than {MAX_EXPONENT}", "exponents are limited")

    def mul(self, a: _Value, b: _Value, node: Node) -> _Value:
        if not a or not b:
            return {}
        if len(a) * len(b) > MAX_TERMS:
            raise self.too_many(node)
        # the shuffles multiply the work: count it before doing it
        work = 0
        for ka, ca in a.items():
            la = len(ka[2])
            for kb, cb in b.items():
                lb = len(kb[2])
                if la + lb > MAX_WORD_LENGTH:
                    raise self.fail(node, f"product of G-words longer than {MAX_WORD_LENGTH} letters")
                work += comb(la + lb, la) * len(ca) * len(cb)
            if work > MAX_TERMS:
                raise self.too_many(node)
        self.work += work
        if self.work > MAX_WORK:
            raise self.fail(
                node,
                f"expanding the integrand needs more than {MAX_WORK} multiplications of terms",
                "simplify the integrand or split it into several files",
            )
        x, y = self.xname, f"(1-{self.xname})"
        out: _Value = {}
        for (xa, ya, wa), ca in a.items():
            for (xb, yb, wb), cb in b.items():
                xe = self.combine(xa, xb, node, x)
                ye = self.combine(ya, yb, node, y)
                coef = self.coef_mul(ca, cb, node)
                if not coef:
                    continue
                shuffled = shuffle(wa, wb) if wa and wb else {wa + wb: 1}
                for w, m in shuffled.items():
                    key = (xe, ye, w)
                    target = out.get(key)
                    if target is None:
                        out[key] = target = {}
                    add_into(target, coef, m)
                    if not target:
                        del out[key]
        if self.size(out) > MAX_TERMS:
            raise self.too_many(node)
        return out

    def too_many(self, node: Node) -> LowEnergyError:
        return self.fail(
            node,
            f"expanding this product would exceed {MAX_TERMS} terms",
            "simplify the integrand or split it into several files",
        )

    def coef_mul(self, a: _Coef, b: _Coef, node: Node) -> _Coef:
        out: _Coef = {}
        for (pa, ea, ma), ca in a.items():
            for (pb, eb, mb), cb in b.items():
                exps = tuple(i + j for i, j in zip(ea, eb))
                if pa + pb > 4 * MAX_EXPONENT or max(exps, default=0) > 4 * MAX_EXPONENT:
                    raise self.fail(node, "powers too large", "simplify the integrand")
                add_term(out, (pa + pb, exps, _mono_mul(ma, mb)), ca * cb)
        return out

    def rational_of(self, value: _Value) -> Optional[Fraction]:
        """The value as a rational number, or None."""
        if not value:
            return Fraction(0)
        if len(value) != 1:
            return None
        (key, coef), = value.items()
        if key != (_ZERO_EXP, _ZERO_EXP, ()) or len(coef) != 1:
            return None
        (k, c), = coef.items()
        if k != (0, self.zero_exps, ()):
            return None
        return c

    def monomial_of(self, value: _Value) -> Optional[Tuple[_Exp, _Exp, Fraction]]:
        """``(x exponent, 1-x exponent, q)`` if value is ``q x^a (1-x)^b`` with rational q."""
        if len(value) != 1:
            return None
        ((xe, ye, word), coef), = value.items()
        if word or len(coef) != 1:
            return None
        (k, c), = coef.items()
        if k != (0, self.zero_exps, ()):
            return None
        return xe, ye, c

    def variable_in(self, value: _Value) -> Optional[str]:
        allnames = self.variables + self.parameters
        for coef in value.values():
            for (_, exps, _) in coef:
                for i, e in enumerate(exps):
                    if e:
                        return allnames[i]
        return None

    def div(self, a: _Value, b: _Value, node: Node, divisor: Node) -> _Value:
        mono = self.monomial_of(b)
        if mono is not None and mono[2] != 0:
            xe, ye, q = mono
            inverse = {
                ((-xe[0], -xe[1], xe[2]), (-ye[0], -ye[1], ye[2]), ()): {(0, self.zero_exps, ()): 1 / q}
            }
            return self.mul(a, inverse, node)
        if not b:
            raise self.fail(divisor, "division by zero")
        name = self.variable_in(b)
        if name is not None:
            raise self.fail(
                divisor,
                f"division by {_node_text(divisor)}: the integrand is not a polynomial in {name}",
                f"{name} may appear only polynomially; rescale the integrand instead",
            )
        raise self.fail(
            divisor,
            "division only by non-zero rational numbers (and by x, 1-x)",
            "multiply by the inverse instead, e.g. x^(-1); MZVs cannot be inverted",
        )

    def exponent_form(self, value: _Value, node: Node) -> Dict[int, Fraction]:
        """``{-1: constant, 0: coefficient of s, 1: coefficient of t}`` of an exponent."""
        out: Dict[int, Fraction] = {}
        for (xe, ye, word), coef in value.items():
            if xe != _ZERO_EXP or ye != _ZERO_EXP or word:
                raise self.fail(
                    node, f"{self.xname} may not appear in an exponent", f"exponents are like (-{self.variables[0]}-1)"
                )
            for (p, exps, mono), c in coef.items():
                if p or mono:
                    raise self.fail(
                        node,
                        "exponents must be rational numbers plus a rational multiple of "
                        f"{self.variables[0]} or {self.variables[1]}",
                        "MZVs and pi cannot appear in exponents",
                    )
                for i in range(2, self.nvars):
                    if exps[i]:
                        raise self.fail(
                            node,
                            f"parameter '{self.parameters[i - 2]}' may not appear in an exponent",
                            f"exponents may contain only {self.variables[0]} or {self.variables[1]}",
                        )
                degree = exps[0] + exps[1]
                if degree > 1:
                    raise self.fail(
                        node,
                        f"the exponent is not linear in {self.variables[0]}, {self.variables[1]}",
                        "exponents are an integer plus a rational multiple of one expansion variable",
                    )
                slot = -1 if degree == 0 else (0 if exps[0] else 1)
                out[slot] = out.get(slot, Fraction(0)) + c
        return {k: v for k, v in out.items() if v}

    def power(self, base: _Value, exponent: _Value, node: Pow) -> _Value:
        x = self.xname
        q = self.rational_of(exponent)
        if q is not None and q.denominator == 1:
            n = int(q)
            if abs(n) > MAX_EXPONENT:
                raise self.fail(node.exponent, f"exponent larger than {MAX_EXPONENT}", "exponents are limited")
            if n >= 0:
                # repeated multiplication by the (usually small) base keeps
                # every intermediate product small, unlike squaring
                result = self.rational(Fraction(1))
                for _ in range(n):
                    result = self.mul(result, base, node)
                return result
            mono = self.monomial_of(base)
            if mono is not None and mono[2] != 0:
                xe, ye, c = mono
                m = -n
                new_x = (-xe[0] * m, -xe[1] * m, xe[2])
                new_y = (-ye[0] * m, -ye[1] * m, ye[2])
                self.check_exponent(new_x, node, x)
                self.check_exponent(new_y, node, f"(1-{x})")
                return {(new_x, new_y, ()): {(0, self.zero_exps, ()): Fraction(1) / c**m}}
            if not base:
                raise self.fail(node, "division by zero (negative power of 0)")
            name = self.variable_in(base)
            if name is not None:
                raise self.fail(
                    node,
                    f"negative power: the integrand is not a polynomial in {name}",
                    f"{name} may appear only polynomially",
                )
            raise self.fail(
                node,
                f"negative powers are allowed only for rational numbers and the factors {x}, (1-{x})",
                "MZVs, sums and functions cannot be inverted",
            )
        # a non-integer or symbolic exponent: only for x^a (1-x)^b
        form = self.exponent_form(exponent, node.exponent)
        if 0 in form and 1 in form:
            s, t = self.variables
            raise self.fail(
                node,
                f"the exponent contains both {s} and {t}",
                f"each exponent of {x} and 1-{x} may contain only one expansion variable",
            )
        mono = self.monomial_of(base)
        if (
            mono is None
            or mono[2] != 1
            or mono[0][2] is not None
            or mono[1][2] is not None
            or (mono[0][0] == 0 and mono[1][0] == 0)
        ):
            what = "a non-integer" if not (0 in form or 1 in form) else "a symbolic"
            raise self.fail(
                node,
                f"{what} power of {_node_text(node.base)}: only {x} and (1-{x}) may be raised to such powers",
                f"write e.g. {x}^(-{self.variables[0]}-1) or (1-{x})^(-{self.variables[1]}-1)",
            )
        constant = form.get(-1, Fraction(0))
        var = 0 if 0 in form else (1 if 1 in form else None)
        coeff = form.get(var, Fraction(0)) if var is not None else Fraction(0)
        result = []
        for k, which in ((mono[0][0], x), (mono[1][0], f"(1-{x})")):
            shift = constant * k
            if shift.denominator != 1:
                raise self.fail(
                    node,
                    f"non-integer power of {which}",
                    f"the exponent of {which} must be an integer plus a rational multiple of "
                    f"{self.variables[0]} or {self.variables[1]}",
                )
            c = coeff * k
            e = (int(shift), c, var if c else None)
            self.check_exponent(e, node, which)
            result.append(e)
        return {(result[0], result[1], ()): {(0, self.zero_exps, ()): Fraction(1)}}

    # -- final form ------------------------------------------------------------------
    def finish(self, value: _Value, node: Node) -> Dict[_Key, Dict[Tuple[int, ...], MZV]]:
        """Build the MZV coefficients; replace ``pi^(2k)`` by ``(6 zeta(2))^k``
        and refuse odd powers of pi."""
        out: Dict[_Key, Dict[Tuple[int, ...], MZV]] = {}
        pi2 = None
        for key, coef in value.items():
            groups: Dict[Tuple[int, Tuple[int, ...]], Dict[tuple, Fraction]] = {}
            for (p, exps, mono), c in coef.items():
                if p % 2:
                    raise self.fail(
                        node,
                        "odd power of pi: the coefficient is not a combination of MZVs",
                        "only even powers of pi are MZVs (pi^2 = 6*zeta(2))",
                    )
                groups.setdefault((p, exps), {})[mono] = c
            poly: Dict[Tuple[int, ...], MZV] = {}
            for (p, exps), terms in groups.items():
                c = MZV(terms)
                if p:
                    if pi2 is None:
                        pi2 = MZV.rational(6) * zeta(2, store=self.store)
                    c = c * pi2 ** (p // 2)
                add_term(poly, exps, c)
            if poly:
                out[key] = poly
        return out


# ==========================================================================
# sphere integrands
# ==========================================================================

class _SphereEvaluator(_Evaluator):
    """The evaluator for ``domain = "sphere"``.

    Keys are ``(exponent of |z|², exponent of |1-z|², L-word)``; the base
    class's products (exponents add, words shuffle) apply unchanged because
    ``L_u L_v = L_{u ш v}``.
    """

    def evaluate(self, tree: Node) -> _Value:
        self.check_abs(tree)
        return super().evaluate(tree)

    def check_abs(self, tree: Node) -> None:
        """``abs(...)`` only as ``abs(z)^(e)``, ``abs(1-z)^(e)`` or inside ``log(...)``."""
        z = self.xname
        stack: List[Tuple[Node, Optional[Node]]] = [(tree, None)]
        while stack:
            node, parent = stack.pop()
            if isinstance(node, Call) and node.name == "abs":
                ok_parent = (isinstance(parent, Pow) and parent.base is node) or (
                    isinstance(parent, Call) and parent.name == "log"
                )
                if not ok_parent:
                    raise self.fail(
                        node,
                        f"abs(...) must be raised to a power, e.g. abs({z})^(-2*{self.variables[0]}-2)",
                        f"the integrand contains |{z}| and |1-{z}| only through |{z}|^(e) and |1-{z}|^(e) "
                        "with e an even integer plus a multiple of a variable",
                    )
                continue
            if isinstance(node, Call):
                if node.name in ("log",):
                    for arg in node.args:
                        stack.append((arg, node))
                continue  # other calls are checked by call()
            stack.extend((kid, node) for kid in children(node))

    def abs_kind(self, node: Node) -> Optional[str]:
        """``"z"`` for ``abs(z)``, ``"1-z"`` for ``abs(1-z)``, else None."""
        if isinstance(node, Call) and node.name == "abs" and node.letters is None and len(node.args) == 1:
            kind = self.x_argument(node.args[0])
            return "z" if kind == "x" else kind
        return None

    def interval_syntax(self, node: Node, what: str) -> LowEnergyError:
        z, s, t = self.xname, self.variables[0], self.variables[1]
        return self.fail(
            node,
            f"{what} is interval syntax: on the sphere it is multivalued",
            f"a sphere integrand uses abs({z})^(-2*{s}-2), abs(1-{z})^(-2*{t}-2), log(abs({z})), "
            f"log(abs(1-{z})) and svpolylog(...; {z}) (single-valued)",
        )

    def symbol(self, node: Sym) -> _Value:
        if node.name == self.xname:
            raise self.interval_syntax(node, f"a bare {self.xname}")
        if node.name not in self.names and node.name not in ("pi", "zeta", "G", "Li", "log", "svpolylog", "abs"):
            z = self.xname
            known = [*self.variables, *self.parameters, "pi"]
            close = difflib.get_close_matches(node.name, known, n=1, cutoff=0.6)
            hint = f"did you mean '{close[0]}'? " if close else ""
            hint += (f"known names: {', '.join(known)}; this is a sphere integrand (domain = \"sphere\"), "
                     f"whose variable {z} enters through abs({z})^(e), abs(1-{z})^(e), log(abs({z})), "
                     f"log(abs(1-{z})), svpolylog(...; {z})")
            raise self.fail(node, f"unknown symbol '{_short(node.name, 40)}'", hint)
        return super().symbol(node)

    def leaf(self, node: Node) -> Optional[_Value]:
        if isinstance(node, Sum) and _is_one_minus_x_shape(node, self.xname):
            raise self.interval_syntax(node, f"(1-{self.xname}) outside abs(...)")
        return super().leaf(node)

    def head(self, node: Node) -> Optional[Tuple[int, _Value]]:
        if isinstance(node, Sum) and _has_one_minus_x_head(node, self.xname):
            raise self.interval_syntax(node.prefix(1), f"(1-{self.xname}) outside abs(...)")
        return None

    def added_x(self, part: Node) -> LowEnergyError:
        return self.interval_syntax(part, f"a bare {self.xname}")

    def call(self, node: Call) -> _Value:
        name, z = node.name, self.xname
        if name == "abs":
            if self.abs_kind(node) is None:
                raise self.fail(node, f"only abs({z}) and abs(1-{z}) are supported",
                                "other moduli are not functions of the alphabet {0, 1}")
            # the value is built by power() (or log()); this is a placeholder
            return {}
        if name == "log":
            if node.letters is None and len(node.args) == 1:
                kind = self.abs_kind(node.args[0])
                if kind is not None:
                    # log|z| = L_0/2, log|1-z| = L_1/2
                    return self.words({(0,) if kind == "z" else (1,): MZV.rational(Fraction(1, 2))})
                if self.x_argument(node.args[0]) is not None:
                    raise self.interval_syntax(node, _node_text(node))
            raise self.fail(node, f"only log(abs({z})) and log(abs(1-{z})) are supported on the sphere",
                            f"write log(abs({z})) or log(abs(1-{z}))")
        if name == "Li":
            raise self.interval_syntax(node, _node_text(node))
        if name == "G":
            arg = node.args[0] if node.letters is not None and len(node.args) == 1 else None
            if isinstance(arg, Num) and arg.value == 1:
                return super().call(node)
            raise self.interval_syntax(node, "G(...; " + (_node_text(arg) if arg is not None else z) + ")")
        if name == "svpolylog":
            if node.letters is None or len(node.args) != 1:
                raise self.fail(node, "svpolylog needs letters, ';' and the argument", f"write svpolylog(0,1; {z})")
            letters = self.letters(node)
            if len(letters) > MAX_WORD_LENGTH:
                raise self.fail(node, f"word longer than {MAX_WORD_LENGTH} letters")
            kind = self.x_argument(node.args[0])
            if kind not in ("x", "1-x"):
                raise self.fail(node.args[0], f"svpolylog is supported only at {z} and 1-{z} on the sphere",
                                f"write svpolylog(0,1; {z})")
            if kind == "1-x":
                # L_w(1-z) = Σ_u c_u L_u(z), c_u single-valued MZVs (lowenergy.svpolylog.sphere_residues)
                require_weight(len(letters), self.store)
                from ..svpolylog.sphere import SphereValues
                from ..svpolylog.sphere_residues import words_at_one

                return self.words(words_at_one(tuple(letters), SphereValues("direct", self.store)))
            return self.words({tuple(letters): MZV.one()})
        return super().call(node)

    def power(self, base: _Value, exponent: _Value, node: Pow) -> _Value:
        kind = self.abs_kind(node.base)
        if kind is None:
            if isinstance(node.base, Sym) and node.base.name == self.xname or _is_one_minus_x_shape(
                node.base, self.xname
            ):
                raise self.interval_syntax(node, _node_text(node))
            return super().power(base, exponent, node)
        z = self.xname
        which = f"|{z}|" if kind == "z" else f"|1-{z}|"
        q = self.rational_of(exponent)
        if q is not None:
            form = {-1: q} if q else {}
            if q.denominator != 1:
                form = None
        else:
            form = self.exponent_form(exponent, node.exponent)
            if 0 in form and 1 in form:
                raise self.fail(node, f"the exponent of {which} contains both {self.variables[0]} and "
                                f"{self.variables[1]}", "each exponent may contain only one expansion variable")
        constant = form.get(-1, Fraction(0)) if form is not None else Fraction(1, 2)
        if form is None or constant.denominator != 1 or constant.numerator % 2:
            raise self.fail(
                node,
                f"the exponent of {which} must be an even integer plus a multiple of a variable",
                f"write abs({z})^(-2*{self.variables[0]}-2): {which}^(2A) with A an integer plus a multiple "
                "of a variable (odd powers of |z| give no single-valued polylogarithms)",
            )
        var = 0 if 0 in form else (1 if 1 in form else None)
        coeff = form.get(var, Fraction(0)) / 2 if var is not None else Fraction(0)
        e = (int(constant) // 2, coeff, var if coeff else None)
        self.check_exponent(e, node, which)
        key = (e, _ZERO_EXP, ()) if kind == "z" else (_ZERO_EXP, e, ())
        return {key: {(0, self.zero_exps, ()): Fraction(1)}}
