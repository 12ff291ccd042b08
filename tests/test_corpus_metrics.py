"""A metric whose data have errors costs only that metric.

The cases (``CASES``, run like those of test_corpus.py by ``check``, and through ``build`` too by
test_check_build_parity.py) are projects of two metrics with a bad cell in one or both; the
tests below build a portfolio of such projects and look at what is published.

Decisions recorded here:
- when the metadata loads, each metric is read and analysed on its own: a metric whose data
  have errors gets a section in its place on the project page (its name and its problems as
  printed, no charts), is listed in results.json with its problems, and is left out of the
  history page, which names it; the project's other metrics are published as usual;
- the project still has errors: `build` and `check` print the same lines and exit 1, on a
  rebuild that reuses the project too;
- a headline metric that could not be built makes the project's status "not built" (on its
  card, in results.json and in the CSV), however old the other metrics' data;
- a project none of whose metrics can be read, or whose metadata has errors, is a notice page;
  it is named by its title, and counted in its phase on the index, when a partial read of its
  project.toml finds them (else by its folder, in no phase).
"""

from __future__ import annotations

import csv
import json
import re
from pathlib import Path

import pytest
from corpus.kit import good_csv, meta, write
from test_corpus import Case
from test_corpus_files import assert_case, prepare, run

from steadyline.cli import main

PERIODS = "baseline = [2026-01-01, 2026-01-19]\nafter = [2026-01-20]"
SECOND = {
    "id": "second",
    "name": "Second metric",
    "file": "second.csv",
    "type": "continuous",
    "time": "date",
    "value": "value",
    "better": "lower",
}
NOT_A_NUMBER = "'n/a' is not a number; leave the cell blank for a missing value"


def bad_csv(line: int = 5, cell: str = "n/a") -> str:
    """The good data with one value replaced on the given physical line."""
    lines = good_csv().splitlines()
    lines[line - 1] = lines[line - 1].rsplit(",", 1)[0] + "," + cell
    return "\n".join(lines) + "\n"


def two_metrics(
    *,
    headline_second: bool = False,
    top: dict | None = None,
    first: str | None = None,
    second: str | None = None,
) -> dict:
    """Project 'p' with metric 'm' (data.csv) and 'second' (second.csv)."""
    more = dict(SECOND) | ({"headline": True} if headline_second else {})
    return {
        "p/project.toml": meta(top=top, comparison=PERIODS, more_metrics=[more]),
        "p/data.csv": first or good_csv(),
        "p/second.csv": second or good_csv(),
    }


CASES = [
    Case(
        "metric-bad-cell-beside-a-good-metric",
        two_metrics(second=bad_csv()),
        [r"^p/second\.csv:5: column 'value': " + re.escape(NOT_A_NUMBER) + "$"],
        1,
    ),
    Case(
        "headline-metric-bad-cell",
        two_metrics(headline_second=True, second=bad_csv(7)),
        [r"^p/second\.csv:7: column 'value': " + re.escape(NOT_A_NUMBER) + "$"],
        1,
    ),
    Case("first-metric-bad-cell", two_metrics(first=bad_csv(3, "12,5")), [r"^p/data\.csv:3: "], 1),
    Case(
        "every-metric-bad",
        two_metrics(first=bad_csv(4), second=bad_csv(6)),
        [r"^p/data\.csv:4: column 'value': ", r"^p/second\.csv:6: column 'value': "],
        1,
    ),
    Case(
        "metric-missing-column-beside-a-good-metric",
        two_metrics(second="date,amount\n2026-01-05,1\n"),
        [r"^p/second\.csv:1: column 'value': "],
        1,
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    root = prepare(case, tmp_path / "projects")
    code, lines, text = run(case, ["check", "--quiet", str(root)], capsys)
    assert_case(case, code, lines, text)


# ----------------------------------------------------------------------------- what is published

BAD_TOML = meta(top={"title": "Readable title", "phase": "improve"}, metric={"type": "continous"})


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    """A portfolio of: 'p' (second metric broken), 'h' (headline metric broken, its other
    metric's data old enough to be stale), 'all' (every metric broken), 't' (metadata with
    errors but a readable title and phase), 's' (a TOML syntax error), 'g' (healthy)."""
    root = tmp_path_factory.mktemp("broken-metric") / "projects"
    files = {f"p/{k[2:]}": v for k, v in two_metrics(second=bad_csv()).items()}
    files |= {
        f"h/{k[2:]}": v
        for k, v in two_metrics(
            headline_second=True,
            second=bad_csv(7),
            top={"title": "Headline broken", "phase": "control"},
        ).items()
    }
    files |= {
        f"all/{k[2:]}": v
        for k, v in two_metrics(
            first=bad_csv(4),
            second=bad_csv(6),
            top={"title": "Nothing readable", "phase": "analyze"},
        ).items()
    }
    files |= {
        "t/project.toml": BAD_TOML,
        "t/data.csv": good_csv(),
        "s/project.toml": 'title = "Never seen"\nphase = improve\n',
        "g/project.toml": meta(top={"title": "Healthy"}),
        "g/data.csv": good_csv(),
    }
    write(root, files)
    out = root.parent / "site"
    return root, out


@pytest.fixture(scope="module")
def built(site):
    root, out = site
    import io
    from contextlib import redirect_stderr

    err = io.StringIO()
    with redirect_stderr(err):
        code = main(["build", str(root), "--out", str(out), "--quiet", "--jobs", "1"])
    return code, err.getvalue()


def _page(out: Path, slug: str, name: str = "index.html") -> str:
    return (out / "projects" / slug / name).read_text("utf-8")


def test_the_good_metric_is_published_and_the_bad_one_shows_its_problem_in_place(site, built):
    _, out = site
    code, err = built
    assert code == 1  # the project still has errors
    assert f"p/second.csv:5: column 'value': {NOT_A_NUMBER}" in err
    page = _page(out, "p")
    good = page.index('id="metric-m"')
    bad = page.index('<section class="metric metric-broken" id="metric-second"')
    assert good < bad  # in the metadata's order
    good_section = page[good:bad]
    assert 'data-display="run"' in good_section and 'data-display="control"' in good_section
    bad_section = page[bad : page.index("</section>", bad)]
    assert "Second metric" in bad_section and "Not built" in bad_section
    assert (
        "<code>p/second.csv:5: column &#39;value&#39;: &#39;n/a&#39; is not a number; "
        "leave the cell blank for a missing value</code>"
    ) in bad_section
    assert "data-display" not in bad_section  # no charts
    assert not any(f.name.startswith("second-") for f in (out / "projects/p/data").iterdir())
    assert (out / "projects/p/data/m-control.csv").is_file()


def test_results_json_lists_the_metric_with_its_problems(site, built):
    _, out = site
    doc = json.loads(_page(out, "p", "results.json"))
    assert doc["schema"] == "steadyline-results/3"  # additive keys: the same schema
    first, second = doc["metrics"]
    assert first["id"] == "m" and "not_built" not in first and "control_chart" in first
    assert second == {
        "id": "second",
        "name": "Second metric",
        "unit": "",
        "type": "continuous",
        "better": "lower",
        "file": "p/second.csv",
        "not_built": True,
        "problems": [f"p/second.csv:5: column 'value': {NOT_A_NUMBER}"],
    }
    assert [h["id"] for h in doc["history"]] == ["m"]  # left out of the history
    assert doc["status"]["metric"] == "m" and doc["status"]["code"] != "not-built"


def test_the_history_page_names_the_metric_it_leaves_out(site, built):
    _, out = site
    page = _page(out, "p", "history.html")
    assert "Not shown here: Second metric, which could not be built from its data" in page
    assert 'id="metric-second"' not in page and 'id="metric-m"' in page


def test_a_broken_headline_metric_is_said_plainly(site, built):
    _, out = site
    doc = json.loads(_page(out, "h", "results.json"))
    assert doc["status"]["code"] == "not-built" and doc["status"]["metric"] == "second"
    assert doc["status"]["reason"].startswith(
        "Second metric: the headline metric could not be built: 1 problem in its data"
    )
    assert [m.get("not_built", False) for m in doc["metrics"]] == [False, True]
    index = (out / "index.html").read_text("utf-8")
    card = _card(index, "h")
    # not built, even though the other metric's data are months older than the build date
    assert 'data-status="not-built"' in card and "card-broken" not in card
    assert "the headline metric could not be built" in card
    assert '<p class="headline-change">Not built: 1 problem in its data.</p>' in card
    assert 'class="broken-lead"' not in card  # said once, by the status and the headline
    assert 'href="projects/h/index.html#metric-second"' in card  # what to fix
    row = next(
        r
        for r in csv.DictReader((out / "headline-figures.csv").open(encoding="utf-8"))
        if r["project"] == "h"
    )
    assert row["status"] == "not built" and row["headline_metric"] == "Second metric"
    assert row["baseline"] == row["after"] == ""


def test_a_project_with_a_good_headline_keeps_its_status_and_names_the_metric(site, built):
    _, out = site
    card = _card((out / "index.html").read_text("utf-8"), "p")
    assert 'data-status="not-built"' not in card and "card-broken" not in card
    assert (
        'Not built: <a href="projects/p/index.html#metric-second">Second metric</a> '
        "(1 problem in its data)"
    ) in card


def test_a_project_with_every_metric_broken_is_a_notice_named_by_its_title(site, built):
    _, out = site
    page = _page(out, "all")
    assert "<h1>Nothing readable: not built</h1>" in page
    assert "p/data.csv" not in page and "all/data.csv:4:" in page and "all/second.csv:6:" in page
    assert not (out / "projects/all/results.json").exists()


def test_metadata_with_errors_is_named_by_its_title_when_it_can_be_read(site, built):
    _, out = site
    page = _page(out, "t")
    assert "<h1>Readable title: not built</h1>" in page
    assert "<title>Readable title (not built)" in page
    assert "did you mean &#39;continuous&#39;" in page
    page = _page(out, "s")  # the TOML cannot be parsed: the folder's name
    assert "<h1>s: not built</h1>" in page and "Never seen" not in page
    index = (out / "index.html").read_text("utf-8")
    assert re.search(r'<h2><a href="projects/t/index.html">Readable title</a></h2>', index)
    assert 'data-slug="t"' in index and 'data-phase="improve"' in _card(index, "t")
    assert 'data-phase=""' in _card(index, "s")


def test_the_index_counts_broken_projects_in_their_phase(site, built):
    _, out = site
    index = (out / "index.html").read_text("utf-8")
    lead = re.search(r'<p class="lead">(.*?)</p>', index).group(1)
    # g, p: measure; all: analyze; t: improve (metadata with errors, phase read); h: control;
    # s: no phase (the TOML cannot be parsed)
    assert "6 projects. By phase: 2 in measure, 1 in analyze, 1 in improve, 1 in control." in lead
    assert "3 projects could not be built" in lead
    assert "2 projects were published with a metric that could not be built" in lead
    phases = re.search(r'<select id="f-phase">(.*?)</select>', index).group(1)
    assert 'value="improve"' in phases and 'value="analyze"' in phases


def test_a_rebuild_that_reuses_the_project_reports_it_the_same(site, built):
    root, out = site
    import io
    from contextlib import redirect_stderr

    err = io.StringIO()
    with redirect_stderr(err):
        code = main(["build", str(root), "--out", str(out), "--jobs", "1"])
    assert code == built[0] == 1
    lines = [ln for ln in err.getvalue().splitlines() if not ln.startswith("steadyline:")]
    assert lines == built[1].splitlines()
    assert "0 built, 6 unchanged, 5 with errors" in err.getvalue()


def _card(index: str, slug: str) -> str:
    start = index.index('<li class="card')
    start = index.index(f'data-slug="{slug}"', start)
    start = index.rindex("<li", 0, start)
    return index[start : index.index("</li>", start)]


def test_the_partial_read_reads_only_what_the_project_may(tmp_path):
    """The title is never read from a project.toml that leads outside the project folder (a
    link), nor from a file that is not UTF-8 TOML; a wrong phase is no phase."""
    from steadyline.config import read_heading

    root = tmp_path / "projects"
    write(
        root,
        {
            "q/project.toml": 'title = "Mine"\nphase = "improv"\nowner = 3\n',
            "r/data.csv": "x\n",
            "s/project.toml": b'title = "\xff"\n',
        },
    )
    (tmp_path / "outside.toml").write_text('title = "Outside"\nphase = "control"\n', "utf-8")
    (root / "r" / "project.toml").symlink_to(tmp_path / "outside.toml")
    assert read_heading(root / "q", root) == {"title": "Mine"}
    assert read_heading(root / "r", root) == {}
    assert read_heading(root / "s", root) == {}
    assert read_heading(root / "none", root) == {}


def test_a_bug_met_in_one_metric_costs_that_metric_alone(tmp_path, capsys, monkeypatch):
    """An exception of ours while analysing one metric is reported as an internal error of
    that metric (by `check` and `build` alike), and the project's other metrics publish."""
    from steadyline.pipeline import project

    real = project.analyse

    def failing(data):
        if data.spec.id == "second":
            raise ZeroDivisionError("float division by zero")
        return real(data)

    monkeypatch.setattr(project, "analyse", failing)
    root = write(tmp_path / "projects", two_metrics())
    assert main(["check", "--quiet", str(root)]) == 1
    checked = capsys.readouterr().out.splitlines()
    out = tmp_path / "site"
    assert main(["build", "--quiet", "--jobs", "1", str(root), "--out", str(out)]) == 1
    built = capsys.readouterr().err.splitlines()
    assert (
        built
        == checked
        == [
            "p/second.csv: metric 'second': internal error while building this metric "
            "(ZeroDivisionError: float division by zero); please report it (run with --debug for "
            "the traceback)"
        ]
    )
    page = _page(out, "p")
    assert 'data-display="control"' in page and "metric-broken" in page
    assert "ZeroDivisionError" in page
