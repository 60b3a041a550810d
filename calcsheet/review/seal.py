"""Seal a composed Sheet: compute its fingerprint once and carry it, and each sign-off's state, on the Sheet.

Every writer then reads the same value from ``Sheet.review``; none computes it again.
"""

from __future__ import annotations

from calcsheet.model import SheetInfo
from calcsheet.review.fingerprint import fingerprint
from calcsheet.review.states import issue_blockers, role_states
from calcsheet.sheet.document import Sheet


def seal(sheet: Sheet, info: SheetInfo) -> Sheet:
    from calcsheet.sheet.compose import reviewed

    value = fingerprint(sheet)
    states = role_states(info.signoff, value)
    return reviewed(sheet, info, value, states, issue_blockers(info.status, states))
