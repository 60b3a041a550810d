"""Series RL circuit: the inductor current when a source drives it through a resistance."""

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, positive


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    """Sign checks a circuit engineer makes first: a passive coil has R > 0 and L > 0."""
    return positive(values, "R", "series_rl", zero_allowed=True) + positive(values, "L", "series_rl")


KIND = Kind(
    name="series_rl",
    title="Series RL circuit",
    summary="inductor current i of a resistance and inductor in series with a source V_s",
    law="Kirchhoff's voltage law around the loop, with Ohm's law for the resistance and v_L = L di/dt for the inductor",
    unknown=Slot("i", "A", "inductor current (the loop current)", "0 A"),
    variable=Slot("t", "s", "time", "1 s"),
    slots=(
        Slot(
            "R",
            "ohm",
            "loop resistance (include the winding resistance and the source's internal resistance)",
            "120 ohm",
        ),
        Slot("L", "H", "inductance", "0.6 H"),
        Slot(
            "V_s",
            "V",
            "source voltage (0 V for the decay once the source is replaced by a short circuit)",
            "24 V",
            default="0 V",
        ),
    ),
    equation="L*di/dt + R*i = V_s",
    law_steps=(
        (r"V_{\mathrm{s}} = v_{R} + v_{L}", "V_s = v_R + v_L   (Kirchhoff's voltage law)"),
        (r"v_{R} = R\,i, \quad v_{L} = L\,\frac{di}{dt}", "v_R = R*i, v_L = L*di/dt   (Ohm's law; inductor)"),
        (r"L \frac{di}{dt} + R\,i = V_{\mathrm{s}}", "L*di/dt + R*i = V_s"),
    ),
    assumptions=(
        "Ideal lumped inductor with constant inductance: no magnetic saturation, no eddy-current or core losses.",
        "The winding resistance of the coil and the source's internal resistance are included in R.",
        "Capacitance of the winding neglected.",
    ),
    source="V_s",
    checks=_checks,
    findings={
        "series_rl.R_zero": "R = 0: with no resistance in the loop the current never settles and rises without "
        "limit under a steady source; include the winding resistance of the coil and the "
        "internal resistance of the source in R.",
        "series_rl.R_negative": "R is negative; a passive resistance is positive, so check the sign (with R < 0 the "
        "current grows instead of settling).",
        "series_rl.L_negative": "L is negative; the inductance of a coil is positive, so check the sign.",
    },
    offers=(
        Offer("v_L", "L*di/dt", "V", "voltage across the coil's inductance"),
        Offer("P_R", "R*i^2", "W", "power dissipated in the resistance"),
        Offer("E_L", "L*i^2/2", "J", "energy stored in the coil's magnetic field"),
    ),
    starter=Starter(
        title="Current rise in the coil of a 24 V solenoid valve",
        number="EL-201",
        purpose="Time for the coil current to reach the 0.15 A pull-in current after the supply is switched on.",
        requests="""[evaluate]
at = ["2 ms", "5 ms", "10 ms", "25 ms"]
reach = ["0.15 A"]

[[criteria]]
text = "Coil current reaches the 0.15 A pull-in current within 10 ms"
check = "reach(0.15 A) <= 10 ms"

[[criteria]]
text = "Steady coil current within the 0.25 A rating of the driver"
check = "final_value <= 0.25 A"
""",
    ),
)
