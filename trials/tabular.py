"""Reading and writing tidy tables: CSV (any common separator, byte-order mark,
UTF-8 or Windows-1252) and Excel. Used by the command line and the service layer;
the pure layers never read files.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Sequence
from pathlib import Path

import numpy as np
import pandas as pd

from trials.errors import TrialsError

FORMULA_STARTS = ("=", "+", "-", "@", "\t", "\r")
DECIMAL_COMMA = r"[+-]?\d+,\d+"  # 7,0 or -0,25: a decimal comma, no thousands mark
COMMA_NUMBER = r"[+-]?\d+(?:,\d+)?"  # a whole number or one with a decimal comma


def _decode(raw: bytes, source: str) -> str:
    for encoding in ("utf-8-sig", "cp1252"):
        try:
            return raw.decode(encoding)
        except UnicodeDecodeError:
            continue
    raise TrialsError(f"{source}: cannot read the text; expected UTF-8 or Windows-1252")


def read_table(source: str | Path | bytes, *, name: str = "",
               numbers: Sequence[str] = ()) -> pd.DataFrame:
    """Read a CSV or Excel file into a DataFrame of strings, columns stripped.

    ``source`` is a path, or the file's bytes (then ``name`` tells the format by its
    extension). Separators ``,``, ``;`` and tab are recognised; a byte-order mark is
    dropped. Every cell is text: callers convert and validate per column, so that an
    error can name the row and column. A ragged row, an unclosed quote, a header that
    names a column twice, UTF-16 or binary data are refused with a :class:`TrialsError`
    saying which. The apostrophe that :func:`neutralise` puts before a formula-like
    text is dropped again, so an export imports back to the same values. Columns named
    in ``numbers`` come back as floats when every cell of a CSV holds a number (faster
    for large files); otherwise they are text like the rest.

    Decimal commas: in a file separated by ``;`` (as spreadsheets write CSV where the
    comma is the decimal mark), a column whose every filled cell is a number and at
    least one is written with a decimal comma (``7,0``) is read as numbers: its cells
    become ``7.0`` (or floats, for a column in ``numbers`` with no empty cell). Never in
    a comma-separated file, where ``"7,0"`` in quotes stays the text it is.
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
        frame = _read_csv(raw, label, numbers)
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


def _read_csv(raw: bytes, label: str, numbers: Sequence[str] = ()) -> pd.DataFrame:
    """Parse CSV text with pyarrow's reader (the whole file at C speed, every cell text,
    empty cells empty, quoted line breaks kept). Columns named in ``numbers`` are read as
    numbers when every cell is one; otherwise as text, so the caller's check can name
    the bad lines."""
    import pyarrow as pa
    from pyarrow import csv as pacsv

    _check_text(raw, label)
    text = _decode(raw, label)
    if not text.strip():
        raise TrialsError(f"{label}: the file is empty")
    first = text.lstrip("\r\n").partition("\n")[0].rstrip("\r")
    try:
        sep = csv.Sniffer().sniff(first, delimiters=",;\t").delimiter
    except csv.Error:
        sep = ","
    names = next(csv.reader([first], delimiter=sep), [])
    header = [c.strip() for c in names]
    _check_header(header, label)
    quotes = text.count('"')
    if quotes % 2:  # quotes inside a cell are doubled, so an odd count leaves one open
        line = text[:text.rfind('"')].count("\n") + 1
        raise TrialsError(f"{label}: not a well-formed CSV table (a quote opened at or before "
                          f"line {line} never closes); every quote must close")
    data = text.encode("utf-8")
    parse = pacsv.ParseOptions(delimiter=sep, newlines_in_values=quotes > 0)
    wanted = {c.strip() for c in numbers}
    text_type = pd.StringDtype("pyarrow", na_value=np.nan)
    for typed in ((True, False) if wanted & set(header) else (False,)):
        types = {n: pa.float64() if typed and n.strip() in wanted else pa.string()
                 for n in names}
        convert = pacsv.ConvertOptions(column_types=types, strings_can_be_null=False,
                                       quoted_strings_can_be_null=False, null_values=[])
        try:
            table = pacsv.read_csv(io.BytesIO(data), parse_options=parse,
                                   convert_options=convert)
        except pa.ArrowInvalid as exc:
            detail = str(exc).strip().splitlines()[0].removeprefix("CSV parse error: ")
            if typed and "conversion error" in detail.lower():
                continue  # a number column holds text: read it all as text instead
            raise TrialsError(f"{label}: not a well-formed CSV table ({detail}); every row "
                              "needs the header's number of cells, and every quote must "
                              "close") from None
        frame = table.to_pandas(types_mapper=lambda t: text_type if t == pa.string() else None)
        frame.columns = header
        return _decimal_commas(frame, wanted) if sep == ";" else frame
    raise TrialsError(f"{label}: cannot be read as a table")  # not reached: text always reads


def _decimal_commas(frame: pd.DataFrame, numbers: set[str]) -> pd.DataFrame:
    """Read the decimal commas of a ``;``-separated table's number columns (see
    :func:`read_table`): a text column whose every filled cell matches
    :data:`COMMA_NUMBER`, one or more with a comma, gets ``.`` for ``,``."""
    names = list(frame.columns)
    for column in names:
        if names.count(column) > 1 or not pd.api.types.is_string_dtype(frame[column]):
            continue
        cells = frame[column].str.strip()
        filled = cells.fillna("") != ""
        comma = cells.str.fullmatch(DECIMAL_COMMA).fillna(False).astype(bool)
        if not comma.any() or not cells[filled].str.fullmatch(COMMA_NUMBER).all():
            continue
        dotted = cells.str.replace(",", ".", regex=False)
        if column in numbers and filled.all():
            frame[column] = dotted.astype(float)
        else:
            frame[column] = frame[column].where(~comma, dotted)
    return frame


def _unguard(frame: pd.DataFrame) -> pd.DataFrame:
    """Undo :func:`neutralise`: an apostrophe that guards a formula-like text is dropped,
    so that an exported file imports back to the same values (column by column, only
    where a cell starts with an apostrophe)."""
    for column in frame.columns:
        cells = frame[column]
        if not pd.api.types.is_string_dtype(cells):
            continue
        quoted = cells.str.startswith("'").fillna(False).astype(bool)
        if not quoted.any():
            continue
        rest = cells.str[1:]
        guarded = quoted & rest.str.startswith(FORMULA_STARTS).fillna(False).astype(bool)
        if guarded.any():
            frame[column] = cells.where(~guarded, rest)
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
