"""Workbooks (.xlsx) and Parquet files -> the table of text cells a CSV file becomes.

A metric's file may be a CSV file, an Excel workbook or a Parquet file; which one is told by its
name's ending (:func:`data_format`). A workbook or a Parquet file is turned here into what
``loading`` makes of a CSV file, a table of text cells indexed by where each row is, so that the
same checks, with the same messages, apply to all three. Each cell becomes the text a CSV export
would hold: a number as Python writes it (a whole number without ".0", so that a category or
subgroup stored as a number reads as it is shown), a date or date-time in ISO 8601 (or in the
metric's ``date_format``, when it gives one), a boolean as 1 or 0, an empty cell blank.

Where a row is: a workbook's rows are numbered as the workbook shows them (row 1 at the top,
whatever rows above the table are empty), and each message names the sheet; a Parquet file has
no header row, its rows are numbered from 1.

Workbooks are read by python-calamine (a binding of the calamine reader, written in Rust): it
reads the value each formula had when the workbook was last saved (its cached value) and never
calculates. Parquet files are read by pyarrow. Both read bytes already read from a regular file
(:func:`steadyline.files.read_bytes`): nothing is opened here, and nothing is written.
"""

from __future__ import annotations

import datetime as dt
import difflib
import io
import zipfile
from decimal import Decimal
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    import pandas as pd

# pandas, pyarrow and python-calamine are imported where a file is read: config imports this
# module for data_format, and the index's status needs none of them (tests/test_status.py).

CSV, WORKBOOK, PARQUET = "csv", "workbook", "parquet"
_SUFFIXES = {".xlsx": WORKBOOK, ".parquet": PARQUET, ".pq": PARQUET}
# Endings of spreadsheet files not read, with what to do instead.
_OTHER_SHEETS = {
    ".xls": "an Excel 97-2003 workbook (.xls)",
    ".xlsm": "a macro-enabled workbook",
    ".xlsb": "a binary workbook (.xlsb)",
    ".ods": "an OpenDocument spreadsheet",
}
# How a workbook file starts: a zip archive; an OLE compound file (an old .xls workbook, or an
# .xlsx workbook encrypted with a password, which Excel stores inside one).
_ZIP_MAGIC = b"PK\x03\x04"
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
# A workbook's parts unpacked may not exceed this many times the file-size limit: an .xlsx of
# data compresses some 5 to 10 times (measured on the demo's workbook and benchmarks/synth.py's),
# so 20 times leaves room, and a crafted archive that unpacks to gigabytes is refused unread.
UNPACKED_RATIO = 20


def _suffix(name: str) -> str:
    """The ending of a file name or path, lower-cased (".xlsx"), or ""."""
    base = name.replace("\\", "/").rsplit("/", 1)[-1]
    return "." + base.rsplit(".", 1)[-1].lower() if "." in base else ""


def data_format(name: str) -> str:
    """csv, workbook or parquet, by the file name's ending (any case); a name with any other
    ending is read as CSV text, as before."""
    return _SUFFIXES.get(_suffix(name), CSV)


def unread_sheet_kind(name: str) -> str | None:
    """What a spreadsheet file that is not read is ("an OpenDocument spreadsheet"), or None."""
    return _OTHER_SHEETS.get(_suffix(name))


def cell_text(v, date_format: str | None = None) -> str:
    """One cell of a workbook or Parquet file as a CSV file would hold it."""
    if v is None or type(v).__name__ in ("NaTType", "NAType"):  # pandas' missing values
        return ""
    if isinstance(v, str):
        return v.strip()
    if isinstance(v, bool | np.bool_):
        return "1" if v else "0"
    if isinstance(v, float | np.floating):
        v = float(v)
        if v != v:
            return ""
        # A whole number is written without ".0" (as a spreadsheet shows it); beyond 2**53 a
        # float no longer holds every whole number, and repr keeps its exact value.
        return str(int(v)) if v.is_integer() and abs(v) < 2**53 else repr(v)
    if isinstance(v, int | np.integer):
        return str(int(v))
    if isinstance(v, Decimal):
        return str(v)
    if isinstance(v, dt.datetime | dt.date):  # pandas' Timestamp too
        if date_format:
            return v.strftime(date_format)
        return v.isoformat()
    return str(v).strip()


def column_text(column: list, date_format: str | None = None) -> list[str]:
    """:func:`cell_text` of every cell of a column, in bulk when the column holds one kind of
    value (the common case: a sheet's column of numbers or of dates; a 100,000-row column took
    a third of a second cell by cell)."""
    kinds = set(map(type, column))
    if kinds == {str}:
        return list(map(str.strip, column))
    if kinds == {float}:
        texts = np.array(list(map(repr, column)), dtype=object)
        a = np.array(column, dtype=float)
        whole = (a == np.floor(a)) & (np.abs(a) < 2**53)
        if whole.any():
            texts[whole] = a[whole].astype(np.int64).astype(str).astype(object)
        return texts.tolist()
    if not date_format and kinds and kinds <= {dt.datetime, dt.date}:
        # Naive dates and date-times (a workbook's date-time at midnight comes as a date),
        # written by numpy in one pass: ISO 8601 to the second, or to the microsecond when any
        # has a fraction of a second. A date at midnight reads the same as the date alone.
        if not any(getattr(v, "tzinfo", None) is not None for v in column):
            a = np.array(column, dtype="datetime64[us]")
            unit = "s" if (a == a.astype("datetime64[s]")).all() else "us"
            return np.datetime_as_string(a, unit=unit).astype(object).tolist()
        return [v.isoformat() for v in column]
    return [cell_text(v, date_format) for v in column]


def _is_number(v) -> bool:
    return isinstance(v, int | float | np.integer | np.floating) and not isinstance(v, bool)


# ----------------------------------------------------------------------------- workbooks


def _workbook_fault(raw: bytes, limit_bytes: float) -> str | None:
    """Why bytes named .xlsx cannot be read as a workbook, told before the reader sees them."""
    if raw.startswith(_OLE_MAGIC):
        if b"E\x00n\x00c\x00r\x00y\x00p\x00t\x00e\x00d\x00P\x00a\x00c\x00k\x00a\x00g\x00e" in raw:
            return (
                "the workbook is protected by a password; save a copy without the password "
                "(File > Info > Protect Workbook) and use that"
            )
        return (
            "this is an Excel 97-2003 workbook (.xls) under an .xlsx name; save it as an "
            "Excel Workbook (.xlsx)"
        )
    if not raw.startswith(_ZIP_MAGIC):
        if not raw.strip():
            return "the file is empty; save the workbook again"
        return "the file is not an Excel workbook (.xlsx) or it is damaged; save it again as .xlsx"
    try:
        with zipfile.ZipFile(io.BytesIO(raw)) as z:
            unpacked = sum(i.file_size for i in z.infolist())
    except (zipfile.BadZipFile, ValueError, OSError):
        return "the workbook is damaged (it cannot be unpacked); save it again as .xlsx"
    if unpacked > limit_bytes * UNPACKED_RATIO:
        return (
            f"the workbook unpacks to {unpacked / 1024 / 1024:,.0f} MB, more than "
            f"{UNPACKED_RATIO} times the file-size limit (max_file_mb in portfolio.toml); "
            "check the file, or raise max_file_mb"
        )
    return None


def _choose_sheet(book, sheet: str | None, out) -> str | None:
    """The name of the sheet to read: the one named, else the first worksheet."""
    import python_calamine as pc

    names = [m.name for m in book.sheets_metadata if m.typ == pc.SheetTypeEnum.WorkSheet]
    if sheet is None:
        if not names:
            out.add(None, "", "the workbook has no worksheet")
            return None
        return names[0]
    if sheet in names:
        return sheet
    out.sheet = sheet
    near = difflib.get_close_matches(sheet, names, n=1, cutoff=0.6)
    hint = f"did you mean {near[0]!r}? " if near else ""
    listed = ", ".join(repr(n) for n in names) or "none"
    out.add(
        None,
        "",
        f"no such sheet in the workbook (metric {out.spec.id!r}, key 'sheet'); "
        f"{hint}its sheets are: {listed}",
    )
    return None


def read_workbook(
    raw: bytes, needed: list[str] | None, out, limit_bytes: float
) -> tuple[pd.DataFrame, list[str]] | None:
    """(the sheet as a table of text cells indexed by row number, its header), or None with
    the problem added to *out* (loading's collector; its ``sheet``, ``header_line`` and
    ``number_cells`` are set here, for the messages of the checks that follow).

    The table is the sheet's used range: its first row is the header, rows holding nothing are
    skipped (as blank lines of a CSV file are), columns without a name are left out. Only the
    *needed* columns' cells are made into text (all when None)."""
    import pandas as pd
    import python_calamine as pc

    why = _workbook_fault(raw, limit_bytes)
    if why is not None:
        out.add(None, "", why)
        return None
    spec = out.spec
    try:
        book = pc.CalamineWorkbook.from_filelike(io.BytesIO(raw))
    except pc.PasswordError:
        out.add(
            None,
            "",
            "the workbook is protected by a password; save a copy without the "
            "password and use that",
        )
        return None
    except (pc.CalamineError, ValueError, OSError) as e:
        out.add(None, "", f"the workbook cannot be read ({_short(e)}); save it again as .xlsx")
        return None
    name = _choose_sheet(book, spec.sheet, out)
    if name is None:
        return None
    out.sheet = name
    try:
        sheet = book.get_sheet_by_name(name)
        rows = sheet.to_python(skip_empty_area=True)
        start = sheet.start
    except (pc.CalamineError, ValueError, OSError) as e:
        out.add(None, "", f"the sheet cannot be read ({_short(e)}); save the workbook again")
        return None
    finally:
        book.close()
    if not rows or start is None:
        out.add(None, "", "the sheet is empty; it needs a header row and data rows")
        return None
    top, left = start
    header_row = top + 1  # rows as the workbook numbers them (from 1)
    out.header_line = header_row
    names = [cell_text(c) for c in rows[0]]
    named = [(j, h) for j, h in enumerate(names) if h != ""]
    header = [h for _, h in named]
    dup = sorted({h for h in header if header.count(h) > 1})
    if dup:
        out.add(
            header_row,
            "header",
            f"the column name(s) {', '.join(repr(d) for d in dup)} "
            "appear more than once; give each column its own name",
        )
        return None
    # The range is a rectangle: every row has the header's width. Rows holding nothing are
    # skipped, as blank lines of a CSV file are.
    blank = [""] * len(rows[0])
    kept = [i for i in range(1, len(rows)) if rows[i] != blank]
    if not kept:
        out.add(header_row, "", "the sheet has a header but no data rows")
        return None
    body = rows[1:] if len(kept) == len(rows) - 1 else [rows[i] for i in kept]
    lines = header_row + np.array(kept)
    wanted = [(j, h) for j, h in named if needed is None or h in needed]
    columns = list(zip(*body, strict=True)) if wanted else []
    time_col = spec.time
    cells: dict[str, list[str]] = {}
    for j, h in wanted:
        column = list(columns[j])
        if h == time_col:
            if any(t in (int, float) for t in set(map(type, column))):
                out.number_cells[h] = lines[[_is_number(v) for v in column]].tolist()
            cells[h] = column_text(column, spec.csv.date_format)
        else:
            cells[h] = column_text(column)
    df = pd.DataFrame(cells, columns=[h for _, h in wanted], dtype=str)
    df.index = lines
    return df, header


def _short(e: Exception) -> str:
    text = " ".join(str(e).split())
    return text[:120] + "…" if len(text) > 120 else text or type(e).__name__


# ----------------------------------------------------------------------------- Parquet

# What each role of a column takes, and the words for it.
_NUMBER_ROLES = {"value", "count", "size"}


def _type_fault(role: str, t) -> str | None:
    """Why a Parquet column of (pyarrow) type *t* cannot serve as the metric's *role* column,
    or None."""
    import pyarrow as pa

    if pa.types.is_dictionary(t):
        t = t.value_type
    text = (
        pa.types.is_string(t)
        or pa.types.is_large_string(t)
        or pa.types.is_string_view(t)
        or pa.types.is_null(t)
    )
    if (
        pa.types.is_nested(t)
        or pa.types.is_binary(t)
        or pa.types.is_large_binary(t)
        or pa.types.is_fixed_size_binary(t)
    ):
        return f"holds {t} values, which are not single cells; store it as text or numbers"
    if text:
        return None  # text is read and checked cell by cell, as a CSV file's
    if role == "time":
        if pa.types.is_timestamp(t) or pa.types.is_date(t):
            return None
        return f"holds {t} values, not dates or times; store it as a timestamp, a date or text"
    if role in _NUMBER_ROLES:
        if (
            pa.types.is_integer(t)
            or pa.types.is_floating(t)
            or pa.types.is_decimal(t)
            or pa.types.is_boolean(t)
        ):
            return None
        return f"holds {t} values, not numbers; store it as integers, floats or text"
    return None  # a subgroup or category: any single value names one


def read_parquet(
    raw: bytes, needed: list[str] | None, roles: dict[str, str], out
) -> tuple[pd.DataFrame, list[str]] | None:
    """(the needed columns as a table of text cells indexed by row number from 1, the file's
    column names), or None with the problem added to *out*. *roles* maps each needed column to
    the metric's key naming it (time, value, ...): a column of a type that cannot serve it is
    refused with one line before anything else is read."""
    import pandas as pd
    import pyarrow as pa
    import pyarrow.parquet as pq

    out.header_line = None
    out.records = True
    try:
        pf = pq.ParquetFile(io.BytesIO(raw))
        schema = pf.schema_arrow
    except (pa.ArrowException, OSError, ValueError) as e:
        out.add(None, "", f"the file is not a Parquet file or it is damaged ({_short(e)})")
        return None
    header = [str(n) for n in schema.names]
    dup = sorted({h for h in header if header.count(h) > 1})
    if dup:
        out.add(
            None,
            "header",
            f"the column name(s) {', '.join(repr(d) for d in dup)} "
            "appear more than once; give each column its own name",
        )
        return None
    if needed is None:  # every column (steadyline start): those that hold single values
        wanted = [h for h in header if _type_fault("", schema.field(h).type) is None]
    else:
        wanted = [h for h in header if h in needed]
    bad = False
    for h in wanted:
        why = _type_fault(roles.get(h, ""), schema.field(h).type)
        if why is not None:
            out.add(None, f"column '{h}'", why)
            bad = True
    if bad:
        return None
    try:
        table = pf.read(columns=wanted)
    except (pa.ArrowException, OSError, ValueError) as e:
        out.add(None, "", f"the Parquet file cannot be read ({_short(e)})")
        return None
    if table.num_rows == 0:
        out.add(None, "", "the file has no data rows")
        return None
    date_format = out.spec.csv.date_format
    cells = {}
    for h in wanted:
        col = table.column(h)
        if pa.types.is_dictionary(col.type):
            col = col.cast(col.type.value_type)
        fmt = date_format if roles.get(h) == "time" else None
        cells[h] = column_text(col.to_pylist(), fmt)
    df = pd.DataFrame(cells, columns=wanted, dtype=str)
    df.index = np.arange(1, table.num_rows + 1)
    return df, header


__all__ = [
    "CSV",
    "PARQUET",
    "WORKBOOK",
    "cell_text",
    "data_format",
    "read_parquet",
    "read_workbook",
    "unread_sheet_kind",
]
