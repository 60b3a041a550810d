"""Well-mixed tank: the mass of a dissolved substance while the tank fills, drains or runs full."""

from calcsheet.kinds.base import START_SLOT, Kind, Note, Slot, info, invalid, warning

# A capacity of 0 m^3 stands for "not stated": the kinds have no slot that is optional without a value.
NOT_STATED = 0.0


def number_text(value: float) -> str:
    """Four significant figures, without an exponent for the sizes a tank sheet meets."""
    return f"{float(f'{value:.4g}'):.12g}"


def duration_text(seconds: float) -> str:
    """A time in s, with min, h or d beside it where those read more easily."""
    text = f"{number_text(seconds)} s"
    for limit, size, unit in ((2 * 86400, 86400, "d"), (2 * 3600, 3600, "h"), (120, 60, "min")):
        if abs(seconds) >= limit:
            return f"{text} ({number_text(seconds / size)} {unit})"
    return text


def volume_limit(values: dict[str, float]) -> tuple[float, str] | None:
    """Where the model stops holding: the tank overflows or runs empty (time in s, on the variable's own
    clock; V_0 is the volume at the start of the interval, t_V, which is 0 unless the interval starts later)."""
    q_in, q_out, v_0 = values["q_in"], values["q_out"], values["V_0"]
    start = values.get(START_SLOT, 0.0)
    v_max = values.get("V_max", NOT_STATED)
    net = q_in - q_out
    if v_0 <= 0 or abs(net) <= 1e-12 * max(abs(q_in), abs(q_out), 1e-300):
        return None
    if net > 0 and v_0 < v_max:
        return start + (v_max - v_0) / net, "the tank overflows"
    if net < 0:
        return start + v_0 / -net, "the tank runs empty"
    return None


def volume_notes(values: dict[str, float], concentration: bool = False) -> tuple[Note, ...]:
    """The volume law of the tank, and when it overflows or empties (SI values in, notes out)."""
    q_in, q_out, v_0 = values["q_in"], values["q_out"], values["V_0"]
    v_max = values.get("V_max", NOT_STATED)
    start = values.get(START_SLOT, 0.0)
    clock = "t" if start == 0 else f"(t - {START_SLOT})"

    def when(t: float) -> str:
        if start == 0:
            return f"t = {duration_text(t)} after the start"
        return f"t = {duration_text(t)}, {duration_text(t - start)} after {START_SLOT} = {duration_text(start)}"
    net = q_in - q_out
    notes = []
    if v_0 <= 0:
        notes.append(invalid(f"the volume V_0 = {number_text(v_0)} m^3 at the start is not positive; a well-mixed "
                             "tank needs liquid in it (the concentration m/V is undefined at V = 0).", "tank_no_liquid"))
    if q_in < 0 or q_out < 0:
        notes.append(invalid("a flow rate is negative; q_in and q_out are the sizes of the inflow and the "
                             "outflow and must be zero or positive.", "tank_negative_flow"))
    steady = abs(net) <= 1e-12 * max(abs(q_in), abs(q_out), 1e-300)
    if steady:
        notes.append(info(f"Volume law: V(t) = V_0 + (q_in - q_out)*{clock}; here q_in = q_out, so the volume stays "
                          f"V_0 = {number_text(v_0)} m^3 and the coefficient of the equation is constant.",
                          "tank_volume_law"))
    else:
        way = "fills" if net > 0 else "drains"
        notes.append(info(f"Volume law: V(t) = V_0 + (q_in - q_out)*{clock} = {number_text(v_0)} m^3 "
                          f"{'+' if net > 0 else '-'} {number_text(abs(net))} m^3/s * {clock}; the tank {way}, so "
                          f"the coefficient of {'c' if concentration else 'm'} varies with t.", "tank_volume_law"))
    stated = v_max > NOT_STATED
    if stated and v_0 > v_max:
        notes.append(invalid(f"the volume V_0 = {number_text(v_0)} m^3 at the start exceeds the capacity "
                             f"V_max = {number_text(v_max)} m^3.", "tank_over_capacity"))
    if net > 0 and not steady and v_0 > 0:
        if not stated:
            notes.append(info("No capacity V_max was stated, so the time at which the tank overflows is not "
                              "checked.", "tank_capacity_not_stated"))
        elif v_0 <= v_max:
            t_full = start + (v_max - v_0) / net
            notes.append(info(f"The tank overflows at {when(t_full)}, from (V_max - V_0)/(q_in - q_out); past that time the overflow is an "
                                 "outflow the model leaves out, so the results hold only before it.", "tank_overflows"))
    if net < 0 and not steady and v_0 > 0:
        t_empty = start + v_0 / -net
        notes.append(warning(f"the tank empties at {when(t_empty)}, from V_0/(q_out - q_in); the solution stops there.", "tank_empties"))
    return tuple(notes)


def carried_volume(values: dict[str, float], at: float) -> dict[str, float]:
    """At a switch the next interval starts from the volume this one has reached (m^3, SI)."""
    start = values.get(START_SLOT, 0.0)
    return {"V_0": values["V_0"] + (values["q_in"] - values["q_out"]) * (at - start)}


def tank_slots(q_in: str, q_out: str, c_in: str, v_0: str, v_max: str) -> tuple[Slot, ...]:
    """The parameters both tank kinds share, with example values for each kind's starter."""
    return (
        Slot("q_in", "m^3/s", "volumetric inflow rate", q_in),
        Slot("q_out", "m^3/s", "volumetric outflow rate", q_out),
        Slot("c_in", "kg/m^3", "concentration of the substance in the inflow", c_in),
        Slot("V_0", "m^3", "liquid volume in the tank at the initial point (at a switch: carried over)", v_0),
        Slot("V_max", "m^3", "capacity of the tank up to its overflow; 0 m^3 means not stated (no overflow check)",
             v_max, default="0 m^3"),
    )


KIND = Kind(
    name="mixing_tank",
    title="Well-mixed tank (solute mass)",
    summary="mass m of a dissolved substance in a well-mixed tank with inflow q_in at concentration c_in "
            "and outflow q_out",
    law="the mass balance of the dissolved substance (accumulation = mass in - mass out), with the "
        "volume balance of the liquid and the outflow at the tank's own concentration",
    unknown=Slot("m", "kg", "mass of the dissolved substance in the tank", "0 kg"),
    variable=Slot("t", "s", "time", "1 min"),
    slots=tank_slots("0.9 m^3/min", "0.6 m^3/min", "0.5 kg/m^3", "12 m^3", "30 m^3"),
    limit=volume_limit,
    equation="dm/dt = q_in*c_in - q_out*m/(V_0 + (q_in - q_out)*t)",
    shifted_equation=f"dm/dt = q_in*c_in - q_out*m/(V_0 + (q_in - q_out)*(t - {START_SLOT}))",
    carry=carried_volume,
    law_steps=(
        (r"\frac{dm}{dt} = q_{\mathrm{in}}\,c_{\mathrm{in}} - q_{\mathrm{out}}\,c",
         "dm/dt = q_in*c_in - q_out*c   (mass balance: accumulation = in - out)"),
        (r"c = \frac{m}{V}, \quad \frac{dV}{dt} = q_{\mathrm{in}} - q_{\mathrm{out}} \;\Rightarrow\; "
         r"V = V_{0} + \left(q_{\mathrm{in}} - q_{\mathrm{out}}\right) t",
         "c = m/V (well mixed); dV/dt = q_in - q_out, so V = V_0 + (q_in - q_out)*t   (volume balance)"),
        (r"\frac{dm}{dt} = q_{\mathrm{in}}\,c_{\mathrm{in}} - "
         r"\frac{q_{\mathrm{out}}\,m}{V_{0} + \left(q_{\mathrm{in}} - q_{\mathrm{out}}\right) t}",
         "dm/dt = q_in*c_in - q_out*m/(V_0 + (q_in - q_out)*t)"),
    ),
    assumptions=(
        "The tank is well mixed: the outflow leaves at the concentration of the tank contents.",
        "The inflow and outflow rates are constant; the liquid density does not change with the solute.",
        "The substance is conservative: no reaction, decay, settling or loss at the surface.",
        "The results hold while the tank neither overflows nor runs empty.",
    ),
    source="c_in",
    checks=volume_notes,
    starter='''[sheet]
title = "Salt mass in the brine make-up tank during topping up"
number = "PR-214"
revision = "A"
project = "Example project (edit)"
originator = "Your name"
purpose = "Salt held in the make-up tank while it is topped up, and the time to reach the dosing level."

[evaluate]
at = ["10 min", "30 min", "60 min"]
reach = ["5 kg"]

[[criteria]]
text = "At least 5 kg of salt in the tank within 20 minutes"
check = "reach(5 kg) <= 20 min"

[[criteria]]
text = "At most 15 kg of salt when the tank is full (60 min)"
check = "m(60 min) <= 15 kg"
''',
)
