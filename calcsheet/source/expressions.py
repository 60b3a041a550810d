"""A whitelisting parser for the equations and expressions engineers write.

User text never reaches eval, exec or sympify: it is tokenised here, parsed by recursive descent
into a small syntax tree of known node kinds, and only then turned into sympy objects by
``to_sympy``. Anything outside the grammar is refused with a message naming what was found.

Grammar::

    equation   := expression "=" expression
    expression := term (("+" | "-") term)*
    term       := signed (("*" | "/") signed)*
    signed     := ("+" | "-") signed | power
    power      := atom (("^" | "**") signed)?
    atom       := number | derivative | name | function "(" expression ")" | "(" expression ")"
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Union

from calcsheet.errors import InputError

FUNCTIONS = (
    "exp",
    "log",
    "ln",
    "log10",
    "sqrt",
    "sin",
    "cos",
    "tan",
    "asin",
    "acos",
    "atan",
    "arcsin",
    "arccos",
    "arctan",
    "sinh",
    "cosh",
    "tanh",
    "abs",
    "erf",
    "step",
)
CONSTANTS = ("pi",)
NAME_PATTERN = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")
MAX_LENGTH = 2000
# Nesting bounds keep recursion far below Python's limit, in this parser and in every walk of the
# tree after it: parentheses, calls, signs and exponents inside each other, and the depth of the
# finished tree (a sum of n terms is n levels deep).
MAX_NESTING = 50
MAX_TREE_DEPTH = 200

_NUMBER = re.compile(r"(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")
_NAME_TEXT = r"[A-Za-z_][A-Za-z0-9_]*"
_SECOND_DERIVATIVE = re.compile(
    rf"d(?:\^?2|²)(?P<of>{_NAME_TEXT})\s*/\s*d(?P<wrt>{_NAME_TEXT}?)(?:\^?2|²)(?![A-Za-z0-9_])"
)
_FIRST_DERIVATIVE = re.compile(rf"d(?P<of>{_NAME_TEXT})\s*/\s*d(?P<wrt>{_NAME_TEXT})(?![A-Za-z0-9_])")
_OPERATORS = ("**", "+", "-", "*", "/", "^", "(", ")", "=")


# ----------------------------------------------------------------------------------- tree
@dataclass(frozen=True)
class Number:
    text: str


@dataclass(frozen=True)
class Name:
    name: str


@dataclass(frozen=True)
class Measured:
    """A number with its unit, as written in a value: "550 uF", "8.8 K" (only in values, never in equations)."""

    number: str
    unit: str


@dataclass(frozen=True)
class Derivative:
    """d^order(of)/d(wrt)^order, as written."""

    of: str
    wrt: str
    order: int
    text: str


@dataclass(frozen=True)
class Unary:
    op: str
    operand: "Node"


@dataclass(frozen=True)
class Binary:
    op: str  # one of + - * / ^
    left: "Node"
    right: "Node"


@dataclass(frozen=True)
class Call:
    function: str
    argument: "Node"


Node = Union[Number, Name, Measured, Derivative, Unary, Binary, Call]


@dataclass(frozen=True)
class Equation:
    left: Node
    right: Node


# ------------------------------------------------------------------------------ tokenizer
@dataclass(frozen=True)
class Token:
    kind: str  # number, name, derivative, measured, op, end
    text: str
    position: int
    derivative: Derivative | None = None
    measured: Measured | None = None


def tokenize(text: str, names: frozenset[str] = frozenset(), quantities: bool = False) -> list[Token]:
    """Split ``text`` into tokens; any character outside the grammar is refused.

    ``dX/dY`` is a derivative unless both ``dX`` and ``dY`` are known names (``names``), so a
    ratio such as ``d_i/d_o`` of two parameters stays a ratio. ``quantities``: a value, where a number may
    carry its unit ("4 * 550 uF"); there no derivative is read, and a name after a number is its unit.
    """
    if len(text) > MAX_LENGTH:
        raise InputError(f"expression is longer than {MAX_LENGTH} characters")
    tokens: list[Token] = []
    pos = 0
    while pos < len(text):
        char = text[pos]
        if char.isspace():
            pos += 1
            continue
        token, pos = _next_quantity(text, pos, names) if quantities else _next_token(text, pos, names)
        tokens.append(token)
    tokens.append(Token("end", "", len(text)))
    return tokens


def _next_token(text: str, pos: int, names: frozenset[str]) -> tuple[Token, int]:
    if text[pos] == "d":
        for order, pattern in ((2, _SECOND_DERIVATIVE), (1, _FIRST_DERIVATIVE)):
            match = pattern.match(text, pos)
            if match and not {"d" + match.group("of"), "d" + match.group("wrt")} <= names:
                derivative = Derivative(match.group("of"), match.group("wrt"), order, match.group(0))
                return Token("derivative", match.group(0), pos, derivative), match.end()
    match = _NUMBER.match(text, pos)
    if match:
        return Token("number", match.group(0), pos), match.end()
    match = _NAME.match(text, pos)
    if match:
        return Token("name", match.group(0), pos), match.end()
    for op in _OPERATORS:
        if text.startswith(op, pos):
            return Token("op", op, pos), pos + len(op)
    raise InputError(f"unexpected character '{text[pos]}' at position {pos + 1} in '{text}'")


def _next_quantity(text: str, pos: int, names: frozenset[str]) -> tuple[Token, int]:
    """A token of a value: a number with the unit that follows it ("550 uF", "15 W/(m^2*K)"), or as in equations
    but without derivatives (a value is no function of the variable)."""
    match = _NUMBER.match(text, pos)
    if not match:
        for op in _OPERATORS:
            if text.startswith(op, pos):
                return Token("op", op, pos), pos + len(op)
        name = _NAME.match(text, pos)
        if name:
            return Token("name", name.group(0), pos), name.end()
        raise InputError(f"unexpected character '{text[pos]}' at position {pos + 1} in '{text}'")
    start = match.end()
    while start < len(text) and text[start] == " ":
        start += 1
    if start >= len(text) or not _UNIT_START.match(text[start]):
        return Token("number", match.group(0), pos), match.end()
    word = _NAME.match(text, start)
    if word and (word.group(0) in names or word.group(0) in FUNCTIONS or word.group(0) in CONSTANTS):
        number, name = match.group(0), word.group(0)
        raise InputError(f"'{number} {name}' in '{text}': write a product with '*' ({number}*{name})")
    end = _unit_end(text, start, names)
    measured = Measured(match.group(0), text[start:end])
    return Token("measured", text[pos:end], pos, measured=measured), end


_UNIT_START = re.compile(r"[A-Za-z_µμΩ°%]")


def _unit_end(text: str, pos: int, names: frozenset[str]) -> int:
    """Where a unit written after a number ends: at a space, a sign, a bracket it did not open, or a '*' or '/'
    followed by a number or a parameter ("550 uF/2", "550 uF*n")."""
    depth, index = 0, pos
    while index < len(text):
        char = text[index]
        if char.isspace() or char == "+" or char == "=":
            break
        if char == "-" and not (depth or text[index - 1] == "^"):
            break
        if char == "(":
            depth += 1
        elif char == ")":
            if depth == 0:
                break
            depth -= 1
        elif text.startswith("**", index):
            index += 2
            continue
        elif char in "*/" and depth == 0:
            after = _NAME.match(text, index + 1)
            if (after is None and text[index + 1 : index + 2] != "(") or (after and after.group(0) in names):
                break
        index += 1
    return index


# --------------------------------------------------------------------------------- parser
class _Parser:
    """Recursive descent over the token list; one method per grammar rule."""

    def __init__(self, text: str, names: frozenset[str] = frozenset(), quantities: bool = False):
        self.text = text
        self.tokens = tokenize(text, names, quantities)
        self.index = 0
        self.nesting = 0

    def nested(self, rule):
        """Run a grammar rule one level deeper, refusing input nested beyond MAX_NESTING."""
        self.nesting += 1
        try:
            if self.nesting > MAX_NESTING:
                raise InputError(
                    f"the expression nests more than {MAX_NESTING} levels deep (parentheses, "
                    f"functions, signs or powers inside each other) in '{_shortened(self.text)}'"
                )
            return rule()
        finally:
            self.nesting -= 1

    @property
    def current(self) -> Token:
        return self.tokens[self.index]

    def take(self) -> Token:
        token = self.tokens[self.index]
        self.index += 1
        return token

    def accept(self, *ops: str) -> str | None:
        if self.current.kind == "op" and self.current.text in ops:
            return self.take().text
        return None

    def expect(self, op: str) -> None:
        if not self.accept(op):
            raise self.error(f"expected '{op}'")

    def error(self, message: str) -> InputError:
        token = self.current
        found = "the end" if token.kind == "end" else f"'{token.text}'"
        return InputError(f"{message} but found {found} at position {token.position + 1} in '{self.text}'")

    def expression(self) -> Node:
        node = self.term()
        while op := self.accept("+", "-"):
            node = Binary(op, node, self.term())
        return node

    def term(self) -> Node:
        node = self.signed()
        while op := self.accept("*", "/"):
            node = Binary(op, node, self.signed())
        return node

    def signed(self) -> Node:
        if op := self.accept("+", "-"):
            return Unary(op, self.nested(self.signed))
        return self.power()

    def power(self) -> Node:
        base = self.atom()
        if self.accept("^", "**"):
            return Binary("^", base, self.nested(self.signed))
        return base

    def atom(self) -> Node:
        token = self.current
        if token.kind == "number":
            self.take()
            return Number(token.text)
        if token.kind == "derivative":
            self.take()
            return token.derivative
        if token.kind == "measured":
            self.take()
            return token.measured
        if token.kind == "name":
            return self.name_or_call()
        if self.accept("("):
            node = self.nested(self.expression)
            self.expect(")")
            return node
        raise self.error("expected a number, a name or '('")

    def name_or_call(self) -> Node:
        token = self.take()
        name = token.text
        if self.accept("("):
            if name not in FUNCTIONS:
                raise InputError(f"'{name}' is not a known function (known: {', '.join(FUNCTIONS)})")
            argument = self.nested(self.expression)
            self.expect(")")
            return Call(_canonical_function(name), argument)
        if name in FUNCTIONS:
            raise InputError(f"function '{name}' needs an argument in parentheses, e.g. {name}(x)")
        if not NAME_PATTERN.match(name) or "__" in name:
            raise InputError(f"'{name}' is not an allowed name (letters, digits and single underscores)")
        return Name(name)


def _canonical_function(name: str) -> str:
    return {"ln": "log", "arcsin": "asin", "arccos": "acos", "arctan": "atan"}.get(name, name)


def parse_expression(text: str) -> Node:
    """Parse an expression (no '=')."""
    if not isinstance(text, str) or not text.strip():
        raise InputError("expression is empty")
    parser = _Parser(text)
    node = parser.expression()
    if parser.current.kind != "end":
        raise parser.error("expected an operator or the end")
    _refuse_deep_tree(node, text)
    return node


def parse_value(text: str, names: frozenset[str] = frozenset()) -> Node:
    """Parse a value written as an expression of numbers with units and parameters: "4 * 550 uF", "R*C",
    "T_amb + 8.8 K". ``names``: the parameters, so "2 R" is refused rather than read as a unit."""
    if not isinstance(text, str) or not text.strip():
        raise InputError("expression is empty")
    parser = _Parser(text, names, quantities=True)
    node = parser.expression()
    if parser.current.kind != "end":
        raise parser.error("expected an operator or the end")
    _refuse_deep_tree(node, text)
    return node


def parse_equation(text: str, names: frozenset[str] = frozenset()) -> Equation:
    """Parse ``left = right``; exactly one '=' is allowed. ``names``: the parameter names."""
    if not isinstance(text, str) or not text.strip():
        raise InputError("equation is empty")
    parser = _Parser(text, names)
    left = parser.expression()
    if not parser.accept("="):
        raise parser.error("expected '=' between the two sides of the equation")
    right = parser.expression()
    if parser.current.kind != "end":
        raise parser.error("expected an operator or the end")
    _refuse_deep_tree(left, text)
    _refuse_deep_tree(right, text)
    return Equation(left, right)


def _refuse_deep_tree(node: Node, text: str) -> None:
    """Measure the tree without recursion; refuse one deeper than MAX_TREE_DEPTH."""
    stack = [(node, 1)]
    while stack:
        current, depth = stack.pop()
        if depth > MAX_TREE_DEPTH:
            raise InputError(
                f"the expression is more than {MAX_TREE_DEPTH} operations deep (a sum of more "
                f"than {MAX_TREE_DEPTH} terms, say) in '{_shortened(text)}'; write it more simply"
            )
        stack.extend((child, depth + 1) for child in children(current))


def _shortened(text: str, limit: int = 60) -> str:
    text = " ".join(text.split())
    return text if len(text) <= limit else text[: limit - 3] + "..."


# -------------------------------------------------------------------------------- walking
def names_in(node: Node) -> set[str]:
    """Every plain name the tree refers to."""
    if isinstance(node, Name):
        return {node.name}
    return set().union(*(names_in(child) for child in children(node))) if children(node) else set()


def derivatives_in(node: Node) -> list[Derivative]:
    if isinstance(node, Derivative):
        return [node]
    return [d for child in children(node) for d in derivatives_in(child)]


def children(node: Node) -> tuple[Node, ...]:
    if isinstance(node, Unary):
        return (node.operand,)
    if isinstance(node, Binary):
        return (node.left, node.right)
    if isinstance(node, Call):
        return (node.argument,)
    return ()


def additive_terms(node: Node, sign: int = 1) -> list[tuple[int, Node]]:
    """Split a sum into its signed terms, as written (used to name the offending term)."""
    if isinstance(node, Binary) and node.op in "+-":
        right_sign = sign if node.op == "+" else -sign
        return additive_terms(node.left, sign) + additive_terms(node.right, right_sign)
    if isinstance(node, Unary) and node.op == "-" and isinstance(node.operand, Binary) and node.operand.op in "+-":
        return additive_terms(node.operand, -sign)
    return [(sign, node)]


def render(node: Node, times: str = "*") -> str:
    """Write a tree back as text in the input notation (for messages and the record); ``times``: how a product
    is written (" × " for a hand-check line)."""
    if isinstance(node, Number):
        return node.text
    if isinstance(node, Name):
        return node.name
    if isinstance(node, Derivative):
        return node.text
    if isinstance(node, Measured):
        return f"{node.number} {node.unit}"
    if isinstance(node, Unary):
        return f"{node.op}{_wrap(node.operand, 3, times)}"
    if isinstance(node, Call):
        return f"{node.function}({render(node.argument, times)})"
    level = _LEVEL[node.op]
    left = _wrap(node.left, level if node.op != "^" else level + 1, times)
    right = _wrap(node.right, level + (0 if node.op in "+*" else 1) if node.op != "^" else level, times)
    spaced = f" {node.op} " if node.op in "+-" else (times if node.op == "*" else node.op)
    if node.op == "/" and times != "*":  # a hand-check line: "2200 uF / 2", never "uF/2"
        spaced = " / "
    return f"{left}{spaced}{right}"


_LEVEL = {"+": 1, "-": 1, "*": 2, "/": 2, "^": 4}


def _wrap(node: Node, level: int, times: str = "*") -> str:
    text = render(node, times)
    own = _LEVEL.get(node.op, 5) if isinstance(node, Binary) else (3 if isinstance(node, Unary) else 5)
    if isinstance(node, Measured) and level > 2:
        own = 2  # a number with its unit is a product: (550 uF)^2
    return f"({text})" if own < level else text
