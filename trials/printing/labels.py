"""Cup labels: one per cup, in serving order, grouped per panelist.

Each label shows the cup's code in large bold digits and, in small print under it, the
panelist's code, the position ("2 of 3") and the session, so that the kitchen can set
out each panelist's tray in order. A duo-trio reference cup also shows "R" (the ballot
marks it the same way). The sample is never printed.

Label stock
-----------
:class:`LabelLayout` describes a sheet of rectangular labels by its page, rows,
columns, margins and gaps (millimetres); the label size follows. The presets describe
common label stock (common practice; the dimensions are from memory, so check them
against the maker's template of the stock in use, and print one test sheet):

- ``A4_3X8``: A4 (210 x 297 mm), 3 x 8 = 24 labels of 70 x 37 mm, edge to edge
  (no side margins, 0.5 mm top and bottom, no gaps);
- ``A4_3X7``: A4, 3 x 7 = 21 labels of 63.5 x 38.1 mm, side margins 7.25 mm, top and
  bottom 15.15 mm, 2.5 mm between columns;
- ``LETTER_3X10``: US Letter (8.5 x 11 in), 3 x 10 = 30 labels of 2.625 x 1 in
  (66.7 x 25.4 mm), side margins 3/16 in, top and bottom 1/2 in, 1/8 in between columns.
"""

from __future__ import annotations

import io
from collections.abc import Iterable
from dataclasses import dataclass

from reportlab.lib.colors import Color, black

from trials.errors import TrialsError
from trials.model import PlanEntry, Record
from trials.printing.layout import (
    BOLD,
    MM,
    SANS,
    PrintResult,
    Progress,
    Ticker,
    finish,
    fit_size,
    group_plan,
    new_canvas,
    page_size,
    printable,
)

GREY = Color(0.4, 0.4, 0.4)
OUTLINE = Color(0.8, 0.8, 0.8)


@dataclass(frozen=True, slots=True)
class LabelLayout(Record):
    """A sheet of labels.

    Parameters
    ----------
    page : {"A4", "Letter"}
    rows, columns : int
        Labels down and across one sheet.
    margins : (top, right, bottom, left), millimetres
        From the paper's edge to the outer labels.
    gaps : (between columns, between rows), millimetres
    new_row_per_panelist : bool
        Start each panelist's cups on a fresh row (True) or run on (False).
    outline : bool
        Draw a faint outline round each label (for plain paper to cut).
    skip : int
        Labels to leave blank at the start of the first sheet (a part-used sheet).
    """

    page: str = "A4"
    rows: int = 8
    columns: int = 3
    margins: tuple[float, float, float, float] = (0.5, 0.0, 0.5, 0.0)
    gaps: tuple[float, float] = (0.0, 0.0)
    new_row_per_panelist: bool = True
    outline: bool = False
    skip: int = 0

    @property
    def per_sheet(self) -> int:
        return self.rows * self.columns

    def label_size(self) -> tuple[float, float]:
        """Width and height of one label in points; checks the layout."""
        w, h = page_size(self.page)
        if self.rows < 1 or self.columns < 1:
            raise TrialsError(
                f"a label sheet needs at least one row and column, got rows={self.rows!r}, "
                f"columns={self.columns!r}")
        if len(self.margins) != 4 or len(self.gaps) != 2:
            raise TrialsError(
                f"margins are (top, right, bottom, left) and gaps (columns, rows) in mm, "
                f"got margins={self.margins!r}, gaps={self.gaps!r}")
        if min(self.margins) < 0 or min(self.gaps) < 0:
            raise TrialsError(
                f"margins and gaps cannot be negative: {self.margins!r}, {self.gaps!r}")
        top, right, bottom, left = (m * MM for m in self.margins)
        gx, gy = (g * MM for g in self.gaps)
        lw = (w - left - right - (self.columns - 1) * gx) / self.columns
        lh = (h - top - bottom - (self.rows - 1) * gy) / self.rows
        if lw < 20 * MM or lh < 10 * MM:
            raise TrialsError(
                f"labels of {lw / MM:.1f} x {lh / MM:.1f} mm are too small for a code; "
                f"check rows={self.rows}, columns={self.columns}, margins={self.margins!r}, "
                f"gaps={self.gaps!r}")
        if self.skip < 0 or self.skip >= self.per_sheet:
            raise TrialsError(f"skip must be 0 to {self.per_sheet - 1}, got {self.skip!r}")
        return lw, lh

    def origin(self, slot: int) -> tuple[float, float]:
        """Lower-left corner, in points, of label ``slot`` (0-based, across then down)."""
        _, h = page_size(self.page)
        lw, lh = self.label_size()
        top, _, _, left = (m * MM for m in self.margins)
        gx, gy = (g * MM for g in self.gaps)
        r, col = divmod(slot, self.columns)
        return left + col * (lw + gx), h - top - (r + 1) * lh - r * gy


A4_3X8 = LabelLayout("A4", 8, 3, (0.5, 0.0, 0.5, 0.0), (0.0, 0.0))
A4_3X7 = LabelLayout("A4", 7, 3, (15.15, 7.25, 15.15, 7.25), (2.5, 0.0))
LETTER_3X10 = LabelLayout("Letter", 10, 3, (12.7, 4.7625, 12.7, 4.7625), (3.175, 0.0))
PRESETS: dict[str, LabelLayout] = {"a4-3x8": A4_3X8, "a4-3x7": A4_3X7,
                                   "letter-3x10": LETTER_3X10}


def _slots(plan_groups, layout: LabelLayout):
    """(slot number across all sheets, entry, position count) for every cup."""
    slot = layout.skip
    for g in plan_groups:
        if layout.new_row_per_panelist and slot % layout.columns:
            slot += layout.columns - slot % layout.columns
        n = len(g.entries)
        for e in g.entries:
            yield slot, e, n
            slot += 1


def labels_pdf(
    plan: Iterable[PlanEntry],
    *,
    layout: LabelLayout = A4_3X8,
    progress: Progress | None = None,
) -> PrintResult:
    """Cup labels for every cup of ``plan``, in serving order, grouped per panelist.

    Parameters
    ----------
    plan : iterable of PlanEntry
        Sessions and panelists in order of first appearance, cups by position.
    layout : LabelLayout
        The label stock (default: A4, 3 x 8).
    progress : callable(done, total), optional
        Called per label (at most about 100 times, and at the end).

    Returns
    -------
    PrintResult
        ``kind="labels"``, ``items`` = number of labels.
    """
    groups = group_plan(plan)
    lw, lh = layout.label_size()
    size = page_size(layout.page)
    buffer = io.BytesIO()
    c = new_canvas(buffer, size, title="Cup labels")
    total = sum(len(g.entries) for g in groups)
    ticker = Ticker(progress, total)
    big_max = min(lh * 0.55, 40.0)
    small = max(6.0, min(8.5, lh * 0.11))
    sheet = 0
    for slot, e, n in _slots(groups, layout):
        page_no, on_page = divmod(slot, layout.per_sheet)
        while sheet < page_no + 1:
            if sheet:
                c.showPage()
            sheet += 1
        x, y = layout.origin(on_page)
        if layout.outline:
            c.setStrokeColor(OUTLINE)
            c.setLineWidth(0.3)
            c.roundRect(x + 1, y + 1, lw - 2, lh - 2, 3, stroke=1, fill=0)
            c.setLineWidth(1)
        code = printable(e.code)
        big = fit_size(code, BOLD, lw * 0.8, big_max, 8)
        cx = x + lw / 2
        line_y = y + lh * 0.16
        code_y = line_y + small + 4 + (lh * 0.84 - small - 4 - big * 0.72) / 2
        c.setFillColor(black)
        c.setFont(BOLD, big)
        c.drawCentredString(cx, code_y, code)
        if e.role == "R":
            c.setFont(BOLD, small + 1)
            c.drawString(x + 6, y + lh - small - 5, "R")
        c.setFillColor(GREY)
        info = printable(f"{e.panelist_code} · {e.position} of {n} · session {e.session}")
        c.setFont(SANS, fit_size(info, SANS, lw * 0.9, small, 4))
        c.drawCentredString(cx, line_y, info)
        ticker.tick()
    c.showPage()
    return PrintResult(finish(c, buffer), sheet, "labels", total)
