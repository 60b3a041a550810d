"""Engineering model kinds: a component or balance stated in the trade's words becomes an equation.

Each kind lives in its own module and is listed in KINDS. A kind names its parameters with the
dimension each must have, the physical law its equation comes from (shown on the sheet as the
first step), its assumptions and any validity check the trade uses.
"""

from __future__ import annotations

from importlib import import_module

# One module per kind, named as the kind; the order is the catalogue's order.
KIND_MODULES = (
    "series_rc",
    "series_rc_charge",
    "series_rl",
    "lumped_body",
    "mixing_tank",
    "mixing_tank_concentration",
    "linear_reservoir",
    "first_order_sensor",
    "rotating_inertia",
    "mass_with_drag",
    "pipe_temperature",
    "orifice_tank",
    "radiating_body",
)


def all_kinds() -> dict:
    """Every kind by name, in catalogue order."""
    kinds = {}
    for module in KIND_MODULES:
        kind = import_module(f"calcsheet.kinds.{module}").KIND
        kinds[kind.name] = kind
    return kinds


def kind_named(name: str, where: str = "model.kind"):
    from calcsheet.errors import InputError

    if name not in KIND_MODULES:
        raise InputError(f"unknown kind '{name}' (known: {', '.join(KIND_MODULES)})", where)
    return import_module(f"calcsheet.kinds.{name}").KIND
