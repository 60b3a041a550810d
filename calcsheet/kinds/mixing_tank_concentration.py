"""Well-mixed tank: the concentration of a dissolved substance while the tank fills, drains or runs full."""

from calcsheet.kinds.base import Kind, Offer, Slot, Starter
from calcsheet.kinds import tank_volume as tank
from calcsheet.kinds.tank_volume import FROM_START, FROM_ZERO, Clock


def _equation(clock: Clock) -> str:
    return f"({tank.volume_text(clock)})*dc/dt = q_in*(c_in - c)"


def _law_steps(clock: Clock) -> tuple[tuple[str, str], ...]:
    return (
        (
            r"\frac{d\left(V c\right)}{dt} = q_{\mathrm{in}}\,c_{\mathrm{in}} - q_{\mathrm{out}}\,c",
            "d(V*c)/dt = q_in*c_in - q_out*c   (mass balance: accumulation = in - out)",
        ),
        tank.volume_balance_step(clock),
        (
            r"V \frac{dc}{dt} + c \left(q_{\mathrm{in}} - q_{\mathrm{out}}\right) = "
            r"q_{\mathrm{in}}\,c_{\mathrm{in}} - q_{\mathrm{out}}\,c",
            "V*dc/dt + c*(q_in - q_out) = q_in*c_in - q_out*c   (product rule)",
        ),
        (
            r"\left(" + tank.volume_tex(clock) + r"\right) \frac{dc}{dt} = "
            r"q_{\mathrm{in}} \left(c_{\mathrm{in}} - c\right)",
            _equation(clock),
        ),
    )


KIND = Kind(
    name="mixing_tank_concentration",
    title="Well-mixed tank (concentration)",
    summary="concentration c of a dissolved substance in a well-mixed tank with inflow q_in at "
    "concentration c_in and outflow q_out",
    law="the mass balance of the dissolved substance (accumulation = mass in - mass out) with the volume "
    "balance of the liquid, the outflow leaving at the tank's own concentration",
    unknown=Slot("c", "kg/m^3", "concentration of the substance in the tank (and in its outflow)", "0 kg/m^3"),
    variable=Slot("t", "s", "time", "1 min"),
    slots=tank.tank_slots("0.25 m^3/min", "0.15 m^3/min", "0.8 kg/m^3", "4 m^3", "10 m^3"),
    limit=tank.volume_limit,
    equation=_equation(FROM_ZERO),
    law_steps=_law_steps(FROM_ZERO),
    shifted_equation=_equation(FROM_START),
    shifted_law_steps=_law_steps(FROM_START),
    carry=tank.carried_volume,
    assumptions=tank.ASSUMPTIONS,
    source="c_in",
    checks=tank.volume_notes,
    findings=tank.findings("c"),
    offers=(Offer("m_dot_out", "q_out*c", "kg/s", "mass of the substance leaving with the outflow, per unit time"),),
    starter=Starter(
        title="Nutrient concentration in the irrigation mixing tank while it fills",
        number="AG-027",
        purpose="Time for the tank contents to reach the target nutrient concentration after filling starts.",
        requests="""[evaluate]
at = ["10 min", "30 min", "60 min"]
reach = ["0.6 kg/m^3"]

[[criteria]]
text = "Tank at 0.6 kg/m^3 or more within 40 minutes"
check = "reach(0.6 kg/m^3) <= 40 min"
""",
    ),
)
