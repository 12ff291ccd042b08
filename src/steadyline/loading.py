"""CSV files -> typed, validated series ready for the statistics.

Every problem names the file and the physical line (header = line 1) and column. Loading never
writes: files are opened read-only. The output of :func:`load_metric` is a :class:`MetricData`
holding one row per plotted point (after any roll-up), with its period, phase and segment (a new
segment starts after a gap in the periods, so that lines are not joined across gaps).

Time parsing (documented in the README):
- default: ISO 8601 dates or date-times (``2026-03-31``, ``2026-03-31T14:05``, with an optional
  UTC offset such as ``+01:00`` or ``Z``);
- ``[metric.csv] date_format`` gives an explicit strftime format instead;
- ``[metric.csv] timezone``: naive times are read in that zone, times with an offset are converted
  to it; all times are then shown as wall-clock times of that zone. Without it, times with an
  offset are converted to UTC, and a file that mixes times with and without an offset is refused.
"""

from __future__ import annotations

import codecs
import csv
import datetime as dt
import difflib
import io
import re
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from . import columns, files, formats
from .config import MetricSpec, Period, PortfolioSettings
from .errors import Problem, ProjectError

STAGE_BASELINE, STAGE_AFTER, STAGE_OTHER = 0, 1, 2
STAGE_NAMES = {STAGE_BASELINE: "Baseline", STAGE_AFTER: "After", STAGE_OTHER: "Between periods"}
MAX_LISTED_ROWS = 5
# The most points a time-based chart draws one by one. Our choice: a card's chart is some 600 to
# 900 px wide, so 400 points leave about 2 px each, where markers start to merge into a band and
# the signals can no longer be told apart. A metric without a roll-up of its own that has more
# points is drawn by period instead (see choose_period).
DRAWN_POINTS_MAX = 400
# The periods tried, finest first; "year" is for series too long even by quarter.
AUTO_PERIODS = ("day", "week", "month", "quarter", "year")
MAX_MAGNITUDE = 1e100
_OFFSET_RE = re.compile(r"(?:Z|[+-]\d{2}:?\d{2})$")


@dataclass
class MetricData:
    """A metric's data as plotted.

    kind:       the effective data type: continuous, subgroups, defectives, defects, categories.
    points:     one row per plotted point with columns
                  period (datetime64, naive wall-clock time), label (str, ISO date or date-time),
                  value (the plotted figure: value, subgroup mean, proportion, rate or count),
                  count, size (defectives / defects), n (rows behind the point),
                  stage (0 baseline, 1 after, 2 between), segment (int).
                For categories: one row per input row with columns category, weight, stage.
    subgroups:  for subgroups: the values of each subgroup, in point order.
    raw_rows:   data rows read from the file.
    by_period:  when the metric had more points than a chart shows legibly and no roll-up of its
                own, the period its time-based charts are drawn by and why (else None).
    """

    spec: MetricSpec
    kind: str
    points: pd.DataFrame
    subgroups: list[np.ndarray] | None = None
    values: pd.DataFrame | None = None  # individual values (value, stage) for distributions
    raw_rows: int = 0
    problems: list[Problem] = field(default_factory=list)  # warnings only
    by_period: ByPeriod | None = None


@dataclass(frozen=True)
class ByPeriod:
    """How a metric with too many points to draw one by one is drawn instead.

    period:   day, week, month, quarter or year (the finest that brings the points under limit).
    points:   the points it would have had (rows, or the user's subgroups).
    periods:  the points drawn (periods with data).
    limit:    DRAWN_POINTS_MAX.
    how:      "subgroups" (each period's values form one subgroup: Xbar-S / Xbar-R by period),
              "totals" (each period's defectives or defects over its items or area: p / u
              chart), or "mean" (the period's mean, when an X-mR chart was asked for).
    reason:   the sentence the pages and results.json give.
    """

    period: str
    points: int
    periods: int
    limit: int
    how: str
    reason: str

    @property
    def stage(self) -> np.ndarray:
        return self.points["stage"].to_numpy(dtype=int)


class _Rows:
    """Collects problems for one data file.

    A CSV file's rows are named by line; a workbook's by sheet and row (*sheet* set by
    :func:`steadyline.formats.read_workbook`), a Parquet file's by row (*records*).
    *header_line* is where the column names are (None: a Parquet file, which has no header
    row); *number_cells* lists, per column, the rows whose cell a workbook stores as a number
    (a time column's are refused with their own words)."""

    def __init__(self, spec: MetricSpec):
        self.spec = spec
        self.problems: list[Problem] = []
        self.sheet: str | None = None
        self.records = False
        self.header_line: int | None = 1
        self.number_cells: dict[str, list[int]] = {}

    def add(self, line: int | None, where: str, message: str, severity: str = "error"):
        self.problems.append(
            Problem(self.spec.file_rel, line, where, message, severity, self.sheet, self.records)
        )

    def rows(self, lines: list[int], where: str, message: str, severity: str = "error"):
        """One problem for a set of rows: the first line is the location, the rest are listed."""
        if not lines:
            return
        shown = ", ".join(str(x) for x in lines[:MAX_LISTED_ROWS])
        more = f" and {len(lines) - MAX_LISTED_ROWS} more" if len(lines) > MAX_LISTED_ROWS else ""
        word = "rows" if self.sheet is not None or self.records else "lines"
        lines_txt = f" ({word} {shown}{more})" if len(lines) > 1 else ""
        self.add(lines[0], where, message + lines_txt, severity)

    @property
    def failed(self) -> bool:
        return any(p.severity == "error" for p in self.problems)

    def raise_if_failed(self):
        if self.failed:
            raise ProjectError(self.problems)


# Byte-order marks, longest first: the UTF-32 little-endian mark begins with the UTF-16 one.
_BOMS = (
    (b"\x00\x00\xfe\xff", "utf-32"),
    (b"\xff\xfe\x00\x00", "utf-32"),
    (b"\xef\xbb\xbf", "utf-8-sig"),
    (b"\xfe\xff", "utf-16"),
    (b"\xff\xfe", "utf-16"),
)
_WIDE = {"utf-16": 2, "utf-16-le": 2, "utf-16-be": 2, "utf-32": 4, "utf-32-le": 4, "utf-32-be": 4}
_SNIFF = 4096


def _zero_share(raw: bytes, width: int) -> np.ndarray:
    """For each byte position within a code unit of *width* bytes, the share of zero bytes
    there in the file's first 4 KiB (a text of mostly ASCII characters in UTF-16 LE has zeros
    in every second byte, in UTF-16 BE in every first)."""
    head = raw[: _SNIFF - _SNIFF % width]
    head = head[: len(head) - len(head) % width]
    if not head:
        return np.zeros(width)
    units = np.frombuffer(head, dtype=np.uint8).reshape(-1, width)
    return (units == 0).mean(axis=0)


def _byte_order(raw: bytes, width: int) -> str:
    """ "-le" or "-be" for a UTF-16 or UTF-32 file without a byte-order mark: on the side where
    the high bytes of its (mostly ASCII) characters, the zeros, fall. Python's own choice would
    be the machine's byte order; with no zeros to tell, big-endian, the order the Unicode
    Standard gives a UTF-16 text with no mark and no other agreement (section 3.10, D98; the
    same for UTF-32 from memory)."""
    share = _zero_share(raw, width)
    return "-le" if share[-1] > share[0] else "-be"


def _wide_guess(raw: bytes) -> str | None:
    """The UTF-16 or UTF-32 form a file with NUL bytes and no byte-order mark looks like, or
    None: nearly every code unit with zeros in its high bytes and none in its low byte."""
    for width, name in ((4, "utf-32"), (2, "utf-16")):
        share = _zero_share(raw, width)
        high = width - 1
        if share[0] < 0.1 and (share[1:] > 0.9).all():
            return f"{name}-le"
        if share[high] < 0.1 and (share[:high] > 0.9).all():
            return f"{name}-be"
    return None


def _family(codec: str) -> str:
    """utf-16-le -> utf-16, utf-8-sig -> utf-8: the encoding apart from byte order and mark."""
    return codec.removesuffix("-sig").removesuffix("-le").removesuffix("-be")


def _codec(raw: bytes, enc: str) -> tuple[str, str | None, str]:
    """(declared codec's name, the codec a byte-order mark names or None, the codec to read
    with) for a file starting with *raw* (its first 4 KiB are enough). A byte-order mark (UTF-8,
    UTF-16 or UTF-32) decides the encoding, whatever is declared; a UTF-16 or UTF-32 file
    without one is read in the declared form ("utf-16" or "utf-32" alone: in the byte order its
    bytes show)."""
    try:
        name = codecs.lookup(enc).name  # "UTF16", "utf_16" -> "utf-16"
    except LookupError:  # refused in the metadata already; decoding names it again
        name = enc
    bom = next((c for mark, c in _BOMS if raw.startswith(mark)), None)
    if bom is not None:
        codec = bom
    elif name in ("utf-16", "utf-32"):
        codec = name + _byte_order(raw, _WIDE[name])
    else:
        codec = name
    return name, bom, codec


def _decode(raw: bytes, enc: str, out: _Rows) -> str | None:
    """The file's text, read as :func:`_codec` says; a byte-order mark is dropped."""
    name, bom, codec = _codec(raw, enc)
    wide = codec in _WIDE
    if not wide and b"\x00" in raw[:_SNIFF]:
        guess = _wide_guess(raw)
        if guess:
            out.add(
                None,
                "",
                f"the file holds NUL bytes: it looks like {guess.upper()} text "
                f'without a byte-order mark; set [metric.csv] encoding = "{guess}"',
            )
        else:
            out.add(
                None,
                "",
                "the file looks binary, not CSV text (it contains NUL bytes); "
                "export the data as CSV",
            )
        return None
    shown = enc
    if bom is not None and _family(name) != _family(bom):
        shown = f"{_family(bom).upper()} (as its byte-order mark says)"
    try:
        text = raw.decode(codec)
    except UnicodeDecodeError as e:
        line = raw[: e.start].decode(codec, errors="replace").count("\n") + 1
        if wide:
            out.add(
                line,
                "",
                f"the bytes at offset {e.start} are not valid {shown} text "
                f"({e.reason}); save the file again as UTF-8 or UTF-16",
            )
        else:
            out.add(
                line,
                "",
                f"byte 0x{raw[e.start]:02x} is not valid {shown} text; save the "
                'file as UTF-8, or set [metric.csv] encoding = "latin-1" if it comes '
                "from an older system",
            )
        return None
    if wide and "\x00" in text[:_SNIFF]:
        out.add(
            None,
            "",
            "the file looks binary, not CSV text (it holds NUL characters); export the data as CSV",
        )
        return None
    return text


def _size_text(size: float) -> str:
    mb = size / 1024 / 1024
    return f"{mb:.0f} MB" if mb >= 10 else f"{mb:.3g} MB" if mb >= 0.01 else f"{size:,.0f} bytes"


_BLANK_LINE = re.compile(r"\n[ \t\r]*\n|^[ \t\r]*\n")
# Whitespace str.strip() removes, besides the line ends the reader consumes.
_ASCII_SPACES = " \t\x0b\x0c\x1c\x1d\x1e\x1f"


def _awkward(text: str) -> bool:
    """Whether the text has quote marks, blank lines (empty or holding only spaces, tabs and
    carriage returns; the first line included) or lone carriage returns: what makes the plain
    reader unsafe. Checked with substring tests first, since a regular-expression scan of a
    large file is slow (tests/test_fast_paths.py holds it equal to the full expression)."""
    if '"' in text:
        return True
    if "\r" in text and text.count("\r") != text.count("\r\n"):
        return True
    if "\n\n" in text or "\n\r\n" in text or text.startswith(("\n", "\r\n")):
        return True
    if " " in text or "\t" in text or "\r" in text:
        return _BLANK_LINE.search(text) is not None
    return False


def _complete_rows(text: str, delim: str, width: int) -> bool:
    """Every line holds exactly width - 1 delimiters (the reader pads short rows silently)."""
    if len(delim) != 1 or ord(delim) > 127:
        return False
    b = np.frombuffer(text.encode("utf-8"), dtype=np.uint8)
    ends = np.flatnonzero(b == 10)
    if b.size and b[-1] != 10:
        ends = np.concatenate([ends, [b.size]])
    line_of = np.searchsorted(ends, np.flatnonzero(b == ord(delim)))
    per_line = np.bincount(line_of, minlength=ends.size)
    return per_line.size == ends.size and bool((per_line == width - 1).all())


_SPLIT_DELIMITERS = (",", ";", "|", "\t")
# Larger texts go through pandas' reader: splitting them whole holds more memory at once (about
# 40 MiB more at its peak for a file of 10^6 rows, measured by benchmarks/run.py).
_SPLIT_MAX_CHARS = 4_000_000


def _read_plain(text: str, delim: str) -> pd.DataFrame | None:
    """Fast path for the common file: no quote marks, no blank lines, every row complete.

    Then every record is one physical line and pandas' C reader gives the same table as the
    careful reader below, in a fraction of the time. Anything unusual returns None, and the
    careful reader takes over (and names the lines of any problem).
    """
    if _awkward(text):
        return None
    first = text.split("\n", 1)[0].rstrip("\r")
    header = [h.strip() for h in first.split(delim)]
    if "" in header or len(set(header)) != len(header):
        return None
    # every line complete (the same number of fields as the header): then no cell is missing
    if not _complete_rows(text, delim, len(header)):
        return None
    # cells are stripped, as the careful reader strips them, when there is anything to strip
    strip = not text.isascii() or any(c in text for c in _ASCII_SPACES)
    if delim not in _SPLIT_DELIMITERS or len(text) > _SPLIT_MAX_CHARS:
        try:
            df = pd.read_csv(
                io.StringIO(text),
                sep=delim,
                dtype=str,
                keep_default_na=False,
                engine="c",
                skip_blank_lines=False,
                header=0,
                names=header,
            )
        except (pd.errors.ParserError, ValueError):
            return None
        if len(df) == 0:
            return None
        if strip:
            for c in df.columns:
                df[c] = df[c].str.strip()
        df.index = np.arange(2, len(df) + 2)  # physical line numbers (header = line 1)
        return df
    # No quote marks and every line complete: the cells are the text split at line ends and
    # delimiters (quicker than pandas' reader, which gives the same table).
    body = (text.replace("\r\n", "\n") if "\r" in text else text).partition("\n")[2]
    if body.endswith("\n"):
        body = body[:-1]
    if not body:
        return None
    cells = body.replace("\n", delim).split(delim)
    if strip:
        cells = [c.strip() for c in cells]
    width = len(header)
    grid = np.array(cells, dtype=object).reshape(-1, width)
    return pd.DataFrame(
        {h: grid[:, j] for j, h in enumerate(header)}, index=np.arange(2, len(grid) + 2), dtype=str
    )


def _width_fault(path, spec: MetricSpec) -> str | None:
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

    A plain file (see columns.read_needed) gives only the *needed* columns (all when None), as pyarrow text
    that :func:`_text` turns into stripped cells where a column is not read in bulk; any other
    file gives every column, stripped. Python's csv module is used for the careful reading (not
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
):
    path = spec.file
    try:
        size = path.stat().st_size
    except OSError as e:
        out.add(None, "", f"cannot read the file: {e.strerror}")
        return None
    limit = settings.max_file_mb * 1024 * 1024
    if size > limit:
        out.add(
            None,
            "",
            f"the file is {_size_text(size)}, over the limit of "
            f"{settings.max_file_mb:g} MB (max_file_mb in portfolio.toml); roll the data up "
            "before committing it, or raise max_file_mb",
        )
        return None
    # the kind by the name project.toml gives (a link is read as what it is named, as the
    # metadata's checks judged it)
    kind = formats.data_format(spec.file_rel)
    if kind != formats.CSV:
        try:
            raw = files.read_bytes(path)  # read-only, and only a regular file
        except files.Unreadable as e:
            out.add(None, "", str(e))
            return None
        if kind == formats.WORKBOOK:
            out.records = True
            return formats.read_workbook(raw, needed, out, limit)
        roles = {c: k for k, c in _columns_of(spec).items() if c is not None}
        return formats.read_parquet(raw, needed, roles, out)
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
        header, cols, n = plain
        index = pd.RangeIndex(2, n + 2)  # physical line numbers (header = line 1)
        df = pd.DataFrame(
            {c: pd.Series(pd.arrays.ArrowExtensionArray(a), index=index) for c, a in cols.items()},
            index=index,
        )
        return df, header
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
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delim, strict=True)
    records: list[tuple[int, list[str]]] = []
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
    if not records:
        out.add(None, "", "the file is empty; it needs a header line and data rows")
        return None
    header_line, header = records[0]
    header = [h.strip() for h in header]
    # Spreadsheets often add empty columns at the right: drop unnamed trailing columns whose
    # cells are all blank.
    width = len(header)
    while (
        width > 1
        and header[width - 1] == ""
        and all(len(r) < width or not r[width - 1].strip() for _, r in records[1:])
    ):
        width -= 1
    header = header[:width]
    dup = sorted({h for h in header if header.count(h) > 1})
    if dup:
        out.add(
            header_line,
            "header",
            f"the column name(s) {', '.join(repr(d) for d in dup)} "
            "appear more than once; give each column its own name",
        )
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


def _text(s: pd.Series) -> pd.Series:
    """A column as stripped text cells: as it is, or made so from pyarrow's text (only a
    column that is not read in bulk from its bytes ever becomes Python strings)."""
    if not columns.is_arrow(s):
        return s  # cells come stripped from _read_table
    return pd.Series(columns.cells(columns.arrow_of(s)), index=s.index, dtype=str)


def _require_column(
    cols: list[str], key: str, col: str | None, spec: MetricSpec, out: _Rows
) -> bool:
    if col is None:
        return True
    if col in cols:
        return True
    guess = difflib.get_close_matches(col, cols, n=1, cutoff=0.6)
    if guess:
        hint = f"; did you mean '{guess[0]}'?"
    elif (
        len(cols) == 1
        and any(c in cols[0] for c in ";,\t|")
        and formats.data_format(spec.file_rel) == formats.CSV
    ):
        sep = next(c for c in ";\t|," if c in cols[0])
        hint = (
            f"; the header was read as one column {cols[0]!r}: the file seems separated by "
            f"{sep!r}; set [metric.csv] delimiter = {sep!r}"
        )
    else:
        hint = f"; the file has columns: {', '.join(cols)}"
    out.add(
        out.header_line, f"column '{col}'", f"not found (metric {spec.id!r}, key '{key}'){hint}"
    )
    return False


_NUMBER_RE = re.compile(r"^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?$")
_INFINITY_RE = re.compile(r"^[+-]?inf(?:inity)?$", re.IGNORECASE)
_THOUSANDS_RE = re.compile(r"^[+-]?\d{1,3}(?:\.\d{3})+(?:,\d*)?$")
_MISSING_WORDS = {"nan", "na", "n/a", "#n/a", "null", "none", "-", "--", "?", "missing"}


def _to_float(cell: str, decimal: str) -> float | None:
    """A cell as a float (inf allowed, reported by the caller), or None when it is no number."""
    if decimal == ",":
        if _THOUSANDS_RE.match(cell):
            cell = cell.replace(".", "")
        elif "." in cell:
            return None
        cell = cell.replace(",", ".")
    if _NUMBER_RE.match(cell):
        return float(cell)
    if _INFINITY_RE.match(cell):
        return float(cell)
    return None


def _why_not_number(cell: str, what: str, decimal: str) -> str:
    text = f"{cell!r} is not {what}"
    if cell.lower() in _MISSING_WORDS:
        return text + "; leave the cell blank for a missing value"
    if decimal == "." and re.match(r"^[+-]?\d*,\d+$", cell):
        return text + '; for decimal commas set [metric.csv] decimal = "," and delimiter = ";"'
    if decimal == "," and "." in cell:
        return text + '; the metric declares decimal commas (decimal = ","): write 1,5 not 1.5'
    return text


_DECIMAL_TEXT = re.compile(r"[0-9.eE+-]*")


def _plain_decimals(cells: np.ndarray) -> np.ndarray | None:
    """float() of every cell when the column's text holds only digits, points, signs and
    exponent letters and every cell is a number (what _NUMBER_RE accepts), else None. Python's
    float() is correctly rounded (pandas' parse can be one unit in the last place off on a cell
    with a leading "+"); numpy calls it in one loop."""
    if cells.dtype != object or not _DECIMAL_TEXT.fullmatch("".join(cells.tolist())):
        return None
    try:
        return cells.astype(float)
    except (ValueError, TypeError):  # a blank cell, or a stray sign or letter
        return None


def _numbers(
    df: pd.DataFrame,
    col: str,
    spec: MetricSpec,
    out: _Rows,
    *,
    integer=False,
    minimum: float | None = None,
    what="a number",
) -> pd.Series:
    s = df[col]
    dec = spec.csv.decimal
    quick = None
    if dec == ".":
        # The common column: every cell a plain finite number within the checks below. Then
        # there is nothing to report and pandas' parse is the answer.
        if columns.is_arrow(s):
            quick = columns.plain_decimals(columns.arrow_of(s))  # read from its bytes
        s = _text(s)  # stripped cells
        if quick is None:
            quick = _plain_decimals(s.to_numpy())
        if quick is None:
            quick = pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)
            # pandas' parse can be one unit in the last place off on a cell with a leading
            # "+" (seen with pandas 3): such cells are read one by one below, by float()
            quick = np.where(s.str.startswith("+").to_numpy(dtype=bool), np.nan, quick)
        if (
            np.isfinite(quick).all()
            and not (np.abs(quick) > MAX_MAGNITUDE).any()
            and (not integer or (quick == np.floor(quick)).all())
            and (minimum is None or (quick >= minimum).all())
        ):
            return pd.Series(quick, index=df.index)
    s = _text(s)
    blank = (s == "").to_numpy()
    num = pd.Series(np.nan, index=df.index, dtype=float)
    careful = ~blank
    if quick is not None:
        # pandas' parse stands for the plain numbers; only what it could not parse, or parsed
        # as nan or infinity (words like "NaN" and "inf"), is looked at cell by cell below.
        ok = ~blank & np.isfinite(quick)
        num[ok] = quick[ok]
        careful = ~blank & ~ok
    bad_mask = np.zeros(len(s), dtype=bool)
    if careful.any():
        cells = s[careful]
        table = {u: _to_float(u, dec) for u in pd.unique(cells)}
        vals = np.array([np.nan if table[c] is None else table[c] for c in cells], dtype=float)
        num[careful] = vals
        bad_mask[careful] = np.array([table[c] is None for c in cells], dtype=bool)
    bad = pd.Series(bad_mask, index=df.index)
    out.rows(
        list(df.index[bad]),
        f"column '{col}'",
        _why_not_number(s[bad].iloc[0], what, dec) if bad.any() else "",
    )
    # Beyond 1e100 no measurement is meant, and squares of such values overflow the statistics.
    nonfinite = np.abs(num.to_numpy()) > MAX_MAGNITUDE
    out.rows(
        list(df.index[nonfinite]),
        f"column '{col}'",
        "the value is infinite or too large "
        f"(over {MAX_MAGNITUDE:g}); write a finite number or leave the cell blank",
    )
    num = num.where(~nonfinite)
    out.rows(
        list(df.index[blank]),
        f"column '{col}'",
        "blank cell; the row is left out",
        severity="warning",
    )
    if integer:
        frac = num.notna() & (num != np.floor(num))
        out.rows(
            list(df.index[frac]),
            f"column '{col}'",
            f"expected a whole number, got {s[frac].iloc[0]!r}" if frac.any() else "",
        )
    if minimum is not None:
        low = num.notna() & (num < minimum)
        out.rows(
            list(df.index[low]),
            f"column '{col}'",
            f"{num[low].iloc[0]:g} is below {minimum:g}; counts cannot be negative"
            if low.any()
            else "",
        )
    return num


# Times are kept as nanosecond timestamps, which cover the years 1677 to 2262; dates outside a
# slightly narrower window are refused with a message instead of overflowing.
_EARLIEST, _LATEST = pd.Timestamp("1678-01-01"), pd.Timestamp("2261-12-31")


def _in_range(t: pd.Series) -> tuple[pd.Series, pd.Series]:
    """(t as datetime64[ns] with out-of-range times as NaT, mask of the out-of-range times)."""
    if len(t) and t.dt.tz is not None:
        t = t.dt.tz_localize(None)
    far = t.notna() & ((t < _EARLIEST) | (t > _LATEST))
    return t.where(~far).astype("datetime64[ns]"), far


def _parse(s: pd.Series, **kw) -> pd.Series:
    try:
        t = pd.to_datetime(s, errors="coerce", **kw)
    except (ValueError, OverflowError, TypeError):  # unparseable as a whole: one by one
        t = pd.Series([_parse_one(x, kw) for x in s], index=s.index, dtype=object)
        t = pd.to_datetime(t, errors="coerce", utc=True)
    if t.dtype == object:  # several UTC offsets from a %z format: make them comparable
        t = pd.to_datetime(t, errors="coerce", utc=True)
    return t


def _parse_one(x, kw):
    try:
        return pd.to_datetime(x, errors="coerce", **kw)
    except (ValueError, OverflowError, TypeError):
        return pd.NaT


def _quick_naive(s: pd.Series) -> pd.Series | None:
    """The whole column parsed at once when every cell is a plain ISO 8601 time, else None."""
    try:
        # cache=False: pandas would otherwise look for repeated cells value by value first
        t = pd.to_datetime(s, format="ISO8601", cache=False)
    except (ValueError, OverflowError, TypeError):
        return None
    if not pd.api.types.is_datetime64_dtype(t):
        return None
    if getattr(t.dt, "tz", None) is not None or t.isna().any():
        return None
    return t


def _within_years(a: np.ndarray) -> bool:
    """Whether every time of a parsed naive column lies within the charted years."""
    return not a.size or (
        a.min() >= _EARLIEST.to_datetime64() and a.max() <= _LATEST.to_datetime64()
    )


# The fixed-width ISO 8601 forms read by numpy: per length, the places of digits and of the
# separators ("T" or a space between date and time).
_ISO_DIGITS = {10: [0, 1, 2, 3, 5, 6, 8, 9]}
_ISO_DIGITS[16] = _ISO_DIGITS[10] + [11, 12, 14, 15]
_ISO_DIGITS[19] = _ISO_DIGITS[16] + [17, 18]
_ISO_MARKS = {10: {4: b"-", 7: b"-"}}
_ISO_MARKS[16] = _ISO_MARKS[10] | {10: b"T ", 13: b":"}
_ISO_MARKS[19] = _ISO_MARKS[16] | {16: b":"}


def _plain_iso(cells: np.ndarray) -> np.ndarray | None:
    """The cells as datetime64[s] when every one is written in the same plain form
    (YYYY-MM-DD, YYYY-MM-DDTHH:MM or YYYY-MM-DDTHH:MM:SS, "T" or a space), else None: the
    form is checked for the whole column at once on its bytes, and numpy reads the dates
    (refusing impossible ones, as pandas does)."""
    if cells.dtype != object or not cells.size or type(cells[0]) is not str:
        return None
    width = len(cells[0])
    if width not in _ISO_DIGITS:
        return None
    try:
        raw = ("\n".join(cells.tolist()) + "\n").encode("ascii")
    except (UnicodeEncodeError, TypeError):
        return None
    if len(raw) != (width + 1) * cells.size:
        return None
    grid = np.frombuffer(raw, dtype=np.uint8).reshape(cells.size, width + 1)
    digits = grid[:, _ISO_DIGITS[width]]
    if not ((digits >= 48) & (digits <= 57)).all() or not (grid[:, width] == 10).all():
        return None
    for at, allowed in _ISO_MARKS[width].items():
        if not np.isin(grid[:, at], np.frombuffer(allowed, dtype=np.uint8)).all():
            return None
    try:
        return (
            np.ascontiguousarray(grid[:, :width]).view(f"S{width}").ravel().astype("datetime64[s]")
        )
    except ValueError:  # an impossible date or time, such as 2026-02-30
        return None


def _times(df: pd.DataFrame, col: str, spec: MetricSpec, out: _Rows) -> pd.Series:
    s = df[col]
    # The common column: no blank cell and every cell a plain ISO 8601 time, parsed at once
    # (None otherwise). Within the charted years there is nothing to report: the answer.
    quick = None
    if not spec.csv.date_format:
        plain = None
        if columns.is_arrow(s):  # the fixed-width forms, read from the column's bytes
            plain = columns.plain_iso(columns.arrow_of(s), _ISO_DIGITS, _ISO_MARKS)
        if plain is None:
            s = _text(s)
            plain = _plain_iso(s.to_numpy())  # the fixed-width forms, read by numpy
        if plain is not None and _within_years(plain):
            return pd.Series(plain.astype("datetime64[ns]"), index=df.index)
        s = _text(s)
        if not (s.to_numpy() == "").any():
            quick = _quick_naive(s)  # any other ISO 8601 form, read by pandas
            if quick is not None and _within_years(quick.to_numpy()):
                return quick.astype("datetime64[ns]")
    s = _text(s)
    blank = s == ""
    out.rows(
        list(df.index[blank]),
        f"column '{col}'",
        "blank date; the row is left out",
        severity="warning",
    )
    tz = spec.csv.timezone
    t = pd.Series(pd.NaT, index=df.index, dtype="datetime64[ns]")
    far = pd.Series(False, index=df.index)
    if spec.csv.date_format:
        parsed = _parse(s.where(~blank), format=spec.csv.date_format)
        # Plain times are wall-clock times of the metric's zone already: kept as they are.
        if len(parsed) and parsed.dt.tz is not None:  # the format has %z
            parsed = parsed.dt.tz_convert(tz or "UTC")
        t, far_ = _in_range(parsed)
        far |= far_
        expected = f"a date in the format {spec.csv.date_format!r}"
    else:
        if quick is not None:
            aware = pd.Series(False, index=df.index)  # every cell parsed as a plain time
        else:
            aware = s.str.contains(_OFFSET_RE) & ~blank
        if aware.any() and (~aware & ~blank).any() and not tz:
            first_naive = list(df.index[~aware & ~blank])
            first_aware = list(df.index[aware])
            out.add(
                min(first_naive[0], first_aware[0]),
                f"column '{col}'",
                "the file mixes times with and without a UTC offset; write every time the "
                "same way, or set [metric.csv] timezone to say which zone the plain times "
                "are in",
            )
            return t
        zone = tz or "UTC"
        if aware.any():
            ta = _parse(s[aware], format="ISO8601", utc=True)
            ta, far_a = _in_range(ta)  # UTC wall-clock, range-checked before conversion
            ta = ta.dt.tz_localize("UTC").dt.tz_convert(zone)
            ta, far_b = _in_range(ta)
            t[aware] = ta
            far[aware] = far_a | far_b
        naive = ~aware & ~blank
        if quick is not None:
            t, far = _in_range(quick)
        elif naive.any():
            tn, far_n = _in_range(_parse(s[naive], format="ISO8601"))
            t[naive] = tn
            far[naive] = far_n
        expected = "an ISO 8601 date like 2026-03-31 (or set [metric.csv] date_format)"
    out.rows(
        list(df.index[far]),
        f"column '{col}'",
        f"{s[far].iloc[0].strip()!r} is outside the years 1678 to 2261 that can be "
        "charted; check the date"
        if far.any()
        else "",
    )
    bad = t.isna() & ~blank & ~far
    numbers = out.number_cells.get(col)
    if numbers and bad.any():  # a workbook's cells stored as numbers, not dates
        is_number = bad & df.index.isin(numbers)
        out.rows(
            list(df.index[is_number]),
            f"column '{col}'",
            f"{s[is_number].iloc[0]!r} is a number, not a date; give the column a date "
            "format in the workbook, or write the dates as text"
            if is_number.any()
            else "",
        )
        bad &= ~is_number
    out.rows(
        list(df.index[bad]),
        f"column '{col}'",
        f"{s[bad].iloc[0].strip()!r} is not {expected}" if bad.any() else "",
    )
    return t.astype("datetime64[ns]")


# Line and paragraph separators, tabs and other control characters in a label become one space:
# a category name is one line of text, and Vega's expression parser refuses a raw U+2028 in
# the explicit sort orders Vega-Lite compiles category names into.
_LABEL_SPACE = re.compile(r"[\s\x00-\x1f\x7f-\x9f\u2028\u2029]+")


def clean_label(text: str) -> str:
    """A category or subgroup name as shown: control characters and runs of space -> one space."""
    return _LABEL_SPACE.sub(" ", text).strip()


def assign_stage(
    times: pd.Series | np.ndarray, baseline: Period | None, after: Period | None
) -> np.ndarray:
    """Stage of each time: 0 baseline, 1 after, 2 between / outside both periods.

    *times*: a Series (naive or with a time zone) or a numpy datetime64 array (naive). Without
    a baseline period every point is baseline. Dates are inclusive at both ends.
    """
    if baseline is None:
        return np.zeros(len(times), dtype=int)
    t = times
    if isinstance(t, pd.Series):
        if len(t) and t.dt.tz is not None:
            t = t.dt.tz_localize(None)  # the wall-clock date in the series' own zone
        t = t.to_numpy()
    d = t.astype("datetime64[D]")  # the calendar day (NaT stays NaT: no stage)
    stage = np.full(len(times), STAGE_OTHER, dtype=int)

    def within(p: Period) -> np.ndarray:
        m = d >= np.datetime64(p.start, "D")
        if p.end is not None:
            m &= d <= np.datetime64(p.end, "D")
        return m

    stage[within(baseline)] = STAGE_BASELINE
    if after is not None:
        stage[within(after)] = STAGE_AFTER
    return stage


def _days(times: pd.Series | np.ndarray) -> np.ndarray:
    """Each time's calendar day (wall-clock, in the series' own zone), as assign_stage
    reads it."""
    t = times
    if isinstance(t, pd.Series):
        if len(t) and t.dt.tz is not None:
            t = t.dt.tz_localize(None)
        t = t.to_numpy()
    return np.asarray(t).astype("datetime64[D]")


def _set_aside(spec: MetricSpec, period: np.ndarray, stage: np.ndarray, out: _Rows) -> np.ndarray:
    """Per point: set aside or not. A point is set aside when its date (the first day of its
    period, by which it also falls in the baseline) is one of an entry's days. An entry no point
    falls on, and entries that leave no baseline point, are errors of project.toml."""
    days = _days(period)
    aside = np.zeros(len(days), dtype=bool)
    first, last = (str(days.min()), str(days.max())) if len(days) else ("", "")
    for e in spec.set_aside:
        hit = (days >= np.datetime64(e.start, "D")) & (days <= np.datetime64(e.end, "D"))
        if not hit.any():
            span = f"the data run {first} to {last}" if first else "the metric has no data"
            per = (
                ""
                if spec.rollup is None
                else (f" (a point is dated by the first day of its {spec.rollup.period})")
            )
            out.problems.append(
                Problem(
                    e.source,
                    e.line,
                    f"{e.where}.dates",
                    f"no point of {spec.file_rel!r} falls on {e.label()}{per}; {span}",
                )
            )
        aside |= hit
    base = stage == STAGE_BASELINE
    if base.any() and aside[base].all():
        e = spec.set_aside[0]
        out.problems.append(
            Problem(
                e.source,
                e.line,
                e.where.rsplit("[", 1)[0],
                f"every point of the baseline of {spec.file_rel!r} is set aside; no point would be "
                "left to compute the centre line and limits from",
            )
        )
    return aside


def _values_aside(
    frame: pd.DataFrame,
    spec: MetricSpec,
    aside: np.ndarray,
    period: np.ndarray,
    subgroups: bool,
    by_period: bool,
) -> np.ndarray:
    """Per individual value: whether the point it belongs to is set aside, so that the
    histogram, box plot and capability of the baseline leave out the same rows as its charts."""
    if subgroups:  # the user's subgroups, numbered as _subgroups numbers them
        if spec.subgroup is not None:
            codes = pd.factorize(frame["subgroup"], sort=False)[0]
        else:
            codes = np.arange(len(frame)) // (spec.subgroup_size or 1)
        return aside[codes]
    if not by_period:  # one point per row
        return aside.copy()
    # periods: each row belongs to the last period that starts on or before its day
    at = np.searchsorted(_days(period), _days(frame["t"]), side="right") - 1
    return aside[np.clip(at, 0, len(aside) - 1)]


_PERIOD_FREQ = {"day": "D", "week": "W-MON", "month": "MS", "quarter": "QS", "year": "YS"}


def period_start(t: pd.Series, period: str) -> pd.Series:
    d = t.dt.normalize()
    if period == "day":
        return d
    if period == "week":  # ISO weeks start on Monday
        return d - pd.to_timedelta(d.dt.day_of_week, unit="D")
    if period == "month":
        return d.dt.to_period("M").dt.start_time
    if period == "year":
        return d.dt.to_period("Y").dt.start_time
    return d.dt.to_period("Q").dt.start_time


def period_label(start: pd.Series, period: str) -> pd.Series:
    if period in ("day", "month"):
        return pd.Series(
            _iso_array(start.to_numpy(), "D" if period == "day" else "M"), index=start.index
        )
    if period == "week":
        iso = start.dt.isocalendar()
        return iso["year"].astype(str) + "-W" + iso["week"].astype(str).str.zfill(2)
    if period == "year":
        return start.dt.year.astype(str)
    return start.dt.year.astype(str) + "-Q" + start.dt.quarter.astype(str)


def _period_labels(start: np.ndarray, period: str) -> np.ndarray:
    """:func:`period_label` of naive period starts held in a numpy array, as an array."""
    if period in ("day", "month"):
        return _iso_array(start, "D" if period == "day" else "M")
    return period_label(pd.Series(start), period).to_numpy(dtype=object)


def _iso_array(t: np.ndarray, unit: str) -> np.ndarray:
    """ISO 8601 text of naive times to the given numpy unit ("D" 2026-01-05, "M" 2026-01,
    "m" 2026-01-05 06:30), written by numpy in one pass (pandas' strftime goes value by
    value), as an object array of str."""
    text = np.datetime_as_string(t.astype(f"datetime64[{unit}]"), unit=unit)
    if unit == "m":
        text = np.char.replace(text, "T", " ")
    return text.astype(object)


def _rollup_sorted(
    frame: pd.DataFrame, key: np.ndarray, stat: str, kind: str, flags: bool
) -> dict | None:
    """The roll-up by sums over runs of equal periods, for rows in time order (as load_metric
    leaves them): the same columns pandas' groupby gives (sums and means add each period's
    values in row order), without its overhead. None for what it does not cover (the median,
    rows out of order), which then goes through groupby."""
    n = len(key)
    if n == 0 or stat == "median" or not (key[1:] >= key[:-1]).all():
        return None
    starts = np.flatnonzero(np.concatenate([[True], key[1:] != key[:-1]]))
    sizes = np.diff(np.append(starts, n))
    cols: dict = {"period": key[starts]}
    if flags:
        cols["count"] = np.add.reduceat(frame["value"].to_numpy(dtype=float), starts)
        cols["size"] = sizes
    elif kind in ("defectives", "defects"):
        cols["count"] = np.add.reduceat(frame["count"].to_numpy(dtype=float), starts)
        cols["size"] = (
            np.add.reduceat(frame["size"].to_numpy(dtype=float), starts) if "size" in frame else 1.0
        )
    elif stat == "count":
        cols["value"] = sizes
    else:
        total = np.add.reduceat(frame["value"].to_numpy(dtype=float), starts)
        cols["value"] = total / sizes if stat == "mean" else total
    cols["n"] = sizes
    return cols


def _segments_for_periods(starts: pd.Series | np.ndarray, period: str) -> np.ndarray:
    """A new segment starts wherever one or more whole periods are missing."""
    starts = np.asarray(starts)
    if len(starts) == 0:
        return np.zeros(0, dtype=int)
    if period == "day":
        days = starts.astype("datetime64[D]").astype(np.int64)
        return np.cumsum(np.diff(days, prepend=days[0]) > 1)
    full = pd.date_range(starts[0], starts[-1], freq=_PERIOD_FREQ[period])
    pos = full.get_indexer(pd.DatetimeIndex(starts))
    gaps = np.diff(pos, prepend=pos[0]) > 1
    return np.cumsum(gaps)


def _labels(a: np.ndarray) -> np.ndarray:
    """Labels of unrolled points: the date, or the date and time when any point has one."""
    has_time = bool((a.astype("datetime64[D]") != a).any())
    return _iso_array(a, "m" if has_time else "D")


def _has_gap(v) -> bool:
    """Whether a column (a Series or a scalar filling one) has a missing value."""
    if not isinstance(v, pd.Series):
        return False
    a = v.to_numpy()
    if a.dtype.kind == "f":
        return bool(np.isnan(a).any())
    if a.dtype.kind == "M":
        return bool(np.isnat(a).any())
    return bool(v.hasnans)


def _columns_of(spec: MetricSpec) -> dict[str, str | None]:
    """The metric's keys that name a column, and the column each names (or None)."""
    return {
        "time": spec.time,
        "value": spec.value,
        "subgroup": spec.subgroup,
        "count": spec.count,
        "size": spec.size,
        "category": spec.category,
    }


def load_metric(spec: MetricSpec, settings: PortfolioSettings | None = None) -> MetricData:
    """Read, validate and shape one metric's data. Raises ProjectError with every problem."""
    settings = settings or PortfolioSettings()
    out = _Rows(spec)
    cols = _columns_of(spec)
    df, header = _read_table(spec, settings, out, [c for c in cols.values() if c is not None])
    if df is None:
        out.raise_if_failed()
    assert df is not None
    return _shape(spec, df, header, out)


def load_frame(spec: MetricSpec, frame: pd.DataFrame) -> MetricData:
    """:func:`load_metric` for data already in a DataFrame: every cell is written as the text
    a CSV file would hold (numbers as Python writes them, times in ISO 8601, missing values
    blank) and then read by the same checks and shaping, rows numbered as the lines of a CSV
    file with a header (the frame's first row is line 2). Raises ProjectError with every
    problem; the frame is not changed."""
    df, out = _frame_table(spec, frame)
    return _shape(spec, df, list(df.columns), out)


def _frame_table(spec: MetricSpec, frame: pd.DataFrame) -> tuple[pd.DataFrame, _Rows]:
    """A DataFrame's cells as the text table a file becomes, with the collector of its
    problems; raises ProjectError when the frame cannot be read at all."""
    out = _Rows(spec)
    df = _frame_cells(frame, out)
    if df is None:
        out.raise_if_failed()
    assert df is not None
    return df, out


def _cell_text(v) -> str:
    """One cell of a DataFrame as a CSV file would hold it."""
    if v is None or v is pd.NaT or v is pd.NA:
        return ""
    if isinstance(v, bool | np.bool_):
        return "1" if v else "0"
    if isinstance(v, float | np.floating):
        return "" if v != v else repr(float(v))
    if isinstance(v, int | np.integer):
        return str(int(v))
    if isinstance(v, dt.datetime | dt.date):  # pandas' Timestamp too
        return v.isoformat()
    if isinstance(v, np.datetime64):
        return "" if np.isnat(v) else str(v)
    return str(v).strip()


def _frame_cells(frame: pd.DataFrame, out: _Rows) -> pd.DataFrame | None:
    """A DataFrame as the table of text cells :func:`_read_table` makes of a file."""
    if not isinstance(frame, pd.DataFrame):
        out.add(None, "", f"expected a pandas DataFrame, got {type(frame).__name__}")
        return None
    header = [str(c).strip() for c in frame.columns]
    dup = sorted({h for h in header if header.count(h) > 1})
    if dup:
        out.add(
            1,
            "header",
            f"the column name(s) {', '.join(repr(d) for d in dup)} "
            "appear more than once; give each column its own name",
        )
        return None
    if len(frame) == 0:
        out.add(None, "", "the DataFrame has no rows")
        return None
    cells = {h: [_cell_text(v) for v in frame.iloc[:, i].tolist()] for i, h in enumerate(header)}
    df = pd.DataFrame(cells, columns=header, dtype=str)
    df.index = np.arange(2, len(frame) + 2)  # as the lines of a CSV file with a header
    return df


def _shape(spec: MetricSpec, df: pd.DataFrame, header: list[str], out: _Rows) -> MetricData:
    """A metric's table of text cells (indexed by line number) checked and shaped."""
    cols = {
        "time": spec.time,
        "value": spec.value,
        "subgroup": spec.subgroup,
        "count": spec.count,
        "size": spec.size,
        "category": spec.category,
    }
    ok = all([_require_column(header, k, c, spec, out) for k, c in cols.items()])
    if not ok:
        out.raise_if_failed()
    raw_rows = len(df)
    kind = spec.type
    flags = False
    if kind == "continuous" and spec.rollup and spec.rollup.statistic == "proportion":
        kind, flags = "defectives", True
    elif kind == "defectives" and spec.value is not None and spec.rollup is not None:
        flags = True

    # the columns are gathered first and made into one table at once (each column added to a
    # table on its own costs pandas more than reading it)
    fc: dict = {}
    if spec.time is not None:
        fc["t"] = _times(df, spec.time, spec, out)
    if kind == "categories":
        cat = _text(df[spec.category]).map(clean_label)
        blank = cat == ""
        out.rows(
            list(df.index[blank]),
            f"column '{spec.category}'",
            "blank category; counted as '(blank)'",
            severity="warning",
        )
        fc["category"] = cat.where(~blank, "(blank)")
        fc["weight"] = (
            _numbers(df, spec.count, spec, out, minimum=0, what="a count") if spec.count else 1.0
        )
    elif flags:
        v = _numbers(df, spec.value, spec, out, what="0 or 1")
        va = v.to_numpy()
        badflag = ~np.isnan(va) & (va != 0.0) & (va != 1.0)
        out.rows(
            list(df.index[badflag]), f"column '{spec.value}'", "expected 0 (fine) or 1 (defective)"
        )
        fc["value"] = v
    else:
        if spec.value is not None:
            fc["value"] = _numbers(df, spec.value, spec, out)
        if spec.subgroup is not None:
            fc["subgroup"] = _text(df[spec.subgroup]).map(clean_label)
        if spec.count is not None:
            fc["count"] = _numbers(
                df, spec.count, spec, out, integer=True, minimum=0, what="a count"
            )
        if spec.size is not None:
            fc["size"] = _numbers(
                df, spec.size, spec, out, minimum=0, what="a number of items or an area"
            )
    index = df.index
    del df  # the text of the file is not needed any more: freed before the roll-up's arrays
    out.raise_if_failed()

    frame = pd.DataFrame(fc, index=index)
    gaps = any(_has_gap(v) for v in fc.values())
    del fc  # the table holds its own copy of the columns
    if gaps:
        frame = frame.dropna(how="any")
    if kind == "defectives" and not flags:
        over = frame["count"] > frame["size"]
        out.rows(
            list(frame.index[over]),
            f"column '{spec.count}'",
            f"more defectives than items checked ('{spec.size}')",
        )
        zero = frame["size"] <= 0
        out.rows(
            list(frame.index[zero]),
            f"column '{spec.size}'",
            "no items checked (size 0); the row is left out",
            severity="warning",
        )
        frame = frame[~zero]
    if kind == "defects" and "size" in frame:
        zero = frame["size"] <= 0
        out.rows(
            list(frame.index[zero]),
            f"column '{spec.size}'",
            "area of opportunity is zero; the row is left out",
            severity="warning",
        )
        frame = frame[~zero]
    out.raise_if_failed()
    if len(frame) == 0:
        out.add(
            None,
            "",
            "no usable data rows are left after leaving out blank cells and rows "
            "with nothing checked; see the warnings",
        )
        out.raise_if_failed()

    if "t" in frame:
        order_ok = frame["t"].is_monotonic_increasing
        if not order_ok:
            first_bad = int(np.argmax(np.diff(frame["t"].to_numpy()) < np.timedelta64(0))) + 1
            out.add(
                int(frame.index[first_bad]),
                f"column '{spec.time}'",
                "rows are not in time order; they were sorted by time",
                severity="warning",
            )
            frame = frame.sort_values("t", kind="stable")

    if kind == "categories":
        stage = (
            assign_stage(frame["t"].to_numpy(), spec.baseline, spec.after)
            if "t" in frame
            else np.zeros(len(frame), dtype=int)
        )
        pts = pd.DataFrame(
            {
                "category": frame["category"].to_numpy(),
                "weight": frame["weight"].to_numpy(dtype=float),
                "stage": stage,
            }
        )
        if "t" in frame:
            pts["period"] = frame["t"].to_numpy()
        return MetricData(
            spec,
            kind,
            pts,
            raw_rows=raw_rows,
            problems=[p for p in out.problems if p.severity != "error"],
        )

    subgroups = None
    values = None
    times = frame["t"].to_numpy()
    if kind in ("continuous", "subgroups"):
        values = pd.DataFrame(
            {
                "value": frame["value"].to_numpy(dtype=float),
                "stage": assign_stage(times, spec.baseline, spec.after),
            }
        )
    # the points' columns, in this order: period, the values, n, (subgroup), segment, ...
    cols: dict
    by_period = None
    period_of_points = spec.rollup.period if spec.rollup is not None else None
    if kind == "subgroups":
        cols, subgroups = _subgroups(frame, spec, out)
        if len(subgroups) > DRAWN_POINTS_MAX:
            by_period, cols, subgroups = _by_period(frame, spec, kind, len(subgroups))
            period_of_points = by_period.period
    elif spec.rollup is not None:
        cols = _rollup(frame, spec, kind, flags)
    elif len(frame) > DRAWN_POINTS_MAX:
        by_period, cols, subgroups = _by_period(frame, spec, kind, len(frame))
        period_of_points = by_period.period
        if by_period.how == "subgroups":
            kind = "subgroups"
    else:
        if kind == "continuous":
            dups = frame["t"].duplicated(keep=False)
            out.rows(
                list(frame.index[dups]),
                f"column '{spec.time}'",
                "several rows share the same time; each is plotted as its own point",
                severity="warning",
            )
        cols = {"period": times}
        if kind == "continuous":
            cols["value"] = frame["value"].to_numpy()
        else:
            cols["count"] = frame["count"].to_numpy()
            cols["size"] = frame["size"].to_numpy() if "size" in frame else 1.0
        cols["n"] = 1
        cols["segment"] = 0
    if kind in ("defectives", "defects"):
        cols["value"] = cols["count"] / cols["size"]
    period = np.asarray(cols["period"])
    cols["label"] = (
        _labels(period) if period_of_points is None else _period_labels(period, period_of_points)
    )
    cols["stage"] = assign_stage(period, spec.baseline, spec.after)
    if spec.set_aside:
        cols["aside"] = _set_aside(spec, period, cols["stage"], out)
        if values is not None:
            values["aside"] = _values_aside(
                frame,
                spec,
                cols["aside"],
                period,
                kind == "subgroups" and by_period is None,
                period_of_points is not None,
            )
    pts = pd.DataFrame(cols)
    out.raise_if_failed()
    return MetricData(
        spec,
        kind,
        pts,
        subgroups=subgroups,
        values=values,
        raw_rows=raw_rows,
        problems=[p for p in out.problems if p.severity != "error"],
        by_period=by_period,
    )


def choose_period(t: pd.Series, limit: int = DRAWN_POINTS_MAX) -> tuple[str, np.ndarray, int]:
    """The finest period of :data:`AUTO_PERIODS` with at most *limit* periods holding data, for
    times in order: (period, each time's period start, number of periods). The coarsest when
    none is fine enough."""
    for per in AUTO_PERIODS:
        key = period_start(t, per).to_numpy()
        count = int((key[1:] != key[:-1]).sum()) + 1 if len(key) else 0
        if count <= limit:
            break
    return per, key, count


_PLURAL = {
    "day": "days",
    "week": "weeks",
    "month": "months",
    "quarter": "quarters",
    "year": "years",
}


def _by_period(
    frame: pd.DataFrame, spec: MetricSpec, kind: str, points: int
) -> tuple[ByPeriod, dict, list[np.ndarray] | None]:
    """A series with more points than a chart shows legibly, drawn by period (rows in time
    order, as load_metric leaves them).

    Measured values: each period's values form one subgroup, charted by Xbar-S (or Xbar-R when
    every period holds the same number, 2 to 10) with limits that step with the size. This is
    the second way of forming rational subgroups in Montgomery, Introduction to Statistical
    Quality Control, chapter 5, "Rational subgroups" (from memory): each subgroup
    represents all the units made since the last one. He warns that a shift inside a period
    then widens the within-subgroup spread and so the limits; the pages say how the points were
    formed. With an X-mR chart set in `chart`, each period's mean instead (a continuous metric
    only; the user's subgroups are always pooled). Defectives and defects: the period's totals
    (p and u charts need them: a mean of row proportions would weigh a row of 3 items checked
    like one of 3,000)."""
    per, key, count = choose_period(frame["t"])
    n = len(key)
    starts = np.flatnonzero(np.concatenate([[True], key[1:] != key[:-1]]))
    sizes = np.diff(np.append(starts, n))
    period = key[starts]
    segment = _segments_for_periods(period, per)
    word = "values" if kind == "continuous" else ("subgroups" if kind == "subgroups" else "rows")
    head = (
        f"{points} {word} are more points than a chart shows legibly ({DRAWN_POINTS_MAX} "
        f"at most), so the time-based charts show one point per {per} ({count} "
        f"{_PLURAL[per] if count != 1 else per})"
    )
    groups = None
    if kind == "subgroups" or (kind == "continuous" and spec.chart != "xmr"):
        vals = frame["value"].to_numpy(dtype=float)
        groups = np.split(vals, starts[1:])
        cols = {
            "period": period,
            "value": np.add.reduceat(vals, starts) / sizes,
            "n": sizes,
            "subgroup": _period_labels(period, per).tolist(),
            "segment": segment,
        }
        how = "subgroups"
        pooled = " (the subgroups of a period pooled)" if kind == "subgroups" else ""
        tail = (
            f": each {per}'s values form one subgroup{pooled}, drawn as its mean, with "
            "control limits from the subgroups' standard deviations that step with each "
            "subgroup's size"
        )
    elif kind == "continuous":
        vals = frame["value"].to_numpy(dtype=float)
        cols = {
            "period": period,
            "value": np.add.reduceat(vals, starts) / sizes,
            "n": sizes,
            "segment": segment,
        }
        how = "mean"
        tail = f": the mean of each {per}'s values, as an X-mR chart is set for this metric"
    else:
        cols = {
            "period": period,
            "count": np.add.reduceat(frame["count"].to_numpy(dtype=float), starts),
        }
        how = "totals"
        if "size" in frame:
            cols["size"] = np.add.reduceat(frame["size"].to_numpy(dtype=float), starts)
            what = (
                "defectives over its items checked"
                if kind == "defectives"
                else "defects over its area of opportunity"
            )
        else:  # defects counted per row: each row is one unit inspected
            cols["size"] = sizes.astype(float)
            what = "defects per row (each row one unit inspected)"
        cols["n"] = sizes
        cols["segment"] = segment
        tail = f": the {per}'s {what}"
    reason = (
        f"{head}{tail}. The histogram, box plot and capability use every value; the "
        "full-resolution data stay in the metric's own file."
    )
    if kind in ("defectives", "defects"):
        reason = f"{head}{tail}."
    return ByPeriod(per, points, count, DRAWN_POINTS_MAX, how, reason), cols, groups


def _rollup(frame: pd.DataFrame, spec: MetricSpec, kind: str, flags: bool) -> dict:
    """The points' columns of a rolled-up metric: period, the values, n, segment."""
    assert spec.rollup is not None
    per = spec.rollup.period
    key = period_start(frame["t"], per)
    fast = _rollup_sorted(frame, key.to_numpy(), spec.rollup.statistic, kind, flags)
    if fast is not None:
        fast["segment"] = _segments_for_periods(fast["period"], per)
        return fast
    g = frame.groupby(key.to_numpy(), sort=True)
    if flags:
        pts = pd.DataFrame({"count": g["value"].sum(), "size": g["value"].count()})
    elif kind in ("defectives", "defects"):
        pts = pd.DataFrame({"count": g["count"].sum()})
        pts["size"] = g["size"].sum() if "size" in frame else 1.0
    else:
        stat = spec.rollup.statistic
        pts = pd.DataFrame(
            {"value": getattr(g["value"], stat)() if stat != "count" else g["value"].count()}
        )
    pts["n"] = g.size()
    cols = {"period": pts.index.to_numpy()}
    cols.update((c, pts[c].to_numpy()) for c in pts.columns)
    cols["segment"] = _segments_for_periods(cols["period"], per)
    return cols


def _subgroups(frame: pd.DataFrame, spec: MetricSpec, out: _Rows):
    """Subgroups in order of first appearance, with numpy (a million rows in well under a second).

    Each subgroup's time is its earliest row's time; a subgroup named by a column may gather
    rows that are not next to each other.
    """
    vals = frame["value"].to_numpy(dtype=float)
    times = frame["t"].to_numpy()
    if spec.subgroup is not None:
        codes, uniques = pd.factorize(frame["subgroup"], sort=False)  # first-appearance order
        order = np.argsort(codes, kind="stable")
        sizes = np.bincount(codes, minlength=len(uniques))
        labels = [str(u) for u in uniques]
    else:
        k = spec.subgroup_size or 1
        n = len(frame)
        if n % k:
            out.add(
                None,
                "subgroup_size",
                f"the last subgroup has {n % k} of {k} rows; it is used as a smaller subgroup",
                severity="warning",
            )
        codes = np.arange(n) // k
        order = np.arange(n)
        sizes = np.bincount(codes) if n else np.zeros(0, dtype=int)
        labels = [str(i + 1) for i in range(sizes.size)]
    bounds = np.concatenate([[0], np.cumsum(sizes)])
    sorted_vals = vals[order]
    values = [sorted_vals[a:b] for a, b in zip(bounds[:-1], bounds[1:], strict=True)]
    sums = np.add.reduceat(sorted_vals, bounds[:-1]) if sizes.size else np.zeros(0)
    if spec.subgroup is None and (times[1:] >= times[:-1]).all():
        first = times[bounds[:-1]]  # consecutive rows in time order: the earliest is the first
    else:
        first = (
            pd.Series(times[order])
            .groupby(np.repeat(np.arange(sizes.size), sizes))
            .min()
            .to_numpy()
        )
    cols = {
        "period": first,
        "value": sums / sizes,
        "n": sizes.astype(int),
        "subgroup": labels,
        "segment": 0,
    }
    return cols, values


# ----------------------------------------------------------------------------- measurement studies

# Listed cells of an unbalanced study before the rest are counted.
STUDY_CELLS_LISTED = 5


@dataclass
class StudyData:
    """A measurement study's rows as read: one measurement per row, with the part and the
    appraiser it belongs to and its line in the file. The trials of a part by an appraiser are
    that pair's rows, in the file's order."""

    spec: MetricSpec
    values: np.ndarray
    parts: tuple[str, ...]
    appraisers: tuple[str, ...]
    lines: np.ndarray
    raw_rows: int = 0
    problems: list[Problem] = field(default_factory=list)  # warnings only


def load_study(spec: MetricSpec, settings: PortfolioSettings | None = None) -> StudyData:
    """Read and check a measurement study (type ``measurement-study``). Raises ProjectError
    with every problem: a missing column, a value that is no number, a blank cell, and a study
    that is not crossed and balanced (one part or appraiser, a part an appraiser never measured,
    cells with different numbers of trials, a single trial), each naming the file and the
    row or column."""
    settings = settings or PortfolioSettings()
    out = _Rows(spec)
    needed = [c for c in (spec.part, spec.appraiser, spec.value) if c is not None]
    df, header = _read_table(spec, settings, out, needed)
    if df is None:
        out.raise_if_failed()
    assert df is not None
    return _study_shape(spec, df, header, out)


def load_study_frame(spec: MetricSpec, frame: pd.DataFrame) -> StudyData:
    """:func:`load_study` for data in a DataFrame, its cells read as a CSV file's (see
    :func:`load_frame`). Raises ProjectError with every problem; the frame is not changed."""
    df, out = _frame_table(spec, frame)
    return _study_shape(spec, df, list(df.columns), out)


def _study_shape(spec: MetricSpec, df: pd.DataFrame, header: list[str], out: _Rows) -> StudyData:
    cols = {"part": spec.part, "appraiser": spec.appraiser, "value": spec.value}
    if not all([_require_column(header, k, c, spec, out) for k, c in cols.items()]):
        out.raise_if_failed()
    assert spec.part and spec.appraiser and spec.value
    before = len(out.problems)
    values = _numbers(df, spec.value, spec, out, what="a measurement")
    # _numbers leaves a blank value out with a warning; a study needs every trial measured
    out.problems[before:] = [
        p
        for p in out.problems[before:]
        if not (p.severity == "warning" and p.message.startswith("blank cell"))
    ]
    labels = {}
    for key, col in (("part", spec.part), ("appraiser", spec.appraiser)):
        cells = _text(df[col]).map(clean_label)
        out.rows(
            list(df.index[(cells == "").to_numpy()]),
            f"column '{col}'",
            f"blank cell; every measurement names its {key}",
        )
        labels[key] = cells.to_numpy(dtype=object)
    out.rows(
        list(df.index[(_text(df[spec.value]) == "").to_numpy()]),
        f"column '{spec.value}'",
        "blank cell; a measurement study needs every trial "
        "measured (a missing trial leaves its part and appraiser short of the others)",
    )
    out.raise_if_failed()
    parts, apprs = labels["part"], labels["appraiser"]
    lines = df.index.to_numpy(dtype=np.int64)
    part_names = list(dict.fromkeys(parts.tolist()))
    appr_names = list(dict.fromkeys(apprs.tolist()))
    for key, col, names, least in (
        ("part", spec.part, part_names, "10 are usual"),
        ("appraiser", spec.appraiser, appr_names, "2 or 3 are usual"),
    ):
        if len(names) < 2:
            out.add(
                None,
                f"column '{col}'",
                f"every row names the same {key} ({names[0]!r}); a "
                f"measurement study needs at least two {key}s ({least}: AIAG, from memory)"
                + (
                    "; reproducibility cannot be estimated from one"
                    if key == "appraiser"
                    else "; the parts' spread is what the gauge is judged against"
                ),
            )
    out.raise_if_failed()
    cell_lines: dict[tuple[str, str], list[int]] = {}
    for p, o, line in zip(parts.tolist(), apprs.tolist(), lines.tolist(), strict=True):
        cell_lines.setdefault((p, o), []).append(line)
    empty = [(p, o) for p in part_names for o in appr_names if (p, o) not in cell_lines]
    if empty:
        p, o = empty[0]
        more = (
            f" ({len(empty)} pairs of part and appraiser have no measurement)"
            if len(empty) > 1
            else ""
        )
        out.add(
            None,
            f"column '{spec.appraiser}'",
            f"appraiser {o!r} never measured part {p!r}"
            f"{more}; in a crossed study every appraiser measures every part",
        )
        out.raise_if_failed()
    counts = [len(v) for v in cell_lines.values()]
    usual = max(set(counts), key=lambda n: (counts.count(n), n))  # the most common, then most
    odd = sorted(
        ((k, v) for k, v in cell_lines.items() if len(v) != usual), key=lambda kv: kv[1][0]
    )
    for (p, o), cl in odd[:STUDY_CELLS_LISTED]:
        shown = ", ".join(str(x) for x in cl[:MAX_LISTED_ROWS])
        out.add(
            cl[0],
            f"column '{spec.part}'",
            f"part {p!r} has {plural_rows(len(cl), 'measurement')} by appraiser {o!r} "
            f"({'line' if len(cl) == 1 else 'lines'} {shown}"
            f"{' …' if len(cl) > MAX_LISTED_ROWS else ''}), the other "
            f"pairs {usual}; every part needs the same number of trials by every appraiser",
        )
    if len(odd) > STUDY_CELLS_LISTED:
        out.add(
            None,
            f"column '{spec.part}'",
            f"and {len(odd) - STUDY_CELLS_LISTED} more pairs "
            f"of part and appraiser without {usual} trials",
        )
    out.raise_if_failed()
    if usual < 2:
        out.add(
            None,
            f"column '{spec.value}'",
            "each appraiser measured each part once; "
            "repeatability needs at least two trials of every part by every appraiser",
        )
        out.raise_if_failed()
    return StudyData(
        spec,
        values.to_numpy(dtype=float),
        tuple(parts.tolist()),
        tuple(apprs.tolist()),
        lines,
        len(df),
        list(out.problems),
    )


def plural_rows(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"
