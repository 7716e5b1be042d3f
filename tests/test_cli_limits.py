"""The command line over the nastiest inputs found by fuzzing (issue 15):
exit code 2, one line on standard error, no traceback, no output file."""

from __future__ import annotations

from pathlib import Path

import pytest
from typer.testing import CliRunner

from lowenergy.cli import app

runner = CliRunner()
ROOT = Path(__file__).resolve().parents[1]

NASTY_EXPRESSIONS = [
    "G(" + ",".join(["1"] * 12 + ["0"] * 12) + ";1)",  # weight 24: ran for minutes
    "G(" * 300 + "1" + ";1)" * 300,  # deep nesting
    "zeta(" + ",".join(["1"] * 24) + ",2)",  # long divergent word
    "((((64^64)^64)^64)^64)^64",  # huge power of a number
    "(zeta(2)+zeta(3)+zeta(5)+zeta(7))^64",  # huge power of a sum
    "1" * 5000,  # integer beyond Python's integer-string limit
    "+".join(["zeta(3)"] * 20_000),  # longer than the text budget
]


def _one_error_line(result) -> None:
    assert result.exit_code == 2, result.output
    assert "Traceback" not in result.output
    lines = [line for line in result.output.splitlines() if line.strip()]
    assert len(lines) == 1 and lines[0].startswith("error: "), result.output


@pytest.mark.parametrize("expression", NASTY_EXPRESSIONS, ids=range(len(NASTY_EXPRESSIONS)))
@pytest.mark.parametrize("regularize", [None, "stuffle"])
def test_reduce(expression, regularize):
    args = ["reduce", expression] + (["--regularize", regularize] if regularize else [])
    _one_error_line(runner.invoke(app, args))


def test_reduce_names_the_reachable_weight():
    result = runner.invoke(app, ["reduce", NASTY_EXPRESSIONS[0]])
    _one_error_line(result)
    assert "0 to 20" in result.output


NASTY_INTEGRANDS = [
    'integrand = "x"\ntitle = ' + "1" * 5000 + "\n",
    'parameters = ["a1"]\nintegrand = "(zeta(2)+zeta(3)+s+t+a1)^40"\n',
    'integrand = "' + "+".join(["s*t"] * 6000) + '"\n',
    'integrand = "x^(-s-1)*' + "G(" * 300 + "1" + ";1)" * 300 + '"\n',
    'integrand = "x^x^x^x^x^x^x^x"\n',
    'integrand = "x^(-s-1)*(1-x)^(-t-1)*G(' + ",".join(["1"] * 12 + ["0"] * 12) + ';1)"\n',
]


@pytest.mark.parametrize("text", NASTY_INTEGRANDS, ids=range(len(NASTY_INTEGRANDS)))
def test_expand_writes_nothing(tmp_path, text):
    source = tmp_path / "bad.toml"
    source.write_text(text, encoding="utf-8")
    out = tmp_path / "out.csv"
    result = runner.invoke(app, ["expand", str(source), "--order", "2", "--csv", str(out)])
    _one_error_line(result)
    assert not out.exists()


def test_check_with_a_damaged_table_and_a_hostile_constraint_file(tmp_path):
    table = (ROOT / "examples" / "curved_candidate.csv").read_text(encoding="utf-8")
    bad_table = tmp_path / "bad.csv"
    bad_table.write_text(table.replace("0.82246703342411321824", "sNaN", 1), encoding="utf-8")
    good_constraints = str(ROOT / "examples" / "curved_constraints.toml")
    _one_error_line(runner.invoke(app, ["check", str(bad_table), good_constraints]))

    nested = tmp_path / "nested.csv"
    start = table.index("# title: ")
    nested.write_text(table[:start] + "# title: " + "[" * 100_000 + table[table.index("\n", start):], encoding="utf-8")
    _one_error_line(runner.invoke(app, ["check", str(nested), good_constraints]))

    bad_constraints = tmp_path / "bad.toml"
    bad_constraints.write_text(
        'source = "x"\n[[constraint]]\nname = "a"\nrelation = "c[1,0]"\nkind = "="\nrhs = ' + "9" * 5000 + "\n",
        encoding="utf-8",
    )
    _one_error_line(runner.invoke(app, ["check", str(ROOT / "examples" / "curved_candidate.csv"), str(bad_constraints)]))


def test_fix_writes_nothing_for_a_hostile_integrand(tmp_path):
    source = tmp_path / "bad.toml"
    source.write_text('parameters = ["a1"]\nintegrand = "(zeta(2)+zeta(3)+s+t+a1)^40"\n', encoding="utf-8")
    out = tmp_path / "fixed.toml"
    result = runner.invoke(
        app, ["fix", str(source), str(ROOT / "examples" / "curved_constraints.toml"), "--write", str(out)]
    )
    _one_error_line(result)
    assert not out.exists()
