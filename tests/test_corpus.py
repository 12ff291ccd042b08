"""A corpus of broken (and awkward but valid) inputs, each with the message it must produce.

Every case writes a tiny portfolio into a temporary folder, runs ``steadyline check`` in-process
and asserts: each expected pattern matches one printed line ``path:line: where: message``
(file name, line and key included where known), the exit code (1 on errors, 0 on warnings
only), and that no traceback or internal error appears. A few cases also read the data back
with the loader to assert the values (decimal commas, encodings, time zones, sorting).

Decisions recorded here:
- slug = folder name, which must be lower-case letters, digits and hyphens. Two projects can
  therefore never share a slug: folders differing only in case ("Wheel-Time" and "wheel-time")
  are two folders, and the one with the invalid slug is reported as an error.
- a metric id used twice in one project is an error on the second one.
- a folder without project.toml is an error naming the folder (it may be a misplaced project).
"""

from __future__ import annotations

import os
import re
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pytest
from corpus.kit import VALUES, dates, good_csv, meta, portfolio, write

from steadyline.cli import main
from steadyline.config import load_portfolio, load_project
from steadyline.loading.metric import load_metric


@dataclass
class Case:
    name: str
    files: dict
    expect: list[str]  # regexes, each must match one printed line (re.search)
    code: int
    setup: Callable[[Path], None] | None = None  # extra preparation (symlinks, absolute paths)
    verify: Callable[[Path], None] | None = None  # extra assertions on the loaded data
    absent: list[str] = field(default_factory=list)  # regexes no line may match


def _rows(pairs, header="date,value", sep=","):
    return header + "\n" + "".join(f"{a}{sep}{b}\n" for a, b in pairs)


def _loaded(root: Path, slug: str = "p", metric: int = 0):
    settings, _ = load_portfolio(root)
    spec, _ = load_project(root / slug, root, settings)
    return load_metric(spec.metrics[metric], settings)


DEFECTIVES = {"type": "defectives", "value": None, "count": "bad", "size": "checked"}
DEFECTS = {"type": "defects", "value": None, "count": "defects"}
CATEGORIES = {"type": "categories", "time": None, "value": None, "category": "reason"}


def _attr_csv(rows, header="date,bad,checked"):
    return (
        header
        + "\n"
        + "".join(
            f"{d},{','.join(str(x) for x in r)}\n"
            for d, r in zip(dates(len(rows)), rows, strict=True)
        )
    )


GOOD_ATTR = [(3, 50), (5, 50), (2, 50), (4, 50), (6, 50), (3, 50), (1, 50), (4, 50)]

# ------------------------------------------------------------------------------- verifications


def _v_decimal_commas(root):
    d = _loaded(root)
    assert d.points["value"].tolist() == [1.5, 1234.5, -0.25, 2.0, 3.75]


def _v_bom(root):
    d = _loaded(root)
    assert d.points["value"].tolist() == VALUES


def _v_latin1(root):
    d = _loaded(root)
    assert sorted(set(d.points["category"])) == ["Büro", "Lager"]


def _v_sorted(root):
    d = _loaded(root)
    assert list(d.points["label"]) == sorted(d.points["label"])
    assert d.points["value"].tolist()[:3] == [1.0, 2.0, 3.0]


def _v_timezone(root):
    d = _loaded(root)
    # 09:00+01:00 and 08:00Z are both 09:00 in Berlin in winter; the plain time is Berlin time.
    assert list(d.points["label"]) == ["2026-01-05 09:00", "2026-01-06 09:00", "2026-01-07 09:00"]


def _v_offsets(root):
    d = _loaded(root)
    # without a timezone, times with offsets are converted to UTC
    assert list(d.points["label"]) == ["2026-01-05 08:00", "2026-01-05 09:30", "2026-01-06 00:00"]


def _v_date_format(root):
    d = _loaded(root)
    assert list(d.points["label"])[:2] == ["2026-01-31", "2026-02-01"]


def _v_blank(root):
    d = _loaded(root)
    assert d.raw_rows == 30 and len(d.points) == 29


def _v_trailing_columns(root):
    assert _loaded(root).points["value"].tolist() == VALUES[:5]


def _v_multiline_ok(root):
    assert _loaded(root).points["value"].tolist() == [1.0, 2.0, 3.0]


# ----------------------------------------------------------------------------------- set-ups


def _link_out(root):
    (root / "secret.csv").write_text(good_csv())
    (root / "p" / "data.csv").unlink()
    os.symlink(root / "secret.csv", root / "p" / "data.csv")


def _link_dir_out(root):
    (root / "elsewhere").mkdir()
    (root / "elsewhere" / "data.csv").write_text(good_csv())
    os.symlink(root / "elsewhere", root / "p" / "sub")


def _absolute(root):
    path = root / "p" / "project.toml"
    target = (root / "p" / "data.csv").resolve()
    path.write_text(meta(metric={"file": str(target)}))


def _notes_link_out(root):
    (root / "outside.md").write_text("# secret\n")
    os.symlink(root / "outside.md", root / "p" / "notes.md")


# -------------------------------------------------------------------------------------- cases

BAD_TOML = meta().replace('phase = "measure"', 'phase = "measure\nproblem2 = 1')

CASES = [
    # --- empty and truncated files
    Case("empty-file", portfolio(data=""), [r"^p/data\.csv: the file is empty"], 1),
    Case("whitespace-only", portfolio(data="\n  \n\n"), [r"^p/data\.csv: the file is empty"], 1),
    Case(
        "header-only",
        portfolio(data="date,value\n"),
        [r"^p/data\.csv:1: the file has a header but no data rows"],
        1,
    ),
    Case(
        "header-and-blank-lines",
        portfolio(data="date,value\n\n\n"),
        [r"^p/data\.csv:1: the file has a header but no data rows"],
        1,
    ),
    # --- delimiters, decimal marks, encodings
    Case(
        "wrong-delimiter",
        portfolio(data=good_csv(sep=";", header="date;value")),
        [
            r"^p/data\.csv:1: column 'date': not found .*header was read as one column "
            r"'date;value'.*delimiter = ';'"
        ],
        1,
    ),
    Case(
        "decimal-commas-declared",
        portfolio(
            toml=meta(csv={"delimiter": ";", "decimal": ","}),
            data=_rows(
                [
                    ("2026-01-05", "1,5"),
                    ("2026-01-06", "1.234,5"),
                    ("2026-01-07", "-0,25"),
                    ("2026-01-08", "2"),
                    ("2026-01-09", '"3,75"'),
                ],
                "date;value",
                ";",
            ),
        ),
        [],
        0,
        verify=_v_decimal_commas,
    ),
    Case(
        "decimal-commas-undeclared",
        portfolio(
            toml=meta(csv={"delimiter": ";"}),
            data=_rows([("2026-01-05", "1,5"), ("2026-01-06", "2,5")], "date;value", ";"),
        ),
        [
            r"^p/data\.csv:2: column 'value': '1,5' is not a number; for decimal commas set "
            r"\[metric\.csv\] decimal = \",\" .*\(lines 2, 3\)"
        ],
        1,
    ),
    Case(
        "point-in-decimal-comma-file",
        portfolio(
            toml=meta(csv={"delimiter": ";", "decimal": ","}),
            data=_rows([("2026-01-05", "1,5"), ("2026-01-06", "2.5")], "date;value", ";"),
        ),
        [
            r"^p/data\.csv:3: column 'value': '2\.5' is not a number; the metric declares "
            r"decimal commas"
        ],
        1,
    ),
    Case("utf8-bom", portfolio(data=b"\xef\xbb\xbf" + good_csv().encode()), [], 0, verify=_v_bom),
    Case(
        "latin1-undeclared",
        portfolio(
            toml=meta(metric=CATEGORIES), data="reason\nLager\nLager\nB\xfcro\n".encode("latin-1")
        ),
        [
            r"^p/data\.csv:4: byte 0xfc is not valid utf-8 text; save the file as UTF-8, or set "
            r"\[metric\.csv\] encoding = \"latin-1\""
        ],
        1,
    ),
    Case(
        "latin1-declared",
        portfolio(
            toml=meta(metric=CATEGORIES, csv={"encoding": "latin-1"}),
            data="reason\nLager\nLager\nB\xfcro\n".encode("latin-1"),
        ),
        [],
        0,
        verify=_v_latin1,
    ),
    Case(
        "binary-junk",
        portfolio(data=bytes(range(256)) * 8),
        [r"^p/data\.csv: the file looks binary, not CSV text"],
        1,
    ),
    Case(
        "binary-no-nul",
        portfolio(data=bytes(range(0x80, 0x100)) * 8),
        [r"^p/data\.csv:1: byte 0x80 is not valid utf-8 text"],
        1,
    ),
    Case(
        "unknown-encoding",
        portfolio(toml=meta(csv={"encoding": "klingon-8"})),
        [r"^p/project\.toml:\d+: metric\[1\]\.csv\.encoding: unknown text encoding 'klingon-8'"],
        1,
    ),
    Case(
        "delimiter-too-long",
        portfolio(toml=meta(csv={"delimiter": ";;"})),
        [r"^p/project\.toml:\d+: metric\[1\]\.csv\.delimiter: expected one character, got ';;'"],
        1,
    ),
    Case(
        "delimiter-equals-decimal",
        portfolio(toml=meta(csv={"decimal": ","})),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.csv: the delimiter and the decimal mark are the "
            r"same"
        ],
        1,
    ),
    # --- row shapes
    Case(
        "ragged-long-row",
        portfolio(data="date,value\n2026-01-05,1\n2026-01-06,2,7\n2026-01-07,3\n"),
        [r"^p/data\.csv:3: this row has 3 fields but the header has 2"],
        1,
    ),
    Case(
        "ragged-short-rows",
        portfolio(data="date,value\n2026-01-05,1\n2026-01-06\n2026-01-07,3\n2026-01-08\n"),
        [r"^p/data\.csv:3: this row has 1 field but the header has 2.*\(lines 3, 5\)"],
        1,
    ),
    Case(
        "unclosed-quote",
        portfolio(data='date,value\n2026-01-05,1\n2026-01-06,"2\n2026-01-07,3\n'),
        [r"^p/data\.csv:3: the file cannot be read as CSV: a quoted cell is never closed"],
        1,
    ),
    Case(
        "multiline-cell-keeps-line-numbers",
        portfolio(
            toml=meta(),
            data='date,value,comment\n2026-01-05,1,"two\nlines"\n2026-01-06,x,\n2026-01-07,3,\n',
        ),
        [r"^p/data\.csv:4: column 'value': 'x' is not a number"],
        1,
    ),
    Case(
        "multiline-cell-valid",
        portfolio(
            data='date,value,comment\n2026-01-05,1,"two\nlines"\n2026-01-06,2,\n'
            '2026-01-07,3,"a ""quoted"" word"\n'
        ),
        [],
        0,
        verify=_v_multiline_ok,
        absent=[r"error"],
    ),
    Case(
        "trailing-empty-columns",
        portfolio(
            data="date,value,,\n"
            + "".join(f"{d},{v},,\n" for d, v in zip(dates(5), VALUES[:5], strict=True))
        ),
        [],
        0,
        verify=_v_trailing_columns,
    ),
    # --- cells
    Case(
        "non-numeric-cells",
        portfolio(
            data=_rows(
                [
                    ("2026-01-05", "1"),
                    ("2026-01-06", "abc"),
                    ("2026-01-07", "3"),
                    ("2026-01-08", "1..2"),
                ]
            )
        ),
        [r"^p/data\.csv:3: column 'value': 'abc' is not a number \(lines 3, 5\)"],
        1,
    ),
    Case(
        "nan-cell",
        portfolio(data=_rows([("2026-01-05", "1"), ("2026-01-06", "NaN")])),
        [r"^p/data\.csv:3: column 'value': 'NaN' is not a number; leave the cell blank"],
        1,
    ),
    Case(
        "inf-cell",
        portfolio(
            data=_rows([("2026-01-05", "1"), ("2026-01-06", "-inf"), ("2026-01-07", "1e999")])
        ),
        [r"^p/data\.csv:3: column 'value': the value is infinite.*\(lines 3, 4\)"],
        1,
    ),
    Case(
        "blank-cell",
        portfolio(data=good_csv().replace(f",{VALUES[4]}\n", ",\n", 1)),
        [r"^p/data\.csv:6: warning: column 'value': blank cell; the row is left out"],
        0,
        verify=_v_blank,
    ),
    Case(
        "all-cells-blank",
        portfolio(data=_rows([("2026-01-05", ""), ("2026-01-06", " ")])),
        [
            r"^p/data\.csv: no usable data rows are left",
            r"^p/data\.csv:2: warning: column 'value': blank cell.*\(lines 2, 3\)",
        ],
        1,
    ),
    Case(
        "blank-date",
        portfolio(data=good_csv().replace("2026-01-07", "", 1)),
        [r"^p/data\.csv:4: warning: column 'date': blank date; the row is left out"],
        0,
    ),
    # --- columns
    Case(
        "missing-column",
        portfolio(data=good_csv(header="date,reading")),
        [
            r"^p/data\.csv:1: column 'value': not found \(metric 'm', key 'value'\); did you mean "
            r"'reading'\?|the file has columns: date, reading"
        ],
        1,
    ),
    Case(
        "misspelled-column",
        portfolio(data=good_csv(header="date,valeu")),
        [
            r"^p/data\.csv:1: column 'value': not found \(metric 'm', key 'value'\); did you mean "
            r"'valeu'\?"
        ],
        1,
    ),
    Case(
        "duplicated-column",
        portfolio(data="date,value,value\n2026-01-05,1,2\n"),
        [r"^p/data\.csv:1: header: the column name\(s\) 'value' appear more than once"],
        1,
    ),
    # --- dates and times
    Case(
        "unparseable-dates",
        portfolio(data=_rows([("2026-01-05", "1"), ("31/01/2026", "2"), ("2026-02-30", "3")])),
        [r"^p/data\.csv:3: column 'date': '31/01/2026' is not an ISO 8601 date.*\(lines 3, 4\)"],
        1,
    ),
    Case(
        "mixed-date-formats",
        portfolio(
            data=_rows([("2026-01-05", "1"), ("2026-01-06T08:30", "2"), ("Jan 7 2026", "3")])
        ),
        [r"^p/data\.csv:4: column 'date': 'Jan 7 2026' is not an ISO 8601 date"],
        1,
    ),
    Case(
        "date-format-declared",
        portfolio(
            toml=meta(csv={"date_format": "%d.%m.%Y"}),
            data=_rows([("31.01.2026", "1"), ("01.02.2026", "2"), ("02.02.2026", "3")]),
        ),
        [],
        0,
        verify=_v_date_format,
    ),
    Case(
        "date-format-mismatch",
        portfolio(
            toml=meta(csv={"date_format": "%d.%m.%Y"}),
            data=_rows([("31.01.2026", "1"), ("2026-02-01", "2")]),
        ),
        [r"^p/data\.csv:3: column 'date': '2026-02-01' is not a date in the format '%d\.%m\.%Y'"],
        1,
    ),
    Case(
        "date-far-out-of-range",
        portfolio(data=_rows([("2026-01-05", "1"), ("9999-12-31", "2"), ("1200-01-01", "3")])),
        [r"^p/data\.csv:3: column 'date': '9999-12-31' is outside the years 1678 to 2261"],
        1,
    ),
    Case(
        "mixed-time-zones",
        portfolio(data=_rows([("2026-01-05T09:00+01:00", "1"), ("2026-01-06T09:00", "2")])),
        [r"^p/data\.csv:2: column 'date': the file mixes times with and without a UTC offset"],
        1,
    ),
    Case(
        "mixed-time-zones-declared",
        portfolio(
            toml=meta(csv={"timezone": "Europe/Berlin"}),
            data=_rows(
                [
                    ("2026-01-05T09:00+01:00", "1"),
                    ("2026-01-06T08:00Z", "2"),
                    ("2026-01-07T09:00", "3"),
                ]
            ),
        ),
        [],
        0,
        verify=_v_timezone,
    ),
    Case(
        "several-offsets",
        portfolio(
            data=_rows(
                [
                    ("2026-01-05T09:00+01:00", "1"),
                    ("2026-01-05T11:30+02:00", "2"),
                    ("2026-01-05T19:00-05:00", "3"),
                ]
            )
        ),
        [],
        0,
        verify=_v_offsets,
    ),
    Case(
        "unknown-timezone",
        portfolio(toml=meta(csv={"timezone": "Mars/Olympus"})),
        [r"^p/project\.toml:\d+: metric\[1\]\.csv\.timezone: unknown time zone 'Mars/Olympus'"],
        1,
    ),
    Case(
        "duplicate-timestamps",
        portfolio(data=good_csv().replace("2026-01-06", "2026-01-05", 1)),
        [
            r"^p/data\.csv:2: warning: column 'date': several rows share the same time.*"
            r"\(lines 2, 3\)"
        ],
        0,
    ),
    Case(
        "rows-out-of-order",
        portfolio(
            data=_rows(
                [("2026-01-05", "1"), ("2026-01-07", "3"), ("2026-01-06", "2")]
                + list(zip(dates(5, "2026-01-08"), VALUES[:5], strict=True))
            )
        ),
        [
            r"^p/data\.csv:4: warning: column 'date': rows are not in time order; they were "
            r"sorted"
        ],
        0,
        verify=_v_sorted,
    ),
    # --- counts and sizes
    Case(
        "negative-counts",
        portfolio(
            toml=meta(metric=DEFECTS), data=_attr_csv([(3,), (-2,), (4,)], header="date,defects")
        ),
        [r"^p/data\.csv:3: column 'defects': -2 is below 0; counts cannot be negative"],
        1,
    ),
    Case(
        "fractional-count",
        portfolio(
            toml=meta(metric=DEFECTS), data=_attr_csv([(3,), (2.5,), (4,)], header="date,defects")
        ),
        [r"^p/data\.csv:3: column 'defects': expected a whole number, got '2\.5'"],
        1,
    ),
    Case(
        "defectives-above-size",
        portfolio(
            toml=meta(metric=DEFECTIVES), data=_attr_csv([(3, 50), (60, 50), (2, 50), (9, 8)])
        ),
        [
            r"^p/data\.csv:3: column 'bad': more defectives than items checked \('checked'\) "
            r"\(lines 3, 5\)"
        ],
        1,
    ),
    Case(
        "zero-subgroup-size",
        portfolio(toml=meta(metric=DEFECTIVES), data=_attr_csv(GOOD_ATTR + [(0, 0)])),
        [
            r"^p/data\.csv:10: warning: column 'checked': no items checked \(size 0\); the row is "
            r"left out"
        ],
        0,
    ),
    Case(
        "missing-subgroup-size",
        portfolio(toml=meta(metric=DEFECTIVES), data=_attr_csv(GOOD_ATTR + [(2, "")])),
        [r"^p/data\.csv:10: warning: column 'checked': blank cell; the row is left out"],
        0,
    ),
    Case(
        "all-sizes-zero",
        portfolio(toml=meta(metric=DEFECTIVES), data=_attr_csv([(0, 0), (0, 0)])),
        [r"^p/data\.csv: no usable data rows are left"],
        1,
    ),
    Case(
        "flags-not-zero-one",
        portfolio(
            toml=meta(
                metric={"type": "defectives", "value": "ok"},
                rollup={"period": "week", "statistic": "proportion"},
            ),
            data=_attr_csv([(1,), (0,), (2,)], header="date,ok"),
        ),
        [r"^p/data\.csv:4: column 'ok': expected 0 \(fine\) or 1 \(defective\)"],
        1,
    ),
    # --- degenerate but valid data: the project builds (what the page says is tested in
    #     the build tests at the end of this file; here: no error, no traceback, statistics that could not be
    #     computed are warnings)
    Case(
        "single-row",
        portfolio(data=_rows([("2026-01-05", "4.2")])),
        [
            r"^p/data\.csv: warning: metric 'm', control chart: an individuals chart requires at "
            r"least two data points, got 1"
        ],
        0,
    ),
    Case(
        "constant-data",
        portfolio(data=good_csv(values=[5.0] * 30)),
        [r"^p/data\.csv: warning: metric 'm', .*standard deviation is zero"],
        0,
    ),
    Case(
        "all-on-median", portfolio(data=good_csv(values=[5.0] * 15 + [4.0, 6.0] * 7 + [5.0])), [], 0
    ),
    Case(
        "too-many-categories",
        portfolio(
            toml=meta(metric=CATEGORIES),
            data="reason\n" + "".join(f"cause {i % 12}\n" for i in range(60)),
        ),
        [],
        0,
    ),
    # --- size limit
    Case(
        "file-over-limit",
        portfolio(files={"portfolio.toml": "max_file_mb = 0.0001\n"}),
        [
            r"^p/data\.csv: the file is \d+ bytes, over the limit of 0\.0001 MB \(max_file_mb in "
            r"portfolio\.toml\)"
        ],
        1,
    ),
    # --- metadata: syntax, types, keys
    Case(
        "toml-syntax-error",
        portfolio(toml=BAD_TOML),
        [r"^p/project\.toml:3: TOML syntax error at column \d+: .*see the project format"],
        1,
    ),
    Case(
        "portfolio-toml-syntax-error",
        portfolio(files={"portfolio.toml": 'title = "x"\nbins = fd\n'}),
        [r"^portfolio\.toml:2: TOML syntax error"],
        1,
    ),
    Case(
        "project-toml-not-utf8",
        portfolio(toml=meta().replace("Tester", "J\xfcrgen").encode("latin-1")),
        [r"^p/project\.toml:2: the file is not UTF-8 text"],
        1,
    ),
    Case(
        "empty-project-toml",
        portfolio(toml=""),
        [
            r"^p/project\.toml: title: required key is missing",
            r"^p/project\.toml: owner: required key is missing",
            r"^p/project\.toml: metric: no \[\[metric\]\] table",
        ],
        1,
    ),
    Case(
        "wrong-type-title",
        portfolio(toml=meta(top={"title": 5})),
        [r"^p/project\.toml:1: title: expected non-empty text, got integer 5"],
        1,
    ),
    Case(
        "wrong-type-spec",
        portfolio(toml=meta(metric={"spec_upper": "high"})),
        [r"^p/project\.toml:\d+: metric\[1\]\.spec_upper: expected a number, got text 'high'"],
        1,
    ),
    Case(
        "wrong-type-tags",
        portfolio(toml=meta(top={"tags": "wheels"})),
        [r"^p/project\.toml:5: tags: expected a list of text, got text 'wheels'"],
        1,
    ),
    Case(
        "wrong-type-metric",
        portfolio(
            toml='title = "t"\nowner = "o"\nphase = "measure"\n'
            'problem = "p"\nmetric = "lead-time"\n'
        ),
        [r"^p/project\.toml:5: metric: expected \[\[metric\]\] tables, got text"],
        1,
    ),
    Case(
        "wrong-type-subgroup-size",
        portfolio(toml=meta(metric={"type": "subgroups", "subgroup_size": 0})),
        [r"^p/project\.toml:\d+: metric\[1\]\.subgroup_size: must be at least 1, got 0"],
        1,
    ),
    Case(
        "bad-bins",
        portfolio(toml=meta(metric={"bins": [3, 2, 5]})),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.bins: expected a list of at least two increasing "
            r"numbers"
        ],
        1,
    ),
    Case(
        "unknown-top-key",
        portfolio(toml=meta(top={"ownr": "x"})),
        [r"^p/project\.toml:5: ownr: unknown key; did you mean 'owner'\?"],
        1,
    ),
    Case(
        "unknown-metric-key",
        portfolio(toml=meta(metric={"valeu": "value"})),
        [r"^p/project\.toml:\d+: metric\[1\]\.valeu: unknown key; did you mean 'value'\?"],
        1,
    ),
    Case(
        "unknown-portfolio-key",
        portfolio(files={"portfolio.toml": "max_file_mbs = 3\n"}),
        [r"^portfolio\.toml:1: max_file_mbs: unknown key; did you mean 'max_file_mb'\?"],
        1,
    ),
    Case(
        "misspelled-type",
        portfolio(toml=meta(metric={"type": "continous"})),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.type: expected one of continuous, .*got "
            r"'continous'; did you mean 'continuous'\?"
        ],
        1,
    ),
    Case(
        "missing-owner",
        portfolio(toml=meta(top={"owner": None})),
        [r"^p/project\.toml: owner: required key is missing: who leads the project"],
        1,
    ),
    Case(
        "no-metric-table",
        portfolio(toml='title = "t"\nowner = "o"\nphase = "measure"\nproblem = "p"\n'),
        [r"^p/project\.toml: metric: no \[\[metric\]\] table"],
        1,
    ),
    Case(
        "missing-value-key",
        portfolio(toml=meta(metric={"value": None})),
        [r"^p/project\.toml:\d+: metric\[1\]\.value: a continuous metric needs 'value'"],
        1,
    ),
    Case(
        "spec-limits-reversed",
        portfolio(toml=meta(metric={"spec_lower": 10.0, "spec_upper": 2.0})),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.spec_lower: spec_lower \(10\) must be below "
            r"spec_upper \(2\)"
        ],
        1,
    ),
    Case(
        "period-reversed",
        portfolio(toml=meta(comparison="baseline = [2026-03-01, 2026-01-01]")),
        [r"^p/project\.toml:\d+: comparison\.baseline: the end 2026-01-01 is before the start"],
        1,
    ),
    Case(
        "after-inside-baseline",
        portfolio(
            toml=meta(comparison="baseline = [2026-01-01, 2026-03-01]\nafter = [2026-02-01]")
        ),
        [
            r"^p/project\.toml:8: comparison\.after: the after period starts 2026-02-01, inside "
            r"the baseline"
        ],
        1,
    ),
    Case(
        "no-baseline-warning",
        portfolio(toml=meta(comparison=None)),
        [r"^p/project\.toml:\d+: warning: metric\[1\]\.baseline: no baseline period"],
        0,
    ),
    Case(
        "phase-dates-out-of-order",
        portfolio(toml=meta(extra="[phase_dates]\ndefine = 2026-02-01\nmeasure = 2026-01-01")),
        [r"^p/project\.toml:\d+: phase_dates\.measure: measure starts 2026-01-01, before define"],
        1,
    ),
    Case(
        "two-headlines",
        portfolio(
            toml=meta(
                metric={"headline": True},
                more_metrics=[
                    {
                        "id": "m2",
                        "name": "Two",
                        "file": "data.csv",
                        "type": "continuous",
                        "time": "date",
                        "value": "value",
                        "better": "lower",
                        "headline": True,
                    }
                ],
            )
        ),
        [r"^p/project\.toml: metric\.headline: more than one metric is marked headline"],
        1,
    ),
    Case(
        "duplicate-metric-id",
        portfolio(
            toml=meta(
                more_metrics=[
                    {
                        "id": "m",
                        "name": "Again",
                        "file": "data.csv",
                        "type": "continuous",
                        "time": "date",
                        "value": "value",
                        "better": "lower",
                    }
                ]
            )
        ),
        [r"^p/project\.toml:\d+: metric\[2\]\.id: the id 'm' is used by another metric"],
        1,
    ),
    Case(
        "invalid-metric-id",
        portfolio(toml=meta(metric={"id": "Lead Time"})),
        [r"^p/project\.toml:\d+: metric\[1\]\.id: 'Lead Time' is not a valid id"],
        1,
    ),
    # --- files outside the project, missing files
    Case(
        "metric-file-missing",
        portfolio(toml=meta(metric={"file": "dta.csv"})),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.file: the file 'dta\.csv' does not exist; did you "
            r"mean 'data\.csv'\?"
        ],
        1,
    ),
    Case(
        "metric-file-dotdot",
        portfolio(
            toml=meta(metric={"file": "../q/data.csv"}),
            files={"q/data.csv": good_csv(), "q/project.toml": meta()},
        ),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.file: '\.\./q/data\.csv' points outside the "
            r"project folder"
        ],
        1,
    ),
    Case(
        "metric-file-absolute",
        portfolio(),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.file: "
            r"'/.*/p/data\.csv' points outside the project"
        ],
        1,
        setup=_absolute,
    ),
    Case(
        "metric-file-symlink-out",
        portfolio(),
        [r"^p/project\.toml:\d+: metric\[1\]\.file: 'data\.csv' points outside the project"],
        1,
        setup=_link_out,
    ),
    Case(
        "metric-file-symlinked-dir-out",
        portfolio(toml=meta(metric={"file": "sub/data.csv"})),
        [r"^p/project\.toml:\d+: metric\[1\]\.file: 'sub/data\.csv' points outside the project"],
        1,
        setup=_link_dir_out,
    ),
    Case(
        "notes-dotdot",
        portfolio(toml=meta(top={"notes": "../notes.md"}), files={"notes.md": "# x\n"}),
        [r"^p/project\.toml:5: notes: '\.\./notes\.md' points outside the project folder"],
        1,
    ),
    Case(
        "notes-symlink-out",
        portfolio(),
        [r"^p/project\.toml: notes: the notes file 'notes\.md' points outside the project"],
        1,
        setup=_notes_link_out,
    ),
    # --- project folders
    Case(
        "folder-without-metadata",
        portfolio(files={"q/data.csv": good_csv()}),
        [r"^q/: no project\.toml in this project folder"],
        1,
    ),
    Case(
        "slugs-differing-in-case",
        portfolio(
            files={
                "Wheel-Time/project.toml": meta(),
                "Wheel-Time/data.csv": good_csv(),
                "wheel-time/project.toml": meta(),
                "wheel-time/data.csv": good_csv(),
            }
        ),
        [r"^Wheel-Time/project\.toml: the folder name 'Wheel-Time' is not a valid project slug"],
        1,
        absent=[r"^wheel-time/"],
    ),
]


def test_corpus_is_large_enough():
    assert len(CASES) >= 50
    assert len({c.name for c in CASES}) == len(CASES)


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    root = write(tmp_path / "projects", case.files)
    if case.setup:
        case.setup(root)
    code = main(["check", str(root)])
    captured = capsys.readouterr()
    lines = captured.out.splitlines()
    text = captured.out + captured.err
    assert "Traceback" not in text and "internal error" not in text, text
    for pattern in case.expect:
        assert any(re.search(pattern, ln) for ln in lines), (
            f"no line matches {pattern!r}; printed:\n{captured.out}"
        )
    for pattern in case.absent:
        assert not any(re.search(pattern, ln) for ln in lines), captured.out
    if not case.expect and case.code == 0:
        assert not any(": warning:" not in ln for ln in lines), captured.out  # no error lines
    assert code == case.code, captured.out + captured.err
    if case.verify:
        case.verify(root)


def test_every_line_has_the_documented_shape(tmp_path, capsys):
    """`path:line: where: message` — path, optional line, then text; no line is empty."""
    pattern = re.compile(r"^[^:\s][^:]*(?::\d+)?: \S.*$")
    for case in CASES:
        root = write(tmp_path / case.name, case.files)
        if case.setup:
            case.setup(root)
        main(["check", str(root)])
        for ln in capsys.readouterr().out.splitlines():
            assert pattern.match(ln), (case.name, ln)


def test_strict_turns_warnings_into_failure(tmp_path, capsys):
    root = write(
        tmp_path / "projects", portfolio(data=good_csv().replace("2026-01-06", "2026-01-05", 1))
    )
    assert main(["check", str(root)]) == 0
    assert main(["check", "--strict", str(root)]) == 1
    capsys.readouterr()


def test_missing_projects_folder_exits_2(tmp_path, capsys):
    assert main(["check", str(tmp_path / "nowhere")]) == 2
    assert "does not exist" in capsys.readouterr().err


def test_decimal_comma_values_are_exact(tmp_path):
    """Decimal commas with thousands points give the same floats as the plain spelling."""
    vals = ["1.234.567,891", "0,1", "-12,5", "7"]
    root = write(
        tmp_path / "projects",
        portfolio(
            toml=meta(csv={"delimiter": ";", "decimal": ","}),
            data=_rows(list(zip(dates(4), vals, strict=True)), "date;value", ";"),
        ),
    )
    got = _loaded(root).points["value"].to_numpy()
    np.testing.assert_array_equal(got, [1234567.891, 0.1, -12.5, 7.0])


# ------------------------------------------------------------ degenerate statistics, built
# Each project is built into a site; the page must state what was done (the chart's notes
# under "Read with care", or the display's problem sentence) and results.json holds no NaN.


def _subgroup_csv(groups):
    ds = dates(len(groups))
    rows = ["date,batch,value"] + [f"{ds[i]},b{i},{v}" for i, g in enumerate(groups) for v in g]
    return "\n".join(rows) + "\n"


DEGENERATE = {
    "zero-sigma": (
        meta(),
        good_csv(values=[5.0] * 30),
        [
            r"The average moving range of the fit for stage 0 is zero, so the limits collapse onto "
            r"the centre line",
            r"30 points lie exactly on the median",
        ],
    ),
    "one-point": (
        meta(),
        "date,value\n2026-01-05,4.2\n",
        [r"control chart: an individuals chart requires at least two data points, got 1"],
    ),
    "xbar-single-value-subgroups": (
        meta(metric={"type": "subgroups", "subgroup": "batch", "chart": "xbar-r"}),
        _subgroup_csv([[1, 2, 3], [2], [3, 4, 2], [5, 4, 4], [3]]),
        [r"Subgroups at positions \d+, \d+ hold a single value, so they have no range"],
    ),
    "xbar-subgroups-of-one": (
        meta(metric={"type": "subgroups", "subgroup_size": 1, "chart": "xbar-s"}),
        good_csv(),
        [r"control chart: the xbar-s chart does not fit single measured values"],
    ),
    "p-chart-n-zero": (
        meta(metric=dict(DEFECTIVES, chart="p")),
        _attr_csv(GOOD_ATTR + [(0, 0)]),
        [
            r"data\.csv:10: warning: column 'checked': no items checked \(size 0\); "
            r"the row is left out"
        ],
    ),
    "laney-p-too-few": (
        meta(metric=dict(DEFECTIVES, chart="laney-p")),
        _attr_csv([(3, 500), (5, 520)]),
        [
            r"A Laney chart needs at least 3 usable points per fit; stage 0 has 2, "
            r"so the classic p chart limits are used"
        ],
    ),
    "laney-u-one-point": (
        meta(metric=dict(DEFECTS, size="area", chart="laney-u")),
        _attr_csv([(3, 5)], header="date,defects,area"),
        [r"A Laney chart needs at least 3 usable points per fit; stage 0 has 1"],
    ),
}


def _page_text(html_text: str) -> str:
    import html as html_mod

    text = re.sub(r"<script.*?</script>", " ", html_text, flags=re.S)
    return re.sub(r"\s+", " ", html_mod.unescape(re.sub(r"<[^>]+>", " ", text)))


def _no_nan_json(text: str):
    import json

    def refuse(name):
        raise AssertionError(f"results.json holds {name}")

    return json.loads(text, parse_constant=refuse)


@pytest.fixture(scope="module")
def degenerate_site(tmp_path_factory):
    root = tmp_path_factory.mktemp("degenerate")
    files = {}
    for slug, (toml, data, _) in DEGENERATE.items():
        files[f"{slug}/project.toml"] = toml
        files[f"{slug}/data.csv"] = data
    write(root / "projects", files)
    code = main(
        ["build", str(root / "projects"), "--out", str(root / "site"), "--jobs", "1", "--quiet"]
    )
    return root / "site", code


def test_degenerate_projects_all_build(degenerate_site, capsys):
    site, code = degenerate_site
    capsys.readouterr()
    assert code == 0  # warnings only: every project is published, none as an error notice
    for slug in DEGENERATE:
        assert (site / "projects" / slug / "results.json").is_file(), slug


@pytest.mark.parametrize("slug", list(DEGENERATE))
def test_degenerate_page_states_the_behaviour(degenerate_site, slug):
    site, _ = degenerate_site
    page = (site / "projects" / slug / "index.html").read_text(encoding="utf-8")
    text = _page_text(page)
    for pattern in DEGENERATE[slug][2]:
        assert re.search(pattern, text), (pattern, text[:3000])
    for word in ("NaN", "nan ", "inf ", "undefined", "None"):
        assert word not in text, (word, slug)
    doc = _no_nan_json((site / "projects" / slug / "results.json").read_text(encoding="utf-8"))
    assert doc["metrics"], slug
    for name in (site / "projects" / slug / "data").glob("*.json"):
        _no_nan_json(name.read_text(encoding="utf-8"))


def test_zero_sigma_chart_in_results(degenerate_site):
    """Zero sigma: the limits equal the centre line (stated), never NaN."""
    site, _ = degenerate_site
    doc = _no_nan_json((site / "projects" / "zero-sigma" / "results.json").read_text())
    chart = doc["metrics"][0]["control_chart"]["chart"]
    assert set(chart["centre"]) == {5.0} and set(chart["upper"]) == {5.0}
    assert set(chart["lower"]) == {5.0}
    assert any("is zero" in n for n in chart["notes"])


def test_single_value_subgroups_are_counted_from_one(degenerate_site):
    site, _ = degenerate_site
    page = (site / "projects" / "xbar-single-value-subgroups" / "index.html").read_text()
    assert "Subgroups at positions 2, 5 hold a single value" in _page_text(page)


# `check` and `build` printing the same problems, in the same order, with the same exit code,
# for every case here: tests/test_check_build_parity.py.
