"""The words for the independent checks: derive reports each check as facts (verify.Check), and
this module alone says them, for the sheet's tables and the record alike."""

from __future__ import annotations

from calcsheet.derive import verify as v
from calcsheet.derive.linear_accuracy import LINEARISATION
from calcsheet.derive.evaluate import QUAD_RTOL, QUAD_SUBINTERVALS

NAMES = {
    v.SUBSTITUTION: "substitution",
    v.INITIAL_CONDITION: "initial condition",
    v.INTEGRATION: "numerical integration",
    v.EACH_INTERVAL: "each interval",
    v.CONTINUITY: "continuity at the switches",
    v.SWITCHED_INTEGRATION: "switched integration",
    LINEARISATION: "linearisation against the non-linear model",
}
INTEGRATOR_WORDS = {
    v.ODE_METHOD: "DOP853 (explicit Runge–Kutta of order 8)",
    v.STIFF_METHOD: "Radau (implicit Runge–Kutta of order 5, for stiff equations)",
}
FAILURE_WORDS = {
    v.NOT_FINITE_START: "the initial value is not finite",
    v.TOO_MUCH_WORK: "not completed: the integration needed more than {calls:.0e} evaluations of the slope",
    v.SLOPE_NOT_FINITE: "the integrator met a slope that is not finite",
    v.SOLVER_STOPPED: "the integrator stopped before the end of the range",
    v.VALUES_NOT_FINITE: "the integrated values are not finite",
    v.OVERFLOW: "the integrated values are not finite (the integrator met an overflow)",
}
COUNT_WORDS = {1: "One", 2: "Two", 3: "Three", 4: "Four", 5: "Five", 6: "Six"}


def quadrature_words() -> str:
    """How an integral term is evaluated (derive/evaluate.py), with its tolerance and its bound on work."""
    return (
        f"adaptive Gauss–Kronrod quadrature (QUADPACK QAGS via scipy.integrate.quad), relative tolerance "
        f"{QUAD_RTOL:.0e}, at most {QUAD_SUBINTERVALS} subintervals"
    )


def check_row(check: v.Check) -> tuple[str, str, str, str]:
    """(name, method, result, detail) of one check, in the sheet's words."""
    return NAMES[check.code], method_words(check), "passed" if check.passed else "FAILED", detail_words(check)


def checks_lead(count: int) -> str:
    """The sentence before a verification table, with the number of checks counted, not written in."""
    return f"{COUNT_WORDS.get(count, str(count))} independent checks; none reuses the arithmetic of the derivation."


def measure_words(check: v.Check) -> str:
    return (
        "each difference measured as the integrator measures its error: against |y| + "
        f"{check.fact('atol_share', v.ATOL_SHARE):g} × the largest |y| so far"
    )


def method_words(check: v.Check) -> str:
    if check.code == LINEARISATION:
        from calcsheet.sheet.linearise_words import check_method

        return check_method()
    if check.code == v.SUBSTITUTION:
        return "symbolic" if check.how == v.SYMBOLIC else "numeric at sample points"
    if check.code == v.INITIAL_CONDITION:
        return "symbolic and numeric" if check.how == v.SYMBOLIC_AND_NUMERIC else "numeric"
    if check.code == v.EACH_INTERVAL:
        return "substitution, initial condition and integration per interval"
    if check.code == v.CONTINUITY:
        return (
            f"each interval's particular solution evaluated at its end with its own values (sympy, "
            f"{check.fact('digits')} digits; integral terms by mpmath quadrature), against the next "
            "interval's initial value"
        )
    tolerances = (
        f"rtol {check.fact('rtol'):.0e}, atol {check.fact('rtol') * check.fact('atol_share'):.0e} × the "
        "response's size so far"
    )
    if check.code == v.INTEGRATION:
        integrator = check.fact("integrator")
        return (
            f"scipy solve_ivp, {INTEGRATOR_WORDS[integrator]}, {tolerances}, on the equation as stated"
            + (", restarted at each jump of the forcing" if check.fact("restarted") else "")
            + (
                f" (stiff method: the span is {check.fact('stiff_ratio'):.1e} natural scales)"
                if integrator == v.STIFF_METHOD
                else ""
            )
        )
    stiff = check.fact("stiff_intervals", ())
    return (
        f"scipy solve_ivp, {' or '.join(INTEGRATOR_WORDS[m] for m in check.fact('integrators'))}, {tolerances}, "
        "on each interval's equation as stated, restarted at every switch and at every jump of the forcing, "
        "the state carried across" + (f" (stiff method on interval {', '.join(map(str, stiff))})" if stiff else "")
    )


def detail_words(check: v.Check) -> str:
    if check.code == LINEARISATION:
        from calcsheet.sheet.linearise_words import check_detail

        return check_detail(check)
    if check.fact("failure"):
        words = FAILURE_WORDS[check.fact("failure")].format(calls=check.fact("calls", 0))
        return f"interval {check.fact('interval')}: {words}" if check.fact("interval") else words
    if check.code == v.SUBSTITUTION:
        if check.how == v.SYMBOLIC:
            return "lhs - rhs simplifies to exactly 0"
        reason = (
            "symbolic simplification did not reach 0"
            if check.fact("simplify_finished")
            else "symbolic simplification did not finish in time"
        )
        return (
            f"{reason}; largest relative residual {v.bound(check.measure)} at {check.points} points "
            f"(limit {check.limit:.0e})"
        )
    if check.code == v.INITIAL_CONDITION:
        if check.how == v.SYMBOLIC_AND_NUMERIC:
            return (
                f"{check.fact('unknown')}({check.fact('x0')}) - {check.fact('y0')} simplifies to 0; numerical "
                f"relative gap {v.bound(check.measure)}"
            )
        return f"relative gap {v.bound(check.measure)} (limit {check.limit:.0e})"
    if check.code == v.EACH_INTERVAL:
        failed = check.fact("failed", ())
        if not failed:
            return "all intervals verified (see each interval's verification step)"
        return f"interval {', '.join(map(str, failed))} failed its own verification"
    if check.code == v.CONTINUITY:
        switches = f"{check.points} switch{'es' if check.points > 1 else ''}"
        return (
            f"largest difference {v.bound(check.measure)} at {switches} (limit {check.limit:.0e}), "
            f"{measure_words(check)}"
        )
    return (
        f"largest difference {v.bound(check.measure)} over {check.points} points (limit {check.limit:.0e}), "
        f"{measure_words(check)}"
    )
