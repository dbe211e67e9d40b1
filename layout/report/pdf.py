"""The report as a PDF, laid out by fpdf2 (pure Python) on A4 or US Letter.

Text is real text in an embedded DejaVu Sans (the font matplotlib ships), so it can be
searched and read back (the tests read the numbers back with pypdf). Figures are drawn by
:mod:`layout.report.drawing` and placed as PNG images at 200 dots per inch.
"""

from __future__ import annotations

import io
from pathlib import Path

import matplotlib
from fpdf import FPDF, FontFace

from .blocks import Beside, Figure, Paragraph, Table
from .colours import INK, hex_to_rgb
from .drawing import figure_png
from .options import PAPERS

__all__ = ["render_pdf"]

_FONT_DIR = Path(matplotlib.get_data_path()) / "fonts" / "ttf"
_FONT = "DejaVu"
#: Page margin [mm].
MARGIN_MM = 15.0
#: Share of the text width the sky chart takes beside its table.
BESIDE_SHARE = 0.58
_INK = tuple(round(float(c) * 255) for c in hex_to_rgb(INK))
_GREY = (93, 107, 106)
_HEAD_FILL = (238, 244, 243)


class _Pdf(FPDF):
    def __init__(self, paper: str, footer_text: str):
        super().__init__(orientation="P", unit="mm", format=PAPERS[paper])
        self.footer_text = footer_text
        self.add_font(_FONT, "", _FONT_DIR / "DejaVuSans.ttf")
        self.add_font(_FONT, "B", _FONT_DIR / "DejaVuSans-Bold.ttf")
        self.set_margins(MARGIN_MM, MARGIN_MM, MARGIN_MM)
        self.set_auto_page_break(True, margin=MARGIN_MM + 2.0)
        self.set_text_color(*_INK)

    def footer(self):
        self.set_y(-MARGIN_MM + 3.0)
        self.set_font(_FONT, "", 7)
        self.set_text_color(*_GREY)
        self.cell(0, 4, f"{self.footer_text} · page {self.page_no()} of {{nb}}", align="C")
        self.set_text_color(*_INK)


def _paragraph(pdf: _Pdf, block: Paragraph) -> None:
    size = {"note": 8.0, "lead": 11.0}.get(block.style, 9.5)
    pdf.set_font(_FONT, "", size)
    if block.style == "note":
        pdf.set_text_color(*_GREY)
    pdf.multi_cell(0, size * 0.5, block.text, align="L", new_x="LMARGIN", new_y="NEXT")
    pdf.set_text_color(*_INK)
    pdf.ln(1.5)


def _col_widths(pdf: _Pdf, table: Table, size: float, width: float) -> list[float]:
    """Column widths [mm]: cells never wrap; headings wrap only when the table is too wide."""
    pad = 2.4
    pdf.set_font(_FONT, "B", size)
    body = [0.0] * len(table.columns)
    for cells in table.rows:
        for k, cell in enumerate(cells):
            body[k] = max(body[k], pdf.get_string_width(str(cell)) + pad)
    heads = [pdf.get_string_width(str(c)) + pad for c in table.columns]
    words = [max((pdf.get_string_width(w) for w in str(c).split()), default=0.0) + pad
             for c in table.columns]
    widths = [max(b, h) for b, h in zip(body, heads, strict=True)]
    if sum(widths) > width:  # let headings wrap at their words
        widths = [max(b, w) for b, w in zip(body, words, strict=True)]
        spare = width - sum(widths)
        grow = [max(h - w, 0.0) for h, w in zip(heads, widths, strict=True)]
        if spare > 0 and sum(grow) > 0:
            widths = [w + spare * g / sum(grow) for w, g in zip(widths, grow, strict=True)]
    return widths


def _table(pdf: _Pdf, table: Table, *, width: float | None = None, align: str = "LEFT") -> None:
    width = width or pdf.epw
    if table.caption:
        pdf.set_font(_FONT, "B", 8.5)
        pdf.set_x(pdf.l_margin if align == "LEFT" else pdf.l_margin + pdf.epw - width)
        pdf.multi_cell(width, 4.2, table.caption, align="L", new_x="LMARGIN", new_y="NEXT")
    headed = any(table.columns)
    size = 7.0 if len(table.columns) > 7 else 8.0
    widths = _col_widths(pdf, table, size, width)
    total = min(sum(widths), width)
    pdf.set_font(_FONT, "", size)
    alignment = ["LEFT" if a == "l" else "RIGHT" for a in table.alignment()]
    if align == "RIGHT":
        pdf.set_x(pdf.l_margin + pdf.epw - width)
    with pdf.table(width=total, col_widths=widths, align=align, text_align=alignment,
                   first_row_as_headings=headed, line_height=size * 0.5,
                   borders_layout="HORIZONTAL_LINES", padding=(0.6, 1.0),
                   headings_style=FontFace(emphasis="BOLD", fill_color=_HEAD_FILL,
                                           size_pt=size),
                   repeat_headings=1) as out:
        if headed:
            out.row([str(c) for c in table.columns])
        for k, cells in enumerate(table.rows):
            style = FontFace(emphasis="BOLD") if k >= len(table.rows) - table.total_rows \
                else None
            out.row([str(c) for c in cells], style=style)
    pdf.ln(3.0)


def _image(pdf: _Pdf, block: Figure, png: bytes, width: float, *,
           shrink_to: float = 1.0) -> tuple[float, float]:
    """Place a figure at the current line; return its width and height [mm].

    A figure that does not fit in what is left of the page is drawn smaller, down to
    ``shrink_to`` of its width, or else on the next page.
    """
    from PIL import Image

    with Image.open(io.BytesIO(png)) as image:
        ratio = image.height / image.width
    room = pdf.h - pdf.b_margin - pdf.get_y() - 10.0
    if width * ratio > room:
        if room / ratio >= shrink_to * width:
            width = room / ratio
        else:
            pdf.add_page()
    height = width * ratio
    x = pdf.l_margin + (pdf.epw - width) / 2.0 if shrink_to < 1.0 else pdf.l_margin
    pdf.image(io.BytesIO(png), x=x, y=pdf.get_y(), w=width, h=height, alt_text=block.caption)
    return width, height


def _caption(pdf: _Pdf, text: str, width: float) -> None:
    pdf.set_font(_FONT, "", 7.5)
    pdf.set_text_color(*_GREY)
    pdf.multi_cell(width, 3.6, text, align="L", new_x="LMARGIN", new_y="NEXT")
    pdf.set_text_color(*_INK)
    pdf.ln(2.0)


def _figure(pdf: _Pdf, block: Figure) -> None:
    _, height = _image(pdf, block, figure_png(block, width_mm=pdf.epw), pdf.epw,
                       shrink_to=0.6)
    pdf.set_y(pdf.get_y() + height + 1.0)
    _caption(pdf, block.caption, pdf.epw)


def _beside(pdf: _Pdf, block: Beside) -> None:
    width = pdf.epw * BESIDE_SHARE
    rows = len(block.table.rows) + 2
    needed = max(width * 0.62, rows * 4.2) + 14.0
    if pdf.get_y() + needed > pdf.h - pdf.b_margin:
        pdf.add_page()
    top = pdf.get_y()
    _, height = _image(pdf, block.figure, figure_png(block.figure, width_mm=width), width)
    pdf.set_y(top + height + 1.0)
    _caption(pdf, block.figure.caption, width)
    below = pdf.get_y()
    pdf.set_y(top)
    _table(pdf, block.table, width=pdf.epw - width - 4.0, align="RIGHT")
    pdf.set_y(max(below, pdf.get_y()) + 2.0)


def render_pdf(document, *, progress=None) -> bytes:
    """Return the report as PDF bytes, on the document's paper.

    Parameters
    ----------
    document : layout.report.blocks.ReportDocument
    progress : callable, keyword-only, optional
        Called as ``progress(label, done, total)`` before each section is laid out.
    """
    pdf = _Pdf(document.paper, document.footer)
    pdf.set_title(document.title)
    pdf.set_creator("eaveline")
    pdf.add_page()
    for k, section in enumerate(document.sections):
        if progress is not None:
            progress(f"laying out the PDF: {section.title.lower()}", k, len(document.sections))
        if section.new_page and k:
            pdf.add_page()
        pdf.set_font(_FONT, "B", 16 if k == 0 else 13)
        pdf.multi_cell(0, 8, section.title if k else document.title, align="L",
                       new_x="LMARGIN", new_y="NEXT")
        pdf.ln(1.0)
        for block in section.blocks:
            if isinstance(block, Paragraph):
                _paragraph(pdf, block)
            elif isinstance(block, Table):
                _table(pdf, block)
            elif isinstance(block, Figure):
                _figure(pdf, block)
            elif isinstance(block, Beside):
                _beside(pdf, block)
    return bytes(pdf.output())
