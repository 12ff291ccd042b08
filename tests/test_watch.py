"""`steadyline watch`: the pure parts (ignored names, slug mapping, debouncing, messages), the
server, and the whole loop driven as a user would: save, break, fix, Ctrl-C.

Timings: the debouncer's quiet period (0.1 s) and cap (3 s) were chosen against watchdog's
bursts (one editor save gives 6-17 raw events within a few milliseconds); the tests below check
the debouncer does what those numbers say, not that the numbers are right.
"""

from __future__ import annotations

import hashlib
import json
import os
import re
import shutil
import signal
import subprocess
import sys
import threading
import time
import urllib.error
import urllib.request
from dataclasses import dataclass, field
from pathlib import Path

import pytest

from steadyline.errors import BuildError, Problem
from steadyline.files import is_ignored
from steadyline.watch import make_server
from steadyline.watch_batches import (
    CAP_S,
    QUIET_S,
    Debouncer,
    changed_slugs,
    known_slugs,
    problem_lines,
    rebuild_line,
    relevant,
)

REPO = Path(__file__).resolve().parents[1]
DEMO = REPO / "projects"


# ------------------------------------------------------------------------------------------------
# ignored names


@pytest.mark.parametrize(
    "name",
    [
        ".#picking_audit.csv",  # Emacs lock (a dangling symlink)
        "#picking_audit.csv#",  # Emacs auto-save
        "picking_audit.csv~",  # backup
        ".picking_audit.csv.swp",  # Vim swap
        ".picking_audit.csv.swx",
        "picking_audit.csv.swp",
        "4913",  # Vim's "can I write here" test file
        ".~lock.picking_audit.csv#",  # office lock
        "~$returns.xlsx",  # office lock
        "returns.csv.tmp",
        "returns.csv.part",
        ".goutputstream-ABC123",  # an atomic save's temporary file
        ".hidden.csv",
        "",
    ],
)
def test_editor_temporary_files_are_ignored(name):
    assert is_ignored(name)


@pytest.mark.parametrize(
    "name",
    [
        "picking_audit.csv",
        "project.toml",
        "notes.md",
        "returns_weekly.csv",
        "portfolio.toml",
        "data.2026.csv",
        "a#b.csv",
        "x~y.csv",
        "swp.csv",
    ],
)
def test_real_input_files_are_not_ignored(name):
    assert not is_ignored(name)


# ------------------------------------------------------------------------------------------------
# changed paths -> slugs


def test_slug_is_first_component_under_the_portfolio(tmp_path):
    root = tmp_path / "projects"
    paths = [
        root / "spoke-tension" / "tension.csv",
        root / "customer-returns" / "data" / "2026" / "returns.csv",  # nested
        root / "spoke-tension" / "project.toml",
    ]
    assert changed_slugs(paths, root) == {"spoke-tension", "customer-returns"}
    # str paths and relative paths are the same thing
    assert changed_slugs([str(p) for p in paths], str(root)) == {
        "spoke-tension",
        "customer-returns",
    }
    rel_root = os.path.relpath(root)
    assert changed_slugs([os.path.join(rel_root, "a", "x.csv")], root) == {"a"}


def test_portfolio_settings_change_means_every_project(tmp_path):
    root = tmp_path / "projects"
    assert changed_slugs([root / "a" / "x.csv", root / "portfolio.toml"], root) is None
    # a portfolio.toml inside a project folder is just one of its files
    assert changed_slugs([root / "a" / "portfolio.toml"], root) == {"a"}


def test_noise_maps_to_no_project(tmp_path):
    root = tmp_path / "projects"
    noise = [
        root / "spoke-tension" / ".tension.csv.swp",
        root / "spoke-tension" / "tension.csv~",
        root / "spoke-tension" / ".#tension.csv",
        root / "spoke-tension" / ".git" / "index",  # hidden folder inside a project
        root / ".git" / "HEAD",  # hidden folder at the top
        root / "_drafts" / "idea.csv",  # "_" folders are not projects
        root,  # the portfolio folder itself
        tmp_path / "site" / "index.html",  # outside the portfolio
        tmp_path / "projects-old" / "a" / "x.csv",  # a sibling sharing the prefix
    ]
    assert changed_slugs(noise, root) == set()
    for p in noise:
        assert not relevant(p, root), p
    assert relevant(root / "spoke-tension" / "tension.csv", root)
    assert relevant(root / "portfolio.toml", root)


def test_a_move_counts_both_ends(tmp_path):
    root = tmp_path / "projects"
    # an atomic save: the temporary file (ignored) is renamed onto the real one
    atomic = [root / "a" / ".x.csv.tmp1234", root / "a" / "x.csv"]
    assert changed_slugs(atomic, root) == {"a"}
    # a file moved from one project to another touches both
    assert changed_slugs([root / "a" / "x.csv", root / "b" / "x.csv"], root) == {"a", "b"}


def test_top_level_names_are_kept_only_when_they_are_or_were_projects(tmp_path):
    root, out = tmp_path / "projects", tmp_path / "site"
    (root / "live").mkdir(parents=True)
    (root / "README.txt").write_text("loose file")
    (out / "projects" / "deleted").mkdir(parents=True)
    slugs = changed_slugs(
        [root / "live", root / "README.txt", root / "deleted", root / "never-existed"], root
    )
    assert slugs == {"live", "README.txt", "deleted", "never-existed"}
    assert known_slugs(slugs, root, out) == {"live", "deleted"}


# ------------------------------------------------------------------------------------------------
# debouncer


def test_debouncer_empty_has_nothing_due():
    d = Debouncer()
    assert not d.pending
    assert d.due_in(0.0) is None
    assert d.take(100.0) is None
    d.add([], 1.0)  # an event with no relevant path is no event
    assert not d.pending


def test_debouncer_one_save_burst_is_one_batch():
    # 17 raw events within 40 ms, like one editor save (one save was measured at 6 to 17 events)
    d = Debouncer(QUIET_S, CAP_S)
    t0 = 1000.0
    for i in range(17):
        d.add(["/p/a/x.csv" if i % 2 else "/p/a/.x.csv.swp"], t0 + i * 0.0025)
    last = t0 + 16 * 0.0025
    assert d.take(last + QUIET_S - 0.01) is None
    assert d.due_in(last) == pytest.approx(QUIET_S)
    assert d.take(last + QUIET_S) == {"/p/a/x.csv", "/p/a/.x.csv.swp"}
    assert not d.pending
    assert d.take(last + 10) is None  # taken once only


def test_debouncer_quiet_period_restarts_with_each_event():
    d = Debouncer(0.3, 3.0)
    d.add(["a"], 0.0)
    d.add(["b"], 0.25)
    assert d.take(0.3) is None  # 0.3 after the first, but only 0.05 after the last
    assert d.due_in(0.3) == pytest.approx(0.25)
    assert d.take(0.55) == {"a", "b"}


def test_debouncer_cap_bounds_a_stream_that_never_pauses():
    d = Debouncer(0.3, 3.0)
    batches = []
    t = 0.0
    while t < 7.0:  # an event every 0.1 s for 7 s: never 0.3 s of quiet
        d.add([round(t, 1)], t)
        got = d.take(t)
        if got is not None:
            batches.append((t, got))
        t = round(t + 0.1, 1)
    # the cap makes a batch due 3 s after its first event: at 3.0 and 6.1
    assert [b[0] for b in batches] == [3.0, 6.1]
    assert min(batches[0][1]) == 0.0 and max(batches[0][1]) == 3.0
    assert min(batches[1][1]) == 3.1


def test_debouncer_events_after_take_start_a_new_batch():
    d = Debouncer(0.3, 3.0)
    d.add(["a"], 0.0)
    assert d.take(0.3) == {"a"}
    d.add(["b"], 0.4)
    assert d.due_in(0.4) == pytest.approx(0.3)
    assert d.take(0.6) is None
    assert d.take(0.7) == {"b"}


def test_debouncer_rejects_a_cap_below_the_quiet_period():
    with pytest.raises(ValueError):
        Debouncer(quiet=1.0, cap=0.5)
    with pytest.raises(ValueError):
        Debouncer(quiet=-0.1, cap=1.0)


# ------------------------------------------------------------------------------------------------
# messages


@dataclass
class FakeReport:
    built: list = field(default_factory=list)
    reused: list = field(default_factory=list)
    broken: list = field(default_factory=list)
    problems: list = field(default_factory=list)


def test_problem_lines_are_sorted_unique_and_filtered():
    ps = [
        Problem("b/x.csv", 9, "column 'v'", "'q' is not a number"),
        Problem("a/x.csv", 3, "", "bad"),
        Problem("a/x.csv", 3, "", "bad"),
        Problem("portfolio.toml", 2, "bins", "unknown rule", "warning"),
    ]
    assert problem_lines(ps) == [
        "a/x.csv:3: bad",
        "b/x.csv:9: column 'v': 'q' is not a number",
        "portfolio.toml:2: warning: bins: unknown rule",
    ]
    assert problem_lines(ps, {"b"}) == ["b/x.csv:9: column 'v': 'q' is not a number"]


def test_rebuild_line():
    ok = FakeReport(built=["spoke-tension"], reused=["customer-returns"])
    assert rebuild_line(ok, {"spoke-tension"}, 0.4213) == "rebuilt spoke-tension in 0.42 s"
    broken = FakeReport(
        broken=["spoke-tension"],
        reused=["customer-returns"],
        problems=[
            Problem("spoke-tension/t.csv", 4, "", "x"),
            Problem("spoke-tension/t.csv", 5, "", "y"),
            Problem("spoke-tension/t.csv", 6, "", "z", "warning"),
        ],
    )
    assert rebuild_line(broken, {"spoke-tension"}, 0.1) == (
        "rebuilt spoke-tension in 0.10 s - spoke-tension: 2 errors, shown on its page"
    )
    gone = FakeReport(reused=["customer-returns"])
    assert rebuild_line(gone, {"spoke-tension"}, 0.05) == "removed spoke-tension in 0.05 s"
    assert rebuild_line(FakeReport(reused=["a"]), None, 0.05) == "no change (in 0.05 s)"


# ------------------------------------------------------------------------------------------------
# the server


def _get(url: str, timeout: float = 5.0):
    with urllib.request.urlopen(url, timeout=timeout) as r:
        return r.status, dict(r.headers), r.read()


def test_server_sees_a_swapped_folder_and_forbids_caching(tmp_path):
    out = tmp_path / "site"
    out.mkdir()
    (out / "index.html").write_text("first")
    server = make_server(out, 0)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        url = f"http://127.0.0.1:{server.server_address[1]}/index.html"
        status, headers, body = _get(url)
        assert (status, body) == (200, b"first")
        assert headers["Cache-Control"] == "no-store"
        # replace the whole folder, as the build's publish step does
        new = tmp_path / ".site.staging"
        new.mkdir()
        (new / "index.html").write_text("second")
        os.rename(out, tmp_path / ".site.retired")
        os.rename(new, out)
        assert _get(url)[2] == b"second"
        with pytest.raises(urllib.error.HTTPError) as e:
            _get(url.replace("index.html", "missing.html"))
        assert e.value.code == 404
    finally:
        server.shutdown()
        server.server_close()


def test_server_port_in_use_is_a_clear_error(tmp_path):
    server = make_server(tmp_path, 0)
    try:
        with pytest.raises(BuildError, match="cannot serve on 127.0.0.1"):
            make_server(tmp_path, server.server_address[1])
    finally:
        server.server_close()


# ------------------------------------------------------------------------------------------------
# the whole loop, as a user drives it


def _tree_hashes(root: Path, skip: set[Path]) -> dict[str, str]:
    return {
        p.relative_to(root).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(root.rglob("*"))
        if p.is_file() and p not in skip
    }


class Proc:
    """A `steadyline watch` subprocess whose stderr is collected line by line."""

    def __init__(self, args: list[str], cwd: Path):
        env = dict(os.environ)
        env["PYTHONPATH"] = os.pathsep.join(
            [str(REPO / "src")] + ([env["PYTHONPATH"]] if env.get("PYTHONPATH") else [])
        )
        env.pop("CI", None)
        self.p = subprocess.Popen(
            [sys.executable, "-m", "steadyline", "watch", *args],
            cwd=cwd,
            env=env,
            stdin=subprocess.DEVNULL,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            text=True,
        )
        self.lines: list[str] = []
        self._lock = threading.Lock()
        self._t = threading.Thread(target=self._read, daemon=True)
        self._t.start()

    def _read(self):
        for line in self.p.stderr:
            with self._lock:
                self.lines.append(line.rstrip("\n"))

    def text(self) -> str:
        with self._lock:
            return "\n".join(self.lines)

    def wait_line(self, pattern: str, start: int = 0, timeout: float = 30.0) -> re.Match:
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            with self._lock:
                for line in self.lines[start:]:
                    m = re.search(pattern, line)
                    if m:
                        return m
            if self.p.poll() is not None:
                time.sleep(0.2)  # let the reader catch the last lines
                break
            time.sleep(0.02)
        raise AssertionError(f"no stderr line matching {pattern!r}; got:\n{self.text()}")

    def mark(self) -> int:
        with self._lock:
            return len(self.lines)

    def stop(self, sig=signal.SIGINT, timeout: float = 10.0) -> int:
        self.p.send_signal(sig)
        try:
            return self.p.wait(timeout=timeout)
        finally:
            if self.p.poll() is None:
                self.p.kill()
                self.p.wait()
            self._t.join(timeout=2)


def _wait_for(cond, what: str, timeout: float = 30.0, proc: Proc | None = None):
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        v = cond()
        if v:
            return v
        time.sleep(0.01)
    extra = f"\nwatch stderr:\n{proc.text()}" if proc else ""
    raise AssertionError(f"timed out waiting for {what}{extra}")


def _fetch(base: str, path: str) -> bytes | None:
    try:
        return _get(base + path)[2]
    except (urllib.error.URLError, OSError):
        return None


_TIME = re.compile(rb"\d{4}-\d\d-\d\d \d\d:\d\d UTC")


def _no_times(b: bytes | None) -> bytes | None:
    """The bytes with every "YYYY-MM-DD HH:MM UTC" time blanked (file modification times)."""
    return None if b is None else _TIME.sub(b"<time>", b)


def _copy_demo(tmp_path: Path, slugs: list[str]) -> Path:
    root = tmp_path / "projects"
    root.mkdir()
    shutil.copy2(DEMO / "portfolio.toml", root / "portfolio.toml")
    for s in slugs:
        shutil.copytree(DEMO / s, root / s)
    return root


SLUG = "order-picking-errors"
OTHERS = ["customer-returns", "frame-dropout-alignment"]


@pytest.mark.slow
def test_watch_rebuilds_on_save_shows_errors_recovers_and_stops(tmp_path):
    root = _copy_demo(tmp_path, [SLUG, *OTHERS])
    out = tmp_path / "site"
    csv = root / SLUG / "picking_audit.csv"
    original = csv.read_bytes()
    assert original.endswith(b"\n")
    before = _tree_hashes(root, skip={csv})

    proc = Proc([str(root), "--out", str(out), "--port", "0", "--jobs", "1"], cwd=tmp_path)
    try:
        # 1. first build, then the URL
        m = proc.wait_line(r"serving (http://127\.0\.0\.1:(\d+)/)", timeout=180)
        base = m.group(1)
        page = f"projects/{SLUG}/index.html"
        assert _fetch(base, "index.html") is not None
        state0 = json.loads(_fetch(base, "live-state.json"))
        assert set(state0) == {"__index__", SLUG, *OTHERS}
        page0 = _fetch(base, page)
        results0_bytes = _fetch(base, f"projects/{SLUG}/results.json")
        results0 = json.loads(results0_bytes)
        others0 = {s: _fetch(base, f"projects/{s}/index.html") for s in OTHERS}
        assert b'name="steadyline-live"' in page0
        index_stat0 = os.stat(out / "index.html")

        # 2. editor noise alone (a swap file appearing and going) rebuilds nothing
        mark = proc.mark()
        swap = root / SLUG / ".picking_audit.csv.swp"
        swap.write_bytes(b"swap")
        swap.unlink()
        time.sleep(QUIET_S + 0.7)
        assert proc.mark() == mark, proc.text()

        # 3. a good save: append a valid week in place
        mark = proc.mark()
        t_save = time.perf_counter()
        with open(csv, "ab") as fh:
            fh.write(b"2026-11-23,512,6\n")
        page1 = _wait_for(
            lambda: (b := _fetch(base, page)) and b != page0 and b, "the page", proc=proc
        )
        latency = time.perf_counter() - t_save
        print(f"\nsave -> rewritten page: {latency:.2f} s (valid row appended)")
        results1 = json.loads(_fetch(base, f"projects/{SLUG}/results.json"))
        assert results1 != results0
        state1 = json.loads(_fetch(base, "live-state.json"))
        assert state1[SLUG] != state0[SLUG]
        assert all(state1[s] == state0[s] for s in OTHERS)  # the others were reused
        assert all(_fetch(base, f"projects/{s}/index.html") == others0[s] for s in OTHERS)
        index_stat1 = os.stat(out / "index.html")
        assert (index_stat1.st_ino, index_stat1.st_mtime_ns) != (
            index_stat0.st_ino,
            index_stat0.st_mtime_ns,
        )
        proc.wait_line(rf"^rebuilt {SLUG} in \d+\.\d\d s$", start=mark)
        assert not any(o in line for line in proc.lines[mark:] for o in OTHERS), proc.text()
        assert b"problem-error" not in page1

        # 4. a broken save: a count that is not a number, on the last line
        mark = proc.mark()
        broken = original + b"2026-11-23,512,six\n"
        bad_line = broken.count(b"\n")  # the physical line of the bad row
        t_save = time.perf_counter()
        csv.write_bytes(broken)
        where = f"{SLUG}/picking_audit.csv:{bad_line}:".encode()
        page2 = _wait_for(
            lambda: (b := _fetch(base, page)) and where in b and b, "the error page", proc=proc
        )
        print(f"save -> error page: {time.perf_counter() - t_save:.2f} s (broken cell)")
        assert b"six" in page2
        assert b'name="steadyline-live"' in page2  # the error page still reloads itself
        proc.wait_line(re.escape(where.decode()) + r" .*six", start=mark)
        proc.wait_line(rf"^rebuilt {SLUG} in .* 1 error", start=mark)
        state2 = json.loads(_fetch(base, "live-state.json"))
        assert state2[SLUG] not in (state0[SLUG], state1[SLUG])
        index2 = _fetch(base, "index.html")
        assert SLUG.encode() in index2
        # the rest of the site is still published
        assert all(_fetch(base, f"projects/{s}/index.html") == others0[s] for s in OTHERS)

        # 5. the fix, saved atomically: a temporary file renamed onto the real one
        mark = proc.mark()
        tmp = root / SLUG / ".picking_audit.csv.tmp-fix"
        tmp.write_bytes(original)
        t_save = time.perf_counter()
        os.replace(tmp, csv)
        # the page and results.json name each file's modification time (provenance), which the
        # fix changed; everything else is as it was before the first edit
        _wait_for(
            lambda: _no_times(_fetch(base, page)) == _no_times(page0),
            "the recovered page",
            proc=proc,
        )
        print(f"save -> recovered page: {time.perf_counter() - t_save:.2f} s (atomic save)")
        results3 = _fetch(base, f"projects/{SLUG}/results.json")
        assert _no_times(results3) == _no_times(results0_bytes)
        assert json.loads(_fetch(base, "live-state.json")) == state0
        proc.wait_line(rf"^rebuilt {SLUG} in \d+\.\d\d s$", start=mark)
    finally:
        rc = proc.stop(signal.SIGINT)

    # 6. Ctrl-C: a clean stop
    assert rc == 0, proc.text()
    assert not list(tmp_path.glob(".site.staging-*"))
    # no input file was ever modified (only the one this test wrote), none was added
    assert _tree_hashes(root, skip={csv}) == before
    assert csv.read_bytes() == original


@pytest.mark.slow
def test_watch_no_serve_rebuilds_and_stops_on_sigterm(tmp_path):
    slug = "frame-dropout-alignment"
    root = _copy_demo(tmp_path, [slug])
    out = tmp_path / "site"
    proc = Proc([str(root), "--out", str(out), "--no-serve", "--jobs", "1"], cwd=tmp_path)
    try:
        proc.wait_line(r"^watching ", timeout=180)
        assert not any("serving" in line for line in proc.lines)
        state0 = json.loads((out / "live-state.json").read_text())
        notes = root / slug / "notes.md"
        mark = proc.mark()
        notes.write_text(notes.read_text() + "\nOne more line.\n")
        proc.wait_line(rf"^rebuilt {slug} in ", start=mark)
        state1 = json.loads((out / "live-state.json").read_text())
        assert state1[slug] != state0[slug]
    finally:
        rc = proc.stop(signal.SIGTERM)
    assert rc == 0, proc.text()


def test_server_sends_the_pages_policy_as_headers_and_listens_on_loopback_only(tmp_path):
    """The preview server repeats the pages' Content-Security-Policy as an HTTP header (it then
    covers every file served, data and scripts included), forbids content sniffing, and binds
    to 127.0.0.1 only, never to every interface."""
    from steadyline.site.common import CSP

    (tmp_path / "index.html").write_text("<p>x</p>")
    (tmp_path / "data.csv").write_text("a,b\n1,2\n")
    server = make_server(tmp_path, 0)
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        assert server.server_address[0] == "127.0.0.1"
        for name in ("index.html", "data.csv"):
            status, headers, _ = _get(f"http://127.0.0.1:{server.server_address[1]}/{name}")
            assert status == 200
            assert headers["Content-Security-Policy"] == CSP
            assert "script-src 'self'" in headers["Content-Security-Policy"]
            assert headers["X-Content-Type-Options"] == "nosniff"
    finally:
        server.shutdown()
        server.server_close()
    with pytest.raises(TypeError):
        make_server(tmp_path, 0, host="0.0.0.0")  # no way to ask for another interface
