"""The output rule and the faults of the machine.

A build replaces its output folder as a whole, so it may only replace what is its own: an absent
path, an empty folder, or a site steadyline published (its manifest is the mark). Everything
else is refused before anything is written, and every refused case is checked here byte for
byte: each file's bytes, mode and modification time, each link's target, and each folder's
listing and modification time (a staging folder made and removed again would change its
parent's), before and after.

Faults of the machine (disk full, read-only, permission denied, a mount point) are simulated in
the process by making the operating system's calls fail with the error number, and, where the
sandbox allows it, met for real: a small tmpfs that fills up, a tmpfs remounted read-only, a
tmpfs mount point as the output (in a mount namespace of their own, so nothing leaks), and a
folder without write permission for a process that has given up root's permission override.
"""

from __future__ import annotations

import errno
import hashlib
import inspect
import json
import os
import re
import shutil
import stat
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from steadyline.cli import main
from steadyline.errors import BuildError
from steadyline.pipeline import build as build_module
from steadyline.pipeline import publish
from steadyline.pipeline.build import build
from steadyline.pipeline.manifest import MANIFEST
from steadyline.pipeline.options import BuildOptions
from steadyline.pipeline.output_rule import MARKER, check_output, fault_line, is_site

REPO = Path(__file__).resolve().parent.parent
DEMO = REPO / "projects"
SLUG = "order-picking-errors"  # the quickest demo project to build


def snapshot(root) -> dict:
    """Every entry at and under *root*, not following links: a file's mode, modification time
    and bytes (as a SHA-256), a link's target, a folder's mode, modification time and listing."""
    out = {}

    def visit(path, rel):
        st = os.lstat(path)
        if stat.S_ISLNK(st.st_mode):
            out[rel] = ["link", os.readlink(path)]
        elif stat.S_ISDIR(st.st_mode):
            names = sorted(os.listdir(path))
            out[rel] = ["dir", st.st_mode, st.st_mtime_ns, names]
            for name in names:
                visit(os.path.join(path, name), f"{rel}/{name}")
        else:
            with open(path, "rb") as fh:
                digest = hashlib.sha256(fh.read()).hexdigest()
            out[rel] = ["file", st.st_mode, st.st_mtime_ns, st.st_size, digest]

    visit(os.fspath(root), ".")
    return out


def portfolio(folder: Path) -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    shutil.copy(DEMO / "portfolio.toml", folder / "portfolio.toml")
    shutil.copytree(DEMO / SLUG, folder / SLUG)
    return folder


def cli(argv: list[str], capsys) -> tuple[int, list[str]]:
    code = main(argv)
    err = capsys.readouterr().err
    return code, err.splitlines()


def refused(out, projects, capsys, *, why: str, extra: list[str] = ()) -> str:
    """Runs `steadyline build` into *out*; checks exit 2 and one line naming *out* and *why*."""
    code, lines = cli(["build", str(projects), "--out", str(out), "--jobs", "1", *extra], capsys)
    assert code == 2, lines
    assert len(lines) == 1, lines
    assert lines[0].startswith(f"steadyline: {out}: refused as output: "), lines[0]
    assert why in lines[0], lines[0]
    return lines[0]


# ------------------------------------------------------------------------------------------------
# refused, every byte left in place


def _file(tmp: Path, projects: Path):
    f = tmp / "report.pdf"
    f.write_bytes(b"%PDF-1.4 not ours\n")
    f.chmod(0o640)
    return f, "it is a file, not a folder"


def _folder_of_other_files(tmp: Path, projects: Path):
    f = tmp / "site"
    (f / "drafts").mkdir(parents=True)
    (f / "index.html").write_text("<p>someone else's page</p>", "utf-8")
    (f / "drafts" / "notes.txt").write_bytes(b"\x00\x01 keep me")
    (f / "drafts" / "notes.txt").chmod(0o600)
    (f / ".hidden").write_text("only a hidden file", "utf-8")
    return f, "it is a folder of other files (no steadyline site marker"


def _only_a_hidden_file(tmp: Path, projects: Path):
    f = tmp / "site"
    f.mkdir()
    (f / ".git").write_text("gitdir: elsewhere\n", "utf-8")
    return f, "it is a folder of other files"


def _forged_marker(tmp: Path, projects: Path):
    f = tmp / "site"
    f.mkdir()
    (f / MARKER).write_text("not a manifest", "utf-8")
    (f / "mine.txt").write_text("mine", "utf-8")
    return f, "it is a folder of other files"


def _marker_is_a_folder(tmp: Path, projects: Path):
    f = tmp / "site"
    (f / MARKER).mkdir(parents=True)
    return f, "it is a folder of other files"


def _projects_folder(tmp: Path, projects: Path):
    return projects, "it is the projects folder"


def _project_inside_projects(tmp: Path, projects: Path):
    return projects / SLUG, "it is inside the projects folder"


def _absent_folder_inside_projects(tmp: Path, projects: Path):
    return projects / "site", "it is inside the projects folder"


def _folder_containing_projects(tmp: Path, projects: Path):
    return tmp, "it contains the projects folder"


def _link_to_folder_of_other_files(tmp: Path, projects: Path):
    target, _ = _folder_of_other_files(tmp, projects)
    link = tmp / "site-link"
    link.symlink_to(target, target_is_directory=True)
    return link, "it is a folder of other files"


def _link_to_projects(tmp: Path, projects: Path):
    link = tmp / "site-link"
    link.symlink_to(projects, target_is_directory=True)
    return link, "it is the projects folder"


def _relative_link_to_parent(tmp: Path, projects: Path):
    link = tmp / "up"
    link.symlink_to("..")
    return link, "it contains the projects folder"


def _link_to_file(tmp: Path, projects: Path):
    target, _ = _file(tmp, projects)
    link = tmp / "site-link"
    link.symlink_to(target)
    return link, "it is a file, not a folder"


def _dangling_link(tmp: Path, projects: Path):
    link = tmp / "site-link"
    link.symlink_to(tmp / "nowhere" / "site")
    return link, "it is a symbolic link to nothing"


def _link_loop(tmp: Path, projects: Path):
    (tmp / "a").symlink_to(tmp / "b")
    (tmp / "b").symlink_to(tmp / "a")
    return tmp / "a", "it is a symbolic link to nothing"


CASES = [
    _file,
    _folder_of_other_files,
    _only_a_hidden_file,
    _forged_marker,
    _marker_is_a_folder,
    _projects_folder,
    _project_inside_projects,
    _absent_folder_inside_projects,
    _folder_containing_projects,
    _link_to_folder_of_other_files,
    _link_to_projects,
    _relative_link_to_parent,
    _link_to_file,
    _dangling_link,
    _link_loop,
]


@pytest.mark.parametrize("case", CASES, ids=[c.__name__.lstrip("_") for c in CASES])
@pytest.mark.parametrize("force", [False, True], ids=["", "force"])
def test_a_refused_output_is_left_byte_for_byte(case, force, tmp_path, capsys):
    tmp = tmp_path / "work"
    projects = portfolio(tmp / "projects")
    out, why = case(tmp, projects)
    before = snapshot(tmp_path)
    refused(out, projects, capsys, why=why, extra=["--force"] if force else [])
    assert snapshot(tmp_path) == before


def test_the_working_directory_and_a_folder_around_it_are_refused(tmp_path, monkeypatch, capsys):
    projects = portfolio(tmp_path / "portfolio" / "projects")
    here = tmp_path / "outer" / "here"
    here.mkdir(parents=True)  # empty: the place alone refuses it
    monkeypatch.chdir(here)
    before = snapshot(tmp_path)
    refused(Path("."), projects, capsys, why="it is the working directory")
    refused(here, projects, capsys, why="it is the working directory")
    refused(Path(".."), projects, capsys, why="it contains the working directory")
    assert snapshot(tmp_path) == before


def test_out_dot_from_a_repository_root_is_refused(tmp_path, monkeypatch, capsys):
    """The reported case: `steadyline build projects --out .` run where the projects live."""
    repo = tmp_path / "repo"
    portfolio(repo / "projects")
    (repo / "README.md").write_text("# our data\n", "utf-8")
    monkeypatch.chdir(repo)
    before = snapshot(tmp_path)
    refused(Path("."), Path("projects"), capsys, why="it is the working directory")
    refused(
        Path("."), Path("projects"), capsys, why="it is the working directory", extra=["--force"]
    )
    assert snapshot(tmp_path) == before


def test_the_home_folder_and_a_folder_around_it_are_refused(tmp_path, monkeypatch, capsys):
    projects = portfolio(tmp_path / "portfolio" / "projects")
    home = tmp_path / "people" / "ingrid"
    home.mkdir(parents=True)  # empty: the place alone refuses it
    monkeypatch.setenv("HOME", str(home))
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    monkeypatch.chdir(elsewhere)
    link = tmp_path / "home-link"
    link.symlink_to(home, target_is_directory=True)
    before = snapshot(tmp_path)
    refused(home, projects, capsys, why="it is the home folder")
    refused(Path("~").expanduser(), projects, capsys, why="it is the home folder")
    refused(link, projects, capsys, why="it is the home folder")
    refused(home.parent, projects, capsys, why="it contains the home folder")
    assert snapshot(tmp_path) == before


def test_a_file_system_root_is_refused_without_building(tmp_path, monkeypatch, capsys):
    """Only the refusal is checked: should the rule ever let "/" through, the stand-in below
    fails the test before anything could be written."""
    projects = portfolio(tmp_path / "projects")

    def must_not_build(*args, **kwargs):
        raise AssertionError("the build went on past the output rule")

    monkeypatch.setattr(build_module, "_build", must_not_build)
    with pytest.raises(BuildError, match=r"^/: refused as output: it is a file-system root"):
        check_output(Path("/"), projects)
    refused(Path("/"), projects, capsys, why="it is a file-system root")
    refused(Path("/.."), projects, capsys, why="it is a file-system root")


def test_watch_refuses_before_serving_or_building(tmp_path):
    """`watch` builds again and again: it refuses at the start, exit 2, every byte in place.
    (Run as a process with a time limit: a watch that did not refuse would never return.)"""
    tmp = tmp_path / "work"
    projects = portfolio(tmp / "projects")
    out, _ = _folder_of_other_files(tmp, projects)
    before = snapshot(tmp_path)
    env = dict(
        os.environ,
        PYTHONPATH=os.pathsep.join(
            [str(REPO / "src")]
            + ([os.environ["PYTHONPATH"]] if os.environ.get("PYTHONPATH") else [])
        ),
    )
    for args, cwd, why in [
        ([str(out)], tmp, "it is a folder of other files"),
        (["."], tmp, "it is the working directory"),
    ]:
        proc = subprocess.run(
            [
                sys.executable,
                "-m",
                "steadyline",
                "watch",
                str(projects),
                "--out",
                *args,
                "--no-serve",
                "--jobs",
                "1",
            ],
            cwd=cwd,
            env=env,
            capture_output=True,
            text=True,
            timeout=60,
        )
        lines = proc.stderr.splitlines()
        assert proc.returncode == 2 and len(lines) == 1, proc.stderr
        assert "refused as output: " + why in lines[0], lines[0]
    assert snapshot(tmp_path) == before


# ------------------------------------------------------------------------------------------------
# accepted: absent, empty, a site of ours


def test_absent_empty_and_published_sites_are_accepted(tmp_path, capsys):
    projects = portfolio(tmp_path / "projects")
    absent, empty = tmp_path / "a" / "site", tmp_path / "empty"
    empty.mkdir()
    for out in (absent, empty):
        code, lines = cli(["build", str(projects), "--out", str(out), "--quiet"], capsys)
        assert code == 0 and lines == [], lines
        assert is_site(out) and (out / "index.html").is_file()
    # a published site is rebuilt, also one marked by an earlier version of the tool
    manifest = json.loads((empty / MANIFEST).read_text("utf-8"))
    manifest["version"] = "0.0.1"
    (empty / MANIFEST).write_text(json.dumps(manifest), "utf-8")
    code, lines = cli(["build", str(projects), "--out", str(empty), "--quiet"], capsys)
    assert code == 0 and lines == [], lines
    assert json.loads((empty / MANIFEST).read_text("utf-8"))["version"] != "0.0.1"


def test_every_build_that_writes_leaves_the_marker(tmp_path):
    projects = portfolio(tmp_path / "projects")
    out = tmp_path / "site"
    for force in (False, True):
        assert build(BuildOptions(projects, out, jobs=1, force=force)).ok
        assert is_site(out)
    # watch mode's builds too (they also write live-state.json)
    assert build(BuildOptions(projects, out, jobs=1, live=True)).written
    assert is_site(out)


def test_a_link_to_a_site_is_followed_and_kept(tmp_path):
    """The site goes where the link points; the link stays a link."""
    projects = portfolio(tmp_path / "projects")
    real = tmp_path / "srv" / "site"
    build(BuildOptions(projects, real, jobs=1))
    link = tmp_path / "site"
    link.symlink_to(real, target_is_directory=True)
    report = build(BuildOptions(projects, link, jobs=1, force=True))
    assert report.written and link.is_symlink() and os.readlink(link) == str(real)
    assert is_site(real)


# ------------------------------------------------------------------------------------------------
# faults of the machine, simulated


@pytest.fixture
def published(tmp_path):
    """A portfolio and its published site; returns (projects, out)."""
    projects = portfolio(tmp_path / "projects")
    out = tmp_path / "site"
    assert build(BuildOptions(projects, out, jobs=1)).ok
    return projects, out


def _fail_writes(err: int):
    def fake_open(path, mode="r", *args, **kwargs):
        if ".staging-" in os.fspath(path) and "w" in mode:
            raise OSError(err, os.strerror(err), os.fspath(path))
        return open(path, mode, *args, **kwargs)

    return fake_open


class _FailingFile:
    """A file whose write fails with the error number, as a full disk makes it (a failed
    write names no file)."""

    def __init__(self, err: int):
        self.err = err

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        return False

    def write(self, data):
        raise OSError(self.err, os.strerror(self.err))


def _fail_exchange(err: int):
    def fake_exchange(a, b):
        raise OSError(err, os.strerror(err), str(a))

    return fake_exchange


FAULTS = [
    ("disk full on open", errno.ENOSPC, "disk full", "open"),
    ("disk full on write", errno.ENOSPC, "disk full", "write"),
    ("quota", errno.EDQUOT, "disk quota exceeded", "open"),
    ("read-only staging", errno.EROFS, "read-only file system", "mkdir"),
    ("permission denied", errno.EACCES, "permission denied", "mkdir"),
    ("not permitted", errno.EPERM, "permission denied", "open"),
    ("another file system", errno.EXDEV, "output on another file system", "exchange"),
    ("mount point", errno.EBUSY, "output busy or a mount point", "exchange"),
    ("disk error", errno.EIO, "input/output error", "open"),
]


@pytest.mark.parametrize("name,err,cause,where", FAULTS, ids=[f[0] for f in FAULTS])
def test_a_fault_is_one_line_and_the_published_site_stays(
    published, name, err, cause, where, monkeypatch, capsys
):
    projects, out = published
    before, listing = snapshot(out), sorted(os.listdir(out.parent))
    if where == "open":
        monkeypatch.setattr(publish, "open", _fail_writes(err), raising=False)
    elif where == "write":

        def fail_writing(path, mode="r", *a, **k):  # reading (e.g. /proc) goes on as usual
            return _FailingFile(err) if "w" in mode else open(path, mode, *a, **k)

        monkeypatch.setattr(publish, "open", fail_writing, raising=False)
    elif where == "mkdir":
        real_mkdir = os.mkdir

        def fake_mkdir(path, *args, **kwargs):
            if ".staging-" in os.fspath(path):
                raise OSError(err, os.strerror(err), os.fspath(path))
            return real_mkdir(path, *args, **kwargs)

        monkeypatch.setattr(os, "mkdir", fake_mkdir)
    else:
        monkeypatch.setattr(publish, "exchange", _fail_exchange(err))
    code, lines = cli(
        ["build", str(projects), "--out", str(out), "--force", "--jobs", "1", "--quiet"], capsys
    )
    assert code == 2 and len(lines) == 1, lines
    line = lines[0]
    assert line.startswith(f"steadyline: {out}: not published: {cause}"), line
    assert "internal error" not in line and line.endswith("the output was left as it was"), line
    # the path where it happened: the staging folder beside the output, or a file in it
    assert f" at {out.parent / '.site.staging-'}" in line, line
    monkeypatch.undo()
    assert snapshot(out) == before
    assert sorted(os.listdir(out.parent)) == listing  # no staging folder left behind


def test_a_failed_fallback_swap_puts_the_published_site_back(published, monkeypatch, capsys):
    """Where the file system cannot exchange two folders, the site is swapped by two renames;
    when the second fails the first is undone (a site left under a retired name would be
    deleted by the next build)."""
    projects, out = published
    before, listing = snapshot(out), sorted(os.listdir(out.parent))
    real_rename = os.rename

    def fake_rename(a, b):
        if ".staging-" in os.fspath(a) and os.fspath(b) == os.fspath(out):
            raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), os.fspath(a))
        return real_rename(a, b)

    monkeypatch.setattr(publish, "exchange", lambda a, b: False)
    monkeypatch.setattr(os, "rename", fake_rename)
    code, lines = cli(
        ["build", str(projects), "--out", str(out), "--force", "--jobs", "1", "--quiet"], capsys
    )
    monkeypatch.undo()
    assert code == 2 and len(lines) == 1 and "not published: disk full" in lines[0], lines
    after = snapshot(out)
    # renamed away and back: the folder's own change time moved, nothing in it did
    assert after == before
    assert sorted(os.listdir(out.parent)) == listing


def test_a_fault_during_watch_is_named_and_watching_goes_on(published, monkeypatch, capsys):
    from steadyline import watch as watch_module

    projects, out = published
    before = snapshot(out)
    monkeypatch.setattr(publish, "open", _fail_writes(errno.ENOSPC), raising=False)
    batch = {str(projects / SLUG / "project.toml")}
    from steadyline.pipeline.lock import lock_output

    lock = lock_output(out, "watch")  # a watch session holds its output's lock
    try:
        watch_module._rebuild(batch, projects, out, 1, False, True, build, BuildOptions, lock)
    finally:
        lock.release()
    lines = capsys.readouterr().err.splitlines()
    assert len(lines) == 1 and lines[0].startswith(
        f"steadyline: {out}: not published: disk full at "
    ), lines
    monkeypatch.undo()
    assert snapshot(out) == before


@pytest.mark.parametrize("err", [errno.ENOENT, errno.EINVAL, None])
def test_other_errors_are_not_dressed_up_as_faults_of_the_machine(err, tmp_path):
    assert fault_line(OSError(err, "x", "f") if err else OSError("no number"), tmp_path) is None


# ------------------------------------------------------------------------------------------------
# faults of the machine, for real


def _env() -> dict:
    env = dict(os.environ)
    env["PYTHONPATH"] = os.pathsep.join(
        [str(REPO / "src")] + ([env["PYTHONPATH"]] if env.get("PYTHONPATH") else [])
    )
    env.pop("CI", None)
    return env


def _snapshot_script(folder: Path) -> Path:
    script = folder / "snapshot.py"
    script.write_text(
        "import hashlib, json, os, stat, sys\n\n"
        + inspect.getsource(snapshot)
        + "\nprint(json.dumps(snapshot(sys.argv[1])))\n",
        "utf-8",
    )
    return script


@pytest.mark.slow
def test_a_full_disk_a_read_only_disk_and_a_mount_point_for_real(tmp_path):
    """In a mount namespace of its own: a tmpfs just large enough for the published site fills
    up during a rebuild; remounted read-only it refuses the staging folder; an empty tmpfs
    mount point as the output is refused. Skipped where the sandbox cannot mount."""
    if shutil.which("unshare") is None:
        pytest.skip("no unshare command to make a mount namespace")
    probe_dir = tmp_path / "probe"
    probe_dir.mkdir()
    probe = subprocess.run(
        ["unshare", "-m", "sh", "-c", f"mount -t tmpfs -o size=64k tmpfs {probe_dir}"],
        capture_output=True,
        text=True,
    )
    if probe.returncode != 0:
        pytest.skip(f"cannot mount a tmpfs here: {probe.stderr.strip() or probe.returncode}")
    projects = portfolio(tmp_path / "projects")
    disk, mnt, res = tmp_path / "disk", tmp_path / "mnt", tmp_path / "res"
    for d in (disk, mnt, res):
        d.mkdir()
    snap = _snapshot_script(tmp_path)
    py = sys.executable
    build_cmd = f"{py} -m steadyline build {projects} --jobs 1 --quiet"
    script = textwrap.dedent(f"""\
        set -e
        mount -t tmpfs -o size=64m tmpfs {disk}
        mount -t tmpfs -o size=64k tmpfs {mnt}
        {build_cmd} --out {disk}/site
        used=$({py} -c "import os; s = os.statvfs('{disk}'); \
print((s.f_blocks - s.f_bfree) * s.f_frsize * 3 // 2 // 1024)")
        mount -o remount,size=${{used}}k {disk}
        {py} {snap} {disk}/site > {res}/before.json
        set +e
        {build_cmd} --out {disk}/site --force 2> {res}/full.err; echo $? > {res}/full.rc
        {py} {snap} {disk}/site > {res}/full.json; ls -A {disk} > {res}/full.ls
        mount -o remount,ro {disk}
        {build_cmd} --out {disk}/site --force 2> {res}/ro.err; echo $? > {res}/ro.rc
        {py} {snap} {disk}/site > {res}/ro.json; ls -A {disk} > {res}/ro.ls
        {py} {snap} {mnt} > {res}/mnt-before.json
        {build_cmd} --out {mnt} 2> {res}/mnt.err; echo $? > {res}/mnt.rc
        {py} {snap} {mnt} > {res}/mnt.json
        """)
    proc = subprocess.run(
        ["unshare", "-m", "sh", "-c", script],
        env=_env(),
        capture_output=True,
        text=True,
        timeout=240,
    )
    assert proc.returncode == 0, proc.stderr

    def result(name):
        rc = int((res / f"{name}.rc").read_text())
        return rc, (res / f"{name}.err").read_text("utf-8").splitlines()

    before = json.loads((res / "before.json").read_text("utf-8"))
    for name, cause in [("full", "disk full"), ("ro", "read-only file system")]:
        rc, lines = result(name)
        assert rc == 2 and len(lines) == 1, (name, lines)
        # where the disk refused: the staging folder, or (read-only) already the lock file
        # beside the output, which a build makes first
        assert lines[0].startswith(
            f"steadyline: {disk}/site: not published: {cause} at {disk}/.site."
        ), lines[0]
        assert json.loads((res / f"{name}.json").read_text("utf-8")) == before, name
        # the site and the lock file beside it (never deleted): no staging folder left
        assert (res / f"{name}.ls").read_text().split() == [".site.lock", "site"], name
    rc, lines = result("mnt")
    assert rc == 2 and len(lines) == 1 and "refused as output: it is a mount point" in lines[0]
    assert json.loads((res / "mnt.json").read_text("utf-8")) == json.loads(
        (res / "mnt-before.json").read_text("utf-8")
    )


@pytest.mark.slow
def test_permission_denied_for_real(tmp_path):
    """Root may write anywhere; a process that gave up that override (the capabilities
    dac_override, dac_read_search and fowner) meets a folder without write permission as any
    user would; any other user meets it as it is. Skipped where root cannot give it up."""
    drop = []
    if os.geteuid() == 0:
        if shutil.which("setpriv") is None:
            pytest.skip("no setpriv command to give up root's permission override")
        drop = ["setpriv", "--bounding-set=-dac_override,-dac_read_search,-fowner"]
        probe = subprocess.run([*drop, "true"], capture_output=True, text=True)
        if probe.returncode != 0:
            pytest.skip(f"setpriv cannot drop capabilities here: {probe.stderr.strip()}")
    projects = portfolio(tmp_path / "projects")
    locked = tmp_path / "locked"
    out = locked / "site"
    assert build(BuildOptions(projects, out, jobs=1)).ok
    locked.chmod(0o555)
    try:
        before, listing = snapshot(out), sorted(os.listdir(locked))
        proc = subprocess.run(
            [
                *drop,
                sys.executable,
                "-m",
                "steadyline",
                "build",
                str(projects),
                "--out",
                str(out),
                "--force",
                "--jobs",
                "1",
                "--quiet",
            ],
            env=_env(),
            capture_output=True,
            text=True,
            timeout=120,
        )
        lines = proc.stderr.splitlines()
        assert proc.returncode == 2 and len(lines) == 1, proc.stderr
        assert lines[0].startswith(
            f"steadyline: {out}: not published: permission denied at {locked}/.site.staging-"
        ), lines[0]
        assert snapshot(out) == before and sorted(os.listdir(locked)) == listing
    finally:
        locked.chmod(0o755)


# ------------------------------------------------------------------------------------------------
# the README says what the command prints


def _readme() -> str:
    return (REPO / "README.md").read_text("utf-8")


def test_the_readme_refusal_examples_are_what_the_command_prints(tmp_path, monkeypatch, capsys):
    lines = [ln for ln in _readme().splitlines() if ": refused as output: " in ln]
    assert len(lines) == 3, lines
    portfolio(tmp_path / "projects")
    (tmp_path / "www").mkdir()
    (tmp_path / "www" / "index.html").write_text("<p>the intranet's own page</p>", "utf-8")
    monkeypatch.chdir(tmp_path)
    printed = []
    for out in (".", "www", "projects/site"):
        code, got = cli(["build", "projects", "--out", out], capsys)
        assert code == 2
        printed += got
    assert printed == lines


def test_the_readme_fault_table_and_example_are_what_the_command_prints(
    tmp_path, monkeypatch, capsys
):
    from steadyline.pipeline.output_rule import _FAULTS

    readme = _readme()
    rows = {}
    for ln in readme.splitlines():
        cells = [c.strip() for c in ln.strip().strip("|").split("|")]
        if len(cells) == 3 and cells[0].endswith(")") and cells[1].startswith("`"):
            for name in re.findall(r"E[A-Z]+", cells[0]):
                rows[name] = (cells[1].strip("`"), cells[2])
    assert rows == {errno.errorcode[n]: cause_advice for n, cause_advice in _FAULTS.items()}

    example = [ln for ln in readme.splitlines() if ": not published: " in ln]
    assert len(example) == 1, example
    portfolio(tmp_path / "projects")
    monkeypatch.chdir(tmp_path)
    assert main(["build", "projects", "--out", "site", "--quiet"]) == 0
    monkeypatch.setattr(publish, "open", _fail_writes(errno.ENOSPC), raising=False)
    code, got = cli(["build", "projects", "--out", "site", "--force", "--quiet"], capsys)
    assert code == 2 and len(got) == 1

    def general(line: str) -> str:
        return re.sub(r"\.site\.staging-\d+(-\d+)?/[^;]*", ".site.staging-PID/FILE", line)

    assert general(got[0]) == general(example[0])


def test_a_refusal_shows_control_characters_as_escapes(tmp_path, capsys):
    projects = portfolio(tmp_path / "projects")
    out = tmp_path / "site\x1b]0;owned\x07"
    out.mkdir()
    (out / "x").write_text("x", "utf-8")
    code, lines = cli(["build", str(projects), "--out", str(out)], capsys)
    assert code == 2 and len(lines) == 1
    assert "\x1b" not in lines[0] and "\\x1b]0;owned\\x07: refused as output" in lines[0]
