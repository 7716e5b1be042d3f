"""Bases for the contact terms of an expansion, and the coefficient names.

The contact part of an expansion is the polynomial ``Σ c[i,j] s^i t^j``
with ``i, j >= 0`` and ``i + j <= N``; its coefficients are polynomials in
the free parameters with MZV coefficients.  This module rewrites it in a
basis of polynomials in ``s, t`` and reports what is left over.

Naming scheme
-------------
These names are shared by the tables, the exports and the constraint files.

``c[i,j]``
    The coefficient of ``s^i t^j`` (monomial basis).  Poles have negative
    powers: ``c[-1,0]`` multiplies ``1/s``.  Pole terms are never rewritten
    in another basis; they are always reported under these names.
``sym[i,j]`` (``i >= j >= 0``)
    Symmetric basis (s <-> t): the element ``s^i t^j + s^j t^i`` for
    ``i > j`` and ``s^i t^i`` for ``i = j``.
``sigma[a,b]``
    Crossing-symmetric basis: the element ``σ2^a σ3^b`` with
    ``σ2 = s^2 + t^2 + u^2``, ``σ3 = s^3 + t^3 + u^3`` and ``u = -s - t``
    (so ``σ2 = 2 (s^2 + s t + t^2)`` and ``σ3 = 3 s t u``).  Degree ``2a + 3b``.
user names
    A user basis is a list of ``(name, polynomial text)``; its elements are
    named exactly as given.

With free parameters a coefficient is a polynomial in them; a table row
then also carries the parameter monomial, written like ``a1^2*a2`` (``1``
for the constant term), so a row is identified by ``(name, monomial)``.

Bases and remainders
--------------------
Each ``decompose_*`` function takes the contact part
``{(i, j): {parameter exponents: MZV}}`` and the order N and returns a
:class:`Decomposition`; ``coefficients, remainder = decomposition`` unpacks
it into the coefficients in the basis (``{element name: ParamPoly}``) and
the remainder in the monomial basis (``{(i, j): ParamPoly}``).  The
contact part is always ``Σ coefficient · element + remainder`` up to order
N, and :attr:`Decomposition.in_basis` is true when the remainder vanishes.

* ``monomial``: the coefficients themselves; no remainder.
* ``symmetric``: ``sym[i,j]`` gets ``(c[i,j] + c[j,i]) / 2``; the remainder
  is the antisymmetric part ``(c[i,j] - c[j,i]) / 2``.
* ``sigma``: the remainder is the expansion minus its average over the six
  permutations of ``(s, t, u)``; the average is a polynomial in σ2, σ3 and
  is decomposed degree by degree with exact rational linear algebra.
* user basis: elements may be inhomogeneous; only their terms up to order N
  take part.  If the expansion lies in their span, the coefficients are the
  unique exact solution.  Otherwise the remainder is the least-squares
  residual with the monomial coefficients as coordinates (the remainder is
  orthogonal to every element).  Linearly dependent elements (up to order
  N) are an :class:`~lowenergy.errors.InputError`; elements without any
  term up to order N are skipped and listed in ``beyond_order``.

All MZV-valued linear algebra is exact: a ParamPoly is a vector over Q with
one coordinate per (parameter monomial, MZV monomial), and the rational
matrices act on it coordinate by coordinate.

User polynomials are parsed with :func:`lowenergy.parse.parse_expression`
(never evaluated as code).  Allowed: rationals and decimals, the two
expansion variables, ``u`` (``= -s - t``), ``sigma2``, ``sigma3`` (unless
one of these is a variable name), ``+ - * /`` (division by non-zero
rationals only), ``^`` with non-negative integer exponents, parentheses.

>>> element_name("sym", 2, 1), coefficient_name(-1, 0)
('sym[2,1]', 'c[-1,0]')
>>> parse_element_name("sigma[1, 2]")
('sigma', 1, 2)
>>> polynomial_text(parse_polynomial("(s+t)^2 - u^2/2"))
'1/2*s^2 + s*t + 1/2*t^2'
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from fractions import Fraction
from typing import Dict, Iterable, Iterator, List, Optional, Sequence, Tuple, Union

from ..errors import InputError, InternalError
from ..linalg import DependentColumn, solve_gram
from ..parse import Call, Node, Num, Pow, Product, Rules, Sym, coefficient_reference, evaluate, parse_expression, to_text
from ..poly import add as poly_add, mul as poly_mul, power as poly_power, total_degree as poly_degree, truncated as poly_truncated
from ..zeta.element import MZV
from ..zeta.format import join_terms, term_text

__all__ = [
    "Poly2",
    "BasisElement",
    "Decomposition",
    "UserBasis",
    "BASES",
    "coefficient_name",
    "element_name",
    "parse_element_name",
    "monomial_text",
    "monomial_latex",
    "polynomial_text",
    "polynomial_latex",
    "parse_polynomial",
    "sigma_polynomial",
    "sigma_label",
    "contact_part",
    "pole_part",
    "decompose_monomial",
    "decompose_symmetric",
    "decompose_sigma",
    "decompose_user",
    "decompose",
    "lies_in_basis",
    "MAX_BASIS_DEGREE",
]

#: A polynomial in s, t with rational coefficients: ``{(i, j): Fraction}``.
Poly2 = Dict[Tuple[int, int], Fraction]
ParamPoly = Dict[Tuple[int, ...], MZV]
Coefficients = Dict[Tuple[int, int], ParamPoly]

#: The built-in bases.
BASES = ("monomial", "symmetric", "sigma")

#: Highest total degree a user basis polynomial may have.
MAX_BASIS_DEGREE = 64
#: Bound on the work of one polynomial product in a user basis (term pairs).
_MAX_PRODUCT = 2_000_000
_MAX_NAME = 100
_MAX_EXPONENT = 256

# --------------------------------------------------------------------------
# names
# --------------------------------------------------------------------------



def coefficient_name(i: int, j: int) -> str:
    """``c[i,j]``, the name of the coefficient of ``s^i t^j``."""
    return f"c[{i},{j}]"


def element_name(kind: str, a: int, b: int) -> str:
    """``c[a,b]``, ``sym[a,b]`` or ``sigma[a,b]``."""
    if kind not in ("c", "sym", "sigma"):
        raise ValueError(f"unknown element kind {kind!r}")
    return f"{kind}[{a},{b}]"


def parse_element_name(text: str) -> Optional[Tuple[str, int, int]]:
    """``("c" | "sym" | "sigma", a, b)`` for a built-in name, else ``None``.

    The syntax is that of coefficient references in the expression grammar
    (:func:`lowenergy.parse.coefficient_reference`): blanks around the
    numbers are tolerated; ``sym`` needs ``a >= b >= 0``
    and ``sigma`` needs ``a, b >= 0`` (otherwise ``None``).
    """
    ref = coefficient_reference(text)
    if ref is None or ref.family not in ("c", "sym", "sigma") or len(ref.indices) != 2:
        return None
    kind, (a, b) = ref.family, ref.indices
    if max(abs(a), abs(b)) >= 10**6:
        return None
    if kind == "sym" and not (a >= b >= 0):
        return None
    if kind == "sigma" and (a < 0 or b < 0):
        return None
    return kind, a, b


# --------------------------------------------------------------------------
# rational polynomials in s, t
# --------------------------------------------------------------------------


def _ppow(a: Poly2, n: int) -> Poly2:
    """``a ** n`` with the constant ``Fraction(1)`` for ``n = 0``."""
    return poly_power(a, n, 2, one=Fraction(1))


_S: Poly2 = {(1, 0): Fraction(1)}
_T: Poly2 = {(0, 1): Fraction(1)}
_U: Poly2 = {(1, 0): Fraction(-1), (0, 1): Fraction(-1)}


def _power_sum(k: int) -> Poly2:
    return poly_add(poly_add(_ppow(_S, k), _ppow(_T, k)), _ppow(_U, k))


_SIGMA2 = _power_sum(2)
_SIGMA3 = _power_sum(3)


def sigma_polynomial(a: int, b: int) -> Poly2:
    """``σ2^a σ3^b`` as a polynomial in s, t.

    >>> polynomial_text(sigma_polynomial(0, 1))
    '-3*s^2*t - 3*s*t^2'
    """
    return poly_mul(_ppow(_SIGMA2, a), _ppow(_SIGMA3, b))


def _sorted_monomials(keys: Iterable[Tuple[int, int]]) -> List[Tuple[int, int]]:
    return sorted(keys, key=lambda k: (k[0] + k[1], -k[0]))


def _power_text(name: str, e: int) -> str:
    return name if e == 1 else f"{name}^{e}"


def monomial_text(i: int, j: int, variables: Sequence[str] = ("s", "t")) -> str:
    """Plain text of ``s^i t^j`` (``1`` for i = j = 0), e.g. ``s^2*t``, ``s^-1``."""
    parts = [_power_text(v, e) for v, e in zip(variables, (i, j)) if e]
    return "*".join(parts) if parts else "1"


def _latex_name(name: str) -> str:
    """A variable or parameter name in math mode (``a1`` -> ``a_{1}``)."""
    m = re.fullmatch(r"([A-Za-z]+)(\d+)", name)
    if m:
        stem = m.group(1)
        stem = stem if len(stem) == 1 else f"\\mathit{{{stem}}}"
        return f"{stem}_{{{m.group(2)}}}"
    if re.fullmatch(r"[A-Za-z]", name):
        return name
    return "\\mathit{" + name.replace("_", "\\_") + "}"


def _latex_power(base: str, e: int) -> str:
    return base if e == 1 else f"{base}^{{{e}}}"


def monomial_latex(i: int, j: int, variables: Sequence[str] = ("s", "t")) -> str:
    """Math-mode LaTeX of ``s^i t^j``: ``s^{2} t``, ``s^{-1}``, ``1``."""
    parts = [_latex_power(_latex_name(v), e) for v, e in zip(variables, (i, j)) if e]
    return " ".join(parts) if parts else "1"


def polynomial_text(p: Poly2, variables: Sequence[str] = ("s", "t")) -> str:
    """Canonical plain text of a rational polynomial (parseable again)."""
    return join_terms(
        [term_text(p[key], "" if key == (0, 0) else monomial_text(key[0], key[1], variables))
         for key in _sorted_monomials(p)]
    )


def polynomial_latex(p: Poly2, variables: Sequence[str] = ("s", "t")) -> str:
    """Math-mode LaTeX of a rational polynomial."""
    return join_terms(
        [term_text(p[key], "" if key == (0, 0) else monomial_latex(key[0], key[1], variables), "latex")
         for key in _sorted_monomials(p)]
    )


def sigma_label(a: int, b: int) -> str:
    """Plain label of ``sigma[a,b]``, e.g. ``sigma2^2*sigma3`` (``1`` for a = b = 0)."""
    return _sigma_label(a, b)[0]


def _sigma_label(a: int, b: int) -> Tuple[str, str]:
    plain = [_power_text("sigma2", a)] if a else []
    plain += [_power_text("sigma3", b)] if b else []
    latex = [_latex_power("\\sigma_2", a)] if a else []
    latex += [_latex_power("\\sigma_3", b)] if b else []
    return ("*".join(plain) or "1", " ".join(latex) or "1")


# --------------------------------------------------------------------------
# parsing user polynomials
# --------------------------------------------------------------------------


def _named_polynomials(variables: Sequence[str]) -> Dict[str, Poly2]:
    names = {variables[0]: dict(_S), variables[1]: dict(_T)}
    for extra, poly in (("u", _U), ("sigma2", _SIGMA2), ("sigma3", _SIGMA3)):
        if extra not in names:
            names[extra] = dict(poly)
    return names


def _constant(p: Poly2) -> Optional[Fraction]:
    if not p:
        return Fraction(0)
    if set(p) == {(0, 0)}:
        return p[(0, 0)]
    return None


def parse_polynomial(
    text: str,
    variables: Sequence[str] = ("s", "t"),
    *,
    source: Optional[str] = None,
    line: Optional[int] = None,
) -> Poly2:
    """Parse a polynomial in the two variables with rational coefficients.

    See the module docstring for the syntax.  Errors are
    :class:`~lowenergy.errors.LowEnergyError` subclasses carrying
    ``source``, ``line``, column and the offending term.
    """
    if not isinstance(text, str):
        raise TypeError(f"parse_polynomial needs a str, not {type(text).__name__}")
    tree = parse_expression(text, source=source, line=line)
    names = _named_polynomials(variables)
    allowed = ", ".join(names)

    def fail(node: Node, message: str, hint: Optional[str] = None) -> InputError:
        return InputError(message, source=source, line=line, column=node.col, term=to_text(node), hint=hint)

    class PolynomialRules(Rules):
        def leaf(self, node: Node) -> Optional[Poly2]:
            if isinstance(node, Num):
                return {(0, 0): node.value} if node.value else {}
            if isinstance(node, Sym):
                if node.name not in names:
                    raise fail(
                        node,
                        f"unknown name {node.name!r} in a basis polynomial",
                        f"basis polynomials use {allowed} and rational numbers only",
                    )
                return dict(names[node.name])
            if isinstance(node, Call):
                raise fail(
                    node,
                    f"function {node.name!r} is not allowed in a basis polynomial",
                    "basis polynomials have rational coefficients; MZVs belong to the coefficients",
                )
            return None

        def neg(self, value: Poly2, node: Node) -> Poly2:
            return {k: -v for k, v in value.items()}

        def add(self, a: Poly2, b: Poly2, node: Node, k: int) -> Poly2:
            return poly_add(a, b)

        def sub(self, a: Poly2, b: Poly2, node: Node, k: int) -> Poly2:
            return poly_add(a, b, Fraction(-1))

        def mul(self, a: Poly2, b: Poly2, node: Product, k: int) -> Poly2:
            if poly_degree(a) + poly_degree(b) > MAX_BASIS_DEGREE:
                raise fail(node.prefix(k), f"degree larger than {MAX_BASIS_DEGREE}")
            if len(a) * len(b) > _MAX_PRODUCT:
                raise fail(node.prefix(k), "polynomial too large")
            return poly_mul(a, b)

        def div(self, a: Poly2, b: Poly2, node: Product, k: int) -> Poly2:
            q = _constant(b)
            if q is None:
                raise fail(node.items[k], "division by a non-constant", "divide by non-zero rational numbers only")
            if q == 0:
                raise fail(node.items[k], "division by zero")
            return {key: v / q for key, v in a.items()}

        def power(self, base: Poly2, exponent: Poly2, node: Pow) -> Poly2:
            e = _constant(exponent)
            if e is None or e.denominator != 1 or e < 0:
                raise fail(
                    node.exponent,
                    "exponents in basis polynomials must be non-negative integers",
                    "write e.g. s^2",
                )
            n = int(e)
            if n > _MAX_EXPONENT:
                raise fail(node.exponent, f"exponent larger than {_MAX_EXPONENT}")
            if n and poly_degree(base) * n > MAX_BASIS_DEGREE:
                raise fail(node, f"degree larger than {MAX_BASIS_DEGREE}")
            return _ppow(base, n)

    return evaluate(tree, PolynomialRules())


# --------------------------------------------------------------------------
# basis elements and decompositions
# --------------------------------------------------------------------------


@dataclass(frozen=True)
class BasisElement:
    """One element of a basis.

    Attributes
    ----------
    name:
        ``c[i,j]``, ``sym[i,j]``, ``sigma[a,b]`` or the user's name.
    polynomial:
        The element as ``{(i, j): Fraction}`` (not truncated).
    label, latex:
        Plain text (parseable by :func:`parse_polynomial`) and math-mode
        LaTeX of the element, e.g. ``s^2*t + s*t^2`` or ``sigma2*sigma3``.
    degree:
        Highest total degree of the element.
    powers:
        ``(i, j)`` for ``c[i,j]`` and ``sym[i,j]``, else ``None``.
    """

    name: str
    polynomial: Poly2
    label: str
    latex: str
    degree: int
    powers: Optional[Tuple[int, int]] = None


@dataclass
class Decomposition:
    """The contact part of an expansion in a basis.

    ``coefficients, remainder = decomposition`` unpacks the two main parts.

    Attributes
    ----------
    basis:
        ``"monomial"``, ``"symmetric"``, ``"sigma"`` or ``"user"``.
    order:
        The order N of the expansion.
    elements:
        The basis elements in table order: for the built-in bases those of
        the degrees (monomial, symmetric: the monomials) present in the
        contact part, for a user basis all elements with a term up to
        order N.
    coefficients:
        ``{element name: ParamPoly}``, non-zero coefficients only.
    remainder:
        ``{(i, j): ParamPoly}``: the part of the contact terms that is not
        in the span of the basis (see the module docstring).
    beyond_order:
        Names of user elements without any term up to order N (skipped).
    """

    basis: str
    order: int
    elements: Tuple[BasisElement, ...]
    coefficients: Dict[str, ParamPoly]
    remainder: Coefficients
    beyond_order: Tuple[str, ...] = ()

    @property
    def in_basis(self) -> bool:
        """True if the contact part lies in the span of the basis."""
        return not self.remainder

    def __iter__(self) -> Iterator:
        return iter((self.coefficients, self.remainder))

    def element(self, name: str) -> BasisElement:
        for e in self.elements:
            if e.name == name:
                return e
        raise KeyError(name)

    def reconstruct(self) -> Coefficients:
        """``Σ coefficient · element + remainder`` up to order N (the contact part)."""
        flat: Dict[Tuple[int, int], _Flat] = {}
        for e in self.elements:
            coeff = self.coefficients.get(e.name)
            if not coeff:
                continue
            vec = _flatten(coeff)
            for m, q in poly_truncated(e.polynomial, self.order).items():
                flat[m] = _vadd(flat.get(m, {}), vec, q)
        for m, pp in self.remainder.items():
            flat[m] = _vadd(flat.get(m, {}), _flatten(pp))
        return _unflatten_all(flat)


# --------------------------------------------------------------------------
# exact linear algebra with ParamPoly right-hand sides
# --------------------------------------------------------------------------

# A ParamPoly flattened into a sparse vector over Q.
_Flat = Dict[Tuple[Tuple[int, ...], tuple], Fraction]


def _flatten(pp: ParamPoly) -> _Flat:
    return {(pe, mono): c for pe, x in pp.items() for mono, c in x.as_dict().items()}


def _unflatten(vec: _Flat) -> ParamPoly:
    groups: Dict[Tuple[int, ...], Dict] = {}
    for (pe, mono), c in vec.items():
        if c:
            groups.setdefault(pe, {})[mono] = c
    out = {pe: MZV(terms) for pe, terms in groups.items()}
    return {pe: x for pe, x in out.items() if x}


def _unflatten_all(flat: Dict[Tuple[int, int], _Flat]) -> Coefficients:
    out = {}
    for m, vec in flat.items():
        pp = _unflatten(vec)
        if pp:
            out[m] = pp
    return out


def _vadd(a: _Flat, b: _Flat, factor: Fraction = Fraction(1)) -> _Flat:
    if not factor:
        return dict(a)
    out = dict(a)
    for k, v in b.items():
        y = out.get(k, Fraction(0)) + v * factor
        if y:
            out[k] = y
        else:
            out.pop(k, None)
    return out


def _vscale(a: _Flat, factor: Fraction) -> _Flat:
    return {k: v * factor for k, v in a.items()} if factor else {}


def _components(polys: Sequence[Poly2]) -> List[List[int]]:
    """Indices of polynomials grouped into classes sharing monomials."""
    parent = list(range(len(polys)))

    def find(x: int) -> int:
        while parent[x] != x:
            parent[x] = parent[parent[x]]
            x = parent[x]
        return x

    owner: Dict[Tuple[int, int], int] = {}
    for idx, p in enumerate(polys):
        for m in p:
            if m in owner:
                ra, rb = find(owner[m]), find(idx)
                if ra != rb:
                    parent[max(ra, rb)] = min(ra, rb)
            else:
                owner[m] = idx
    groups: Dict[int, List[int]] = {}
    for idx in range(len(polys)):
        groups.setdefault(find(idx), []).append(idx)
    return [groups[k] for k in sorted(groups)]


def _dot(a: Poly2, b: Poly2) -> Fraction:
    if len(a) > len(b):
        a, b = b, a
    return sum((v * b[k] for k, v in a.items() if k in b), Fraction(0))


def _project(
    polys: Sequence[Poly2], target: Dict[Tuple[int, int], _Flat]
) -> Tuple[List[_Flat], Dict[Tuple[int, int], _Flat]]:
    """Least-squares coefficients of ``target`` on ``polys`` and the residual.

    ``polys`` must be linearly independent (else :class:`~lowenergy.linalg.DependentColumn`).
    """
    coeffs: List[_Flat] = [{} for _ in polys]
    residual = {m: dict(v) for m, v in target.items() if v}
    for group in _components(polys):
        members = [polys[i] for i in group]
        gram = [[_dot(a, b) for b in members] for a in members]
        rhs = []
        for p in members:
            acc: _Flat = {}
            for m, q in p.items():
                if m in residual:
                    acc = _vadd(acc, residual[m], q)
            rhs.append(acc)
        try:
            x = solve_gram(gram, rhs)
        except DependentColumn as dep:
            raise DependentColumn(group[dep.index], {group[i]: c for i, c in dep.combination.items()}) from None
        for idx, p, xv in zip(group, members, x):
            coeffs[idx] = xv
            if not xv:
                continue
            for m, q in p.items():
                y = _vadd(residual.get(m, {}), xv, -q)
                if y:
                    residual[m] = y
                else:
                    residual.pop(m, None)
    return coeffs, residual


# --------------------------------------------------------------------------
# contact part and the decompositions
# --------------------------------------------------------------------------


def _check_expansion(expansion) -> None:
    from ..expansion.result import Expansion

    if not isinstance(expansion, Expansion):
        raise TypeError(f"expected an Expansion, not {type(expansion).__name__}")
    npar = len(expansion.parameters)
    for key, pp in expansion.coefficients.items():
        if not (isinstance(key, tuple) and len(key) == 2 and all(isinstance(x, int) for x in key)):
            raise InputError(f"coefficient key {key!r} is not a pair of integers (i, j)")
        if key[0] + key[1] > expansion.order:
            raise InputError(
                f"coefficient {coefficient_name(*key)} lies beyond the order {expansion.order} of the expansion",
                term=coefficient_name(*key),
            )
        for pe, x in pp.items():
            if not (isinstance(pe, tuple) and len(pe) == npar and all(isinstance(e, int) and e >= 0 for e in pe)):
                raise InputError(
                    f"coefficient {coefficient_name(*key)} has a parameter exponent {pe!r} "
                    f"that does not match the parameters {expansion.parameters!r}",
                    term=coefficient_name(*key),
                )
            if not isinstance(x, MZV):
                raise InputError(
                    f"coefficient {coefficient_name(*key)} holds {type(x).__name__}, not an MZV",
                    term=coefficient_name(*key),
                )


def _nonzero(pp: ParamPoly) -> ParamPoly:
    return {pe: x for pe, x in pp.items() if x}


def contact_part(expansion) -> Coefficients:
    """The contact terms ``{(i, j): ParamPoly}`` with ``i, j >= 0``."""
    _check_expansion(expansion)
    out = {}
    for (i, j), pp in expansion.coefficients.items():
        if i >= 0 and j >= 0:
            pp = _nonzero(pp)
            if pp:
                out[(i, j)] = pp
    return out


def pole_part(expansion) -> Coefficients:
    """The pole terms (``i < 0`` or ``j < 0``), always in the monomial basis."""
    _check_expansion(expansion)
    out = {}
    for (i, j), pp in expansion.coefficients.items():
        if i < 0 or j < 0:
            pp = _nonzero(pp)
            if pp:
                out[(i, j)] = pp
    return out


def _check_contact(contact: Coefficients, order: int) -> None:
    if not isinstance(order, int) or isinstance(order, bool):
        raise TypeError("order must be an int")
    for (i, j) in contact:
        if i < 0 or j < 0:
            raise InputError(
                f"{coefficient_name(i, j)} is a pole, not a contact term",
                term=coefficient_name(i, j),
                hint="pass contact_part(expansion)",
            )
        if i + j > order:
            raise InputError(f"{coefficient_name(i, j)} lies beyond the order {order}", term=coefficient_name(i, j))


def _monomial_element(i: int, j: int, variables: Sequence[str]) -> BasisElement:
    return BasisElement(
        coefficient_name(i, j),
        {(i, j): Fraction(1)},
        monomial_text(i, j, variables),
        monomial_latex(i, j, variables),
        i + j,
        (i, j),
    )


def decompose_monomial(
    contact: Coefficients, order: int, variables: Sequence[str] = ("s", "t")
) -> Decomposition:
    """The trivial basis: ``c[i,j]`` are the coefficients themselves."""
    _check_contact(contact, order)
    keys = _sorted_monomials(k for k, pp in contact.items() if pp)
    elements = tuple(_monomial_element(i, j, variables) for i, j in keys)
    coeffs = {coefficient_name(i, j): dict(contact[(i, j)]) for i, j in keys}
    return Decomposition("monomial", order, elements, coeffs, {})


def _sym_element(i: int, j: int, variables: Sequence[str]) -> BasisElement:
    poly = {(i, j): Fraction(1)} if i == j else {(i, j): Fraction(1), (j, i): Fraction(1)}
    return BasisElement(
        element_name("sym", i, j), poly, polynomial_text(poly, variables), polynomial_latex(poly, variables), i + j, (i, j)
    )


def decompose_symmetric(
    contact: Coefficients, order: int, variables: Sequence[str] = ("s", "t")
) -> Decomposition:
    """The s <-> t symmetric basis ``sym[i,j]``; remainder = antisymmetric part."""
    _check_contact(contact, order)
    pairs = _sorted_monomials({(max(i, j), min(i, j)) for (i, j), pp in contact.items() if pp})
    elements = tuple(_sym_element(i, j, variables) for i, j in pairs)
    half = Fraction(1, 2)
    coeffs: Dict[str, ParamPoly] = {}
    remainder: Dict[Tuple[int, int], _Flat] = {}
    for e in elements:
        i, j = e.powers  # type: ignore[misc]
        a = _flatten(contact.get((i, j), {}))
        if i == j:
            c = a
        else:
            b = _flatten(contact.get((j, i), {}))
            c = _vscale(_vadd(a, b), half)
            anti = _vscale(_vadd(a, b, Fraction(-1)), half)
            if anti:
                remainder[(i, j)] = anti
                remainder[(j, i)] = _vscale(anti, Fraction(-1))
        pp = _unflatten(c)
        if pp:
            coeffs[e.name] = pp
    return Decomposition("symmetric", order, elements, coeffs, _unflatten_all(remainder))


_PERMUTATIONS = ((_S, _T), (_T, _S), (_S, _U), (_U, _S), (_T, _U), (_U, _T))


def _symmetrized(i: int, j: int, cache: Dict[Tuple[int, int], Poly2]) -> Poly2:
    """Average of ``s^i t^j`` over the six permutations of (s, t, u)."""
    if (i, j) not in cache:
        total: Poly2 = {}
        for x, y in _PERMUTATIONS:
            total = poly_add(total, poly_mul(_ppow(x, i), _ppow(y, j)))
        cache[(i, j)] = {k: v / 6 for k, v in total.items()}
    return cache[(i, j)]


def decompose_sigma(
    contact: Coefficients, order: int, variables: Sequence[str] = ("s", "t")
) -> Decomposition:
    """The crossing-symmetric basis ``sigma[a,b] = σ2^a σ3^b``.

    The remainder is the contact part minus its average over the six
    permutations of ``(s, t, u = -s-t)``.
    """
    _check_contact(contact, order)
    elements: List[BasisElement] = []
    for d in sorted({i + j for (i, j), pp in contact.items() if pp}):
        for b in range(d // 3 + 1):
            if (d - 3 * b) % 2 == 0:
                a = (d - 3 * b) // 2
                poly = sigma_polynomial(a, b)
                plain, latex = _sigma_label(a, b)
                elements.append(BasisElement(element_name("sigma", a, b), poly, plain, latex, d))
    cache: Dict[Tuple[int, int], Poly2] = {}
    sym: Dict[Tuple[int, int], _Flat] = {}
    for (i, j), pp in contact.items():
        vec = _flatten(pp)
        for m, q in _symmetrized(i, j, cache).items():
            sym[m] = _vadd(sym.get(m, {}), vec, q)
    sym = {m: v for m, v in sym.items() if v}
    coeffs_flat, residual = _project([e.polynomial for e in elements], sym)
    if residual:  # pragma: no cover - σ2, σ3 generate all symmetric polynomials
        raise InternalError("the symmetric part is not spanned by sigma2, sigma3")
    coeffs = {}
    for e, v in zip(elements, coeffs_flat):
        pp = _unflatten(v)
        if pp:
            coeffs[e.name] = pp
    remainder: Dict[Tuple[int, int], _Flat] = {}
    for m in set(contact) | set(sym):
        r = _vadd(_flatten(contact.get(m, {})), sym.get(m, {}), Fraction(-1))
        if r:
            remainder[m] = r
    return Decomposition("sigma", order, tuple(elements), coeffs, _unflatten_all(remainder))


class UserBasis:
    """A basis given by the user as ``(name, polynomial text)`` pairs.

    Build it with :meth:`parse`; the texts are parsed safely (see the
    module docstring).  Names must be non-empty, unique, without control
    characters, not start with ``#`` and be at most 100 characters long.
    """

    def __init__(self, names: Sequence[str], polynomials: Sequence[Poly2], variables: Sequence[str]) -> None:
        self.names = tuple(names)
        self.polynomials = tuple(dict(p) for p in polynomials)
        self.variables = tuple(variables)

    def __len__(self) -> int:
        return len(self.names)

    def __repr__(self) -> str:
        inner = ", ".join(f"{n}={polynomial_text(p, self.variables)!r}" for n, p in zip(self.names, self.polynomials))
        return f"UserBasis({inner})"

    @classmethod
    def parse(
        cls,
        pairs: Iterable[Tuple[str, str]],
        variables: Sequence[str] = ("s", "t"),
        *,
        source: Optional[str] = None,
        lines: Optional[Sequence[int]] = None,
    ) -> "UserBasis":
        """Parse ``(name, text)`` pairs.

        ``source`` names where they came from and ``lines`` gives the line
        of each pair for error messages (default: the 1-based position in
        the list).
        """
        source = source or "<basis>"
        names: List[str] = []
        polys: List[Poly2] = []
        seen: Dict[str, int] = {}
        for pos, pair in enumerate(pairs):
            line = lines[pos] if lines is not None and pos < len(lines) else pos + 1
            if not (isinstance(pair, (tuple, list)) and len(pair) == 2):
                raise InputError(
                    "a basis element must be a (name, polynomial) pair",
                    source=source,
                    line=line,
                    hint='write e.g. ("A", "s^2 + t^2")',
                )
            name, text = pair
            if not isinstance(name, str) or not isinstance(text, str):
                raise InputError(
                    "basis element names and polynomials must be text",
                    source=source,
                    line=line,
                )
            if not name.strip() or len(name) > _MAX_NAME or any(ord(ch) < 32 or ord(ch) == 127 for ch in name):
                raise InputError(
                    "invalid basis element name",
                    source=source,
                    line=line,
                    term=name[:_MAX_NAME],
                    hint=f"use a non-empty name of at most {_MAX_NAME} printable characters",
                )
            name = name.strip()
            if name.startswith("#"):
                raise InputError(
                    "basis element names may not start with '#'", source=source, line=line, term=name
                )
            if name in seen:
                raise InputError(
                    f"basis element name {name!r} is used twice (first on line {seen[name]})",
                    source=source,
                    line=line,
                    term=name,
                    hint="give every element its own name",
                )
            seen[name] = line
            poly = parse_polynomial(text, variables, source=source, line=line)
            if not poly:
                raise InputError(
                    f"basis element {name!r} is zero",
                    source=source,
                    line=line,
                    term=text,
                    hint="a basis element must be a non-zero polynomial",
                )
            names.append(name)
            polys.append(poly)
        if not names:
            raise InputError("the user basis is empty", source=source, hint="give at least one (name, polynomial) pair")
        return cls(names, polys, variables)


def _combination_text(combination: Dict[str, Fraction]) -> str:
    return join_terms([term_text(c, name) for name, c in combination.items() if c])


def decompose_user(
    contact: Coefficients, order: int, basis: UserBasis, variables: Optional[Sequence[str]] = None
) -> Decomposition:
    """Decompose in a :class:`UserBasis` (see the module docstring).

    Raises :class:`~lowenergy.errors.InputError` if the elements are
    linearly dependent up to order N.
    """
    _check_contact(contact, order)
    if not isinstance(basis, UserBasis):
        raise TypeError("basis must be a UserBasis (see UserBasis.parse)")
    variables = tuple(variables or basis.variables)
    kept: List[int] = []
    skipped: List[str] = []
    truncated: List[Poly2] = []
    for idx, poly in enumerate(basis.polynomials):
        t = poly_truncated(poly, order)
        if t:
            kept.append(idx)
            truncated.append(t)
        else:
            skipped.append(basis.names[idx])
    target = {m: _flatten(pp) for m, pp in contact.items()}
    try:
        coeffs_flat, residual = _project(truncated, target)
    except DependentColumn as dep:
        bad = basis.names[kept[dep.index]]
        comb = {basis.names[kept[i]]: c for i, c in dep.combination.items()}
        combo = _combination_text(comb)
        if combo == "0":
            raise InputError(
                f"basis element {bad!r} vanishes up to order {order}",
                term=bad,
                hint="remove it or raise the order",
            ) from None
        raise InputError(
            f"the user basis is linearly dependent: {bad} = {combo} (up to order {order})",
            term=bad,
            hint="remove one of these elements",
        ) from None
    elements = []
    coeffs = {}
    for idx, v in zip(kept, coeffs_flat):
        name, poly = basis.names[idx], basis.polynomials[idx]
        elements.append(
            BasisElement(name, dict(poly), polynomial_text(poly, variables), polynomial_latex(poly, variables), poly_degree(poly))
        )
        pp = _unflatten(v)
        if pp:
            coeffs[name] = pp
    return Decomposition("user", order, tuple(elements), coeffs, _unflatten_all(residual), tuple(skipped))


BasisSpec = Union[str, UserBasis, Sequence[Tuple[str, str]]]


def decompose(expansion, basis: BasisSpec = "monomial") -> Decomposition:
    """Decompose the contact part of ``expansion``.

    ``basis`` is ``"monomial"``, ``"symmetric"``, ``"sigma"``, a
    :class:`UserBasis` or a list of ``(name, polynomial text)`` pairs.
    """
    contact = contact_part(expansion)
    variables = tuple(expansion.variables)
    order = expansion.order
    if isinstance(basis, str):
        if basis == "monomial":
            return decompose_monomial(contact, order, variables)
        if basis == "symmetric":
            return decompose_symmetric(contact, order, variables)
        if basis == "sigma":
            return decompose_sigma(contact, order, variables)
        raise InputError(
            f"unknown basis {basis!r}",
            term=basis,
            hint="use monomial, symmetric, sigma or a list of (name, polynomial) pairs",
        )
    if isinstance(basis, UserBasis):
        if tuple(basis.variables) != variables:
            raise InputError(
                f"the user basis is written in the variables {', '.join(basis.variables)} "
                f"but the expansion uses {', '.join(variables)}",
                hint="parse the basis with the expansion's variables",
            )
        return decompose_user(contact, order, basis, variables)
    if isinstance(basis, (list, tuple)):
        return decompose_user(contact, order, UserBasis.parse(basis, variables), variables)
    raise InputError(
        f"unsupported basis specification of type {type(basis).__name__}",
        hint="use monomial, symmetric, sigma or a list of (name, polynomial) pairs",
    )


def lies_in_basis(expansion, basis: BasisSpec = "monomial") -> bool:
    """True if the contact part of ``expansion`` lies in the span of ``basis``."""
    return decompose(expansion, basis).in_basis
