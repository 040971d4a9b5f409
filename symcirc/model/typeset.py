"""How symbol names are typeset in LaTeX, in one place for results, forms and notes.

The rules, as engineers write names (ISO 80000-2: a quantity's letter italic, a descriptive
subscript upright):
- a Greek letter's English name is the letter: `alpha` → α, `eps` → ε, `Omega` → Ω,
  `omega0` → ω₀ (`\\omega_{0}`);
- one letter followed by a word is the letter with that word as an upright subscript:
  `Rin` and `R_in` → `R_{\\mathrm{in}}`, `RLa` → `R_{\\mathrm{La}}`, `R4t` → `R_{4\\mathrm{t}}`;
- further parts after `_` are further subscripts, separated by a comma:
  `Ra_ref` → `R_{\\mathrm{a,ref}}`;
- digits are subscripts (`R1` → `R_{1}`), and a single letter after `_` stays italic, as a
  node's name does (`V_a` → `V_{a}`);
- a file may give a name's form itself (`typeset Rt "R_{\\vartheta}"`); `names(...)`
  makes such forms apply while a circuit is shown, and `check_form` keeps them to a safe
  subset of LaTeX.
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Iterator, Mapping
from contextlib import contextmanager
from contextvars import ContextVar
from functools import lru_cache
from types import MappingProxyType
from typing import TYPE_CHECKING

if TYPE_CHECKING:  # pragma: no cover
    import sympy

GREEK: dict[str, str] = {
    "alpha": r"\alpha", "beta": r"\beta", "gamma": r"\gamma", "delta": r"\delta",
    "epsilon": r"\varepsilon", "eps": r"\varepsilon", "zeta": r"\zeta", "eta": r"\eta",
    "theta": r"\theta", "iota": r"\iota", "kappa": r"\kappa", "lambda": r"\lambda",
    "lamda": r"\lambda", "mu": r"\mu", "nu": r"\nu", "xi": r"\xi", "omicron": "o",
    "rho": r"\rho", "sigma": r"\sigma", "tau": r"\tau", "upsilon": r"\upsilon",
    "phi": r"\varphi", "chi": r"\chi", "psi": r"\psi", "omega": r"\omega",
    "Alpha": r"\mathrm{A}", "Beta": r"\mathrm{B}", "Gamma": r"\Gamma", "Delta": r"\Delta",
    "Epsilon": r"\mathrm{E}", "Zeta": r"\mathrm{Z}", "Eta": r"\mathrm{H}", "Theta": r"\Theta",
    "Iota": r"\mathrm{I}", "Kappa": r"\mathrm{K}", "Lambda": r"\Lambda", "Mu": r"\mathrm{M}",
    "Nu": r"\mathrm{N}", "Xi": r"\Xi", "Omicron": r"\mathrm{O}", "Pi": r"\Pi",
    "Rho": r"\mathrm{P}", "Sigma": r"\Sigma", "Tau": r"\mathrm{T}", "Upsilon": r"\Upsilon",
    "Phi": r"\Phi", "Chi": r"\mathrm{X}", "Psi": r"\Psi", "Omega": r"\Omega",
    "pi": r"\pi",
}
"""Greek letters by English name (ε and φ in the forms engineers write them)."""

_HEAD = re.compile(r"([A-Za-z]+?)([0-9]*)")
_ONE_LETTER = re.compile(r"([A-Za-z])([0-9A-Za-z]+)")
_PART = re.compile(r"[0-9A-Za-z]+")

_NO_FORMS: Mapping[str, str] = MappingProxyType({})
_FORMS: ContextVar[Mapping[str, str]] = ContextVar("typeset_forms", default=_NO_FORMS)


@contextmanager
def names(forms: Mapping[str, str]) -> Iterator[None]:
    """While the block runs, the names in `forms` are set as given (a file's `typeset`)."""
    token = _FORMS.set({**_FORMS.get(), **forms})
    try:
        yield
    finally:
        _FORMS.reset(token)


def given_forms(names_: Iterable[str]) -> tuple[tuple[str, str], ...]:
    """The forms given (by `names`) for any of `names_` now: a cache key."""
    forms = _FORMS.get()
    return tuple((n, forms[n]) for n in names_ if n in forms) if forms else ()


def symbol_latex(name: str) -> str:
    """LaTeX of a symbol name: `Rin` → `R_{\\mathrm{in}}`, `eps` → `\\varepsilon`,
    `Ra_ref` → `R_{\\mathrm{a,ref}}`, `R1` → `R_{1}` (the rules above)."""
    given = _FORMS.get().get(name)
    return given if given is not None else _rule_latex(name)


@lru_cache(maxsize=4096)
def _rule_latex(name: str) -> str:
    head, *rest = name.split("_")
    if name == "oo" or not head or not all(_PART.fullmatch(p) for p in rest):
        return _sympy_latex(name)
    base, subscripts = _split_head(head)
    if base is None:
        return _sympy_latex(name)
    node_like = not subscripts and len(rest) == 1  # `V_a`: set like the node `a`
    for part in rest:
        subscripts.append(part if node_like and len(part) == 1 and part.isalpha()
                          else _subscript(part))
    if not subscripts:
        return base
    # adjacent upright words read as one: `\mathrm{a,ref}`
    return base + "_{" + ",".join(subscripts).replace(r"},\mathrm{", ",") + "}"


def _sympy_latex(name: str) -> str:
    """sympy's LaTeX of a name the rules do not cover (imported here: the rules' names,
    and reading a circuit, need no sympy)."""
    import sympy

    return sympy.latex(sympy.Symbol(name))


def _split_head(head: str) -> tuple[str | None, list[str]]:
    """The letter of a name's first part and its attached subscript (`omega0`, `RLa`)."""
    greek = _HEAD.fullmatch(head)
    if greek and greek.group(1) in GREEK:
        letters, digits = greek.groups()
        return GREEK[letters], [digits] if digits else []
    if len(head) == 1:
        return head, []
    one = _ONE_LETTER.fullmatch(head)
    if one is None:
        return None, []
    letter, word = one.groups()
    if word.isupper() and len(word) > 1:  # an abbreviation (`CMRR`) is one upright word
        return None, []
    return letter, [_subscript(word)]


def _subscript(word: str) -> str:
    """A descriptive subscript: letters upright, digits as they are (`4t` → `4\\mathrm{t}`),
    a Greek name as its letter (`R_theta`)."""
    if word in GREEK:
        return GREEK[word]
    return re.sub(r"[A-Za-z]+", lambda m: rf"\mathrm{{{m.group(0)}}}", word)


def latex_of(expr: sympy.Basic) -> str:
    """sympy's LaTeX of an expression, with its symbols typeset by `symbol_latex`."""
    import sympy

    names_ = {s: symbol_latex(s.name) for s in getattr(expr, "free_symbols", ())
              if isinstance(s, sympy.Symbol)}
    return sympy.latex(expr, symbol_names=names_)


# ---------------------------------------------------------------- forms given by a file

SAFE_COMMANDS = frozenset({
    *(g.lstrip("\\") for g in GREEK.values() if g.startswith("\\") and "{" not in g),
    "epsilon", "theta", "phi", "varrho", "varsigma", "varpi", "vartheta", "varepsilon",
    "varphi", "ell", "hbar", "mathrm", "mathit", "mathbf", "mathsf", "mathcal", "text",
    "prime", "hat", "bar", "tilde", "dot", "ddot", "vec", "infty", "partial", "nabla",
})
"""The LaTeX commands a file's typeset form may use: letters, accents and font choices."""

MAX_FORM_LENGTH = 200

_FORM_CHARACTERS = re.compile(r"[A-Za-z0-9_^{}\\ ,.'+\-()]*")


def check_form(form: str) -> str | None:
    """Why a file's typeset form is refused (None when it is safe to put in any note).

    Only letters, digits, `_ ^ { } , . ' + - ( )`, spaces and the commands of
    `SAFE_COMMANDS` are allowed, braces balanced: nothing that defines, reads or writes.
    """
    if not form.strip():
        return "the typeset form is empty"
    if len(form) > MAX_FORM_LENGTH:
        return f"the typeset form is longer than {MAX_FORM_LENGTH} characters"
    for command in re.findall(r"\\([A-Za-z]*)", form):
        if command not in SAFE_COMMANDS:
            return (f"`\\{command}` is not allowed in a typeset form (allowed: Greek letters, "
                    "\\mathrm, \\mathit, \\mathbf, \\text, accents such as \\hat and \\bar)")
    bad = _FORM_CHARACTERS.fullmatch(form)
    if bad is None:
        char = next(c for c in form if not _FORM_CHARACTERS.fullmatch(c))
        return (f"`{char}` is not allowed in a typeset form (letters, digits, _ ^ {{ }} and "
                "a few commands such as \\alpha or \\mathrm are)")
    depth = 0
    for char in form:
        depth += {"{": 1, "}": -1}.get(char, 0)
        if depth < 0:
            return "a `}` in the typeset form closes no `{`"
    if depth:
        return "a `{` in the typeset form is never closed"
    return None
