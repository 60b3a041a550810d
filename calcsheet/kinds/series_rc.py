"""Series RC circuit: the capacitor voltage when a source drives it through a resistor."""

from calcsheet.kinds.base import Kind, Offer, Slot, Starter

KIND = Kind(
    name="series_rc",
    title="Series RC circuit",
    summary="capacitor voltage v of a resistor and capacitor in series with a source V_s",
    law="Kirchhoff's voltage law around the loop, with Ohm's law for the resistor and i = C dv/dt for the capacitor",
    unknown=Slot("v", "V", "capacitor voltage", "0 V"),
    variable=Slot("t", "s", "time", "1 s"),
    slots=(
        Slot("R", "ohm", "series resistance (include the source's internal resistance)", "10 kohm"),
        Slot("C", "F", "capacitance", "470 uF"),
        Slot("V_s", "V", "source voltage (0 V for a discharge)", "24 V", default="0 V"),
    ),
    equation="R*C*dv/dt + v = V_s",
    law_steps=(
        (r"V_{\mathrm{s}} = v_{R} + v", "V_s = v_R + v   (Kirchhoff's voltage law)"),
        (r"v_{R} = R\,i, \quad i = C\,\frac{dv}{dt}", "v_R = R*i, i = C*dv/dt   (Ohm's law; capacitor)"),
        (r"R C \frac{dv}{dt} + v = V_{\mathrm{s}}", "R*C*dv/dt + v = V_s"),
    ),
    assumptions=(
        "Ideal lumped resistor and capacitor with constant values; leakage of the capacitor neglected.",
        "The source's internal resistance is included in R.",
    ),
    source="V_s",
    offers=(
        Offer("i", "C*dv/dt", "A", "current into the capacitor (the loop current)"),
        Offer("P_R", "R*(C*dv/dt)^2", "W", "power dissipated in the resistor"),
        Offer("E_C", "C*v^2/2", "J", "energy stored in the capacitor"),
    ),
    starter=Starter(
        title="Charging of the hold-up capacitor of a door controller",
        number="EL-101",
        purpose="Time for the hold-up capacitor to charge to 20 V after power-up.",
        requests="""[evaluate]
at = ["1 s", "5 s", "10 s"]
reach = ["20 V"]

[[criteria]]
text = "Capacitor above 20 V within 15 s of power-up"
check = "reach(20 V) <= 15 s"
""",
    ),
)
