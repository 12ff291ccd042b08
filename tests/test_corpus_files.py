"""The bad-input corpus of files that are not plain readable files, and of links that lead
outside the projects folder; each case with the exact line it must print.

Run like the cases of test_corpus.py (``steadyline check`` in-process; every expected pattern
matches one printed line in full; the exit code), and, in test_check_build_parity.py, through
``steadyline build`` too, which must print the same lines and exit with the same code.

Decisions recorded here:
- only a regular file is ever opened: a named pipe, socket or device, a dangling link, a loop of
  links or a folder where a file is named is described, never opened (opening a named pipe would
  block for ever, opening a device can act on it);
- such a file, or one that cannot be read, is an error of the project that uses it (its
  project.toml, notes or a metric's file), and a warning when no project uses it; every other
  project is built all the same;
- a project folder, metadata file or data file whose real path lies outside the projects
  folder (or, for a project's files, outside its own folder) is refused and never read; a
  link to outside that no project uses is left alone, unread and unremarked;
- a broken portfolio.toml (in any of these ways, or in its TOML) is an error: both commands
  exit 1.

Unreadable files are made for real: see tests/corpus/special.py (root's power to read any file
is lowered for the calling thread while the command runs).
"""

from __future__ import annotations

import re
import signal
from contextlib import contextmanager, nullcontext
from pathlib import Path

import pytest
from corpus.kit import good_csv, meta, portfolio, write
from corpus.special import (
    both,
    dangling,
    device,
    fifo,
    folder,
    link_out,
    loop,
    needs_bound_permissions,
    permissions_bind,
    unix_socket,
    unreadable,
)
from test_corpus import Case

from steadyline.cli import main

FILE = r"^p/project\.toml:\d+: metric\[1\]\.file: "
STRAY = "; the project does not use it, so it is left alone$"
TOP = "; no project uses it, so it is left alone$"
DENIED = "cannot read the file: Permission denied"
OTHER = {"q/project.toml": meta(), "q/data.csv": good_csv()}  # a healthy second project

CASES = [
    # --- a metric's data file that cannot be read
    Case(
        "data-file-fifo",
        portfolio(),
        [FILE + r"'data\.csv' is a named pipe \(FIFO\), not a regular file$"],
        1,
        setup=fifo("p/data.csv"),
    ),
    Case(
        "data-file-socket",
        portfolio(),
        [FILE + r"'data\.csv' is a socket, not a regular file$"],
        1,
        setup=unix_socket("p/data.csv"),
    ),
    Case(
        "data-file-device",
        portfolio(),
        [FILE + r"'data\.csv' is a device, not a regular file$"],
        1,
        setup=device("p/data.csv"),
    ),
    Case(
        "data-file-dangling-link",
        portfolio(),
        [FILE + r"'data\.csv' is a link to 'gone\.csv', which does not exist$"],
        1,
        setup=dangling("p/data.csv"),
    ),
    Case(
        "data-file-link-loop",
        portfolio(),
        [FILE + r"'data\.csv' is a link that leads back to itself \(a loop of links\)$"],
        1,
        setup=loop("p/data.csv"),
    ),
    Case(
        "data-file-is-a-folder",
        portfolio(),
        [FILE + r"'data\.csv' is a folder, not a file$"],
        1,
        setup=folder("p/data.csv"),
    ),
    Case(
        "data-file-unreadable",
        portfolio(),
        [r"^p/data\.csv: " + DENIED + "$"],
        1,
        setup=unreadable("p/data.csv"),
    ),
    Case(
        "data-file-fifo-beside-healthy-project",
        portfolio(files=OTHER),
        [FILE + r"'data\.csv' is a named pipe \(FIFO\), not a regular file$"],
        1,
        setup=fifo("p/data.csv"),
        absent=[r"^q/"],
    ),
    # --- the metadata file
    Case(
        "project-toml-fifo",
        portfolio(),
        [r"^p/project\.toml: this is a named pipe \(FIFO\), not a regular file$"],
        1,
        setup=fifo("p/project.toml"),
    ),
    Case(
        "project-toml-device",
        portfolio(),
        [r"^p/project\.toml: this is a device, not a regular file$"],
        1,
        setup=device("p/project.toml"),
    ),
    Case(
        "project-toml-unreadable",
        portfolio(files=OTHER),
        [r"^p/project\.toml: " + DENIED + "$"],
        1,
        setup=unreadable("p/project.toml"),
        absent=[r"^q/"],
    ),
    Case(
        "project-toml-dangling-link",
        portfolio(),
        [r"^p/project\.toml: this is a link to 'gone\.toml', which does not exist$"],
        1,
        setup=dangling("p/project.toml", "gone.toml"),
    ),
    Case(
        "project-toml-link-loop",
        portfolio(),
        [r"^p/project\.toml: this is a link that leads back to itself \(a loop of links\)$"],
        1,
        setup=loop("p/project.toml"),
    ),
    Case(
        "project-toml-is-a-folder",
        portfolio(),
        [r"^p/project\.toml: this is a folder, not a file$"],
        1,
        setup=folder("p/project.toml"),
    ),
    Case(
        "project-folder-unreadable",
        portfolio(files=OTHER),
        [r"^p/: cannot read the folder: Permission denied$"],
        1,
        setup=unreadable("p"),
        absent=[r"^q/"],
    ),
    # --- the notes (notes.md is used whenever it is there)
    Case(
        "notes-is-a-folder",
        portfolio(files={"p/notes.md/": ""}),
        [r"^p/project\.toml: notes: the notes file 'notes\.md' is a folder, not a file$"],
        1,
    ),
    Case(
        "notes-fifo",
        portfolio(),
        [
            r"^p/project\.toml: notes: the notes file 'notes\.md' is a named pipe \(FIFO\), not a "
            r"regular file$"
        ],
        1,
        setup=fifo("p/notes.md"),
    ),
    Case(
        "notes-unreadable",
        portfolio(files={"p/notes.md": "# Notes\n"}),
        [
            r"^p/project\.toml: notes: cannot read the notes file 'notes\.md': Permission "
            r"denied$"
        ],
        1,
        setup=unreadable("p/notes.md"),
    ),
    Case(
        "notes-named-dangling-link",
        portfolio(toml=meta(top={"notes": "n.md"})),
        [
            r"^p/project\.toml:5: notes: the notes file 'n\.md' is a link to 'gone\.md', which "
            r"does not exist$"
        ],
        1,
        setup=dangling("p/n.md", "gone.md"),
    ),
    # --- stray files: no project uses them, a warning each, the project is built
    Case(
        "stray-unreadable-file",
        portfolio(files={"p/old.csv": good_csv()}),
        [r"^p/old\.csv: warning: " + DENIED + STRAY],
        0,
        setup=unreadable("p/old.csv"),
    ),
    Case(
        "stray-fifo",
        portfolio(),
        [r"^p/pipe: warning: this is a named pipe \(FIFO\), not a regular file" + STRAY],
        0,
        setup=fifo("p/pipe"),
    ),
    Case(
        "stray-socket",
        portfolio(),
        [r"^p/sock: warning: this is a socket, not a regular file" + STRAY],
        0,
        setup=unix_socket("p/sock"),
    ),
    Case(
        "stray-device",
        portfolio(),
        [r"^p/null: warning: this is a device, not a regular file" + STRAY],
        0,
        setup=device("p/null"),
    ),
    Case(
        "stray-dangling-link",
        portfolio(),
        [r"^p/old\.csv: warning: this is a link to 'gone\.csv', which does not exist" + STRAY],
        0,
        setup=dangling("p/old.csv"),
    ),
    Case(
        "stray-link-loop",
        portfolio(),
        [r"^p/self: warning: this is a link that leads back to itself \(a loop of links\)" + STRAY],
        0,
        setup=loop("p/self"),
    ),
    Case(
        "stray-fifo-in-a-subfolder",
        portfolio(),
        [r"^p/archive/pipe: warning: this is a named pipe \(FIFO\), not a regular file" + STRAY],
        0,
        setup=fifo("p/archive/pipe"),
    ),
    Case(
        "stray-unreadable-folder",
        portfolio(files={"p/archive/old.csv": good_csv()}),
        [r"^p/archive: warning: cannot read the folder: Permission denied" + STRAY],
        0,
        setup=unreadable("p/archive"),
    ),
    Case("stray-folder-named-like-a-data-file", portfolio(files={"p/old.csv/": ""}), [], 0),
    Case(
        "stray-link-out-to-an-unreadable-file",
        portfolio(),
        [],
        0,
        setup=link_out("p/ref.csv", good_csv(), unreadable_target=True),
    ),
    Case(
        "top-level-unreadable-file",
        portfolio(files={"list.txt": "x\n"}),
        [r"^list\.txt: warning: " + DENIED + TOP],
        0,
        setup=unreadable("list.txt"),
    ),
    Case(
        "top-level-fifo",
        portfolio(),
        [r"^pipe: warning: this is a named pipe \(FIFO\), not a regular file" + TOP],
        0,
        setup=fifo("pipe"),
    ),
    Case(
        "top-level-dangling-link",
        portfolio(),
        [r"^moved: warning: this is a link to 'gone\.csv', which does not exist" + TOP],
        0,
        setup=dangling("moved"),
    ),
    Case(
        "top-level-link-loop",
        portfolio(),
        [r"^self: warning: this is a link that leads back to itself \(a loop of links\)" + TOP],
        0,
        setup=loop("self"),
    ),
    # --- portfolio.toml: broken in any way, both commands fail
    Case(
        "portfolio-toml-syntax-error",
        portfolio(files={"portfolio.toml": 'title = "x\n'}),
        [r"^portfolio\.toml:1: TOML syntax error at column \d+: "],
        1,
    ),
    Case(
        "portfolio-toml-fifo",
        portfolio(),
        [r"^portfolio\.toml: this is a named pipe \(FIFO\), not a regular file$"],
        1,
        setup=fifo("portfolio.toml"),
    ),
    Case(
        "portfolio-toml-unreadable",
        portfolio(files={"portfolio.toml": 'title = "x"\n'}),
        [r"^portfolio\.toml: " + DENIED + "$"],
        1,
        setup=unreadable("portfolio.toml"),
    ),
    Case(
        "portfolio-toml-dangling-link",
        portfolio(),
        [r"^portfolio\.toml: this is a link to 'gone\.toml', which does not exist$"],
        1,
        setup=dangling("portfolio.toml", "gone.toml"),
    ),
    Case(
        "portfolio-toml-is-a-folder",
        portfolio(files={"portfolio.toml/": ""}),
        [r"^portfolio\.toml: this is a folder, not a file$"],
        1,
    ),
    # --- nothing from outside the projects folder
    Case(
        "project-folder-link-out",
        portfolio(),
        [
            r"^ext/: the project folder is a link to '/[^']*/ext', outside the projects "
            r"folder; nothing outside the projects folder is read: move the project in instead$"
        ],
        1,
        setup=link_out("ext", is_folder={"project.toml": meta(), "data.csv": good_csv()}),
        absent=[r"^p/"],
    ),
    Case(
        "project-toml-link-out",
        portfolio(),
        [
            r"^p/project\.toml: project\.toml is a link to '/.*/outside/project\.toml', outside "
            r"the project folder; a project reads only files inside its own folder: copy the "
            r"file in instead$"
        ],
        1,
        setup=link_out("p/project.toml", meta()),
    ),
    Case(
        "project-toml-link-to-another-project",
        portfolio(files=OTHER),
        [
            r"^p/project\.toml: project\.toml is a link to '\.\./q/project\.toml', outside the "
            r"project folder; a project reads only files inside its own folder"
        ],
        1,
        setup=both(
            lambda root: (root / "p/project.toml").unlink(),
            lambda root: (root / "p/project.toml").symlink_to("../q/project.toml"),
        ),
    ),
    Case(
        "portfolio-toml-link-out",
        portfolio(),
        [
            r"^portfolio\.toml: portfolio\.toml is a link to '/[^']*/portfolio\.toml', "
            r"outside the projects folder; nothing outside the projects folder is read: copy the "
            r"file in instead$"
        ],
        1,
        setup=link_out("portfolio.toml", 'title = "x"\n'),
    ),
    Case(
        "data-file-link-out-unreadable",
        portfolio(),
        [FILE + r"'data\.csv' points outside the project folder"],
        1,
        setup=link_out("p/data.csv", good_csv(), unreadable_target=True),
    ),
    Case(
        "notes-link-out-unreadable",
        portfolio(),
        [
            r"^p/project\.toml: notes: the notes file 'notes\.md' points outside the project "
            r"folder"
        ],
        1,
        setup=link_out("p/notes.md", "# secret\n", unreadable_target=True),
    ),
]


# ----------------------------------------------------------------------------- running a case


class Hang(Exception):
    """A command did not come back (a named pipe opened for reading blocks for ever)."""


@contextmanager
def time_limit(seconds: int):
    def alarm(signum, frame):
        raise Hang(f"no answer after {seconds} s")

    old = signal.signal(signal.SIGALRM, alarm)
    signal.alarm(seconds)
    try:
        yield
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)


def prepare(case: Case, root: Path) -> Path:
    write(root, case.files)
    if case.setup:
        case.setup(root)
    return root


def run(case: Case, argv: list[str], capsys) -> tuple[int, list[str], str]:
    """*argv* run in-process for a prepared case: exit code, the problem lines printed (the
    report of `check` goes to stdout, that of `build` to stderr; --quiet leaves the summary
    out) and all that was printed."""
    bound = permissions_bind() if needs_bound_permissions(case.setup) else nullcontext()
    with time_limit(60), bound:
        code = main(argv)
    out = capsys.readouterr()
    lines = (out.out if argv[0] == "check" else out.err).splitlines()
    return code, lines, out.out + out.err


def assert_case(case: Case, code: int, lines: list[str], text: str) -> None:
    assert "Traceback" not in text and "internal error" not in text, text
    for pattern in case.expect:
        assert any(re.search(pattern, ln) for ln in lines), (
            f"no line matches {pattern!r}; printed:\n{text}"
        )
    for pattern in case.absent:
        assert not any(re.search(pattern, ln) for ln in lines), text
    assert len(lines) == len(case.expect), text  # each fault prints its line, nothing more
    assert code == case.code, text


def test_corpus_names_are_unique():
    assert len({c.name for c in CASES}) == len(CASES)


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    root = prepare(case, tmp_path / "projects")
    code, lines, text = run(case, ["check", "--quiet", str(root)], capsys)
    assert_case(case, code, lines, text)


def test_every_fault_beside_a_healthy_project_costs_only_its_own(tmp_path, capsys):
    """One portfolio holding a project for each fault, stray faults in a healthy project and at
    the top, and one untouched project: the build publishes every healthy project as usual and
    each broken one as its notice page."""
    files = dict(OTHER)
    broken = {}
    setups = []
    for case in CASES:
        if case.code != 1 or not case.setup or case.name.startswith("portfolio"):
            continue
        if case.name == "project-folder-link-out":  # a project of its own, 'ext'
            setups.append(case.setup)
            broken["ext"] = case
            continue
        slug = case.name
        for name, content in case.files.items():
            if name.startswith("p/"):
                files[f"{slug}/{name[2:]}"] = content
        broken[slug] = case
        setups.append(_moved(case.setup, slug))
    files["q/old.csv"] = good_csv()
    setups += [unreadable("q/old.csv"), fifo("q/pipe"), fifo("pipe"), unreadable("list.txt")]
    files["list.txt"] = "x\n"
    root = write(tmp_path / "projects", files)
    for s in setups:
        s(root)
    out = tmp_path / "site"
    with time_limit(120), permissions_bind():
        # one process: a worker process would regain root's power to read any file
        code = main(["build", str(root), "--out", str(out), "--quiet", "--jobs", "1"])
    err = capsys.readouterr().err
    assert code == 1, err
    assert "internal error" not in err and "Traceback" not in err, err
    assert (out / "projects" / "q" / "results.json").is_file()  # built as usual
    assert re.search(r"^q/old\.csv: warning: ", err, re.M) and re.search(
        r"^pipe: warning", err, re.M
    )
    for slug in broken:
        page = (out / "projects" / slug / "index.html").read_text(encoding="utf-8")
        assert "not built" in page, slug
        assert not (out / "projects" / slug / "results.json").exists(), slug
        assert re.search(rf"^{re.escape(slug)}/", err, re.M), (slug, err)


def _moved(setup, slug: str):
    """The set-up of a one-project case ('p'), applied to the project folder *slug*."""

    def moved(root: Path) -> None:
        link = root / "p"
        link.symlink_to(slug)  # the set-up works through 'p', which leads to the project
        try:
            setup(root)
        finally:
            link.unlink()

    moved.unreadable = needs_bound_permissions(setup)
    return moved


def test_a_file_made_unreadable_after_a_build_is_found_by_the_next(tmp_path, capsys):
    """The digests remembered between builds are not trusted for a file whose mode changed: a
    data file made unreadable after a build (its contents and modification time unchanged)
    breaks its project on the next build, as `check` says, instead of the old pages being
    kept as if nothing had happened."""
    import os

    root = write(tmp_path / "projects", portfolio())
    settled = 1_700_000_000_000_000_000  # long ago: the digest is remembered
    os.utime(root / "p" / "data.csv", ns=(settled, settled))
    out = str(tmp_path / "site")
    assert main(["build", "--quiet", "--jobs", "1", str(root), "--out", out]) == 0
    os.chmod(root / "p" / "data.csv", 0)
    case = Case(
        "made-unreadable", {}, [r"^p/data\.csv: " + DENIED + "$"], 1, setup=unreadable("p/data.csv")
    )
    built = run(case, ["build", "--quiet", "--jobs", "1", str(root), "--out", out], capsys)
    assert_case(case, *built)
    checked = run(case, ["check", "--quiet", str(root)], capsys)
    assert checked[:2] == built[:2]


def test_the_readme_shows_what_each_fault_prints():
    """Every line the README's section on files that cannot be read shows is a line a corpus
    case expects (a line number and an absolute path aside), and the section shows each
    kind of fault."""
    import test_corpus

    readme = (Path(__file__).resolve().parents[1] / "README.md").read_text(encoding="utf-8")
    section = readme.split("### Files that cannot be read", 1)[1].split("No input file is", 1)[0]
    shown = re.findall(r"`([^`\n]+: [^`\n]+)`", section)
    block = section.split("```", 2)[1]
    shown += [re.split(r"\s{3,}", ln.strip())[0] for ln in block.splitlines() if ln.strip()]
    patterns = [p for c in CASES + test_corpus.CASES for p in c.expect]
    for line in shown:
        assert any(re.search(p, line) for p in patterns), line
    for kind in (
        "named pipe",
        "socket",
        "device",
        "which does not exist",
        "loop of links",
        "a folder, not a file",
        "cannot read the file",
        "cannot read the folder",
        "outside the project folder",
        "outside the projects folder",
    ):
        assert any(kind in line for line in shown), kind
    assert len(shown) >= 25
