"""Well-mixed tank: the mass of a dissolved substance while the tank fills, drains or runs full."""

from calcsheet.kinds.base import Kind, Offer, Slot, Starter
from calcsheet.kinds import tank_volume as tank
from calcsheet.kinds.tank_volume import FROM_START, FROM_ZERO, Clock


def _equation(clock: Clock) -> str:
    return f"dm/dt = q_in*c_in - q_out*m/({tank.volume_text(clock)})"


def _law_steps(clock: Clock) -> tuple[tuple[str, str], ...]:
    return (
        (
            r"\frac{dm}{dt} = q_{\mathrm{in}}\,c_{\mathrm{in}} - q_{\mathrm{out}}\,c",
            "dm/dt = q_in*c_in - q_out*c   (mass balance: accumulation = in - out)",
        ),
        tank.volume_balance_step(clock, r"c = \frac{m}{V}, \quad ", "c = m/V (well mixed); "),
        (
            r"\frac{dm}{dt} = q_{\mathrm{in}}\,c_{\mathrm{in}} - "
            r"\frac{q_{\mathrm{out}}\,m}{" + tank.volume_tex(clock) + "}",
            _equation(clock),
        ),
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
    slots=tank.tank_slots("0.9 m^3/min", "0.6 m^3/min", "0.5 kg/m^3", "12 m^3", "30 m^3"),
    limit=tank.volume_limit,
    equation=_equation(FROM_ZERO),
    law_steps=_law_steps(FROM_ZERO),
    shifted_equation=_equation(FROM_START),
    shifted_law_steps=_law_steps(FROM_START),
    carry=tank.carried_volume,
    assumptions=tank.ASSUMPTIONS,
    source="c_in",
    checks=tank.volume_notes,
    findings=tank.findings("m"),
    offers=(
        Offer(
            "m_dot_out", "q_in*c_in - dm/dt", "kg/s", "mass of the substance leaving with the outflow, per unit time"
        ),
        Offer("c_out", "(q_in*c_in - dm/dt)/q_out", "kg/m^3", "concentration of the outflow (the tank's own)"),
    ),
    starter=Starter(
        title="Salt mass in the brine make-up tank during topping up",
        number="PR-214",
        purpose="Salt held in the make-up tank while it is topped up, and the time to reach the dosing level.",
        requests="""[evaluate]
at = ["10 min", "30 min", "60 min"]
reach = ["5 kg"]

[[criteria]]
text = "At least 5 kg of salt in the tank within 20 minutes"
check = "reach(5 kg) <= 20 min"

[[criteria]]
text = "At most 15 kg of salt when the tank is full (60 min)"
check = "m(60 min) <= 15 kg"
""",
    ),
)
