"""Safety wording: the general caution and hazard notes chosen from what the model holds."""

from __future__ import annotations

from calcsheet.formatting import number
from calcsheet.model import Model
from calcsheet.source.units import registry

GENERAL = (
    "This sheet does not replace review by a licensed engineer. Local codes, standards and "
    "licensed practice govern any use of its results."
)

# Contact-burn figures for bare metal, common practice, no source; quoted from memory: about 43-48 degC for
# prolonged contact (minutes and more) and about 60 degC for brief contact (a few seconds). Any temperature in the
# model past the lower figure earns the hot-surface note, and the note places the sheet's own temperature limits
# against these figures, so that it never reads as contradicting them.
PROLONGED_CONTACT_KELVIN = (316.15, 321.15)
BRIEF_CONTACT_KELVIN = 333.15
HOT_SURFACE_KELVIN = PROLONGED_CONTACT_KELVIN[0]

ELECTRICAL = (
    "Stored electrical energy: treat the circuit as live until its voltage has been "
    "measured at a safe level with a proven tester; follow the local electrical safety "
    "rules for isolation and discharge."
)
# Common practice, no source: a coil's current cannot change at once, so opening its circuit drives
# v = L di/dt across the opening contact until the current finds a path.
INDUCTIVE = (
    "Inductive energy: a coil's current cannot stop at once. Opening its circuit, on purpose or by a "
    "fault, drives a voltage L·di/dt across the opening contact that can far exceed the supply, until "
    "the current finds a path (an arc, or a person). Give the coil a suppression path rated for its "
    "current and energy (freewheeling diode, varistor or RC snubber), and follow the local electrical "
    "safety rules for isolation."
)
HEAT = (
    "Hot surfaces: this model reaches {hottest}. Common practice (figures commonly quoted, no cited source) takes "
    "bare metal to burn skin at about 43-48 degC on prolonged contact and at about 60 degC on brief contact.{limits} "
    "Keep guards, warning signs and protective equipment as local codes and licensed practice require until the "
    "part has been measured cool."
)
PRESSURE = (
    "Stored pressure energy: do not open or work on the system until it is verified "
    "depressurised according to the local pressure-equipment rules."
)


def hazard_notes(
    model: Model,
    response: tuple[float, ...] = (),
    steps: tuple[tuple[str, str, str], ...] = (),
    numbers=None,
    at_switches=(),
) -> tuple[str, ...]:
    """Hazard notes for what the model holds; ``response`` is the unknown's computed values (SI), ``steps``
    the coil voltage L di/dt just before and just after each switch, as shown ((at, before, after));
    ``numbers`` and ``at_switches`` the derived quantities found, whose largest stored energy the note states."""
    dims = {_dim(p.quantity.units) for p in model.parameters} | {_dim(model.unknown.unit)}
    notes = []
    inductive = _dim("H") in dims
    energy = stored_energy_words(model, numbers, at_switches)
    if dims & {_dim("F"), _dim("C")} or (dims & {_dim("V"), _dim("A")} and not inductive):  # stored charge
        notes.append(ELECTRICAL + ("" if inductive else energy))
    if inductive:
        notes.append(
            INDUCTIVE
            + "".join(
                f" At the switch at {at} the coil voltage L·di/dt steps from {before} to {after}."
                for at, before, after in steps
            )
            + energy
        )
    if _dim(model.unknown.unit) == _dim("K"):
        hottest = max((_hottest(model),) + tuple(v for v in response if v == v))
        if hottest > HOT_SURFACE_KELVIN:
            notes.append(hot_surface_note(model, hottest))
    if dims & {_dim("Pa")}:
        notes.append(PRESSURE)
    return tuple(notes)


def hot_surface_note(model: Model, hottest: float) -> str:
    """The hot-surface note: the hottest temperature of the model, the common-practice contact figures, and each of
    the sheet's own temperature limits placed against them (a 50 degC handling limit sits between the two)."""
    from calcsheet.sheet.quantities import in_units

    by_value: dict[tuple[float, str], list[str]] = {}
    for check, value, text in _temperature_limits(model):
        by_value.setdefault((value, text), []).append(check)
    limits = "".join(
        f" The {'criterion' if len(checks) == 1 else 'criteria'} {' and '.join(checks)} "
        f"{'uses' if len(checks) == 1 else 'use'} {text}, {_against_contact_figures(value)}."
        for (value, text), checks in by_value.items()
    )
    return HEAT.format(hottest=in_units(hottest, model.unknown), limits=limits)


def _temperature_limits(model: Model) -> tuple[tuple[str, float, str], ...]:
    """(check, temperature in K, as written) for each criterion that states a temperature of the unknown: the
    limit of a value, extreme or final value, the level of a reach."""
    from calcsheet.subjects import SUBJECTS, UNKNOWN

    found = []
    for c in model.criteria:
        if c.of:
            continue
        subject = SUBJECTS[c.subject]
        if subject.found == UNKNOWN:
            found.append((c.check, c.limit.si, c.limit.text))
        elif subject.argument == UNKNOWN and c.argument is not None:
            found.append((c.check, c.argument.si, c.argument.text))
    return tuple(found)


def _against_contact_figures(kelvin: float) -> str:
    low, high = PROLONGED_CONTACT_KELVIN
    if kelvin < low:
        return "below both figures"
    if kelvin <= high:
        return "within the range quoted for prolonged contact"
    if kelvin < BRIEF_CONTACT_KELVIN:
        return (
            "above the figure for prolonged contact and below the one for brief contact: a part that meets it can "
            "still burn on prolonged contact"
        )
    return "at or above the figure for brief contact: a part at that temperature can burn even on brief contact"


# The response "stays far below its input" when it covers less than this fraction of the input's excursion from the
# start value: a lag that reaches 95 % of a slow input is tracking it; one that reaches 70 % of a spike is not.
FAR_BELOW = 0.9


def input_beyond_response(model: Model, driving) -> tuple[str, ...]:
    """Where a forced response stays far below its input (a probe lagging a spike): the input's peak and the
    response's, both stated, for each side (above and below the start value) where it happens. ``driving`` is
    derive/driving.py's facts; nothing without them or for a forcing that does not change."""
    from calcsheet.sheet.quantities import in_units

    if driving is None or not driving.varies:
        return ()
    start, name, x = model.initial_value.si, model.unknown.name, model.variable
    notes = []
    for word, verb, u, y, sign in (
        ("higher", "peaks at", driving.largest, driving.response_largest, 1),
        ("lower", "falls to", driving.smallest, driving.response_smallest, -1),
    ):
        reach_of_input, reach_of_response = sign * (u.value - start), sign * (y.value - start)
        if reach_of_input > 0 and reach_of_response < FAR_BELOW * reach_of_input:
            notes.append(
                f"The input reached a {word} value than the response: the forcing, as a value of {name}, {verb} "
                f"{in_units(u.value, model.unknown)} at {x.name} = {in_units(u.at, x)}, while {name} {verb} "
                f"{in_units(y.value, model.unknown)} at {x.name} = {in_units(y.at, x)}. Whatever the forcing acts "
                f"on directly (the medium a probe sits in, a part's surroundings) sees the input's value; judge "
                f"exposure to it from the input, not from {name}."
            )
    return tuple(notes)


def stored_energies(model: Model) -> tuple[str, ...]:
    """The derived quantities that are a stored electrical energy: in joules, of a voltage or a current (a kind's
    offered E_C or E_L, or the user's own)."""
    if _dim(model.unknown.unit) not in (_dim("V"), _dim("A")):
        return ()
    return tuple(q.name for q in model.derived if q.declared.unit_text and _dim(q.declared.unit) == _dim("J"))


def stored_energy_words(model: Model, numbers, at_switches=()) -> str:
    """' The largest stored energy found on this sheet is E_L = 0.52 J at t = 120 ms.', or '' when the sheet
    finds none: from the values at the points asked for, the extremes and both sides of each switch."""
    from calcsheet.sheet.quantities import in_units

    names = stored_energies(model)
    if numbers is None or not names:
        return ""
    found = [
        (v, pt.si, dv.quantity.name)
        for dv in numbers.derived
        if dv.quantity.name in names
        for pt, v in dv.values
        if v is not None
    ]
    found += [(e.value, e.at, e.of) for e in numbers.extremes if e.of in names and e.value is not None]
    found += [(v, a.at, a.of) for a in at_switches if a.of in names for v in (a.before, a.after)]
    found = [f for f in found if f[0] == f[0]]  # no NaN
    if not found:
        return ""
    value, at, name = max(found, key=lambda f: (f[0], -(f[1] if f[1] is not None else 0.0)))
    where = f" at {model.variable.name} = {in_units(at, model.variable)}" if at is not None else ""
    return (
        f" The largest stored energy found on this sheet is {name} = {in_units(value, model.quantity(name))}{where}; "
        "size the discharge or suppression path for it as the local codes and licensed practice require."
    )


def _dim(unit):
    return registry().Quantity(1, unit).dimensionality


def _hottest(model: Model) -> float:
    temperatures = [model.initial_value.si] + [p.si for p in model.parameters if _dim(p.quantity.units) == _dim("K")]
    return max(temperatures)


def coil_voltage_steps(pd) -> tuple[tuple[str, str, str], ...]:
    """L di/dt just before and just after each switch of a switched current model with an inductance:
    each side from its own interval's equation as stated, at the current reached at the switch."""
    from calcsheet.derive.verify import slope_function

    m = pd.model
    if _dim(m.unknown.unit) != _dim("A"):
        return ()
    found = []
    for before, after in zip(pd.intervals, pd.intervals[1:]):
        inductance = [p.si for p in after.derivation.model.parameters if _dim(p.quantity.units) == _dim("H")]
        if len(inductance) != 1:
            return ()  # which inductance carries the current is not clear: the general note stands alone
        current = after.derivation.model.initial_value.si
        sides = []
        for interval in (before, after):
            slope = slope_function(interval.derivation.model)([after.start], [current])[0]
            sides.append(f"{number(inductance[0] * slope)} V")
        found.append((m.variable.text_of(after.start), *sides))
    return tuple(found)
