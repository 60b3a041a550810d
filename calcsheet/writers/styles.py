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
    """Templates from ``style`` first, then the default style for anything it does not override."""
    folders = ([str(style)] if style else []) + [str(default_style_dir())]
    return jinja2.Environment(loader=jinja2.FileSystemLoader(folders), autoescape=True,
                              undefined=jinja2.StrictUndefined, trim_blocks=True, lstrip_blocks=True,
                              keep_trailing_newline=True)


def read_css(env: jinja2.Environment, name: str) -> str:
    """CSS text from the first folder that has it (the loader's search order)."""
    source, _, _ = env.loader.get_source(env, name)
    return source
