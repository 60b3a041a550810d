"""One headless Chromium for the browser tests, driven over the DevTools protocol.

Chromium comes from the system (Debian package `chromium`); nothing is downloaded. The tests talk
to it with `websocket-client` (in the `test` extra) over one WebSocket, using a single page target
for the whole session.

Without Chromium (or websocket-client) the tests are skipped, except when the environment variable
CI is set: there a missing browser is a failure, so that CI never passes by skipping.
"""

from __future__ import annotations

import base64
import json
import os
import shutil
import signal
import subprocess
import time
from pathlib import Path

import pytest
from click.testing import CliRunner

from calcsheet.cli import main
from tests.end_to_end.demo_verdicts import expected_exit
from tests.end_to_end.demo_verdicts import DEMOS as DEMO_SHEETS

ROOT = Path(__file__).resolve().parents[2]
DEMOS = DEMO_SHEETS

STARTUP_SECONDS = 30
COMMAND_SECONDS = 20

CHROMIUM_FLAGS = [
    "--headless=new",
    "--remote-debugging-port=0",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--no-default-browser-check",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--disable-extensions",
    "--disable-dev-shm-usage",
    "--mute-audio",
]


def _unavailable(reason: str):
    """Skip on a developer's machine; fail where CI is set."""
    if os.environ.get("CI"):
        pytest.fail(f"{reason} (CI is set, so the browser tests must run, not be skipped)", pytrace=False)
    pytest.skip(reason)


class CdpError(RuntimeError):
    pass


class Browser:
    """A minimal DevTools-protocol client: one WebSocket to the browser, flat sessions to targets."""

    def __init__(self, ws_url: str):
        import websocket  # websocket-client

        self._websocket = websocket
        # suppress_origin: Chromium refuses DevTools WebSockets that carry an Origin header it was not told to allow.
        self.ws = websocket.create_connection(ws_url, timeout=COMMAND_SECONDS, suppress_origin=True)
        self._next_id = 0
        self._events: list[dict] = []

    def _receive(self, deadline: float) -> dict:
        remaining = deadline - time.monotonic()
        if remaining <= 0:
            raise TimeoutError("no reply from Chromium in time")
        self.ws.settimeout(remaining)
        try:
            return json.loads(self.ws.recv())
        except self._websocket.WebSocketTimeoutException as error:
            raise TimeoutError("no reply from Chromium in time") from error

    def send(
        self, method: str, params: dict | None = None, session: str | None = None, timeout: float = COMMAND_SECONDS
    ) -> dict:
        self._next_id += 1
        message = {"id": self._next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        self.ws.send(json.dumps(message))
        deadline = time.monotonic() + timeout
        while True:
            reply = self._receive(deadline)
            if reply.get("id") == self._next_id:
                if "error" in reply:
                    raise CdpError(f"{method}: {reply['error']}")
                return reply.get("result", {})
            if "method" in reply:
                self._events.append(reply)

    def wait_for_event(self, method: str, session: str | None, timeout: float = COMMAND_SECONDS) -> dict:
        deadline = time.monotonic() + timeout
        while True:
            for i, event in enumerate(self._events):
                if event["method"] == method and event.get("sessionId") == session:
                    del self._events[: i + 1]
                    return event.get("params", {})
            reply = self._receive(deadline)
            if "method" in reply:
                self._events.append(reply)

    def drop_events(self, session: str | None) -> None:
        self._events = [e for e in self._events if e.get("sessionId") != session]

    def new_page(self) -> "Page":
        target = self.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        session = self.send("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        return Page(self, session)

    def close(self) -> None:
        try:
            self.send("Browser.close", timeout=5)
        except Exception:  # the browser may close the socket before it answers
            pass
        try:
            self.ws.close()
        except Exception:
            pass


class Page:
    """One tab. Every method returns plain data so the tests can print what went wrong."""

    def __init__(self, browser: Browser, session: str):
        self.browser = browser
        self.session = session
        self.send("Page.enable")
        self.send("Runtime.enable")

    def send(self, method: str, params: dict | None = None, timeout: float = COMMAND_SECONDS) -> dict:
        return self.browser.send(method, params, session=self.session, timeout=timeout)

    def set_viewport(self, width: int, height: int = 1100) -> None:
        self.send(
            "Emulation.setDeviceMetricsOverride",
            {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False},
        )

    def open(self, path: Path, width: int) -> None:
        """Load a local file at a given viewport width and wait until it and its fonts are ready."""
        self.set_viewport(width)
        self.browser.drop_events(self.session)
        result = self.send("Page.navigate", {"url": path.resolve().as_uri()})
        if result.get("errorText"):
            raise CdpError(f"could not open {path}: {result['errorText']}")
        self.browser.wait_for_event("Page.loadEventFired", self.session)
        self.evaluate("document.fonts.ready.then(() => true)")

    def evaluate(self, expression: str):
        result = self.send("Runtime.evaluate", {"expression": expression, "returnByValue": True, "awaitPromise": True})
        if "exceptionDetails" in result:
            details = result["exceptionDetails"]
            text = details.get("exception", {}).get("description") or details.get("text")
            raise CdpError(f"JavaScript error: {text}")
        return result["result"].get("value")

    def screenshot(self, destination: Path) -> dict:
        """A PNG of the whole page (not only the viewport) at the current width; returns its CSS size."""
        metrics = self.send("Page.getLayoutMetrics")
        content = metrics["cssContentSize"]
        width = metrics["cssLayoutViewport"]["clientWidth"]
        height = max(1, int(round(content["height"])))
        shot = self.send(
            "Page.captureScreenshot",
            {
                "format": "png",
                "captureBeyondViewport": True,
                "clip": {"x": 0, "y": 0, "width": width, "height": height, "scale": 1},
            },
        )
        destination.write_bytes(base64.b64decode(shot["data"]))
        return {"width": width, "height": height}


def _start_chromium(executable: str, profile: Path, log: Path) -> subprocess.Popen:
    with log.open("wb") as stderr:
        return subprocess.Popen(
            [executable, *CHROMIUM_FLAGS, f"--user-data-dir={profile}", "about:blank"],
            stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL,
            stderr=stderr,
            start_new_session=True,  # its own process group, so the helpers it starts end with it
        )


def _devtools_url(process: subprocess.Popen, profile: Path, log: Path) -> str:
    """Chromium writes the chosen port and the browser's WebSocket path to DevToolsActivePort."""
    marker = profile / "DevToolsActivePort"
    deadline = time.monotonic() + STARTUP_SECONDS
    while time.monotonic() < deadline:
        if process.poll() is not None:
            raise RuntimeError(f"Chromium exited with {process.returncode} at start:\n{_tail(log)}")
        if marker.exists():
            lines = marker.read_text().split()
            if len(lines) >= 2:
                return f"ws://127.0.0.1:{int(lines[0])}{lines[1]}"
        time.sleep(0.05)
    raise RuntimeError(f"Chromium did not open its DevTools port in {STARTUP_SECONDS} s:\n{_tail(log)}")


def _tail(log: Path) -> str:
    return log.read_text(errors="replace")[-3000:]


def _stop(process: subprocess.Popen) -> None:
    try:
        process.wait(timeout=5)
        return
    except subprocess.TimeoutExpired:
        pass
    for sig in (signal.SIGTERM, signal.SIGKILL):
        try:
            os.killpg(process.pid, sig)  # the group this fixture created for this one process
        except ProcessLookupError:
            return
        try:
            process.wait(timeout=5)
            return
        except subprocess.TimeoutExpired:
            continue


@pytest.fixture(scope="session")
def chromium_executable() -> str:
    executable = shutil.which("chromium")
    if executable is None:
        _unavailable("Chromium is not installed (Debian package `chromium`; .ci/run installs it)")
    try:
        import websocket  # noqa: F401  (websocket-client)
    except ImportError:
        _unavailable("websocket-client is not installed (pip install -e '.[test]')")
    return executable


@pytest.fixture(scope="session")
def page(chromium_executable, tmp_path_factory) -> Page:
    """The one browser process of the session, with one tab; closed at the end of the session."""
    home = tmp_path_factory.mktemp("chromium")
    profile, log = home / "profile", home / "chromium.log"
    profile.mkdir()
    process = _start_chromium(chromium_executable, profile, log)
    browser = None
    try:
        browser = Browser(_devtools_url(process, profile, log))
        yield browser.new_page()
    finally:
        if browser is not None:
            browser.close()
        _stop(process)


@pytest.fixture(scope="session")
def sheets(tmp_path_factory) -> dict[str, Path]:
    """Every demo input built to HTML once per session, by the command line in-process."""
    out = tmp_path_factory.mktemp("html-sheets")
    result = CliRunner().invoke(main, ["build", *map(str, DEMOS), "--out", str(out), "--format", "html"])
    assert result.exit_code == expected_exit(demo.stem for demo in DEMOS), result.output  # two fail at worst case
    built = {demo.stem: out / f"{demo.stem}.html" for demo in DEMOS}
    for stem, path in built.items():
        assert path.is_file() and path.stat().st_size > 0, f"{stem}: no HTML sheet written"
    return built
