"""The collector of one data file's problems: each names the file and the line (a CSV file),
the sheet and row (a workbook) or the row (a Parquet file), and the column.

Every reader and check of the package adds to one collector and raises once, so that a user
sees all the problems of a file together."""

from __future__ import annotations

from ..config import MetricSpec
from ..errors import Problem, ProjectError

MAX_LISTED_ROWS = 5


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
