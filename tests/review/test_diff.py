"""`calcsheet diff`: two sheets compared on their JSON records, the verdict flips first, end to end
(files, JSON records, a temporary git repository). Expected numbers come from the closed forms of a
first-order lag, computed here with math.exp (common practice, no source), never from calcsheet."""

from __future__ import annotations

import json
import math
import shutil
import subprocess
from pathlib import Path

import pytest

from calcsheet.review.diff import compare

from .helpers import COUPON, coupon, run, sign
from tests.end_to_end.demo_verdicts import copy_demo

BUS = Path(__file__).resolve().parents[2] / "inputs" / "bus-capacitor-bleed-down.toml"
V0, C = 680.0, 2200e-6  # the bus demo's initial voltage [V] and capacitance [F]
# Records keep 10 significant digits; the comparison adds nothing, so this is the record's rounding.
REL = 1e-9


def bus_voltage(r_ohm: float, t_s: float) -> float:
    """v(t) = v0 exp(-t / (R C)): a capacitor discharging through a resistor."""
    return V0 * math.exp(-t_s / (r_ohm * C))


def bus_pair(folder: Path, new_r: str = "12 kohm") -> tuple[Path, Path]:
    text = BUS.read_text(encoding="utf-8")
    assert 'R = { value = "4.7 kohm"' in text
    old, new = folder / "old.toml", folder / "new.toml"
    old.write_text(text, encoding="utf-8")
    new.write_text(text.replace('R = { value = "4.7 kohm"', f'R = {{ value = "{new_r}"'), encoding="utf-8")
    return old, new


def test_raising_r_flips_the_verdict_and_the_flip_comes_first(tmp_path):
    # With R = 12 kohm, tau = 26.4 s and v(60 s) = 680 exp(-60/26.4) = 70.1 V > 50 V: the criterion fails.
    assert bus_voltage(12e3, 60) > 50 > bus_voltage(4.7e3, 60)
    old, new = bus_pair(tmp_path)
    code, out, err = run("diff", old, new)
    assert code == 0, err
    lines = out.splitlines()
    flip = next(k for k, line in enumerate(lines) if '"v(60 s) <= 50 V": PASS -> FAIL' in line)
    overall = next(k for k, line in enumerate(lines) if "overall verdict: PASS -> FAIL" in line)
    parameter = next(k for k, line in enumerate(lines) if "parameter R: 4.7 kohm -> 12 kohm" in line)
    value = next(k for k, line in enumerate(lines) if "v(60 s):" in line)
    assert flip < overall < parameter < value
    assert "VERDICT FLIPS" in lines[1]
    # the relative change of R: 12 / 4.7 - 1 = +155.3 %
    assert f"+{100 * (12 / 4.7 - 1):.1f} %" in lines[parameter]


def test_json_output_carries_old_and_new_values_computed_independently(tmp_path):
    old, new = bus_pair(tmp_path)
    code, out, err = run("diff", old, new, "--format", "json", "--exit-code")
    assert code == 1, err
    (comparison,) = json.loads(out)["comparisons"]
    assert comparison["answer_changed"] is True
    changes = comparison["changes"]
    assert [c["section"] for c in changes] == sorted(
        (c["section"] for c in changes), key=["verdict", "input", "result", "form", "signoff"].index
    )
    by = {(c["section"], c["subject"], c["name"]): c for c in changes}
    for t in (10, 60, 120):
        value = by[("result", "value", f"v({t} s)")]
        assert value["old"]["value"] == pytest.approx(bus_voltage(4.7e3, t), rel=REL)
        assert value["new"]["value"] == pytest.approx(bus_voltage(12e3, t), rel=REL)
        assert value["absolute"] == pytest.approx(bus_voltage(12e3, t) - bus_voltage(4.7e3, t), rel=1e-8)
    tau = by[("result", "time_constant", "")]
    assert tau["new"]["value"] == pytest.approx(12e3 * C, rel=REL)
    # reach(50 V): t = R C ln(v0 / 50)
    reach = by[("result", "reach", "50 V")]
    assert reach["new"]["value"] == pytest.approx(12e3 * C * math.log(V0 / 50), rel=REL)
    parameter = by[("input", "parameter", "R")]
    assert (parameter["old"], parameter["new"]) == ("4.7 kohm", "12 kohm")
    assert parameter["relative"] == pytest.approx(12 / 4.7 - 1, rel=1e-12)
    assert by[("verdict", "overall", "")]["new"] is False
    assert not [c for c in changes if c["section"] == "form"]  # R C is symbolic: the forms stay


def test_markdown_has_a_table_per_section_with_the_flips_first(tmp_path):
    old, new = bus_pair(tmp_path)
    code, out, _ = run("diff", old, new, "--format", "md")
    assert code == 0
    headings = [line for line in out.splitlines() if line.startswith("### ")]
    assert headings[0] == "### **VERDICT FLIPS**"
    assert headings[1:] == ["### Inputs changed", "### Results changed", "### Sign-off consequences"]
    assert out.count("| item | old | new | change |") == len(headings)
    assert "| parameter R | 4.7 kohm | 12 kohm |" in out


def test_a_change_that_keeps_the_verdict_flips_nothing(tmp_path):
    # R = 10 kohm: v(60 s) = 680 exp(-60/22) = 44.4 V, still below 50 V
    assert bus_voltage(10e3, 60) < 50
    old, new = bus_pair(tmp_path, "10 kohm")
    code, out, _ = run("diff", old, new, "--format", "json")
    changes = json.loads(out)["comparisons"][0]["changes"]
    assert code == 0
    assert not [c for c in changes if c["section"] == "verdict"]
    assert any(c["subject"] == "value" for c in changes)


def test_identical_inputs_show_no_change_and_exit_0_with_exit_code(tmp_path):
    old, _ = bus_pair(tmp_path)
    copy = tmp_path / "copy.toml"
    copy.write_text(old.read_text(encoding="utf-8") + "\n# a comment only\n", encoding="utf-8")
    code, out, err = run("diff", old, copy, "--exit-code")
    assert (code, err) == (0, "")
    assert out.splitlines()[1:] == ["  no change"]
    code, out, _ = run("diff", old, copy, "--format", "json", "--exit-code")
    assert code == 0 and json.loads(out)["comparisons"][0]["changes"] == []


def test_json_records_compare_as_their_inputs_do(tmp_path):
    old, new = bus_pair(tmp_path)
    for path in (old, new):
        code, _, err = run("build", path, "--out", tmp_path / "out", "--format", "json")
        assert code in (0, 1), err
    from_inputs = run("diff", old, new, "--format", "json")[1]
    from_records = run("diff", tmp_path / "out" / "old.json", tmp_path / "out" / "new.json", "--format", "json")[1]
    expected = json.loads(from_inputs)["comparisons"][0]["changes"]
    assert expected and json.loads(from_records)["comparisons"][0]["changes"] == expected


def test_an_equation_change_shows_the_solution_forms_old_and_new(tmp_path):
    old = coupon(tmp_path)
    ramped = COUPON.replace('equation = "tau*dT/dt + T = T_a"', 'equation = "tau*dT/dt + T = T_a + k*t"').replace(
        "[initial]", 'k = { value = "0.1 K/s", source = "test" }\n\n[initial]'
    )
    new = coupon(tmp_path, ramped, "ramped.toml")
    code, out, err = run("diff", old, new, "--format", "json")
    assert code == 0, err
    changes = json.loads(out)["comparisons"][0]["changes"]
    forms = {c["subject"]: c for c in changes if c["section"] == "form"}
    assert "particular" in forms and "k" in forms["particular"]["new"] and "k" not in forms["particular"]["old"]
    equation = next(c for c in changes if c["subject"] == "equation")
    assert (equation["old"], equation["new"]) == ("tau*dT/dt + T = T_a", "tau*dT/dt + T = T_a + k*t")
    assert any(c["subject"] == "parameter" and c["name"] == "k" and c["old"] is None for c in changes)
    # T(30 s) with the ramp: 20 + 0.1 (t - tau) + (70 + 0.1 tau) exp(-t/tau), tau = 40 s (first-order lag, no source)
    value = next(c for c in changes if c["subject"] == "value")
    tau, t = 40.0, 30.0
    assert value["new"]["value"] == pytest.approx(20 + 0.1 * (t - tau) + (70 + 0.1 * tau) * math.exp(-t / tau), rel=REL)


def test_criteria_added_and_removed_are_inputs_not_flips():
    old = {"criteria": [{"check": "a", "text": "A", "status": "pass"}], "passed": True}
    new = {"criteria": [{"check": "b", "text": "B", "status": "fail"}], "passed": True}
    changes = compare(old, new)
    assert [(c.section, c.subject, c.name, c.old, c.new) for c in changes] == [
        ("input", "criterion", "a", "A", None),
        ("input", "criterion", "b", None, "B"),
    ]


def test_missing_file_is_one_line_exit_2(tmp_path):
    old, _ = bus_pair(tmp_path)
    code, out, err = run("diff", old, tmp_path / "absent.toml")
    assert code == 2 and out == ""
    assert err.strip().splitlines() == [f"{tmp_path / 'absent.toml'}: no such file"]


def test_a_json_file_that_is_not_a_record_is_one_line_naming_the_key(tmp_path):
    old, _ = bus_pair(tmp_path)
    other = tmp_path / "other.json"
    other.write_text('{"format": "something else"}', encoding="utf-8")
    code, _, err = run("diff", old, other)
    assert code == 2
    assert len(err.strip().splitlines()) == 1 and str(other) in err and "format" in err


def test_one_file_without_rev_is_refused(tmp_path):
    old, _ = bus_pair(tmp_path)
    code, _, err = run("diff", old)
    assert code == 2 and len(err.strip().splitlines()) == 1


needs_git = pytest.mark.skipif(shutil.which("git") is None, reason="git not installed")


def git(repo: Path, *args: str) -> str:
    return subprocess.run(["git", *args], cwd=repo, capture_output=True, text=True, check=True).stdout


def repository(tmp_path: Path) -> tuple[Path, Path]:
    repo = tmp_path / "repo"
    repo.mkdir()
    git(repo, "init", "-q")
    git(repo, "config", "user.name", "Test Engineer")
    git(repo, "config", "user.email", "test@example.invalid")
    return repo, coupon(repo)


@needs_git
def test_rev_compares_the_working_tree_with_a_commit_and_names_the_stale_role(tmp_path, monkeypatch):
    repo, path = repository(tmp_path)
    sign(path, "prepared", "T. Writer", "2026-01-05")
    sign(path, "checked", "B. Checker", "2026-01-06")
    git(repo, "add", "coupon.toml")
    git(repo, "commit", "-q", "-m", "signed")
    path.write_text(path.read_text(encoding="utf-8").replace('"40 s"', '"80 s"'), encoding="utf-8")
    monkeypatch.chdir(repo)
    code, out, err = run("diff", "--rev", "HEAD", "coupon.toml", "--format", "json", "--exit-code")
    assert code == 1, err
    (comparison,) = json.loads(out)["comparisons"]
    assert (comparison["old"], comparison["new"]) == ("HEAD:coupon.toml", "coupon.toml")
    changes = comparison["changes"]
    value = next(c for c in changes if c["subject"] == "value")
    # T(30 s) = 20 + 70 exp(-30/tau) degC (first-order lag; common practice, no source)
    assert value["old"]["value"] == pytest.approx(20 + 70 * math.exp(-30 / 40), rel=REL)
    assert value["new"]["value"] == pytest.approx(20 + 70 * math.exp(-30 / 80), rel=REL)
    stale = {c["subject"]: (c["name"], c["old"], c["new"]) for c in changes if c["section"] == "signoff"}
    assert stale["prepared"] == ("T. Writer", "current", "stale")
    assert stale["checked"] == ("B. Checker", "current", "stale")
    text = run("diff", "--rev", "HEAD", "coupon.toml")[1]
    assert "checked (B. Checker): current -> stale (re-check required)" in text
    # the revision is unchanged against itself once committed
    git(repo, "commit", "-q", "-am", "slower")
    assert run("diff", "--rev", "HEAD", "coupon.toml", "--exit-code")[0] == 0


@needs_git
def test_rev_that_does_not_exist_is_one_line_exit_2(tmp_path, monkeypatch):
    repo, path = repository(tmp_path)
    git(repo, "add", "coupon.toml")
    git(repo, "commit", "-q", "-m", "first")
    monkeypatch.chdir(repo)
    code, out, err = run("diff", "--rev", "no-such-revision", "coupon.toml")
    assert code == 2 and out == ""
    (line,) = err.strip().splitlines()
    assert line.startswith("coupon.toml: cannot read it at revision no-such-revision")


def test_rev_without_git_is_one_line_exit_2(tmp_path, monkeypatch):
    path = coupon(tmp_path)
    monkeypatch.setenv("PATH", str(tmp_path / "empty"))
    code, _, err = run("diff", "--rev", "HEAD", path)
    assert code == 2
    (line,) = err.strip().splitlines()
    assert "git is not installed" in line and str(path) in line


VALVE = Path(__file__).resolve().parents[2] / "inputs" / "valve-coil-economiser.toml"


def test_a_switched_model_reports_per_interval(tmp_path):
    # The economiser demo's second interval: an RL circuit with V_s = 24 V, L = 0.8 H and R raised from
    # 80 to 90 ohm. Its time constant is L / R and its final value V_s / R (common practice, no source).
    text = VALVE.read_text(encoding="utf-8")
    was = 'R = { value = "80 ohm", min = "78 ohm", max = "86.3 ohm"'
    assert was in text
    old, new = copy_demo(VALVE, tmp_path, "old.toml"), tmp_path / "new.toml"
    new.write_text(text.replace(was, 'R = { value = "90 ohm", min = "78 ohm", max = "96.3 ohm"'), encoding="utf-8")
    code, out, err = run("diff", old, new, "--format", "json")
    assert code == 0, err
    changes = json.loads(out)["comparisons"][0]["changes"]
    by = {(c["subject"], c["scope"]): c for c in changes if c["name"] in ("", "R")}
    assert (by[("parameter", "2")]["old"], by[("parameter", "2")]["new"]) == ("80 ohm", "90 ohm")
    assert ("parameter", "1") not in by
    tau, final = by[("time_constant", "2")], by[("final_value", "2")]
    assert tau["old"]["value"] * {"ms": 1e-3, "s": 1.0}[tau["old"]["unit"]] == pytest.approx(0.8 / 80, rel=REL)
    assert tau["new"]["value"] * {"ms": 1e-3, "s": 1.0}[tau["new"]["unit"]] == pytest.approx(0.8 / 90, rel=REL)
    assert final["new"]["value"] == pytest.approx(24 / 90, rel=REL) and final["new"]["unit"] == "A"
    tolerance = next(c for c in changes if c["subject"] == "tolerance")
    assert "86.3 ohm" in tolerance["old"] and "96.3 ohm" in tolerance["new"]


def test_a_worst_case_verdict_that_flips_is_a_verdict_flip():
    def record(verdict):
        criterion = {"check": "i(50 ms) >= 0.5 A", "status": "pass", "worst_case": {"verdict": verdict}}
        return {"criteria": [criterion], "passed": verdict == "pass"}

    changes = compare(record("pass"), record("fail"))
    assert [(c.section, c.subject, c.old, c.new) for c in changes] == [
        ("verdict", "worst case", "pass", "fail"),
        ("verdict", "overall", True, False),
    ]


def test_a_changed_source_of_a_limit_is_an_input_change(tmp_path):
    """The checker signs a limit against its source: a new clause or document is reported, the verdict is not."""
    old, new = bus_pair(tmp_path)
    text = BUS.read_text(encoding="utf-8")
    cited = 'source = "client specification CS-PD3 §4.2, touch-safe residual voltage (demo)"'
    assert text.count(cited) == 2
    new.write_text(text.replace(cited, cited.replace("§4.2", "§4.3"), 1), encoding="utf-8")
    code, out, err = run("diff", old, new, "--format", "json")
    assert code == 0, err
    (comparison,) = json.loads(out)["comparisons"]
    changes = [c for c in comparison["changes"] if c["subject"] == "criterion source"]
    assert len(changes) == 1 and changes[0]["section"] == "input"
    assert "§4.2" in changes[0]["old"] and "§4.3" in changes[0]["new"]
    assert not [c for c in comparison["changes"] if c["section"] == "verdict"]
    code, out, _ = run("diff", old, new)
    assert "source of the limit of criterion" in out and "§4.3" in out
