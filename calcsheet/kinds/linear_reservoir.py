"""Linear reservoir: storage whose outflow is proportional to the storage itself."""

import math

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, info, invalid, warning


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    k = values["k"]
    if k <= 0:
        return (invalid("linear_reservoir.k_not_positive", k=k),)
    notes = [info("linear_reservoir.halving", k=k, halving=k * math.log(2))]
    q_in = values.get("Q_in")
    if q_in is not None:
        if q_in < 0:
            notes.append(warning("linear_reservoir.withdrawal", Q_in=q_in))
        else:
            notes.append(info("linear_reservoir.settles", Q_in=q_in, storage=k * q_in))
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
        Slot("k", "s", "storage constant (the storage per unit outflow; the time constant of the reservoir)", "8 h"),
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
        "The outflow is found from the storage as Q_out = S/k; multiply the results for S by 1/k to read the outflow.",
        "For a tank of constant plan area A whose outflow is proportional to the head h (a laminar outlet, "
        "Q_out = h/R), S = A*h and k = A*R: the level h = S/A follows the same equation.",
        "No losses other than the outflow (evaporation, seepage) unless they are folded into k.",
    ),
    source="Q_in",
    checks=_checks,
    findings={
        "linear_reservoir.k_not_positive": "the storage constant k = {k} s is not positive; a linear reservoir "
        "needs k > 0 (outflow S/k leaving a positive storage).",
        "linear_reservoir.halving": "Outflow Q_out = S/k with k = {k:duration}; with no inflow the storage and the "
        "outflow halve every k*ln 2 = {halving:duration}.",
        "linear_reservoir.withdrawal": "the inflow Q_in is negative, i.e. a withdrawal; the storage may fall below "
        "zero, where the outflow law S/k no longer means anything.",
        "linear_reservoir.settles": "With the inflow held at Q_in = {Q_in} m^3/s the storage settles at "
        "S = k*Q_in = {storage} m^3, where the outflow equals the inflow.",
    },
    offers=(Offer("Q_out", "S/k", "m^3/s", "outflow of the reservoir"),),
    starter=Starter(
        title="Storage in the detention basin during a steady storm inflow",
        number="HY-052",
        purpose="Storage in the detention basin while a steady storm inflow lasts, against its usable volume.",
        requests="""[evaluate]
at = ["2 h", "6 h", "12 h"]
reach = ["70000 m^3"]

[[criteria]]
text = "Storage stays within the usable volume of 90000 m^3 over a 12 hour storm"
check = "S(12 h) <= 90000 m^3"

[[criteria]]
text = "Storage reaches 70000 m^3 (the spillway alarm level) no sooner than 2 hours into the storm"
check = "reach(70000 m^3) >= 2 h"
""",
    ),
)
