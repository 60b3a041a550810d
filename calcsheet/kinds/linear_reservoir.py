"""Linear reservoir: storage whose outflow is proportional to the storage itself."""

import math

from calcsheet.kinds.base import Kind, Slot, Note, info, invalid, warning


def _number(value: float) -> str:
    return f"{float(f'{value:.4g}'):.12g}"


def _duration(seconds: float) -> str:
    text = f"{_number(seconds)} s"
    for limit, size, unit in ((2 * 86400, 86400, "d"), (2 * 3600, 3600, "h"), (120, 60, "min")):
        if abs(seconds) >= limit:
            return f"{text} ({_number(seconds / size)} {unit})"
    return text


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    k = values["k"]
    if k <= 0:
        return (invalid(f"the storage constant k = {_number(k)} s is not positive; a linear reservoir "
                        "needs k > 0 (outflow S/k leaving a positive storage).", "linear_reservoir.k_not_positive"),)
    notes = [info(f"Outflow Q_out = S/k with k = {_duration(k)}; with no inflow the storage and the outflow halve "
             f"every k*ln 2 = {_duration(k * math.log(2))}.", "linear_reservoir.halving")]
    q_in = values.get("Q_in")
    if q_in is not None:
        if q_in < 0:
            notes.append(warning("the inflow Q_in is negative, i.e. a withdrawal; the storage may fall below "
                                 "zero, where the outflow law S/k no longer means anything.",
                                 "linear_reservoir.withdrawal"))
        else:
            notes.append(info(f"With the inflow held at Q_in = {_number(q_in)} m^3/s the storage settles at "
                         f"S = k*Q_in = {_number(k * q_in)} m^3, where the outflow equals the inflow.", "linear_reservoir.settles"))
    return tuple(notes)


KIND = Kind(
    name="linear_reservoir",
    title="Linear reservoir",
    summary="storage S of a reservoir, catchment or tank whose outflow S/k is proportional to its storage, "
            "fed by an inflow Q_in",
    law="continuity of volume (rate of change of storage = inflow - outflow), with the linear-reservoir "
        "law that the outflow is the storage divided by the storage constant k",
    unknown=Slot("S", "m^3", "volume held in storage", "50000 m^3"),
    variable=Slot("t", "s", "time", "1 h"),
    slots=(
        Slot("k", "s", "storage constant (the storage per unit outflow; the time constant of the reservoir)",
             "8 h"),
        Slot("Q_in", "m^3/s", "inflow (0 m^3/s for a recession)", "3 m^3/s", default="0 m^3/s"),
    ),
    equation="k*dS/dt + S = k*Q_in",
    law_steps=(
        (r"\frac{dS}{dt} = Q_{\mathrm{in}} - Q_{\mathrm{out}}", "dS/dt = Q_in - Q_out   (continuity)"),
        (r"Q_{\mathrm{out}} = \frac{S}{k}", "Q_out = S/k   (linear reservoir)"),
        (r"k \frac{dS}{dt} + S = k\,Q_{\mathrm{in}}", "k*dS/dt + S = k*Q_in"),
    ),
    assumptions=(
        "The outflow is proportional to the storage (a linear reservoir) with a constant storage constant k.",
        "The outflow is found from the storage as Q_out = S/k; multiply the results for S by 1/k to read "
        "the outflow.",
        "For a tank of constant plan area A whose outflow is proportional to the head h (a laminar outlet, "
        "Q_out = h/R), S = A*h and k = A*R: the level h = S/A follows the same equation.",
        "No losses other than the outflow (evaporation, seepage) unless they are folded into k.",
    ),
    source="Q_in",
    checks=_checks,
    starter='''[sheet]
title = "Storage in the detention basin during a steady storm inflow"
number = "HY-052"
revision = "A"
project = "Example project (edit)"
originator = "Your name"
purpose = "Storage in the detention basin while a steady storm inflow lasts, against its usable volume."

[evaluate]
at = ["2 h", "6 h", "12 h"]
reach = ["70000 m^3"]

[[criteria]]
text = "Storage stays within the usable volume of 90000 m^3 over a 12 hour storm"
check = "S(12 h) <= 90000 m^3"

[[criteria]]
text = "Storage reaches 70000 m^3 (the spillway alarm level) no sooner than 2 hours into the storm"
check = "reach(70000 m^3) >= 2 h"
''',
)
