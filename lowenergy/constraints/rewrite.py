"""Put solved parameter values into an integrand's TOML text, keeping its layout.

Used by :func:`lowenergy.constraints.fix.write_fixed_integrand`.  The TOML
document is edited in place with tomlkit, so comments, key order, blank lines
and a multi-line ``integrand`` string stay as they were; only the values of
``integrand``, ``parameters`` and ``notes`` change.

Inside the expression each solved parameter is replaced token by token (the
tokens of the expression grammar, :func:`lowenergy.parse.tokenize`) and
written tidily: ``a1*s*t`` with ``a1 = 1`` becomes ``s*t``, ``+ a2*X`` with
``a2 = -1/2`` becomes ``- 1/2*X``, a term whose factor is 0 is dropped, and
a value is parenthesized only where the grammar needs it (after ``/`` or
``^``, before ``^``, after ``*`` when negative, or an expression of several
terms).  The caller reads the result back and compares it exactly with the
substituted integrand.

>>> from fractions import Fraction as F
>>> tidy_substitute("1 + a*s*t + b*s^2 - c*t", {"a": (F(1), {}), "b": (F(-1, 2), {}), "c": (F(0), {})})
'1 + s*t - 1/2*s^2'
>>> tidy_substitute("s^a + t/b", {"a": (F(2), {}), "b": (F(3, 4), {})})
's^(2) + t/(3/4)'
"""

from __future__ import annotations

from fractions import Fraction
from typing import Dict, List, Optional, Tuple

from ..parse import tokenize

__all__ = ["tidy_substitute", "rewrite_toml"]

Affine = Tuple[Fraction, Dict[str, Fraction]]

def _tokens(text: str) -> List[List[str]]:
    """``[[kind, text], ...]`` with kinds num, name, space, op, covering ``text``.

    The tokens are those of the expression grammar (:func:`lowenergy.parse.tokenize`);
    the blanks and line breaks between them become ``space`` entries, so that
    joining the texts gives ``text`` back.
    """
    flat = text.replace("\r", " ").replace("\n", " ")  # same length: columns stay those of text
    out: List[List[str]] = []
    pos = 0
    for token in tokenize(flat):
        start = token.col - 1
        if start > pos:
            out.append(["space", text[pos:start]])
        end = start + len(token.text)
        out.append([token.kind if token.kind in ("num", "name") else "op", text[start:end]])
        pos = end
    if pos < len(text):
        out.append(["space", text[pos:]])
    return out


def _fraction(q: Fraction) -> str:
    return str(q.numerator) if q.denominator == 1 else f"{q.numerator}/{q.denominator}"


def _affine_text(aff: Affine) -> str:
    const, deps = aff
    parts: List[str] = []
    if const or not deps:
        parts.append(_fraction(const))
    for name, q in deps.items():
        term = name if abs(q) == 1 else f"{_fraction(abs(q))}*{name}"
        if not parts:
            parts.append(term if q > 0 else f"-{term}")
        else:
            parts.append(("- " if q < 0 else "+ ") + term)
    return " ".join(parts)


class _Tokens:
    def __init__(self, text: str) -> None:
        self.t = _tokens(text)

    def sig(self, i: int, step: int) -> Optional[int]:
        """Index of the next non-space token from ``i`` in direction ``step``."""
        i += step
        while 0 <= i < len(self.t):
            if self.t[i][0] != "space" and self.t[i][1] != "":
                return i
            i += step
        return None

    def text(self, i: Optional[int]) -> Optional[str]:
        return None if i is None else self.t[i][1]

    def clear(self, a: int, b: int) -> None:
        """Blank tokens a..b inclusive (and the spaces between them)."""
        for k in range(a, b + 1):
            self.t[k][1] = ""

    def is_binary_sign(self, i: int) -> bool:
        """A ``+``/``-`` between two terms (not a sign after an operator or a bracket)."""
        if self.t[i][1] not in ("+", "-"):
            return False
        p = self.sig(i, -1)
        return p is not None and self.t[p][1] not in ("*", "/", "^", "(", ",", ";", "+", "-")

    def term_span(self, i: int) -> Tuple[int, int]:
        """First and last token index of the term (product) containing token i."""
        return self._term_edge(i, -1), self._term_edge(i, 1)

    def _term_edge(self, i: int, step: int) -> int:
        """The last significant token of the term containing token i, scanning
        in direction ``step`` (±1) up to a sign, comma or unbalanced bracket."""
        inward, outward = ("(", ")") if step > 0 else (")", "(")
        depth = 0
        edge = i
        k = i + step
        while 0 <= k < len(self.t):
            tok = self.t[k][1]
            if tok == inward:
                depth += 1
            elif tok == outward:
                if depth == 0:
                    break
                depth -= 1
            elif depth == 0 and (tok in (",", ";") or self.is_binary_sign(k)):
                break
            if self.t[k][0] != "space" and tok:
                edge = k
            k += step
        return edge

    def drop_term(self, i: int) -> None:
        """Remove the term containing token i (with its sign); ``0`` if it is alone."""
        a, b = self.term_span(i)
        before = self.sig(a, -1)
        after = self.sig(b, 1)
        if before is not None and self.t[before][1] in ("+", "-") and self.is_binary_sign(before):
            self.clear(before, b)
        elif after is not None and self.t[after][1] == "+" and self.is_binary_sign(after):
            end = after
            while end + 1 < len(self.t) and self.t[end + 1][0] == "space":
                end += 1
            self.clear(a, end)
        elif after is not None and self.t[after][1] == "-" and self.is_binary_sign(after):
            self.clear(a, after - 1)
        else:
            self.clear(a, b)
            self.t[a] = ["num", "0"]

    def substitute(self, i: int, aff: Affine) -> None:
        const, deps = aff
        p, n = self.sig(i, -1), self.sig(i, 1)
        prev, nxt = self.text(p), self.text(n)
        if nxt == "(":  # a call of a function with that name: not the parameter
            return
        simple = not deps or (const == 0 and len(deps) == 1)
        if not simple or prev in ("/", "^") or nxt == "^":
            self.t[i][1] = f"({_affine_text(aff)})"
            return
        if deps:
            ((name, q),) = deps.items()
            body = name
        else:
            q, body = const, ""
        if q == 0:
            self.drop_term(i)
            return
        magnitude = abs(q)
        if body:
            word = body if magnitude == 1 else f"{_fraction(magnitude)}*{body}"
        else:
            word = _fraction(magnitude)
        if q < 0:
            if prev in ("+", "-") and self.is_binary_sign(p):
                self.t[p][1] = "+" if prev == "-" else "-"
            elif prev in (None, "(", ",", ";"):
                word = "-" + word
            else:
                self.t[i][1] = f"({_affine_text(aff)})"
                return
        if word == "1" and nxt == "*":
            self.clear(i, n)
        elif word == "1" and prev == "*":
            self.clear(p, i)
        elif word == "-1" and nxt == "*":
            self.t[i][1] = "-"
            self.clear(i + 1, n)
        else:
            self.t[i][1] = word

    def result(self) -> str:
        return "".join(tok for _kind, tok in self.t)


def _tidy_spaces(text: str) -> str:
    """Drop lines left empty and runs of blanks inside a line (indentation is kept)."""
    lines = []
    for line in text.split("\n"):
        if not line.strip():
            if lines and lines[-1].strip() == "":
                continue
            lines.append(line.strip())
            continue
        indent = len(line) - len(line.lstrip(" \t"))
        body = " ".join(line[indent:].split())
        body = body.replace("( ", "(").replace(" )", ")")
        lines.append(line[:indent] + body)
    out = "\n".join(lines)
    return out


def tidy_substitute(expression: str, mapping: Dict[str, Affine]) -> str:
    """Replace the parameters of ``mapping`` in ``expression`` (see the module docstring)."""
    toks = _Tokens(expression)
    for i in range(len(toks.t)):
        kind, tok = toks.t[i]
        if kind == "name" and tok in mapping:
            toks.substitute(i, mapping[tok])
    text = toks.result()
    if "\n" in expression:
        # keep a multi-line expression's lines; drop lines that became empty
        kept = [line.rstrip() for line in text.split("\n")]
        first_blank = expression.startswith("\n")
        kept = [line for k, line in enumerate(kept) if line.strip() or (k == 0 and first_blank)]
        text = "\n".join(_tidy_spaces(line) for line in kept)
        if expression.endswith("\n"):
            text += "\n"
        return text
    return _tidy_spaces(text)


def rewrite_toml(text: str, mapping: Dict[str, Affine], fixed_line: str) -> str:
    """The TOML ``text`` with the parameters substituted (tomlkit, layout kept)."""
    import tomlkit
    from tomlkit.items import String

    doc = tomlkit.parse(text)
    old = doc["integrand"]
    expression = str(old)
    raw = old.as_string() if isinstance(old, String) else ""
    multiline = isinstance(old, String) and old.type.is_multiline()
    literal = isinstance(old, String) and old.type.is_literal()
    new_expr = tidy_substitute(expression, mapping)
    try:
        item = tomlkit.string(new_expr, literal=literal, multiline=multiline)
    except Exception:  # a literal string cannot hold every character: fall back to a basic one
        item = tomlkit.string(new_expr, multiline=multiline)
    written = item.as_string()
    if multiline and raw[3:4] == "\n" and written[3:4] != "\n":
        # keep the line break after the opening quotes (TOML drops it from the value)
        item = tomlkit.parse("x = " + written[:3] + "\n" + written[3:])["x"]
    item.trivia.comment = old.trivia.comment
    item.trivia.comment_ws = old.trivia.comment_ws
    item.trivia.trail = old.trivia.trail
    doc["integrand"] = item
    if "parameters" in doc:
        kept = [str(p) for p in doc["parameters"] if str(p) not in mapping]
        array = tomlkit.array()
        array.extend(kept)
        old_params = doc["parameters"]
        array.trivia.comment = old_params.trivia.comment
        array.trivia.comment_ws = old_params.trivia.comment_ws
        doc["parameters"] = array
    if fixed_line:
        if "notes" in doc:
            notes = doc["notes"]
            value = f"{notes}\n{fixed_line}" if str(notes) else fixed_line
            ml = isinstance(notes, String) and notes.type.is_multiline()
            item = tomlkit.string(value, multiline=ml)
            item.trivia.comment = notes.trivia.comment
            doc["notes"] = item
        else:
            doc.add("notes", fixed_line)
    return tomlkit.dumps(doc)
