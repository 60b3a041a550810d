"""`calcsheet sign` changes the one entry it writes; every other byte of the input stays as written."""

from __future__ import annotations

import tomllib

import pytest

from calcsheet.review.sign import with_signature
from tests.review.helpers import COUPON

FP = "ab" * 32

# Comments, odd spacing, literal strings, a table after [signoff] and a hand-written entry kept as written.
SIGNED_BY_HAND = (
    COUPON
    + """
[signoff]   # roles
prepared = { name = 'P. Hand',   date = "2026-01-02" }  # by hand
checked = "Someone"

# revision history
[[revisions]]
revision = "A"
date = "2026-01-01"
description = "First issue"
"""
)


@pytest.mark.parametrize(
    "text",
    [COUPON, COUPON.rstrip("\n"), SIGNED_BY_HAND],
    ids=["no sign-off table", "no final newline", "hand-written table"],
)
def test_only_the_signed_entry_changes(text):
    new = with_signature(text, "checked", "B. Checker", "2026-03-02", FP)
    entry = f'checked = {{name = "B. Checker", date = "2026-03-02", fingerprint = "{FP}"}}'
    assert tomllib.loads(new)["signoff"]["checked"] == {"name": "B. Checker", "date": "2026-03-02", "fingerprint": FP}
    old_lines, new_lines = text.splitlines(), new.splitlines()
    if "checked = " in text:
        index = old_lines.index('checked = "Someone"')
        assert new_lines == old_lines[:index] + [entry] + old_lines[index + 1 :]
    else:
        assert new.startswith(text) and new[len(text) :].strip() == f"[signoff]\n{entry}"


def test_signing_twice_replaces_the_entry():
    once = with_signature(SIGNED_BY_HAND, "checked", "B. Checker", "2026-03-02", FP)
    twice = with_signature(once, "checked", "B. Checker", "2026-03-09", "cd" * 32)
    assert twice == once.replace("2026-03-02", "2026-03-09").replace(FP, "cd" * 32)
