"""A portfolio built in shards (`build --shard I/N`) and merged (`merge`) is the site one
`build` makes of the whole portfolio, byte for byte; shards that do not make one portfolio are
refused in one line (exit 2)."""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import pytest

from steadyline.cli import main
from steadyline.pipeline.manifest import MANIFEST
from steadyline.pipeline.shards import shard_of

DEMO = Path(__file__).resolve().parent.parent / "projects"


def tree_hashes(root: Path) -> dict[str, str]:
    return {
        p.relative_to(root).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(root.rglob("*"))
        if p.is_file()
    }


def shard_build(projects: Path, out: Path, shard: str) -> int:
    return main(
        ["build", str(projects), "--out", str(out), "--shard", shard, "--jobs", "1", "--quiet"]
    )


@pytest.fixture(scope="module")
def demo_shards(tmp_path_factory) -> tuple[Path, Path]:
    base = tmp_path_factory.mktemp("shards")
    assert shard_build(DEMO, base / "one", "1/2") == 0
    assert shard_build(DEMO, base / "two", "2/2") == 0
    return base / "one", base / "two"


def manifest(site: Path) -> dict:
    return json.loads((site / MANIFEST).read_text("utf-8"))


@pytest.mark.slow  # the demo built in two shards, and once whole (shared with other tests)
def test_two_shards_merged_are_byte_identical_to_one_build(
    demo_shards, demo_site: Path, tmp_path: Path, capsys
):
    one, two = demo_shards
    slugs = sorted(manifest(demo_site)["projects"])
    mine, theirs = set(manifest(one)["projects"]), set(manifest(two)["projects"])
    # each shard holds part of the portfolio, together all of it, none twice
    assert mine and theirs and not mine & theirs and sorted(mine | theirs) == slugs
    merged = tmp_path / "merged"
    assert main(["merge", str(two), str(one), "--out", str(merged)]) == 0
    assert tree_hashes(merged) == tree_hashes(demo_site)
    # listings too: no empty folder or extra file the hashes would not show
    assert sorted(p.relative_to(merged).as_posix() for p in merged.rglob("*")) == sorted(
        p.relative_to(demo_site).as_posix() for p in demo_site.rglob("*")
    )
    assert (
        capsys.readouterr().err.strip()
        == f"steadyline: 2 shards merged: {len(slugs)} projects, 0 with errors; site "
        f"published at {merged}"
    )
    # and a later build of the whole portfolio into the merged site has nothing to do
    assert main(["build", str(DEMO), "--out", str(merged), "--jobs", "1"]) == 0
    assert "unchanged, nothing written" in capsys.readouterr().err


def test_a_shard_is_a_hash_of_the_slug_alone():
    slugs = [f"project-{i:03d}" for i in range(400)]
    for n in (1, 2, 3, 7):
        shards = [shard_of(s, n) for s in slugs]
        assert set(shards) == set(range(1, n + 1))
        # about even: no shard with under half or over twice its share (400 slugs)
        assert all(400 / n / 2 < shards.count(i) < 400 / n * 2 for i in range(1, n + 1))
    # the same answer whatever else is in the portfolio, and a known value (sha256 of b"a":
    # ca978112ca1bbdca..., first 8 bytes big-endian mod 2 is even, so shard 1 of 2)
    assert shard_of("a", 2) == 1
    assert shard_of("a", 2) == int("ca978112ca1bbdca", 16) % 2 + 1


def empty_portfolio(folder: Path, title: str) -> Path:
    folder.mkdir(parents=True)
    (folder / "portfolio.toml").write_text(f'title = "{title}"\n', "utf-8")
    return folder


def refused(capsys, *args: str) -> str:
    """The one line a refused merge prints (exit 2)."""
    capsys.readouterr()
    assert main(["merge", *args]) == 2
    err = capsys.readouterr().err.splitlines()
    assert len(err) == 1, err
    return err[0]


def test_missing_overlapping_and_unlike_shards_are_refused(tmp_path: Path, capsys):
    a = empty_portfolio(tmp_path / "a", "Portfolio A")
    b = empty_portfolio(tmp_path / "b", "Portfolio B")
    for i in (1, 2, 3):
        assert shard_build(a, tmp_path / f"a{i}", f"{i}/3") == 0
    assert shard_build(b, tmp_path / "b2", "2/3") == 0
    assert shard_build(a, tmp_path / "a2of2", "2/2") == 0
    assert main(["build", str(a), "--out", str(tmp_path / "whole"), "--quiet"]) == 0
    out = str(tmp_path / "out")
    a1, a2, a3 = (str(tmp_path / f"a{i}") for i in (1, 2, 3))

    assert (
        refused(capsys, a1, a3, "--out", out)
        == "steadyline: merge: missing shard 2/3 (given: 1/3, 3/3)"
    )
    shutil.copytree(a2, tmp_path / "again")
    assert (
        refused(capsys, a1, a2, str(tmp_path / "again"), a3, "--out", out)
        == f"steadyline: {tmp_path / 'again'}: overlapping shards: {a2} is shard 2/3 too"
    )
    assert (
        refused(capsys, a1, str(tmp_path / "b2"), a3, "--out", out)
        == f"steadyline: {tmp_path / 'b2'}: shard 2/3 was built with other settings than {a1} "
        "(shard 1/3); build every shard from the same portfolio and settings"
    )
    assert (
        refused(capsys, a1, str(tmp_path / "a2of2"), a3, "--out", out)
        == f"steadyline: {tmp_path / 'a2of2'}: shard 2/2 was built with another number of "
        f"shards than {a1} (shard 1/3); build every shard from the same portfolio and settings"
    )
    assert (
        refused(capsys, a1, str(tmp_path / "whole"), "--out", out)
        == f"steadyline: {tmp_path / 'whole'}: not a shard (its manifest has no shard record); "
        "build it with `steadyline build --shard I/N`"
    )
    old = tmp_path / "old"
    shutil.copytree(a2, old)
    m = manifest(old)
    m["version"] = "0.0.1"
    (old / MANIFEST).write_text(json.dumps(m), "utf-8")
    assert refused(capsys, a1, str(old), a3, "--out", out).startswith(
        f"steadyline: {old}: shard built by steadyline 0.0.1, this is "
    )
    m = manifest(old)
    m["version"], m["shard"]["index"] = manifest(Path(a1))["version"], "2"
    (old / MANIFEST).write_text(json.dumps(m), "utf-8")
    assert (
        refused(capsys, a1, str(old), a3, "--out", out)
        == f"steadyline: {old}/{MANIFEST}: the shard record is damaged; build the shard again"
    )
    assert (
        refused(capsys, a1, a2, a3, "--out", a2)
        == f"steadyline: {a2}: refused as output: it is, is inside or contains the shard {a2}; "
        "choose another folder"
    )
    assert not Path(out).exists()  # nothing was written by any refusal
    assert main(["merge", a1, a2, a3, "--out", out, "--quiet"]) == 0
    assert tree_hashes(Path(out)) == tree_hashes(tmp_path / "whole")


@pytest.mark.slow
def test_a_shard_missing_a_file_is_refused_and_nothing_is_published(
    demo_shards, tmp_path: Path, capsys
):
    one, two = demo_shards
    broken = tmp_path / "broken"
    shutil.copytree(two, broken)
    slug = sorted(manifest(broken)["projects"])[0]
    (broken / "projects" / slug / "results.json").unlink()
    assert (
        refused(capsys, str(one), str(broken), "--out", str(tmp_path / "out"))
        == f"steadyline: {broken}: shard 2/2 is incomplete: projects/{slug}/results.json is missing"
    )
    assert not (tmp_path / "out").exists()
    assert not list(tmp_path.glob(".out.staging-*"))


@pytest.mark.parametrize("bad", ["0/2", "3/2", "2", "a/b"])
def test_a_bad_shard_option_is_refused(bad: str, tmp_path: Path, capsys):
    with pytest.raises(SystemExit) as e:
        main(["build", str(tmp_path), "--shard", bad])
    assert e.value.code == 2
    assert "--shard" in capsys.readouterr().err
