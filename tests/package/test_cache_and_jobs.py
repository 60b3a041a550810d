"""The build cache and the process pool of a package build, in the temporary package of test_package.py: which
change rebuilds which sheet, --force, --jobs 1 and 2 writing the same bytes, a no-op rebuild that imports no
heavy library, failures that do not stop the others, --quiet.

The expected rebuilds follow from the package's references (common practice for build caches, no source):
heat uses basis T_amb; cool uses T_amb and heat's time constant; plain uses nothing."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from calcsheet.package import cache

from test_package import COOL, HEAT, PACKAGE, run, write_package

FORMATS = "json,txt"


def rebuilt(stdout: str) -> set[str]:
    """The sheets a build derived again (a reused sheet's line ends '(unchanged)')."""
    return {
        Path(line.split(":")[0]).stem
        for line in stdout.splitlines()
        if "->" in line and "register" not in line and not line.endswith("(unchanged)")
    }


def files(out: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(out.iterdir()) if p.is_file()}


@pytest.fixture
def built(tmp_path):
    folder = tmp_path / "pkg"
    folder.mkdir()
    write_package(folder)
    out = tmp_path / "out"
    code, stdout, stderr = run("build", folder, "--out", out, "--format", FORMATS, "--jobs", "1")
    assert code == 0, stderr
    assert rebuilt(stdout) == {"heat", "cool", "plain"}
    return folder, out


def again(folder: Path, out: Path, *args) -> set[str]:
    code, stdout, stderr = run("build", folder, "--out", out, "--format", FORMATS, "--jobs", "1", *args)
    assert code == 0, stderr
    return rebuilt(stdout)


def test_a_no_op_rebuild_reuses_every_sheet_and_writes_the_same_bytes(built):
    folder, out = built
    before = files(out)
    assert again(folder, out) == set()
    assert files(out) == before


def test_a_reused_sheets_line_lists_its_files_as_the_build_did(tmp_path):
    folder = tmp_path / "pkg"
    folder.mkdir()
    write_package(folder)
    out = tmp_path / "out"
    lines = []
    for _ in range(2):
        code, stdout, stderr = run("build", folder, "--out", out, "--format", "txt,json", "--jobs", "1")
        assert code == 0, stderr
        lines.append([line.removesuffix(" (unchanged)") for line in stdout.splitlines() if "register" not in line])
    assert lines[0] == lines[1] and ".txt, " in lines[0][0]  # txt first, as asked, not in name order


def test_force_rebuilds_everything(built):
    folder, out = built
    assert again(folder, out, "--force") == {"heat", "cool", "plain"}


def test_changed_input_bytes_rebuild_the_sheet_and_its_dependants(built):
    folder, out = built
    (folder / "heat.toml").write_text(HEAT.replace('P = "10 W/m"', 'P = "12 W/m"'), encoding="utf-8")
    assert again(folder, out) == {"heat", "cool"}
    (folder / "plain.toml").write_text((folder / "plain.toml").read_text() + "\n# a comment\n", encoding="utf-8")
    assert again(folder, out) == {"plain"}


def test_a_basis_value_rebuilds_only_the_sheets_that_use_it(built):
    folder, out = built
    (folder / "package.toml").write_text(PACKAGE.replace('"24 V"', '"12 V"'), encoding="utf-8")
    assert again(folder, out) == set()  # V_ctrl is used by no sheet
    (folder / "package.toml").write_text(PACKAGE.replace('"30 degC"', '"25 degC"'), encoding="utf-8")
    assert again(folder, out) == {"heat", "cool"}


def test_an_upstream_result_rebuilds_the_user_and_an_unchanged_one_does_not(built):
    folder, out = built
    # a new title changes heat's record (so cool cites a new fingerprint) but not cool's own input
    (folder / "heat.toml").write_text(HEAT.replace('"Heating"', '"Heating run"'), encoding="utf-8")
    assert again(folder, out) == {"heat", "cool"}
    (folder / "cool.toml").write_text(COOL.replace('"Cooling"', '"Cooling run"'), encoding="utf-8")
    assert again(folder, out) == {"cool"}


def test_a_style_file_rebuilds_every_sheet(built, tmp_path):
    folder, out = built
    style = tmp_path / "house"
    style.mkdir()
    (style / "screen.css").write_text("body { color: #111; }\n", encoding="utf-8")
    assert again(folder, out, "--style", style) == {"heat", "cool", "plain"}
    assert again(folder, out, "--style", style) == set()
    (style / "screen.css").write_text("body { color: #222; }\n", encoding="utf-8")
    assert again(folder, out, "--style", style) == {"heat", "cool", "plain"}


def test_a_sheets_own_style_file_rebuilds_that_sheet_only(built):
    folder, out = built
    style = folder / "plain-house"
    style.mkdir()
    (style / "screen.css").write_text("body { color: #111; }\n", encoding="utf-8")
    plain = folder / "plain.toml"
    plain.write_text(plain.read_text(encoding="utf-8").replace("[sheet]\n", '[sheet]\nstyle = "plain-house"\n', 1))
    assert again(folder, out) == {"plain"}
    (style / "screen.css").write_text("body { color: #222; }\n", encoding="utf-8")
    assert again(folder, out) == {"plain"}
    assert again(folder, out) == set()


def test_a_library_version_rebuilds_every_sheet(built, monkeypatch):
    folder, out = built
    real = cache.library_versions()
    monkeypatch.setattr(cache, "library_versions", lambda: {**real, "sympy": real["sympy"] + ".post1"})
    assert again(folder, out) == {"heat", "cool", "plain"}


def test_a_missing_or_changed_output_rebuilds_its_sheet(built):
    folder, out = built
    (out / "plain.txt").unlink()
    (out / "heat.json").write_text("{}", encoding="utf-8")
    assert again(folder, out) == {"plain", "heat"}  # heat's record is as before, so cool is reused
    assert (out / "plain.txt").is_file()


def test_jobs_1_and_2_write_identical_bytes(tmp_path):
    folder = tmp_path / "pkg"
    folder.mkdir()
    write_package(folder)
    for jobs in ("1", "2"):
        code, _, stderr = run("build", folder, "--out", tmp_path / jobs, "--format", "json,txt,html", "--jobs", jobs)
        assert code == 0, stderr
    one, two = files(tmp_path / "1"), files(tmp_path / "2")
    assert len(one) == 3 * 3 + 3
    assert one == two
    assert files(tmp_path / "1" / cache.CACHE_FOLDER) == files(tmp_path / "2" / cache.CACHE_FOLDER)


def test_a_no_op_rebuild_imports_no_heavy_library(built):
    folder, out = built
    probe = (
        "import sys, atexit\n"
        "atexit.register(lambda: print('MODULES', ' '.join(sorted(sys.modules)), file=sys.stderr))\n"
        "from calcsheet.cli import main\n"
        f"main(['build', {str(folder)!r}, '--out', {str(out)!r}, '--format', {FORMATS!r}, '--jobs', '2'])\n"
    )
    environment = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path)}
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, env=environment)
    assert done.returncode == 0, done.stderr
    assert rebuilt(done.stdout) == set() and done.stdout.count("(unchanged)") == 3
    modules = next(line for line in done.stderr.splitlines() if line.startswith("MODULES")).split()
    roots = {m.split(".")[0] for m in modules}
    heavy = {"sympy", "scipy", "matplotlib", "weasyprint"}  # scipy too: pint is imported without it
    assert not roots & heavy, roots & heavy
    assert "calcsheet.package.register" in modules  # the register was written, from the cache


def test_a_failing_sheet_does_not_stop_the_others_and_the_exit_code_is_the_worst(tmp_path):
    folder = tmp_path / "pkg"
    folder.mkdir()
    failing = HEAT.replace('check = "final_value <= 60 degC"', 'check = "final_value <= 40 degC"')
    write_package(folder, heat=failing, plain=PLAIN_BROKEN)
    code, stdout, stderr = run("build", folder, "--out", tmp_path / "out", "--format", "json", "--jobs", "2")
    assert code == 2  # plain's input error (2) is worse than heat's failing criterion (1)
    assert "plain.toml" in stderr
    assert (tmp_path / "out" / "heat.json").is_file() and (tmp_path / "out" / "cool.json").is_file()
    assert "FAIL" in stdout


PLAIN_BROKEN = """
[sheet]
title = "Plain bleed-down"
number = "PL-1"
[model]
equation = "R*C*dv/dt + v = 0"
unknown = "v [V]"
variable = "t [s]"
[parameters]
R = "1 kohm"
C = "1 V"
[initial]
at = "0 s"
value = "100 V"
"""


def test_quiet_prints_nothing_but_errors(built):
    folder, out = built
    code, stdout, stderr = run("build", folder, "--out", out, "--format", FORMATS, "--quiet", "--force")
    assert code == 0 and stdout == "" and stderr == ""
    (folder / "plain.toml").write_text(PLAIN_BROKEN, encoding="utf-8")
    code, stdout, stderr = run("build", folder, "--out", out, "--format", FORMATS, "--quiet")
    assert code == 2 and stdout == "" and "plain.toml" in stderr


def test_a_terminal_sees_a_progress_bar_with_the_sheet_being_built_and_a_count(tmp_path):
    """On a TTY the build shows click's progress bar (label, count, the sheet's path) instead of a line per sheet.
    A pseudo-terminal stands in for the engineer's terminal."""
    import pty

    folder = write_package(tmp_path)
    probe = (
        "from calcsheet.cli import main\n"
        f"main(['build', {str(folder)!r}, '--out', {str(tmp_path / 'out')!r}, '--format', 'json', '--jobs', '1'])\n"
    )
    environment = {**os.environ, "PYTHONPATH": os.pathsep.join(sys.path), "COLUMNS": "200"}
    pid, terminal = pty.fork()
    if pid == 0:  # the child: its stdout is the pseudo-terminal
        os.execve(sys.executable, [sys.executable, "-c", probe], environment)
    shown = b""
    while True:
        try:
            chunk = os.read(terminal, 4096)
        except OSError:  # EIO: the child closed the terminal
            break
        if not chunk:
            break
        shown += chunk
    _, status = os.waitpid(pid, 0)
    text = shown.decode("utf-8", "replace")
    assert os.waitstatus_to_exitcode(status) == 0, text
    assert "building" in text and "3/3" in text, text
    assert "cool.toml" in text, text  # the sheet being built is named beside the bar
    assert "PASS" not in text.split("3/3")[0], text  # no per-sheet result lines while the bar runs
