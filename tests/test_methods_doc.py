"""docs/methods.md, the project's own methods reference, says what the code computes."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

from steadyline.stats.constants import factor_table

ROOT = Path(__file__).resolve().parents[1]
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


def _architecture_paths() -> set[str]:
    """The files and folders the architecture section's tree names, as paths under
    src/steadyline ("charts/series/run.py"); a line may name several ("a.py, b.py  what")."""
    text = (ROOT / "DEVELOPERS.md").read_text(encoding="utf-8")
    block = text.split("## Architecture", 1)[1].split("```", 2)[1]
    paths: set[str] = set()
    stack: list[str] = []
    for line in block.splitlines()[2:]:  # after "src/steadyline/"
        indent = len(line) - len(line.lstrip(" "))
        if line.strip() and indent == 0:
            break  # the next top-level folder (benchmarks/, projects/ …)
        head = line.strip().split("  ")[0]
        names = [n.strip() for n in head.split(",")]
        if not head or indent % 2 or not all(re.fullmatch(r"[\w]+(\.py|/)", n) for n in names):
            continue  # a continued description
        depth = indent // 2 - 1
        del stack[depth:]
        for n in names:
            paths.add("/".join([*stack, n.rstrip("/")]))
        if names[-1].endswith("/"):
            stack.append(names[-1].rstrip("/"))
    return paths


def test_developers_architecture_matches_the_tree():
    """Every module and package of src/steadyline is in DEVELOPERS.md's architecture tree, and
    the tree names nothing that is not there (package faces, __init__.py, need no line)."""
    src = ROOT / "src" / "steadyline"
    tree = {
        p.relative_to(src).as_posix()
        for p in src.rglob("*.py")
        if p.name != "__init__.py" and "__pycache__" not in p.parts
    }
    tree |= {
        p.relative_to(src).as_posix()
        for p in src.rglob("*")
        if p.is_dir() and (p / "__init__.py").exists() and p != src
    }
    named = _architecture_paths()
    named_dirs = {n for n in named if not n.endswith(".py")}
    assert sorted(tree - named) == []
    assert sorted(named - tree - named_dirs) == []
