"""Pipe temperature: a fluid flowing along a pipe or duct, losing or gaining heat through its wall."""

from __future__ import annotations

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, info, invalid


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    m_dot, c_p, u, perimeter = values["m_dot"], values["c_p"], values["U"], values["P"]
    if m_dot <= 0 or c_p <= 0:
        return (invalid("pipe_temperature.flow_not_positive"),)
    if u <= 0 or perimeter <= 0:
        return (invalid("pipe_temperature.transfer_not_positive"),)
    per_length = u * perimeter
    return (info("pipe_temperature.ntu", per_length=per_length, length=m_dot * c_p / per_length),)


KIND = Kind(
    name="pipe_temperature",
    title="Fluid temperature along a pipe",
    summary="temperature T of a fluid in steady flow along a pipe or duct exchanging heat with surroundings at T_s",
    law="steady-flow energy balance on a slice dx of the pipe: the enthalpy the fluid loses equals the heat "
    "that passes through the wall, U*P*dx*(T - T_s)",
    unknown=Slot("T", "degC", "bulk (mixed-mean) fluid temperature", "80 degC"),
    variable=Slot("x", "m", "distance along the pipe from the inlet, in the direction of flow", "1 m"),
    slots=(
        Slot("m_dot", "kg/s", "mass flow rate of the fluid", "0.5 kg/s"),
        Slot("c_p", "J/(kg*K)", "specific heat capacity of the fluid", "4180 J/(kg*K)"),
        Slot(
            "U",
            "W/(m^2*K)",
            "overall heat transfer coefficient, fluid to surroundings, per unit of the "
            "wall area whose perimeter is P: per outer area with P = pi*D_o, per inner area with P = pi*D_i",
            "1.2 W/(m^2*K)",
        ),
        Slot("P", "m", "perimeter of the wall area U refers to, e.g. pi*D_o", "0.63 m"),
        Slot("T_s", "K", "temperature of the surroundings", "20 degC"),
    ),
    equation="m_dot*c_p*dT/dx = -U*P*(T - T_s)",
    law_steps=(
        (
            r"\dot{m}\, c_{\mathrm{p}} \left(T(x + dx) - T(x)\right) = -\delta\dot{Q}",
            "m_dot*c_p*(T(x + dx) - T(x)) = -dQ   (steady-flow energy balance on the slice dx)",
        ),
        (
            r"\delta\dot{Q} = U P\, dx \left(T - T_{\mathrm{s}}\right)",
            "dQ = U*P*dx*(T - T_s)   (heat through the wall area P*dx)",
        ),
        (
            r"\dot{m}\, c_{\mathrm{p}} \frac{dT}{dx} = -U P \left(T - T_{\mathrm{s}}\right)",
            "m_dot*c_p*dT/dx = -U*P*(T - T_s)",
        ),
    ),
    assumptions=(
        "Steady flow; the fluid's temperature is uniform over each cross-section (bulk temperature).",
        "Constant m_dot, c_p and U along the pipe; the surroundings stay at T_s.",
        "Conduction along the pipe axis, friction heating and changes of kinetic and potential energy neglected.",
        "No phase change of the fluid.",
    ),
    source="T_s",
    checks=_checks,
    findings={
        "pipe_temperature.flow_not_positive": "m_dot and c_p must be positive: x runs in the direction of flow, "
        "from the inlet.",
        "pipe_temperature.transfer_not_positive": "U and P must be positive for heat to flow from the warmer to the "
        "colder side.",
        "pipe_temperature.ntu": "Heat loss per unit length and kelvin of difference U*P = {per_length} W/(m*K); over "
        "a length L the number of transfer units is NTU = U*P*L/(m_dot*c_p) = L/({length} m).",
    },
    offers=(Offer("q_loss", "U*P*(T - T_s)", "W/m", "heat lost through the wall per unit length of pipe"),),
    starter=Starter(
        title="Hot-water line across an unheated hall (example, edit)",
        number="TH-201",
        purpose="Water temperature along a 250 m insulated line carrying 0.5 kg/s of water at 80 degC.",
        requests="""[evaluate]
at = ["50 m", "100 m", "250 m"]
reach = ["75 degC"]

[[criteria]]
text = "Water arrives at the far end (250 m) at 74 degC or above"
check = "T(250 m) >= 74 degC"
""",
    ),
)
