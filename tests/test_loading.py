"""Nothing lost: inputs are never written, and a failed build leaves the published site as it was.

Also a few direct checks of the loader's shaping (stages, roll-up periods, gaps, line numbers).
"""

from __future__ import annotations

import builtins
import io
import os
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from corpus.kit import VALUES, dates, good_csv, meta, portfolio, tree_hashes, write

import steadyline.pipeline.build as build_mod
import steadyline.pipeline.compute as compute_mod
from steadyline.cli import main
from steadyline.config import Period, load_project
from steadyline.errors import BuildError, ProjectError
from steadyline.loading.metric import load_metric
from steadyline.loading.periods import period_label, period_start
from steadyline.loading.stages import assign_stage
from steadyline.pipeline.build import build
from steadyline.pipeline.check import check
from steadyline.pipeline.options import BuildOptions

WRITE_FLAGS = os.O_WRONLY | os.O_RDWR | os.O_APPEND | os.O_CREAT | os.O_TRUNC


def _rich_portfolio() -> dict:
    """Two projects, several metric types, notes, a portfolio.toml: every kind of input file."""
    files = portfolio(
        files={
            "portfolio.toml": 'title = "Test portfolio"\n',
            "p/notes.md": "# Notes\n\nSome *text*.\n",
            "q/project.toml": meta(
                metric={
                    "type": "defectives",
                    "value": None,
                    "count": "bad",
                    "size": "checked",
                    "file": "counts.csv",
                }
            ),
            "q/counts.csv": "date,bad,checked\n"
            + "".join(f"{d},{i % 5},40\n" for i, d in enumerate(dates(25))),
            "broken/project.toml": meta(metric={"type": "continous"}),
            "broken/data.csv": good_csv(),
        }
    )
    return files


class _WriteSpy:
    """Records every open of a file under *root* for writing (builtins.open and os.open)."""

    def __init__(self, root: Path, monkeypatch):
        self.root = str(root.resolve())
        self.writes: list[str] = []
        real_open, real_os_open = builtins.open, os.open

        def spy_open(file, mode="r", *args, **kwargs):
            if isinstance(file, str | Path) and any(c in mode for c in "wax+"):
                self._note(file)
            return real_open(file, mode, *args, **kwargs)

        def spy_os_open(path, flags, *args, **kwargs):
            if flags & WRITE_FLAGS:
                self._note(path)
            return real_os_open(path, flags, *args, **kwargs)

        monkeypatch.setattr(builtins, "open", spy_open)
        monkeypatch.setattr(io, "open", spy_open)
        monkeypatch.setattr(os, "open", spy_os_open)

    def _note(self, file):
        p = os.path.realpath(os.fspath(file))
        if p.startswith(self.root):
            self.writes.append(p)


def test_build_and_check_never_change_an_input_file(tmp_path, monkeypatch, capsys):
    root = write(tmp_path / "projects", _rich_portfolio())
    before = tree_hashes(root)
    spy = _WriteSpy(root, monkeypatch)
    report = build(BuildOptions(root, tmp_path / "site", jobs=1))
    assert report.broken == ["broken"] and sorted(report.built) == ["p", "q"]
    check(root)
    assert main(["check", str(root)]) == 1
    assert (
        main(["build", str(root), "--out", str(tmp_path / "site"), "--force", "--jobs", "1"]) == 1
    )
    capsys.readouterr()
    assert spy.writes == []
    assert tree_hashes(root) == before  # content, mode and modification time of every file


def test_parallel_build_never_changes_an_input_file(tmp_path, capsys):
    root = write(tmp_path / "projects", _rich_portfolio())
    before = tree_hashes(root)
    assert main(["build", str(root), "--out", str(tmp_path / "site"), "--jobs", "2"]) == 1
    capsys.readouterr()
    assert tree_hashes(root) == before


def _published(tmp_path) -> tuple[Path, Path, dict]:
    root = write(tmp_path / "projects", _rich_portfolio())
    out = tmp_path / "site"
    build(BuildOptions(root, out, jobs=1))
    # change one input so that the next build has something to write
    (root / "p" / "data.csv").write_text(good_csv(values=[v + 1 for v in VALUES]))
    return root, out, tree_hashes(out)


def _no_leftovers(out: Path):
    assert not list(out.parent.glob(f".{out.name}.staging-*"))
    assert not list(out.parent.glob(f".{out.name}.retired-*"))


def test_failed_publish_leaves_the_site_byte_identical(tmp_path, monkeypatch):
    root, out, before = _published(tmp_path)

    def boom(staged, out_, written=None):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(build_mod, "publish", boom)
    with pytest.raises(BuildError, match=r": not published: disk full; "):  # the fault named
        build(BuildOptions(root, out, jobs=1))
    assert tree_hashes(out) == before
    _no_leftovers(out)


def test_failed_staging_write_leaves_the_site_byte_identical(tmp_path, monkeypatch, capsys):
    root, out, before = _published(tmp_path)
    real = compute_mod.write_files
    calls = []

    def fail_on_project(staged, files):
        calls.append(staged)
        if "projects" in Path(staged).parts:  # the first project folder being staged
            real(staged, dict(list(files.items())[:1]))  # half-written project folder
            raise PermissionError(13, "Permission denied", str(staged))
        return real(staged, files)

    # the workers write through the compute stage's name (an in-process worker at --jobs 1)
    monkeypatch.setattr(compute_mod, "write_files", fail_on_project)
    code = main(["build", str(root), "--out", str(out), "--jobs", "1"])
    err = capsys.readouterr().err
    assert code == 2 and "Traceback" not in err
    assert f"{out}: not published: permission denied at {out.parent}" in err
    assert any("projects" in Path(c).parts for c in calls)
    assert tree_hashes(out) == before
    _no_leftovers(out)


def test_interrupted_build_leaves_the_site_byte_identical(tmp_path, monkeypatch, capsys):
    root, out, before = _published(tmp_path)

    def interrupt(staged, out_, written=None):
        raise KeyboardInterrupt

    monkeypatch.setattr(build_mod, "publish", interrupt)
    assert main(["build", str(root), "--out", str(out), "--jobs", "1"]) == 130
    assert "left as it was" in capsys.readouterr().err
    assert tree_hashes(out) == before
    _no_leftovers(out)


def test_broken_project_keeps_nothing_of_a_healthy_one_lost(tmp_path, capsys):
    """A project that breaks is shown as a notice; the other projects' pages stay published."""
    root = write(tmp_path / "projects", _rich_portfolio())
    out = tmp_path / "site"
    build(BuildOptions(root, out, jobs=1))
    q_before = {k: v for k, v in tree_hashes(out).items() if k.startswith("projects/q/")}
    (root / "p" / "data.csv").write_text("date,value\n2026-01-05,abc\n")
    report = build(BuildOptions(root, out, jobs=1))
    assert "p" in report.broken
    page = (out / "projects" / "p" / "index.html").read_text()
    assert "&#39;abc&#39; is not a number" in page or "'abc' is not a number" in page
    q_after = {
        k: v.split(":")[0] for k, v in tree_hashes(out).items() if k.startswith("projects/q/")
    }
    assert q_after == {k: v.split(":")[0] for k, v in q_before.items()}


# ------------------------------------------------------------------------ the loader's shaping


def _load(tmp_path, toml, data):
    root = write(tmp_path / "projects", portfolio(toml=toml, data=data))
    spec, _ = load_project(root / "p", root)
    return load_metric(spec.metrics[0])


def test_stages_are_inclusive_at_both_ends():
    t = pd.Series(
        pd.to_datetime(
            ["2026-01-01", "2026-01-31 23:59", "2026-02-01", "2026-02-10", "2026-02-11"],
            format="ISO8601",
        )
    )
    st = assign_stage(
        t,
        Period(pd.Timestamp("2026-01-01").date(), pd.Timestamp("2026-01-31").date()),
        Period(pd.Timestamp("2026-02-10").date()),
    )
    assert st.tolist() == [0, 0, 2, 1, 1]


def test_iso_weeks_start_on_monday_and_are_labelled_by_iso_year():
    # 2027-01-01 is a Friday in ISO week 2026-W53 (ISO 8601: the week with the year's first
    # Thursday is week 1; reference: datetime.date.isocalendar)
    t = pd.Series(pd.to_datetime(["2027-01-01", "2027-01-03", "2027-01-04"]))
    starts = period_start(t, "week")
    assert [d.date().isoformat() for d in starts] == ["2026-12-28", "2026-12-28", "2027-01-04"]
    assert period_label(starts, "week").tolist() == ["2026-W53", "2026-W53", "2027-W01"]


def test_rollup_gap_starts_a_new_segment(tmp_path):
    days = ["2026-01-05", "2026-01-06", "2026-01-09", "2026-01-10"]
    data = "date,value\n" + "".join(f"{d},{i}\n" for i, d in enumerate(days))
    m = _load(tmp_path, meta(rollup={"period": "day", "statistic": "mean"}), data)
    assert m.points["segment"].tolist() == [0, 0, 1, 1]


def test_problems_name_physical_lines_after_blank_lines_and_quoted_newlines(tmp_path):
    data = 'date,value,c\n\n2026-01-05,1,"a\nb\nc"\n\n2026-01-06,oops,x\n'
    with pytest.raises(ProjectError) as e:
        _load(tmp_path, meta(), data)
    assert [p.line for p in e.value.problems] == [7]  # header 1, blank 2, cell 3-5, blank 6


def test_rollup_proportion_of_flags(tmp_path):
    data = "date,ok\n" + "".join(f"{d},{int(i % 4 == 0)}\n" for i, d in enumerate(dates(14)))
    m = _load(
        tmp_path,
        meta(
            metric={"type": "defectives", "value": "ok"},
            rollup={"period": "week", "statistic": "proportion"},
        ),
        data,
    )
    # 2026-01-05 is a Monday: two full weeks of 7 days; rows 0, 4 in the first, 8, 12 second
    assert m.points["count"].tolist() == [2.0, 2.0]
    assert m.points["size"].tolist() == [7.0, 7.0]
    np.testing.assert_allclose(m.points["value"], [2 / 7, 2 / 7])
