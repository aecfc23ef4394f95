"""Use cases of answers that arrive or leave in tables: importing a response file,
exporting one, and the paper-entry grid of a session (fill, check, save).

The response file (CSV, with ``,`` ``;`` or tab; UTF-8 with or without a byte-order
mark, or Windows-1252; or an Excel workbook) has one row per answer:

=============  ==========================================================================
column         meaning
=============  ==========================================================================
session        the session's name, e.g. ``1``
panelist       the panelist's code, e.g. ``P07``
code           the cup's blinding code (forced choice: the chosen cup; tetrad: the two
               codes of the chosen group separated by a space; empty with
               ``no preference``)
attribute      ``choice`` for a forced choice, ``rank`` for a ranking, else the name of
               one of the trial's attributes
value          the score (a whole number on the attribute's scale), the rank (1 = most),
               empty for a choice, or ``no preference`` (paired preference only)
comment        optional free text
entered_by     optional: who entered the answer (default: ``import``)
entered_at     optional: when, ISO 8601 (default: the time of the import)
mode           optional: ``tablet``, ``paper`` or ``import`` (default ``import``)
=============  ==========================================================================

Other columns (an export adds ``sample``, ``set_index``, ``position``, ``role``) are
ignored, so an exported file imports back; an answer already on file with the same
value is recorded once. Rows are numbered as a spreadsheet shows them: the header is
row 1, the first answer row 2.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import pandas as pd

from trials import answers
from trials.answers import CHOICE, CheckedAnswer
from trials.errors import AnswerError, ImportRowsError, TrialsError
from trials.methods import get_method
from trials.model import EntryMode, PlanBook, Record, Trial
from trials.service import _input
from trials.service.tasting import advance_status, answers_frame, checker_of, save_checked
from trials.store import Store, limits
from trials.store import answers as answer_rows
from trials.store import plans as plan_rows
from trials.store import trials as trial_rows
from trials.store.rows import now

RESPONSE_COLUMNS = ("session", "panelist", "code", "attribute", "value")
OPTIONAL_COLUMNS = ("comment", "entered_by", "entered_at", "mode")
EXPORT_COLUMNS = (
    "session", "panelist", "code", "attribute", "value", "comment", "entered_by",
    "entered_at", "mode", "sample", "set_index", "position", "role",
)


def _row_extras(rec: dict[str, Any], default_at: dt.datetime) -> tuple[EntryMode, dt.datetime]:
    """The optional ``mode`` and ``entered_at`` of a file row."""
    mode = EntryMode.IMPORT
    if str(rec.get("mode", "") or "").strip():
        try:
            mode = EntryMode(str(rec["mode"]).strip().lower())
        except ValueError:
            raise AnswerError("mode", f"expected tablet, paper or import, got {rec['mode']!r}") \
                from None
    at = default_at
    if str(rec.get("entered_at", "") or "").strip():
        try:
            at = dt.datetime.fromisoformat(str(rec["entered_at"]).strip())
            if at.tzinfo is not None:
                at = at.astimezone(dt.UTC).replace(tzinfo=None)
        except (ValueError, OverflowError):
            raise AnswerError("entered_at", "expected a date and time written "
                              f"YYYY-MM-DDTHH:MM:SS, got {rec['entered_at']!r}") from None
    return mode, at


def _question_text(ans: CheckedAnswer) -> str:
    """The question an answer answers, in words, for a message."""
    if ans.question.startswith(f"{CHOICE}:"):
        return f"the choice of set {ans.question.split(':', 1)[1]}"
    return f"code {ans.code!r}, attribute {ans.attribute!r}"


def checked_import(book: PlanBook, records: list[dict[str, Any]], *, entered_by: str,
                   at: dt.datetime) -> list[tuple[CheckedAnswer, dict[str, Any]]]:
    """The new answers of a file's rows with their extras, checked against the plan and
    the answers on file; :class:`ImportRowsError` lists every bad row."""
    checker = checker_of(book)
    problems: list[str] = []
    seen: dict[tuple[str, str, str], int] = {}
    new: list[tuple[CheckedAnswer, dict[str, Any]]] = []
    for i, rec in enumerate(records):
        rowno = i + 2
        try:
            ans = checker.check(str(rec["session"]), str(rec["panelist"]), str(rec["code"]),
                                str(rec["attribute"]), str(rec["value"]))
            mode, when = _row_extras(rec, at)
        except AnswerError as bad:
            problems.append(f"row {rowno}, column {bad.column!r}: {bad.text}")
            continue
        key = (ans.session, ans.panelist, ans.question)
        if key in seen:
            problems.append(f"row {rowno}: answers the same question as row {seen[key]} "
                            f"(panelist {ans.panelist!r}, {_question_text(ans)})")
            continue
        seen[key] = rowno
        old = book.existing.get(key)
        if old is not None:
            if old != (ans.code, ans.value):
                problems.append(
                    f"row {rowno}: conflicts with the answer on file for panelist "
                    f"{ans.panelist!r}, {_question_text(ans)} (on file: code {old[0]!r}, value "
                    f"{old[1]!r}; in the file: code {ans.code!r}, value {ans.value!r})"
                )
            continue
        comment = str(rec.get("comment", "") or "")
        by = str(rec.get("entered_by", "") or "").strip() or entered_by
        too_much = [(c, limits.problem("response", c, v)) for c, v in
                    (("comment", comment), ("entered_by", by))]
        too_much = [(c, p) for c, p in too_much if p]
        if too_much:
            problems += [f"row {rowno}, column {c!r}: {p}" for c, p in too_much]
            continue
        new.append((ans, {"comment": comment, "entered_by": by, "entered_at": when,
                          "mode": mode.value}))
    if problems:
        raise ImportRowsError(problems)
    return new


@dataclass(frozen=True, slots=True)
class AnswerImport(Record):
    """What an answer file brought: ``rows`` answer rows read, ``added`` new answers
    stored, ``already`` rows already on record with the same value (recorded once)."""

    rows: int
    added: int
    already: int

    def message(self) -> str:
        """The outcome in the leader's words; a file wholly on record is not "0 imported"."""
        if not self.rows:
            return "The file holds no answers; nothing imported."
        if not self.added:
            return (f"All {self.rows} answers in this file are already on record; nothing new "
                    "imported.")
        if self.already:
            return (f"{self.added} answers imported; {self.already} were already on record "
                    "and are kept once.")
        return f"{self.added} answers imported."


def import_answer_file(
    store: Store,
    trial_id: int,
    path: str | Path | bytes,
    *,
    entered_by: str = "import",
    name: str = "",
) -> AnswerImport:
    """Import answers from a CSV or Excel file (columns: see the module docstring).

    Every row is checked (panelist, session, code in this panelist's plan, attribute,
    value on the scale, rank in 1..k, no answer twice in the file, no answer that
    contradicts one on file). On any bad row :class:`~trials.errors.ImportRowsError`
    lists every bad row and nothing is imported. Answers already on file with the same
    value are skipped (recorded once) and counted in :attr:`AnswerImport.already`.
    """
    frame = _input.read_rows(path, name)
    _input.require_columns(frame, RESPONSE_COLUMNS)
    source = name or (Path(path).name if isinstance(path, (str, Path)) else "upload")
    records = frame.to_dict("records")
    at = now()

    def work(tx) -> AnswerImport:
        book = answer_rows.plan_book(tx, trial_id, with_existing=True)
        new = checked_import(book, records, entered_by=entered_by, at=at)
        note = f"{len(new)} answers from {source} ({len(records) - len(new)} already on file)"
        added = answer_rows.insert_answers(tx, book, new, by=entered_by, note=note)
        advance_status(tx, trial_id, by=entered_by, book=book)
        return AnswerImport(rows=len(records), added=added, already=len(records) - len(new))

    return store.write(work)


def import_answers(
    store: Store,
    trial_id: int,
    path: str | Path | bytes,
    *,
    entered_by: str = "import",
    name: str = "",
) -> int:
    """:func:`import_answer_file`, returning only the number of answers added."""
    return import_answer_file(store, trial_id, path, entered_by=entered_by, name=name).added


def export_frame(store: Store, trial_id: int) -> pd.DataFrame:
    """Every answer with the sample behind each code, in the export's columns."""
    frame = answers_frame(store, trial_id)
    return pd.DataFrame({
        "session": frame["session"], "panelist": frame["panelist"], "code": frame["code"],
        "attribute": frame["attribute"], "value": frame["value"], "comment": frame["comment"],
        "entered_by": frame["entered_by"],
        "entered_at": [x.isoformat() if isinstance(x, dt.datetime) else "" for x in
                       frame["entered_at"]],
        "mode": frame["mode"], "sample": frame["sample"], "set_index": frame["set_index"],
        "position": frame["position"], "role": frame["role"],
    }, columns=list(EXPORT_COLUMNS))


def export_answers(
    store: Store, trial_id: int, path: str | Path, *, fmt: str = "csv"
) -> int:
    """Write every answer with the sample behind each code (leader only); rows written.

    Columns: ``session panelist code attribute value comment entered_by entered_at mode
    sample set_index position role``; formula-like cells are neutralised. The file
    imports back with :func:`import_answers`.
    """
    from trials.tabular import write_table

    if fmt not in ("csv", "xlsx"):
        raise TrialsError(f"unknown export format {fmt!r}; expected csv or xlsx")
    return write_table(export_frame(store, trial_id), Path(path), fmt=fmt)


def export_bytes(store: Store, trial_id: int, *, fmt: str = "csv") -> bytes:
    """:func:`export_answers` as bytes, for a download button."""
    from trials.tabular import table_bytes

    if fmt not in ("csv", "xlsx"):
        raise TrialsError(f"unknown export format {fmt!r}; expected csv or xlsx")
    return table_bytes(export_frame(store, trial_id), fmt=fmt)


# ---------------------------------------------------------------- the paper grid


def _attribute_names(study: Trial) -> list[str]:
    return [a.name for a in study.attributes]


def paper_sheet(store: Store, trial_id: int, session: str, *,
                as_text: bool = False) -> pd.DataFrame:
    """The paper-entry grid of one session, filled with the answers on file
    (:func:`trials.answers.paper_sheet`; ``as_text``: score cells as text, for an entry
    grid that checks every cell by name). Codes are the blinding codes only."""
    with store.read() as tx:
        study = trial_rows.get_trial(tx, trial_id)
        entries = plan_rows.plan_entries(tx, trial_id, session)
        got = [r for r in answer_rows.list_answers(tx, trial_id) if r.session == str(session)]
    return answers.paper_sheet(get_method(study.method), entries, got, _attribute_names(study),
                              as_text=as_text)


def check_paper_sheet(store: Store, trial_id: int, session: str,
                      frame: pd.DataFrame) -> list[str]:
    """Problems of a paper grid (:func:`trials.answers.sheet_problems`), one message per
    bad cell; empty when every answer would be accepted."""
    with store.read() as tx:
        book = answer_rows.plan_book(tx, trial_id)
    return answers.sheet_problems(checker_of(book), str(session), frame)


def save_paper_sheet(store: Store, trial_id: int, session: str, frame: pd.DataFrame, *,
                     entered_by: str = "leader") -> int:
    """Record every answer of a paper grid (mode ``paper``) in one transaction; all or
    none: on any bad cell :class:`~trials.errors.ImportRowsError` lists every one
    (:func:`trials.answers.sheet_problems`) and nothing is saved. Rows are matched to
    the plan by panelist and set or code, never by their place in the grid. An answer
    already on file with the same value is kept once; a changed one is replaced and
    audited; a blank cell leaves what is on file. Returns the answers in the grid."""

    def work(tx) -> int:
        book = answer_rows.plan_book(tx, trial_id)
        checker = checker_of(book)
        problems = answers.sheet_problems(checker, str(session), frame)
        if problems:
            raise ImportRowsError(problems, bad="bad cell(s)", outcome="nothing saved")
        items = answers.sheet_answers(checker.spec, str(session), frame,
                                      _attribute_names(book.trial))
        for _, a in items:
            save_checked(tx, book, a["session"], a["panelist"], a["code"], a["attribute"],
                         a["value"], comment="", entered_by=entered_by, entered_at=None,
                         mode=EntryMode.PAPER, checker=checker)
        if items:
            advance_status(tx, trial_id, by=entered_by, book=book)
        return len(items)

    return store.write(work)
