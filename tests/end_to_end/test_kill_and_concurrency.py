"""Outputs survive a killed build and parallel builds: the README's promise of atomic writes.

A build killed with SIGKILL at any moment leaves the previous outputs byte for byte, and nothing
partial under a final name; the next build clears the killed build's temporaries. Four builds of
the same inputs into one folder at once give the outputs of a serial build. (Properties of our own
writer; no outside source.)
"""

from __future__ import annotations

import signal
import subprocess
import sys
import time
from pathlib import Path
from tests.end_to_end.demo_verdicts import copy_demo

ROOT = Path(__file__).resolve().parents[2]
DEMOS = [ROOT / "inputs" / "bus-capacitor-bleed-down.toml", ROOT / "inputs" / "flange-cool-down.toml"]
FORMATS = "html,json,txt"
# Moments to kill at, spread over start-up, derivation and writing (any moment must be safe).
KILL_AFTER_SECONDS = (0.2, 0.5, 0.9, 1.3, 1.8, 2.4, 3.0, 3.7, 4.5, 5.5, 7.0)


def _command(out: Path, inputs=DEMOS) -> list[str]:
    return [sys.executable, "-m", "calcsheet.cli", "build", *map(str, inputs), "--format", FORMATS, "--out", str(out)]


def _contents(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir()) if not p.name.startswith(".")}


def _processes_naming(text: str, patience: float = 30.0) -> list[int]:
    """Processes whose command line holds ``text`` (a forked worker keeps its build's command line), waiting up to
    ``patience`` seconds for ones that are on their way out; a bound against a hang, not a measurement."""
    proc = Path("/proc")
    if not proc.is_dir():
        return []
    deadline = time.monotonic() + patience
    while True:
        found = []
        for entry in proc.iterdir():
            if entry.name.isdigit():
                try:
                    command = (entry / "cmdline").read_bytes()
                    state = (entry / "stat").read_text().rsplit(")", 1)[1].split()[0]
                except OSError:
                    continue
                if text.encode() in command and state != "Z":
                    found.append(int(entry.name))
        if not found or time.monotonic() > deadline:
            return found
        time.sleep(0.2)


def test_a_killed_build_leaves_every_output_whole(tmp_path):
    # The inputs change between the first build and the killed ones, so each output must be either
    # the previous file or the new one, byte for byte, never a part of either.
    inputs = [copy_demo(demo, tmp_path) for demo in DEMOS]
    out, fresh = tmp_path / "out", tmp_path / "fresh"
    subprocess.run(_command(out, inputs), check=False, capture_output=True, timeout=600)
    old = _contents(out)
    for copy in inputs:
        revised = copy.read_text(encoding="utf-8").replace('title = "', 'title = "Revised: ', 1)
        copy.write_text(revised, encoding="utf-8")
    subprocess.run(_command(fresh, inputs), check=False, capture_output=True, timeout=600)
    new = _contents(fresh)
    assert len(old) == len(new) == len(DEMOS) * 3 and all(old[name] != new[name] for name in old)
    for delay in KILL_AFTER_SECONDS:
        process = subprocess.Popen(_command(out, inputs), stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(delay)
        process.send_signal(signal.SIGKILL)
        process.wait(timeout=60)
        now = _contents(out)
        assert set(now) == set(old), f"an output went missing after a kill at {delay} s"
        assert all(now[name] in (old[name], new[name]) for name in now), f"a partial file after a kill at {delay} s"
    assert _processes_naming(str(tmp_path)) == [], "a killed build left worker processes running"
    subprocess.run(_command(out, inputs), check=False, capture_output=True, timeout=600)
    assert _contents(out) == new
    assert not [p.name for p in out.iterdir() if p.name.endswith(".part")], "the killed builds' temporaries remain"


def test_four_parallel_builds_into_one_folder_match_a_serial_build(tmp_path):
    serial = tmp_path / "serial"
    subprocess.run(_command(serial), check=False, capture_output=True, timeout=600)
    shared = tmp_path / "shared"
    processes = [
        subprocess.Popen(_command(shared), stdout=subprocess.DEVNULL, stderr=subprocess.PIPE) for _ in range(4)
    ]
    for process in processes:
        _, err = process.communicate(timeout=900)
        assert process.returncode in (0, 1), err
    assert _contents(shared) == _contents(serial)
    assert not [p.name for p in shared.iterdir() if p.name.endswith(".part")]
