"""An open page reloads itself when its file is rebuilt. A small script is added to the page as it is served, never
to the file on disk, which stays byte for byte what a build writes. The script listens to the server's event stream
(server-sent events: the browser reconnects by itself) for the page's file to differ from the bytes it was served
with; a version is a digest of the file, so a rebuild that changed nothing reloads nothing. When a save could not
be built, the stream says why and the script shows the line over the page until a build succeeds."""

from __future__ import annotations

import hashlib
import json
from pathlib import Path
from urllib.parse import urlencode

EVENTS_PATH = "/.watch/events"  # hidden, so that no file of the out folder can take its name
# A failed rebuild is shown over the page it left as it was, as text (never as markup), until a build succeeds.
NOTE_ID = "calcsheet-watch-problem"
NOTE_WORDS = "Not rebuilt; this page is from the last build that succeeded. "
NOTE_STYLE = (
    "position: fixed; top: 0; left: 0; right: 0; z-index: 10; padding: 0.5em 1em; white-space: pre-wrap;"
    " background: #fff4d6; color: #000; border-bottom: 2px solid #a00; font: 14px sans-serif"
)


def version_of(data: bytes) -> str:
    """A page's version: a digest of its file's bytes."""
    return hashlib.sha256(data).hexdigest()


def page_version(file: Path) -> str:
    """The version of the page on disk; empty while there is no file."""
    try:
        return version_of(file.read_bytes())
    except OSError:
        return ""


def listing_version(names: list[str]) -> str:
    """A digest of the list of pages, for the index page."""
    return hashlib.sha256("\n".join(names).encode("utf-8")).hexdigest()


def events_url(page: str, version: str) -> str:
    """The event stream of one page ("" for the index), percent-encoded: safe inside a script's string."""
    return EVENTS_PATH + "?" + urlencode({"page": page, "since": version})


def with_reload_script(html: bytes, page: str, version: str) -> bytes:
    """``html`` with the listening script before its last ``</body>`` (at the end if it has none)."""
    script = (
        "<script>(function () {"
        f" var events = new EventSource({json.dumps(events_url(page, version))});"
        ' events.addEventListener("reload", function () { events.close(); location.reload(); });'
        ' events.addEventListener("problem", function (event) {'
        f" var note = document.getElementById({json.dumps(NOTE_ID)});"
        " if (!event.data) { if (note) { note.remove(); } return; }"
        ' if (!note) { note = document.createElement("div"); note.id = ' + json.dumps(NOTE_ID) + ";"
        f' note.setAttribute("style", {json.dumps(NOTE_STYLE)}); document.body.appendChild(note); }}'
        f" note.textContent = {json.dumps(NOTE_WORDS)} + event.data;"
        " });"
        " })();</script>\n"
    ).encode("ascii")
    at = html.lower().rfind(b"</body>")
    if at < 0:
        return html + script
    return html[:at] + script + html[at:]
