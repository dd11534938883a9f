"""Guards between untrusted text and the two places it can do harm.

Two outputs receive text that a planner typed into a workbook: the PDF
briefing pack (through HTML and weasyprint) and the results workbook
(through openpyxl). Each has one way to turn text into an action:

* weasyprint fetches every URL a document names (images, stylesheets, fonts,
  ``<link rel="attachment">`` files), so a label such as
  ``<img src="file:///home/planner/secret.txt">`` that slipped through would
  read a local file into the PDF, and an ``http`` URL would reach the
  network. :class:`AssetFetcher` is the only URL fetcher prepkit gives
  weasyprint: it serves files inside the installed ``prepkit.templates``
  package and ``data:`` images of the two types prepkit draws (PNG and SVG),
  and refuses everything else.
* spreadsheet programs run a cell whose text starts with ``=`` (and, on
  entry, ``+``, ``-``, ``@``) as a formula. :func:`write_text_cell` stores
  text so it is always shown as text.

Autoescaping in :mod:`prepkit.report.render` is the first guard (typed text
never becomes markup); the fetcher is the second, for anything that gets
through anyway.
"""

from __future__ import annotations

import base64
import binascii
from dataclasses import dataclass
from importlib.resources import files
from pathlib import Path
from urllib.parse import unquote_to_bytes, urlsplit
from urllib.request import url2pathname

from weasyprint.urls import URLFetcher, URLFetcherResponse

from prepkit.base.sheet_text import (
    FORMULA_TRIGGERS,
    looks_like_formula,
    safe_cell_text,
    safe_csv_text,
    write_text_cell,
    write_text_row,
)
from prepkit.errors import FetchRefusedError
from prepkit.errors import shorten_data_uri as _shorten

__all__ = [
    "ALLOWED_ASSET_SUFFIXES",
    "ALLOWED_DATA_MEDIA_TYPES",
    "FORMULA_TRIGGERS",
    "AssetFetcher",
    "Refusal",
    "looks_like_formula",
    "package_assets_dir",
    "safe_cell_text",
    "safe_csv_text",
    "write_text_cell",
    "write_text_row",
]

TEMPLATES_PACKAGE = "prepkit.templates"

#: Media types a ``data:`` URI may carry: the two image formats prepkit's own
#: charts are written in. Anything else (HTML, CSS, fonts, other images) is
#: refused even when inline.
ALLOWED_DATA_MEDIA_TYPES = frozenset({"image/png", "image/svg+xml"})

#: File types served from the templates package, with the media type
#: weasyprint is told (it checks ``text/css`` for stylesheets).
ALLOWED_ASSET_SUFFIXES: dict[str, str] = {
    ".css": "text/css",
    ".ttf": "font/ttf",
    ".png": "image/png",
    ".svg": "image/svg+xml",
}



@dataclass(frozen=True)
class Refusal:
    """One URL that :class:`AssetFetcher` refused.

    Parameters
    ----------
    url : str
        The URL as requested (``data:`` URIs are cut to 80 characters).
    reason : str
        Why it was refused.
    """

    url: str
    reason: str


def package_assets_dir() -> Path:
    """Folder of the installed ``prepkit.templates`` package.

    Returns
    -------
    pathlib.Path
        Absolute, symlink-free path of the package folder.

    Raises
    ------
    FileNotFoundError
        When the package is not installed as plain files (for example from a
        zip archive), since weasyprint and the fetcher need real paths.
    """
    root = files(TEMPLATES_PACKAGE)
    if not isinstance(root, Path) or not root.is_dir():
        raise FileNotFoundError(
            f"{TEMPLATES_PACKAGE} must be installed as a folder of files; found {root!r}"
        )
    return root.resolve(strict=True)


class AssetFetcher(URLFetcher):
    """weasyprint URL fetcher that serves only prepkit's own assets.

    Served:

    * ``file:`` URLs naming a regular file inside ``root`` (after resolving
      ``..`` and symbolic links) whose suffix is in
      :data:`ALLOWED_ASSET_SUFFIXES`;
    * ``data:`` URIs whose media type is in :data:`ALLOWED_DATA_MEDIA_TYPES`.

    Everything else (``http``, ``https``, ``ftp``, ``file:`` outside
    ``root`` or with a host, other ``data:`` types, unknown schemes) raises
    :class:`FetchRefusedError`, which weasyprint logs and skips. The fetcher
    never opens a network connection: it does not call the parent class's
    :mod:`urllib` machinery at all.

    Every request is recorded: :attr:`served` lists the URLs served,
    :attr:`refused` the ones refused with their reasons, so tests and callers
    can check what a render tried to read.

    Parameters
    ----------
    root : pathlib.Path, optional
        Folder whose files may be served. Defaults to the installed
        ``prepkit.templates`` package (:func:`package_assets_dir`).
    """

    def __init__(self, root: Path | None = None) -> None:
        super().__init__(allowed_protocols=("file", "data"), fail_on_errors=False)
        self.root = (root if root is not None else package_assets_dir()).resolve(strict=True)
        self.served: list[str] = []
        self.refused: list[Refusal] = []

    def fetch(self, url: str, headers: object = None) -> URLFetcherResponse:
        """Serve ``url`` if it is one of prepkit's assets, else refuse it.

        Parameters
        ----------
        url : str
            Absolute URL resolved by weasyprint.
        headers : object, optional
            HTTP headers weasyprint would send; unused, since nothing is
            fetched over a network.

        Returns
        -------
        weasyprint.urls.URLFetcherResponse
            The asset's bytes and media type.

        Raises
        ------
        FetchRefusedError
            For any URL that is not one of prepkit's assets.
        """
        try:
            response = self._serve(url)
        except FetchRefusedError as error:
            self.refused.append(Refusal(_shorten(url), error.reason))
            raise
        self.served.append(_shorten(url))
        return response

    def _serve(self, url: str) -> URLFetcherResponse:
        scheme = url.split(":", 1)[0].lower() if ":" in url else ""
        if scheme == "data":
            media_type, body = _decode_data_uri(url)
            return URLFetcherResponse(url, body, {"Content-Type": media_type})
        if scheme == "file":
            path = self._package_file(url)
            media_type = ALLOWED_ASSET_SUFFIXES[path.suffix.lower()]
            body = path.read_bytes()
            return URLFetcherResponse(path.as_uri(), body, {"Content-Type": media_type})
        raise FetchRefusedError(url, f"scheme {scheme or '(none)'!r} is never fetched")

    def _package_file(self, url: str) -> Path:
        parts = urlsplit(url)
        if parts.netloc not in ("", "localhost"):
            raise FetchRefusedError(url, f"file URL names host {parts.netloc!r}")
        raw = url2pathname(parts.path)
        try:
            path = Path(raw).resolve(strict=True)
        except (OSError, RuntimeError):
            raise FetchRefusedError(url, "no such file") from None
        if not path.is_relative_to(self.root):
            raise FetchRefusedError(url, "file lies outside the prepkit.templates package")
        if not path.is_file():
            raise FetchRefusedError(url, "not a regular file")
        if path.suffix.lower() not in ALLOWED_ASSET_SUFFIXES:
            raise FetchRefusedError(url, f"file type {path.suffix or '(none)'!r} is not an asset")
        return path


def _decode_data_uri(url: str) -> tuple[str, bytes]:
    """Media type and bytes of an allowed ``data:`` URI (RFC 2397)."""
    header, sep, payload = url[len("data:") :].partition(",")
    if not sep:
        raise FetchRefusedError(url, "malformed data URI (no comma)")
    params = [item.strip() for item in header.split(";")]
    media_type = params[0].lower() or "text/plain"
    if media_type not in ALLOWED_DATA_MEDIA_TYPES:
        raise FetchRefusedError(
            url,
            f"data URI of type {media_type!r}; only {sorted(ALLOWED_DATA_MEDIA_TYPES)} are allowed",
        )
    raw = unquote_to_bytes(payload)
    if any(item.lower() == "base64" for item in params[1:]):
        try:
            return media_type, base64.b64decode(raw, validate=False)
        except (binascii.Error, ValueError):
            raise FetchRefusedError(url, "data URI is not valid base64") from None
    return media_type, raw
