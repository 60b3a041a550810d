"""Tank draining through an orifice: outflow by Torricelli's law, C_d a_o sqrt(2 g h), fed by an inflow.

The outflow grows with the square root of the level, so the equation is not linear; an input of this
kind gives a [linearise] table and the sheet linearises it about a level and measures the error.
"""

from __future__ import annotations

import math

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, info, invalid, warning

# Standard gravity, 9.80665 m/s^2 (the conventional value adopted by the CGPM in 1901; from memory).
STANDARD_GRAVITY = "9.80665 m/s^2"


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    area, orifice, cd, g, q_in, height = (values[n] for n in ("A", "a_o", "C_d", "g", "q_in", "H"))
    if area <= 0 or orifice <= 0 or g <= 0 or height <= 0:
        return (invalid("orifice_tank.properties_not_positive"),)
    if not 0 < cd <= 1:
        return (invalid("orifice_tank.cd_out_of_range", C_d=cd),)
    if q_in < 0:
        return (warning("orifice_tank.withdrawal", q_in=q_in),)
    if q_in == 0:
        return (info("orifice_tank.no_inflow"),)
    level = (q_in / (cd * orifice * math.sqrt(2 * g))) ** 2
    notes = [info("orifice_tank.steady_level", level=level, q_in=q_in)]
    if level > height:
        notes.append(warning("orifice_tank.overflows", level=level, H=height))
    return tuple(notes)


KIND = Kind(
    name="orifice_tank",
    title="Tank draining through an orifice",
    summary="level h in a tank of constant plan area A fed by an inflow q_in and draining through an orifice "
    "at its base by Torricelli's law (non-linear: give a [linearise] table)",
    law="continuity of volume (rate of change of the volume held = inflow - outflow), with Torricelli's law for "
    "the free outflow through a sharp-edged orifice, q_out = C_d a_o sqrt(2 g h)",
    unknown=Slot("h", "m", "level of the free surface above the orifice", "0.7 m"),
    variable=Slot("t", "s", "time", "1 min"),
    slots=(
        Slot("A", "m^2", "plan area of the tank (constant with height)", "4 m^2"),
        Slot("a_o", "m^2", "area of the orifice", "0.005 m^2"),
        Slot("C_d", "1", "discharge coefficient of the orifice (about 0.6 for a sharp edge)", "0.62"),
        Slot("g", "m/s^2", "acceleration of gravity", STANDARD_GRAVITY, default=STANDARD_GRAVITY),
        Slot("q_in", "m^3/s", "inflow to the tank", "0.01 m^3/s"),
        Slot("H", "m", "level at which the tank overflows, above the orifice", "2 m"),
    ),
    equation="A*dh/dt = q_in - C_d*a_o*sqrt(2*g*h)",
    law_steps=(
        (r"\frac{dV}{dt} = q_{\mathrm{in}} - q_{\mathrm{out}}", "dV/dt = q_in - q_out   (continuity)"),
        (
            r"V = A\,h, \quad q_{\mathrm{out}} = C_{\mathrm{d}}\, a_{\mathrm{o}} \sqrt{2 g h}",
            "V = A*h, q_out = C_d*a_o*sqrt(2*g*h)   (constant plan area; Torricelli's law)",
        ),
        (
            r"A \frac{dh}{dt} = q_{\mathrm{in}} - C_{\mathrm{d}}\, a_{\mathrm{o}} \sqrt{2 g h}",
            "A*dh/dt = q_in - C_d*a_o*sqrt(2*g*h)",
        ),
    ),
    assumptions=(
        "The plan area A is the same at every level; the orifice discharges freely to the air (not submerged).",
        "The discharge coefficient C_d is constant over the range of levels analysed.",
        "The level is measured above the orifice; the velocity of the free surface is small against the jet's.",
        "The inflow q_in is constant unless a [forcing] table varies it.",
    ),
    source="q_in",
    checks=_checks,
    findings={
        "orifice_tank.properties_not_positive": "A, a_o, g and H must be positive; a tank with any of them zero or "
        "negative is not a physical tank.",
        "orifice_tank.cd_out_of_range": "the discharge coefficient C_d = {C_d} is outside 0 < C_d <= 1; an orifice "
        "cannot pass more than its ideal flow.",
        "orifice_tank.withdrawal": "the inflow q_in = {q_in} m^3/s is negative, i.e. a withdrawal; the tank can run "
        "dry, where Torricelli's law no longer means anything.",
        "orifice_tank.no_inflow": "With no inflow the tank drains to empty: the steady state is h = 0 m, where "
        "sqrt(h) has no slope, so linearise about a stated level instead.",
        "orifice_tank.steady_level": "With the inflow held at q_in = {q_in} m^3/s the level settles where the "
        "outflow equals it, h = (q_in/(C_d*a_o*sqrt(2*g)))^2 = {level} m.",
        "orifice_tank.overflows": "The steady level {level} m is above the overflow level H = {H} m: the tank "
        "overflows before it settles. Check the overflow's capacity and route, as local rules require.",
    },
    offers=(Offer("q_out", "C_d*a_o*sqrt(2*g*h)", "m^3/s", "outflow through the orifice"),),
    starter=Starter(
        title="Level in a break tank with the feed pump running (example, edit)",
        number="HY-210",
        purpose="Level in a 4 m^2 break tank draining through a 5000 mm^2 orifice while a pump feeds 10 L/s.",
        requests="""[linearise]
about = "steady state"
tolerance = "5 %"

[evaluate]
at = ["2 min", "10 min", "30 min"]

[[criteria]]
text = "The level stays below 0.8 m, well under the 2 m overflow"
check = "max(h) <= 0.8 m"

[[criteria]]
text = "The level is within 0.6 m of the orifice after 30 minutes"
check = "h(30 min) <= 0.6 m"
""",
    ),
)
