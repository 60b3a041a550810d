"""`calcsheet diff`: worst-case values and sensitivities old -> new in every format, and colour on a terminal
only (never when piped, never with NO_COLOR set, unless asked for with --colour always).

Expected numbers come from the closed form of a first-order lag, T(t) = T_a + (T0 - T_a) exp(-t / tau)
(common practice, no source): the worst case of "T(60 s) <= 60 degC" with tau within 10 % is the slowest
cooling, tau * 1.1, and dT(60 s)/dtau = (T0 - T_a) exp(-60 / tau) 60 / tau^2.
"""

from __future__ import annotations

import json
import math
import os
import subprocess
import sys
from pathlib import Path

import pytest

from .helpers import COUPON, coupon, run

ROOT = Path(__file__).resolve().parents[2]
REL = 1e-9  # records keep 10 significant digits
ANSI = "\x1b["


def toleranced(tau: str) -> str:
    return COUPON.replace('tau = { value = "40 s",', f'tau = {{ value = "{tau}", tolerance = "10 %",')


def worst(tau: float) -> float:
    return 20 + 70 * math.exp(-60 / (1.1 * tau))


def slope(tau: float, t: float = 60) -> float:
    return 70 * math.exp(-t / tau) * t / tau**2


@pytest.fixture(scope="module")
def pair(tmp_path_factory):
    folder = tmp_path_factory.mktemp("margin")
    return coupon(folder, toleranced("40 s"), "old.toml"), coupon(folder, toleranced("45 s"), "new.toml")


def test_worst_case_values_and_sensitivities_in_json(pair):
    code, out, err = run("diff", *pair, "--format", "json")
    assert code == 0, err
    changes = json.loads(out)["comparisons"][0]["changes"]
    by = {(c["subject"], c["name"]): c for c in changes if c["section"] == "result"}
    value = by[("worst value", "T(60 s) <= 60 degC")]
    assert value["old"]["value"] == pytest.approx(worst(40), rel=REL)
    assert value["new"]["value"] == pytest.approx(worst(45), rel=REL)
    assert value["absolute"] == pytest.approx(worst(45) - worst(40), rel=1e-7)
    sensitivity = by[("sensitivity", "T(60 s) to tau")]
    assert sensitivity["old"]["value"] == pytest.approx(slope(40), rel=REL)
    assert sensitivity["new"]["value"] == pytest.approx(slope(45), rel=REL)
    assert sensitivity["relative"] == pytest.approx(slope(45) / slope(40) - 1, rel=1e-7)


def test_worst_case_values_and_sensitivities_in_text_and_markdown(pair):
    text = run("diff", *pair)[1]
    results = text[text.index("Results changed:") :]
    assert (
        f'worst-case value of criterion "T(60 s) <= 60 degC": {worst(40):.2f} degC -> {worst(45):.2f} degC' in results
    )
    assert f"sensitivity of T(60 s) to tau: {slope(40):.4f} degC/s -> {slope(45):.4f} degC/s" in results
    markdown = run("diff", *pair, "--format", "md")[1]
    assert f'| worst-case value of criterion "T(60 s) <= 60 degC" | {worst(40):.2f} degC | {worst(45):.2f} degC |' in (
        markdown
    )
    assert f"| sensitivity of T(60 s) to tau | {slope(40):.4f} degC/s | {slope(45):.4f} degC/s |" in markdown


def test_tolerances_added_show_the_worst_case_appearing(tmp_path):
    old, new = coupon(tmp_path, COUPON, "old.toml"), coupon(tmp_path, toleranced("40 s"), "new.toml")
    changes = json.loads(run("diff", old, new, "--format", "json")[1])["comparisons"][0]["changes"]
    value = next(c for c in changes if c["subject"] == "worst value")
    assert value["old"] is None and value["new"]["value"] == pytest.approx(worst(40), rel=REL)


# ----------------------------------------------------------------------------- colour
@pytest.fixture(scope="module")
def records(tmp_path_factory):
    """Two JSON records whose criterion flips (tau 40 s -> 120 s: T(60 s) = 62.46 degC > 60 degC)."""
    folder = tmp_path_factory.mktemp("colour")
    old = coupon(folder, COUPON, "old.toml")
    new = coupon(folder, COUPON.replace('"40 s"', '"120 s"'), "new.toml")
    for path in (old, new):
        code, out, err = run("build", path, "--out", folder / "out", "--format", "json")
        assert code in (0, 1), out + err
    return folder / "out" / "old.json", folder / "out" / "new.json"


def on_a_terminal(*args, no_color: str | None = None) -> str:
    """The command line in a fresh process whose standard output is a pseudo-terminal."""
    import pty  # noqa: F401  (POSIX only: skip where there is no pseudo-terminal)

    env = {k: v for k, v in os.environ.items() if k != "NO_COLOR"}
    env["PYTHONPATH"] = os.pathsep.join(p for p in (str(ROOT), env.get("PYTHONPATH", "")) if p)
    if no_color is not None:
        env["NO_COLOR"] = no_color
    leader, follower = os.openpty()
    command = [sys.executable, "-m", "calcsheet.cli", *map(str, args)]
    with subprocess.Popen(command, stdout=follower, stderr=subprocess.PIPE, env=env) as process:
        os.close(follower)
        chunks = []
        while True:
            try:
                data = os.read(leader, 65536)
            except OSError:  # the terminal closes when the process ends
                break
            if not data:
                break
            chunks.append(data)
        os.close(leader)
        errors = process.stderr.read().decode()
        assert process.wait() == 0, errors
    return b"".join(chunks).decode("utf-8")


def test_piped_output_has_no_colour_unless_asked(records):
    piped = run("diff", *records)[1]
    assert ANSI not in piped and "PASS -> FAIL" in piped
    forced = run("diff", *records, "--colour", "always")[1]
    flip = next(line for line in forced.splitlines() if "PASS -> FAIL" in line)
    assert "\x1b[31m" in flip  # red: the verdict got worse
    assert ANSI not in run("diff", *records, "--colour", "always", "--format", "md")[1]


def test_a_terminal_gets_colour_unless_no_color_is_set(records):
    pytest.importorskip("pty")
    coloured = on_a_terminal("diff", *records)
    assert "\x1b[31m" in next(line for line in coloured.splitlines() if "PASS -> FAIL" in line)
    plain = on_a_terminal("diff", *records, no_color="1")
    assert ANSI not in plain and "PASS -> FAIL" in plain
    assert ANSI not in on_a_terminal("diff", *records, "--colour", "never")
