"""Bad CSV tables: every problem is a LowEnergyError naming the file and the line."""

from __future__ import annotations

import pytest

from lowenergy.errors import InputError, LowEnergyError, ParseError
from lowenergy.expansion.result import Expansion
from lowenergy.tables import read_csv, to_csv_text
from lowenergy.zeta.element import MZV, zeta


def small_expansion():
    return Expansion(
        ("s", "t"),
        ("a1",),
        2,
        {
            (-1, 0): {(0,): MZV.rational(-1)},
            (1, 0): {(0,): zeta(2), (1,): zeta(3)},
            (1, 1): {(0,): 2 * zeta(3)},
        },
        title="small",
    )


def good_text(basis="monomial"):
    return to_csv_text(small_expansion(), basis=basis, digits=12)


def line_of(text, fragment):
    for n, line in enumerate(text.split("\n"), start=1):
        if fragment in line:
            return n
    raise AssertionError(f"{fragment!r} not in text")


def replace_once(text, old, new):
    assert text.count(old) == 1, old
    return text.replace(old, new)


def read_text(tmp_path, text, name="bad.csv"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path, read_csv(path)


def test_good_file_reads(tmp_path):
    _, e = read_text(tmp_path, good_text())
    assert e.coefficients == small_expansion().coefficients


def _case(old, new, fragment):
    return pytest.param(old, new, fragment, id=fragment.split()[0] + "-" + new[:12])


@pytest.mark.parametrize(
    "old, new, fragment",
    [
        ("# lowenergy coefficient table", "# some other table", "not a lowenergy coefficient table"),
        ("# format: 1", "# format: 2", "unsupported table format"),
        ("# variables: s, t", "# variables: s", "expected 2 variable names"),
        ("# variables: s, t", "# variables: s, 2t", "invalid variable name"),
        ("# parameters: a1", "# parameters: a1, s", "has the name of a variable"),
        ("# order: 2", "# order: two", "must be an integer"),
        ("# basis: monomial", "# basis: fancy", "unknown basis"),
        ('# title: "small"', "# title: small", "not a quoted string"),
        ("name,kind,i,j,label", "name,kind,i,jj,label", "column 'j' is missing"),
        ('"c[1,1]",contact,1,1,', '"c[1,1]",contact,1,x,', "column 'j' must be an integer"),
        ('"c[1,1]",contact,1,1,', '"c[1,1]",tadpole,1,1,', "unknown kind"),
        ("2*zeta(3)", "2*zeta(3", "unbalanced parenthesis"),
        ("2*zeta(3)", "2*zeta(3)*q", "unknown name 'q'"),
        ("2*zeta(3)", "\"zeta(1,2)\"", "diverges"),
        ("2*zeta(3)", "", "empty 'exact' cell"),
        ("2.40411380632", "2.40411380731", "disagree"),
        ("2.40411380632", "two point four", "not a decimal number"),
        ("2.40411380632", "NaN", "not a finite number"),
        ("2.40411380632", "2." + "4" * 1200, "more than 1000 digits"),
        ('"c[1,1]",contact,1,1,', '"c[2,1]",contact,1,1,', "does not match"),
        ('"c[-1,0]",pole,-1,0,', '"c[-1,0]",contact,-1,0,', "is a pole but marked"),
        ('"c[1,1]",contact,1,1,', '"c[1,1]",pole,1,1,', "is not a pole"),
        ('"c[1,1]",contact,1,1,s*t,2,1,', '"c[1,2]",contact,1,2,s*t,2,1,', "beyond the order"),
        ('"c[1,1]",contact,1,1,s*t,2,1,', '"c[1,1]",contact,1,1,s*t,2,b7,', "unknown parameter 'b7'"),
        ('"c[1,1]",contact,1,1,s*t,2,1,', '"c[1,1]",contact,1,1,s*t,2,a1^-1,', "malformed parameter monomial"),
        ('"c[1,1]",contact,1,1,s*t,2,1,', '"c[1,1]",contact,1,1,s*t,2,2*a1,', "malformed parameter monomial"),
        (",2*zeta(3),", ",2*zeta(3),extra,", "cells, found"),
    ],
)
def test_bad_csv(tmp_path, old, new, fragment):
    text = replace_once(good_text(), old, new)
    line = line_of(text, new) if new else line_of(text, '"c[1,1]"')
    path = tmp_path / "bad.csv"
    path.write_text(text, encoding="utf-8")
    with pytest.raises(LowEnergyError) as info:
        read_csv(path)
    err = info.value
    assert fragment in str(err), str(err)
    assert err.source == str(path)
    assert err.line == line, (str(err), line)


def test_duplicate_row(tmp_path):
    text = good_text()
    row = [ln for ln in text.split("\n") if ln.startswith('"c[1,1]"')][0]
    text = text.rstrip("\n") + "\n" + row + "\n"
    path = tmp_path / "dup.csv"
    path.write_text(text)
    with pytest.raises(InputError) as info:
        read_csv(path)
    assert "repeats line" in str(info.value)
    assert info.value.line == len(text.rstrip("\n").split("\n"))
    assert info.value.source == str(path)


def test_missing_header_field(tmp_path):
    text = replace_once(good_text(), "# order: 2\n", "")
    path = tmp_path / "noorder.csv"
    path.write_text(text)
    with pytest.raises(ParseError) as info:
        read_csv(path)
    assert "'order' is missing" in str(info.value)
    assert info.value.line == line_of(text, "name,kind")


def test_duplicate_header_field(tmp_path):
    text = replace_once(good_text(), "# order: 2\n", "# order: 2\n# order: 3\n")
    path = tmp_path / "twice.csv"
    path.write_text(text)
    with pytest.raises(ParseError, match="given twice") as info:
        read_csv(path)
    assert info.value.line == line_of(text, "# order: 3")


def test_empty_file(tmp_path):
    path = tmp_path / "empty.csv"
    path.write_text("\n\n")
    with pytest.raises(ParseError, match="empty") as info:
        read_csv(path)
    assert info.value.source == str(path) and info.value.line == 1


def test_only_header_comments(tmp_path):
    text = good_text()
    text = text[: text.index("name,kind")]
    path = tmp_path / "nocols.csv"
    path.write_text(text)
    with pytest.raises(ParseError, match="column names are missing"):
        read_csv(path)


def test_not_utf8(tmp_path):
    data = good_text().encode("utf-8").replace(b"2*zeta(3)", b"2*zeta(3)\xff")
    path = tmp_path / "latin.csv"
    path.write_bytes(data)
    with pytest.raises(ParseError, match="UTF-8") as info:
        read_csv(path)
    assert info.value.line == line_of(good_text(), "2*zeta(3)")


def test_unterminated_quote(tmp_path):
    text = good_text().rstrip("\n") + '\n"c[2,0],contact,2,0,s^2,2,1,3,zeta(3),1.2,\n'
    path = tmp_path / "quote.csv"
    path.write_text(text)
    with pytest.raises(ParseError, match="malformed CSV") as info:
        read_csv(path)
    assert info.value.source == str(path)
    assert info.value.line is not None and info.value.line >= line_of(text, '"c[2,0]')


def test_missing_file(tmp_path):
    path = tmp_path / "nope.csv"
    with pytest.raises(InputError, match="cannot read") as info:
        read_csv(path)
    assert info.value.source == str(path)


def test_sigma_label_must_match_name(tmp_path):
    text = to_csv_text(small_expansion(), basis="sigma", digits=10)
    row = [ln for ln in text.split("\n") if ln.startswith('"sigma[')][0]
    bad = row.replace(",sigma2,", ",sigma3,", 1) if ",sigma2," in row else row.replace(",1,", ",sigma2,", 1)
    text = text.replace(row, bad)
    path = tmp_path / "sigma.csv"
    path.write_text(text)
    with pytest.raises(LowEnergyError, match="label does not match") as info:
        read_csv(path)
    assert info.value.line == line_of(text, bad)


def test_symmetric_name_must_be_an_element(tmp_path):
    text = to_csv_text(small_expansion(), basis="symmetric", digits=10)
    text = replace_once(text, '"sym[1,1]"', '"sym[0,2]"')
    path = tmp_path / "sym.csv"
    path.write_text(text)
    with pytest.raises(LowEnergyError, match="not an element of the symmetric basis") as info:
        read_csv(path)
    assert info.value.line == line_of(text, '"sym[0,2]"')


def test_user_label_with_code_is_refused(tmp_path):
    # labels are parsed by the safe polynomial parser, never evaluated as code
    text = to_csv_text(small_expansion(), basis=[("P", "s*t")], digits=10)
    text = replace_once(text, "P,contact,,,s*t,", 'P,contact,,,"__import__(1)",')
    path = tmp_path / "user.csv"
    path.write_text(text)
    with pytest.raises(LowEnergyError, match="not allowed") as info:
        read_csv(path)
    assert info.value.line == line_of(text, "__import__")


def test_blank_lines_and_crlf_are_tolerated(tmp_path):
    text = good_text().replace("\n", "\r\n")
    text = text.replace('"c[1,1]"', '\r\n"c[1,1]"')
    path = tmp_path / "crlf.csv"
    path.write_bytes(text.encode("utf-8"))
    assert read_csv(path).coefficients == small_expansion().coefficients


def test_numeric_cell_may_be_left_empty(tmp_path):
    text = replace_once(good_text(), "2.40411380632", "")
    path = tmp_path / "nonum.csv"
    path.write_text(text)
    assert read_csv(path).coefficients[(1, 1)] == {(0,): 2 * zeta(3)}
