"""An open page reloads by itself when `steadyline watch` rebuilds its project."""

from __future__ import annotations

import os
import shutil
import signal
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
PROJECT = "order-picking-errors"


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _up(url: str) -> bool:
    try:
        with urllib.request.urlopen(url, timeout=2) as r:
            return r.status == 200
    except OSError:
        return False


@pytest.mark.browser
@pytest.mark.slow
def test_an_open_page_reloads_when_its_project_is_rebuilt(browser, tmp_path):
    projects = tmp_path / "projects"
    projects.mkdir()
    shutil.copy(REPO / "projects" / "portfolio.toml", projects / "portfolio.toml")
    shutil.copytree(REPO / "projects" / PROJECT, projects / PROJECT)
    port = _free_port()
    env = dict(
        os.environ, PYTHONPATH=str(REPO / "src") + os.pathsep + os.environ.get("PYTHONPATH", "")
    )
    proc = subprocess.Popen(
        [
            sys.executable,
            "-m",
            "steadyline",
            "watch",
            str(projects),
            "--out",
            str(tmp_path / "site"),
            "--port",
            str(port),
            "--jobs",
            "1",
            "--quiet",
        ],
        env=env,
        stdin=subprocess.DEVNULL,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.PIPE,
    )
    base = f"http://127.0.0.1:{port}"
    page_url = f"{base}/projects/{PROJECT}/index.html"
    try:
        deadline = time.monotonic() + 180
        while not _up(page_url):
            assert proc.poll() is None, proc.stderr.read().decode()
            assert time.monotonic() < deadline, "watch did not serve the site in time"
            time.sleep(0.2)
        context = browser.new_context()
        page = context.new_page()
        loads: list[float] = []
        page.on("load", lambda: loads.append(time.monotonic()))
        page.goto(page_url)
        page.wait_for_function("document.querySelector('meta[name=\"steadyline-live\"]')")
        page.wait_for_timeout(1500)  # the page has read the live state once
        first_loads = len(loads)
        csv = projects / PROJECT / "picking_audit.csv"
        lines = csv.read_text("utf-8").splitlines()
        week, checked, errors = lines[-1].split(",")
        lines[-1] = f"{week},{checked},{int(errors) + 5}"
        saved = time.monotonic()
        csv.write_text("\n".join(lines) + "\n", "utf-8")
        deadline = time.monotonic() + 30
        while len(loads) == first_loads:
            assert time.monotonic() < deadline, "the open page did not reload after the save"
            page.wait_for_timeout(100)
        print(f"\npage reloaded {loads[-1] - saved:.2f} s after the save")
        text = page.inner_text("body")
        assert "could not be built" not in text
        context.close()
    finally:
        proc.send_signal(signal.SIGINT)
        try:
            proc.wait(timeout=20)
        except subprocess.TimeoutExpired:
            proc.kill()
