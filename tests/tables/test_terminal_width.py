"""The terminal table at 80 columns without a terminal (piped, COLUMNS=80).

Nothing is checked against mathematics here; the point is that every exact
value printed is whole (no term cut, none dropped) and every line fits.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import mpmath
import pytest
from typer.testing import CliRunner

from lowenergy.cli import app
from lowenergy.expansion.engine import expand
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.tables.export import shorten_number, split_terms, to_terminal, wrap_terms

ROOT = Path(__file__).resolve().parents[2]
EX = ROOT / "examples"
runner = CliRunner()


def rendered(args, columns=80):
    res = runner.invoke(app, [str(a) for a in args], env={"COLUMNS": str(columns)})
    assert res.exit_code == 0, res.output
    return res.stdout


def exact_values(args):
    """The exact cells of the table rows (one per coefficient and parameter monomial)."""
    from lowenergy.integrand.reader import read_integrand
    from lowenergy.tables.export import table_rows

    path, _, order = args[-3:]
    _, rows = table_rows(expand(read_integrand(path), int(order)))
    return [r.exact for r in rows]


def assert_whole(text, exact, columns=80):
    lines = text.splitlines()
    assert max(len(line) for line in lines) <= columns
    # every term of every exact value appears whole on some line
    for value in exact:
        for term in split_terms(value):
            assert any(term in line for line in lines), term


CASES = [
    [EX / "open_superstring.toml", "--order", 4],
    [EX / "curved_ansatz.toml", "--order", 3],
    [EX / "open_superstring.toml", "--order", 9],
]


@pytest.mark.parametrize("case", CASES, ids=["open-4", "curved-3", "open-9"])
def test_exact_column_whole_at_80_columns(case):
    text = rendered(["expand", *case])
    exact = exact_values(case)
    assert_whole(text, exact)


def test_curved_example_keeps_its_exact_values():
    # the case that lost its exact column at 80 columns
    text = rendered(["expand", EX / "curved_ansatz.toml", "--order", 3])
    assert "-7/2*zeta(5) + 2*zeta(2)*zeta(3)" in text
    assert "-11/10*zeta(2)^2" in text


def test_numeric_column_is_shortened_before_the_exact_one():
    text = rendered(["expand", EX / "open_superstring.toml", "--order", 3])
    assert "┃ exact" in text  # still a table
    assert "1/10*zeta(2)^2 │" in text  # whole, on one line
    text = rendered(["expand", EX / "open_superstring.toml", "--order", 4])
    assert "┃ exact" in text
    lines = text.splitlines()
    k = next(i for i, line in enumerate(lines) if line.startswith("│ c[2,2]"))
    # too long for one line next to a 10-character number: wrapped between its terms
    assert "│ 2*zeta(5) " in lines[k] and "│ - zeta(2)*zeta(3) " in lines[k + 1]
    # ζ(5) rounded, not cut: compare with mpmath
    line = next(line for line in lines if line.startswith("│ c[3,1]"))
    shown = line.rstrip("│ ").split()[-1]
    with mpmath.workdps(40):
        digits = len(shown.replace(".", "").lstrip("0"))
        assert abs(mpmath.mpf(shown) - mpmath.zeta(5)) <= mpmath.mpf(10) ** (1 - digits)


def test_wide_terminal_shows_all_digits():
    text = rendered(["expand", EX / "open_superstring.toml", "--order", 4, "--digits", 25], columns=200)
    # ζ(3) to 25 digits (mpmath)
    with mpmath.workdps(30):
        assert mpmath.nstr(mpmath.zeta(3), 25) in text


def test_piped_subprocess_at_80_columns():
    env = dict(os.environ, COLUMNS="80")
    out = subprocess.run(
        [sys.executable, "-m", "lowenergy.cli", "expand", str(EX / "curved_ansatz.toml"), "--order", "3"],
        capture_output=True, text=True, env=env, check=True, timeout=300,
    ).stdout
    exact = exact_values([EX / "curved_ansatz.toml", "--order", 3])
    assert_whole(out, exact)


def test_block_layout_for_very_long_values():
    integrand = integrand_from_text('integrand = "x^(-s-1)*(1-x)^(-t-1)*G(0,1,0,0,1; x)"\n', source="<t>")
    e = expand(integrand, 5)
    from rich.console import Console

    console = Console(record=True, width=50)
    console.print(to_terminal(e, width=50), crop=False)
    text = console.export_text()
    exact = [x.to_text() for slot in e.coefficients.values() for x in slot.values()]
    assert_whole(text, exact, columns=50)
    assert "≈ " in text and "= " in text


def test_helpers():
    assert wrap_terms("a - b + c", 5) == ["a - b", "+ c"]
    assert wrap_terms("zeta(3,5) - 24/175*zeta(2)^4", 3) == ["zeta(3,5)", "- 24/175*zeta(2)^4"]
    assert split_terms("-1/216*pi^6 - zeta(3,5)") == ["-1/216*pi^6", "- zeta(3,5)"]
    assert shorten_number("-1.0", 10) == "-1.0"
    with mpmath.workdps(30):
        short = shorten_number(mpmath.nstr(mpmath.pi, 30), 10)
        assert len(short) <= 10 and abs(mpmath.mpf(short) - mpmath.pi) < 1e-7
