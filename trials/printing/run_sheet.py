"""The run sheet of a recipe experiment: the kitchen's list of runs to make.

First the experiment (design, seed, factors with their units, ranges and declared
safe ranges) and the food-code caution, then one row per run in the randomised run
order: run, block, batch label, each factor's setting, and boxes to fill in by hand
(made by, date, the food-code check, the food-safety sign-off). A batch already signed
off in the store shows who signed it. The sheet names no blinding code.
"""

from __future__ import annotations

import io
from collections.abc import Sequence

from reportlab.lib.colors import Color, black
from reportlab.lib.pagesizes import landscape

from trials.model import Batch, Experiment
from trials.printing.layout import (
    BOLD,
    SANS,
    PrintResult,
    finish,
    new_canvas,
    page_size,
    printable,
    wrap,
)

MARGIN = 30.0
ROW = 17.0
SHADE = Color(0.95, 0.95, 0.95)
RED = Color(0.72, 0.05, 0.05)
GREY = Color(0.45, 0.45, 0.45)


def _num(v: float) -> str:
    return f"{v:.6g}"


def run_sheet_pdf(experiment: Experiment, *, batches: Sequence[Batch] = (), label: str = "",
                  caution: str = "", page: str = "A4") -> PrintResult:
    """The run sheet of ``experiment`` as a PDF (landscape).

    ``batches`` are the trial's batches (for sign-offs already on file), ``label`` the
    design's name in words, ``caution`` the food-code text printed on every page.
    """
    width, height = landscape(page_size(page))
    buffer = io.BytesIO()
    c = new_canvas(buffer, (width, height), title=f"Run sheet: {printable(experiment.name)}")
    signed = {(b.sample_name, b.label): b for b in batches}
    fixed = [("Run", 34), ("Block", 34), ("Batch", 44)]
    tail = [("Made by", 78), ("Date", 52), ("Food code checked", 86), ("Sign-off", 110)]
    free = width - 2 * MARGIN - sum(w for _, w in fixed + tail)
    fw = free / max(1, len(experiment.factors))
    factor_cols = [(f"{f.name} ({f.unit})" if f.unit else f.name, fw) for f in experiment.factors]
    columns = fixed + factor_cols + tail
    pages = 0
    runs = list(experiment.runs)
    i = 0
    while i < len(runs) or pages == 0:
        pages += 1
        y = _header(c, experiment, label, caution, width, height, first=pages == 1)
        x = MARGIN
        c.setFillColor(SHADE)
        c.rect(MARGIN, y - ROW + 4, width - 2 * MARGIN, ROW, stroke=0, fill=1)
        c.setFillColor(black)
        c.setFont(BOLD, 7.5)
        for title, w in columns:
            for k, line in enumerate(wrap(printable(title), BOLD, 7.5, w - 4)[:2]):
                c.drawString(x + 2, y - 5 - 7 * k, line)
            x += w
        y -= ROW + 2
        c.setFont(SANS, 8.5)
        while i < len(runs) and y > MARGIN + 2 * ROW:
            r = runs[i]
            b = signed.get((r.sample_name, r.batch_label))
            cells = [str(r.run), str(r.block), r.batch_label]
            cells += [_num(v) for v in r.settings]
            sign = (f"{b.safety_signed_by}, {b.safety_signed_on or ''}" if b and b.signed_off
                    else "")
            cells += ["", "", "", sign]
            x = MARGIN
            for (_, w), text in zip(columns, cells):
                c.rect(x, y - 5, w, ROW, stroke=1, fill=0)
                shown = wrap(printable(text), SANS, 8.5, w - 4)[:1]
                if shown:
                    c.drawString(x + 2, y, shown[0])
                x += w
            y -= ROW
            i += 1
        c.setFont(SANS, 7.5)
        c.setFillColor(GREY)
        c.drawString(MARGIN, MARGIN - 14, f"{printable(experiment.name)}: run sheet, "
                     f"{len(runs)} runs in random order (seed {experiment.seed})")
        c.drawRightString(width - MARGIN, MARGIN - 14, f"page {pages}")
        c.setFillColor(black)
        c.showPage()
    return PrintResult(data=finish(c, buffer), pages=pages, kind="run sheet", items=len(runs))


def _header(c, experiment: Experiment, label: str, caution: str, width: float,
            height: float, *, first: bool) -> float:
    y = height - MARGIN - 6
    c.setFont(BOLD, 14)
    c.drawString(MARGIN, y, f"Run sheet: {printable(experiment.name)}")
    y -= 15
    c.setFont(SANS, 8.5)
    design = label or experiment.kind
    extras = []
    if experiment.center_points:
        extras.append(f"{experiment.center_points} centre points")
    if experiment.blocks > 1:
        extras.append(f"{experiment.blocks} blocks")
    c.drawString(MARGIN, y, f"Design: {printable(design)}; {len(experiment.runs)} runs"
                 + (f" ({', '.join(extras)})" if extras else "")
                 + f"; make the runs in this order (randomised, seed {experiment.seed}).")
    y -= 14
    if caution:
        c.setFillColor(RED)
        c.setFont(BOLD, 8.5)
        for line in wrap(printable(caution), BOLD, 8.5, width - 2 * MARGIN):
            c.drawString(MARGIN, y, line)
            y -= 10.5
        c.setFillColor(black)
        y -= 3
    if first:
        c.setFont(BOLD, 8.5)
        c.drawString(MARGIN, y, "Factors")
        y -= 11
        c.setFont(SANS, 8.5)
        for f in experiment.factors:
            levels = (f"; levels {', '.join(_num(v) for v in f.levels)}" if f.levels else "")
            c.drawString(MARGIN + 8, y, printable(
                f"{f.name}: low {_num(f.low)}, high {_num(f.high)} {f.unit}{levels}; declared "
                f"safe range {_num(f.safe_low)} .. {_num(f.safe_high)} {f.unit}"))
            y -= 10.5
        y -= 6
    return y
