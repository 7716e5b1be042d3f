"""Generate an integrand ansatz: independent functions of x times polynomials in s, t.

The ansatz is

    x^(-s-1+p) (1-x)^(-t-1+q) · Σ_k a_k · m_k(s, t) · c_k · F_k(x)

with rational parameters ``a_k``, monomials ``m_k = s^i t^j``, constants
``c_k`` (1, or a monomial of the canonical MZV basis of :mod:`lowenergy.zeta`)
and functions ``F_k`` of one *family*:

``mpl``
    the multiple polylogarithms ``G(w; x)``, words ``w`` over {0, 1};
``sv``
    Brown's single-valued polylogarithms ``L_w`` restricted to 0 < x < 1
    (integrand syntax ``svpolylog(w; x)``, :func:`lowenergy.svpolylog.construct.real_line_restriction`).

Only **linearly independent** products ``c · F`` carry a parameter, so that a
unique solution of ``fix`` is really unique.  Independence is decided
exactly: every ``c · F`` is written as ``Σ_u μ_u G(u; x)`` with MZV
coefficients ``μ_u`` (for ``mpl`` trivially, for ``sv`` by the real-line
restriction), each ``μ_u`` is split into its canonical basis monomials, and
the rational coordinate vectors (keyed by (monomial, word)) are reduced to
row echelon form with python-flint's ``fmpq_mat``.  This uses two standard
facts: the ``G(u; x)`` with distinct words are linearly independent over
the complex numbers (so over the MZVs), and the canonical basis monomials of
the MZV tables are taken to be linearly independent over Q (the usual
assumption behind any MZV basis; it is what makes the table canonical).  The
candidates are scanned in a fixed order (smaller MZV weight first, then word,
then MZV monomial) and each one is kept iff it is independent of those kept
before it (the pivot columns of the echelon form), so the choice is
reproducible and prefers functions without MZV constants.

Options (:class:`AnsatzSpec`):

* ``weight`` W — the largest total weight of ``c_k · F_k`` (weight of the
  MZV constant plus the length of the word);
* ``mzv`` — multiply functions by MZV basis monomials of lower weight
  (``c_k`` ≠ 1); ``uniform`` — keep only total weight exactly W (without it,
  every total weight 0..W);
* ``degree`` N and ``degree_rule`` — the monomials ``s^i t^j`` attached to a
  product of total weight w have ``i + j ≤ D(w)`` (or ``= D(w)`` with
  ``exact_degree``), where ``D(w) = N`` (``fixed``), ``N + W - w``
  (``falling``) or ``N + w`` (``rising``); a negative ``D(w)`` attaches none;
* ``symmetry`` — ``symmetric`` / ``antisymmetric`` impose
  ``I(x; s, t) = ± I(1-x; t, s)`` on the integrand.  Each parameter then
  multiplies ``m(s,t) c F(x) ± m(t,s) c F(1-x)``; these images are reduced
  to an independent set in the same way (the invariant part of the ansatz
  is spanned by them);
* ``x_shift`` p, ``y_shift`` q ≥ 0 — the Koba–Nielsen exponents
  ``-s-1+p`` and ``-t-1+q`` (symmetry needs p = q);
* ``prefix`` — parameters are ``prefix1, prefix2, ...``; ``title`` — the
  file's title (default: a description of the ansatz);
* ``domain`` — ``"line"`` (functions of real 0 < x < 1) or ``"sphere"``
  (closed strings, :data:`DOMAINS`): the integrand
  ``(1/π) ∫ d²z |z|^(-2S-2+2p) |1-z|^(-2T-2+2q) · Σ_k a_k m_k(S, T) c_k L_{w_k}(z)``
  with Brown's single-valued ``L_w(z)`` (family ``sv`` only; the sphere
  engine needs ``p + q ≤ 1``).  Independence: the ``L_w(z)`` with distinct
  words are linearly independent over the complex numbers (``L_w = G(w; z)
  + Σ`` products with antiholomorphic factors of positive weight, and the
  ``G(u; z) G(v; z̄)`` are independent), so every ``c · L_w`` is kept.  The
  symmetry is crossing of closed strings, ``I(z; S, T) = ± I(1-z; T, S)``,
  with ``L_w(1-z) = Σ_u μ_u L_u(z)`` (single-valued MZVs ``μ_u``,
  :func:`lowenergy.svpolylog.sphere_residues.words_at_one`; written
  ``svpolylog(w; 1-z)`` in the file).

A new family is one more entry of :data:`FAMILIES`: a :class:`Family` with
the largest weight it supports, the text of ``F(w; x)`` and ``F(w; 1-x)``,
and ``F(w; x)`` as ``{G-word: MZV}``.

Examples
--------
>>> a = generate(AnsatzSpec(weight=2, family="mpl"))
>>> (a.functions, a.independent_functions, len(a.parameters))   # 1 + 2 + 4 words
(7, 7, 7)
>>> a = generate(AnsatzSpec(weight=2, family="sv"))
>>> [f.text("x") for f in a.independent]    # L_01 = L_10 on the real line
['1', 'svpolylog(0; x)', 'svpolylog(1; x)', 'svpolylog(0,0; x)', 'svpolylog(0,1; x)', 'svpolylog(1,1; x)']
"""

from __future__ import annotations

import re
import shlex
from dataclasses import dataclass, field, replace
from fractions import Fraction
from typing import Callable, Dict, Hashable, List, Mapping, Optional, Sequence, Tuple

import flint

from .. import __version__
from ..errors import InputError
from ..limits import int_text
from ..integrand.transform import g_of_one_minus_x
from ..poly import add_into
from ..words import all_words
from ..zeta.element import MZV
from ..zeta.reduction import monomials_of_weight
from ..zeta.table import TableStore, default_store

__all__ = [
    "AnsatzSpec",
    "Family",
    "FAMILIES",
    "DOMAINS",
    "DEGREE_RULES",
    "SYMMETRIES",
    "Candidate",
    "AnsatzTerm",
    "Ansatz",
    "generate",
    "independent_subset",
    "MAX_PARAMETERS",
    "MAX_CANDIDATES",
]

Word = Tuple[int, ...]
Monomial = Tuple[Tuple[int, ...], ...]

#: Integration domains the generator knows: real 0 < x < 1, or the sphere (d²z/π over the plane).
DOMAINS = ("line", "sphere")
DEGREE_RULES = ("fixed", "falling", "rising")
SYMMETRIES = ("none", "symmetric", "antisymmetric")
#: Refuse larger ansätze (the integrand reader and fix would struggle anyway).
MAX_PARAMETERS = 5000
#: Most candidate products of one total weight (the exact rank is dense in them).
MAX_CANDIDATES = 2100
MAX_DEGREE = 30
MAX_SHIFT = 8
_RESERVED = frozenset({"zeta", "pi", "G", "Li", "log", "svpolylog", "abs", "s", "t", "x", "S", "T", "z"})


def _word_args(word: Word) -> str:
    return ",".join(map(str, word))


def _mpl_combination(word: Word, store: TableStore) -> Dict[Word, MZV]:
    return {word: MZV.one()}


def _sv_combination(word: Word, store: TableStore) -> Dict[Word, MZV]:
    # imported here: svpolylog sits after the integrand layer
    from ..svpolylog.construct import real_line_restriction

    return real_line_restriction(word, store=store)


@dataclass(frozen=True)
class Family:
    """A family of functions ``F(w; x)`` indexed by words over {0, 1}.

    ``combination(word, store)`` gives ``F(w; x)`` on 0 < x < 1 as
    ``{G-word: MZV}``; ``name(word, arg)`` the integrand text at ``arg``
    (``"x"`` or ``"1-x"``).
    """

    key: str
    description: str
    max_weight: int
    name: Callable[[Word, str], str]
    combination: Callable[[Word, TableStore], Dict[Word, MZV]]


FAMILIES: Dict[str, Family] = {
    "mpl": Family(
        "mpl",
        "multiple polylogarithms G(w; x), letters 0 and 1",
        12,
        lambda w, arg: f"G({_word_args(w)}; {arg})",
        _mpl_combination,
    ),
    "sv": Family(
        "sv",
        "Brown's single-valued polylogarithms L_w restricted to 0 < x < 1, svpolylog(w; x)",
        8,
        lambda w, arg: f"svpolylog({_word_args(w)}; {arg})",
        _sv_combination,
    ),
}


@dataclass(frozen=True)
class AnsatzSpec:
    """What to generate (see the module docstring for every field)."""

    weight: int
    family: str = "sv"
    mzv: bool = False
    uniform: bool = False
    degree: int = 0
    degree_rule: str = "fixed"
    exact_degree: bool = False
    symmetry: str = "none"
    x_shift: int = 0
    y_shift: int = 0
    prefix: str = "a"
    domain: str = "line"
    title: str = ""

    def validate(self) -> None:
        """Raise :class:`~lowenergy.errors.InputError` (naming the option) on bad values."""

        def integer(name: str, value, low: int, high: int) -> None:
            if isinstance(value, bool) or not isinstance(value, int) or not low <= value <= high:
                raise InputError(f"--{name.replace('_', '-')} must be an integer from {low} to {high}, got {int_text(value) if isinstance(value, int) else repr(value)}")

        if self.domain not in DOMAINS:
            raise InputError(f"unknown --domain {self.domain!r}", hint="known: " + ", ".join(DOMAINS))
        if self.family not in FAMILIES:
            raise InputError(f"unknown --family {self.family!r}", hint="known: " + ", ".join(FAMILIES))
        integer("weight", self.weight, 0, FAMILIES[self.family].max_weight)
        integer("degree", self.degree, 0, MAX_DEGREE)
        integer("x_shift", self.x_shift, 0, MAX_SHIFT)
        integer("y_shift", self.y_shift, 0, MAX_SHIFT)
        if self.domain == "sphere":
            if self.family != "sv":
                raise InputError(
                    f"--family {self.family} is multivalued on the sphere",
                    hint="use --family sv (Brown's single-valued polylogarithms L_w(z)) with --domain sphere",
                )
            if self.x_shift + self.y_shift > 1:
                raise InputError(
                    f"--x-shift {self.x_shift} --y-shift {self.y_shift}: the sphere expansion supports "
                    "|z|^(-2S-2+2p)|1-z|^(-2T-2+2q) with p + q <= 1 only",
                    hint="use shifts (0, 0), (1, 0) or (0, 1) with --domain sphere",
                )
        if self.degree_rule not in DEGREE_RULES:
            raise InputError(f"unknown --degree-rule {self.degree_rule!r}", hint="known: " + ", ".join(DEGREE_RULES))
        if self.symmetry not in SYMMETRIES:
            raise InputError(f"unknown --symmetry {self.symmetry!r}", hint="known: " + ", ".join(SYMMETRIES))
        if self.symmetry != "none" and self.x_shift != self.y_shift:
            raise InputError(
                f"--symmetry {self.symmetry} needs equal --x-shift and --y-shift (got {self.x_shift} and {self.y_shift})",
                hint="the Koba-Nielsen factor must itself be symmetric under x <-> 1-x, s <-> t",
            )
        if not isinstance(self.prefix, str) or not re.fullmatch(r"[A-Za-z][A-Za-z_]*", self.prefix):
            raise InputError(f"--prefix must be letters (and _), got {self.prefix!r}", hint="e.g. --prefix a")
        if self.prefix in _RESERVED or self.prefix.startswith("zeta"):
            raise InputError(f"--prefix {self.prefix!r} clashes with a reserved name", hint="e.g. --prefix a")
        if not isinstance(self.title, str) or len(self.title) > 200 or any(ord(ch) < 32 for ch in self.title):
            raise InputError("--title must be one line of at most 200 characters")

    def max_degree(self, weight: int) -> int:
        """The largest total degree in s, t attached to a product of this total weight."""
        if self.degree_rule == "fixed":
            return self.degree
        if self.degree_rule == "falling":
            return self.degree + self.weight - weight
        return self.degree + weight

    def rule_text(self) -> str:
        rel = "=" if self.exact_degree else "<="
        form = {"fixed": f"{self.degree}", "falling": f"{self.degree} + {self.weight} - w", "rising": f"{self.degree} + w"}
        return f"i + j {rel} {form[self.degree_rule]} (rule '{self.degree_rule}', w the total weight of c*F)"

    def command(self) -> str:
        """The command line that regenerates this ansatz."""
        parts = [f"lowenergy ansatz --weight {self.weight} --family {self.family}"]
        if self.mzv:
            parts.append("--mzv")
        if self.uniform:
            parts.append("--uniform")
        parts.append(f"--degree {self.degree} --degree-rule {self.degree_rule}")
        if self.exact_degree:
            parts.append("--exact-degree")
        if self.symmetry != "none":
            parts.append(f"--symmetry {self.symmetry}")
        if self.x_shift or self.y_shift:
            parts.append(f"--x-shift {self.x_shift} --y-shift {self.y_shift}")
        if self.prefix != "a":
            parts.append(f"--prefix {self.prefix}")
        if self.domain != "line":
            parts.append(f"--domain {self.domain}")
        if self.title:
            parts.append(f"--title {shlex.quote(self.title)}")
        return " ".join(parts)

    @property
    def names(self) -> Tuple[str, str, str, str]:
        """The names of (first variable, second variable, argument, reflected argument) in the file."""
        return ("S", "T", "z", "1-z") if self.domain == "sphere" else ("s", "t", "x", "1-x")


@dataclass(frozen=True)
class Candidate:
    """One product ``c · F(word; x)``: ``constant`` a canonical MZV monomial (``()`` for 1)."""

    family: str
    word: Word
    constant: Monomial = ()

    @property
    def weight(self) -> int:
        return len(self.word) + sum(sum(g) for g in self.constant)

    def constant_text(self) -> str:
        return MZV({self.constant: 1}).to_text() if self.constant else ""

    def function_text(self, arg: str) -> str:
        return FAMILIES[self.family].name(self.word, arg) if self.word else ""

    def text(self, arg: str = "x") -> str:
        pieces = [p for p in (self.constant_text(), self.function_text(arg)) if p]
        return "*".join(pieces) or "1"


@dataclass(frozen=True)
class AnsatzTerm:
    """``parameter · c · (s^i t^j F(x) ± s^j t^i F(1-x))`` (the bracket only with a symmetry)."""

    parameter: str
    candidate: Candidate
    monomial: Tuple[int, int]
    sign: int = 0  # 0: no symmetry; +1 / -1: symmetric / antisymmetric image added
    names: Tuple[str, str, str, str] = ("s", "t", "x", "1-x")

    def text(self) -> str:
        c = self.candidate
        v1, v2, arg, image_arg = self.names
        direct = _join(_mono_text(self.monomial, (v1, v2)), c.function_text(arg))
        pre = _join(self.parameter, c.constant_text())
        if not self.sign:
            return _join(pre, direct)
        image = _join(_mono_text(self.monomial[::-1], (v1, v2)), c.function_text(image_arg))
        if image == direct and self.sign > 0:
            return _join("2", pre, direct)
        return f"{pre}*({direct} {'+' if self.sign > 0 else '-'} {image})"


def _join(*pieces: str) -> str:
    return "*".join(p for p in pieces if p and p != "1") or "1"



def _mono_text(m: Tuple[int, int], names: Sequence[str] = ("s", "t")) -> str:
    out = []
    for name, e in zip(names, m):
        if e == 1:
            out.append(name)
        elif e > 1:
            out.append(f"{name}^{e}")
    return "*".join(out) or "1"


@dataclass
class Ansatz:
    """The generated ansatz: counts, the parameter terms and the file text."""

    spec: AnsatzSpec
    candidates: List[Candidate]
    independent: List[Candidate]
    terms: List[AnsatzTerm]
    per_weight: List[dict] = field(default_factory=list)

    @property
    def functions(self) -> int:
        """Number of candidate products ``c · F`` (before removing relations)."""
        return len(self.candidates)

    @property
    def independent_functions(self) -> int:
        return len(self.independent)

    @property
    def parameters(self) -> List[str]:
        return [t.parameter for t in self.terms]

    def to_dict(self) -> dict:
        return {
            "functions": self.functions,
            "independent_functions": self.independent_functions,
            "parameters": len(self.terms),
            "parameter_names": self.parameters,
            "per_weight": self.per_weight,
            "options": {
                "weight": self.spec.weight,
                "family": self.spec.family,
                "mzv": self.spec.mzv,
                "uniform": self.spec.uniform,
                "degree": self.spec.degree,
                "degree_rule": self.spec.degree_rule,
                "exact_degree": self.spec.exact_degree,
                "symmetry": self.spec.symmetry,
                "x_shift": self.spec.x_shift,
                "y_shift": self.spec.y_shift,
                "domain": self.spec.domain,
            },
            "command": self.spec.command(),
        }

    def koba_nielsen(self) -> str:
        def exponent(var: str, shift: int) -> str:
            k = shift - 1
            return f"-{var}" if k == 0 else f"-{var}{k:+d}"

        if self.spec.domain == "sphere":
            def sphere(var: str, shift: int) -> str:
                k = 2 * (shift - 1)
                return f"-2*{var}" if k == 0 else f"-2*{var}{k:+d}"

            return f"abs(z)^({sphere('S', self.spec.x_shift)})*abs(1-z)^({sphere('T', self.spec.y_shift)})"
        return f"x^({exponent('s', self.spec.x_shift)})*(1-x)^({exponent('t', self.spec.y_shift)})"

    def to_toml(self) -> str:
        """The integrand file (the format of :mod:`lowenergy.integrand.reader`)."""
        spec = self.spec
        fam = FAMILIES[spec.family]
        weights = f"exactly {spec.weight}" if spec.uniform else f"0..{spec.weight}"
        constants = (
            "1 and the canonical MZV basis monomials of lower weight (lowenergy.zeta tables)"
            if spec.mzv else "1 (no MZV constants)"
        )
        v1, v2, x, y = spec.names
        sym = {
            "none": "none imposed",
            "symmetric": f"I({x}; {v1}, {v2}) = I({y}; {v2}, {v1}); each parameter multiplies "
                         f"m({v1},{v2}) c F({x}) + m({v2},{v1}) c F({y})",
            "antisymmetric": f"I({x}; {v1}, {v2}) = -I({y}; {v2}, {v1}); each parameter multiplies "
                             f"m({v1},{v2}) c F({x}) - m({v2},{v1}) c F({y})",
        }[spec.symmetry]
        description = fam.description
        measure = ""
        if spec.domain == "sphere":
            description = "Brown's single-valued polylogarithms L_w(z) of complex z, svpolylog(w; z)"
            measure = "(1/pi) int d^2z "
        summary = [
            f"Generated by lowenergy {__version__}: {spec.command()}",
            f"integrand = {measure}{self.koba_nielsen()} * sum_k a_k * m_k({v1},{v2}) * c_k * F_k({x}), where",
            f"  F_k: {description}, total weight of c_k*F_k {weights};",
            f"  c_k: {constants};",
            f"  m_k = {v1}^i {v2}^j with {spec.rule_text()};",
            f"  symmetry: {sym}.",
            f"Independence: of {self.functions} candidate products c*F, {self.independent_functions} are linearly",
            "independent over Q (exact rank after splitting MZV coefficients by canonical basis element);",
            f"only these carry parameters: {len(self.terms)} parameters {self.terms[0].parameter}..{self.terms[-1].parameter}."
            if self.terms else "no parameters.",
        ]
        lines = ["# " + s if s else "#" for s in summary]
        lines.append("#")
        lines.append("# per total weight w: candidates / independent / parameters")
        for row in self.per_weight:
            lines.append(f"#   w = {row['weight']}: {row['functions']} / {row['independent_functions']} / {row['parameters']}")
        title = spec.title or f"Ansatz: {fam.key} functions up to weight {spec.weight}, {len(self.terms)} parameters"
        body = "\n".join(f"  {'+ ' if i else '  '}{t.text()}" for i, t in enumerate(self.terms))
        notes = " ".join(s.strip() for s in summary[1:])
        head = ['domain = "sphere"', 'variables = ["S", "T"]'] if spec.domain == "sphere" else []
        out = lines + head + [
            f"title = {_toml_str(title)}",
            f"provenance = {_toml_str(summary[0])}",
            f"notes = {_toml_str(notes)}",
            "parameters = [" + ", ".join(f'"{p}"' for p in self.parameters) + "]",
            'integrand = """',
            f"{self.koba_nielsen()} * (",
            body,
            ')"""',
            "",
        ]
        return "\n".join(out)


def _toml_str(s: str) -> str:
    return '"' + s.replace("\\", "\\\\").replace('"', '\\"') + '"'


# --------------------------------------------------------------------------
# exact independence
# --------------------------------------------------------------------------


def independent_subset(vectors: Sequence[Mapping[Hashable, Fraction]]) -> List[int]:
    """Indices of the first maximal linearly independent subset (scanning in order).

    Exact over Q: the pivot columns of the reduced row echelon form of the
    matrix whose columns are the vectors (python-flint ``fmpq_mat``).

    >>> independent_subset([{"a": 1}, {"a": 2}, {"b": 1}, {"a": 1, "b": 1}])
    [0, 2]
    >>> independent_subset([{}, {"a": Fraction(1, 3)}])
    [1]
    """
    keys: Dict[Hashable, int] = {}
    for v in vectors:
        for k, c in v.items():
            if c:
                keys.setdefault(k, len(keys))
    if not keys:
        return []
    m = flint.fmpq_mat(len(keys), len(vectors))
    for j, v in enumerate(vectors):
        for k, c in v.items():
            if c:
                c = Fraction(c)
                m[keys[k], j] = flint.fmpq(c.numerator, c.denominator)
    r, rank = m.rref()
    pivots, col = [], 0
    for i in range(rank):
        while r[i, col] == 0:
            col += 1
        pivots.append(col)
        col += 1
    return pivots


def _flatten(combination: Mapping[Word, MZV], constant: Monomial, tag=()) -> Dict[Hashable, Fraction]:
    """``c · Σ_u μ_u G(u; x)`` as rational coordinates keyed by (tag, MZV monomial, word)."""
    scale = MZV({constant: 1}) if constant else None
    out: Dict[Hashable, Fraction] = {}
    for u, mu in combination.items():
        value = mu * scale if scale is not None else mu
        for mono, q in value.as_dict().items():
            if q:
                out[(tag, mono, u)] = out.get((tag, mono, u), 0) + q
    return out


def _at_one_minus_x(combination: Mapping[Word, MZV], store: TableStore) -> Dict[Word, MZV]:
    out: Dict[Word, MZV] = {}
    for u, c in combination.items():
        for v, d in g_of_one_minus_x(u, store=store).items():
            out[v] = out.get(v, MZV()) + c * d
    return {v: c for v, c in out.items() if c}


def _constants(weight: int, store: TableStore) -> List[Monomial]:
    if weight == 0:
        return [()]
    if weight == 1:
        return []
    return monomials_of_weight(store.all_generators(weight), weight)


def _monomials(max_degree: int, exact: bool) -> List[Tuple[int, int]]:
    out = []
    for d in range(0 if not exact else max(max_degree, 0), max_degree + 1):
        out.extend((d - j, j) for j in range(d + 1))
    return out


# --------------------------------------------------------------------------
# the generator
# --------------------------------------------------------------------------


def generate(spec: AnsatzSpec, store: TableStore | None = None) -> Ansatz:
    """Generate the ansatz described by ``spec`` (see the module docstring).

    Raises :class:`~lowenergy.errors.InputError` for bad options or an empty
    or oversized ansatz, :class:`~lowenergy.errors.TableError` when the MZV
    tables do not reach the weight.
    """
    spec.validate()
    store = store or default_store()
    family = FAMILIES[spec.family]
    if spec.weight >= 2:
        store.reduction((spec.weight,))  # TableError naming the command if not built
    combos: Dict[Word, Dict[Word, MZV]] = {}
    sphere_values = None
    if spec.domain == "sphere":
        from ..svpolylog.sphere import SphereValues  # svpolylog sits after the integrand layer

        sphere_values = SphereValues("direct", store)

    def combination(word: Word, arg: str) -> Dict[Word, MZV]:
        key = (word, arg)
        if key not in combos:
            if sphere_values is not None:
                # coordinates in the independent L_u(z) (module docstring)
                from ..svpolylog.sphere_residues import words_at_one

                combos[key] = {word: MZV.one()} if arg == "x" else (
                    words_at_one(word, sphere_values) if word else {(): MZV.one()})
            else:
                base = family.combination(word, store) if word else {(): MZV.one()}
                combos[key] = base if arg == "x" else _at_one_minus_x(base, store)
        return combos[key]

    candidates: List[Candidate] = []
    independent: List[Candidate] = []
    terms_by_weight: List[List[Tuple[Candidate, Tuple[int, int], int]]] = []
    per_weight: List[dict] = []
    low = spec.weight if spec.uniform else 0
    for total in range(low, spec.weight + 1):  # refuse before any work
        size = sum(len(_constants(total - k, store)) * 2**k for k in range(total + 1) if spec.mzv or k == total)
        if size > MAX_CANDIDATES:
            raise InputError(
                f"weight {total} alone has {size} candidate functions, more than {MAX_CANDIDATES}",
                hint="lower --weight (or drop --mzv)",
            )
    for total in range(low, spec.weight + 1):
        # candidates of this total weight: smaller MZV weight first, so that
        # pure functions are preferred when relations tie them to MZV multiples
        block: List[Candidate] = []
        for k in range(total, -1, -1):
            if k < total and not spec.mzv:
                break
            consts = _constants(total - k, store)
            for word in all_words(k) if k else [()]:
                block.extend(Candidate(spec.family, word, c) for c in consts)
        candidates.extend(block)
        vectors = [_flatten(combination(c.word, "x"), c.constant) for c in block]
        kept = [block[i] for i in independent_subset(vectors)]
        independent.extend(kept)
        monos = _monomials(spec.max_degree(total), spec.exact_degree)
        chosen: List[Tuple[Candidate, Tuple[int, int], int]] = []
        if spec.symmetry == "none":
            chosen = [(c, m, 0) for c in kept for m in monos]
        else:
            sign = 1 if spec.symmetry == "symmetric" else -1
            # images b ± σb live on the monomials {m, swapped m}: one block per orbit
            orbits: Dict[Tuple[int, int], List[Tuple[int, int]]] = {}
            for m in monos:
                orbits.setdefault(tuple(sorted(m)), []).append(m)
            for orbit in orbits.values():
                pairs = [(c, m) for m in orbit for c in kept]
                vecs = []
                for c, m in pairs:
                    v = _flatten(combination(c.word, "x"), c.constant, m)
                    add_into(v, _flatten(combination(c.word, "1-x"), c.constant, m[::-1]), sign)
                    vecs.append(v)
                chosen.extend((pairs[i][0], pairs[i][1], sign) for i in independent_subset(vecs))
        terms_by_weight.append(chosen)
        per_weight.append({
            "weight": total,
            "functions": len(block),
            "independent_functions": len(kept),
            "parameters": len(chosen),
        })
    count = sum(len(c) for c in terms_by_weight)
    if count == 0:
        raise InputError(
            "these options leave no term in the ansatz",
            hint="raise --weight or --degree, or use --degree-rule fixed",
        )
    if count > MAX_PARAMETERS:
        raise InputError(f"the ansatz would have {count} parameters, more than {MAX_PARAMETERS}",
                         hint="lower --weight or --degree")
    terms: List[AnsatzTerm] = []
    for chosen in terms_by_weight:
        for c, m, sign in chosen:
            terms.append(AnsatzTerm(f"{spec.prefix}{len(terms) + 1}", c, m, sign, spec.names))
    return Ansatz(spec, candidates, independent, terms, per_weight)
