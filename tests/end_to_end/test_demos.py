"""Every demo input through the command line, with golden text and JSON records.

The tests only compare. To accept new output after a deliberate change, run the separate step
`python tests/end_to_end/accept_golden.py` and review the diff of tests/end_to_end/golden/ before
committing it. Byte-for-byte determinism is held by tests/writers/test_fresh_process_determinism.py.
"""

from __future__ import annotations

import difflib
import json
from pathlib import Path

import pytest
from click.testing import CliRunner

from calcsheet.cli import main
from tests.end_to_end.demo_verdicts import FAILS_AT_WORST_CASE, expected_exit
from tests.end_to_end.demo_verdicts import DEMOS as DEMO_SHEETS

ROOT = Path(__file__).resolve().parents[2]
DEMOS = DEMO_SHEETS
GOLDEN = Path(__file__).parent / "golden"


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    """Every demo built once, all formats."""
    first = tmp_path_factory.mktemp("first")
    result = CliRunner().invoke(main, ["build", *map(str, DEMOS), "--out", str(first)])
    return first, None, {first: result}


def test_there_are_at_least_four_demos():
    assert len(DEMOS) >= 4


def test_build_succeeds_on_every_demo(built):
    """Every demo builds; those whose criteria fail at the worst case of their tolerances say FAIL (exit 1)."""
    first, _, results = built
    result = results[first]
    assert result.exit_code == expected_exit(d.stem for d in DEMOS), result.output
    for demo in DEMOS:
        line = next(line for line in result.output.splitlines() if line.startswith(str(demo)))
        if demo.stem in FAILS_AT_WORST_CASE:
            assert line.split()[1] == "FAIL" and "FAIL at worst case" in line, line
        else:
            assert line.split()[1] == "PASS", line
    for demo in DEMOS:
        for ext in ("html", "json", "txt"):
            assert (first / f"{demo.stem}.{ext}").stat().st_size > 0
    assert not list(first.glob("*.part")), "temporary files left behind"


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
@pytest.mark.parametrize("ext", ["txt", "json"])
def test_records_match_golden_files(built, demo, ext):
    first, _, _ = built
    produced = (first / f"{demo.stem}.{ext}").read_text(encoding="utf-8")
    golden = GOLDEN / f"{demo.stem}.{ext}"
    expected = golden.read_text(encoding="utf-8") if golden.exists() else ""
    if produced != expected:
        diff = "".join(
            difflib.unified_diff(expected.splitlines(True), produced.splitlines(True), str(golden), "produced")
        )
        pytest.fail(
            f"{golden.name} differs (to accept a deliberate change: python tests/end_to_end/accept_golden.py"
            f", then review the diff):\n{diff}"
        )


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_json_record_has_the_promised_fields(built, demo):
    first, _, _ = built
    record = json.loads((first / f"{demo.stem}.json").read_text(encoding="utf-8"))
    assert record["format"] == "calcsheet-record" and record["version"] == 2
    # version 2: a switched model gives each interval's own results apart from those across the response
    intervals, across = record.get("intervals", [record]), record.get("across", record)
    for interval in intervals:
        for key in ("classification", "solution", "time_constant", "final_value", "verification"):
            assert key in interval
        assert isinstance(interval["solution"]["closed_form"], bool)
    for key in ("values", "reach", "criteria", "verification"):
        assert key in across
    for value in across["values"]:
        assert set(value["at"]) == {"value", "unit"} and set(value["value"]) == {"value", "unit"}
    for reach in across["reach"]:
        assert reach["at"] is None or set(reach["at"]) == {"value", "unit"}
    assert all(isinstance(c["passed"], bool) for c in across["criteria"])
    assert across["verification"]["passed"] is True


@pytest.mark.parametrize("demo", DEMOS, ids=lambda p: p.stem)
def test_html_sheet_carries_steps_caution_and_signoff(built, demo):
    first, _, _ = built
    html = (first / f"{demo.stem}.html").read_text(encoding="utf-8")
    assert html.count("<math") > 10
    for text in ("Integrating factor", "Verification", "licensed engineer", "Prepared", "Checked", "Approved"):
        assert text in html
    assert "<script" not in html


def test_check_prints_one_line_per_input():
    result = CliRunner().invoke(main, ["check", str(DEMOS[0])])
    assert result.exit_code == 0
    assert result.output.count("\n") == 1 and "PASS" in result.output
