"""How much headroom the symbolic budgets leave: every demo derived with each budget divided by four, as a
machine four times slower would see it, compared with the full budgets.

A measurement, not a test: whether a step finishes inside a budget depends on the machine and its load,
and a test must not. Run it after making a step slower or adding a demo:

    .venv/bin/python benchmarks/bench_budget_headroom.py [--scale 0.25]

It prints, per demo, whether the records are the same with the smaller budgets and whether any step fell
back because time ran out, then the five budgeted steps that came nearest their budgets (their share of it,
wall clock and CPU seconds; a loaded machine shows the wall clock growing); exit status 1 if any demo
differs. If one does, make the step cheaper (try cheap forms first); do not just raise the budget
(DEVELOPERS.md, "Rules we keep").
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests" / "end_to_end"))
from demo_verdicts import DEMOS  # noqa: E402

from calcsheet.derive import budget  # noqa: E402
from calcsheet.pipeline import build_sheet, render  # noqa: E402


def _records(path: Path) -> tuple[dict, bool]:
    built = build_sheet(path)
    derivations = getattr(built.derivation, "intervals", None)
    solutions = [i.derivation.solution for i in derivations] if derivations else [built.derivation.solution]
    ran_out = any(budget.BUDGET_EXCEEDED in s.fallback_codes for s in solutions)
    return render(built.sheet, ("txt", "json")), ran_out


def main() -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--scale", type=float, default=0.25, help="budget multiplier (default 0.25)")
    scale = parser.parse_args().scale
    worst = 0
    nearest = []  # (share of the budget used, demo, step, budget s, wall s, CPU s) at full budgets
    for path in DEMOS:
        started = time.process_time()
        budget.STEPS_SEEN = []
        try:
            full, _ = _records(path)
        finally:
            seen, budget.STEPS_SEEN = budget.STEPS_SEEN, None
        nearest.extend((wall / seconds, path.stem, name, seconds, wall, cpu) for name, seconds, wall, cpu in seen)
        cpu = time.process_time() - started
        budget.SCALE = scale
        try:
            small, ran_out = _records(path)
        finally:
            budget.SCALE = 1.0
        same = small == full and not ran_out
        worst = max(worst, 0 if same else 1)
        verdict = "same records" if same else ("a budget ran out" if ran_out else "records DIFFER")
        print(f"{path.stem:32s} {cpu:6.1f} CPU s at full budgets; at x{scale:g}: {verdict}")
    print("\nthe budgeted steps nearest their budgets at full budgets (wall clock, which the budgets measure):")
    for share, stem, name, seconds, wall, cpu in sorted(nearest, reverse=True)[:5]:
        print(f"  {share:6.1%} of {seconds:g} s  ({wall:.2f} s wall, {cpu:.2f} CPU s)  {stem}: {name}")
    return worst


if __name__ == "__main__":
    sys.exit(main())
