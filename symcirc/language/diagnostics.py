"""Syntax errors written for people: a lark error becomes a SymcircError with a labelled
message for the common mistakes (missing `)`, missing comma, value without `=`, unknown
keyword with a suggestion, unterminated string, `end` without `block`, ...)."""

from __future__ import annotations

import difflib
import re

from lark.exceptions import UnexpectedCharacters, UnexpectedInput, UnexpectedToken

from ..errors import SymcircError
from ..vocabulary import ELEMENT_WORDS, STATEMENT_KEYWORDS, STATEMENT_WORDS
from .numbers import PREFIXES, UNIT_LIST

_SUGGESTIONS = tuple(dict.fromkeys((*STATEMENT_WORDS, *STATEMENT_KEYWORDS)))

_TOKEN_NAMES = {
    "NAME": "a name", "NUMBER": "a number", "STRING": "a quoted string", "LPAR": "`(`",
    "RPAR": "`)`", "COMMA": "`,`", "SEMICOLON": "`;`", "DOT": "`.`", "EQUAL": "`=`",
    "PLUS": "`+`", "MINUS": "`-`", "STAR": "`*`", "SLASH": "`/`", "POWER": "`^`",
    "ARROW": "`->`", "MUCH_GREATER": "`>>`", "MUCH_LESS": "`<<`", "PLUSMINUS": "`±`",
    "ASYMMETRIC": "a tolerance `+A % -B %`", "_NL": "the end of the line",
    "$END": "the end of the file", "AND": "`and`", "AT": "`at`",
}
_STARTS = ("a statement starts with a keyword (title, typeset, param, resistor, capacitor, "
           "..., port, block, derive, claim) or the name of a block")
_OPERAND = {"NAME", "NUMBER", "LPAR"}
_WORD = re.compile(r"[ \t\f]*([A-Za-z_][A-Za-z0-9_]*)")
_INSTANCE = re.compile(r"[ \t\f]*[A-Za-z_]\w*[ \t\f]+[A-Za-z_]\w*[ \t\f]*\(")
_AFTER_NUMBER = re.compile(r"(?<![\w.])[0-9.][\w.]*[ \t]+$")
_CONTINUED = re.compile(r"\\[ \t\f\r]*$")


_PIECES = {
    "quantity_line": "a quantity such as `thevenin(out)` or `gain(Ub, out)`",
    "expression_line": "an expression such as `R1*R2/(R1 + R2)`",
    "claim_line": "a claim `QUANTITY = EXPRESSION`",
}


def describe(problem: UnexpectedInput, source: str, filename: str, start: str = "start"
             ) -> SymcircError:
    """The SymcircError for a lark parse error in `source`, parsed from rule `start` (a
    whole file, or one of the command line's pieces)."""
    return _Diagnosis(problem, source, filename, start).error()


class _Diagnosis:
    """Where the parser stopped, what it would have accepted, and the statement around it."""

    def __init__(self, problem: UnexpectedInput, source: str, filename: str, start: str
                 ) -> None:
        self.problem = problem
        self.piece = _PIECES.get(start)
        self.source = source
        self.filename = filename
        self.lines = source.split("\n")
        token = getattr(problem, "token", None)
        self.token = token
        self.type = getattr(token, "type", None)
        if self.type == "$END" or not isinstance(problem.line, int):
            self.line, self.column = self._end_of_text()
        else:
            self.line, self.column = problem.line, problem.column
        self.accepts = self._accepts()
        self.start_line = self._statement_start(self.line)
        word = _WORD.match(self._text(self.start_line))
        self.first = word.group(1) if word else ""
        self.first_column = word.start(1) + 1 if word else 1
        if self.piece:  # not a statement: no keyword in front
            self.first = "claim" if start == "claim_line" else ""

    # ------------------------------------------------------------ the message

    def error(self) -> SymcircError:
        if isinstance(self.problem, UnexpectedCharacters):
            return self._character()
        if isinstance(self.problem, UnexpectedToken):
            rules = [self._tolerance_sign, self._commas, self._parenthesis, self._unit,
                     self._missing_equal, self._operator, self._operand]
            if not self.piece:
                rules = [self._block_end, self._keyword, *rules, self._statement_shape,
                         self._instance]
            for rule in rules:
                found = rule()
                if found is not None:
                    return found
            if self.piece:
                return self._at(f"unexpected {self._token_text()}: expected {self.piece}")
        return self._at(f"unexpected {self._token_text()}; expected {self._expected()}")

    def _character(self) -> SymcircError:
        char = self.source[self.problem.pos_in_stream]
        if char == '"':
            return self._at('unterminated string: close it with `"` on the same line')
        if char == "\\":
            return self._at("`\\` continues a statement only as the last character of a line")
        if char == "%":
            return self._at("`%` belongs right after a number: `1 %`")
        if char in "[{":
            return self._at(f"unexpected `{char}`: group with `(` and `)`")
        if char.isalpha() and not char.isascii():
            return self._at(f"unexpected `{char}`: names use only A-Z, a-z, 0-9 and `_`; "
                            f"other text belongs in a quoted description")
        if not char.isprintable():
            return self._at(f"unexpected character U+{ord(char):04X}")
        if not char.isascii():
            return self._at(f"unexpected `{char}`: outside quoted text only µ, Ω and ± may be "
                            f"written besides ASCII")
        return self._at(f"unexpected character `{char}`")

    def _block_end(self) -> SymcircError | None:
        """`block` without `end`, and `end` without `block`."""
        if self.type == "$END" and "END" in self.accepts:
            opened = self._open_blocks(len(self.lines) + 1)
            if opened:
                line, column, name = opened[-1]
                return self._at(f"block `{name}` has no `end`: close it with a line `end`",
                                line, column)
            return self._at("the file ends inside a block: add a line `end`")
        if self.first == "end":
            if self._open_blocks(self.start_line):
                return self._at("`end` stands alone on its line")
            return self._at("`end` without a `block` to close", self.start_line,
                            self.first_column)
        return None

    def _keyword(self) -> SymcircError | None:
        """`voltage sorce ...`, and unknown words where a statement keyword belongs."""
        if "SOURCE" in self.accepts:
            return self._at(f"unexpected {self._token_text()}: did you mean "
                            f"`{self.first} source`?")
        if self.first in STATEMENT_WORDS or self._instance_shaped():
            return None
        return self._unknown_statement()

    def _unknown_statement(self) -> SymcircError:
        if not self.first:
            return self._at(f"unexpected {self._token_text()}: {_STARTS}")
        close = difflib.get_close_matches(self.first, _SUGGESTIONS, n=1, cutoff=0.7)
        hint = f"did you mean `{close[0]}`?" if close else _STARTS
        return self._at(f"unknown statement `{self.first}`: {hint}", self.start_line,
                        self.first_column)

    def _commas(self) -> SymcircError | None:
        if self.type not in ("NAME", "NUMBER"):
            return None
        if "SEMICOLON" in self.accepts:
            return self._at(f"missing `,` between nodes before {self._token_text()}")
        if self.first == "derive" and "WHERE" in self.accepts:
            return self._at(f"missing `,` between quantities before {self._token_text()}")
        if {"COMMA", "RPAR"} <= self.accepts and "STAR" in self.accepts \
                and not self._after_number():
            return self._at(f"missing `,` between arguments (or an operator such as `*`) "
                            f"before {self._token_text()}")
        return None

    def _tolerance_sign(self) -> SymcircError | None:
        """`+-` before a final number is the tolerance sign, even where no tolerance fits."""
        if self.type == "PLUSMINUS" and "PLUSMINUS" not in self.accepts:
            return self._at(f"`{self.token.value}` before a final number is a tolerance, which "
                            f"does not belong here; for arithmetic write `+ -` with a space "
                            f"or `-`")
        return None

    def _parenthesis(self) -> SymcircError | None:
        if self.type == "RPAR" and "RPAR" not in self.accepts:
            return self._at("unmatched `)`")
        if "RPAR" not in self.accepts or self.type in _OPERAND or self.type in (
                "PLUS", "MINUS", "STAR", "SLASH", "POWER", "COMMA", "SEMICOLON"):
            return None
        opened = self._unclosed_parenthesis()
        where = f" to close the `(` at column {opened[1]}" if opened and \
            opened[0] == self.line else (f" to close the `(` at line {opened[0]}, column "
                                         f"{opened[1]}" if opened else "")
        return self._at(f"missing `)`{where}")

    def _unit(self) -> SymcircError | None:
        """A word after a number: `10 k`, `10 kX`, `3 y`."""
        if self.type != "NAME" or not self._after_number() or "STAR" not in self.accepts:
            return None
        word = self.token.value
        if any(c.isdigit() or c == "_" for c in word):  # a name, not a unit gone wrong
            return None
        if word in PREFIXES:
            return self._at(f"the SI prefix `{word}` goes right after the number (`10{word}`) "
                            f"or before a unit (`10 {word}Ω`)")
        return self._at(f"`{word}` is not a unit: units are {UNIT_LIST}, with an optional SI "
                        f"prefix (`10 kΩ`); write `*` for a product")

    def _missing_equal(self) -> SymcircError | None:
        if "EQUAL" not in self.accepts:
            return None
        if self.first == "claim":
            shape = "QUANTITY = EXPRESSION" if self.piece else "claim QUANTITY = EXPRESSION"
            return self._at(f"missing `=`: a claim is `{shape}`")
        if self.type not in (*_OPERAND, "MINUS", "PLUS"):
            return None
        if self.first in ELEMENT_WORDS or self.first == "param":
            return self._at(f"missing `=` before the value {self._token_text()}")
        if "with" in self._text(self.line)[:self.column]:
            return self._at("missing `=` in the renaming: `with INNER = OUTER`")
        return None

    def _operator(self) -> SymcircError | None:
        if self.type in _OPERAND and "STAR" in self.accepts:
            return self._at(f"missing operator before {self._token_text()} "
                            f"(write `*` for a product)")
        return None

    def _operand(self) -> SymcircError | None:
        """An expression or tolerance cut short: `= `, `2 *`, `(`, `± `."""
        before = self._text(self.line)[:self.column - 1].rstrip()
        if before.endswith(("±", "+-")) and self.accepts == {"NUMBER"}:
            return self._at("missing tolerance after `±`: `± 1 %` or `± 5 Ω`")
        if not {"NAME", "NUMBER", "LPAR"} <= self.accepts or self.type in _OPERAND:
            return None
        if before.endswith("=") and self.first != "derive":
            return self._at("missing value after `=`")
        if before.endswith(("+", "-", "*", "/", "^", "±")):
            return self._at(f"incomplete expression: a number, a name or `(` must follow "
                            f"`{before[-1]}`")
        return None

    def _statement_shape(self) -> SymcircError | None:
        """Pieces missing near the start of a statement."""
        if self.first == "title" and "STRING" in self.accepts:
            return self._at('a title is a quoted string: title "Sensor front end"')
        if self.first in ("derive", "claim") and self.accepts <= {"NAME"}:
            return self._at(f"{self.first} needs a quantity such as `thevenin(out)` or "
                            f"`gain(Ub, out)`")
        if self.first in ("derive", "claim") and "LPAR" in self.accepts:
            return self._at("a quantity is written with its arguments: `V(out)`, "
                            "`thevenin(out)`, `gain(Ub, out)`")
        if self.accepts and self.accepts <= {"ARROW", "MUCH_GREATER", "MUCH_LESS"}:
            return self._at("a where clause is `X -> oo`, `X -> 0`, `A >> B` or `A << B`")
        if self.accepts == {"NAME"} and self.first in (*STATEMENT_WORDS, "source"):
            return self._at(f"missing name before {self._token_text()}")
        if self.accepts == {"LPAR"}:
            return self._at(f"missing terminals: `{self.first} NAME (node, node, ...)`")
        if self.type == "STRING":
            return self._at("a description string goes at the end of a `param`, element or "
                            "`port` line")
        return None

    def _instance(self) -> SymcircError | None:
        if self._instance_shaped() and self.first not in STATEMENT_WORDS:
            close = difflib.get_close_matches(self.first, _SUGGESTIONS, n=1, cutoff=0.8)
            if close:
                return self._at(f"unknown statement `{self.first}`: did you mean "
                                f"`{close[0]}`?", self.start_line, self.first_column)
            return self._at(f"unexpected {self._token_text()}: an instance of a block is "
                            f"`BLOCK NAME (nodes) [with INNER = OUTER, ...]`")
        return None

    # ------------------------------------------------------------ helpers

    def _at(self, message: str, line: int | None = None, column: int | None = None
            ) -> SymcircError:
        line = self.line if line is None else line
        column = self.column if column is None else column
        text = self._text(line) if 0 < line <= len(self.lines) else None
        return SymcircError(message, self.filename, line, column, text)

    def _text(self, line: int) -> str:
        return self.lines[line - 1].rstrip("\r") if 0 < line <= len(self.lines) else ""

    def _accepts(self) -> set[str]:
        try:
            accepts = self.problem.accepts  # precise: simulated on a copy of the parser
        except Exception:  # any failure: fall back to the parse table's view
            accepts = None
        return set(accepts or getattr(self.problem, "expected", None) or ())

    def _end_of_text(self) -> tuple[int, int]:
        for number in range(len(self.lines), 0, -1):
            text = self._text(number).rstrip()
            if text:
                return number, len(text) + 1
        return 1, 1

    def _statement_start(self, line: int) -> int:
        while line > 1 and _CONTINUED.search(self._text(line - 1)):
            line -= 1
        return line

    def _open_blocks(self, before_line: int) -> list[tuple[int, int, str]]:
        """Blocks opened and not yet closed before `before_line`: (line, column, name)."""
        opened: list[tuple[int, int, str]] = []
        continued = False
        for number in range(1, min(before_line, len(self.lines) + 1)):
            text = self._text(number)
            word = None if continued else _WORD.match(text)
            continued = bool(_CONTINUED.search(text))
            if word is None:
                continue
            if word.group(1) == "block":
                name = _WORD.match(text, word.end())
                opened.append((number, word.start(1) + 1, name.group(1) if name else "?"))
            elif word.group(1) == "end" and opened:
                opened.pop()
        return opened

    def _unclosed_parenthesis(self) -> tuple[int, int] | None:
        """The last `(` left open in the statement before the error (line, column)."""
        stack: list[tuple[int, int]] = []
        for number in range(self.start_line, self.line + 1):
            text = self._text(number)
            if number == self.line:
                text = text[:self.column - 1]
            for column, char in _code_characters(text):
                if char == "(":
                    stack.append((number, column))
                elif char == ")" and stack:
                    stack.pop()
        return stack[-1] if stack else None

    def _instance_shaped(self) -> bool:
        return bool(_INSTANCE.match(self._text(self.start_line)))

    def _after_number(self) -> bool:
        return bool(_AFTER_NUMBER.search(self._text(self.line)[:self.column - 1]))

    def _token_text(self) -> str:
        if self.type in ("$END", "_NL"):
            if self.type == "_NL":
                return "end of line"
            return "end of input" if self.piece else "end of file"
        value = str(self.token)
        return f"`{value[:40]}...`" if len(value) > 40 else f"`{value}`"

    def _expected(self) -> str:
        names = sorted({_TOKEN_NAMES.get(t, f"`{t.lower()}`") for t in self.accepts})
        if not names:
            return "nothing more here"
        return ", ".join(names[:8]) + (", ..." if len(names) > 8 else "")


def _code_characters(text: str):
    """(column, character) of a line outside strings and comments."""
    quoted = False
    escaped = False
    for index, char in enumerate(text):
        if quoted:
            if escaped:
                escaped = False
            elif char == "\\":
                escaped = True
            elif char == '"':
                quoted = False
        elif char == '"':
            quoted = True
        elif char == "#":
            return
        else:
            yield index + 1, char
