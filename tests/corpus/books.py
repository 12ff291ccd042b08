"""Workbooks and Parquet files for the tests, written in memory.

``xlsx`` writes sheets with openpyxl (a test dependency): a date or date-time cell is written as
a spreadsheet date (a serial number with a date format, as Excel stores it), a str as text, a
str starting with "=" as a formula (openpyxl stores no cached value for it: the workbook has
never been calculated). ``with_cached`` adds a cached value to every formula, as Excel does when
it saves. ``parquet`` writes pyarrow arrays.
"""

from __future__ import annotations

import io
import re
import zipfile

from corpus.kit import VALUES, dates


def xlsx(sheets: dict[str, list[list]], *, at: str = "A1") -> bytes:
    """A workbook of {sheet name: rows} (the first row the header), the first sheet first; the
    rows start at cell *at* of each sheet."""
    import openpyxl
    from openpyxl.utils.cell import column_index_from_string, coordinate_from_string

    col, row = coordinate_from_string(at)
    c0 = column_index_from_string(col)
    wb = openpyxl.Workbook()
    for i, (name, rows) in enumerate(sheets.items()):
        ws = wb.active if i == 0 else wb.create_sheet()
        ws.title = name
        for r, values in enumerate(rows):
            for c, v in enumerate(values):
                if v is not None:
                    ws.cell(row=row + r, column=c0 + c, value=v)
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()


def with_cached(book: bytes, values: dict[str, str]) -> bytes:
    """*book* with the cached value <v>...</v> written into each formula cell named in *values*
    ({"B3": "49.6"}), on its first sheet, as a spreadsheet program leaves it after calculating."""
    src = zipfile.ZipFile(io.BytesIO(book))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            data = src.read(info.filename)
            if info.filename == "xl/worksheets/sheet1.xml":
                for ref, v in values.items():
                    data, n = re.subn(
                        rb'(<c r="' + ref.encode() + rb'"[^>]*>)(<f>[^<]*</f>)'
                        rb"(<v\s*/>|<v></v>)?",
                        rb"\1\2<v>" + v.encode() + rb"</v>",
                        data,
                    )
                    assert n == 1, ref
            dst.writestr(info, data)
    return out.getvalue()


def good_rows(as_text: bool = False, header=("date", "value")) -> list[list]:
    """The corpus' 30 good rows: dates as spreadsheet dates (or as text), values as numbers
    (or as text)."""
    import datetime as dt

    rows: list[list] = [list(header)]
    for d, v in zip(dates(len(VALUES)), VALUES, strict=True):
        rows.append([d, str(v)] if as_text else [dt.date.fromisoformat(d), v])
    return rows


def parquet(columns: dict) -> bytes:
    """A Parquet file of {name: pyarrow array or list}."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    buf = pa.BufferOutputStream()
    pq.write_table(pa.table(columns), buf)
    return buf.getvalue().to_pybytes()
