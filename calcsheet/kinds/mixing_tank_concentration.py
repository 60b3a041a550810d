"""Well-mixed tank: the concentration of a dissolved substance while the tank fills, drains or runs full."""

from calcsheet.kinds.base import START_SLOT, Kind, Slot
from calcsheet.kinds.mixing_tank import carried_volume, tank_slots, volume_limit, volume_notes


def _checks(values: dict[str, float]):
    return volume_notes(values, concentration=True)


KIND = Kind(
    name="mixing_tank_concentration",
    title="Well-mixed tank (concentration)",
    summary="concentration c of a dissolved substance in a well-mixed tank with inflow q_in at "
            "concentration c_in and outflow q_out",
    law="the mass balance of the dissolved substance (accumulation = mass in - mass out) with the volume "
        "balance of the liquid, the outflow leaving at the tank's own concentration",
    unknown=Slot("c", "kg/m^3", "concentration of the substance in the tank (and in its outflow)", "0 kg/m^3"),
    variable=Slot("t", "s", "time", "1 min"),
    slots=tank_slots("0.25 m^3/min", "0.15 m^3/min", "0.8 kg/m^3", "4 m^3", "10 m^3"),
    limit=volume_limit,
    equation="(V_0 + (q_in - q_out)*t)*dc/dt = q_in*(c_in - c)",
    shifted_equation=f"(V_0 + (q_in - q_out)*(t - {START_SLOT}))*dc/dt = q_in*(c_in - c)",
    carry=carried_volume,
    law_steps=(
        (r"\frac{d\left(V c\right)}{dt} = q_{\mathrm{in}}\,c_{\mathrm{in}} - q_{\mathrm{out}}\,c",
         "d(V*c)/dt = q_in*c_in - q_out*c   (mass balance: accumulation = in - out)"),
        (r"\frac{dV}{dt} = q_{\mathrm{in}} - q_{\mathrm{out}} \;\Rightarrow\; "
         r"V = V_{0} + \left(q_{\mathrm{in}} - q_{\mathrm{out}}\right) t",
         "dV/dt = q_in - q_out, so V = V_0 + (q_in - q_out)*t   (volume balance)"),
        (r"V \frac{dc}{dt} + c \left(q_{\mathrm{in}} - q_{\mathrm{out}}\right) = "
         r"q_{\mathrm{in}}\,c_{\mathrm{in}} - q_{\mathrm{out}}\,c",
         "V*dc/dt + c*(q_in - q_out) = q_in*c_in - q_out*c   (product rule)"),
        (r"\left(V_{0} + \left(q_{\mathrm{in}} - q_{\mathrm{out}}\right) t\right) \frac{dc}{dt} = "
         r"q_{\mathrm{in}} \left(c_{\mathrm{in}} - c\right)",
         "(V_0 + (q_in - q_out)*t)*dc/dt = q_in*(c_in - c)"),
    ),
    assumptions=(
        "The tank is well mixed: the outflow leaves at the concentration of the tank contents.",
        "The inflow and outflow rates are constant; the liquid density does not change with the solute.",
        "The substance is conservative: no reaction, decay, settling or loss at the surface.",
        "The results hold while the tank neither overflows nor runs empty.",
    ),
    source="c_in",
    checks=_checks,
    starter='''[sheet]
title = "Nutrient concentration in the irrigation mixing tank while it fills"
number = "AG-027"
revision = "A"
project = "Example project (edit)"
originator = "Your name"
purpose = "Time for the tank contents to reach the target nutrient concentration after filling starts."

[evaluate]
at = ["10 min", "30 min", "60 min"]
reach = ["0.6 kg/m^3"]

[[criteria]]
text = "Tank at 0.6 kg/m^3 or more within 40 minutes"
check = "reach(0.6 kg/m^3) <= 40 min"
''',
)
