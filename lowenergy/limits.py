"""The input budgets of every reader, in one place.

Every reader (integrand files, constraint files, MZV expressions, coefficient
CSV tables) checks these limits *before* the expensive step and refuses input
beyond them with a :class:`~lowenergy.errors.LowEnergyError` that names the
limit, instead of running out of time, memory or stack.  They are hard
limits: they do not depend on which MZV tables happen to be built.

The constants are plain module-level numbers; the modules that enforce them
import them from here (some re-export them under their old names).

>>> MAX_WEIGHT
20
>>> check_weight(12)
>>> check_weight(24)
Traceback (most recent call last):
    ...
lowenergy.errors.TableError: MZV weight 24 is beyond the package's limit of 20; hint: lowenergy builds MZV tables up to weight 20 only; reachable weights are 0 to 20
"""

from __future__ import annotations

from fractions import Fraction

from .errors import InputError, TableError

__all__ = [
    "MAX_TEXT_LENGTH",
    "MAX_DEPTH",
    "MAX_DIGITS",
    "MAX_INT_DIGITS",
    "MAX_EXPONENT",
    "MAX_WEIGHT",
    "MAX_SINGLE_ZETA_WEIGHT",
    "MAX_WORD_LENGTH",
    "MAX_STUFFLE_WEIGHT",
    "MAX_REGULARIZATION_WORK",
    "MAX_TERMS",
    "MAX_INTEGRAND_WORK",
    "MAX_SUMMANDS",
    "MAX_RATIONAL_BITS",
    "MAX_MZV_PRODUCT_WORK",
    "MAX_TOML_BYTES",
    "MAX_CSV_BYTES",
    "MAX_CSV_ROWS",
    "MAX_NUMERIC_DIGITS",
    "MAX_NUMERIC_WORK",
    "MAX_DECIMAL_EXPONENT",
    "check_weight",
    "check_single_zeta",
    "check_rational",
    "int_text",
]

#: Longest expression (one integrand, relation, table cell or command-line
#: argument), in characters (parsing costs about 50 microseconds a character).
MAX_TEXT_LENGTH = 50_000
#: Deepest nesting of parentheses, calls, signs and ``^`` together in one
#: expression.
MAX_DEPTH = 200
#: Most digits of a number literal in an expression (integer and decimal
#: part together).
MAX_DIGITS = 1000
#: Most digits of an integer anywhere else (a TOML value, a CSV cell); below
#: Python's own integer-string limit of 4300 digits.
MAX_INT_DIGITS = 1000
#: Largest absolute value of an integer exponent (``zeta(3)^64``), of the
#: integer part of an exponent of x or 1-x, and of the coefficient of s or t
#: in such an exponent.
MAX_EXPONENT = 64
#: Largest MZV weight anywhere (an index list, a word of ``G(...; 1)``, a
#: regularization).  It is the largest weight ``lowenergy tables build``
#: accepts, so it does not move when more tables are built.
MAX_WEIGHT = 20
#: Largest n of a single zeta value ``zeta(n)``.  These need no table (odd n
#: are generators, even n rational multiples of ``zeta(2)^(n/2)``), so they
#: may go beyond :data:`MAX_WEIGHT`; their numerics cost grows with n (about
#: 5 s at n = 200 on a laptop core).
MAX_SINGLE_ZETA_WEIGHT = 100
#: Largest weight of a divergent MZV that may be stuffle-regularized (the
#: stuffle regularization costs about 2^weight combinations of index lists).
MAX_STUFFLE_WEIGHT = 13
#: Work budget of one shuffle regularization (``G(1,1,0,...;1)``, divergent
#: ``zeta(1,...)``), in the units of :func:`lowenergy.words.regularization_cost`
#: (every word up to length 12 is within it).
MAX_REGULARIZATION_WORK = 4_000_000
#: Longest word of ``G(...; x)`` in an integrand (its expansion then needs
#: tables above this weight).
MAX_WORD_LENGTH = 30
#: Most terms of any intermediate or final result of a reader.
MAX_TERMS = 200_000
#: Work budget for products: most multiplications of terms while reading one
#: integrand (counted, with the shuffles, before each product is formed).
#: About 30 microseconds each.
MAX_INTEGRAND_WORK = 50_000
#: Most top-level terms of one integrand (about 0.1 ms each).
MAX_SUMMANDS = 5_000
#: Work budget for products of MZVs in one expression (a relation, a table
#: cell, a command-line expression): most products of canonical monomials,
#: counted before each product is formed.  About 30 microseconds each.
MAX_MZV_PRODUCT_WORK = 40_000
#: Largest size, in bits, of the numerator or denominator of a rational
#: produced while reading (``((64^64)^64)^64`` would otherwise grow without
#: bound).
MAX_RATIONAL_BITS = 200_000
#: Largest integrand or constraint file, in bytes.
MAX_TOML_BYTES = 1_000_000
#: Largest coefficient table (CSV), in bytes.
MAX_CSV_BYTES = 20_000_000
#: Most data rows of a coefficient table.
MAX_CSV_ROWS = 100_000
#: Most significant digits of a cell of the ``numeric`` column of a table.
MAX_NUMERIC_DIGITS = 1000
#: Work budget of the numeric check of a table: the sum over rows of
#: (significant digits of the ``numeric`` cell)^2, a measure of the cost of
#: evaluating the MZVs to that precision.
MAX_NUMERIC_WORK = 5_000_000
#: Largest absolute decimal exponent of a number in the ``numeric`` column
#: (``1e400``).
MAX_DECIMAL_EXPONENT = 10_000


def check_weight(weight: int, what: str = "MZV") -> None:
    """Refuse a weight above :data:`MAX_WEIGHT` with a message saying what is reachable.

    The error is a :class:`~lowenergy.errors.TableError` (no table can hold
    that weight), so callers with a numeric fallback for missing tables
    (``lowenergy check``) still use it.
    """
    if weight > MAX_WEIGHT:
        raise TableError(
            f"{what} weight {weight} is beyond the package's limit of {MAX_WEIGHT}",
            hint=f"lowenergy builds MZV tables up to weight {MAX_WEIGHT} only; "
            f"reachable weights are 0 to {MAX_WEIGHT}",
        )


def int_text(n: int, limit: int = 30) -> str:
    """``str(n)`` for an integer of at most ``limit`` digits, else a short
    description (``str`` of a huge integer is slow and beyond Python's
    4,300-digit limit it raises).

    >>> int_text(-12), int_text(16**5000)
    ('-12', 'an integer of more than 30 digits')
    """
    if abs(n) < 10**limit:
        return str(n)
    return f"an integer of more than {limit} digits"


def check_single_zeta(n: int) -> None:
    """Refuse ``zeta(n)`` with n above :data:`MAX_SINGLE_ZETA_WEIGHT`.

    >>> check_single_zeta(99)
    >>> check_single_zeta(10**20)
    Traceback (most recent call last):
        ...
    lowenergy.errors.InputError: zeta(n) with n = 100000000000000000000 is beyond the package's limit of n <= 100
    """
    if n > MAX_SINGLE_ZETA_WEIGHT:
        raise InputError(f"zeta(n) with n = {int_text(n)} is beyond the package's limit of n <= {MAX_SINGLE_ZETA_WEIGHT}")


def check_rational(q: Fraction, what: str = "number") -> Fraction:
    """Return ``q`` if numerator and denominator fit in :data:`MAX_RATIONAL_BITS` bits.

    >>> check_rational(Fraction(3, 4))
    Fraction(3, 4)
    >>> check_rational(Fraction(2) ** 300_000)
    Traceback (most recent call last):
        ...
    lowenergy.errors.InputError: number too large (more than 200000 bits); hint: numbers are limited in size; simplify the expression
    """
    if q.numerator.bit_length() > MAX_RATIONAL_BITS or q.denominator.bit_length() > MAX_RATIONAL_BITS:
        raise InputError(
            f"{what} too large (more than {MAX_RATIONAL_BITS} bits)",
            hint="numbers are limited in size; simplify the expression",
        )
    return q
