"""The parser: every construct of the circuit language (the normative page is
docs/language.md) becomes the expected syntax-tree dataclasses, with line and column."""

import ast
import re
from fractions import Fraction

import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from symcirc.errors import SymcircError
from symcirc.language import syntax as sx
from symcirc.language.parser import (
    _parser,
    parse_claim,
    parse_document,
    parse_expression,
    parse_quantity,
    read_source,
)

OHM = "\u03a9"


def where(text: str, needle: str, nth: int = 0) -> tuple[int, int]:
    """1-based line and column of the nth occurrence of `needle` in `text` (a plain text
    search; a needle that starts or ends with a word character matches whole words only)."""
    pattern = re.escape(needle)
    if re.match(r"\w", needle):
        pattern = r"(?<!\w)" + pattern
    if re.search(r"\w$", needle):
        pattern += r"(?!\w)"
    index = list(re.finditer(pattern, text))[nth].start()
    line = text.count("\n", 0, index) + 1
    return line, index - (text.rfind("\n", 0, index) + 1) + 1


def name(text: str, needle: str, nth: int = 0) -> sx.Name:
    return sx.Name(*where(text, needle, nth), needle)


def only(text: str):
    (statement,) = parse_document(text).statements
    return statement


# ------------------------------------------------------------------ statements


def test_title_unescapes_quotes_and_backslashes():
    text = r'title "Sensor \"A\" front end \\ channel 3"'
    assert only(text) == sx.Title(1, 1, 'Sensor "A" front end \\ channel 3')


def test_param_with_value_tolerance_and_description():
    text = f'param  R0 = 1 k{OHM} ± 0.1 %     "sensor resistance at 0 °C"'
    one_k = sx.Number(*where(text, f"1 k{OHM}"), Fraction(1000), OHM, f"1 k{OHM}")
    tenth = sx.Number(*where(text, "0.1"), Fraction(1, 10), None, "0.1")
    tolerance = sx.Tolerance(*where(text, "±"), tenth, tenth, True)
    expected = sx.Param(
        1, 1, name(text, "R0"),
        sx.Value(*where(text, f"1 k{OHM}"), one_k, tolerance, f"1 k{OHM} ± 0.1 %"),
        "sensor resistance at 0 °C",
    )
    assert only(text) == expected


def test_param_without_value_is_a_free_symbol():
    text = 'param  alpha                 "temperature coefficient"      # no value'
    assert only(text) == sx.Param(1, 1, name(text, "alpha"), None, "temperature coefficient")


@pytest.mark.parametrize("kind", [
    "resistor", "capacitor", "inductor", "conductance", "impedance", "admittance",
    "voltage source", "current source",
])
def test_every_two_terminal_kind(kind):
    text = f"{kind}  X1 (a, 0)"
    assert only(text) == sx.ElementStatement(
        1, 1, kind, name(text, "X1"), (name(text, "a"), name(text, "0")), None, None)


def test_element_value_is_an_expression_of_parameters():
    text = "resistor Rt (exc, b) = R0*(1 + alpha*T)   # defined by an expression"
    one = sx.Number(*where(text, "1"), Fraction(1), None, "1")
    inner = sx.Binary(*where(text, "1"), "+", one,
                      sx.Binary(*where(text, "alpha"), "*", name(text, "alpha"), name(text, "T")))
    product = sx.Binary(*where(text, "R0"), "*", name(text, "R0"), inner)
    statement = only(text)
    assert statement.value == sx.Value(*where(text, "R0"), product, None, "R0*(1 + alpha*T)")
    assert statement.terminals == (name(text, "exc"), name(text, "b"))


def test_controlled_sources_use_voltages_and_currents():
    text = ("voltage source Uamp (o, gnd) = A*V(p, n)\n"
            "current source Ibeta (c, e) = beta*I(Rb)\n"
            "current source Igm (c, e) = gm*V(b)")
    e1, f1, gm = parse_document(text).statements
    assert e1.value.expression == sx.Binary(
        *where(text, "A*"), "*", name(text, "A"),
        sx.Voltage(*where(text, "V("), (name(text, "p"), name(text, "n"))))
    assert f1.value.expression == sx.Binary(
        *where(text, "beta"), "*", name(text, "beta"),
        sx.Current(*where(text, "I("), name(text, "Rb")))
    assert gm.value.expression.right == sx.Voltage(*where(text, "V(", 1), (name(text, "b"),))


def test_opamp_transformer_and_coupling():
    text = ("opamp        U2 (p, n, o) = A0/(1 + s/wa)\n"
            "transformer  T1 (p1, n1; p2, n2) = N\n"
            "coupling     k12 (L1, L2) = k")
    opamp, transformer, coupling = parse_document(text).statements
    assert opamp.kind == "opamp"
    assert [t.name for t in opamp.terminals] == ["p", "n", "o"]
    assert opamp.value.text == "A0/(1 + s/wa)"
    assert transformer.terminals == tuple(name(text, n) for n in ("p1", "n1", "p2", "n2"))
    assert transformer.value.expression == name(text, "N")
    assert coupling == sx.ElementStatement(
        3, 1, "coupling", name(text, "k12"), (name(text, "L1"), name(text, "L2")),
        sx.Value(*where(text, "k"), name(text, "k"), None, "k"), None)


def test_port_with_description():
    text = 'port out (a, b)   "bridge diagonal"'
    assert only(text) == sx.PortStatement(
        1, 1, name(text, "out"), (name(text, "a"), name(text, "b")), "bridge diagonal")


def test_blocks_nest_and_instances_rename():
    text = ("block half_bridge (top, mid, bottom)\n"
            "    resistor Ra (top, mid)\n"
            "    block arm (x, y)\n"
            "        resistor Rc (x, y)\n"
            "    end\n"
            "    resistor Rb (mid, bottom)\n"
            "end\n"
            "\n"
            "half_bridge left  (exc, a, gnd) with Ra = R1, Rb = R2\n"
            "half_bridge right (exc, b, 0)\n")
    block, left, right = parse_document(text).statements
    assert block.name == name(text, "half_bridge")
    assert [t.name for t in block.terminals] == ["top", "mid", "bottom"]
    ra, arm, rb = block.body
    assert (ra.name.name, rb.name.name) == ("Ra", "Rb")
    assert arm == sx.Block(*where(text, "block arm"), name(text, "arm"),
                           (name(text, "x"), name(text, "y")),
                           (sx.ElementStatement(*where(text, "resistor Rc"), "resistor",
                                                name(text, "Rc"),
                                                (name(text, "x", 1), name(text, "y", 1)),
                                                None, None),))
    assert left == sx.Instance(
        9, 1, name(text, "half_bridge", 1), name(text, "left"),
        (name(text, "exc"), name(text, "a"), name(text, "gnd")),
        (sx.Rename(*where(text, "Ra = "), name(text, "Ra", 1), name(text, "R1")),
         sx.Rename(*where(text, "Rb = "), name(text, "Rb", 1), name(text, "R2"))))
    assert right.renames == () and right.terminals[2].name == "0"


def test_derive_with_where_clauses_separated_by_commas_and_and():
    text = "derive gain(Uin, out), V(out) where A -> oo, R -> 0 and Rm >> R1, C << D"
    statement = only(text)
    assert [q.text for q in statement.quantities] == ["gain(Uin, out)", "V(out)"]
    assert statement.assumptions == (
        sx.Assumption(*where(text, "A ->"), "limit", name(text, "A"), name(text, "oo")),
        sx.Assumption(*where(text, "R ->"), "limit", sx.Name(*where(text, "R ->"), "R"),
                      sx.Number(*where(text, "0"), Fraction(0), None, "0")),
        sx.Assumption(*where(text, "Rm"), "much_greater", name(text, "Rm"), name(text, "R1")),
        sx.Assumption(*where(text, "C <<"), "much_greater", name(text, "D"), name(text, "C")),
    )


def test_claim_keeps_the_expression_as_written():
    text = "claim  thevenin(out).impedance = R1*R2/(R1 + R2) + R3*R4/(R3 + R4)"
    statement = only(text)
    assert statement.quantity.text == "thevenin(out).impedance"
    assert statement.quantity.attribute == "impedance"
    assert statement.text == "R1*R2/(R1 + R2) + R3*R4/(R3 + R4)"
    assert statement.expression.op == "+"


# ------------------------------------------------------------------ quantities


def test_quantities_are_normalised():
    assert parse_quantity("gain( Ub ,out )").text == "gain(Ub, out)"
    assert parse_quantity("thevenin(out) . impedance").text == "thevenin(out).impedance"
    assert parse_quantity("twoport(p1,p2).z21") == sx.Quantity(
        1, 1, "twoport", (sx.Name(1, 9, "p1"), sx.Name(1, 12, "p2")), "z21",
        "twoport(p1, p2).z21")


def test_quantity_arguments_of_every_sort():
    loading = parse_quantity(f"loading(out, 10 k{OHM})")
    assert loading.args[1] == sx.Number(1, 14, Fraction(10_000), OHM, f"10 k{OHM}")
    minimum = parse_quantity("minimum_load(out, 0.1 %)")
    assert minimum.args[1].value == Fraction(1, 1000) and minimum.args[1].unit == "%"
    nested = parse_quantity("sensitivity(V(out), R1)")
    assert nested.args[0] == sx.Quantity(1, 13, "V", (sx.Name(1, 15, "out"),), None, "V(out)")
    solve = parse_quantity("solve(gain(Uin, out) = -10, Rf)")
    assert solve.text == "solve(gain(Uin, out) = -10, Rf)"
    equation = solve.args[0]
    assert isinstance(equation, sx.Equation) and equation.left.text == "gain(Uin, out)"
    assert equation.right == sx.Unary(1, 24, "-", sx.Number(1, 25, Fraction(10), None, "10"))
    assert parse_quantity("V(3, 0)").args == (sx.Name(1, 3, "3"), sx.Name(1, 6, "0"))
    assert parse_quantity("I(R1)").args == (sx.Name(1, 3, "R1"),)


def test_claim_and_expression_from_the_command_line():
    quantity, expression, text = parse_claim("thevenin(out).impedance = R1*R2/(R1 + R2)")
    assert quantity.text == "thevenin(out).impedance"
    assert text == "R1*R2/(R1 + R2)"
    assert (expression.line, expression.column, expression.op) == (1, 27, "/")
    assert expression.left == sx.Binary(1, 27, "*", sx.Name(1, 27, "R1"), sx.Name(1, 30, "R2"))
    assert parse_expression("sqrt(L1*L2)") == sx.Function(
        1, 1, "sqrt", sx.Binary(1, 6, "*", sx.Name(1, 6, "L1"), sx.Name(1, 9, "L2")))


# ------------------------------------------------------------------ numbers, units, tolerances


def test_plus_minus_is_a_tolerance_only_at_the_end_of_a_value():
    inside = parse_expression("(a+-b) +-2*c")
    assert inside.left == sx.Binary(1, 2, "+", sx.Name(1, 2, "a"),
                                    sx.Unary(1, 4, "-", sx.Name(1, 5, "b")))
    assert only("resistor R3 (a, b) = R0 +-1").value.tolerance.plus.value == 1
    with pytest.raises(SymcircError, match="is a tolerance, which does not belong here"):
        parse_claim("V(out) = a +-2")


def test_a_unit_attaches_only_to_a_number_literal():
    seconds = parse_expression("2 s")
    assert seconds == sx.Number(1, 1, Fraction(2), "s", "2 s")
    twice = parse_expression("2*s")
    assert twice == sx.Binary(1, 1, "*", sx.Number(1, 1, Fraction(2), None, "2"),
                              sx.Name(1, 3, "s"))


@pytest.mark.parametrize(("literal", "value", "unit"), [
    ("4k7", 4700, None), ("2.2\u00b5", Fraction(11, 5_000_000), None),
    ("1e-3", Fraction(1, 1000), None), ("2.5E6", 2_500_000, None),
    (f"10 k{OHM}", 10_000, OHM), ("10kohm", 10_000, OHM),
    ("4.7 nF", Fraction(47, 10**10), "F"), ("1 ms", Fraction(1, 1000), "s"),
])
def test_numbers_in_values_are_exact(literal, value, unit):
    text = f"capacitor C1 (x, gnd) = {literal}"
    number = only(text).value.expression
    assert number == sx.Number(*where(text, literal), Fraction(value), unit, literal)


def test_tolerances_symmetric_absolute_and_asymmetric():
    text = (f"resistor R1 (a, b) = 1 k{OHM} +- 1 %\n"
            f"resistor R2 (a, b) = 4k7 ± 5 {OHM}\n"
            "capacitor C1 (a, b) = 100 nF +80 % -20 %")
    first, second, third = (s.value.tolerance for s in parse_document(text).statements)
    one = sx.Number(*where(text, "1 %"), Fraction(1), None, "1")
    assert first == sx.Tolerance(*where(text, "+-"), one, one, True)
    five = sx.Number(*where(text, f"5 {OHM}"), Fraction(5), OHM, f"5 {OHM}")
    assert second == sx.Tolerance(*where(text, "±"), five, five, False)
    assert third == sx.Tolerance(*where(text, "+80"),
                                 sx.Number(*where(text, "80"), Fraction(80), None, "80"),
                                 sx.Number(*where(text, "20"), Fraction(20), None, "20"), True)
    assert parse_document(text).statements[2].value.text == "100 nF +80 % -20 %"


# ------------------------------------------------------------------ expressions


def test_power_binds_tighter_than_unary_minus_and_is_right_associative():
    # Usual algebraic precedence (common practice): -x^2 = -(x^2), a^b^c = a^(b^c).
    assert parse_expression("-x^2") == sx.Unary(
        1, 1, "-", sx.Binary(1, 2, "^", sx.Name(1, 2, "x"),
                             sx.Number(1, 4, Fraction(2), None, "2")))
    right = parse_expression("a**b^c")
    assert right.op == "^" and right.right.op == "^" and right.left == sx.Name(1, 1, "a")


def _ours(node):
    if isinstance(node, sx.Binary):
        return (node.op, _ours(node.left), _ours(node.right))
    if isinstance(node, sx.Unary):
        return (node.op, _ours(node.operand))
    if isinstance(node, sx.Number):
        return int(node.value)
    return node.name


_AST_OPS = {ast.Add: "+", ast.Sub: "-", ast.Mult: "*", ast.Div: "/", ast.Pow: "^",
            ast.USub: "-", ast.UAdd: "+"}


def _python(node):
    if isinstance(node, ast.BinOp):
        return (_AST_OPS[type(node.op)], _python(node.left), _python(node.right))
    if isinstance(node, ast.UnaryOp):
        return (_AST_OPS[type(node.op)], _python(node.operand))
    if isinstance(node, ast.Constant):
        return node.value
    return node.id


_atoms = st.one_of(st.sampled_from(["a", "b", "R1", "x_2"]), st.integers(0, 99).map(str))
_expressions = st.recursive(
    _atoms,
    lambda inner: st.one_of(
        st.tuples(inner, st.sampled_from(["+", "-", "*", "/", "^", "**"]), inner,
                  st.sampled_from(["", " "])).map(lambda t: f"{t[0]}{t[3]}{t[1]}{t[3]}{t[2]}"),
        st.tuples(st.sampled_from(["-", "+"]), inner).map("".join),
        inner.map(lambda e: f"({e})"),
    ),
    max_leaves=12,
)


@settings(max_examples=300, deadline=None)
@given(_expressions)
def test_expression_structure_agrees_with_python_ast(text):
    # Python's own parser (ast module, no evaluation) has the same precedence rules for
    # + - * / ** and unary signs: an independent reading of the same text. By design
    # (language.md) `+-` before a number that ends the text is the tolerance sign.
    assume(not re.search(r"\+-[0-9]+$", text))
    python = ast.parse(text.replace("^", "**"), mode="eval").body
    assert _ours(parse_expression(text)) == _python(python)


# ------------------------------------------------------------------ layout


def test_comments_continuations_blank_lines_and_crlf():
    text = ("# a comment line\r\n"
            "\r\n"
            "resistor R1 (a, \\\r\n"
            "             b) = 10k   # trailing comment\r\n"
            "   # indented comment\r\n"
            "resistor R2 (b, gnd) = 4k7 \\\n"
            "    ± 1 %\n")
    r1, r2 = parse_document(text).statements
    assert r1.terminals == (sx.Name(3, 14, "a"), sx.Name(4, 14, "b"))
    assert r1.value.expression == sx.Number(4, 19, Fraction(10_000), None, "10k")
    assert r2.value.text == "4k7 ± 1 %"
    assert r2.value.tolerance.line == 7


def test_empty_and_comment_only_files():
    for text in ("", "\n\n", "# nothing\n   # here", "   "):
        assert parse_document(text).statements == ()


def test_document_keeps_file_and_source():
    document = parse_document("resistor R1 (a, b)\n", "front.circuit")
    assert document.file == "front.circuit" and document.source == "resistor R1 (a, b)\n"


def test_parser_is_built_once():
    assert _parser() is _parser()
    cache = _parser()[0].options.cache  # a private file, or none (see test_output_writer)
    assert cache is False or cache.endswith(".lark")


# ------------------------------------------------------------------ reading files


def test_read_source_accepts_a_byte_order_mark(tmp_path):
    path = tmp_path / "bom.circuit"
    path.write_bytes(b"\xef\xbb\xbfresistor R1 (a, b)\n")
    assert read_source(path) == "resistor R1 (a, b)\n"


@pytest.mark.parametrize(("content", "words", "line", "column"), [
    (b"resistor R1 (a, b)\nresistor R2 (a,\x00 b)\n", "binary file", 2, 16),
    (b"title \"caf\xe9\"\n", "not UTF-8", 1, 11),
])
def test_read_source_rejects_binary_and_undecodable_bytes(tmp_path, content, words, line,
                                                          column):
    path = tmp_path / "bad.circuit"
    path.write_bytes(content)
    with pytest.raises(SymcircError) as problem:
        read_source(path)
    error = problem.value
    assert words in error.message and (error.line, error.column) == (line, column)
    assert error.file == str(path)


def test_read_source_reports_missing_files_and_directories(tmp_path):
    with pytest.raises(SymcircError, match="no such file"):
        read_source(tmp_path / "missing.circuit")
    with pytest.raises(SymcircError, match="directory"):
        read_source(tmp_path)


# ------------------------------------------------------------------ errors for people


@pytest.mark.parametrize(("text", "line", "column", "words"), [
    ("resistor R1 (a, b = 10k", 1, 19, "missing `)` to close the `(` at column 13"),
    ("resistor R1 (a b)", 1, 16, "missing `,` between nodes"),
    ("resistor R1 (a, b) 10k", 1, 20, "missing `=` before the value"),
    ("voltage sorce U1 (a, gnd)", 1, 9, "did you mean `voltage source`?"),
    ("title \"x\"\nresistr R1 (a, b) = 10k", 2, 1, "did you mean `resistor`?"),
    ('title "Sensor', 1, 7, "unterminated string"),
    ("resistor R1 (a, b) = 4k7k", 1, 25, "`4k7k` is not a number"),
    ("resistor R1 (a, b) = 10 kX", 1, 25, "`kX` is not a unit"),
    ("resistor R1 (a, b)\nend", 2, 1, "`end` without a `block`"),
    ("\nblock b (x)\n  resistor R (x, gnd)\n", 2, 1, "block `b` has no `end`"),
    ("resistor R1 (a, b, c)", 1, 20, "needs 2 terminals"),
    ("resistor R1 (a, b) = cos(x)", 1, 22, "`cos(..)` is not a function"),
    # the 201st parenthesis from the inside is one too many: column 22 + 5000 - 201
    ("resistor R1 (a, b) = " + "(" * 5000 + "1" + ")" * 5000, 1, 4821, "nested too deeply"),
], ids=lambda value: value[:30] if isinstance(value, str) else None)
def test_syntax_errors_are_labelled(text, line, column, words):
    with pytest.raises(SymcircError) as problem:
        parse_document(text, "front.circuit")
    error = problem.value
    assert words in error.message
    assert (error.file, error.line, error.column) == ("front.circuit", line, column)
    assert error.source_line == text.split("\n")[line - 1]


@pytest.mark.parametrize("parse", [parse_quantity, parse_expression, parse_claim])
def test_command_line_pieces_report_errors(parse):
    with pytest.raises(SymcircError) as problem:
        parse("gain(Ub, out")
    assert problem.value.file == "<command line>"
    assert "missing `)`" in problem.value.message


def test_every_expression_node_carries_its_own_span():
    """Positions live on the syntax nodes (from lark's tokens), parentheses included."""
    from symcirc.language import syntax
    from symcirc.language.parser import parse_claim

    text = "Z(out) = (R1 + R2)*k12"
    _, written, _ = parse_claim(text)
    nodes, seen = [written], []
    while nodes:
        node = nodes.pop()
        if isinstance(node, syntax.Spanned):
            seen.append(node)
            assert node.span is not None, node
            assert text[node.span.start:node.span.end].strip()
        nodes.extend(v for v in vars(node).values() if isinstance(v, syntax.Node))
        nodes.extend(x for v in vars(node).values() if isinstance(v, tuple)
                     for x in v if isinstance(x, syntax.Node))
    sums = [n for n in seen if isinstance(n, syntax.Binary) and n.op == "+"]
    assert [text[n.span.start:n.span.end] for n in sums] == ["(R1 + R2)"]
