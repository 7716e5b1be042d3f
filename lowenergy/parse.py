"""The plain-text expression grammar shared by all front ends.

Every place where a user types a formula -- the command line, integrand
files, constraint files -- goes through :func:`parse_expression`, which
turns one line of text into a small tree of immutable nodes.  Nothing here
knows what ``zeta`` or ``G`` *mean*; that is decided by the callers.

Grammar (EBNF; blanks and tabs may separate any two tokens)::

    expression = sum ;
    sum        = product , { ( "+" | "-" ) , product } ;
    product    = factor , { ( "*" | "/" ) , factor } ;
    factor     = { "+" | "-" } , atom , [ "^" , factor ] ;
    atom       = number
               | identifier , [ "(" , [ arguments ] , ")" ]
               | reference
               | "(" , sum , ")" ;
    reference  = identifier , "[" , index , { "," , index } , "]" ;   (* only with coefficients= *)
    index      = [ "+" | "-" ] , digit , { digit } ;
    arguments  = list , [ ";" , list ]
               | ";" , list ;
    list       = sum , { "," , sum } ;
    number     = digit , { digit } , [ "." , digit , { digit } ] ;
    identifier = first , { first | digit } ;
    first      = "A" | ... | "Z" | "a" | ... | "z" | "_" ;
    digit      = "0" | ... | "9" ;

Consequences and decisions:

* ``+`` ``-`` and ``*`` ``/`` are left-associative: ``a-b-c = (a-b)-c``.
  A run of them is one n-ary node: ``a - b + c`` is a :class:`Sum` of three
  terms with ``ops == "-+"`` and ``2*x/3`` a :class:`Product` with
  ``ops == "*/"``; a parenthesized sum (product) at the start of a sum
  (product) is merged into it, since ``(a+b)+c`` means ``a+b+c``.
  :func:`Add`, :func:`Sub`, :func:`Mul` and :func:`Div` build these nodes
  from two operands.
* ``^`` is right-associative (``a^b^c = a^(b^c)``) and binds tighter than a
  sign: ``-x^2 = -(x^2)``.  Its exponent may carry a sign, ``x^-2``.
* A sign binds tighter than ``*`` and ``/``: ``-a*b`` is ``(-a)*b`` (the
  same number).  ``+x`` is just ``x``; there is no node for unary plus.
* Numbers are non-negative integers (``12``) or plain decimals (``0.25``,
  stored as the exact ``Fraction(1, 4)``), at most :data:`MAX_DIGITS`
  digits.  ``1e5``, ``.5`` and ``1.`` are rejected with a hint; so is
  ``**`` (write ``^``).  Negative numbers are ``Neg(Num(...))``.
* There is no implicit multiplication: ``2x``, ``2 zeta(3)``, ``2(x+1)``
  and ``(a)(b)`` are errors ("write 2*x").  A name directly followed by
  ``(`` -- blanks allowed in between -- is always a call.
* In a call ``name(a1, ..., an; x1, ..., xm)`` the part before ``;`` is the
  list of *letters* and the part after it the *arguments*, as in
  ``G(0,1,1; x)``.  The letter list may be empty (``G(; x)``, the empty
  word) but at least one argument must follow ``;``: ``G(0,1;)`` and
  ``f(;)`` are errors.  ``f()`` is a call without arguments.  Only one
  ``;`` per call; no trailing commas.
* Coefficient references such as ``c[2,-1]`` (blanks allowed inside the
  brackets) are parsed only when the caller passes ``coefficients=``, a
  check of the family and indices (constraint relations); elsewhere ``[``
  is an unknown character.  A reference is one token and one :class:`Coef`
  node, so messages and columns refer to the text as written.
* Columns are 1-based character offsets into the text (a tab counts as
  one column).  An expression lives on a single line: line breaks are
  only tolerated at the very end of the text.
* Hostile input is refused with :class:`~lowenergy.errors.ParseError`
  instead of crashing: text longer than :data:`MAX_INPUT_LENGTH`
  characters, numbers with more than :data:`MAX_DIGITS` digits, and more
  than :data:`MAX_DEPTH` nested parentheses, calls, signs and powers
  together ("expression nested too deeply").  Long flat sums and products
  such as ``1+1+...+1`` are not nesting and are only bounded by the length:
  they are single n-ary nodes.  All functions of this module walk trees
  without recursion, including the one evaluator :func:`evaluate`, which
  every front end drives with its own :class:`Rules`.

Every node is a frozen dataclass with a keyword-only ``col`` (the 1-based
column where its text starts, ``None`` for nodes built by hand).  ``col``
takes no part in ``==`` and ``hash``, so trees compare by structure only.
Parentheses are not nodes: ``(a+b)`` gives the ``Sum`` at column 2, while
an enclosing node such as the ``Product`` of ``(a+b)*c`` starts at the ``(``.

Examples
--------
>>> parse_expression("-zeta(3)^2/3")
Product((Neg(Pow(Call('zeta', (Num(3),)), Num(2))), Num(3)), '/')
>>> tree = parse_expression("G(0,1,1; x)*s^2")
>>> tree.items[0].letters, tree.items[0].args
((Num(0), Num(1), Num(1)), (Sym('x'),))
>>> to_text(tree)
'G(0, 1, 1; x)*s^2'
>>> parse_expression("0.25*s").items[0].value
Fraction(1, 4)
>>> to_text(parse_expression("(1-x)^(-t-1)"))
'(1 - x)^(-t - 1)'
>>> parse_expression("1 - x") == parse_expression("1-x")   # columns ignored
True
>>> [type(n).__name__ for n in walk(parse_expression("2*pi^2"))]
['Product', 'Num', 'Pow', 'Sym', 'Num']
>>> parse_expression("2x")
Traceback (most recent call last):
    ...
lowenergy.errors.ParseError: column 2: missing operator between '2' and 'x' (term: '2x'); hint: implicit multiplication is not allowed; write 2*x
>>> parse_expression("zeta(3", source="input.txt", line=4)
Traceback (most recent call last):
    ...
lowenergy.errors.ParseError: input.txt, line 4, column 7: unbalanced parenthesis: '(' at column 5 is never closed (term: '('); hint: add ')' at the end
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Callable, Generic, Iterator, List, Optional, Tuple, TypeVar

from .errors import InputError, LowEnergyError, ParseError
from .limits import MAX_DEPTH, MAX_DIGITS, MAX_TEXT_LENGTH

T = TypeVar("T")

__all__ = [
    "Node",
    "Num",
    "Sym",
    "Call",
    "Neg",
    "Sum",
    "Product",
    "Add",
    "Sub",
    "Mul",
    "Div",
    "Pow",
    "Coef",
    "LEAVES",
    "Token",
    "tokenize",
    "coefficient_reference",
    "parse_expression",
    "walk",
    "children",
    "Rules",
    "evaluate",
    "to_text",
    "equal_ignoring_columns",
    "MAX_INPUT_LENGTH",
    "MAX_DEPTH",
    "MAX_DIGITS",
]

#: Longest text :func:`parse_expression` accepts, in characters
#: (:data:`lowenergy.limits.MAX_TEXT_LENGTH`).
MAX_INPUT_LENGTH = MAX_TEXT_LENGTH

_FIRST = frozenset("ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz_")
_DIGITS = frozenset("0123456789")
_REST = _FIRST | _DIGITS
_BLANKS = frozenset(" \t")
_LINE_BREAKS = frozenset("\r\n")
_OPERATORS = frozenset("+-*/^(),;")


def _is_identifier(name: object) -> bool:
    return (
        isinstance(name, str)
        and len(name) > 0
        and name[0] in _FIRST
        and all(ch in _REST for ch in name)
    )


# --------------------------------------------------------------------------
# nodes
# --------------------------------------------------------------------------


class Node:
    """Base class of all expression nodes.

    Equality, hashing, ``repr`` and ``str`` (which is :func:`to_text`) work
    without recursion, so arbitrarily long sums are safe.
    """

    __slots__ = ()

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, Node):
            return NotImplemented
        return _equal(self, other)

    def __ne__(self, other: object) -> bool:
        if not isinstance(other, Node):
            return NotImplemented
        return not _equal(self, other)

    def __hash__(self) -> int:
        return _hash(self)

    def __repr__(self) -> str:
        return "".join(_emit(self, _repr_parts))

    def __str__(self) -> str:
        return to_text(self)


def _col_field():
    return field(default=None, compare=False, kw_only=True)


def _check_node(owner: str, role: str, value: object) -> None:
    if not isinstance(value, Node):
        raise TypeError(f"{owner}.{role} must be a Node, not {type(value).__name__}")


@dataclass(frozen=True, eq=False, repr=False)
class Num(Node):
    """A non-negative exact number (``int`` values are turned into Fraction)."""

    value: Fraction
    col: Optional[int] = _col_field()

    def __post_init__(self) -> None:
        value = self.value
        if isinstance(value, bool) or not isinstance(value, (int, Fraction)):
            raise TypeError(f"Num.value must be an int or Fraction, not {type(value).__name__}")
        if value < 0:
            raise ValueError("Num.value must be non-negative; wrap it in Neg")
        object.__setattr__(self, "value", Fraction(value))


@dataclass(frozen=True, eq=False, repr=False)
class Sym(Node):
    """A bare identifier such as ``x``, ``s`` or ``pi``."""

    name: str
    col: Optional[int] = _col_field()

    def __post_init__(self) -> None:
        if not _is_identifier(self.name):
            raise ValueError(f"Sym.name must be an identifier, not {self.name!r}")


@dataclass(frozen=True, eq=False, repr=False)
class Call(Node):
    """``name(args...)``, or ``name(letters...; args...)`` when ``letters`` is set.

    ``letters`` is ``None`` unless the ``;`` form was used; then ``args`` is
    never empty.
    """

    name: str
    args: Tuple[Node, ...]
    letters: Optional[Tuple[Node, ...]] = None
    col: Optional[int] = _col_field()

    def __post_init__(self) -> None:
        if not _is_identifier(self.name):
            raise ValueError(f"Call.name must be an identifier, not {self.name!r}")
        args = tuple(self.args)
        for arg in args:
            _check_node("Call", "args", arg)
        object.__setattr__(self, "args", args)
        if self.letters is not None:
            letters = tuple(self.letters)
            for letter in letters:
                _check_node("Call", "letters", letter)
            if not args:
                raise ValueError("a Call with letters needs at least one argument")
            object.__setattr__(self, "letters", letters)


@dataclass(frozen=True, eq=False, repr=False)
class Neg(Node):
    """Unary minus."""

    operand: Node
    col: Optional[int] = _col_field()

    def __post_init__(self) -> None:
        _check_node("Neg", "operand", self.operand)


class _Chain(Node):
    """An n-ary chain ``items[0] op[0] items[1] op[1] ... items[-1]``.

    ``ops`` is a string with one operator character between each two items.
    A first item of the same kind is flattened into the chain (``(a+b)+c`` is
    the same sum as ``a+b+c``), so a chain built by hand and one parsed from
    its text are equal.  Later items are never flattened: ``a-(b-c)`` keeps
    its inner sum.
    """

    __slots__ = ()
    _OPS = ""

    def _setup(self, items, ops) -> None:
        name = type(self).__name__
        items = tuple(items)
        if not isinstance(ops, str):
            raise TypeError(f"{name}.ops must be a str of operator characters")
        if len(items) < 2 or len(ops) != len(items) - 1:
            raise ValueError(f"{name} needs at least two items and one operator between each two")
        for item in items:
            _check_node(name, "items", item)
        if any(op not in self._OPS for op in ops):
            raise ValueError(f"{name}.ops may only contain {' '.join(self._OPS)}")
        first = items[0]
        if type(first) is type(self):
            items = first.items + items[1:]  # type: ignore[attr-defined]
            ops = first.ops + ops  # type: ignore[attr-defined]
        object.__setattr__(self, "items", items)
        object.__setattr__(self, "ops", ops)

    def prefix(self, k: int) -> Node:
        """The chain of ``items[0..k]``: the left operand of the k-th operator plus its right one.

        ``prefix(len(items) - 1)`` is the node itself and ``prefix(0)`` its
        first item.  Messages use it to show the part of a long sum or
        product that an operation had reached.

        >>> to_text(parse_expression("a + b - c + d").prefix(2))
        'a + b - c'
        """
        items = self.items  # type: ignore[attr-defined]
        if not 0 <= k < len(items):
            raise IndexError(f"prefix index {k} out of range")
        if k == len(items) - 1:
            return self
        if k == 0:
            return items[0]
        return type(self)(items[: k + 1], self.ops[:k], col=self.col)  # type: ignore[attr-defined,call-arg]

    @property
    def left(self) -> Node:
        """Everything but the last item (the left operand of the last operator)."""
        return self.prefix(len(self.items) - 2)  # type: ignore[attr-defined]

    @property
    def right(self) -> Node:
        """The last item (the right operand of the last operator)."""
        return self.items[-1]  # type: ignore[attr-defined]


@dataclass(frozen=True, eq=False, repr=False)
class Sum(_Chain):
    """``items[0] ± items[1] ± ...``; ``ops`` holds the ``+``/``-`` between them.

    >>> parse_expression("a - b + 2").ops
    '-+'
    """

    items: Tuple[Node, ...]
    ops: str
    col: Optional[int] = _col_field()
    _OPS = "+-"

    def __post_init__(self) -> None:
        self._setup(self.items, self.ops)

    @property
    def terms(self) -> Tuple[Node, ...]:
        """The summands, without their signs."""
        return self.items


@dataclass(frozen=True, eq=False, repr=False)
class Product(_Chain):
    """``items[0] */ items[1] */ ...``; ``ops`` holds the ``*``/``/`` between them.

    >>> parse_expression("1/2*s*t").ops
    '/**'
    """

    items: Tuple[Node, ...]
    ops: str
    col: Optional[int] = _col_field()
    _OPS = "*/"

    def __post_init__(self) -> None:
        self._setup(self.items, self.ops)

    @property
    def factors(self) -> Tuple[Node, ...]:
        """The factors (a divisor is the factor after a ``/``)."""
        return self.items


def Add(left: Node, right: Node, *, col: Optional[int] = None) -> Sum:
    """``left + right`` as a :class:`Sum` (a sum on the left is extended)."""
    return Sum((left, right), "+", col=col)


def Sub(left: Node, right: Node, *, col: Optional[int] = None) -> Sum:
    """``left - right`` as a :class:`Sum` (a sum on the left is extended)."""
    return Sum((left, right), "-", col=col)


def Mul(left: Node, right: Node, *, col: Optional[int] = None) -> Product:
    """``left * right`` as a :class:`Product` (a product on the left is extended)."""
    return Product((left, right), "*", col=col)


def Div(left: Node, right: Node, *, col: Optional[int] = None) -> Product:
    """``left / right`` as a :class:`Product` (a product on the left is extended)."""
    return Product((left, right), "/", col=col)


@dataclass(frozen=True, eq=False, repr=False)
class Pow(Node):
    """``base ^ exponent``."""

    base: Node
    exponent: Node
    col: Optional[int] = _col_field()

    def __post_init__(self) -> None:
        _check_node("Pow", "base", self.base)
        _check_node("Pow", "exponent", self.exponent)


@dataclass(frozen=True, eq=False, repr=False)
class Coef(Node):
    """A coefficient reference ``family[i, j, ...]`` such as ``c[2,-1]``.

    Only parsed when :func:`parse_expression` is given ``coefficients=``
    (constraint relations); elsewhere ``[`` is not part of the grammar.
    """

    family: str
    indices: Tuple[int, ...]
    col: Optional[int] = _col_field()

    def __post_init__(self) -> None:
        if not _is_identifier(self.family):
            raise ValueError(f"Coef.family must be an identifier, not {self.family!r}")
        indices = tuple(self.indices)
        if not indices or any(isinstance(i, bool) or not isinstance(i, int) for i in indices):
            raise TypeError("Coef.indices must be a non-empty tuple of ints")
        object.__setattr__(self, "indices", indices)

    @property
    def name(self) -> str:
        """The canonical spelling, ``c[2,-1]``."""
        return f"{self.family}[{','.join(str(i) for i in self.indices)}]"


#: The leaves of a tree: evaluated as a whole (a call's arguments included).
LEAVES = (Num, Sym, Call, Coef)


def children(node: Node) -> Tuple[Node, ...]:
    """The direct sub-nodes, left to right (a call's letters before its arguments).

    >>> children(parse_expression("a - b^2"))
    (Sym('a'), Pow(Sym('b'), Num(2)))
    >>> len(children(parse_expression("1+2+3+4")))   # sums are n-ary
    4
    """
    if isinstance(node, _Chain):
        return node.items  # type: ignore[attr-defined]
    if isinstance(node, Pow):
        return (node.base, node.exponent)
    if isinstance(node, Neg):
        return (node.operand,)
    if isinstance(node, Call):
        return node.args if node.letters is None else node.letters + node.args
    return ()


def walk(node: Node) -> Iterator[Node]:
    """Yield ``node`` and all nodes below it, parents first, left to right.

    The letters of a call come before its arguments.

    >>> [to_text(n) for n in walk(parse_expression("f(a; b) + 1"))]
    ['f(a; b) + 1', 'f(a; b)', 'a', 'b', '1']
    """
    stack = [node]
    while stack:
        current = stack.pop()
        yield current
        stack.extend(reversed(children(current)))


# --------------------------------------------------------------------------
# the evaluator
# --------------------------------------------------------------------------


class Rules(Generic[T]):
    """What :func:`evaluate` does at each node; a front end overrides what it needs.

    ``leaf(node)`` is asked first for every node, parents before their
    operands: a value means "this node is evaluated as a whole", ``None``
    means "evaluate the operands and combine them".  :data:`LEAVES` (numbers,
    names, calls with their arguments, coefficient references) must get a
    value.  The operations then combine values left to right:

    * ``neg(value, node)`` for ``-operand``;
    * ``add``/``sub``/``mul``/``div(left, right, node, k)`` for the k-th
      operator of a :class:`Sum` or :class:`Product` ``node`` (``right`` is
      the value of ``node.items[k]``, ``left`` that of ``node.prefix(k - 1)``;
      messages about the whole operation use ``node.prefix(k)``);
    * ``power(base, exponent, node)`` for ``base ^ exponent``.

    ``head(node)`` may take the first items of a chain as one value.

    The defaults refuse the operation with a ``TypeError`` (a front end that
    forgot a case is a bug, not a user error).
    """

    def leaf(self, node: Node) -> Optional[T]:
        raise NotImplementedError(f"{type(self).__name__}.leaf")

    def head(self, node: Node) -> Optional[Tuple[int, T]]:
        """For a :class:`Sum` or :class:`Product` whose ``leaf`` was None:
        ``(k, value)`` when the front end evaluates ``node.prefix(k)`` as a
        whole (``1 - x + ...`` in integrands), else None (the default)."""
        return None

    def _unsupported(self, what: str) -> TypeError:
        return TypeError(f"{type(self).__name__} does not support {what}")

    def neg(self, value: T, node: Neg) -> T:
        raise self._unsupported("negation")

    def add(self, left: T, right: T, node: Sum, k: int) -> T:
        raise self._unsupported("'+'")

    def sub(self, left: T, right: T, node: Sum, k: int) -> T:
        raise self._unsupported("'-'")

    def mul(self, left: T, right: T, node: Product, k: int) -> T:
        raise self._unsupported("'*'")

    def div(self, left: T, right: T, node: Product, k: int) -> T:
        raise self._unsupported("'/'")

    def power(self, base: T, exponent: T, node: Pow) -> T:
        raise self._unsupported("'^'")


def evaluate(tree: Node, rules: Rules[T]) -> T:
    """Evaluate ``tree`` bottom-up with ``rules``: the one tree evaluator.

    Operands are evaluated left to right, so the left-most error is raised
    first (as the parser does), and a sum or product is accumulated term by
    term as its terms are evaluated.  No recursion: the nesting depth of a
    tree only costs list entries, and a sum of 100,000 terms is one node.

    >>> class Numbers(Rules):
    ...     def leaf(self, node):
    ...         return node.value if isinstance(node, Num) else None
    ...     def add(self, a, b, node, k): return a + b
    ...     def sub(self, a, b, node, k): return a - b
    ...     def mul(self, a, b, node, k): return a * b
    ...     def div(self, a, b, node, k): return a / b
    ...     def neg(self, a, node): return -a
    ...     def power(self, a, b, node): return a ** int(b)
    >>> evaluate(parse_expression("1 + 2*3 - 2^-1/(4 - 5)"), Numbers())
    Fraction(15, 2)
    """
    # frames: [node, its operands, index of the operand being evaluated, value so far]
    stack: List[list] = []
    node = tree
    while True:
        value = rules.leaf(node)
        if value is None:
            if isinstance(node, LEAVES):
                raise TypeError(f"{type(rules).__name__}.leaf gave no value for {type(node).__name__}")
            kids = children(node)
            first = rules.head(node) if isinstance(node, _Chain) else None
            if first is None:
                stack.append([node, kids, 0, None])
                node = kids[0]
                continue
            k, value = first
            if k + 1 < len(kids):
                stack.append([node, kids, k + 1, value])
                node = kids[k + 1]
                continue
        while stack:
            frame = stack[-1]
            parent, kids, k, acc = frame
            if k == 0 and not isinstance(parent, Neg):
                acc = value
            elif isinstance(parent, Sum):
                acc = (rules.add if parent.ops[k - 1] == "+" else rules.sub)(acc, value, parent, k)
            elif isinstance(parent, Product):
                acc = (rules.mul if parent.ops[k - 1] == "*" else rules.div)(acc, value, parent, k)
            elif isinstance(parent, Pow):
                acc = rules.power(acc, value, parent)
            else:
                acc = rules.neg(value, parent)  # type: ignore[arg-type]
            k += 1
            if k < len(kids):
                frame[2], frame[3] = k, acc
                node = kids[k]
                break
            stack.pop()
            value = acc
        else:
            return value


def _equal(a: Node, b: Node) -> bool:
    stack = [(a, b)]
    while stack:
        x, y = stack.pop()
        if x is y:
            continue
        if type(x) is not type(y):
            return False
        if isinstance(x, Num):
            if x.value != y.value:
                return False
        elif isinstance(x, Sym):
            if x.name != y.name:
                return False
        elif isinstance(x, _Chain):
            if x.ops != y.ops:  # type: ignore[attr-defined]
                return False
        elif isinstance(x, Coef):
            if x.family != y.family or x.indices != y.indices:
                return False
        elif isinstance(x, Call):
            if x.name != y.name or len(x.args) != len(y.args):
                return False
            if (x.letters is None) != (y.letters is None):
                return False
            if x.letters is not None and len(x.letters) != len(y.letters):
                return False
        stack.extend(zip(children(x), children(y)))
    return True


def equal_ignoring_columns(a: Node, b: Node) -> bool:
    """True if the trees have the same shape and content (same as ``a == b``).

    >>> equal_ignoring_columns(parse_expression("x+1"), Add(Sym("x"), Num(1)))
    True
    """
    return _equal(a, b)


def _own_key(node: Node) -> object:
    if isinstance(node, Num):
        return node.value
    if isinstance(node, Sym):
        return node.name
    if isinstance(node, Call):
        return (node.name, None if node.letters is None else len(node.letters))
    if isinstance(node, _Chain):
        return node.ops  # type: ignore[attr-defined]
    if isinstance(node, Coef):
        return (node.family, node.indices)
    return None


def _hash(node: Node) -> int:
    results: List[int] = []
    stack: List[Tuple[Node, bool]] = [(node, False)]
    while stack:
        current, expanded = stack.pop()
        kids = children(current)
        if expanded:
            count = len(kids)
            child_hashes = tuple(results[len(results) - count:]) if count else ()
            if count:
                del results[len(results) - count:]
            results.append(hash((type(current).__name__, _own_key(current), child_hashes)))
        else:
            stack.append((current, True))
            stack.extend((kid, False) for kid in reversed(kids))
    return results[0]


# --------------------------------------------------------------------------
# printing
# --------------------------------------------------------------------------

_ATOM, _POWER, _SIGN, _PRODUCT, _SUM = 5, 4, 3, 2, 1


def _precedence(node: Node) -> int:
    if isinstance(node, Sum):
        return _SUM
    if isinstance(node, Product):
        return _PRODUCT
    if isinstance(node, Neg):
        return _SIGN
    if isinstance(node, Pow):
        return _POWER
    return _ATOM


def _starts_with_sign(node: Node) -> bool:
    while isinstance(node, _Chain):
        node = node.items[0]  # type: ignore[attr-defined]
    return isinstance(node, Neg)


def _number_text(value: Fraction) -> str:
    num, den = value.numerator, value.denominator
    if den == 1:
        return str(num)
    rest, twos, fives = den, 0, 0
    while rest % 2 == 0:
        rest //= 2
        twos += 1
    while rest % 5 == 0:
        rest //= 5
        fives += 1
    if rest != 1:
        # Not a terminating decimal: no single literal exists.
        return f"({num}/{den})"
    places = max(twos, fives)
    digits = str(num * 10**places // den).rjust(places + 1, "0")
    return f"{digits[:-places]}.{digits[-places:]}"


_SYMBOLS = {"+": " + ", "-": " - ", "*": "*", "/": "/"}


def _wrap(node: Node, needed: bool) -> list:
    return ["(", node, ")"] if needed else [node]


def _text_parts(node: Node) -> list:
    if isinstance(node, Num):
        return [_number_text(node.value)]
    if isinstance(node, Sym):
        return [node.name]
    if isinstance(node, Call):
        parts: list = [node.name, "("]
        if node.letters is not None:
            for i, letter in enumerate(node.letters):
                parts += [", ", letter] if i else [letter]
            parts.append("; ")
        for i, arg in enumerate(node.args):
            parts += [", ", arg] if i else [arg]
        parts.append(")")
        return parts
    if isinstance(node, Neg):
        return ["-"] + _wrap(node.operand, _precedence(node.operand) < _POWER)
    if isinstance(node, Pow):
        return (
            _wrap(node.base, _precedence(node.base) < _ATOM)
            + ["^"]
            + _wrap(node.exponent, _precedence(node.exponent) < _ATOM)
        )
    if isinstance(node, Coef):
        return [node.name]
    if isinstance(node, _Chain):
        own = _precedence(node)
        items = node.items  # type: ignore[attr-defined]
        parts = _wrap(items[0], _precedence(items[0]) < own)
        for op, item in zip(node.ops, items[1:]):  # type: ignore[attr-defined]
            needs = _precedence(item) <= own or _starts_with_sign(item)
            parts += [_SYMBOLS[op]] + _wrap(item, needs)
        return parts
    raise TypeError(f"not a Node: {type(node).__name__}")


def _repr_parts(node: Node) -> list:
    name = type(node).__name__
    if isinstance(node, Num):
        value = node.value
        shown = str(value.numerator) if value.denominator == 1 else repr(value)
        return [f"Num({shown})"]
    if isinstance(node, Sym):
        return [f"Sym({node.name!r})"]
    if isinstance(node, Call):
        parts: list = [f"Call({node.name!r}, "]

        def as_tuple(items: Tuple[Node, ...]) -> list:
            out: list = ["("]
            for i, item in enumerate(items):
                out += [", ", item] if i else [item]
            out.append(",)" if len(items) == 1 else ")")
            return out

        parts += as_tuple(node.args)
        if node.letters is not None:
            parts.append(", letters=")
            parts += as_tuple(node.letters)
        parts.append(")")
        return parts
    if isinstance(node, Coef):
        return [f"Coef({node.family!r}, {node.indices!r})"]
    if isinstance(node, _Chain):
        parts = [f"{name}(("]
        for i, item in enumerate(node.items):  # type: ignore[attr-defined]
            parts += [", ", item] if i else [item]
        return parts + [f"), {node.ops!r})"]  # type: ignore[attr-defined]
    return [f"{name}("] + [
        piece for i, kid in enumerate(children(node)) for piece in ([", ", kid] if i else [kid])
    ] + [")"]


def _emit(node: Node, expand) -> Iterator[str]:
    stack: list = [node]
    while stack:
        item = stack.pop()
        if isinstance(item, str):
            yield item
        else:
            stack.extend(reversed(expand(item)))


def to_text(node: Node) -> str:
    """Print ``node`` in the grammar of :func:`parse_expression`.

    Parentheses are added exactly where the grammar needs them (plus around
    a signed right operand, ``a - (-b)``, for readability), so that
    ``parse_expression(to_text(n)) == n`` for every tree the parser can
    produce.  A :class:`Num` whose value is not a terminating decimal (say
    1/3) has no literal; it is printed as ``(1/3)``, which reads back as a
    ``Div`` of the same value.

    >>> to_text(Sub(Sym("a"), Sub(Sym("b"), Neg(Sym("c")))))
    'a - (b - (-c))'
    >>> to_text(Pow(Neg(Sym("x")), Num(Fraction(1, 2))))
    '(-x)^0.5'
    >>> to_text(Call("G", (Sym("x"),), letters=()))
    'G(; x)'
    """
    if not isinstance(node, Node):
        raise TypeError(f"to_text needs a Node, not {type(node).__name__}")
    return "".join(_emit(node, _text_parts))


# --------------------------------------------------------------------------
# tokenizer
# --------------------------------------------------------------------------


@dataclass(frozen=True)
class Token:
    """One token of the grammar: ``text`` as written, starting at 1-based column ``col``.

    ``kind`` is ``"num"`` (``value`` the exact Fraction), ``"name"``, ``"op"``
    (one of ``+ - * / ^ ( ) , ;``), ``"coef"`` (``value`` is ``(family,
    indices)``), ``"end"`` or ``"error"`` (``error`` the ParseError).
    """

    kind: str
    text: str
    col: int
    value: object = None
    error: Optional[LowEnergyError] = None


#: ``family(indices)`` -> None, or raise: the caller's check of a coefficient reference.
CoefficientCheck = Callable[[str, Optional[Tuple[int, ...]], str, int], None]

_INDEX = re.compile(r"[ \t]*([+-]?)[ \t]*(\d+)[ \t]*")


_ALLOWED = "letters, digits, '_', '.', '+', '-', '*', '/', '^', '(', ')', ',', ';' and blanks"

_CHARACTER_HINTS = {
    "=": "an expression cannot contain '='",
    "[": "use round parentheses ( )",
    "]": "use round parentheses ( )",
    "{": "use round parentheses ( )",
    "}": "use round parentheses ( )",
    "\u00d7": "use '*' for multiplication",
    "\u00b7": "use '*' for multiplication",
    "\u22c5": "use '*' for multiplication",
    "\u2217": "use '*' for multiplication",
    "\u2212": "use the ASCII minus sign '-'",
    "\u2013": "use the ASCII minus sign '-'",
    "\u2014": "use the ASCII minus sign '-'",
    "\u00f7": "use '/' for division",
    "\u03b6": "write zeta(...)",
    "\u03c0": "write pi",
    "\u00b2": "write ^2",
    "\u00b3": "write ^3",
    "'": "quotes are not part of the grammar",
    '"': "quotes are not part of the grammar",
    "!": "factorials are not supported",
}


def _short(text: str, limit: int = 40) -> str:
    return text if len(text) <= limit else text[: limit - 3] + "..."


def _describe_character(ch: str) -> str:
    if ch.isprintable() and not ch.isspace():
        shown = f"'{ch}'"
    else:
        shown = repr(ch)
    if ord(ch) > 127:
        shown += f" (U+{ord(ch):04X})"
    return shown


def _character_hint(ch: str) -> str:
    if ch in _CHARACTER_HINTS:
        return _CHARACTER_HINTS[ch]
    if ch.isspace() or unicodedata.category(ch) == "Zs":
        return "replace it with an ordinary blank"
    return f"allowed are {_ALLOWED}"


def _indices(inner: str) -> Optional[Tuple[int, ...]]:
    """``" 2, -1"`` -> ``(2, -1)``; None unless a list of signed integers (at most MAX_DIGITS digits each)."""
    out = []
    for part in inner.split(","):
        m = _INDEX.fullmatch(part)
        if not m or len(m.group(2)) > MAX_DIGITS:
            return None
        out.append(int(m.group(2)) * (-1 if m.group(1) == "-" else 1))
    return tuple(out)


def _reference(text: str, start: int, name_end: int, bracket: int,
               check: CoefficientCheck) -> Tuple[Token, int]:
    """The token of the reference ``name[...]`` at ``start`` and the index after it."""
    n = len(text)
    close = text.find("]", bracket)
    stop = text.find("[", bracket + 1)
    if close < 0 or (0 <= stop < close):
        term = _short(text[start : (stop if stop >= 0 else n)].rstrip())
        raise ParseError(
            "unclosed '[' in a coefficient reference",
            column=bracket + 1,
            term=term,
            hint="write c[i,j] with two integers, e.g. c[2,0]",
        )
    family, term = text[start:name_end], text[start : close + 1]
    indices = _indices(text[bracket + 1 : close])
    check(family, indices, term, start + 1)
    if indices is None:
        raise ParseError(
            f"malformed coefficient reference '{_short(term)}'",
            column=start + 1,
            term=_short(term),
            hint=f"write {family}[i,j] with integers, e.g. {family}[2,0]",
        )
    return Token("coef", term, start + 1, value=(family, indices)), close + 1


def tokenize(text: str, *, coefficients: Optional[CoefficientCheck] = None) -> List[Token]:
    """The tokens of ``text`` (without the end marker); raise the first lexical error.

    The same tokenizer as :func:`parse_expression`: columns are 1-based, so
    ``text[t.col - 1 : t.col - 1 + len(t.text)] == t.text`` and the text
    between two tokens is blanks only.

    >>> [(t.kind, t.text, t.col) for t in tokenize("2*a1 - c")]
    [('num', '2', 1), ('op', '*', 2), ('name', 'a1', 3), ('op', '-', 6), ('name', 'c', 8)]
    """
    tokens = _tokenize(text, coefficients)
    if tokens[-1].kind == "error":
        assert tokens[-1].error is not None
        raise tokens[-1].error
    return tokens[:-1]


def coefficient_reference(text: str) -> Optional[Coef]:
    """The :class:`Coef` when ``text`` is one coefficient reference (blanks around it allowed), else None.

    Table headers and CSV rows name coefficients in the same syntax as
    constraint relations; which families and indices are meaningful is the
    caller's business.

    >>> coefficient_reference(" sym[3, 1] ")
    Coef('sym', (3, 1))
    >>> coefficient_reference("c[1,0] + 1") is None, coefficient_reference("c[1,x]") is None
    (True, True)
    """
    if not isinstance(text, str) or len(text) > MAX_INPUT_LENGTH:
        return None
    try:
        tokens = tokenize(text.strip(), coefficients=lambda *reference: None)
    except LowEnergyError:
        return None
    if len(tokens) != 1 or tokens[0].kind != "coef":
        return None
    family, indices = tokens[0].value  # type: ignore[misc]
    return Coef(family, indices)


def _tokenize(text: str, coefficients: Optional[CoefficientCheck] = None) -> List[Token]:
    """Split ``text`` into tokens.

    A lexical error does not raise here: it becomes an ``error`` token, so
    that the parser reports whichever problem comes first from the left.
    With ``coefficients``, ``name[i, j, ...]`` is one ``coef`` token, checked
    by ``coefficients(name, indices or None, text, column)``, which raises to
    refuse it.
    """
    tokens: List[Token] = []
    n = len(text)
    i = 0

    def fail(message: str, col: int, term: str, hint: str) -> List[Token]:
        error = ParseError(message, column=col, term=_short(term), hint=hint)
        tokens.append(Token("error", term, col, error=error))
        return tokens

    while i < n:
        ch = text[i]
        if ch in _BLANKS:
            i += 1
            continue
        if ch in _LINE_BREAKS:
            if text[i:].strip(" \t\r\n") == "":
                break
            return fail(
                "line break inside an expression",
                i + 1,
                ch,
                "an expression must be written on a single line",
            )
        start = i
        if ch in _DIGITS:
            while i < n and text[i] in _DIGITS:
                i += 1
            int_digits = i - start
            frac_digits = 0
            if i < n and text[i] == ".":
                i += 1
                frac_start = i
                while i < n and text[i] in _DIGITS:
                    i += 1
                frac_digits = i - frac_start
                if frac_digits == 0:
                    literal = text[start:i]
                    if i < n and text[i] == ".":
                        j = i
                        while j < n and (text[j] in _DIGITS or text[j] == "."):
                            j += 1
                        return fail(
                            f"malformed number '{_short(text[start:j])}'",
                            start + 1,
                            text[start:j],
                            "a number has at most one '.'",
                        )
                    return fail(
                        f"malformed number '{_short(literal)}'",
                        start + 1,
                        literal,
                        f"write {_short(literal[:-1])} or {_short(literal)}0",
                    )
            # exponent notation: 1e5, 2.5E-3, 1e+7
            if i < n and text[i] in "eE":
                j = i + 1
                if j < n and text[j] in "+-":
                    j += 1
                if j < n and text[j] in _DIGITS:
                    while j < n and text[j] in _DIGITS:
                        j += 1
                    mantissa = text[start:i]
                    exponent = text[i + 1 : j]
                    if exponent[0] in "+":
                        exponent = exponent[1:]
                    shown = f"({exponent})" if exponent.startswith("-") else exponent
                    return fail(
                        "exponent notation is not supported",
                        start + 1,
                        text[start:j],
                        f"write {_short(mantissa)}*10^{_short(shown)}",
                    )
            if i < n and text[i] == ".":
                j = i
                while j < n and (text[j] in _DIGITS or text[j] == "."):
                    j += 1
                return fail(
                    f"malformed number '{_short(text[start:j])}'",
                    start + 1,
                    text[start:j],
                    "a number has at most one '.'",
                )
            if int_digits + frac_digits > MAX_DIGITS:
                return fail(
                    f"number too long ({int_digits + frac_digits} digits)",
                    start + 1,
                    text[start:i],
                    f"numbers may have at most {MAX_DIGITS} digits",
                )
            literal = text[start:i]
            if frac_digits:
                whole, frac = literal.split(".")
                value = int(whole) + Fraction(int(frac), 10**frac_digits)
            else:
                value = Fraction(int(literal))
            tokens.append(Token("num", literal, start + 1, value=value))
            continue
        if ch in _FIRST:
            while i < n and text[i] in _REST:
                i += 1
            if coefficients is not None:
                k = i
                while k < n and text[k] in _BLANKS:
                    k += 1
                if k < n and text[k] == "[":
                    try:
                        token, i = _reference(text, start, i, k, coefficients)
                    except LowEnergyError as error:
                        tokens.append(Token("error", error.term or "", error.column or start + 1, error=error))
                        return tokens
                    tokens.append(token)
                    continue
            tokens.append(Token("name", text[start:i], start + 1))
            continue
        if coefficients is not None and ch in "[]":
            if ch == "[":
                return fail("unexpected '['", start + 1, "[",
                            "'[' only follows a coefficient name, as in c[2,0]; group terms with ( )")
            return fail("unexpected ']'", start + 1, "]", "this ']' has no matching '['")
        if ch == "*" and i + 1 < n and text[i + 1] == "*":
            return fail(
                "'**' is not an operator",
                start + 1,
                "**",
                "use ^ for powers, as in x^2",
            )
        if ch in _OPERATORS:
            tokens.append(Token("op", ch, start + 1))
            i += 1
            continue
        if ch == ".":
            j = i + 1
            while j < n and text[j] in _DIGITS:
                j += 1
            if j > i + 1:
                literal = text[i:j]
                return fail(
                    f"malformed number '{_short(literal)}'",
                    start + 1,
                    literal,
                    f"write 0{_short(literal)}",
                )
            return fail(
                "unexpected '.'",
                start + 1,
                ".",
                "decimal numbers are written like 0.25",
            )
        return fail(
            f"unknown character {_describe_character(ch)}",
            start + 1,
            ch,
            _character_hint(ch),
        )
    end_col = len(text.rstrip(" \t\r\n")) + 1
    tokens.append(Token("end", "", end_col))
    return tokens


# --------------------------------------------------------------------------
# parser
# --------------------------------------------------------------------------

_BINARY = {"+": Add, "-": Sub, "*": Mul, "/": Div}


def _juxtaposed(token: Token) -> bool:
    return token.kind in ("num", "name", "coef") or (token.kind == "op" and token.text == "(")


def _chain(kind, items: List[Node], ops: List[str], col: int) -> Node:
    return items[0] if len(items) == 1 else kind(tuple(items), "".join(ops), col=col)


class _Parser:
    """Recursive descent over the token list (``sum``, ``factor``, ``call``)."""

    def __init__(self, text: str, tokens: List[Token]) -> None:
        self.text = text
        self.tokens = tokens
        self.pos = 0
        self.depth = 0

    # -- token access ------------------------------------------------------

    def peek(self) -> Token:
        token = self.tokens[min(self.pos, len(self.tokens) - 1)]
        if token.kind == "error":
            assert token.error is not None
            raise token.error
        return token

    def advance(self) -> Token:
        token = self.peek()
        self.pos += 1
        return token

    def at(self, op: str) -> bool:
        token = self.peek()
        return token.kind == "op" and token.text == op

    def enter(self, token: Token) -> None:
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise ParseError(
                "expression nested too deeply",
                column=token.col,
                term=token.text,
                hint=f"at most {MAX_DEPTH} levels of parentheses, calls, signs "
                "and powers are allowed; simplify the expression",
            )

    # -- error helpers -----------------------------------------------------

    def expected(self, after: Optional[Token], found: Token) -> ParseError:
        if after is None and found.kind == "op" and found.text in "),;":
            return self.unexpected(found)  # at the very start of the text
        found_text = "end of input" if found.kind == "end" else f"'{_short(found.text)}'"
        if after is None:
            message = f"expected an expression, found {found_text}"
        else:
            message = f"expected an expression after '{after.text}', found {found_text}"
        hint = "complete the expression"
        what = after.text if after is not None else None
        if found.kind == "op" and found.text == ")":
            if what == "(":
                hint = "parentheses must contain an expression"
            elif what == ",":
                hint = "remove the trailing ','"
            elif what == ";":
                hint = "write the argument after ';', as in G(0,1; x)"
            else:
                hint = "an operand is missing before ')'"
        elif found.kind == "op" and found.text == ",":
            hint = "an argument is missing before this ','"
        elif found.kind == "op" and found.text == ";":
            hint = "a letter is missing before this ';'" if what == "," else (
                "';' only separates letters from the argument, as in G(0,1; x)"
            )
        elif found.kind == "op" and found.text in "*/^":
            hint = f"'{found.text}' needs an operand on its left"
        elif found.kind == "end":
            hint = "the expression is incomplete"
        term = found.text if found.kind != "end" else (after.text if after else None)
        return ParseError(message, column=found.col, term=term, hint=hint)

    def unexpected(self, token: Token) -> ParseError:
        hints = {
            ")": "this ')' has no matching '('",
            ",": "',' only separates the arguments of a call, as in f(a, b)",
            ";": "';' only separates letters from the argument of a call, as in G(0,1; x)",
        }
        return ParseError(
            f"unexpected '{token.text}'",
            column=token.col,
            term=token.text,
            hint=hints.get(token.text, "remove it"),
        )

    def unclosed(self, opening: Token, found: Token) -> ParseError:
        if found.kind == "end":
            return ParseError(
                f"unbalanced parenthesis: '(' at column {opening.col} is never closed",
                column=found.col,
                term="(",
                hint="add ')' at the end",
            )
        if found.text in (",", ";"):
            return ParseError(
                f"unexpected '{found.text}' inside parentheses",
                column=found.col,
                term=found.text,
                hint=f"'{found.text}' only appears in calls such as f(a, b) or G(0,1; x)",
            )
        return self.unexpected(found)  # pragma: no cover - not reachable

    def juxtaposition(self, before: Token, after: Token) -> ParseError:
        def show(token: Token, following: Optional[Token]) -> str:
            if token.kind in ("num", "name", "coef"):
                text = _short(token.text, 20)
                if following is not None and following.kind == "op" and following.text == "(":
                    text += "(...)"
                return text
            return "(...)"

        after_next = self.tokens[min(self.pos + 1, len(self.tokens) - 1)]
        left = show(before, None)
        right = show(after, after_next if after.kind == "name" else None)
        term = self.text[before.col - 1 : after.col - 1 + len(after.text)]
        return ParseError(
            f"missing operator between '{_short(before.text, 20)}' and '{_short(after.text, 20)}'",
            column=after.col,
            term=_short(term),
            hint=f"implicit multiplication is not allowed; write {left}*{right}",
        )

    # -- grammar rules -----------------------------------------------------

    def parse(self) -> Node:
        first = self.peek()
        if first.kind == "end":
            raise ParseError(
                "empty expression",
                column=1,
                term=None,
                hint="write an expression such as 2*zeta(3)",
            )
        node, _ = self.sum(None)
        token = self.peek()
        if token.kind != "end":
            raise self.unexpected(token)
        return node

    def sum(self, after: Optional[Token]) -> Tuple[Node, int]:
        """The rules ``sum`` and ``product`` in one loop, building n-ary nodes.

        Keeping both precedence levels in one frame halves the Python stack
        used per level of parentheses; a flat sum of any length is one
        :class:`Sum` of :class:`Product` terms.
        """
        terms: List[Node] = []
        signs: List[str] = []
        factor, start = self.factor(after)
        factors, ops, term_start = [factor], [], start
        while True:
            token = self.peek()
            if token.kind != "op" or token.text not in "*/+-":
                break
            self.advance()
            if token.text in "*/":
                right, _ = self.factor(token)
                factors.append(right)
                ops.append(token.text)
            else:
                terms.append(_chain(Product, factors, ops, term_start))
                signs.append(token.text)
                factor, term_start = self.factor(token)
                factors, ops = [factor], []
        terms.append(_chain(Product, factors, ops, term_start))
        return _chain(Sum, terms, signs, start), start

    def factor(self, after: Optional[Token]) -> Tuple[Node, int]:
        """Signs, one atom, and an optional ``^ factor``."""
        signs: List[Token] = []
        while True:
            token = self.peek()
            if token.kind == "op" and token.text in "+-":
                self.advance()
                self.enter(token)
                signs.append(token)
                after = token
            else:
                break
        token = self.peek()
        start = token.col
        if token.kind == "num":
            self.advance()
            node: Node = Num(token.value, col=token.col)  # type: ignore[arg-type]
        elif token.kind == "coef":
            self.advance()
            if self.at("("):
                raise InputError(
                    "a coefficient cannot be called like a function",
                    column=token.col,
                    term=token.text,
                    hint=f"write {token.text}*(...) for a product",
                )
            family, indices = token.value  # type: ignore[misc]
            node = Coef(family, indices, col=token.col)
        elif token.kind == "name":
            self.advance()
            if self.at("("):
                node = self.call(token)
            else:
                node = Sym(token.text, col=token.col)
        elif token.kind == "op" and token.text == "(":
            self.advance()
            self.enter(token)
            node, _ = self.sum(token)
            closing = self.peek()
            if closing.kind == "op" and closing.text == ")":
                self.advance()
            else:
                raise self.unclosed(token, closing)
            self.depth -= 1
        else:
            raise self.expected(after, token)
        following = self.peek()
        if _juxtaposed(following):
            raise self.juxtaposition(self.tokens[self.pos - 1], following)
        if following.kind == "op" and following.text == "^":
            self.advance()
            self.enter(following)
            exponent, _ = self.factor(following)
            self.depth -= 1
            node = Pow(node, exponent, col=start)
        for sign in reversed(signs):
            if sign.text == "-":
                node = Neg(node, col=sign.col)
        self.depth -= len(signs)
        if signs:
            start = signs[0].col
        return node, start

    def call(self, name: Token) -> Call:
        opening = self.advance()
        self.enter(opening)
        items: List[Node] = []
        letters: Optional[List[Node]] = None
        separator = opening
        if self.at(")"):
            self.advance()
            self.depth -= 1
            return Call(name.text, (), None, col=name.col)
        if self.at(";"):
            separator = self.advance()
            letters = []
        while True:
            item, _ = self.sum(separator)
            items.append(item)
            token = self.peek()
            if token.kind == "op" and token.text == ",":
                separator = self.advance()
            elif token.kind == "op" and token.text == ";":
                if letters is not None:
                    raise ParseError(
                        "only one ';' is allowed in a call",
                        column=token.col,
                        term=";",
                        hint="write name(letters; argument), as in G(0,1; x)",
                    )
                letters, items = items, []
                separator = self.advance()
            elif token.kind == "op" and token.text == ")":
                self.advance()
                break
            elif token.kind == "end":
                raise self.unclosed(opening, token)
            else:  # pragma: no cover - every other token is consumed or rejected earlier
                raise self.unexpected(token)
        self.depth -= 1
        return Call(
            name.text,
            tuple(items),
            None if letters is None else tuple(letters),
            col=name.col,
        )


def parse_expression(
    text: str,
    *,
    source: Optional[str] = None,
    line: Optional[int] = None,
    coefficients: Optional[CoefficientCheck] = None,
) -> Node:
    """Parse one expression; see the module docstring for the grammar.

    ``source`` and ``line`` are copied into any :class:`ParseError` so that
    callers can report "file, line, column".  ``coefficients`` turns on
    coefficient references ``name[i, j, ...]`` (:class:`Coef` nodes): it is
    called as ``coefficients(name, indices, text, column)`` for each one, with
    ``indices`` None when the brackets do not hold signed integers, and
    raises to refuse it (see :mod:`lowenergy.constraints.model`).  Only errors derived from
    :class:`~lowenergy.errors.LowEnergyError` leave this function for any
    string; a non-string argument is a programming error (``TypeError``).

    >>> parse_expression("x^(-s-1+2)")
    Pow(Sym('x'), Sum((Neg(Sym('s')), Num(1), Num(2)), '-+'))
    >>> parse_expression("G(; x)")
    Call('G', (Sym('x'),), letters=())
    >>> parse_expression("2*c[1, -2]", coefficients=lambda *reference: None)
    Product((Num(2), Coef('c', (1, -2))), '*')
    >>> parse_expression("1 +")
    Traceback (most recent call last):
        ...
    lowenergy.errors.ParseError: column 4: expected an expression after '+', found end of input (term: '+'); hint: the expression is incomplete
    """
    if not isinstance(text, str):
        raise TypeError(f"parse_expression needs a str, not {type(text).__name__}")
    try:
        if len(text) > MAX_INPUT_LENGTH:
            raise ParseError(
                f"expression too long ({len(text)} characters)",
                column=MAX_INPUT_LENGTH + 1,
                term=None,
                hint=f"expressions may have at most {MAX_INPUT_LENGTH} characters",
            )
        return _Parser(text, _tokenize(text, coefficients)).parse()
    except LowEnergyError as error:
        raise error.located(source=source, line=line)
    except RecursionError:
        # Only reachable when the caller is itself already deeply nested;
        # MAX_DEPTH keeps the parser well inside the default limit.
        raise ParseError(
            "expression nested too deeply",
            source=source,
            line=line,
            column=1,
            hint="simplify the expression",
        ) from None
