"""Locating things in TOML text, for error messages.

:mod:`tomllib` reads the data of a TOML document but does not say where a
key, or a character of a string value, stands in the file.  The readers of
integrand and constraint files need exactly that to point their messages at
a line and column, so this module finds it out from the text:

* :func:`decode_toml_text` turns the raw input into text (and names the line
  of a UTF-8 error), :func:`toml_error` turns a ``TOMLDecodeError`` into a
  :class:`~lowenergy.errors.ParseError` with line and column, and
  :func:`toml_type` names the TOML type of a value;
* :func:`scan_lines` is a best-effort lexer that calls back at the start of
  every line outside strings, comments, arrays and inline tables, where a
  key (:data:`KEY_LINE`, :func:`key_name`) or a table header may stand;
* :func:`decode_string_at` decodes a string value (basic, literal and their
  multi-line forms, with escapes and line-ending backslashes) and keeps the
  offset of the source of every character; :func:`string_positions` turns
  those offsets into ``(line, column)`` with a :class:`LineIndex`, and
  :func:`position_at` picks the position of a column of the value.

All of it is used for messages only and never evaluates anything.

Examples
--------
>>> text = 'a = 1\\nb = "x\\\\ty"\\n'
>>> lines = {}
>>> def visit(offset, line):
...     key = KEY_LINE.match(text, offset)
...     if key is None:
...         return None
...     lines[key_name(key.group(1))] = (line, key.end())
...     return key.end()
>>> scan_lines(text, visit)
>>> lines
{'a': (1, 4), 'b': (2, 10)}
>>> string_positions(text, 10, "x\\ty")
[(2, 6), (2, 7), (2, 9), (2, 10)]
"""

from __future__ import annotations

import bisect
import os
import re
import sys
from typing import Callable, Dict, List, Optional, Sequence, Tuple, TypeVar

from .errors import InputError, ParseError

if sys.version_info >= (3, 11):  # pragma: no cover - depends on the interpreter
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

__all__ = [
    "KEY_PART",
    "KEY_LINE",
    "key_name",
    "scan_lines",
    "LineIndex",
    "decode_string_at",
    "string_positions",
    "position_at",
    "decode_toml_text",
    "toml_error",
    "toml_type",
    "read_file",
    "load_toml",
]

_BARE_KEY = r"[A-Za-z0-9_-]+"
_QUOTED_KEY = r'"(?:[^"\\\n]|\\.)*"|' + r"'[^'\n]*'"
#: Regular expression (source) of one part of a key: bare or quoted.
KEY_PART = f"(?:{_BARE_KEY}|{_QUOTED_KEY})"
#: A (possibly dotted) key and its ``=`` at the start of a line; group 1 is
#: the first part of the key, the match ends where the value begins.
KEY_LINE = re.compile(rf"[ \t]*({KEY_PART})(?:[ \t]*\.[ \t]*{KEY_PART})*[ \t]*=[ \t]*")


def key_name(part: str) -> str:
    """The name of a key part matched by :data:`KEY_PART` (quotes removed;
    escapes in quoted keys are kept as written)."""
    if part[:1] in ("'", '"'):
        return part[1:-1]
    return part


#: ``visit(offset, line)`` of :func:`scan_lines`: the offset to go on from,
#: or None to lex the line as usual.
LineVisitor = Callable[[int, int], Optional[int]]


def scan_lines(text: str, visit: LineVisitor) -> None:
    """Lex ``text`` as TOML and call ``visit`` where keys and headers may stand.

    ``visit(offset, line)`` is called at the start of every line (1-based
    ``line``) that does not begin inside a string, an array or an inline
    table.  It returns the offset after what it recognised there (a key and
    its ``=``, a table header, ...), from where lexing goes on, or None.
    Strings (all four kinds), comments and nested brackets are skipped, so
    that text inside them is never taken for a key.  A best-effort lexer,
    meant for text that :mod:`tomllib` has accepted.
    """
    n = len(text)
    i = 0
    line = 1
    depth = 0
    line_start = True
    while i < n:
        if line_start and depth == 0:
            line_start = False
            resume = visit(i, line)
            if resume is not None:
                i = resume
                continue
        ch = text[i]
        if ch == "\n":
            line += 1
            line_start = True
            i += 1
        elif ch == "#":
            while i < n and text[i] != "\n":
                i += 1
        elif text.startswith('"""', i) or text.startswith("'''", i):
            quote = text[i]
            close = quote * 3
            i += 3
            while i < n and not text.startswith(close, i):
                if text[i] == "\\" and quote == '"':
                    i += 1
                    if i < n and text[i] == "\n":
                        line += 1
                elif text[i] == "\n":
                    line += 1
                i += 1
            i += 3
            extra = 0
            while i < n and text[i] == quote and extra < 2:
                i += 1
                extra += 1
        elif ch in "\"'":
            i += 1
            while i < n and text[i] != ch and text[i] != "\n":
                if text[i] == "\\" and ch == '"' and i + 1 < n and text[i + 1] != "\n":
                    i += 1
                i += 1
            if i < n and text[i] == ch:
                i += 1
        elif ch in "[{":
            depth += 1
            i += 1
        elif ch in "]}":
            depth = max(0, depth - 1)
            i += 1
        else:
            i += 1


class LineIndex:
    """Line and column of offsets in a text (both 1-based)."""

    def __init__(self, text: str) -> None:
        self.starts: List[int] = [0] + [k + 1 for k, ch in enumerate(text) if ch == "\n"]

    def spot(self, offset: int) -> Tuple[int, int]:
        """``(line, column)`` of the character at ``offset``."""
        row = bisect.bisect_right(self.starts, offset) - 1
        return row + 1, offset - self.starts[row] + 1


_ESCAPES: Dict[str, str] = {"b": "\b", "t": "\t", "n": "\n", "f": "\f", "r": "\r", '"': '"', "\\": "\\"}
_HEX = frozenset("0123456789abcdefABCDEF")


def _escape(text: str, i: int) -> Optional[Tuple[str, int]]:
    """The character of the escape sequence at ``text[i] == "\\\\"`` and the
    offset after it, or None for an escape this module does not know."""
    letter = text[i + 1 : i + 2]
    if letter in _ESCAPES:
        return _ESCAPES[letter], i + 2
    if letter in ("u", "U"):
        size = 4 if letter == "u" else 8
        digits = text[i + 2 : i + 2 + size]
        if len(digits) == size and all(c in _HEX for c in digits):
            code = int(digits, 16)
            if code <= 0x10FFFF:
                return chr(code), i + 2 + size
    return None


def _take(text: str, i: int, basic: bool, out: List[str], where: List[int]) -> Optional[int]:
    """Decode one character (or escape sequence, in a basic string) at ``i``
    into ``out`` and its offset into ``where``; the offset after it, or None
    for an unknown escape."""
    if basic and text[i] == "\\":
        decoded = _escape(text, i)
        if decoded is None:
            return None
        out.append(decoded[0])
        where.append(i)
        return decoded[1]
    out.append(text[i])
    where.append(i)
    return i + 1


def decode_string_at(text: str, start: int) -> Optional[Tuple[str, List[int], int]]:
    """Decode the TOML string that starts at offset ``start`` of ``text``.

    Returns ``(value, offsets, end)``: the value, the offset in ``text`` of
    the source of every character of the value (the backslash of an
    escape), and the offset of the closing quote; None if ``start`` does
    not hold a string this function understands.
    """
    n = len(text)
    out: List[str] = []
    where: List[int] = []
    step: Optional[int]
    if text.startswith('"""', start) or text.startswith("'''", start):
        quote = text[start]
        basic = quote == '"'
        i = start + 3
        if text.startswith("\r\n", i):
            i += 2
        elif text.startswith("\n", i):
            i += 1
        while i < n:
            if text.startswith(quote * 3, i):
                extra = 0
                while extra < 2 and text.startswith(quote * 3, i + 1):
                    out.append(quote)
                    where.append(i)
                    i += 1
                    extra += 1
                return "".join(out), where, i
            ch = text[i]
            if ch == "\\" and basic:
                # a backslash at the end of a line trims the line break and
                # the blanks after it
                j = i + 1
                while j < n and text[j] in " \t":
                    j += 1
                if j < n and text[j] in "\r\n":
                    while j < n and text[j] in " \t\r\n":
                        j += 1
                    i = j
                    continue
            elif ch == "\r" and text.startswith("\r\n", i):
                out.append("\n")
                where.append(i)
                i += 2
                continue
            step = _take(text, i, basic, out, where)
            if step is None:
                return None
            i = step
        return None
    if start < n and text[start] in "\"'":
        quote = text[start]
        i = start + 1
        while i < n and text[i] != "\n":
            if text[i] == quote:
                return "".join(out), where, i
            step = _take(text, i, quote == '"', out, where)
            if step is None:
                return None
            i = step
    return None


def string_positions(
    text: str, offset: Optional[int], value: str, lines: Optional[LineIndex] = None
) -> Optional[List[Tuple[int, int]]]:
    """``(line, column)`` in ``text`` of every character of the string value at ``offset``.

    ``value`` is the value as :mod:`tomllib` read it; None when the string
    at ``offset`` cannot be located or decodes to something else.  The list
    has one extra entry for the end of the string (the closing quote).
    ``lines`` is a :class:`LineIndex` of ``text``, if one is at hand.
    """
    if offset is None:
        return None
    decoded = decode_string_at(text, offset)
    if decoded is None or decoded[0] != value:
        return None
    index = lines if lines is not None else LineIndex(text)
    return [index.spot(off) for off in decoded[1]] + [index.spot(decoded[2])]


_P = TypeVar("_P")


def position_at(positions: Sequence[_P], column: Optional[int]) -> _P:
    """The entry of ``positions`` (one per character of a value, from
    :func:`string_positions`) for a 1-based ``column`` of the value, clamped
    to the value; ``positions`` must not be empty."""
    return positions[min(max(column or 1, 1), len(positions)) - 1]


def decode_toml_text(raw: object, source: str, *, what: str, max_size: int, size_hint: str) -> str:
    """The text of a TOML document given as ``str`` or UTF-8 ``bytes``.

    A leading byte order mark is dropped.  Raises
    :class:`~lowenergy.errors.InputError` for other types (``"<what> text
    must be a string"``) and for input larger than ``max_size`` bytes or
    characters (with ``size_hint``), and :class:`~lowenergy.errors.ParseError`
    naming the line of invalid UTF-8.
    """
    if isinstance(raw, (bytes, bytearray)):
        data = bytes(raw)
        if len(data) > max_size:
            raise InputError(f"file larger than {max_size} bytes", source=source, hint=size_hint)
        try:
            return data.decode("utf-8-sig")
        except UnicodeDecodeError as exc:
            line = data[: exc.start].count(b"\n") + 1
            raise ParseError(
                "the file is not valid UTF-8", source=source, line=line, hint="save the file as UTF-8"
            ) from None
    if not isinstance(raw, str):
        raise InputError(f"{what} text must be a string, not {type(raw).__name__}", source=source)
    if len(raw) > max_size:
        raise InputError(f"text longer than {max_size} characters", source=source, hint=size_hint)
    return raw[1:] if raw.startswith("\ufeff") else raw


_AT_POSITION = re.compile(r"\s*\(at line (\d+), column (\d+)\)\s*$")
_AT_END = re.compile(r"\s*\(at end of document\)\s*$")


def toml_error(exc: Exception, text: str, source: str, hint: str) -> ParseError:
    """A :class:`~lowenergy.errors.ParseError` ``"malformed TOML: ..."`` for
    a ``TOMLDecodeError`` raised on ``text``, with its line and column."""
    message = str(exc)
    line = getattr(exc, "lineno", None)
    column = getattr(exc, "colno", None)
    match = _AT_POSITION.search(message)
    if match:
        line = line or int(match.group(1))
        column = column or int(match.group(2))
        message = message[: match.start()]
    else:
        match = _AT_END.search(message)
        if match:
            message = message[: match.start()] + " at the end of the document"
            line = line or max(1, text.count("\n") + (0 if text.endswith("\n") else 1))
    message = getattr(exc, "msg", None) or message
    return ParseError(f"malformed TOML: {message}", source=source, line=line, column=column, hint=hint)


_TYPE_NAMES: Tuple[Tuple[type, str], ...] = (
    (bool, "a boolean"),  # before int: bool is a subclass of int
    (int, "an integer"),
    (float, "a number"),
    (str, "a string"),
    (list, "a list"),
    (dict, "a table"),
)


def toml_type(value: object) -> str:
    """The TOML type of a value read by :mod:`tomllib`, with an article."""
    for kind, name in _TYPE_NAMES:
        if isinstance(value, kind):
            return name
    return "a date or time"


def read_file(path, what: str, max_size: int) -> Tuple[str, bytes]:
    """``(source name, raw bytes)`` of a TOML file, at most ``max_size + 1`` bytes.

    Unreadable files raise :class:`~lowenergy.errors.InputError` naming the
    file; ``what`` says what kind of file was expected ("an integrand file").
    """
    source = os.fspath(path) if isinstance(path, (str, bytes, os.PathLike)) else str(path)
    if isinstance(source, bytes):
        source = os.fsdecode(source)
    try:
        with open(path, "rb") as handle:
            raw = handle.read(max_size + 1)
    except IsADirectoryError:
        raise InputError(f"is a directory, not {what}", source=source) from None
    except FileNotFoundError:
        raise InputError("no such file", source=source, hint="check the file name") from None
    except (OSError, ValueError, TypeError) as exc:
        raise InputError(f"cannot read the file: {exc}", source=source) from None
    return source, raw


def load_toml(text: str, source: str, hint: str) -> dict:
    """``tomllib.loads`` with the package's errors (``hint`` for malformed TOML)."""
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise toml_error(exc, text, source, hint) from None
    except RecursionError:
        raise ParseError("TOML nested too deeply", source=source, hint="flatten the arrays") from None
    except ValueError as exc:
        # Python's integer-string limit (an integer of 5000 digits) is a
        # ValueError of int() inside tomllib, not a TOMLDecodeError
        if "digits" in str(exc):
            raise ParseError(
                "malformed TOML: an integer with too many digits",
                source=source,
                hint="integers in these files are small; write long numbers as strings",
            ) from None
        raise ParseError(f"malformed TOML: {exc}", source=source, hint=hint) from None
