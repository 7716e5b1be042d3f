"""The invented "first correction" example (examples/first_correction_*.toml).

The answer is written by hand in examples/first_correction_truth.toml; here
it is matched term by term against the generated ansatz (read off the truth
file: 1 = 2·(1/2), (1/4)(L_01(x) + L_01(1-x)), -(1/2)(s L_01(x) + t L_01(1-x)),
(1/12)(s L_000(x) + t L_000(1-x)), ζ(3)(s + t)).
"""

from __future__ import annotations

import importlib.util
from fractions import Fraction
from pathlib import Path

from lowenergy.ansatz.generate import AnsatzSpec, generate
from lowenergy.constraints.fix import substitute
from lowenergy.integrand.reader import read_integrand

EX = Path(__file__).resolve().parents[1] / "examples"
SPEC = AnsatzSpec(weight=3, family="sv", mzv=True, degree=1, symmetry="symmetric",
                  title="Invented first correction: single-valued ansatz of weight <= 3")
# (word, MZV constant, monomial) -> value, read off first_correction_truth.toml by hand
ANSWER = {((), (), (0, 0)): Fraction(1, 2), ((0, 1), (), (0, 0)): Fraction(1, 4),
          ((0, 1), (), (1, 0)): Fraction(-1, 2), ((0, 0, 0), (), (1, 0)): Fraction(1, 12),
          ((), ((3,),), (1, 0)): Fraction(1)}


def answer_by_name(ansatz):
    out = {t.parameter: ANSWER.get((t.candidate.word, t.candidate.constant, t.monomial), Fraction(0))
           for t in ansatz.terms}
    assert sum(1 for v in out.values() if v) == len(ANSWER)
    return out


def test_shipped_ansatz_is_the_generator_output():
    assert (EX / "first_correction_ansatz.toml").read_text(encoding="utf-8") == generate(SPEC).to_toml()


def test_shipped_constraint_data_are_regenerated_identically():
    spec = importlib.util.spec_from_file_location("make_first_correction", EX / "make_first_correction.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    assert (EX / "first_correction_poles.toml").read_text(encoding="utf-8") == module.poles_text()
    assert (EX / "first_correction_localization.toml").read_text(encoding="utf-8") == module.localization_text()


def canonical(itg):
    out = {}
    for t in itg.terms:
        key = (t.x_exp, t.y_exp, t.word)
        for k, v in t.coefficient.items():
            out[(key, k[:2])] = out.get((key, k[:2]), 0) + v
    return {k: v for k, v in out.items() if v}


def test_the_invented_answer_lies_in_the_ansatz():
    a = generate(SPEC)
    fixed = substitute(read_integrand(EX / "first_correction_ansatz.toml"), answer_by_name(a))
    assert canonical(fixed) == canonical(read_integrand(EX / "first_correction_truth.toml"))



# --------------------------------------------------------------------------
# the walkthrough of examples/README.md, end to end through the command line
# --------------------------------------------------------------------------


def test_walkthrough(tmp_path):
    import json

    from typer.testing import CliRunner

    from lowenergy.cli import app

    runner = CliRunner()

    def run(*args):
        return runner.invoke(app, [str(a) for a in args])

    poles, loc = EX / "first_correction_poles.toml", EX / "first_correction_localization.toml"
    ansatz = tmp_path / "first_correction_ansatz.toml"
    res = run("ansatz", "--weight", 3, "--family", "sv", "--mzv", "--degree", 1, "--symmetry", "symmetric",
              "--title", SPEC.title, "--write", ansatz)
    assert res.exit_code == 0, res.stderr
    assert ansatz.read_text(encoding="utf-8") == (EX / "first_correction_ansatz.toml").read_text(encoding="utf-8")
    answer = {k: str(v) for k, v in answer_by_name(generate(SPEC)).items()}

    # the pole structure alone leaves one parameter
    res = run("fix", ansatz, poles, "--json")
    assert res.exit_code == 0, res.stderr
    out = json.loads(res.stdout)
    assert out["status"] == "underdetermined" and len(out["free"]) == 1
    assert out["rank"] == len(answer) - 1
    # what it did fix agrees with the answer
    assert all(answer[k] == v for k, v in out["solution"].items())

    # with the localization-type relation the answer is unique and is the invented one
    fixed = tmp_path / "fixed.toml"
    res = run("fix", ansatz, poles, loc, "--write", fixed, "--json")
    assert res.exit_code == 0, res.stderr
    out = json.loads(res.stdout)
    assert out["status"] == "unique" and out["solution"] == answer

    # expand: the fixed file and the hand-written answer give the same table
    a = json.loads(run("expand", fixed, "--order", 3, "--json").stdout)
    b = json.loads(run("expand", EX / "first_correction_truth.toml", "--order", 3, "--json").stdout)
    assert {tuple(t["powers"]): t["exact"] for t in a["terms"]} == {tuple(t["powers"]): t["exact"] for t in b["terms"]}

    # check: every pole condition and the relation pass
    for constraints in (poles, loc):
        res = run("check", fixed, constraints)
        assert res.exit_code == 0, res.stdout
        assert " 0 failed" in res.stdout
