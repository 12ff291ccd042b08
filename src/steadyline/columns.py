"""Reading only the columns a metric needs, with memory bounded by the file.

A metric reads at most six columns of its file. Held as Python strings, every cell of a file costs
about fifty bytes on top of its text, so a large file used to take ten times its size in memory
or more (a 375 MB file of 10^7 rows and five columns: 3.1 GB). Here a plain file (UTF-8 or ASCII
text, no quote marks, no blank lines, every row complete; see :func:`read_needed`) is parsed by
pyarrow's CSV reader, which keeps only the needed columns, each as two compact buffers (the
cells' bytes one after the other, and where each cell starts), and the common columns (plain
decimal numbers, fixed-width ISO 8601 times) are read from those buffers in bulk. A column that
is anything else becomes Python strings (:func:`cells`), only that column, and takes the careful
checks of ``loading`` with their messages unchanged.

Before any of this the width of the header is counted on the first line alone, read a mebibyte
at a time (:func:`header_width`): a file of a million columns is refused in well under a second,
where building a table of it took minutes and gigabytes.
"""

from __future__ import annotations

import codecs
import io
import os
import re

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.csv as pacsv

# More columns than any export a metric is charted from should have (a metric reads at most six):
# a limit of our own, far above the widest real exports seen (a few hundred columns) and far
# below what makes a table of the header slow (a million columns took minutes).
MAX_COLUMNS = 10_000
_CHUNK = 1 << 20  # the header is read this many bytes at a time


def header_width(fh, codec: str, delim: str) -> int:
    """The number of fields of the first record of an open binary file *fh*, read from its
    start a mebibyte at a time (the line is never held whole), as Python's csv module (the
    careful reader) splits it: a quote mark opens a quoted cell only at a cell's start, a
    doubled one inside stays in the cell, and delimiters and line ends inside count for
    nothing. Undecodable bytes count as one character each: the full read reports them."""
    dec = codecs.getincrementaldecoder(codec)(errors="replace")
    fields, quoted, prev, carry = 1, False, delim, ""
    while True:
        chunk = fh.read(_CHUNK)
        text = carry + dec.decode(chunk, final=not chunk)
        carry = ""
        if chunk and text.endswith('"'):  # whether the last is doubled shows in the next chunk
            kept = text.rstrip('"')
            text, carry = kept, text[len(kept) :]
        pos, n = 0, len(text)
        while pos < n:
            q = text.find('"', pos)
            if quoted:
                if q < 0:
                    break
                if q + 1 < n and text[q + 1] == '"':
                    pos = q + 2
                    continue
                quoted, prev, pos = False, '"', q + 1
                continue
            stop = n if q < 0 else q
            ends = [e for e in (text.find("\n", pos, stop), text.find("\r", pos, stop)) if e >= 0]
            if ends:
                return fields + text.count(delim, pos, min(ends))
            fields += text.count(delim, pos, stop)
            if q < 0:
                prev = text[-1]
                break
            quoted = (text[q - 1] if q > pos else prev) == delim
            prev, pos = '"', q + 1
        if not chunk:
            return fields


# Codecs whose text is the bytes themselves when every byte is ASCII.
_ASCII_SAFE = {
    "ascii",
    "latin-1",
    "iso8859-1",
    "iso8859-15",
    "cp1252",
    "cp1250",
    "cp1251",
    "cp1257",
    "mac-roman",
    "iso8859-2",
}
_ASCII_SPACE_BYTES = b" \t\x0b\x0c\x1c\x1d\x1e\x1f"
_PIECE = 4 << 20  # the file is checked this many bytes at a time


_BLANK_LINE = re.compile(rb"\n[ \t\r]*\n|^[ \t\r]*\n")


def _plain_bytes(raw) -> bool:
    """The byte form of ``loading.plain._awkward`` being False (no quote marks, no blank
    lines, no lone carriage returns), for an ASCII-compatible text. tests/test_fast_paths.py
    holds the two equal."""
    if b'"' in raw:
        return False
    if b"\r" in raw and raw.count(b"\r") != raw.count(b"\r\n"):
        return False
    if b"\n\n" in raw or b"\n\r\n" in raw or raw.startswith((b"\n", b"\r\n")):
        return False
    if b" " in raw or b"\t" in raw or b"\r" in raw:
        return _BLANK_LINE.search(raw) is None
    return True


def _pieces(fh):
    """The file's bytes in pieces of a few mebibytes, each ending at a line end (but the last):
    a line, and so a blank line or a carriage return before a line feed, never spans two."""
    carry = b""
    while True:
        chunk = fh.read(_PIECE)
        if not chunk:
            if carry:
                yield carry
            return
        cut = chunk.rfind(b"\n") + 1
        if cut:
            yield carry + chunk[:cut]
            carry = chunk[cut:]
        else:
            carry += chunk


def _plain_file(fh, codec: str) -> bool:
    """Whether the open file's bytes are plain (see :func:`read_needed`), read a few mebibytes
    at a time: each piece of whole lines is plain exactly when the whole file is, as a blank
    line at a piece's start is one after the line end that closed the piece before."""
    dec = codecs.getincrementaldecoder("utf-8")()
    ascii_only = True
    try:
        for piece in _pieces(fh):
            if b"\x00" in piece or not _plain_bytes(piece):
                return False
            if not piece.isascii():
                ascii_only = False
                dec.decode(piece)
        dec.decode(b"", final=True)
    except UnicodeDecodeError:
        return False
    return ascii_only or codec in ("utf-8", "utf-8-sig")


def _stat(fh) -> tuple[int, int] | None:
    """(size, modification time) of an open file; None for a file in memory (in the tests)."""
    try:
        st = os.fstat(fh.fileno())
    except io.UnsupportedOperation:
        return None
    return st.st_size, st.st_mtime_ns


def read_needed(
    fh, codec: str, delim: str, needed: list[str] | None
) -> tuple[list[str], dict[str, pa.ChunkedArray], int] | None:
    """(header, {name: column as text}, rows) of a plain file open for reading in binary (at
    its start), only the *needed* columns that are in the header read (every column when
    *needed* is None); None for anything else,
    which the careful reader then reads. The file is read twice, a few mebibytes at a time,
    never whole: once to check it, once by pyarrow; None when it changed in between.

    *codec* is the file's encoding as ``loading`` resolved it (a UTF-8 byte-order mark gives
    "utf-8-sig"). Plain means: UTF-8 text (or ASCII text in a codec that agrees with it on
    ASCII), no NUL byte, no quote mark, no blank line, no lone carriage return, a one-byte
    delimiter, a header of distinct non-blank names, at least one data row and every row as many
    fields as the header (pyarrow refuses a row with more or fewer). Such a file holds the same
    cells whichever reader reads it, and no problem the careful reader could report.
    """
    if codec not in ("utf-8", "utf-8-sig") and codec not in _ASCII_SAFE:
        return None
    if len(delim) != 1 or ord(delim) > 127 or delim in '\r\n"':
        return None
    try:
        before = _stat(fh)
        header = _plain_header(fh, codec, delim)
        if header is None:
            return None
        fh.seek(0)
        if not _plain_file(fh, codec):
            return None
        fh.seek(0)
        wanted = (
            list(range(len(header)))
            if needed is None
            else [header.index(c) for c in dict.fromkeys(needed) if c in header]
        )
        table = _arrow_read(fh, delim, len(header), wanted)
        after = _stat(fh)
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError, OSError):
        return None
    if before != after:
        return None  # changed while it was read: read again, whole, by the careful reader
    if table.num_rows == 0:
        return None
    return header, {header[j]: table.column(str(j)) for j in wanted}, table.num_rows


def _plain_header(fh, codec: str, delim: str) -> list[str] | None:
    """The header's names, when its line is UTF-8 text of distinct non-blank names followed by
    a line end (within one piece), else None."""
    head = fh.readline(_PIECE)
    if codec == "utf-8-sig":
        if not head.startswith(codecs.BOM_UTF8):
            return None
        head = head[3:]
    if not head.endswith(b"\n"):
        return None  # no data row, or a header longer than a piece: the careful reader
    try:
        first = head.rstrip(b"\n").rstrip(b"\r").decode("utf-8")
    except UnicodeDecodeError:
        return None
    header = [h.strip() for h in first.split(delim)]
    if "" in header or len(set(header)) != len(header):
        return None
    return header


def _arrow_read(fh, delim: str, width: int, wanted: list[int]) -> pa.Table:
    """The *wanted* columns (by position, named "0", "1", ...) of a file checked plain, as
    pyarrow text: no quoting, no null cells, one record a line."""
    names = [str(i) for i in range(width)]
    return pacsv.read_csv(
        pa.PythonFile(fh, mode="r"),
        read_options=pacsv.ReadOptions(skip_rows=1, column_names=names),
        parse_options=pacsv.ParseOptions(
            delimiter=delim,
            quote_char=False,
            escape_char=False,
            newlines_in_values=False,
            ignore_empty_lines=False,
        ),
        convert_options=pacsv.ConvertOptions(
            include_columns=[names[j] for j in wanted],
            column_types={names[j]: pa.string() for j in wanted},
            null_values=[],
            strings_can_be_null=False,
            quoted_strings_can_be_null=False,
            check_utf8=False,
        ),
    )  # checked by _plain_file, for the whole file


def _buffers(arr: pa.Array) -> tuple[np.ndarray, np.ndarray] | None:
    """(offsets, bytes) of a string array without missing cells, as numpy views (no copy)."""
    if arr.null_count or not (pa.types.is_string(arr.type) or pa.types.is_large_string(arr.type)):
        return None
    _, offs, data = arr.buffers()
    kind = np.int64 if pa.types.is_large_string(arr.type) else np.int32
    offsets = np.frombuffer(offs, dtype=kind)[arr.offset : arr.offset + len(arr) + 1]
    text = np.frombuffer(data, dtype=np.uint8) if data is not None else np.zeros(0, dtype=np.uint8)
    return offsets, text[offsets[0] : offsets[-1]]


_DECIMAL_BYTES = np.zeros(256, dtype=bool)
_DECIMAL_BYTES[np.frombuffer(b"0123456789.eE+-", dtype=np.uint8)] = True


def _chunks(arr: pa.Array | pa.ChunkedArray) -> list[pa.Array]:
    return arr.chunks if isinstance(arr, pa.ChunkedArray) else [arr]


def plain_decimals(arr: pa.Array | pa.ChunkedArray) -> np.ndarray | None:
    """The cells as floats when every one is a plain decimal number (only digits, points, signs
    and exponent letters, nothing to strip, none blank), else None:
    ``loading.numbers._plain_decimals`` on the column's bytes. pyarrow's conversion rounds correctly, as Python's float() does, so
    the two give the same floats (tests/test_fast_paths.py holds them equal)."""
    if not len(arr):
        return None
    for chunk in _chunks(arr):  # read in place, block by block as pyarrow parsed them
        bufs = _buffers(chunk)
        if bufs is None or not _DECIMAL_BYTES[bufs[1]].all():
            return None
    try:
        return pc.cast(arr, pa.float64()).to_numpy(zero_copy_only=False)
    except (pa.ArrowInvalid, pa.ArrowNotImplementedError):  # a blank cell, a stray sign or letter
        return None


def plain_iso(
    arr: pa.Array | pa.ChunkedArray,
    digits: dict[int, list[int]],
    marks: dict[int, dict[int, bytes]],
) -> np.ndarray | None:
    """The cells as datetime64[s] when every one is written in the same fixed-width ISO 8601
    form (*digits* and *marks*: per width, the places of digits and of separators), else None:
    ``loading.times._plain_iso`` on the column's bytes, read in place."""
    parts: list[tuple[int, np.ndarray]] = []
    for chunk in _chunks(arr):
        if not len(chunk):
            continue
        part = _plain_iso_chunk(chunk, digits, marks)
        if part is None:
            return None
        parts.append(part)
    if not parts or len({w for w, _ in parts}) != 1:
        return None  # one form for the whole column, as the text reader asks
    return parts[0][1] if len(parts) == 1 else np.concatenate([a for _, a in parts])


def _plain_iso_chunk(
    arr: pa.Array, digits: dict[int, list[int]], marks: dict[int, dict[int, bytes]]
) -> tuple[int, np.ndarray] | None:
    bufs = _buffers(arr)
    if bufs is None or not len(arr):
        return None
    offsets, text = bufs
    width = int(offsets[1] - offsets[0])
    if width not in digits or text.size != width * len(arr):
        return None
    if not (np.diff(offsets) == width).all():
        return None
    grid = text.reshape(len(arr), width)
    d = grid[:, digits[width]]
    if not ((d >= 48) & (d <= 57)).all():
        return None
    for at, allowed in marks[width].items():
        if not np.isin(grid[:, at], np.frombuffer(allowed, dtype=np.uint8)).all():
            return None
    try:
        return width, np.ascontiguousarray(grid).view(f"S{width}").ravel().astype("datetime64[s]")
    except ValueError:  # an impossible date or time, such as 2026-02-30
        return None


def cells(arr: pa.Array | pa.ChunkedArray) -> np.ndarray:
    """The cells as an object array of stripped Python strings, as the plain reader gives them
    (str.strip(), which removes what Python calls white space). Each distinct cell is made
    once and shared, so a column of few distinct values (categories, subgroups) costs a
    pointer per row."""
    if isinstance(arr, pa.ChunkedArray):
        arr = arr.combine_chunks()
    enc = pc.dictionary_encode(arr)
    uniques = np.array([u.strip() for u in enc.dictionary.to_pylist()], dtype=object)
    codes = enc.indices.to_numpy(zero_copy_only=False)
    return uniques[codes]


def is_arrow(s: pd.Series) -> bool:
    """Whether a column came from :func:`read_needed` (and so holds unstripped text)."""
    return isinstance(s.array, pd.arrays.ArrowExtensionArray)


def arrow_of(s: pd.Series) -> pa.ChunkedArray:
    return s.array.__arrow_array__()  # the ChunkedArray behind the column (no copy)


__all__ = [
    "MAX_COLUMNS",
    "arrow_of",
    "cells",
    "header_width",
    "is_arrow",
    "plain_decimals",
    "plain_iso",
    "read_needed",
]
