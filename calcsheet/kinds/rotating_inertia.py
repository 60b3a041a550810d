"""Rotating inertia with viscous friction: the shaft speed when a torque drives it."""

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, positive


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    """Sign checks: a rotating body has J > 0; viscous friction takes energy out, b >= 0."""
    return positive(values, "b", "rotating_inertia", zero_allowed=True) + positive(values, "J", "rotating_inertia")


KIND = Kind(
    name="rotating_inertia",
    title="Rotating inertia with viscous friction",
    summary="shaft speed omega of a rotating inertia J with viscous friction b, driven by a torque T_d",
    law="Newton's second law for rotation about a fixed axis, with a friction torque proportional to speed",
    unknown=Slot("omega", "rad/s", "angular speed of the shaft", "0 rad/s"),
    variable=Slot("t", "s", "time", "1 s"),
    slots=(
        Slot(
            "J",
            "kg*m^2",
            "moment of inertia about the axis of rotation (everything coupled to the shaft, referred to it)",
            "0.8 kg*m^2",
        ),
        Slot(
            "b", "N*m*s/rad", "viscous friction coefficient (friction torque per unit angular speed)", "0.04 N*m*s/rad"
        ),
        Slot("T_d", "N*m", "drive torque on the shaft (0 N*m for a run-down)", "12 N*m", default="0 N*m"),
    ),
    equation="J*domega/dt + b*omega = T_d",
    law_steps=(
        (
            r"J \frac{d\omega}{dt} = T_{\mathrm{d}} - T_{\mathrm{f}}",
            "J*domega/dt = T_d - T_f   (Newton's second law for rotation)",
        ),
        (r"T_{\mathrm{f}} = b\,\omega", "T_f = b*omega   (viscous friction)"),
        (r"J \frac{d\omega}{dt} + b\,\omega = T_{\mathrm{d}}", "J*domega/dt + b*omega = T_d"),
    ),
    assumptions=(
        "Rigid body turning about a fixed axis with a constant moment of inertia J.",
        "Friction torque proportional to speed (viscous); dry (Coulomb) friction and windage that "
        "grows with the square of speed are neglected.",
        "Shafts and couplings are torsionally stiff: everything on the shaft turns at one speed.",
    ),
    source="T_d",
    checks=_checks,
    findings={
        "rotating_inertia.b_zero": "b = 0: without friction the shaft has no steady speed and keeps accelerating "
        "under a steady torque; bearings, seals and windage always give some b.",
        "rotating_inertia.b_negative": "b is negative; viscous friction opposes the motion, so b is positive "
        "(with b < 0 the speed grows instead of settling).",
        "rotating_inertia.J_negative": "J is negative; a moment of inertia is positive, so check the sign.",
    },
    offers=(
        Offer("T_f", "b*omega", "N*m", "friction torque"),
        Offer("E_k", "J*omega^2/2", "J", "kinetic energy of the rotating parts"),
    ),
    starter=Starter(
        title="Run-up of a test-rig flywheel to working speed",
        number="ME-301",
        purpose="Time for the flywheel to reach its 250 rad/s (about 2400 rpm) working speed under the motor's "
        "steady torque.",
        requests="""[evaluate]
at = ["10 s", "20 s", "60 s"]
reach = ["250 rad/s"]

[[criteria]]
text = "Flywheel reaches its 250 rad/s working speed within 60 s of start"
check = "reach(250 rad/s) <= 60 s"

[[criteria]]
text = "Steady speed below the 314 rad/s (3000 rpm) limit of the bearings"
check = "final_value <= 314 rad/s"
""",
    ),
)
