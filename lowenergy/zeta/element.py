"""Exact elements of the MZV algebra in canonical form.

An :class:`MZV` is a Q-linear combination of monomials in the generators of
the conventional basis: ``ζ(2)``, the odd single zetas ``ζ(3), ζ(5), ...``
and the depth ≥ 2 generators chosen weight by weight in
:mod:`lowenergy.zeta.reduction` (``ζ(3,5), ζ(3,7), ζ(3,3,5), ζ(3,9),
ζ(2,2,3,5), ...``).  Since those generate the algebra freely (Brown 2012,
assuming the standard dimension conjecture that the tests check against
Zagier's d_w), two equal numbers built from MZVs get identical forms.
Mixed weights are allowed; ``π^2 = 6 ζ(2)``.

Examples
--------
>>> z = zeta
>>> z(2, 1) == z(3)                        # Euler
True
>>> z(2) ** 2 == Fraction(5, 2) * z(4)
True
>>> print(z(5, 3))                         # ζ(3)ζ(5) = ζ(3,5) + ζ(5,3) + ζ(8)
-zeta(3,5) + zeta(3)*zeta(5) - 24/175*zeta(2)^4
>>> z(5, 3).weight
8
"""

from __future__ import annotations

from fractions import Fraction
from typing import Dict, Iterable, Iterator, Mapping, Tuple, Union

import mpmath

from ..errors import InputError, RegularizationError
from ..limits import MAX_REGULARIZATION_WORK, MAX_STUFFLE_WEIGHT, check_single_zeta, check_weight
from ..words import (
    Indices,
    indices_to_word,
    is_convergent_indices,
    regularization_cost,
    regularize_indices,
    regularize_word,
    word_to_indices,
)
from .reduction import Monomial
from .table import TableStore, default_store

__all__ = ["MZV", "zeta", "g_value", "Rational"]

Rational = Union[int, Fraction]


def _gen_key(g: Indices) -> tuple:
    return (sum(g), g)


def _mono_mul(a: Monomial, b: Monomial) -> Monomial:
    return tuple(sorted(a + b, key=_gen_key))


def _mono_weight(m: Monomial) -> int:
    return sum(sum(g) for g in m)


class MZV:
    """A Q-linear combination of products of MZVs, in canonical form.

    Build elements with :func:`zeta`, :func:`g_value`, ``MZV.rational(q)``
    and the arithmetic operators; compare with ``==``; use as dict keys.
    """

    __slots__ = ("_terms", "_hash")

    def __init__(self, terms: Mapping[Monomial, Rational] | None = None) -> None:
        clean: Dict[Monomial, Fraction] = {}
        if terms:
            for mono, c in terms.items():
                if c:
                    key = tuple(sorted(mono, key=_gen_key))
                    clean[key] = clean.get(key, Fraction(0)) + Fraction(c)
        self._terms = {k: v for k, v in clean.items() if v}
        self._hash = None

    def __reduce__(self):
        """Pickle as ``(monomial, numerator, denominator)`` triples: a Fraction
        pickles as text and is parsed again on loading, which made moving
        expansions between Dask processes cost several times more."""
        return (_mzv_from_triples, ([(m, c.numerator, c.denominator) for m, c in self._terms.items()],))

    @classmethod
    def _canonical(cls, terms: Dict[Monomial, Fraction]) -> "MZV":
        """Wrap a dict whose monomials are already sorted (no copy, no sorting)."""
        out = cls.__new__(cls)
        out._terms = {k: v for k, v in terms.items() if v}
        out._hash = None
        return out

    # -- construction --------------------------------------------------------
    @classmethod
    def rational(cls, q: Rational) -> "MZV":
        return cls({(): Fraction(q)})

    @classmethod
    def from_canonical(cls, terms: Dict[Monomial, Fraction]) -> "MZV":
        """Wrap ``{monomial: Fraction}`` that is already canonical (sorted
        monomials, non-zero Fraction coefficients) without re-normalizing it."""
        out = cls.__new__(cls)
        out._terms = terms
        out._hash = None
        return out

    @classmethod
    def zero(cls) -> "MZV":
        return cls()

    @classmethod
    def one(cls) -> "MZV":
        return cls.rational(1)

    @staticmethod
    def _coerce(other) -> "MZV | None":
        if isinstance(other, MZV):
            return other
        if isinstance(other, (int, Fraction)) and not isinstance(other, bool):
            return MZV.rational(other)
        return None

    # -- arithmetic ----------------------------------------------------------
    def __add__(self, other):
        o = self._coerce(other)
        if o is None:
            return NotImplemented
        out = dict(self._terms)
        for k, v in o._terms.items():
            out[k] = out.get(k, 0) + v
        return MZV._canonical(out)

    __radd__ = __add__

    def __neg__(self) -> "MZV":
        return MZV._canonical({k: -v for k, v in self._terms.items()})

    def __pos__(self) -> "MZV":
        return self

    def __sub__(self, other):
        o = self._coerce(other)
        if o is None:
            return NotImplemented
        return self + (-o)

    def __rsub__(self, other):
        o = self._coerce(other)
        if o is None:
            return NotImplemented
        return o + (-self)

    def __mul__(self, other):
        if isinstance(other, (int, Fraction)) and not isinstance(other, bool):
            return MZV._canonical({k: Fraction(v * other) for k, v in self._terms.items()})
        if not isinstance(other, MZV):
            return NotImplemented
        out: Dict[Monomial, Fraction] = {}
        for ka, va in self._terms.items():
            for kb, vb in other._terms.items():
                k = _mono_mul(ka, kb) if ka and kb else (ka or kb)
                out[k] = out.get(k, 0) + va * vb
        return MZV._canonical(out)

    __rmul__ = __mul__

    def __truediv__(self, other):
        if isinstance(other, MZV):
            if not other.is_rational():
                raise InputError("division by a non-rational MZV is not supported")
            other = other.rational_value()
        if isinstance(other, (int, Fraction)) and not isinstance(other, bool):
            if other == 0:
                raise InputError("division by zero")
            return self * (Fraction(1) / Fraction(other))
        return NotImplemented

    def __pow__(self, n: int) -> "MZV":
        if not isinstance(n, int) or n < 0:
            raise InputError("powers of MZVs must be non-negative integers")
        result = MZV.one()
        base = self
        while n:
            if n & 1:
                result = result * base
            base = base * base
            n >>= 1
        return result

    # -- comparison ------------------------------------------------------------
    def __eq__(self, other) -> bool:
        o = self._coerce(other)
        if o is None:
            return NotImplemented
        return self._terms == o._terms

    def __hash__(self) -> int:
        if self._hash is None:
            self._hash = hash(frozenset(self._terms.items()))
        return self._hash

    def __bool__(self) -> bool:
        return bool(self._terms)

    # -- inspection --------------------------------------------------------------
    def terms(self) -> Iterator[Tuple[Monomial, Fraction]]:
        """Monomials and coefficients in canonical order (weight, then generators)."""
        for mono in sorted(self._terms, key=lambda m: (_mono_weight(m), len(m), [_gen_key(g) for g in m])):
            yield mono, self._terms[mono]

    def as_dict(self) -> Dict[Monomial, Fraction]:
        return dict(self._terms)

    def is_rational(self) -> bool:
        return all(m == () for m in self._terms)

    def rational_value(self) -> Fraction:
        if not self.is_rational():
            raise InputError(f"{self} is not a rational number")
        return self._terms.get((), Fraction(0))

    def weights(self) -> set:
        """The set of weights present (empty for zero)."""
        return {_mono_weight(m) for m in self._terms}

    @property
    def weight(self) -> int | None:
        """The weight of a homogeneous element; ``None`` for 0 or mixed weight."""
        ws = self.weights()
        return ws.pop() if len(ws) == 1 else None

    def homogeneous_part(self, weight: int) -> "MZV":
        return MZV({m: c for m, c in self._terms.items() if _mono_weight(m) == weight})

    def coefficient(self, mono: Iterable[Indices]) -> Fraction:
        """Coefficient of a monomial, e.g. ``x.coefficient([(3,), (5,)])``."""
        key = tuple(sorted((tuple(g) for g in mono), key=_gen_key))
        return self._terms.get(key, Fraction(0))

    # -- output ------------------------------------------------------------------
    def to_text(self, style: str = "plain", pi: bool = False) -> str:
        """The canonical form as text.

        ``style="plain"`` is the package's input syntax (``zeta(3,5)``,
        ``^``, ``*``); ``style="latex"`` gives ``\\zeta(3,5)`` etc.; with
        ``pi=True`` powers of ``ζ(2)`` are shown as powers of ``π^2/6``.
        """
        from .format import element_to_text

        return element_to_text(self, style=style, pi=pi)

    def __str__(self) -> str:
        return self.to_text()

    def __repr__(self) -> str:
        return f"MZV({self.to_text()!r})"

    def _repr_latex_(self) -> str:
        """Jupyter display: the canonical form as a formula."""
        return "$" + self.to_text(style="latex") + "$"

    def to_sympy(self):
        """The canonical form as a sympy expression.

        Single zetas become ``sympy.zeta(n)`` (sympy writes ``ζ(2k)`` as a
        rational multiple of ``π^(2k)`` by itself); depth ≥ 2 generators
        become :class:`lowenergy.zeta.symbolic.MultipleZeta` objects, shown as
        ``zeta(3, 5)`` (our index order: first index on the largest summation
        variable) and evaluated numerically by ``.evalf(n)``.  Coefficients are
        exact ``sympy.Rational``.

        >>> zeta(5, 3).to_sympy()                  # ζ(2)^4 = π^8/1296
        -pi**8/9450 - zeta(3, 5) + zeta(3)*zeta(5)
        """
        from .symbolic import to_sympy

        return to_sympy(self)

    def numeric(self, digits: int = 30) -> mpmath.mpf:
        """Numerical value to ``digits`` significant decimal digits (relative
        to the largest term; cancellation is compensated by extra precision).

        The result is an ``mpmath.mpf`` (a :class:`~lowenergy.zeta.numeric.NumericValue`)
        that prints with ``digits`` digits:

        >>> print(zeta(3).numeric(40))
        1.202056903159594285399738161511449990765
        """
        from .numeric import NumericValue, zeta_numeric

        gens = {g for m in self._terms for g in m}
        guard = 10 + max((len(str(abs(c.numerator))) for c in self._terms.values()), default=0)
        with mpmath.workdps(digits + guard):
            values = {g: zeta_numeric(g, digits + guard) for g in gens}
            total = mpmath.mpf(0)
            for mono, c in self._terms.items():
                term = mpmath.mpf(c.numerator) / c.denominator
                for g in mono:
                    term *= values[g]
                total += term
            # round to the requested precision inside the local context (a bare
            # ``+total`` outside it would round to mpmath's global precision)
            total = mpmath.mpf(total)
        return NumericValue(total, digits)

    def f_alphabet(self, store: TableStore | None = None) -> Dict:
        """Image in the f-alphabet, ``{(f2_power, odd_letters): coefficient}``."""
        from .falphabet import monomial_falphabet

        store = store or default_store()
        out: Dict = {}
        for mono, c in self._terms.items():
            for k, v in monomial_falphabet(mono, store).items():
                out[k] = out.get(k, 0) + c * v
        return {k: v for k, v in out.items() if v}


def zeta(*indices: int, regularize: str | None = None, store: TableStore | None = None) -> MZV:
    """``ζ(n1, ..., nk)`` in canonical form (first index on the largest summation variable).

    Parameters
    ----------
    indices:
        Positive integers.
    regularize:
        ``None`` (default) refuses divergent values (``n1 = 1``);
        ``"shuffle"`` or ``"stuffle"`` regularizes with ``ζ(1) = 0``.
    store:
        Table store (default: the user's cache).

    Raises
    ------
    RegularizationError, InputError, TableError
    """
    store = store or default_store()
    idx = tuple(indices)
    for n in idx:
        if not isinstance(n, int) or isinstance(n, bool) or n < 1:
            raise InputError(f"MZV indices must be positive integers, got {n!r}")
    if not idx:
        return MZV.one()
    weight = sum(idx)
    if len(idx) > 1:
        check_weight(weight)
    else:  # single zetas need no table, but their numerics grow with n
        check_single_zeta(weight)
    if not is_convergent_indices(idx):
        if regularize is None:
            raise RegularizationError(
                f"zeta{idx} diverges (first index 1)",
                hint="ask for a regularization, e.g. --regularize shuffle",
            )
        if regularize == "stuffle" and weight > MAX_STUFFLE_WEIGHT:
            raise InputError(
                f"stuffle regularization of a divergent MZV of weight {weight} is beyond the limit of "
                f"{MAX_STUFFLE_WEIGHT}",
                hint=f"divergent MZVs up to weight {MAX_STUFFLE_WEIGHT} can be stuffle-regularized; "
                "shuffle regularization reaches further",
            )
        if regularize == "shuffle":
            _check_regularization_cost(indices_to_word(idx))
        # the tables of this weight are needed anyway: check before the work
        _require(weight, store)
        out = MZV()
        for conv, c in regularize_indices(idx, regularize).items():
            out = out + MZV(store.reduction(conv)) * c
        return out
    return MZV(store.reduction(idx))


def _require(weight: int, store: TableStore) -> None:
    """Raise the store's TableError unless the tables reach ``weight``."""
    if weight >= 2:
        store.reduction((weight,))


def _check_regularization_cost(word) -> None:
    cost = regularization_cost(word)
    if cost > MAX_REGULARIZATION_WORK:
        raise InputError(
            f"regularizing this word of length {len(word)} needs about {cost} steps, beyond the budget of "
            f"{MAX_REGULARIZATION_WORK}",
            hint="fewer leading 1s and trailing 0s make it cheaper; every word up to length 12 is within the budget",
        )


def g_value(word, store: TableStore | None = None) -> MZV:
    """Shuffle-regularized ``G(a1, ..., an; 1)`` for a word over {0, 1}."""
    store = store or default_store()
    word = tuple(word)
    for a in word:
        if a not in (0, 1):
            raise InputError(f"letters of words are 0 and 1, got {a!r}")
    if len(set(word)) <= 1:  # G(0^n; 1) = G(1^n; 1) = 0 for n >= 1, G(; 1) = 1
        return MZV.one() if not word else MZV()
    check_weight(len(word), "G word of")
    _check_regularization_cost(word)
    _require(len(word), store)
    out: Dict[Monomial, Fraction] = {}
    for w, c in regularize_word(word).items():
        idx = word_to_indices(w)
        sign = -1 if len(idx) % 2 else 1
        for mono, d in store.reduction(idx).items():
            out[mono] = out.get(mono, 0) + sign * c * d
    return MZV(out)


def _mzv_from_triples(triples) -> MZV:
    """Inverse of :meth:`MZV.__reduce__` (monomials already canonical).

    >>> import pickle
    >>> x = zeta(3) * zeta(5) - MZV.rational(Fraction(2, 7)) * zeta(2) ** 4
    >>> pickle.loads(pickle.dumps(x)) == x
    True
    """
    return MZV.from_canonical({m: Fraction(n, d) for m, n, d in triples})
