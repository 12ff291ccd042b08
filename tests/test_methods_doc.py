"""docs/methods.md, the project's own methods reference, says what the code computes."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from steadyline.stats.constants import factor_table

DOC = Path(__file__).resolve().parent.parent / "docs" / "methods.md"


def test_the_constants_table_is_the_codes():
    rows = [
        line
        for line in DOC.read_text(encoding="utf-8").splitlines()
        if re.match(r"^\| \d+ \|", line)
    ]
    table = {int(r.split("|")[1]): [float(c) for c in r.split("|")[2:-1]] for r in rows}
    assert sorted(table) == list(range(2, 26))
    for f in factor_table(25):
        want = [f.d2, f.d3, f.c4, f.a2, f.a3, f.b3, f.b4, f.d3_factor, f.d4_factor, f.e2]
        assert table[f.n] == pytest.approx([round(v, 4) for v in want], abs=5e-5), f.n


def test_no_file_outside_the_repository_is_cited():
    root = DOC.parent.parent
    texts = [
        p
        for d in ("src", "tests", "docs", "scripts", "benchmarks")
        for p in (root / d).rglob("*")
        if p.suffix in (".py", ".md", ".toml", ".html", ".js")
    ]
    texts += [root / "README.md", root / "DEVELOPERS.md"]
    bad = [
        str(p.relative_to(root))
        for p in texts
        if re.search(
            r"/work/|\.\./shared|shared/METHODS|STACK\.md|METHODS\.md",
            p.read_text(encoding="utf-8"),
        )
    ]
    bad = [b for b in bad if b != "tests/test_methods_doc.py"]
    assert bad == []
