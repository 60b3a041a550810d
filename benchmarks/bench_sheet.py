"""Whole-process costs of building sheets, as ratios and CPU seconds measured in one run.

Every figure is a whole process started by subprocess (interpreter start and imports included), so it is what
a user waits for. Two commands compared run alternately, pair by pair (the order swapped in every other pair,
so a change in the machine's load falls on both), and each ratio is computed per pair; the median of the
pairs is printed. CPU seconds and peak memory come from the kernel's accounting of each child (os.wait4).

- JSON only over a bare solve: ``calcsheet build X --format json`` against a script that imports sympy and
  calls ``dsolve`` and ``checkodesol`` on the same equation, for four cases of tests/reference/corpus.py.
- The floor of that ratio: a process that only imports what every build must load (sympy, pint with numpy, and
  scipy.integrate for the independent check), against the same bare solve; and the same without scipy.
- PDF over HTML only: ``--format pdf`` against ``--format html`` for one demo.
- CPU seconds per sheet, all four formats, the demos built in one command; and peak memory of one sheet with
  its PDF.
- The sine-forced reservoir: the starter of ``calcsheet new linear_reservoir`` with its inflow made a sine
  (a ``[forcing]`` table), all four formats, CPU seconds.

Every process runs with compiled bytecode, the checkout's own modules included (compiled first), as after a
pip install. A measurement, not a test: nothing asserts, and the figures depend on the machine and its load.

    python benchmarks/bench_sheet.py [--quick] [--pairs N] [--checkout PATH]

``--checkout`` measures the calcsheet of another checkout (its code, demos and corpus), e.g. one before a
change; ``--quick`` takes two plain cases and two demos and leaves out the sine-forced reservoir.
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
# an RC charge, a sine-driven RC filter, a filling tank, a ramp
PLAIN_CASES = ("rc_step_charge", "rc_filter_sine", "brine_tank_filling", "kiln_ramp_probe")
PDF_DEMO_NAME = "bus-capacitor-bleed-down.toml"
SINE_FORCING = '\n[forcing]\nform = "sine"\noffset = "3 m^3/s"\namplitude = "1 m^3/s"\nfrequency = "1/(24 h)"\n'


def _demos() -> list[Path]:
    return sorted(p for p in (ROOT / "inputs").glob("*.toml") if p.name != "package.toml")


def _corpus():
    sys.path.insert(0, str(ROOT / "tests" / "reference"))
    import corpus  # noqa: PLC0415 - lives with the tests, found through the path above

    return corpus


def bare_solve(name: str) -> int:
    """The script an engineer would otherwise type: dsolve with the initial condition, then checkodesol."""
    corpus = _corpus()
    import sympy as sp

    case = corpus.by_name(name)
    t = sp.Symbol("t", real=True)
    y = sp.Function("y")(t)
    ode = case.reference(t, y)
    solution = sp.dsolve(ode, y, ics={y.subs(t, case.x0): case.y0})
    checked, _ = sp.checkodesol(ode, solution)
    print(json.dumps({"checked": bool(checked)}))
    return 0


# ------------------------------------------------------------------ running one whole process
def _env() -> dict:
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join(p for p in (str(ROOT), env.get("PYTHONPATH", "")) if p)
    # as a user runs it: with compiled bytecode, as pip installs the libraries (see compiled_checkout)
    env.pop("PYTHONDONTWRITEBYTECODE", None)
    return env


def compiled_checkout() -> None:
    """Compile the measured checkout's modules once, before any figure: pip compiles a package when it installs
    it, as it did every library measured here, and a process that compiled about a hundred modules from source
    would spend about 0.6 CPU s of each build on that (this project's machine sets PYTHONDONTWRITEBYTECODE)."""
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(ROOT / "calcsheet")], check=True)


def run(command: list[str]) -> dict:
    """Wall seconds, CPU seconds (user + system) and peak resident memory (MiB) of one child process."""
    start = time.perf_counter()
    # run from the checkout: ``python -m`` puts the working directory ahead of PYTHONPATH, so a child started
    # elsewhere in another checkout would measure that one's code
    child = subprocess.Popen(command, env=_env(), cwd=ROOT, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(child.pid, 0)
    wall = time.perf_counter() - start
    child.returncode = os.waitstatus_to_exitcode(status)
    errors = child.stderr.read().decode("utf-8", "replace")
    child.stderr.close()
    if child.returncode not in (0, 1):  # 1: a criterion fails, which some demos honestly do
        raise SystemExit(f"{' '.join(command)} exited {child.returncode}: {errors.strip()[-300:]}")
    return {"wall": wall, "cpu": usage.ru_utime + usage.ru_stime, "mib": usage.ru_maxrss / 1024}


def build(inputs: list[Path], out: Path, formats: str | None = None) -> list[str]:
    command = [sys.executable, "-m", "calcsheet.cli", "build", *map(str, inputs), "--out", str(out)]
    return command + (["--format", formats] if formats else [])


def paired(first: list[str], second: list[str], pairs: int) -> list[tuple[dict, dict]]:
    """``pairs`` runs of each, alternating, the order swapped in every other pair."""
    results = []
    for i in range(pairs):
        if i % 2:
            b = run(second)
            a = run(first)
        else:
            a = run(first)
            b = run(second)
        results.append((a, b))
    return results


def ratio_line(label: str, results: list[tuple[dict, dict]]) -> str:
    ratios = [a["wall"] / b["wall"] for a, b in results]
    a_wall = statistics.median(a["wall"] for a, _ in results)
    b_wall = statistics.median(b["wall"] for _, b in results)
    return (
        f"{label:46} {statistics.median(ratios):6.2f}x  (pairs {min(ratios):.2f}..{max(ratios):.2f}; "
        f"medians {a_wall:.2f} s / {b_wall:.2f} s wall)"
    )


# ------------------------------------------------------------------ the figures
def json_over_bare_solve(folder: Path, pairs: int, cases: tuple[str, ...]) -> list[str]:
    corpus = _corpus()
    lines, medians = [], []
    for name in cases:
        path = folder / f"{name}.toml"
        path.write_text(corpus.toml_text(corpus.by_name(name)), encoding="utf-8")
        ours = build([path], folder / "out", "json")
        theirs = [sys.executable, str(Path(__file__).resolve()), "--checkout", str(ROOT), "--bare-solve", name]
        results = paired(ours, theirs, pairs)
        medians.append(statistics.median(a["wall"] / b["wall"] for a, b in results))
        lines.append(ratio_line(f"  {name}", results))
    lines.append(f"{'JSON-only build / dsolve + checkodesol':46} {statistics.median(medians):6.2f}x  (median of cases)")
    return lines


FLOOR_IMPORTS = {
    "imports every build needs": "import sympy, numpy, scipy.integrate; import calcsheet.source.pint_import",
    "the same without scipy": "import sympy, numpy; import calcsheet.source.pint_import",
}


def import_floor(pairs: int, case: str) -> list[str]:
    """What no change to calcsheet's own code can go below: its libraries' imports, over the bare solve."""
    theirs = [sys.executable, str(Path(__file__).resolve()), "--checkout", str(ROOT), "--bare-solve", case]
    lines = []
    for label, statement in FLOOR_IMPORTS.items():
        results = paired([sys.executable, "-c", statement], theirs, pairs)
        lines.append(ratio_line(f"  {label} / bare solve ({case})", results))
    return lines


def pdf_over_html(folder: Path, pairs: int) -> list[str]:
    demo = ROOT / "inputs" / PDF_DEMO_NAME
    results = paired(build([demo], folder / "pdf", "pdf"), build([demo], folder / "html", "html"), pairs)
    return [ratio_line(f"PDF build / HTML-only build ({demo.stem})", results)]


def demos_all_formats(folder: Path, demos: list[Path]) -> list[str]:
    every = run(build(demos, folder / "demos"))
    one = run(build([ROOT / "inputs" / PDF_DEMO_NAME], folder / "one", "pdf"))
    return [
        f"{'CPU s per sheet, all four formats':46} {every['cpu'] / len(demos):6.2f} s  "
        f"({len(demos)} demos in one command: {every['cpu']:.1f} CPU s, {every['wall']:.1f} s wall)",
        f"{'peak memory, one sheet with PDF':46} {one['mib']:6.0f} MiB ({Path(PDF_DEMO_NAME).stem})",
    ]


def sine_reservoir(folder: Path) -> list[str]:
    starter = folder / "sine_reservoir.toml"
    new = [sys.executable, "-m", "calcsheet.cli", "new", "linear_reservoir", str(starter)]
    subprocess.run(new, env=_env(), cwd=ROOT, check=True, capture_output=True)
    text = starter.read_text(encoding="utf-8")
    lines = [line for line in text.splitlines(keepends=True) if not line.startswith("Q_in = ")]
    starter.write_text("".join(lines) + SINE_FORCING, encoding="utf-8")
    every = run(build([starter], folder / "sine"))
    text_only = run(build([starter], folder / "sine_txt", "txt"))
    return [
        f"{'sine-forced reservoir, all four formats':46} {every['cpu']:6.2f} CPU s "
        f"(text record only: {text_only['cpu']:.2f} CPU s)"
    ]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="two plain cases and two demos")
    parser.add_argument("--pairs", type=int, default=5, help="pairs per comparison (default 5)")
    parser.add_argument("--checkout", type=Path, help="measure the calcsheet of this checkout (default: this one)")
    parser.add_argument("--bare-solve", metavar="CASE", help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    global ROOT
    ROOT = args.checkout.resolve() if args.checkout else ROOT
    if args.bare_solve:
        return bare_solve(args.bare_solve)
    cases = PLAIN_CASES[:2] if args.quick else PLAIN_CASES
    demos = _demos()[:2] if args.quick else _demos()
    compiled_checkout()
    print(f"calcsheet of {ROOT}; python {sys.version.split()[0]} on {os.cpu_count()} CPUs")
    print(f"whole processes; median of {args.pairs} pairs\n")
    with tempfile.TemporaryDirectory() as directory:
        folder = Path(directory)
        for section in (
            lambda: json_over_bare_solve(folder, args.pairs, cases),
            lambda: import_floor(args.pairs, cases[0]),
            lambda: pdf_over_html(folder, args.pairs),
            lambda: demos_all_formats(folder, demos),
            lambda: [] if args.quick else sine_reservoir(folder),
        ):
            for line in section():
                print(line, flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())
