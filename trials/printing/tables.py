"""The critical-value table of a forced-choice method as a printable PDF.

The numbers come from :func:`trials.stats.discrimination.critical_table` (exact
binomial); this module only lays them out: panel sizes down the page, one column per
alpha, the header repeated on every page.
"""

from __future__ import annotations

import io

from trials.methods import get_method
from trials.printing.layout import BOLD, SANS, PrintResult, finish, new_canvas, page_size

ROW = 11.5  # points per table row
TOP, BOTTOM, LEFT = 60.0, 50.0, 56.0


def critical_table_pdf(table, *, page: str = "A4") -> PrintResult:
    """One or more pages: for each panel size ``n``, the fewest correct answers that
    conclude a difference at each alpha ("-" where no count reaches it).

    ``table`` is a :class:`trials.stats.discrimination.CriticalTable`.
    """
    spec = get_method(table.method)
    width, height = page_size(page)
    buffer = io.BytesIO()
    c = new_canvas(buffer, (width, height), title=f"Critical values: {spec.label}")
    col = min(80.0, (width - 2 * LEFT) / (len(table.alphas) + 1))
    rows_per_page = int((height - TOP - BOTTOM - 70) // ROW)
    sided = "two-sided" if spec.sides == 2 else "one-sided"
    pages = 0
    for start in range(0, len(table.ns), rows_per_page):
        pages += 1
        y = height - TOP
        c.setFont(BOLD, 13)
        c.drawString(LEFT, y, f"Critical values: {spec.label}")
        y -= 16
        c.setFont(SANS, 8.5)
        c.drawString(LEFT, y, f"Fewest correct answers that conclude a difference; exact "
                              f"binomial, {sided}, guessing probability {spec.guess:.3g}.")
        y -= 11
        c.drawString(LEFT, y, f"Method: {spec.reference}.")
        y -= 22
        c.setFont(BOLD, 9)
        c.drawString(LEFT, y, "n")
        for j, alpha in enumerate(table.alphas):
            c.drawRightString(LEFT + col * (j + 2) - 10, y, f"alpha {alpha:g}")
        y -= 4
        c.line(LEFT, y, LEFT + col * (len(table.alphas) + 1), y)
        y -= ROW
        c.setFont(SANS, 9)
        for i in range(start, min(start + rows_per_page, len(table.ns))):
            c.drawString(LEFT, y, str(table.ns[i]))
            for j, value in enumerate(table.critical[i]):
                c.drawRightString(LEFT + col * (j + 2) - 10, y,
                                  "-" if value is None else str(value))
            y -= ROW
        c.setFont(SANS, 7.5)
        c.drawString(LEFT, BOTTOM - 20, "Kitchen Trials")
        c.drawRightString(width - LEFT, BOTTOM - 20, f"page {pages}")
        c.showPage()
    return PrintResult(finish(c, buffer), pages, kind="table", items=len(table.ns))
