"""``calcsheet sweep`` end to end: the files it writes (byte-identical twice), the table as a spreadsheet reads
it, and every bad option as one line naming the file and the option, with exit 2 and nothing written."""

from __future__ import annotations

import csv
import io
import math
import shutil
from pathlib import Path

import pytest
from click.testing import CliRunner

from calcsheet.cli import main
from tests.end_to_end.demo_verdicts import copy_demo

ROOT = Path(__file__).resolve().parents[2]
BUS = ROOT / "inputs" / "bus-capacitor-bleed-down.toml"
FLANGE = ROOT / "inputs" / "flange-cool-down.toml"


def _run(args):
    return CliRunner().invoke(main, ["sweep", *args])


@pytest.fixture
def bus(tmp_path):
    """The bus demo with its capacitance written as one value (the demo works it out from the bank: a sweep
    varies a value of its own, see test_a_worked_value_cannot_be_varied)."""
    text = BUS.read_text(encoding="utf-8")
    written = 'C = { value = "2 * 2200 uF / 2"'
    assert written in text
    copy = tmp_path / BUS.name
    copy.write_text(text.replace(written, 'C = { value = "2200 uF"'), encoding="utf-8")
    return copy


def test_a_worked_value_cannot_be_varied(tmp_path):
    copy = Path(shutil.copy(BUS, tmp_path / BUS.name))
    result = _run([str(copy), "--vary", "C=1000 uF..3000 uF", "--out", str(tmp_path / "out")])
    assert result.exit_code == 2
    assert "--vary C" in result.output and "worked out from '2 * 2200 uF / 2'" in result.output
    assert not (tmp_path / "out").exists()


def test_writes_table_and_plot_beside_the_input_byte_identical_twice(bus):
    args = [str(bus), "--vary", "R=1 kohm..100 kohm", "--steps", "7", "--log", "--family", "--format", "csv,svg,png"]
    first = _run(args)
    assert first.exit_code == 0, first.output
    names = sorted(p.name for p in bus.parent.iterdir() if p != bus)
    stem = "bus-capacitor-bleed-down.sweep-R"
    assert names == sorted(f"{stem}{part}" for part in (".csv", ".svg", ".png", ".family.svg", ".family.png"))
    contents = {n: (bus.parent / n).read_bytes() for n in names}
    second = _run(args)
    assert second.exit_code == 0 and second.output == first.output
    assert {n: (bus.parent / n).read_bytes() for n in names} == contents
    # the limiting value R = 60 s / (C ln(680 V / 50 V)) = 10.45 kohm (closed form of the RC discharge,
    # common practice, no source), said for both criteria
    assert first.output.count("holds for R <= 10.45 kohm") == 2
    svg = contents[f"{stem}.svg"].decode()
    assert svg.count("calcsheet-sweep-0-limiting-0") == 1 and "calcsheet-sweep-1-limit-0" in svg
    assert contents[f"{stem}.png"].startswith(b"\x89PNG")


def test_the_table_opens_as_a_spreadsheet_reads_it(bus, tmp_path):
    out = tmp_path / "out"
    result = _run([str(bus), "--vary", "C=1000 uF..3000 uF", "--steps", "5", "--of", "v(10 s)", "--out", str(out)])
    assert result.exit_code == 0, result.output
    stem = "bus-capacitor-bleed-down.sweep-C"
    assert sorted(p.name for p in out.iterdir()) == [f"{stem}.csv", f"{stem}.svg"]
    rows = list(csv.reader(io.StringIO((out / "bus-capacitor-bleed-down.sweep-C.csv").read_text(encoding="utf-8"))))
    assert rows[0] == ["C [uF]", "v(10 s) [V]", "criterion 1: v(60 s) <= 50 V", "criterion 2: reach(50 V) <= 60 s"]
    assert len(rows) == 6
    for row in rows[1:]:
        C = float(row[0]) * 1e-6
        # v(t) = V0 exp(-t/(R C)) with R = 4.7 kohm, V0 = 680 V (common practice, no source); 6 figures written
        assert float(row[1]) == pytest.approx(680 * math.exp(-10 / (4700 * C)), rel=1e-5)
        assert row[2] in ("pass", "fail") and row[3] in ("pass", "fail")
    assert [r[0] for r in rows[1:]] == ["1000", "1500", "2000", "2500", "3000"]  # exact: no padding zeros


def test_a_what_if_is_named_as_one(bus):
    result = _run([str(bus), "--vary", "R=1 kohm..10 kohm", "--steps", "3", "--set", "C=1000 uF", "--format", "csv"])
    assert result.exit_code == 0, result.output
    assert (bus.parent / "bus-capacitor-bleed-down.whatif.sweep-R.csv").is_file()


@pytest.mark.parametrize(
    "options, key, words",
    [
        (["--vary", "Q=1 kohm..2 kohm"], "--vary Q", "is not a parameter of this model"),
        (["--vary", "R=1 V..2 V"], "--vary R", "has dimension"),
        (["--vary", "R=2 kohm..1 kohm"], "--vary R", "is not below the high end"),
        (["--vary", "R=1 kohm..1 kohm"], "--vary R", "is not below the high end"),
        (["--vary", "V_s=-1 V..1 V", "--log"], "--vary V_s", "--log needs both ends above zero"),
        (["--vary", "V_s=0 V..1 V", "--log"], "--vary V_s", "--log needs both ends above zero"),
        (["--vary", "R=1 kohm"], "--vary", "is not NAME=LOW..HIGH"),
        (["--vary", "R=1 kohm..2 kohm", "--steps", "1"], "--steps", "a sweep takes 2 to 1000"),
        (["--vary", "R=1 kohm..2 kohm", "--steps", "1001"], "--steps", "a sweep takes 2 to 1000"),
        (["--vary", "R=1 kohm..2 kohm", "--steps", "many"], "--steps", "is not a whole number"),
        (["--vary", "R=1 kohm..2 kohm", "--of", "v(60 s) <= 5 V"], "--of", "must name a quantity"),
        (["--vary", "R=1 kohm..2 kohm", "--of", "w(60 s)"], "--of", "'w' is not v(...)"),
        (["--vary", "R=1 kohm..2 kohm", "--of", "v(60 V)"], "--of", "has dimension"),
        (["--vary", "R=1 kohm..2 kohm", "--set", "R=2 kohm"], "--vary R", "is also given by --set"),
        (["--vary", "R=1 kohm..2 kohm", "--format", "pdf"], "--format", "unknown format 'pdf'"),
        (["--vary", "R=abc..2 kohm"], "--vary R", ""),
    ],
)
def test_each_bad_option_is_one_line_with_exit_2_and_nothing_written(bus, options, key, words):
    result = _run([str(bus), *options])
    assert result.exit_code == 2, result.output
    lines = result.output.strip().splitlines()
    assert len(lines) == 1, result.output
    assert key in lines[0] and words in lines[0]
    assert "Traceback" not in result.output
    assert sorted(p.name for p in bus.parent.iterdir()) == [bus.name]


def test_a_missing_input_is_one_line(tmp_path):
    result = _run([str(tmp_path / "none.toml"), "--vary", "R=1 kohm..2 kohm"])
    assert result.exit_code == 2 and "no such file" in result.output and len(result.output.strip().splitlines()) == 1


def test_kind_sweep_on_a_temperature_in_degc(tmp_path):
    flange = copy_demo(FLANGE, tmp_path)
    result = _run([str(flange), "--vary", "T_inf=0 degC..40 degC", "--steps", "9", "--format", "csv"])
    assert result.exit_code == 0, result.output
    # T(45 min) = T_inf + (480 degC - T_inf) exp(-45 min / tau), tau = rho V c_p/(h A) = 15.57 min (lumped body,
    # common practice, no source): 60 degC at T_inf = (60 - 480 e)/(1 - e) degC
    e = math.exp(-2700 / (7850 * 1.53e-3 * 490 / (15 * 0.42)))
    assert f"holds for T_inf <= {(60 - 480 * e) / (1 - e):.2f} degC" in result.output
    rows = list(csv.reader(io.StringIO((tmp_path / "flange-cool-down.sweep-T_inf.csv").read_text(encoding="utf-8"))))
    assert rows[0][:3] == ["T_inf [degC]", "reach(50 degC) [min]", "T(45 min) [degC]"]


def test_points_where_the_kind_does_not_hold_are_not_assessed(tmp_path):
    # a lumped body needs Bi = h L_c / k <= 0.1 (the kind cites standard heat-transfer texts): at h = 5000 W/(m^2*K) the
    # flange (L_c = V/A = 3.6 mm, k = 50 W/(m*K)) has Bi = 0.36, beyond the kind's limit, so no verdict there
    flange = copy_demo(FLANGE, tmp_path)
    result = _run([str(flange), "--vary", "h=5 W/(m^2*K)..5000 W/(m^2*K)", "--log", "--steps", "4", "--format", "csv"])
    assert result.exit_code == 0, result.output
    rows = list(csv.reader(io.StringIO((tmp_path / "flange-cool-down.sweep-h.csv").read_text(encoding="utf-8"))))
    assert rows[-1][-2:] == ["not assessed", "not assessed"] and rows[1][-2:] == ["fail", "fail"]
    assert "not assessed at 1 of 4 points" in result.output
