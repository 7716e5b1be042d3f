"""Partial-wave (Gegenbauer) decomposition of the residues, exactly.

At a simple pole ``s = m²`` (here ``m² = n``, the level) of an amplitude of
massless external states in D dimensions, the residue ``R_n(t)`` is a
polynomial in t; with the scattering angle ``cos θ = 1 + 2t/n`` it is a
polynomial ``P(x)`` in ``x = cos θ``, and unitarity asks for non-negative
coefficients in

    P(x) = Σ_J a_J C_J^(α)(x),      α = (D - 3)/2

(METHOD.md §6).  The Gegenbauer polynomials are those of Abramowitz &
Stegun 22.3.4,

    C_J^(α)(x) = Σ_{m ≤ J/2} (-1)^m (α)_(J-m) / (m! (J-2m)!) (2x)^(J-2m),

so for rational α every coefficient is rational and the decomposition is
exact: the top power of P fixes ``a_J`` through the leading coefficient
``2^J (α)_J / J!`` of ``C_J``, which is subtracted, and so on down.  Coefficients
that are MZVs (or polynomials in the parameters) are carried along exactly.

Normalization: ``a_J`` multiplies ``C_J^(α)`` itself.  Since
``C_J^(α)(1) = (2α)_J/J! > 0`` for α > 0, the signs (what unitarity is about)
are the same in the normalization ``C_J(x)/C_J(1)`` common in the
bootstrap literature.

Dimensions: D is an integer or a rational, default ``D = 10`` (the critical
dimension of the superstring).  ``D = 4`` gives Legendre polynomials (α = 1/2).
``D = 3`` (α = 0) is the degenerate case where ``C_J^(0) = 0`` for J ≥ 1; we use
its limit, the Chebyshev polynomials ``T_J = (J/2) lim_{α→0} C_J^(α)/α``
(A&S 22.5.4), i.e. the partial waves ``cos(Jθ)`` of three dimensions, with
``T_J`` from A&S 22.3.6.  ``D < 3`` is refused (no partial-wave expansion).

Sign convention: ``sign`` multiplies the residue ``Res_{s=n} I`` before the
decomposition.  The default ``sign = +1`` suits the open-superstring form
factor ``Γ(-s)Γ(-t)/Γ(1-s-t)``, whose residues ``(t+1)...(t+n-1)/n!`` have a
positive top spin at every level; the Beta function ``Γ(-s)Γ(-t)/Γ(-s-t)``
has residues ``-(t+1)...(t+n)/n!`` and needs ``sign = -1`` (the physical
propagator convention ``A ≈ ρ/(n - s)``).  Each table also says whether the
top-spin coefficient came out negative, which usually means the sign is the
wrong one for the amplitude at hand.

Examples
--------
>>> from fractions import Fraction
>>> gegenbauer_power_coefficients(2, Fraction(1, 2))   # P_2 = (3x^2 - 1)/2
[Fraction(-1, 2), Fraction(0, 1), Fraction(3, 2)]
>>> decompose([Fraction(0), Fraction(0), Fraction(1)], Fraction(1, 2))   # x^2 = (P_0 + 2 P_2)/3
{0: Fraction(1, 3), 2: Fraction(2, 3)}
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from fractions import Fraction
from functools import lru_cache
from pathlib import Path
from typing import Dict, Iterable, List, Optional, Sequence, Tuple, Union

import mpmath

from ..errors import InputError
from ..poly import add_into
from ..zeta.element import MZV
from .residues import ParamPoly, ResiduePoly, ResidueTable, VarSpec, _param_text, write_rows

__all__ = [
    "DEFAULT_DIMENSION",
    "alpha_of_dimension",
    "gegenbauer_power_coefficients",
    "decompose",
    "residue_in_cos_theta",
    "PartialWave",
    "PartialWaveTable",
    "partial_waves",
    "partial_waves_of_polynomial",
    "unitarity_scan",
]

DEFAULT_DIMENSION = 10

Number = Union[int, Fraction]


def alpha_of_dimension(D: Number) -> Fraction:
    """``α = (D - 3)/2``; refuses D < 3.

    >>> alpha_of_dimension(10)
    Fraction(7, 2)
    """
    try:
        d = Fraction(D)
    except (TypeError, ValueError):
        raise InputError(f"the dimension must be a rational number, got {D!r}") from None
    if d < 3:
        raise InputError(
            f"no partial-wave expansion in D = {d} < 3 dimensions",
            hint="use D ≥ 3 (D = 3 uses Chebyshev polynomials, D = 4 Legendre)",
        )
    return (d - 3) / 2


@lru_cache(maxsize=4096)
def _gegenbauer_cached(J: int, alpha: Fraction) -> Tuple[Fraction, ...]:
    coeffs = [Fraction(0)] * (J + 1)
    if alpha == 0:
        # Chebyshev T_J (A&S 22.3.6): T_0 = 1,
        # T_J = (J/2) Σ_m (-1)^m (J-m-1)!/(m!(J-2m)!) (2x)^(J-2m).
        if J == 0:
            return (Fraction(1),)
        for m in range(J // 2 + 1):
            c = Fraction(J, 2) * (-1) ** m * math.factorial(J - m - 1) / (math.factorial(m) * math.factorial(J - 2 * m))
            coeffs[J - 2 * m] = c * 2 ** (J - 2 * m)
        return tuple(coeffs)
    # A&S 22.3.4 with Γ(α + J - m)/Γ(α) = (α)_(J-m), the rising factorial
    for m in range(J // 2 + 1):
        poch = Fraction(1)
        for i in range(J - m):
            poch *= alpha + i
        c = (-1) ** m * poch / (math.factorial(m) * math.factorial(J - 2 * m))
        coeffs[J - 2 * m] = c * 2 ** (J - 2 * m)
    return tuple(coeffs)


def gegenbauer_power_coefficients(J: int, alpha: Number) -> List[Fraction]:
    """Coefficients of ``C_J^(α)(x)`` by power of x (``T_J`` for α = 0), exactly.

    >>> gegenbauer_power_coefficients(3, 1)          # U_3 = 8x^3 - 4x
    [Fraction(0, 1), Fraction(-4, 1), Fraction(0, 1), Fraction(8, 1)]
    >>> gegenbauer_power_coefficients(2, 0)          # T_2 = 2x^2 - 1
    [Fraction(-1, 1), Fraction(0, 1), Fraction(2, 1)]
    """
    if not isinstance(J, int) or J < 0:
        raise InputError(f"the spin must be a non-negative integer, got {J!r}")
    a = Fraction(alpha)
    if a < 0:
        raise InputError(f"Gegenbauer index α = {a} < 0 is not supported", hint="use D ≥ 3")
    return list(_gegenbauer_cached(J, a))


def decompose(poly_x: Sequence, alpha: Number) -> Dict[int, object]:
    """``P(x) = Σ_J a_J C_J^(α)(x)`` for ``P`` given by power of x.

    The coefficients may be Fractions, MZVs, or anything with ``+``, ``-`` and
    multiplication by Fractions; zero ``a_J`` are omitted.
    """
    a = Fraction(alpha)
    rem = list(poly_x)
    out: Dict[int, object] = {}
    for J in range(len(rem) - 1, -1, -1):
        top = rem[J]
        if not top:
            continue
        cj = gegenbauer_power_coefficients(J, a)
        aj = top * (Fraction(1) / cj[J])
        out[J] = aj
        for p in range(J + 1):
            if cj[p]:
                rem[p] = rem[p] - aj * cj[p]
    return dict(sorted(out.items()))


def residue_in_cos_theta(rpoly: ResiduePoly, mass2: Number) -> List[ParamPoly]:
    """Substitute ``t = m² (x - 1)/2`` (``cos θ = 1 + 2t/m²``) in a residue polynomial.

    Returns the coefficients of ``x^p`` as parameter polynomials.
    """
    m2 = Fraction(mass2)
    if m2 <= 0:
        raise InputError(f"partial waves need a massive pole, got m² = {m2}")
    degree = max(rpoly, default=0)
    out: List[ParamPoly] = [dict() for _ in range(degree + 1)]
    half = m2 / 2
    for i, pp in rpoly.items():
        if i < 0:
            raise InputError("residues with negative powers cannot be decomposed")
        # (m²/2)^i (x - 1)^i
        for p in range(i + 1):
            factor = half ** i * math.comb(i, p) * (-1) ** (i - p)
            add_into(out[p], pp, factor)
    return out


# ---------------------------------------------------------------------------
# results
# ---------------------------------------------------------------------------

@dataclass
class PartialWave:
    """One coefficient ``a_J`` at one level.

    ``coefficient`` is exact (a parameter polynomial with MZV coefficients);
    ``value`` its numerical value and ``sign`` its sign (+1, 0, -1) when the
    integrand has no parameters (``None`` otherwise).
    """

    location: Fraction
    spin: int
    coefficient: ParamPoly
    value: Optional[mpmath.mpf] = None
    sign: Optional[int] = None

    @property
    def negative(self) -> bool:
        return self.sign is not None and self.sign < 0


@dataclass
class PartialWaveTable:
    """Partial waves of the simple-pole residues of one variable.

    Attributes
    ----------
    dimension, alpha:
        D and α = (D-3)/2 (α = 0 means Chebyshev T_J, see the module docstring).
    sign:
        The factor applied to ``Res`` before decomposing.
    variable, other, parameters:
        Names: the pole variable, the one in the residues (t), the parameters.
    waves:
        ``{location: {J: PartialWave}}`` for the positive locations.
    higher_poles:
        Locations where the pole is of higher order too (only its simple-pole
        part is decomposed there).
    top_spin_negative:
        Locations where the highest spin came out negative.
    """

    dimension: Fraction
    alpha: Fraction
    sign: int
    variable: str
    other: str
    parameters: Tuple[str, ...]
    waves: Dict[Fraction, Dict[int, PartialWave]]
    higher_poles: List[Fraction] = field(default_factory=list)
    top_spin_negative: List[Fraction] = field(default_factory=list)

    def levels(self) -> List[Fraction]:
        return sorted(self.waves)

    def coefficient(self, location, J: int) -> ParamPoly:
        w = self.waves.get(Fraction(location), {}).get(J)
        return dict(w.coefficient) if w else {}

    def entries(self) -> List[PartialWave]:
        return [self.waves[p][J] for p in sorted(self.waves) for J in sorted(self.waves[p])]

    def negatives(self) -> List[PartialWave]:
        """All coefficients with a negative value (unitarity violations), by level then spin."""
        return [w for w in self.entries() if w.negative]

    def first_negative(self) -> Optional[PartialWave]:
        """The lowest level (then the lowest spin) with a negative coefficient, or None."""
        neg = self.negatives()
        return neg[0] if neg else None

    def is_unitary(self) -> Optional[bool]:
        """True if no coefficient is negative (None if signs are undetermined: parameters)."""
        if any(w.sign is None for w in self.entries()):
            return None
        return not self.negatives()

    def to_rows(self, digits: int = 15) -> List[Dict[str, object]]:
        """Rows ``level, spin, param, exact, numeric, negative``."""
        rows = []
        for w in self.entries():
            for pkey in sorted(w.coefficient):
                coef = w.coefficient[pkey]
                if w.value is not None:
                    with mpmath.workdps(digits):
                        num = mpmath.nstr(w.value, digits)
                else:
                    num = ""
                rows.append({
                    "level": str(w.location.numerator) if w.location.denominator == 1 else str(w.location),
                    "spin": w.spin,
                    "param": _param_text(pkey, self.parameters),
                    "exact": coef.to_text(),
                    "numeric": num,
                    "negative": "" if w.sign is None else ("yes" if w.negative else "no"),
                })
        return rows

    def to_dataframe(self, digits: int = 15):
        import pandas

        return pandas.DataFrame(self.to_rows(digits), columns=_PW_COLUMNS)

    def write(self, path, fmt: Optional[str] = None, digits: int = 15) -> Path:
        return write_rows(self.to_rows(digits), path, fmt, columns=_PW_COLUMNS,
                          caption=f"Partial waves, D = {self.dimension}, sign {self.sign:+d}")


_PW_COLUMNS = ["level", "spin", "param", "exact", "numeric", "negative"]


def _sign_of(coef: ParamPoly, nparams: int, digits: int) -> Tuple[Optional[mpmath.mpf], Optional[int]]:
    if nparams and any(any(k) for k in coef):
        return None, None
    value = coef.get((0,) * nparams, MZV())
    if value.is_rational():
        q = value.rational_value()
        with mpmath.workdps(digits):
            return mpmath.mpf(q.numerator) / q.denominator, (q > 0) - (q < 0)
    x = value.numeric(digits)
    # an MZV combination that is zero is zero exactly (canonical form), so a
    # non-zero element has a definite sign; digits only limit tiny values
    if x == 0:
        raise InputError(f"could not decide the sign of {value} at {digits} digits", hint="raise digits")
    return x, (1 if x > 0 else -1)


def partial_waves_of_polynomial(
    rpoly: ResiduePoly,
    mass2: Number,
    D: Number = DEFAULT_DIMENSION,
    *,
    sign: int = 1,
    nparams: int = 0,
    digits: int = 30,
) -> Dict[int, PartialWave]:
    """Gegenbauer coefficients of one residue polynomial ``sign · R(t)`` at ``s = mass2``."""
    if sign not in (1, -1):
        raise InputError(f"sign must be +1 or -1, got {sign!r}")
    alpha = alpha_of_dimension(D)
    px = residue_in_cos_theta(rpoly, mass2)
    # decompose each parameter monomial separately (the Gegenbauer basis is rational)
    keys = sorted({k for pp in px for k in pp})
    waves: Dict[int, ParamPoly] = {}
    for key in keys:
        column = [pp.get(key, MZV()) * sign for pp in px]
        for J, aj in decompose(column, alpha).items():
            waves.setdefault(J, {})[key] = aj
    out: Dict[int, PartialWave] = {}
    loc = Fraction(mass2)
    for J in sorted(waves):
        value, sgn = _sign_of(waves[J], nparams, digits)
        out[J] = PartialWave(loc, J, waves[J], value, sgn)
    return out


def partial_waves(
    table: ResidueTable,
    D: Number = DEFAULT_DIMENSION,
    *,
    var: VarSpec = 0,
    sign: int = 1,
    levels: Optional[Iterable] = None,
    digits: int = 30,
) -> PartialWaveTable:
    """Partial-wave decomposition of the simple-pole residues in one variable.

    Parameters
    ----------
    table:
        From :func:`~lowenergy.spectrum.residues.residues` (possibly
        :meth:`~lowenergy.spectrum.residues.ResidueTable.divided`).
    D:
        Space-time dimension (default 10); α = (D-3)/2; D = 3 uses Chebyshev
        polynomials; D < 3 is refused.
    var:
        The pole variable (default s); the residues are polynomials in the other.
    sign:
        +1 decomposes ``Res``, -1 decomposes ``-Res`` (see the module docstring).
    levels:
        Locations to decompose (default: every positive location in the table;
        the massless pole ``s = 0`` has no partial waves of this kind).
    digits:
        Precision of the numerical values used for the signs of MZV coefficients.

    Returns
    -------
    PartialWaveTable
    """
    v = table.var_index(var)
    alpha = alpha_of_dimension(D)
    locs = [Fraction(p) for p in levels] if levels is not None else [p for p in table.locations(v) if p > 0]
    waves: Dict[Fraction, Dict[int, PartialWave]] = {}
    higher, topneg = [], []
    for p in locs:
        pole = table.pole(p, v)
        if max(pole, default=0) > 1:
            higher.append(p)
        rpoly = pole.get(1, {})
        if not rpoly:
            continue
        pw = partial_waves_of_polynomial(rpoly, p, D, sign=sign, nparams=len(table.parameters), digits=digits)
        if pw:
            waves[p] = pw
            top = pw[max(pw)]
            if top.negative:
                topneg.append(p)
    return PartialWaveTable(
        dimension=Fraction(D), alpha=alpha, sign=sign,
        variable=table.variables[v], other=table.variables[1 - v], parameters=table.parameters,
        waves=waves, higher_poles=higher, top_spin_negative=topneg,
    )


def unitarity_scan(
    table: ResidueTable,
    dimensions: Iterable[Number],
    *,
    var: VarSpec = 0,
    sign: int = 1,
    digits: int = 30,
) -> Dict[Fraction, Optional[Tuple[Fraction, int]]]:
    """For each D, the first (level, spin) with a negative coefficient, or None.

    Levels are all positive locations of ``table``; "first" means lowest
    level, then lowest spin.
    """
    out: Dict[Fraction, Optional[Tuple[Fraction, int]]] = {}
    for D in dimensions:
        pw = partial_waves(table, D, var=var, sign=sign, digits=digits)
        if pw.is_unitary() is None:
            raise InputError("signs are undetermined for integrands with parameters")
        first = pw.first_negative()
        out[Fraction(D)] = (first.location, first.spin) if first else None
    return out
