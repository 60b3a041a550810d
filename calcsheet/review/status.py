"""``calcsheet status``: for each sheet, its identity, verdict and each role's sign-off state, for CI.

One line per sheet for people, or JSON for tools; ``lacking`` finds the sheets a required role has not
signed for their present content.
"""

from __future__ import annotations

import json
from dataclasses import dataclass

from calcsheet.errors import visible
from calcsheet.review.states import CURRENT, RoleState, role_states


@dataclass(frozen=True)
class SheetStatus:
    file: str
    number: str
    revision: str
    status: str
    passed: bool
    fingerprint: str
    roles: tuple[RoleState, ...]
    problem: str = ""  # why an issued sheet may not go out


def sheet_status(built) -> SheetStatus:
    info, review = built.derivation.model.sheet, built.sheet.review
    return SheetStatus(
        str(built.path),
        info.number,
        info.revision,
        info.status,
        bool(built.derivation.passed),
        review.fingerprint,
        role_states(info.signoff, review.fingerprint),
        review.problem,
    )


def status_line(s: SheetStatus) -> str:
    """'inputs/a.toml: ME-207 rev B, for check, PASS; prepared current, checked stale, approved unsigned'."""
    verdict = "PASS" if s.passed else "FAIL"
    identity = f"{visible(s.number) or '-'} rev {visible(s.revision) or '-'}, {s.status or 'no status'}, {verdict}"
    roles = ", ".join(f"{r.role} {r.state}" for r in s.roles)
    problem = f"; NOT FOR ISSUE: {s.problem}" if s.problem else ""
    return f"{s.file}: {identity}; {roles}; fingerprint {s.fingerprint[:12]}{problem}"


def status_json(statuses: list[SheetStatus]) -> str:
    rows = [
        {
            "file": s.file,
            "number": s.number,
            "revision": s.revision,
            "status": s.status,
            "verdict": "pass" if s.passed else "fail",
            "fingerprint": s.fingerprint,
            "problem": s.problem,
            "signoff": {
                r.role: {
                    "state": r.state,
                    "name": r.signoff.name,
                    "date": r.signoff.date,
                    "signed_fingerprint": r.signoff.fingerprint,
                }
                for r in s.roles
            },
        }
        for s in statuses
    ]
    return json.dumps({"sheets": rows}, indent=2, sort_keys=True, ensure_ascii=False) + "\n"


def lacking(statuses: list[SheetStatus], role: str) -> list[SheetStatus]:
    """The sheets whose ``role`` sign-off is not current."""
    return [s for s in statuses if any(r.role == role and r.state != CURRENT for r in s.roles)]
