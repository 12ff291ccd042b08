"""A measurement study's file (type ``measurement-study``) -> StudyData: one measurement per
row with its part and appraiser, checked to be a crossed and balanced study (at least two
parts and two appraisers, every appraiser measuring every part the same number of times, at
least twice), each problem naming the file and the row or column."""

from __future__ import annotations

import numpy as np
import pandas as pd

from ..config import MetricSpec, PortfolioSettings
from .cells import _text, clean_label
from .data import StudyData
from .frames import _frame_table
from .header import _require_column
from .numbers import _numbers
from .problems import MAX_LISTED_ROWS, _Rows
from .reading import _read_table

# Listed cells of an unbalanced study before the rest are counted.
STUDY_CELLS_LISTED = 5


def load_study(spec: MetricSpec, settings: PortfolioSettings | None = None) -> StudyData:
    """Read and check a measurement study (type ``measurement-study``). Raises ProjectError
    with every problem: a missing column, a value that is no number, a blank cell, and a study
    that is not crossed and balanced (one part or appraiser, a part an appraiser never measured,
    cells with different numbers of trials, a single trial), each naming the file and the
    row or column."""
    settings = settings or PortfolioSettings()
    out = _Rows(spec)
    needed = [c for c in (spec.part, spec.appraiser, spec.value) if c is not None]
    df, header = _read_table(spec, settings, out, needed)
    if df is None:
        out.raise_if_failed()
    assert df is not None
    return _study_shape(spec, df, header, out)


def load_study_frame(spec: MetricSpec, frame: pd.DataFrame) -> StudyData:
    """:func:`load_study` for data in a DataFrame, its cells read as a CSV file's (see
    :func:`.metric.load_frame`). Raises ProjectError with every problem; the frame is not
    changed."""
    df, out = _frame_table(spec, frame)
    return _study_shape(spec, df, list(df.columns), out)


def _study_shape(spec: MetricSpec, df: pd.DataFrame, header: list[str], out: _Rows) -> StudyData:
    cols = {"part": spec.part, "appraiser": spec.appraiser, "value": spec.value}
    if not all([_require_column(header, k, c, spec, out) for k, c in cols.items()]):
        out.raise_if_failed()
    assert spec.part and spec.appraiser and spec.value
    values, parts, apprs = _study_cells(spec, df, out)
    out.raise_if_failed()
    lines = df.index.to_numpy(dtype=np.int64)
    part_names = list(dict.fromkeys(parts.tolist()))
    appr_names = list(dict.fromkeys(apprs.tolist()))
    _two_or_more(spec, part_names, appr_names, out)
    out.raise_if_failed()
    cell_lines: dict[tuple[str, str], list[int]] = {}
    for p, o, line in zip(parts.tolist(), apprs.tolist(), lines.tolist(), strict=True):
        cell_lines.setdefault((p, o), []).append(line)
    _crossed(spec, cell_lines, part_names, appr_names, out)
    usual = _balanced(spec, cell_lines, out)
    out.raise_if_failed()
    if usual < 2:
        out.add(
            None,
            f"column '{spec.value}'",
            "each appraiser measured each part once; "
            "repeatability needs at least two trials of every part by every appraiser",
        )
        out.raise_if_failed()
    return StudyData(
        spec,
        values.to_numpy(dtype=float),
        tuple(parts.tolist()),
        tuple(apprs.tolist()),
        lines,
        len(df),
        list(out.problems),
    )


def _study_cells(
    spec: MetricSpec, df: pd.DataFrame, out: _Rows
) -> tuple[pd.Series, np.ndarray, np.ndarray]:
    """(the measurements, each row's part, each row's appraiser); a blank cell is an error."""
    assert spec.part and spec.appraiser and spec.value
    before = len(out.problems)
    values = _numbers(df, spec.value, spec, out, what="a measurement")
    # _numbers leaves a blank value out with a warning; a study needs every trial measured
    out.problems[before:] = [
        p
        for p in out.problems[before:]
        if not (p.severity == "warning" and p.message.startswith("blank cell"))
    ]
    labels = {}
    for key, col in (("part", spec.part), ("appraiser", spec.appraiser)):
        cells = _text(df[col]).map(clean_label)
        out.rows(
            list(df.index[(cells == "").to_numpy()]),
            f"column '{col}'",
            f"blank cell; every measurement names its {key}",
        )
        labels[key] = cells.to_numpy(dtype=object)
    out.rows(
        list(df.index[(_text(df[spec.value]) == "").to_numpy()]),
        f"column '{spec.value}'",
        "blank cell; a measurement study needs every trial "
        "measured (a missing trial leaves its part and appraiser short of the others)",
    )
    return values, labels["part"], labels["appraiser"]


def _two_or_more(
    spec: MetricSpec, part_names: list[str], appr_names: list[str], out: _Rows
) -> None:
    """A study needs at least two parts and two appraisers."""
    for key, col, names, least in (
        ("part", spec.part, part_names, "10 are usual"),
        ("appraiser", spec.appraiser, appr_names, "2 or 3 are usual"),
    ):
        if len(names) < 2:
            out.add(
                None,
                f"column '{col}'",
                f"every row names the same {key} ({names[0]!r}); a "
                f"measurement study needs at least two {key}s ({least}: AIAG, from memory)"
                + (
                    "; reproducibility cannot be estimated from one"
                    if key == "appraiser"
                    else "; the parts' spread is what the gauge is judged against"
                ),
            )


def _crossed(
    spec: MetricSpec,
    cell_lines: dict[tuple[str, str], list[int]],
    part_names: list[str],
    appr_names: list[str],
    out: _Rows,
) -> None:
    """Every appraiser measures every part (else an error naming the first pair missing);
    raises ProjectError when one is missing."""
    empty = [(p, o) for p in part_names for o in appr_names if (p, o) not in cell_lines]
    if empty:
        p, o = empty[0]
        more = (
            f" ({len(empty)} pairs of part and appraiser have no measurement)"
            if len(empty) > 1
            else ""
        )
        out.add(
            None,
            f"column '{spec.appraiser}'",
            f"appraiser {o!r} never measured part {p!r}"
            f"{more}; in a crossed study every appraiser measures every part",
        )
        out.raise_if_failed()


def _balanced(spec: MetricSpec, cell_lines: dict[tuple[str, str], list[int]], out: _Rows) -> int:
    """The usual number of trials of a part by an appraiser (the most common, then the most);
    each pair with another number is an error naming its lines (the first few listed)."""
    counts = [len(v) for v in cell_lines.values()]
    usual = max(set(counts), key=lambda n: (counts.count(n), n))  # the most common, then most
    odd = sorted(
        ((k, v) for k, v in cell_lines.items() if len(v) != usual), key=lambda kv: kv[1][0]
    )
    for (p, o), cl in odd[:STUDY_CELLS_LISTED]:
        shown = ", ".join(str(x) for x in cl[:MAX_LISTED_ROWS])
        out.add(
            cl[0],
            f"column '{spec.part}'",
            f"part {p!r} has {plural_rows(len(cl), 'measurement')} by appraiser {o!r} "
            f"({'line' if len(cl) == 1 else 'lines'} {shown}"
            f"{' …' if len(cl) > MAX_LISTED_ROWS else ''}), the other "
            f"pairs {usual}; every part needs the same number of trials by every appraiser",
        )
    if len(odd) > STUDY_CELLS_LISTED:
        out.add(
            None,
            f"column '{spec.part}'",
            f"and {len(odd) - STUDY_CELLS_LISTED} more pairs "
            f"of part and appraiser without {usual} trials",
        )
    return usual


def plural_rows(n: int, word: str) -> str:
    return f"{n} {word}{'' if n == 1 else 's'}"
