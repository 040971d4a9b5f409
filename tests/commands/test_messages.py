"""Messages carry a location (file:line, or the quantity text from the command line), and
control characters in user text reach the terminal as escapes, never raw."""

import contextlib
import io
import json

import pytest

import symcirc
from symcirc.cli import main
from symcirc.errors import SymcircError, printable

# Ra − Rb is 0 at nominal: R1 + R2 = 0, so every current is undefined there
UNDEFINED = """\
title "Trimmed pair"
param Ra = 1 kΩ
param Rb = 1 kΩ
voltage source Ub (in, gnd) = 5 V
resistor R1 (in, x) = Ra - Rb
resistor R2 (x, gnd) = Rb - Ra
port P (x, gnd)
derive V(x)
"""

ESC = "\x1b"
HOSTILE = f"""\
title "Bridge {ESC}]0;owned{chr(7)} {ESC}[2J channel"
resistor R1 (a, gnd) = 1k "sensor {ESC}[31mred{chr(0x9b)}"
port P (a, gnd)
derive Z(P)
"""


def run(tmp_path, text: str, *arguments: str, command: str = "derive",
        name: str = "front.circuit") -> tuple[int, str, str]:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main([command, str(path), *arguments])
    return status, out.getvalue(), err.getvalue()


def error_lines(err: str) -> list[str]:
    """The error report: its first line and what follows (notices may come before it)."""
    lines = err.splitlines()
    first = next(i for i, line in enumerate(lines) if ": error: " in line)
    return lines[first:]


@pytest.mark.parametrize("extra", [["--values"], ["--format", "json"]])
def test_undefined_at_nominal_names_file_line_and_quantity(tmp_path, extra):
    status, out, err = run(tmp_path, UNDEFINED, *extra)
    assert status == 2
    lines = error_lines(err)
    assert lines[0].startswith(f"{tmp_path / 'front.circuit'}:8:8: error: V(x): no value at "
                               "the nominal values")
    assert "denominator is zero" in lines[0]
    assert lines[1].strip() == "derive V(x)"


def test_undefined_at_nominal_of_a_command_line_quantity_shows_the_quantity(tmp_path):
    status, out, err = run(tmp_path, UNDEFINED, "I(R1)", "--values")
    assert status == 2
    lines = error_lines(err)
    assert lines[0].startswith("<command line>:1:1: error: I(R1): no value at the nominal")
    assert lines[1].strip() == "I(R1)"


def test_undefined_at_nominal_through_the_python_api_is_located():
    circuit = symcirc.parse(UNDEFINED, "front.circuit")
    with pytest.raises(SymcircError) as caught:  # the value is needed for the cautions
        circuit.derive("V(x)")
    assert caught.value.file == "<quantity>" and "V(x)" in caught.value.message
    (result,) = symcirc.quantities.derive_quantity(
        circuit, circuit.derives[0].quantities[0], symcirc.quantities.options_from())
    with pytest.raises(SymcircError) as caught:
        result.nominal_exact  # noqa: B018
    assert (caught.value.file, caught.value.line) == ("front.circuit", 8)


def test_printable_escapes_controls_and_keeps_text():
    assert printable(f"a{ESC}[31mb\tc\nd") == "a\\x1b[31mb\tc\nd"
    assert printable("\x00\x7f\x9b\u202e") == "\\x00\\u007f\\u009b\\u202e"
    assert printable("Ω µ ± 4k7 °C") == "Ω µ ± 4k7 °C"


@pytest.mark.parametrize("command,extra", [("inspect", []), ("derive", ["--values"]),
                                           ("derive", ["--format", "markdown"]),
                                           ("inspect", ["--format", "json"])])
def test_control_characters_never_reach_the_terminal_raw(tmp_path, command, extra):
    status, out, err = run(tmp_path, HOSTILE, *extra, command=command)
    assert status == 0, err
    for text in (out, err):
        assert ESC not in text and "\x07" not in text and "\x9b" not in text
    if command == "inspect" and not extra:
        assert "Bridge \\x1b]0;owned\\x07 \\x1b[2J channel" in out
        assert "sensor \\x1b[31mred\\u009b" in out


def test_json_keeps_the_title_exact(tmp_path):
    """JSON escapes controls its own way (\\u001b): a program reading it gets the title."""
    status, out, err = run(tmp_path, HOSTILE, "--format", "json", command="inspect")
    assert status == 0
    assert json.loads(out)["title"] == f"Bridge {ESC}]0;owned{chr(7)} {ESC}[2J channel"


def test_control_characters_in_an_error_line_are_escaped_and_the_caret_follows(tmp_path):
    text = f'title "x{ESC}[31m"\nresistor R1 (a, gnd) = 1k ?\n'
    bad = f'title "x{ESC}[31m" ?\n'
    for source in (text, bad):
        status, out, err = run(tmp_path, source)
        assert status == 2 and ESC not in err
    lines = error_lines(err)
    shown, caret = lines[1], lines[2]
    assert shown == '    title "x\\x1b[31m" ?'
    assert shown[caret.index("^")] == "?"


def test_a_value_complex_at_nominal_has_no_nominal_and_says_why(tmp_path):
    """√a with a = −4 is not real: no traceback, no value, and the reason (found while
    checking the value text)."""
    text = """\
title "Imaginary supply"
param a = -4
param b = sqrt(a)
voltage source U (n1, gnd) = b
resistor R1 (n1, gnd) = 1k
derive V(n1)
"""
    status, out, err = run(tmp_path, text, "--values", "--substitute")
    assert status == 0, err
    assert "V(n1) = sqrt(a)" in out and "no single real value" in out
    status, out, err = run(tmp_path, text, "--format", "json", "--substitute")
    assert status == 0 and json.loads(out)["results"][0]["nominal"] is None
