"""The jinja2 environment of notes and sheets: a user's `--template DIR` first, then the
built-in templates shipped as package data (`symcirc.templates`), with our filters.

HTML templates (`*.html.j2`) escape every value automatically; LaTeX and Markdown
templates escape user strings with `escape_tex` / `escape_md`.
"""

from __future__ import annotations

from collections.abc import Callable
from importlib import resources
from pathlib import Path
from typing import Any

import jinja2

from ..errors import SymcircError
from .filters import FILTERS

TEMPLATE_PACKAGE = "symcirc.templates"


class ResourceLoader(jinja2.BaseLoader):
    """Templates from package data, found through importlib.resources (works from a wheel)."""

    def __init__(self, package: str = TEMPLATE_PACKAGE) -> None:
        self.package = package

    def get_source(
        self, environment: jinja2.Environment, template: str
    ) -> tuple[str, str | None, Callable[[], bool] | None]:
        resource = resources.files(self.package)
        for part in template.split("/"):
            if part in ("", ".", ".."):
                raise jinja2.TemplateNotFound(template)
            resource = resource.joinpath(part)
        if not resource.is_file():
            raise jinja2.TemplateNotFound(template)
        return resource.read_text(encoding="utf-8"), f"<built-in>/{template}", lambda: True


def environment(template_dir: str | Path | None = None) -> jinja2.Environment:
    """The environment: templates from `template_dir` (if given) override the built-in ones."""
    loaders: list[jinja2.BaseLoader] = []
    if template_dir is not None:
        folder = Path(template_dir)
        if not folder.is_dir():
            raise SymcircError(f"template folder '{folder}' does not exist", file=str(folder))
        loaders.append(jinja2.FileSystemLoader(str(folder), encoding="utf-8"))
    loaders.append(ResourceLoader())
    env = jinja2.Environment(
        loader=jinja2.ChoiceLoader(loaders),
        autoescape=jinja2.select_autoescape(enabled_extensions=("html.j2",),
                                            default_for_string=False),
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
    )
    env.filters.update(FILTERS)
    return env


def render(env: jinja2.Environment, name: str, **context: Any) -> str:
    """Render template `name`; template problems become errors that name the template line."""
    try:
        return env.get_template(name).render(**context)
    except jinja2.TemplateNotFound as err:
        raise SymcircError(f"no template '{err.name}' (looked in the template folder and the "
                           "built-in templates)") from None
    except jinja2.TemplateSyntaxError as err:
        raise SymcircError(f"template syntax: {err.message}",
                           file=err.filename or err.name or name,
                           line=err.lineno or 0, column=1) from None
    except jinja2.TemplateError as err:  # undefined variables and the like, at render time
        raise SymcircError(f"template '{name}': {err}", file=name) from None
