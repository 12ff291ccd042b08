"""An Excel workbook's (.xlsx) bytes -> the table of text cells a CSV file becomes, indexed by
the sheet's own row numbers (row 1 at the top, whatever rows above the table are empty); each
message names the sheet.

Workbooks are read by python-calamine (a binding of the calamine reader, written in Rust): it
reads the value each formula had when the workbook was last saved (its cached value) and never
calculates. A file that is no workbook, an old .xls, one locked by a password, or an archive
that unpacks to far more than the size limit, is refused before the reader sees it."""

from __future__ import annotations

import difflib
import io
import zipfile
from typing import TYPE_CHECKING

import numpy as np

from .cells import _is_number, _short, cell_text, column_text, repeated_names

if TYPE_CHECKING:
    import pandas as pd

# pandas and python-calamine are imported where a workbook is read: config imports the package
# for data_format, and the index's status needs neither (tests/test_status.py).

# How a workbook file starts: a zip archive; an OLE compound file (an old .xls workbook, or an
# .xlsx workbook encrypted with a password, which Excel stores inside one).
_ZIP_MAGIC = b"PK\x03\x04"
_OLE_MAGIC = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1"
# A workbook's parts unpacked may not exceed this many times the file-size limit: an .xlsx of
# data compresses some 5 to 10 times (measured on the demo's workbook and benchmarks/synth.py's),
# so 20 times leaves room, and a crafted archive that unpacks to gigabytes is refused unread.
UNPACKED_RATIO = 20


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
    rows = _sheet_rows(raw, out, limit_bytes)
    if rows is None:
        return None
    cells, top = rows
    return _sheet_table(cells, top, needed, out)


def _sheet_rows(raw: bytes, out, limit_bytes: float) -> tuple[list[list], int] | None:
    """(the metric's sheet's used range as rows of cells, the index from 0 of its top row), or
    None with the problem added to *out* (the sheet's name set on it)."""
    import python_calamine as pc

    why = _workbook_fault(raw, limit_bytes)
    if why is not None:
        out.add(None, "", why)
        return None
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
    name = _choose_sheet(book, out.spec.sheet, out)
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
    return rows, start[0]


def _sheet_table(
    rows: list[list], top: int, needed: list[str] | None, out
) -> tuple[pd.DataFrame, list[str]] | None:
    """The used range's first row as the header and the rest as text cells, indexed by row
    number as the workbook shows it; None when names repeat or no row holds data."""
    import pandas as pd

    spec = out.spec
    header_row = top + 1  # rows as the workbook numbers them (from 1)
    out.header_line = header_row
    names = [cell_text(c) for c in rows[0]]
    named = [(j, h) for j, h in enumerate(names) if h != ""]
    header = [h for _, h in named]
    repeated = repeated_names(header)
    if repeated:
        out.add(header_row, "header", repeated)
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
