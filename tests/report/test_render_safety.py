"""Rendering and its guards: autoescaping, the asset-only URL fetcher, tagged
and reproducible PDFs, bundled fonts, chart styling, and spreadsheet cells
that never become formulas."""

from __future__ import annotations

import base64
import io
import json
import os
import re
import socket
import subprocess
import sys
import textwrap
import uuid
import zipfile
import zlib
from pathlib import Path
from typing import Any

import jinja2
import markupsafe
import matplotlib
import openpyxl
import pytest
from pypdf import PdfReader

from prepkit.errors import FetchRefusedError, PageSizeError
from prepkit.report import style
from prepkit.report.render import (
    html_to_pdf,
    make_environment,
    render_html,
    templates_dir,
)
from prepkit.report.safety import (
    AssetFetcher,
    looks_like_formula,
    safe_cell_text,
    safe_csv_text,
    write_text_cell,
    write_text_row,
)

pytestmark = pytest.mark.slow  # renders PDFs in fresh processes

matplotlib.use("Agg")

BASE_CONTEXT: dict[str, Any] = {
    "title": "Test pack",
    "page_size": "A4",
    "provenance": "Source: test.xlsx; run for the test suite",
}

# A child of base.html.j2 whose body is trusted markup, so a test can put
# hostile HTML past the autoescaping on purpose and check the second guard.
RAW_BODY_TEMPLATE = """{% extends "base.html.j2" %}
{% block sections %}<section class="pack-section">{{ body }}</section>{% endblock %}"""

# 1x1 transparent PNG.
TINY_PNG = base64.b64decode(
    "iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR4nGNgYGBgAAAABQABpfZFQAAAAABJRU5ErkJggg=="
)


def _document(body: str, **context: Any) -> str:
    env = make_environment()
    values = {**BASE_CONTEXT, **context, "body": markupsafe.Markup(body)}
    return env.from_string(RAW_BODY_TEMPLATE).render(**values)


def _pdf_text(pdf: bytes) -> str:
    return "\n".join(page.extract_text() or "" for page in PdfReader(io.BytesIO(pdf)).pages)


def _all_stream_bytes(pdf: bytes) -> bytes:
    """The raw file plus every stream inflated, to search for leaked text."""
    chunks = [pdf]
    for match in re.finditer(rb"stream\r?\n(.*?)\r?\nendstream", pdf, re.DOTALL):
        try:
            chunks.append(zlib.decompress(match[1]))
        except zlib.error:
            pass
    return b"\n".join(chunks)


def _font_names(pdf: bytes) -> set[str]:
    names = set()
    for page in PdfReader(io.BytesIO(pdf)).pages:
        fonts = page["/Resources"].get_object().get("/Font")
        if fonts is None:
            continue
        for ref in fonts.get_object().values():
            names.add(str(ref.get_object()["/BaseFont"]))
    return names


@pytest.fixture
def no_network(monkeypatch: pytest.MonkeyPatch) -> list[object]:
    """Make every outgoing connection attempt fail, and record it."""
    attempts: list[object] = []

    def refuse(*args: object, **kwargs: object) -> None:
        attempts.append(args[1:] if args else kwargs)
        raise OSError("network access attempted during a test")

    monkeypatch.setattr(socket.socket, "connect", refuse)
    monkeypatch.setattr(socket.socket, "connect_ex", refuse)
    monkeypatch.setattr(socket, "create_connection", refuse)
    monkeypatch.setattr(socket, "getaddrinfo", refuse)
    return attempts


# --------------------------------------------------------------------------
# Templates and autoescaping
# --------------------------------------------------------------------------


def test_autoescape_covers_j2_templates() -> None:
    html = render_html(
        "base.html.j2",
        {**BASE_CONTEXT, "title": "<script>alert(1)</script>", "provenance": "<b>x</b> & y"},
    )
    assert "<script>" not in html
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html
    assert "&lt;b&gt;x&lt;/b&gt; &amp; y" in html


def test_autoescape_is_on_for_every_name_and_for_strings() -> None:
    env = make_environment()
    assert env.autoescape is True
    rendered = env.from_string("{{ value }}").render(value='"><img src=x onerror=1>')
    assert rendered == "&#34;&gt;&lt;img src=x onerror=1&gt;"


def test_component_macros_escape_their_arguments() -> None:
    env = make_environment()
    template = env.from_string(
        '{% import "components.html.j2" as c %}'
        '{{ c.figure("data:image/png;base64,AA", alt, caption, label="Figure 1.") }}'
        '{{ c.table("T", ["<th>"], [["<td>", "1"]], numeric=(1,)) }}'
    )
    html = template.render(alt='x" onload="y', caption="<i>c</i>")
    assert 'alt="x&#34; onload=&#34;y"' in html
    assert "&lt;i&gt;c&lt;/i&gt;" in html
    assert "&lt;th&gt;" in html and "&lt;td&gt;" in html


def test_undefined_variable_is_an_error() -> None:
    with pytest.raises(jinja2.UndefinedError):
        render_html("base.html.j2", {"title": "No page size or provenance"})


def test_templates_dir_holds_templates_css_and_fonts() -> None:
    root = templates_dir()
    for name in ("base.html.j2", "components.html.j2", "pack.css", "fonts/LICENSE"):
        assert (root / name).is_file(), name
    assert sorted(p.name for p in (root / "fonts").glob("*.ttf")) == [
        "DejaVuSans-Bold.ttf",
        "DejaVuSans-Oblique.ttf",
        "DejaVuSans.ttf",
    ]


# --------------------------------------------------------------------------
# The URL fetcher
# --------------------------------------------------------------------------


def test_hostile_document_fetches_nothing_and_leaks_nothing(
    tmp_path: Path, no_network: list[object]
) -> None:
    marker = f"PREPKIT-SECRET-{uuid.uuid4().hex}"
    secret = tmp_path / "secret.txt"
    secret.write_text(marker)
    evil_css = tmp_path / "evil.css"
    evil_css.write_text(f'body::after {{ content: "{marker}"; }}')
    svg = tmp_path / "evil.svg"
    svg.write_text(
        '<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10">'
        f"<text>{marker}</text></svg>"
    )
    relative_escape = os.path.relpath(secret, templates_dir())
    secret_png = tmp_path / "secret.png"
    secret_png.write_bytes(TINY_PNG)
    nested = (
        '<svg xmlns="http://www.w3.org/2000/svg" width="20" height="20">'
        f'<image href="{secret_png.as_uri()}" width="10" height="10"/></svg>'
    )
    nested_uri = "data:image/svg+xml;base64," + base64.b64encode(nested.encode()).decode()
    body = f"""
    <p>Visible text.</p>
    <img src="{secret.as_uri()}" alt="local file">
    <img src="{relative_escape}" alt="relative escape">
    <img src="{svg.as_uri()}" alt="svg outside the package">
    <img src="{nested_uri}" alt="allowed SVG that points outside">
    <img src="http://example.invalid/x.png" alt="remote">
    <img src="https://example.invalid/x.png" alt="remote tls">
    <img src="ftp://example.invalid/x.png" alt="ftp">
    <img src="file://example.invalid/etc/passwd" alt="file with host">
    <img src="data:text/html;base64,{base64.b64encode(marker.encode()).decode()}" alt="html">
    <a rel="attachment" href="{secret.as_uri()}">attachment link</a>
    <link rel="attachment" href="{secret.as_uri()}">
    <link rel="stylesheet" href="{evil_css.as_uri()}">
    <link rel="stylesheet" href="http://example.invalid/x.css">
    """
    fetcher = AssetFetcher()
    pdf = html_to_pdf(_document(body), page_size="A4", title="Test pack", fetcher=fetcher)

    assert marker.encode() not in _all_stream_bytes(pdf)
    text = _pdf_text(pdf)
    assert "Visible text." in text
    assert marker not in text

    reader = PdfReader(io.BytesIO(pdf))
    assert reader.attachments == {}
    names = reader.trailer["/Root"].get("/Names")
    assert names is None or "/EmbeddedFiles" not in names.get_object()

    refused = {r.url for r in fetcher.refused}
    for url in (
        secret.as_uri(),
        secret_png.as_uri(),
        svg.as_uri(),
        evil_css.as_uri(),
        "http://example.invalid/x.png",
        "https://example.invalid/x.png",
        "ftp://example.invalid/x.png",
        "file://example.invalid/etc/passwd",
        "http://example.invalid/x.css",
    ):
        assert url in refused, url
    assert any(url.startswith("data:text/html") for url in refused)
    # Everything served came from the templates package, or is the one
    # allowed inline SVG.
    root = templates_dir().as_uri()
    files_served = [url for url in fetcher.served if not url.startswith("data:image/svg+xml")]
    assert files_served and all(url.startswith(root) for url in files_served)
    assert no_network == []


def test_fetcher_serves_package_assets_and_allowed_data_uris() -> None:
    fetcher = AssetFetcher()
    css = fetcher.fetch((templates_dir() / "pack.css").as_uri())
    assert css.content_type == "text/css"
    assert b"@font-face" in css.read()
    font = fetcher.fetch((templates_dir() / "fonts" / "DejaVuSans.ttf").as_uri())
    assert font.read()[:4] == b"\x00\x01\x00\x00"  # TrueType signature
    png = fetcher.fetch("data:image/png;base64," + base64.b64encode(TINY_PNG).decode())
    assert png.content_type == "image/png" and png.read() == TINY_PNG
    svg = fetcher.fetch(
        "data:image/svg+xml,%3Csvg%20xmlns%3D%22http%3A//www.w3.org/2000/svg%22/%3E"
    )
    assert svg.read() == b'<svg xmlns="http://www.w3.org/2000/svg"/>'
    assert fetcher.refused == []


@pytest.mark.parametrize(
    "url",
    [
        "data:image/jpeg;base64,AAAA",
        "data:text/css,body{}",
        "data:,plain",
        "data:image/png;base64",  # no comma
        "javascript:alert(1)",
        "attachment:secret.txt",
        "mailto:someone@example.invalid",
    ],
)
def test_fetcher_refuses_other_schemes_and_data_types(url: str) -> None:
    fetcher = AssetFetcher()
    with pytest.raises(FetchRefusedError) as info:
        fetcher.fetch(url)
    assert info.value.url == url
    assert [r.url for r in fetcher.refused] == [url]


def test_fetcher_refuses_package_files_that_are_not_assets() -> None:
    fetcher = AssetFetcher()
    for name in ("base.html.j2", "__init__.py", "fonts/LICENSE", "fonts"):
        with pytest.raises(FetchRefusedError):
            fetcher.fetch((templates_dir() / name).as_uri())
    with pytest.raises(FetchRefusedError, match="no such file"):
        fetcher.fetch((templates_dir() / "missing.css").as_uri())


def test_fetcher_refuses_symlink_out_of_its_root(tmp_path: Path) -> None:
    root = tmp_path / "assets"
    root.mkdir()
    (root / "ok.css").write_text("p { color: black }")
    outside = tmp_path / "outside.css"
    outside.write_text("secret")
    (root / "link.css").symlink_to(outside)
    fetcher = AssetFetcher(root=root)
    assert fetcher.fetch((root / "ok.css").as_uri()).read() == b"p { color: black }"
    with pytest.raises(FetchRefusedError, match="outside"):
        fetcher.fetch((root / "link.css").as_uri())
    with pytest.raises(FetchRefusedError, match="outside"):
        fetcher.fetch(
            (root / ".." / "outside.css").as_uri().replace("/assets/..", "/assets/%2E%2E")
        )


# --------------------------------------------------------------------------
# The PDF
# --------------------------------------------------------------------------


def test_pdf_is_tagged_with_language_and_title() -> None:
    html = _document("<h2>Heading</h2><p>Paragraph.</p>")
    pdf = html_to_pdf(html, page_size="A4", title="Briefing pack title", lang="en-GB")
    reader = PdfReader(io.BytesIO(pdf))
    catalog = reader.trailer["/Root"]
    assert "/StructTreeRoot" in catalog
    assert bool(catalog["/MarkInfo"]["/Marked"])
    assert catalog["/Lang"] == "en-GB"
    assert bool(catalog["/ViewerPreferences"]["/DisplayDocTitle"])
    assert reader.metadata is not None and reader.metadata.title == "Briefing pack title"
    assert b"pdfuaid:part" in catalog["/Metadata"].get_object().get_data()
    assert reader.pdf_header == "%PDF-1.7"


def test_bundled_font_is_embedded() -> None:
    fetcher = AssetFetcher()
    pdf = html_to_pdf(
        _document("<p>Regular <b>bold</b> <i>oblique</i></p>"),
        page_size="A4",
        title="Fonts",
        fetcher=fetcher,
    )
    names = _font_names(pdf)
    assert names and all("DejaVu" in name for name in names), names
    assert any("Bold" in name for name in names)
    fonts_url = (templates_dir() / "fonts").as_uri()
    assert sum(url.startswith(fonts_url) for url in fetcher.served) == 3


def test_same_html_gives_identical_pdf_bytes(monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")
    png = "data:image/png;base64," + base64.b64encode(TINY_PNG).decode()
    html = _document(f'<p>Same text.</p><figure><img src="{png}" alt="dot"></figure>')
    first = html_to_pdf(html, page_size="A4", title="Same")
    second = html_to_pdf(html, page_size="A4", title="Same")
    assert first == second
    info = PdfReader(io.BytesIO(first)).metadata
    assert info is not None
    # 1700000000 s after the epoch is 2023-11-14 22:13:20 UTC.
    assert info["/CreationDate"] == "D:20231114221320Z"
    assert info["/ModDate"] == "D:20231114221320Z"


_SUBPROCESS_RENDER = textwrap.dedent(
    """
    import hashlib, io, json, sys
    from pypdf import PdfReader
    from prepkit.report.render import html_to_pdf, render_html
    html = render_html("base.html.j2", json.loads(sys.argv[1]))
    pdf = html_to_pdf(html, page_size="Letter", title="Across processes")
    reader = PdfReader(io.BytesIO(pdf))
    fonts = sorted(
        str(f.get_object()["/BaseFont"])
        for page in reader.pages
        for f in page["/Resources"]["/Font"].get_object().values()
    )
    text = reader.pages[0].extract_text()
    print(json.dumps({"sha256": hashlib.sha256(pdf).hexdigest(), "fonts": fonts, "text": text}))
    """
)


def _render_in_subprocess(tmp_path: Path, extra_env: dict[str, str]) -> dict[str, Any]:
    context = {**BASE_CONTEXT, "page_size": "Letter", "title": "Across processes"}
    env = {**os.environ, "SOURCE_DATE_EPOCH": "1700000000", **extra_env}
    done = subprocess.run(
        [sys.executable, "-c", _SUBPROCESS_RENDER, json.dumps(context)],
        capture_output=True,
        text=True,
        env=env,
        cwd=tmp_path,
        timeout=120,
        check=False,
    )
    assert done.returncode == 0, done.stderr
    result: dict[str, Any] = json.loads(done.stdout)
    return result


def test_pdf_bytes_identical_across_processes_and_hash_seeds(tmp_path: Path) -> None:
    first = _render_in_subprocess(tmp_path, {"PYTHONHASHSEED": "1"})
    second = _render_in_subprocess(tmp_path, {"PYTHONHASHSEED": "2"})
    assert first["sha256"] == second["sha256"]


def test_renders_with_no_system_fonts(tmp_path: Path) -> None:
    # A fontconfig configuration naming no font folders: the only fonts
    # Pango can find are the ones pack.css brings with @font-face.
    config = tmp_path / "fonts.conf"
    cache = tmp_path / "fc-cache"
    config.write_text(f"<?xml version='1.0'?><fontconfig><cachedir>{cache}</cachedir></fontconfig>")
    result = _render_in_subprocess(
        tmp_path, {"FONTCONFIG_FILE": str(config), "FONTCONFIG_PATH": str(tmp_path)}
    )
    assert result["fonts"] and all("DejaVu" in name for name in result["fonts"])
    assert "Across processes" in result["text"]


def test_page_size_follows_template_and_is_checked() -> None:
    letter = render_html("base.html.j2", {**BASE_CONTEXT, "page_size": "Letter"})
    pdf = html_to_pdf(letter, page_size="Letter", title="Letter")
    box = PdfReader(io.BytesIO(pdf)).pages[0].mediabox
    assert (round(float(box.width)), round(float(box.height))) == (612, 792)  # 8.5 x 11 in
    with pytest.raises(PageSizeError) as info:
        html_to_pdf(letter, page_size="A4", title="Mismatch")
    assert info.value.expected == "A4" and info.value.page == 1
    with pytest.raises(ValueError, match="page_size"):
        html_to_pdf(letter, page_size="A3", title="Unknown")


def test_footer_shows_page_x_of_y_and_provenance() -> None:
    rows = "".join(f"<tr><td>row {i}</td></tr>" for i in range(120))
    html = _document(f"<table><thead><tr><th>Head</th></tr></thead><tbody>{rows}</tbody></table>")
    pdf = html_to_pdf(html, page_size="A4", title="Footer")
    reader = PdfReader(io.BytesIO(pdf))
    count = len(reader.pages)
    assert count >= 3
    for number, page in enumerate(reader.pages, start=1):
        text = page.extract_text()
        assert f"Page {number} of {count}" in text
        assert BASE_CONTEXT["provenance"] in text
        if number > 1:
            assert "Head" in text  # the table header repeats


# --------------------------------------------------------------------------
# Chart style
# --------------------------------------------------------------------------


def _figure() -> matplotlib.figure.Figure:
    import matplotlib.pyplot as plt

    with matplotlib.rc_context(style.chart_rcparams()):
        fig, ax = plt.subplots(figsize=style.figure_size("A4"))
        for i in range(4):
            ax.plot(range(12), [i + 0.4 * x for x in range(12)], label=f"Series {i + 1}")
        ax.set_title("Title")
        ax.legend()
    return fig


def test_chart_bytes_are_reproducible() -> None:
    import matplotlib.pyplot as plt

    with matplotlib.rc_context(style.chart_rcparams()):
        fig = _figure()
        other = _figure()
        png = style.figure_bytes(fig, "png")
        svg = style.figure_bytes(fig, "svg")
        assert png == style.figure_bytes(fig, "png") == style.figure_bytes(other, "png")
        assert svg == style.figure_bytes(fig, "svg") == style.figure_bytes(other, "svg")
    plt.close("all")
    assert png.startswith(b"\x89PNG")
    assert b"<dc:date>" not in svg and b"Matplotlib v" not in svg
    assert b"Software" not in png


def test_series_differ_in_colour_dash_and_marker() -> None:
    styles = style.SERIES_STYLES
    for attribute in ("color", "dashes", "marker"):
        values = [getattr(s, attribute) for s in styles]
        assert len(set(values)) == len(values), attribute
    assert {s.color for s in styles} == set(style.OKABE_ITO.values())
    assert style.series_style(len(styles)) == styles[0]
    params = style.chart_rcparams()
    assert params["svg.hashsalt"] and params["svg.fonttype"] == "path"
    assert params["font.sans-serif"] == ["DejaVu Sans"]


def test_pack_css_uses_the_chart_palette() -> None:
    css = (templates_dir() / "pack.css").read_text()
    declared = dict(re.findall(r"--([a-z0-9-]+):\s*(#[0-9A-Fa-f]{6})", css))
    for index, series in enumerate(style.SERIES_STYLES, start=1):
        assert declared[f"series-{index}"].upper() == series.color.upper()
    for name, colour in style.CSS_COLORS.items():
        assert declared[name].upper() == colour.upper(), name


def test_figure_sizes_fit_the_text_block() -> None:
    # A4 text block: 210 mm - 2 x 18 mm; Letter: 8.5 in - 2 x 0.75 in (pack.css margins).
    assert style.figure_size("A4")[0] == pytest.approx(174 / 25.4)
    assert style.figure_size("Letter", width_fraction=0.5)[0] == pytest.approx(3.5)
    with pytest.raises(ValueError):
        style.figure_size("A4", width_fraction=0)


# --------------------------------------------------------------------------
# Spreadsheet cells
# --------------------------------------------------------------------------

HOSTILE_CELLS = [
    "=1+1",
    '=HYPERLINK("http://example.invalid","click")',
    "+41 22 000 00 00",
    "-5",
    "@SUM(A1:A2)",
    "\t=1+1",
    "\r=1+1",
    "plain text",
]


def test_text_cells_are_saved_as_strings_not_formulas(tmp_path: Path) -> None:
    wb = openpyxl.Workbook()
    ws = wb.active
    assert ws is not None
    for row, text in enumerate(HOSTILE_CELLS, start=1):
        write_text_cell(ws, row, 1, text)
    path = tmp_path / "cells.xlsx"
    wb.save(path)

    with zipfile.ZipFile(path) as archive:
        sheet_xml = archive.read("xl/worksheets/sheet1.xml").decode()
    assert "<f>" not in sheet_xml and "<f " not in sheet_xml

    reloaded = openpyxl.load_workbook(path, data_only=False)
    sheet = reloaded.active
    assert sheet is not None
    for row, text in enumerate(HOSTILE_CELLS, start=1):
        cell = sheet.cell(row=row, column=1)
        assert cell.data_type == "s", text
        assert cell.value == safe_cell_text(text)
        assert cell.quotePrefix is looks_like_formula(safe_cell_text(text))


def test_write_text_row_and_merged_cells(tmp_path: Path) -> None:
    wb = openpyxl.Workbook()
    ws = wb.active
    assert ws is not None
    write_text_row(ws, 2, ["=A", "b"], start_col=2)
    assert ws["B2"].value == "=A" and ws["B2"].data_type == "s"
    assert ws["C2"].value == "b"
    ws.merge_cells("A5:B5")
    with pytest.raises(ValueError, match="merged"):
        write_text_cell(ws, 5, 2, "x")


def test_cell_text_helpers() -> None:
    assert safe_cell_text("a\x00b\x07c\td\ne") == "abc\td\ne"
    assert safe_cell_text("a\r\nb\rc") == "a\nb\nc"
    assert safe_csv_text("=cmd|' /C calc'!A0") == "'=cmd|' /C calc'!A0"
    assert safe_csv_text("-3") == "'-3"
    assert safe_csv_text("plain") == "plain"
    assert all(looks_like_formula(t) for t in HOSTILE_CELLS[:-1])
    assert not looks_like_formula("plain text")


def test_render_leaves_no_font_folder_behind(tmp_path: Path) -> None:
    # weasyprint copies @font-face fonts to a temporary folder and removes it only when
    # garbage-collected; a worker process ends with os._exit, which collects nothing.
    child = textwrap.dedent(
        """
        import os
        from prepkit.report.render import html_to_pdf, render_html
        html = render_html("base.html.j2", {"title": "T", "page_size": "A4", "provenance": "p"})
        html_to_pdf(html, page_size="A4", title="T")
        os._exit(0)
        """
    )
    env = {**os.environ, "TMPDIR": str(tmp_path)}
    subprocess.run([sys.executable, "-c", child], check=True, env=env, timeout=120)
    assert list(tmp_path.glob("weasyprint-*")) == []
