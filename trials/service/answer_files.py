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
from collections import defaultdict
from pathlib import Path
from typing import Any

import pandas as pd

from trials.errors import ImportRowsError, TrialsError
from trials.methods import Family, MethodSpec, get_method
from trials.model import EntryMode, PlanBook, PlanEntry, Response, Study
from trials.service import _input
from trials.service.checking import NO_PREFERENCE, BadAnswer, check_answer, question_text
from trials.service.tasting import responses_frame, save_checked
from trials.store import Store
from trials.store import answers as answer_rows
from trials.store import limits
from trials.store import plans as plan_rows
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
            raise BadAnswer("mode", f"expected tablet, paper or import, got {rec['mode']!r}") \
                from None
    at = default_at
    if str(rec.get("entered_at", "") or "").strip():
        try:
            at = dt.datetime.fromisoformat(str(rec["entered_at"]).strip())
            if at.tzinfo is not None:
                at = at.astimezone(dt.UTC).replace(tzinfo=None)
        except (ValueError, OverflowError):
            raise BadAnswer("entered_at", "expected a date and time written "
                            f"YYYY-MM-DDTHH:MM:SS, got {rec['entered_at']!r}") from None
    return mode, at


def checked_import(book: PlanBook, records: list[dict[str, Any]], *, entered_by: str,
                   at: dt.datetime) -> list[dict[str, Any]]:
    """The new answers of a file's rows, checked against the plan and the answers on
    file; :class:`ImportRowsError` lists every bad row."""
    problems: list[str] = []
    seen: dict[tuple[int, int, str], int] = {}
    new: list[dict[str, Any]] = []
    for i, rec in enumerate(records):
        rowno = i + 2
        try:
            ans = check_answer(book, str(rec["session"]), str(rec["panelist"]),
                               str(rec["code"]), str(rec["attribute"]), str(rec["value"]))
            mode, when = _row_extras(rec, at)
        except BadAnswer as bad:
            problems.append(f"row {rowno}, column {bad.column!r}: {bad.text}")
            continue
        key = (ans.session_id, ans.panelist_id, ans.question)
        panelist = str(rec["panelist"]).strip()
        if key in seen:
            problems.append(f"row {rowno}: answers the same question as row {seen[key]} "
                            f"(panelist {panelist!r}, {question_text(ans)})")
            continue
        seen[key] = rowno
        old = book.existing.get(key)
        if old is not None:
            if old != (ans.code, ans.value):
                problems.append(
                    f"row {rowno}: conflicts with the answer on file for panelist "
                    f"{panelist!r}, {question_text(ans)} (on file: code {old[0]!r}, value "
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
        new.append({
            "study_id": book.trial.id, "session_id": ans.session_id,
            "panelist_id": ans.panelist_id, "question": ans.question, "code": ans.code,
            "attribute": ans.attribute, "value": ans.value,
            "comment": comment, "entered_by": by, "entered_at": when, "mode": mode.value,
        })
    if problems:
        raise ImportRowsError(problems)
    return new


def import_responses(
    store: Store,
    study_id: int,
    path: str | Path | bytes,
    *,
    entered_by: str = "import",
    name: str = "",
) -> int:
    """Import answers from a CSV or Excel file (columns: see the module docstring).

    Every row is checked (panelist, session, code in this panelist's plan, attribute,
    value on the scale, rank in 1..k, no answer twice in the file, no answer that
    contradicts one on file). On any bad row :class:`~trials.errors.ImportRowsError`
    lists every bad row and nothing is imported. Answers already on file with the same
    value are skipped (recorded once). Returns the number of answers added.
    """
    frame = _input.read_rows(path, name)
    _input.require_columns(frame, RESPONSE_COLUMNS)
    source = name or (Path(path).name if isinstance(path, (str, Path)) else "upload")
    records = frame.to_dict("records")
    at = now()

    def work(tx) -> int:
        book = answer_rows.plan_book(tx, study_id, with_existing=True)
        new = checked_import(book, records, entered_by=entered_by, at=at)
        note = f"{len(new)} answers from {source} ({len(records) - len(new)} already on file)"
        return answer_rows.insert_answers(tx, book.trial.id, new, by=entered_by, note=note)

    return store.write(work)


def export_frame(store: Store, study_id: int) -> pd.DataFrame:
    """Every answer with the sample behind each code, in the export's columns."""
    frame = responses_frame(store, study_id)
    return pd.DataFrame({
        "session": frame["session"], "panelist": frame["panelist"], "code": frame["code"],
        "attribute": frame["attribute"], "value": frame["value"], "comment": frame["comment"],
        "entered_by": frame["entered_by"],
        "entered_at": [x.isoformat() if isinstance(x, dt.datetime) else "" for x in
                       frame["entered_at"]],
        "mode": frame["mode"], "sample": frame["sample"], "set_index": frame["set_index"],
        "position": frame["position"], "role": frame["role"],
    }, columns=list(EXPORT_COLUMNS))


def export_responses(
    store: Store, study_id: int, path: str | Path, *, fmt: str = "csv"
) -> int:
    """Write every answer with the sample behind each code (leader only); rows written.

    Columns: ``session panelist code attribute value comment entered_by entered_at mode
    sample set_index position role``; formula-like cells are neutralised. The file
    imports back with :func:`import_responses`.
    """
    from trials.tabular import write_table

    if fmt not in ("csv", "xlsx"):
        raise TrialsError(f"unknown export format {fmt!r}; expected csv or xlsx")
    return write_table(export_frame(store, study_id), Path(path), fmt=fmt)


def export_bytes(store: Store, study_id: int, *, fmt: str = "csv") -> bytes:
    """:func:`export_responses` as bytes, for a download button."""
    from trials.tabular import table_bytes

    if fmt not in ("csv", "xlsx"):
        raise TrialsError(f"unknown export format {fmt!r}; expected csv or xlsx")
    return table_bytes(export_frame(store, study_id), fmt=fmt)


# ---------------------------------------------------------------- the paper grid


def _attribute_columns(study: Study, spec: MethodSpec) -> list[str]:
    return [a.name for a in study.attributes] if spec.family == Family.RATING else ["rank"]


def _choice_grid(spec: MethodSpec, entries: list[PlanEntry], got: list[Response]) -> pd.DataFrame:
    chosen: dict[tuple[str, int], Response] = {}
    cups: dict[tuple[str, int], list[PlanEntry]] = defaultdict(list)
    for e in entries:
        cups[(e.panelist_code, e.set_index)].append(e)
    code_set = {(e.panelist_code, e.code): e.set_index for e in entries}
    for r in got:
        first = r.code.split()[0] if r.code.split() else ""
        chosen[(r.panelist_code, code_set.get((r.panelist_code, first), 0))] = r
    out = []
    for (p, k), items in sorted(cups.items()):
        r = chosen.get((p, k))
        row = {"panelist": p, "set": k + 1,
               "cups": " ".join(e.code for e in sorted(items, key=lambda e: e.position)),
               "chosen": r.code if r else ""}
        if spec.name == "paired-preference":
            row["no_preference"] = bool(r and r.value == NO_PREFERENCE)
        out.append(row)
    cols = ["panelist", "set", "cups", "chosen"]
    if spec.name == "paired-preference":
        cols.append("no_preference")
    return pd.DataFrame(out, columns=cols)


def paper_sheet(store: Store, study_id: int, session: str) -> pd.DataFrame:
    """The paper-entry grid of one session, filled with the answers on file.

    Forced choice: one row per panelist and set, columns ``panelist set cups chosen``
    (plus ``no_preference`` for paired preference). Rating: one row per cup in serving
    order, columns ``panelist position code`` and one per attribute. Ranking: one row per
    cup, columns ``panelist position code rank``. Codes are the blinding codes only.
    """
    with store.read() as tx:
        book = answer_rows.plan_book(tx, study_id)
        entries = plan_rows.plan_entries(tx, study_id, session)
        got = [r for r in answer_rows.responses(tx, study_id) if r.session == str(session)]
    study = book.trial
    spec = get_method(study.method)
    if spec.is_forced_choice:
        return _choice_grid(spec, entries, got)
    names = _attribute_columns(study, spec)
    have = {(r.panelist_code, r.code, r.attribute): r.value for r in got}
    out = []
    for e in entries:
        row: dict[str, Any] = {"panelist": e.panelist_code, "position": e.position,
                               "code": e.code}
        for a in names:
            v = have.get((e.panelist_code, e.code, a))
            row[a] = float(v) if v not in (None, "") else None
        out.append(row)
    frame = pd.DataFrame(out, columns=["panelist", "position", "code", *names])
    for a in names:
        frame[a] = frame[a].astype("Float64")
    return frame


def _blank(v: Any) -> bool:
    return v is None or (isinstance(v, float) and v != v) or v is pd.NA or str(v).strip() == ""


def sheet_answers(study: Study, spec: MethodSpec, session: str,
                  frame: pd.DataFrame) -> list[tuple[int, dict[str, Any]]]:
    """The answers a paper grid holds, as (grid row, answer fields); blanks skipped."""
    out: list[tuple[int, dict[str, Any]]] = []
    for i, rec in enumerate(frame.to_dict("records")):
        panelist = str(rec.get("panelist") or "").strip()
        if spec.is_forced_choice:
            code = str(rec.get("chosen") or "").strip()
            if rec.get("no_preference"):
                out.append((i, {"session": session, "panelist": panelist, "code": "",
                                "attribute": "choice", "value": NO_PREFERENCE}))
            elif code:
                out.append((i, {"session": session, "panelist": panelist, "code": code,
                                "attribute": "choice", "value": ""}))
            continue
        for a in _attribute_columns(study, spec):
            v = rec.get(a)
            if _blank(v):
                continue
            value = int(v) if isinstance(v, float) and v == int(v) else v
            out.append((i, {"session": session, "panelist": panelist,
                            "code": str(rec.get("code") or "").strip(), "attribute": a,
                            "value": str(value)}))
    return out


def sheet_problems(book: PlanBook, items: list[tuple[int, dict[str, Any]]]) -> list[str]:
    """One message per bad cell of a paper grid, naming the grid row (1-based), the
    panelist and what was expected; also a rank given twice by one panelist in a set."""
    spec = get_method(book.trial.method)
    problems: list[str] = []
    ranks: dict[tuple[str, int], dict[str, str]] = defaultdict(dict)
    for i, a in items:
        try:
            ans = check_answer(book, a["session"], a["panelist"], a["code"], a["attribute"],
                               a["value"])
        except BadAnswer as bad:
            problems.append(f"row {i + 1} (panelist {a['panelist']!r}), {bad.column}: {bad.text}")
            continue
        if spec.family == Family.RANKING:
            k = book.plan[(a["session"], a["panelist"])][ans.code].set_index
            given = ranks[(a["panelist"], k)]
            if ans.value in given:
                problems.append(f"row {i + 1} (panelist {a['panelist']!r}): rank "
                                f"{ans.value} is also given to code {given[ans.value]!r}")
            given[ans.value] = ans.code
    return problems


def check_paper_sheet(store: Store, study_id: int, session: str,
                      frame: pd.DataFrame) -> list[str]:
    """Problems of a paper grid (:func:`sheet_problems`); empty when every answer would
    be accepted."""
    with store.read() as tx:
        book = answer_rows.plan_book(tx, study_id)
    spec = get_method(book.trial.method)
    return sheet_problems(book, sheet_answers(book.trial, spec, str(session), frame))


def save_paper_sheet(store: Store, study_id: int, session: str, frame: pd.DataFrame, *,
                     entered_by: str = "leader") -> int:
    """Record every answer of a paper grid (mode ``paper``) in one transaction; all or
    none. An answer already on file with the same value is kept once; a changed one is
    replaced and audited. Returns the answers in the grid."""

    def work(tx) -> int:
        book = answer_rows.plan_book(tx, study_id)
        spec = get_method(book.trial.method)
        items = sheet_answers(book.trial, spec, str(session), frame)
        problems = sheet_problems(book, items)
        if problems:
            raise ImportRowsError(problems)
        for _, a in items:
            save_checked(tx, book, a["session"], a["panelist"], a["code"], a["attribute"],
                         a["value"], comment="", entered_by=entered_by, entered_at=None,
                         mode=EntryMode.PAPER)
        return len(items)

    return store.write(work)
