"""Regression tests for issue 15: every kind of escape found by fuzzing ends
in a LowEnergyError that names the limit, checked before the expensive step.

No timing assertions (speed lives in bench/fuzz_readers.py); each input
below ran for minutes, crashed or raised another exception before the fix.
"""

from __future__ import annotations

import sys
from fractions import Fraction

import pytest

from lowenergy import limits
from lowenergy.constraints import constraints_from_text
from lowenergy.errors import InputError, LowEnergyError, ParseError, TableError
from lowenergy.integrand.reader import integrand_from_text
from lowenergy.tables import read_csv
from lowenergy.zeta.element import g_value, zeta
from lowenergy.zeta.expression import evaluate

ONES_ZEROS_24 = "G(" + ",".join(["1"] * 12 + ["0"] * 12) + ";1)"


# -- weights and regularization -------------------------------------------------


def test_weight_24_word_is_refused_at_once_naming_the_reachable_weight():
    with pytest.raises(TableError) as info:
        evaluate(ONES_ZEROS_24)
    text = str(info.value)
    assert "weight 24" in text and f"limit of {limits.MAX_WEIGHT}" in text
    assert f"0 to {limits.MAX_WEIGHT}" in text


@pytest.mark.parametrize("scheme", ["shuffle", "stuffle"])
def test_long_divergent_index_lists_are_refused(scheme):
    # two dozen leading 1s: a RecursionError or minutes of work before
    with pytest.raises(TableError, match="beyond the package's limit"):
        evaluate("zeta(" + ",".join(["1"] * 24) + ",2)", regularize=scheme)
    with pytest.raises(TableError):
        zeta(*([1] * 300 + [2]), regularize=scheme)


def test_stuffle_regularization_has_its_own_weight_limit():
    with pytest.raises(InputError, match=f"limit of {limits.MAX_STUFFLE_WEIGHT}"):
        zeta(*([1] * 12 + [2]), regularize="stuffle")  # weight 14
    # within the limit: ζ_*(1,2) = -ζ(2,1) - ζ(3) = -2ζ(3) (stuffle product
    # ζ(1)ζ(2) = ζ(1,2) + ζ(2,1) + ζ(3) with ζ_*(1) = 0; ζ(2,1) = ζ(3), Euler)
    assert zeta(1, 2, regularize="stuffle") == -2 * zeta(3)


def test_missing_tables_are_reported_before_regularizing(tmp_path):
    from lowenergy.zeta.table import TableStore

    empty = TableStore(tmp_path)
    empty.auto_build = False  # issue 11 builds on demand; here: the refusal path
    word = (1, 1) + (0, 1) * 6 + (0, 0)  # weight 16
    with pytest.raises(TableError, match="weight 16 is needed"):
        g_value(word, store=empty)


def test_regularization_work_budget():
    word = (1,) * 8 + (0, 1) + (0,) * 8  # weight 18, cost estimate ~1.9e9
    with pytest.raises(InputError, match="budget"):
        g_value(word)


def test_words_of_one_letter_need_no_tables():
    assert g_value((0,) * 40) == 0 and g_value((1,) * 40) == 0
    assert evaluate("G(1,1,1; 1)") == 0


# -- nesting ----------------------------------------------------------------------


@pytest.mark.parametrize("depth", [150, 199, 200, 201, 5000])
@pytest.mark.parametrize("shape", ["G({};1)", "G(1;{})", "G({})", "zeta({})", "({})"])
def test_deep_nesting_even_from_a_deep_stack(depth, shape):
    text = "1"
    for _ in range(depth):
        text = shape.format(text)

    def deep(k):
        return evaluate(text) if k == 0 else deep(k - 1)

    # run from a call stack that is already 300 frames deep
    limit = sys.getrecursionlimit()
    try:
        deep(300)
    except LowEnergyError:
        pass
    assert sys.getrecursionlimit() == limit


# -- numbers ------------------------------------------------------------------------


def test_huge_powers_of_numbers_stop_at_the_size_budget():
    with pytest.raises(InputError, match="too large"):
        evaluate("((((64^64)^64)^64)^64)^64")
    assert evaluate("(64^64)^2") == Fraction(64) ** 128


def test_products_stop_at_the_work_budget():
    with pytest.raises(InputError, match="multiplications"):
        evaluate("(zeta(2)+zeta(3)+zeta(5)+zeta(7))^64")
    with pytest.raises(InputError, match="power of pi"):
        evaluate("pi^64*pi^64*pi^2")


def test_five_thousand_digit_integers_in_toml_files():
    big = "1" * 5000
    with pytest.raises(ParseError, match="too many digits"):
        integrand_from_text(f'integrand = "x"\ntitle = {big}\n')
    with pytest.raises(ParseError, match="too many digits"):
        constraints_from_text(f'source = "a"\n[[constraint]]\nname = "a"\nrelation = "c[1,0]"\nkind = "="\nrhs = {big}\n')
    with pytest.raises(LowEnergyError):
        constraints_from_text(f'source = "a"\n[[constraint]]\nname = "a"\nrelation = "c[1,0] - {big}"\nkind = "="\nrhs = 0\n')


# -- integrand files ------------------------------------------------------------------


def test_long_sums_in_integrands_are_refused_before_evaluation():
    body = "+".join(["s*t"] * (limits.MAX_SUMMANDS + 1))
    with pytest.raises(InputError, match="top-level terms"):
        integrand_from_text(f'integrand = "{body}"\n')


def test_powers_of_long_sums_in_integrands_stop_at_the_work_budget():
    with pytest.raises(InputError, match="multiplications of terms"):
        integrand_from_text('parameters = ["a1"]\nintegrand = "(zeta(2)+zeta(3)+s+t+a1)^30"\n')


# -- CSV tables -------------------------------------------------------------------------

SHIPPED_CSV = (__import__("pathlib").Path(__file__).resolve().parents[1] / "examples" / "curved_candidate.csv")


def _table(tmp_path, old, new):
    text = SHIPPED_CSV.read_text(encoding="utf-8")
    assert old in text
    path = tmp_path / "t.csv"
    path.write_text(text.replace(old, new, 1), encoding="utf-8")
    return path


@pytest.mark.parametrize(
    "cell", ["NaN", "sNaN", "-Infinity", "1e999999999", "1_000", "\u0661\u0662", "9" * 5000, "0x1f", "1e"]
)
def test_numeric_cells_that_decimal_would_choke_on(tmp_path, cell):
    path = _table(tmp_path, "0.82246703342411321824", cell)
    with pytest.raises(LowEnergyError, match="numeric"):
        read_csv(path)


def test_json_nesting_in_a_csv_header(tmp_path):
    text = SHIPPED_CSV.read_text(encoding="utf-8")
    start = text.index("# title: ")
    end = text.index("\n", start)
    for title in ["[" * 100_000, '"' + "[" * 100_000 + '"', "{" * 50_000]:
        path = tmp_path / "t.csv"
        path.write_text(text[:start] + "# title: " + title + text[end:], encoding="utf-8")
        try:
            read_csv(path)
        except LowEnergyError:
            pass


def test_five_thousand_digit_cells(tmp_path):
    for old, new in [("1/2*zeta(2),0.82", "1" * 5000 + "*zeta(2),0.82"), (",2,-1,s^2", ",2" + "0" * 5000 + ",-1,s^2")]:
        with pytest.raises(LowEnergyError):
            read_csv(_table(tmp_path, old, new))


def test_numeric_check_work_budget(tmp_path):
    head = ("# lowenergy coefficient table\n# format: 1\n# variables: s, t\n# parameters:\n"
            "# order: 200\n# basis: monomial\nname,kind,i,j,label,order,param,weight,exact,numeric,note\n")
    digits = "0." + "1" * 999  # 1/9 to 999 digits: every cell agrees with its exact value
    rows = [f'"c[{k},1]",contact,{k},1,s,{k + 1},1,0,1/9,{digits},' for k in range(10)]
    path = tmp_path / "t.csv"
    path.write_text(head + "\n".join(rows) + "\n", encoding="utf-8")
    with pytest.raises(InputError, match="too many digits in total"):
        read_csv(path)


def test_single_zeta_values_have_a_stated_limit(tmp_path):
    """zeta(n) needs no table (so n may pass MAX_WEIGHT) but n is bounded:
    a 22-digit n once overflowed the word construction of the numerics of a
    CSV 'numeric' check (found by the fuzz campaign)."""
    import mpmath

    n = limits.MAX_SINGLE_ZETA_WEIGHT
    # zeta(100) and zeta(99) numerically against mpmath (an independent implementation)
    with mpmath.workdps(40):
        assert abs(zeta(n).numeric(30) - mpmath.zeta(n)) < mpmath.mpf(10) ** -28
        assert abs(zeta(n - 1).numeric(30) - mpmath.zeta(n - 1)) < mpmath.mpf(10) ** -28
    for bad in (n + 1, 10**22):
        with pytest.raises(InputError, match="beyond the package's limit"):
            zeta(bad)
        with pytest.raises(InputError, match="beyond the package's limit"):
            evaluate(f"37/20*zeta({bad})")
    csv = tmp_path / "t.csv"
    csv.write_text(
        "# lowenergy coefficient table\n# format: 1\n# variables: s, t\n# parameters:\n# order: 1\n"
        "# basis: monomial\n# in_basis: true\n"
        "name,kind,i,j,label,order,param,weight,exact,numeric,note\n"
        '"c[1,0]",contact,1,0,s,1,1,2,zeta(9999999999999999999999),1.0,\n'
    )
    with pytest.raises(InputError, match="beyond the package's limit") as err:
        read_csv(csv)
    assert err.value.line == 9


@pytest.mark.parametrize(
    "body",
    [
        '[[constraint]]\nname = "a"\nkind = "="\nrelation = "c[1,0]"\nrhs = HUGE\n',
        '[[pole]]\nvariable = "s"\nlevels = [1]\nmax_order = HUGE\n',
        '[[pole]]\nvariable = "s"\nmax_order = 1\nlevels = [HUGE]\n',
    ],
)
def test_huge_toml_hex_integers_are_refused_with_a_message(body):
    """A TOML hex literal is read without Python's 4,300-digit limit; printing
    it in a message (or as a relation) once raised ValueError (fuzz campaign)."""
    text = 'source = "test"\n' + body.replace("HUGE", "0x" + "f" * 5000)
    with pytest.raises(InputError) as err:
        constraints_from_text(text, source="huge.toml")
    assert err.value.line is not None and "more than" in str(err.value)
