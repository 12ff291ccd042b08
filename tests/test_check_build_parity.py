"""`check` and `build` agree on every case of every bad-input corpus.

The README promises that `check` prints "the same problems, in the same order, that `build`
prints". Every case of every corpus module (``tests/test_corpus*.py``, each a ``CASES`` list)
is written into a fresh folder and run through ``steadyline check`` and ``steadyline build``
(into a fresh output folder), in-process: both must print the same problem lines in the same
order and exit with the same code. A case that makes a file unreadable runs both commands
with root's power to read any file lowered (tests/corpus/special.py).

The builds here skip flushing the staged site to disk before it is swapped in (``fsync``,
``syncfs``): the flush decides only when the bytes reach the disk, never what is printed or
the exit code, and waiting for the disk made this test take four times as long.
"""

from __future__ import annotations

import importlib
from pathlib import Path

import pytest
from test_corpus_files import prepare, run

HERE = Path(__file__).resolve().parent


def _corpus_cases():
    cases = []
    for path in sorted(HERE.glob("test_corpus*.py")):
        module = importlib.import_module(path.stem)
        cases += [(path.stem, case) for case in getattr(module, "CASES", [])]
    return cases


CASES = _corpus_cases()


@pytest.fixture
def no_flush(monkeypatch):
    from steadyline.pipeline import publish

    monkeypatch.setattr(publish, "_fsync_files", lambda paths: None)
    monkeypatch.setattr(publish, "syncfs", lambda folder: True)


def test_every_corpus_is_compared():
    modules = {m for m, _ in CASES}
    assert {"test_corpus", "test_corpus_files"} <= modules
    assert len(CASES) >= 125


@pytest.mark.slow
@pytest.mark.parametrize("module,case", CASES, ids=[f"{m}:{c.name}" for m, c in CASES])
def test_check_and_build_print_the_same(module, case, tmp_path, capsys, no_flush):
    root = prepare(case, tmp_path / "projects")
    checked = run(case, ["check", "--quiet", str(root)], capsys)
    built = run(
        case,
        ["build", "--quiet", "--jobs", "1", str(root), "--out", str(tmp_path / "site")],
        capsys,
    )
    assert "internal error" not in built[2] and "Traceback" not in built[2], built[2]
    assert built[1] == checked[1], f"build printed:\n{built[2]}\ncheck printed:\n{checked[2]}"
    assert built[0] == checked[0] == case.code, (built[0], checked[0], case.code)
