"""`calcsheet build --changes-since`: the section "Changes since revision A" and the revision marks on changed
rows, end to end in a temporary git repository and against an older file; the fingerprint does not see the
comparison; each bad input is one line with exit 2 and writes nothing.

Expected numbers come from the closed form of a first-order lag, T(t) = T_a + (T0 - T_a) exp(-t / tau),
computed here with math.exp (common practice, no source), never from calcsheet.
"""

from __future__ import annotations

import io
import json
import math
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from pypdf import PdfReader

from .helpers import COUPON, coupon, run, sign
from tests.end_to_end.demo_verdicts import copy_demo

needs_git = pytest.mark.skipif(shutil.which("git") is None, reason="git not installed")
# tau 40 s -> 120 s: T(60 s) = 20 + 70 exp(-60/120) = 62.46 degC > 60 degC, so the criterion flips to FAIL.
SLOWER = COUPON.replace('tau = { value = "40 s"', 'tau = { value = "120 s"').replace('revision = "A"', 'revision = "B"')
LEFT_MARGIN_PT = 16 / 25.4 * 72  # styles/default/print.css: @page margin-left 16 mm


def lag(tau: float, t: float) -> float:
    return 20 + 70 * math.exp(-t / tau)


def git(repo: Path, *args: str) -> str:
    return subprocess.run(["git", *args], cwd=repo, capture_output=True, text=True, check=True).stdout


@pytest.fixture
def repo(tmp_path, monkeypatch):
    """A repository holding the coupon at revision A (committed), the working copy changed to revision B."""
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tmp_path))
    folder = tmp_path / "repo"
    folder.mkdir()
    git(folder, "init", "-q")
    git(folder, "config", "user.name", "Test Engineer")
    git(folder, "config", "user.email", "test@example.invalid")
    path = coupon(folder)
    sign(path, "prepared", "T. Writer", "2026-01-05")
    git(folder, "add", "coupon.toml")
    git(folder, "commit", "-q", "-m", "revision A")
    text = path.read_text(encoding="utf-8")
    path.write_text(
        text.replace('tau = { value = "40 s"', 'tau = { value = "120 s"').replace('revision = "A"', 'revision = "B"'),
        encoding="utf-8",
    )
    monkeypatch.chdir(folder)
    return folder


def build(path, out, *extra):
    code, stdout, stderr = run("build", path, "--out", out, *extra)
    assert code in (0, 1), stdout + stderr
    stem = Path(out) / Path(path).stem

    def text(suffix: str) -> str:
        return stem.with_suffix(suffix).read_text(encoding="utf-8") if stem.with_suffix(suffix).exists() else ""

    pdf = stem.with_suffix(".pdf")
    return text(".txt"), text(".html"), json.loads(text(".json") or "{}"), pdf.read_bytes() if pdf.exists() else b""


def margin_bars(pdf: bytes) -> int:
    """Vertical strokes drawn left of the text area on any page: the revision bars (pypdf walks the content
    stream; each point is taken through the current transformation matrix to page coordinates)."""
    count = 0
    for page in PdfReader(io.BytesIO(pdf)).pages:
        start: list = []
        left = float(page.mediabox.left) + LEFT_MARGIN_PT

        def visit(op, args, cm, tm):
            nonlocal count
            if op in (b"m", b"l") and len(args) == 2:
                x, y = float(args[0]), float(args[1])
                point = (cm[0] * x + cm[2] * y + cm[4], cm[1] * x + cm[3] * y + cm[5])
                if op == b"l" and start:
                    (x0, y0), (x1, y1) = start[-1], point
                    if abs(x0 - x1) < 0.01 and abs(y1 - y0) > 5 and 0 < x0 < left - 2:
                        count += 1
                start.append(point)

        page.extract_text(visitor_operand_before=visit)
    return count


def changes_lines(txt: str) -> list[str]:
    lines = txt.splitlines()
    first = lines.index("== Changes since revision A ==")
    end = next(k for k in range(first + 1, len(lines)) if lines[k].startswith("== "))
    return lines[first:end]


def without_comparison(txt: str) -> str:
    """The text record with the section "Changes since ..." taken out and every revision bar blanked."""
    lines = txt.splitlines()
    kept, skipping = [], False
    for line in lines:
        if line.startswith("== Changes since"):
            skipping = True
        elif line.startswith("== "):
            skipping = False
        if skipping:
            continue
        kept.append("  " + line[2:] if line.startswith("| ") else line)
    return "\n".join(kept) + "\n"


@needs_git
def test_changes_since_head_words_the_diff_and_marks_the_changed_rows(repo, tmp_path):
    assert lag(40, 60) <= 60 < lag(120, 60)
    txt, html, record, pdf = build("coupon.toml", tmp_path / "since", "--changes-since", "HEAD")

    # the section, first after the outcome, with the flip in prose and the tables of the diff
    section = changes_lines(txt)
    assert txt.index("== Changes since revision A ==") < txt.index("== Response at a glance ==")
    short = git(repo, "rev-parse", "--short", "HEAD").strip()
    assert f"compared with coupon.toml as git held it at {short} (revision A)" in section[1]
    assert any('Criterion "T(60 s) <= 60 degC": FAIL now, PASS at revision A.' in line for line in section)
    assert "  parameter tau | 40 s | 120 s | +200 %" in section
    assert any(line.startswith("  prepared (T. Writer) | current | stale |") for line in section)

    # the changed rows carry the bar in the text record; unchanged rows do not
    assert re.search(r"^\| tau \| 120 s \|", txt, re.M) and re.search(r"^  T_a \| 20 degC \|", txt, re.M)
    assert re.search(r"^\| 30 s \| ", txt, re.M)
    assert re.search(r"^\| Coupon below 60 degC after one minute \|", txt, re.M)

    # the JSON record carries the facts, with numbers from the closed form
    since = record["changes_since"]
    assert (since["revision"], since["git_revision"]) == ("A", short)
    value = next(c for c in since["changes"] if c["subject"] == "value")
    assert value["old"]["value"] == pytest.approx(lag(40, 30), rel=1e-9)
    assert value["new"]["value"] == pytest.approx(lag(120, 30), rel=1e-9)

    # HTML: the same rows marked, with their revision-mark cell
    changed = re.findall(r'<tr class="changed"><td class="revision-mark"></td>(.*?)</tr>', html, re.S)
    # tau: value and SI value, each number joined to its unit by a no-break space as the HTML shows it
    assert any("<td>120\u00a0s</td><td>120\u00a0s</td>" in row for row in changed)
    assert not any("<td>20 degC</td>" in row for row in changed)  # T_a is as it was
    assert "Changes since revision A" in html

    # PDF: the section's heading and bars in the left margin, which a build without the comparison lacks
    assert "Changes since revision A" in "".join(p.extract_text() for p in PdfReader(io.BytesIO(pdf)).pages)
    plain_txt, _, plain_record, plain_pdf = build("coupon.toml", tmp_path / "plain")
    assert margin_bars(pdf) >= 3 and margin_bars(plain_pdf) == 0

    # the comparison is a document part: the fingerprint and everything else the record says are unchanged
    assert record["fingerprint"] == plain_record["fingerprint"]
    assert without_comparison(txt) == plain_txt
    assert "changes_since" not in plain_record


@needs_git
def test_the_same_build_twice_is_byte_identical(repo, tmp_path):
    first = build("coupon.toml", tmp_path / "one", "--changes-since", "HEAD", "--format", "txt,json,pdf")
    second = build("coupon.toml", tmp_path / "two", "--changes-since", "HEAD", "--format", "txt,json,pdf")
    assert first == second


@needs_git
def test_nothing_changed_says_so_and_marks_nothing(repo, tmp_path):
    git(repo, "commit", "-q", "-am", "revision B")
    txt, _, record, _ = build("coupon.toml", tmp_path / "out", "--changes-since", "HEAD", "--format", "txt,json")
    assert "== Changes since revision B ==" in txt
    assert "Nothing it states has changed since" in txt
    assert not re.search(r"^\| ", txt, re.M) and record["changes_since"]["changes"] == []


def test_changes_since_an_older_file_without_git(tmp_path, monkeypatch):
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tmp_path))
    old = coupon(tmp_path, COUPON, "old.toml")
    new = coupon(tmp_path, SLOWER, "coupon.toml")
    txt, _, record, _ = build(new, tmp_path / "out", "--changes-since", old, "--format", "txt,json")
    assert f"compared with the file {old} (revision A)" in changes_lines(txt)[1]
    assert re.search(r"^\| tau \| 120 s \|", txt, re.M)
    assert record["changes_since"]["git_revision"] == ""
    # an older JSON record serves as well, and an input that states no revision is named by its file
    build(old, tmp_path / "records", "--format", "json")
    unnamed = coupon(tmp_path, SLOWER.replace('revision = "B"\n', ""), "unnamed.toml")
    code, out, err = run(
        "build", unnamed, "--out", tmp_path / "out", "--changes-since", tmp_path / "records" / "old.json"
    )
    assert code == 1, out + err
    assert "== Changes since revision A ==" in (tmp_path / "out" / "unnamed.txt").read_text(encoding="utf-8")
    nameless_old = coupon(tmp_path, COUPON.replace('revision = "A"\n', ""), "nameless.toml")
    build(unnamed, tmp_path / "out", "--changes-since", nameless_old, "--format", "txt")
    assert f"== Changes since {nameless_old} ==" in (tmp_path / "out" / "unnamed.txt").read_text(encoding="utf-8")


def one_line_refusal(args, out: Path) -> str:
    code, stdout, stderr = run(*args)
    assert code == 2, stdout + stderr
    assert not out.exists() or not list(out.iterdir()), "a refused build must write nothing"
    (line,) = stderr.strip().splitlines()
    return line


@needs_git
def test_an_unknown_revision_is_one_line(repo, tmp_path):
    out = tmp_path / "out"
    line = one_line_refusal(("build", "coupon.toml", "--out", out, "--changes-since", "no-such-rev"), out)
    assert line == "coupon.toml: cannot read it at revision no-such-rev: no such git revision"


@needs_git
def test_a_file_git_did_not_hold_at_that_revision_is_one_line(repo, tmp_path):
    coupon(repo, SLOWER, "later.toml")
    out = tmp_path / "out"
    line = one_line_refusal(("build", "later.toml", "--out", out, "--changes-since", "HEAD"), out)
    assert line == "later.toml: cannot read it at revision HEAD: git did not hold this file at that revision"


def test_outside_a_git_repository_is_one_line(tmp_path, monkeypatch):
    monkeypatch.setenv("GIT_CEILING_DIRECTORIES", str(tmp_path))
    path, out = coupon(tmp_path), tmp_path / "out"
    line = one_line_refusal(("build", path, "--out", out, "--changes-since", "HEAD"), out)
    assert line == f"{path}: is not in a git repository, so there is no revision HEAD to compare with"


def test_an_older_file_that_does_not_load_is_one_line_naming_it(tmp_path):
    old = coupon(tmp_path, COUPON.replace('value = "20 degC"', 'value = "20 metres"'), "old.toml")
    path, out = coupon(tmp_path, SLOWER), tmp_path / "out"
    line = one_line_refusal(("build", path, "--out", out, "--changes-since", old), out)
    assert line.startswith(f"{old}: model.equation: ") and "dimension" in line


def test_one_older_file_for_several_inputs_is_refused(tmp_path):
    old = coupon(tmp_path, COUPON, "old.toml")
    first, second, out = coupon(tmp_path, SLOWER, "a.toml"), coupon(tmp_path, SLOWER, "b.toml"), tmp_path / "out"
    line = one_line_refusal(("build", first, second, "--out", out, "--changes-since", old), out)
    assert line.startswith(f"{old}: ") and "single INPUT" in line


def test_the_fingerprint_of_the_compared_sheet_leaves_the_comparison_out(tmp_path):
    # Computed afresh from the sheet that carries the section and the marks, not read from the record.
    from calcsheet.pipeline import build_sheet, with_changes_since
    from calcsheet.review.fingerprint import canonical_text, fingerprint

    old = coupon(tmp_path, COUPON, "old.toml")
    built = build_sheet(coupon(tmp_path, SLOWER))
    compared = with_changes_since(built, str(old)).sheet
    assert any(section.key == "changes" for section in compared.sections)
    assert any(any(block.changed) for s in compared.sections for block in s.blocks if hasattr(block, "changed"))
    assert fingerprint(compared) == fingerprint(built.sheet) == built.sheet.review.fingerprint
    assert "Changes since" not in canonical_text(compared)


VALVE = Path(__file__).resolve().parents[2] / "inputs" / "valve-coil-economiser.toml"


def test_a_switched_model_marks_the_interval_whose_parameter_changed(tmp_path):
    # The economiser demo's interval 2 has R = 80 ohm; raised to 90 ohm, its final value V_s / R goes from
    # 24/80 = 0.3 A to 24/90 = 0.2667 A (common practice, no source); interval 1 keeps its own R.
    text = VALVE.read_text(encoding="utf-8")
    was = 'R = { value = "80 ohm", min = "78 ohm", max = "86.3 ohm"'
    assert was in text
    old = copy_demo(VALVE, tmp_path, "old.toml")  # with the package file it takes V_s from
    new = coupon(tmp_path, text.replace(was, 'R = { value = "90 ohm", min = "78 ohm", max = "96.3 ohm"'), "valve.toml")
    txt, _, record, _ = build(new, tmp_path / "out", "--changes-since", old, "--format", "txt,json")
    sections: dict[str, list[str]] = {}
    for line in txt.splitlines():
        if line.startswith("== "):
            heading = sections.setdefault(line, [])
        elif line.startswith("| "):
            heading.append(line)
    first, second = (next(h for h in sections if h.startswith(f"== Interval {k}, step 1:")) for k in (1, 2))
    assert len(sections[second]) == 1 and sections[second][0].startswith("| R | 90 ohm |")
    assert sections[first] == []  # interval 1 is as it was
    across = sections["== Results across the switches =="]
    assert any(line.startswith("| 500 ms | 0.2667 A") for line in across)
    final = next(c for c in record["changes_since"]["changes"] if c["subject"] == "final_value")
    assert (final["scope"], final["new"]["value"]) == ("2", pytest.approx(24 / 90, rel=1e-9))
