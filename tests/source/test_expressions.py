"""Unit tests for the expression parser (calcsheet.source.expressions) and its sympy builder
(calcsheet.source.symbolic).

Precedence rules checked here are the usual ones of algebra (common practice, no source):
unary minus binds looser than a power (-x^2 = -(x^2)), powers are right-associative
(a^b^c = a^(b^c)), and * / bind tighter than + -. Every sympy object compared against is
built directly in the test from sympy constructors, never by parsing text.
"""

from __future__ import annotations

import pytest
import sympy as sp

from calcsheet.errors import InputError
from calcsheet.source import expressions as ex
from calcsheet.source.symbolic import to_sympy

a, b, c, x = sp.symbols("a b c x")
R, C, v, t, tau = sp.symbols("R C v t tau")
DV = sp.Symbol("dv/dt")
SYMBOLS = {"a": a, "b": b, "c": c, "x": x, "R": R, "C": C, "v": v, "t": t, "tau": tau}


def sym(text: str, derivative=None):
    return to_sympy(ex.parse_expression(text), SYMBOLS, derivative)


# ------------------------------------------------------------------------------ tokenize
def test_tokenize_kinds_texts_and_positions():
    tokens = ex.tokenize("R*C*dv / dt+v**2")
    assert [(tok.kind, tok.text) for tok in tokens] == [
        ("name", "R"),
        ("op", "*"),
        ("name", "C"),
        ("op", "*"),
        ("derivative", "dv / dt"),
        ("op", "+"),
        ("name", "v"),
        ("op", "**"),
        ("number", "2"),
        ("end", ""),
    ]
    assert [tok.position for tok in tokens] == [0, 1, 2, 3, 4, 11, 12, 13, 15, 16]


@pytest.mark.parametrize("text", ["1.5e-3", "2.5E+3", ".5", "3.", "42", "1e3"])
def test_tokenize_numbers_are_single_tokens(text):
    tokens = ex.tokenize(text)
    assert [(tok.kind, tok.text) for tok in tokens] == [("number", text), ("end", "")]


def test_tokenize_double_star_is_one_operator():
    tokens = ex.tokenize("a**b")
    assert [tok.text for tok in tokens if tok.kind == "op"] == ["**"]


@pytest.mark.parametrize(
    "text, char",
    [
        ("a; b", ";"),
        ("a'b", "'"),
        ("a @ b", "@"),
        ("x[0]", "["),
        ("a, b", ","),
        ("x.real", "."),
        ("τ*x", "τ"),
        ("a == b", None),  # '=' is a token; the parser, not the tokenizer, refuses a second one
    ],
)
def test_tokenize_refuses_characters_outside_the_grammar(text, char):
    if char is None:
        ex.tokenize(text)
        return
    with pytest.raises(InputError, match="unexpected character") as info:
        ex.tokenize(text)
    assert f"'{char}'" in str(info.value)


def test_tokenize_position_in_message_is_one_based():
    with pytest.raises(InputError, match="at position 3"):
        ex.tokenize("a ;")


def test_tokenize_refuses_overlong_text():
    with pytest.raises(InputError, match="longer than"):
        ex.tokenize("a+" * (ex.MAX_LENGTH // 2) + "a")


# ------------------------------------------------------------------------- precedence
def test_unary_minus_binds_looser_than_power():
    node = ex.parse_expression("-x^2")
    assert node == ex.Unary("-", ex.Binary("^", ex.Name("x"), ex.Number("2")))
    assert sym("-x^2") == -(x**2)
    assert sym("-x^2").subs(x, 3) == -9


def test_negative_number_squared():
    assert sym("-2^2") == sp.Integer(-4)
    assert sym("(-2)^2") == sp.Integer(4)


def test_negative_exponent():
    node = ex.parse_expression("2^-3")
    assert node == ex.Binary("^", ex.Number("2"), ex.Unary("-", ex.Number("3")))
    assert sym("2^-3") == sp.Rational(1, 8)


def test_power_is_right_associative():
    node = ex.parse_expression("a^b^c")
    assert node == ex.Binary("^", ex.Name("a"), ex.Binary("^", ex.Name("b"), ex.Name("c")))
    assert sym("a^b^c") == sp.Pow(a, sp.Pow(b, c))
    assert sym("2^3^2") == sp.Integer(512)  # 2^(3^2) = 2^9, not (2^3)^2 = 64


def test_parenthesised_power_is_left_grouped():
    assert sym("(a^b)^c") == sp.Pow(sp.Pow(a, b), c)
    assert sym("(a^b)^c") != sym("a^b^c")


def test_double_star_and_caret_are_the_same_operator():
    assert ex.parse_expression("x**2") == ex.parse_expression("x^2")
    assert sym("a**b**c") == sym("a^b^c")
    assert sym("x**-1") == 1 / x


def test_multiplication_before_addition():
    node = ex.parse_expression("a + b*c")
    assert node == ex.Binary("+", ex.Name("a"), ex.Binary("*", ex.Name("b"), ex.Name("c")))
    assert sym("a + b*c") == a + b * c


def test_subtraction_and_division_are_left_associative():
    assert sym("a - b - c") == a - b - c
    assert sym("a/b/c") == a / (b * c)
    assert sym("a - (b - c)") == a - b + c


def test_unary_after_binary_operator():
    assert sym("2*-3") == sp.Integer(-6)
    assert sym("a*-b") == -a * b
    assert sym("--a") == a
    assert sym("+a") == a


def test_minus_of_parenthesised_sum():
    assert sym("-(a + b)") == -a - b


# -------------------------------------------------------------------------- functions
@pytest.mark.parametrize(
    "text, expected",
    [
        ("exp(x)", sp.exp(x)),
        ("log(x)", sp.log(x)),
        ("ln(x)", sp.log(x)),
        ("log10(x)", sp.log(x, 10)),
        ("sqrt(x)", sp.sqrt(x)),
        ("sin(x)", sp.sin(x)),
        ("cos(x)", sp.cos(x)),
        ("tan(x)", sp.tan(x)),
        ("asin(x)", sp.asin(x)),
        ("arcsin(x)", sp.asin(x)),
        ("acos(x)", sp.acos(x)),
        ("arccos(x)", sp.acos(x)),
        ("atan(x)", sp.atan(x)),
        ("arctan(x)", sp.atan(x)),
        ("sinh(x)", sp.sinh(x)),
        ("cosh(x)", sp.cosh(x)),
        ("tanh(x)", sp.tanh(x)),
        ("abs(x)", sp.Abs(x)),
        ("erf(x)", sp.erf(x)),
        ("exp(-t/tau)", sp.exp(-t / tau)),
    ],
)
def test_functions_map_to_sympy(text, expected):
    assert sym(text) == expected


@pytest.mark.parametrize(
    "alias, canonical",
    [
        ("ln", "log"),
        ("arcsin", "asin"),
        ("arccos", "acos"),
        ("arctan", "atan"),
    ],
)
def test_function_aliases_are_canonicalised_in_the_tree(alias, canonical):
    node = ex.parse_expression(f"{alias}(x)")
    assert node == ex.Call(canonical, ex.Name("x"))
    assert ex.render(node) == f"{canonical}(x)"


def test_unknown_function_is_refused_by_name():
    with pytest.raises(InputError, match="'foo' is not a known function"):
        ex.parse_expression("foo(x)")


@pytest.mark.parametrize("text", ["__import__(x)", "eval(x)", "exec(x)", "getattr(x)", "open(x)"])
def test_python_builtins_are_not_functions(text):
    with pytest.raises(InputError, match="is not a known function"):
        ex.parse_expression(text)


def test_import_call_with_quotes_is_refused_at_the_quote():
    with pytest.raises(InputError, match="unexpected character '''"):
        ex.parse_equation("__import__('os').system('touch X') = 0")


def test_function_without_argument_is_refused():
    with pytest.raises(InputError, match="needs an argument"):
        ex.parse_expression("exp + 1")


def test_function_with_empty_parentheses_is_refused():
    with pytest.raises(InputError, match="expected a number, a name or '\\('"):
        ex.parse_expression("exp()")


# ------------------------------------------------------------------------ names/numbers
@pytest.mark.parametrize("text", ["_x", "__class__", "a__b"])
def test_names_with_leading_or_double_underscores_are_refused(text):
    with pytest.raises(InputError, match="is not an allowed name"):
        ex.parse_expression(text)


def test_names_with_digits_and_single_underscores_are_allowed():
    assert ex.parse_expression("T_air2") == ex.Name("T_air2")


def test_integer_stays_exact_and_decimal_becomes_float():
    assert sym("3") == sp.Integer(3)
    assert isinstance(sym("3"), sp.Integer)
    assert isinstance(sym("0.85"), sp.Float)
    assert float(sym("0.85")) == pytest.approx(0.85)
    assert float(sym("1e-3")) == pytest.approx(1e-3)
    assert float(sym("2.5E+3")) == pytest.approx(2500.0)


def test_pi_is_the_constant_unless_given_as_a_symbol():
    assert sym("pi*x") == sp.pi * x
    p = sp.Symbol("pi")
    assert to_sympy(ex.parse_expression("pi"), {"pi": p}) == p


@pytest.mark.parametrize("name", ["E", "I", "N", "S", "Q", "oo", "zoo", "lambda"])
def test_sympy_special_names_are_not_special(name):
    """Names sympy's own parser would treat specially stay plain, user-declared symbols."""
    with pytest.raises(InputError, match="is not defined"):
        to_sympy(ex.parse_expression(name), {})
    own = sp.Symbol(name)
    assert to_sympy(ex.parse_expression(name), {name: own}) == own


def test_undefined_name_is_refused():
    with pytest.raises(InputError, match="'y' is not defined"):
        sym("x + y")


def test_division_by_literal_zero_is_refused():
    with pytest.raises(InputError, match="division by zero"):
        sym("x/0")
    with pytest.raises(InputError, match="division by zero"):
        sym("x/(a - a)")


# ------------------------------------------------------------------------- derivatives
@pytest.mark.parametrize(
    "text, of, wrt, order",
    [
        ("dv/dt", "v", "t", 1),
        ("dT/dt", "T", "t", 1),
        ("dv / dt", "v", "t", 1),
        ("dv/ dt", "v", "t", 1),
        ("dtheta/dt", "theta", "t", 1),
        ("dv/dtau", "v", "tau", 1),
        ("dT_s/dx", "T_s", "x", 1),
        ("d2v/dt2", "v", "t", 2),
        ("d^2v/dt^2", "v", "t", 2),
        ("d²v/dt²", "v", "t", 2),
    ],
)
def test_derivative_tokens(text, of, wrt, order):
    node = ex.parse_expression(text)
    assert node == ex.Derivative(of, wrt, order, text)
    assert ex.derivatives_in(node) == [node]


def test_derivative_in_a_product_keeps_the_product():
    node = ex.parse_expression("R*C*dv/dt")
    assert node == ex.Binary("*", ex.Binary("*", ex.Name("R"), ex.Name("C")), ex.Derivative("v", "t", 1, "dv/dt"))


@pytest.mark.parametrize("text", ["dt", "dvdt", "dx", "x/dt"])
def test_names_beginning_with_d_are_names_without_a_slash_d(text):
    assert ex.derivatives_in(ex.parse_expression(text)) == []


def test_to_sympy_derivative_uses_the_callback():
    seen = []

    def stand_in(d):
        seen.append(d)
        return DV

    result = sym("R*C*dv/dt + v", stand_in)
    assert result == R * C * DV + v
    assert seen == [ex.Derivative("v", "t", 1, "dv/dt")]


def test_to_sympy_refuses_a_derivative_without_a_callback():
    with pytest.raises(InputError, match="derivative"):
        sym("dv/dt")


# ----------------------------------------------------------------------------- equations
def test_parse_equation_sides():
    eq = ex.parse_equation("R*C*dv/dt + v = 0")
    assert isinstance(eq, ex.Equation)
    assert eq.right == ex.Number("0")
    assert to_sympy(eq.left, SYMBOLS, lambda d: DV) == R * C * DV + v


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("a + b", "expected '=' between the two sides"),
        ("a = b = c", "expected an operator or the end but found '='"),
        ("", "equation is empty"),
        ("   ", "equation is empty"),
        ("a = ", "expected a number, a name or '(' but found the end"),
        ("(a = b", "expected ')'"),
        ("a) = b", "expected '='"),
        ("a = b +", "but found the end"),
        ("2x = 1", "expected '='"),
    ],
)
def test_parse_equation_errors(text, fragment):
    with pytest.raises(InputError) as info:
        ex.parse_equation(text)
    assert fragment in str(info.value)


@pytest.mark.parametrize("value", [None, 3, ["a = b"]])
def test_parse_equation_refuses_non_text(value):
    with pytest.raises(InputError, match="empty"):
        ex.parse_equation(value)


@pytest.mark.parametrize(
    "text, fragment",
    [
        ("a = b", "expected an operator or the end but found '='"),
        ("", "expression is empty"),
        ("a +", "found the end"),
        ("(a", "expected ')'"),
        ("a b", "expected an operator or the end but found 'b'"),
        ("*a", "expected a number, a name or '('"),
    ],
)
def test_parse_expression_errors(text, fragment):
    with pytest.raises(InputError) as info:
        ex.parse_expression(text)
    assert fragment in str(info.value)


def test_error_message_quotes_text_and_position():
    with pytest.raises(InputError) as info:
        ex.parse_expression("a + * b")
    assert str(info.value) == "expected a number, a name or '(' but found '*' at position 5 in 'a + * b'"


# ------------------------------------------------------------------------------- walking
def test_names_in_skips_functions_and_derivatives():
    eq = ex.parse_equation("R*C*dv/dt + v = V_s*exp(-t/tau) + pi")
    assert ex.names_in(eq.left) == {"R", "C", "v"}
    assert ex.names_in(eq.right) == {"V_s", "t", "tau", "pi"}
    assert ex.names_in(ex.parse_expression("3")) == set()


def test_derivatives_in_finds_all_in_order():
    node = ex.parse_expression("a*dv/dt + b*d2v/dt2 - sin(dw/dt)")
    found = ex.derivatives_in(node)
    assert [(d.of, d.order) for d in found] == [("v", 1), ("v", 2), ("w", 1)]


def test_additive_terms_signs():
    terms = ex.additive_terms(ex.parse_expression("a*b - c + x"))
    assert [(s, ex.render(n)) for s, n in terms] == [(1, "a*b"), (-1, "c"), (1, "x")]


def test_additive_terms_through_parentheses():
    terms = ex.additive_terms(ex.parse_expression("a - (b - c)"))
    assert [(s, ex.render(n)) for s, n in terms] == [(1, "a"), (-1, "b"), (1, "c")]
    terms = ex.additive_terms(ex.parse_expression("-(a + b) + c"))
    assert [(s, ex.render(n)) for s, n in terms] == [(-1, "a"), (-1, "b"), (1, "c")]


def test_additive_terms_do_not_split_products_or_functions():
    node = ex.parse_expression("a*(b + c)")
    assert ex.additive_terms(node) == [(1, node)]
    node = ex.parse_expression("exp(a + b)")
    assert ex.additive_terms(node) == [(1, node)]


def test_additive_terms_reproduce_the_sum():
    """Summing sign*term must give back the whole expression."""
    text = "a - (b - c) + x*(a - b) - -c"
    total = sum(s * sym(ex.render(n)) for s, n in ex.additive_terms(ex.parse_expression(text)))
    assert sp.expand(total - sym(text)) == 0


def test_children():
    assert ex.children(ex.Name("a")) == ()
    assert ex.children(ex.Unary("-", ex.Name("a"))) == (ex.Name("a"),)
    assert ex.children(ex.Call("exp", ex.Name("a"))) == (ex.Name("a"),)


# -------------------------------------------------------------------------------- render
@pytest.mark.parametrize(
    "text, rendered",
    [
        ("-x^2", "-x^2"),
        ("(-x)^2", "(-x)^2"),
        ("2^-3", "2^(-3)"),
        ("a^b^c", "a^b^c"),
        ("(a^b)^c", "(a^b)^c"),
        ("a**b", "a^b"),
        ("a-(b-c)", "a - (b - c)"),
        ("a/(b*c)", "a/(b*c)"),
        ("(a+b)*c", "(a + b)*c"),
        ("-(a+b)", "-(a + b)"),
        ("ln(x)", "log(x)"),
        ("R*C*dv/dt+v", "R*C*dv/dt + v"),
        ("d^2v/dt^2", "d^2v/dt^2"),
    ],
)
def test_render(text, rendered):
    assert ex.render(ex.parse_expression(text)) == rendered


@pytest.mark.parametrize(
    "text",
    [
        "-x^2",
        "2^-3",
        "a^b^c",
        "(a^b)^c",
        "a**b**c",
        "a - (b - c)",
        "a/(b/c)",
        "a/b/c",
        "-(a + b)*c",
        "(-a)^b",
        "a^-b^c",
        "2*-3",
        "--a",
        "a - -b",
        "exp(-t/tau)*(1 - a)",
        "sqrt(a^2 + b^2)/(x - 1)",
        "R*C*dv / dt + v",
        "a*(b*c)",
        "a + (b + c)",
        "a*(b/c)",
        "abs(-a)^0.5",
        "1.5e-3*x",
        "pi*x^2/4",
    ],
)
def test_render_round_trip(text):
    """Rendering and re-parsing keeps the meaning, and rendering again is stable."""
    once = ex.render(ex.parse_expression(text))
    again = ex.render(ex.parse_expression(once))
    assert again == once
    assert sp.simplify(sym(once, lambda d: DV) - sym(text, lambda d: DV)) == 0
