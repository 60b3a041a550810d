"""pint, imported without letting it load scipy.

pint's compatibility module imports scipy when it is installed, only for ``Quantity.to_preferred`` (a linear
program choosing preferred units), which calcsheet never calls. Reading a package file checks its basis values
with pint, so a no-op package rebuild, which derives nothing, would load scipy for nothing. Every module that
needs pint imports it from here. Where scipy is already loaded (a build that derives), pint finds it as usual;
nothing calcsheet uses from pint depends on which happened.
"""

from __future__ import annotations

import sys


def _import_pint():
    if "pint" in sys.modules or "scipy" in sys.modules:
        import pint

        return pint
    sys.modules["scipy"] = None  # an import of scipy now fails, which pint.compat takes as "not installed"
    try:
        import pint
    finally:
        if sys.modules.get("scipy", 0) is None:
            del sys.modules["scipy"]
    return pint


pint = _import_pint()
