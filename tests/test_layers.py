"""The packages import one way only, as DEVELOPERS.md draws them (a property of our own code)."""

from __future__ import annotations

import ast
from pathlib import Path

PACKAGE = Path(__file__).resolve().parents[1] / "calcsheet"
# lower to higher; a module may import only from its own level and those before it
ORDER = [
    "errors",
    "formatting",
    "unit_text",
    "symbol_spelling",
    "mathtext",
    "subjects",
    "input_keys",
    "source",
    "kinds",
    "model",
    "load",
    "derive",
    "sheet",
    "writers",
    "review",
    "pipeline",
    "package",
    "api",
    "watch",
    "cli",
]


def _level(module: str) -> str:
    parts = module.split(".")
    return parts[1] if len(parts) > 1 else "calcsheet"


def test_no_module_imports_from_a_higher_level():
    wrong = []
    for path in PACKAGE.rglob("*.py"):
        relative = path.relative_to(PACKAGE.parent).with_suffix("")
        own = relative.parts[1] if len(relative.parts) > 1 else "calcsheet"
        if own in ("__init__", "__main__", "styles", "calcsheet"):
            continue
        for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
            if isinstance(node, ast.ImportFrom) and node.module and node.module.startswith("calcsheet."):
                target = _level(node.module)
                if target in ORDER and own in ORDER and ORDER.index(target) > ORDER.index(own):
                    wrong.append(f"{relative}: imports {node.module}")
    assert not wrong, "\n".join(wrong)


def test_derive_needs_no_unit_registry():
    # Derive works on numbers in SI; the declared units' scale and offset come with the Model (DEVELOPERS.md).
    offenders = [
        str(path.relative_to(PACKAGE.parent))
        for path in (PACKAGE / "derive").glob("*.py")
        if "calcsheet.source.units" in path.read_text(encoding="utf-8") or "import pint" in path.read_text("utf-8")
    ]
    assert not offenders, offenders
