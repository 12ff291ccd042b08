"""Bad-input corpus of workbooks (.xlsx) and Parquet files: each case with its exact printed line.

The cases run like those of tests/test_corpus.py (``steadyline check`` in-process, the printed
lines matched, the exit code, no traceback), and through ``steadyline build`` too in
tests/test_check_build_parity.py.

Decisions recorded here:
- a workbook's problems name the sheet and the row as the workbook shows them
  (``p/data.xlsx:sheet 'Audit' row 12: column 'value': ...``), also when the table does not
  start in cell A1; a problem of the whole sheet names the sheet alone;
- a Parquet file's rows are numbered from 1 (it has no header row): ``p/data.parquet:row 3:``;
  a column of a type that cannot serve its key is refused with one line naming the column
  and its type, before any cell is read;
- a missing sheet, an empty sheet, a sheet with a header only, a workbook protected by a
  password, an old .xls workbook under an .xlsx name, a damaged workbook and a file that is not
  Parquet each give one line, and every other project still builds;
- `sheet` with a file that is not a workbook is an error, a spreadsheet of a kind that is not
  read (.xls, .ods) is named in project.toml, and [metric.csv] delimiter or encoding with a
  workbook or Parquet file is a warning (its cells are read as stored).
"""

from __future__ import annotations

import datetime as dt
import re

import pyarrow as pa
import pytest
from corpus.books import good_rows, parquet, xlsx
from corpus.kit import VALUES, dates, good_csv, meta, portfolio
from test_corpus import Case
from test_corpus import test_case as run_case


def exact(line: str) -> str:
    return "^" + re.escape(line) + "$"


OTHER = {"q/project.toml": meta(), "q/data.csv": good_csv()}  # a healthy second project
BOOK = {"file": "data.xlsx", "sheet": "Audit"}
PQ = {"file": "data.parquet"}


def book_project(book: bytes, metric: dict | None = None, **kw) -> dict:
    """Project 'p' reading data.xlsx (its sheet 'Audit' unless *metric* says otherwise), and
    the healthy project 'q'."""
    return portfolio(
        toml=meta(metric=BOOK | (metric or {}), **kw),
        files={"p/data.csv": None, "p/data.xlsx": book} | OTHER,
    )


def pq_project(data: bytes, metric: dict | None = None, **kw) -> dict:
    return portfolio(
        toml=meta(metric=PQ | (metric or {}), **kw),
        files={"p/data.csv": None, "p/data.parquet": data} | OTHER,
    )


def _bad_value_rows() -> list[list]:
    rows = good_rows()
    rows[11][1] = "abc"  # sheet row 12 (the header is row 1)
    rows[20][1] = "n/a"  # row 21
    return rows


def _number_dates() -> list[list]:
    rows = good_rows()
    rows[4][0] = 46000  # a date's serial number without a date format: row 5
    return rows


def _parquet_good(**over) -> dict:
    cols = {
        "date": pa.array([dt.date.fromisoformat(d) for d in dates(30)]),
        "value": pa.array(VALUES),
    }
    return cols | over


# The marker of an encrypted .xlsx: Excel stores the encrypted workbook as a stream named
# "EncryptedPackage" in an OLE compound file (Microsoft's Office Document Cryptography
# Structure, from memory); the name is in the file's directory in UTF-16.
_OLE = b"\xd0\xcf\x11\xe0\xa1\xb1\x1a\xe1" + b"\x00" * 504
_ENCRYPTED = _OLE + "EncryptedPackage".encode("utf-16-le") + b"\x00" * 512
_OLD_XLS = _OLE + "Workbook".encode("utf-16-le") + b"\x00" * 512

CASES = [
    Case(
        "sheet-bad-values-named-by-sheet-and-row",
        book_project(xlsx({"Audit": _bad_value_rows(), "Notes": [["x"]]})),
        [
            exact(
                "p/data.xlsx:sheet 'Audit' row 12: column 'value': 'abc' is not a number "
                "(rows 12, 21)"
            )
        ],
        1,
        absent=[r"^q/"],
    ),
    Case(
        "sheet-rows-as-the-workbook-numbers-them",  # the table starts at C4
        book_project(xlsx({"Audit": _bad_value_rows()}, at="C4")),
        [
            exact(
                "p/data.xlsx:sheet 'Audit' row 15: column 'value': 'abc' is not a number "
                "(rows 15, 24)"
            )
        ],
        1,
    ),
    Case(
        "sheet-missing",
        book_project(xlsx({"Audit": good_rows(), "Notes": [["x"]]}), {"sheet": "Audt"}),
        [
            exact(
                "p/data.xlsx:sheet 'Audt': no such sheet in the workbook (metric 'm', key "
                "'sheet'); did you mean 'Audit'? its sheets are: 'Audit', 'Notes'"
            )
        ],
        1,
        absent=[r"^q/"],
    ),
    Case(
        "sheet-empty",
        book_project(xlsx({"Audit": [], "Data": good_rows()})),
        [
            exact(
                "p/data.xlsx:sheet 'Audit': the sheet is empty; it needs a header row and data rows"
            )
        ],
        1,
    ),
    Case(
        "sheet-header-only",
        book_project(xlsx({"Audit": [["date", "value"]]})),
        [exact("p/data.xlsx:sheet 'Audit' row 1: the sheet has a header but no data rows")],
        1,
    ),
    Case(
        "sheet-column-not-found",
        book_project(xlsx({"Audit": good_rows(header=("date", "valeur"))})),
        [
            exact(
                "p/data.xlsx:sheet 'Audit' row 1: column 'value': not found (metric 'm', key "
                "'value'); did you mean 'valeur'?"
            )
        ],
        1,
    ),
    Case(
        "sheet-duplicate-header",
        book_project(xlsx({"Audit": good_rows(header=("value", "value"))})),
        [
            exact(
                "p/data.xlsx:sheet 'Audit' row 1: header: the column name(s) 'value' appear "
                "more than once; give each column its own name"
            )
        ],
        1,
    ),
    Case(
        "sheet-date-stored-as-a-number",
        book_project(xlsx({"Audit": _number_dates()})),
        [
            exact(
                "p/data.xlsx:sheet 'Audit' row 5: column 'date': '46000' is a number, not a "
                "date; give the column a date format in the workbook, or write the dates as "
                "text"
            )
        ],
        1,
    ),
    Case(
        "sheet-password-protected",
        book_project(_ENCRYPTED),
        [
            exact(
                "p/data.xlsx: the workbook is protected by a password; save a copy without the "
                "password (File > Info > Protect Workbook) and use that"
            )
        ],
        1,
        absent=[r"^q/"],
    ),
    Case(
        "sheet-old-xls-under-xlsx-name",
        book_project(_OLD_XLS),
        [
            exact(
                "p/data.xlsx: this is an Excel 97-2003 workbook (.xls) under an .xlsx name; "
                "save it as an Excel Workbook (.xlsx)"
            )
        ],
        1,
    ),
    Case(
        "sheet-not-a-workbook",
        book_project(good_csv().encode()),
        [
            exact(
                "p/data.xlsx: the file is not an Excel workbook (.xlsx) or it is damaged; save "
                "it again as .xlsx"
            )
        ],
        1,
    ),
    Case(
        "sheet-damaged-zip",
        book_project(xlsx({"Audit": good_rows()})[:300]),
        [
            exact(
                "p/data.xlsx: the workbook is damaged (it cannot be unpacked); save it again "
                "as .xlsx"
            )
        ],
        1,
        absent=[r"^q/"],
    ),
    Case(
        "sheet-empty-file",
        book_project(b""),
        [exact("p/data.xlsx: the file is empty; save the workbook again")],
        1,
    ),
    Case(
        "sheet-key-with-a-csv-file",
        portfolio(toml=meta(metric={"sheet": "Audit"})),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.sheet: 'sheet' names a sheet of a workbook "
            r"\(\.xlsx\), but 'data\.csv' is not one; remove the key$"
        ],
        1,
    ),
    Case(
        "sheet-old-xls-file-named",
        portfolio(
            toml=meta(metric={"file": "data.xls"}),
            files={"p/data.csv": None, "p/data.xls": _OLD_XLS},
        ),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.file: 'data\.xls' is an Excel 97-2003 workbook "
            r"\(\.xls\), which is not read; save it as an Excel Workbook \(\.xlsx\) or export the "
            r"data as CSV$"
        ],
        1,
    ),
    Case(
        "sheet-csv-delimiter-warned",
        book_project(xlsx({"Audit": good_rows()}), csv={"delimiter": ";"}),
        [
            r"^p/project\.toml:\d+: warning: metric\[1\]\.csv\.delimiter: has no effect on a "
            r"workbook: its cells are read as stored; remove the key$"
        ],
        0,
    ),
    Case(
        "parquet-value-of-wrong-type",
        pq_project(
            parquet(
                _parquet_good(value=pa.array([dt.datetime(2026, 1, 1)] * 30, pa.timestamp("ms")))
            )
        ),
        [
            exact(
                "p/data.parquet: column 'value': holds timestamp[ms] values, not numbers; store "
                "it as integers, floats or text"
            )
        ],
        1,
        absent=[r"^q/"],
    ),
    Case(
        "parquet-time-of-wrong-type",
        pq_project(parquet(_parquet_good(date=pa.array(range(30), pa.int64())))),
        [
            exact(
                "p/data.parquet: column 'date': holds int64 values, not dates or times; store "
                "it as a timestamp, a date or text"
            )
        ],
        1,
    ),
    Case(
        "parquet-nested-column",
        pq_project(parquet(_parquet_good(value=pa.array([[1.0]] * 30)))),
        [
            exact(
                "p/data.parquet: column 'value': holds list<element: double> values, which are "
                "not single cells; store it as text or numbers"
            )
        ],
        1,
    ),
    Case(
        "parquet-bad-text-value-named-by-row",
        pq_project(
            parquet(
                _parquet_good(
                    value=pa.array(
                        [str(v) for v in VALUES[:2]] + ["x"] + [str(v) for v in VALUES[3:]]
                    )
                )
            )
        ),
        [exact("p/data.parquet:row 3: column 'value': 'x' is not a number")],
        1,
    ),
    Case(
        "parquet-not-parquet",
        pq_project(good_csv().encode()),
        [r"^p/data\.parquet: the file is not a Parquet file or it is damaged \(.+\)$"],
        1,
        absent=[r"^q/"],
    ),
    Case(
        "parquet-no-rows",
        pq_project(
            parquet({"date": pa.array([], pa.date32()), "value": pa.array([], pa.float64())})
        ),
        [exact("p/data.parquet: the file has no data rows")],
        1,
    ),
    Case(
        "parquet-column-not-found",
        pq_project(
            parquet({"date": pa.array([dt.date(2026, 1, 5)] * 30), "valeur": pa.array(VALUES)})
        ),
        [
            exact(
                "p/data.parquet: column 'value': not found (metric 'm', key 'value'); did you "
                "mean 'valeur'?"
            )
        ],
        1,
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    run_case(case, tmp_path, capsys)
