"""The short Python API: lowenergy.expand, Expansion display and exports."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import mpmath
import pytest

import lowenergy
from lowenergy.errors import InputError, LowEnergyError
from lowenergy.zeta.element import MZV, zeta
from tests.reference import reference_mzv

ROOT = Path(__file__).resolve().parent.parent
OPEN = ROOT / "examples" / "open_superstring.toml"
BETA = "x^(-s-1)*(1-x)^(-t-1)"


def test_import_is_light():
    code = (
        "import sys, lowenergy\n"
        "heavy = [m for m in ('sympy', 'mpmath', 'pandas', 'lowenergy.zeta', 'typer') if m in sys.modules]\n"
        "print(heavy)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "[]"
    assert set(lowenergy.__all__) == {"__version__", "expand", "Expansion"}


@pytest.mark.parametrize("form", ["path", "pathlike", "toml", "expression"])
def test_expand_accepts_every_form(form, monkeypatch):
    monkeypatch.chdir(ROOT)
    arg = {
        "path": "examples/open_superstring.toml",
        "pathlike": OPEN,
        "toml": OPEN.read_text(encoding="utf-8"),
        "expression": "x^(-s-1)*(1-x)^(-t)",
    }[form]
    e = lowenergy.expand(arg, order=3)
    assert isinstance(e, lowenergy.Expansion)
    # Γ(-s)Γ(1-t)/Γ(1-s-t) = -1/s + ζ(2) t + ζ(3)(s t + t^2) + ... (A&S 6.1.33, by hand)
    assert e.coefficient(-1, 0) == -1
    assert e.coefficient(0, 1) == zeta(2)
    assert e.coefficient(1, 1) == zeta(3)
    assert e.coefficient(3, 0) == MZV()          # absent: zero
    assert isinstance(e.coefficient(0, 1), MZV)


def test_coefficient_with_parameters_is_a_dict():
    e = lowenergy.expand(BETA + "*(1 + a*s + b*t)", order=2, parameters=["a", "b"])
    # B(-s,-t) = -1/s - 1/t + ζ(2)(s + t) + ... (A&S 6.1.33, by hand), so with (1 + a s + b t):
    # the s-coefficient is ζ(2) (a s times the constant 0 of B, b t times no s t^-1 term)
    assert e.coefficient(1, 0) == {(0, 0): zeta(2)}
    # the constant: a s (-1/s) + b t (-1/t) = -a - b; keys sorted
    c = e.coefficient(0, 0)
    assert c == {(0, 1): MZV.rational(-1), (1, 0): MZV.rational(-1)}
    assert list(c) == sorted(c)


def test_repr_and_latex():
    e = lowenergy.expand(OPEN, order=4)
    text = repr(e)
    head, series = text.split("\n")
    assert head == "<Expansion 'Flat-space open superstring form factor' in s, t to order 4: 11 non-zero coefficients>"
    assert series.startswith("-s^-1 + zeta(2)*t + zeta(3)*s*t + zeta(3)*t^2")
    assert "(2*zeta(5) - zeta(2)*zeta(3))*s^2*t^2" in series
    latex = e._repr_latex_()
    assert latex.startswith("$-s^{-1} + \\zeta(2)\\, t") and latex.endswith("$")
    big = lowenergy.expand(OPEN, order=10)
    assert repr(big).endswith(" + ...")


def test_exports_match_the_tables_layer(tmp_path):
    from lowenergy.tables import read_csv, to_dataframe, to_latex

    e = lowenergy.expand(OPEN, order=4)
    assert e.to_dataframe().equals(to_dataframe(e))
    assert e.to_latex(pi=True) == to_latex(e, pi=True)
    path = tmp_path / "t.csv"
    e.to_csv(path)
    assert read_csv(path).coefficients == e.coefficients
    # the numeric column against an independent evaluation: c[2,2] = 2ζ(5) - ζ(2)ζ(3)
    df = e.to_dataframe(digits=25)
    row = df[df["name"] == "c[2,2]"].iloc[0]
    with mpmath.workdps(40):
        ref = 2 * reference_mzv((5,), 40) - reference_mzv((2,), 40) * reference_mzv((3,), 40)
        assert abs(mpmath.mpf(row["numeric"]) - ref) < mpmath.mpf(10) ** -24


def test_bad_calls_are_user_errors(tmp_path):
    with pytest.raises(InputError, match="order"):
        lowenergy.expand(BETA, order=-1)
    with pytest.raises(InputError, match="path or a string"):
        lowenergy.expand(42, order=2)
    with pytest.raises(InputError, match="parameters="):
        lowenergy.expand(OPEN, order=2, parameters=["a"])
    with pytest.raises(LowEnergyError):
        lowenergy.expand(str(tmp_path / "missing.toml"), order=2)
    with pytest.raises(LowEnergyError):
        lowenergy.expand("sin(x)", order=2)
