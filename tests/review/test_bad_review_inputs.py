"""Every new bad input: one line naming the file and the key, exit 2, nothing written."""

from __future__ import annotations

import pytest

from tests.review.helpers import COUPON, coupon, run

FP = "0" * 64
ROWS = '\n[[revisions]]\nrevision = "A"\ndate = "2026-02-01"\ndescription = "First issue"\n'

BAD = {
    "status": (
        COUPON.replace('revision = "A"', 'revision = "A"\nstatus = "final"'),
        "sheet.status",
        "'final' is not an issue status",
    ),
    "status type": (
        COUPON.replace('revision = "A"', 'revision = "A"\nstatus = 3'),
        "sheet.status",
        "not an issue status",
    ),
    "fingerprint": (
        COUPON + '\n[signoff]\nchecked = { name = "B", fingerprint = "abc" }\n',
        "signoff.checked.fingerprint",
        "64 hexadecimal digits",
    ),
    "signed without a name": (
        COUPON + f'\n[signoff]\nchecked = {{ name = "", fingerprint = "{FP}" }}\n',
        "signoff.checked.name",
        "needs the signer's name",
    ),
    "unknown sign-off key": (
        COUPON + '\n[signoff]\nchecked = { name = "B", stamp = "x" }\n',
        "signoff.checked",
        "must be a name",
    ),
    "revision differs from the last row": (
        COUPON.replace('revision = "A"', 'revision = "B"') + ROWS,
        "sheet.revision",
        "differs from the last [[revisions]] row",
    ),
    "rows out of date order": (
        COUPON.replace('revision = "A"', 'revision = "B"')
        + ROWS
        + '\n[[revisions]]\nrevision = "B"\ndate = "2026-01-15"\ndescription = "Second"\n',
        "revisions[2].date",
        "go in date order",
    ),
    "signed before the revision": (
        COUPON + ROWS + '\n[signoff]\nchecked = { name = "B", date = "2026-01-20" }\n',
        "signoff.checked.date",
        "before the date of revision A",
    ),
}


@pytest.mark.parametrize("text, key, words", BAD.values(), ids=BAD.keys())
def test_each_bad_review_input_is_one_line_with_file_and_key(tmp_path, text, key, words):
    path = coupon(tmp_path, text)
    for command in (("check", path), ("status", path), ("show", path)):
        code, out, err = run(*command)
        assert code == 2, (command, out, err)
        assert err.count("\n") == 1 and str(path) in err and key in err and words in err, err
        assert "Traceback" not in out + err


SIGN_BAD = {
    "date": (("--date", "2026-13-01"), "--date", "not a date"),
    "date before the revision": (("--date", "2026-01-01"), "--date", "before the date of revision A"),
    "empty name": (("--name", "  "), "--name", "must not be empty"),
}


@pytest.mark.parametrize("args, key, words", SIGN_BAD.values(), ids=SIGN_BAD.keys())
def test_bad_sign_options_are_one_line_and_write_nothing(tmp_path, args, key, words):
    path = coupon(tmp_path, COUPON + ROWS)
    options = {"--name": "A. Author", "--date": "2026-03-01", **dict(zip(args[::2], args[1::2]))}
    before = path.read_text(encoding="utf-8")
    code, out, err = run("sign", path, "--role", "prepared", *[x for pair in options.items() for x in pair])
    assert code == 2 and err.count("\n") == 1 and key in err and words in err and str(path) in err, err
    assert path.read_text(encoding="utf-8") == before


def test_signing_a_missing_file_is_one_line(tmp_path):
    code, out, err = run("sign", tmp_path / "none.toml", "--role", "prepared", "--name", "A")
    assert code == 2 and err.count("\n") == 1 and "none.toml" in err and "no such file" in err
