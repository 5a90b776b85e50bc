"""Page layout: A4, a running head with the title and "page x of y", a status footer.

The PDF is built in memory and then written atomically (thist.fileio), so a
failure at any point leaves no partial file and keeps the previous report.
"""

from __future__ import annotations

import io
from collections.abc import Callable
from pathlib import Path

from reportlab.lib.pagesizes import A4
from reportlab.lib.units import mm
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.pdfgen import canvas as rl_canvas
from reportlab.platypus import BaseDocTemplate, Flowable, Frame, PageTemplate

from thist import __version__, cautions
from thist.fileio import atomic_open
from thist.report.styles import ACCENT, FONT, INK, RULE, register_fonts

PAGE_W, PAGE_H = A4
MARGIN_X = 20 * mm
MARGIN_TOP = 22 * mm
MARGIN_BOTTOM = 20 * mm


def _fit(text: str, font: str, size: float, width: float) -> str:
    """Shorten ``text`` with an ellipsis until it fits ``width`` points."""
    if stringWidth(text, font, size) <= width:
        return text
    while text and stringWidth(text + "…", font, size) > width:
        text = text[:-1]
    return text + "…"


def _numbered_canvas(title: str) -> type[rl_canvas.Canvas]:
    """A canvas that draws the running head and "page x of y" once the count is known."""

    class NumberedCanvas(rl_canvas.Canvas):
        def __init__(self, *args, **kwargs):
            super().__init__(*args, **kwargs)
            self._pages: list[dict] = []

        def showPage(self):  # noqa: N802 - reportlab's name
            self._pages.append(dict(self.__dict__))
            self._startPage()

        def save(self):
            total = len(self._pages)
            for state in self._pages:
                self.__dict__.update(state)
                self._decorate(total)
                super().showPage()
            super().save()

        def _decorate(self, total: int) -> None:
            self.saveState()
            top = PAGE_H - 12 * mm
            self.setFont(FONT, 7.5)
            self.setFillColor(INK)
            page = f"page {self._pageNumber} of {total}"
            right = PAGE_W - MARGIN_X
            room = right - MARGIN_X - stringWidth(page, FONT, 7.5) - 8 * mm
            self.drawString(MARGIN_X, top, _fit(title, FONT, 7.5, room))
            self.drawRightString(right, top, page)
            self.setStrokeColor(ACCENT)
            self.setLineWidth(0.6)
            self.line(MARGIN_X, top - 2.5 * mm, right, top - 2.5 * mm)
            self.setStrokeColor(RULE)
            self.setLineWidth(0.3)
            self.line(MARGIN_X, 13 * mm, right, 13 * mm)
            self.setFont(FONT, 7)
            self.drawString(MARGIN_X, 9 * mm, cautions.STATUS)
            self.drawRightString(right, 9 * mm, f"thist {__version__}")
            self.restoreState()

    return NumberedCanvas


def build_pdf(title: str, story: list[Flowable]) -> bytes:
    """Lay out ``story`` on A4 pages with the running head; return the PDF bytes.

    Parameters
    ----------
    title : str
        Plain text for the running head and the PDF metadata (not markup).
    story : list of Flowable
    """
    register_fonts()
    buf = io.BytesIO()
    doc = BaseDocTemplate(
        buf,
        pagesize=A4,
        leftMargin=MARGIN_X,
        rightMargin=MARGIN_X,
        topMargin=MARGIN_TOP,
        bottomMargin=MARGIN_BOTTOM,
        title=title,
        author=f"thist {__version__}",
        subject=cautions.STATUS,
        # Start every page in the embedded font, so that no unembedded base-14 font is used.
        initialFontName=FONT,
        initialFontSize=9,
        initialLeading=12,
    )
    frame = Frame(
        MARGIN_X,
        MARGIN_BOTTOM,
        PAGE_W - 2 * MARGIN_X,
        PAGE_H - MARGIN_TOP - MARGIN_BOTTOM,
        id="body",
    )
    doc.addPageTemplates([PageTemplate(id="page", frames=[frame])])
    doc.build(story, canvasmaker=_numbered_canvas(title))
    return buf.getvalue()


def write_pdf(path: str | Path, make: Callable[[], bytes]) -> Path:
    """Build the PDF with ``make()`` in memory, then write it atomically to ``path``."""
    data = make()
    path = Path(path)
    with atomic_open(path, "wb") as fh:
        fh.write(data)
    return path
