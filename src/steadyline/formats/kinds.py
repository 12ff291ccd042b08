"""Which kind a metric's file is (CSV, workbook, Parquet), told by its name's ending, and what a
spreadsheet file that is not read is instead. Light: config and the index's status import it,
and it imports nothing heavy (tests/test_status.py)."""

from __future__ import annotations

CSV, WORKBOOK, PARQUET = "csv", "workbook", "parquet"
_SUFFIXES = {".xlsx": WORKBOOK, ".parquet": PARQUET, ".pq": PARQUET}
# Endings of spreadsheet files not read, with what to do instead.
_OTHER_SHEETS = {
    ".xls": "an Excel 97-2003 workbook (.xls)",
    ".xlsm": "a macro-enabled workbook",
    ".xlsb": "a binary workbook (.xlsb)",
    ".ods": "an OpenDocument spreadsheet",
}


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
