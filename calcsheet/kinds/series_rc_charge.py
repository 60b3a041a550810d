"""Series RC circuit written for the capacitor's charge rather than its voltage."""

from calcsheet.kinds.base import Kind, Offer, Slot, Starter
from calcsheet.kinds.series_rc import KIND as VOLTAGE_FORM

KIND = Kind(
    name="series_rc_charge",
    title="Series RC circuit (charge)",
    summary="capacitor charge q of a resistor and capacitor in series with a source V_s",
    law="Kirchhoff's voltage law around the loop, with Ohm's law for the resistor, i = dq/dt and v = q/C",
    unknown=Slot("q", "C", "charge on the capacitor", "0 C"),
    variable=Slot("t", "s", "time", "1 s"),
    slots=VOLTAGE_FORM.slots,
    equation="R*dq/dt + q/C = V_s",
    law_steps=(
        (r"V_{\mathrm{s}} = v_{R} + v", "V_s = v_R + v   (Kirchhoff's voltage law)"),
        (r"v_{R} = R\,\frac{dq}{dt}, \quad v = \frac{q}{C}", "v_R = R*dq/dt, v = q/C   (Ohm's law; capacitor)"),
        (r"R \frac{dq}{dt} + \frac{q}{C} = V_{\mathrm{s}}", "R*dq/dt + q/C = V_s"),
    ),
    assumptions=VOLTAGE_FORM.assumptions,
    source="V_s",
    offers=(
        Offer("i", "dq/dt", "A", "current into the capacitor (the loop current)"),
        Offer("v_C", "q/C", "V", "capacitor voltage"),
        Offer("P_R", "R*(dq/dt)^2", "W", "power dissipated in the resistor"),
        Offer("E_C", "q^2/(2*C)", "J", "energy stored in the capacitor"),
    ),
    starter=Starter(
        title="Charge delivered to the hold-up capacitor of a door controller",
        number="EL-102",
        purpose="Charge stored in the hold-up capacitor ten seconds after power-up.",
        requests="""[evaluate]
at = ["1 s", "5 s", "10 s"]

[[criteria]]
text = "At least 9 mC stored 10 s after power-up"
check = "q(10 s) >= 9 mC"
""",
    ),
)
