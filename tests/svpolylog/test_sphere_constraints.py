"""Constraints on sphere integrands: U-channel rows ``c[i,0,k]`` in relations,
``[[pole]]`` tables and ``fix`` through the sphere residues.

Expected values are derived by hand from the complex Beta function
(Dotsenko & Fateev, Nucl. Phys. B 240 (1984); Kawai, Lewellen & Tye, Nucl.
Phys. B 269 (1986)):
``(1/π)∫ d²z |z|^(-2S-2)|1-z|^(-2T) = Γ(-S)Γ(1-T)Γ(S+T)/(Γ(1+S)Γ(T)Γ(1-S-T))
= T/(S U) (1 + O(STU))`` with U = -S-T, so ``c[-1,0] = -1`` and
``c[0,0,-1] = -1`` (T/(SU) = -1/S - 1/U); its residue at S = 1 is ``-T²``
and ``(1/π)∫ |z|^(-2S-2)|1-z|^(-2T-2) d²z`` has ``-(T+1)²`` there
(Res_{x=-1} Γ(x) = -1; the rest is a ratio of Gamma functions at integer
shifts).
"""

from __future__ import annotations

import pytest
from typer.testing import CliRunner

from lowenergy.cli import app
from lowenergy.constraints import constraints_from_text
from lowenergy.errors import LowEnergyError

runner = CliRunner()

SHIFTED = 'domain = "sphere"\nvariables = ["S", "T"]\nintegrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T)"\n'


def run(*args):
    return runner.invoke(app, [str(a) for a in args])


def _relation(rel, rhs):
    return f'source = "hand"\n[[constraint]]\nname = "r"\nrelation = "{rel}"\nkind = "="\nrhs = "{rhs}"\n'


def test_u_row_names_parse():
    cs = constraints_from_text(_relation("c[ 2, 0, -3 ] + c[0,0,-1]", "0"), source="u.toml")
    refs = cs.constraints[0].refs
    assert [r.name for r in refs] == ["c[2,0,-3]", "c[0,0,-1]"]
    assert [r.order for r in refs] == [-1, -1]


@pytest.mark.parametrize("bad", ["c[0,1,-1]", "c[0,0,1]", "c[-1,0,-1]", "sym[1,0,-1]"])
def test_bad_u_row_names_refused(bad):
    with pytest.raises(LowEnergyError) as err:
        constraints_from_text(_relation(bad, "0"), source="u.toml")
    assert "u.toml" in str(err.value) and "line 4" in str(err.value)


def test_check_u_rows_exact_and_from_csv(tmp_path):
    f = tmp_path / "shifted.toml"
    f.write_text(SHIFTED)
    good = tmp_path / "good.toml"
    good.write_text(_relation("c[0,0,-1] + c[-1,0]", "-2"))
    bad = tmp_path / "bad.toml"
    bad.write_text(_relation("c[0,0,-1]", "1"))
    res = run("check", f, good)
    assert res.exit_code == 0 and "PASS" in res.output, res.output
    assert run("check", f, bad).exit_code == 1
    csv = tmp_path / "t.csv"
    assert run("expand", f, "--order", 3, "--csv", csv).exit_code == 0
    assert run("check", csv, good).exit_code == 0
    assert run("check", csv, bad).exit_code == 1


def test_fix_from_a_u_row(tmp_path):
    f = tmp_path / "ansatz.toml"
    f.write_text('domain = "sphere"\nvariables = ["S", "T"]\nparameters = ["b1", "b2"]\n'
                 'integrand = "b1*abs(z)^(-2*S-2)*abs(1-z)^(-2*T) + b2*abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)"\n')
    cs = tmp_path / "c.toml"
    # c[0,0,-1]: only the shifted factor has a U pole at 0; c[-1,0]: both have -1/S
    cs.write_text(_relation("c[0,0,-1]", "-3") + '[[constraint]]\nname = "s"\nrelation = "c[-1,0]"\n'
                  'kind = "="\nrhs = "-5"\n')
    res = run("fix", f, cs)
    assert res.exit_code == 0, res.output
    assert "b1 = 3" in res.output and "b2 = 2" in res.output


POLES = '''source = "hand"
[[pole]]
variable = "s"
levels = [1]
max_order = 1
residues = { 1 = "RES" }
'''


def test_pole_tables_on_sphere_files(tmp_path):
    f = tmp_path / "shifted.toml"
    f.write_text(SHIFTED)
    good = tmp_path / "p.toml"
    good.write_text(POLES.replace("RES", "-t^2"))
    res = run("check", f, good)
    assert res.exit_code == 0, res.output
    bad = tmp_path / "q.toml"
    bad.write_text(POLES.replace("RES", "-t^2 - t"))
    assert run("check", f, bad).exit_code == 1


def test_fix_from_a_pole_table(tmp_path):
    f = tmp_path / "ansatz.toml"
    f.write_text('domain = "sphere"\nvariables = ["S", "T"]\nparameters = ["b1", "b2"]\n'
                 'integrand = "abs(z)^(-2*S-2)*abs(1-z)^(-2*T-2)*(b1 + b2*S)"\n')
    cs = tmp_path / "p.toml"
    # residue at S = 1: (b1 + b2)·(-(T+1)^2); at S = 2 (b1 + 2 b2)·R_2(T)
    cs.write_text(POLES.replace("RES", "-(t+1)^2").replace("levels = [1]", "levels = [1, 2]\ncheck_levels = [3]")
                  + '[[constraint]]\nname = "c"\nrelation = "c[-1,0]"\nkind = "="\nrhs = "-1"\n')
    res = run("fix", f, cs)
    assert res.exit_code == 0, res.output
    assert "b1 = 1" in res.output and "b2 = 0" in res.output


def test_invented_pole_example_fixes_by_hand_values(tmp_path):
    # examples/README.md §4: b1 + b2(1+T) = (T+3)/2 and no double pole (b3 = 0), by hand
    from pathlib import Path

    ex = Path(__file__).resolve().parents[2] / "examples"
    fixed = tmp_path / "f.toml"
    res = run("fix", ex / "sphere_pole_ansatz.toml", ex / "sphere_pole_constraints.toml", "--write", fixed)
    assert res.exit_code == 0, res.output
    assert "b1 = 1\n" in res.output and "b2 = 1/2\n" in res.output and "b3 = 0\n" in res.output
    assert "further levels, not imposed (2): 2 passed, 0 failed" in res.output
    assert run("check", fixed, ex / "sphere_pole_constraints.toml").exit_code == 0


def test_shifts_of_the_invented_sphere_family():
    # |z|^(-2S/(1+εc)-2) has its S-poles at S = n(1 + εc), c = 1/2 (examples/shift_sphere_*.toml,
    # invented): δ1 = n/2 and δ2 = 0 exactly, at every spin
    from pathlib import Path

    ex = Path(__file__).resolve().parents[2] / "examples"
    res = run("shifts", ex / "shift_sphere_flat.toml", ex / "shift_sphere_first.toml",
              ex / "shift_sphere_second.toml", "--levels", 2)
    assert res.exit_code == 0, res.output
    rows = [line.split() for line in res.output.splitlines() if line.strip()[:1].isdigit()]
    assert len(rows) == 3 + 5
    for row in rows:
        level, delta1 = int(row[0]), row[3]
        assert delta1 == {1: "1/2", 2: "1"}[level]
        assert float(row[6]) == 0.0
    assert "consistency residuals: all zero" in res.output
