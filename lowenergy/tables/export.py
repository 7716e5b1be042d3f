"""Tables of Wilson coefficients: DataFrame, CSV, JSON, LaTeX and terminal.

Every export is built from the same rows (:func:`table_rows`): one row per
(basis element, parameter monomial) with a non-zero coefficient, in three
groups:

``kind = "pole"``
    Pole terms ``c[i,j]`` (``i < 0`` or ``j < 0``), always in the monomial
    form: they are not contact terms.
``kind = "contact"``
    Coefficients of the contact terms in the chosen basis (``c[i,j]``,
    ``sym[i,j]``, ``sigma[a,b]`` or user names; see
    :mod:`lowenergy.tables.bases` for the naming scheme).
``kind = "remainder"``
    Only when the expansion does not lie in the basis: the left-over part in
    the monomial basis, named ``c[i,j]``, with a note saying why.

Columns (DataFrame and CSV): ``name``, ``kind``, ``i``, ``j`` (powers of
the variables for ``c[i,j]`` and ``sym[i,j]``, empty otherwise), ``label``
(the element as a polynomial, e.g. ``s^2*t`` or ``sigma2*sigma3``),
``order`` (``i + j`` or the element's degree), ``param`` (the parameter
monomial, ``a1^2*a2`` or ``1``), ``weight`` (the transcendental weight, or
``mixed``), ``exact`` (canonical plain text, readable by
:func:`lowenergy.zeta.expression.evaluate`), ``numeric`` (decimal string
to ``digits`` significant digits) and ``note``.

CSV files start with ``#`` comment lines that carry the variables,
parameters, order, basis and title, so that :func:`read_csv` restores the
:class:`~lowenergy.expansion.result.Expansion` exactly (from any basis:
element rows are expanded again from their labels).  All files are written
atomically: the text is built first, written to a temporary file in the
same directory and moved over the target with ``os.replace``, so a failure
never leaves a partial file.

>>> from fractions import Fraction
>>> from lowenergy.expansion.result import Expansion
>>> from lowenergy.zeta.element import MZV
>>> e = Expansion(("s", "t"), (), 1, {(-1, 0): {(): MZV.rational(-1)},
...                                   (1, 0): {(): MZV.rational(Fraction(1, 2))}})
>>> [(r.name, r.kind, r.exact, r.numeric) for r in table_rows(e, digits=5)[1]]
[('c[-1,0]', 'pole', '-1', '-1.0'), ('c[1,0]', 'contact', '1/2', '0.5')]
>>> to_json_dict(e, digits=5)["terms"][1]["powers"]
[1, 0]
"""

from __future__ import annotations

import csv
import io
import json
import os
import re
from dataclasses import dataclass
from decimal import Decimal, DecimalException, InvalidOperation
from fractions import Fraction
from pathlib import Path
from typing import Dict, List, Optional, Sequence, Tuple, Union

import mpmath

from ..errors import InputError, LowEnergyError, ParseError
from ..fileio import write_atomic
from ..limits import MAX_CSV_BYTES, MAX_CSV_ROWS, MAX_DECIMAL_EXPONENT, MAX_NUMERIC_DIGITS, MAX_NUMERIC_WORK
from ..parse import Num, Pow, Product, Sym, coefficient_reference, parse_expression
from ..expansion.result import u_pole_name
from ..zeta.element import MZV
from .bases import (
    BasisSpec,
    Decomposition,
    _latex_name,
    coefficient_name,
    decompose,
    monomial_latex,
    monomial_text,
    parse_element_name,
    parse_polynomial,
    pole_part,
    polynomial_text,
    sigma_label,
    sigma_polynomial,
)

__all__ = [
    "COLUMNS",
    "CSV_FORMAT",
    "MAX_DIGITS",
    "MAX_ORDER",
    "Row",
    "table_rows",
    "param_text",
    "to_dataframe",
    "to_csv_text",
    "write_csv",
    "read_csv",
    "to_json_dict",
    "write_json",
    "to_latex",
    "latex_escape",
    "write_latex",
    "to_terminal",
]

#: Columns of the DataFrame and the CSV file, in order.
COLUMNS = ("name", "kind", "i", "j", "label", "order", "param", "weight", "exact", "numeric", "note")
#: Version of the CSV layout written by :func:`write_csv`.
CSV_FORMAT = 1
#: Most significant digits a table may ask for.
MAX_DIGITS = 1000
#: Largest order (in absolute value) :func:`read_csv` accepts.
MAX_ORDER = 1000
_MAGIC = "# lowenergy coefficient table"
_MAX_CSV_BYTES = MAX_CSV_BYTES
_IDENT = re.compile(r"[A-Za-z_][A-Za-z0-9_]*\Z")

ParamPoly = Dict[Tuple[int, ...], MZV]
PathLike = Union[str, "os.PathLike[str]"]


# --------------------------------------------------------------------------
# rows
# --------------------------------------------------------------------------


@dataclass(frozen=True)
class Row:
    """One table row: a (basis element, parameter monomial) and its coefficient."""

    name: str
    kind: str
    i: Optional[int]
    j: Optional[int]
    label: str
    latex: str
    order: int
    param: str
    param_exponents: Tuple[int, ...]
    param_latex: str
    value: MZV
    weight: Union[int, str]
    exact: str
    numeric: str
    note: str
    #: power of U = -s-t for U-channel pole rows ``c[i,0,k]`` (sphere), else None
    k: Optional[int] = None


def _check_digits(digits: object) -> int:
    if isinstance(digits, bool) or not isinstance(digits, int) or not 1 <= digits <= MAX_DIGITS:
        raise InputError(
            f"digits must be an integer between 1 and {MAX_DIGITS}, got {digits!r}",
            hint="e.g. digits=20",
        )
    return digits


def param_text(exponents: Sequence[int], parameters: Sequence[str]) -> str:
    """Plain text of a parameter monomial, e.g. ``a1^2*a2`` (``1`` if constant).

    >>> param_text((2, 1), ("a1", "a2")), param_text((0, 0), ("a1", "a2"))
    ('a1^2*a2', '1')
    """
    parts = [name if e == 1 else f"{name}^{e}" for name, e in zip(parameters, exponents) if e]
    return "*".join(parts) if parts else "1"


def _param_latex(exponents: Sequence[int], parameters: Sequence[str]) -> str:
    parts = []
    for name, e in zip(parameters, exponents):
        if e:
            base = _latex_name(name)
            parts.append(base if e == 1 else f"{base}^{{{e}}}")
    return " ".join(parts) if parts else "1"


def _param_key(pe: Tuple[int, ...]) -> tuple:
    """Highest total degree first, then lexicographically (a1^2, a1*a2, a2^2, a1, a2, 1)."""
    return (-sum(pe), tuple(-e for e in pe))


def _weight(x: MZV) -> Union[int, str]:
    ws = x.weights()
    return ws.pop() if len(ws) == 1 else "mixed"


def _numeric_text(x: MZV, digits: int) -> str:
    return mpmath.nstr(x.numeric(digits), digits)


_NOTES = {
    "pole": "pole term, kept in the monomial form",
    "upole": "U-channel pole (U = -s-t, from z -> infinity), numerator in the first variable",
    "monomial": "",
    "symmetric": "antisymmetric part (s <-> t): not in the symmetric basis",
    "sigma": "not crossing symmetric: not in the sigma basis",
    "user": "not in the span of the user basis (least-squares remainder)",
}


def table_rows(expansion, basis: BasisSpec = "monomial", digits: int = 20) -> Tuple[Decomposition, List[Row]]:
    """The decomposition and the rows of the table (see the module docstring)."""
    digits = _check_digits(digits)
    decomposition = decompose(expansion, basis)
    variables = tuple(expansion.variables)
    params = tuple(expansion.parameters)
    rows: List[Row] = []

    def add(name, kind, i, j, label, latex, order, pp: ParamPoly, note, k=None) -> None:
        for pe in sorted(pp, key=_param_key):
            x = pp[pe]
            if not x:
                continue
            rows.append(
                Row(
                    name=name,
                    kind=kind,
                    i=i,
                    j=j,
                    label=label,
                    latex=latex,
                    order=order,
                    param=param_text(pe, params),
                    param_exponents=tuple(pe),
                    param_latex=_param_latex(pe, params),
                    value=x,
                    weight=_weight(x),
                    exact=x.to_text(),
                    numeric=_numeric_text(x, digits),
                    note=note,
                    k=k,
                )
            )

    def add_monomials(coeffs, kind, note) -> None:
        for i, j in sorted(coeffs, key=lambda k: (k[0] + k[1], -k[0])):
            add(
                coefficient_name(i, j),
                kind,
                i,
                j,
                monomial_text(i, j, variables),
                monomial_latex(i, j, variables),
                i + j,
                coeffs[(i, j)],
                note,
            )

    add_monomials(pole_part(expansion), "pole", _NOTES["pole"])
    upoles = getattr(expansion, "u_poles", None) or {}
    for i, k in sorted(upoles, key=lambda key: (key[0] + key[1], -key[0])):
        u = "U" if "U" not in variables and "U" not in params else "u_"
        head = monomial_text(i, 0, variables)
        add(
            u_pole_name(i, k),
            "pole",
            i,
            0,
            (head + "*" if head != "1" else "") + f"{u}^{k}",
            (monomial_latex(i, 0, variables) + " " if i else "") + f"{u}^{{{k}}}",
            i + k,
            upoles[(i, k)],
            _NOTES["upole"],
            k=k,
        )
    for e in decomposition.elements:
        pp = decomposition.coefficients.get(e.name)
        if pp:
            i, j = e.powers if e.powers is not None else (None, None)
            add(e.name, "contact", i, j, e.label, e.latex, e.degree, pp, "")
    add_monomials(decomposition.remainder, "remainder", _NOTES[decomposition.basis])
    return decomposition, rows


# --------------------------------------------------------------------------
# DataFrame
# --------------------------------------------------------------------------


def to_dataframe(expansion, basis: BasisSpec = "monomial", digits: int = 20):
    """The table as a :class:`pandas.DataFrame` with the columns :data:`COLUMNS`.

    ``df.attrs`` holds ``variables``, ``parameters``, ``order``, ``basis``,
    ``in_basis`` (False when remainder rows are present) and ``title``.
    """
    import pandas as pd

    decomposition, rows = table_rows(expansion, basis, digits)
    data = {
        "name": [r.name for r in rows],
        "kind": [r.kind for r in rows],
        "i": pd.array([r.i for r in rows], dtype="Int64"),
        "j": pd.array([r.j for r in rows], dtype="Int64"),
        "label": [r.label for r in rows],
        "order": pd.array([r.order for r in rows], dtype="int64"),
        "param": [r.param for r in rows],
        "weight": pd.array([r.weight for r in rows], dtype=object),
        "exact": [r.exact for r in rows],
        "numeric": [r.numeric for r in rows],
        "note": [r.note for r in rows],
    }
    df = pd.DataFrame(data, columns=list(COLUMNS))
    df.attrs.update(
        {
            "variables": tuple(expansion.variables),
            "parameters": tuple(expansion.parameters),
            "order": expansion.order,
            "basis": decomposition.basis,
            "in_basis": decomposition.in_basis,
            "title": expansion.title,
        }
    )
    return df


# --------------------------------------------------------------------------
# files
# --------------------------------------------------------------------------


def _atomic_write(path: PathLike, text: str) -> Path:
    """Write ``text`` to ``path`` atomically (:func:`lowenergy.fileio.write_atomic`);
    an operating-system failure is the user's: ``InputError`` naming the file."""
    return _atomic_write_bytes(path, text.encode("utf-8"))


def _atomic_write_bytes(path: PathLike, data: bytes) -> Path:
    """Write ``data`` to ``path`` atomically; ``InputError`` on failure."""
    target = Path(os.fspath(path))
    try:
        return write_atomic(target, data)
    except OSError as err:
        raise InputError(f"cannot write {target}: {err.strerror or err}", source=str(target)) from None


# --------------------------------------------------------------------------
# CSV
# --------------------------------------------------------------------------


def to_csv_text(expansion, basis: BasisSpec = "monomial", digits: int = 20) -> str:
    """The CSV text written by :func:`write_csv`."""
    decomposition, rows = table_rows(expansion, basis, digits)
    out = io.StringIO()
    out.write(_MAGIC + "\n")
    out.write(f"# format: {CSV_FORMAT}\n")
    out.write(f"# variables: {', '.join(expansion.variables)}\n")
    out.write(("# parameters: " + ", ".join(expansion.parameters)).rstrip() + "\n")
    out.write(f"# order: {expansion.order}\n")
    out.write(f"# basis: {decomposition.basis}\n")
    out.write(f"# in_basis: {'true' if decomposition.in_basis else 'false'}\n")
    out.write(f"# title: {json.dumps(expansion.title or '')}\n")
    out.write(f"# source: {json.dumps(expansion.source or '')}\n")
    out.write(
        "# names: c[i,j] = coefficient of s^i t^j; sym[i,j] = s^i t^j + s^j t^i (i > j), s^i t^i; "
        "sigma[a,b] = sigma2^a sigma3^b; kind remainder = part not in the basis"
        + ("; c[i,0,k] = coefficient of s^i u^k, u = -s-t (U-channel poles, k < 0)"
           if getattr(expansion, "u_poles", None) else "")
        + "\n"
    )
    writer = csv.writer(out, lineterminator="\n")
    writer.writerow(COLUMNS)
    for r in rows:
        writer.writerow(
            [
                r.name,
                r.kind,
                "" if r.i is None else r.i,
                "" if r.j is None else r.j,
                r.label,
                r.order,
                r.param,
                r.weight,
                r.exact,
                r.numeric,
                r.note,
            ]
        )
    return out.getvalue()


def write_csv(expansion, path: PathLike, basis: BasisSpec = "monomial", digits: int = 20) -> Path:
    """Write the table as CSV (atomically); returns the path.

    Read it back with :func:`read_csv`.
    """
    return _atomic_write(path, to_csv_text(expansion, basis, digits))


_REQUIRED_HEADER = ("format", "variables", "parameters", "order", "basis")
_REQUIRED_COLUMNS = ("name", "kind", "i", "j", "label", "param")


_NUMERIC_CELL = re.compile(r"[+-]?[0-9]+(\.[0-9]*)?([eE][+-]?[0-9]{1,9})?|[+-]?\.[0-9]+([eE][+-]?[0-9]{1,9})?", re.ASCII)


class _CsvReader:
    def __init__(self, path: PathLike, numeric: bool = False) -> None:
        self.path = str(os.fspath(path))
        # numeric-only tables (no exact cells) are read when asked for
        self.allow_numeric = numeric
        self.exact_rows = 0
        self.numeric_rows = 0
        self.numeric_digits: Optional[int] = None
        self.numeric_work = 0

    def error(self, message: str, line: Optional[int], term: Optional[str] = None, hint: Optional[str] = None,
              cls=ParseError) -> LowEnergyError:
        if term is not None and len(term) > 80:
            term = term[:77] + "..."
        return cls(message, source=self.path, line=line, term=term, hint=hint)

    # -- text ------------------------------------------------------------------
    def load(self) -> str:
        try:
            size = os.path.getsize(self.path)
            if size > _MAX_CSV_BYTES:
                raise InputError(f"file too large ({size} bytes)", source=self.path,
                                 hint=f"coefficient tables have at most {_MAX_CSV_BYTES} bytes")
            with open(self.path, "rb") as fh:
                data = fh.read()
        except OSError as err:
            raise InputError(f"cannot read the file: {err.strerror}", source=self.path) from None
        try:
            text = data.decode("utf-8")
        except UnicodeDecodeError as err:
            line = data[: err.start].count(b"\n") + 1
            raise self.error("the file is not valid UTF-8 text", line, hint="save the table as UTF-8") from None
        if text.startswith("\ufeff"):
            text = text[1:]
        return text

    # -- header ------------------------------------------------------------------
    def header(self, lines: List[str]) -> Tuple[Dict[str, Tuple[str, int]], int]:
        """Comment block: ``{key: (value, line)}`` and the index of the first other line."""
        idx = 0
        while idx < len(lines) and not lines[idx].strip():
            idx += 1
        if idx >= len(lines):
            raise self.error("the file is empty", 1, hint="write tables with write_csv")
        if lines[idx].rstrip("\r") != _MAGIC:
            raise self.error(
                "not a lowenergy coefficient table (missing first line)",
                idx + 1,
                lines[idx].rstrip("\r"),
                hint=f"the file must start with {_MAGIC!r}",
            )
        idx += 1
        fields: Dict[str, Tuple[str, int]] = {}
        while idx < len(lines):
            raw = lines[idx].rstrip("\r")
            if raw.strip() and not raw.lstrip().startswith("#"):
                break
            body = raw.strip()[1:].strip() if raw.strip() else ""
            if ":" in body:
                key, value = body.split(":", 1)
                key = key.strip()
                if key in fields:
                    raise self.error(f"header field {key!r} given twice", idx + 1, raw)
                fields[key] = (value.strip(), idx + 1)
            idx += 1
        for key in _REQUIRED_HEADER:
            if key not in fields:
                raise self.error(
                    f"header field {key!r} is missing",
                    idx + 1 if idx < len(lines) else len(lines),
                    hint=f"add a line '# {key}: ...' before the column names",
                )
        return fields, idx

    def names(self, value: str, line: int, what: str, count: Optional[int] = None) -> Tuple[str, ...]:
        items = tuple(x.strip() for x in value.split(",")) if value.strip() else ()
        for x in items:
            if not _IDENT.match(x):
                raise self.error(f"invalid {what} name {x!r}", line, x, hint="names are identifiers such as s or a1")
        if len(set(items)) != len(items):
            raise self.error(f"repeated {what} name", line, value)
        if count is not None and len(items) != count:
            raise self.error(f"expected {count} {what} names, found {len(items)}", line, value, hint="e.g. '# variables: s, t'")
        return items

    # -- cells ---------------------------------------------------------------------
    def integer(self, cell: str, line: int, column: str) -> int:
        text = cell.strip()
        if not re.fullmatch(r"-?\d{1,7}", text):
            raise self.error(f"column {column!r} must be an integer", line, cell)
        return int(text)

    def param(self, cell: str, parameters: Tuple[str, ...], line: int) -> Tuple[int, ...]:
        text = cell.strip()
        exps = [0] * len(parameters)
        if text == "1":
            return tuple(exps)
        hint = "write the parameter monomial like a1^2*a2, or 1"
        if not text:
            raise self.error("empty parameter monomial", line, cell, hint=hint)
        try:
            tree = parse_expression(text, source=self.path, line=line)
        except LowEnergyError as err:
            err.hint = err.hint or hint
            raise
        factors, stack = [], [tree]
        while stack:  # the factors of products, parenthesized ones included (a divisor is not a factor)
            node = stack.pop()
            if isinstance(node, Product) and "/" not in node.ops:
                stack += reversed(node.items)
            else:
                factors.append(node)
        for f in factors:
            base, e = f, 1
            if isinstance(f, Pow) and isinstance(f.exponent, Num) and f.exponent.value.denominator == 1:
                base, e = f.base, int(f.exponent.value)
            if not isinstance(base, Sym) or e < 1 or e > 10_000:
                raise self.error("malformed parameter monomial", line, cell, hint=hint)
            if base.name not in parameters:
                raise self.error(
                    f"unknown parameter {base.name!r}",
                    line,
                    cell,
                    hint=f"the header declares the parameters: {', '.join(parameters) or 'none'}",
                    cls=InputError,
                )
            exps[parameters.index(base.name)] += e
        return tuple(exps)

    def check_numeric(self, cell: str, value: MZV, line: int) -> None:
        text = cell.strip()
        if not text:
            return
        if text.lstrip("+-").lower() in ("nan", "snan", "inf", "infinity"):
            raise self.error("column 'numeric' is not a finite number", line, cell)
        if not _NUMERIC_CELL.fullmatch(text):
            # also keeps Decimal away from NaN, Infinity, '1_000' and other digits
            raise self.error("column 'numeric' is not a decimal number", line, cell,
                             hint="write a decimal such as -0.75917 or 1.2e-5, or leave the cell empty")
        try:
            dec = Decimal(text)
        except DecimalException:  # pragma: no cover - the pattern admits decimals only
            raise self.error("column 'numeric' is not a decimal number", line, cell) from None
        sig = max(len(dec.as_tuple().digits), 1)
        if sig > MAX_NUMERIC_DIGITS:
            raise self.error(f"column 'numeric' has more than {MAX_NUMERIC_DIGITS} digits", line, cell,
                             cls=InputError)
        if abs(dec.adjusted()) > MAX_DECIMAL_EXPONENT:
            raise self.error(f"column 'numeric' has a decimal exponent beyond {MAX_DECIMAL_EXPONENT}", line, cell,
                             cls=InputError)
        self.numeric_work += (sig + 5) ** 2
        if self.numeric_work > MAX_NUMERIC_WORK:
            raise self.error(
                "checking the 'numeric' column needs too many digits in total "
                f"(budget: sum of squared digits {MAX_NUMERIC_WORK})",
                line,
                cell,
                hint="leave the 'numeric' cells empty or write fewer digits",
                cls=InputError,
            )
        computed = Decimal(mpmath.nstr(value.numeric(sig + 5), sig + 5, min_fixed=-mpmath.inf, max_fixed=mpmath.inf))
        ulp = Decimal(1).scaleb(dec.adjusted() - sig + 1)
        if abs(computed - dec) > ulp:
            raise self.error(
                "columns 'exact' and 'numeric' disagree",
                line,
                cell,
                hint="the table was edited or damaged; fix the cell or leave 'numeric' empty",
                cls=InputError,
            )

    # -- the whole file -----------------------------------------------------------------
    def read(self):
        from ..expansion.result import Expansion
        from ..zeta.expression import evaluate

        text = self.load()
        lines = text.split("\n")
        fields, start = self.header(lines)
        fmt, fline = fields["format"]
        if fmt != str(CSV_FORMAT):
            raise self.error(f"unsupported table format {fmt!r}", fline, fmt, hint=f"this version reads format {CSV_FORMAT}")
        variables = self.names(*fields["variables"], "variable", 2)
        parameters = self.names(*fields["parameters"], "parameter")
        clash = set(variables) & set(parameters)
        if clash:
            raise self.error("a parameter has the name of a variable", fields["parameters"][1], ", ".join(sorted(clash)))
        order_text, oline = fields["order"]
        order = self.integer(order_text, oline, "order")
        if abs(order) > MAX_ORDER:
            raise self.error(f"order {order} is out of range", oline, order_text, hint=f"at most {MAX_ORDER}",
                             cls=InputError)
        basis, bline = fields["basis"]
        if basis not in ("monomial", "symmetric", "sigma", "user"):
            raise self.error(f"unknown basis {basis!r}", bline, basis, hint="monomial, symmetric, sigma or user")
        meta_text = {}
        for key in ("title", "source"):
            if key in fields:
                value, kline = fields[key]
                if value and not (value.startswith('"') and value.endswith('"')):
                    raise self.error(f"header field {key!r} is not a quoted string", kline, value)
                try:
                    decoded = json.loads(value) if value else ""
                except (ValueError, RecursionError):
                    raise self.error(f"header field {key!r} is not a quoted string", kline, value) from None
                if not isinstance(decoded, str):
                    raise self.error(f"header field {key!r} is not a quoted string", kline, value)
                meta_text[key] = decoded

        reader = csv.reader(io.StringIO("\n".join(lines[start:])), strict=True)
        offset = start
        header_row = None
        coefficients: Dict[Tuple[int, int], Dict] = {}
        upoles: Dict[Tuple[int, int], Dict] = {}
        seen: Dict[tuple, int] = {}
        previous = 0
        rows_read = 0
        try:
            for cells in reader:
                line = offset + previous + 1
                previous = reader.line_num
                if not cells or all(not c.strip() for c in cells):
                    continue
                if header_row is None:
                    header_row = [c.strip() for c in cells]
                    for col in _REQUIRED_COLUMNS:
                        if col not in header_row:
                            raise self.error(
                                f"column {col!r} is missing", line, ",".join(cells), hint=f"columns: {', '.join(COLUMNS)}"
                            )
                    if len(set(header_row)) != len(header_row):
                        raise self.error("repeated column name", line, ",".join(cells))
                    if "exact" not in header_row and not (self.allow_numeric and "numeric" in header_row):
                        raise self.error(
                            "column 'exact' is missing", line, ",".join(cells),
                            hint=f"columns: {', '.join(COLUMNS)} (a numeric-only table needs 'numeric')",
                        )
                    continue
                if len(cells) != len(header_row):
                    raise self.error(
                        f"expected {len(header_row)} cells, found {len(cells)}",
                        line,
                        ",".join(cells),
                        hint="quote cells that contain commas",
                    )
                rows_read += 1
                if rows_read > MAX_CSV_ROWS:
                    raise self.error(f"more than {MAX_CSV_ROWS} rows", line, cls=InputError,
                                     hint="coefficient tables are limited in size; split the table")
                row = dict(zip(header_row, cells))
                self.row(row, line, variables, parameters, order, basis, coefficients, seen, evaluate, upoles)
        except csv.Error as err:
            raise self.error(f"malformed CSV: {err}", offset + reader.line_num) from None
        if header_row is None:
            raise self.error("the column names are missing", len(lines), hint=f"columns: {', '.join(COLUMNS)}")
        coeffs = {}
        for key, pp in coefficients.items():
            clean = {pe: x for pe, x in pp.items() if x}
            if clean:
                coeffs[key] = clean
        ups = {key: {pe: x for pe, x in pp.items() if x} for key, pp in upoles.items()}
        meta = {}
        if self.numeric_rows:
            meta = {"numeric_only": True, "numeric_digits": self.digits_or_default()}
        return Expansion(
            variables=variables,
            parameters=parameters,
            order=order,
            coefficients=coeffs,
            u_poles={key: pp for key, pp in ups.items() if pp},
            domain="sphere" if ups else "interval",
            title=meta_text.get("title", ""),
            source=meta_text.get("source", ""),
            meta=meta,
        )

    def row(self, row, line, variables, parameters, order, basis, coefficients, seen, evaluate, upoles=None) -> None:
        upoles = {} if upoles is None else upoles
        name = row["name"].strip()
        kind = row["kind"].strip()
        if kind not in ("pole", "contact", "remainder"):
            raise self.error(f"unknown kind {kind!r}", line, row["kind"], hint="kind is pole, contact or remainder")
        pe = self.param(row["param"], parameters, line)
        exact_text = row.get("exact", "")
        if exact_text.strip():
            if self.numeric_rows:
                raise self.mixed(line)
            self.exact_rows += 1
            value = evaluate(exact_text.strip(), source=self.path, line=line)
            if "numeric" in row:
                self.check_numeric(row["numeric"], value, line)
        elif self.allow_numeric and row.get("numeric", "").strip():
            if self.exact_rows:
                raise self.mixed(line)
            self.numeric_rows += 1
            value = self.numeric_value(row["numeric"], line)
        else:
            hint = "every row needs its exact coefficient"
            if self.allow_numeric:
                hint = "every row needs its exact or (in a numeric-only table) its numeric value"
            raise self.error("empty 'exact' cell", line, hint=hint)
        key = (kind, name, pe)
        if key in seen:
            raise self.error(
                f"row {name} ({kind}, parameter monomial {row['param'].strip()}) repeats line {seen[key]}",
                line,
                name,
                cls=InputError,
            )
        seen[key] = line

        upole = coefficient_reference(name)
        if upole is not None and not (upole.family == "c" and len(upole.indices) == 3 and upole.indices[1] == 0
                                      and max(map(abs, upole.indices)) < 10**6):
            upole = None
        if upole is not None:
            i, k = upole.indices[0], upole.indices[2]
            if kind != "pole" or k >= 0 or i < 0:
                raise self.error(f"{name} is not a U-channel pole row", line, name,
                                 hint="c[i,0,k] with i >= 0, k < 0 and kind pole")
            if i + k > order:
                raise self.error(f"{name} lies beyond the order {order} given in the header", line, name,
                                 cls=InputError)
            slot = upoles.setdefault((i, k), {})
            slot[pe] = slot.get(pe, MZV()) + value
            return
        if kind in ("pole", "remainder") or basis == "monomial":
            i = self.integer(row["i"], line, "i")
            j = self.integer(row["j"], line, "j")
            if name != coefficient_name(i, j):
                raise self.error(
                    f"name {name!r} does not match i = {i}, j = {j}", line, name, hint=f"write {coefficient_name(i, j)}"
                )
            is_pole = i < 0 or j < 0
            if is_pole and kind != "pole":
                raise self.error(f"{name} is a pole but marked {kind!r}", line, name, hint="use kind pole")
            if kind == "pole" and not is_pole:
                raise self.error(f"{name} is not a pole", line, name, hint="use kind contact")
            if i + j > order:
                raise self.error(
                    f"{name} lies beyond the order {order} given in the header", line, name, cls=InputError
                )
            poly = {(i, j): Fraction(1)}
        else:
            label = row["label"].strip()
            if not name:
                raise self.error("empty element name", line)
            if basis in ("symmetric", "sigma"):
                parsed = parse_element_name(name)
                expected = {"symmetric": "sym", "sigma": "sigma"}[basis]
                if parsed is None or parsed[0] != expected:
                    raise self.error(
                        f"{name!r} is not an element of the {basis} basis",
                        line,
                        name,
                        hint=f"names are {expected}[a,b]",
                    )
                _, a, b = parsed
                degree = a + b if basis == "symmetric" else 2 * a + 3 * b
                if degree > order:
                    raise self.error(
                        f"{name} lies beyond the order {order} given in the header", line, name, cls=InputError
                    )
                if basis == "symmetric":
                    poly = {(a, b): Fraction(1), (b, a): Fraction(1)} if a != b else {(a, a): Fraction(1)}
                    own_label = polynomial_text(poly, variables)
                else:
                    poly = sigma_polynomial(a, b)
                    own_label = sigma_label(a, b)
                if label != own_label and parse_polynomial(label, variables, source=self.path, line=line) != poly:
                    raise self.error(f"label does not match the element {name}", line, label)
            else:
                poly = parse_polynomial(label, variables, source=self.path, line=line)
                if not poly:
                    raise self.error(f"element {name} is zero", line, label)
        numeric = not isinstance(value, MZV)
        for m, q in poly.items():
            if m[0] + m[1] > order:
                continue
            slot = coefficients.setdefault(m, {})
            if numeric:
                with mpmath.workdps(self.digits_or_default() + 10):
                    slot[pe] = slot.get(pe, mpmath.mpf(0)) + value * (mpmath.mpf(q.numerator) / q.denominator)
            else:
                slot[pe] = slot.get(pe, MZV()) + value * q

    def mixed(self, line: int) -> LowEnergyError:
        return self.error(
            "some rows have an exact value and some only a numeric one",
            line,
            hint="give every row its exact value, or leave every 'exact' cell empty (a numeric-only table)",
            cls=InputError,
        )

    def numeric_value(self, cell: str, line: int):
        """A numeric-only cell as an mpf carrying its significant digits."""
        text = cell.strip()
        try:
            dec = Decimal(text)
        except InvalidOperation:
            raise self.error("column 'numeric' is not a decimal number", line, cell) from None
        if not dec.is_finite():
            raise self.error("column 'numeric' is not a finite number", line, cell)
        sig = max(len(dec.as_tuple().digits), 1)
        if sig > MAX_DIGITS:
            raise self.error(f"column 'numeric' has more than {MAX_DIGITS} digits", line, cell, cls=InputError)
        # integers ("-1.0", a pole's coefficient) count as exact; the others set the precision
        if dec != dec.to_integral_value():
            self.numeric_digits = sig if self.numeric_digits is None else min(self.numeric_digits, sig)
        with mpmath.workdps(sig + 10):
            return mpmath.mpf(text)

    def digits_or_default(self) -> int:
        return self.numeric_digits if self.numeric_digits is not None else MAX_DIGITS


def read_csv(path: PathLike, *, numeric: bool = False):
    """Read a table written by :func:`write_csv` back into an ``Expansion``.

    Exact values round-trip exactly.  Tables in the symmetric, sigma and
    user bases are expanded back into monomials.  A row whose ``numeric``
    cell contradicts its ``exact`` cell is refused.  Any problem raises a
    :class:`~lowenergy.errors.LowEnergyError` naming the file and the line.

    With ``numeric=True`` a *numeric-only* table is accepted too: the
    ``exact`` column is absent or empty in every row and the ``numeric``
    cells are the values (the usual import from another computation).  Its
    coefficients are then ``mpmath.mpf`` numbers instead of MZVs, and
    ``expansion.meta`` holds ``numeric_only = True`` and ``numeric_digits``
    (the fewest significant digits of any cell); only
    :func:`lowenergy.constraints.check` (numerically) takes such a table.
    """
    return _CsvReader(path, numeric=numeric).read()


# --------------------------------------------------------------------------
# JSON
# --------------------------------------------------------------------------


def _join(parts: List[str]) -> str:
    if not parts:
        return "0"
    text = parts[0]
    for p in parts[1:]:
        text += " - " + p[1:] if p.startswith("-") else " + " + p
    return text


def _poly_text(pieces: List[Tuple[str, str, bool]]) -> str:
    """Join ``(coefficient text, monomial text, coefficient is one term)`` pieces."""
    parts = []
    for coeff, mono, single in pieces:
        if mono == "1":
            parts.append(coeff)
        elif coeff == "1":
            parts.append(mono)
        elif coeff == "-1":
            parts.append("-" + mono)
        elif single:
            parts.append(f"{coeff}*{mono}")
        else:
            parts.append(f"({coeff})*{mono}")
    return _join(parts)


def _group(rows: List[Row]) -> List[List[Row]]:
    groups: List[List[Row]] = []
    index: Dict[tuple, int] = {}
    for r in rows:
        key = (r.kind, r.name)
        if key not in index:
            index[key] = len(groups)
            groups.append([])
        groups[index[key]].append(r)
    return groups


def to_json_dict(expansion, digits: int = 20, basis: BasisSpec = "monomial") -> dict:
    """A JSON-ready dict of the table.

    Keys: ``format``, ``format_version``, ``title``, ``source``,
    ``variables``, ``parameters``, ``order``, ``basis``, ``in_basis``,
    ``terms``.  Each term has ``name``, ``kind``, ``powers`` (``[i, j]`` or
    ``null`` for sigma/user elements), ``polynomial`` (the element),
    ``order``, ``exact`` (polynomial text in the parameters with MZV
    coefficients, e.g. ``zeta(3)*a1 + 2*zeta(2)``), ``numeric`` (the same
    with decimal coefficients), ``weight`` and, with parameters,
    ``coefficients`` (one entry per parameter monomial).
    """
    decomposition, rows = table_rows(expansion, basis, digits)
    terms = []
    for group in _group(rows):
        first = group[0]
        exact = _poly_text([(r.exact, r.param, len(r.value.as_dict()) == 1) for r in group])
        numeric = _poly_text([(r.numeric, r.param, True) for r in group])
        weights = {r.weight for r in group}
        term = {
            "name": first.name,
            "kind": first.kind,
            "powers": None if first.i is None else ([first.i, first.j] if first.k is None
                                                     else [first.i, first.j, first.k]),
            "polynomial": first.label,
            "order": first.order,
            "exact": exact,
            "numeric": numeric,
            "weight": weights.pop() if len(weights) == 1 else "mixed",
        }
        if first.note:
            term["note"] = first.note
        if expansion.parameters:
            term["coefficients"] = [
                {
                    "param": r.param,
                    "exponents": list(r.param_exponents),
                    "exact": r.exact,
                    "numeric": r.numeric,
                    "weight": r.weight,
                }
                for r in group
            ]
        terms.append(term)
    return {
        "format": "lowenergy coefficient table",
        "format_version": CSV_FORMAT,
        "title": expansion.title or "",
        "source": expansion.source or "",
        "variables": list(expansion.variables),
        "parameters": list(expansion.parameters),
        "order": expansion.order,
        "basis": decomposition.basis,
        "in_basis": decomposition.in_basis,
        "digits": digits,
        "terms": terms,
    }


def write_json(expansion, path: PathLike, basis: BasisSpec = "monomial", digits: int = 20) -> Path:
    """Write :func:`to_json_dict` as a JSON file (atomically)."""
    text = json.dumps(to_json_dict(expansion, digits, basis), indent=2) + "\n"
    return _atomic_write(path, text)


# --------------------------------------------------------------------------
# LaTeX
# --------------------------------------------------------------------------

_LATEX_SPECIAL = {
    "\\": r"\textbackslash{}",
    "&": r"\&",
    "%": r"\%",
    "$": r"\$",
    "#": r"\#",
    "_": r"\_",
    "{": r"\{",
    "}": r"\}",
    "~": r"\textasciitilde{}",
    "^": r"\textasciicircum{}",
    "<": r"\textless{}",
    ">": r"\textgreater{}",
    "|": r"\textbar{}",
}


def latex_escape(text: str) -> str:
    """Escape text for LaTeX text mode (control characters are dropped)."""
    return "".join(_LATEX_SPECIAL.get(ch, ch) for ch in text if ch >= " " and ch != "\x7f")


def _numeric_latex(r: Row) -> str:
    text = r.numeric
    exact = False
    if r.value.is_rational():
        try:
            exact = Fraction(Decimal(text)) == r.value.rational_value()
        except (InvalidOperation, ValueError):  # pragma: no cover - nstr output is a decimal
            exact = False
    mantissa, _, exponent = text.partition("e")
    body = mantissa if exact else mantissa + r"\ldots"
    if exponent:
        body += rf" \times 10^{{{int(exponent)}}}"
    return f"${body}$"


def _term_latex(r: Row, basis: str) -> str:
    if r.kind == "contact" and basis == "user":
        return latex_escape(r.name)
    return f"${r.latex}$"


def to_latex(expansion, basis: BasisSpec = "monomial", digits: int = 20, pi: bool = False) -> str:
    """The table as a complete ``tabular`` environment (plain LaTeX).

    One row per term: ``$s^{2} t$ & $2\\, \\zeta(3)$ & $2.404\\ldots$ \\\\``;
    with parameters a column for the parameter monomial follows the term.
    Remainder rows, if any, come last under a note.  ``pi=True`` writes
    powers of ζ(2) as powers of π²/6.
    """
    decomposition, rows = table_rows(expansion, basis, digits)
    has_params = bool(expansion.parameters)
    ncols = 4 if has_params else 3
    out = [f"\\begin{{tabular}}{{{'l' * ncols}}}", "\\hline"]
    head = ["term"] + (["parameters"] if has_params else []) + ["coefficient", "numerical value"]
    out.append(" & ".join(head) + " \\\\")
    out.append("\\hline")
    in_remainder = False
    for r in rows:
        if r.kind == "remainder" and not in_remainder:
            in_remainder = True
            out.append("\\hline")
            note = latex_escape(f"remainder: {_NOTES[decomposition.basis]}")
            out.append(f"\\multicolumn{{{ncols}}}{{l}}{{{note}}} \\\\")
        cells = [_term_latex(r, decomposition.basis)]
        if has_params:
            cells.append(f"${r.param_latex}$")
        cells.append(f"${r.value.to_text(style='latex', pi=pi)}$")
        cells.append(_numeric_latex(r))
        out.append(" & ".join(cells) + " \\\\")
    out.append("\\hline")
    out.append("\\end{tabular}")
    return "\n".join(out) + "\n"


def write_latex(expansion, path: PathLike, basis: BasisSpec = "monomial", digits: int = 20, pi: bool = False) -> Path:
    """Write :func:`to_latex` to a file (atomically)."""
    return _atomic_write(path, to_latex(expansion, basis, digits, pi))


# --------------------------------------------------------------------------
# terminal
# --------------------------------------------------------------------------


def split_terms(text: str) -> List[str]:
    """The terms of a canonical plain-text value, each with its sign:
    ``"2*zeta(5) - zeta(2)*zeta(3)"`` -> ``["2*zeta(5)", "- zeta(2)*zeta(3)"]``.

    Splits only at top-level `` + `` / `` - ``, so a term (a token of the
    exact value) is never cut.

    >>> split_terms("37/20*zeta(2)^2 - 7*zeta(5) + 4*zeta(2)*zeta(3)")
    ['37/20*zeta(2)^2', '- 7*zeta(5)', '+ 4*zeta(2)*zeta(3)']
    """
    terms: List[str] = []
    depth = 0
    start = 0
    k = 0
    while k < len(text):
        ch = text[k]
        if ch in "([":
            depth += 1
        elif ch in ")]":
            depth -= 1
        elif depth == 0 and ch == " " and text[k + 1 : k + 3] in ("+ ", "- ") and k > start:
            terms.append(text[start:k])
            start = k + 1
            k += 2
        k += 1
    terms.append(text[start:])
    return [t for t in terms if t]


def wrap_terms(text: str, width: int) -> List[str]:
    """Lines of at most ``width`` characters, broken between terms only (a
    single term longer than ``width`` gets a line of its own, whole).

    >>> wrap_terms("2/5*zeta(2)^2 - zeta(3)", 16)
    ['2/5*zeta(2)^2', '- zeta(3)']
    """
    lines: List[str] = []
    for term in split_terms(text):
        if lines and len(lines[-1]) + 1 + len(term) <= width:
            lines[-1] += " " + term
        else:
            lines.append(term)
    return lines or [""]


def shorten_number(text: str, width: int) -> str:
    """A decimal string rounded to fewer significant digits so that it fits in
    ``width`` characters (never cut: at least one significant digit is kept).

    >>> shorten_number("1.64493406684822643647241516665", 8)
    '1.644934'
    >>> shorten_number("-0.0000123456789", 9)
    '-1.235e-5'
    """
    if len(text) <= width:
        return text
    try:
        with mpmath.workdps(len(text) + 5):
            x = mpmath.mpf(text)
            for k in range(len(text), 0, -1):
                out = mpmath.nstr(x, k, min_fixed=-4, max_fixed=k + 1)
                if len(out) <= width:
                    return out
    except (ValueError, TypeError):
        pass
    return text


#: The numeric column is shortened down to this width before the layout
#: gives up on the table.
NUMERIC_MIN_WIDTH = 10


def to_terminal(expansion, basis: BasisSpec = "monomial", digits: int = 20, pi: bool = False,
                width: Optional[int] = None):
    """The table as a rich renderable of at most ``width`` columns (cells are
    plain text, no markup).

    ``width`` defaults to the terminal's (``COLUMNS``, else 80).  The exact
    values are never dropped or cut inside a term: when the full table is too
    wide the numeric column is rounded to fewer digits first (down to
    :data:`NUMERIC_MIN_WIDTH` characters), then the exact values wrap between
    terms; when even that does not fit, one block per coefficient is shown
    instead of a table.
    """
    from rich.table import Table
    from rich.text import Text

    if width is None:
        import shutil

        width = shutil.get_terminal_size((80, 24)).columns
    decomposition, rows = table_rows(expansion, basis, digits)
    caption = (
        f"basis: {decomposition.basis}; "
        + ("the contact terms lie in the basis" if decomposition.in_basis else "NOT in the basis: see the remainder rows")
    )
    title = expansion.title or "low-energy expansion"
    headers = ["coefficient", "kind", "element"] + (["parameters"] if expansion.parameters else []) + ["weight"]
    ident = [[r.name, r.kind, r.label] + ([r.param] if expansion.parameters else []) + [str(r.weight)] for r in rows]
    exact = [r.value.to_text(pi=pi) for r in rows]
    numeric = [r.numeric for r in rows]
    id_widths = [max([len(h)] + [len(c[k]) for c in ident]) for k, h in enumerate(headers)]
    ncols = len(headers) + 2
    room = width - (3 * ncols + 1) - sum(id_widths)  # for the exact and numeric columns
    exact_full = max([len("exact")] + [len(x) for x in exact])
    exact_min = max([len("exact")] + [len(t) for x in exact for t in split_terms(x)])
    numeric_full = max([len("numeric")] + [len(x) for x in numeric])
    numeric_min = min(numeric_full, NUMERIC_MIN_WIDTH)

    if exact_full + numeric_min <= room:  # exact on one line, numeric as wide as possible
        exact_w, numeric_w = exact_full, min(numeric_full, room - exact_full)
    elif exact_min + numeric_min <= room:  # exact wrapped between terms
        exact_w, numeric_w = room - numeric_min, numeric_min
    else:
        return _terminal_blocks(title, caption, headers, ident, exact, numeric, width)

    table = Table(title=Text(title), caption=Text(caption))
    for h, w in zip(headers, id_widths):
        table.add_column(h, no_wrap=True, width=w, justify="right" if h == "weight" else "left")
    table.add_column("exact", no_wrap=True, width=exact_w)
    table.add_column("numeric", justify="right", no_wrap=True, width=numeric_w)
    for r, ids, x, num in zip(rows, ident, exact, numeric):
        style = {"pole": "cyan", "remainder": "yellow"}.get(r.kind, "")
        cells = ids + ["\n".join(wrap_terms(x, exact_w)), shorten_number(num, numeric_w)]
        table.add_row(*(Text(c) for c in cells), style=style or None)
    return table


def _terminal_blocks(title, caption, headers, ident, exact, numeric, width):
    """One block per coefficient: the identifiers on one line, then the exact
    value (``= ...``, wrapped between terms) and the numeric value (``≈ ...``)."""
    from rich.text import Text

    out = Text(no_wrap=True, overflow="ignore")
    out.append(title + "\n", style="bold")
    indent = "    "
    inner = max(width - len(indent) - 2, 1)
    for ids, x, num in zip(ident, exact, numeric):
        parts = [ids[0], ids[2]]
        if len(headers) == 5 and ids[3] != "1":
            parts.append(f"× {ids[3]}")
        parts.append(f"{ids[1]}, weight {ids[-1]}")
        out.append("\n" + "  ".join(parts) + "\n")
        for k, line in enumerate(wrap_terms(x, inner)):
            out.append(indent + ("= " if k == 0 else "  ") + line + "\n")
        out.append(indent + "≈ " + shorten_number(num, inner) + "\n")
    out.append("\n" + caption)
    return out
