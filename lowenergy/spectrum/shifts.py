"""Mass shifts per level and spin from the higher poles of the ε-corrections.

A family ``A = A_0 + ε A_1 + ε² A_2 + ...`` whose exchanged states ``i`` at
level n have squared masses ``μ_i = n + ε δ1_i + ε² δ2_i + ...`` and pole
terms ``c_i(ε) P_J(t; μ_i)/(s - μ_i)``, with ``P_J(t; μ) = C_J(1 + 2t/μ)`` the
partial-wave polynomial of :mod:`lowenergy.spectrum.partial_waves`
(``cos θ = 1 + 2t/μ``), has, from ``1/(s - μ) = Σ_k (μ - n)^k/(s - n)^(k+1)``
and ``∂_μ P_J(t; μ) = -(t/μ) ∂_t P_J``, the pole parts at ``s = n``

* ε⁰: ``R0_1 = Σ c_i P_i``;
* ε¹: ``R1_2 = Σ c_i δ1_i P_i``, ``R1_1 = Σ c1_i P_i - (t/n) ∂_t R1_2``;
* ε²: ``R2_3 = Σ c_i δ1_i² P_i``, ``R2_2 = Σ (c_i δ2_i + c1_i δ1_i) P_i - (t/n) ∂_t R2_3``;

(``Rk_m`` the coefficient of ``ε^k/(s-n)^m``; METHOD.md §7, §9).  Decomposing
into partial waves at level n gives, per spin J with ``a0 = Σ_J c_i``:

* ``⟨δ1⟩ = PW_J(R1_2)/a0``, ``⟨δ1²⟩ = PW_J(R2_3)/a0``, and
  ``⟨δ1²⟩ - ⟨δ1⟩² ≥ 0`` (for positive ``c_i``): non-zero means several
  states with different shifts at the same (n, J);
* ``a1 = PW_J(R1_1 + (t/n) ∂_t R1_2) = Σ c1_i`` (the first correction of the residue);
* where the variance vanishes exactly, ``⟨δ2⟩ = (PW_J(R2_2 + (t/n) ∂_t R2_3) - a1 ⟨δ1⟩)/a0``.

Consistency residuals reported per level: poles of order above k+1 at order
ε^k (must vanish), and shifts at spins with no flat residue (``a0 = 0`` but
``PW_J(R1_2) ≠ 0``).  Exact values need a rational ``a0`` (MZV elements are
divided by rationals only); otherwise only numbers are given.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from typing import Dict, List, Optional, Sequence, Tuple

import mpmath

from ..errors import InputError
from ..poly import add as poly_add
from ..zeta.element import MZV
from .partial_waves import DEFAULT_DIMENSION, alpha_of_dimension, decompose, residue_in_cos_theta
from .residues import ResidueTable, write_rows

__all__ = ["LevelSpinShift", "ShiftTable", "spectrum_shifts", "plot_shifts"]

Univariate = Dict[int, MZV]   # {power of t: MZV}


def _univariate(table: ResidueTable, location: Fraction, order: int, var: int) -> Univariate:
    out: Univariate = {}
    for power, pp in table.coefficient(location, order, var).items():
        for key, c in pp.items():
            if any(key):
                raise InputError("spectrum shifts need integrands without free parameters", source=table.source)
            if c:
                out[power] = c
    return out


def _t_dt_over_n(a: Univariate, n: Fraction) -> Univariate:
    """``(t/n) ∂_t a``."""
    return {p: c * (Fraction(p) / n) for p, c in a.items() if p}


def _waves(poly: Univariate, n: Fraction, alpha: Fraction) -> Dict[int, MZV]:
    if not poly:
        return {}
    px = residue_in_cos_theta({p: {(): c} for p, c in poly.items()}, n)
    return {J: c for J, c in decompose([pp.get((), MZV()) for pp in px], alpha).items() if c}


def _value(c: Optional[MZV], digits: int) -> Optional[mpmath.mpf]:
    if c is None:
        return None
    if c.is_rational():
        q = c.rational_value()
        return mpmath.mpf(q.numerator) / q.denominator
    return c.numeric(digits)


@dataclass
class LevelSpinShift:
    """Data at one (level, spin).  Exact entries are MZVs (None where not defined
    or not exact); ``*_value`` entries are mpmath numbers (None where not defined)."""

    level: Fraction
    spin: int
    residue: MZV                      # a0 = Σ c_i (flat partial-wave coefficient)
    residue_value: mpmath.mpf
    delta1: Optional[MZV] = None
    delta1_value: Optional[mpmath.mpf] = None
    variance: Optional[MZV] = None
    variance_value: Optional[mpmath.mpf] = None
    delta2: Optional[MZV] = None
    delta2_value: Optional[mpmath.mpf] = None
    residue1: Optional[MZV] = None    # a1 = Σ c1_i
    note: str = ""


@dataclass
class ShiftTable:
    variable: str
    other: str
    dimension: Fraction
    orders: int
    entries: Dict[Tuple[Fraction, int], LevelSpinShift]
    residuals: List[Dict[str, object]] = field(default_factory=list)
    digits: int = 15

    @property
    def consistent(self) -> bool:
        return not self.residuals

    def levels(self) -> List[Fraction]:
        return sorted({n for n, _ in self.entries})

    def spins(self, level) -> List[int]:
        return sorted(J for n, J in self.entries if n == Fraction(level))

    def trajectory(self, offset: int = 0) -> List[LevelSpinShift]:
        """Entries with ``J = J_max(n) - offset`` (0: the leading trajectory)."""
        out = []
        for n in self.levels():
            spins = self.spins(n)
            J = max(spins) - offset
            if J in spins:
                out.append(self.entries[(n, J)])
        return out

    def to_rows(self) -> List[Dict[str, object]]:
        rows = []
        d = self.digits

        def ex(c):
            return "" if c is None else c.to_text()

        def num(v):
            if v is None:
                return ""
            with mpmath.workdps(d + 5):
                return mpmath.nstr(v, d)

        for (n, J) in sorted(self.entries):
            e = self.entries[(n, J)]
            rows.append({
                "level": str(n), "spin": J,
                "residue": ex(e.residue), "residue_numeric": num(e.residue_value),
                "mean_delta1": ex(e.delta1), "mean_delta1_numeric": num(e.delta1_value),
                "variance_delta1": ex(e.variance), "variance_delta1_numeric": num(e.variance_value),
                "mean_delta2": ex(e.delta2), "mean_delta2_numeric": num(e.delta2_value),
                "residue1": ex(e.residue1), "note": e.note,
            })
        return rows

    def write(self, path, fmt: Optional[str] = None) -> None:
        write_rows(self.to_rows(), path, fmt, columns=_COLUMNS,
                   caption=f"mass shifts, D = {self.dimension}")

    def to_dict(self) -> Dict[str, object]:
        return {"variable": self.variable, "dimension": str(self.dimension), "orders": self.orders,
                "rows": self.to_rows(), "residuals": self.residuals, "consistent": self.consistent}

    def to_text(self) -> str:
        cols = ["level", "spin", "residue_numeric", "mean_delta1", "mean_delta1_numeric",
                "variance_delta1_numeric", "mean_delta2_numeric", "note"]
        rows = self.to_rows()
        widths = {c: max([len(c)] + [len(str(r[c])) for r in rows]) for c in cols}
        lines = [f"poles in {self.variable} = n + eps*delta1 + eps^2*delta2 + ...; "
                 f"partial waves in {self.other}, D = {self.dimension}"]
        lines.append("  ".join(c.rjust(widths[c]) for c in cols))
        for r in rows:
            lines.append("  ".join(str(r[c]).rjust(widths[c]) for c in cols))
        if self.residuals:
            lines.append(f"{len(self.residuals)} consistency residual(s) non-zero:")
            for r in self.residuals:
                lines.append(f"  level {r['level']}: {r['what']}: {r['exact']}")
        else:
            lines.append("consistency residuals: all zero")
        return "\n".join(lines)


_COLUMNS = ["level", "spin", "residue", "residue_numeric", "mean_delta1", "mean_delta1_numeric",
            "variance_delta1", "variance_delta1_numeric", "mean_delta2", "mean_delta2_numeric",
            "residue1", "note"]


def spectrum_shifts(tables: Sequence[ResidueTable], D=DEFAULT_DIMENSION, *, var: int = 0,
                    levels: Optional[Sequence] = None, digits: int = 15) -> ShiftTable:
    """Per level and spin: residue, ⟨δ1⟩, ⟨δ1²⟩ - ⟨δ1⟩², ⟨δ2⟩ and the consistency residuals.

    Parameters
    ----------
    tables:
        Residue tables (:func:`~lowenergy.spectrum.residues.residues`) of
        the orders ε⁰, ε¹, ε², ... (at least two).
    D:
        Dimension of the partial waves (default 10).
    var:
        Pole variable (0: s).
    levels:
        Levels to use (default: the positive locations of order 0).
    """
    if len(tables) < 2:
        raise InputError("spectrum shifts need at least two orders (ε⁰ and ε¹)")
    first = tables[0]
    for tb in tables[1:]:
        if tuple(tb.variables) != tuple(first.variables):
            raise InputError(f"the variables differ between the files: {list(first.variables)} in "
                             f"{first.source} but {list(tb.variables)} in {tb.source}", source=tb.source,
                             hint="use the same variable names in every file of the family")
        if tb.parameters or first.parameters:
            raise InputError("spectrum shifts need integrands without free parameters", source=tb.source)
    alpha = alpha_of_dimension(D)
    locs = [Fraction(p) for p in levels] if levels is not None else [p for p in first.locations(var) if p > 0]
    entries: Dict[Tuple[Fraction, int], LevelSpinShift] = {}
    residuals: List[Dict[str, object]] = []
    work = digits + 10
    for n in locs:
        if first.max_order(n, var) > 1:
            residuals.append({"level": str(n), "what": f"order 0 has a pole of order {first.max_order(n, var)}",
                              "exact": "flat poles must be simple"})
        for k, tb in enumerate(tables):
            top = tb.max_order(n, var)
            if top > k + 1:
                for m in range(k + 2, top + 1):
                    poly = _univariate(tb, n, m, var)
                    if poly:
                        residuals.append({"level": str(n), "what": f"order {k}: pole of order {m} (at most {k + 1})",
                                          "exact": " + ".join(f"({c})*t^{p}" for p, c in sorted(poly.items()))})
        a0 = _waves(_univariate(first, n, 1, var), n, alpha)
        R12 = _univariate(tables[1], n, 2, var)
        R11 = _univariate(tables[1], n, 1, var)
        b1 = _waves(R12, n, alpha)
        a1 = _waves(poly_add(R11, _t_dt_over_n(R12, n)), n, alpha)
        b2 = d2 = {}
        if len(tables) > 2:
            R23 = _univariate(tables[2], n, 3, var)
            R22 = _univariate(tables[2], n, 2, var)
            b2 = _waves(R23, n, alpha)
            d2 = _waves(poly_add(R22, _t_dt_over_n(R23, n)), n, alpha)
        for J in sorted(set(b1) | set(b2)):
            if J not in a0:
                what = "shift at a spin with no flat residue"
                residuals.append({"level": str(n), "what": f"spin {J}: {what}",
                                  "exact": str(b1.get(J, MZV()) if J in b1 else b2[J])})
        for J, c0 in a0.items():
            e = LevelSpinShift(n, J, c0, _value(c0, work))
            exact = c0.is_rational()
            inv = (Fraction(1) / c0.rational_value()) if exact else None
            B1 = b1.get(J, MZV())
            e.delta1 = B1 * inv if exact else None
            e.delta1_value = _value(B1, work) / e.residue_value
            A1 = a1.get(J, MZV())
            e.residue1 = A1
            if len(tables) > 2:
                B2 = b2.get(J, MZV())
                e.variance = (B2 * inv - e.delta1 * e.delta1) if exact else None
                e.variance_value = (_value(e.variance, work) if exact else
                                    _value(B2, work) / e.residue_value - e.delta1_value ** 2)
                zero_var = (not e.variance) if exact else False
                if zero_var:
                    D2 = d2.get(J, MZV())
                    e.delta2 = (D2 - A1 * e.delta1) * inv
                    e.delta2_value = _value(e.delta2, work)
                elif exact:
                    e.note = "degenerate: several shifts; <delta2> undefined"
                else:
                    e.note = "flat residue not rational: <delta2> not separated"
            entries[(n, J)] = e
    return ShiftTable(first.variables[var], first.variables[1 - var], Fraction(D), len(tables) - 1, entries,
                      residuals, digits)


def plot_shifts(table: ShiftTable, path, *, offset: int = 0, title: Optional[str] = None) -> Dict[str, object]:
    """⟨δ1⟩ against the level n along the trajectory ``J = J_max(n) - offset``; PNG.

    Returns the plotted arrays (``level``, ``spin``, ``delta1``) and ``path``.
    """
    import numpy as np

    from .plots import _figure

    traj = table.trajectory(offset)
    if not traj:
        raise InputError(f"no levels on the trajectory J = J_max(n) - {offset}")
    level = np.array([float(e.level) for e in traj])
    spin = np.array([e.spin for e in traj], dtype=int)
    d1 = np.array([float(e.delta1_value) for e in traj])
    fig = _figure()
    ax = fig.subplots()
    ax.plot(level, d1, "o-")
    for x, y, J in zip(level, d1, spin):
        ax.annotate(f"J={J}", (x, y), fontsize=7, textcoords="offset points", xytext=(4, 4))
    ax.set_xlabel(f"level n ({table.variable} = n)")
    ax.set_ylabel("<delta1>")
    which = "leading trajectory" if offset == 0 else f"J = J_max(n) - {offset}"
    ax.set_title(title or f"first-order mass shift, {which}", fontsize=10)
    fig.tight_layout()
    fig.savefig(path, format="png", dpi=100)
    return {"level": level, "spin": spin, "delta1": d1, "path": path}
