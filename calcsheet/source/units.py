"""The one place that owns pint: parsing quantities and units, SI conversion and dimension text.

Everything downstream works in coherent SI base units, so a dimensionally consistent equation
gives SI results; conversion back to the units the engineer asked for happens only for display.
Absolute temperatures (degC, degF) are converted with their offset; differences stay differences.
"""

from __future__ import annotations

import functools
import math
import re

from calcsheet.source.pint_import import pint

from calcsheet.errors import InputError, shortened

_UNSIGNED = r"(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?"
_NUMBER = rf"[+-]?{_UNSIGNED}"
# Every pattern here is applied to stripped, length-bounded text and has no nested or adjacent
# quantifiers that can trade characters, so each runs in time linear in its input.
_LEADING_NUMBER = re.compile(_NUMBER)
_CALCULATION = re.compile(rf"^([*/+-])\s*({_UNSIGNED})\s*(.*)$", re.DOTALL)  # "* 550 uF" after "4"
# Characters a unit string may hold: names, digits, operators and brackets. Anything else
# (quotes, commas, brackets of other kinds) is refused before pint ever sees the text.
_UNIT_CHARS = re.compile(r"^[A-Za-z0-9_µμΩ°% */^().·-]+$")
_UNIT_TOKEN = re.compile(r"[A-Za-z_µΩ°%][A-Za-z0-9_µΩ°%]*|\d+(?:\.\d*)?(?:[eE][+-]?\d+)?|\.\d+|\*\*|[*/^()+-]|\s+|.")
_SMALL_EXPONENT = re.compile(r"\d{1,2}(?:\.\d{1,3})?")
_SINGLE_NAME = re.compile(r"^[A-Za-z_°][A-Za-z0-9_]*$")
_OFFSET_NAMES = re.compile(
    r"(?<![A-Za-z_])(degC|degF|celsius|fahrenheit|degree_Celsius|degree_Fahrenheit)(?![A-Za-z0-9_])"
)
MAX_QUANTITY = 200  # characters in a value such as "47 kohm"
MAX_UNIT = 100  # characters in a unit
# Magnitudes the numerics accept, in SI base units: zero, or between these (QUADPACK and the
# integrators lose all precision, or fail outright, far beyond them).
SMALLEST, LARGEST = 1e-30, 1e30
# Entries of pint's list of physical constants that engineers do use as units.
_CONSTANTS_AS_UNITS = {"standard_atmosphere", "standard_gravity", "pi"}


@functools.lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """The shared unit registry, built once per process.

    Parsing pint's definitions costs most of a second; pint's own on-disk cache of them cuts that
    to a few hundredths. Where the cache cannot be written, the registry is built without it.
    """
    try:
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=False, cache_folder=":auto:")
    except Exception:  # an unwritable cache folder must not stop the tool
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=False)
    ureg.formatter.default_format = "~"
    return ureg


def parse_unit(text: str) -> pint.Unit:
    """Parse a unit string such as ``kohm`` or ``W/(m^2*K)``; an empty string is dimensionless. A loaded
    sheet parses the same few units many times (pint's parser is most of loading), so each text is parsed
    once per process; a refusal is not kept and is raised again each time."""
    return _parsed_unit(text)


@functools.lru_cache(maxsize=4096)
def _parsed_unit(text: str) -> pint.Unit:
    cleaned = text.strip().replace("·", "*").replace("μ", "µ")
    if not cleaned:
        return registry().dimensionless
    if len(cleaned) > MAX_UNIT:
        raise InputError(f"a unit of {len(cleaned)} characters; a unit has at most {MAX_UNIT}")
    if not _UNIT_CHARS.match(cleaned) or "__" in cleaned:
        raise InputError(f"unit '{shortened(text)}' holds characters a unit cannot have")
    if cleaned.startswith("/"):
        cleaned = "1" + cleaned
    _refuse_numbers_in_unit(cleaned, text)
    if not _SINGLE_NAME.match(cleaned):
        # Inside a compound unit (degC/min) a temperature can only be a difference.
        cleaned = _OFFSET_NAMES.sub(lambda m: "delta_" + m.group(1), cleaned)
    try:
        parsed = registry().parse_expression(cleaned)
    except Exception as exc:  # pint raises several unrelated types for unknown units
        raise InputError(f"unknown unit '{shortened(text)}' ({_reason(exc)})") from None
    if isinstance(parsed, pint.Quantity):
        if not math.isclose(parsed.magnitude, 1.0):
            raise InputError(f"unit '{shortened(text)}' carries a number; write the number in the value")
        _refuse_constants(parsed.units, text)
        return parsed.units
    if isinstance(parsed, (int, float)) and parsed == 1:
        return registry().dimensionless
    raise InputError(f"'{shortened(text)}' is not a unit")


class ConstantAsUnit(InputError):
    """A unit that pint reads as a physical constant: "47 k" is 47 times Boltzmann's constant."""

    def __init__(self, text: str, root: str):
        super().__init__(
            f"'{shortened(text)}' is read as the {root.replace('_', ' ')}, a physical constant, not a unit"
        )
        self.text, self.root = text, root

    def for_value(self, number: str) -> InputError:
        return InputError(f"'{number} {self.text}': {self.message}; {_constant_hint(self.root, number)}")


_HINTS = {
    "boltzmann_constant": "did you mean {n} kohm? (k is a prefix and needs its unit: kohm, kV, kW)",
    "speed_of_light": "c alone is no prefix; write the unit with it (cm, cL)",
    "elementary_charge": "write a power of ten inside the number ({n}e3), and a charge in C",
    "molar_gas_constant": "did you mean {n} ohm?",
}


def _constant_hint(root: str, number: str) -> str:
    return _HINTS.get(root, "write the value in units; a constant's value is a parameter with its source").format(
        n=number
    )


def _refuse_constants(unit: pint.Unit, text: str) -> None:
    for name in _factors(unit):
        _, root, _ = registry().parse_unit_name(name)[0]
        if root in physical_constants():
            raise ConstantAsUnit(text.strip(), root)


@functools.lru_cache(maxsize=1)
def physical_constants() -> frozenset[str]:
    """The names pint defines in its list of physical constants, less those used as units (atm)."""
    from importlib import resources

    names = set()
    for line in resources.files("pint").joinpath("constants_en.txt").read_text(encoding="utf-8").splitlines():
        line = line.split("#", 1)[0].strip()
        if "=" in line and not line.startswith("@"):
            names.add(line.split("=", 1)[0].strip())
    return frozenset(names - _CONSTANTS_AS_UNITS)


def _refuse_numbers_in_unit(cleaned: str, text: str) -> None:
    """A number in a unit is an exponent of a name (m^2, s^-1, m^(1/2)); a bare number or a
    power of a number is a value written in the wrong place (and 2^2^2^2^2^2 would not end)."""
    tokens = [t for t in _UNIT_TOKEN.findall(cleaned) if not t.isspace()]
    if tokens == ["1"]:
        return  # the unit of a pure number
    index = 1 if tokens[:2] == ["1", "/"] else 0  # "/s" was written as "1/s"
    while index < len(tokens):
        token = tokens[index]
        if token in ("^", "**"):
            index = _exponent_end(tokens, index + 1, text)
            if index < len(tokens) and tokens[index] in ("^", "**"):
                raise InputError(f"unit '{shortened(text)}' raises a power to a power; write one exponent (m^4)")
            continue
        if token[0].isdigit() or token[0] == ".":
            raise InputError(f"unit '{shortened(text)}' carries a number; write the number in the value")
        index += 1


def _exponent_end(tokens: list[str], index: int, text: str) -> int:
    """Check the exponent starting at ``index`` (2, -1, (1/2), (-3/2)); return where it ends."""
    group = tokens[index] == "(" if index < len(tokens) else False
    end = index + 1
    if group:
        while end < len(tokens) and tokens[end] != ")":
            end += 1
        parts, end = tokens[index + 1 : end], end + 1
    else:
        if index < len(tokens) and tokens[index] in ("+", "-"):
            end += 1
        parts = tokens[index:end]
    numbers = [p for p in parts if p not in ("+", "-", "/")]
    if not numbers or len(numbers) > 2 or not all(_SMALL_EXPONENT.fullmatch(p) for p in numbers):
        raise InputError(
            f"unit '{shortened(text)}': an exponent is a small whole number or fraction (m^2, s^-1, m^(1/2))"
        )
    return end


def parse_quantity(text: str | int | float) -> pint.Quantity:
    """Parse ``"47 kohm"``, ``"0.85"`` or a bare number into a quantity."""
    if isinstance(text, bool):
        raise InputError('expected a number with a unit in quotes, such as "47 kohm", but found true/false')
    if isinstance(text, (int, float)):
        try:
            value = float(text)
        except OverflowError:
            raise InputError(f"the number has {len(str(text))} digits, too large for double precision") from None
        if not math.isfinite(value):
            raise InputError(f"'{shortened(text)}' is not a finite number")
        return registry().Quantity(value, registry().dimensionless)
    if not isinstance(text, str):
        from calcsheet.source.text_rules import toml_kind

        raise InputError(f'expected a number with a unit in quotes, such as "47 kohm", but found {toml_kind(text)}')
    stripped = text.strip()
    if len(stripped) > MAX_QUANTITY:
        raise InputError(f"a value of {len(stripped)} characters; a number with its unit has at most {MAX_QUANTITY}")
    match = _LEADING_NUMBER.match(stripped)
    if not match:
        raise InputError(f"'{shortened(text)}' is not a number followed by a unit (for example \"47 kohm\")")
    number, rest = match.group(0), stripped[match.end() :].strip()
    value = float(number)
    if not math.isfinite(value):
        raise InputError(f"'{shortened(text)}' is not a finite number")
    calculation = _CALCULATION.match(rest)
    if calculation:
        raise InputError(_calculation_message(stripped, number, calculation))
    try:
        unit = parse_unit(rest)
    except ConstantAsUnit as error:
        raise error.for_value(number) from None
    return registry().Quantity(value, unit)


def _calculation_message(text: str, number: str, calculation: re.Match) -> str:
    op, other, unit = calculation.groups()
    advice = "write the value as one number followed by its unit"
    if op == "*":
        product = float(number) * float(other)
        if math.isfinite(product):
            advice = f'write the product as one number: "{f"{product:.12g} {unit}".strip()}"'
    return f"'{shortened(text)}' is a calculation; {advice}"


def check_magnitude(si_value: float, text: str) -> None:
    """Refuse a value the numerics cannot carry: nonzero SI magnitudes outside 1e-30..1e30."""
    if si_value != 0 and not SMALLEST <= abs(si_value) <= LARGEST:
        raise InputError(
            f"'{shortened(text)}' is {si_value:.3g} in SI base units, outside the range computed here "
            f"({SMALLEST:g} to {LARGEST:g} in size, or exactly 0)"
        )


def is_angular(unit: pint.Unit) -> bool:
    """True for units of angle or of angle per something (deg, rev, rpm, rad/s), asked of pint:
    angles are dimensionless in pint, but their root units keep the radian."""
    if is_offset(unit):
        return False  # an absolute temperature scale, never an angle
    root = registry().Quantity(1, unit).to_root_units().units
    return any(name == "radian" and power != 0 for name, power in _factors(root).items())


def is_offset(unit: pint.Unit) -> bool:
    """True for absolute temperature scales with an offset (degC, degF)."""
    try:  # zero of the scale is not zero of its base unit: 0 degC is 273.15 K
        return registry().Quantity(0.0, unit).to_base_units().magnitude != 0
    except pint.errors.OffsetUnitCalculusError:
        return True


def _factors(unit: pint.Unit):
    """The unit's names with their exponents ({'meter': 1, 'second': -2}), through pint's public helper."""
    return pint.util.to_units_container(unit)


def si_unit(unit: pint.Unit) -> pint.Unit:
    """The coherent SI base unit with the same dimension."""
    return registry().Quantity(1, unit).to_base_units().units


def to_si(quantity: pint.Quantity) -> float:
    """Magnitude in SI base units; absolute temperatures go to kelvin with their offset."""
    return float(quantity.to_base_units().magnitude)


def from_si(value: float, unit: pint.Unit) -> float:
    """Convert an SI base magnitude to ``unit`` (absolute conversion for degC and degF)."""
    ureg = registry()
    return float(ureg.Quantity(value, si_unit(unit)).to(unit).magnitude)


def scale_and_offset(unit: pint.Unit) -> tuple[float, float]:
    """(scale, offset) with value in ``unit`` = SI value × scale + offset, so the stages after loading
    convert by plain arithmetic, without a unit registry."""
    offset = from_si(0.0, unit)
    return from_si(1.0, unit) - offset, offset


def same_dimension(a: pint.Unit, b: pint.Unit) -> bool:
    return registry().Quantity(1, a).dimensionality == registry().Quantity(1, b).dimensionality


def dimension_text(unit: pint.Unit) -> str:
    """A dimension as engineers read it, e.g. ``[mass]*[length]^2/[time]^3``, or 'dimensionless'."""
    dims = registry().Quantity(1, unit).dimensionality
    if not dims:
        return "dimensionless"
    up = [_power(name, exp) for name, exp in sorted(dims.items()) if exp > 0]
    down = [_power(name, -exp) for name, exp in sorted(dims.items()) if exp < 0]
    text = "*".join(up) if up else "1"
    return text + ("/" + "/".join(down) if down else "")


def _power(name: str, exp: float) -> str:
    exp_text = f"{exp:g}"
    return name if exp_text == "1" else f"{name}^{exp_text}"


def _reason(exc: Exception) -> str:
    """pint's complaint in our words: an unknown name, or text that is not a unit expression."""
    if isinstance(exc, pint.UndefinedUnitError):
        listed = exc.unit_names if isinstance(exc.unit_names, (list, tuple)) else [exc.unit_names]
        names = ", ".join(f"'{n}'" for n in listed)
        return f"{names} is not a unit name known here; names are case-sensitive: ohm, kohm, uF, degC, m^3/s"
    return "write a unit as names joined by *, / and ^, e.g. W/(m^2*K)"


# Units that stay as they are when a value is shown in SI: the base units and the coherent
# derived units with special names (SI Brochure, 9th edition, tables 2 and 4; from memory).
COHERENT = {
    "meter",
    "kilogram",
    "second",
    "ampere",
    "kelvin",
    "mole",
    "candela",
    "radian",
    "steradian",
    "hertz",
    "newton",
    "pascal",
    "joule",
    "watt",
    "coulomb",
    "volt",
    "farad",
    "ohm",
    "siemens",
    "weber",
    "tesla",
    "henry",
}


def coherent_si(unit: pint.Unit) -> pint.Unit:
    """The unit as an engineer writes it in SI: prefixes dropped (kohm -> ohm), named coherent
    units kept (J/(kg*K) stays), anything else (min, L, degC, rpm) in base units."""
    ureg = registry()
    result = ureg.dimensionless
    for name, exponent in _factors(unit).items():
        _, root, _ = ureg.parse_unit_name(name)[0]
        root = "kilogram" if root == "gram" else root
        if root in COHERENT:
            part = ureg.Unit(root)
        else:
            part = ureg.Quantity(1, "delta_" + root if root.startswith("degree_") else root).to_base_units().units
        result = result * part**exponent
    return result


def unit_label(unit: pint.Unit) -> str:
    """A compact label: numerator*numerator/(denominator*denominator), powers with ^."""
    ureg = registry()
    up, down = [], []
    for name, exponent in _factors(unit).items():
        symbol = f"{ureg.Unit(name):~}"
        target = up if exponent > 0 else down
        power = abs(exponent)
        target.append(symbol if power == 1 else f"{symbol}^{power:g}")
    if not up and not down:
        return ""
    text = "*".join(up) or "1"
    if down:
        text += "/" + (down[0] if len(down) == 1 else "(" + "*".join(down) + ")")
    return text
