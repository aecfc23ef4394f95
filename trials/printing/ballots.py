"""Paper ballots: one per panelist and session, showing blinding codes only.

What a ballot shows
-------------------
- a neutral heading (``"Tasting ballot"`` by default), the session, the trial's number
  (``study.id``) and the method's label. The trial's *name* is never printed: names such
  as "Low-salt crust vs classic" tell the panelist what differs, which biases the answer.
  Sample names, descriptions and batch labels are never printed either;
- the panelist's code (pre-filled) and a date field (pre-filled with ``today`` if given);
- the method's question and instructions from :mod:`trials.methods`, and the cups'
  codes in serving order, with an answer area fitted to the method (see below);
- a comment line;
- cautions on every page: the allergens declared for the session's samples, pooled over
  all of the session's samples and never tied to a code; a request to tell the panel
  leader about allergies, intolerances or dietary restrictions before tasting; and that
  tasting is voluntary and needs the panelist's consent. Where the panelist's record is
  given (``panelists``) and their declared allergens meet the session's, or no consent is
  on file, the ballot asks them to see the panel leader before tasting;
- a QR code of ``base_url`` + the panelist's tasting path when both ``base_url`` and
  ``tokens`` (panelist code -> path such as ``"/taste?t=..."``) are given, with the
  address printed small beside it.

Answer areas
------------
- triangle, 2-AFC, 3-AFC, paired preference: the set's codes in large boxes, left to
  right in serving order, to circle one (2-AFC and 3-AFC name the attribute, the first
  of ``study.attributes``; without one the ballot leaves a line to write it in);
- duo-trio: the reference cup first, marked "R" with its code (the cup whose ``role`` is
  ``"R"``, else the set's first cup, as the registry's patterns put the reference
  first), then the two coded cups to circle;
- tetrad: the four codes to circle two, the other two forming the second group;
  specified tetrad: the four codes to circle the two with more of the attribute;
- two-out-of-five: the five codes to circle the two that differ from the other three;
- rating: for each attribute a grid, one row per code in serving order, one box per
  scale point, with the anchors: the attribute's own (every point, or the two ends), or
  by default the 9-point hedonic scale of Peryam and Pilgrim (1957), the 5-point
  just-about-right scale (much too little .. much too much) and end anchors
  "Very weak" / "Very strong" for intensity (common practice). Without attributes the
  ballot asks for overall liking on the 9-point hedonic scale;
- ranking: for each attribute (or overall liking) a rank box beside each code.

A ballot that does not fit one page continues on the next, with the heading and the
cautions repeated.
"""

from __future__ import annotations

import datetime as dt
import io
from collections.abc import Iterable, Mapping, Sequence

from reportlab.lib.colors import Color, black
from reportlab.pdfbase import pdfmetrics

from trials.errors import TrialsError
from trials.methods import Family, MethodSpec, get_method
from trials.model import Attribute, AttributeKind, Panelist, PlanEntry, Trial
from trials.printing.layout import (
    BOLD,
    ITALIC,
    QUIET_ZONE,
    SANS,
    PanelistSession,
    PrintResult,
    Progress,
    Ticker,
    draw_lines,
    draw_qr,
    finish,
    fit_size,
    group_plan,
    join_url,
    literal_rects,
    new_canvas,
    page_size,
    printable,
    qr_matrix,
    sessions_of,
    wrap,
)

# 9-point hedonic scale, Peryam and Pilgrim (1957), Food Technol. 11(9):9-14; low to high.
HEDONIC_9 = (
    "Dislike extremely",
    "Dislike very much",
    "Dislike moderately",
    "Dislike slightly",
    "Neither like nor dislike",
    "Like slightly",
    "Like moderately",
    "Like very much",
    "Like extremely",
)
# 5-point just-about-right scale (common practice), low to high.
JAR_5 = ("Much too little", "Too little", "Just about right", "Too much", "Much too much")
INTENSITY_ENDS = ("Very weak", "Very strong")  # common practice
OVERALL_LIKING = Attribute("Overall liking", AttributeKind.HEDONIC, 1, 9, HEDONIC_9)

GREY = Color(0.45, 0.45, 0.45)
LIGHT = Color(0.93, 0.93, 0.93)
SHADE_GRAY = 0.965
SHADE = Color(SHADE_GRAY, SHADE_GRAY, SHADE_GRAY)
MARGIN = 36.0
MAX_POINTS = 21


def scale_anchors(attr: Attribute) -> tuple[str, ...]:
    """The anchors printed for ``attr``: one per point, or just the two ends.

    The attribute's own ``anchors`` win; otherwise the defaults of the module docstring.
    Raises :class:`TrialsError` for a scale that cannot be printed.
    """
    points = attr.high - attr.low + 1
    if points < 2 or points > MAX_POINTS:
        raise TrialsError(
            f"attribute {attr.name!r}: scale {attr.low}..{attr.high} has {points} points; "
            f"a ballot prints 2 to {MAX_POINTS}"
        )
    if attr.anchors:
        if len(attr.anchors) not in (2, points):
            raise TrialsError(
                f"attribute {attr.name!r}: {len(attr.anchors)} anchors for {points} points; "
                "give one per point or just the two ends"
            )
        return tuple(attr.anchors)
    kind = AttributeKind(attr.kind)
    if kind is AttributeKind.HEDONIC:
        return HEDONIC_9 if points == 9 else (HEDONIC_9[0], HEDONIC_9[-1])
    if kind is AttributeKind.JAR:
        return JAR_5 if points == 5 else (JAR_5[0], JAR_5[-1])
    return INTENSITY_ENDS


def session_allergens(study: Trial, entries: Iterable[PlanEntry]) -> tuple[str, ...]:
    """The allergens of every sample served in ``entries``, pooled, sorted, lower case."""
    samples = {s.name: s for s in study.samples}
    found: set[str] = set()
    for e in entries:
        if e.sample_name not in samples:
            raise TrialsError(
                f"plan cup {e.code!r} names sample {e.sample_name!r}, which is not a sample "
                f"of trial {study.name!r}"
            )
        found.update(a.strip().lower() for a in samples[e.sample_name].allergens if a.strip())
    return tuple(sorted(found))


def _check_sets(method: MethodSpec, group: PanelistSession) -> None:
    if not method.served_in_sets or method.set_size is None:
        return
    for cups in group.sets:
        if len(cups) != method.set_size:
            raise TrialsError(
                f"panelist {group.panelist_code!r}, session {group.session!r}: a "
                f"{method.name} set holds {method.set_size} cups, got {len(cups)} "
                f"(codes {[e.code for e in cups]})"
            )
        if method.reference_first and sum(e.role == "R" for e in cups) > 1:
            raise TrialsError(
                f"panelist {group.panelist_code!r}, session {group.session!r}: more than one "
                f"reference cup in a {method.name} set (codes {[e.code for e in cups]})"
            )


def qr_size(url: str) -> float:
    """Printed width of the QR code (with its quiet zone): modules of about 0.6 mm
    (1.7 pt), which phone cameras read at arm's length (common practice), 66 to 96 pt."""
    modules = len(qr_matrix(url)) + 2 * QUIET_ZONE
    return min(96.0, max(66.0, modules * 1.7))


class _Ballot:
    """Draws one ballot, page by page, keeping a cursor ``y``."""

    def __init__(self, c, size, *, heading, method, group, study, date_text, url,
                 cautions, forms):
        self.c = c
        self.forms = forms
        self.width, self.height = size
        self.heading = heading
        self.method = method
        self.group = group
        self.study = study
        self.date_text = date_text
        self.url = url
        self.cautions = cautions
        self.left = MARGIN
        self.right = self.width - MARGIN
        self.inner = self.right - self.left
        self.caution_lines = [wrap(t, f, s, self.inner - 12) for t, f, s in cautions]
        self.footer_h = 16 + sum(len(ls) * s * 1.25 for ls, (_, _, s) in
                                 zip(self.caution_lines, cautions)) + 14
        self.bottom = MARGIN + self.footer_h + 8
        self.pages = 0
        self.y = 0.0

    # ---- pages

    def start_page(self) -> None:
        c = self.c
        if self.pages:
            c.showPage()
        self.pages += 1
        top = self.height - MARGIN
        qr = qr_size(self.url) if (self.url and self.pages == 1) else 0.0
        text_right = self.right - (qr + 8 if qr else 0)
        title = self.heading if self.pages == 1 else f"{self.heading} (continued)"
        c.setFillColor(black)
        c.setFont(BOLD, 17)
        c.drawString(self.left, top - 16, printable(title))
        c.setFont(SANS, 10)
        info = f"Session {self.group.session}"
        if self.study.id is not None:
            info = f"Trial no. {self.study.id}  ·  {info}"
        c.drawRightString(text_right, top - 14, printable(info))
        c.setFont(SANS, 9)
        c.setFillColor(GREY)
        c.drawRightString(text_right, top - 27, printable(self.method.label))
        c.setFillColor(black)
        # panelist and date fields
        y = top - 52
        c.setFont(SANS, 10)
        c.drawString(self.left, y, "Panelist")
        box_x = self.left + 46
        code = printable(self.group.panelist_code)
        size = fit_size(code, BOLD, 84, 13)
        c.rect(box_x, y - 6, 92, 20, stroke=1, fill=0)
        c.setFont(BOLD, size)
        c.drawString(box_x + 4, y, code)
        c.setFont(SANS, 10)
        dx = box_x + 110
        c.drawString(dx, y, "Date")
        c.rect(dx + 28, y - 6, 96, 20, stroke=1, fill=0)
        if self.date_text:
            c.drawString(dx + 32, y, printable(self.date_text))
        if qr:
            qx, qy = self.right - qr, top - qr + 6
            draw_qr(c, self.url, qx, qy, qr)
            c.setFont(SANS, 5.5)
            c.setFillColor(GREY)
            lines = wrap(self.url, SANS, 5.5, 118)
            ly = qy + qr - 12
            for line in lines[:5]:
                c.drawRightString(qx - 4, ly - 40, line)
                ly -= 6.5
            c.setFillColor(black)
        self.y = min(y - 18, top - qr - 4) if qr else y - 18
        c.setStrokeColor(GREY)
        c.line(self.left, self.y, self.right, self.y)
        c.setStrokeColor(black)
        self.y -= 16
        self.draw_footer()

    def cached(self, key, draw) -> None:
        """Draw ``draw()`` once as a form (PDF XObject) and reuse it on every page with
        the same ``key``: ballots repeat most of their content, and reportlab's number
        formatting is pure Python here. ``draw`` leaves colours and widths at black/1."""
        name = self.forms.get(key)
        if name is None:
            name = f"KT{len(self.forms)}"
            self.c.beginForm(name)
            draw()
            self.c.endForm()
            self.forms[key] = name
        self.c.doForm(name)

    def draw_footer(self) -> None:
        c = self.c
        x = self.left
        y0 = MARGIN

        def static() -> None:
            c.setFillColor(SHADE)
            c.setStrokeColor(GREY)
            c.roundRect(x, y0 + 10, self.inner, self.footer_h - 10, 4, stroke=1, fill=1)
            c.setFillColor(black)
            c.setStrokeColor(black)
            y = y0 + self.footer_h - 12
            for lines, (_, font, size) in zip(self.caution_lines, self.cautions):
                y = draw_lines(c, lines, x + 6, y - size + 9, font, size)
            c.setFont(SANS, 7)
            c.setFillColor(GREY)
            c.drawString(x, y0, "Please return this ballot to the panel leader.")
            c.setFillColor(black)

        self.cached(("footer", self.width, self.height, tuple(self.cautions)), static)
        c.setFont(SANS, 7)
        c.setFillColor(GREY)
        c.drawRightString(self.right, y0,
                          printable(f"{self.group.panelist_code} · session {self.group.session}"
                                    f" · page {self.pages}"))
        c.setFillColor(black)

    def need(self, h: float) -> bool:
        """Make room for ``h`` points; True when a new page was started."""
        if self.y - h < self.bottom:
            self.start_page()
            return True
        return False

    # ---- blocks

    def text(self, text: str, font: str = SANS, size: float = 10, gap: float = 4,
             color=black) -> None:
        lines = wrap(text, font, size, self.inner)
        lead = size * 1.3
        self.need(len(lines) * lead)
        self.c.setFillColor(color)
        self.y = draw_lines(self.c, lines, self.left, self.y - size + 2, font, size, lead)
        self.c.setFillColor(black)
        self.y -= gap - (lead - size)

    def code_boxes(self, cups: Sequence[PlanEntry], *, reference: PlanEntry | None) -> None:
        """Large code boxes, left to right in serving order, the reference marked R."""
        c = self.c
        box_w, box_h, gap = 92.0, 44.0, 18.0
        n = len(cups)
        if n * box_w + (n - 1) * gap > self.inner:
            box_w = (self.inner - (n - 1) * gap) / n
        self.need(box_h + 22)
        c.setFont(SANS, 8)
        c.setFillColor(GREY)
        c.drawString(self.left, self.y - 6, "Taste from left to right:")
        c.setFillColor(black)
        top = self.y - 14
        x = self.left
        for e in cups:
            is_ref = reference is not None and e is reference
            if is_ref:
                c.setFillColor(LIGHT)
                c.roundRect(x, top - box_h, box_w, box_h, 6, stroke=1, fill=1)
                c.setFillColor(black)
                c.setFont(BOLD, 9)
                c.drawString(x + 5, top - 11, "R")
                c.setFont(SANS, 6.5)
                c.drawRightString(x + box_w - 5, top - 10, "reference")
            else:
                c.roundRect(x, top - box_h, box_w, box_h, 6, stroke=1, fill=0)
            code = printable(e.code)
            size = fit_size(code, BOLD, box_w - 16, 22)
            c.setFont(BOLD, size)
            c.drawCentredString(x + box_w / 2, top - box_h / 2 - size * 0.35, code)
            x += box_w + gap
        self.y = top - box_h - 14

    def response_boxes(self, responses: Sequence[str]) -> None:
        """A signal-detection answer: one tick box per response of the registry, in a row."""
        c = self.c
        side, gap = 18.0, 60.0
        self.need(side + 16)
        top = self.y - 4
        x = self.left
        c.setFont(BOLD, 12)
        for word in responses:
            c.rect(x, top - side, side, side, stroke=1, fill=0)
            c.drawString(x + side + 8, top - side + 5, printable(word))
            x += side + 8 + pdfmetrics.stringWidth(printable(word), BOLD, 12) + gap
        self.y = top - side - 12

    def word_lists(self, words: Sequence[Attribute]) -> None:
        """CATA: for each cup in serving order, its code and a tick box per word."""
        c = self.c
        side, gap = 10.0, 16.0
        for e in self.group.entries:
            self.text(f"Cup {e.code}: tick every word that applies", BOLD, 10.5, gap=2)
            x, y = self.left, self.y - 4
            self.need(side + 8)
            c.setFont(SANS, 10)
            for w in words:
                label = printable(w.name)
                width = side + 5 + pdfmetrics.stringWidth(label, SANS, 10)
                if x + width > self.left + self.inner:
                    x, y = self.left, y - side - 8
                    self.y = y + 4
                    self.need(side + 8)
                c.rect(x, y - side, side, side, stroke=1, fill=0)
                c.drawString(x + side + 5, y - side + 1.5, label)
                x += width + gap
            self.y = y - side - 12

    def attribute_line(self) -> None:
        attrs = self.study.attributes
        if attrs:
            self.text(f"Attribute: {attrs[0].name}", BOLD, 11)
        else:
            self.text("Attribute (written in by the panel leader): ______________________",
                      BOLD, 11)

    def serving_order(self) -> None:
        codes = "   ".join(e.code for e in self.group.entries)
        self.text(f"Serving order: {codes}", BOLD, 11, gap=8)

    def rating_grid(self, attr: Attribute, row_h: float) -> None:
        """One attribute's scale: a row per code in serving order, a box per point."""
        c = self.c
        anchors = scale_anchors(attr)
        points = list(range(attr.low, attr.high + 1))
        code_w, col_w = GRID_CODE_W, _grid_col_w(attr, self.inner)
        grid_w = code_w + col_w * len(points)
        full = len(anchors) == len(points)
        asize = ANCHOR_SIZE
        anchor_lines = [wrap(a, SANS, asize, col_w - 2) for a in anchors] if full else []
        anchor_h = _grid_head_h(attr, self.inner) - 25
        head_h = anchor_h + 25

        def draw_header(label: str, y0: float) -> None:
            c.setFont(BOLD, 10.5)
            c.drawString(self.left, y0 - 10, printable(label))
            top = y0 - 14
            c.setFont(SANS, asize)
            if full:
                for i, ls in enumerate(anchor_lines):
                    cx = self.left + code_w + col_w * (i + 0.5)
                    yy = top - asize
                    for line in ls:
                        c.drawCentredString(cx, yy, line)
                        yy -= asize * 1.15
            else:
                c.drawString(self.left + code_w + 2, top - asize, printable(anchors[0]))
                c.drawRightString(self.left + grid_w - 2, top - asize, printable(anchors[-1]))
            top -= anchor_h + 1
            c.setFont(SANS, 7.5)
            c.setFillColor(GREY)
            for i, p in enumerate(points):
                c.drawCentredString(self.left + code_w + col_w * (i + 0.5), top - 8, str(p))
            c.setFillColor(black)

        def header(label: str) -> None:
            y0 = self.y
            key = ("grid", y0, label, repr(attr.to_dict()), col_w, anchor_h)
            self.cached(key, lambda: draw_header(label, y0))
            self.y = y0 - 14 - anchor_h - 1 - 10

        self.need(head_h + row_h)
        header(attr.name)
        box = min(row_h - 4, 11.0)
        xs = tuple(self.left + code_w + col_w * (j + 0.5) - box / 2 for j in range(len(points)))
        self.box_rows(row_h, box, xs, grid_w, lambda: header(f"{attr.name} (continued)"))
        self.y -= 10

    def box_rows(self, row_h: float, box: float, xs: tuple[float, ...], width: float,
                 continued) -> None:
        """A row per code in serving order: the code, then a box at each of ``xs``;
        alternate rows shaded. The boxes of a page's run of rows are one cached form
        (the same on every ballot of the same shape); ``continued()`` draws the header
        again on a new page."""
        c = self.c
        entries = self.group.entries
        size = min(11.0, row_h - 3)
        i = 0
        while i < len(entries):
            if self.need(row_h):
                continued()
            fit = max(1, int((self.y - self.bottom) / row_h + 1e-6))
            rows = tuple((i + j, self.y - (j + 1) * row_h)
                         for j in range(min(fit, len(entries) - i)))

            def draw(rows=rows) -> None:
                literal_rects(c, [(self.left, y, width, row_h) for k, y in rows if k % 2 == 0],
                              op="f", gray=SHADE_GRAY)
                literal_rects(c, [(bx, y + (row_h - box) / 2, box, box)
                                  for _, y in rows for bx in xs], op="S", width=0.7)

            # shading and boxes first, then the codes on top
            self.cached(("rows", rows, row_h, box, xs, width, self.left), draw)
            c.setFont(BOLD, size)
            for k, y in rows:
                c.drawString(self.left + 4, y + (row_h - size) / 2 + 1.5,
                             printable(entries[k].code))
            self.y = rows[-1][1]
            i += len(rows)

    def ranking_block(self, attr: Attribute | None) -> None:
        c = self.c
        if attr is None or AttributeKind(attr.kind) is AttributeKind.HEDONIC:
            label = attr.name if attr else "Overall liking"
            what = f"{label}: rank 1 = the sample you like most"
        else:
            what = f"{attr.name}: rank 1 = the sample with the most {attr.name.lower()}"
        n = len(self.group.entries)
        what += f", rank {n} = the least."
        self.text(what, BOLD, 10.5, gap=6)
        per_row = min(4, n)
        cell_w = self.inner / per_row
        cell_h = 30.0
        for start in range(0, n, per_row):
            self.need(cell_h)
            for k, e in enumerate(self.group.entries[start:start + per_row]):
                x = self.left + k * cell_w
                y = self.y - cell_h + 6
                c.setFont(BOLD, 14)
                c.drawString(x + 2, y + 6, printable(e.code))
                c.setFont(SANS, 8)
                c.drawString(x + 50, y + 8, "rank")
                c.rect(x + 72, y, 34, 22, stroke=1, fill=0)
            self.y -= cell_h
        self.y -= 16

    def comments(self) -> None:
        c = self.c
        self.need(52)
        c.setFont(SANS, 10)
        c.drawString(self.left, self.y - 10, "Comments (optional):")
        c.setStrokeColor(GREY)
        c.setLineWidth(0.5)
        for k in range(2):
            yy = self.y - 30 - k * 18
            c.line(self.left, yy, self.right, yy)
        c.setLineWidth(1)
        c.setStrokeColor(black)
        self.y -= 52


GRID_CODE_W = 56.0
ANCHOR_SIZE = 6.5
COMMENTS_H = 52.0


def _grid_col_w(attr: Attribute, inner: float) -> float:
    return min(46.0, (inner - GRID_CODE_W) / (attr.high - attr.low + 1))


def _grid_head_h(attr: Attribute, inner: float) -> float:
    """Height of a per-attribute grid's header: name, anchors, point numbers."""
    anchors = scale_anchors(attr)
    if len(anchors) == attr.high - attr.low + 1:
        col_w = _grid_col_w(attr, inner)
        lines = max(len(wrap(a, SANS, ANCHOR_SIZE, col_w - 2)) for a in anchors)
        anchor_h = lines * ANCHOR_SIZE * 1.15
    else:
        anchor_h = ANCHOR_SIZE * 1.2
    return 14 + anchor_h + 11


def _rating_layout(ballot: _Ballot, attrs: Sequence[Attribute]) -> tuple[str, float]:
    """("grids", row height) when a grid per attribute fits the page with rows of at
    least 14 pt; else ("matrix", row height) when one table of all scales fits the
    width; else grids of 12 pt rows that continue on the next page."""
    n = len(ballot.group.entries)
    available = ballot.y - ballot.bottom - COMMENTS_H
    heads = sum(_grid_head_h(a, ballot.inner) + 10 for a in attrs)
    row = (available - heads) / (n * len(attrs))
    if row >= 14 or len(attrs) == 1:
        return "grids", max(12.0, min(17.0, row))
    m = _Matrix(ballot, attrs)
    if m.fits:
        return "matrix", max(12.0, min(20.0, (available - m.head_h - 10) / n))
    return "grids", 12.0


class _Matrix:
    """Every scale in one table: a row per code (serving order), a column group per
    attribute, the anchors printed upright (rotated) above their points."""

    CODE_W = 44.0
    GAP = 8.0
    MIN_COL = 19.0
    ANCHOR_ROOM = 74.0

    def __init__(self, ballot: _Ballot, attrs: Sequence[Attribute]):
        self.b = ballot
        self.attrs = tuple(attrs)
        self.anchors = [scale_anchors(a) for a in attrs]
        self.points = [list(range(a.low, a.high + 1)) for a in attrs]
        cols = sum(len(p) for p in self.points)
        room = ballot.inner - self.CODE_W - self.GAP * (len(attrs) - 1)
        self.col_w = min(28.0, room / cols)
        self.fits = self.col_w >= self.MIN_COL
        self.name_lines = [wrap(a.name, BOLD, 8.5, len(p) * self.col_w - 2)
                           for a, p in zip(attrs, self.points)]
        names_h = max(len(ls) for ls in self.name_lines) * 8.5 * 1.2
        self.anchor_lines = [[wrap(t, SANS, ANCHOR_SIZE, self.ANCHOR_ROOM) for t in an]
                             for an in self.anchors]
        longest = max(pdfmetrics.stringWidth(line, SANS, ANCHOR_SIZE)
                      for group in self.anchor_lines for ls in group for line in ls)
        self.anchor_h = min(self.ANCHOR_ROOM, longest) + 4
        self.head_h = names_h + 4 + self.anchor_h + 12

    def _x(self, g: int, j: int) -> float:
        """Centre of point ``j`` of attribute ``g``."""
        x = self.b.left + self.CODE_W
        for k in range(g):
            x += len(self.points[k]) * self.col_w + self.GAP
        return x + self.col_w * (j + 0.5)

    def header(self, continued: bool = False) -> None:
        b = self.b
        top = b.y
        key = ("matrix", top, continued, self.col_w, self.head_h,
               tuple(a.to_dict().__repr__() for a in self.attrs))
        b.cached(key, lambda: self._header(top, continued))
        b.y = top - self.head_h + 1

    def _header(self, top: float, continued: bool) -> None:
        c, b = self.b.c, self.b
        for g, ls in enumerate(self.name_lines):
            left = self._x(g, 0) - self.col_w / 2
            width = len(self.points[g]) * self.col_w
            yy = top - 8.5
            c.setFont(BOLD, 8.5)
            for line in ls:
                c.drawCentredString(left + width / 2, yy, line)
                yy -= 8.5 * 1.2
            c.setStrokeColor(GREY)
            c.setLineWidth(0.5)
            c.line(left + 2, yy + 6, left + width - 2, yy + 6)
            c.setLineWidth(1)
            c.setStrokeColor(black)
        base = top - self.head_h + 12  # anchors stand on this line
        c.setFont(SANS, ANCHOR_SIZE)
        for g, group in enumerate(self.anchor_lines):
            n = len(self.points[g])
            where = range(n) if len(group) == n else (0, n - 1)
            for j, ls in zip(where, group):
                cx = self._x(g, j)
                c.saveState()
                c.translate(cx, base + 2)
                c.rotate(90)
                # the lines of one anchor side by side, centred on the column
                off = (len(ls) - 1) * ANCHOR_SIZE * 0.55
                for k, line in enumerate(ls):
                    c.drawString(0, off - k * ANCHOR_SIZE * 1.1 - ANCHOR_SIZE * 0.35, line)
                c.restoreState()
        c.setFont(SANS, 7.5)
        c.setFillColor(GREY)
        for g, pts in enumerate(self.points):
            for j, p in enumerate(pts):
                c.drawCentredString(self._x(g, j), base - 8, str(p))
        c.setFillColor(black)
        if continued:
            c.setFont(ITALIC, 7.5)
            c.drawString(b.left, top - 8, "(continued)")

    def draw(self, row_h: float) -> None:
        b = self.b
        b.need(self.head_h + row_h)
        self.header()
        box = min(row_h - 4, 11.0)
        right = self._x(len(self.attrs) - 1, len(self.points[-1]) - 1) + self.col_w / 2
        xs = tuple(self._x(g, j) - box / 2 for g, pts in enumerate(self.points)
                   for j in range(len(pts)))
        b.box_rows(row_h, box, xs, right - b.left, lambda: self.header(continued=True))
        b.y -= 10


def ballots_pdf(
    study: Trial,
    plan: Iterable[PlanEntry],
    *,
    panelists: Iterable[Panelist] = (),
    base_url: str = "",
    tokens: Mapping[str, str] | None = None,
    today: dt.date | str | None = None,
    page: str = "A4",
    heading: str = "Tasting ballot",
    progress: Progress | None = None,
) -> PrintResult:
    """Ballots for every panelist and session of ``plan``, as one PDF.

    Parameters
    ----------
    study : Trial
        The trial; its ``method`` picks the registry entry, its ``samples`` give the
        allergens and its ``attributes`` the scales (rating, ranking, 2-AFC, 3-AFC).
    plan : iterable of PlanEntry
        The serving plan; sessions and panelists print in order of first appearance,
        cups by ``position``.
    panelists : iterable of Panelist, optional
        Panelist records; where one is given, the ballot asks that panelist to see the
        panel leader first if their declared allergens meet the session's or no
        consent is on file.
    base_url, tokens : optional
        With both, each ballot whose panelist has a token carries a QR code of
        ``base_url`` joined to the token's path, and the address in small print.
    today : date or str, optional
        Printed in the date field; blank when None.
    page : {"A4", "Letter"}
    heading : str
        The ballot's heading; keep it neutral (it is printed as given).
    progress : callable(done, total), optional
        Called as ballots are drawn (at most about 100 times, and at the end).

    Returns
    -------
    PrintResult
        ``data`` (PDF bytes), ``pages``, ``kind="ballots"`` and ``items`` (ballots).

    Raises
    ------
    TrialsError
        An empty plan, an unknown method or sample, a set of the wrong size, or a scale
        that cannot be printed.
    """
    method = get_method(study.method)
    groups = group_plan(plan)
    size = page_size(page)
    by_session = sessions_of(e for g in groups for e in g.entries)
    allergens = {s: session_allergens(study, es) for s, es in by_session.items()}
    records = {p.code: p for p in panelists}
    tokens = dict(tokens or {})
    attrs = tuple(study.attributes)
    for attr in attrs:
        scale_anchors(attr)  # fail early on a scale that cannot be printed
    for g in groups:
        _check_sets(method, g)
    if isinstance(today, dt.datetime):
        today = today.date()
    date_text = today.isoformat() if isinstance(today, dt.date) else (today or "")

    buffer = io.BytesIO()
    c = new_canvas(buffer, size, title=printable(heading))
    ticker = Ticker(progress, len(groups))
    pages = 0
    forms: dict = {}
    for g in groups:
        url = ""
        if base_url and g.panelist_code in tokens:
            url = join_url(base_url, tokens[g.panelist_code])
        cautions = _cautions(allergens[g.session], records.get(g.panelist_code))
        b = _Ballot(c, size, heading=heading, method=method, group=g, study=study,
                    date_text=date_text, url=url, cautions=cautions, forms=forms)
        if pages:
            c.showPage()
        b.start_page()
        _draw_body(b, method, attrs)
        pages += b.pages
        ticker.tick()
    c.showPage()
    return PrintResult(finish(c, buffer), pages, "ballots", len(groups))


def _cautions(allergens: Sequence[str], panelist: Panelist | None):
    """The caution lines of a ballot: (text, font, size) each."""
    if allergens:
        first = ("Allergens in this session's samples (all cups together, not per cup): "
                 + ", ".join(allergens) + ".")
    else:
        first = "No allergens are declared for this session's samples."
    lines = [
        (first, BOLD, 9.0),
        ("Before tasting, tell the panel leader about any allergy, intolerance or dietary "
         "restriction. Tasting is voluntary and needs your consent; you may stop at any "
         "time.", SANS, 8.5),
    ]
    if panelist is not None:
        declared = {a.strip().lower() for a in panelist.allergens}
        if declared & set(allergens):
            lines.append(("Your declared allergies include one listed above: do not taste "
                          "until the panel leader has spoken with you.", BOLD, 8.5))
        if not panelist.consented:
            lines.append(("No consent is on file for you: please see the panel leader "
                          "before tasting.", BOLD, 8.5))
    return lines


def _draw_body(b: _Ballot, method: MethodSpec, attrs: Sequence[Attribute]) -> None:
    b.text(method.question, BOLD, 13, gap=6)
    if method.asks_attribute:
        b.attribute_line()
    b.text(method.instructions, SANS, 9.5, gap=10)
    if method.served_in_sets:
        sets = b.group.sets
        for k, cups in enumerate(sets):
            if len(sets) > 1:
                b.text(f"Set {k + 1} of {len(sets)}", BOLD, 10, gap=2)
            reference = None
            if method.reference_first:
                reference = next((e for e in cups if e.role == "R"), cups[0])
                cups = (reference,) + tuple(e for e in cups if e is not reference)
            b.code_boxes(cups, reference=reference)
            if method.responses:
                b.response_boxes(method.responses)
            if method.ballot_note:
                b.text(method.ballot_note, ITALIC, 9, gap=8)
    elif method.family is Family.CATA:
        b.serving_order()
        b.word_lists([a for a in attrs if a.kind == AttributeKind.CHECK])
        for attr in (a for a in attrs if a.kind != AttributeKind.CHECK):
            b.rating_grid(attr, _rating_layout(b, [attr])[1])
    elif method.family is Family.RATING:
        b.serving_order()
        scales = attrs or (OVERALL_LIKING,)
        kind, row_h = _rating_layout(b, scales)
        if kind == "matrix":
            _Matrix(b, scales).draw(row_h)
        else:
            for attr in scales:
                b.rating_grid(attr, row_h)
    else:  # ranking
        b.serving_order()
        for attr in attrs or (None,):
            b.ranking_block(attr)
    b.comments()
