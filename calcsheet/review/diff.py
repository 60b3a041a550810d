"""Compare two JSON records (version 2) and return what changed as facts, with no words.

The comparison reads records only, never inputs, so two sheets built by any means (a file, a git
revision, a record kept from an earlier release) compare alike. Each fact names its section, what it
is about (codes plus the user's own names) and the old and new values; ``diff_words.py`` words them.
"""

from __future__ import annotations

from calcsheet.errors import InputError
from calcsheet.formatting import number
from calcsheet.sheet.change_facts import (  # the facts' shape lives below review, where the sheet words them
    ANSWER_SECTIONS,
    FORM,
    INPUT,
    RESULT,
    SECTIONS,
    SIGNOFF,
    VERDICT,
    Change,
    answer_changed,
)

__all__ = ["ANSWER_SECTIONS", "SECTIONS", "Change", "answer_changed", "compare", "compare_records"]
SOLUTION_FORMS = ("integrating_factor", "general", "particular", "natural", "forced")


def compare(old: dict, new: dict) -> list[Change]:
    """Every difference between two records, sections in ``SECTIONS`` order, each in record order."""
    found: list[Change] = []
    found += _verdicts(old, new)
    found += _inputs(old, new)
    found += _results(old, new)
    found += _forms(old, new)
    found += _signoffs(old, new)
    return found


def compare_records(old: dict, new: dict, names: str) -> list[Change]:
    """``compare``, where a hand-edited record of the wrong shape is the user's to fix: one line naming them."""
    try:
        return compare(old, new)
    except (AttributeError, TypeError, KeyError, ValueError) as error:
        raise InputError(f"a record is not well formed ({type(error).__name__}: {error})", file=names) from None


def _outcomes(record: dict) -> dict:
    return record.get("across") or record


def _keyed(items: list, key) -> dict:
    """Items by their key; a repeated key is told apart by wrapping it (key, "again") as often as needed."""
    out: dict = {}
    for item in items or []:
        k = key(item)
        while k in out:
            k = (k, "again")
        out[k] = item
    return out


def _pairs(old_items: list, new_items: list, key):
    """(key, old or None, new or None) for the union of keys: old order first, then new-only items."""
    for k, before, after, _ in _rows(old_items, new_items, key):
        yield k, before, after


def _rows(old_items: list, new_items: list, key):
    """As ``_pairs``, with the new item's place in its list (None when it was removed)."""
    olds, news = _keyed(old_items, key), _keyed(new_items, key)
    place = {k: n for n, k in enumerate(news)}
    for k in list(olds) + [k for k in news if k not in olds]:
        yield k, olds.get(k), news.get(k), place.get(k)


def _status(criterion: dict | None) -> str | None:
    return None if criterion is None else criterion.get("status")


def _criteria(old: dict, new: dict):
    return _rows(_outcomes(old).get("criteria"), _outcomes(new).get("criteria"), lambda c: c.get("check", ""))


def _verdicts(old: dict, new: dict) -> list[Change]:
    out = []
    for check, before, after, row in _criteria(old, new):
        if before is not None and after is not None and _status(before) != _status(after):
            out.append(Change(VERDICT, "criterion", check, _status(before), _status(after), row=row))
        if before is not None and after is not None and _worst(before) != _worst(after):
            out.append(Change(VERDICT, "worst case", check, _worst(before), _worst(after), row=row))
    if bool(old.get("passed")) != bool(new.get("passed")):
        out.append(Change(VERDICT, "overall", "", bool(old.get("passed")), bool(new.get("passed"))))
    return out


def _worst(criterion: dict) -> str | None:
    """The verdict at the worst corner of the tolerances, None where the sheet has no ranges."""
    worst = criterion.get("worst_case")
    return worst.get("verdict") if isinstance(worst, dict) else None


def _quantity(item) -> tuple[float | None, str]:
    if not isinstance(item, dict):
        return None, ""
    return item.get("value"), item.get("unit", "")


def _numeric_change(section, subject, name, old, new, scope="", old_si=None, new_si=None, row=None) -> Change | None:
    """A Change when two quantities ({value, unit}, or text with SI values) differ, with the absolute change
    when both share a unit and the relative change when the old value is not zero."""
    if old == new:
        return None
    if old_si is None and new_si is None:
        (a, unit_a), (b, unit_b) = _quantity(old), _quantity(new)
        same_unit = unit_a == unit_b
    else:
        a, b, same_unit = old_si, new_si, True
    absolute = relative = None
    if isinstance(a, (int, float)) and isinstance(b, (int, float)) and same_unit:
        absolute = b - a
        relative = absolute / abs(a) if a != 0 else None
    return Change(section, subject, name, old, new, scope, absolute, relative, row)


def _parameters(old_params, new_params, scope) -> list[Change]:
    out = []
    for name, before, after, row in _rows(old_params, new_params, lambda p: p.get("name", "")):
        if before is None or after is None:
            out.append(
                Change(
                    INPUT,
                    "parameter",
                    name,
                    before and before.get("value"),
                    after and after.get("value"),
                    scope,
                    row=row,
                )
            )
        elif before.get("value") != after.get("value") or before.get("si") != after.get("si"):
            change = _numeric_change(
                INPUT,
                "parameter",
                name,
                before.get("value"),
                after.get("value"),
                scope,
                before.get("si"),
                after.get("si"),
                row,
            )
            out.append(
                change or Change(INPUT, "parameter", name, before.get("value"), after.get("value"), scope, row=row)
            )
        elif before.get("source") != after.get("source"):
            out.append(
                Change(INPUT, "parameter source", name, before.get("source"), after.get("source"), scope, row=row)
            )
    return out


def _text(section, subject, old, new, scope="", name="", row=None) -> list[Change]:
    return [] if old == new else [Change(section, subject, name, old, new, scope, row=row)]


def _quantity_text(item) -> str | None:
    value, unit = _quantity(item)
    if value is None:
        return None
    shown = f"{value:.12g}" if isinstance(value, (int, float)) else str(value)
    return f"{shown} {unit}".strip()


def _inputs(old: dict, new: dict) -> list[Change]:
    out: list[Change] = []
    old_model, new_model = old.get("model", {}), new.get("model", {})
    for part in ("at", "value"):
        before = (old_model.get("initial") or {}).get(part)
        after = (new_model.get("initial") or {}).get(part)
        if before != after:
            out.append(_numeric_change(INPUT, "initial " + part, "", before, after))
    for interval, before, after in _intervals(old, new):
        scope = interval
        if before is None or after is None:
            out.append(Change(INPUT, "interval", "", before is not None, after is not None, scope))
            continue
        out += _text(INPUT, "switch", before.get("switch"), after.get("switch"), scope)
        out += _text(INPUT, "equation", before.get("equation"), after.get("equation"), scope)
        out += _text(
            INPUT, "kind", (before.get("kind") or {}).get("name"), (after.get("kind") or {}).get("name"), scope
        )
        out += _text(
            INPUT, "forcing", (before.get("kind") or {}).get("forcing"), (after.get("kind") or {}).get("forcing"), scope
        )
        out += _parameters(before.get("parameters"), after.get("parameters"), scope)
    tolerances = _rows(old.get("tolerances"), new.get("tolerances"), lambda p: p.get("name", ""))
    for name, before, after, row in tolerances:
        out += _text(
            INPUT, "tolerance", before and before.get("as_stated"), after and after.get("as_stated"), name=name, row=row
        )
    for check, before, after, row in _criteria(old, new):
        if before is None or after is None:
            out.append(
                Change(INPUT, "criterion", check, before and before.get("text"), after and after.get("text"), row=row)
            )
        else:
            out += _text(INPUT, "criterion text", before.get("text"), after.get("text"), name=check, row=row)
            for cited in ("source", "basis"):  # where the limit comes from: a checker signs against it
                out += _text(INPUT, f"criterion {cited}", before.get(cited), after.get(cited), name=check, row=row)
    return out


def _intervals(old: dict, new: dict):
    """(scope, old part, new part) for each interval of a switched record, or the one ordinary model."""
    old_parts, new_parts = _parts(old), _parts(new)
    for k in range(max(len(old_parts), len(new_parts))):
        scope = "" if len(old_parts) == len(new_parts) == 1 else str(k + 1)
        yield (
            scope,
            old_parts[k] if k < len(old_parts) else None,
            new_parts[k] if k < len(new_parts) else None,
        )


def _parts(record: dict) -> list[dict]:
    if record.get("intervals"):
        return list(record["intervals"])
    model = record.get("model", {})
    return [
        {
            "equation": model.get("equation"),
            "parameters": model.get("parameters"),
            "kind": record.get("kind"),
            "solution": record.get("solution"),
            "time_constant": record.get("time_constant"),
            "final_value": record.get("final_value"),
        }
    ]


def _results(old: dict, new: dict) -> list[Change]:
    out: list[Change] = []
    a, b = _outcomes(old), _outcomes(new)
    unknown = (new.get("model", {}).get("unknown") or {}).get("name", "")
    for at, before, after, row in _rows(a.get("values"), b.get("values"), lambda v: _quantity_text(v.get("at"))):
        name = f"{unknown}({at})"
        out.append(_numeric_change(RESULT, "value", name, _get(before, "value"), _get(after, "value"), row=row))
    for level, before, after, row in _rows(a.get("reach"), b.get("reach"), lambda r: _quantity_text(r.get("target"))):
        out.append(_numeric_change(RESULT, "reach", level, _get(before, "at"), _get(after, "at"), row=row))
    for key, before, after, row in _rows(a.get("extremes"), b.get("extremes"), _extreme_key):
        name = f"{key[0]} {key[1]}"
        for part in ("value", "at"):
            out.append(_numeric_change(RESULT, "extreme " + part, name, _get(before, part), _get(after, part), row=row))
    for check, before, after, row in _criteria(old, new):
        worst_before, worst_after = _get(_get(before, "worst_case"), "value"), _get(_get(after, "worst_case"), "value")
        if (worst_before is not None or worst_after is not None) and not _same_as_shown(worst_before, worst_after):
            out.append(_numeric_change(RESULT, "worst value", check, worst_before, worst_after, row=row))
    for key, before, after, row in _rows(old.get("sensitivities"), new.get("sensitivities"), _sensitivity_key):
        old_value, new_value = _get(before, "derivative"), _get(after, "derivative")
        if _same_as_shown(old_value, new_value):
            continue
        out.append(_numeric_change(RESULT, "sensitivity", f"{key[0]} to {key[1]}", old_value, new_value, row=row))
    for scope, before, after in _intervals(old, new):
        if before is None or after is None:
            continue
        for subject in ("time_constant", "final_value"):
            out.append(_numeric_change(RESULT, subject, "", before.get(subject), after.get(subject), scope))
    return [c for c in out if c is not None]


def _same_as_shown(old, new) -> bool:
    """Two quantities that read the same at the digits a sheet shows. A sensitivity is often a central
    difference, and a worst case inside the box a bounded search, good to far fewer digits than the record
    keeps: only a change a reader can see counts."""
    (a, unit_a), (b, unit_b) = _quantity(old), _quantity(new)
    numeric = isinstance(a, (int, float)) and isinstance(b, (int, float))
    return numeric and unit_a == unit_b and number(a) == number(b)


def _get(item, key: str):
    """``item[key]``, None where the item (or that part of it) is absent on one side."""
    return item.get(key) if isinstance(item, dict) else None


def _sensitivity_key(sensitivity: dict) -> tuple[str, str]:
    return sensitivity.get("quantity", ""), sensitivity.get("parameter", "")


def _extreme_key(extreme: dict) -> tuple[str, str, str, str]:
    return (
        extreme.get("type", ""),
        extreme.get("of", ""),
        _quantity_text(extreme.get("from")) or "",
        _quantity_text(extreme.get("to")) or "",
    )


def _forms(old: dict, new: dict) -> list[Change]:
    out: list[Change] = []
    for scope, before, after in _intervals(old, new):
        if before is None or after is None:
            continue
        old_solution, new_solution = before.get("solution") or {}, after.get("solution") or {}
        for form in SOLUTION_FORMS:
            out += _text(FORM, form, _form_text(old_solution.get(form)), _form_text(new_solution.get(form)), scope)
    return out


def _form_text(form) -> str | None:
    return form.get("text") if isinstance(form, dict) else None


def _role_state(entry: dict | None, fingerprint: str) -> str:
    if not entry or not entry.get("signed_fingerprint"):
        return "unsigned"
    return "current" if entry["signed_fingerprint"] == fingerprint else "stale"


def _signoffs(old: dict, new: dict) -> list[Change]:
    """Each role whose state against its own record's fingerprint differs, then the fingerprint itself."""
    out = []
    old_fp, new_fp = old.get("fingerprint", ""), new.get("fingerprint", "")
    for role, before, after in _pairs(old.get("signoff"), new.get("signoff"), lambda s: s.get("role", "")):
        old_state, new_state = _role_state(before, old_fp), _role_state(after, new_fp)
        if old_state != new_state:
            signer = (after or before or {}).get("name", "")
            out.append(Change(SIGNOFF, role, signer, old_state, new_state))
    out += _text(SIGNOFF, "fingerprint", old_fp, new_fp)
    return out
