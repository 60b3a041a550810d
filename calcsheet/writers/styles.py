"""Finding a house style: a folder of templates and CSS, in a checkout or an installed wheel."""

from __future__ import annotations

from importlib import resources
from pathlib import Path

import jinja2


def default_style_dir() -> Path:
    """The installed copy (package calcsheet.styles), or the checkout's styles/ when run from source."""
    try:
        return Path(str(resources.files("calcsheet.styles") / "default"))
    except ModuleNotFoundError:
        return Path(__file__).resolve().parents[2] / "styles" / "default"


def environment(style: Path | None = None) -> jinja2.Environment:
    """Templates from ``style`` first, then the default style for anything it does not override.

    The default templates are also reachable as ``default/<name>``, so a house template can
    ``{% extends "default/sheet.html.j2" %}`` and replace only the blocks it cares about.
    """
    default = str(default_style_dir())
    folders = ([str(style)] if style else []) + [default]
    loader = jinja2.ChoiceLoader([
        jinja2.FileSystemLoader(folders),
        jinja2.PrefixLoader({"default": jinja2.FileSystemLoader(default)}),
    ])
    return jinja2.Environment(loader=loader, autoescape=True,
                              undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True,
                              keep_trailing_newline=True)


def read_css(style: Path | None, name: str) -> str:
    """The default CSS file, followed by the house style's file of the same name if it has one.

    CSS cascades, so a house style only writes the rules it changes.
    """
    parts = [(default_style_dir() / name).read_text(encoding="utf-8")]
    if style is not None and (Path(style) / name).is_file():
        parts.append((Path(style) / name).read_text(encoding="utf-8"))
    return "\n".join(parts)
