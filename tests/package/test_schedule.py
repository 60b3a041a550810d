"""The step runner (package/schedule.py): ``prepare`` runs in the main process once, just before the first worker
is forked, and never when no worker is needed; the workers then find what it imported already loaded."""

from __future__ import annotations

import os
import sys

from calcsheet.package.schedule import Step, run_steps

MARK = "calcsheet_test_prepared_module"


def modules_seen(_argument) -> tuple[int, bool]:
    """In a worker: its process id, and whether what the main process prepared is already there."""
    return os.getpid(), MARK in sys.modules


def _runner(steps, jobs, settle_in_main=False):
    calls, results = [], {}

    def prepare():
        calls.append(os.getpid())
        sys.modules[MARK] = sys  # stands for a library imported once before the fork

    def start(step):
        return ("done", "settled") if settle_in_main else ("work", modules_seen, step.name)

    def finish(step, result):
        results[step.name] = result

    try:
        run_steps(steps, start, finish, jobs, prepare=prepare)
    finally:
        sys.modules.pop(MARK, None)
    return calls, results


def test_prepare_runs_once_in_the_main_process_before_the_workers_and_they_inherit_it():
    calls, results = _runner([Step(i) for i in range(4)], jobs=2)
    assert calls == [os.getpid()]
    assert all(pid != os.getpid() and prepared for pid, prepared in results.values())


def test_no_worker_no_prepare():
    assert _runner([Step(i) for i in range(3)], jobs=2, settle_in_main=True)[0] == []  # every sheet from the cache
    calls, results = _runner([Step(0), Step(1)], jobs=1)  # one job: the work runs here, importing as it goes
    assert calls == []
    assert all(pid == os.getpid() for pid, _ in results.values())


def test_the_build_prepares_the_libraries_of_its_formats():
    """What ``calcsheet build`` passes as ``prepare``: the derivation's libraries, and the writers' for HTML."""
    import subprocess

    code = (
        "import sys\n"
        "from calcsheet.pipeline import import_libraries\n"
        "import_libraries(('json',))\n"
        "print(all(m in sys.modules for m in ('sympy', 'scipy.integrate', 'pint', 'numpy')),"
        " 'matplotlib' in sys.modules, 'weasyprint' in sys.modules)\n"
        "import_libraries(('html', 'pdf'))\n"
        "print('matplotlib.figure' in sys.modules, 'jinja2' in sys.modules, 'ziamath' in sys.modules,"
        " 'weasyprint' in sys.modules)\n"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout.split("\n")
    assert out[0] == "True False False"
    assert out[1] == "True True True False"  # WeasyPrint's native libraries are left to each worker


def _main_process_modules(tmp_path, *inputs: str) -> set[str]:
    import subprocess

    probe = (
        "import sys, atexit\n"
        "atexit.register(lambda: print('MODULES', ' '.join(sorted(sys.modules)), file=sys.stderr))\n"
        "from calcsheet.cli import main\n"
        f"main(['build', *{list(inputs)!r}, '--out', {str(tmp_path / 'out')!r}, '--format', 'json', '--jobs', '2'])\n"
    )
    done = subprocess.run([sys.executable, "-c", probe], cwd=tmp_path, capture_output=True, text=True)
    line = next(line for line in done.stderr.splitlines() if line.startswith("MODULES"))
    return {m.split(".")[0] for m in line.split()[1:]}


def test_two_sheets_to_build_are_prepared_for_and_one_is_not(tmp_path):
    """The build prepares (imports in the main process) only when at least two sheets certainly build: one
    broken input, or one sheet to redo, costs the main process no import it would not use."""
    from pathlib import Path

    demos = sorted(str(p) for p in (Path(__file__).resolve().parents[2] / "inputs").glob("*-*.toml"))[:2]
    for folder in ("two", "one"):
        (tmp_path / folder).mkdir()
    assert "sympy" in _main_process_modules(tmp_path / "two", *demos)
    assert "sympy" not in _main_process_modules(tmp_path / "one", demos[0])
