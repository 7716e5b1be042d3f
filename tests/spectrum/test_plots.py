"""Plots write real PNG files and return the numbers they drew.

Independent numbers: the amplitude B(-s,-t) from mpmath.beta (A&S 6.2.1-6.2.2),
the log x integral from mpmath.quad (direct integration, convergent region),
and the partial-wave values from the tables.
"""

from __future__ import annotations

import mpmath
import numpy as np
import pytest

pytest.importorskip("matplotlib")

from lowenergy.errors import InputError
from lowenergy.expansion.engine import expand
from lowenergy.spectrum.partial_waves import partial_waves
from lowenergy.spectrum.plots import beta_type_amplitude, evaluate_series, plot_convergence, plot_spectrum
from lowenergy.spectrum.residues import residues
from lowenergy.zeta.element import MZV

from .common import beta, beta_one_minus_t, beta_type

PNG_MAGIC = b"\x89PNG\r\n\x1a\n"


def _is_png(path):
    data = path.read_bytes()
    return len(data) > 1000 and data[:8] == PNG_MAGIC


def test_convergence_plot(tmp_path):
    i = beta()
    ex = expand(i, 6)
    out = plot_convergence(ex, tmp_path / "conv.png", integrand=i, start=(-0.6, -0.3), end=(0.6, -0.45),
                           orders=[0, 2, 4, 6], points=13)
    assert _is_png(out["path"])
    assert out["orders"] == [0, 2, 4, 6]
    s_arr, t_arr = out["s"], out["t"]
    assert np.allclose(s_arr, np.linspace(-0.6, 0.6, 13)) and np.allclose(t_arr, np.linspace(-0.3, -0.45, 13))
    for n in range(13):
        sv, tv = s_arr[n], t_arr[n]
        if abs(sv) < 1e-12:
            assert np.isnan(out["amplitude"][n])     # the s = 0 pole: skipped, not plotted
            continue
        with mpmath.workdps(30):
            ref = float(mpmath.beta(-mpmath.mpf(sv), -mpmath.mpf(tv)))
        assert out["amplitude"][n] == pytest.approx(ref, rel=1e-12)
        for o in out["orders"]:
            assert out["series"][o][n] == pytest.approx(float(evaluate_series(ex, sv, tv, o)), rel=1e-12)
        # the truncations converge: order 6 beats order 2 here (|s|, |t| < 1)
        assert out["log10_error"][6][n] < out["log10_error"][2][n]
        assert out["log10_error"][6][n] == pytest.approx(
            np.log10(abs(out["series"][6][n] - out["amplitude"][n])))


def test_convergence_plot_with_callable(tmp_path):
    ex = expand(beta(), 4)
    out = plot_convergence(ex, tmp_path / "c2.png", amplitude=lambda s, t: mpmath.beta(-s, -t),
                           start=(0.2, -0.2), end=(0.4, -0.5), points=5)
    assert _is_png(out["path"])
    assert len(out["amplitude"]) == 5 and not np.isnan(out["amplitude"]).any()
    with pytest.raises(InputError):
        plot_convergence(ex, tmp_path / "c3.png")


def test_beta_type_amplitude_log_x_against_quad():
    # ∫_0^1 x^(-s-1)(1-x)^(-t-1) log x dx at s = -0.6, t = -0.7 (convergent) by direct quadrature
    f = beta_type_amplitude(beta_type(word=(0,)))
    with mpmath.workdps(25):
        ref = mpmath.quad(lambda x: x ** mpmath.mpf("-0.4") * (1 - x) ** mpmath.mpf("-0.3") * mpmath.log(x), [0, 0.5, 1])
        assert abs(f(-0.6, -0.7) - ref) < mpmath.mpf(10) ** -12
    with pytest.raises(InputError):
        beta_type_amplitude(beta_type(word=(0, 1)))


def test_spectrum_plot(tmp_path):
    table = residues(beta_one_minus_t(), 8).divided({1: -1}, strict=False)
    pw = partial_waves(table, 11)
    out = plot_spectrum(pw, tmp_path / "spec.png")
    assert _is_png(out["path"])
    entries = pw.entries()
    assert len(out["level"]) == len(entries)
    for n, J, c, neg, w in zip(out["level"], out["spin"], out["coefficient"], out["negative"], entries):
        assert (n, J) == (float(w.location), w.spin)
        exact = w.coefficient[()].rational_value()
        assert c == pytest.approx(float(exact), rel=1e-14)
        assert bool(neg) == (exact < 0)
    # the first violation in D = 11: level 3, J = 0, value (10-11)/(24·10) = -1/240
    idx = [k for k in range(len(entries)) if out["negative"][k]]
    first = min(idx, key=lambda k: (out["level"][k], out["spin"][k]))
    assert (out["level"][first], out["spin"][first]) == (3.0, 0)
    assert out["coefficient"][first] == pytest.approx(-1 / 240)


def test_spectrum_plot_needs_numbers(tmp_path):
    i = beta_type(coefficient={(0, 0, 1): MZV.one()}, parameters=("a",))
    pw = partial_waves(residues(i, 2), 10, sign=-1)
    with pytest.raises(InputError):
        plot_spectrum(pw, tmp_path / "x.png")
