"""steadyline.files: what is opened, what is refused, what lies inside a folder."""

from __future__ import annotations

import os

import pytest
from corpus.special import device, permissions_bind
from test_corpus_files import time_limit

from steadyline import files
from steadyline.pipeline.inputs import input_hash


def _fifo(path):
    os.mkfifo(path)
    return path


def test_only_regular_files_are_opened(tmp_path):
    (tmp_path / "ok.csv").write_text("a\n")
    (tmp_path / "dir").mkdir()
    os.symlink("gone", tmp_path / "dangling")
    os.symlink("self", tmp_path / "self")
    device("null")(tmp_path)  # /dev/null's numbers; skipped where devices cannot be made
    expected = {
        "pipe": "this is a named pipe (FIFO), not a regular file",
        "dir": "this is a folder, not a file",
        "dangling": "this is a link to 'gone', which does not exist",
        "self": "this is a link that leads back to itself (a loop of links)",
        "null": "this is a device, not a regular file",
        "missing": "the file does not exist",
    }
    _fifo(tmp_path / "pipe")
    assert files.read_bytes(tmp_path / "ok.csv") == b"a\n"
    with time_limit(10):
        for name, message in expected.items():
            with pytest.raises(files.Unreadable) as e:
                files.read_bytes(tmp_path / name)
            assert str(e.value) == message
            assert files.readable_fault(tmp_path / name) == message


def test_a_pipe_put_in_place_after_the_look_is_not_waited_on(tmp_path, monkeypatch):
    """Between the look (stat) and the open a file may be replaced: the open does not block
    and the open file is looked at again."""
    pipe = _fifo(tmp_path / "data.csv")
    monkeypatch.setattr(files, "fault", lambda path: None)  # the look saw a regular file
    with time_limit(10), pytest.raises(files.Unreadable, match="named pipe"):
        files.read_bytes(pipe)


def test_unreadable_file(tmp_path):
    f = tmp_path / "secret.csv"
    f.write_text("a\n")
    os.chmod(f, 0)
    with permissions_bind():
        assert files.readable_fault(f) == "cannot read the file: Permission denied"
        with pytest.raises(files.Unreadable, match="Permission denied"):
            files.read_bytes(f)


def test_inside_is_decided_on_real_paths(tmp_path):
    root = tmp_path / "projects"
    (root / "p").mkdir(parents=True)
    (tmp_path / "projects2").mkdir()
    (tmp_path / "projects2" / "x.csv").write_text("a\n")
    os.symlink(tmp_path / "projects2" / "x.csv", root / "p" / "out.csv")
    os.symlink("../p", root / "p" / "up")
    os.symlink("loop", root / "p" / "loop")
    assert files.inside(root / "p", root)
    assert files.inside(root / "p" / "loop", root)  # judged inside, then reported as a loop
    assert files.inside(root / "p" / "up" / "up", root)
    assert not files.inside(root / "p" / "out.csv", root)  # a name sharing the prefix
    assert not files.inside(tmp_path / "projects2", root)
    assert not files.inside(root / ".." / "projects2", root)


def test_the_input_hash_counts_what_it_does_not_read(tmp_path):
    """A stray named pipe changes the hash (and mending it changes it back) without being
    opened; a link to outside is hashed by where it points, its target never read."""
    root = tmp_path / "projects"
    p = root / "p"
    p.mkdir(parents=True)
    (p / "data.csv").write_text("date,value\n")
    plain = input_hash(p, "x", root=root)
    with time_limit(10):
        _fifo(p / "pipe")
        with_pipe = input_hash(p, "x", root=root)
        (p / "pipe").unlink()
    assert with_pipe != plain == input_hash(p, "x", root=root)
    secret = tmp_path / "secret.csv"
    secret.write_text("a\n")
    os.chmod(secret, 0)
    os.symlink(secret, p / "ref.csv")
    with permissions_bind():
        linked = input_hash(p, "x", root=root)  # would raise if the target were read
    secret.write_text("b, changed\n")  # its contents are no input
    assert linked == input_hash(p, "x", root=root) != plain


def test_notes_that_turn_unreadable_after_loading_break_only_their_project(tmp_path, monkeypatch):
    """The notes are read when the page is made, after the project was loaded: a named pipe
    put there in between is a problem of the project, not an internal error."""
    from corpus.kit import portfolio, write

    import steadyline.pipeline.project as pipeline
    import steadyline.site.project as project
    from steadyline.config import PortfolioSettings

    root = write(tmp_path / "projects", portfolio(files={"p/notes.md": "# Notes\n"}))
    real = project.render_notes

    def swapped(path):
        path.unlink()
        _fifo(path)
        return real(path)

    monkeypatch.setattr(project, "render_notes", swapped)
    with time_limit(10):
        outcome = pipeline.build_project(root / "p", root, PortfolioSettings())
    assert not outcome.ok
    assert [p.format() for p in outcome.problems] == [
        "p/notes.md: this is a named pipe (FIFO), not a regular file"
    ]
