"""Body cooling by convection and radiation: Newton's law of cooling plus the Stefan–Boltzmann law.

The radiated heat goes with T^4, so the equation is not linear; an input of this kind gives a
[linearise] table and the sheet linearises it about a temperature and measures the error.
"""

from __future__ import annotations

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, info, invalid

# The Stefan–Boltzmann constant, exact in the 2019 SI (CODATA 2018): 5.670374419e-8 W/(m^2 K^4).
STEFAN_BOLTZMANN = "5.670374419e-8 W/(m^2*K^4)"


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    mass, c_p, area, h, eps = (values[n] for n in ("m", "c_p", "A", "h", "eps"))
    t_inf, t_sur, sigma = values["T_inf"], values["T_sur"], values["sigma"]
    if mass <= 0 or c_p <= 0 or area <= 0 or h < 0 or sigma <= 0:
        return (invalid("radiating_body.properties_not_positive"),)
    if not 0 < eps <= 1:
        return (invalid("radiating_body.emissivity_out_of_range", eps=eps),)
    if t_inf <= 0 or t_sur <= 0:
        return (invalid("radiating_body.temperature_not_positive"),)
    # the radiation coefficient near the surroundings' temperature, 4 eps sigma T_sur^3 (see the linearisation)
    h_rad = 4 * eps * sigma * t_sur**3
    return (info("radiating_body.radiation_coefficient", h_rad=h_rad, h=h, T_sur=t_sur),)


KIND = Kind(
    name="radiating_body",
    title="Body cooling by convection and radiation",
    summary="temperature T of a body of uniform temperature losing heat by convection to the air at T_inf and by "
    "radiation to surroundings at T_sur (non-linear: give a [linearise] table)",
    law="energy balance on the body: rate of change of stored heat = heat input - convective loss - radiative "
    "loss, with Newton's law of cooling and the Stefan–Boltzmann law for a grey body in large surroundings",
    unknown=Slot("T", "degC", "body temperature", "70 degC"),
    variable=Slot("t", "s", "time", "1 s"),
    slots=(
        Slot("m", "kg", "mass of the body", "3 kg"),
        Slot("c_p", "J/(kg*K)", "specific heat capacity of the body", "900 J/(kg*K)"),
        Slot("A", "m^2", "surface area exchanging heat", "0.15 m^2"),
        Slot("h", "W/(m^2*K)", "convective heat transfer coefficient", "8 W/(m^2*K)"),
        Slot("eps", "1", "emissivity of the surface (grey body)", "0.9"),
        Slot("T_inf", "K", "temperature of the air", "20 degC"),
        Slot("T_sur", "K", "temperature of the surroundings the body radiates to", "20 degC"),
        Slot("sigma", "W/(m^2*K^4)", "Stefan–Boltzmann constant", STEFAN_BOLTZMANN, default=STEFAN_BOLTZMANN),
        Slot("Q", "W", "heat input to the body; 0 W when none", "0 W", default="0 W"),
    ),
    equation="m*c_p*dT/dt = Q - h*A*(T - T_inf) - eps*sigma*A*(T^4 - T_sur^4)",
    law_steps=(
        (
            r"\frac{dE}{dt} = \dot{Q}_{\mathrm{in}} - \dot{Q}_{\mathrm{conv}} - \dot{Q}_{\mathrm{rad}}",
            "dE/dt = Q_in - Q_conv - Q_rad   (energy balance on the body)",
        ),
        (
            r"E = m\, c_{\mathrm{p}} T, \quad \dot{Q}_{\mathrm{conv}} = h A \left(T - T_{\infty}\right), \quad "
            r"\dot{Q}_{\mathrm{rad}} = \varepsilon \sigma A \left(T^{4} - T_{\mathrm{sur}}^{4}\right)",
            "E = m*c_p*T, Q_conv = h*A*(T - T_inf), Q_rad = eps*sigma*A*(T^4 - T_sur^4)   "
            "(stored heat; Newton's law of cooling; Stefan–Boltzmann, grey body)",
        ),
        (
            r"m\, c_{\mathrm{p}} \frac{dT}{dt} = Q - h A \left(T - T_{\infty}\right) - \varepsilon \sigma A "
            r"\left(T^{4} - T_{\mathrm{sur}}^{4}\right)",
            "m*c_p*dT/dt = Q - h*A*(T - T_inf) - eps*sigma*A*(T^4 - T_sur^4)",
        ),
    ),
    assumptions=(
        "The body's temperature is uniform at every instant (lumped capacitance: check the Biot number "
        "h*Lc/k <= 0.1 separately, with h including the radiation coefficient).",
        "The surface is grey and diffuse with a constant emissivity, and the surroundings are large compared "
        "with the body (view factor 1).",
        "Constant properties m, c_p and a constant convective coefficient h over the whole surface A.",
        "Temperatures in the radiation term are absolute (the sheet works in kelvin).",
    ),
    source="Q",
    checks=_checks,
    findings={
        "radiating_body.properties_not_positive": "m, c_p, A and sigma must be positive and h not negative; a "
        "body with them otherwise is not a physical body.",
        "radiating_body.emissivity_out_of_range": "the emissivity eps = {eps} is outside 0 < eps <= 1; no surface "
        "radiates more than a black body.",
        "radiating_body.temperature_not_positive": "T_inf and T_sur must be above absolute zero.",
        "radiating_body.radiation_coefficient": "Near the surroundings' temperature T_sur = {T_sur} K the radiation "
        "acts like a coefficient 4*eps*sigma*T_sur^3 = {h_rad} W/(m^2*K), beside convection h = {h} W/(m^2*K).",
    },
    offers=(
        Offer("Q_conv", "h*A*(T - T_inf)", "W", "heat flow from the body to the air by convection"),
        Offer("Q_rad", "eps*sigma*A*(T^4 - T_sur^4)", "W", "heat flow from the body to the surroundings by radiation"),
    ),
    starter=Starter(
        title="Cool-down of an aluminium housing after a test run (example, edit)",
        number="TH-220",
        purpose="Temperature of a 3 kg aluminium housing cooling from 70 degC in a 20 degC workshop.",
        requests="""[linearise]
about = "steady state"
tolerance = "5 %"

[evaluate]
at = ["10 min", "30 min", "1 h"]

[[criteria]]
text = "The housing is below 45 degC, safe to handle, one hour after the run"
check = "T(1 h) <= 45 degC"
""",
    ),
)
