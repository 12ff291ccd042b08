"""Fixtures shared by the pipeline tests: the demo portfolio built once per session."""

from __future__ import annotations

from pathlib import Path

import pytest

from steadyline.site.build import BuildOptions, build

DEMO = Path(__file__).resolve().parent.parent / "projects"


@pytest.fixture(scope="session")
def demo_site(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("demo") / "site"
    report = build(BuildOptions(DEMO, out, jobs=2))
    assert report.ok, [p.format() for p in report.problems]
    return out
