"""Accept the current text and JSON records of the demos as the golden files.

A separate step from the tests, so that no test run can write the file it compares with:
    .venv/bin/python tests/end_to_end/accept_golden.py
then read `git diff tests/end_to_end/golden/` before committing it.
"""

from __future__ import annotations

import shutil
import sys
import tempfile
from pathlib import Path

from click.testing import CliRunner

from calcsheet.cli import main

sys.path.insert(0, str(Path(__file__).parent))
from demo_verdicts import DEMOS as DEMO_SHEETS  # noqa: E402
from demo_verdicts import expected_exit  # noqa: E402

ROOT = Path(__file__).resolve().parents[2]
DEMOS = DEMO_SHEETS
GOLDEN = Path(__file__).parent / "golden"
RECORDS = ("txt", "json")


def accept() -> int:
    with tempfile.TemporaryDirectory() as out:
        result = CliRunner().invoke(main, ["build", *map(str, DEMOS), "--out", out, "--format", ",".join(RECORDS)])
        if result.exit_code != expected_exit(d.stem for d in DEMOS):
            print(result.output, file=sys.stderr)
            print("not accepted: a demo does not build with its expected verdict (demo_verdicts.py)", file=sys.stderr)
            return 1
        for demo in DEMOS:
            for ext in RECORDS:
                shutil.copyfile(Path(out) / f"{demo.stem}.{ext}", GOLDEN / f"{demo.stem}.{ext}")
    print(f"wrote {len(DEMOS) * len(RECORDS)} golden records; review `git diff {GOLDEN.relative_to(ROOT)}`")
    return 0


if __name__ == "__main__":
    sys.exit(accept())
