"""What one comparison of two sheets found, as facts with no words: the shape ``review/diff.py`` fills.

It lives in the sheet layer, below review, so that compose can word a comparison on the sheet itself
(the section "Changes since revision A" and the revision marks on table rows) with the same facts
`calcsheet diff` prints.
"""

from __future__ import annotations

from dataclasses import dataclass

# Sections, in the order a reviewer reads them: what flipped first, then why, then what followed.
VERDICT, INPUT, RESULT, FORM, SIGNOFF = "verdict", "input", "result", "form", "signoff"
SECTIONS = (VERDICT, INPUT, RESULT, FORM, SIGNOFF)
# Sections whose change means the calculation's answer changed (what --exit-code reports).
ANSWER_SECTIONS = (VERDICT, RESULT)


@dataclass(frozen=True)
class Change:
    """One difference: ``subject`` is a code (``parameter``, ``value``, ``criterion`` ...), ``name`` the
    user's own label for it (a parameter's name, a check as written) and ``scope`` the interval of a
    switched model ("" for the whole sheet). ``old``/``new`` are None when the item was added/removed.
    ``row`` is the item's place in the new record's list it comes from (parameters, values, criteria...),
    None when it is no listed item or was removed: the sheet marks that row of the matching table."""

    section: str
    subject: str
    name: str
    old: object
    new: object
    scope: str = ""
    absolute: float | None = None
    relative: float | None = None
    row: int | None = None


def answer_changed(changes) -> bool:
    """True when a result or a verdict differs: the sheet's answer is no longer the one reviewed."""
    return any(c.section in ANSWER_SECTIONS for c in changes)


@dataclass(frozen=True)
class Baseline:
    """What a sheet is compared with: the earlier file as named, the revision its [sheet] stated ("" when none)
    and the git short revision it was read at ("" for a file)."""

    file: str
    revision: str = ""
    commit: str = ""
