"""The change of argument ``x -> 1 - x`` for iterated integrals ``G(w; x)``.

:func:`g_of_one_minus_x` writes ``G(a1, ..., an; 1 - x)`` as a combination
of ``G(u; x)`` with exact MZV coefficients.

Derivation
----------
Write ``I_γ(a1, ..., an)`` for the iterated integral along a path ``γ``
whose first letter ``a1`` sits next to the end point of ``γ`` (the
convention of :mod:`lowenergy.words`), so that ``G(w; y) = I_{0→y}(w)``.

1. *Substitution.*  With ``t = 1 - u`` one has ``dt/(t - a) = du/(u - (1-a))``
   and the path ``0 → y`` becomes ``1 → 1 - y``.  Hence, with ``y = 1 - x``
   and ``w̄ = (1-a1, ..., 1-an)`` (every letter flipped),

       G(w; 1-x) = I_{1→x}(w̄).

2. *Path composition.*  Split the path ``1 → x`` into ``α: 1 → 0`` followed
   by ``β: 0 → x``.  The innermost letters (the end of the word) are
   integrated first, i.e. along ``α``; so (Chen 1977, "Iterated path
   integrals", Bull. AMS 83, eq. (1.6.2), from memory)

       I_{αβ}(w̄) = Σ_{w̄ = u v} I_β(u) · I_α(v),

   a sum over all ways of cutting ``w̄`` into a prefix ``u`` and a suffix
   ``v``.

3. *Reversal.*  ``I_β(u) = G(u; x)``, and running ``α`` backwards gives
   ``I_α(v) = (-1)^|v| I_{0→1}(reverse(v)) = (-1)^|v| G(reverse(v); 1)``.

Therefore

    G(w; 1-x) = Σ_{w̄ = u v} (-1)^|v| G(reverse(v); 1) · G(u; x).

The end points 0 and 1 are singular; both sides are regularized with the
tangential base points of the package (``G(0^n; x) = log(x)^n / n!`` at 0,
so tangent +1 at 0, which the substitution maps to tangent −1 at 1).  The
path from the tangent +1 at 0 to the tangent −1 at 1 has exactly the
shuffle-regularized values with ``G(0; 1) = G(1; 1) = 0``
(:func:`lowenergy.zeta.element.g_value`), so the formula holds for every
word, including those with leading 1s or trailing 0s.  Checks:
``G(0; 1-x) = G(1; x) = log(1-x)``, ``G(1; 1-x) = G(0; x) = log(x)`` and
``Li_2(1-x) = ζ(2) - log(x) log(1-x) - Li_2(x)`` (Euler's reflection; the
tests check all words up to length 5 numerically).

Examples
--------
>>> g_of_one_minus_x(())
{(): MZV('1')}
>>> g_of_one_minus_x((0,))
{(1,): MZV('1')}
"""

from __future__ import annotations

from functools import lru_cache
from typing import Dict, Tuple

from ..errors import InputError
from ..zeta.element import MZV, g_value
from ..zeta.table import TableStore, default_store

__all__ = ["g_of_one_minus_x", "require_weight"]

Word = Tuple[int, ...]


@lru_cache(maxsize=4096)
def _cached(word: Word, store: TableStore) -> Tuple[Tuple[Word, MZV], ...]:
    flipped = tuple(1 - a for a in word)
    n = len(flipped)
    out: Dict[Word, MZV] = {}
    for cut in range(n + 1):
        u, v = flipped[:cut], flipped[cut:]
        value = g_value(tuple(reversed(v)), store=store)
        if not value:
            continue
        if len(v) % 2:
            value = -value
        out[u] = out.get(u, MZV()) + value
    return tuple((u, c) for u, c in out.items() if c)


def g_of_one_minus_x(word, store: TableStore | None = None) -> Dict[Word, MZV]:
    """``G(word; 1-x)`` as ``{u: c_u}`` meaning ``Σ_u c_u · G(u; x)``.

    Parameters
    ----------
    word:
        A sequence of letters 0 and 1.
    store:
        MZV table store (default: the user's cache).  Words of length ``n``
        need the tables up to weight ``n`` (built on first use;
        :class:`~lowenergy.errors.TableError` beyond the buildable weights).

    The result maps words (prefixes of the flipped word) to exact
    :class:`~lowenergy.zeta.element.MZV` coefficients; see the module
    docstring for the derivation.
    """
    letters = tuple(word)
    for a in letters:
        if isinstance(a, bool) or a not in (0, 1):
            raise InputError(f"letters of words are 0 and 1, got {a!r}")
    letters = tuple(int(a) for a in letters)
    store = store or default_store()
    require_weight(_needed_weight(letters), store)
    return dict(_cached(letters, store))


def _needed_weight(word: Word) -> int:
    """Largest weight of an MZV the transform of ``word`` needs.

    The cut ``w̄ = u v`` needs ``G(reverse(v); 1)``, which is 0 without any
    table when ``v`` is ``0^k`` or ``1^k``.
    """
    flipped = tuple(1 - a for a in word)
    for cut in range(len(flipped) + 1):
        v = flipped[cut:]
        if len(set(v)) > 1:
            return len(v)
    return 0


def require_weight(weight: int, store: TableStore) -> None:
    """Make the tables reach ``weight`` (built on demand, see
    :mod:`lowenergy.zeta.table`); the store's :class:`~lowenergy.errors.TableError`
    when they cannot.

    Checked *before* regularizing long words, whose shuffle regularization
    is expensive (minutes at length 16) and pointless without the tables.
    """
    store.ensure(weight)
