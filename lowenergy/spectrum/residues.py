"""Poles of a worldsheet integral at the massive levels, exactly.

For ``I(s, t) = Σ_terms ∫_0^1 P · x^(A) (1-x)^(B) G(w; x) dx`` the poles in s
and t come only from the end points (METHOD.md §6).  Near ``x = 0`` every
G-word is a finite sum ``G(w; x) = Σ_k G(0^k; x) · f_k(x)`` with power series
``f_k`` whose coefficients are rational (:func:`g_series_at_zero`), and
``(1-x)^B = Σ_m (-1)^m binom(B, m) x^m`` with ``binom(B, m)`` a polynomial in
the variable of B.  So near ``x = 0``

    P · (1-x)^B G(w; x) = Σ_{m,k} E_{m,k} · x^m G(0^k; x),

``E_{m,k}`` exact polynomials in s, t and the parameters.  With
``A = shift + c·v`` (v = s or t, c ≠ 0) and ``α = shift + m + 1 + c·v``,

    ∫_0^1 x^(α-1) G(0^k; x) dx = (-1)^k / α^(k+1)
                               = (-1)^k / (c^(k+1) (v - p_m)^(k+1)),
    p_m = -(shift + m + 1)/c,

and ``∫_ε^1`` is entire in v, so the pole part of I at ``v = p_m`` is exactly
``Σ_k (-1)^k c^-(k+1) E_{m,k}(v) / (v - p_m)^(k+1)``, with ``E_{m,k}`` Taylor
expanded around ``v = p_m`` when it depends on v itself.  For
``A = -s - 1`` (c = -1, shift = -1) this is METHOD.md's
``∫ x^(-s-1+n) G(0^k; x) dx = -1/(s-n)^(k+1)``.

The end point ``x = 1`` is the same computation after ``x -> 1 - x``:
``G(w; 1-y)`` is rewritten in words ``G(u; y)`` with MZV coefficients by
:func:`lowenergy.integrand.transform.g_of_one_minus_x` (the shuffle-regularized
values at 1 appear there), and ``x^A`` becomes ``(1-y)^A``.  Poles of the same
variable at the same place from both end points are added.

Conventions
-----------
* A pole part is stored as ``{order m: R_m}`` meaning ``Σ_m R_m / (v - p)^m``;
  ``R_1`` is the residue ``Res_{v=p} I``.  No sign is flipped: for
  ``B(-s,-t) = Γ(-s)Γ(-t)/Γ(-s-t)`` the table holds
  ``R_1 = -(t+1)(t+2)...(t+n)/n!`` at ``s = n``.
* ``R_m`` is a polynomial in the *other* expansion variable and the
  parameters: ``{power of the other variable: {parameter exponents: MZV}}``.
* ``levels = L`` keeps every pole whose location p has ``|p| ≤ L``: for the
  usual ``x^(-s-1)`` these are the massless pole ``s = 0`` and the massive
  levels ``s = 1, ..., L``; a tachyon (``x^(-s-2)``, pole at ``s = -1``) is
  kept too; rational coefficients (``x^(2s-1)``) give rational locations.

Examples
--------
>>> from fractions import Fraction
>>> from lowenergy.integrand.model import Integrand, Term, LinearExponent
>>> from lowenergy.zeta.element import MZV
>>> beta = Integrand([Term({(0, 0): MZV.one()}, LinearExponent(-1, Fraction(-1), 0),
...                        LinearExponent(-1, Fraction(-1), 1))])
>>> table = residues(beta, 2)
>>> table.residue_text(2)                   # -(t+1)(t+2)/2
'-1/2*t^2 - 3/2*t - 1'
>>> table.residue_text(1, var="t")          # -(s+1)
'-s - 1'
"""

from __future__ import annotations

import csv
import io
import json
import math
from dataclasses import dataclass, field
from fractions import Fraction
from functools import lru_cache
from pathlib import Path
from typing import Dict, List, Mapping, Optional, Sequence, Tuple, Union

import flint

from ..errors import InputError
from ..fileio import write_atomic
from ..integrand.model import Integrand, Poly, Term
from ..integrand.transform import g_of_one_minus_x
from ..poly import add_term, mul as poly_mul
from ..zeta.element import MZV
from ..zeta.format import fraction_text
from ..zeta.table import TableStore, default_store

__all__ = [
    "ParamPoly",
    "ResiduePoly",
    "VarSpec",
    "ResidueTable",
    "residues",
    "g_series_at_zero",
    "poly_text",
    "write_rows",
]

ParamPoly = Dict[Tuple[int, ...], MZV]
ResiduePoly = Dict[int, ParamPoly]
VarSpec = Union[int, str]


# ---------------------------------------------------------------------------
# G-words near x = 0
# ---------------------------------------------------------------------------

@lru_cache(maxsize=4096)
def _g_series_cached(word: Tuple[int, ...], order: int) -> Tuple[Tuple[int, Tuple[Fraction, ...]], ...]:
    # series[k][m] = coefficient of x^m log(x)^k / k!; the word is built from
    # its innermost (last) letter outwards, G(a, w; x) = ∫_0^x dt/(t-a) G(w; t).
    series: Dict[int, List[Fraction]] = {0: [Fraction(1)] + [Fraction(0)] * order}
    for letter in reversed(word):
        new: Dict[int, List[Fraction]] = {}

        def slot(k: int) -> List[Fraction]:
            if k not in new:
                new[k] = [Fraction(0)] * (order + 1)
            return new[k]

        for k, coeffs in series.items():
            if letter == 0:
                # m = 0: ∫_0^x dt/t L^k/k! = L^(k+1)/(k+1)! (tangential base point);
                # m ≥ 1: ∫_0^x t^(m-1) L^k/k! dt = x^m Σ_j (-1)^j L^(k-j)/((k-j)! m^(j+1)).
                if coeffs[0]:
                    slot(k + 1)[0] += coeffs[0]
                for m in range(1, order + 1):
                    g = coeffs[m]
                    if not g:
                        continue
                    for j in range(k + 1):
                        slot(k - j)[m] += g * Fraction((-1) ** j, m ** (j + 1))
            elif letter == 1:
                # 1/(t-1) = -Σ_r t^r:  ∫_0^x dt/(t-1) t^m L^k/k!
                #   = -Σ_{M > m} x^M Σ_j (-1)^j L^(k-j)/((k-j)! M^(j+1)),
                # so the coefficient at x^M needs the prefix sum of coeffs[m < M].
                prefix = Fraction(0)
                for M in range(1, order + 1):
                    prefix += coeffs[M - 1]
                    if not prefix:
                        continue
                    for j in range(k + 1):
                        slot(k - j)[M] -= prefix * Fraction((-1) ** j, M ** (j + 1))
            else:
                raise InputError(f"letters of words are 0 and 1, got {letter!r}")
        series = {k: v for k, v in new.items() if any(v)}
    return tuple((k, tuple(v)) for k, v in sorted(series.items()))


def g_series_at_zero(word: Sequence[int], order: int) -> Dict[int, List[Fraction]]:
    """``G(word; x) = Σ_k Σ_{m ≤ order} c[k][m] x^m log(x)^k/k! + O(x^(order+1) log^K x)``.

    The iterated integrals are taken from the tangential base point at 0
    (``G(0^n; x) = log(x)^n/n!``), the regularization of
    :mod:`lowenergy.words`; all coefficients are rational.

    Parameters
    ----------
    word:
        Letters 0 and 1.
    order:
        Highest power of x kept.

    Returns
    -------
    dict
        ``{k: [c[k][0], ..., c[k][order]]}`` (only non-zero k).

    Examples
    --------
    >>> g_series_at_zero((1,), 3)[0]          # log(1-x) = -x - x^2/2 - x^3/3
    [Fraction(0, 1), Fraction(-1, 1), Fraction(-1, 2), Fraction(-1, 3)]
    >>> sorted(g_series_at_zero((0, 0), 1))   # log(x)^2/2 only
    [2]
    """
    if not isinstance(order, int) or order < 0:
        raise InputError(f"the order of a series must be a non-negative integer, got {order!r}")
    return {k: list(v) for k, v in _g_series_cached(tuple(int(a) for a in word), order)}


def _binomial_series(shift: int, coeff: Fraction, order: int) -> List[List[Fraction]]:
    """Coefficients of ``(1-x)^(shift + coeff·z)``: entry m is the polynomial
    ``(-1)^m binom(B, m) = Π_{i<m} (i - B)/(i + 1)`` in z (list by power of z)."""
    out = [[Fraction(1)]]
    cur = [Fraction(1)]
    for i in range(order):
        # multiply by (i - shift - coeff·z)/(i + 1)
        nxt = [Fraction(0)] * (len(cur) + 1)
        for p, c in enumerate(cur):
            if not c:
                continue
            nxt[p] += c * (i - shift) / (i + 1)
            nxt[p + 1] -= c * coeff / (i + 1)
        while len(nxt) > 1 and not nxt[-1]:
            nxt.pop()
        cur = nxt
        out.append(cur)
    return out


# ---------------------------------------------------------------------------
# polynomial helpers on plain dicts
# ---------------------------------------------------------------------------

# ``target[key] += value`` dropping zeros (the one copy is lowenergy.poly.add_term;
# the name stays for lowenergy.svpolylog.sphere_residues, which imports it)
_padd = add_term


def _taylor_shift(poly: Poly, index: int, point: Fraction) -> Dict[int, Poly]:
    """``poly`` with variable ``index`` replaced by ``point + ε``: ``{r: coefficient of ε^r}``.

    Accumulated on the canonical monomials of the MZV coefficients with
    python-flint rationals (one MZV built per output coefficient, not one
    per product: high levels give polynomials of high degree).
    """
    acc: Dict[int, Dict[Tuple[int, ...], Dict[tuple, "flint.fmpq"]]] = {}
    powers: Dict[int, "flint.fmpq"] = {}
    for key, value in poly.items():
        e = key[index]
        rest = key[:index] + (0,) + key[index + 1 :]
        flat = [(mono, _q(q)) for mono, q in value.as_dict().items() if q]
        for r in range(e + 1):
            if e - r not in powers:
                powers[e - r] = _q(Fraction(point) ** (e - r))
            factor = powers[e - r] * math.comb(e, r)
            if not factor:
                continue
            slot = acc.setdefault(r, {}).setdefault(rest, {})
            for mono, q in flat:
                slot[mono] = slot[mono] + q * factor if mono in slot else q * factor
    out: Dict[int, Poly] = {}
    for r, by_rest in acc.items():
        for rest, terms in by_rest.items():
            value = _mzv_from_flat(terms)
            if value:
                out.setdefault(r, {})[rest] = value
    return out


def poly_text(
    rpoly: ResiduePoly,
    variable: str = "t",
    parameters: Sequence[str] = (),
    style: str = "plain",
) -> str:
    """A residue polynomial as text, highest power first.

    ``style="plain"`` uses the package's input syntax, ``"latex"`` LaTeX.

    >>> poly_text({2: {(): MZV.rational(Fraction(-1, 2))}, 0: {(): MZV.one()}})
    '-1/2*t^2 + 1'
    """
    latex = style == "latex"
    pieces: List[str] = []
    for power in sorted(rpoly, reverse=True):
        for pkey in sorted(rpoly[power], reverse=True):
            coef = rpoly[power][pkey]
            if not coef:
                continue
            factors = []
            if power:
                factors.append(variable if power == 1 else (f"{variable}^{{{power}}}" if latex else f"{variable}^{power}"))
            for name, e in zip(parameters, pkey):
                if e:
                    factors.append(name if e == 1 else (f"{name}^{{{e}}}" if latex else f"{name}^{e}"))
            mono = (" " if latex else "*").join(factors)
            text = coef.to_text(style="latex" if latex else "plain")
            negative = False
            if coef.is_rational():
                q = coef.rational_value()
                negative = q < 0
                if negative:
                    text = (-coef).to_text(style="latex" if latex else "plain")
                if mono and abs(q) == 1:
                    text = ""
            elif len(list(coef.terms())) > 1:
                text = f"({text})"
            body = text + ((" " if latex else "*") if text and mono else "") + mono
            pieces.append(("-" if negative else "+", body or "1"))
    if not pieces:
        return "0"
    out = ("-" if pieces[0][0] == "-" else "") + pieces[0][1]
    for sign, body in pieces[1:]:
        out += f" {sign} {body}"
    return out


# ---------------------------------------------------------------------------
# the table
# ---------------------------------------------------------------------------

@dataclass
class ResidueTable:
    """Exact pole parts of an integral at ``s = p`` and ``t = p``.

    Attributes
    ----------
    variables, parameters:
        Names, from the integrand.
    levels:
        Every pole with ``|location| ≤ levels`` is present.
    poles:
        ``{(var, location): {order m: R_m}}`` with var 0 (s) or 1 (t), location a
        Fraction and ``R_m`` a :data:`ResiduePoly` in the other variable and
        the parameters; the pole part is ``Σ_m R_m/(var - location)^m``.
    title, source:
        From the integrand.
    u_poles:
        Sphere integrals only: ``{location: {order m: R_m}}``, the pole parts
        ``Σ_m R_m/(U - location)^m`` in ``U = -S-T`` (from z → ∞), ``R_m`` a
        :data:`ResiduePoly` in the *first* variable (T = -S-U substituted).
    """

    variables: Tuple[str, str]
    parameters: Tuple[str, ...]
    levels: int
    poles: Dict[Tuple[int, Fraction], Dict[int, ResiduePoly]]
    title: str = ""
    source: str = ""
    meta: dict = field(default_factory=dict)
    u_poles: Dict[Fraction, Dict[int, ResiduePoly]] = field(default_factory=dict)

    @classmethod
    def of_integrand(cls, integrand, levels: int, poles, **extra) -> "ResidueTable":
        """A table with the names, title and source of ``integrand``."""
        return cls(
            variables=tuple(integrand.variables),
            parameters=tuple(integrand.parameters),
            levels=levels,
            poles=poles,
            title=integrand.title,
            source=integrand.source,
            **extra,
        )

    @property
    def u_name(self) -> str:
        """The name of the third Mandelstam variable in the rows (``U``, or ``u_`` if taken)."""
        return "U" if "U" not in self.variables and "U" not in self.parameters else "u_"

    def u_residue_text(self, location, order: int = 1, style: str = "plain") -> str:
        """The numerator of ``1/(U - location)^order`` as text (a polynomial in the first variable)."""
        rp = self.u_poles.get(Fraction(location), {}).get(order, {})
        return poly_text(rp, self.variables[0], self.parameters, style)

    # -- lookup -------------------------------------------------------------------
    def var_index(self, var: VarSpec) -> int:
        """0 or 1 for a variable given by index or by name."""
        if isinstance(var, str):
            if var not in self.variables:
                raise InputError(f"unknown variable {var!r}", hint=f"use one of {list(self.variables)}")
            return self.variables.index(var)
        if var not in (0, 1):
            raise InputError(f"variables are 0 (first) or 1 (second), got {var!r}")
        return var

    def locations(self, var: VarSpec = 0) -> List[Fraction]:
        """Sorted pole locations of one variable."""
        v = self.var_index(var)
        return sorted(p for (w, p) in self.poles if w == v)

    def pole(self, location, var: VarSpec = 0) -> Dict[int, ResiduePoly]:
        """``{order: R_m}`` at ``var = location`` (``{}`` if there is no pole)."""
        v = self.var_index(var)
        p = Fraction(location)
        if abs(p) > self.levels:
            raise InputError(
                f"location {p} is beyond the {self.levels} levels of this table",
                hint=f"compute residues(integrand, {math.ceil(abs(p))}) or more",
            )
        return {m: dict(r) for m, r in self.poles.get((v, p), {}).items()}

    def coefficient(self, location, order: int = 1, var: VarSpec = 0) -> ResiduePoly:
        """``R_order`` at ``var = location`` ({} if zero)."""
        return self.pole(location, var).get(order, {})

    def residue(self, location, var: VarSpec = 0) -> ResiduePoly:
        """The residue ``R_1`` (coefficient of the simple pole)."""
        return self.coefficient(location, 1, var)

    def max_order(self, location, var: VarSpec = 0) -> int:
        """Highest pole order at ``var = location`` (0: no pole)."""
        return max(self.pole(location, var), default=0)

    def univariate(self, location, order: int = 1, var: VarSpec = 0,
                   params: Tuple[int, ...] | None = None) -> Dict[int, MZV]:
        """``R_order`` as ``{power: MZV}`` for one parameter monomial (default: the constant one)."""
        key = tuple(params) if params is not None else (0,) * len(self.parameters)
        out: Dict[int, MZV] = {}
        for power, pp in self.coefficient(location, order, var).items():
            if key in pp:
                out[power] = pp[key]
        return out

    def residue_text(self, location, order: int = 1, var: VarSpec = 0, style: str = "plain") -> str:
        v = self.var_index(var)
        return poly_text(self.coefficient(location, order, v), self.variables[1 - v], self.parameters, style)

    # -- transformations ------------------------------------------------------------
    def divided(self, factor: Mapping[int, Union[int, Fraction]], var: VarSpec = 0,
                strict: bool = True) -> "ResidueTable":
        """Pole parts in ``var`` of ``I / f``, f a polynomial in the *other* variable.

        If ``I(s, t) = f(t) · V(s, t)`` the poles of V in s are those of I
        divided by f(t), order by order.  ``factor`` is ``{power: rational}``;
        the division must be exact (a factor of ``t`` needs residues vanishing
        at ``t = 0``), else :class:`~lowenergy.errors.InputError`; with
        ``strict=False`` such locations are left out instead and listed in
        ``meta["not_divisible"]`` (e.g. the massless pole ``s = 0`` of
        ``Γ(-s)Γ(-t)/Γ(1-s-t)``, whose residue ``-1/t`` is no polynomial).  The result
        holds the poles in ``var`` only: those in the other variable would
        need the Laurent expansion of ``1/f`` and are dropped.

        >>> from lowenergy.integrand.model import Integrand, Term, LinearExponent
        >>> i = Integrand([Term({(0, 0): MZV.one()}, LinearExponent(-1, Fraction(-1), 0),
        ...                     LinearExponent(0, Fraction(-1), 1))])   # = -t Γ(-s)Γ(-t)/Γ(1-s-t)
        >>> v = residues(i, 3).divided({1: -1}, strict=False)
        >>> v.residue_text(3)                                           # (t+1)(t+2)/3!
        '1/6*t^2 + 1/2*t + 1/3'
        >>> v.meta["not_divisible"]                                     # s = 0: -1/t
        [Fraction(0, 1)]
        """
        v = self.var_index(var)
        f = {int(k): Fraction(c) for k, c in factor.items() if c}
        if not f:
            raise InputError("division by the zero polynomial")
        top = max(f)
        lead = f[top]
        poles: Dict[Tuple[int, Fraction], Dict[int, ResiduePoly]] = {}
        skipped: List[Fraction] = []
        for (w, p), orders in sorted(self.poles.items()):
            if w != v:
                continue
            new_orders: Dict[int, ResiduePoly] = {}
            divisible = True
            for m, rpoly in orders.items():
                rem = {k: dict(pp) for k, pp in rpoly.items()}
                quot: ResiduePoly = {}
                while rem and max(rem) >= top:
                    d = max(rem)
                    qc = {pk: c / lead for pk, c in rem[d].items()}
                    quot[d - top] = qc
                    for fk, fc in f.items():
                        slot = rem.setdefault(d - top + fk, {})
                        for pk, c in qc.items():
                            add_term(slot, pk, -(c * fc))
                        if not slot:
                            del rem[d - top + fk]
                if rem and not strict:
                    divisible = False
                    break
                if rem:
                    raise InputError(
                        f"the pole part of order {m} at {self.variables[v]} = {p} is not divisible by the factor",
                        hint="divide only by factors of the residues (e.g. -t for x^(-s-1)(1-x)^(-t))",
                    )
                if quot:
                    new_orders[m] = quot
            if not divisible:
                skipped.append(p)
            elif new_orders:
                poles[(w, p)] = new_orders
        return ResidueTable(self.variables, self.parameters, self.levels, poles, title=self.title,
                            source=self.source, meta=dict(self.meta, divided=f, not_divisible=skipped))

    # -- tables ----------------------------------------------------------------
    def to_rows(self, digits: int = 15) -> List[Dict[str, object]]:
        """One row per (variable, location, order, power of the other variable, parameter monomial).

        Columns: ``variable``, ``location``, ``order``, ``power`` (of the other
        variable), ``param``, ``exact`` (plain text), ``numeric`` (decimal
        string, ``digits`` significant digits).
        """
        rows: List[Dict[str, object]] = []
        places = [(self.variables[v], p, self.poles[(v, p)]) for (v, p) in sorted(self.poles)]
        places += [(self.u_name, p, self.u_poles[p]) for p in sorted(self.u_poles)]
        for name, p, orders in places:
            for m in sorted(orders, reverse=True):
                rpoly = orders[m]
                for power in sorted(rpoly):
                    for pkey in sorted(rpoly[power]):
                        coef = rpoly[power][pkey]
                        rows.append({
                            "variable": name,
                            "location": fraction_text(p),
                            "order": m,
                            "power": power,
                            "param": _param_text(pkey, self.parameters),
                            "exact": coef.to_text(),
                            "numeric": _numeric_text(coef, digits),
                        })
        return rows

    def to_dataframe(self, digits: int = 15):
        """The rows of :meth:`to_rows` as a pandas DataFrame."""
        import pandas

        return pandas.DataFrame(self.to_rows(digits), columns=_RESIDUE_COLUMNS)

    def write(self, path, fmt: Optional[str] = None, digits: int = 15) -> Path:
        """Write the rows as CSV, JSON or LaTeX (format from ``fmt`` or the suffix)."""
        return write_rows(self.to_rows(digits), path, fmt, columns=_RESIDUE_COLUMNS,
                          caption=f"Pole parts: {self.title or self.source}")


_RESIDUE_COLUMNS = ["variable", "location", "order", "power", "param", "exact", "numeric"]


def group_pole_numerators(raw: Dict, other_of) -> Dict:
    """``{place: {order m: {(i, j, params...): value}}}`` → ``{place: {m:
    {power of the other variable: {params: value}}}}``: the numerator of
    each pole as a polynomial in the other variable (index ``other_of(place)``
    of the key), dropping zeros and empty orders and places."""
    poles: Dict = {}
    for place, orders in raw.items():
        other = other_of(place)
        conv: Dict[int, ResiduePoly] = {}
        for m, poly in orders.items():
            rp: ResiduePoly = {}
            for key, value in poly.items():
                if value:
                    rp.setdefault(key[other], {})[tuple(key[2:])] = value
            if rp:
                conv[m] = rp
        if conv:
            poles[place] = conv
    return poles


def _param_text(pkey: Tuple[int, ...], names: Sequence[str]) -> str:
    parts = [n if e == 1 else f"{n}^{e}" for n, e in zip(names, pkey) if e]
    return "*".join(parts) or "1"


def _numeric_text(coef: MZV, digits: int) -> str:
    import mpmath

    if coef.is_rational():
        q = coef.rational_value()
        with mpmath.workdps(digits):
            return mpmath.nstr(mpmath.mpf(q.numerator) / q.denominator, digits)
    with mpmath.workdps(digits):
        return mpmath.nstr(coef.numeric(digits), digits)


# ---------------------------------------------------------------------------
# simple writers (shared with the partial-wave tables)
# ---------------------------------------------------------------------------

_LATEX_SPECIAL = {"\\": r"\textbackslash{}", "&": r"\&", "%": r"\%", "$": r"\$", "#": r"\#",
                  "_": r"\_", "{": r"\{", "}": r"\}", "~": r"\textasciitilde{}", "^": r"\^{}"}


def _latex_escape(text: str) -> str:
    return "".join(_LATEX_SPECIAL.get(c, c) for c in text)


def write_rows(rows: List[Dict[str, object]], path, fmt: Optional[str] = None,
               columns: Optional[Sequence[str]] = None, caption: str = "") -> Path:
    """Write table rows to ``path`` as ``csv``, ``json`` or ``latex`` (``tex``).

    The text is built first and moved into place atomically, so a failure
    never leaves a partial file.  Returns the path.
    """
    path = Path(path)
    fmt = (fmt or path.suffix.lstrip(".")).lower()
    cols = list(columns) if columns is not None else (list(rows[0]) if rows else [])
    if fmt == "csv":
        buf = io.StringIO()
        writer = csv.writer(buf, lineterminator="\n")
        writer.writerow(cols)
        for row in rows:
            writer.writerow([row.get(c, "") for c in cols])
        text = buf.getvalue()
    elif fmt == "json":
        text = json.dumps({"columns": cols, "rows": [{c: row.get(c) for c in cols} for row in rows]},
                          indent=1, ensure_ascii=False) + "\n"
    elif fmt in ("latex", "tex"):
        lines = [r"\begin{tabular}{" + "l" * len(cols) + "}", r"\hline",
                 " & ".join(_latex_escape(c) for c in cols) + r" \\", r"\hline"]
        for row in rows:
            lines.append(" & ".join(_latex_escape(str(row.get(c, ""))) for c in cols) + r" \\")
        lines += [r"\hline", r"\end{tabular}"]
        if caption:
            lines.insert(0, "% " + caption.replace("\n", " "))
        text = "\n".join(lines) + "\n"
    else:
        raise InputError(f"unknown table format {fmt!r}", hint="use csv, json or latex (.csv, .json, .tex)")
    write_atomic(path, text)
    return path


# ---------------------------------------------------------------------------
# the computation
# ---------------------------------------------------------------------------

def _convolve(g: Sequence[Fraction], binom: List[List[Fraction]], m: int) -> List[Fraction]:
    """Σ_{m'} binom_{m'}(z) g_{m−m'}: the coefficient of x^m, as a list of powers of z."""
    acc: List[Fraction] = []
    for mp in range(m + 1):
        gc = g[m - mp]
        if not gc:
            continue
        b = binom[mp]
        if len(acc) < len(b):
            acc.extend([Fraction(0)] * (len(b) - len(acc)))
        for power, bc in enumerate(b):
            if bc:
                acc[power] += bc * gc
    return acc


def _m_range(shift: int, coeff: Fraction, levels: int) -> range:
    """Powers m whose pole location ``-(shift + m + 1)/coeff`` lies in [-levels, levels]."""
    span = levels * abs(coeff)
    hi = math.floor(span) - shift - 1
    lo = max(0, math.ceil(-span) - shift - 1)
    return range(lo, hi + 1)


def _endpoint_poles(
    coefficient: Poly,
    near,            # LinearExponent of the end point (x at 0, or 1-x at 1 after x -> 1-x)
    far,             # LinearExponent of the other factor, which becomes (1-y)^far
    words: Dict[Tuple[int, ...], MZV],
    levels: int,
    nvars: int,
    out: Dict[Tuple[int, Fraction], Dict[int, Poly]],
) -> None:
    if near.var is None:
        # no expansion variable: only a check that the end point converges
        top = -near.shift - 1
        if top < 0:
            return
        m_values = range(0, top + 1)
    else:
        m_values = _m_range(near.shift, near.coeff, levels)
    if not m_values:
        return
    # E_{m,k}(z) = Σ_u c_u Σ_{m'} binom_{m'}(z) g^u_{k, m-m'}: rational work first,
    # one multiplication by the MZV c_u per (u, m, k).
    expansions: Dict[Tuple[int, int], Poly] = {}
    for _u, cu, m, k, power, value in _endpoint_terms(words, far, m_values):
        key = [0] * nvars
        if far.var is not None:
            key[far.var] = power
        add_term(expansions.setdefault((m, k), {}), tuple(key), cu * value)
    poles_from_expansions(coefficient, near, expansions, levels, out)


def _endpoint_terms(words: Dict[Tuple[int, ...], MZV], far, m_values: range):
    """The non-zero rational pieces of the end-point expansions E_{m,k}:
    ``(u, c_u, m, k, power of the far variable, value)`` for every word u with
    coefficient c_u, from the convolution of u's series at 0 with the
    binomial series of the far factor (shared by both end-point paths)."""
    binom = _binomial_series(far.shift, far.coeff, m_values[-1])
    for u, cu in words.items():
        for k, g in g_series_at_zero(u, m_values[-1]).items():
            for m in m_values:
                for power, value in enumerate(_convolve(g, binom, m)):
                    if not value:
                        continue
                    if far.var is None and power:
                        raise AssertionError("binomial series without variable has degree 0")
                    yield u, cu, m, k, power, value


def poles_from_expansions(
    coefficient: Poly,
    near,
    expansions: Dict[Tuple[int, int], Poly],
    levels: int,
    out: Dict[Tuple[int, Fraction], Dict[int, Poly]],
) -> None:
    """Pole parts from the expansion at an end point.

    ``expansions[(m, k)]`` is the exact polynomial ``E_{m,k}`` (full exponent
    keys) multiplying ``x^m log(x)^k/k!`` next to ``x^(near)``; each gives
    ``(-1)^k c^-(k+1) coefficient·E_{m,k} / (v - p_m)^(k+1)`` (module
    docstring), Taylor expanded around the location and accumulated in
    ``out[(near.var, p_m)][order]``.  Shared with the sphere residues
    (:mod:`lowenergy.svpolylog.sphere_residues`), whose diagonal terms
    ``|z|^(2m) log^k|z|²/k!`` integrate to the same ``(-1)^k/α^(k+1)``.
    """
    for (m, k), poly in expansions.items():
        full: Poly = poly_mul(coefficient, poly)
        if not full:
            continue
        if near.var is None:
            raise InputError(
                "the integral diverges at an end point for all values of the expansion variables",
                hint="a factor x^(-1) or (1-x)^(-1) (or a more negative power) needs an expansion "
                "variable in its exponent, e.g. x^(-s-1)",
            )
        c = near.coeff
        p = Fraction(-(near.shift + m + 1)) / c
        if abs(p) > levels:
            continue
        scale = Fraction((-1) ** k) / c ** (k + 1)
        for r, part in _taylor_shift(full, near.var, p).items():
            j = k + 1 - r
            if j < 1:
                continue
            slot = out.setdefault((near.var, p), {}).setdefault(j, {})
            for key, value in part.items():
                add_term(slot, key, value * scale)


# Flat rational form of the same computation (the fast path).  MZV elements are
# canonical polynomials in the generators, so a product of two of them is the
# concatenation of monomials (``_mono_mul``): working on ``{monomial:
# Fraction}`` dicts avoids building an MZV object per intermediate product,
# which dominated the time for ansätze with hundreds of parameters.

FlatPoly = Dict[Tuple[Tuple[int, ...], tuple], Fraction]   # {(exponent key, MZV monomial): q}


def _q(x: Fraction) -> "flint.fmpq":
    """A Fraction as python-flint's fmpq (exact; C arithmetic in the hot loop)."""
    return flint.fmpq(x.numerator, x.denominator)


def _mzv_from_flat(terms: Dict[tuple, "flint.fmpq"]) -> MZV:
    """An MZV from canonical monomials (products via ``_mono_mul`` are sorted) and fmpq values."""
    out = MZV.__new__(MZV)
    out._terms = {m: Fraction(int(q.p), int(q.q)) for m, q in terms.items() if q}
    out._hash = None
    return out


def _endpoint_poles_flat(
    coefficient: Poly,
    near,
    far,
    words: Dict[Tuple[int, ...], MZV],
    levels: int,
    nvars: int,
    out: Dict[Tuple[int, Fraction], Dict[int, Dict[Tuple[Tuple[int, ...], tuple], Fraction]]],
    pindex,
) -> None:
    """:func:`_endpoint_poles` for ``near.var`` not None (and the other end
    point's exponent free of it), accumulating flat ``{((power of the other
    variable, parameter exponents), monomial): Fraction}`` dicts in
    ``out[(var, location)][order]``."""
    from ..zeta.element import _mono_mul

    m_values = _m_range(near.shift, near.coeff, levels)
    if not m_values:
        return
    # E_{m,k}: {(power of the far variable, monomial): q}
    expansions: Dict[Tuple[int, int], Dict[Tuple[int, tuple], Fraction]] = {}
    flat = {u: list(cu.as_dict().items()) for u, cu in words.items()}
    for u, _cu, m, k, power, value in _endpoint_terms(words, far, m_values):
        slot = expansions.setdefault((m, k), {})
        for mono, q in flat[u]:
            key = (power, mono)
            slot[key] = slot.get(key, Fraction(0)) + value * q
    c = near.coeff
    v = near.var
    o = 1 - v
    # keys inside: (power of the other variable, index of the parameter
    # exponents): for ansätze with hundreds of parameters the exponent tuples
    # are long, and hashing them per product would cost that length each time
    coef_flat = [(key[v], key[o], pindex(tuple(key[2:])), [(m, _q(q)) for m, q in x.as_dict().items()])
                 for key, x in coefficient.items() if x]
    shifted: Dict[Fraction, Dict[int, List[Tuple[Tuple[int, ...], tuple, Fraction]]]] = {}
    for (m, k), poly in expansions.items():
        poly = {key: _q(q) for key, q in poly.items() if q}
        if not poly:
            continue
        p = Fraction(-(near.shift + m + 1)) / c
        if abs(p) > levels:
            continue
        if p not in shifted:
            # Taylor coefficients of the coefficient around near = p: {r: [(rest key, mono, q)]}
            by_r: Dict[int, Dict[Tuple[Tuple[int, ...], tuple], Fraction]] = {}
            for e, fe, pkey, flat in coef_flat:
                rest = (fe, pkey)
                for r in range(e + 1):
                    factor = math.comb(e, r) * p ** (e - r)
                    if not factor:
                        continue
                    factor = _q(factor)
                    slot = by_r.setdefault(r, {})
                    for mono, q in flat:
                        kk = (rest, mono)
                        slot[kk] = slot[kk] + q * factor if kk in slot else q * factor
            shifted[p] = {r: [(kk[0], kk[1], q) for kk, q in d.items() if q] for r, d in by_r.items()}
        scale = _q(Fraction((-1) ** k) / c ** (k + 1))
        for r, entries in shifted[p].items():
            j = k + 1 - r
            if j < 1:
                continue
            target = out.setdefault((v, p), {}).setdefault(j, {})
            for (power, monob), qb in poly.items():
                qb = qb * scale
                for rest, monoa, qa in entries:
                    key = (rest[0] + power, rest[1]) if power else rest
                    mono = _mono_mul(monoa, monob) if monoa and monob else (monoa or monob)
                    kk = (key, mono)
                    target[kk] = target[kk] + qa * qb if kk in target else qa * qb


def residues(integrand: Integrand, levels: int, *, store: TableStore | None = None) -> ResidueTable:
    """Exact pole parts of ``∫_0^1 (integrand) dx`` at ``s = p`` and ``t = p``, ``|p| ≤ levels``.

    Parameters
    ----------
    integrand:
        See :mod:`lowenergy.integrand.model`; words of any length, any
        integer shifts, rational coefficients of s and t in the exponents,
        free parameters (the pole coefficients are polynomials in them).
    levels:
        Keep the poles with ``|location| ≤ levels`` (for ``x^(-s-1)``: the
        massless pole and the massive levels ``s = 1..levels``).
    store:
        MZV tables (default: the user's cache); needed for the end point
        ``x = 1`` when words carry regularized values there.

    Returns
    -------
    ResidueTable

    Raises
    ------
    InputError
        For a negative ``levels`` or an integral that diverges at an end
        point whatever s and t (e.g. ``x^(-1)`` with no variable).
    """
    if not isinstance(levels, int) or isinstance(levels, bool) or levels < 0:
        raise InputError(f"levels must be a non-negative integer, got {levels!r}")
    if getattr(integrand, "domain", "interval") != "interval":
        raise InputError(
            f"this function computes the poles of interval integrals, not of {integrand.domain} integrands",
            source=integrand.source,
            hint="use lowenergy.svpolylog.sphere_residues.sphere_residues (the CLI's residues does so)",
        )
    store = store or default_store()
    nvars = integrand.nvars
    raw: Dict[Tuple[int, Fraction], Dict[int, Poly]] = {}
    flat: Dict[Tuple[int, Fraction], Dict[int, Dict[Tuple[Tuple[int, ...], tuple], Fraction]]] = {}
    pkeys: List[Tuple[int, ...]] = []
    pindices: Dict[Tuple[int, ...], int] = {}

    def pindex(pkey: Tuple[int, ...]) -> int:
        if pkey not in pindices:
            pindices[pkey] = len(pkeys)
            pkeys.append(pkey)
        return pindices[pkey]

    def endpoint(coefficient, near, far, words):
        if near.var is None or far.var == near.var:
            # (the flat path Taylor-shifts only the coefficient, so it needs the
            # binomial series of the other end point free of the near variable)
            _endpoint_poles(coefficient, near, far, words, levels, nvars, raw)
        else:
            _endpoint_poles_flat(coefficient, near, far, words, levels, nvars, flat, pindex)

    for term in integrand.terms:
        term: Term
        if not term.coefficient:
            continue
        word = tuple(term.word)
        try:
            # x -> 0
            endpoint(term.coefficient, term.x_exp, term.y_exp, {word: MZV.one()})
            # x -> 1, after x -> 1 - x: (1-y)^(x_exp) y^(y_exp) G(word; 1-y)
            flipped = g_of_one_minus_x(word, store=store) if word else {(): MZV.one()}
            endpoint(term.coefficient, term.y_exp, term.x_exp, flipped)
        except InputError as err:
            raise err.located(source=integrand.source, line=term.source_line, term=term.text)
    poles: Dict[Tuple[int, Fraction], Dict[int, ResiduePoly]] = group_pole_numerators(raw, lambda place: 1 - place[0])
    for place, orders in flat.items():
        for j, entries in orders.items():
            grouped: Dict[Tuple[int, Tuple[int, ...]], Dict[tuple, Fraction]] = {}
            for (key, mono), q in entries.items():
                if q:
                    grouped.setdefault(key, {})[mono] = q
            for (power, pk), terms in grouped.items():
                pkey = pkeys[pk]
                value = _mzv_from_flat(terms)
                if not value:
                    continue
                slot = poles.setdefault(place, {}).setdefault(j, {}).setdefault(power, {})
                add_term(slot, pkey, value)
    for place in list(poles):
        orders = {j: {pw: pp for pw, pp in rp.items() if pp} for j, rp in poles[place].items()}
        orders = {j: rp for j, rp in orders.items() if rp}
        if orders:
            poles[place] = orders
        else:
            del poles[place]
    return ResidueTable.of_integrand(integrand, levels, poles)
