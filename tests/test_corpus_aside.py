"""Points set aside (``[[metric.set_aside]]``): bad input, each case with its exact printed line,
and what a build of good input writes (results.json, the page, the chart).

The cases run like those of tests/test_corpus.py (``steadyline check`` in-process, the printed
lines matched, the exit code, no traceback); tests/test_check_build_parity.py runs them through
``build`` too. Decisions recorded here (the reasons beside the checks in src/steadyline/config.py
and src/steadyline/loading/stages.py, the rules in the README's project.toml section):
- an entry needs both ``dates`` ([day] or [first, last]) and a non-empty ``reason``;
- only days inside the metric's baseline period can be set aside, never all of it, and no day
  twice (a duplicate entry overlaps its twin);
- an entry on which no point of the data falls is an error naming the days the data run, and so
  is a set of entries that leaves no baseline point;
- a categories metric cannot set points aside (it has no limits or centre line).
"""

from __future__ import annotations

import json
import re

import numpy as np
import pytest
from corpus.kit import VALUES, meta, portfolio, raw, write
from test_corpus import Case
from test_corpus import test_case as run_case

from steadyline.cli import main
from steadyline.config import load_portfolio, load_project
from steadyline.loading.metric import load_metric
from steadyline.stats import control


def exact(line: str) -> str:
    return "^" + re.escape(line) + "$"


B = "baseline = [2026-01-05, 2026-01-24]\nafter = [2026-01-25]"
CATEGORIES = {"type": "categories", "time": None, "value": None, "category": "reason"}


def entry(**keys: str) -> str:
    """One [[metric.set_aside]] table, appended after the (last) metric of meta()."""
    return "[[metric.set_aside]]\n" + "".join(f"{k} = {v}\n" for k, v in keys.items())


def _loaded(root):
    settings, _ = load_portfolio(root)
    spec, _ = load_project(root / "p", root, settings)
    return load_metric(spec.metrics[0], settings)


def _v_inline(root):
    d = _loaded(root)
    # 30 days from 2026-01-05: the 6th and 7th (2026-01-10, -11) are set aside, their values too
    assert np.flatnonzero(d.points["aside"].to_numpy()).tolist() == [5, 6]
    assert np.flatnonzero(d.values["aside"].to_numpy()).tolist() == [5, 6]


CASES = [
    Case(
        "aside-end-before-start",
        portfolio(toml=meta(comparison=B) + entry(dates="[2026-01-10, 2026-01-08]", reason='"x"')),
        [
            exact(
                "p/project.toml:19: metric[1].set_aside[1].dates: the end 2026-01-08 is before "
                "the start 2026-01-10; write [start, end]"
            )
        ],
        1,
    ),
    Case(
        "aside-no-reason",
        portfolio(toml=meta(comparison=B) + entry(dates="[2026-01-10]")),
        [
            exact(
                "p/project.toml:18: metric[1].set_aside[1].reason: required key is missing: why "
                "these points are set aside: the cause found and removed"
            )
        ],
        1,
    ),
    Case(
        "aside-empty-reason",
        portfolio(toml=meta(comparison=B) + entry(dates="[2026-01-10]", reason='" "')),
        [
            exact(
                "p/project.toml:20: metric[1].set_aside[1].reason: expected non-empty text, got "
                "text ' '"
            )
        ],
        1,
    ),
    Case(
        "aside-no-dates",
        portfolio(toml=meta(comparison=B) + entry(reason='"Scale out of calibration"')),
        [
            exact(
                "p/project.toml:18: metric[1].set_aside[1].dates: required key is missing: [day] "
                "or [first day, last day] of the points set aside"
            )
        ],
        1,
    ),
    Case(
        "aside-outside-baseline",
        portfolio(toml=meta(comparison=B) + entry(dates="[2026-01-26]", reason='"x"')),
        [
            exact(
                "p/project.toml:19: metric[1].set_aside[1].dates: 2026-01-26 is not inside the "
                "baseline period (2026-01-05 to 2026-01-24); only baseline points can be set "
                "aside"
            )
        ],
        1,
    ),
    Case(
        "aside-outside-data",
        portfolio(toml=meta() + entry(dates="[2026-03-01, 2026-03-04]", reason='"x"')),
        [
            exact(
                "p/project.toml:18: metric[1].set_aside[1].dates: no point of 'p/data.csv' falls "
                "on 2026-03-01 to 2026-03-04; the data run 2026-01-05 to 2026-02-03"
            )
        ],
        1,
    ),
    Case(
        "aside-overlap",
        portfolio(
            toml=meta(comparison=B)
            + entry(dates="[2026-01-10, 2026-01-12]", reason='"a"')
            + entry(dates="[2026-01-12]", reason='"b"')
        ),
        [
            exact(
                "p/project.toml:22: metric[1].set_aside[2].dates: 2026-01-12 overlaps "
                "metric[1].set_aside[1] (2026-01-10 to 2026-01-12); give each day once: merge "
                "them into one range"
            )
        ],
        1,
    ),
    Case(
        "aside-duplicate",
        portfolio(
            toml=meta(comparison=B)
            + entry(dates="[2026-01-10]", reason='"a"')
            + entry(dates="[2026-01-10]", reason='"a"')
        ),
        [
            exact(
                "p/project.toml:22: metric[1].set_aside[2].dates: 2026-01-10 overlaps "
                "metric[1].set_aside[1] (2026-01-10); give each day once: merge them into one "
                "range"
            )
        ],
        1,
    ),
    Case(
        "aside-whole-baseline",
        portfolio(
            toml=meta(comparison=B)
            + entry(dates="[2026-01-05, 2026-01-14]", reason='"a"')
            + entry(dates="[2026-01-15, 2026-01-24]", reason='"b"')
        ),
        [
            exact(
                "p/project.toml:18: metric[1].set_aside: the days set aside cover the whole "
                "baseline period (2026-01-05 to 2026-01-24); no point would be left to compute "
                "the baseline from"
            )
        ],
        1,
    ),
    Case(
        "aside-every-baseline-point",
        portfolio(
            toml=meta(comparison="baseline = [2026-01-01, 2026-01-24]\nafter = [2026-01-25]")
            + entry(dates="[2026-01-05, 2026-01-24]", reason='"a"')
        ),
        [
            exact(
                "p/project.toml:19: metric[1].set_aside: every point of the baseline of "
                "'p/data.csv' is set aside; no point would be left to compute the centre line "
                "and limits from"
            )
        ],
        1,
    ),
    Case(
        "aside-categories",
        portfolio(
            toml=meta(metric=CATEGORIES) + entry(dates="[2026-01-10]", reason='"a"'),
            data="reason\nLager\nBüro\n",
        ),
        [
            exact(
                "p/project.toml:16: metric[1].set_aside: a categories metric has no control "
                "limits or centre line to set points aside from; remove set_aside"
            )
        ],
        1,
    ),
    Case(
        "aside-unknown-key",
        portfolio(
            toml=meta(comparison=B) + entry(dates="[2026-01-10]", reason='"a"', reasons='"b"')
        ),
        [
            exact(
                "p/project.toml:21: metric[1].set_aside[1].reasons: unknown key; did you mean "
                "'reason'?"
            )
        ],
        1,
    ),
    Case(
        "aside-not-tables",
        portfolio(toml=meta(comparison=B, metric={"set_aside": "2026-01-10"})),
        [
            exact(
                "p/project.toml:18: metric[1].set_aside: expected [[metric.set_aside]] tables, "
                "each with dates and reason, got text '2026-01-10'"
            )
        ],
        1,
    ),
    Case(
        "aside-inline-good",
        portfolio(
            toml=meta(
                comparison=B,
                metric={
                    "set_aside": raw(
                        '[{dates = [2026-01-10, 2026-01-11], reason = "Scale out of calibration"}]'
                    )
                },
            )
        ),
        [],
        0,
        verify=_v_inline,
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    run_case(case, tmp_path, capsys)


# ------------------------------------------------------------------------- what a build writes

# 30 daily values; days 8-10 (2026-01-12 to -14) carry a removed cause, far above the rest
SPIKED = list(VALUES)
SPIKED[7:10] = [71.0, 74.5, 69.8]
REASON = "Scale out of calibration, replaced"


def _build(tmp_path, values, toml):
    from corpus.kit import good_csv

    root = write(tmp_path / "projects", portfolio(toml=toml, data=good_csv(values=values)))
    out = tmp_path / "site"
    assert main(["build", str(root), "--out", str(out), "--quiet"]) == 0
    page = (out / "projects/p/index.html").read_text("utf-8")
    results = json.loads((out / "projects/p/results.json").read_text("utf-8"))
    return out, page, results["metrics"][0]


def test_a_build_leaves_the_days_out_and_says_so(tmp_path):
    toml = meta(comparison=B) + entry(dates="[2026-01-12, 2026-01-14]", reason=json.dumps(REASON))
    out, page, m = _build(tmp_path, SPIKED, toml)
    x = np.array(SPIKED)
    base = np.zeros(30, dtype=bool)
    base[:20] = True  # 2026-01-05 to -24
    aside = np.zeros(30, dtype=bool)
    aside[7:10] = True
    keep = base & ~aside
    # the limits by hand (numpy) on the remaining baseline points; moving ranges of successive
    # points only, none involving a point set aside (Montgomery, phase I: revised trial limits)
    mr = [abs(x[i] - x[i - 1]) for i in range(1, 20) if keep[i] and keep[i - 1]]
    sigma = np.mean(mr) / (2 / np.sqrt(np.pi))
    chart = m["control_chart"]["chart"]
    assert chart["centre"][0] == pytest.approx(x[keep].mean(), rel=1e-9)
    assert chart["upper"][0] == pytest.approx(x[keep].mean() + 3 * sigma, rel=1e-9)
    assert chart["set_aside"] == aside.tolist()
    assert chart["fitted"] == keep.tolist()
    assert m["run_chart"]["median"] == pytest.approx(np.median(x[keep]))
    assert m["histogram"]["n"] == m["box_plot"]["n"] == int(keep.sum())
    assert m["box_plot"]["mean"] == pytest.approx(x[keep].mean(), rel=1e-9)
    assert m["comparison"]["n_baseline"] == int(keep.sum())
    # no signal involves a point set aside, though they lie far beyond the limits
    for s in m["control_chart"]["signals"] + m["run_chart"]["signals"]:
        assert not set(s["indices"]) & {7, 8, 9}, s
    assert m["set_aside"] == {
        "points": 3,
        "baseline_points": 20,
        "share": 0.15,
        "values": 3,
        "labels": ["2026-01-12", "2026-01-13", "2026-01-14"],
        "entries": [{"dates": ["2026-01-12", "2026-01-14"], "reason": REASON, "points": 3}],
        "caution": None,
    }
    # the card lists the days and reason once; the baseline's displays say what they leave out
    sentence = f"2026-01-12 to 2026-01-14, 3 points: {REASON}."
    assert page.count(sentence) == 1
    assert "Without the 3 values of the points set aside" in page
    assert "Median of the baseline as centre line (without the points set aside)" in page
    spec = json.loads((out / "projects/p/data/m-control.vl.json").read_text("utf-8"))
    assert "(20 points, 3 set aside)" in json.dumps(spec["title"])
    text = json.dumps(spec)
    assert '"set aside"' in text and '"aside": true' in text
    csv = (out / "projects/p/data/m-control.csv").read_text("utf-8").splitlines()
    assert csv[0].endswith(",set aside") and csv[8].endswith(",yes") and csv[1].endswith(",no")


def test_without_set_aside_the_chart_spec_names_no_such_mark(tmp_path):
    out, page, m = _build(tmp_path, SPIKED, meta(comparison=B))
    text = (out / "projects/p/data/m-control.vl.json").read_text("utf-8")
    assert "set aside" not in text and "set aside" not in page
    assert "set_aside" not in m and "set_aside" not in m["control_chart"]["chart"]


def test_a_large_share_set_aside_gets_a_caution(tmp_path):
    # 6 of 20 baseline points (30%) is more than the 25% (common practice) the caution is for
    toml = (
        meta(comparison=B)
        + entry(dates="[2026-01-06, 2026-01-08]", reason='"a"')
        + entry(dates="[2026-01-12, 2026-01-14]", reason='"b"')
    )
    _out, page, m = _build(tmp_path, SPIKED, toml)
    caution = m["set_aside"]["caution"]
    assert caution.startswith(
        "6 of the baseline's 20 points are set aside, more than 25% (common practice)"
    )
    assert caution in m["warnings"]
    assert caution.replace("'", "&#39;") in page
    # the same limits as the stats module gives on that mask
    aside = np.zeros(30, dtype=bool)
    aside[[1, 2, 3, 7, 8, 9]] = True
    stage = np.r_[np.zeros(20, dtype=int), np.ones(10, dtype=int)]
    want = control.individuals(SPIKED, stage=stage, set_aside=aside)
    assert m["control_chart"]["chart"]["upper"][0] == pytest.approx(want.upper[0], rel=1e-9)
