"""Workbooks (.xlsx) and Parquet files -> the table of text cells a CSV file becomes.

A metric's file may be a CSV file, an Excel workbook or a Parquet file; which one is told by its
name's ending (:func:`data_format`). A workbook or a Parquet file is turned into what
``loading`` makes of a CSV file, a table of text cells indexed by where each row is, so that the
same checks, with the same messages, apply to all three. Both are read from bytes already read
from a regular file (:func:`steadyline.files.read_bytes`): nothing is opened here, and nothing
is written. This face only hands names on; each module's docstring says what it holds.
"""

from .cells import cell_text
from .kinds import CSV, PARQUET, WORKBOOK, data_format, unread_sheet_kind
from .parquet import read_parquet
from .workbook import read_workbook

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
