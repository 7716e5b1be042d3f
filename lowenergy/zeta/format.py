"""Text forms of MZV elements: the plain input syntax and LaTeX."""

from __future__ import annotations

from fractions import Fraction

__all__ = ["element_to_text", "fraction_text", "fraction_latex", "term_text", "join_terms"]


def fraction_text(q: Fraction) -> str:
    return str(q.numerator) if q.denominator == 1 else f"{q.numerator}/{q.denominator}"


def fraction_latex(q: Fraction) -> str:
    if q.denominator == 1:
        return str(q.numerator)
    sign = "-" if q < 0 else ""
    return f"{sign}\\frac{{{abs(q.numerator)}}}{{{q.denominator}}}"


def term_text(coef: Fraction, body: str, style: str = "plain") -> str:
    """One signed term ``coef · body``; an empty body gives the number alone.

    ``style="plain"`` writes ``3/2*body``, ``"latex"`` writes ``\\frac{3}{2}\\, body``;
    coefficients ±1 are written as signs only.
    """
    number = fraction_latex if style == "latex" else fraction_text
    if not body:
        return number(coef)
    if coef == 1:
        return body
    if coef == -1:
        return "-" + body
    return f"{number(coef)}\\, {body}" if style == "latex" else f"{number(coef)}*{body}"


def join_terms(parts) -> str:
    """Join signed terms with `` + `` / `` - `` (``"0"`` for none)."""
    if not parts:
        return "0"
    text = parts[0]
    for p in parts[1:]:
        text += " - " + p[1:] if p.startswith("-") else " + " + p
    return text


def _factors(mono, style: str, pi: bool):
    """Factor strings of a monomial and the rational factor from ζ(2) -> π²/6."""
    counts = {}
    order = []
    for g in mono:
        if g not in counts:
            order.append(g)
        counts[g] = counts.get(g, 0) + 1
    factors = []
    scale = Fraction(1)
    for g in order:
        e = counts[g]
        if pi and g == (2,):
            scale /= 6 ** e
            if style == "latex":
                factors.append(f"\\pi^{{{2 * e}}}")
            else:
                factors.append(f"pi^{2 * e}")
            continue
        args = ",".join(str(n) for n in g)
        if style == "latex":
            base = f"\\zeta({args})"
            factors.append(base if e == 1 else f"{base}^{{{e}}}")
        else:
            base = f"zeta({args})"
            factors.append(base if e == 1 else f"{base}^{e}")
    return factors, scale


def element_to_text(x, style: str = "plain", pi: bool = False) -> str:
    """Text of an :class:`~lowenergy.zeta.element.MZV` (see ``MZV.to_text``)."""
    if style not in ("plain", "latex"):
        raise ValueError(f"unknown style {style!r}")
    parts = []
    for mono, c in x.terms():
        factors, scale = _factors(mono, style, pi)
        body = " ".join(factors) if style == "latex" else "*".join(factors)
        parts.append(term_text(c * scale, body, style))
    return join_terms(parts)
