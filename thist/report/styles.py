"""Fonts, paragraph styles, escaping of user text and number formatting for the report.

The fonts are DejaVu Sans and DejaVu Sans Mono as shipped with matplotlib, embedded
(as subsets) in every PDF so that non-ASCII text in titles, notes and file names
renders the same on every machine.
"""

from __future__ import annotations

import math
from pathlib import Path
from xml.sax.saxutils import escape

import matplotlib
from reportlab.lib import colors
from reportlab.lib.enums import TA_LEFT
from reportlab.lib.styles import ParagraphStyle
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont

FONT = "DejaVuSans"
FONT_BOLD = "DejaVuSans-Bold"
FONT_MONO = "DejaVuSansMono"

#: Colours: one dark grey for text and rules, one muted blue for headings and lines.
INK = colors.HexColor("#222222")
ACCENT = colors.HexColor("#2f4b6e")
RULE = colors.HexColor("#9aa5b1")
SHADE = colors.HexColor("#eef1f4")
WARN = colors.HexColor("#8a1c1c")

_registered = False


def register_fonts() -> None:
    """Register the DejaVu TTF fonts bundled with matplotlib with reportlab (once)."""
    global _registered
    if _registered:
        return
    ttf = Path(matplotlib.get_data_path()) / "fonts" / "ttf"
    for name, file in (
        (FONT, "DejaVuSans.ttf"),
        (FONT_BOLD, "DejaVuSans-Bold.ttf"),
        (FONT_MONO, "DejaVuSansMono.ttf"),
    ):
        pdfmetrics.registerFont(TTFont(name, str(ttf / file)))
    pdfmetrics.registerFontFamily(
        FONT, normal=FONT, bold=FONT_BOLD, italic=FONT, boldItalic=FONT_BOLD
    )
    _registered = True


def styles() -> dict[str, ParagraphStyle]:
    """The paragraph styles of the report, by name."""
    register_fonts()
    base = ParagraphStyle(
        "body", fontName=FONT, fontSize=9, leading=12, textColor=INK, alignment=TA_LEFT
    )
    bold = {"parent": base, "fontName": FONT_BOLD}
    keep = {"keepWithNext": 1}  # a heading stays on the page of what follows it
    return {
        "body": base,
        "small": ParagraphStyle("small", parent=base, fontSize=7.5, leading=9.5),
        "cell": ParagraphStyle("cell", parent=base, fontSize=7.5, leading=9),
        "head": ParagraphStyle("head", **bold, fontSize=7.5, leading=9),
        "title": ParagraphStyle("title", **bold, fontSize=16, leading=20, spaceAfter=6),
        "h1": ParagraphStyle(
            "h1",
            **bold,
            **keep,
            fontSize=12,
            leading=15,
            textColor=ACCENT,
            spaceBefore=10,
            spaceAfter=4,
        ),
        "h2": ParagraphStyle(
            "h2", **bold, **keep, fontSize=9.5, leading=12, spaceBefore=6, spaceAfter=2
        ),
        "status": ParagraphStyle("status", **bold, fontSize=10, leading=13, textColor=WARN),
        "warn": ParagraphStyle("warn", parent=base, textColor=WARN),
        "mono": ParagraphStyle("mono", parent=base, fontName=FONT_MONO, fontSize=7, leading=8.5),
    }


def esc(text: object) -> str:
    """User or program text made safe for a reportlab Paragraph (``<``, ``>``, ``&``)."""
    return escape(str(text))


def fmt(x: float | None, sig: int = 4) -> str:
    """A number with ``sig`` significant figures, without an exponent in 1e-4 … 1e7.

    The same function formats every table, so a value can be found again in the
    PDF text. Non-finite or missing values read "-".
    """
    if x is None:
        return "-"
    x = float(x)
    if not math.isfinite(x):
        return "-"
    if x == 0:
        return "0"
    mag = math.floor(math.log10(abs(x)))
    if -4 <= mag < 7:
        decimals = max(0, sig - 1 - mag)
        return f"{x:.{decimals}f}"
    return f"{x:.{sig - 1}e}"


def pct(x: float | None, digits: int = 2) -> str:
    """A ratio shown as a percentage ("-" if not finite)."""
    if x is None or not math.isfinite(float(x)):
        return "-"
    return f"{100.0 * float(x):.{digits}f}"
