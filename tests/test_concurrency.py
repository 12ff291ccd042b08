"""Builds of one output against each other, and against being killed.

- The output's lock: a second build waits for the first (one line naming it), a build refuses
  an output that a watch session holds, and the lock goes with its holder however it ends.
- Racing real builds into one output while a reader looks at the published site all the time:
  every state it sees is complete.
- Killing a real pooled build with SIGKILL: no worker process is left, and the next build
  removes the folders the killed one left.
"""

from __future__ import annotations

import json
import os
import random
import re
import shutil
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

import pytest

from steadyline.errors import BuildError
from steadyline.pipeline import lock as lock_mod
from steadyline.pipeline.build import build
from steadyline.pipeline.lock import lock_output, lock_path
from steadyline.pipeline.options import BuildOptions
from steadyline.pipeline.side_folders import clean_stale, process_start

REPO = Path(__file__).resolve().parent.parent
DEMO = REPO / "projects"
SMALL = ("order-picking-errors", "frame-dropout-alignment", "customer-returns")
ENV = dict(os.environ, PYTHONPATH=str(REPO / "src"))


def copy_projects(dst: Path, copies: int = 0) -> Path:
    """The three small demo projects, and *copies* more copies of them under other names."""
    dst.mkdir(parents=True)
    shutil.copy(DEMO / "portfolio.toml", dst / "portfolio.toml")
    for s in SMALL:
        shutil.copytree(DEMO / s, dst / s)
    for i in range(copies):
        shutil.copytree(DEMO / SMALL[i % len(SMALL)], dst / f"copy-{i:02d}")
    return dst


def build_cmd(projects: Path, out: Path, *extra: str, quiet: bool = True) -> list[str]:
    return [
        sys.executable,
        "-m",
        "steadyline",
        "build",
        str(projects),
        "--out",
        str(out),
        *(["--quiet"] if quiet else []),
        *extra,
    ]


def leftovers(out: Path) -> list[str]:
    return sorted(
        p.name
        for p in out.parent.iterdir()
        if p.name.startswith((f".{out.name}.staging-", f".{out.name}.retired-"))
    )


def wait_until(cond, timeout: float, step: float = 0.02):
    deadline = time.monotonic() + timeout
    while True:
        got = cond()
        if got or time.monotonic() > deadline:
            return got
        time.sleep(step)


# --------------------------------------------------------------------------------------------
# the lock


def _holder_script(out: Path, kind: str) -> list[str]:
    """A process that takes the lock of *out*, says so, and holds it until killed."""
    code = (
        "import sys, time\nfrom pathlib import Path\n"
        "from steadyline.pipeline.lock import lock_output\n"
        "lock = lock_output(Path(sys.argv[1]), sys.argv[2])\n"
        "print('held', flush=True)\ntime.sleep(60)\n"
    )
    return [sys.executable, "-c", code, str(out), kind]


def _start_holder(out: Path, kind: str) -> subprocess.Popen:
    proc = subprocess.Popen(_holder_script(out, kind), env=ENV, stdout=subprocess.PIPE, text=True)
    assert proc.stdout is not None and proc.stdout.readline() == "held\n"
    return proc


def test_a_second_build_waits_for_the_first_and_names_it(tmp_path: Path):
    out = tmp_path / "site"
    holder = _start_holder(out, "build")
    said: list[str] = []
    got: list[object] = []
    try:
        t = threading.Thread(target=lambda: got.append(lock_output(out, "build", said.append)))
        t.start()
        assert wait_until(lambda: said, 5.0)
        time.sleep(0.3)
        assert not got, "took a lock another process holds"
        assert said == [
            f"steadyline: waiting for the build of {out} by process {holder.pid} to finish"
        ]
    finally:
        holder.kill()  # kill -9: the kernel drops its lock
        holder.wait()
    t.join(5.0)
    assert got, "still waiting after the holder was killed"
    lock = got[0]
    assert lock_path(out).read_text() == f"{os.getpid()} {process_start(os.getpid())} build\n"
    lock.release()
    assert lock_path(out).read_text() == ""  # nobody holds it
    assert not out.exists()  # the lock lives beside the output, never in it


def test_a_build_refuses_an_output_a_watch_session_holds(tmp_path: Path, capsys):
    from steadyline.cli import main

    projects = copy_projects(tmp_path / "projects")
    out = tmp_path / "site"
    holder = _start_holder(out, "watch")
    try:
        t0 = time.monotonic()
        with pytest.raises(BuildError, match=rf"process {holder.pid} is watching this output"):
            build(BuildOptions(projects, out, jobs=1))
        assert main(["build", str(projects), "--out", str(out)]) == 2
        assert time.monotonic() - t0 < 5.0  # at once, not after a wait
        err = capsys.readouterr().err
        assert err.startswith(
            f"steadyline: {out}: process {holder.pid} is watching this output (steadyline watch)"
        ), err
        assert not out.exists() and not leftovers(out)
    finally:
        holder.kill()
        holder.wait()
    assert build(BuildOptions(projects, out, jobs=1)).written


def test_a_watch_waits_for_a_build_then_holds_the_lock_until_it_stops(tmp_path: Path):
    projects = copy_projects(tmp_path / "projects")
    out = tmp_path / "site"
    holder = _start_holder(out, "build")
    proc = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "steadyline",
            "watch",
            str(projects),
            "--out",
            str(out),
            "--no-serve",
            "--jobs",
            "1",
        ],
        env=ENV,
        stderr=subprocess.PIPE,
        text=True,
    )
    try:
        assert proc.stderr is not None
        assert proc.stderr.readline() == (
            f"steadyline: waiting for the build of {out} by process {holder.pid} to finish\n"
        )
        holder.kill()
        holder.wait()
        lines = []
        for line in proc.stderr:
            lines.append(line)
            if line.startswith("watching"):
                break
        assert lines[-1].startswith("watching"), lines
        # between rebuilds too: a build refuses at once
        with pytest.raises(BuildError, match=rf"process {proc.pid} is watching"):
            build(BuildOptions(projects, out, jobs=1, force=True))
        second = subprocess.run(
            [
                sys.executable,
                "-m",
                "steadyline",
                "watch",
                str(projects),
                "--out",
                str(out),
                "--no-serve",
            ],
            env=ENV,
            timeout=30,
            capture_output=True,
            text=True,
        )
        assert second.returncode == 2
        assert f"process {proc.pid} is watching this output" in second.stderr
    finally:
        holder.kill()
        proc.send_signal(signal.SIGINT)
        assert proc.wait(timeout=20) == 0
    assert build(BuildOptions(projects, out, jobs=1, force=True)).written


def test_a_builds_own_folders_are_left_to_it_while_it_runs(tmp_path: Path):
    out = tmp_path / "site"
    out.mkdir()
    sleeper = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
    try:
        start = process_start(sleeper.pid)
        assert start is not None
        live = [
            tmp_path / f".site.staging-{sleeper.pid}-{start}",
            tmp_path / f".site.retired-{sleeper.pid}-{start}-123",
        ]
        # the same process id with another start time: a process that is gone
        gone = [
            tmp_path / f".site.staging-{sleeper.pid}-{start + 1}",
            tmp_path / f".site.retired-{sleeper.pid}-{start + 1}-123",
        ]
        other = [tmp_path / ".site.staging-notes", tmp_path / ".other.staging-1"]
        for d in live + gone + other:
            (d / "projects").mkdir(parents=True)
        clean_stale(out)
        assert wait_until(lambda: not any(d.exists() for d in gone), 10.0)
        assert all(d.exists() for d in live + other)
    finally:
        sleeper.kill()
        sleeper.wait()
    clean_stale(out)
    assert wait_until(lambda: not any(d.exists() for d in live), 10.0)
    assert all(d.exists() for d in other)  # not named by a build: not ours to delete


# --------------------------------------------------------------------------------------------
# racing builds


def _observe(out: Path) -> tuple[str, object]:
    """One look at the published site: ("ok", its folder's inode), ("moved", None) when the
    folder was swapped out while being read (what is left of a retired site is being deleted;
    the next look sees the new one), or ("partial", what is missing)."""
    try:
        fd = os.open(out, os.O_RDONLY | os.O_DIRECTORY)
    except FileNotFoundError:
        return "partial", "no site at all"
    try:
        ino = os.fstat(fd).st_ino
        missing: list[str] = []
        try:
            with open(os.open(".steadyline-manifest.json", os.O_RDONLY, dir_fd=fd), "rb") as fh:
                manifest = json.loads(fh.read())
        except (OSError, ValueError) as e:
            manifest = {"projects": {}}
            missing.append(f"manifest: {e}")
        names = ["index.html"] + [
            f"projects/{slug}/{name}"
            for slug, p in manifest["projects"].items()
            for name in p["files"]
        ]
        for name in names:
            try:
                if os.stat(name, dir_fd=fd).st_size == 0 and name.endswith(".html"):
                    missing.append(f"{name} (empty)")
            except FileNotFoundError:
                missing.append(name)
        if not missing:
            return "ok", ino
        try:
            still = os.stat(out).st_ino == ino
        except FileNotFoundError:
            still = False
        # Published from the first look to the last: it was published all along (a retired
        # folder is never published again), so files were missing from a published site.
        return (
            ("partial", f"{len(missing)} of {len(names)} missing, e.g. {missing[:3]}")
            if still
            else ("moved", None)
        )
    finally:
        os.close(fd)


@pytest.mark.slow
def test_racing_builds_never_publish_a_partial_site(tmp_path: Path):
    # A forced build of the whole portfolio, and while it runs (or as it starts, or as it
    # publishes) a save of one input and a build without --force, which rebuilds that project
    # and hard-links the others from the published site. Without the lock each deleted the
    # other's staging folder and published a site with most of its files missing.
    projects = copy_projects(tmp_path / "projects", copies=2)
    out = tmp_path / "site"
    subprocess.run(build_cmd(projects, out, "--jobs", "1"), env=ENV, check=True)
    t0 = time.monotonic()
    subprocess.run(build_cmd(projects, out, "--jobs", "1", "--force"), env=ENV, check=True)
    full = time.monotonic() - t0
    rng = random.Random(20261203)
    csv = projects / "customer-returns" / "returns_weekly.csv"
    lines = csv.read_text("utf-8").splitlines()

    stop = threading.Event()
    seen = {"ok": 0, "moved": 0}
    partial: list[str] = []

    def reader():
        while not stop.is_set():
            state, what = _observe(out)
            if state == "partial":
                partial.append(str(what))
            else:
                seen[state] += 1
            time.sleep(0.01)  # leave the builds the processor

    watcher = threading.Thread(target=reader, daemon=True)
    watcher.start()
    races, waited, published = 20, 0, 0
    try:
        for i in range(races):
            forced = subprocess.Popen(
                build_cmd(projects, out, "--jobs", "1", "--force", quiet=False),
                env=ENV,
                stdout=subprocess.PIPE,
                stderr=subprocess.PIPE,
                text=True,
            )
            time.sleep(rng.uniform(0, full))
            # a save (atomic, as editors do), so that the other build has a project to build
            lines[3] = lines[3].rsplit(",", 1)[0] + f",{20 + i}"
            (tmp_path / "saved.csv").write_text("\n".join(lines) + "\n", "utf-8")
            os.replace(tmp_path / "saved.csv", csv)
            other = subprocess.Popen(
                build_cmd(projects, out, "--jobs", "1", quiet=False),
                env=ENV,
                stdout=subprocess.PIPE,
                stderr=subprocess.PIPE,
                text=True,
            )
            for p in (forced, other):
                _, err = p.communicate(timeout=120)
                assert p.returncode == 0, (err, partial[:2])
                said = re.fullmatch(
                    r"(steadyline: waiting for the build of .* by process "
                    rf"(?:{forced.pid}|{other.pid}) to finish\n)?"
                    r"steadyline: \d+ built, \d+ unchanged, 0 with errors; "
                    r"site (published|unchanged, nothing written) at .*\n",
                    err,
                )
                assert said, err
                waited += said[1] is not None
                published += said[2] == "published"
                if p is forced:
                    assert said[2] == "published"
    finally:
        stop.set()
        watcher.join()
    assert not partial, f"a reader saw a partial site: {partial[:5]}"
    assert seen["ok"] > races, seen  # the reader looked all along
    assert waited, "no build ever waited: the races did not overlap"
    print(
        f"{races} races: {published} sites published, {waited} builds waited, the reader saw {seen}"
    )
    # the site published last is that of the last inputs: a build finds nothing to do
    assert not build(BuildOptions(projects, out, jobs=1)).written
    assert wait_until(lambda: not leftovers(out), 15.0), leftovers(out)


# --------------------------------------------------------------------------------------------
# killed pooled builds


def _session(sid: int) -> list[tuple[int, str]]:
    """Processes of session *sid* that still run (pid, command line); zombies are ended."""
    found = []
    for d in os.listdir("/proc"):
        if not d.isdigit():
            continue
        try:
            stat = Path(f"/proc/{d}/stat").read_bytes()
            fields = stat[stat.rindex(b")") + 2 :].split()
            if int(fields[3]) != sid or fields[0] in (b"Z", b"X"):
                continue
            cmd = Path(f"/proc/{d}/cmdline").read_bytes().replace(b"\0", b" ").decode()
        except (OSError, ValueError):
            continue
        found.append((int(d), cmd))
    return found


def _workers(sid: int) -> list[int]:
    return [pid for pid, cmd in _session(sid) if "multiprocessing.spawn" in cmd]


def _staged_projects(out: Path) -> int:
    return sum(
        len(list((p / "projects").glob("*/index.html")))
        for p in out.parent.glob(f".{out.name}.staging-*")
    )


@pytest.mark.slow
@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
def test_a_killed_pooled_build_leaves_no_process_and_the_next_build_no_folder(tmp_path: Path):
    projects = copy_projects(tmp_path / "projects", copies=9)  # 12 projects, in a pool
    out = tmp_path / "site"
    subprocess.run(build_cmd(projects, out, "--jobs", "2"), env=ENV, check=True)
    assert wait_until(lambda: not leftovers(out), 15.0)
    moments = {
        "a worker has started": lambda sid: _workers(sid),
        "a project is staged": lambda sid: _staged_projects(out) >= 1 and _workers(sid),
        "half the projects are staged": lambda sid: _staged_projects(out) >= 6 and _workers(sid),
    }
    for moment, reached in moments.items():
        proc = subprocess.Popen(
            build_cmd(projects, out, "--jobs", "2", "--force"),
            env=ENV,
            start_new_session=True,
            stderr=subprocess.DEVNULL,
        )
        sid = proc.pid  # a session leader's id is its session's
        try:
            assert wait_until(
                lambda p=proc, f=reached: f(p.pid) or p.poll() is not None, 60.0, 0.005
            )
            assert proc.poll() is None, f"the build ended before {moment}"
            workers = _workers(sid)
            assert workers, moment
            os.kill(proc.pid, signal.SIGKILL)
            proc.wait()
            left = wait_until(lambda s=sid: not _session(s), 5.0) or _session(sid)
            assert left is True, f"killed when {moment}; still running: {left}"
        finally:
            for pid, _ in _session(sid):
                os.kill(pid, signal.SIGKILL)
    assert any(".staging-" in name for name in leftovers(out))
    # Nothing changed since the published build: the next build publishes nothing, but it
    # still removes what the killed builds left (the retired folders in the background).
    done = subprocess.run(
        build_cmd(projects, out, "--jobs", "2"), env=ENV, capture_output=True, text=True
    )
    assert done.returncode == 0, done.stderr
    assert wait_until(lambda: not leftovers(out), 15.0), leftovers(out)


@pytest.mark.slow
@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
def test_a_terminated_pooled_build_ends_its_workers_and_removes_its_staging(tmp_path: Path):
    projects = copy_projects(tmp_path / "projects", copies=9)
    out = tmp_path / "site"
    for sig, code in ((signal.SIGTERM, -signal.SIGTERM), (signal.SIGINT, 130)):
        proc = subprocess.Popen(
            build_cmd(projects, out, "--jobs", "2"),
            env=ENV,
            start_new_session=True,
            stderr=subprocess.PIPE,
            text=True,
        )
        sid = proc.pid
        try:
            assert wait_until(
                lambda p=proc: _staged_projects(out) >= 1 or p.poll() is not None, 60.0, 0.005
            )
            workers = _workers(sid)
            assert proc.poll() is None and workers
            os.kill(proc.pid, sig)
            _, err = proc.communicate(timeout=20)
            assert proc.returncode == code, err
            assert "Traceback" not in err, err  # the workers leave Ctrl-C to the build
            # the build ended its workers before it ended (they were its children: gone from
            # /proc once it reaped them)
            assert not any(Path(f"/proc/{pid}").exists() for pid in workers)
            # multiprocessing's resource tracker ends by itself once the build is gone
            assert wait_until(lambda s=sid: not _session(s), 5.0), _session(sid)
        finally:
            for pid, _ in _session(sid):
                os.kill(pid, signal.SIGKILL)
        assert not leftovers(out) and not out.exists()


def test_a_worker_whose_build_is_already_gone_ends_at_once():
    code = (
        "import os\nfrom steadyline.pipeline.pool import _die_with_parent\n"
        "_die_with_parent(os.getppid() + 1)\nprint('still here')\n"
    )
    done = subprocess.run(
        [sys.executable, "-c", code], env=ENV, capture_output=True, text=True, timeout=30
    )
    assert done.returncode == 1 and "still here" not in done.stdout


def test_the_lock_is_held_from_reading_the_manifest_to_the_swap(tmp_path: Path, monkeypatch):
    import steadyline.pipeline.build as build_mod

    projects = copy_projects(tmp_path / "projects")
    out = tmp_path / "site"
    build(BuildOptions(projects, out, jobs=1))
    held_at: list[str] = []

    def locked() -> bool:
        # another open file description of the lock file cannot take it while the build holds it
        fd = os.open(lock_path(out), os.O_RDWR)
        try:
            import fcntl

            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            return False
        except BlockingIOError:
            return True
        finally:
            os.close(fd)

    for name in ("_read_manifest", "publish"):
        real = getattr(build_mod, name)

        def spy(*a, _real=real, _name=name, **k):
            held_at.append(f"{_name}:{locked()}")
            return _real(*a, **k)

        monkeypatch.setattr(build_mod, name, spy)
    monkeypatch.setattr(lock_mod, "LOCK_POLL_S", 0.01)
    build(BuildOptions(projects, out, jobs=1, only={SMALL[0]}))
    assert held_at == ["_read_manifest:True", "publish:True"]
    assert not locked()  # released after the build
