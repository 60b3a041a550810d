"""A house style is untrusted: building someone else's calculation with its style must not run
code, read the builder's files, reach the network, or embed or link anything foreign.

The writers only read a Sheet, so most tests here build a small Sheet directly (fast); one goes
through the command line to check the user sees one line and exit 2.
"""

from __future__ import annotations

import io
import os
import shutil
import socket
import subprocess
import sys
from pathlib import Path

import pytest
from PIL import Image
from pypdf import PdfReader

from calcsheet.errors import InputError
from calcsheet.sheet.compose import sheet_labels
from calcsheet.sheet.document import Field, Outcome, Paragraph, Section, Sheet, TitleBlock
from calcsheet.writers import html, pdf

ROOT = Path(__file__).resolve().parents[2]
SECRET = "FORBIDDEN-CONTENT-5521"


def small_sheet() -> Sheet:
    return Sheet(
        title_block=TitleBlock(
            "Style isolation check",
            number=Field("Calculation", "SEC-1"),
            revision=Field("Revision", "A"),
            project=Field("Project"),
            originator=Field("Originator"),
        ),
        labels=sheet_labels(),
        outcome=Outcome(True, "All 1 criteria pass."),
        sections=(Section("basis", "Basis of the calculation", (Paragraph("A paragraph of the sheet."),)),),
        cautions=("Defer to local codes and licensed practice.",),
    )


@pytest.fixture
def listener():
    """A local TCP port that counts connections; WeasyPrint would connect before render returns."""
    server = socket.socket(socket.AF_INET, socket.SOCK_STREAM)
    server.bind(("127.0.0.1", 0))
    server.listen(16)

    def connections() -> int:
        server.setblocking(False)
        count = 0
        while True:
            try:
                connection, _ = server.accept()
            except BlockingIOError:
                return count
            connection.close()
            count += 1

    yield server.getsockname()[1], connections
    server.close()


@pytest.fixture
def places(tmp_path):
    """A style folder, and beside it files the style must never reach."""
    style = tmp_path / "house"
    style.mkdir()
    (tmp_path / "secret.css").write_text(f'body::after {{ content: "{SECRET}"; }}\n', encoding="utf-8")
    (tmp_path / "secret.txt").write_text(SECRET + "\n", encoding="utf-8")
    Image.new("RGB", (8, 8), (200, 30, 30)).save(tmp_path / "outside.png")
    Image.new("RGB", (8, 8), (30, 30, 200)).save(style / "logo.png")
    (style / "notes.txt").write_text("a file inside the style folder\n", encoding="utf-8")
    return tmp_path, style


def _write_style(style: Path, css: str = "", template: str = "") -> None:
    if css:
        (style / "print.css").write_text(css, encoding="utf-8")
    if template:
        (style / "sheet.html.j2").write_text(
            '{% extends "default/sheet.html.j2" %}\n{% block title_block %}'
            + template
            + "{{ super() }}{% endblock %}\n",
            encoding="utf-8",
        )


HOSTILE_CSS = {
    "system file as an image": 'body {{ background-image: url("file:///etc/hostname"); }}',
    "image outside by relative path": 'body {{ background-image: url("../outside.png"); }}',
    "image over http": 'body {{ background-image: url("http://127.0.0.1:{port}/logo.png"); }}',
    "system font by local()": (
        '@font-face {{ font-family: "Any"; src: local("DejaVu Sans"); }} body {{ font-family: "Any"; }}'
    ),
    "our font scheme walking out": (
        '@font-face {{ font-family: "Any"; '
        'src: url("calcsheet-font:../../../../etc/hostname"); }}'
        ' body {{ font-family: "Any"; }}'
    ),
    "symbolic link out of the style folder": 'body {{ background-image: url("link.png"); }}',
}
HOSTILE_TEMPLATE = {
    "img of a system file": '<img src="file:///etc/hostname">',
    "img outside by relative path": '<img src="../outside.png">',
    "img over http": '<img src="http://127.0.0.1:{port}/a.png">',
    "stylesheet outside": '<link rel="stylesheet" href="../secret.css">',
    "import of a file outside by file URL": '<style>@import url("file://{outside}/secret.css");</style>',
    "import of a file outside by relative path": '<style>@import url("../secret.css");</style>',
    "import over http": '<style>@import url("http://127.0.0.1:{port}/style.css");</style>',
    "import by the style's own absolute path": '<style>@import url("file://{style}/own.css");</style>',
    "object over http": '<object data="http://127.0.0.1:{port}/o.svg" type="image/svg+xml"></object>',
    "base element pointing out": '<base href="file://{outside}/"><img src="outside.png">',
}


@pytest.mark.parametrize("case", [*HOSTILE_CSS, *HOSTILE_TEMPLATE])
def test_a_style_reaching_outside_its_folder_fetches_nothing(case, places, listener):
    outside, style = places
    port, connections = listener
    (style / "link.png").symlink_to(outside / "outside.png")
    shutil.copy(outside / "secret.css", style / "own.css")
    fill = {"outside": outside, "port": port, "style": style}
    if case in HOSTILE_CSS:
        _write_style(style, css=HOSTILE_CSS[case].format(**fill))
    else:
        _write_style(style, template=HOSTILE_TEMPLATE[case].format(**fill))
    with pytest.raises(InputError) as refused:
        pdf.write(small_sheet(), style)
    assert str(style) in str(refused.value)  # names the style
    assert connections() == 0, "the style reached the network"


def test_the_refused_content_never_reaches_a_pdf_when_the_reference_is_dropped(places):
    """Control for the test above: the same CSS, copied into the style folder and imported by a
    relative URL, shows up; so a refusal is what keeps it out, not a failure to load CSS."""
    outside, style = places
    shutil.copy(outside / "secret.css", style / "own.css")
    _write_style(style, template='<style>@import url("own.css");</style>')
    text = "".join(page.extract_text() for page in PdfReader(io.BytesIO(pdf.write(small_sheet(), style))).pages)
    assert SECRET in text


def test_a_style_css_file_that_links_outside_is_refused(places):
    outside, style = places
    (style / "sheet.css").symlink_to(outside / "secret.css")
    for write in (html.write, pdf.write):
        with pytest.raises(InputError, match="outside the style folder"):
            write(small_sheet(), style)


def test_a_style_template_that_links_outside_is_refused(places):
    outside, style = places
    (outside / "evil.html.j2").write_text(SECRET, encoding="utf-8")
    (style / "sheet.html.j2").symlink_to(outside / "evil.html.j2")
    with pytest.raises(InputError, match="outside the style folder"):
        html.write(small_sheet(), style)


def test_a_style_logo_resolves_against_the_style_folder_from_any_working_folder(places, monkeypatch):
    """Relative url() and src resolve against the style folder, not the folder the build runs in;
    and where the style folder lies does not change the bytes."""
    outside, style = places
    _write_style(
        style,
        css=".title-block { background: url(logo.png) no-repeat right top; }",
        template='<img class="firm-logo" src="logo.png" alt="logo" style="width:8mm">',
    )
    elsewhere = outside / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)
    first = pdf.write(small_sheet(), style)
    images = [image for page in PdfReader(io.BytesIO(first)).pages for image in page.images]
    assert len(images) >= 2  # the <img> and the CSS background
    moved = shutil.copytree(style, outside / "deeper" / "copy of house")
    assert pdf.write(small_sheet(), moved) == first


SANDBOX_ESCAPES = {
    "cycler globals": "{{ cycler.__init__.__globals__.os.popen('touch CANARY').read() }}",
    "joiner globals": "{{ joiner.__init__.__globals__['os'].system('touch CANARY') }}",
    "lipsum globals": "{{ lipsum.__globals__['os'].popen('touch CANARY').read() }}",
    "subclasses walk": (
        "{% for c in ().__class__.__base__.__subclasses__() %}{% if c.__name__ == 'Popen' %}"
        "{{ c(['touch', 'CANARY']) }}{% endif %}{% endfor %}"
    ),
    "self reference": "{{ self.__init__.__globals__.__builtins__.__import__('os').system('touch CANARY') }}",
    "namespace class": "{{ namespace.__init__.__globals__.os.system('touch CANARY') }}",
    "format string": "{{ '{0.__init__.__globals__}'.format(cycler) }}",
}


@pytest.mark.parametrize("write", [html.write, pdf.write], ids=["html", "pdf"])
@pytest.mark.parametrize("case", list(SANDBOX_ESCAPES))
def test_a_house_template_cannot_run_code(case, write, places):
    outside, style = places
    canary = outside / "canary"
    _write_style(style, template=SANDBOX_ESCAPES[case].replace("CANARY", str(canary)))
    with pytest.raises(InputError) as refused:
        write(small_sheet(), style)
    assert str(style) in str(refused.value)
    assert not canary.exists()


def test_command_line_reports_a_hostile_style_in_one_line(places, tmp_path):
    outside, style = places
    canary = outside / "canary"
    _write_style(style, template=SANDBOX_ESCAPES["cycler globals"].replace("CANARY", str(canary)))
    out = tmp_path / "out"
    demo = ROOT / "inputs" / "bus-capacitor-bleed-down.toml"
    env = {k: v for k, v in os.environ.items() if k != "CALCSHEET_DEBUG"}
    run = subprocess.run(
        [
            sys.executable,
            "-c",
            "from calcsheet.cli import main; main()",
            "build",
            str(demo),
            "--style",
            str(style),
            "--format",
            "html",
            "--out",
            str(out),
        ],
        capture_output=True,
        text=True,
        env=env,
    )
    assert run.returncode == 2, run.stderr
    lines = run.stderr.strip().splitlines()
    assert len(lines) == 1 and str(style) in lines[0] and "Traceback" not in run.stderr, run.stderr
    assert not canary.exists()
    assert not out.exists() or not any(out.iterdir())  # nothing written, not even half a file


FOREIGN = {
    "attachment link to a file of the style": '<a rel="attachment" href="notes.txt">notes</a>',
    "attachment link to a system file": '<a rel="attachment" href="file:///etc/hostname">notes</a>',
    "attachment element": '<link rel="attachment" href="notes.txt">',
    "attachment link, rel in capitals among others": '<a rel="nofollow ATTACHMENT" href="notes.txt">n</a>',
    "link to a system file": '<a href="file:///etc/hostname">host</a>',
    "link to the web": '<a href="https://example.com/">site</a>',
}


@pytest.mark.parametrize("case", list(FOREIGN))
def test_nothing_foreign_is_attached_or_linked(case, places):
    outside, style = places
    _write_style(style, template=FOREIGN[case])
    with pytest.raises(InputError) as refused:
        pdf.write(small_sheet(), style)
    assert str(style) in str(refused.value)


def test_links_within_the_sheet_are_kept(places):
    outside, style = places
    _write_style(style, template='<a href="#basis">to the basis</a>')
    reader = PdfReader(io.BytesIO(pdf.write(small_sheet(), style)))
    assert "/EmbeddedFiles" not in reader.trailer["/Root"].get("/Names", {})
    annotations = [a.get_object() for page in reader.pages for a in page.get("/Annots", [])]
    assert annotations and all("/URI" not in a.get("/A", {}) for a in annotations)
