"""Mass with linear drag: the speed of a body pushed along a line against a resistance proportional to speed."""

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, positive


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    """Sign checks: a body has m > 0; a drag or damper force opposes the motion, c >= 0."""
    return positive(values, "c", "mass_with_drag", zero_allowed=True) + positive(values, "m", "mass_with_drag")


KIND = Kind(
    name="mass_with_drag",
    title="Mass with linear drag",
    summary="speed u of a mass m pushed along a straight line by a force F against a drag c*u",
    law="Newton's second law along the line of motion, with a drag force proportional to speed",
    unknown=Slot("u", "m/s", "speed along the line of motion", "0 m/s"),
    variable=Slot("t", "s", "time", "1 s"),
    slots=(
        Slot("m", "kg", "moving mass", "40 kg"),
        Slot("c", "N*s/m", "linear drag coefficient (drag or damper force per unit speed)", "200 N*s/m"),
        Slot(
            "F",
            "N",
            "driving force along the line of motion, net of any constant resisting force (0 N for coasting)",
            "100 N",
            default="0 N",
        ),
    ),
    equation="m*du/dt + c*u = F",
    law_steps=(
        (r"m \frac{du}{dt} = F - F_{D}", "m*du/dt = F - F_D   (Newton's second law)"),
        (r"F_{D} = c\,u", "F_D = c*u   (linear drag)"),
        (r"m \frac{du}{dt} + c\,u = F", "m*du/dt + c*u = F"),
    ),
    assumptions=(
        "Rigid body of constant mass moving along a straight line.",
        "Resisting force proportional to speed, as in a viscous damper or slow motion through a "
        "fluid; drag growing with the square of speed and dry friction are neglected.",
        "F acts along the line of motion; a constant force such as the component of weight on a "
        "slope is included in F.",
    ),
    source="F",
    checks=_checks,
    findings={
        "mass_with_drag.c_zero": "c = 0: without drag the body has no terminal speed and keeps accelerating "
        "under a steady force.",
        "mass_with_drag.c_negative": "c is negative; drag opposes the motion, so c is positive (with c < 0 the "
        "speed grows instead of settling).",
        "mass_with_drag.m_negative": "m is negative; a mass is positive, so check the sign.",
    },
    offers=(
        Offer("F_d", "c*u", "N", "drag force"),
        Offer("P_d", "c*u^2", "W", "power dissipated by the drag"),
        Offer("E_k", "m*u^2/2", "J", "kinetic energy of the moving mass"),
    ),
    starter=Starter(
        title="Test-rig carriage pushed against an oil damper",
        number="ME-401",
        purpose="Speed of the carriage under the actuator's steady push, and the time to reach 90 % of it.",
        requests="""[evaluate]
at = ["0.1 s", "0.2 s", "0.5 s", "1 s"]
reach = ["0.45 m/s"]

[[criteria]]
text = "Carriage reaches 0.45 m/s within 1 s"
check = "reach(0.45 m/s) <= 1 s"

[[criteria]]
text = "Steady speed within the 0.6 m/s rating of the damper"
check = "final_value <= 0.6 m/s"
""",
    ),
)
