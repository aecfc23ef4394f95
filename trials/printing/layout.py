"""Shared pieces of the printed documents: fonts, page sizes, the result record, the
plan grouping, text fitting, progress reporting and QR codes.

Fonts
-----
Every document uses the Bitstream Vera TrueType fonts that reportlab itself ships in
``reportlab/fonts`` (Vera.ttf, VeraBd.ttf, VeraIt.ttf; Bitstream Vera licence). They
are embedded as subsets, so the PDF prints the same on any machine and needs no
network; the text stays extractable (reportlab writes a ToUnicode map). Vera covers
Western European letters, the en and em dash, typographic quotes, the degree sign and
the euro sign, but not every Central European letter (e.g. ``ą``, ``ő``): such a
letter is printed as its base letter (``a``, ``o``), see :func:`printable`.
"""

from __future__ import annotations

import os
import unicodedata
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import reportlab
from reportlab.graphics.barcode import qrencoder
from reportlab.lib.pagesizes import A4, LETTER
from reportlab.lib.units import mm
from reportlab.pdfbase import pdfmetrics
from reportlab.pdfbase.ttfonts import TTFont
from reportlab.pdfgen.canvas import Canvas

from trials.errors import TrialsError
from trials.model import PlanEntry, Record

Progress = Callable[[int, int], None]

SANS = "KT-Vera"
BOLD = "KT-Vera-Bold"
ITALIC = "KT-Vera-Italic"
_FONT_FILES = {SANS: "Vera.ttf", BOLD: "VeraBd.ttf", ITALIC: "VeraIt.ttf"}
FONT_DIR = os.path.join(os.path.dirname(reportlab.__file__), "fonts")

PAGE_SIZES: dict[str, tuple[float, float]] = {"A4": A4, "Letter": LETTER}

_glyphs: set[int] = set()


def register_fonts() -> None:
    """Register the embedded Vera fonts once per process."""
    if _glyphs:
        return
    for name, filename in _FONT_FILES.items():
        font = TTFont(name, os.path.join(FONT_DIR, filename))
        pdfmetrics.registerFont(font)
        if name == SANS:
            _glyphs.update(font.face.charToGlyph)


def printable(text: Any) -> str:
    """``text`` as a string that the embedded font can show.

    A character the font lacks is replaced by its base letter (Unicode NFKD without the
    combining marks), or by ``?`` when it has none.
    """
    register_fonts()
    text = "" if text is None else str(text)
    if all(ord(ch) in _glyphs or ch in "\n\t" for ch in text):
        return text
    out = []
    for ch in text:
        if ord(ch) in _glyphs or ch in "\n\t":
            out.append(ch)
            continue
        base = "".join(
            c for c in unicodedata.normalize("NFKD", ch) if not unicodedata.combining(c)
        )
        out.append(base if base and all(ord(c) in _glyphs for c in base) else "?")
    return "".join(out)


def page_size(page: str) -> tuple[float, float]:
    """Width and height in points of ``"A4"`` or ``"Letter"``."""
    try:
        return PAGE_SIZES[page]
    except KeyError:
        raise TrialsError(f"unknown page size {page!r}; expected 'A4' or 'Letter'") from None


def new_canvas(buffer, page: tuple[float, float], *, title: str, canvasmaker=Canvas) -> Canvas:
    """A canvas with invariant output (no time stamp, same bytes for the same input)."""
    register_fonts()
    # initialFontName: otherwise reportlab lists Helvetica, a font not embedded, on every page
    c = canvasmaker(buffer, pagesize=page, invariant=1, pageCompression=1,
                    initialFontName=SANS, initialFontSize=10)
    c.setTitle(title)
    c.setAuthor("")
    c.setSubject("")
    c.setCreator("Kitchen Trials")
    return c


@dataclass(frozen=True, slots=True)
class PrintResult(Record):
    """A printed document.

    ``data`` is the PDF file's bytes, ``pages`` its page count, ``kind`` one of
    ``"ballots"``, ``"sheet"``, ``"labels"`` and ``items`` how many ballots, sessions or
    labels it holds. ``to_dict()`` leaves the bytes out and gives their ``size``.
    """

    data: bytes
    pages: int
    kind: str = ""
    items: int = 0

    def to_dict(self) -> dict[str, Any]:
        return {"kind": self.kind, "pages": self.pages, "items": self.items,
                "size": len(self.data)}


# ---------------------------------------------------------------- the plan, grouped


@dataclass(frozen=True, slots=True)
class PanelistSession(Record):
    """One panelist's cups in one session, in serving order."""

    session: str
    panelist_code: str
    entries: tuple[PlanEntry, ...]

    @property
    def sets(self) -> tuple[tuple[PlanEntry, ...], ...]:
        """The cups grouped by ``set_index``, sets in order, cups by position."""
        indices = sorted({e.set_index for e in self.entries})
        return tuple(tuple(e for e in self.entries if e.set_index == i) for i in indices)


def group_plan(plan: Iterable[PlanEntry]) -> list[PanelistSession]:
    """Group the plan by session and panelist, both in order of first appearance.

    Raises :class:`TrialsError` for an empty plan or two cups at one position.
    """
    plan = list(plan)
    if not plan:
        raise TrialsError("the serving plan is empty: nothing to print")
    groups: dict[tuple[str, str], list[PlanEntry]] = {}
    for entry in plan:
        if not isinstance(entry, PlanEntry):
            raise TrialsError(f"expected PlanEntry records in the plan, got {entry!r}")
        groups.setdefault((entry.session, entry.panelist_code), []).append(entry)
    out = []
    for (session, panelist), entries in groups.items():
        entries.sort(key=lambda e: e.position)
        seen: set[int] = set()
        for e in entries:
            if e.position in seen:
                raise TrialsError(
                    f"two cups at position {e.position} for panelist {panelist!r} in "
                    f"session {session!r}"
                )
            seen.add(e.position)
        out.append(PanelistSession(session, panelist, tuple(entries)))
    # sessions in order of first appearance, then panelists in order of first appearance
    session_order = {s: i for i, s in enumerate(dict.fromkeys(e.session for e in plan))}
    out.sort(key=lambda g: session_order[g.session])  # stable: keeps panelist order
    return out


def sessions_of(plan: Iterable[PlanEntry]) -> dict[str, list[PlanEntry]]:
    """The plan's cups per session (in order of first appearance)."""
    out: dict[str, list[PlanEntry]] = {}
    for e in plan:
        out.setdefault(e.session, []).append(e)
    return out


# ---------------------------------------------------------------- progress


class Ticker:
    """Calls ``progress(done, total)`` at most about 100 times, and always at the end."""

    __slots__ = ("progress", "total", "step", "done")

    def __init__(self, progress: Progress | None, total: int):
        self.progress = progress
        self.total = total
        self.step = max(1, -(-total // 100))  # ceil: at most 100 steps
        self.done = 0
        if progress is not None:
            progress(0, total)

    def tick(self, n: int = 1) -> None:
        self.done += n
        if self.progress is not None and (
            self.done % self.step == 0 or self.done >= self.total
        ):
            self.progress(min(self.done, self.total), self.total)


# ---------------------------------------------------------------- text helpers


def fit_size(text: str, font: str, width: float, largest: float, smallest: float = 4) -> float:
    """The largest font size (down to ``smallest``) at which ``text`` fits ``width``."""
    w = pdfmetrics.stringWidth(text, font, 1)
    if w <= 0:
        return largest
    return max(smallest, min(largest, width / w))


def wrap(text: str, font: str, size: float, width: float) -> list[str]:
    """Split ``text`` into lines no wider than ``width`` (breaking long words)."""
    lines: list[str] = []
    for para in printable(text).split("\n"):
        words = para.split()
        line = ""
        for word in words:
            while pdfmetrics.stringWidth(word, font, size) > width and len(word) > 1:
                # break a word longer than the line
                cut = len(word)
                while cut > 1 and pdfmetrics.stringWidth(word[:cut], font, size) > width:
                    cut -= 1
                if line:
                    lines.append(line)
                    line = ""
                lines.append(word[:cut])
                word = word[cut:]
            trial = f"{line} {word}" if line else word
            if pdfmetrics.stringWidth(trial, font, size) <= width:
                line = trial
            else:
                lines.append(line)
                line = word
        lines.append(line)
    return lines


def draw_lines(c: Canvas, lines: Sequence[str], x: float, y: float, font: str, size: float,
               leading: float | None = None) -> float:
    """Draw ``lines`` from baseline ``y`` down; return the y below the last line."""
    leading = leading or size * 1.25
    c.setFont(font, size)
    for line in lines:
        c.drawString(x, y, line)
        y -= leading
    return y


def join_human(items: Iterable[str]) -> str:
    items = list(items)
    return ", ".join(items) if items else ""


# ---------------------------------------------------------------- QR codes


def qr_matrix(text: str) -> list[list[bool]]:
    """The QR code modules of ``text`` (byte mode, error correction level M), row by row.

    Encoded by reportlab's own encoder (``reportlab.graphics.barcode.qrencoder``, which
    implements ISO/IEC 18004), so no extra dependency is needed.
    """
    code = qrencoder.QRCode(None, qrencoder.QRErrorCorrectLevel.M)
    code.addData(text)
    code.make()
    n = code.getModuleCount()
    return [[bool(code.isDark(r, col)) for col in range(n)] for r in range(n)]


QUIET_ZONE = 4  # modules of white border around a QR code (ISO/IEC 18004, from memory)


def draw_qr(c: Canvas, text: str, x: float, y: float, size: float) -> None:
    """Draw the QR code of ``text`` with its lower-left corner at (x, y), ``size`` wide
    including the quiet zone. Dark runs of a row are merged into one rectangle."""
    matrix = qr_matrix(text)
    n = len(matrix)
    module = size / (n + 2 * QUIET_ZONE)
    c.saveState()
    c.setFillColorRGB(1, 1, 1)
    c.rect(x, y, size, size, stroke=0, fill=1)
    c.setFillColorRGB(0, 0, 0)
    path = c.beginPath()
    for r, row in enumerate(matrix):
        top = y + size - (QUIET_ZONE + r + 1) * module
        col = 0
        while col < n:
            if row[col]:
                start = col
                while col < n and row[col]:
                    col += 1
                path.rect(x + (QUIET_ZONE + start) * module, top,
                          (col - start) * module, module)
            else:
                col += 1
    c.drawPath(path, stroke=0, fill=1)
    c.restoreState()


def join_url(base_url: str, path: str) -> str:
    """``base_url`` and a tasting ``path`` joined with exactly one slash."""
    return base_url.rstrip("/") + "/" + path.lstrip("/")


MM = mm
