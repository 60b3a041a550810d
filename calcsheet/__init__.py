"""calcsheet: first-order linear models turned into checked calculation sheets.

From Python: ``calcsheet.load``, ``calcsheet.build`` and ``calcsheet.check`` (calcsheet/api.py), the ``Sheet``
they return, and the typed errors. They are imported when first used (module ``__getattr__``), so that
``import calcsheet`` and the command line's start-up stay as cheap as before: no sympy, scipy, pint or
matplotlib until something is loaded or drawn.
"""

from __future__ import annotations

import sys
import types
from importlib import import_module
from typing import TYPE_CHECKING

__version__ = "0.1.0"

__all__ = [
    "load",
    "build",
    "check",
    "Input",
    "Sheet",
    "CalcsheetError",
    "InputError",
    "ModelRefused",
    "ErrorList",
    "__version__",
]

# public name -> the module that defines it
_PUBLIC = {
    "load": "calcsheet.api",
    "build": "calcsheet.api",
    "check": "calcsheet.api",
    "Input": "calcsheet.api",
    "Sheet": "calcsheet.api",
    "CalcsheetError": "calcsheet.errors",
    "InputError": "calcsheet.errors",
    "ModelRefused": "calcsheet.errors",
    "ErrorList": "calcsheet.errors",
}

if TYPE_CHECKING:  # what type checkers and editors see; nothing is imported at run time
    from calcsheet.api import Input, Sheet, build, check, load
    from calcsheet.errors import CalcsheetError, ErrorList, InputError, ModelRefused


def __getattr__(name: str):
    """A public name, imported on first use and then kept as an ordinary attribute."""
    if name not in _PUBLIC:
        raise AttributeError(f"module 'calcsheet' has no attribute {name!r}")
    value = getattr(import_module(_PUBLIC[name]), name)
    globals()[name] = value
    return value


def __dir__() -> list[str]:
    return sorted(set(globals()) | set(__all__))


class _Package(types.ModuleType):
    """The loading stage is the subpackage calcsheet/load/, and the API's function is ``calcsheet.load``. When a
    subpackage is first imported, Python binds it onto its parent under its name, which would hide the function;
    that one binding is declined here. Code reaches the subpackage as ``from calcsheet.load.loader import ...``,
    through sys.modules, which this does not touch."""

    def __setattr__(self, name: str, value) -> None:
        if name in _PUBLIC and isinstance(value, types.ModuleType):
            return
        super().__setattr__(name, value)


sys.modules[__name__].__class__ = _Package
