"""Checks of input shared by the use cases: names, fractions, dates, allergen lists,
measurements, entry modes, and the tables read from files. Pure: no store."""

from __future__ import annotations

import datetime as dt
from collections.abc import Iterable, Sequence
from pathlib import Path
from typing import Any

import pandas as pd

from trials.errors import ImportRowsError, TrialsError
from trials.model import EntryMode, Measurement

AIMS = ("", "difference", "similarity")


def today() -> dt.date:
    return dt.date.today()


def name(value: Any, what: str) -> str:
    """A non-empty name, stripped."""
    stripped = str(value or "").strip()
    if not stripped:
        raise TrialsError(f"{what} must not be empty, got {value!r}")
    return stripped


def fraction(value: Any, what: str, *, allow_none: bool = False) -> float | None:
    """A number strictly between 0 and 1 (alpha, beta, pd)."""
    if value is None and allow_none:
        return None
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise TrialsError(f"{what} must be a number between 0 and 1, got {value!r}") from None
    if not 0 < x < 1:
        raise TrialsError(f"{what} must lie strictly between 0 and 1, got {value!r}")
    return x


def aim(value: Any) -> str:
    """A discrimination trial's question: ``difference``, ``similarity`` or unset."""
    stripped = (value or "").strip().lower()
    if stripped not in AIMS:
        raise TrialsError(f"aim must be 'difference' or 'similarity', got {value!r}")
    return stripped


def as_date(value: Any, what: str) -> dt.date | None:
    """A date, from a date or a YYYY-MM-DD text; None for nothing."""
    if value is None or value == "":
        return None
    if isinstance(value, dt.datetime):
        return value.date()
    if isinstance(value, dt.date):
        return value
    try:
        return dt.date.fromisoformat(str(value).strip())
    except ValueError:
        raise TrialsError(f"{what} must be a date written YYYY-MM-DD, got {value!r}") from None


def allergens(value: Iterable[str] | str | None) -> tuple[str, ...]:
    """Lower-case allergen names (separated by ``,`` ``;`` or ``|`` in a text),
    duplicates dropped, order kept."""
    if value is None:
        return ()
    if isinstance(value, str):
        for sep in (";", "|"):
            value = value.replace(sep, ",")
        value = value.split(",")
    out: list[str] = []
    for item in value:
        one = str(item).strip().lower()
        if one and one not in out:
            out.append(one)
    return tuple(out)


def measurements(items: Iterable[Any] | dict | None, what: str) -> list[Measurement]:
    """Named values with units from records, ``(name, value, unit)`` tuples, dicts or
    ``{name: (value, unit)}``; each named once."""
    if not items:
        return []
    if isinstance(items, dict):
        items = [(k, *(v if isinstance(v, tuple) else (v,))) for k, v in items.items()]
    out = []
    for item in items:
        if isinstance(item, Measurement):
            m = item
        elif isinstance(item, dict):
            m = Measurement(item["name"], item["value"], item.get("unit", ""))
        else:
            m = Measurement(*item)
        name(m.name, f"the name of a {what}")
        out.append(m)
    names = [m.name for m in out]
    dupes = sorted({n for n in names if names.count(n) > 1})
    if dupes:
        raise TrialsError(f"{what} named twice: {', '.join(map(repr, dupes))}")
    return out


def entry_mode(mode: Any) -> EntryMode:
    try:
        return EntryMode(str(mode).strip().lower())
    except ValueError:
        known = ", ".join(m.value for m in EntryMode)
        raise TrialsError(f"unknown entry mode {mode!r}; expected one of: {known}") from None


def read_rows(path: str | Path | bytes, file_name: str = "") -> pd.DataFrame:
    """A table from a CSV or Excel file, or uploaded bytes (:mod:`trials.tabular`)."""
    from trials.tabular import read_table

    default = "" if isinstance(path, (str, Path)) else "upload.csv"
    return read_table(path, name=file_name or default)


def require_columns(frame: pd.DataFrame, required: Sequence[str]) -> None:
    missing = [c for c in required if c not in frame.columns]
    if missing:
        have = ", ".join(repr(c) for c in frame.columns) or "none"
        raise ImportRowsError([
            f"row 1 (the header): missing column {c!r}; the file has columns {have}"
            for c in missing
        ])
