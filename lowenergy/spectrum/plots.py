"""Plots: convergence of the low-energy series and the spectrum of spins.

matplotlib is used through its object interface with the Agg canvas only
(``matplotlib.figure.Figure``; no pyplot, no global backend switch, no
windows): every function writes a PNG file and returns the arrays it
plotted, so that the numbers behind a figure can be checked.

* :func:`plot_convergence` draws the amplitude along a segment of the
  (s, t) plane next to the truncations of its low-energy series at several
  orders, and the size of their errors.  The amplitude is a callable, or for
  Beta-type integrands (words ``()``, ``(0,)``, ``(1,)`` only) it is built
  from Gamma and digamma functions by :func:`beta_type_amplitude`:
  ``∫ x^(a-1)(1-x)^(b-1) dx = B(a, b)`` (A&S 6.2.1),
  ``∫ x^(a-1)(1-x)^(b-1) log x dx = B(a,b)(ψ(a) - ψ(a+b))`` and the same with
  ``log(1-x)`` and ``ψ(b)`` (derivatives of A&S 6.2.2 with ψ of A&S 6.3.1).
* :func:`plot_spectrum` draws spin J against level n, marker colour and
  size from ``log10 |a_J|``; negative coefficients are red crosses.
"""

from __future__ import annotations

from fractions import Fraction  # noqa: F401  (used by the doctests)
from pathlib import Path
from typing import Callable, Dict, Optional, Sequence, Tuple

import mpmath

from ..errors import InputError
from ..expansion.result import Expansion
from ..integrand.model import Integrand, LinearExponent
from ..zeta.element import MZV
from .partial_waves import PartialWaveTable

__all__ = ["beta_type_amplitude", "evaluate_series", "plot_convergence", "plot_spectrum", "require_matplotlib"]


def require_matplotlib() -> None:
    """:class:`~lowenergy.errors.InputError` (a user error) unless matplotlib
    can be imported; called by the command line before any computation."""
    try:
        import matplotlib  # noqa: F401
        from matplotlib.backends.backend_agg import FigureCanvasAgg  # noqa: F401
    except ImportError:
        raise InputError(
            "plots need matplotlib, which is not installed",
            hint="pip install 'lowenergy[plot]' (or matplotlib)",
        ) from None


def _save_png(fig, path) -> Path:
    """Render to memory, then write atomically: a failure leaves no partial file."""
    import io

    from ..tables.export import _atomic_write_bytes

    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=100)
    return _atomic_write_bytes(path, buf.getvalue())


def _mzv_value(x: MZV, digits: int) -> mpmath.mpf:
    if x.is_rational():
        q = x.rational_value()
        return mpmath.mpf(q.numerator) / q.denominator
    return x.numeric(digits)


def _param_value(pkey: Tuple[int, ...], values: Sequence) -> mpmath.mpf:
    out = mpmath.mpf(1)
    for e, v in zip(pkey, values):
        out *= mpmath.mpf(v) ** e
    return out


def beta_type_amplitude(
    integrand: Integrand, params: Sequence = (), digits: int = 20
) -> Callable[[object, object], mpmath.mpf]:
    """``(s, t) -> ∫_0^1 integrand dx`` in closed form, for words ``()``, ``(0,)``, ``(1,)``.

    Each term ``P · x^(a-1)(1-x)^(b-1) F`` gives ``P · B(a, b)`` times 1,
    ``ψ(a) - ψ(a+b)`` (F = log x) or ``ψ(b) - ψ(a+b)`` (F = log(1-x)), analytically
    continued in a and b.  Other words raise :class:`~lowenergy.errors.InputError`
    (pass your own callable to :func:`plot_convergence` then).

    >>> from lowenergy.integrand.model import Integrand, Term, LinearExponent
    >>> beta = Integrand([Term({(0, 0): MZV.one()}, LinearExponent(-1, Fraction(-1), 0),
    ...                        LinearExponent(-1, Fraction(-1), 1))])
    >>> f = beta_type_amplitude(beta)
    >>> mpmath.almosteq(f(-0.5, -0.5), mpmath.beta(0.5, 0.5))   # = π
    True
    """
    if len(params) != len(integrand.parameters):
        raise InputError(
            f"give values for the {len(integrand.parameters)} parameters {list(integrand.parameters)}",
        )
    for term in integrand.terms:
        if tuple(term.word) not in ((), (0,), (1,)):
            raise InputError(
                f"no closed form for the word {tuple(term.word)}",
                hint="pass amplitude=callable to plot_convergence",
            )

    def exponent(e: LinearExponent, s, t):
        base = mpmath.mpf(e.shift + 1)
        if e.var is None:
            return base
        return base + mpmath.mpf(e.coeff.numerator) / e.coeff.denominator * (s if e.var == 0 else t)

    def f(s, t):
        with mpmath.workdps(digits + 10):
            s = mpmath.mpf(s)
            t = mpmath.mpf(t)
            total = mpmath.mpf(0)
            for term in integrand.terms:
                pref = mpmath.mpf(0)
                for key, c in term.coefficient.items():
                    pref += _mzv_value(c, digits + 10) * s ** key[0] * t ** key[1] * _param_value(key[2:], params)
                if not pref:
                    continue
                a = exponent(term.x_exp, s, t)
                b = exponent(term.y_exp, s, t)
                value = mpmath.beta(a, b)
                word = tuple(term.word)
                if word == (0,):
                    value *= mpmath.digamma(a) - mpmath.digamma(a + b)
                elif word == (1,):
                    value *= mpmath.digamma(b) - mpmath.digamma(a + b)
                total += pref * value
            return +total

    return f


def evaluate_series(
    expansion: Expansion, s, t, order: Optional[int] = None, params: Sequence = (), digits: int = 20
) -> mpmath.mpf:
    """``Σ_{i+j ≤ order} c_ij s^i t^j`` (poles included) at numerical s, t and parameter values."""
    order = expansion.order if order is None else order
    if order > expansion.order:
        raise InputError(f"the expansion only reaches order {expansion.order}, asked for {order}")
    if len(params) != len(expansion.parameters):
        raise InputError(f"give values for the parameters {list(expansion.parameters)}")
    with mpmath.workdps(digits + 10):
        s = mpmath.mpf(s)
        t = mpmath.mpf(t)
        total = mpmath.mpf(0)
        for (i, j), pp in expansion.coefficients.items():
            if i + j > order:
                continue
            for pkey, c in pp.items():
                total += _mzv_value(c, digits + 10) * _param_value(pkey, params) * s ** i * t ** j
        return +total


def _finite(f) -> float:
    """``float(f())``, or NaN on a pole (an exception or an infinite value)."""
    try:
        value = complex(f())
    except (ZeroDivisionError, ValueError, OverflowError):
        return float("nan")
    if value.imag != 0 or value.real in (float("inf"), float("-inf")) or value.real != value.real:
        return float("nan")
    return value.real


def _figure(size=(7.0, 5.0)):
    require_matplotlib()
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=size)
    FigureCanvasAgg(fig)
    return fig


def plot_convergence(
    expansion: Expansion,
    path,
    *,
    start: Tuple[float, float] = (-0.6, -0.3),
    end: Tuple[float, float] = (0.6, -0.3),
    amplitude: Optional[Callable] = None,
    integrand: Optional[Integrand] = None,
    orders: Optional[Sequence[int]] = None,
    points: int = 41,
    params: Sequence = (),
    digits: int = 20,
) -> Dict[str, object]:
    """Truncated low-energy series against the amplitude along a segment in (s, t).

    Parameters
    ----------
    expansion:
        From :func:`~lowenergy.expansion.engine.expand`.
    path:
        PNG file to write.
    start, end:
        End points ``(s, t)`` of the segment; points on the poles (s or t = 0
        for the usual integrands), and complex or infinite values, give NaN
        entries and are skipped in the plot.
    amplitude, integrand:
        A callable ``(s, t) -> number``, or an integrand for
        :func:`beta_type_amplitude`.
    orders:
        Truncation orders to draw (default: up to six, spread up to ``expansion.order``).
    points:
        Number of points on the segment.

    Returns
    -------
    dict
        numpy arrays ``"lambda"`` (0..1 along the segment), ``"s"``, ``"t"``,
        ``"amplitude"``, and dicts ``"series"``, ``"log10_error"`` (of
        ``|series - amplitude|``) keyed by order; ``"path"``.
    """
    import numpy as np

    if amplitude is None:
        if integrand is None:
            raise InputError("give amplitude=callable or integrand=... for the exact curve")
        amplitude = beta_type_amplitude(integrand, params, digits)
    if orders is None:
        top = expansion.order
        step = max(1, -(-(top + 1) // 6))   # at most six curves
        orders = sorted(set(list(range(top % step, top + 1, step)) + [top]))
    orders = [int(o) for o in orders]
    if points < 2:
        raise InputError("points must be at least 2")
    lam = np.linspace(0.0, 1.0, points)
    s_arr = start[0] + lam * (end[0] - start[0])
    t_arr = start[1] + lam * (end[1] - start[1])
    amp = np.full(points, np.nan)
    series = {o: np.full(points, np.nan) for o in orders}
    for n in range(points):
        s, t = float(s_arr[n]), float(t_arr[n])
        amp[n] = _finite(lambda: amplitude(s, t))
        for o in orders:
            series[o][n] = _finite(lambda: evaluate_series(expansion, s, t, o, params, digits))
    err = {}
    with np.errstate(divide="ignore", invalid="ignore"):
        for o in orders:
            err[o] = np.log10(np.abs(series[o] - amp))

    fig = _figure((7.0, 7.0))
    ax1, ax2 = fig.subplots(2, 1, sharex=True)
    ax1.plot(lam, amp, "k-", lw=2.5, label="amplitude")
    for o in orders:
        ax1.plot(lam, series[o], "--", lw=1.2, label=f"series, order {o}")
        ax2.plot(lam, err[o], "-", lw=1.2, label=f"order {o}")
    ax1.set_ylabel("value")
    ax1.legend(fontsize=7)
    ax1.set_title(f"{expansion.title or 'low-energy series'}: "
                  f"(s,t) from {tuple(start)} to {tuple(end)}", fontsize=9)
    ax2.set_xlabel("position along the segment")
    ax2.set_ylabel("log10 |series - amplitude|")
    ax2.legend(fontsize=7)
    fig.tight_layout()
    path = _save_png(fig, path)
    return {"lambda": lam, "s": s_arr, "t": t_arr, "amplitude": amp, "series": series,
            "log10_error": err, "orders": orders, "path": path}


def plot_spectrum(table: PartialWaveTable, path, *, title: Optional[str] = None) -> Dict[str, object]:
    """Spin J against level n with the partial-wave coefficients.

    Non-negative coefficients are circles coloured (and sized) by
    ``log10 |a_J|``; negative ones are red crosses.

    Returns
    -------
    dict
        numpy arrays ``"level"``, ``"spin"``, ``"coefficient"`` (float),
        ``"negative"`` (bool), in the order of ``table.entries()``; ``"path"``.
    """
    import numpy as np

    entries = table.entries()
    if any(w.value is None for w in entries):
        raise InputError("the spectrum plot needs numerical coefficients (an integrand without parameters)")
    level = np.array([float(w.location) for w in entries])
    spin = np.array([w.spin for w in entries], dtype=int)
    coef = np.array([float(w.value) for w in entries])
    neg = np.array([w.negative for w in entries], dtype=bool)

    fig = _figure()
    ax = fig.subplots()
    pos = ~neg
    if pos.any():
        with np.errstate(divide="ignore"):
            logs = np.log10(np.abs(coef[pos]))
        finite = np.isfinite(logs)
        lo = logs[finite].min() if finite.any() else 0.0
        hi = logs[finite].max() if finite.any() else 1.0
        sizes = 15 + 120 * (logs - lo) / (hi - lo if hi > lo else 1.0)
        sc = ax.scatter(level[pos], spin[pos], c=logs, s=sizes, cmap="viridis", label="a_J > 0")
        fig.colorbar(sc, ax=ax, label="log10 a_J")
    if neg.any():
        ax.scatter(level[neg], spin[neg], marker="x", c="red", s=90, linewidths=2, label="a_J < 0")
    ax.set_xlabel(f"level ({table.variable} = n)")
    ax.set_ylabel("spin J")
    ax.set_title(title or f"partial waves, D = {table.dimension} (sign {table.sign:+d})", fontsize=10)
    if len(entries):
        ax.legend(fontsize=8, loc="upper left")
    fig.tight_layout()
    path = _save_png(fig, path)
    return {"level": level, "spin": spin, "coefficient": coef, "negative": neg, "path": path}
