"""HTML from the pack templates, and PDF from that HTML.

Two steps, kept apart so each can be tested alone:

* :func:`render_html` fills a jinja2 template from the installed
  ``prepkit.templates`` package. Autoescaping is on for every template
  whatever its extension (``select_autoescape`` decides by the last
  extension only, which would leave ``.j2`` files unescaped), and an
  undefined variable is an error rather than an empty string.
* :func:`html_to_pdf` lays the HTML out with weasyprint and writes a tagged
  PDF (PDF/UA-1 variant: structure tree, document language, title shown by
  viewers) using only prepkit's own assets, through
  :class:`prepkit.report.safety.AssetFetcher`. Text is set in the DejaVu
  Sans files bundled with the templates. The PDF's dates come from
  :func:`prepkit.base.files.source_date` and its file identifier from its own
  content, so the same HTML rendered twice under the same
  ``SOURCE_DATE_EPOCH`` gives the same bytes.
"""

from __future__ import annotations

import shutil
import tempfile
from collections.abc import Mapping
from datetime import UTC, datetime
from pathlib import Path
from typing import Any

import jinja2
from weasyprint import HTML
from weasyprint.text.fonts import FontConfiguration

from prepkit.base.files import source_date
from prepkit.errors import OutputError, PageSizeError
from prepkit.report.safety import AssetFetcher, package_assets_dir

__all__ = [
    "PAGE_SIZES_MM",
    "PDF_VARIANT",
    "html_to_pdf",
    "make_environment",
    "render_html",
    "templates_dir",
]

#: weasyprint's name for the tagged, accessible PDF variant written.
PDF_VARIANT = "pdf/ua-1"

#: Paper sizes the pack is laid out for, (width, height) [mm].
PAGE_SIZES_MM: dict[str, tuple[float, float]] = {
    "A4": (210.0, 297.0),
    "Letter": (215.9, 279.4),
}

_CSS_PX_PER_MM = 96.0 / 25.4
_SIZE_TOLERANCE_MM = 0.5


def templates_dir() -> Path:
    """Folder of the installed ``prepkit.templates`` package.

    Returns
    -------
    pathlib.Path
        Absolute path holding the templates, ``pack.css`` and ``fonts/``.
    """
    return package_assets_dir()


def make_environment() -> jinja2.Environment:
    """The jinja2 environment for pack templates.

    Returns
    -------
    jinja2.Environment
        Loads from :func:`templates_dir`; autoescapes every template and
        every string template (``autoescape=True`` rather than
        ``select_autoescape``, which would miss ``.j2``); raises on undefined
        variables (``StrictUndefined``); drops the newline after a block tag
        and the indentation before one.
    """
    return jinja2.Environment(
        loader=jinja2.FileSystemLoader(templates_dir()),
        autoescape=True,
        undefined=jinja2.StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
        auto_reload=False,
    )


def render_html(template_name: str, context: Mapping[str, Any]) -> str:
    """Fill a pack template.

    Parameters
    ----------
    template_name : str
        Template file name inside the templates package, e.g.
        ``"base.html.j2"``.
    context : mapping
        Template variables. Strings are escaped on output; wrap trusted
        markup in :class:`markupsafe.Markup` to insert it as is.

    Returns
    -------
    str
        The HTML text.

    Raises
    ------
    jinja2.UndefinedError
        When the template uses a variable missing from ``context``.
    jinja2.TemplateNotFound
        When there is no such template.
    """
    template = make_environment().get_template(template_name)
    return template.render(**context)


def html_to_pdf(
    html: str,
    *,
    page_size: str,
    title: str,
    lang: str = "en",
    base_url: str | None = None,
    fetcher: AssetFetcher | None = None,
    created: datetime | None = None,
) -> bytes:
    """Lay out HTML and write it as a tagged, reproducible PDF.

    Parameters
    ----------
    html : str
        Document from :func:`render_html`.
    page_size : {"A4", "Letter"}
        Paper size the document must have; every page is checked against it
        (the template's ``page_size`` variable sets it).
    title : str
        Document title, stored in the PDF information and XMP metadata and
        shown by viewers instead of the file name.
    lang : str, optional
        Document language as a BCP 47 tag, stored as the PDF's ``/Lang``.
    base_url : str, optional
        URL that relative links in ``html`` resolve against. Defaults to the
        templates folder, so ``href="pack.css"`` finds the stylesheet.
    fetcher : AssetFetcher, optional
        URL fetcher; pass one to inspect what the render fetched and refused
        afterwards. Defaults to a new :class:`AssetFetcher`.
    created : datetime.datetime, optional
        Creation and modification date stored in the PDF. Defaults to
        :func:`prepkit.base.files.source_date`.

    Returns
    -------
    bytes
        The PDF file.

    Raises
    ------
    PageSizeError
        When a laid-out page is not ``page_size``.
    ValueError
        When ``page_size`` is not a known paper size.
    prepkit.errors.OutputError
        When the PDF cannot be made for want of disk space or a writable
        temporary folder (weasyprint copies the fonts there).
    """
    if page_size not in PAGE_SIZES_MM:
        raise ValueError(f"page_size: expected one of {sorted(PAGE_SIZES_MM)}, found {page_size!r}")
    url_fetcher = fetcher if fetcher is not None else AssetFetcher()
    base = base_url if base_url is not None else templates_dir().as_uri() + "/"
    # weasyprint copies @font-face fonts into a temporary folder that its
    # FontConfiguration removes only when garbage-collected, which never happens in
    # a worker process that ends with os._exit: remove it ourselves.
    fonts: Any = None
    try:
        fonts = FontConfiguration()
        return _render_pdf(html, base, url_fetcher, fonts, page_size=page_size, title=title,
                           lang=lang, created=created)
    except OSError as error:
        if isinstance(error, OutputError):
            raise
        raise OutputError(
            error.errno,
            f"briefing-pack.pdf: could not lay out the PDF ({error.strerror or error}); it "
            f"needs room in the temporary folder {tempfile.gettempdir()} (set TMPDIR to use "
            "another)",
            str(error.filename or tempfile.gettempdir()),
        ) from error
    finally:
        folder = getattr(fonts, "_folder", None)
        if folder:
            shutil.rmtree(folder, ignore_errors=True)


def _render_pdf(
    html: str,
    base: str,
    url_fetcher: Any,
    fonts: Any,
    *,
    page_size: str,
    title: str,
    lang: str,
    created: datetime | None,
) -> bytes:
    document = HTML(string=html, base_url=base, url_fetcher=url_fetcher, media_type="print").render(
        pdf_variant=PDF_VARIANT, font_config=fonts
    )
    _check_page_size(document.pages, page_size)

    stamp = _w3c_date(created if created is not None else source_date())
    metadata = document.metadata
    metadata.title = title
    metadata.lang = lang
    metadata.created = stamp
    metadata.modified = stamp
    metadata.generator = "prepkit"
    # A pack never carries files: <link rel="attachment"> is dropped here
    # (and <a rel="attachment"> targets are refused by the fetcher).
    metadata.attachments = []

    pdf: bytes = document.write_pdf(pdf_variant=PDF_VARIANT, pdf_identifier=True)
    return pdf


def _check_page_size(pages: list[Any], page_size: str) -> None:
    want_w, want_h = PAGE_SIZES_MM[page_size]
    for number, page in enumerate(pages, start=1):
        width = page.width / _CSS_PX_PER_MM
        height = page.height / _CSS_PX_PER_MM
        if abs(width - want_w) > _SIZE_TOLERANCE_MM or abs(height - want_h) > _SIZE_TOLERANCE_MM:
            raise PageSizeError(page_size, (width, height), number)


def _w3c_date(moment: datetime) -> str:
    """Date in the W3C profile of ISO 8601 that weasyprint reads, in UTC."""
    aware = moment if moment.tzinfo is not None else moment.replace(tzinfo=UTC)
    return aware.astimezone(UTC).strftime("%Y-%m-%dT%H:%M:%SZ")
