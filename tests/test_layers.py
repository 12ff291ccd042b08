"""The layers of the code, held by reading its imports (no module is run).

From the ground up: ``stats`` (pure statistics), then reading (``loading``, ``config``), the
analysis, ``charts`` (specs from results), ``site`` (pages from results), ``pipeline`` (the
build), and the command line, watch and notebook on top. Data flow one way: a layer imports
only layers below it, and the pages read the analysis' results, never the loader's frames.
"""

from __future__ import annotations

import ast
from pathlib import Path

import pytest

SRC = Path(__file__).resolve().parents[1] / "src" / "steadyline"
MODULES = sorted(SRC.rglob("*.py"))
MAX_LINES = 400  # a room of one concern: about 400 lines at most (common practice)


def _name(path: Path) -> str:
    parts = path.relative_to(SRC.parent).with_suffix("").parts
    return ".".join(parts[:-1] if parts[-1] == "__init__" else parts)


def _ours(path: Path) -> set[str]:
    """The modules of ours that *path* imports, as dotted names (relative imports resolved)."""
    here = _name(path)
    package = here if path.name == "__init__.py" else here.rpartition(".")[0]
    found: set[str] = set()
    for node in ast.walk(ast.parse(path.read_text(encoding="utf-8"))):
        if isinstance(node, ast.Import):
            found |= {a.name for a in node.names if a.name.split(".")[0] == "steadyline"}
        elif isinstance(node, ast.ImportFrom):
            if node.level:
                base = package.split(".")
                base = base[: len(base) - (node.level - 1)]
                mod = ".".join(base + ([node.module] if node.module else []))
            elif (node.module or "").split(".")[0] == "steadyline":
                mod = node.module or ""
            else:
                continue
            found.add(mod)
            found |= {f"{mod}.{a.name}" for a in node.names}  # `from . import x`
    return {m for m in found if _exists(m)}


def _exists(dotted: str) -> bool:
    rel = Path(*dotted.split(".")[1:])
    return (SRC / rel).with_suffix(".py").exists() or (SRC / rel / "__init__.py").exists()


def _in(dotted: str, layer: str) -> bool:
    return dotted == layer or dotted.startswith(layer + ".")


IMPORTS = {_name(p): _ours(p) for p in MODULES}


def _offenders(importer: str, forbidden: tuple[str, ...]) -> list[str]:
    return sorted(
        f"{mod} imports {dep}"
        for mod, deps in IMPORTS.items()
        if _in(mod, importer)
        for dep in deps
        if any(_in(dep, f) for f in forbidden)
    )


def test_the_modules_are_found():
    assert "steadyline.stats" in IMPORTS and "steadyline.site.project" in IMPORTS


def test_statistics_import_nothing_else_of_ours():
    assert [
        f"{mod} imports {dep}"
        for mod, deps in IMPORTS.items()
        if _in(mod, "steadyline.stats")
        for dep in deps
        if not _in(dep, "steadyline.stats")
    ] == []


def test_pages_do_not_import_the_loader_or_the_pipeline():
    assert _offenders("steadyline.site", ("steadyline.loading", "steadyline.pipeline")) == []


def test_charts_do_not_import_pages_loader_or_pipeline():
    forbidden = ("steadyline.site", "steadyline.loading", "steadyline.pipeline")
    assert _offenders("steadyline.charts", forbidden) == []


@pytest.mark.parametrize(
    "layer",
    [
        "steadyline.stats",
        "steadyline.loading",
        "steadyline.config",
        "steadyline.analysis",
        "steadyline.charts",
        "steadyline.site",
    ],
)
def test_only_the_top_imports_the_pipeline(layer):
    assert _offenders(layer, ("steadyline.pipeline", "steadyline.cli", "steadyline.watch")) == []


def test_no_module_is_crowded():
    crowded = {
        p.relative_to(SRC).as_posix(): n
        for p in MODULES
        if (n := len(p.read_text(encoding="utf-8").splitlines())) > MAX_LINES
    }
    assert crowded == {}
