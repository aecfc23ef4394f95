"""What a text field may hold, the same on every database: at most its column's
length, and no NUL character (PostgreSQL refuses one, SQLite would keep it).

Every ORM write passes :func:`check_row` before the database sees it (a ``before_flush``
hook set by :func:`trials.store.engine.open_store`); bulk inserts call
:func:`check_values`. A refusal is a :class:`TrialsError` naming the field and its
limit, so both stores give the same clear answer to the same data.
"""

from __future__ import annotations

from collections.abc import Iterable, Mapping
from typing import Any

import sqlalchemy as sa
from sqlalchemy.orm import Session

from trials.errors import TrialsError
from trials.store.schema import Base

# the field in words, by (table, column); others are named "table.column"
FIELD_WORDS = {
    ("study", "name"): "the trial's name", ("study", "product"): "the product",
    ("sample", "name"): "a sample's name", ("sample", "allergens"): "a sample's allergen list",
    ("attribute", "name"): "an attribute's name", ("batch", "label"): "a batch label",
    ("batch", "prepared_by"): "who prepared a batch",
    ("batch", "safety_signed_by"): "who signed off a batch",
    ("batch_value", "name"): "the name of a batch value", ("batch_value", "value"): "a batch value",
    ("batch_value", "unit"): "a unit", ("panelist", "code"): "a panelist code",
    ("panelist", "allergens"): "a panelist's allergen list",
    ("tasting_session", "name"): "a session's name", ("response", "code"): "an answer's code",
    ("response", "attribute"): "an answer's attribute", ("response", "value"): "an answer's value",
    ("response", "entered_by"): "who entered an answer", ("audit_log", "who"): "who made a change",
}


def _text_columns() -> dict[str, dict[str, int | None]]:
    out: dict[str, dict[str, int | None]] = {}
    for table in Base.metadata.sorted_tables:
        for column in table.columns:
            if isinstance(column.type, sa.String):  # Text is a String without a length
                out.setdefault(table.name, {})[column.key] = column.type.length
    return out


TEXT_COLUMNS = _text_columns()


def problem(table: str, column: str, value: Any) -> str | None:
    """Why ``value`` cannot be stored in ``table.column``, or None when it can."""
    if not isinstance(value, str) or column not in TEXT_COLUMNS.get(table, {}):
        return None
    what = FIELD_WORDS.get((table, column), f"{table}.{column}")
    if "\x00" in value:
        return f"{what} holds a NUL character, which no store keeps; remove it"
    limit = TEXT_COLUMNS[table][column]
    if limit is not None and len(value) > limit:
        return (f"{what} may hold at most {limit} characters; got {len(value)} "
                f"({value[:40]!r}...)")
    return None


def check_values(table: str, values: Iterable[Mapping[str, Any]]) -> None:
    """Refuse the first row of a bulk insert with a text that cannot be stored."""
    for row in values:
        for column, value in row.items():
            found = problem(table, column, value)
            if found:
                raise TrialsError(found)


def check_row(obj: Any) -> None:
    """Refuse an ORM row with a text that cannot be stored."""
    table = getattr(obj, "__tablename__", None)
    if table is None:
        return
    for column in TEXT_COLUMNS.get(table, {}):
        found = problem(table, column, getattr(obj, column, None))
        if found:
            raise TrialsError(found)


def _before_flush(session: Session, _context: Any, _instances: Any) -> None:
    rows = list(session.new) + list(session.dirty)
    # the row the user wrote first, the audit entry that echoes it last
    rows.sort(key=lambda obj: getattr(obj, "__tablename__", "") == "audit_log")
    for obj in rows:
        check_row(obj)


def guard(factory: Any) -> None:
    """Check every row a session of ``factory`` (a sessionmaker) flushes."""
    sa.event.listen(factory, "before_flush", _before_flush)
