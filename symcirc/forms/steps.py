"""Recording derivation steps: names for intermediates, the equation in text and LaTeX,
and the data that lets a reader (or a test) replay the step with numbers."""

from __future__ import annotations

import re
from typing import Any

import sympy

from ..results import Step
from .printing import latex, text

MAX_SUFFIX = 6
"""Longest run of part suffixes in a generated name (`R1234`); beyond it names are lettered."""


class Recorder:
    """Collects the steps of one derivation and remembers what each intermediate stands for."""

    def __init__(self, taken: set[str]) -> None:
        self.steps: list[Step] = []
        self.taken = set(taken)
        self.forms: dict[sympy.Symbol, sympy.Expr] = {}
        """Intermediate symbol → its design form in element symbols."""

    # -- names
    def fresh(self, candidates: list[str], prefix: str = "Z") -> sympy.Symbol:
        """The first free name among `candidates`, else `prefix_A`, `prefix_B`, ..."""
        for name in candidates:
            if name and name not in self.taken:
                self.taken.add(name)
                return sympy.Symbol(name)
        k = 0
        while True:
            name = f"{prefix}_{_letters(k)}"
            if name not in self.taken:
                self.taken.add(name)
                return sympy.Symbol(name)
            k += 1

    def name_for_parts(self, parts: tuple[str, ...], resistive: bool) -> sympy.Symbol:
        """`R12` for a combination of R1 and R2; `Z_A` when the parts do not share a letter."""
        prefix = "R" if resistive else "Z"
        parts = tuple(dict.fromkeys(parts))  # each part once
        suffixes = []
        for part in parts:
            match = re.fullmatch(r"([A-Za-z]+)_?([A-Za-z0-9]+)", part)
            if not match or match.group(1) != prefix:
                suffixes = None
                break
            suffixes.append(match.group(2))
        candidates = []
        if suffixes and len("".join(suffixes)) <= MAX_SUFFIX:
            suffixes.sort(key=lambda x: (not x.isdigit(), int(x) if x.isdigit() else 0, x))
            candidates.append(prefix + "".join(suffixes))
        elif not resistive and len("".join(parts)) <= MAX_SUFFIX:
            candidates.append("Z_" + "".join(parts))  # Z_RL: R and L combined
        return self.fresh(candidates, prefix)

    def mark(self) -> tuple[int, set[str], dict[sympy.Symbol, sympy.Expr]]:
        """A point to come back to when an attempted route does not work out."""
        return len(self.steps), set(self.taken), dict(self.forms)

    def rewind(self, mark: tuple[int, set[str], dict[sympy.Symbol, sympy.Expr]]) -> None:
        count, taken, forms = mark
        del self.steps[count:]
        self.taken, self.forms = taken, forms

    # -- steps
    def add(
        self,
        kind: str,
        sentence: str,
        defines: sympy.Symbol | list[sympy.Symbol] | None = None,
        rhs: sympy.Expr | list[sympy.Expr] | None = None,
        equation: tuple[str, str] | None = None,
        **data: Any,
    ) -> Step:
        """Record a step. `defines`/`rhs` give the equation(s) `symbol = rhs` in terms of
        earlier symbols; `equation` gives (text, LaTeX) when the step defines nothing."""
        symbols = (
            defines if isinstance(defines, list) else ([defines] if defines is not None else [])
        )
        values = rhs if isinstance(rhs, list) else ([rhs] if rhs is not None else [])
        for symbol, value in zip(symbols, values, strict=True):
            self.forms[symbol] = self.substitute(value)
        if equation is None:
            equation = (
                "; ".join(f"{text(s)} = {text(v)}" for s, v in zip(symbols, values, strict=True)),
                r",\quad ".join(
                    f"{latex(s)} = {latex(v)}" for s, v in zip(symbols, values, strict=True)
                ),
            )
        data = {
            "op": kind,
            "defines": [s.name for s in symbols],
            "rhs": dict(zip(symbols, values, strict=True)),
            "text": equation[0],
            **data,
        }
        step = Step(kind, sentence, equation[1], ", ".join(s.name for s in symbols) or None, data)
        self.steps.append(step)
        return step

    def substitute(self, expr: sympy.Expr) -> sympy.Expr:
        """`expr` with every intermediate replaced by its design form."""
        return expr.xreplace(self.forms) if self.forms else expr


def _letters(k: int) -> str:
    out = ""
    k += 1
    while k:
        k, r = divmod(k - 1, 26)
        out = chr(65 + r) + out
    return out


def steps_text(steps: list[Step]) -> str:
    """Steps numbered, each a sentence and its equation, for `--format text`."""
    lines = []
    for i, step in enumerate(steps, 1):
        lines.append(f"{i:2d}. {step.sentence}")
        equation = step.data.get("text")
        if equation:
            for part in str(equation).split("\n"):
                lines.append("      " + part)
    return "\n".join(lines)
