"""``steadyline start``: a data file -> project.toml beside it, of guesses with their reasons.

The command's steps in order: refuse what it cannot start (a study, an unknown type, a
project.toml already there), read the file as a build does, guess, write. Nothing is written
until every guess is made.
"""

from __future__ import annotations

import os
from pathlib import Path

import pandas as pd

from .. import files, formats
from ..config import DATA_TYPES, PROJECT_FILE, SLUG_RE, CsvOptions, MetricSpec, PortfolioSettings
from ..vocab import DataType
from .guessing import Guess, StartError, guess
from .reading import profile, reading_spec, sniff
from .writing import default_owner, render, write_new

# the types a data file's guesses can end in: a measurement study has no time column to guess by
PROCESS_TYPES = tuple(t for t in DATA_TYPES if t != DataType.STUDY)


def start(
    data: Path,
    *,
    type_: str | None = None,
    columns: dict[str, str | None] | None = None,
    owner: str | None = None,
    title: str | None = None,
    problem: str | None = None,
) -> tuple[Path, Guess, list[str]]:
    """Write ``project.toml`` beside *data*; the path written, the guesses and notes to print.
    Raises StartError when it cannot (no such file, a project.toml already there, nothing to
    chart); nothing is written then."""
    columns = columns or {}
    if type_ == DataType.STUDY:  # no time column, no guess to make: written by hand
        raise StartError(
            f"--type {type_}: start writes process metrics; a measurement study "
            "names its part, appraiser and value columns by hand (see the README)"
        )
    if type_ is not None and type_ not in PROCESS_TYPES:
        raise StartError(f"--type must be one of {', '.join(PROCESS_TYPES)}, got {type_!r}")
    folder = data.parent
    target = folder / PROJECT_FILE
    shown = os.fspath(data)
    if files.exists(target):
        raise StartError(
            f"{target}: already exists; steadyline start never overwrites a file: "
            "edit it, or move it away first"
        )
    spec, df, sniffed, sheet = _read(data, shown)
    for k, v in columns.items():
        if v is not None and v not in df.columns:
            raise StartError(
                f"{shown}: --{k} {v!r}: no such column; the file has columns: "
                f"{', '.join(df.columns)}"
            )
    cols = profile(df, spec)
    g = guess(cols, len(df), columns, type_)
    g.csv = spec.csv
    g.sheet = sheet
    t = next((c for c in cols if c.name == g.columns.get("time")), None)
    if t is not None and t.kind == "time" and t.values is not None and t.values.size:
        lo, hi = t.values.min(), t.values.max()
        g.dates = (pd.Timestamp(lo).date(), pd.Timestamp(hi).date())
    notes = []
    if not SLUG_RE.match(folder.resolve().name):
        notes.append(
            f"the folder name {folder.resolve().name!r} is not a valid project slug; "
            "rename it with lower-case letters, digits and hyphens before building"
        )
    text = render(folder.resolve(), data.name, g, sniffed, owner or default_owner(), title, problem)
    write_new(target, text)
    return target, g, notes


def _read(data: Path, shown: str) -> tuple[MetricSpec, pd.DataFrame, list[str], str | None]:
    """The file's every column as stripped text, read as a build reads it: the metric spec it
    was read with (its CSV options sniffed), the table, the reasons for those options, and the
    workbook's sheet read (None for other files)."""
    from ..loading import _read_table, _Rows, _text

    try:
        raw = files.read_bytes(data)  # only a regular file is opened, read-only
    except files.Unreadable as e:
        raise StartError(f"{shown}: {e}") from None
    if formats.data_format(data.name) == formats.CSV:
        csv, sniffed = sniff(raw)
    else:  # a workbook's or Parquet file's cells are read as stored: nothing to sniff
        csv, sniffed = CsvOptions(), []
    spec = reading_spec(data, shown, csv)
    out = _Rows(spec)
    df, _header = _read_table(spec, PortfolioSettings(), out, None)  # every column
    if df is None:
        first = next(p for p in out.problems if p.severity == "error")
        raise StartError(first.format())
    df = pd.DataFrame({c: _text(df[c]) for c in df.columns}, index=df.index)  # stripped text
    return spec, df, sniffed, out.sheet
