"""Each role's sign-off against today's fingerprint: current, stale or unsigned (facts; compose words them)."""

from __future__ import annotations

from dataclasses import dataclass

from calcsheet.model import SignOff
from calcsheet.load.sheet_keys import ROLES

CURRENT, STALE, UNSIGNED = "current", "stale", "unsigned"
ISSUED = "issued"


@dataclass(frozen=True)
class RoleState:
    role: str  # prepared, checked or approved
    signoff: SignOff
    state: str


def role_states(signoffs: tuple[SignOff, ...], fingerprint: str) -> tuple[RoleState, ...]:
    """A role is current when it was signed for this fingerprint, stale when for another, else unsigned."""
    by_role = {s.role.lower(): s for s in signoffs}
    states = []
    for role in ROLES:
        signoff = by_role.get(role, SignOff(role.capitalize()))
        state = UNSIGNED if not signoff.fingerprint else CURRENT if signoff.fingerprint == fingerprint else STALE
        states.append(RoleState(role, signoff, state))
    return tuple(states)


def lower_roles(role: str) -> tuple[str, ...]:
    """The roles that sign before ``role``."""
    return ROLES[: ROLES.index(role)]


def not_current(states: tuple[RoleState, ...], roles: tuple[str, ...]) -> tuple[RoleState, ...]:
    return tuple(s for s in states if s.role in roles and s.state != CURRENT)


def issue_blockers(status: str, states: tuple[RoleState, ...]) -> tuple[RoleState, ...]:
    """An issued sheet needs every role current; these are the ones that are not."""
    return not_current(states, ROLES) if status == ISSUED else ()
