"""First-order sensor: a temperature probe whose reading lags the medium it measures.

The kind is stated for a temperature probe. A general sensor (a reading y of any unit, a gain K of
reading per input) would need the unknown itself to take any dimension, which a kind's unknown cannot
yet declare; so the reading and the input are temperatures here and K is a plain number.
"""

from __future__ import annotations

import math

from calcsheet.kinds.base import Kind, Note, Offer, Slot, Starter, info, invalid, warning


def _checks(values: dict[str, float]) -> tuple[Note, ...]:
    tau, gain = values["tau"], values["K"]
    if tau <= 0:
        return (invalid("first_order_sensor.tau_not_positive"),)
    # Response times of a first-order sensor to a step: t50 = ln(2)*tau, t90 = ln(10)*tau
    # (common practice, no source).
    notes = [info("first_order_sensor.response_times", t50=math.log(2) * tau, t90=math.log(10) * tau)]
    if not math.isclose(gain, 1.0, rel_tol=1e-12):
        notes.append(warning("first_order_sensor.gain_not_one", K=gain))
    return tuple(notes)


KIND = Kind(
    name="first_order_sensor",
    title="First-order temperature sensor",
    summary="reading T of a temperature probe with time constant tau following the medium temperature T_m",
    law="first-order lag of an instrument: tau*dy/dt + y = K*u, with the reading y and the measured input u",
    unknown=Slot("T", "degC", "temperature the probe reads", "20 degC"),
    variable=Slot("t", "s", "time", "1 s"),
    slots=(
        Slot("tau", "s", "time constant of the probe in the medium; it depends on the flow around the probe", "5 s"),
        Slot(
            "K",
            "1",
            "static gain, reading per input; 1 for a probe that reads the medium temperature",
            "1.0",
            default="1.0",
        ),
        Slot("T_m", "K", "temperature of the medium the probe measures", "80 degC"),
    ),
    equation="tau*dT/dt + T = K*T_m",
    law_steps=(
        (r"\tau \frac{dy}{dt} + y = K\, u", "tau*dy/dt + y = K*u   (first-order lag)"),
        (r"y = T, \quad u = T_{\mathrm{m}}", "y = T, u = T_m   (reading and measured temperature)"),
        (r"\tau \frac{dT}{dt} + T = K\, T_{\mathrm{m}}", "tau*dT/dt + T = K*T_m"),
    ),
    assumptions=(
        "The probe behaves as a single first-order lag with a constant time constant tau; heat conducted "
        "along the sheath and radiation are neglected.",
        "The reading is the probe's own temperature; the transmitter and display add no lag of their own.",
        "K multiplies the absolute temperature (kelvin); use K = 1 unless the probe is known to scale it.",
    ),
    source="T_m",
    checks=_checks,
    findings={
        "first_order_sensor.tau_not_positive": "the time constant tau must be positive; with tau <= 0 the equation "
        "does not describe a sensor that settles.",
        "first_order_sensor.response_times": "Step response times: t50 = ln 2 * tau = {t50} s, "
        "t90 = ln 10 * tau = {t90} s.",
        "first_order_sensor.gain_not_one": "K = {K} multiplies the absolute temperature in kelvin; a probe that "
        "reads the medium's temperature has K = 1, and a calibration error is "
        "better stated as an offset.",
    },
    offers=(Offer("rate", "dT/dt", "K/s", "rate of change of the reading"),),
    starter=Starter(
        title="Probe plunged into a hot rinse bath (example, edit)",
        number="IN-101",
        purpose="Time for a probe at 20 degC, plunged into a bath at 80 degC, to read within 1 K of the bath.",
        requests="""[evaluate]
at = ["5 s", "10 s", "30 s"]
reach = ["79 degC"]

[[criteria]]
text = "Reading within 1 K of the bath within 30 s"
check = "reach(79 degC) <= 30 s"
""",
    ),
)
