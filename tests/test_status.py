"""The project status: the rules of steadyline.status.judge, staleness on the index, the build
date, and the index's CSV cells."""

from __future__ import annotations

import datetime as dt
import sys

import pytest

from steadyline import status as st
from steadyline.status import HeadlineFacts, Status, Verdict, judge, on_index

IMPROVED = dict(
    metric_id="m",
    metric_name="Lead time",
    has_after=True,
    compared=True,
    improved=True,
    p_value=0.001,
    p_text="p = 0.001",
    change=-5.0,
    percent_change=-25.0,
    after_points=20,
    own_limits=True,
    after_signals=0,
)


def facts(**kw) -> HeadlineFacts:
    return HeadlineFacts(**(IMPROVED | kw))


def test_gain_holds_when_better_unlikely_chance_and_stable_on_its_own_limits():
    v = judge(facts())
    assert v.status is Status.GAIN_HOLDS
    assert v.reason == (
        "Lead time down 25%, better, unlikely to be chance (p = 0.001); the after "
        "period is stable on its own control limits (20 points)"
    )
    assert v.note == "the after period is stable on its own control limits (20 points)"


@pytest.mark.parametrize(
    "kw, words",
    [
        (dict(after_signals=3), "3 signals on the after period's own control limits"),
        (dict(after_signals=1), "1 signal on the after period's own control limits"),
        (dict(own_limits=False, after_points=7), "the after period has 7 points; 12 are needed"),
        (dict(control=False), "no control chart"),
    ],
)
def test_a_gain_is_not_yet_stable_until_the_after_period_is_shown_stable(kw, words):
    v = judge(facts(**kw))
    assert v.status is Status.NOT_STABLE
    assert words in v.reason and words in v.note


def test_worse_and_no_clear_change_by_direction_and_p_value():
    worse = judge(facts(improved=False, change=5.0, percent_change=25.0))
    assert worse.status is Status.WORSE
    assert worse.reason == "Lead time up 25%, worse, unlikely to be chance (p = 0.001)"
    # stability does not rescue a change for the worse
    assert judge(facts(improved=False, after_signals=0)).status is Status.WORSE
    for improved in (True, False):
        v = judge(facts(improved=improved, p_value=0.2, p_text="p = 0.20"))
        assert v.status is Status.NO_CLEAR_CHANGE
        assert v.reason.endswith("but this could be chance (p = 0.20)")
    # the 5% level itself is not below it
    assert judge(facts(p_value=st.ALPHA)).status is Status.NO_CLEAR_CHANGE
    assert judge(facts(p_value=0.0499)).status is Status.GAIN_HOLDS


def test_the_level_is_the_one_the_pages_use():
    from steadyline.stats.compare import ALPHA

    assert st.ALPHA == ALPHA


def test_baseline_only_and_not_judged():
    assert judge(facts(has_after=False)).status is Status.BASELINE_ONLY
    cats = judge(facts(categories=True, compared=False))
    assert cats.status is Status.NOT_JUDGED and "category" in cats.reason
    failed = judge(facts(compared=False, failure="each period needs at least one count"))
    assert failed.status is Status.NOT_JUDGED
    assert failed.reason.endswith("could not be made: each period needs at least one count")
    no_target = judge(facts(improved=None))
    assert no_target.status is Status.NOT_JUDGED and "no target" in no_target.reason
    # no test possible: the same values throughout, or different constants
    assert judge(facts(p_value=None, change=0.0)).status is Status.NO_CLEAR_CHANGE
    assert judge(facts(p_value=None, change=2.0)).status is Status.NOT_JUDGED


def test_one_vocabulary():
    assert set(st.LABELS) == set(Status) == set(st.MEANINGS)
    assert len(set(st.LABELS.values())) == len(Status)
    assert [s.rank for s in Status] == list(range(len(Status)))
    assert Verdict(Status.WORSE, "r", "n").as_json() == {
        "code": "worse",
        "label": "worse",
        "reason": "r",
        "note": "n",
    }


def test_staleness_is_judged_on_the_index_against_the_build_date():
    v = judge(facts())
    today = dt.date(2026, 11, 23)
    assert on_index(v, "2026-08-25", today, 90) is v  # 90 days: not more than 90
    stale = on_index(v, "2026-08-24", today, 90)  # 91 days
    assert stale.status is Status.STALE
    assert stale.reason == (
        "no data after 2026-08-24, 91 days before this build on 2026-11-23 "
        "(more than 90); up to then: gain holds"
    )
    assert on_index(v, "", today, 90) is v  # no data: nothing to be stale


def test_a_headline_metric_not_built_is_not_built_whatever_else_holds():
    v = judge(facts(built=False, problem_count=2))  # the other facts are never looked at
    assert v.status is Status.NOT_BUILT
    assert v.note == (
        "the headline metric could not be built: 2 problems in its data; the other "
        "metrics are published"
    )
    assert v.reason == "Lead time: " + v.note
    assert judge(facts(built=False, problem_count=1)).note.startswith(
        "the headline metric could not be built: 1 problem in its data"
    )
    # what to fix comes first: never turned into "data stale"
    assert on_index(v, "2026-01-01", dt.date(2026, 11, 23), 90) is v
    assert st.look_at(Status.NOT_BUILT, "m", False) == ("what to fix", "index.html#metric-m")
    assert st.look_at(Status.NOT_BUILT, "", False) == ("what to fix", "index.html")


def test_build_date_honours_source_date_epoch():
    assert st.build_date({"SOURCE_DATE_EPOCH": "1795392000"}) == dt.date(2026, 11, 23)
    assert st.build_date({"SOURCE_DATE_EPOCH": "0"}) == dt.date(1970, 1, 1)
    today = dt.datetime.now(dt.UTC).date()
    assert st.build_date({}) in (today, today + dt.timedelta(days=1))
    assert st.build_date({"SOURCE_DATE_EPOCH": ""}) in (today, today + dt.timedelta(days=1))
    for bad in ("yesterday", "-5", "1.5e9", "99999999999999999999"):
        with pytest.raises(ValueError, match="SOURCE_DATE_EPOCH"):
            st.build_date({"SOURCE_DATE_EPOCH": bad})


def test_look_at_points_to_the_page_that_answers():
    assert st.look_at(Status.GAIN_HOLDS, "m", True) == (
        "the control chart by period",
        "history.html#history-m-staged-control",
    )
    assert st.look_at(Status.NOT_STABLE, "m", False)[1] == "history.html#metric-m"
    assert st.look_at(Status.WORSE, "m", True)[1] == "history.html#metric-m"
    assert st.look_at(Status.STALE, "m", True)[1] == "index.html#prov-h"
    assert st.look_at(Status.BASELINE_ONLY, "m", False)[1] == "index.html#metric-m"


def test_the_status_module_loads_nothing_heavy():
    import subprocess

    # of the statistics only their codes (stats.codes, which the vocabulary hands on), and the
    # package's own light __init__, whose names load on first use
    code = (
        "import sys, steadyline.status, steadyline.site.index; "
        "print(sorted(m for m in sys.modules if m.split('.')[0] in ('pandas', 'scipy') or "
        "m.startswith(('steadyline.stats', 'steadyline.charts'))))"
    )
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "['steadyline.stats', 'steadyline.stats.codes']"


@pytest.mark.parametrize(
    "text",
    [
        "plain",
        "=SUM(A1)",
        "+1",
        "-2.5",
        "@x",
        "a,b",
        'say "hi"',
        "two\nlines",
        "-",
        "Mateo Fernández",
    ],
)
def test_index_csv_cells_agree_with_the_chart_downloads(text):
    from steadyline.site.index import csv_text
    from steadyline.site.tables import _csv_field, safe_cell

    assert csv_text(text) == _csv_field(safe_cell(text))
