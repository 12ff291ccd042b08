"""The command line: build, check, watch, merge.

This is the one place that turns our errors into exit codes:
  0  everything built / no errors (warnings may have been printed);
  1  a project has errors (it is shown as a notice on the site; the rest was published);
  2  the command could not run at all (bad arguments, missing projects folder, an output the
     output rule refuses, a fault of the machine such as a full or read-only disk).
"""

from __future__ import annotations

import argparse
import os
import sys
import traceback
from pathlib import Path
from typing import TYPE_CHECKING, TypeAlias

from . import __version__
from .errors import Problem, SteadylineError


def _print_problems(problems: list[Problem], stream=None) -> None:
    stream = stream or sys.stderr
    seen = set()
    for p in sorted(problems, key=lambda p: (p.path, p.line or 0, p.where, p.message)):
        line = p.format()
        if line not in seen:
            seen.add(line)
            print(line, file=stream)


def _progress(total: int, enabled: bool):
    """A progress bar on a terminal; silent in CI or when output is not a terminal."""
    if not enabled or total < 2:
        return None, lambda slug: None
    from rich.progress import BarColumn, MofNCompleteColumn, Progress, TextColumn

    prog = Progress(
        TextColumn("building"),
        BarColumn(),
        MofNCompleteColumn(),
        TextColumn("{task.description}"),
        transient=True,
    )
    task = prog.add_task("", total=total)
    return prog, lambda slug: prog.update(task, advance=1, description=slug)


def _show_progress(args) -> bool:
    return not args.quiet and sys.stderr.isatty() and not os.environ.get("CI")


def cmd_build(args) -> int:
    from .config import PORTFOLIO_FILE, discover
    from .pipeline.build import BuildOptions, build

    projects = Path(args.projects_dir)
    out = Path(args.out)
    folders = discover(projects) if projects.is_dir() else []
    if args.shard is not None:
        from .pipeline.build import shard_of

        folders = [f for f in folders if shard_of(f.name, args.shard[1]) == args.shard[0]]
    total = len(folders)
    prog, cb = _progress(total, _show_progress(args))
    opts = BuildOptions(
        projects, out, force=args.force, jobs=args.jobs, debug=args.debug, shard=args.shard
    )
    if prog is not None:
        with prog:
            report = build(opts, cb)
    else:
        report = build(opts, cb)
    _print_problems(report.problems)
    if not args.quiet:
        state = "published" if report.written else "unchanged, nothing written"
        settings = (
            ""
            if report.ok or report.broken
            else f"; {PORTFOLIO_FILE} has errors, its defaults were used"
        )
        print(
            f"steadyline: {len(report.built)} built, {len(report.reused)} unchanged, "
            f"{len(report.broken)} with errors{settings}; site {state} at {out}",
            file=sys.stderr,
        )
    if args.strict and any(p.severity == "warning" for p in report.problems):
        return 1
    return 0 if report.ok else 1


def cmd_check(args) -> int:
    from .pipeline.build import check

    problems = check(Path(args.projects_dir), debug=args.debug)
    _print_problems(problems, sys.stdout)
    errors = sum(p.severity == "error" for p in problems)
    warnings = len(problems) - errors
    if not args.quiet:
        print(
            f"steadyline check: {errors} error{'s' if errors != 1 else ''}, {warnings} "
            f"warning{'s' if warnings != 1 else ''}",
            file=sys.stderr,
        )
    if errors or (args.strict and warnings):
        return 1
    return 0


def cmd_merge(args) -> int:
    from .pipeline.merge import merge

    out = Path(args.out)
    report = merge([Path(d) for d in args.shard_dirs], out)
    _print_problems(report.problems)
    if not args.quiet:
        print(
            f"steadyline: {len(args.shard_dirs)} shards merged: "
            f"{len(report.built) + len(report.broken)} projects, {len(report.broken)} with "
            f"errors; site published at {out}",
            file=sys.stderr,
        )
    return 0 if report.ok else 1


def _shard(text: str) -> tuple[int, int]:
    """``I/N`` with 1 <= I <= N: shard I of N."""
    try:
        i, n = (int(x) for x in text.split("/"))
    except ValueError:
        raise argparse.ArgumentTypeError(f"{text!r}: expected I/N, e.g. 2/4") from None
    if not 1 <= i <= n:
        raise argparse.ArgumentTypeError(f"{text!r}: I must be from 1 to N")
    return i, n


def cmd_watch(args) -> int:
    from .watch import watch

    return watch(
        Path(args.projects_dir),
        Path(args.out),
        port=args.port,
        serve=not args.no_serve,
        jobs=args.jobs,
        debug=args.debug,
        quiet=args.quiet,
    )


def cmd_start(args) -> int:
    from .start.command import start
    from .start.guessing import COLUMN_OPTIONS

    columns = {k: getattr(args, k) for k in COLUMN_OPTIONS}
    path, guess, notes = start(
        Path(args.data),
        type_=args.type,
        columns=columns,
        owner=args.owner,
        title=args.title,
        problem=args.problem,
    )
    if not args.quiet:
        cols = ", ".join(f"{k} '{v}'" for k, v in guess.columns.items())
        print(
            f"steadyline: wrote {path}: a {guess.type} metric ({cols}); the comments say what "
            "each guess rests on: check them, then run steadyline check",
            file=sys.stderr,
        )
    for note in notes:
        print(f"steadyline: note: {note}", file=sys.stderr)
    return 0


def parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="steadyline",
        description="Build a static site of baseline and before/after displays from project "
        "folders of CSV files and a project.toml each.",
    )
    p.add_argument("--version", action="version", version=f"steadyline {__version__}")
    sub = p.add_subparsers(dest="command", required=True)
    _build_parser(sub)
    _check_parser(sub)
    _watch_parser(sub)
    _merge_parser(sub)
    _start_parser(sub)
    return p


def _common(sp: argparse.ArgumentParser, out: bool = True) -> None:
    """The options the commands that read a portfolio share."""
    sp.add_argument(
        "projects_dir",
        nargs="?",
        default="projects",
        help="the portfolio folder with one sub-folder per project (default: projects)",
    )
    if out:
        sp.add_argument("--out", default="site", help="output folder (default: site)")
        sp.add_argument(
            "--jobs",
            type=int,
            default=None,
            help="projects built in parallel (default: number of cores)",
        )
    sp.add_argument("--debug", action="store_true", help="show tracebacks of internal errors")
    sp.add_argument("--quiet", action="store_true", help="print only problems")


if TYPE_CHECKING:  # what add_subparsers returns (a class argparse names privately)
    _Sub: TypeAlias = argparse._SubParsersAction[argparse.ArgumentParser]


def _build_parser(sub: _Sub) -> None:
    b = sub.add_parser("build", help="build the static site")
    _common(b)
    b.add_argument(
        "--force",
        action="store_true",
        help="rebuild every project, even those whose inputs did not change",
    )
    b.add_argument("--strict", action="store_true", help="exit 1 on warnings too")
    b.add_argument(
        "--shard",
        type=_shard,
        default=None,
        metavar="I/N",
        help="build only shard I of N of the projects (see merge)",
    )
    b.set_defaults(func=cmd_build)


def _check_parser(sub: _Sub) -> None:
    c = sub.add_parser("check", help="validate every project without writing anything")
    _common(c, out=False)
    c.add_argument("--strict", action="store_true", help="exit 1 on warnings too")
    c.set_defaults(func=cmd_check)


def _watch_parser(sub: _Sub) -> None:
    w = sub.add_parser("watch", help="build, serve on 127.0.0.1 and rebuild on every change")
    _common(w)
    w.add_argument("--port", type=int, default=8000, help="port on 127.0.0.1 (default: 8000)")
    w.add_argument("--no-serve", action="store_true", help="only rebuild; do not serve")
    w.set_defaults(func=cmd_watch)


def _merge_parser(sub: _Sub) -> None:
    m = sub.add_parser("merge", help="merge sites built with build --shard into one site")
    m.add_argument(
        "shard_dirs", nargs="+", metavar="SHARD_DIR", help="the output folder of each shard's build"
    )
    m.add_argument("--out", default="site", help="output folder (default: site)")
    m.add_argument("--debug", action="store_true", help="show tracebacks of internal errors")
    m.add_argument("--quiet", action="store_true", help="print only problems")
    m.set_defaults(func=cmd_merge)


def _start_parser(sub: _Sub) -> None:
    s = sub.add_parser(
        "start",
        help="write a commented project.toml for a data file, guessing "
        "its columns and data type (never overwrites a file)",
    )
    s.add_argument("data", help="the CSV file, in the new project's folder")
    s.add_argument(
        "--type",
        default=None,
        help="the data type instead of the guess: "
        "continuous, subgroups, defectives, defects or categories",
    )
    for col in ("time", "value", "subgroup", "count", "size", "category"):
        s.add_argument(
            f"--{col}",
            default=None,
            metavar="COLUMN",
            help=f"the {col} column instead of the guess",
        )
    s.add_argument("--owner", default=None, help="who leads the project (default: your user name)")
    s.add_argument(
        "--title", default=None, help="the project's title (default: from the folder's name)"
    )
    s.add_argument("--problem", default=None, help="the problem statement")
    s.add_argument("--quiet", action="store_true", help="print only problems")
    s.add_argument("--debug", action="store_true", help="show tracebacks of internal errors")
    s.set_defaults(func=cmd_start)


def main(argv: list[str] | None = None) -> int:
    args = parser().parse_args(argv)
    try:
        return args.func(args)
    except SteadylineError as e:
        print(f"steadyline: {e}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("steadyline: interrupted; the published site was left as it was", file=sys.stderr)
        return 130
    except Exception as e:  # the one catch-all
        if getattr(args, "debug", False):
            traceback.print_exc()
        else:
            print(
                f"steadyline: internal error: {type(e).__name__}: {e} (run with --debug for "
                "the traceback)",
                file=sys.stderr,
            )
        return 2


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
