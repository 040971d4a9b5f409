"""The jinja2 environment of notes and sheets: a user's `--template DIR` first, then the
built-in templates shipped as package data (`symcirc.templates`), with our filters.

Templates are data, and a template folder may come from someone else: every template, the
built-in ones too, runs in jinja2's immutable sandbox, may read only the attributes of the
note's own view objects and plain values (never of sympy objects or of the circuit model,
whose methods could parse or run text), and may not build huge numbers or strings. A user
folder is read only inside itself (no `..`, no link leading out). The folder comes from the
command line only: `symcirc verify` never takes one from a note's marker.

HTML templates (`*.html.j2`) escape every value automatically; LaTeX and Markdown
templates escape user strings with `escape_tex` / `escape_md`.
"""

from __future__ import annotations

import operator
from collections.abc import Callable
from fractions import Fraction
from importlib import resources
from pathlib import Path
from typing import Any

import jinja2
from jinja2.loaders import split_template_path
from jinja2.sandbox import ImmutableSandboxedEnvironment, SecurityError

from ..errors import SymcircError
from .filters import FILTERS, FORMAT_FILTERS

TEMPLATE_PACKAGE = "symcirc.templates"

LARGEST_POWER = 4096
"""Largest exponent `**` takes in a template."""
LARGEST_REPEAT = 1_000_000
"""Longest string or list `*` may build in a template."""

_PLAIN = (str, int, float, bool, type(None), list, tuple, dict, Fraction)
_OWN_MODULES = ("symcirc.report.", "symcirc.results", "jinja2.")
"""Objects whose attributes templates may read: the view dataclasses of notes and sheets,
results (their sympy parts only through filters) and jinja2's own helpers (loop, cycler)."""


class ResourceLoader(jinja2.BaseLoader):
    """Templates from package data, found through importlib.resources (works from a wheel)."""

    def __init__(self, package: str = TEMPLATE_PACKAGE) -> None:
        self.package = package
        self.sources: dict[str, str] = {}

    def get_source(
        self, environment: jinja2.Environment, template: str
    ) -> tuple[str, str | None, Callable[[], bool] | None]:
        resource = resources.files(self.package)
        for part in split_template_path(template):
            resource = resource.joinpath(part)
        if not resource.is_file():
            raise jinja2.TemplateNotFound(template)
        name = f"<built-in>/{template}"
        self.sources[name] = resource.read_text(encoding="utf-8")
        return self.sources[name], name, lambda: True


class FolderLoader(jinja2.BaseLoader):
    """Templates from the user's folder, read only inside it: a name with `..` or a link
    that leads out of the folder is refused before anything is read."""

    def __init__(self, folder: Path) -> None:
        self.folder = folder
        self.root = folder.resolve()
        self.sources: dict[str, str] = {}

    def get_source(
        self, environment: jinja2.Environment, template: str
    ) -> tuple[str, str | None, Callable[[], bool] | None]:
        path = self.folder.joinpath(*split_template_path(template))
        real = path.resolve()
        if not real.is_relative_to(self.root):
            raise SymcircError(f"template '{template}' leads out of the template folder "
                               f"'{self.folder}' (a link); templates are read only inside it",
                               file=str(path))
        if not real.is_file():  # missing, a folder, a FIFO or a device: not a template
            raise jinja2.TemplateNotFound(template)
        try:
            text = real.read_bytes().decode("utf-8")
        except UnicodeDecodeError:
            raise SymcircError("the template is not UTF-8 text", file=str(path)) from None
        except OSError as err:
            raise SymcircError(f"cannot read the template: {err.strerror or err}",
                               file=str(path)) from None
        self.sources[str(path)] = text
        return text, str(path), lambda: False


class TemplateSandbox(ImmutableSandboxedEnvironment):
    """jinja2's immutable sandbox, narrowed to what templates of notes and sheets need."""

    intercepted_binops = frozenset({"*", "**"})

    def is_safe_attribute(self, obj: Any, attr: str, value: Any) -> bool:
        if not super().is_safe_attribute(obj, attr, value):
            return False
        if isinstance(obj, _PLAIN):
            return True
        module = type(obj).__module__ or ""
        return module.startswith(_OWN_MODULES)

    def call_binop(self, context: Any, operator_: str, left: Any, right: Any) -> Any:
        if operator_ == "**":
            if isinstance(right, int) and abs(right) > LARGEST_POWER:
                raise SecurityError(f"a power with exponent {right} is too large for a "
                                    f"template (at most {LARGEST_POWER})")
            return operator.pow(left, right)
        for sequence, count in ((left, right), (right, left)):
            if isinstance(sequence, (str, list, tuple)) and isinstance(count, int) \
                    and len(sequence) * count > LARGEST_REPEAT:
                raise SecurityError(f"a repetition of {len(sequence) * count} items is too "
                                    f"large for a template (at most {LARGEST_REPEAT})")
        return operator.mul(left, right)


def environment(template_dir: str | Path | None = None,
                format: str | None = None) -> jinja2.Environment:
    """The environment: templates from `template_dir` (if given) override the built-in ones;
    `format` picks the filters of a document made from another's text (a Word document's
    Markdown keeps its maths as pandoc reads TeX)."""
    loaders: list[jinja2.BaseLoader] = []
    if template_dir is not None:
        folder = Path(template_dir)
        if not folder.is_dir():
            raise SymcircError(f"template folder '{folder}' does not exist", file=str(folder))
        loaders.append(FolderLoader(folder))
    loaders.append(ResourceLoader())
    env = TemplateSandbox(
        loader=jinja2.ChoiceLoader(loaders),
        autoescape=jinja2.select_autoescape(enabled_extensions=("html.j2",),
                                            default_for_string=False),
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
    )
    env.filters.update(FILTERS)
    env.filters.update(FORMAT_FILTERS.get(format or "", {}))
    return env


def render(env: jinja2.Environment, name: str, **context: Any) -> str:
    """Render template `name`; template problems (a refused operation included) become
    errors that name the template's file and line."""
    try:
        return env.get_template(name).render(**context)
    except jinja2.TemplateNotFound as err:
        raise SymcircError(f"no template '{err.name}' (looked in the template folder and the "
                           "built-in templates)") from None
    except jinja2.TemplateSyntaxError as err:
        raise SymcircError(f"template syntax: {err.message}",
                           file=err.filename or err.name or name,
                           line=err.lineno or 0, column=1) from None
    except SymcircError:
        raise
    except SecurityError as err:
        raise _located(env, err, name, "the template tried something templates may not do "
                       f"({str(err).rstrip('.')}); templates run in a sandbox") from None
    except jinja2.TemplateError as err:  # undefined variables and the like, at render time
        raise _located(env, err, name, f"template: {err}") from None
    except (ArithmeticError, TypeError, ValueError, LookupError, RecursionError) as err:
        raise _located(env, err, name, f"template: {type(err).__name__}: {err}") from None


def _located(env: jinja2.Environment, err: BaseException, name: str,
             message: str) -> SymcircError:
    """An error at the innermost template line of `err`'s traceback (jinja2 rewrites it so
    that template frames carry the template's file and line)."""
    file, line = name, 0
    trace = err.__traceback__
    while trace is not None:
        if "__jinja_exception__" in trace.tb_frame.f_globals:
            file, line = trace.tb_frame.f_code.co_filename, trace.tb_lineno
        trace = trace.tb_next
    source_line = None
    for loader in getattr(env.loader, "loaders", ()):
        text = getattr(loader, "sources", {}).get(file)
        if text is not None and 0 < line <= len(text.splitlines()):
            source_line = text.splitlines()[line - 1]
    return SymcircError(message, file=file, line=line, column=1 if line else 0,
                        source_line=source_line)
