"""The liquid volume both well-mixed tank kinds share: its slots, law, findings, limit and carry-over.

The volume law V = V_0 + (q_in - q_out)*(t - t_V) has its own clock: V_0 is the volume at the start of
the interval, t_V, which is 0 unless the interval starts later (a switched model, or an initial point
off the origin). Each tank kind writes its law steps once, for either clock, from `Clock`.
"""

from __future__ import annotations

from dataclasses import dataclass

from calcsheet.kinds.base import START_SLOT, Note, Slot, info, invalid, warning

# A capacity of 0 m^3 stands for "not stated": the kinds have no slot that is optional without a value.
NOT_STATED = 0.0


@dataclass(frozen=True)
class Clock:
    """How the law writes the time since the volume was V_0, in LaTeX and as plain text."""

    tex: str
    text: str


FROM_ZERO = Clock("t", "t")
FROM_START = Clock(r"\left(t - t_{V}\right)", f"(t - {START_SLOT})")


def volume_tex(clock: Clock) -> str:
    return rf"V_{{0}} + \left(q_{{\mathrm{{in}}}} - q_{{\mathrm{{out}}}}\right) {clock.tex}"


def volume_text(clock: Clock) -> str:
    return f"V_0 + (q_in - q_out)*{clock.text}"


def volume_balance_step(clock: Clock, prefix_tex: str = "", prefix_text: str = "") -> tuple[str, str]:
    """The law step from dV/dt = q_in - q_out to the volume at time t."""
    return (
        prefix_tex + r"\frac{dV}{dt} = q_{\mathrm{in}} - q_{\mathrm{out}} \;\Rightarrow\; V = " + volume_tex(clock),
        f"{prefix_text}dV/dt = q_in - q_out, so V = {volume_text(clock)}   (volume balance)",
    )


ASSUMPTIONS = (
    "The tank is well mixed: the outflow leaves at the concentration of the tank contents.",
    "The inflow and outflow rates are constant; the liquid density does not change with the solute.",
    "The substance is conservative: no reaction, decay, settling or loss at the surface.",
    "The results hold while the tank neither overflows nor runs empty.",
)


def tank_slots(q_in: str, q_out: str, c_in: str, v_0: str, v_max: str) -> tuple[Slot, ...]:
    """The parameters both tank kinds share, with example values for each kind's starter."""
    return (
        Slot("q_in", "m^3/s", "volumetric inflow rate", q_in),
        Slot("q_out", "m^3/s", "volumetric outflow rate", q_out),
        Slot("c_in", "kg/m^3", "concentration of the substance in the inflow", c_in),
        Slot("V_0", "m^3", "liquid volume in the tank at the initial point (at a switch: carried over)", v_0),
        Slot(
            "V_max",
            "m^3",
            "capacity of the tank up to its overflow; 0 m^3 means not stated (no overflow check)",
            v_max,
            default="0 m^3",
        ),
    )


def findings(unknown: str) -> dict[str, str]:
    """The words of the volume findings; ``unknown`` is the kind's unknown, whose coefficient varies."""
    law = "Volume law: V(t) = V_0 + (q_in - q_out)*{t_V:clock}"
    return {
        "tank_no_liquid": "the volume V_0 = {V_0} m^3 at the start is not positive; a well-mixed tank needs liquid "
        "in it (the concentration m/V is undefined at V = 0).",
        "tank_negative_flow": "a flow rate is negative; q_in and q_out are the sizes of the inflow and the outflow "
        "and must be zero or positive.",
        "tank_volume_constant": law + "; here q_in = q_out, so the volume stays V_0 = {V_0} m^3 and the coefficient "
        "of the equation is constant.",
        "tank_fills": law + " = {V_0} m^3 + {rate} m^3/s * {t_V:clock}; the tank fills, so the coefficient of "
        f"{unknown} varies with t.",
        "tank_drains": law + " = {V_0} m^3 - {rate} m^3/s * {t_V:clock}; the tank drains, so the coefficient of "
        f"{unknown} varies with t.",
        "tank_over_capacity": "the volume V_0 = {V_0} m^3 at the start exceeds the capacity V_max = {V_max} m^3.",
        "tank_capacity_not_stated": "No capacity V_max was stated, so the time at which the tank overflows is not "
        "checked.",
        "tank_overflows": "The tank overflows at {at:since}, from (V_max - V_0)/(q_in - q_out); past that time the "
        "overflow is an outflow the model leaves out, so the results hold only before it.",
        "tank_empties": "the tank empties at {at:since}, from V_0/(q_out - q_in); the solution stops there.",
        "limit.tank_overflows": "the tank overflows",  # where the model stops holding (volume_limit)
        "limit.tank_runs_empty": "the tank runs empty",
    }


def _steady(q_in: float, q_out: float) -> bool:
    return abs(q_in - q_out) <= 1e-12 * max(abs(q_in), abs(q_out), 1e-300)


def volume_limit(values: dict[str, float]) -> tuple[float, str] | None:
    """Where the model stops holding, and a code for why (its words are the template of that code with
    "limit." before it): the tank overflows or runs empty (time in s, on the variable's own clock, from the
    volume V_0 at the interval's start t_V)."""
    q_in, q_out, v_0 = values["q_in"], values["q_out"], values["V_0"]
    start = values.get(START_SLOT, 0.0)
    v_max = values.get("V_max", NOT_STATED)
    net = q_in - q_out
    if v_0 <= 0 or _steady(q_in, q_out):
        return None
    if net > 0 and v_0 < v_max:
        return start + (v_max - v_0) / net, "tank_overflows"
    if net < 0:
        return start + v_0 / -net, "tank_runs_empty"
    return None


def volume_notes(values: dict[str, float]) -> tuple[Note, ...]:
    """The volume law of the tank, and when it overflows or empties (SI values in, findings out)."""
    q_in, q_out, v_0 = values["q_in"], values["q_out"], values["V_0"]
    v_max = values.get("V_max", NOT_STATED)
    start = values.get(START_SLOT, 0.0)
    net = q_in - q_out
    notes = []
    if v_0 <= 0:
        notes.append(invalid("tank_no_liquid", V_0=v_0))
    if q_in < 0 or q_out < 0:
        notes.append(invalid("tank_negative_flow", q_in=q_in, q_out=q_out))
    steady = _steady(q_in, q_out)
    if steady:
        notes.append(info("tank_volume_constant", V_0=v_0, t_V=start))
    else:
        notes.append(info("tank_fills" if net > 0 else "tank_drains", V_0=v_0, rate=abs(net), t_V=start))
    stated = v_max > NOT_STATED
    if stated and v_0 > v_max:
        notes.append(invalid("tank_over_capacity", V_0=v_0, V_max=v_max))
    if net > 0 and not steady and v_0 > 0:
        if not stated:
            notes.append(info("tank_capacity_not_stated"))
        elif v_0 <= v_max:
            notes.append(info("tank_overflows", at=start + (v_max - v_0) / net, t_V=start))
    if net < 0 and not steady and v_0 > 0:
        notes.append(warning("tank_empties", at=start + v_0 / -net, t_V=start))
    return tuple(notes)


def carried_volume(values: dict[str, float], at: float) -> dict[str, float]:
    """At a switch the next interval starts from the volume this one has reached (m^3, SI)."""
    start = values.get(START_SLOT, 0.0)
    return {"V_0": values["V_0"] + (values["q_in"] - values["q_out"]) * (at - start)}
