"""Safety wording: the general caution and hazard notes chosen from what the model holds."""

from __future__ import annotations

from calcsheet.model import Model
from calcsheet.source.units import registry

GENERAL = ("This sheet does not replace review by a licensed engineer. Local codes, standards and "
           "licensed practice govern any use of its results.")

# Common practice, no source: contact with surfaces much above about 45 degC can burn, so any
# temperature past that in the model earns the hot-surface note.
HOT_SURFACE_KELVIN = 318.15

ELECTRICAL = ("Stored electrical energy: treat the circuit as live until its voltage has been "
              "measured at a safe level with a proven tester; follow the local electrical safety "
              "rules for isolation and discharge.")
HEAT = ("Hot surfaces: parts above about 45 degC can burn on contact; keep guards, warning signs "
        "and protective equipment as local rules require until the part has been measured cool.")
PRESSURE = ("Stored pressure energy: do not open or work on the system until it is verified "
            "depressurised according to the local pressure-equipment rules.")


def hazard_notes(model: Model, response: tuple[float, ...] = ()) -> tuple[str, ...]:
    """Hazard notes for what the model holds; ``response`` is the unknown's computed values (SI)."""
    dims = {_dim(p.quantity.units) for p in model.parameters} | {_dim(model.unknown.unit)}
    notes = []
    if dims & {_dim("V"), _dim("A"), _dim("F"), _dim("H"), _dim("C")}:
        notes.append(ELECTRICAL)
    if _dim(model.unknown.unit) == _dim("K") and max((_hottest(model),) + tuple(response)) > HOT_SURFACE_KELVIN:
        notes.append(HEAT)
    if dims & {_dim("Pa")}:
        notes.append(PRESSURE)
    return tuple(notes)


def _dim(unit):
    return registry().Quantity(1, unit).dimensionality


def _hottest(model: Model) -> float:
    temperatures = [model.initial_value.si] + [p.si for p in model.parameters if _dim(p.quantity.units) == _dim("K")]
    return max(temperatures)
