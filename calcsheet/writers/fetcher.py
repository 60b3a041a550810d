"""What WeasyPrint may read while it lays out a PDF: data: URLs, files inside the style folder in
use and the default style folder, and our bundled fonts. Everything else is refused before any
file is opened or any connection made: no real file:// path (only the two virtual folders below,
reached by relative URLs), no http(s)://, no other scheme.

A house style may come with someone else's calculation; building it must not read the
builder's files into the PDF or reach the network. Each refusal is kept, so the writer can name
it in an input error instead of leaving a silently missing picture.
"""

from __future__ import annotations

import mimetypes
from pathlib import Path
from urllib.parse import unquote, urlsplit

from weasyprint.urls import URLFetcher, URLFetcherResponse

from calcsheet.writers import fonts


# Virtual folders: the HTML's base URL is STYLE_ROOT, so a relative url() or src resolves into
# the style folder wherever it lies, and no real path (which differs from machine to machine,
# and which WeasyPrint hashes into image names) ever enters the PDF.
STYLE_ROOT = "file:///calcsheet-style/"
DEFAULT_ROOT = "file:///calcsheet-default-style/"


class _Served(URLFetcherResponse):
    """Bytes we read ourselves; no path, so WeasyPrint never reopens anything by name."""

    @property
    def path(self):
        return None


class ConfinedFetcher(URLFetcher):
    """A WeasyPrint URL fetcher that serves only the style's own files and ours."""

    def __init__(self, style_folder: Path, default_folder: Path):
        super().__init__(allowed_protocols=("data",), allow_redirects=False)
        self.roots = {
            urlsplit(STYLE_ROOT).path: Path(style_folder).resolve(),
            urlsplit(DEFAULT_ROOT).path: Path(default_folder).resolve(),
        }
        self.refused: list[str] = []
        self.missing: list[str] = []

    def fetch(self, url, headers=None):
        scheme = url.split(":", 1)[0].lower() if ":" in url else ""
        if scheme == "data":
            return super().fetch(url, headers)
        if scheme == fonts.SCHEME:
            body = fonts.font_bytes(url.split(":", 1)[1])
            if body is None:
                return self._refuse(url)
            return _Served(url, body, {"Content-Type": "font/ttf"})
        if scheme == "file":
            return self._file(url)
        return self._refuse(url)

    def _file(self, url: str) -> URLFetcherResponse:
        parts = urlsplit(url)
        path = unquote(parts.path)
        root = next((r for r in self.roots if path.startswith(r)), None)
        if parts.netloc not in ("", "localhost") or root is None:
            return self._refuse(url)
        folder = self.roots[root]
        real = (folder / path[len(root) :]).resolve()
        if not real.is_relative_to(folder):
            return self._refuse(url)
        if not real.is_file():
            self.missing.append(url)
            raise FileNotFoundError(url)
        content_type = mimetypes.guess_type(real.name)[0] or "application/octet-stream"
        return _Served(url, real.read_bytes(), {"Content-Type": content_type})

    def _refuse(self, url: str):
        self.refused.append(url)
        raise PermissionError(f"refused to fetch {url}")
