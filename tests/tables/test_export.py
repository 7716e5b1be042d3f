"""Tests of lowenergy.tables.export: DataFrame, CSV, JSON, LaTeX, terminal.

The expansions are built by hand or from the independently derived series
in tests/tables/series.py; numerical values are checked against mpmath's
Riemann zeta, not against lowenergy's own numerics.
"""

from __future__ import annotations

import json
import os
import re
import shutil
import subprocess
from fractions import Fraction

import mpmath
import pytest

from lowenergy.errors import InputError, LowEnergyError
from lowenergy.expansion.result import Expansion
from lowenergy.parse import parse_expression
from lowenergy.tables import (
    COLUMNS,
    read_csv,
    to_csv_text,
    to_dataframe,
    to_json_dict,
    to_latex,
    to_terminal,
    write_csv,
    write_json,
    write_latex,
)
from lowenergy.tables import export as export_module
from lowenergy.zeta.element import MZV, zeta
from lowenergy.zeta.expression import evaluate
from tests.tables.series import beta_expansion, beta_sympy, laurent_coefficients, mzv_of, zeta_poly_numeric


def r(q):
    return MZV.rational(Fraction(q))


def param_expansion():
    """A made-up parameter-dependent expansion (two parameters, a pole, mixed weights)."""
    return Expansion(
        ("s", "t"),
        ("a1", "a2"),
        3,
        {
            (-1, 0): {(0, 0): r(-1), (1, 0): r(Fraction(1, 2))},
            (0, 0): {(1, 0): zeta(3), (0, 0): 2 * zeta(2)},
            (1, 1): {(2, 1): zeta(5) - zeta(2) * zeta(3), (0, 0): zeta(3) ** 2 + r(Fraction(-7, 3))},
            (3, 0): {(0, 2): zeta(2) ** 2 / 7},
        },
        title='test "params" — ünïcode, commas, and\nnewline',
        source="hand-made",
    )


def same_expansion(a: Expansion, b: Expansion):
    assert a.variables == b.variables
    assert a.parameters == b.parameters
    assert a.order == b.order
    assert a.coefficients == b.coefficients
    assert a.title == b.title
    assert a.source == b.source


# --------------------------------------------------------------------------
# DataFrame
# --------------------------------------------------------------------------


def test_dataframe_of_beta():
    order, digits = 5, 25
    e = beta_expansion(order)
    expected = laurent_coefficients(beta_sympy(order))
    df = to_dataframe(e, digits=digits)
    assert tuple(df.columns) == COLUMNS
    assert len(df) == len(expected)
    assert df.attrs["in_basis"] is True and df.attrs["order"] == order
    for row in df.itertuples(index=False):
        key = (int(row.i), int(row.j))
        assert row.name == f"c[{key[0]},{key[1]}]"
        assert row.kind == ("pole" if min(key) < 0 else "contact")
        assert row.order == sum(key)
        assert row.param == "1"
        # exact text evaluates back to the independently derived value
        assert evaluate(row.exact) == mzv_of(expected[key])
        # numeric column against mpmath's zeta values
        value = zeta_poly_numeric(expected[key], digits)
        with mpmath.workdps(digits + 10):
            got = mpmath.mpf(row.numeric)
            assert abs(got - value) <= abs(value) * mpmath.mpf(10) ** (1 - digits)
        # weight: ζ(2)(s+t) has weight 2, degree d has weight d + 1; poles -1 weight 0
        assert row.weight == (0 if min(key) < 0 else sum(key) + 1)
    # poles come first
    assert list(df["kind"][:2]) == ["pole", "pole"]


def test_dataframe_with_parameters_and_mixed_weight():
    df = to_dataframe(param_expansion(), digits=12)
    rows = {(r.name, r.param): r for r in df.itertuples(index=False)}
    assert rows[("c[0,0]", "a1")].exact == "zeta(3)"
    assert rows[("c[0,0]", "1")].exact == "2*zeta(2)"
    assert rows[("c[1,1]", "a1^2*a2")].weight == 5
    assert rows[("c[1,1]", "1")].weight == "mixed"
    assert rows[("c[-1,0]", "a1")].kind == "pole"
    assert rows[("c[3,0]", "a2^2")].numeric.startswith("0.386")  # ζ(2)^2/7 = π^4/252 = 0.38654...
    # highest parameter degree first within a coefficient
    assert list(df[df["name"] == "c[0,0]"]["param"]) == ["a1", "1"]


def test_sigma_dataframe_labels():
    df = to_dataframe(beta_expansion(4), basis="sigma", digits=10)
    contact = df[df["kind"] == "contact"]
    assert list(contact["name"]) == ["sigma[1,0]", "sigma[0,1]", "sigma[2,0]"]
    assert list(contact["label"]) == ["sigma2", "sigma3", "sigma2^2"]
    assert list(contact["order"]) == [2, 3, 4]
    assert contact["i"].isna().all()


def test_digits_are_validated():
    for bad in (0, -3, 2.5, True, 10**6):
        with pytest.raises(InputError, match="digits"):
            to_dataframe(beta_expansion(1), digits=bad)


# --------------------------------------------------------------------------
# CSV
# --------------------------------------------------------------------------


def test_csv_round_trip_beta(tmp_path):
    e = beta_expansion(6)
    path = write_csv(e, tmp_path / "beta.csv", digits=15)
    back = read_csv(path)
    same_expansion(back, e)
    text = path.read_text(encoding="utf-8")
    assert text.startswith("# lowenergy coefficient table\n")
    assert "# variables: s, t\n" in text and "# order: 6\n" in text


def test_csv_round_trip_with_parameters(tmp_path):
    e = param_expansion()
    path = tmp_path / "params.csv"
    write_csv(e, path)
    same_expansion(read_csv(path), e)


@pytest.mark.parametrize("basis", ["symmetric", "sigma", [("L", "s + t"), ("Q", "(s+t)^2 - 1/3*s*t")]])
def test_csv_round_trip_other_bases(tmp_path, basis):
    # element rows are expanded back from their labels, remainders added
    for e in (beta_expansion(5), param_expansion()):
        path = tmp_path / "table.csv"
        write_csv(e, path, basis=basis, digits=8)
        same_expansion(read_csv(path), e)


def test_csv_round_trip_other_variables(tmp_path):
    e = Expansion(("x", "y"), ("n_1",), 2, {(1, 1): {(1,): zeta(3)}, (0, -1): {(0,): r(1)}})
    path = tmp_path / "xy.csv"
    write_csv(e, path, basis="symmetric")
    same_expansion(read_csv(path), e)


def test_csv_columns_are_the_table_columns(tmp_path):
    path = write_csv(param_expansion(), tmp_path / "p.csv")
    header = [line for line in path.read_text().splitlines() if not line.startswith("#")][0]
    assert header.split(",") == list(COLUMNS)


def test_write_is_atomic_on_failure(tmp_path, monkeypatch):
    path = tmp_path / "out.csv"
    path.write_text("old content\n")
    # a failure while building the table (bad digits) leaves the file alone
    with pytest.raises(InputError):
        write_csv(beta_expansion(2), path, digits=0)
    # a failure at the final rename leaves the file alone and no temporary file
    def broken_replace(src, dst):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(export_module.os, "replace", broken_replace)
    with pytest.raises(InputError, match="No space left"):
        write_csv(beta_expansion(2), path)
    with pytest.raises(InputError):
        write_json(beta_expansion(2), tmp_path / "x.json")
    assert path.read_text() == "old content\n"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out.csv"]


def test_write_into_missing_directory(tmp_path):
    with pytest.raises(InputError, match="cannot write"):
        write_csv(beta_expansion(1), tmp_path / "no" / "such" / "dir.csv")


def test_written_file_respects_umask(tmp_path):
    old = os.umask(0o077)
    try:
        path = write_csv(beta_expansion(1), tmp_path / "private.csv")
    finally:
        os.umask(old)
    assert (path.stat().st_mode & 0o777) == 0o600


# --------------------------------------------------------------------------
# JSON
# --------------------------------------------------------------------------


def test_json_of_beta():
    e = beta_expansion(3)
    data = to_json_dict(e, digits=12)
    json.loads(json.dumps(data))  # JSON-serializable
    assert data["variables"] == ["s", "t"] and data["order"] == 3 and data["parameters"] == []
    assert data["in_basis"] is True and data["basis"] == "monomial"
    terms = {tuple(t["powers"]): t for t in data["terms"]}
    expected = laurent_coefficients(beta_sympy(3))
    assert set(terms) == set(expected)
    for key, t in terms.items():
        assert {"powers", "exact", "numeric", "weight", "kind", "name"} <= set(t)
        assert evaluate(t["exact"]) == mzv_of(expected[key])
        with mpmath.workdps(25):
            v = zeta_poly_numeric(expected[key], 20)
            assert abs(mpmath.mpf(t["numeric"]) - v) <= abs(v) * mpmath.mpf("1e-11")
    assert terms[(1, 0)]["exact"] == "zeta(2)"
    assert terms[(1, 0)]["numeric"] == "1.64493406685"
    assert terms[(-1, 0)]["kind"] == "pole"
    assert terms[(1, 1)]["exact"] == "2*zeta(3)"


def test_json_with_parameters(tmp_path):
    data = to_json_dict(param_expansion(), digits=6)
    terms = {t["name"]: t for t in data["terms"]}
    assert data["parameters"] == ["a1", "a2"]
    assert terms["c[0,0]"]["exact"] == "zeta(3)*a1 + 2*zeta(2)"
    assert terms["c[0,0]"]["numeric"] == "1.20206*a1 + 3.28987"
    assert terms["c[-1,0]"]["exact"] == "1/2*a1 - 1"
    assert terms["c[1,1]"]["exact"] == "(zeta(5) - zeta(2)*zeta(3))*a1^2*a2 - 7/3 + zeta(3)^2"
    assert terms["c[1,1]"]["weight"] == "mixed"
    assert [c["param"] for c in terms["c[0,0]"]["coefficients"]] == ["a1", "1"]
    assert terms["c[0,0]"]["coefficients"][0]["exponents"] == [1, 0]
    # the exact polynomial text is accepted by the package parser
    for t in data["terms"]:
        parse_expression(t["exact"])
    path = write_json(param_expansion(), tmp_path / "p.json", digits=6)
    assert json.loads(path.read_text()) == data


def test_json_in_sigma_basis():
    data = to_json_dict(beta_expansion(3), digits=8, basis="sigma")
    kinds = [t["kind"] for t in data["terms"]]
    assert data["in_basis"] is False and "remainder" in kinds
    sig = [t for t in data["terms"] if t["kind"] == "contact"]
    assert [t["name"] for t in sig] == ["sigma[1,0]", "sigma[0,1]"]
    assert all(t["powers"] is None for t in sig)
    assert sig[0]["polynomial"] == "sigma2"


# --------------------------------------------------------------------------
# LaTeX
# --------------------------------------------------------------------------


def _strip_escaped(text):
    return re.sub(r"\\[{}&%$#_]", "", text)


def _check_tabular(tex, nterms, ncols):
    assert tex.startswith("\\begin{tabular}{" + "l" * ncols + "}")
    assert tex.rstrip().endswith("\\end{tabular}")
    assert tex.count("\\begin{tabular}") == 1 and tex.count("\\end{tabular}") == 1
    depth = 0
    for ch in _strip_escaped(tex):
        depth += ch == "{"
        depth -= ch == "}"
        assert depth >= 0
    assert depth == 0
    lines = tex.splitlines()
    assert lines[1] == lines[3] == lines[-2] == "\\hline"
    assert lines[2].endswith(" \\\\")
    rows = []
    for ln in lines[4:-2]:
        if ln == "\\hline":
            continue
        assert ln.endswith(" \\\\"), ln
        if ln.startswith("\\multicolumn"):
            continue
        assert len(re.findall(r"(?<!\\)&", ln)) == ncols - 1, ln
        rows.append(ln)
    assert len(rows) == nterms
    return rows


def test_latex_of_beta():
    e = beta_expansion(4)
    tex = to_latex(e, digits=6)
    rows = _check_tabular(tex, len(e.coefficients), 3)
    assert "$s$ & $\\zeta(2)$ & $1.64493\\ldots$ \\\\" in rows
    assert "$s^{-1}$ & $-1$ & $-1.0$ \\\\" in rows
    assert "$s t$ & $2\\, \\zeta(3)$ & $2.40411\\ldots$ \\\\" in rows
    assert any(r.startswith("$s^{2} t$ & ") for r in rows)


def test_latex_with_parameters_remainder_and_escaping():
    e = param_expansion()
    basis = [("A_1 & 50% {x}", "s^3"), ("B#~^\\", "1")]
    tex = to_latex(e, basis=basis, digits=5, pi=True)
    nrows = 7  # A_1: 1, B: 2 (a1 and 1), poles: 2, remainder c[1,1]: 2
    rows = _check_tabular(tex, nrows, 4)
    assert any(r.startswith("A\\_1 \\& 50\\% \\{x\\} & $a_{2}^{2}$ & ") for r in rows)
    assert any(r.startswith("B\\#\\textasciitilde{}\\textasciicircum{}\\textbackslash{} & $a_{1}$") for r in rows)
    assert "\\multicolumn{4}{l}{remainder: not in the span of the user basis" in tex
    assert "\\pi^{2}" in tex  # pi=True: ζ(2) shown through π^2


def test_latex_compiles_with_pdflatex(tmp_path):
    exe = shutil.which("pdflatex")
    if exe is None:
        pytest.skip("pdflatex not installed")
    tex = to_latex(param_expansion(), basis=[("A_1 & 50%", "s^3")], digits=8)
    doc = "\\documentclass{article}\n\\begin{document}\n" + tex + "\\end{document}\n"
    (tmp_path / "t.tex").write_text(doc, encoding="utf-8")
    proc = subprocess.run(
        [exe, "-interaction=nonstopmode", "-halt-on-error", "t.tex"],
        cwd=tmp_path,
        capture_output=True,
        timeout=120,
    )
    assert proc.returncode == 0, proc.stdout.decode(errors="replace")[-2000:]


def test_write_latex(tmp_path):
    path = write_latex(beta_expansion(2), tmp_path / "t.tex", digits=5)
    assert path.read_text() == to_latex(beta_expansion(2), digits=5)


# --------------------------------------------------------------------------
# terminal
# --------------------------------------------------------------------------


def test_terminal_table():
    from rich.console import Console
    from rich.table import Table

    e = param_expansion()
    table = to_terminal(e, basis=[("[bold]X[/bold]", "s^3")], digits=8, width=250)
    assert isinstance(table, Table)
    assert table.row_count == 7
    console = Console(record=True, width=250)
    console.print(table)
    out = console.export_text()
    assert "[bold]X[/bold]" in out  # user text is never read as markup
    assert "c[-1,0]" in out and "remainder" in out and "NOT in the basis" in out


def test_terminal_table_in_basis():
    from rich.console import Console

    console = Console(record=True, width=200)
    console.print(to_terminal(beta_expansion(3), basis="symmetric", digits=6, width=200))
    out = console.export_text()
    assert "sym[1,1]" in out and "lie in the basis" in out


def test_csv_text_matches_file(tmp_path):
    e = beta_expansion(2)
    path = write_csv(e, tmp_path / "b.csv", digits=7)
    assert path.read_text(encoding="utf-8") == to_csv_text(e, digits=7)


def test_everything_rejects_non_expansions():
    with pytest.raises(TypeError):
        to_json_dict("s + t")
    with pytest.raises(LowEnergyError):
        to_latex(beta_expansion(1), basis="nonsense")
