"""Bad-input corpus, metadata that cannot make sense: each case with its exact printed line.

The cases run like those of tests/test_corpus.py (``steadyline check`` in-process, the printed
lines matched, the exit code, no traceback), but every expected line here is written out whole,
`path:line: key: message`, so that the line number and the wording are pinned too.

Decisions recorded here (the reasons are beside the checks in src/steadyline/config.py and
src/steadyline/loading/, the rules in the README's project.toml section):
- a project with no metric is an error, at the line that says so when there is one;
- a baseline and an after period that share a day, an open-ended baseline with any after
  period that does not end before it, and an after period wholly before the baseline are
  errors, reported once at [comparison] or at the metric's own key when the metric sets a period;
- a target outside the specification limits is an error (on a limit is fine);
- an encoding name Python cannot decode text with is an error (also codecs such as base64);
- UTF-16 and UTF-32 files are read when they start with a byte-order mark (which decides the
  encoding, whatever is declared) or when the encoding is declared; undeclared and without a
  mark they are refused with the encoding to declare;
- a roll-up statistic that does not fit the metric's type is an error naming the ones that fit;
  every statistic that is accepted does what it says (checked against pandas below).
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest
from corpus.kit import VALUES, dates, good_csv, meta, portfolio, raw, write
from test_corpus import Case
from test_corpus import test_case as run_case

from steadyline.cli import main
from steadyline.config import load_portfolio, load_project
from steadyline.loading.metric import load_metric


def exact(line: str) -> str:
    """A pattern matching exactly this printed line."""
    return "^" + re.escape(line) + "$"


def _loaded(root, slug="p", metric=0):
    settings, _ = load_portfolio(root)
    spec, _ = load_project(root / slug, root, settings)
    return load_metric(spec.metrics[metric], settings)


TOP = 'title = "t"\nowner = "o"\nphase = "measure"\nproblem = "p"\n'
PERIODS = "baseline = [2026-01-01, 2026-03-01]\nafter = [2026-06-01]"

# --------------------------------------------------------------------------- data for roll-ups
# 28 days from Monday 2026-01-05: four ISO weeks of seven rows each.
DAYS = dates(28)
DEFECTS = [3, 0, 2, 5, 1, 4, 2, 6, 0, 1, 3, 2, 2, 7, 1, 0, 0, 2, 3, 1, 4, 5, 2, 2, 1, 0, 3, 3]
AREA = [
    2.0,
    1.5,
    1.0,
    2.5,
    2.0,
    3.0,
    1.0,
    2.0,
    1.0,
    1.0,
    2.0,
    1.5,
    1.5,
    3.0,
    1.0,
    1.0,
    2.0,
    2.0,
    1.5,
    1.0,
    2.5,
    3.0,
    2.0,
    1.0,
    1.0,
    2.0,
    1.0,
    2.5,
]
BAD = [2, 0, 1, 3, 1, 2, 0, 4, 1, 0, 2, 2, 1, 3, 0, 1, 0, 1, 2, 1, 2, 3, 1, 1, 0, 0, 2, 1]
CHECKED = [
    40,
    35,
    40,
    50,
    45,
    40,
    30,
    40,
    40,
    35,
    50,
    40,
    45,
    40,
    30,
    35,
    40,
    40,
    45,
    40,
    50,
    40,
    35,
    40,
    40,
    30,
    45,
    40,
]

ATTR_CSV = "date,defects,area,bad,checked\n" + "".join(
    f"{d},{c},{a},{b},{n}\n"
    for d, c, a, b, n in zip(DAYS, DEFECTS, AREA, BAD, CHECKED, strict=True)
)
CONT_CSV = good_csv(values=VALUES[:28])
DEFECTS_M = {"type": "defects", "value": None, "count": "defects"}
DEFECTIVES_M = {"type": "defectives", "value": None, "count": "bad", "size": "checked"}
WEEK = {"period": "week"}


def _weekly(values, how):
    """The weekly figure pandas gives for each of the four weeks of DAYS (the reference)."""
    s = pd.Series(values, index=pd.to_datetime(DAYS))
    return getattr(s.groupby(s.index.to_period("W-SUN")), how)().to_numpy(dtype=float)


def _v_defects_sum(root):
    # The c chart's count per period: the defects of the week added (pandas groupby sum).
    pts = _loaded(root).points
    np.testing.assert_array_equal(pts["value"], _weekly(DEFECTS, "sum"))
    assert pts["label"].tolist() == ["2026-W02", "2026-W03", "2026-W04", "2026-W05"]


def _v_defects_mean(root):
    # Defects per unit of area of each week: summed counts over summed areas (pandas groupby).
    pts = _loaded(root).points
    np.testing.assert_allclose(
        pts["value"], _weekly(DEFECTS, "sum") / _weekly(AREA, "sum"), rtol=1e-15
    )


def _v_defectives_proportion(root):
    pts = _loaded(root).points
    np.testing.assert_allclose(
        pts["value"], _weekly(BAD, "sum") / _weekly(CHECKED, "sum"), rtol=1e-15
    )


def _v_continuous(stat):
    def verify(root):
        pts = _loaded(root).points
        np.testing.assert_allclose(pts["value"], _weekly(VALUES[:28], stat), rtol=1e-14)

    return verify


# ------------------------------------------------------------------------------- encodings
UTF8 = good_csv()
# An awkward file for the careful reader: quoted cells, Windows line ends, a blank line.
AWKWARD = 'date,value,comment\r\n"2026-01-05",49.6,"a ""quoted"" note"\r\n\r\n' + "".join(
    f"{d},{v},\r\n" for d, v in zip(dates(29, "2026-01-06"), VALUES[1:], strict=True)
)
BOMS = {
    "utf-16-le": b"\xff\xfe",
    "utf-16-be": b"\xfe\xff",
    "utf-32-le": b"\xff\xfe\x00\x00",
    "utf-32-be": b"\x00\x00\xfe\xff",
}


def _v_values(root):
    d = _loaded(root)
    assert d.points["value"].tolist() == VALUES
    assert d.points["label"].tolist() == dates(30)


def _v_categories(root):
    assert sorted(set(_loaded(root).points["category"])) == ["Büro", "Lager", "Straße"]


CATEGORIES = {"type": "categories", "time": None, "value": None, "category": "reason"}
CAT_CSV = "reason\nLager\nBüro\nStraße\nLager\n"

# ----------------------------------------------------------------------------------- cases

CASES = [
    # --- a project with no metrics
    Case(
        "no-metrics-empty-list",
        portfolio(toml=TOP + "metric = []\n"),
        [
            exact(
                "p/project.toml:5: metric: the list of metrics is empty; a project needs at "
                "least one [[metric]] table"
            )
        ],
        1,
    ),
    Case(
        "no-metrics-single-table",
        portfolio(toml=TOP + '\n[metric]\nid = "m"\nname = "M"\nfile = "data.csv"\n'),
        [
            exact(
                "p/project.toml:6: metric: [metric] is a single table; write [[metric]] (double "
                "brackets) before each metric"
            )
        ],
        1,
    ),
    Case(
        "no-metrics-table-only-comparison",
        portfolio(toml=TOP + "\n[comparison]\nbaseline = [2026-01-01, 2026-03-01]\n"),
        [exact("p/project.toml: metric: no [[metric]] table; a project needs at least one metric")],
        1,
    ),
    # --- baseline and after periods that overlap
    Case(
        "overlap-open-baseline",
        portfolio(toml=meta(comparison="baseline = [2026-01-01]\nafter = [2026-03-01]")),
        [
            exact(
                "p/project.toml:7: comparison.baseline: the baseline (2026-01-01 to latest) has "
                "no end, so it overlaps the after period (2026-03-01 to latest); give the "
                "baseline an end before 2026-03-01"
            )
        ],
        1,
    ),
    Case(
        "overlap-open-baseline-closed-after",
        portfolio(
            toml=meta(comparison="baseline = [2026-01-01]\nafter = [2026-03-01, 2026-04-30]")
        ),
        [
            exact(
                "p/project.toml:7: comparison.baseline: the baseline (2026-01-01 to latest) has "
                "no end, so it overlaps the after period (2026-03-01 to 2026-04-30); give the "
                "baseline an end before 2026-03-01"
            )
        ],
        1,
    ),
    Case(
        "overlap-after-on-last-baseline-day",
        portfolio(
            toml=meta(comparison="baseline = [2026-01-01, 2026-03-01]\nafter = [2026-03-01]")
        ),
        [
            exact(
                "p/project.toml:8: comparison.after: the after period starts 2026-03-01, inside "
                "the baseline (2026-01-01 to 2026-03-01); a day belongs to one period only, so "
                "start the after period after 2026-03-01"
            )
        ],
        1,
    ),
    Case(
        "overlap-after-starts-before-baseline",
        portfolio(
            toml=meta(
                comparison="baseline = [2026-02-01, 2026-03-31]\nafter = [2026-01-15, 2026-02-15]"
            )
        ),
        [
            exact(
                "p/project.toml:8: comparison.after: the after period starts 2026-01-15, before "
                "the baseline (2026-02-01 to 2026-03-31) starts; the after period follows the "
                "baseline, so start it after 2026-03-31"
            )
        ],
        1,
    ),
    Case(
        "overlap-both-open-after-first",
        portfolio(toml=meta(comparison="baseline = [2026-01-01]\nafter = [2025-06-01]")),
        [
            exact(
                "p/project.toml:8: comparison.after: the after period starts 2025-06-01, before "
                "the baseline (2026-01-01 to latest) starts; the after period follows the "
                "baseline"
            )
        ],
        1,
    ),
    Case(
        "overlap-same-first-day",
        portfolio(
            toml=meta(
                comparison="baseline = [2026-01-01, 2026-03-01]\nafter = [2026-01-01, 2026-06-30]"
            )
        ),
        [
            exact(
                "p/project.toml:8: comparison.after: the after period starts 2026-01-01, on the "
                "day the baseline (2026-01-01 to 2026-03-01) starts; the after period follows the "
                "baseline, so start it after 2026-03-01"
            )
        ],
        1,
    ),
    Case(
        "after-wholly-before-baseline",
        portfolio(
            toml=meta(
                comparison="baseline = [2026-03-01, 2026-03-31]\nafter = [2026-01-01, 2026-01-31]"
            )
        ),
        [
            exact(
                "p/project.toml:8: comparison.after: the after period (2026-01-01 to "
                "2026-01-31) ends before the baseline (2026-03-01 to 2026-03-31) starts; the "
                "after period follows the baseline"
            )
        ],
        1,
    ),
    Case(
        "overlap-metric-after",
        portfolio(toml=meta(metric={"after": raw("[2026-02-01]")}, comparison=PERIODS)),
        [
            exact(
                "p/project.toml:18: metric[1].after: the after period starts 2026-02-01, inside "
                "the baseline (2026-01-01 to 2026-03-01); a day belongs to one period only, so "
                "start the after period after 2026-03-01"
            )
        ],
        1,
        absent=[r"comparison\."],
    ),
    Case(
        "overlap-metric-open-baseline",
        portfolio(toml=meta(metric={"baseline": raw("[2026-01-01]")}, comparison=PERIODS)),
        [
            exact(
                "p/project.toml:18: metric[1].baseline: the baseline (2026-01-01 to latest) has "
                "no end, so it overlaps the after period (2026-06-01 to latest); give the "
                "baseline an end before 2026-06-01"
            )
        ],
        1,
    ),
    Case(
        "overlap-second-metric",
        portfolio(
            toml=meta(
                comparison=PERIODS,
                more_metrics=[
                    {
                        "id": "m2",
                        "name": "Two",
                        "file": "data.csv",
                        "type": "continuous",
                        "time": "date",
                        "value": "value",
                        "better": "lower",
                        "baseline": raw("[2026-01-01, 2026-07-01]"),
                    }
                ],
            )
        ),
        [
            exact(
                "p/project.toml:27: metric[2].baseline: the after period starts 2026-06-01, "
                "inside the baseline (2026-01-01 to 2026-07-01); a day belongs to one period "
                "only, so start the after period after 2026-07-01"
            )
        ],
        1,
        absent=[r"metric\[1\]"],
    ),
    Case(
        "overlap-inline-comparison",
        portfolio(
            toml=meta(
                top={"comparison": raw("{ baseline = [2026-01-01], after = [2026-03-01] }")},
                comparison=None,
            )
        ),
        [
            exact(
                "p/project.toml:5: comparison.baseline: the baseline (2026-01-01 to latest) has "
                "no end, so it overlaps the after period (2026-03-01 to latest); give the "
                "baseline an end before 2026-03-01"
            )
        ],
        1,
    ),
    Case(
        "overlap-dotted-comparison",
        portfolio(
            toml=meta(
                top={
                    "comparison.baseline": raw("[2026-01-01, 2026-03-01]"),
                    "comparison.after": raw("[2026-02-01]"),
                },
                comparison=None,
            )
        ),
        [
            exact(
                "p/project.toml:6: comparison.after: the after period starts 2026-02-01, inside "
                "the baseline (2026-01-01 to 2026-03-01); a day belongs to one period only, so "
                "start the after period after 2026-03-01"
            )
        ],
        1,
    ),
    Case(
        "periods-next-day-are-fine",
        portfolio(
            toml=meta(comparison="baseline = [2026-01-01, 2026-01-20]\nafter = [2026-01-21]")
        ),
        [],
        0,
        verify=_v_values,
    ),
    # --- a target outside the specification limits
    Case(
        "target-outside-limits",
        portfolio(toml=meta(metric={"spec_lower": 40.0, "spec_upper": 60.0, "target": 65.5})),
        [
            exact(
                "p/project.toml:19: metric[1].target: the target 65.5 is outside the "
                "specification limits (40 to 60); a process on target would be out of "
                "specification: check the target and the limits"
            )
        ],
        1,
    ),
    Case(
        "target-below-lower",
        portfolio(toml=meta(metric={"spec_lower": 0.0, "target": -1.25})),
        [
            exact(
                "p/project.toml:18: metric[1].target: the target -1.25 is below spec_lower (0); "
                "a process on target would be out of specification: check the target and the "
                "limits"
            )
        ],
        1,
    ),
    Case(
        "target-above-upper",
        portfolio(toml=meta(metric={"spec_upper": 72.0, "target": 72.000001, "better": "target"})),
        [
            exact(
                "p/project.toml:18: metric[1].target: the target 72.000001 is above spec_upper "
                "(72); a process on target would be out of specification: check the target and "
                "the limits"
            )
        ],
        1,
    ),
    Case(
        "target-on-a-limit-is-fine",
        portfolio(toml=meta(metric={"spec_lower": 40.0, "spec_upper": 60.0, "target": 40.0})),
        [],
        0,
    ),
    # --- encodings
    Case(
        "encoding-unknown-exact",
        portfolio(toml=meta(csv={"encoding": "klingon-8"})),
        [
            exact(
                "p/project.toml:18: metric[1].csv.encoding: unknown text encoding 'klingon-8'; "
                "try utf-8, utf-16 or latin-1"
            )
        ],
        1,
    ),
    Case(
        "encoding-bytes-codec",
        portfolio(toml=meta(csv={"encoding": "base64"})),
        [
            exact(
                "p/project.toml:18: metric[1].csv.encoding: unknown text encoding 'base64'; "
                "try utf-8, utf-16 or latin-1"
            )
        ],
        1,
    ),
    Case(
        "encoding-text-codec",
        portfolio(toml=meta(csv={"encoding": "rot13"})),
        [
            exact(
                "p/project.toml:18: metric[1].csv.encoding: unknown text encoding 'rot13'; "
                "try utf-8, utf-16 or latin-1"
            )
        ],
        1,
    ),
    Case(
        "encoding-empty",
        portfolio(toml=meta(csv={"delimiter": ",", "encoding": ""})),
        [
            exact(
                "p/project.toml:19: metric[1].csv.encoding: unknown text encoding ''; try "
                "utf-8, utf-16 or latin-1"
            )
        ],
        1,
    ),
    *[
        Case(f"{enc}-bom", portfolio(data=BOMS[enc] + UTF8.encode(enc)), [], 0, verify=_v_values)
        for enc in BOMS
    ],
    *[
        Case(
            f"{enc}-declared",
            portfolio(toml=meta(csv={"encoding": enc}), data=UTF8.encode(enc)),
            [],
            0,
            verify=_v_values,
        )
        for enc in BOMS
    ],
    *[
        Case(
            f"{enc}-declared-without-order",
            portfolio(toml=meta(csv={"encoding": enc[:6]}), data=UTF8.encode(enc)),
            [],
            0,
            verify=_v_values,
        )
        for enc in BOMS
    ],
    Case(
        "utf-16-bom-awkward",
        portfolio(data=b"\xff\xfe" + AWKWARD.encode("utf-16-le")),
        [],
        0,
        verify=_v_values,
    ),
    Case(
        "utf-32-be-declared-awkward",
        portfolio(toml=meta(csv={"encoding": "UTF_32_BE"}), data=AWKWARD.encode("utf-32-be")),
        [],
        0,
        verify=_v_values,
    ),
    Case(
        "utf-16-categories-non-ascii",
        portfolio(
            toml=meta(metric=CATEGORIES),
            data="\ufeff".encode("utf-16-be") + CAT_CSV.encode("utf-16-be"),
        ),
        [],
        0,
        verify=_v_categories,
    ),
    Case(
        "utf-16-bom-wins-over-declared-latin1",
        portfolio(
            toml=meta(csv={"encoding": "latin-1"}), data=b"\xff\xfe" + UTF8.encode("utf-16-le")
        ),
        [],
        0,
        verify=_v_values,
    ),
    Case(
        "utf-16-line-numbers",
        portfolio(data=b"\xfe\xff" + UTF8.replace(",50.3\n", ",5O.3\n").encode("utf-16-be")),
        [exact("p/data.csv:13: column 'value': '5O.3' is not a number")],
        1,
    ),
    Case(
        "utf-16-without-bom-undeclared",
        portfolio(data=UTF8.encode("utf-16-le")),
        [
            exact(
                "p/data.csv: the file holds NUL bytes: it looks like UTF-16-LE text without a "
                'byte-order mark; set [metric.csv] encoding = "utf-16-le"'
            )
        ],
        1,
    ),
    Case(
        "utf-32-without-bom-undeclared",
        portfolio(data=UTF8.encode("utf-32-be")),
        [
            exact(
                "p/data.csv: the file holds NUL bytes: it looks like UTF-32-BE text without a "
                'byte-order mark; set [metric.csv] encoding = "utf-32-be"'
            )
        ],
        1,
    ),
    Case(
        "utf-16-cut-short",
        portfolio(data=b"\xff\xfe" + UTF8.encode("utf-16-le")[:-1]),
        [
            exact(
                "p/data.csv:31: the bytes at offset 982 are not valid UTF-16 (as its byte-order "
                "mark says) text (truncated data); save the file again as UTF-8 or UTF-16"
            )
        ],
        1,
    ),
    Case(
        "utf-16-declared-binary",
        portfolio(
            toml=meta(csv={"encoding": "utf-16-le"}), data=b"\x00" * 64 + UTF8.encode("utf-16-le")
        ),
        [
            exact(
                "p/data.csv: the file looks binary, not CSV text (it holds NUL characters); "
                "export the data as CSV"
            )
        ],
        1,
    ),
    Case(
        "utf-16-declared-junk",
        portfolio(toml=meta(csv={"encoding": "utf-16-le"}), data=bytes(range(256)) * 8),
        # bytes 216 and 217 make U+D9D8, a high surrogate, followed by another (U+DBDA)
        [
            exact(
                "p/data.csv:1: the bytes at offset 216 are not valid utf-16-le text (illegal "
                "UTF-16 surrogate); save the file again as UTF-8 or UTF-16"
            )
        ],
        1,
    ),
    # --- roll-up statistics that do not fit the metric's type
    Case(
        "rollup-mean-of-defects",
        portfolio(toml=meta(metric=DEFECTS_M, rollup=WEEK | {"statistic": "mean"}), data=ATTR_CSV),
        [
            exact(
                'p/project.toml:19: metric[1].rollup.statistic: "mean" does not fit a defects '
                "metric without a 'size' column: its roll-up adds the defects counted in each "
                "period (a mean per row is a rate only with a 'size' column, the area of "
                'opportunity of each row); use statistic = "sum"'
            )
        ],
        1,
    ),
    Case(
        "rollup-sum-of-defects-per-area",
        portfolio(
            toml=meta(metric=DEFECTS_M | {"size": "area"}, rollup=WEEK | {"statistic": "sum"}),
            data=ATTR_CSV,
        ),
        [
            exact(
                'p/project.toml:20: metric[1].rollup.statistic: "sum" does not fit a defects '
                "metric with a 'size' column: its roll-up plots the defects per unit of 'size' "
                "in each period, the summed counts over the summed size; use statistic = "
                '"mean"'
            )
        ],
        1,
    ),
    Case(
        "rollup-median-of-defectives",
        portfolio(
            toml=meta(metric=DEFECTIVES_M, rollup=WEEK | {"statistic": "median"}), data=ATTR_CSV
        ),
        [
            exact(
                'p/project.toml:20: metric[1].rollup.statistic: "median" does not fit a '
                "defectives metric: its roll-up plots its defective items over the items "
                'checked in each period; use statistic = "proportion"'
            )
        ],
        1,
    ),
    Case(
        "rollup-sum-of-flags",
        portfolio(
            toml=meta(
                metric={"type": "defectives", "value": "ok"}, rollup=WEEK | {"statistic": "sum"}
            ),
            data="date,ok\n" + "".join(f"{d},{i % 2}\n" for i, d in enumerate(DAYS)),
        ),
        [
            exact(
                'p/project.toml:19: metric[1].rollup.statistic: "sum" does not fit a '
                "defectives metric: its roll-up plots the share of 1s in its 0/1 'value' column "
                'in each period; use statistic = "proportion"'
            )
        ],
        1,
    ),
    Case(
        "rollup-dotted-keys-in-second-metric",
        portfolio(
            toml=meta(
                rollup=WEEK | {"statistic": "mean"},
                more_metrics=[
                    DEFECTS_M
                    | {
                        "id": "m2",
                        "name": "Two",
                        "file": "data.csv",
                        "time": "date",
                        "better": "lower",
                        "rollup.period": "week",
                        "rollup.statistic": "mean",
                    }
                ],
            ),
            data=ATTR_CSV,
        ),
        [
            exact(
                'p/project.toml:30: metric[2].rollup.statistic: "mean" does not fit a defects '
                "metric without a 'size' column: its roll-up adds the defects counted in each "
                "period (a mean per row is a rate only with a 'size' column, the area of "
                'opportunity of each row); use statistic = "sum"'
            )
        ],
        1,
        absent=[r"metric\[1\]"],
    ),
    Case(
        "rollup-inline-before-a-later-header",
        portfolio(
            toml=meta(
                metric=DEFECTS_M | {"rollup": raw('{ period = "week", statistic = "median" }')},
                more_metrics=[
                    {
                        "id": "m2",
                        "name": "Two",
                        "file": "data.csv",
                        "type": "continuous",
                        "time": "date",
                        "value": "defects",
                        "better": "lower",
                    }
                ],
            )
            + '[metric.rollup]\nperiod = "week"\nstatistic = "median"\n',
            data=ATTR_CSV,
        ),
        [
            exact(
                'p/project.toml:17: metric[1].rollup.statistic: "median" does not fit a '
                "defects metric without a 'size' column: its roll-up adds the defects counted in "
                "each period (a mean per row is a rate only with a 'size' column, the area of "
                'opportunity of each row); use statistic = "sum"'
            )
        ],
        1,
        absent=[r"metric\[2\]"],
    ),
    Case(
        "encoding-inline-table",
        portfolio(toml=meta(metric={"csv": raw('{ delimiter = ",", encoding = "utf-61" }')})),
        [
            exact(
                "p/project.toml:17: metric[1].csv.encoding: unknown text encoding 'utf-61'; try "
                "utf-8, utf-16 or latin-1"
            )
        ],
        1,
    ),
    Case(
        "rollup-defects-sum",
        portfolio(toml=meta(metric=DEFECTS_M, rollup=WEEK | {"statistic": "sum"}), data=ATTR_CSV),
        [],
        0,
        verify=_v_defects_sum,
    ),
    Case(
        "rollup-defects-mean-per-area",
        portfolio(
            toml=meta(metric=DEFECTS_M | {"size": "area"}, rollup=WEEK | {"statistic": "mean"}),
            data=ATTR_CSV,
        ),
        [],
        0,
        verify=_v_defects_mean,
    ),
    Case(
        "rollup-defectives-proportion",
        portfolio(
            toml=meta(metric=DEFECTIVES_M, rollup=WEEK | {"statistic": "proportion"}), data=ATTR_CSV
        ),
        [],
        0,
        verify=_v_defectives_proportion,
    ),
    *[
        Case(
            f"rollup-continuous-{stat}",
            portfolio(toml=meta(rollup=WEEK | {"statistic": stat}), data=CONT_CSV),
            [],
            0,
            verify=_v_continuous(stat),
        )
        for stat in ("mean", "median", "sum", "count")
    ],
]


def test_cases_are_named_once_and_new():
    from test_corpus import CASES as OLD

    names = [c.name for c in CASES]
    assert len(set(names)) == len(names)
    assert not set(names) & {c.name for c in OLD}


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    run_case(case, tmp_path, capsys)


def test_every_line_has_the_documented_shape(tmp_path, capsys):
    pattern = re.compile(r"^[^:\s][^:]*(?::\d+)?: \S.*$")
    for case in CASES:
        root = write(tmp_path / case.name, case.files)
        main(["check", str(root)])
        for ln in capsys.readouterr().out.splitlines():
            assert pattern.match(ln), (case.name, ln)


def test_check_reports_what_a_build_reports(tmp_path, capsys):
    from steadyline.pipeline.build import BuildOptions, build, check

    for case in CASES:
        if case.code == 0:
            continue  # the healthy ones: building them draws every chart, which is slow
        root = write(tmp_path / case.name / "projects", case.files)
        found = check(root, jobs=1)
        report = build(BuildOptions(root, tmp_path / case.name / "site", jobs=1))
        assert [p.format() for p in found] == [p.format() for p in report.problems], case.name
    capsys.readouterr()


# ------------------------------------------------------------ the loader, encoding by encoding


def _points(tmp_path, data: bytes, csv: dict | None = None):
    root = write(tmp_path / "projects", portfolio(toml=meta(csv=csv), data=data))
    return _loaded(root).points


WIDE = ["utf-16-le", "utf-16-be", "utf-32-le", "utf-32-be"]


@pytest.mark.parametrize("text", [UTF8, AWKWARD], ids=["plain", "awkward"])
@pytest.mark.parametrize("enc", WIDE)
@pytest.mark.parametrize("how", ["bom", "declared", "declared-without-order", "bom-and-declared"])
def test_wide_files_read_the_same_as_utf8(tmp_path, text, enc, how):
    """UTF-16 and UTF-32 files give the very points of the same text saved as UTF-8."""
    expected = _points(tmp_path / "utf8", text.encode("utf-8"))
    data = text.encode(enc)
    csv = None
    if how in ("bom", "bom-and-declared"):
        data = BOMS[enc] + data
    if how == "declared":
        csv = {"encoding": enc}
    elif how in ("declared-without-order", "bom-and-declared"):
        csv = {"encoding": enc[:6]}  # "utf-16" or "utf-32"
    got = _points(tmp_path / "wide", data, csv)
    pd.testing.assert_frame_equal(got, expected)


def test_declared_byte_order_is_not_the_machines(tmp_path):
    """A big-endian file declared "utf-16" reads the same on any machine (Python's own codec
    would take a file without a mark in the machine's byte order)."""
    got = _points(tmp_path, UTF8.encode("utf-16-be"), {"encoding": "utf-16"})
    assert got["value"].tolist() == VALUES


def test_readme_table_of_rollup_statistics_is_the_rule():
    """The README's table of roll-up statistics per type is the one the metadata check applies."""
    from pathlib import Path

    from steadyline.config import MetricSpec, rollup_statistics

    readme = (Path(__file__).resolve().parent.parent / "README.md").read_text(encoding="utf-8")
    rows = re.findall(
        r"^  \| (continuous|defectives|defects without `size`|defects with `size`) "
        r"\| ([^|]+) \|",
        readme,
        flags=re.M,
    )
    documented: dict[str, set[str]] = {}
    for kind, stats in rows:
        documented.setdefault(kind, set()).update(re.findall(r"`(\w+)`", stats))
    base = {"id": "m", "name": "M", "file": Path("x.csv"), "file_rel": "x.csv", "better": "lower"}
    specs = {
        "continuous": MetricSpec(type="continuous", **base),
        "defectives": MetricSpec(type="defectives", count="c", size="n", **base),
        "defects without `size`": MetricSpec(type="defects", count="c", **base),
        "defects with `size`": MetricSpec(type="defects", count="c", size="a", **base),
    }
    assert documented == {k: set(rollup_statistics(m)[0]) for k, m in specs.items()}
    flags = MetricSpec(type="defectives", value="v", **base)
    assert rollup_statistics(flags)[0] == ("proportion",)


def test_period_clash_on_every_arrangement_of_two_periods():
    """Over every arrangement of two periods on a 6-day grid (open ends included): accepted
    exactly when the after period starts after the baseline ends; every period sharing a day
    with the baseline is refused; the advice never names a date the advice itself rules out."""
    import datetime as dt
    import itertools

    from steadyline.config import Period, period_clash

    days = [dt.date(2026, 1, d) for d in range(1, 7)]
    periods = [Period(a, b) for a in days for b in [*days, None] if b is None or b >= a]
    last = days[-1]
    for base, after in itertools.product(periods, periods):
        clash = period_clash(base, after)
        accepted = base.end is not None and after.start > base.end
        assert (clash is None) == accepted, (base, after, clash)
        shared = any(
            base.start <= d <= (base.end or last) and after.start <= d <= (after.end or last)
            for d in days
        )
        assert not (shared and clash is None)
        if clash and clash[0] == "baseline":  # "give the baseline an end before <after start>"
            assert base.end is None and after.start > base.start
