"""The bound PDF of a package, read back with pypdf (a reference PDF reader, not our own code): its pages are
the front matter and then every built sheet's own pages, its outline has an entry per sheet with the sheet's
steps nested, the contents links land on each sheet's first page, every page carries "package page N of M",
the cover shows the package's identity and sign-off block, and two builds in fresh processes give the same
bytes.

The package is built once, by the command line in a fresh interpreter, and the tests read its outputs.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from pypdf import PdfReader

from calcsheet.load.package_file import bound_file_name
from tests.package.test_package import HEAT, PLAIN, run

ROOT = Path(__file__).resolve().parents[2]

PACKAGE = """
[package]
title = "Bound test package"
number = "BT/01"
revision = "D"
project = "Bench project"
sheets = ["heat.toml", "broken.toml", "plain.toml"]

[basis]
T_amb = { value = "30 degC", source = "design basis section 3" }

[signoff]
prepared = "P. Preparer"
checked = { name = "C. Checker", date = "2024-05-02" }
"""

# A sheet that cannot build: the register and the contents list it as NOT BUILT, the bound PDF leaves it out.
BROKEN = PLAIN.replace('number = "PL-1"', 'number = "BR-1"').replace('R = "1 kohm"', 'R = "one kiloohm"')


def _write(folder: Path, package: str = PACKAGE) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    for name, text in {"package.toml": package, "heat.toml": HEAT, "broken.toml": BROKEN, "plain.toml": PLAIN}.items():
        (folder / name).write_text(text, encoding="utf-8")
    return folder


def _build(folder: Path, out: Path, cwd: Path) -> subprocess.CompletedProcess:
    env = {k: v for k, v in os.environ.items() if k != "SOURCE_DATE_EPOCH"}
    env["PYTHONPATH"] = str(ROOT)
    command = [sys.executable, "-c", "from calcsheet.cli import main; main()", "build", str(folder)]
    return subprocess.run(
        [*command, "--out", str(out), "--format", "pdf"], cwd=cwd, env=env, capture_output=True, text=True
    )


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    base = tmp_path_factory.mktemp("bound")
    folder = _write(base / "pkg")
    result = _build(folder, base / "out", base)
    assert result.returncode == 2, result.stderr  # the broken sheet is an input error; the others build
    return base, folder, base / "out"


def _bound(out: Path) -> PdfReader:
    return PdfReader(out / "BT-01.pdf")


def _outline(reader: PdfReader) -> list[tuple[str, int, list]]:
    """(title, page index, children) for each top-level entry."""
    entries = []
    for item in reader.outline:
        if isinstance(item, list):
            entries[-1][2].extend((str(c.title), reader.get_destination_page_number(c)) for c in item)
        else:
            entries.append((str(item.title), reader.get_destination_page_number(item), []))
    return entries


def _starts(reader: PdfReader) -> dict[str, int]:
    return {title.split(" ")[0].rstrip(":"): page for title, page, _ in _outline(reader) if ":" in title}


def test_the_bound_pdf_is_the_front_matter_then_each_built_sheet(built):
    _, _, out = built
    bound = _bound(out)
    heat, plain = PdfReader(out / "heat.pdf"), PdfReader(out / "plain.pdf")
    starts = _starts(bound)
    assert set(starts) == {"HT-1", "PL-1"}  # the sheet that did not build is left out
    front = starts["HT-1"]
    assert front >= 2  # a cover, then the contents
    assert starts["PL-1"] == front + len(heat.pages)
    assert len(bound.pages) == front + len(heat.pages) + len(plain.pages)
    for sheet, start in ((heat, starts["HT-1"]), (plain, starts["PL-1"])):
        for index, page in enumerate(sheet.pages):
            own = page.extract_text().strip().splitlines()[0]  # its running head stays
            assert own in bound.pages[start + index].extract_text()


def test_the_outline_has_each_sheet_with_its_steps(built):
    _, _, out = built
    bound, heat = _bound(out), PdfReader(out / "heat.pdf")
    outline = _outline(bound)
    titles = [title for title, _, _ in outline]
    assert titles == ["Cover", "Contents", "Design basis", "HT-1 rev C: Heating", "PL-1: Plain bleed-down"]
    start = _starts(bound)["HT-1"]
    (heat_steps,) = [children for title, _, children in outline if title.startswith("HT-1")]
    (own,) = [item for item in heat.outline if isinstance(item, list)]  # the sheet's steps under its title
    assert heat_steps == [(str(i.title), start + heat.get_destination_page_number(i)) for i in own]
    assert any(title.startswith("Step 1 ") for title, _ in heat_steps)


def test_the_contents_links_land_on_each_sheets_first_page(built):
    _, _, out = built
    bound = _bound(out)
    starts = _starts(bound)
    contents = _outline(bound)[1][1]
    targets = []
    for annotation in bound.pages[contents].get("/Annots", []):
        annotation = annotation.get_object()
        assert "/A" not in annotation  # no link leaves the document
        destination = annotation["/Dest"]
        targets.append(bound.get_page_number(destination[0].get_object()))
    # number and title link in each built row
    assert sorted(targets) == sorted([starts["HT-1"]] * 2 + [starts["PL-1"]] * 2)
    text = bound.pages[contents].extract_text()
    assert "NOT BUILT" in text and "BR-1" in text
    assert (
        " ".join(text.split()).count("not stated") == 2
    )  # no built sheet states its issue status; the register page says so too
    assert str(starts["PL-1"] + 1) in text  # the package page the sheet starts on


def test_every_page_carries_its_package_page_number(built):
    _, _, out = built
    bound = _bound(out)
    total = len(bound.pages)
    for index, page in enumerate(bound.pages):
        assert f"package page {index + 1} of {total}" in page.extract_text()


def test_the_cover_shows_the_package_and_its_signoff_block(built):
    _, _, out = built
    text = _bound(out).pages[0].extract_text()
    for expected in ("Bound test package", "BT/01", "Revision", "Bench project", "Package sign-off"):
        assert expected in text
    for expected in ("Prepared", "P. Preparer", "Checked", "C. Checker", "2024-05-02", "Approved"):
        assert expected in text
    assert "licensed engineer" in text


def test_the_design_basis_is_listed_with_its_source(built):
    _, _, out = built
    bound = _bound(out)
    basis_page = _outline(bound)[2][1]
    text = bound.pages[basis_page].extract_text()
    assert "T_amb" in text and "30 °C" in text and "design basis section 3" in text  # the unit as sheets print it


def test_two_builds_in_fresh_processes_give_the_same_bytes(built):
    base, folder, out = built
    elsewhere = base / "elsewhere"
    elsewhere.mkdir()
    again = _build(folder.resolve(), elsewhere / "out", elsewhere)
    assert again.returncode == 2, again.stderr
    assert (elsewhere / "out" / "BT-01.pdf").read_bytes() == (out / "BT-01.pdf").read_bytes()


def test_a_no_op_rebuild_right_after_the_first_build_binds_nothing_and_imports_no_heavy_library(built):
    """The first rebuild reads each sheet's register row back from the build cache; the bound PDF's key must
    come out equal to the one the fresh build wrote, or every first rebuild would bind again with WeasyPrint."""
    base, folder, out = built
    copy = base / "again-out"
    shutil.copytree(out, copy)
    before = {p.name: p.read_bytes() for p in copy.iterdir() if p.is_file()}
    probe = (
        "import sys, atexit\n"
        "atexit.register(lambda: print('MODULES', ' '.join(sorted(sys.modules)), file=sys.stderr))\n"
        "from calcsheet.cli import main\n"
        f"main(['build', {str(folder.resolve())!r}, '--out', {str(copy)!r}, '--format', 'pdf'])\n"
    )
    env = {**{k: v for k, v in os.environ.items() if k != "SOURCE_DATE_EPOCH"}, "PYTHONPATH": str(ROOT)}
    done = subprocess.run([sys.executable, "-c", probe], cwd=base, env=env, capture_output=True, text=True)
    assert done.returncode == 2, done.stderr  # the broken sheet still does not build
    assert "bound PDF -> " in done.stdout and done.stdout.count("(unchanged)") == 3, done.stdout  # 2 sheets, PDF
    modules = next(line for line in done.stderr.splitlines() if line.startswith("MODULES")).split()
    # not sympy: the broken sheet is not in the cache, so it is read again, and reading a sheet builds its model
    heavy = {"scipy", "matplotlib", "weasyprint", "pypdf"}
    assert not {m.split(".")[0] for m in modules} & heavy
    assert {p.name: p.read_bytes() for p in copy.iterdir() if p.is_file()} == before


def test_a_bad_package_signoff_is_one_line_naming_file_and_key(tmp_path):
    folder = _write(tmp_path / "pkg", PACKAGE.replace('prepared = "P. Preparer"', "prepared = 5"))
    code, stdout, stderr = run("build", folder, "--out", tmp_path / "out", "--format", "pdf")
    assert code == 2
    lines = stderr.strip().splitlines()
    assert len(lines) == 1 and "package.toml" in lines[0] and "signoff.prepared" in lines[0]
    assert "Traceback" not in stderr
    assert not (tmp_path / "out").exists()


def test_the_package_number_becomes_a_safe_file_name():
    assert bound_file_name("BT/01") == "BT-01.pdf"
    assert bound_file_name("RLS-CALC-01") == "RLS-CALC-01.pdf"
    assert bound_file_name("../x y") == "x-y.pdf"
