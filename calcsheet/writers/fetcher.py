"""What WeasyPrint may read while it lays out a PDF: data: URLs, files inside the style folder in
use and the default style folder, and our bundled fonts. Everything else is refused before any
file is opened or any connection made: no file:// elsewhere, no http(s)://, no other scheme.

A house style may come with someone else's calculation; building it must not read the
builder's files into the PDF or reach the network. Each refusal is kept, so the writer can name
it in an input error instead of leaving a silently missing picture.
"""

from __future__ import annotations

import mimetypes
from pathlib import Path
from urllib.parse import unquote, urlsplit
from urllib.request import url2pathname

from weasyprint.urls import URLFetcher, URLFetcherResponse

from calcsheet.writers import fonts


class ConfinedFetcher(URLFetcher):
    """A WeasyPrint URL fetcher that serves only the style's own files and ours."""

    def __init__(self, folders: list[Path]):
        super().__init__(allowed_protocols=("data", "file", fonts.SCHEME), allow_redirects=False)
        self.folders = [Path(folder).resolve() for folder in folders]
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
            return URLFetcherResponse(url, body, {"Content-Type": "font/ttf"})
        if scheme == "file":
            return self._file(url)
        return self._refuse(url)

    def _file(self, url: str) -> URLFetcherResponse:
        parts = urlsplit(url)
        if parts.netloc not in ("", "localhost"):
            return self._refuse(url)
        real = Path(url2pathname(unquote(parts.path))).resolve()
        if not any(real.is_relative_to(folder) for folder in self.folders):
            return self._refuse(url)
        if not real.is_file():
            self.missing.append(url)
            raise FileNotFoundError(url)
        content_type = mimetypes.guess_type(real.name)[0] or "application/octet-stream"
        return URLFetcherResponse(real.as_uri(), real.read_bytes(), {"Content-Type": content_type})

    def _refuse(self, url: str):
        self.refused.append(url)
        raise PermissionError(f"refused to fetch {url}")
