"""Text → syntax tree: reading files, the LALR parser (built once per process and cached on
disk by lark in a folder only the user can write), and the entry points for files,
quantities, expressions and claims.

Every function here raises only SymcircError for bad input.
"""

from __future__ import annotations

import hashlib
import os
import stat
import sys
import threading
from functools import lru_cache
from pathlib import Path

from ..errors import SymcircError
from ..limits import MAX_SOURCE_BYTES
from ..vocabulary import ELEMENT_KINDS
from . import syntax as st

_STARTS = ["start", "quantity_line", "quantity_where_line", "where_line", "expression_line",
           "claim_line"]
_LOCK = threading.Lock()  # the inline transformer holds the text being parsed
_BOM = "\ufeff"


@lru_cache(maxsize=1)
def _parser():
    """The LALR parser with the syntax-tree builder run inline (no parse tree is built)."""
    from importlib.resources import files

    from lark import Lark

    from .transformer import TreeBuilder

    grammar = files("symcirc.grammar").joinpath("circuit.lark").read_text(encoding="utf-8")
    grammar += element_rules()
    builder = TreeBuilder()
    cache = _cache_file(grammar)
    # lark writes its cache in place; a process starting meanwhile would read half a file,
    # so a missing cache is written under a name of this process and then renamed
    written = f"{cache}.{os.getpid()}.tmp" if cache and not os.path.exists(cache) else None
    parser = Lark(grammar, parser="lalr", lexer="contextual", start=_STARTS,
                  transformer=builder, maybe_placeholders=True, cache=written or cache)
    if written:
        try:
            os.replace(written, cache)
        except OSError:
            pass
    return parser, builder


def _cache_file(grammar: str) -> str | bool:
    """Where lark keeps the built parser (a pickle, so loading it runs whatever it holds):
    `$XDG_CACHE_HOME/symcirc` or `~/.cache/symcirc`, made private (0700), and used only
    when it and the folder holding it belong to this user and no one else may write them.
    False (no cache, ~0.15 s more per run) otherwise; never lark's shared temporary folder,
    where anyone could plant a file under the name it would read."""
    import lark

    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    folder = os.path.join(base, "symcirc")
    try:
        os.makedirs(folder, mode=0o700, exist_ok=True)
        if not all(_private(path) for path in (base, folder)):
            return False
    except (OSError, ValueError):
        return False
    key = hashlib.sha256(grammar.encode("utf-8")).hexdigest()[:16]
    version = f"{lark.__version__}-py{sys.version_info[0]}{sys.version_info[1]}"
    return os.path.join(folder, f"parser-{key}-{version}.lark")


def _private(path: str) -> bool:
    """A real folder of this user that no one else may write into."""
    info = os.lstat(path)
    return (stat.S_ISDIR(info.st_mode) and info.st_uid == os.getuid()
            and not info.st_mode & (stat.S_IWGRP | stat.S_IWOTH))


def element_rules() -> str:
    """The grammar's `kind` rule and its keyword tokens, one per element kind of the
    vocabulary (`voltage source` is the two tokens VOLTAGE SOURCE)."""
    kinds = ELEMENT_KINDS.values()
    words = dict.fromkeys(word for kind in kinds for word in kind.words)
    alternatives = " | ".join(" ".join(w.upper() for w in kind.words) for kind in kinds)
    tokens = "".join(f'{word.upper()}: "{word}"\n' for word in words)
    return f"\nkind: {alternatives}\n{tokens}"


def _parse(text: str, filename: str, start: str):
    from lark.exceptions import LarkError, UnexpectedInput

    parser, builder = _parser()
    with _LOCK:
        builder.begin(text, filename)
        try:
            return parser.parse(text, start=start)
        except UnexpectedInput as problem:
            from .diagnostics import describe

            raise describe(problem, text, filename, start) from None
        except RecursionError:
            raise SymcircError("the input is nested too deeply to read", filename) from None
        except LarkError as problem:
            raise SymcircError(f"cannot read the input: {problem}", filename) from None
        finally:
            builder.begin("", "<input>")


def parse_document(text: str, filename: str = "<input>") -> st.Document:
    """Parse the text of a whole `.circuit` file."""
    if text.startswith(_BOM):
        text = text[1:]
    return _parse(text, filename, "start")


def parse_quantity(text: str, filename: str = "<command line>") -> st.Quantity:
    """Parse one quantity: `thevenin(out)`, `gain(Ub, out)`, `twoport(p1, p2).z21`."""
    return _parse(text, filename, "quantity_line")


def parse_quantity_where(text: str, filename: str = "<command line>"
                         ) -> tuple[st.Quantity, tuple[st.Assumption, ...]]:
    """Parse a quantity with optional `where` clauses: `V(out) where Rid -> oo, s -> 0`."""
    return _parse(text, filename, "quantity_where_line")


def parse_where(text: str, filename: str = "<where>") -> tuple[st.Assumption, ...]:
    """Parse `where` clauses alone, with or without the keyword: `Rid -> oo and A >> B`."""
    return _parse(text, filename, "where_line")


def parse_expression(text: str, filename: str = "<command line>") -> st.Expr:
    """Parse one expression: `R1*R2/(R1 + R2)`."""
    return _parse(text, filename, "expression_line")


def parse_claim(text: str, filename: str = "<command line>"
                ) -> tuple[st.Quantity, st.Expr, str]:
    """Parse `QUANTITY = EXPRESSION`; the string is the expression as written."""
    return _parse(text, filename, "claim_line")


def read_source(path: str | Path) -> str:
    """The text of a circuit file (UTF-8, a byte-order mark accepted)."""
    name = str(path)
    try:
        with Path(path).open("rb") as stream:  # bounded: the path may be a device or a pipe
            data = stream.read(MAX_SOURCE_BYTES + 1)
    except FileNotFoundError:
        raise SymcircError("cannot read the file: no such file", name) from None
    except IsADirectoryError:
        raise SymcircError("cannot read the file: it is a directory", name) from None
    except PermissionError:
        raise SymcircError("cannot read the file: permission denied", name) from None
    except (OSError, ValueError) as problem:
        reason = getattr(problem, "strerror", None) or str(problem)
        raise SymcircError(f"cannot read the file: {reason}", name) from None
    if len(data) > MAX_SOURCE_BYTES:
        raise SymcircError(f"the file is larger than {MAX_SOURCE_BYTES // 2**20} MiB, far more "
                           "than a circuit of the largest size symcirc reads", name)
    if b"\0" in data:
        line, column, text = _position(data, data.index(b"\0"))
        raise SymcircError("this is a binary file, not circuit text (it contains a NUL byte)",
                           name, line, column, text)
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as problem:
        line, column, source_line = _position(data, problem.start)
        raise SymcircError(f"the file is not UTF-8 text (byte 0x{data[problem.start]:02x} "
                           f"cannot be decoded)", name, line, column, source_line) from None
    return text[1:] if text.startswith(_BOM) else text


def _position(data: bytes, offset: int) -> tuple[int, int, str]:
    """Line, column and text of the line (undecodable bytes replaced) of a byte offset."""
    line_start = data.rfind(b"\n", 0, offset) + 1
    line_end = data.find(b"\n", offset)
    line_end = len(data) if line_end < 0 else line_end
    column = len(data[line_start:offset].decode("utf-8", "replace")) + 1
    text = data[line_start:line_end].decode("utf-8", "replace").rstrip("\r")
    return data.count(b"\n", 0, offset) + 1, column, text.replace("\0", " ")
