"""Robustness: whatever the input (random text, random bytes, mutated valid files, enormous
lines, deep nesting), `symcirc.parse` raises nothing but SymcircError and the command line
never shows a traceback."""

import contextlib
import io
import subprocess
import sys
import tempfile
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import symcirc
from symcirc.cli import main
from symcirc.errors import SymcircError

ROOT = Path(__file__).resolve().parents[2]

# A valid file using every construct (an invented data-logger channel); mutations start here
# and from the bundled examples and the valid corpus.
EVERY_CONSTRUCT = r"""# Data-logger channel: every construct of the language (invented example)
title "Data-logger channel 2, \"thermocouple\" input"

param Ub    = 2.5 V ± 0.05 %     "reference"
param R0    = 1 kΩ +- 0.1 %      "sensor at 0 °C"
param alpha                      "temperature coefficient"
param T     = 25
param A0    = 100k
param wa    = 62.8
param gm    = 2 mS
param N     = 4
param k     = 0.98

block arm (top, bottom)
    resistor Ra (top, mid) = 4k7 ± 1 %
    resistor Rb (mid, bottom) = 2R2 \
        ± 5 Ω
end

voltage source Uref (exc, gnd) = Ub
arm left (exc, a) with Ra = R1
resistor   Rt (exc, b) = R0*(1 + alpha*T)   "sensor"
capacitor  C1 (b, 0) = 10 nF +80 % -20 %
inductor   L1 (b, c) = 4.7 mH
inductor   L2 (d, gnd) = 10 mH
conductance Gp (c, gnd) = 1 mS
impedance  Z1 (a, c)
admittance Y1 (c, gnd)
current source Iq (a, gnd) = 1 mA
voltage source Uamp (e, gnd) = 2*V(a, b)
current source Igm (e, gnd) = gm*V(c)
opamp      U1 (a, f, f)
opamp      U2 (b, g, g) = A0/(1 + s/wa)
transformer T1 (g, gnd; h, gnd) = N
coupling   k12 (L1, L2) = k
resistor   R9 (h, d) = 1k
resistor   R10 (e, gnd) = 10k
voltage source Urm (m, gnd) = 50*I(R9)
resistor   R11 (m, gnd) = sqrt(R0*R10)/pi
port out (a, b)   "ADC input"

derive thevenin(out), gain(Uref, out)
derive V(out) where A0 -> oo, R9 -> 0 and R10 >> R9
claim gain(Uref, out) = Rt/(R1 + Rt)
"""


def _valid_texts() -> list[str]:
    """The seeds of every mutation: texts that parse (a seed that does not would make its
    mutations start from an invalid file)."""
    files = sorted(ROOT.glob("examples/*.circuit")) + sorted(ROOT.glob("tests/valid/*.circuit"))
    return [EVERY_CONSTRUCT] + [f.read_text(encoding="utf-8") for f in files]


VALID = _valid_texts()

TOKENS = [
    "title", "param", "resistor", "capacitor", "inductor", "conductance", "impedance",
    "admittance", "voltage", "current", "source", "opamp", "transformer", "coupling", "port",
    "block", "end", "with", "derive", "claim", "where", "and", "oo", "R1", "a", "gnd", "0",
    "out", "V(", "I(", "sqrt(", "thevenin(out)", "gain(U, out)", ".impedance", "(", ")", ",",
    ";", "=", "+", "-", "*", "/", "^", "**", "->", ">>", "<<", "±", "+-", "%", "+80 % -20 %",
    "4k7", "2R2", "10 kΩ", "1e-3", "2.5E6", "4.7 nF", "1 ms", "2 s", "0.1 %", '"text"', '"',
    "\\\n", "\n", " ", "\t", "#", "µ", "Ω", "4k7k", "1e999", "\x00", "\ufeff", "\r\n",
    "4F7", "6L8", "0R47", "R47", "opamp U9 (a, b, gnd)", "V(out)",
]


def test_every_seed_parses():
    for text in VALID:
        symcirc.parse(text, filename="seed.circuit")


def test_the_every_construct_seed_uses_every_construct():
    circuit = symcirc.parse(EVERY_CONSTRUCT, filename="seed.circuit")
    kinds = {e.kind for e in circuit.elements.values()}
    assert {"resistor", "capacitor", "inductor", "conductance", "impedance", "admittance",
            "voltage source", "current source", "opamp", "transformer",
            "coupling"} <= kinds
    assert circuit.title == 'Data-logger channel 2, "thermocouple" input'
    assert any(e.controls for e in circuit.elements.values())
    assert circuit.elements["Rb_left"].tolerance is not None
    assert circuit.derives and circuit.claims


def check_parse(text: str) -> None:
    """Parse; a SymcircError is fine (and must format), anything else fails the test."""
    try:
        symcirc.parse(text, filename="fuzz.circuit")
    except SymcircError as error:
        assert error.format().startswith("fuzz.circuit")


@st.composite
def mutated(draw) -> str:
    """A valid text after a few random edits: deletions, insertions, swaps, truncation."""
    text = draw(st.sampled_from(VALID))
    for _ in range(draw(st.integers(1, 4))):
        if not text:
            break
        edit = draw(st.sampled_from(["delete", "insert", "swap", "truncate", "duplicate"]))
        i = draw(st.integers(0, len(text) - 1))
        j = draw(st.integers(i, min(len(text), i + 40)))
        if edit == "delete":
            text = text[:i] + text[j:]
        elif edit == "insert":
            piece = draw(st.one_of(st.sampled_from(TOKENS), st.text(max_size=3)))
            text = text[:i] + piece + text[i:]
        elif edit == "swap":
            k = draw(st.integers(0, len(text) - 1))
            a, b = sorted((i, k))
            text = text[:a] + text[b] + text[a + 1:b] + text[a] + text[b + 1:] if a < b else text
        elif edit == "truncate":
            text = text[:i]
        else:
            text = text[:j] + text[i:j] + text[j:]
    return text


token_soup = st.lists(st.sampled_from(TOKENS), max_size=40).map(" ".join)


@settings(max_examples=500, deadline=None)
@given(st.text(max_size=300))
def test_random_unicode_text(text):
    check_parse(text)


@settings(max_examples=500, deadline=None)
@given(token_soup)
def test_random_token_soup(text):
    check_parse(text)


@settings(max_examples=1000, deadline=None)
@given(mutated())
def test_mutated_valid_files(text):
    check_parse(text)


@settings(max_examples=200, deadline=None)
@given(st.binary(max_size=300), st.sampled_from(["utf-8", "latin-1"]))
def test_random_bytes_decoded_leniently(data, encoding):
    check_parse(data.decode(encoding, "replace"))


@settings(max_examples=100, deadline=None)
@given(st.one_of(st.binary(max_size=200), mutated().map(lambda t: t.encode("utf-8", "replace"))))
def test_random_files_through_load(data):
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "fuzz.circuit"
        path.write_bytes(data)
        try:
            symcirc.load(str(path))
        except SymcircError as error:
            assert error.format().startswith(str(path))


@pytest.mark.parametrize("text", [
    "(" * 100_000,
    "resistor R1 (a, gnd) = " + "(" * 20_000 + "1" + ")" * 20_000,
    "resistor R1 (a, gnd) = " + "-" * 50_000 + "1",
    "resistor R1 (a, gnd) = " + "x+" * 50_000 + "x",
    "resistor R1 (a, gnd) = " + "2^" * 50_000 + "2",
    "derive " + "sensitivity(" * 5_000 + "V(a)" + ", R1)" * 5_000,
    "resistor R1 (" + "a, " * 50_000 + "gnd)",
    "title \"" + "x" * 1_000_000 + "\"",
    "R" * 1_000_000,
    "resistor R1 (a, gnd) = " + "1" * 1_000_000,
    "resistor R1 (" + "0" * 100_000 + ", gnd)",
    "block b (x)\n" * 5_000 + "end\n" * 5_000,
    "resistor R1 (a, \\\n" * 10_000,
    "\n" * 200_000,
    "\x00" * 1000,
], ids=lambda text: repr(text[:24]))
def test_enormous_lines_and_deep_nesting(text):
    check_parse(text)


def _run_cli(arguments: list[str]) -> tuple[int, str]:
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        status = main(arguments)
    return status, err.getvalue()


@settings(max_examples=80, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.data_too_large])
@given(mutated(), st.sampled_from([[], ["--format", "json"]]))
def test_command_line_never_shows_a_traceback(text, options):
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "fuzz.circuit"
        path.write_text(text, encoding="utf-8", errors="replace")
        status, errors = _run_cli(["inspect", str(path), *options])
    assert status in (0, 2)
    assert "Traceback" not in errors
    if status == 2:
        assert errors.startswith(f"{path}:")


def test_command_line_in_a_real_process_on_garbage(tmp_path):
    garbage = tmp_path / "garbage.circuit"
    garbage.write_bytes(bytes(range(256)) * 40)
    undecodable = tmp_path / "latin.circuit"
    undecodable.write_bytes("title \"Me\u00dfkanal\"\n".encode("latin-1"))
    for path in (garbage, undecodable, tmp_path):
        run = subprocess.run([sys.executable, "-m", "symcirc.cli", "inspect", str(path)],
                             capture_output=True, text=True, timeout=60)
        assert run.returncode == 2
        assert "Traceback" not in run.stderr
        assert run.stderr.startswith(f"{path}:") and ": error: " in run.stderr
