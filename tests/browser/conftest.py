"""Shared fixtures for the browser tests: the demo site built once, served on 127.0.0.1, and one
headless Chromium for the whole session.

Chromium is Debian's (`/usr/bin/chromium`, or the path in STEADYLINE_CHROMIUM), driven through the
Python `playwright` package with `executable_path`; playwright's own browser download is never
used. Without a browser the tests are skipped locally, but fail when the environment variable CI
is set: under CI a missing install step must not pass unnoticed.
"""

from __future__ import annotations

import contextlib
import functools
import http.server
import os
import threading
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]
PROJECTS = REPO / "projects"
ARTIFACTS = REPO / "test-artifacts"  # git-ignored
CHROMIUM = os.environ.get("STEADYLINE_CHROMIUM", "/usr/bin/chromium")
CHROMIUM_ARGS = [
    "--no-sandbox",  # CI runs as root
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
]


def in_ci() -> bool:
    return os.environ.get("CI", "").strip().lower() not in ("", "0", "false", "no")


def browser_unavailable(reason: str):
    """Skip locally; fail under CI, where a missing browser means a broken install step."""
    if in_ci():
        pytest.fail(
            f"{reason} (CI is set, so the browser tests must run, not be skipped)", pytrace=False
        )
    pytest.skip(reason)


class _QuietHandler(http.server.SimpleHTTPRequestHandler):
    def log_message(self, format, *args):  # noqa: A002 - signature of the base class
        pass


class _QuietServer(http.server.ThreadingHTTPServer):
    daemon_threads = True

    def handle_error(self, request, client_address):
        # the browser may drop a connection it no longer needs (page closed): not a site fault
        import sys

        if not isinstance(sys.exc_info()[1], ConnectionError):
            super().handle_error(request, client_address)


@pytest.fixture(scope="session")
def built_site(tmp_path_factory) -> Path:
    """The demo portfolio built once, in-process, serially (no process pool inside pytest)."""
    from steadyline.pipeline.build import BuildOptions, build

    out = tmp_path_factory.mktemp("browser-site") / "site"
    report = build(BuildOptions(PROJECTS, out, force=True, jobs=1))
    assert report.ok, f"demo build has broken projects: {report.broken} {report.problems}"
    assert (out / "index.html").is_file(), "the build wrote no index.html"
    return out


@contextlib.contextmanager
def _serving(folder: Path):
    """A quiet ThreadingHTTPServer serving *folder* on 127.0.0.1; its base URL (ending in '/')."""
    handler = functools.partial(_QuietHandler, directory=str(folder))
    server = _QuietServer(("127.0.0.1", 0), handler)
    thread = threading.Thread(target=server.serve_forever, name="site-server", daemon=True)
    thread.start()
    host, port = server.server_address[:2]
    try:
        yield f"http://{host}:{port}/"
    finally:
        server.shutdown()
        server.server_close()
        thread.join(timeout=5)


@pytest.fixture(scope="session")
def serve_folder():
    """Serves a folder for the rest of the session: ``serve_folder(path)`` gives its base URL
    (one server for every browser test that builds a site of its own)."""
    with contextlib.ExitStack() as stack:
        yield lambda folder: stack.enter_context(_serving(folder))


@pytest.fixture(scope="session")
def site_url(built_site) -> str:
    """Base URL (ending in '/') of a ThreadingHTTPServer serving the built site on 127.0.0.1."""
    with _serving(built_site) as url:
        yield url


@pytest.fixture(scope="session")
def browser():
    """One headless Debian Chromium for the whole session."""
    try:
        from playwright.sync_api import sync_playwright
    except ImportError as exc:
        browser_unavailable(f"the playwright package is not installed ({exc})")
    if not (os.path.isfile(CHROMIUM) and os.access(CHROMIUM, os.X_OK)):
        browser_unavailable(f"no Chromium at {CHROMIUM} (apt-get install -y chromium)")
    pw = sync_playwright().start()
    try:
        b = pw.chromium.launch(executable_path=CHROMIUM, headless=True, args=CHROMIUM_ARGS)
    except Exception as exc:  # playwright raises its own Error type
        pw.stop()
        browser_unavailable(f"Chromium at {CHROMIUM} did not start: {exc}")
    yield b
    b.close()
    pw.stop()


@pytest.fixture(scope="session")
def browser_context(browser, site_url):
    """One browser context (shared cache, so the Vega bundle is fetched once) for all pages."""
    ctx = browser.new_context(base_url=site_url, viewport={"width": 1280, "height": 900})
    ctx.set_default_timeout(30_000)
    yield ctx
    ctx.close()


@pytest.fixture(scope="session")
def artifacts_dir() -> Path:
    ARTIFACTS.mkdir(exist_ok=True)
    return ARTIFACTS
