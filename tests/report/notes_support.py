"""Shared helpers of the note tests: a hand-built note (independent of parsing) and the
system tools (pdflatex, pdftotext, pdfinfo) the LaTeX checks drive."""

from __future__ import annotations

import re
import subprocess
from fractions import Fraction
from pathlib import Path

import sympy

from symcirc.errors import Location
from symcirc.model import formula
from symcirc.model.circuit import Circuit, Element, Parameter, Port, Tolerance
from symcirc.report.content import Section, parameters, parts, ports, result_view
from symcirc.report.note import Note, marker_json
from symcirc.results import Result, Step

HOSTILE = "Bridge \\ $x$ & 5 % #1 a_b {c} <script>alert(1)</script>"
"""A title with every character that means something in LaTeX, Markdown or HTML."""

_AT = Location("hand.circuit", 1, 1)


def _element(name, kind, nodes, nominal, unit, tolerance=None, description=None,
             written=None):
    return Element(name, kind, nodes, None, nominal, tolerance, unit, description, _AT,
                   written=written)


def hand_note(fmt: str, title: str = HOSTILE) -> Note:
    """A divider note built without the parser: title, parts, one result with a step."""
    one_percent = Tolerance(Fraction(1, 100), Fraction(1, 100), True)
    circuit = Circuit(
        "hand.circuit", "", title,
        {"Ub": Parameter("Ub", formula.constant(5), Fraction(5), "V", None, title, _AT)},
        {"U": _element("U", "voltage source", ("in", "gnd"), Fraction(5), "V"),
         "R1": _element("R1", "resistor", ("in", "out"), Fraction(1000), "Ω", one_percent,
                        title, "1k"),
         "R2": _element("R2", "resistor", ("out", "gnd"), Fraction(2000), "Ω", None, None,
                        "2k")},
        {"out": Port("out", "out", "gnd", _AT)}, ("gnd", "in", "out"))
    r1, r2, u = sympy.symbols("R1 R2 U")
    nominals = {"R1": Fraction(1000), "R2": Fraction(2000), "U": Fraction(5)}
    result = Result("V(out)", u * r2 / (r1 + r2), "V", nominals, notes=(title,),
                    steps=[Step("divider", title, r"V_{out} = U \frac{R_{2}}{R_{1} + R_{2}}")])
    section = Section("V(out)", "v-out", (), (), [result_view(result, "V_{out}")])
    return Note(title, "hand.circuit", "hand.circuit", "0" * 64, "0.1.0", fmt, parts(circuit),
                parameters(circuit), ports(circuit), circuit.nodes, [], [section], [],
                [title], [title], title, None,
                marker_json({"source": "hand.circuit", "format": fmt}), circuit)


def pdflatex(tex: Path) -> Path:
    """Compile once (as the tests allow) and return the PDF; fails with the log's errors."""
    run = subprocess.run(
        ["pdflatex", "-interaction=nonstopmode", "-halt-on-error", tex.name],
        cwd=tex.parent, capture_output=True, text=True, errors="replace", timeout=180)
    log = tex.with_suffix(".log").read_text(errors="replace") if tex.with_suffix(
        ".log").exists() else run.stdout
    assert run.returncode == 0, "\n".join(line for line in log.splitlines()
                                          if line.startswith("!"))[:2000] or log[-2000:]
    return tex.with_suffix(".pdf")


def pdf_pages(pdf: Path) -> int:
    info = subprocess.run(["pdfinfo", str(pdf)], capture_output=True, text=True, check=True)
    return int(re.search(r"^Pages:\s+(\d+)", info.stdout, re.M).group(1))


def last_page(pdf: Path) -> int:
    """The page LaTeX itself put the note's last line on (its `symcirc:end` label)."""
    aux = pdf.with_suffix(".aux").read_text(errors="replace")
    return int(re.search(r"\\newlabel\{symcirc:end\}\{\{[^}]*\}\{(\d+)\}", aux).group(1))


def pdf_text(pdf: Path) -> str:
    return subprocess.run(["pdftotext", "-enc", "UTF-8", str(pdf), "-"], capture_output=True,
                          text=True, check=True).stdout


def fits_the_page(pdf: Path) -> None:
    """Long formulas are broken, never left running off the page: TeX's own measure, an
    overfull box, says by how much a line sticks out, and none does by more than 10 pt. A
    formula or table wider than its line is scaled down, but only a little: long ones are
    broken across lines instead, so none shrinks below 80 % (the log of \\fitmath)."""
    log = pdf.with_suffix(".log").read_text(errors="replace")
    overfull = [float(x) for x in re.findall(r"Overfull \\hbox \(([\d.]+)pt too wide", log)]
    assert max(overfull, default=0) <= 10, overfull
    scaled = [float(natural) / float(line) for natural, line in
              re.findall(r"symcirc-fit: scaled ([\d.]+)pt to ([\d.]+)pt", log)]
    assert max(scaled, default=1) <= 1.25, scaled
