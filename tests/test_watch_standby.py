"""A watch session's rebuilds (the next staging folder prepared while waiting, only the changed
projects hashed) publish the site a fresh build makes of the same files, byte for byte, and
never change a file of the published site in place."""

from __future__ import annotations

import hashlib
import shutil
from pathlib import Path

import pytest

from steadyline.pipeline.build import build
from steadyline.pipeline.lock import lock_output
from steadyline.pipeline.options import BuildOptions
from steadyline.pipeline.standby import Standby
from steadyline.watch import warm_up

DEMO = Path(__file__).resolve().parent.parent / "projects"
SMALL = ("order-picking-errors", "frame-dropout-alignment", "customer-returns")


def tree_hashes(root: Path) -> dict[str, str]:
    return {
        p.relative_to(root).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(root.rglob("*"))
        if p.is_file()
    }


@pytest.mark.slow  # four builds of two or three projects
def test_rebuilds_from_a_standby_folder_equal_a_fresh_build(tmp_path: Path):
    projects = tmp_path / "projects"
    projects.mkdir()
    shutil.copy(DEMO / "portfolio.toml", projects / "portfolio.toml")
    for s in SMALL[:2]:
        shutil.copytree(DEMO / s, projects / s)
    out = tmp_path / "site"
    lock = lock_output(out, "watch")
    standby = Standby(out)
    try:
        build(BuildOptions(projects, out, live=True, jobs=1, lock=lock))
        warm_up(projects)  # writes nothing
        assert sorted(p.name for p in tmp_path.iterdir()) == [".site.lock", "projects", "site"]

        def rebuild(only: set[str]):
            standby.prepare()
            return build(
                BuildOptions(
                    projects,
                    out,
                    live=True,
                    jobs=1,
                    lock=lock,
                    only=only,
                    trust_unnamed=True,
                    standby=standby,
                )
            )

        def same_as_fresh(name: str):
            fresh = tmp_path / name
            build(BuildOptions(projects, fresh, live=True, jobs=1, force=True))
            assert tree_hashes(out) == tree_hashes(fresh)

        published = out / "projects" / SMALL[0] / "results.json"
        before = published.read_bytes()
        kept = open(published, "rb")  # the published file as a reader holds it
        csv = next((projects / SMALL[0]).glob("*.csv"))
        lines = csv.read_text("utf-8").splitlines()
        csv.write_text("\n".join(lines[:-1]) + "\n", "utf-8")  # one row fewer
        report = rebuild({SMALL[0]})
        assert report.built == [SMALL[0]] and report.reused == [SMALL[1]]
        assert kept.read() == before  # rewritten beside, never through the link
        kept.close()
        same_as_fresh("fresh-1")

        assert not rebuild(set()).written  # nothing changed: the folder is kept
        shutil.copytree(DEMO / SMALL[2], projects / SMALL[2])  # a new project
        assert rebuild({SMALL[2]}).built == [SMALL[2]]
        same_as_fresh("fresh-2")

        shutil.rmtree(projects / SMALL[1])  # a project deleted
        report = rebuild({SMALL[1]})
        assert sorted(report.reused) == sorted([SMALL[0], SMALL[2]]) and not report.built
        same_as_fresh("fresh-3")
    finally:
        standby.discard()
        lock.release()
    assert not list(tmp_path.glob(".site.staging-*"))
