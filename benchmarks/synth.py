"""A synthetic portfolio for benchmarks: projects x metrics x rows, deterministic.

Each project gets `metrics` metrics cycling through the data types a real portfolio has: a
continuous measurement rolled up by day, subgroups of 5, defectives per day (raw 0/1 flags rolled
up into a daily proportion) and categories; each project starts the cycle one type further on,
so that three metrics a project still give every type, categories included, to a quarter of
the metrics. Rows are spread over one year.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pandas as pd

KINDS = ("continuous", "subgroups", "defectives", "categories")


def write_project(
    folder: Path, index: int, metrics: int, rows: int, seed: int = 7, rotate: bool = True
) -> None:
    """One project's metadata and data files. *rotate*: the cycle of types starts *index*
    types further on (a portfolio's mix); else every project starts with a continuous metric."""
    rng = np.random.default_rng([seed, index])
    folder.mkdir(parents=True, exist_ok=True)
    start = np.datetime64("2026-01-05T06:00")
    minutes = np.sort(rng.integers(0, 330 * 24 * 60, rows))
    times = pd.to_datetime(start + minutes.astype("timedelta64[m]"))
    stamps = times.strftime("%Y-%m-%dT%H:%M")
    toml = [
        f'title = "Synthetic project {index}"',
        f'owner = "Owner {index % 17}"',
        f'phase = "{("measure", "analyze", "improve", "control")[index % 4]}"',
        'problem = "A synthetic project for benchmarks."',
        f'tags = ["bench", "group-{index % 5}"]',
        "",
        "[comparison]",
        "baseline = [2026-01-05, 2026-04-30]",
        "after = [2026-06-01]",
        "",
    ]
    for m in range(metrics):
        kind = KINDS[(m + (index if rotate else 0)) % len(KINDS)]
        name = f"m{m}.csv"
        shift = np.where(times >= pd.Timestamp("2026-06-01"), -0.8, 0.0)
        if kind == "continuous":
            df = pd.DataFrame({"t": stamps, "v": np.round(20 + shift + rng.normal(0, 1, rows), 3)})
            extra = [
                'value = "v"',
                "spec_upper = 24.0",
                "",
                "[metric.rollup]",
                'period = "day"',
                'statistic = "mean"',
            ]
        elif kind == "subgroups":
            df = pd.DataFrame(
                {"t": stamps, "v": np.round(5 + shift / 4 + rng.normal(0, 0.2, rows), 4)}
            )
            extra = ['value = "v"', "subgroup_size = 5", "spec_lower = 4.2", "spec_upper = 5.8"]
        elif kind == "defectives":
            p = np.where(times >= pd.Timestamp("2026-06-01"), 0.03, 0.06)
            df = pd.DataFrame({"t": stamps, "v": (rng.random(rows) < p).astype(int)})
            extra = [
                'value = "v"',
                "",
                "[metric.rollup]",
                'period = "day"',
                'statistic = "proportion"',
            ]
        else:
            cats = np.array(
                ["scratch", "dent", "misaligned", "missing part", "wrong colour", "loose", "other"]
            )
            w = np.array([30, 20, 15, 12, 10, 8, 5], float)
            df = pd.DataFrame({"t": stamps, "c": cats[rng.choice(len(cats), rows, p=w / w.sum())]})
            extra = ['category = "c"']
        df.to_csv(folder / name, index=False, lineterminator="\n")
        dtype = {
            "continuous": "continuous",
            "subgroups": "subgroups",
            "defectives": "defectives",
            "categories": "categories",
        }[kind]
        toml += [
            "[[metric]]",
            f'id = "m{m}"',
            f'name = "Metric {m} ({kind})"',
            f'file = "{name}"',
            f'type = "{dtype}"',
            'time = "t"',
            'better = "lower"',
            'unit = "u"',
            *extra,
            "",
        ]
    (folder / "project.toml").write_text("\n".join(toml) + "\n", "utf-8")


def write_wide_rows(
    folder: Path, rows: int, columns: int = 5, seed: int = 11, rollup: bool = True
) -> Path:
    """One project with one metric (a daily mean of "v" over time "t", or every value of "v"
    when not *rollup*) in a file of *rows* rows and *columns* columns, the others ones no
    metric uses (a line number, a shift name, temperatures), as exports from a machine's log
    look. Written a million rows at a time; returns the CSV's path."""
    rng = np.random.default_rng(seed)
    folder.mkdir(parents=True, exist_ok=True)
    csv = folder / "log.csv"
    start = np.datetime64("2026-01-05T06:00")
    span = 330 * 24 * 60  # minutes
    step = 1_000_000
    with open(csv, "w", encoding="utf-8", newline="") as fh:
        for at in range(0, rows, step):
            n = min(step, rows - at)
            minutes = (np.arange(at, at + n) * span) // max(rows, 1)
            df = pd.DataFrame(
                {
                    "t": np.datetime_as_string(start + minutes.astype("timedelta64[m]"), unit="m"),
                    "v": np.round(20 + rng.normal(0, 1, n), 3),
                }
            )
            for j in range(columns - 2):
                if j % 3 == 0:
                    df[f"line{j}"] = rng.integers(1, 9, n)
                elif j % 3 == 1:
                    df[f"shift{j}"] = np.array(["early", "late", "night"])[rng.integers(0, 3, n)]
                else:
                    df[f"temp{j}"] = np.round(rng.normal(21, 2, n), 2)
            df.to_csv(fh, index=False, header=at == 0, lineterminator="\n")
    (folder / "project.toml").write_text(
        "\n".join(
            [
                'title = "One large log"',
                'owner = "Owner"',
                'phase = "measure"',
                'problem = "A synthetic project for benchmarks."',
                "",
                "[comparison]",
                "baseline = [2026-01-05, 2026-04-30]",
                "after = [2026-06-01]",
                "",
                "[[metric]]",
                'id = "m"',
                'name = "Cycle time"',
                'file = "log.csv"',
                'type = "continuous"',
                'time = "t"',
                'value = "v"',
                'better = "lower"',
                'unit = "s"',
                *(
                    ["", "[metric.rollup]", 'period = "day"', 'statistic = "mean"']
                    if rollup
                    else []
                ),
            ]
        )
        + "\n",
        "utf-8",
    )
    return csv


def write_many_columns(folder: Path, columns: int) -> Path:
    """One project whose file has a header of *columns* columns and one row; its CSV's path."""
    write_wide_rows(folder, 10, 5)
    csv = folder / "log.csv"
    names = ["t", "v"] + [f"reading_{i:07d}" for i in range(columns - 2)]
    row = ["2026-01-05T06:00", "20.5"] + ["1"] * (columns - 2)
    csv.write_text(",".join(names) + "\n" + ",".join(row) + "\n", "utf-8")
    return csv


def generate(
    root: Path, projects: int, metrics: int, rows: int, handover_pack: bool = False
) -> Path:
    root.mkdir(parents=True, exist_ok=True)
    if handover_pack:
        (root / "portfolio.toml").write_text("handover_pack = true\n", "utf-8")
    for i in range(projects):
        write_project(root / f"p{i:04d}", i, metrics, rows)
    return root


if __name__ == "__main__":
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("out", type=Path)
    ap.add_argument("--projects", type=int, default=200)
    ap.add_argument("--metrics", type=int, default=3)
    ap.add_argument("--rows", type=int, default=5000)
    a = ap.parse_args()
    generate(a.out, a.projects, a.metrics, a.rows)
