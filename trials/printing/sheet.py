"""The serving sheet: the kitchen's copy of the decoding key.

For each session: warnings first (batches not signed off for food safety, allergen
conflicts between a panelist's declaration and a sample served to them), then the
samples with their codes, cups, allergens, batches and preparation notes, then one row
per cup: panelist, position, code, sample, batch, set and role, flags. Every page
carries "KITCHEN ONLY: do not show to panelists" at its top and bottom, because the
sheet names the samples behind the codes.
"""

from __future__ import annotations

import io
from collections.abc import Iterable, Sequence

from reportlab.lib.colors import Color, black, white
from reportlab.lib.pagesizes import landscape
from reportlab.pdfgen.canvas import Canvas

from trials.errors import TrialsError
from trials.methods import Scoring, get_method
from trials.model import AllergenConflict, Batch, Panelist, PlanEntry, Trial
from trials.printing.layout import (
    BOLD,
    SANS,
    PrintResult,
    Progress,
    Ticker,
    finish,
    group_plan,
    new_canvas,
    page_size,
    printable,
    wrap,
)

KITCHEN_ONLY = "KITCHEN ONLY: do not show to panelists (this sheet names the samples)"
RED = Color(0.72, 0.05, 0.05)
GREY = Color(0.45, 0.45, 0.45)
SHADE = Color(0.95, 0.95, 0.95)
MARGIN = 30.0


class _NumberedCanvas(Canvas):
    """A canvas that writes "page n of N" once the page count is known."""

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        self._saved: list[dict] = []

    def showPage(self):  # noqa: N802 (reportlab's name)
        self._saved.append(dict(self.__dict__))
        self._startPage()

    def save(self):
        total = len(self._saved)
        for state in self._saved:
            self.__dict__.update(state)
            self.setFont(SANS, 7.5)
            self.setFillColor(GREY)
            w = self._pagesize[0]
            self.drawRightString(w - MARGIN, MARGIN - 14,
                                 f"page {self._pageNumber} of {total}")
            super().showPage()
        super().save()


def _measure(m) -> str:
    unit = f" {m.unit}" if m.unit else ""
    return f"{m.name} {m.value}{unit}"


def _batch_text(b: Batch | None, label: str) -> str:
    if b is None:
        return f"{label}: no batch record given, food-safety sign-off unknown"
    made = []
    if b.prepared_on:
        made.append(b.prepared_on.isoformat())
    if b.prepared_by:
        made.append(f"by {b.prepared_by}")
    text = b.label + (f" ({' '.join(made)})" if made else "")
    if b.signed_off:
        on = f" on {b.safety_signed_on.isoformat()}" if b.safety_signed_on else ""
        text += f"; signed off by {b.safety_signed_by}{on}"
    else:
        text += "; NOT SIGNED OFF for food safety"
    return text


def _prep_text(b: Batch | None) -> str:
    if b is None:
        return ""
    parts = []
    if b.settings:
        parts.append("; ".join(_measure(m) for m in b.settings))
    if b.notes:
        parts.append(b.notes)
    return (f"{b.label}: " + ". ".join(parts)) if parts else ""


class _Sheet:
    def __init__(self, c, size, study: Trial):
        self.c = c
        self.width, self.height = size
        self.study = study
        self.left, self.right = MARGIN, self.width - MARGIN
        self.inner = self.right - self.left
        self.bottom = MARGIN + 14
        self.pages = 0
        self.y = 0.0
        self.session = ""

    def start_page(self) -> None:
        c = self.c
        if self.pages:
            c.showPage()
        self.pages += 1
        top = self.height - MARGIN
        c.setFillColor(RED)
        c.rect(self.left, top - 20, self.inner, 20, stroke=0, fill=1)
        c.setFillColor(white)
        c.setFont(BOLD, 11)
        c.drawCentredString(self.width / 2, top - 14, KITCHEN_ONLY)
        c.setFillColor(black)
        c.setFont(BOLD, 12)
        title = f"Serving sheet: {self.study.name}"
        if self.study.id is not None:
            title += f" (trial no. {self.study.id})"
        c.drawString(self.left, top - 36, printable(title))
        c.setFont(SANS, 9)
        method = get_method(self.study.method)
        c.drawRightString(self.right, top - 36,
                          printable(f"{method.label}  ·  session {self.session}"))
        c.setFont(BOLD, 7.5)
        c.setFillColor(RED)
        c.drawString(self.left, MARGIN - 14, KITCHEN_ONLY)
        c.setFillColor(black)
        self.y = top - 50

    def need(self, h: float) -> bool:
        if self.y - h < self.bottom:
            self.start_page()
            return True
        return False

    def text(self, text: str, font=SANS, size=9.0, color=black, gap=3.0) -> None:
        lines = wrap(text, font, size, self.inner)
        lead = size * 1.25
        for line in lines:
            self.need(lead)
            self.c.setFont(font, size)
            self.c.setFillColor(color)
            self.c.drawString(self.left, self.y - size, line)
            self.y -= lead
        self.c.setFillColor(black)
        self.y -= gap

    def table(self, columns: Sequence[tuple[str, float]], rows: Sequence[Sequence[str]], *,
              groups: Sequence[int] | None = None, flags: int | None = None,
              ticker: Ticker | None = None, size: float = 8.5) -> None:
        """Rows of wrapped cells; the header repeats on each page; ``groups`` shades
        alternate groups of rows; column ``flags`` prints in red."""
        c = self.c
        total = sum(w for _, w in columns)
        widths = [w * self.inner / total for _, w in columns]
        lead = size * 1.22

        def header() -> None:
            self.need(16)
            c.setFillColor(Color(0.85, 0.85, 0.85))
            c.rect(self.left, self.y - 14, self.inner, 14, stroke=0, fill=1)
            c.setFillColor(black)
            c.setFont(BOLD, size)
            x = self.left
            for (title, _), w in zip(columns, widths):
                c.drawString(x + 3, self.y - 10, title)
                x += w
            self.y -= 15

        header()
        for i, row in enumerate(rows):
            cells = [wrap(str(v), SANS if k else BOLD, size, w - 6)
                     for k, (v, w) in enumerate(zip(row, widths))]
            h = max(len(ls) for ls in cells) * lead + 3
            if self.need(h):
                header()
            if groups is not None and groups[i] % 2 == 1:
                c.setFillColor(SHADE)
                c.rect(self.left, self.y - h, self.inner, h, stroke=0, fill=1)
                c.setFillColor(black)  # the row's text object starts from black
            if groups is not None and i and groups[i] != groups[i - 1]:
                c.setStrokeColor(GREY)
                c.setLineWidth(0.4)
                c.line(self.left, self.y, self.right, self.y)
                c.setLineWidth(1)
                c.setStrokeColor(black)
            # one text object per row, font and colour set only when they change
            t = c.beginText()
            font, color = None, black
            x = self.left
            for k, (ls, w) in enumerate(zip(cells, widths)):
                want = BOLD if k == 0 or k == flags else SANS
                if want != font:
                    font = want
                    t.setFont(font, size)
                if (k == flags) != (color is RED) and any(ls):
                    color = RED if k == flags else black
                    t.setFillColor(color)
                yy = self.y - size
                for line in ls:
                    if line:
                        t.setTextOrigin(x + 3, yy)
                        t.textOut(line)
                    yy -= lead
                x += w
            c.drawText(t)
            self.y -= h
            if ticker is not None:
                ticker.tick()
        self.y -= 8


def serving_sheet_pdf(
    study: Trial,
    plan: Iterable[PlanEntry],
    *,
    batches: Iterable[Batch] = (),
    conflicts: Iterable[AllergenConflict] = (),
    panelists: Iterable[Panelist] = (),
    page: str = "A4",
    progress: Progress | None = None,
) -> PrintResult:
    """The serving sheet of ``plan``, one section per session, landscape.

    Parameters
    ----------
    study : Trial
        The trial; its samples give the names, control flag, allergens and description.
    plan : iterable of PlanEntry
        The serving plan (the decoding key); each cup is one row, in serving order.
    batches : iterable of Batch
        The batch records; a cup's ``batch_label`` is looked up by sample and label
        (without a label, every batch of the sample is listed). A batch without a food
        safety sign-off, or a label with no record, is flagged.
    conflicts : iterable of AllergenConflict
        Declared allergens that meet a sample's; flagged on the panelist's rows of that
        sample. With ``panelists``, conflicts are also found here from their
        declarations (the union of both is printed).
    page : {"A4", "Letter"}
        Printed landscape.
    progress : callable(done, total), optional
        Called per cup row (at most about 100 times, and at the end).

    Returns
    -------
    PrintResult
        ``kind="sheet"``, ``items`` = number of sessions.
    """
    groups = group_plan(plan)
    method = get_method(study.method)  # validated: the sheet names it in its header
    samples = {s.name: s for s in study.samples}
    entries = [e for g in groups for e in g.entries]
    target = ""  # target-by-role methods: the stored target, else the plan's target role
    if method.scoring is Scoring.TARGET_BY_ROLE:
        target = study.target_sample or next(
            (e.sample_name for e in entries if e.role == method.target_role), "")
    for e in entries:
        if e.sample_name not in samples:
            raise TrialsError(
                f"plan cup {e.code!r} names sample {e.sample_name!r}, which is not a sample "
                f"of trial {study.name!r}"
            )
    batch_map: dict[tuple[str, str], Batch] = {(b.sample_name, b.label): b for b in batches}
    found: dict[tuple[str, str], set[str]] = {}
    for cf in conflicts:
        found.setdefault((cf.panelist_code, cf.sample_name), set()).update(
            a.lower() for a in cf.allergens)
    for p in panelists:
        declared = {a.strip().lower() for a in p.allergens if a.strip()}
        for s in samples.values():
            both = declared & {a.strip().lower() for a in s.allergens}
            if both:
                found.setdefault((p.code, s.name), set()).update(both)

    size = landscape(page_size(page))
    buffer = io.BytesIO()
    c = new_canvas(buffer, size, title=printable(f"Serving sheet: {study.name}"),
                   canvasmaker=_NumberedCanvas)
    sheet = _Sheet(c, size, study)
    ticker = Ticker(progress, len(entries))
    sessions = list(dict.fromkeys(g.session for g in groups))
    for session in sessions:
        sheet.session = session
        sheet.start_page()
        cups = [e for g in groups if g.session == session for e in g.entries]
        _session(sheet, session, cups, samples, batch_map, found, ticker, target)
    c.showPage()
    pages = sheet.pages
    return PrintResult(finish(c, buffer), pages, "sheet", len(sessions))


def _session(sheet: _Sheet, session, cups, samples, batch_map, found, ticker,
             target: str = "") -> None:
    sheet.text(f"Session {session}: {len(cups)} cups for "
               f"{len(dict.fromkeys(e.panelist_code for e in cups))} panelists",
               BOLD, 13, gap=6)
    names = list(dict.fromkeys(e.sample_name for e in cups))

    def batches_of(name: str) -> list[tuple[str, Batch | None]]:
        labels = list(dict.fromkeys(e.batch_label for e in cups
                                    if e.sample_name == name and e.batch_label))
        if labels:
            return [(lb, batch_map.get((name, lb))) for lb in labels]
        return [(b.label, b) for (s, _), b in batch_map.items() if s == name]

    # warnings first
    unsafe = [(name, lb) for name in names for lb, b in batches_of(name)
              if b is None or not b.signed_off]
    for name, lb in unsafe:
        sheet.text(f"FOOD SAFETY: batch {lb} of {name} is not signed off (or has no "
                   "record): do not serve it until it is.", BOLD, 9.5, RED)
    in_session = {(e.panelist_code, e.sample_name) for e in cups}
    clashes = sorted(k for k in found if k in in_session)
    for pan, name in clashes:
        sheet.text(f"ALLERGEN CONFLICT: panelist {pan} declared "
                   f"{', '.join(sorted(found[(pan, name)]))}, which {name} contains: do not "
                   "serve without the panel leader's check.", BOLD, 9.5, RED)
    unrecorded = [name for name in names if not batches_of(name)]
    if unrecorded:
        sheet.text("FOOD SAFETY: no batch is recorded for " + ", ".join(unrecorded)
                   + ": record each batch and its food-safety sign-off before serving.",
                   BOLD, 9.5, RED)
    if not unsafe and not clashes and not unrecorded:
        sheet.text("Every batch is signed off and no allergen conflict was found for this "
                   "session.", SANS, 9, gap=4)
    note = get_method(sheet.study.method).kitchen_note
    if note:
        sheet.text(note, BOLD, 9.5, gap=4)
    sheet.y -= 4

    # samples: the key summary
    if target:
        role = next((e.role for e in cups if e.sample_name == target), "")
        sheet.text(f"Target sample: {target} (expected to have more of the attribute; a "
                   f"correct answer picks it; its cups carry role {role})." if role else
                   f"Target sample: {target} (expected to have more of the attribute).",
                   BOLD, 9.5, gap=4)
    sheet.text("Samples, codes and preparation", BOLD, 11, gap=2)
    rows = []
    for name in names:
        s = samples[name]
        codes = list(dict.fromkeys(e.code for e in cups if e.sample_name == name))
        bl = batches_of(name)
        notes = [t for t in (_prep_text(b) for _, b in bl) if t]
        if s.description:
            notes.insert(0, s.description)
        rows.append([
            name + (" (control)" if s.is_control else "") + (" (target)" if name == target
                                                              else ""),
            " ".join(codes),
            str(sum(e.sample_name == name for e in cups)),
            ", ".join(sorted(a.lower() for a in s.allergens)) or "none declared",
            "\n".join(_batch_text(b, lb) for lb, b in bl) or "no batch given",
            "\n".join(notes),
        ])
    sheet.table([("Sample", 150), ("Codes", 90), ("Cups", 30), ("Allergens", 80),
                 ("Batches and food-safety sign-off", 190), ("Preparation notes", 230)],
                rows)

    # one row per cup
    sheet.text("Cups in serving order", BOLD, 11, gap=2)
    rows, group_ids = [], []
    current, gid = None, -1
    for e in cups:
        if e.panelist_code != current:
            current, gid = e.panelist_code, gid + 1
        flags = []
        clash = found.get((e.panelist_code, e.sample_name))
        if clash:
            flags.append("ALLERGEN: " + ", ".join(sorted(clash)))
        if e.batch_label:
            b = batch_map.get((e.sample_name, e.batch_label))
            if b is None or not b.signed_off:
                flags.append("batch not signed off")
        elif any(b is None or not b.signed_off for _, b in batches_of(e.sample_name)):
            flags.append("a batch of this sample is not signed off")
        role = " ".join(t for t in (f"set {e.set_index + 1}", e.role) if t)
        rows.append([e.panelist_code, str(e.position), e.code, e.sample_name,
                     e.batch_label or "", role, "; ".join(flags)])
        group_ids.append(gid)
    sheet.table([("Panelist", 60), ("Pos", 28), ("Code", 40), ("Sample", 200),
                 ("Batch", 70), ("Set, role", 55), ("Flags", 200)],
                rows, groups=group_ids, flags=6, ticker=ticker)
