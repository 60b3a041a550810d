"""``calcsheet watch`` in a subprocess, as an engineer uses it: a save rebuilds the sheet with the build's own line,
a bad value is one line on standard error and the watch goes on, a package rebuilds only the sheets a save reaches,
SIGINT and SIGTERM end it with exit 0 and no traceback, and ``--serve`` shows the page over loopback, signals its
reload after a save and serves nothing outside the out folder. (Properties of our own command; no outside source.)

Every wait polls the command's output until what it waits for is there, with a generous deadline that only guards
against a hang: nothing here depends on how fast a round is. Saves are made as editors make them (a whole file
renamed into place) with the file's time moved forward, so that --poll sees each save on any file system.
"""

from __future__ import annotations

import hashlib
import http.client
import json
import os
import re
import signal
import socket
import subprocess
import sys
import time
import urllib.error
import urllib.request
from pathlib import Path

import pytest

from tests.end_to_end.demo_verdicts import copy_demo
from tests.package.test_package import write_package

ROOT = Path(__file__).resolve().parents[2]
BUS = ROOT / "inputs" / "bus-capacitor-bleed-down.toml"  # R = 4.7 kohm: v(60 s) well below 50 V, both criteria pass
FORMATS = "html,json,txt"
DEADLINE_SECONDS = 120  # a guard against a hang, not a measurement
# The subprocesses run in temporary folders: this checkout first on their path, whatever is installed.
ENV = {**os.environ, "PYTHONPATH": os.pathsep.join(p for p in (str(ROOT), os.environ.get("PYTHONPATH", "")) if p)}


class Watching:
    """A running ``python -m calcsheet watch``, its standard output and error written to files read as they grow."""

    def __init__(self, folder: Path, *args: str) -> None:
        self.out_file, self.err_file = folder / "watch.stdout", folder / "watch.stderr"
        with open(self.out_file, "wb") as out, open(self.err_file, "wb") as err:
            self.process = subprocess.Popen(
                [sys.executable, "-m", "calcsheet", "watch", *args], stdout=out, stderr=err, cwd=folder, env=ENV
            )

    def stdout(self) -> str:
        return self.out_file.read_text(encoding="utf-8")

    def stderr(self) -> str:
        return self.err_file.read_text(encoding="utf-8")

    def wait_for(self, condition, what: str) -> None:
        """Poll until ``condition(stdout, stderr)`` holds; fail if the watch ends first or the deadline passes."""
        deadline = time.monotonic() + DEADLINE_SECONDS
        while not condition(self.stdout(), self.stderr()):
            if self.process.poll() is not None:
                pytest.fail(f"the watch ended (exit {self.process.returncode}) before {what}\n{self._shown()}")
            if time.monotonic() > deadline:
                pytest.fail(f"no sign of {what} within {DEADLINE_SECONDS} s\n{self._shown()}")
            time.sleep(0.1)

    def stop(self, signum: int = signal.SIGINT) -> int:
        self.process.send_signal(signum)
        return self.process.wait(timeout=DEADLINE_SECONDS)

    def kill(self) -> None:
        if self.process.poll() is None:
            self.process.kill()
            self.process.wait()

    def _shown(self) -> str:
        return f"--- stdout\n{self.stdout()}--- stderr\n{self.stderr()}"


def _save(path: Path, text: str) -> None:
    """Save as an editor does: the whole text renamed into place, its time at least a second past the last one."""
    before = path.stat().st_mtime_ns
    temporary = path.with_name(path.name + ".saving~")
    temporary.write_text(text, encoding="utf-8")
    stamp = max(temporary.stat().st_mtime_ns, before + 1_000_000_000)
    os.utime(temporary, ns=(stamp, stamp))
    os.replace(temporary, path)


def _built(stdout: str, stem: str) -> list[str]:
    """The build lines (``path: VERDICT (...) -> files``) of the sheet ``stem``."""
    return [line for line in stdout.splitlines() if line.split(":")[0].endswith(f"{stem}.toml") and " -> " in line]


def _after_watching(stdout: str) -> str:
    return stdout.split("for changes (Ctrl-C stops)\n", 1)[1] if "for changes (Ctrl-C stops)\n" in stdout else ""


def _outputs(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir()) if p.is_file() and not p.name.startswith(".")}


def test_a_save_rebuilds_an_error_is_reported_and_sigint_stops(tmp_path):
    sheet = copy_demo(BUS, tmp_path)
    out = tmp_path / "out"
    watching = Watching(tmp_path, str(sheet), "--out", str(out), "--format", FORMATS, "--poll")
    try:
        watching.wait_for(lambda o, e: "for changes (Ctrl-C stops)" in o, "the watch starting")
        first = _built(watching.stdout(), sheet.stem)
        assert len(first) == 1 and ": PASS (2 of 2 criteria pass" in first[0], watching.stdout()
        assert sorted(_outputs(out)) == [f"{sheet.stem}.{f}" for f in ("html", "json", "txt")]

        # A larger discharge resistor: tau = 47 kohm * 2.2 mF = 103 s, so 680 V is still about 380 V at 60 s.
        text = sheet.read_text(encoding="utf-8")
        _save(sheet, text.replace('R = { value = "4.7 kohm"', 'R = { value = "47 kohm"'))
        watching.wait_for(lambda o, e: len(_built(o, sheet.stem)) == 2, "the rebuild after the save")
        assert ": FAIL (0 of 2 criteria pass" in _built(watching.stdout(), sheet.stem)[1]
        record = json.loads((out / f"{sheet.stem}.json").read_text(encoding="utf-8"))
        assert [p["si"] for p in record["model"]["parameters"] if p["name"] == "R"] == [47000.0]
        after_change = _outputs(out)

        _save(sheet, text.replace('R = { value = "4.7 kohm"', 'R = { value = "47 kohmz"'))
        watching.wait_for(lambda o, e: "kohmz" in e, "the error line")
        problem = [line for line in watching.stderr().splitlines() if "kohmz" in line]
        assert len(problem) == 1 and problem[0].startswith(f"{sheet}: parameters.R: unknown unit 'kohmz'"), problem
        assert "Traceback" not in watching.stderr()
        assert _outputs(out) == after_change  # the failed round wrote nothing

        _save(sheet, text)  # fixed: back to 4.7 kohm
        watching.wait_for(lambda o, e: len(_built(o, sheet.stem)) == 3, "the rebuild after the fix")
        assert ": PASS (2 of 2 criteria pass" in _built(watching.stdout(), sheet.stem)[2]

        assert watching.stop(signal.SIGINT) == 0
        assert "Traceback" not in watching.stderr() and "KeyboardInterrupt" not in watching.stderr()
        assert watching.stdout().endswith("stopped watching\n")
    finally:
        watching.kill()


def test_sigterm_stops_cleanly_even_while_a_round_may_be_running(tmp_path):
    # The signal goes right after a save, so the round may be waiting, building or writing: each ends the same way.
    sheet = copy_demo(BUS, tmp_path)
    watching = Watching(tmp_path, str(sheet), "--out", str(tmp_path / "out"), "--format", "json", "--poll")
    try:
        watching.wait_for(lambda o, e: "for changes (Ctrl-C stops)" in o, "the watch starting")
        _save(sheet, sheet.read_text(encoding="utf-8").replace('"4.7 kohm"', '"5.6 kohm"'))
        assert watching.stop(signal.SIGTERM) == 0
        assert watching.stderr() == ""
        assert watching.stdout().endswith("stopped watching\n")
        assert not list((tmp_path / "out").glob(".*.part"))  # no temporary left behind
    finally:
        watching.kill()


def test_a_package_rebuilds_only_the_sheets_a_save_reaches(tmp_path):
    # cool.toml takes heat.toml's time constant; plain.toml uses neither (tests/package/test_package.py).
    (tmp_path / "package").mkdir()
    package = write_package(tmp_path / "package")
    out = tmp_path / "out"
    watching = Watching(tmp_path, "package", "--out", "out", "--format", "json,txt", "--poll")
    try:
        watching.wait_for(lambda o, e: "for changes (Ctrl-C stops)" in o, "the watch starting")
        assert [len(_built(watching.stdout(), s)) for s in ("heat", "cool", "plain")] == [1, 1, 1]
        assert (out / "register.csv").is_file()

        heat = package / "heat.toml"
        _save(heat, heat.read_text(encoding="utf-8").replace('R_th = "2 K*m/W"', 'R_th = "2.2 K*m/W"'))
        watching.wait_for(lambda o, e: _built(_after_watching(o), "cool"), "the dependant sheet rebuilt")
        plain = package / "plain.toml"
        _save(plain, "# a comment changes the input, not the result\n" + plain.read_text(encoding="utf-8"))
        watching.wait_for(lambda o, e: _built(_after_watching(o), "plain"), "the edited sheet rebuilt")
        assert watching.stop(signal.SIGINT) == 0

        later = _after_watching(watching.stdout())
        rebuilt = [line.split(":")[0] for line in later.splitlines() if " -> " in line]
        assert rebuilt == ["package/heat.toml", "package/cool.toml", "package/plain.toml"], later
        tau = json.loads((out / "heat.json").read_text(encoding="utf-8"))["time_constant"]
        assert tau == {"unit": "min", "value": pytest.approx(2.2 * 1000 / 60, rel=1e-8)}  # R_th * C_th = 2200 s
        assert watching.stderr() == ""
    finally:
        watching.kill()


def _get(url: str) -> tuple[int, bytes]:
    try:
        with urllib.request.urlopen(url, timeout=DEADLINE_SECONDS) as response:
            return response.status, response.read()
    except urllib.error.HTTPError as error:
        return error.code, error.read()


def _raw_get(port: int, path: str, host: str | None = None) -> int:
    """A request with the path sent exactly as written (urllib would tidy it)."""
    connection = http.client.HTTPConnection("127.0.0.1", port, timeout=DEADLINE_SECONDS)
    try:
        connection.putrequest("GET", path, skip_host=True)
        connection.putheader("Host", host or f"127.0.0.1:{port}")
        connection.endheaders()
        return connection.getresponse().status
    finally:
        connection.close()


SCRIPT = re.compile(rb"<script>\(function \(\) \{ var events = new EventSource\(\"([^\"]+)\"\);.*?</script>\n", re.S)


def test_serve_shows_the_page_signals_its_reload_and_a_problem_and_serves_only_the_out_folder(tmp_path):
    sheet = copy_demo(BUS, tmp_path)
    out = tmp_path / "out"
    watching = Watching(tmp_path, str(sheet), "--out", str(out), "--format", FORMATS, "--serve")
    try:
        watching.wait_for(lambda o, e: "for changes (Ctrl-C stops)" in o, "the watch starting")
        base = re.search(r"at (http://127\.0\.0\.1:(\d+)/) ", watching.stdout())
        assert base, watching.stdout()
        url, port = base.group(1), int(base.group(2))
        page_url = url + f"{sheet.stem}.html"

        status, page = _get(page_url)
        assert status == 200 and b"PASS: Residual bus voltage" in page
        on_disk = (out / f"{sheet.stem}.html").read_bytes()
        assert b"EventSource" not in on_disk  # the script is added to the response only
        assert SCRIPT.sub(b"", page) == on_disk
        events = SCRIPT.search(page).group(1).decode()
        assert f"since={hashlib.sha256(on_disk).hexdigest()}" in events

        # The files on disk are those of a normal build of the same input.
        reference = tmp_path / "reference"
        built = subprocess.run(
            [sys.executable, "-m", "calcsheet", "build", str(sheet), "--out", str(reference), "--format", FORMATS],
            capture_output=True,
            text=True,
            cwd=tmp_path,
            env=ENV,
        )
        assert built.returncode == 0, built.stderr
        assert _outputs(out) == _outputs(reference)

        with urllib.request.urlopen(url.rstrip("/") + events, timeout=DEADLINE_SECONDS) as stream:
            assert stream.headers["Content-Type"] == "text/event-stream"
            assert stream.readline() == b"retry: 1000\n"
            text = sheet.read_text(encoding="utf-8")
            _save(sheet, text.replace('R = { value = "4.7 kohm"', 'R = { value = "47 kohm"'))
            lines = []
            while b"event: reload\n" not in lines:  # each read waits at most the deadline (the socket's timeout)
                lines.append(stream.readline())
                assert lines[-1], "the event stream closed without a reload"
            data = stream.readline()
        rebuilt = (out / f"{sheet.stem}.html").read_bytes()
        assert data == f"data: {hashlib.sha256(rebuilt).hexdigest()}\n".encode()

        status, page = _get(page_url)
        assert status == 200 and b"FAIL: Residual bus voltage" in page and SCRIPT.sub(b"", page) == rebuilt
        status, index = _get(url)
        assert status == 200 and f'href="{sheet.stem}.html"'.encode() in index

        # A bad value: the page stays as last built, and its stream says why.
        _save(sheet, text.replace('R = { value = "4.7 kohm"', 'R = { value = "47 kohmz"'))
        problem_events = url.rstrip("/") + events.split("&since=")[0] + "&since=" + hashlib.sha256(rebuilt).hexdigest()
        with urllib.request.urlopen(problem_events, timeout=DEADLINE_SECONDS) as stream:
            line = b""
            while line != b"event: problem\n":
                line = stream.readline()
                assert line, "the event stream closed without naming the problem"
            assert stream.readline().startswith(f"data: {sheet}: parameters.R: unknown unit 'kohmz'".encode())
        assert (out / f"{sheet.stem}.html").read_bytes() == rebuilt

        # Only visible files inside the out folder, only to requests addressed to this server.
        (out / "outside.txt").symlink_to(sheet)
        for path in (
            f"/../{sheet.name}",
            f"/%2e%2e/{sheet.name}",
            f"/..%2f{sheet.name}",
            f"/{sheet.stem}.html/../../{sheet.name}",
            f"/.calcsheet-cache/{sheet.stem}.json",
            "/outside.txt",
            "/nothing.html",
            "//etc/passwd",
            "/.watch/events?page=../package.toml",
        ):
            assert _raw_get(port, path) == 404, path
        assert _raw_get(port, f"/{sheet.stem}.json") == 200
        assert _raw_get(port, f"/{sheet.stem}.json", host="calc.example.com") == 403

        assert watching.stop(signal.SIGINT) == 0
        assert "Traceback" not in watching.stderr()
    finally:
        watching.kill()


def test_bad_settings_are_one_line_and_exit_2(tmp_path):
    sheet = copy_demo(BUS, tmp_path)
    with socket.socket() as taken:  # a port another program listens on
        taken.bind(("127.0.0.1", 0))
        taken.listen()
        busy = taken.getsockname()[1]
        for args, problem in (
            ([str(tmp_path / "missing.toml")], f"{tmp_path / 'missing.toml'}: no such file or folder"),
            ([str(sheet), "--port", "8000"], "--port: is the port of --serve: give --serve too"),
            ([str(sheet), "--serve", "--format", "json"], "--format: --serve shows the HTML pages: add html to it"),
            ([str(sheet), "--format", "docx"], "--format: unknown format 'docx'"),
            ([str(sheet), "--serve", "--port", str(busy)], f"--port: cannot listen on 127.0.0.1:{busy}: "),
        ):
            result = subprocess.run(
                [sys.executable, "-m", "calcsheet", "watch", *args, "--out", str(tmp_path / "out")],
                capture_output=True,
                text=True,
                timeout=DEADLINE_SECONDS,
                env=ENV,
            )
            assert result.returncode == 2, (args, result.stderr)
            assert result.stderr.count("\n") == 1 and result.stderr.startswith(problem), (args, result.stderr)
    assert not (tmp_path / "out").exists()
