"""The parts of ``calcsheet watch`` that need no subprocess: which saved files matter for each kind of target, what
a round builds, the reload script's place in a page, and the server's answers (pages, the index, the event stream
of a page that changes or is missing). Properties of our own command; no outside source. The command end to end is
tests/end_to_end/test_watch.py."""

from __future__ import annotations

import hashlib
import http.client
import os
import urllib.error
import urllib.request
from pathlib import Path

import pytest

from calcsheet.errors import InputError
from calcsheet.watch.page_reload import events_url, with_reload_script
from calcsheet.watch.serve import PageServer
from calcsheet.watch.targets import watch_target

DEADLINE_SECONDS = 60  # socket timeouts: a guard against a hang, not a measurement


def _files(folder: Path, *names: str) -> None:
    for name in names:
        (folder / name).parent.mkdir(parents=True, exist_ok=True)
        (folder / name).write_text("x = 1\n", encoding="utf-8")


def test_a_package_folder_watches_its_tree_but_not_the_outputs(tmp_path):
    _files(tmp_path, "package.toml", "a.toml", "sub/b.toml", "house/sheet.css", "notes.md", "out/a.json")
    target = watch_target(str(tmp_path), str(tmp_path / "out"))
    assert (target.mode, target.recursive) == ("package", True)
    root = tmp_path.resolve()
    assert [target.relevant(root / n) for n in ("a.toml", "sub/b.toml", "house/sheet.css", "house/sheet.html.j2")] == [
        True
    ] * 4
    assert not any(target.relevant(root / n) for n in ("notes.md", "out/a.json", "out/a.toml", "a.html"))
    assert sorted(p.relative_to(root).as_posix() for p in target.snapshot()) == [
        "a.toml",
        "house/sheet.css",
        "package.toml",
        "sub/b.toml",
    ]
    assert target.items(frozenset({root / "a.toml"})) == (str(tmp_path),)  # the cache decides what is rebuilt


def test_a_folder_of_sheets_rebuilds_the_sheets_saved(tmp_path):
    _files(tmp_path, "a.toml", "b.toml", "sub/c.toml")
    target = watch_target(str(tmp_path), "out")
    assert (target.mode, target.recursive) == ("folder", False)
    root = tmp_path.resolve()
    assert target.relevant(root / "a.toml") and not target.relevant(root / "sub/c.toml")
    assert target.items() == (str(tmp_path),)
    assert target.items(frozenset({root / "b.toml", root / "gone.toml"})) == (str(tmp_path / "b.toml"),)


def test_a_lone_sheet_is_its_own_only_source_and_a_style_folder_counts_whole(tmp_path):
    _files(tmp_path, "a.toml", "b.toml", "style/sheet.css", "style/logo.svg")
    target = watch_target(str(tmp_path / "a.toml"), "out", tmp_path / "style")
    root = tmp_path.resolve()
    assert (target.mode, target.in_package) == ("sheet", False)
    assert target.relevant(root / "a.toml") and not target.relevant(root / "b.toml")
    assert target.relevant(root / "style/logo.svg")
    assert target.folders == (root, root / "style")
    with pytest.raises(InputError, match="no such file or folder"):
        watch_target(str(tmp_path / "missing.toml"), "out")


def test_a_sheet_of_a_package_follows_the_package_and_its_upstream_sheets(tmp_path):
    _files(tmp_path, "package.toml", "sheets/a.toml", "sheets/b.toml")
    target = watch_target(str(tmp_path / "sheets" / "a.toml"), "out")
    root = tmp_path.resolve()
    assert (target.mode, target.in_package, target.root) == ("sheet", True, root)
    assert target.relevant(root / "package.toml") and target.relevant(root / "sheets/b.toml")
    assert target.items(frozenset({root / "package.toml"})) == (str(tmp_path / "sheets" / "a.toml"),)


def test_the_reload_script_goes_before_the_last_body_end_or_at_the_end():
    script = with_reload_script(b"<html><body><p>&lt;/body&gt;</p></BODY></html>", "a b.html", "f00")
    assert script.startswith(b"<html><body><p>&lt;/body&gt;</p><script>")
    assert script.endswith(b"</script>\n</BODY></html>")
    assert events_url("a b.html", "f00").encode() in script and b"a+b.html" in script
    assert with_reload_script(b"plain", "x.html", "v").startswith(b"plain<script>")


@pytest.fixture
def server(tmp_path):
    running = PageServer(tmp_path / "out")
    running.start()
    try:
        yield running
    finally:
        running.close()


def _get(url: str) -> tuple[int, bytes]:
    try:
        with urllib.request.urlopen(url, timeout=DEADLINE_SECONDS) as response:
            return response.status, response.read()
    except urllib.error.HTTPError as error:
        return error.code, error.read()


def test_the_server_listens_on_loopback_and_lists_the_pages(server, tmp_path):
    assert server.url.startswith("http://127.0.0.1:") and server.port > 0
    status, index = _get(server.url)
    assert status == 200 and b"none built yet" in index
    (tmp_path / "out").mkdir()
    (tmp_path / "out" / "b&c.html").write_bytes(b"<body></body>")
    (tmp_path / "out" / "a.json").write_bytes(b"{}")
    status, index = _get(server.url)
    assert b'href="b%26c.html">b&amp;c.html</a>' in index and b"a.json" not in index
    assert _get(server.url + "a.json") == (200, b"{}")
    assert _get(server.url + "nothing.json")[0] == 404


def test_the_event_stream_signals_a_changed_page_and_waits_for_a_missing_one(server, tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    page = out / "a.html"
    page.write_bytes(b"<body>first</body>")
    first = hashlib.sha256(page.read_bytes()).hexdigest()
    assert server.version("a.html") == first and server.version("b.html") == ""  # missing: waits for its build
    assert server.version("../a.html") is None and server.version("a.json") is None  # not a page
    with urllib.request.urlopen(server.url.rstrip("/") + events_url("a.html", first), timeout=DEADLINE_SECONDS) as s:
        assert s.readline() == b"retry: 1000\n"
        (out / "a.html.part").write_bytes(b"<body>second</body>")
        os.replace(out / "a.html.part", page)  # whole, as a build writes
        server.rebuilt()
        rest = s.read()  # the stream ends after its reload event
    second = hashlib.sha256(b"<body>second</body>").hexdigest()
    assert rest.endswith(f"event: reload\ndata: {second}\n\n".encode())
    assert _get(server.url.rstrip("/") + events_url("../secret.html", first))[0] == 404


def test_a_save_during_the_first_round_is_found_and_a_round_error_does_not_stop(tmp_path, monkeypatch):
    # The watcher is replaced by a script of batches: its first wake-up with nothing seen, then one save, then stop.
    from calcsheet.watch import loop

    _files(tmp_path, "a.toml", "b.toml")
    root = tmp_path.resolve()

    def batches(target, poll):
        yield set()
        yield {root / "b.toml"}
        raise KeyboardInterrupt

    monkeypatch.setattr(loop, "_watched", batches)
    rounds, said, reported = [], [], []

    def rebuild(items, first):
        rounds.append(items)
        if first:  # saved while the first round reads the inputs: before the watcher runs
            (tmp_path / "a.toml").write_text("x = 2\n", encoding="utf-8")
        if len(rounds) == 2:
            raise InputError("a problem", key="x", file=items[0])

    with pytest.raises(KeyboardInterrupt):
        loop.watch(watch_target(str(tmp_path), "out"), rebuild, said.append, reported.append)
    assert rounds == [(str(tmp_path),), (str(tmp_path / "a.toml"),), (str(tmp_path / "b.toml"),)]
    assert said == [f"watching {tmp_path} for changes (Ctrl-C stops)"]
    assert reported == [f"{tmp_path / 'a.toml'}: x: a problem"]


def _raw_status(server: PageServer, path: str, host: str = "") -> int:
    """A request with the path sent exactly as written (urllib would tidy it)."""
    connection = http.client.HTTPConnection("127.0.0.1", server.port, timeout=DEADLINE_SECONDS)
    try:
        connection.putrequest("GET", path, skip_host=True)
        connection.putheader("Host", host or f"127.0.0.1:{server.port}")
        connection.endheaders()
        return connection.getresponse().status
    finally:
        connection.close()


def test_the_server_serves_only_visible_files_inside_the_out_folder(server, tmp_path):
    out = tmp_path / "out"
    _files(tmp_path, "secret.toml", "out/a.json", "out/.calcsheet-cache/a.json", "out/sub/b.txt")
    (out / "link.txt").symlink_to(tmp_path / "secret.toml")
    for path in (
        "/../secret.toml",
        "/%2e%2e/secret.toml",
        "/..%2fsecret.toml",
        "/a.json/../../secret.toml",
        "/sub/../../secret.toml",
        "/.calcsheet-cache/a.json",
        "/link.txt",
        "/%00a.json",
        "/..\\secret.toml",
        "/sub/../a.json",  # inside, but any ".." is refused rather than worked out
    ):
        assert _raw_status(server, path) == 404, path
    assert [_raw_status(server, p) for p in ("/a.json", "/sub/b.txt", "//a.json")] == [200, 200, 200]
    assert _raw_status(server, "/a.json", host=f"localhost:{server.port}") == 200
    assert _raw_status(server, "/a.json", host="calc.example.com") == 403
    assert _raw_status(server, "/a.json", host=f"calc.example.com:{server.port}") == 403


def test_the_event_stream_shows_why_a_page_was_not_rebuilt_until_a_build_succeeds(server, tmp_path):
    out = tmp_path / "out"
    out.mkdir()
    (out / "a.html").write_bytes(b"<body>built</body>")
    version = hashlib.sha256(b"<body>built</body>").hexdigest()
    server.rebuilt({"a.html": "a.toml: parameters.R: unknown unit 'kohmz'\n(second line)", "b.html": ""})
    with urllib.request.urlopen(server.url.rstrip("/") + events_url("a.html", version), timeout=DEADLINE_SECONDS) as s:
        lines = [s.readline() for _ in range(5)]  # retry, blank, the problem standing when the page opened, blank
        assert lines[2:4] == [b"event: problem\n", b"data: a.toml: parameters.R: unknown unit 'kohmz' (second line)\n"]
        server.rebuilt({"a.html": ""})  # built again, to the same bytes: no reload, the note goes
        line = b""
        while line != b"event: problem\n":
            line = s.readline()
            assert line, "the stream ended"
        assert s.readline() == b"data: \n"
    assert server.problem("b.html") == "" and server.problem("a.html") == ""


def test_where_notifications_cannot_be_set_up_the_watch_says_so_and_polls(tmp_path, monkeypatch):
    from calcsheet.watch import loop

    _files(tmp_path, "a.toml")
    asked = []

    def watched(target, poll):
        asked.append(poll)
        if not poll:
            raise OSError(28, "inotify watch limit reached")
        yield set()
        raise KeyboardInterrupt

    monkeypatch.setattr(loop, "_watched", watched)
    reported = []
    with pytest.raises(KeyboardInterrupt):
        loop.watch(watch_target(str(tmp_path), "out"), lambda items, first: None, lambda line: None, reported.append)
    assert asked == [False, True]
    assert reported == [
        f"{tmp_path}: file notifications are unavailable ([Errno 28] inotify watch limit reached); "
        "polling every 300 ms instead"
    ]


def test_a_stopped_watch_removes_only_its_own_temporaries(tmp_path):
    from calcsheet.pipeline import remove_own_parts

    own, other = tmp_path / f".a.html.{os.getpid()}.x1y2.part", tmp_path / f".a.html.{os.getpid() + 1}.x1y2.part"
    for part in (own, other, tmp_path / "a.html"):
        part.write_bytes(b"")
    remove_own_parts(tmp_path)
    assert sorted(p.name for p in tmp_path.iterdir()) == sorted([other.name, "a.html"])
