"""Finding a house style: a folder of templates and CSS, in a checkout or an installed wheel.

A house style may come with someone else's calculation, so it is treated as untrusted: its
templates run in Jinja2's sandbox (no route to Python internals such as ``__globals__``), and
neither a template nor a CSS file may be read from outside its folder, through a symbolic link
or otherwise. Every value a template prints passes through ``visible`` (control characters and
bidirectional overrides shown as escapes) before autoescaping.
"""

from __future__ import annotations

from importlib import resources
from pathlib import Path

import jinja2
import jinja2.sandbox
from markupsafe import Markup

from calcsheet.errors import InputError
from calcsheet.writers.visible_text import visible


def default_style_dir() -> Path:
    """The installed copy (package calcsheet.styles), or the checkout's styles/ when run from source."""
    try:
        return Path(str(resources.files("calcsheet.styles") / "default"))
    except ModuleNotFoundError:
        return Path(__file__).resolve().parents[2] / "styles" / "default"


def style_name(style: Path | None) -> str:
    return f"style folder {style}" if style is not None else "the default style"


class _ConfinedLoader(jinja2.FileSystemLoader):
    """A FileSystemLoader that refuses a template whose real path lies outside its folders."""

    def get_source(self, environment, template):
        source, filename, uptodate = super().get_source(environment, template)
        real = Path(filename).resolve()
        if not any(real.is_relative_to(Path(folder).resolve()) for folder in self.searchpath):
            raise InputError(
                f"{self.searchpath[0]}: template '{template}' leads outside the style folder "
                f"(to {real}); a style may use only its own files"
            )
        return source, filename, uptodate


def environment(style: Path | None = None) -> jinja2.Environment:
    """Templates from ``style`` first, then the default style for anything it does not override.

    The default templates are also reachable as ``default/<name>``, so a house template can
    ``{% extends "default/sheet.html.j2" %}`` and replace only the blocks it cares about.
    """
    default = str(default_style_dir())
    folders = ([str(style)] if style else []) + [default]
    loader = jinja2.ChoiceLoader(
        [
            *(_ConfinedLoader(folder) for folder in folders),
            jinja2.PrefixLoader({"default": _ConfinedLoader(default)}),
        ]
    )
    return jinja2.sandbox.SandboxedEnvironment(
        loader=loader,
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
        finalize=_shown,
    )


def render_template(env: jinja2.Environment, style: Path | None, name: str, **context) -> str:
    """Render template ``name``; a house template that fails or breaks the sandbox is an input error."""
    try:
        return env.get_template(name).render(**context)
    except jinja2.TemplateError as error:
        if style is None:
            raise  # our own template: a defect, not the user's
        raise InputError(f"{style_name(style)}: its template cannot be used: {type(error).__name__}: {error}") from None


def read_css(style: Path | None, name: str) -> str:
    """The default CSS file, followed by the house style's file of the same name if it has one.

    CSS cascades, so a house style only writes the rules it changes.
    """
    parts = [(default_style_dir() / name).read_text(encoding="utf-8")]
    if style is not None and (Path(style) / name).is_file():
        real = (Path(style) / name).resolve()
        if not real.is_relative_to(Path(style).resolve()):
            raise InputError(
                f"{style_name(style)}: {name} leads outside the style folder (to {real}); "
                "a style may use only its own files"
            )
        parts.append(real.read_text(encoding="utf-8"))
    return "\n".join(parts)


def _shown(value):
    """Every printed value: our own markup as it is, any other text with unsafe characters escaped."""
    if isinstance(value, Markup) or not isinstance(value, str):
        return value
    return visible(value, keep="\n\t")
