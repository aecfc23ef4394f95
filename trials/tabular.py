"""Reading and writing tidy tables: CSV (any common separator, byte-order mark,
UTF-8 or Windows-1252) and Excel. Used by the command line and the service layer;
the pure layers never read files.
"""

from __future__ import annotations

import csv
import io
from pathlib import Path

import pandas as pd

from trials.errors import TrialsError

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")


def _decode(raw: bytes, source: str) -> str:
    for encoding in ("utf-8-sig", "cp1252"):
        try:
            return raw.decode(encoding)
        except UnicodeDecodeError:
            continue
    raise TrialsError(f"{source}: cannot read the text; expected UTF-8 or Windows-1252")


def read_table(source: str | Path | bytes, *, name: str = "") -> pd.DataFrame:
    """Read a CSV or Excel file into a DataFrame of strings, columns stripped.

    ``source`` is a path, or the file's bytes (then ``name`` tells the format by its
    extension). Separators ``,``, ``;`` and tab are recognised; a byte-order mark is
    dropped. Every cell is text: callers convert and validate per column, so that an
    error can name the row and column. A ragged row, an unclosed quote, a header that
    names a column twice, UTF-16 or binary data are refused with a :class:`TrialsError`
    saying which. The apostrophe that :func:`neutralise` puts before a formula-like
    text is dropped again, so an export imports back to the same values.
    """
    if isinstance(source, (str, Path)):
        path = Path(source)
        name = name or path.name
        try:
            raw = path.read_bytes()
        except OSError as exc:
            raise TrialsError(f"cannot read {str(path)!r}: {exc.strerror}") from None
    else:
        raw = source
    label = name or "the file"
    is_excel = name.lower().endswith((".xlsx", ".xlsm"))
    if is_excel:
        try:
            frame = pd.read_excel(io.BytesIO(raw), dtype=str, keep_default_na=False)
        except Exception as exc:  # openpyxl raises many kinds
            raise TrialsError(f"{label}: not a readable Excel workbook ({exc})") from None
        first = pd.read_excel(io.BytesIO(raw), header=None, nrows=1, dtype=str)
        _check_header([str(c) for c in first.iloc[0].fillna("")] if len(first) else [], label)
    else:
        frame = _read_csv(raw, label)
    frame.columns = [str(c).strip() for c in frame.columns]
    return _unguard(frame)


def _check_text(raw: bytes, label: str) -> None:
    """Refuse UTF-16 and binary data with a message that says which it looks like."""
    odd_nul, even_nul = raw[1:4:2] == b"\x00\x00", raw[0:4:2] == b"\x00\x00"
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")) or (len(raw) >= 4 and odd_nul != even_nul):
        raise TrialsError(f"{label}: the text looks like UTF-16; save it as CSV UTF-8 "
                          "(or Windows-1252) and import again")
    nul = raw.find(b"\x00")
    if nul >= 0:
        raise TrialsError(f"{label}: holds binary data (a NUL byte at byte {nul + 1}), "
                          "not a CSV text file; save it as CSV UTF-8 and import again")


def _check_header(columns: list[str], label: str) -> None:
    names = [c.strip() for c in columns]
    twice = sorted({c for c in names if c and names.count(c) > 1})
    if twice:
        raise TrialsError(f"{label}: the header names {', '.join(map(repr, twice))} more "
                          "than once; give each column one name")


def _read_csv(raw: bytes, label: str) -> pd.DataFrame:
    _check_text(raw, label)
    text = _decode(raw, label)
    if not text.strip():
        raise TrialsError(f"{label}: the file is empty")
    first = text.splitlines()[0]
    try:
        sep = csv.Sniffer().sniff(first, delimiters=",;\t").delimiter
    except csv.Error:
        sep = ","
    try:
        # header=None: a row with more cells than the header is an error, not an index
        cells = pd.read_csv(io.StringIO(text), sep=sep, dtype=str, keep_default_na=False,
                            header=None)
    except (pd.errors.ParserError, csv.Error) as exc:
        detail = str(exc).strip().rstrip(".")
        raise TrialsError(f"{label}: not a well-formed CSV table ({detail}); no row may "
                          "hold more cells than the header, and every quote must close") from None
    header = [str(c) for c in cells.iloc[0]]
    _check_header(header, label)
    frame = cells.iloc[1:].reset_index(drop=True)
    frame.columns = header
    return frame


def _unguard(frame: pd.DataFrame) -> pd.DataFrame:
    """Undo :func:`neutralise`: an apostrophe that guards a formula-like text is dropped,
    so that an exported file imports back to the same values (column by column, only
    where a cell starts with an apostrophe)."""
    for column in frame.columns:
        cells = frame[column]
        if cells.dtype == object or pd.api.types.is_string_dtype(cells):
            text = cells.astype(str)
            guarded = text.str.startswith("'") & text.str[1:].str.startswith(FORMULA_STARTS)
            if guarded.any():
                frame[column] = text.where(~guarded, text.str[1:])
    return frame


def neutralise(value: object) -> object:
    """Quote a text cell that a spreadsheet would run as a formula (OWASP advice).

    Plain numbers such as ``-1.5`` stay as they are.
    """
    if isinstance(value, str) and value.startswith(FORMULA_STARTS):
        try:
            float(value)
        except ValueError:
            return "'" + value
    return value


def table_bytes(frame: pd.DataFrame, *, fmt: str = "csv") -> bytes:
    """``frame`` as CSV (UTF-8) or Excel bytes with formula-like cells neutralised."""
    safe = frame.map(neutralise) if len(frame) else frame
    buf = io.BytesIO()
    if fmt == "csv":
        # CRLF line ends, as RFC 4180 writes them: a carriage return inside a cell is
        # then quoted too, so a comment cannot split its record in two
        safe.to_csv(buf, index=False, lineterminator="\r\n")
    elif fmt == "xlsx":
        safe.to_excel(buf, index=False)
    else:
        raise TrialsError(f"unknown export format {fmt!r}; expected csv or xlsx")
    return buf.getvalue()


def write_table(frame: pd.DataFrame, path: Path, *, fmt: str = "csv") -> int:
    """Write ``frame`` as CSV or Excel with formula-like cells neutralised; rows written."""
    Path(path).write_bytes(table_bytes(frame, fmt=fmt))
    return len(frame)
