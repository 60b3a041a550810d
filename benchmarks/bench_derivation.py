"""Time calcsheet's derivation against sympy.dsolve + checkodesol on the reference corpus.

Every measurement runs in a fresh interpreter, so neither side profits from caches the other
filled. For each case of tests/reference/corpus.py the worker reports the time of the work alone
(imports excluded):

- calcsheet: load the input and derive (classification, solution, numbers and verification);
- sympy: dsolve with the initial condition, then checkodesol on the result, on the same ODE.

A bare interpreter start (``python -c pass``) is measured too, as a second yardstick. sympy gets a
per-case cap; a case that runs out is reported as a timeout with the cap as a lower bound.
All figures come from one run on one machine; compare ratios, not seconds. Nothing here asserts.

    python benchmarks/bench_derivation.py [--quick] [--cap SECONDS] [--case NAME ...]
"""

from __future__ import annotations

import argparse
import json
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

CORPUS_DIR = Path(__file__).resolve().parent.parent / "tests" / "reference"
QUICK = ("rc_step_charge", "brine_tank_filling", "charge_leak_growing")


def _corpus():
    sys.path.insert(0, str(CORPUS_DIR))
    import corpus  # noqa: PLC0415 - lives with the tests, found through the path above

    return corpus


# ------------------------------------------------------------------ workers (one per process)
def work_calcsheet(name: str) -> dict:
    corpus = _corpus()
    from calcsheet.derive.derivation import derive
    from calcsheet.load.loader import load_model

    case = corpus.by_name(name)
    with tempfile.TemporaryDirectory() as directory:
        path = Path(directory) / f"{name}.toml"
        path.write_text(corpus.toml_text(case), encoding="utf-8")
        start = time.perf_counter()
        try:
            derivation = derive(load_model(path))
            outcome = "verified" if derivation.verification.passed else "verification failed"
        except Exception as error:  # noqa: BLE001 - a benchmark reports, it does not stop
            outcome = f"error: {type(error).__name__}"
        return {"seconds": time.perf_counter() - start, "outcome": outcome}


def work_sympy(name: str) -> dict:
    corpus = _corpus()
    import sympy as sp

    case = corpus.by_name(name)
    t = sp.Symbol("t", real=True)
    y = sp.Function("y")(t)
    ode = case.reference(t, y)
    start = time.perf_counter()
    solution = sp.dsolve(ode, y, ics={y.subs(t, case.x0): case.y0})
    solved = time.perf_counter()
    checked, _ = sp.checkodesol(ode, solution)
    done = time.perf_counter()
    return {
        "seconds": done - start,
        "dsolve": solved - start,
        "checkodesol": done - solved,
        "outcome": "checked" if checked else "checkodesol rejects",
    }


WORKERS = {"calcsheet": work_calcsheet, "sympy": work_sympy}


# ------------------------------------------------------------------ the parent
def run_worker(kind: str, name: str, cap: float) -> dict:
    command = [sys.executable, str(Path(__file__).resolve()), "--worker", kind, name]
    start = time.perf_counter()
    try:
        finished = subprocess.run(command, capture_output=True, text=True, timeout=cap)
    except subprocess.TimeoutExpired:
        return {"seconds": None, "wall": time.perf_counter() - start, "outcome": f"timeout (> {cap:g} s)"}
    wall = time.perf_counter() - start
    if finished.returncode != 0:
        last = (finished.stderr.strip().splitlines() or ["no message"])[-1]
        return {"seconds": None, "wall": wall, "outcome": f"crashed: {last[:60]}"}
    return {**json.loads(finished.stdout.strip().splitlines()[-1]), "wall": wall}


def interpreter_start(repeats: int = 5) -> float:
    times = []
    for _ in range(repeats):
        start = time.perf_counter()
        subprocess.run([sys.executable, "-c", "pass"], check=True)
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def seconds(entry: dict, cap: float) -> str:
    return f"{entry['seconds']:8.2f}" if entry["seconds"] is not None else f"  >{cap:5.0f}"


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help=f"only {', '.join(QUICK)}")
    parser.add_argument("--cap", type=float, default=60.0, help="seconds allowed to sympy per case (60)")
    parser.add_argument("--case", action="append", default=[], help="run only this case (repeatable)")
    parser.add_argument("--worker", nargs=2, metavar=("KIND", "CASE"), help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    if args.worker:
        kind, name = args.worker
        print(json.dumps(WORKERS[kind](name)))
        return 0

    names = args.case or (list(QUICK) if args.quick else [c.name for c in _corpus().CASES])
    bare = interpreter_start()
    print(f"python {sys.version.split()[0]}; bare interpreter start (median of 5): {bare:.3f} s")
    print("times exclude imports; wall = whole subprocess including interpreter start and imports\n")
    header = (
        f"{'case':28} {'calcsheet s':>11} {'sympy s':>8} {'(dsolve':>8} {'check)':>7} "
        f"{'calc/sympy':>10} {'calc/start':>10} {'calc wall':>9} {'sympy wall':>10}  outcomes"
    )
    print(header)
    print("-" * len(header))
    totals = {"calcsheet": 0.0, "sympy": 0.0, "sympy_bound": False}
    for name in names:
        ours = run_worker("calcsheet", name, cap=max(args.cap, 120.0))
        theirs = run_worker("sympy", name, cap=args.cap)
        totals["calcsheet"] += ours["seconds"] or 0.0
        if theirs["seconds"] is None:
            totals["sympy"] += args.cap
            totals["sympy_bound"] = True
            ratio = f"<{(ours['seconds'] or 0) / args.cap:9.3f}"
            split = f"{'':>8} {'':>7}"
        else:
            totals["sympy"] += theirs["seconds"]
            ratio = f"{ours['seconds'] / theirs['seconds']:10.2f}" if ours["seconds"] else f"{'-':>10}"
            split = f"{theirs['dsolve']:8.2f} {theirs['checkodesol']:7.2f}"
        per_start = f"{ours['seconds'] / bare:10.1f}" if ours["seconds"] else f"{'-':>10}"
        print(
            f"{name:28} {seconds(ours, 120):>11} {seconds(theirs, args.cap)} {split} {ratio} {per_start} "
            f"{ours['wall']:9.2f} {theirs['wall']:10.2f}  {ours['outcome']} / {theirs['outcome']}"
        )
    print("-" * len(header))
    bound = ">" if totals["sympy_bound"] else ""
    total_ratio = totals["calcsheet"] / totals["sympy"] if totals["sympy"] else float("nan")
    label = f"total ({len(names)} cases)"
    print(
        f"{label:28} {totals['calcsheet']:11.2f} {bound + format(totals['sympy'], '.2f'):>8}"
        f"  calcsheet/sympy {'<' if bound else ''}{total_ratio:.2f}, "
        f"calcsheet/interpreter start {totals['calcsheet'] / bare:.1f}"
    )
    if bound:
        print(f"sympy total is a lower bound: timed-out cases are counted at the cap ({args.cap:g} s)")
    return 0


if __name__ == "__main__":
    sys.exit(main())
