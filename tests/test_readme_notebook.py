"""The README section "In a notebook" runs as written, and what it shows is right.

The session is run with :mod:`doctest` (so every output shown in the README
is checked); the values it prints are then compared with independent numbers.
"""

from __future__ import annotations

import doctest
import re
from pathlib import Path

import mpmath
import sympy

from tests.reference import reference_mzv

ROOT = Path(__file__).resolve().parent.parent


def _section(title: str) -> str:
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    m = re.search(rf"^### {re.escape(title)}\n(.*?)(?=^##)", text, flags=re.S | re.M)
    assert m, f"README has no section {title!r}"
    return m.group(1)


def test_section_comes_after_python_api():
    text = (ROOT / "README.md").read_text(encoding="utf-8")
    assert text.index("### Python API") < text.index("### In a notebook")


def test_readme_notebook_session_runs(monkeypatch):
    monkeypatch.chdir(ROOT)
    section = _section("In a notebook")
    blocks = re.findall(r"```pycon\n(.*?)```", section, flags=re.S)
    assert len(blocks) == 1
    parser = doctest.DocTestParser()
    test = parser.get_doctest(blocks[0], {}, "README: In a notebook", "README.md", 0)
    runner = doctest.DocTestRunner(optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    runner.run(test, clear_globs=False)
    globs = test.globs
    assert runner.failures == 0 and test.examples, "the README session fails (run pytest -s to see the diff)"

    # what the session shows, against independent numbers
    x = globs["x"]
    # open superstring Γ(-s)Γ(1-t)/Γ(1-s-t): coefficient of s^2 t^2 is 2ζ(5) - ζ(2)ζ(3)
    # (A&S 6.1.33, expanded by hand; also the shipped constraint set)
    with mpmath.workdps(80):
        expected = 2 * mpmath.zeta(5) - mpmath.zeta(2) * mpmath.zeta(3)
        printed = str(x.numeric(60))
        # the printed text carries 60 significant digits, all of them right
        digits = printed.lstrip("-0.").replace(".", "")
        assert len(digits) == 60, printed
        assert abs(mpmath.mpf(printed) - expected) <= mpmath.mpf(10) ** -61
    # the sympy form evaluates to the same number (its depth-1 zetas are sympy's own)
    assert abs(sympy.N(x.to_sympy(), 50) - sympy.Float(mpmath.nstr(expected, 60), 60)) < sympy.Float(10) ** -48
    # with free parameters, (1 + a s) B(-s,-t): s^2 coefficient is ζ(3) + a ζ(2)
    # (Beta expansion: coefficient of s^2 is ζ(3), of s is ζ(2); A&S 6.1.33)
    coeff = globs["a"].coefficient(2, 0)
    assert abs(coeff[(0,)].numeric(30) - reference_mzv((3,), 30)) < mpmath.mpf(10) ** -28
    assert abs(coeff[(1,)].numeric(30) - reference_mzv((2,), 30)) < mpmath.mpf(10) ** -28
