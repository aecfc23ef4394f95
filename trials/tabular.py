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
    error can name the row and column.
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
    if not is_excel and (raw.startswith((b"\xff\xfe", b"\xfe\xff")) or b"\x00" in raw[:4096]):
        raise TrialsError(f"{label}: the text looks like UTF-16; save it as CSV UTF-8 "
                          "(or Windows-1252) and import again")
    if is_excel:
        try:
            frame = pd.read_excel(io.BytesIO(raw), dtype=str, keep_default_na=False)
        except Exception as exc:  # openpyxl raises many kinds
            raise TrialsError(f"{label}: not a readable Excel workbook ({exc})") from None
    else:
        text = _decode(raw, label)
        if not text.strip():
            raise TrialsError(f"{label}: the file is empty")
        try:
            dialect = csv.Sniffer().sniff(text.splitlines()[0], delimiters=",;\t")
            sep = dialect.delimiter
        except csv.Error:
            sep = ","
        frame = pd.read_csv(io.StringIO(text), sep=sep, dtype=str, keep_default_na=False)
    frame.columns = [str(c).strip() for c in frame.columns]
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
        safe.to_csv(buf, index=False)
    elif fmt == "xlsx":
        safe.to_excel(buf, index=False)
    else:
        raise TrialsError(f"unknown export format {fmt!r}; expected csv or xlsx")
    return buf.getvalue()


def write_table(frame: pd.DataFrame, path: Path, *, fmt: str = "csv") -> int:
    """Write ``frame`` as CSV or Excel with formula-like cells neutralised; rows written."""
    Path(path).write_bytes(table_bytes(frame, fmt=fmt))
    return len(frame)
