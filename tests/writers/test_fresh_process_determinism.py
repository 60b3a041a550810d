"""Same input, same bytes, in every format, across processes and machines.

Four demos that between them use every part of the pipeline (a free equation with an integral kept
for quadrature and extremes; a switched model kind with tolerances; derived quantities with a window
integral; a package sheet that takes a design-basis value and another sheet's result) are built twice
by the command line, each time in a fresh interpreter with no SOURCE_DATE_EPOCH, so no cache, hash
order or clock is shared. (Every demo's text and JSON records are compared with golden files by
tests/end_to_end/test_demos.py; building all of them here twice in every format would double that
cost for no new mechanism.) The second build also stands in
for another machine: another hash seed, another working folder and time zone, fresh matplotlib
and fontconfig caches, and no system fonts at all (fontconfig pointed at an empty
configuration), so a PDF or plot that leaned on the machine's fonts would come out different.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

from tests.end_to_end.demo_verdicts import DEMOS, expected_exit

ROOT = Path(__file__).resolve().parents[2]
FORMATS = ("html", "pdf", "json", "txt")
CHOSEN = ("probe-lag-gas-spike", "valve-coil-economiser", "discharge-resistor-rating", "feeder-cable-cool-down")
BUILT = [p for p in DEMOS if p.stem in CHOSEN]
NO_FONTS = '<?xml version="1.0"?>\n<!DOCTYPE fontconfig SYSTEM "fonts.dtd">\n<fontconfig>\n</fontconfig>\n'


def _build(out: Path, cwd: Path, **env_changes: str) -> subprocess.CompletedProcess:
    env = {k: v for k, v in os.environ.items() if k != "SOURCE_DATE_EPOCH"}
    env.update(env_changes)
    command = [
        sys.executable,
        "-c",
        "from calcsheet.cli import main; main()",
        "build",
        *map(str, BUILT),
        "--out",
        str(out),
        "--format",
        ",".join(FORMATS),
    ]
    return subprocess.run(command, cwd=cwd, env=env, capture_output=True, text=True)


def test_the_demos_are_byte_identical_in_two_fresh_processes(tmp_path):
    fontconfig = tmp_path / "no-fonts.conf"
    fontconfig.write_text(NO_FONTS, encoding="utf-8")
    elsewhere = tmp_path / "elsewhere"
    (elsewhere / "mpl").mkdir(parents=True)
    (elsewhere / "cache").mkdir()

    first = _build(tmp_path / "first", ROOT, PYTHONHASHSEED="1")
    second = _build(
        tmp_path / "second",
        elsewhere,
        PYTHONHASHSEED="2",
        TZ="Pacific/Kiritimati",
        FONTCONFIG_FILE=str(fontconfig),
        MPLCONFIGDIR=str(elsewhere / "mpl"),
        XDG_CACHE_HOME=str(elsewhere / "cache"),
    )
    for run in (first, second):  # two demos honestly fail at worst case: exit 1 (tests/end_to_end/demo_verdicts.py)
        assert run.returncode == expected_exit(p.stem for p in BUILT), run.stderr
        assert "Traceback" not in run.stderr, run.stderr

    assert len(BUILT) == len(CHOSEN)
    demos = sorted(p.stem for p in BUILT)
    expected = sorted(f"{stem}.{fmt}" for stem in demos for fmt in FORMATS)
    assert sorted(p.name for p in (tmp_path / "first").iterdir()) == expected
    assert sorted(p.name for p in (tmp_path / "second").iterdir()) == expected
    differing = [
        name
        for name in expected
        if (tmp_path / "first" / name).read_bytes() != (tmp_path / "second" / name).read_bytes()
    ]
    assert differing == [], f"outputs differ between the two builds: {differing}"
