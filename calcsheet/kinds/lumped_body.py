"""Lumped body: a solid heated or cooled by convection to an ambient, optionally with a heat input."""

from __future__ import annotations

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, info, invalid

# Lumped-capacitance analysis is accepted while the Biot number Bi = h*Lc/k, with Lc = V/A, stays at or
# below 0.1 (standard heat-transfer texts, e.g. Incropera et al., Fundamentals of Heat and Mass Transfer,
# section on the lumped capacitance method; Cengel, Heat and Mass Transfer, chapter on transient
# conduction). Common practice; criterion from memory.
BIOT_LIMIT = 0.1


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    volume, area, h, k = values["V"], values["A"], values["h"], values["k"]
    if volume <= 0 or area <= 0 or k <= 0:
        return (invalid("lumped_body.properties_not_positive"),)
    length = volume / area
    biot = h * length / k
    notes = [info("lumped_body.biot", biot=biot, length=length, limit=BIOT_LIMIT)]
    if biot > BIOT_LIMIT:
        notes.append(invalid("lumped_body.biot_exceeded", biot=biot, limit=BIOT_LIMIT))
    return tuple(notes)


KIND = Kind(
    name="lumped_body",
    title="Lumped body heated or cooled by convection",
    summary="temperature T of a body of uniform temperature exchanging heat by convection with an ambient T_inf",
    law="energy balance on the body: rate of change of stored heat = heat input - convective loss, "
    "with Newton's law of cooling for the loss",
    unknown=Slot("T", "degC", "body temperature", "20 degC"),
    variable=Slot("t", "s", "time", "1 s"),
    slots=(
        Slot("rho", "kg/m^3", "density of the body", "7850 kg/m^3"),
        Slot("c_p", "J/(kg*K)", "specific heat capacity of the body", "460 J/(kg*K)"),
        Slot("V", "m^3", "volume of the body", "1.0e-4 m^3"),
        Slot("A", "m^2", "surface area exchanging heat with the ambient", "0.016 m^2"),
        Slot("h", "W/(m^2*K)", "convective heat transfer coefficient", "25 W/(m^2*K)"),
        Slot("k", "W/(m*K)", "thermal conductivity of the body; used only for the Biot check", "45 W/(m*K)"),
        Slot("T_inf", "K", "ambient temperature", "20 degC"),
        Slot("Q", "W", "heat input to the body; 0 W when none", "10 W", default="0 W"),
    ),
    equation="rho*c_p*V*dT/dt = Q - h*A*(T - T_inf)",
    law_steps=(
        (
            r"\frac{dE}{dt} = \dot{Q}_{\mathrm{in}} - \dot{Q}_{\mathrm{conv}}",
            "dE/dt = Q_in - Q_conv   (energy balance on the body)",
        ),
        (
            r"E = \rho\, c_{\mathrm{p}} V\, T, \quad \dot{Q}_{\mathrm{in}} = Q, \quad "
            r"\dot{Q}_{\mathrm{conv}} = h A \left(T - T_{\infty}\right)",
            "E = rho*c_p*V*T, Q_in = Q, Q_conv = h*A*(T - T_inf)   (stored heat; Newton's law of cooling)",
        ),
        (
            r"\rho\, c_{\mathrm{p}} V \frac{dT}{dt} = Q - h A \left(T - T_{\infty}\right)",
            "rho*c_p*V*dT/dt = Q - h*A*(T - T_inf)",
        ),
    ),
    assumptions=(
        "The body's temperature is uniform at every instant (lumped capacitance; see the Biot check).",
        "Constant properties rho, c_p, k and a constant heat transfer coefficient h over the whole surface A.",
        "Radiation is neglected or folded into h; no phase change in the body.",
        "The ambient is large enough that the body does not change T_inf.",
    ),
    source="T_inf",
    checks=_checks,
    findings={
        "lumped_body.properties_not_positive": "V, A and k must be positive for the Biot number Bi = h*Lc/k, "
        "Lc = V/A; a body with them zero or negative is not a physical body, and the validity of the lumped model "
        "cannot be checked.",
        "lumped_body.biot": "Biot number Bi = h*Lc/k = {biot} with characteristic length Lc = V/A = {length} m; "
        "the lumped model holds for Bi <= {limit:1} (common practice in heat transfer).",
        "lumped_body.biot_exceeded": "Bi = {biot} exceeds {limit:1}: the temperature inside the body is not "
        "uniform, so the lumped model is not valid; a transient conduction analysis "
        "is needed.",
    },
    offers=(Offer("Q_conv", "h*A*(T - T_inf)", "W", "heat flow from the body to the ambient by convection"),),
    starter=Starter(
        title="Warm-up of a steel mounting block carrying a 10 W heater (example, edit)",
        number="TH-101",
        purpose="Temperature of a 100 x 50 x 20 mm steel block with a 10 W heater pad, in still air at 20 degC.",
        requests="""[evaluate]
at = ["10 min", "30 min", "2 h"]
reach = ["40 degC"]

[[criteria]]
text = "Block settles below 60 degC"
check = "final_value <= 60 degC"

[[criteria]]
text = "Block below 40 degC for the first 15 min"
check = "reach(40 degC) >= 15 min"
""",
    ),
)
