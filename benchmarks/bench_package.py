"""Package build timings, printed once (a benchmark, not a test): a generated package of 50 sheets made from the
demo sheets (copies renumbered per group, sharing the demo's design basis, each group's cable cool-down taking
its time constant from that group's heating sheet). Measures a cold build in every format with --jobs 1 and
--jobs 2, a no-op rebuild, and a rebuild after one basis value changes; prints whole-process wall and CPU
seconds of each ``calcsheet build``.

    PYTHONPATH=$PWD python benchmarks/bench_package.py [--sheets 50]
"""

from __future__ import annotations

import argparse
import os
import re
import resource
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

DEMOS = Path(__file__).resolve().parents[1] / "inputs"


def make_package(folder: Path, sheets: int) -> None:
    """Whole groups of the demo sheets first (so every reference has its sheet), then sheets that use none."""
    demos = sorted(p for p in DEMOS.glob("*.toml") if p.name != "package.toml")
    plain = [p for p in demos if "from =" not in p.read_text(encoding="utf-8")]
    made, group = 0, 0
    while made < sheets:
        group += 1
        room = sheets - made
        chosen = demos if room >= len(demos) else plain[:room]
        for demo in chosen:
            text = demo.read_text(encoding="utf-8")
            text = re.sub(r'(number|from) = "([^"]+)"', rf'\1 = "\2-G{group}"', text)
            (folder / f"{demo.stem}-g{group}.toml").write_text(text, encoding="utf-8")
            made += 1
    shutil.copy(DEMOS / "package.toml", folder / "package.toml")


def timed(*args: str) -> tuple[float, float, int]:
    """Whole-process wall and CPU seconds (user + system of the child) of one command."""
    before = resource.getrusage(resource.RUSAGE_CHILDREN)
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "calcsheet.cli", *args], capture_output=True, env=os.environ)
    wall = time.perf_counter() - start
    after = resource.getrusage(resource.RUSAGE_CHILDREN)
    cpu = (after.ru_utime - before.ru_utime) + (after.ru_stime - before.ru_stime)
    return wall, cpu, done.returncode


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--sheets", type=int, default=50)
    count = parser.parse_args().sheets
    with tempfile.TemporaryDirectory() as temporary:
        root = Path(temporary)
        package = root / "pkg"
        package.mkdir()
        make_package(package, count)
        runs = [
            ("cold, all formats, --jobs 1", root / "out1", ("--jobs", "1"), None),
            ("cold, all formats, --jobs 2", root / "out2", ("--jobs", "2"), None),
            ("no-op rebuild, --jobs 2", root / "out2", ("--jobs", "2"), None),
            ("one basis value changed (T_bay), --jobs 2", root / "out2", ("--jobs", "2"), "T_bay"),
        ]
        print(f"{count} sheets; {os.cpu_count()} CPUs")
        for label, out, options, change in runs:
            if change:
                file = package / "package.toml"
                file.write_text(file.read_text(encoding="utf-8").replace('"22 degC"', '"23 degC"'), encoding="utf-8")
            wall, cpu, code = timed("build", str(package), "--out", str(out), "--quiet", *options)
            print(f"{label:45s} wall {wall:7.2f} s  CPU {cpu:7.2f} s  exit {code}")


if __name__ == "__main__":
    main()
