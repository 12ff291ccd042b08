"""A metric's data file -> a table of text cells indexed by where each row is (for a CSV file
its physical line, header = line 1), and its header.

The file's size is checked first, then its kind by its name: a workbook or Parquet file is read
by :mod:`steadyline.formats`; a plain CSV file's needed columns by pyarrow
(:func:`steadyline.columns.read_needed`); any other CSV file is decoded and read by the plain
reader (:mod:`.plain`) or, when it has quote marks, blank lines or ragged rows, by the careful
reader here, which names the line of every problem. Files are opened read-only, and only regular
files."""

from __future__ import annotations

import csv
import io
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa

from .. import columns, files, formats
from ..config import MetricSpec, PortfolioSettings
from ..formats.cells import repeated_names
from .encoding import _SNIFF, _codec, _decode
from .header import _columns_of
from .plain import _read_plain
from .problems import _Rows

# What a reader gives: a table whose columns are its header, a table with its header (the
# columns read may be fewer), or None with the problem added to the collector.
_Table = pd.DataFrame | tuple[pd.DataFrame, list[str]] | None
_Record = tuple[int, list[str]]  # (the physical line a record starts on, its cells)


def _size_text(size: float) -> str:
    mb = size / 1024 / 1024
    return f"{mb:.0f} MB" if mb >= 10 else f"{mb:.3g} MB" if mb >= 0.01 else f"{size:,.0f} bytes"


def _width_fault(path: Path, spec: MetricSpec) -> str | None:
    """Why the file is too wide to read (more than columns.MAX_COLUMNS columns), or None;
    counted on the header line alone before anything else is read. Unreadable as
    files.open_regular raises it."""
    with files.open_regular(path) as fh:
        try:
            head = fh.read(_SNIFF)
            fh.seek(0)
            codec = _codec(head, spec.csv.encoding)[2]
            width = columns.header_width(fh, codec, spec.csv.delimiter)
        except (OSError, LookupError):
            return None  # the full read below names the fault
    if width <= columns.MAX_COLUMNS:
        return None
    return (
        f"the header has {width:,} columns, over the limit of {columns.MAX_COLUMNS:,}; "
        "a metric reads at most six of them: export only the columns the metrics use"
    )


def _read_table(
    spec: MetricSpec, settings: PortfolioSettings, out: _Rows, needed: list[str] | None
) -> tuple[pd.DataFrame | None, list[str]]:
    """(the file as a table of text cells indexed by physical line number, its header).

    A plain file (see columns.read_needed) gives only the *needed* columns (all when None), as
    pyarrow text that :func:`.cells._text` turns into stripped cells where a column is not read
    in bulk; any other file gives every column, stripped. Python's csv module is used for the careful reading (not
    pandas' reader) because it reports the physical line each record starts on, also when a
    quoted cell spans several lines, and so lets every message name the right line; rows with
    too few fields are refused like rows with too many.
    """
    df = _read_table_of(spec, settings, out, needed)
    if df is None:
        return None, []
    if isinstance(df, tuple):
        return df
    return df, list(df.columns)


def _read_table_of(
    spec: MetricSpec, settings: PortfolioSettings, out: _Rows, needed: list[str] | None
) -> _Table:
    limit = settings.max_file_mb * 1024 * 1024
    if not _within_size(spec.file, settings, out):
        return None
    # the kind by the name project.toml gives (a link is read as what it is named, as the
    # metadata's checks judged it)
    kind = formats.data_format(spec.file_rel)
    if kind != formats.CSV:
        return _read_other(spec, kind, needed, out, limit)
    return _read_csv(spec, needed, out)


def _within_size(path: Path, settings: PortfolioSettings, out: _Rows) -> bool:
    """Whether the file can be stat'ed and is within max_file_mb (else the problem is added)."""
    try:
        size = path.stat().st_size
    except OSError as e:
        out.add(None, "", f"cannot read the file: {e.strerror}")
        return False
    if size > settings.max_file_mb * 1024 * 1024:
        out.add(
            None,
            "",
            f"the file is {_size_text(size)}, over the limit of "
            f"{settings.max_file_mb:g} MB (max_file_mb in portfolio.toml); roll the data up "
            "before committing it, or raise max_file_mb",
        )
        return False
    return True


def _read_other(
    spec: MetricSpec, kind: str, needed: list[str] | None, out: _Rows, limit: float
) -> _Table:
    """A workbook or Parquet file, read by :mod:`steadyline.formats` from its bytes."""
    try:
        raw = files.read_bytes(spec.file)  # read-only, and only a regular file
    except files.Unreadable as e:
        out.add(None, "", str(e))
        return None
    if kind == formats.WORKBOOK:
        out.records = True
        return formats.read_workbook(raw, needed, out, limit)
    roles = {c: k for k, c in _columns_of(spec).items() if c is not None}
    return formats.read_parquet(raw, needed, roles, out)


def _read_csv(spec: MetricSpec, needed: list[str] | None, out: _Rows) -> _Table:
    """A CSV file: its needed columns by pyarrow when it is plain, else its text, read whole."""
    path = spec.file
    raw = b""
    try:
        # read-only, and only a regular file: a named pipe put in its place would block for ever
        wide = _width_fault(path, spec)
        if wide is not None:
            out.add(1, "header", wide)
            return None
        with files.open_regular(path) as fh:
            try:
                codec = _codec(fh.read(_SNIFF), spec.csv.encoding)[2]
                fh.seek(0)
            except OSError:
                codec = ""  # the full read below names the fault
            plain = columns.read_needed(fh, codec, spec.csv.delimiter, needed)
        if plain is None:
            raw = files.read_bytes(path)
    except files.Unreadable as e:
        out.add(None, "", str(e))
        return None
    if plain is not None:
        return _arrow_table(*plain)
    return _read_text(raw, spec, out)


def _arrow_table(
    header: list[str], cols: dict[str, pa.ChunkedArray], n: int
) -> tuple[pd.DataFrame, list[str]]:
    """The columns pyarrow read, as a table of its text (stripped where they are read)."""
    index = pd.RangeIndex(2, n + 2)  # physical line numbers (header = line 1)
    df = pd.DataFrame(
        {c: pd.Series(pd.arrays.ArrowExtensionArray(a), index=index) for c, a in cols.items()},
        index=index,
    )
    return df, header


def _read_text(raw: bytes, spec: MetricSpec, out: _Rows) -> pd.DataFrame | None:
    """A CSV file's bytes decoded, then read by the plain reader or else the careful one."""
    text = _decode(raw, spec.csv.encoding, out)
    if text is None:
        return None
    if not text.strip():
        out.add(None, "", "the file is empty; it needs a header line and data rows")
        return None
    delim = spec.csv.delimiter
    fast = _read_plain(text, delim)
    if fast is not None:
        return fast
    records = _records(text, delim, out)
    if records is None:
        return None
    if not records:
        out.add(None, "", "the file is empty; it needs a header line and data rows")
        return None
    return _careful_table(records, delim, out)


def _records(text: str, delim: str, out: _Rows) -> list[_Record] | None:
    """The file's records (blank lines skipped), each with the line it starts on; None when
    the text cannot be read as CSV (a quote mark out of place), with the line named."""
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim, strict=True)
    records: list[_Record] = []
    last = 0
    try:
        for row in reader:
            first_line, last = last + 1, reader.line_num
            if not row or (len(row) == 1 and not row[0].strip()):
                continue  # a blank line
            records.append((first_line, row))
    except csv.Error as e:
        where = last + 1
        msg = str(e)
        if "end of data" in msg or "EOF" in msg:
            msg = 'a quoted cell is never closed; check the quote marks (") from this line on'
        elif "expected" in msg and "after" in msg:
            msg = (
                f'a quote mark (") inside a cell must be doubled (""), or the whole cell '
                f"quoted ({msg})"
            )
        out.add(where, "", f"the file cannot be read as CSV: {msg}")
        return None
    return records


def _careful_table(records: list[_Record], delim: str, out: _Rows) -> pd.DataFrame | None:
    """The records as a table of stripped cells indexed by line; None when column names repeat
    or rows have more or fewer fields than the header (each such line named)."""
    header_line, header = records[0]
    header = _trimmed_header([h.strip() for h in header], records)
    width = len(header)
    repeated = repeated_names(header)
    if repeated:
        out.add(header_line, "header", repeated)
        return None
    body = []
    ragged: dict[tuple[int, int], list[int]] = {}
    for line, row in records[1:]:
        if len(row) > width and not any(c.strip() for c in row[width:]):
            row = row[:width]  # empty trailing cells of the dropped empty columns
        if len(row) != width:
            ragged.setdefault((len(row), width), []).append(line)
            continue
        body.append((line, [c.strip() for c in row]))
    for (got, want), lines in sorted(ragged.items(), key=lambda kv: kv[1][0]):
        out.rows(
            lines,
            "",
            f"this row has {got} field{'s' if got != 1 else ''} but the header "
            f"has {want}; check for a stray or missing delimiter ({delim!r}) or quote mark",
        )
    if ragged:
        return None
    if not body:
        out.add(header_line, "", "the file has a header but no data rows")
        return None
    df = pd.DataFrame([r for _, r in body], columns=header, dtype=str)
    df.index = np.array([line for line, _ in body])  # physical line numbers (header = line 1)
    return df


def _trimmed_header(header: list[str], records: list[_Record]) -> list[str]:
    """Spreadsheets often add empty columns at the right: unnamed trailing columns whose cells
    are all blank are dropped."""
    width = len(header)
    while (
        width > 1
        and header[width - 1] == ""
        and all(len(r) < width or not r[width - 1].strip() for _, r in records[1:])
    ):
        width -= 1
    return header[:width]
