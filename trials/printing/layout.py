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

import functools
import os
import threading
import unicodedata
from collections.abc import Callable, Iterable, Sequence
from dataclasses import dataclass
from typing import Any

import numpy as np
import reportlab
from reportlab import rl_config
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


_save_lock = threading.Lock()


def finish(c: Canvas, buffer) -> bytes:
    """Save the canvas and return the PDF's bytes.

    The page streams are compressed but not ASCII85-encoded: reportlab's encoder is
    pure Python here (no C accelerator) and took a quarter of a ballot's time; binary
    streams are also a fifth smaller. ``rl_config.useA85`` is read at save time, so it
    is switched off for this save only.
    """
    with _save_lock:
        old = rl_config.useA85
        rl_config.useA85 = 0
        try:
            c.save()
        finally:
            rl_config.useA85 = old
    return buffer.getvalue()


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


@functools.lru_cache(maxsize=4096)
def wrap(text: str, font: str, size: float, width: float) -> tuple[str, ...]:
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
    return tuple(lines)


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


@functools.lru_cache(maxsize=256)
def _qr_cached(text: str) -> tuple[tuple[bool, ...], ...]:
    return tuple(tuple(row) for row in _qr_matrix(text))


def qr_matrix(text: str) -> list[list[bool]]:
    """The QR code modules of ``text``, row by row (see :func:`_qr_matrix`)."""
    return [list(row) for row in _qr_cached(text)]


def _qr_matrix(text: str) -> list[list[bool]]:
    """The QR code modules of ``text`` (byte mode, error correction level M), row by row.

    Encoded with reportlab's own encoder (``reportlab.graphics.barcode.qrencoder``, an
    implementation of ISO/IEC 18004), so no extra dependency is needed: its data
    codewords (with Reed-Solomon error correction), its function patterns, data
    placement and masks. ``QRCode.make`` picks the mask with the lowest penalty score by
    building the symbol eight times in pure Python (about 50 ms a code here); this
    scores the eight masks at once with numpy, by reportlab's own scoring rules, so the
    symbol is the same (a test checks it against ``QRCode.make``) in a few milliseconds.
    """
    _memoise_generator_polynomials()
    level = qrencoder.QRErrorCorrectLevel.M
    code = qrencoder.QRCode(None, level)
    code.addData(text)
    version = code.calculate_version()
    base, rows, cols, masks = _symbol_frame(version)
    data = qrencoder.QRCode.createData(version, level, code.dataList)
    bits = np.unpackbits(np.frombuffer(bytes(data), np.uint8)).astype(bool)
    placed = np.zeros(rows.size, bool)
    placed[: min(bits.size, rows.size)] = bits[: rows.size]
    stack = np.repeat(base[None], 8, axis=0)
    stack[:, rows, cols] = placed[None, :] ^ masks
    best = int(np.argmin(_penalties(stack)))  # the first of equal scores, as reportlab
    code.version = version
    code.moduleCount = base.shape[0]
    code.modules = stack[best].tolist()
    code.setupTypeInfo(False, best)
    if version >= 7:
        code.setupTypeNumber(False)
    return [list(map(bool, row)) for row in code.modules]


_memoised = False


def _memoise_generator_polynomials() -> None:
    """reportlab's encoder rebuilds the Reed-Solomon generator polynomial for every
    block of every code; it depends only on the number of error-correction codewords,
    so it is computed once per length (a pure function: the same results)."""
    global _memoised
    if not _memoised:
        util = qrencoder.QRUtil
        util.getErrorCorrectPolynomial = staticmethod(
            functools.lru_cache(maxsize=64)(util.getErrorCorrectPolynomial))
        _memoised = True


@functools.lru_cache(maxsize=40)
def _symbol_frame(version: int):
    """The function patterns of a symbol of ``version`` (format areas light), the
    (row, col) of its data modules in placement order, and the 8 masks there."""
    frame = qrencoder.QRCode(version, qrencoder.QRErrorCorrectLevel.M)
    frame.makeImpl(True, 0)  # reportlab's own layout of the patterns
    base = np.array(frame.modules, bool)
    pos = np.array(frame.dataPosIterator())  # (col, row) of every data module
    cols, rows = pos[:, 0], pos[:, 1]
    base[rows, cols] = False
    funcs = qrencoder.QRUtil.maskPattern
    masks = np.array([funcs[m](rows, cols) for m in range(8)], bool)
    for arr in (base, rows, cols, masks):
        arr.setflags(write=False)
    return base, rows, cols, masks


_FINDER_LIKE = np.array([1, 0, 1, 1, 1, 0, 1, 0, 0, 0, 0], bool)


def _penalties(stack: np.ndarray) -> np.ndarray:
    """reportlab's ``QRUtil.getLostPoint`` for each symbol of a (k, n, n) stack.

    Runs of five or more like modules along rows and columns score length - 2 each;
    each 2 x 2 block of one colour 3; the finder-like pattern 40 (reportlab looks for it
    along rows only, in windows starting before n - 11: its column pass compares tuples
    with a list and never matches); and 10 per 5 % the dark share is away from 50 %.
    """
    k, n, _ = stack.shape
    total = np.zeros(k, np.int64)
    for arr in (stack, stack.transpose(0, 2, 1)):
        seq = np.concatenate([arr.astype(np.int8), np.full((k, 1, n), 2, np.int8)], axis=1)
        seq = seq.transpose(0, 2, 1).reshape(-1)  # each line, then a separator
        starts = np.concatenate(([0], np.flatnonzero(seq[1:] != seq[:-1]) + 1))
        lengths = np.diff(np.append(starts, seq.size))
        keep = (seq[starts] != 2) & (lengths >= 5)
        owner = starts[keep] // (n * (n + 1))
        total += np.bincount(owner, weights=lengths[keep] - 2, minlength=k).astype(np.int64)
    a = stack
    corner = a[:, :-1, :-1]
    same = (corner == a[:, 1:, :-1]) & (corner == a[:, :-1, 1:]) & (corner == a[:, 1:, 1:])
    total += 3 * same.sum(axis=(1, 2))
    windows = np.lib.stride_tricks.sliding_window_view(a, 11, axis=2)[:, :, : n - 11]
    total += 40 * (windows == _FINDER_LIKE).all(axis=3).sum(axis=(1, 2))
    dark = a.sum(axis=(1, 2)).astype(np.int64)
    total += 10 * (np.abs(100 * dark // (n * n) - 50) // 5)
    return total


QUIET_ZONE = 4  # modules of white border around a QR code (ISO/IEC 18004, from memory)


def _num(v: float) -> str:
    return f"{v:.2f}"


def literal_rects(c: Canvas, rects: Iterable[tuple[float, float, float, float]], *,
                  op: str, gray: float = 0.0, width: float = 1.0) -> None:
    """Many rectangles in one path, written as PDF operators (``op``: "f" fills, "S"
    strokes) in ``gray``. reportlab formats each number in pure Python here, which is
    the bulk of a ballot's time; this writes the same operators directly."""
    body = " ".join(f"{_num(x)} {_num(y)} {_num(w)} {_num(h)} re" for x, y, w, h in rects)
    if not body:
        return
    color = f"{_num(gray)} g" if op == "f" else f"{_num(gray)} G {_num(width)} w"
    c.addLiteral(f"q {color} {body} {op} Q")


def draw_qr(c: Canvas, text: str, x: float, y: float, size: float) -> None:
    """Draw the QR code of ``text`` with its lower-left corner at (x, y), ``size`` wide
    including the quiet zone. Dark runs of a row are merged into one rectangle."""
    matrix = qr_matrix(text)
    n = len(matrix)
    module = size / (n + 2 * QUIET_ZONE)
    literal_rects(c, [(x, y, size, size)], op="f", gray=1.0)
    rects = []
    for r, row in enumerate(matrix):
        top = y + size - (QUIET_ZONE + r + 1) * module
        col = 0
        while col < n:
            if row[col]:
                start = col
                while col < n and row[col]:
                    col += 1
                rects.append((x + (QUIET_ZONE + start) * module, top,
                               (col - start) * module, module))
            else:
                col += 1
    literal_rects(c, rects, op="f", gray=0.0)


def join_url(base_url: str, path: str) -> str:
    """``base_url`` and a tasting ``path`` joined with exactly one slash."""
    return base_url.rstrip("/") + "/" + path.lstrip("/")


MM = mm
