"""Tests of lowenergy.parse: the expression grammar shared by all front ends."""

from __future__ import annotations

import sys
from fractions import Fraction

import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from lowenergy.errors import LowEnergyError, ParseError
from lowenergy.parse import (
    MAX_DEPTH,
    MAX_DIGITS,
    MAX_INPUT_LENGTH,
    Add,
    Call,
    Div,
    Mul,
    Neg,
    Node,
    Num,
    Pow,
    Sub,
    Sum,
    Sym,
    equal_ignoring_columns,
    parse_expression,
    to_text,
    walk,
)
from lowenergy.parse import children  # to measure tree depth

# short constructors for the expected trees
N = Num
S = Sym
x, y, s, t = S("x"), S("y"), S("s"), S("t")


def C(name, *args, letters=None):
    return Call(name, tuple(args), None if letters is None else tuple(letters))


def F(num, den=1):
    return Num(Fraction(num, den))


# --------------------------------------------------------------------------
# valid input: text -> expected tree, expected canonical text
# --------------------------------------------------------------------------

VALID = [
    ("12", N(12), "12"),
    ("0.25", F(1, 4), "0.25"),
    ("007.50", F(15, 2), "7.5"),
    ("x", x, "x"),
    ("_a1", S("_a1"), "_a1"),
    ("-zeta(3,5)^2/3", Div(Neg(Pow(C("zeta", N(3), N(5)), N(2))), N(3)), "-zeta(3, 5)^2/3"),
    ("2*pi^2", Mul(N(2), Pow(S("pi"), N(2))), "2*pi^2"),
    (
        "G(0,1,1; x)*s^2",
        Mul(C("G", x, letters=[N(0), N(1), N(1)]), Pow(s, N(2))),
        "G(0, 1, 1; x)*s^2",
    ),
    ("(1-x)^(-t-1)", Pow(Sub(N(1), x), Sub(Neg(t), N(1))), "(1 - x)^(-t - 1)"),
    ("x^(-s-1+2)", Pow(x, Add(Sub(Neg(s), N(1)), N(2))), "x^(-s - 1 + 2)"),
    ("Li(2, 1-x)", C("Li", N(2), Sub(N(1), x)), "Li(2, 1 - x)"),
    ("1/2*S*T", Mul(Mul(Div(N(1), N(2)), S("S")), S("T")), "1/2*S*T"),
    ("log(1-x)^2", Pow(C("log", Sub(N(1), x)), N(2)), "log(1 - x)^2"),
    ("0.25*s", Mul(F(1, 4), s), "0.25*s"),
    ("-x^2", Neg(Pow(x, N(2))), "-x^2"),
    ("(-x)^2", Pow(Neg(x), N(2)), "(-x)^2"),
    ("a^b^c", Pow(S("a"), Pow(S("b"), S("c"))), "a^(b^c)"),
    ("(a^b)^c", Pow(Pow(S("a"), S("b")), S("c")), "(a^b)^c"),
    ("2^-3", Pow(N(2), Neg(N(3))), "2^(-3)"),
    ("a-b-c", Sub(Sub(S("a"), S("b")), S("c")), "a - b - c"),
    ("a-(b-c)", Sub(S("a"), Sub(S("b"), S("c"))), "a - (b - c)"),
    ("a/b/c", Div(Div(S("a"), S("b")), S("c")), "a/b/c"),
    ("a/(b*c)", Div(S("a"), Mul(S("b"), S("c"))), "a/(b*c)"),
    ("-a*b", Mul(Neg(S("a")), S("b")), "-a*b"),
    ("-(a*b)", Neg(Mul(S("a"), S("b"))), "-(a*b)"),
    ("--x", Neg(Neg(x)), "-(-x)"),
    ("+x", x, "x"),
    ("+-+x", Neg(x), "-x"),
    ("1 - -x", Sub(N(1), Neg(x)), "1 - (-x)"),
    ("a - -b*c", Sub(S("a"), Mul(Neg(S("b")), S("c"))), "a - (-b*c)"),
    ("1+2*3^4", Add(N(1), Mul(N(2), Pow(N(3), N(4)))), "1 + 2*3^4"),
    ("((x))", x, "x"),
    ("f()", C("f"), "f()"),
    ("f (x)", C("f", x), "f(x)"),
    ("G(; x)", C("G", x, letters=[]), "G(; x)"),
    ("G(;x)", C("G", x, letters=[]), "G(; x)"),
    ("G(0,1;x,y)", C("G", x, y, letters=[N(0), N(1)]), "G(0, 1; x, y)"),
    ("f(g(h(1)))", C("f", C("g", C("h", N(1)))), "f(g(h(1)))"),
    ("zeta(3)*zeta(5)", Mul(C("zeta", N(3)), C("zeta", N(5))), "zeta(3)*zeta(5)"),
    ("\tx  +\t1 ", Add(x, N(1)), "x + 1"),
    ("x + 1\n", Add(x, N(1)), "x + 1"),
    ("x + 1\r\n  ", Add(x, N(1)), "x + 1"),
    ("s^2*t - 0.5*s*t^2", Sub(Mul(Pow(s, N(2)), t), Mul(Mul(F(1, 2), s), Pow(t, N(2)))), "s^2*t - 0.5*s*t^2"),
]


@pytest.mark.parametrize("text, tree, canonical", VALID, ids=[v[0] for v in VALID])
def test_valid_expressions(text, tree, canonical):
    parsed = parse_expression(text)
    assert parsed == tree
    assert to_text(parsed) == canonical
    assert str(parsed) == canonical
    assert parse_expression(canonical) == tree


def test_valid_table_is_large_enough():
    assert len(VALID) >= 25


def test_decimal_is_exact_fraction():
    value = parse_expression("0.1").value
    assert isinstance(value, Fraction) and value == Fraction(1, 10)
    assert parse_expression("3").value == 3 and isinstance(parse_expression("3").value, Fraction)


def test_columns_are_start_columns():
    tree = parse_expression("(a+b)*c")
    assert tree.col == 1  # the Mul starts at the '('
    assert tree.left.col == 2  # the Add inside keeps its own start
    assert tree.right.col == 7
    tree = parse_expression("  -G(0; x)^2")
    assert tree.col == 3 and isinstance(tree, Neg)
    assert tree.operand.col == 4 and tree.operand.base.col == 4
    assert tree.operand.base.letters[0].col == 6
    assert tree.operand.base.args[0].col == 9
    assert tree.operand.exponent.col == 12
    tree = parse_expression("1 + 2*x")
    assert (tree.col, tree.right.col, tree.right.right.col) == (1, 5, 7)


def test_columns_do_not_take_part_in_equality_or_hash():
    a, b = parse_expression("x+1"), parse_expression("   x   +   1")
    assert a.col == 1 and b.col == 4
    assert a == b and hash(a) == hash(b)
    assert equal_ignoring_columns(a, b)
    assert a != parse_expression("1+x")
    assert not equal_ignoring_columns(a, parse_expression("x-1"))
    assert len({a, b, parse_expression("x+2")}) == 2


def test_structural_inequalities():
    assert C("f", x) != C("f", x, letters=[])
    assert C("f", x, letters=[N(0)]) != C("f", x, letters=[N(1)])
    assert C("f", x) != C("g", x)
    assert C("f", x) != C("f", x, x)
    assert Add(x, y) != Sub(x, y)
    assert N(1) != S("x")
    assert N(1) != 1  # not equal to plain numbers
    assert F(1, 2) == Num(Fraction(2, 4))


def test_walk_order():
    tree = parse_expression("f(a; b) + 2*c^d")
    assert [to_text(n) for n in walk(tree)] == [
        "f(a; b) + 2*c^d",
        "f(a; b)",
        "a",
        "b",
        "2*c^d",
        "2",
        "c^d",
        "c",
        "d",
    ]


def test_to_text_of_non_decimal_number_keeps_value():
    # 1/3 has no literal: it is printed as a division of the same value.
    text = to_text(Mul(Num(Fraction(1, 3)), x))
    assert text == "(1/3)*x"
    assert parse_expression(text) == Mul(Div(N(1), N(3)), x)
    assert to_text(Num(Fraction(3, 40))) == "0.075"
    assert to_text(Num(Fraction(1, 1024))) == "0.0009765625"


def test_node_constructors_validate():
    with pytest.raises(ValueError):
        Num(-1)
    with pytest.raises(TypeError):
        Num(0.5)
    with pytest.raises(TypeError):
        Num(True)
    with pytest.raises(ValueError):
        Sym("2x")
    with pytest.raises(ValueError):
        Call("f g", ())
    with pytest.raises(ValueError):
        Call("G", (), letters=(N(0),))
    with pytest.raises(TypeError):
        Add(x, 1)
    with pytest.raises(TypeError):
        Call("f", (1,))
    assert Num(3).value == Fraction(3)
    assert Call("f", [x]).args == (x,)  # lists are frozen into tuples


def test_nodes_are_frozen():
    node = parse_expression("x")
    with pytest.raises(AttributeError):
        node.name = "y"


# --------------------------------------------------------------------------
# malformed input: text, expected column, substring of the message
# --------------------------------------------------------------------------

INVALID = [
    ("2x", 2, "missing operator", "write 2*x"),
    ("2 zeta(3)", 3, "missing operator", "write 2*zeta(...)"),
    ("2(x+1)", 2, "missing operator", "write 2*(...)"),
    ("(a)(b)", 4, "missing operator", "implicit multiplication"),
    ("x y", 3, "missing operator", "write x*y"),
    ("f(1 2)", 5, "missing operator", "write 1*2"),
    ("zeta(3,", 8, "expected an expression after ','", "incomplete"),
    ("1 +", 4, "expected an expression after '+'", "incomplete"),
    ("1 +   ", 4, "found end of input", None),
    ("((1)", 5, "unbalanced parenthesis: '(' at column 1 is never closed", "add ')'"),
    ("f(1, 2", 7, "'(' at column 2 is never closed", None),
    ("1)", 2, "unexpected ')'", "no matching '('"),
    ("f(1))", 5, "unexpected ')'", None),
    ("3 ** 2", 3, "'**' is not an operator", "use ^"),
    ("a $ b", 3, "unknown character '$'", "allowed are"),
    ("G(0,1;)", 7, "expected an expression after ';'", "G(0,1; x)"),
    ("f(;)", 4, "expected an expression after ';'", None),
    ("f(a;b;c)", 6, "only one ';'", None),
    ("f(1,)", 5, "expected an expression after ','", "trailing ','"),
    ("f(,1)", 3, "expected an expression after '('", "missing before this ','"),
    (",", 1, "unexpected ','", None),
    ("(,", 2, "expected an expression after '(', found ','", None),
    ("x,y", 2, "unexpected ','", None),
    ("x;", 2, "unexpected ';'", None),
    ("(1,2)", 3, "unexpected ',' inside parentheses", None),
    ("", 1, "empty expression", None),
    ("   ", 1, "empty expression", None),
    ("\n", 1, "empty expression", None),
    ("()", 2, "expected an expression after '('", "must contain"),
    ("1e5", 1, "exponent notation", "write 1*10^5"),
    ("2.5E-3", 1, "exponent notation", "write 2.5*10^(-3)"),
    ("x + 1e+7", 5, "exponent notation", "write 1*10^7"),
    (".5", 1, "malformed number '.5'", "write 0.5"),
    ("1.", 1, "malformed number '1.'", "write 1 or 1.0"),
    ("1.2.3", 1, "malformed number '1.2.3'", None),
    ("1..2", 1, "malformed number '1..2'", "at most one '.'"),
    ("(1+)", 4, "expected an expression after '+', found ')'", "operand is missing"),
    ("f(a,;x)", 5, "expected an expression after ','", "letter is missing"),
    ("G(0,1;x", 8, "'(' at column 2 is never closed", None),
    ("x.y", 2, "unexpected '.'", None),
    ("x^", 3, "expected an expression after '^'", None),
    ("*2", 1, "expected an expression, found '*'", "operand on its left"),
    ("1 + * 2", 5, "expected an expression after '+', found '*'", None),
    ("-", 2, "expected an expression after '-'", None),
    ("\u03b6(3)", 1, "unknown character '\u03b6' (U+03B6)", "zeta(...)"),
    ("x \u2212 1", 3, "unknown character", "ASCII minus"),
    ("a\u00a0b", 2, "unknown character", "ordinary blank"),
    ("a = b", 3, "unknown character '='", None),
    ("a\nb", 2, "line break inside an expression", "single line"),
    ("x + [1]", 5, "unknown character '['", "round parentheses"),
    ("\x00", 1, "unknown character '\\x00'", None),
    # the first problem from the left is reported
    (") $", 1, "unexpected ')'", None),
    ("$ )", 1, "unknown character '$'", None),
    ("(" * 10_000 + "1" + ")" * 10_000, MAX_DEPTH + 1, "nested too deeply", None),
    ("9" * 5000, 1, "number too long (5000 digits)", "at most 1000 digits"),
]


@pytest.mark.parametrize(
    "text, column, message, hint", INVALID, ids=[repr(v[0])[:30] for v in INVALID]
)
def test_invalid_expressions(text, column, message, hint):
    with pytest.raises(ParseError) as info:
        parse_expression(text)
    error = info.value
    assert error.column == column
    assert message in error.message
    assert error.hint  # every error tells the user what to do
    if hint is not None:
        assert hint in error.hint
    assert error.term is None or len(error.term) <= 40
    assert str(error)  # printable


def test_invalid_table_is_large_enough():
    assert len(INVALID) >= 20


def test_error_terms():
    cases = {"2x": "2x", "2 zeta(3)": "2 zeta", "3 ** 2": "**", "a $ b": "$", "1e5": "1e5"}
    for text, term in cases.items():
        with pytest.raises(ParseError) as info:
            parse_expression(text)
        assert info.value.term == term


def test_source_and_line_are_copied():
    with pytest.raises(ParseError) as info:
        parse_expression("1 +", source="integrand.txt", line=12)
    error = info.value
    assert (error.source, error.line, error.column) == ("integrand.txt", 12, 4)
    assert str(error).startswith("integrand.txt, line 12, column 4: ")


def test_non_string_is_a_type_error():
    with pytest.raises(TypeError):
        parse_expression(None)  # type: ignore[arg-type]
    with pytest.raises(TypeError):
        parse_expression(b"x")  # type: ignore[arg-type]


# --------------------------------------------------------------------------
# limits
# --------------------------------------------------------------------------


@pytest.mark.parametrize(
    "make",
    [
        lambda k: "(" * k + "x" + ")" * k,
        lambda k: "f(" * k + "x" + ")" * k,
        lambda k: "G(0;" * k + "x" + ")" * k,
        lambda k: "-" * k + "x",
        lambda k: "+" * k + "x",
        lambda k: "x^" * k + "2",
        lambda k: "(-x^" * (k // 3) + "2" + ")" * (k // 3),
    ],
    ids=["parens", "calls", "letters", "minus", "plus", "powers", "mixed"],
)
def test_depth_limit_is_exact(make):
    parse_expression(make(MAX_DEPTH))  # at the limit: fine
    bigger = make(MAX_DEPTH + 3)
    with pytest.raises(ParseError, match="nested too deeply"):
        parse_expression(bigger)


def test_deep_input_when_the_caller_stack_is_already_deep():
    # Even if the caller has used almost all of Python's stack, the parser
    # must not let a RecursionError escape.
    text = "(" * 150 + "1" + ")" * 150

    def depth():
        frame, count = sys._getframe(), 0
        while frame is not None:
            frame, count = frame.f_back, count + 1
        return count

    def descend(n):
        if n <= 0:
            return parse_expression(text)
        return descend(n - 1)

    margin = 120
    with pytest.raises(ParseError, match="nested too deeply"):
        descend(sys.getrecursionlimit() - depth() - margin)
    assert parse_expression(text) == Num(1)


def test_number_length_limit():
    assert parse_expression("9" * MAX_DIGITS).value == 10**MAX_DIGITS - 1
    with pytest.raises(ParseError, match="number too long"):
        parse_expression("9" * (MAX_DIGITS + 1))
    half = MAX_DIGITS // 2
    value = parse_expression("1" * half + "." + "5" * half).value
    assert value.denominator == 2**half or value.denominator % 2 == 0
    with pytest.raises(ParseError, match="number too long"):
        parse_expression("1" * half + "." + "5" * (half + 1))


def test_input_length_limit():
    assert parse_expression("x" * MAX_INPUT_LENGTH) == Sym("x" * MAX_INPUT_LENGTH)
    with pytest.raises(ParseError, match="too long") as info:
        parse_expression("x" * (MAX_INPUT_LENGTH + 1))
    assert info.value.column == MAX_INPUT_LENGTH + 1


def test_long_flat_sum_is_not_nesting_and_is_handled_without_recursion():
    # 12_000 terms give one n-ary Sum of 12_000 terms (to_text: 48_000 characters, within MAX_INPUT_LENGTH); all helpers
    # (==, hash, repr, walk, to_text) must cope with it.
    count = 12_000
    text = "+".join(["x"] * count)
    tree = parse_expression(text)
    assert sum(1 for _ in walk(tree)) == count + 1  # the Sum and its terms: no nesting
    assert isinstance(tree, Sum) and len(tree.terms) == count and tree.ops == "+" * (count - 1)
    again = parse_expression(to_text(tree))
    assert again == tree and hash(again) == hash(tree)
    assert again != parse_expression(text + "+y")
    assert repr(tree).startswith("Sum((Sym('x'), Sym('x'),")
    long_product = parse_expression("*".join(["2"] * count))
    assert to_text(long_product) == "*".join(["2"] * count)


# --------------------------------------------------------------------------
# fuzzing
# --------------------------------------------------------------------------

GRAMMAR_ALPHABET = "0123456789.xyGez_ \t+-*/^(),;$\n"


def _check_outcome(text):
    """Parse ``text``: only ParseError may escape, and results are sane."""
    try:
        tree = parse_expression(text)
    except ParseError as error:
        assert isinstance(error.column, int)
        assert 1 <= error.column <= max(len(text), 0) + 1
        assert error.message and error.hint
        str(error)
        return None
    # anything else escaping fails the test by itself
    assert isinstance(tree, Node)
    for node in walk(tree):
        assert 1 <= node.col <= len(text)
    assert parse_expression(to_text(tree)) == tree
    return tree


@settings(max_examples=2000, deadline=None)
@given(st.text())
def test_fuzz_arbitrary_text(text):
    _check_outcome(text)


@settings(max_examples=2000, deadline=None)
@given(st.text(alphabet=GRAMMAR_ALPHABET, max_size=60))
def test_fuzz_grammar_characters(text):
    _check_outcome(text)


_TOKENS = [
    "x", "s", "G", "zeta", "1", "0", "2.5", "0.25", "+", "-", "*", "/", "^",
    "(", ")", ",", ";", " ", "**", "1e5", ".", "$",
]


@settings(max_examples=2000, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.lists(st.sampled_from(_TOKENS), max_size=40))
def test_fuzz_token_soup(pieces):
    # joins of grammar tokens reach far deeper into the parser than raw text
    _check_outcome("".join(pieces))


def test_token_soup_reaches_successful_parses():
    # guard against a fuzz test that only ever exercises the error paths
    assert _check_outcome("G(0, 1; x)*zeta(2.5)^-s/(1-x)") is not None


# random trees -> text -> tree

_names = st.from_regex(r"[A-Za-z_][A-Za-z0-9_]{0,4}", fullmatch=True)
_numbers = st.one_of(
    st.integers(0, 10**40).map(Num),
    st.builds(lambda k, j: Num(Fraction(k, 10**j)), st.integers(0, 10**8), st.integers(0, 8)),
)
_leaves = st.one_of(_numbers, _names.map(Sym))


def _extend(children):
    binary = st.sampled_from([Add, Sub, Mul, Div, Pow])
    return st.one_of(
        children.map(Neg),
        st.builds(lambda op, a, b: op(a, b), binary, children, children),
        st.builds(
            lambda name, args: Call(name, tuple(args)),
            _names,
            st.lists(children, max_size=3),
        ),
        st.builds(
            lambda name, letters, args: Call(name, tuple(args), tuple(letters)),
            _names,
            st.lists(children, max_size=3),
            st.lists(children, min_size=1, max_size=3),
        ),
    )


_trees = st.recursive(_leaves, _extend, max_leaves=25)


def _tree_depth(node):
    deepest, stack = 0, [(node, 1)]
    while stack:
        current, level = stack.pop()
        deepest = max(deepest, level)
        stack.extend((kid, level + 1) for kid in children(current))
    return deepest


@settings(max_examples=1000, deadline=None)
@given(_trees)
def test_round_trip_of_random_trees(tree):
    assume(_tree_depth(tree) <= 60)
    text = to_text(tree)
    again = parse_expression(text)
    assert again == tree
    assert equal_ignoring_columns(again, tree)
    assert hash(again) == hash(tree)
    assert to_text(again) == text  # printing is canonical


@settings(max_examples=300, deadline=None)
@given(_trees)
def test_repr_and_walk_agree_with_structure(tree):
    nodes = list(walk(tree))
    assert nodes[0] is tree
    assert repr(tree).count("(") >= len(nodes) - sum(isinstance(n, (Num, Sym)) for n in nodes)


def test_only_package_errors_are_raised_for_hostile_strings():
    hostile = [
        "(" * 100_000,
        ")" * 100_000,
        "-" * 99_999 + "x",
        "x^" * 49_999 + "x",
        "f(" * 49_999 + "x",
        "1" * 100_000,
        "1." + "0" * 99_998,
        "\ud800",
        "\U0001f600",
        "G(" + ",".join(["0"] * 30_000) + ";x)",
        "1" + "\n" * 50_000,
    ]
    for text in hostile:
        try:
            parse_expression(text)
        except LowEnergyError:
            pass


# --------------------------------------------------------------------------
# n-ary sums and products, coefficient references, the one evaluator
# --------------------------------------------------------------------------

from lowenergy.errors import InputError  # noqa: E402
from lowenergy.parse import (  # noqa: E402
    LEAVES,
    Coef,
    Product,
    Rules,
    coefficient_reference,
    evaluate,
    tokenize,
)


def test_runs_of_operators_are_one_nary_node():
    tree = parse_expression("a - b + 2*c/d*e")
    assert isinstance(tree, Sum) and tree.ops == "-+" and len(tree.terms) == 3
    product = tree.terms[2]
    assert isinstance(product, Product) and product.ops == "*/*" and len(product.factors) == 4
    assert (tree.col, product.col) == (1, 9)
    # the binary builders give the same nodes: a sum (product) on the left is extended
    assert tree == Add(Sub(S("a"), S("b")), Mul(Div(Mul(N(2), S("c")), S("d")), S("e")))
    # a parenthesized sum at the start is the same sum; elsewhere it stays a node of its own
    assert parse_expression("(a + b) + c") == parse_expression("a + b + c")
    assert parse_expression("(a*b)*c") == parse_expression("a*b*c")
    inner = parse_expression("a - (b - c)")
    assert len(inner.terms) == 2 and isinstance(inner.terms[1], Sum)
    assert to_text(inner) == "a - (b - c)"


def test_prefix_is_the_left_operand_of_the_binary_reading():
    tree = parse_expression("a + b - c + d")
    assert [to_text(tree.prefix(k)) for k in range(4)] == ["a", "a + b", "a + b - c", "a + b - c + d"]
    assert tree.prefix(3) is tree and tree.prefix(2).col == tree.col
    assert tree.left == tree.prefix(2) and tree.right == S("d")
    with pytest.raises(IndexError):
        tree.prefix(4)


def test_chain_constructors_validate():
    with pytest.raises(ValueError):
        Sum((x,), "")
    with pytest.raises(ValueError):
        Sum((x, y), "*")
    with pytest.raises(ValueError):
        Product((x, y, s), "*")
    with pytest.raises(TypeError):
        Sum((x, y), ["+"])
    with pytest.raises(TypeError):
        Coef("c", (1, "2"))


_ACCEPT = lambda *reference: None  # noqa: E731 - accept every reference


def test_coefficient_references_are_nodes_with_their_columns():
    tree = parse_expression("3*c[ 2 , -1 ] + sym[1,1]^2", coefficients=_ACCEPT)
    refs = [n for n in walk(tree) if isinstance(n, Coef)]
    assert [(r.family, r.indices, r.col) for r in refs] == [("c", (2, -1), 3), ("sym", (1, 1), 17)]
    assert to_text(tree) == "3*c[2,-1] + sym[1,1]^2"
    assert parse_expression(to_text(tree), coefficients=_ACCEPT) == tree
    assert parse_expression("c[1,0,-2]", coefficients=_ACCEPT) == Coef("c", (1, 0, -2))


def test_brackets_are_not_grammar_without_coefficients():
    with pytest.raises(ParseError, match=r"unknown character '\['") as info:
        parse_expression("c[1,0]")
    assert info.value.column == 2 and "round parentheses" in info.value.hint


@pytest.mark.parametrize(
    "text, message, column",
    [
        ("1 + c[1,0", "unclosed '['", 6),
        ("1 + c[1,x]", "malformed coefficient reference 'c[1,x]'", 5),
        ("2*[1,0]", "unexpected '['", 3),
        ("c[1,0]]", "unexpected ']'", 7),
        ("2c[1,0]", "missing operator between '2' and 'c[1,0]'", 2),
    ],
)
def test_malformed_references_keep_columns(text, message, column):
    with pytest.raises(ParseError) as info:
        parse_expression(text, coefficients=_ACCEPT)
    assert message in info.value.message and info.value.column == column


def test_reference_check_errors_come_in_order_from_the_left():
    def only_c(family, indices, term, column):
        if family != "c":
            raise ParseError(f"unknown family {family}", column=column, term=term)

    with pytest.raises(ParseError, match="missing operator") as info:
        parse_expression("2x + d[1,0]", coefficients=only_c)
    with pytest.raises(ParseError, match="unknown family d") as info:
        parse_expression("d[1,0] + 2x", coefficients=only_c)
    assert info.value.column == 1
    with pytest.raises(InputError, match="cannot be called"):
        parse_expression("c[1,0](2)", coefficients=only_c)


def test_coefficient_reference_of_a_name():
    assert coefficient_reference(" c[2, -1] ") == Coef("c", (2, -1))
    assert coefficient_reference("c[1,0]*2") is None
    assert coefficient_reference("c(1,0)") is None
    assert coefficient_reference("c[1,") is None
    assert coefficient_reference(12) is None


def test_tokens_cover_the_text_with_blanks_between():
    text = "  G(0,1; x)*s^2 -\t0.25*c"
    tokens = tokenize(text)
    pieces = [text[t.col - 1 : t.col - 1 + len(t.text)] for t in tokens]
    assert pieces == [t.text for t in tokens]
    assert [t.kind for t in tokens][:4] == ["name", "op", "num", "op"]
    gaps = [text[a.col - 1 + len(a.text) : b.col - 1] for a, b in zip(tokens, tokens[1:])]
    assert all(gap.strip(" \t") == "" for gap in gaps)
    with pytest.raises(ParseError, match="unknown character"):
        tokenize("1 + $")


class _Exact(Rules):
    """Exact rational arithmetic, recording the order of the calls."""

    def __init__(self):
        self.calls = []

    def leaf(self, node):
        if isinstance(node, Num):
            self.calls.append(to_text(node))
            return node.value
        if isinstance(node, LEAVES):
            raise ParseError(f"not a number: {to_text(node)}", column=node.col)
        return None

    def neg(self, a, node):
        return -a

    def add(self, a, b, node, k):
        self.calls.append(f"+{k}")
        return a + b

    def sub(self, a, b, node, k):
        self.calls.append(f"-{k}")
        return a - b

    def mul(self, a, b, node, k):
        return a * b

    def div(self, a, b, node, k):
        if not b:
            raise ParseError("division by zero", column=node.items[k].col, term=to_text(node.prefix(k)))
        return a / b

    def power(self, a, b, node):
        return a ** int(b)


def test_evaluate_goes_left_to_right_and_accumulates():
    rules = _Exact()
    assert evaluate(parse_expression("1 - 2 + 3*4 - 2^3/4"), rules) == Fraction(9)
    assert rules.calls == ["1", "2", "-1", "3", "4", "+2", "2", "3", "4", "-3"]
    with pytest.raises(ParseError, match="not a number: a") as info:
        evaluate(parse_expression("1 + a + b"), _Exact())  # the left-most error first
    assert info.value.column == 5
    with pytest.raises(ParseError) as info:
        evaluate(parse_expression("7*2/0*3"), _Exact())
    assert (info.value.column, info.value.term) == (5, "7*2/0")


def test_evaluate_head_takes_the_start_of_a_chain_as_one_value():
    class Head(_Exact):
        def head(self, node):
            if isinstance(node, Sum) and node.prefix(1) == Sub(N(1), S("x")):
                return 1, Fraction(100)
            return None

    assert evaluate(parse_expression("1 - x + 5"), Head()) == 105
    assert evaluate(parse_expression("(1 - x) - 5"), Head()) == 95


def test_evaluate_a_sum_of_100000_terms_and_deep_nesting_without_recursion():
    count = 100_000
    tree = Sum(tuple(Num(k % 7) for k in range(count)), "+-" * (count // 2 - 1) + "+")
    expected = sum(k % 7 if k == 0 or k % 2 else -(k % 7) for k in range(count))
    assert evaluate(tree, _Exact()) == expected
    nested = N(3)
    for _ in range(100_000):  # far deeper than Python's recursion limit
        nested = Neg(nested)
    assert evaluate(nested, _Exact()) == 3
    # as text, 100,000 terms are beyond the length budget: a clean ParseError, never RecursionError
    with pytest.raises(ParseError, match="too long"):
        parse_expression("+".join(["1"] * count))
    longest = (MAX_INPUT_LENGTH + 1) // 2  # "1+1+...+1" just within the budget
    assert evaluate(parse_expression("+".join(["1"] * longest)), _Exact()) == longest
