"""Tests of lowenergy.tomlpos: locating keys and string characters in TOML text."""

import datetime
import sys

import pytest

from lowenergy import tomlpos
from lowenergy.errors import InputError, ParseError

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib


def key_lines(text):
    found = {}

    def visit(offset, line):
        key = tomlpos.KEY_LINE.match(text, offset)
        if key is None:
            return None
        found.setdefault(tomlpos.key_name(key.group(1)), (line, key.end()))
        return key.end()

    tomlpos.scan_lines(text, visit)
    return found


def test_keys_inside_strings_comments_and_arrays_are_skipped():
    text = (
        'a = """\nb = 1\n"""\n'
        "# c = 2\n"
        "d = [\n  'e = 3',\n]\n"
        '"quoted key" = 4\n'
        "'lit' . x = 5\n"
    )
    tomllib.loads(text)
    def value_at(line_start):
        return text.index(line_start) + len(line_start)

    assert key_lines(text) == {
        "a": (1, value_at("a = ")),
        "d": (5, value_at("d = ")),
        "quoted key": (8, value_at('"quoted key" = ')),
        "lit": (9, value_at("'lit' . x = ")),
    }


def test_visit_may_skip_to_the_end_of_the_text():
    calls = []

    def visit(offset, line):
        calls.append(line)
        return len("[t]\na = 1")

    tomlpos.scan_lines("[t]\na = 1", visit)
    assert calls == [1]


@pytest.mark.parametrize(
    "text, value, spots",
    [
        ('k = "ab"', "ab", [(1, 6), (1, 7), (1, 8)]),
        ("k = 'a\\b'", "a\\b", [(1, 6), (1, 7), (1, 8), (1, 9)]),
        ('k = "a\\tb\\u00e9"', "a\tb\u00e9", [(1, 6), (1, 7), (1, 9), (1, 10), (1, 16)]),
        ('k = """\nx\n y"""', "x\n y", [(2, 1), (2, 2), (3, 1), (3, 2), (3, 3)]),
        ('k = """a \\\n   b"""', "a b", [(1, 8), (1, 9), (2, 4), (2, 5)]),
        ('k = """a\r\nb"""', "a\nb", [(1, 8), (1, 9), (2, 1), (2, 2)]),
        ("k = '''\nq''''", "q'", [(2, 1), (2, 2), (2, 3)]),
    ],
)
def test_string_positions(text, value, spots):
    assert tomllib.loads(text)["k"] == value
    assert tomlpos.string_positions(text, 4, value) == spots
    assert tomlpos.string_positions(text, 4, value, tomlpos.LineIndex(text)) == spots


def test_string_positions_unknown():
    assert tomlpos.string_positions('k = "ab"', None, "ab") is None
    assert tomlpos.string_positions('k = "ab"', 4, "other") is None
    assert tomlpos.string_positions("k = 12", 4, "12") is None
    assert tomlpos.decode_string_at('"\\q"', 0) is None
    assert tomlpos.decode_string_at('"ab"', 0) == ("ab", [1, 2], 3)


def test_position_at_clamps():
    spots = [(1, 5), (1, 6), (2, 1)]
    assert tomlpos.position_at(spots, None) == (1, 5)
    assert tomlpos.position_at(spots, 0) == (1, 5)
    assert tomlpos.position_at(spots, 2) == (1, 6)
    assert tomlpos.position_at(spots, 99) == (2, 1)


def test_line_index():
    index = tomlpos.LineIndex("ab\ncd\n")
    assert [index.spot(k) for k in range(6)] == [(1, 1), (1, 2), (1, 3), (2, 1), (2, 2), (2, 3)]


def test_decode_toml_text():
    kw = dict(what="thing", max_size=10, size_hint="keep it short")
    assert tomlpos.decode_toml_text(b"\xef\xbb\xbfa = 1", "s", **kw) == "a = 1"
    assert tomlpos.decode_toml_text("\ufeffa = 1", "s", **kw) == "a = 1"
    with pytest.raises(ParseError) as err:
        tomlpos.decode_toml_text(b"a\n\xff", "s", **kw)
    assert err.value.line == 2
    with pytest.raises(InputError, match="thing text must be a string, not int"):
        tomlpos.decode_toml_text(3, "s", **kw)
    with pytest.raises(InputError, match="file larger than 10 bytes"):
        tomlpos.decode_toml_text(b"x" * 11, "s", **kw)
    with pytest.raises(InputError, match="text longer than 10 characters") as err:
        tomlpos.decode_toml_text("x" * 11, "s", **kw)
    assert err.value.hint == "keep it short"


@pytest.mark.parametrize("text, line", [("a = 1\nb = ", 2), ("a = [1", 1), ("a = 1\nb = [\n", 2)])
def test_toml_error(text, line):
    with pytest.raises(tomllib.TOMLDecodeError) as exc:
        tomllib.loads(text)
    err = tomlpos.toml_error(exc.value, text, "f.toml", "a hint")
    assert err.message.startswith("malformed TOML: ")
    assert "(at " not in err.message
    assert err.line == line and err.hint == "a hint" and err.source == "f.toml"


def test_toml_type():
    values = [True, 1, 1.5, "s", [], {}, datetime.date(2020, 1, 1)]
    assert [tomlpos.toml_type(v) for v in values] == [
        "a boolean",
        "an integer",
        "a number",
        "a string",
        "a list",
        "a table",
        "a date or time",
    ]
