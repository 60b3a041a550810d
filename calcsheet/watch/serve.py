"""The pages of a watch's out folder over loopback, with the standard library's http.server in a thread, so that
an engineer sees a sheet in the browser as it is rebuilt. It listens on 127.0.0.1 only and answers only requests
whose Host names it (a page of another site cannot reach it through a name rebound to this machine). It serves only
files inside the out folder, none hidden (the build cache, temporaries), and only by GET or HEAD; an HTML page gets
the reload script of page_reload.py as it is sent."""

from __future__ import annotations

import html
import threading
from http.server import BaseHTTPRequestHandler, ThreadingHTTPServer
from pathlib import Path
from urllib.parse import parse_qs, quote, unquote, urlsplit

from calcsheet.watch.page_reload import EVENTS_PATH, listing_version, page_version, version_of, with_reload_script

HOST = "127.0.0.1"
KEEP_ALIVE_SECONDS = 10  # an open event stream is written to this often, so a closed tab ends its thread
CONTENT_TYPES = {
    ".html": "text/html; charset=utf-8",
    ".json": "application/json",
    ".txt": "text/plain; charset=utf-8",
    ".csv": "text/csv; charset=utf-8",
    ".pdf": "application/pdf",
    ".svg": "image/svg+xml",
    ".png": "image/png",
}


class PageServer:
    """The server of one watch: ``start()``, ``rebuilt()`` after each round, ``close()`` at the end."""

    def __init__(self, out_dir: Path, port: int = 0) -> None:
        self.root = out_dir.resolve()
        self._changed = threading.Condition()
        self._generation = 0
        self._closing = False
        self._problems: dict[str, str] = {}  # page -> why its last build failed
        self._http = ThreadingHTTPServer((HOST, port), _handler(self))  # port 0: the system picks a free one
        self.port = self._http.server_address[1]
        self._thread = threading.Thread(target=self._http.serve_forever, name="calcsheet-serve", daemon=True)

    @property
    def url(self) -> str:
        return f"http://{HOST}:{self.port}/"

    def page_url(self, name: str) -> str:
        return self.url + quote(name)

    def start(self) -> None:
        self._thread.start()

    def rebuilt(self, outcomes: dict[str, str] | None = None) -> None:
        """Wake the open event streams to compare their page with the file now on disk. ``outcomes``: the pages
        of the round, each with the line saying why it was not built ("" when it was), kept until its next round."""
        with self._changed:
            for page, problem in (outcomes or {}).items():
                self._problems[page] = " ".join(problem.split())  # one line, as an event's data must be
            self._generation += 1
            self._changed.notify_all()

    def problem(self, page: str) -> str:
        """Why the page's last build failed ("" when it did not), shown over the page until a build succeeds."""
        with self._changed:
            return self._problems.get(page, "")

    def close(self) -> None:
        with self._changed:
            self._closing = True
            self._changed.notify_all()
        if self._thread.is_alive():
            self._http.shutdown()
        self._http.server_close()

    def file(self, path: str) -> Path | None:
        """The file a URL path names, if it is a visible file inside the out folder; None otherwise."""
        text = unquote(path)
        if "\x00" in text or "\\" in text:
            return None
        parts = [p for p in text.split("/") if p]
        if not parts or any(p.startswith(".") for p in parts):  # "..", the cache, temporaries
            return None
        file = self.root.joinpath(*parts).resolve()  # a link out of the folder resolves outside it
        if self.root not in file.parents or not file.is_file():
            return None
        return file

    def pages(self) -> list[str]:
        return sorted(p.name for p in self.root.glob("*.html") if p.is_file()) if self.root.is_dir() else []

    def version(self, page: str) -> str | None:
        """A page's version ("" while its file is missing; the index's is its list of pages); None: not a page."""
        if page == "":
            return listing_version(self.pages())
        if "/" in page or "\\" in page or page.startswith(".") or not page.endswith(".html"):
            return None
        file = self.file(page)
        return page_version(file) if file is not None else ""

    def wait_for_change(self, seen: int) -> int:
        """The round counter once it differs from ``seen``, or after KEEP_ALIVE_SECONDS; -1 when closing."""
        with self._changed:
            self._changed.wait_for(lambda: self._generation != seen or self._closing, timeout=KEEP_ALIVE_SECONDS)
            return -1 if self._closing else self._generation

    @property
    def generation(self) -> int:
        with self._changed:
            return self._generation


def _handler(server: PageServer):
    class Handler(BaseHTTPRequestHandler):
        """One request to the watch's server."""

        server_version = "calcsheet-watch"
        sys_version = ""

        def do_GET(self) -> None:
            self._answer(body=True)

        def do_HEAD(self) -> None:
            self._answer(body=False)

        def log_message(self, format, *args) -> None:
            pass  # the watch's own lines stay readable

        def _answer(self, body: bool) -> None:
            allowed = {f"{HOST}:{server.port}", f"localhost:{server.port}"}
            if self.headers.get("Host", "") not in allowed:
                return self._plain(403, "refused: this server answers only to its own loopback address", body)
            split = urlsplit(self.path)
            if split.path == EVENTS_PATH:
                return self._events(parse_qs(split.query), body)
            if split.path == "/":
                return self._index(body)
            file = server.file(split.path)
            if file is None:
                return self._plain(404, "not found in the out folder", body)
            try:
                data = file.read_bytes()
            except OSError:
                return self._plain(404, "not found in the out folder", body)
            if file.suffix == ".html" and file.parent == server.root:
                data = with_reload_script(data, file.name, version_of(data))
            self._send(200, CONTENT_TYPES.get(file.suffix, "application/octet-stream"), data, body)

        def _index(self, body: bool) -> None:
            names = server.pages()
            items = "".join(f'<li><a href="{html.escape(quote(n))}">{html.escape(n)}</a></li>' for n in names)
            title = html.escape(f"Pages in {server.root.name}")
            page = (
                f'<!DOCTYPE html>\n<html lang="en"><head><meta charset="utf-8"><title>{title}</title></head>'
                f"<body><h1>{title}</h1><ul>{items or '<li>none built yet</li>'}</ul></body></html>\n"
            ).encode("utf-8")
            page = with_reload_script(page, "", listing_version(names))
            self._send(200, CONTENT_TYPES[".html"], page, body)

        def _events(self, query: dict, body: bool) -> None:
            """Server-sent events: "problem" when the page's last build failed (empty data once one succeeds), one
            "reload" once the page differs from ``since``, and comments to keep the stream alive."""
            page, since = query.get("page", [""])[0], query.get("since", [""])[0]
            if server.version(page) is None:
                return self._plain(404, "not a page of the out folder", body)
            self.send_response(200)
            self.send_header("Content-Type", "text/event-stream")
            self.send_header("Cache-Control", "no-store")
            self.end_headers()
            if not body:
                return
            try:
                self.wfile.write(b"retry: 1000\n\n")
                self.wfile.flush()
                seen, shown = server.generation, ""
                while seen >= 0:
                    current = server.version(page)
                    if current and current != since:  # a missing file waits for its rebuild
                        self.wfile.write(f"event: reload\ndata: {current}\n\n".encode("ascii"))
                        self.wfile.flush()
                        return
                    problem = server.problem(page)
                    if problem != shown:
                        self.wfile.write(f"event: problem\ndata: {problem}\n\n".encode("utf-8"))
                        self.wfile.flush()
                        shown = problem
                    seen = server.wait_for_change(seen)
                    self.wfile.write(b": waiting\n\n")
                    self.wfile.flush()
            except (BrokenPipeError, ConnectionResetError):
                return  # the page was closed

        def _plain(self, status: int, text: str, body: bool) -> None:
            self._send(status, "text/plain; charset=utf-8", (text + "\n").encode("utf-8"), body)

        def _send(self, status: int, content_type: str, data: bytes, body: bool) -> None:
            self.send_response(status)
            self.send_header("Content-Type", content_type)
            self.send_header("Content-Length", str(len(data)))
            self.send_header("Cache-Control", "no-store")
            self.send_header("X-Content-Type-Options", "nosniff")
            self.send_header("Referrer-Policy", "no-referrer")
            self.end_headers()
            if body:
                self.wfile.write(data)

    return Handler
