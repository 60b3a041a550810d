"""The structured record behind the JSON output (format version 2, described in README.md).

Version 2: an ordinary model's record is as in version 1; a switched model's record gives each
interval on its own (``intervals``) and the results over the whole response apart (``across``).
"""

from __future__ import annotations

from calcsheet.derive.verify import bound
from calcsheet.mathtext import plain
from calcsheet.sheet.criterion_numbers import criterion_numbers
from calcsheet.sheet.check_words import check_row, quadrature_words
from calcsheet.sheet.hand_checks import reach_checks, reach_record
from calcsheet.sheet.quantities import record_value, rounded
from calcsheet.sheet.derived_words import derived_record, switched_derived_record
from calcsheet.sheet.dimensions_table import units_check_record

RECORD_FORMAT = "calcsheet-record"
RECORD_VERSION = 2
SHEET_KEYS = ("title", "number", "revision", "project", "originator", "purpose", "references", "assumptions")
INTERVAL_KEYS = (
    "kind",
    "classification",
    "solution",
    "time_constant",
    "final_value",
    "sinusoidal_steady_state",
    "verification",
)  # taken from each interval's own record


def build_record(d, n) -> dict:
    m, num, s, c = d.model, d.numbers, d.solution, d.classification
    record = {
        "format": RECORD_FORMAT,
        "version": RECORD_VERSION,
        "sheet": {
            k: getattr(m.sheet, k) if not isinstance(getattr(m.sheet, k), tuple) else list(getattr(m.sheet, k))
            for k in SHEET_KEYS
        },
        "model": {
            "equation": m.equation_text,
            "unknown": {"name": m.unknown.name, "unit": m.unknown.unit_text},
            "variable": {"name": m.variable.name, "unit": m.variable.unit_text},
            "parameters": [
                {
                    "name": p.name,
                    "value": p.text,
                    "si": rounded(p.si),
                    "source": p.source,
                    "note": p.note,
                    **({"expression": p.expression} if p.expression else {}),
                }
                for p in m.parameters
            ],
            "initial": {
                "at": record_value(m.initial_at.si, m.variable),
                "value": record_value(m.initial_value.si, m.unknown),
            },
            "units_check": units_check_record(m),
        },
        "kind": None
        if m.kind is None
        else {
            "name": m.kind.name,
            "title": m.kind.title,
            "law": m.kind.law,
            "forcing": m.kind.forcing,
            "findings": [_finding(n, m.kind) for n in m.kind.notes],
            "valid": not m.kind.not_valid,
        },
        "classification": {
            "order": 1,
            "linear": True,
            "homogeneous": c.homogeneous,  # refused otherwise
            "homogeneous_with_values": c.homogeneous_with_values,
            "constant_coefficients": c.constant_coefficients,
            "p": plain(c.p),
            "r": plain(c.r),
        },
        "solution": {
            "closed_form": s.closed_form,
            "fallback": list(s.fallback_codes),
            "integrating_factor": {"latex": n.tex(s.mu), "text": plain(s.mu)},
            "general": {"latex": n.tex(s.general), "text": plain(s.general)},
            "particular": {"latex": n.tex(s.particular), "text": plain(s.particular)},
            "natural": {"latex": n.tex(s.natural), "text": plain(s.natural)},
            "forced": {"latex": n.tex(s.forced), "text": plain(s.forced)},
            "quadrature": None
            if d.quadrature is None
            else {
                "method": quadrature_words(),
                "largest_error_estimate": bound(d.quadrature.largest_error),
                "evaluations_with_warnings": getattr(d.quadrature, "troubled", 0),
            },
        },
        "time_constant": record_value(num.time_constant, m.variable),
        "final_value": record_value(num.final_value, m.unknown),
        "sinusoidal_steady_state": None
        if num.sine is None
        else {
            "amplitude_ratio": rounded(num.sine.amplitude_ratio),
            "phase_lag": {"value": rounded(num.sine.phase_lag_deg), "unit": "deg"},
            "transient_below_1_percent_after": record_value(num.sine.settled_after, m.variable),
        },
        **with_hand_checks(d, results_record(m, num)),
        **derived_record(d),
        "verification": verification_record(d.verification),
        **_linearisation(d),
        "passed": d.passed,
    }
    return _with_margin(d, record, record)


def _linearisation(d) -> dict:
    """``linearisation`` only on a sheet whose stated equation was linearised (linearise_words.py)."""
    if getattr(d, "linearisation", None) is None:
        return {}
    from calcsheet.sheet.linearise_words import linearisation_record

    return {"linearisation": linearisation_record(d)}


def _with_margin(d, record: dict, results: dict) -> dict:
    """The margin's parts (margin_words.py): tolerances, sensitivities, overrides, and each criterion's worst case
    and limiting values in ``results``."""
    from calcsheet.sheet.margin_words import criteria_margin, margin_record

    results["criteria"] = criteria_margin(d, results["criteria"])
    return {**record, **margin_record(d)}


def results_record(m, num) -> dict:
    """Values, levels reached and criteria, each number with its declared unit."""
    return {
        "values": [
            {
                "at": record_value(v.at.si, m.variable),
                "value": record_value(v.y, m.unknown),
                "applies": getattr(v, "applies", True),
            }
            for v in num.values
        ],
        "reach": [
            {
                "target": record_value(r.level.si, m.unknown),
                "at": record_value(r.x, m.variable),
                "reason": None if r.x is not None else getattr(r, "code", None),
            }
            for r in num.reach
        ],
        "criteria": [
            {
                "text": v.criterion.text,
                "check": v.criterion.check,
                "source": v.criterion.source or None,
                "basis": v.criterion.basis or None,
                "limit": _limit(v.criterion, m),
                "passed": v.passed,
                "status": getattr(v, "status", "pass" if v.passed else "fail"),
                "not_assessed_because": getattr(v, "code", "") or None,
                "found": _found(v, m),
                **_margin(v),
            }
            for v in num.verdicts
        ],
        "extremes": [_extreme(e, m) for e in getattr(num, "extremes", ())],
    }


def with_hand_checks(d, results: dict) -> dict:
    """Each level reached and each reach criterion with its ``hand_check`` (hand_checks.py): the closed-form
    line with its numbers, or the scan's bracket; both null where the level is not reached."""
    levels, criteria = reach_checks(d)
    found = iter(levels)
    for entry, r in zip(results["reach"], d.numbers.reach):
        entry["hand_check"] = reach_record(next(found) if r.x is not None else None, d.model.variable)
    by_place = dict(criteria)
    for k, entry in enumerate(results["criteria"]):
        if d.numbers.verdicts[k].criterion.subject == "reach":
            entry["hand_check"] = reach_record(by_place.get(k), d.model.variable)
    return results


def _limit(criterion, m) -> dict:
    """The limit in its own unit, and the expression it was worked out from (null when written as a value)."""
    from calcsheet.sheet.compose import measured_like  # compose imports this module

    like = measured_like(m, criterion)
    return {"value": record_value(criterion.limit.si, like), "expression": criterion.limit_expression or None}


def _extreme(e, m) -> dict:
    """One extreme: its kind, window and value in declared units, and what gave it (compose's words)."""
    from calcsheet.sheet.compose import EXTREME_METHOD_WORDS  # compose words every code; it imports this module

    return {
        "type": e.kind,
        "of": getattr(e, "of", "") or m.unknown.name,
        "from": record_value(e.start, m.variable),
        "to": record_value(e.end, m.variable),
        "open_ended": e.open_ended,
        "value": record_value(e.value, m.quantity(getattr(e, "of", ""))),
        "at": record_value(e.at, m.variable),
        "method": EXTREME_METHOD_WORDS[e.method],
    }


def _finding(note, use) -> dict:
    from calcsheet.sheet.compose import finding_text  # compose words every finding; it imports this module

    return {"severity": note.severity, "code": note.code, "text": finding_text(note, use)}


def verification_record(verification) -> dict:
    return {"passed": verification.passed, "checks": [_check_record(ch) for ch in verification.checks]}


def _check_record(check) -> dict:
    name, method, _, detail = check_row(check)
    return {"name": name, "code": check.code, "passed": check.passed, "method": method, "detail": detail}


def _margin(verdict) -> dict:
    """margin {value, unit} and utilisation (a fraction) as sheet/criterion_numbers.py defines them."""
    numbers = criterion_numbers(verdict)
    if numbers is None:
        return {"margin": None, "utilisation": None}
    return {
        "margin": {"value": rounded(numbers.margin), "unit": numbers.margin_unit},
        "utilisation": None if numbers.utilisation is None else rounded(numbers.utilisation),
    }


def _found(verdict, m):
    from calcsheet.sheet.compose import measured_like  # compose imports this module

    return record_value(verdict.actual, measured_like(m, verdict.criterion))


def build_switched_record(sd, interval_records: list[dict]) -> dict:
    """The record of a switched model: ``interval_records`` are the intervals' own records (build_record)."""
    m, first = sd.model, interval_records[0]
    before = [None] + list(sd.intervals[:-1])
    record = {
        "format": RECORD_FORMAT,
        "version": RECORD_VERSION,
        "sheet": first["sheet"],
        "model": {key: first["model"][key] for key in ("unknown", "variable", "initial")},
        "intervals": [
            _interval_record(interval, record, previous)
            for interval, record, previous in zip(sd.intervals, interval_records, before)
        ],
        "across": {
            **with_hand_checks(sd, results_record(m, sd.numbers)),
            **(switched_derived_record(sd) if m.derived else {}),
            "verification": verification_record(sd.verification),
        },
        "passed": sd.passed,
    }
    return _with_margin(sd, record, record["across"])


def _interval_record(interval, record: dict, previous) -> dict:
    variable = interval.derivation.model.variable
    return {
        "from": record_value(interval.start, variable),
        "to": record_value(interval.end, variable),
        "switch": None if previous is None else interval.text,
        "equation": record["model"]["equation"],
        "initial": record["model"]["initial"]["value"],
        "parameters": _parameters_in_force(interval, record["model"]["parameters"], previous),
        "units_check": record["model"]["units_check"],
        **{key: record[key] for key in INTERVAL_KEYS},
        **({"derived": record["derived"]} if record["derived"] else {}),
    }


def _parameters_in_force(interval, parameters: list[dict], previous) -> list[dict]:
    """Every parameter in force over the interval; ``changed`` where its value is not the one in force just
    before the switch (set by the switch, or by a new forcing), ``carried`` where the law carried it over."""
    before = {} if previous is None else {p.name: (p.text, p.si) for p in previous.derivation.model.parameters}
    now = {p.name: (p.text, p.si) for p in interval.derivation.model.parameters}
    carried = {name for name, _ in interval.carried}
    return [
        {
            **entry,
            "changed": previous is not None and before.get(entry["name"]) != now[entry["name"]],
            "carried": entry["name"] in carried,
        }
        for entry in parameters
    ]
