"""The fonts the PDF is set in: DejaVu Sans as matplotlib ships it, never the machine's own fonts.

matplotlib (a dependency) ships DejaVu Sans with its licence (mpl-data/fonts/ttf/LICENSE_DEJAVU:
Bitstream Vera licence, DejaVu changes in the public domain), so the same package versions give
the same glyphs on every machine. The print CSS names them by the URL scheme ``calcsheet-font:``
(``url("calcsheet-font:DejaVuSans.ttf")``), which the PDF writer's URL fetcher maps to these files:
no absolute path ever enters the HTML, so the PDF does not depend on where Python is installed.
"""

from __future__ import annotations

import importlib.util
from pathlib import Path

SCHEME = "calcsheet-font"
FAMILY = "Calcsheet Sans"
# file name -> (font-weight, font-style) of its @font-face rule in styles/default/print.css
FACES = {
    "DejaVuSans.ttf": ("normal", "normal"),
    "DejaVuSans-Bold.ttf": ("bold", "normal"),
    "DejaVuSans-Oblique.ttf": ("normal", "italic"),
    "DejaVuSans-BoldOblique.ttf": ("bold", "italic"),
}
LICENCE = "LICENSE_DEJAVU"


def font_dir() -> Path:
    """matplotlib's font folder, found without importing matplotlib (which is slow to import)."""
    spec = importlib.util.find_spec("matplotlib")
    if spec is None or not spec.submodule_search_locations:
        raise RuntimeError("matplotlib is not installed; it ships the fonts the PDF uses")
    return Path(list(spec.submodule_search_locations)[0]) / "mpl-data" / "fonts" / "ttf"


def font_bytes(name: str) -> bytes | None:
    """The bytes of one of our fonts, or None for any other name (no path ever comes from a URL)."""
    if name not in FACES:
        return None
    return (font_dir() / name).read_bytes()
