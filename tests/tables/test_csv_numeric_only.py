"""Numeric-only candidate tables, and exact cells that contradict their numeric cells.

The candidate is the invented examples/curved_candidate.csv; values of the
right-hand sides are computed independently with mpmath (ζ via mpmath.zeta).
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

import mpmath
import pytest
from typer.testing import CliRunner

from lowenergy.cli import app
from lowenergy.constraints import check, read_constraints
from lowenergy.errors import LowEnergyError
from lowenergy.tables import read_csv

ROOT = Path(__file__).resolve().parents[2]
CANDIDATE = ROOT / "examples" / "curved_candidate.csv"
CONSTRAINTS = ROOT / "examples" / "curved_constraints.toml"
runner = CliRunner()


def _rewrite(tmp_path, edit, name="t.csv", drop_exact=False):
    """Copy the candidate table, passing each data row (a dict) through ``edit``."""
    lines = CANDIDATE.read_text(encoding="utf-8").splitlines()
    head = [x for x in lines if x.startswith("#")]
    body = list(csv.DictReader(io.StringIO("\n".join(x for x in lines if not x.startswith("#")))))
    columns = [c for c in body[0] if not (drop_exact and c == "exact")]
    out = io.StringIO()
    w = csv.DictWriter(out, fieldnames=columns, lineterminator="\n", extrasaction="ignore")
    w.writeheader()
    for row in body:
        w.writerow(edit(dict(row)))
    path = tmp_path / name
    path.write_text("\n".join(head) + "\n" + out.getvalue(), encoding="utf-8")
    return path


def _blank_exact(row):
    row["exact"] = ""
    return row


@pytest.mark.parametrize("drop_exact", [False, True])
def test_numeric_only_table_is_checked_numerically(tmp_path, drop_exact):
    path = _rewrite(tmp_path, _blank_exact, drop_exact=drop_exact)
    table = read_csv(path, numeric=True)
    assert table.meta["numeric_only"] and table.meta["numeric_digits"] == 20
    report = check(table, read_constraints(CONSTRAINTS))
    # the same verdicts as the exact table: the invented table has one wrong coefficient
    exact_report = check(read_csv(CANDIDATE), read_constraints(CONSTRAINTS))
    assert [r.status for r in report] == [r.status for r in exact_report] == ["PASS", "FAIL", "PASS", "PASS"]
    assert all(r.comparison == "numeric" for r in report)
    bad = report["order-2 mixed"]
    with mpmath.workdps(40):
        rhs = 4 * mpmath.zeta(3) - mpmath.mpf(11) / 5 * mpmath.zeta(2) ** 2
        lhs = mpmath.mpf("-0.60338855591731381598")          # the table's c[1,1]
        assert abs(bad.residual_numeric[()] - (lhs - rhs)) < mpmath.mpf(10) ** -18
    res = runner.invoke(app, ["check", str(path), str(CONSTRAINTS)])
    assert res.exit_code == 1
    assert "numeric-only candidate table (20 significant digits)" in res.stdout


def test_tolerance_follows_the_digits_of_the_table(tmp_path):
    # c[2,0] = c[0,2] = 3/2 ζ(3) passes "order-2 trace"; spoil c[2,0] in the 12th digit: it must fail,
    # change its last (20th) digit: it must still pass
    def spoil(position):
        def edit(row):
            row["exact"] = ""
            if row["name"] == "c[2,0]":
                digits = list(row["numeric"])
                k = [i for i, ch in enumerate(digits) if ch.isdigit()][position]
                digits[k] = "9" if digits[k] != "9" else "8"
                row["numeric"] = "".join(digits)
            return row
        return edit

    cs = read_constraints(CONSTRAINTS)
    far = check(read_csv(_rewrite(tmp_path, spoil(11), "far.csv"), numeric=True), cs)
    near = check(read_csv(_rewrite(tmp_path, spoil(19), "near.csv"), numeric=True), cs)
    assert far["order-2 trace"].status == "FAIL"
    assert near["order-2 trace"].status == "PASS"


def test_numeric_only_needs_the_option_and_no_mixing(tmp_path):
    path = _rewrite(tmp_path, _blank_exact)
    with pytest.raises(LowEnergyError, match="empty 'exact' cell"):
        read_csv(path)

    def half(row):
        if row["name"].startswith("c[2"):
            row["exact"] = ""
        return row

    with pytest.raises(LowEnergyError, match="some rows have an exact value"):
        read_csv(_rewrite(tmp_path, half, "mixed.csv"), numeric=True)


def test_exact_cell_contradicting_its_numeric_cell_is_reported(tmp_path):
    def contradict(row):
        if row["name"] == "c[0,1]":
            row["exact"] = "zeta(3)"        # the numeric cell still says ζ(2) = 1.6449...
        return row

    path = _rewrite(tmp_path, contradict)
    res = runner.invoke(app, ["check", str(path), str(CONSTRAINTS)])
    assert res.exit_code == 2
    assert "columns 'exact' and 'numeric' disagree" in res.stderr and "line 17" in res.stderr
    assert "Traceback" not in res.stderr
