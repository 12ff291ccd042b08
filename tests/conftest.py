"""Fixtures shared by the pipeline tests: the demo portfolio built once per session."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import pytest

from steadyline.pipeline.build import build
from steadyline.pipeline.options import BuildOptions

DEMO = Path(__file__).resolve().parent.parent / "projects"

# The caches builds keep in the user's cache folder (Vega bundle, input digests) go to a folder
# of this test run, also for the builds the tests start in other processes: the hundreds of
# temporary portfolios the tests build leave nothing in the user's real cache.
if "STEADYLINE_TEST_CACHE" not in os.environ:
    os.environ["STEADYLINE_TEST_CACHE"] = tempfile.mkdtemp(prefix="steadyline-test-cache-")
    os.environ["XDG_CACHE_HOME"] = os.environ["STEADYLINE_TEST_CACHE"]

# The build date the index judges staleness against (the reproducible-builds convention):
# Monday 2026-11-23, three days after the demo's last data, so that the demo's statuses, and
# the tests that read them, do not change with the day the tests run.
os.environ["SOURCE_DATE_EPOCH"] = "1795392000"


@pytest.fixture(scope="session")
def demo_site(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("demo") / "site"
    report = build(BuildOptions(DEMO, out, jobs=2))
    assert report.ok, [p.format() for p in report.problems]
    return out
