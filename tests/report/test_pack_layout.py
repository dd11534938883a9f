"""Printed pages are clean: nothing runs into the margins, no page is left nearly empty.

Both sample packs are rendered in A4 and in Letter (the paper size is the
only change to the sample plan), with their own number of uncertainty
draws, and every page of the PDFs is measured (the slow tests; the four
packs are made once for them all):

* every piece of text lies inside the page minus the margins that
  ``templates/pack.css`` sets for that paper, apart from the running footer,
  which lies inside the bottom margin and inside the left and right ones;
* every chart lies inside the same box;
* every page but the last holds at least :data:`MIN_LINES` lines of body
  text, a chart counting for the lines of body text its height would hold.

Text positions are read from the PDF content streams with pypdf: the text
state (font, size, matrices, spacing) is followed operator by operator as
the PDF reference describes it (ISO 32000-1:2008, section 9.4 "Text
objects" and 9.4.4 "Text space details", equations in 9.4.4), and each
shown string's box runs from its start to its advance, computed from the
font's glyph widths (section 9.7.4.3 "Glyph metrics in CIDFonts"), and from
the font's descent to its ascent. Section numbers of ISO 32000-1, of the CSS
specifications and of the paper standards cited below are from memory.
"""

from __future__ import annotations

import dataclasses
import re
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pytest
from pypdf import PdfReader
from pypdf.generic import ContentStream

from prepkit.fitting.project import fit_stage
from prepkit.pipeline.demo import sample_workbook
from prepkit.pipeline.pack import render_pack
from prepkit.report.charts_base import TEXT_BLOCK_HEIGHTS_IN, chart_height
from prepkit.report.render import templates_dir
from prepkit.scenarios.runs import run_plan
from prepkit.uncertainty.plan_runs import run_uncertainty
from prepkit.workbook.reader import read_plan

SAMPLES = ("vellmora_city.xlsx", "tamsett_hollow.xlsx")
SIZES = ("A4", "Letter")
EPOCH = "1796000000"

#: Fewest lines of body text on a page other than the last [lines]: fewer is a page holding
#: a stray paragraph end or a table row or two (common practice, no source).
MIN_LINES = 8

#: How far a glyph box may reach past a margin [points]: rounding in the PDF's numbers.
TOLERANCE_PT = 0.5

_POINTS_PER = {"mm": 72.0 / 25.4, "in": 72.0, "pt": 1.0, "cm": 72.0 / 2.54}

Matrix = tuple[float, float, float, float, float, float]
IDENTITY: Matrix = (1.0, 0.0, 0.0, 1.0, 0.0, 0.0)


def multiply(m: Matrix, n: Matrix) -> Matrix:
    """The PDF product m x n (apply m, then n; ISO 32000-1 section 8.3.4)."""
    a, b, c, d, e, f = m
    p, q, r, s, t, u = n
    return (a * p + b * r, a * q + b * s, c * p + d * r, c * q + d * s,
            e * p + f * r + t, e * q + f * s + u)


def apply(m: Matrix, x: float, y: float) -> tuple[float, float]:
    a, b, c, d, e, f = m
    return a * x + c * y + e, b * x + d * y + f


@dataclass(frozen=True)
class Box:
    """A rectangle on the page [points from the bottom left corner]."""

    x0: float
    y0: float
    x1: float
    y1: float
    text: str = ""


def _boxed(m: Matrix, x0: float, y0: float, x1: float, y1: float, text: str = "") -> Box:
    corners = [apply(m, x, y) for x, y in ((x0, y0), (x1, y0), (x0, y1), (x1, y1))]
    xs, ys = [c[0] for c in corners], [c[1] for c in corners]
    return Box(min(xs), min(ys), max(xs), max(ys), text)


class _Font:
    """Glyph widths [1/1000 text space unit] and vertical extent of one PDF font."""

    def __init__(self, font: Any) -> None:
        font = font.get_object()
        self.two_byte = font.get("/Subtype") == "/Type0"
        self.widths: dict[int, float] = {}
        if self.two_byte:
            cid_font = font["/DescendantFonts"][0].get_object()
            self.default = float(cid_font.get("/DW", 1000))
            table = list(cid_font.get("/W", []))
            i = 0
            while i < len(table):  # "c [w1 w2 ...]" or "c_first c_last w"
                first = int(table[i])
                if isinstance(table[i + 1].get_object(), list):
                    for k, w in enumerate(table[i + 1].get_object()):
                        self.widths[first + k] = float(w)
                    i += 2
                else:
                    for code in range(first, int(table[i + 1]) + 1):
                        self.widths[code] = float(table[i + 2])
                    i += 3
            descriptor = cid_font["/FontDescriptor"].get_object()
        else:
            self.default = 0.0
            first = int(font.get("/FirstChar", 0))
            for k, w in enumerate(font.get("/Widths", [])):
                self.widths[first + k] = float(w)
            descriptor = font.get("/FontDescriptor", {})
            descriptor = descriptor.get_object() if descriptor else {}
        self.ascent = float(descriptor.get("/Ascent", 800)) / 1000.0
        self.descent = float(descriptor.get("/Descent", -200)) / 1000.0
        self.unicode = _to_unicode(font["/ToUnicode"].get_object().get_data()
                                   if "/ToUnicode" in font else b"")

    def text(self, codes: list[int]) -> str:
        return "".join(self.unicode.get(code, "?") for code in codes)

    def codes(self, raw: bytes) -> list[int]:
        if self.two_byte:
            return [int.from_bytes(raw[i:i + 2], "big") for i in range(0, len(raw) - 1, 2)]
        return list(raw)


@dataclass
class _TextState:
    font: _Font | None = None
    size: float = 0.0
    char_spacing: float = 0.0
    word_spacing: float = 0.0
    scale: float = 1.0
    leading: float = 0.0
    rise: float = 0.0
    matrix: Matrix = IDENTITY
    line: Matrix = IDENTITY


def _to_unicode(cmap: bytes) -> dict[int, str]:
    """Glyph code to text from a ToUnicode CMap (bfchar and bfrange sections)."""
    text = cmap.decode("latin-1")
    out: dict[int, str] = {}

    def chars(hexa: str) -> str:
        return bytes.fromhex(hexa).decode("utf-16-be", errors="replace")

    for block in re.findall(r"beginbfchar(.*?)endbfchar", text, re.S):
        for src, dst in re.findall(r"<([0-9A-Fa-f]+)>\s*<([0-9A-Fa-f]*)>", block):
            out[int(src, 16)] = chars(dst)
    for block in re.findall(r"beginbfrange(.*?)endbfrange", text, re.S):
        for lo, hi, dst in re.findall(
            r"<([0-9A-Fa-f]+)>\s*<([0-9A-Fa-f]+)>\s*(<[0-9A-Fa-f]*>|\[[^\]]*\])", block
        ):
            if dst.startswith("["):
                for k, item in enumerate(re.findall(r"<([0-9A-Fa-f]*)>", dst)):
                    out[int(lo, 16) + k] = chars(item)
            else:
                first = int(dst[1:-1], 16)
                for k in range(int(hi, 16) - int(lo, 16) + 1):
                    out[int(lo, 16) + k] = chr(first + k)
    return out


def _as_bytes(value: Any) -> bytes:
    if isinstance(value, bytes):
        return value
    if hasattr(value, "original_bytes"):
        return bytes(value.original_bytes)
    return str(value).encode("latin-1")


def page_items(reader: PdfReader, page: Any) -> tuple[list[Box], list[Box]]:
    """The boxes of every shown string and of every image of a page [points]."""
    texts: list[Box] = []
    images: list[Box] = []
    fonts: dict[str, _Font] = {}

    def run(content: Any, resources: Any, ctm: Matrix) -> None:
        stack: list[tuple[Matrix, _TextState]] = []
        state = _TextState()
        font_table = resources.get("/Font", {}) if resources else {}
        xobjects = resources.get("/XObject", {}) if resources else {}

        def show(parts: list[Any]) -> None:
            """Show strings (and TJ's shifts between them) as one box from start to advance."""
            font = state.font
            assert font is not None, "text shown before a font was set"
            start = multiply(state.matrix, ctm)
            advance = 0.0
            text = []
            for part in parts:
                if isinstance(part, (int, float)):
                    advance -= float(part) / 1000.0 * state.size * state.scale
                    continue
                codes = font.codes(_as_bytes(part))
                text.append(font.text(codes))
                for code in codes:
                    glyph = font.widths.get(code, font.default) / 1000.0
                    spacing = state.word_spacing if (not font.two_byte and code == 32) else 0.0
                    advance += (glyph * state.size + state.char_spacing + spacing) * state.scale
            if advance > 0.0 and "".join(text).strip():
                texts.append(_boxed(
                    start, 0.0, state.rise + font.descent * state.size,
                    advance, state.rise + font.ascent * state.size, "".join(text),
                ))
            state.matrix = multiply((1.0, 0.0, 0.0, 1.0, advance, 0.0), state.matrix)

        def move(tx: float, ty: float) -> None:
            state.line = multiply((1.0, 0.0, 0.0, 1.0, tx, ty), state.line)
            state.matrix = state.line

        for operands, operator in ContentStream(content, reader).operations:
            op = operator.decode("latin-1") if isinstance(operator, bytes) else str(operator)
            nums = [float(v) for v in operands if isinstance(v, (int, float))]
            if op == "q":
                stack.append((ctm, dataclasses.replace(state)))
            elif op == "Q":
                ctm, state = stack.pop()
            elif op == "cm":
                ctm = multiply(tuple(nums), ctm)  # type: ignore[arg-type]
            elif op == "BT":
                state.matrix = state.line = IDENTITY
            elif op == "Tf":
                name = str(operands[0])
                if name not in fonts:
                    fonts[name] = _Font(font_table[name])
                state.font, state.size = fonts[name], float(operands[1])
            elif op == "Tm":
                state.matrix = state.line = tuple(nums)  # type: ignore[assignment]
            elif op == "Td":
                move(nums[0], nums[1])
            elif op == "TD":
                state.leading = -nums[1]
                move(nums[0], nums[1])
            elif op == "T*":
                move(0.0, -state.leading)
            elif op == "Tc":
                state.char_spacing = nums[0]
            elif op == "Tw":
                state.word_spacing = nums[0]
            elif op == "Tz":
                state.scale = nums[0] / 100.0
            elif op == "TL":
                state.leading = nums[0]
            elif op == "Ts":
                state.rise = nums[0]
            elif op == "Tj":
                show([operands[0]])
            elif op in ("'", '"'):
                if op == '"':
                    state.word_spacing, state.char_spacing = nums[0], nums[1]
                move(0.0, -state.leading)
                show([operands[-1]])
            elif op == "TJ":
                show(list(operands[0]))
            elif op == "Do":
                xobject = xobjects[str(operands[0])].get_object()
                if xobject.get("/Subtype") == "/Image":
                    images.append(_boxed(ctm, 0.0, 0.0, 1.0, 1.0))
                elif xobject.get("/Subtype") == "/Form":
                    form = tuple(float(v) for v in xobject.get("/Matrix", IDENTITY))
                    run(xobject, xobject.get("/Resources", resources), multiply(form, ctm))

    run(page.get_contents(), page.get("/Resources"), IDENTITY)
    return texts, images


# ---- The margins of pack.css ---------------------------------------------------------------------


def _length(text: str) -> float:
    match = re.fullmatch(r"([0-9.]+)(mm|in|pt|cm)", text.strip())
    assert match, f"a length in pack.css I cannot read: {text!r}"
    return float(match[1]) * _POINTS_PER[match[2]]


def css_margins(css: str) -> dict[str, tuple[float, float, float, float]]:
    """Page margins (top, right, bottom, left) [points] per paper size, read from pack.css."""
    found = {}
    for name, pattern in (("A4", r"@page\s*\{"), ("Letter", r"@page\s+pack-letter\s*\{")):
        start = re.search(pattern, css)
        assert start, f"pack.css has no {pattern} rule"
        margin = re.search(r"(?<![-\w])margin\s*:\s*([^;]+);", css[start.end():])
        assert margin, f"the {name} page rule of pack.css sets no margin"
        values = [_length(v) for v in margin[1].split()]
        # The CSS shorthand: one value for all sides; top-bottom and left-right; top,
        # left-right and bottom; or top, right, bottom and left (CSS Box Model Level 3).
        top, right, bottom, left = {
            1: lambda v: (v[0], v[0], v[0], v[0]),
            2: lambda v: (v[0], v[1], v[0], v[1]),
            3: lambda v: (v[0], v[1], v[2], v[1]),
            4: lambda v: (v[0], v[1], v[2], v[3]),
        }[len(values)](values)
        found[name] = (top, right, bottom, left)
    return found


def test_margins_are_read_from_pack_css() -> None:
    margins = css_margins((templates_dir() / "pack.css").read_text(encoding="utf-8"))
    mm = 72.0 / 25.4
    assert margins["A4"] == pytest.approx((20 * mm, 18 * mm, 24 * mm, 18 * mm))
    assert margins["Letter"] == pytest.approx((54.0, 54.0, 68.4, 54.0))


def test_charts_scale_with_the_text_block_of_pack_css() -> None:
    margins = css_margins((templates_dir() / "pack.css").read_text(encoding="utf-8"))
    paper_in = {"A4": 297.0 / 25.4, "Letter": 11.0}  # ISO 216; ANSI/ASME Y14.1
    for size, (top, _, bottom, _) in margins.items():
        block_in = paper_in[size] - (top + bottom) / 72.0
        assert TEXT_BLOCK_HEIGHTS_IN[size] == pytest.approx(block_in)
    assert chart_height("A4", 4.0) == 4.0
    assert chart_height("Letter", 4.0) == pytest.approx(4.0 * 9.3 / (253.0 / 25.4))


def test_the_measure_finds_text_in_the_margin_and_counts_lines(tmp_path: Path) -> None:
    from matplotlib import ft2font
    from weasyprint import HTML

    font_file = templates_dir() / "fonts" / "DejaVuSans.ttf"
    html = (
        "<style>@page { size: A4; margin: 20mm }"
        "@font-face { font-family: T; src: url(fonts/DejaVuSans.ttf) }"
        "body { margin: 0; font-family: T; font-size: 12pt }</style>"
        "<p>one</p><p>two</p><p style='margin-left: -15mm'>into the margin</p>"
    )
    pdf = tmp_path / "one.pdf"
    HTML(string=html, base_url=str(templates_dir()) + "/").write_pdf(pdf)
    reader = PdfReader(pdf)
    texts, images = page_items(reader, reader.pages[0])
    assert images == []
    assert [t.text for t in texts] == ["one", "two", "into the margin"]
    mm = 72.0 / 25.4
    assert texts[0].x0 == pytest.approx(20 * mm, abs=0.5)
    assert texts[2].x0 == pytest.approx(5 * mm, abs=0.5)
    # The advance of "one" from the font file itself, read by FreeType (matplotlib.ft2font).
    face = ft2font.FT2Font(str(font_file))
    units = sum(face.load_char(ord(c), flags=ft2font.LoadFlags.NO_SCALE).horiAdvance
                for c in "one")
    assert texts[0].x1 - texts[0].x0 == pytest.approx(units / face.units_per_EM * 12, abs=0.3)
    assert len(_baselines(texts)) == 3


# ---- The four packs ------------------------------------------------------------------------------


@dataclass
class Rendered:
    name: str
    size: str
    reader: PdfReader
    width: float
    height: float


@pytest.fixture(scope="module")
def packs(tmp_path_factory: pytest.TempPathFactory) -> list[Rendered]:
    """Both samples in both paper sizes, as ``prepkit run`` makes them (fitted to the observed
    figures where a sample has them: the fit adds a page, a cover row and leader lines)."""
    folder = tmp_path_factory.mktemp("layout")
    out = []
    with pytest.MonkeyPatch.context() as mp:
        mp.setenv("SOURCE_DATE_EPOCH", EPOCH)
        for workbook in SAMPLES:
            plan, fit = fit_stage(read_plan(sample_workbook(workbook)))
            results = run_plan(plan)
            ensemble = run_uncertainty(plan, results)
            for size in SIZES:
                sized = dataclasses.replace(
                    plan, details=dataclasses.replace(plan.details, page_size=size)
                )
                pdf = folder / f"{Path(workbook).stem}-{size}.pdf"
                pdf.write_bytes(render_pack(sized, results, ensemble=ensemble, fit=fit)
                                .files["briefing-pack.pdf"])
                reader = PdfReader(pdf)
                box = reader.pages[0].mediabox
                out.append(Rendered(workbook, size, reader, float(box.width),
                                    float(box.height)))
    return out


def _baselines(texts: list[Box]) -> set[float]:
    return {round(t.y0, 0) for t in texts}


def _body_and_footer(texts: list[Box], bottom: float) -> tuple[list[Box], list[Box]]:
    """Text above the bottom margin, and the running footer inside it."""
    body, footer = [], []
    for t in texts:
        (footer if t.y1 <= bottom + TOLERANCE_PT else body).append(t)
    return body, footer


def _pages(pack: Rendered) -> Iterator[tuple[int, list[Box], list[Box]]]:
    for number, page in enumerate(pack.reader.pages, start=1):
        texts, images = page_items(pack.reader, page)
        yield number, texts, images


@pytest.mark.slow
def test_the_packs_are_the_paper_size_asked_for(packs: list[Rendered]) -> None:
    sizes = {"A4": (595.3, 841.9), "Letter": (612.0, 792.0)}  # ISO 216; ANSI/ASME Y14.1
    for pack in packs:
        assert (pack.width, pack.height) == pytest.approx(sizes[pack.size], abs=0.1)


@pytest.mark.slow
def test_no_text_or_chart_runs_into_the_margins(packs: list[Rendered]) -> None:
    margins = css_margins((templates_dir() / "pack.css").read_text(encoding="utf-8"))
    problems = []
    for pack in packs:
        top, right, bottom, left = margins[pack.size]
        x_min, x_max = left - TOLERANCE_PT, pack.width - right + TOLERANCE_PT
        y_min, y_max = bottom - TOLERANCE_PT, pack.height - top + TOLERANCE_PT
        for number, texts, images in _pages(pack):
            body, footer = _body_and_footer(texts, bottom)
            assert footer, f"{pack.name} {pack.size} page {number}: no footer"
            where = f"{pack.name} {pack.size} page {number}"
            for kind, items in (("text", body), ("chart", images)):
                for item in items:
                    if not (x_min <= item.x0 and item.x1 <= x_max
                            and y_min <= item.y0 and item.y1 <= y_max):
                        problems.append(f"{where}: {kind} at {item} outside x [{x_min:.1f}, "
                                        f"{x_max:.1f}], y [{y_min:.1f}, {y_max:.1f}]")
            for item in footer:
                if not (x_min <= item.x0 and item.x1 <= x_max and item.y0 >= 0.0):
                    problems.append(f"{where}: footer text at {item} outside the page margins")
    assert problems == [], problems


@pytest.mark.slow
def test_no_page_but_the_last_is_nearly_empty(packs: list[Rendered]) -> None:
    margins = css_margins((templates_dir() / "pack.css").read_text(encoding="utf-8"))
    # A line of body text: 11pt at line-height 1.45 (pack.css, html).
    line_pt = 11.0 * 1.45
    problems = []
    for pack in packs:
        bottom = margins[pack.size][2]
        count = len(pack.reader.pages)
        for number, texts, images in _pages(pack):
            if number == count:
                continue
            body, _ = _body_and_footer(texts, bottom)
            lines = len(_baselines(body)) + sum((i.y1 - i.y0) / line_pt for i in images)
            if lines < MIN_LINES:
                problems.append(f"{pack.name} {pack.size} page {number}: {lines:.1f} lines")
    assert problems == [], problems
