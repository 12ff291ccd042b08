"""steadyline benchmarks: every figure is reported as a ratio to a baseline measured in the same run.

    python benchmarks/run.py            # the reference sizes (about 45 minutes on 2 cores)
    python benchmarks/run.py --quick    # small sizes, to check the script works (4 minutes)
    python benchmarks/run.py --max-rows 1000000 --skip-portfolio   # leave out the largest

Figures:
1. full build of P projects x M metrics x R rows (every type of metric, categories included),
   against the floor: reading the same CSVs with pandas and writing the same number of output
   bytes; builds and floors alternate over five rounds, each after the disk has caught up
   (sync), and the ratio is of the two medians (target: within 3x the floor);
2. no-op rebuild (target: under 1 s) and rebuild after one CSV changed (target: under 0.5 s),
   five runs each, against reading every input file once;
3. watch latency from a saved CSV to the rewritten page, five saves, at 200 projects and at
   1,000 (target: under 0.3 s), against the same;
4. page weight, the project's site bytes, peak memory and build time of a one-metric project
   (its file of five columns) at 10^3 to 10^7 rows, with a daily roll-up and without one,
   against the 10^3 case and against the peak memory and time of a plain pandas read of the
   same file (weight should stay flat in rows; the 10^7-row build within 3 GB);
   and the same for a 300 MB file of 16 columns (target: within 2 GB), and the time to refuse a
   file of a million columns (target: under a second) against reading its bytes once;
5. all statistics of a 10^6-row metric against a plain pandas read of the same file (target:
   under one second);
6. reading and checking a 100,000-row workbook against the same data as a CSV file, and the
   workbook reader used against openpyxl reading the same sheet;
7. the hand-over pack: a portfolio built with and without it, and rebuilt after one CSV changed.
Every figure of several runs lists them all (the spread), and states their median.
Results go to stdout and to benchmarks/out/results.md.
"""

from __future__ import annotations

import argparse
import math
import os
import shutil
import signal
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
REPO = HERE.parent
sys.path.insert(0, str(REPO / "src"))
sys.path.insert(0, str(HERE))

import synth  # noqa: E402

# Commands run as on an ordinary installation: Python caches compiled modules (a shell that
# sets PYTHONDONTWRITEBYTECODE would otherwise make every fresh process compile them again).
ENV = {k: v for k, v in os.environ.items() if k != "PYTHONDONTWRITEBYTECODE"}
ENV.update(
    PYTHONPATH=os.pathsep.join(filter(None, [str(REPO / "src"), os.environ.get("PYTHONPATH")])),
    CI="1",
)


def run(cmd: list[str]) -> float:
    t = time.perf_counter()
    subprocess.run(cmd, env=ENV, check=False, stdout=subprocess.DEVNULL)
    return time.perf_counter() - t


def child_peak_kib(code: str) -> tuple[float, int]:
    """Run Python code in a fresh process; return (seconds, peak RSS in KiB)."""
    # The peak is the process's own high-water mark (VmHWM), not getrusage's ru_maxrss: Linux
    # keeps ru_maxrss across fork and exec, so a child would report this process's peak (the
    # generator's frames) whenever that was higher than its own.
    wrapper = (
        "import sys,time\nt=time.perf_counter()\n"
        + code
        + "\nhwm = next(int(x.split()[1]) for x in open('/proc/self/status') if x.startswith('VmHWM'))"
        + "\nprint(time.perf_counter()-t, hwm)"
    )
    out = subprocess.run(
        [sys.executable, "-c", wrapper], env=ENV, check=True, capture_output=True, text=True
    ).stdout.split()
    return float(out[-2]), int(out[-1])


def steadyline(*args: str) -> list[str]:
    return [sys.executable, "-m", "steadyline", *args]


def floor_read_write(root: Path, out_bytes: int, scratch: Path) -> float:
    """Read every CSV with pandas and write out_bytes to disk: the work no build can avoid."""
    code = (
        f"import pandas as pd, pathlib, os\n"
        f"for p in sorted(pathlib.Path({str(root)!r}).rglob('*.csv')): pd.read_csv(p)\n"
        f"d = pathlib.Path({str(scratch)!r}); d.mkdir(exist_ok=True)\n"
        f"chunk = b'x' * (1 << 20); left = {out_bytes}; i = 0\n"
        f"while left > 0:\n"
        f"    n = min(left, 1 << 20); (d / f'f{{i}}').write_bytes(chunk[:n]); left -= n; i += 1\n"
    )
    t = time.perf_counter()
    subprocess.run([sys.executable, "-c", code], env=ENV, check=True)
    return time.perf_counter() - t


def read_all(root: Path) -> float:
    t = time.perf_counter()
    for p in sorted(root.rglob("*")):
        if p.is_file():
            p.read_bytes()
    return time.perf_counter() - t


def tree_bytes(root: Path) -> int:
    return sum(p.stat().st_size for p in root.rglob("*") if p.is_file())


def settle() -> None:
    """Let the disk catch up before a timed step: write-back of what an earlier step wrote or
    deleted would otherwise be charged to whichever step comes next (this matters on a virtual
    disk, where it can double a step's time). No pause after it: on the reference machine a
    pause of two seconds made the floor slower by up to half, which would flatter the ratio."""
    os.sync()


def forget_digests(root: Path) -> None:
    """Drop the input-digest memo of the projects folder, so that a build is a first build."""
    from steadyline.pipeline.inputs import digest_memo_for

    digest_memo_for(root).path.unlink(missing_ok=True)


def bench_portfolio(
    work: Path, projects: int, metrics: int, rows: int, rows_out: list, rounds: int = 5
):
    root = synth.generate(work / "portfolio", projects, metrics, rows)
    # Full builds and floors alternate, each after the disk has caught up, five rounds: this
    # machine's speed drifts over minutes, and the floor (mostly writing the bytes) takes from
    # 1.4 to 3.6 s from one minute to the next, so each figure is the median of its five runs
    # and the ratio is of the medians. Each full build is a first build into a new folder (no
    # site, no remembered input digests); the tool's own cache (the Vega bundle) stays, as on
    # any machine that has built a site before.
    fulls, floors = [], []
    site = work / "site"
    for i in range(rounds):
        for old in (work / f"site-{i - 1}", work / f"floor-{i - 1}"):
            shutil.rmtree(old, ignore_errors=True)
        forget_digests(root)
        site = work / f"site-{i}"
        settle()
        fulls.append(run(steadyline("build", str(root), "--out", str(site), "--quiet")))
        settle()
        floors.append(floor_read_write(root, tree_bytes(site), work / f"floor-{i}"))
    shutil.rmtree(work / f"floor-{rounds - 1}", ignore_errors=True)
    full, floor = sorted(fulls)[rounds // 2], sorted(floors)[rounds // 2]
    rows_out.append(
        (
            f"full build, {projects} projects x {metrics} metrics x {rows:,} rows "
            f"(median of {rounds}: {', '.join(f'{t:.1f}' for t in fulls)} s)",
            f"{full:.1f} s",
            f"floor {floor:.1f} s (median of {', '.join(f'{t:.1f}' for t in floors)})",
            f"{full / floor:.1f}x",
            "within 3x",
        )
    )
    settle()
    base = read_all(root)
    noops = []
    for _ in range(rounds):
        settle()
        noops.append(run(steadyline("build", str(root), "--out", str(site), "--quiet")))
    rows_out.append(
        _spread_row("no-op rebuild", noops, f"read inputs {base:.2f} s", base, "under 1 s")
    )
    csv = sorted((root / "p0000").glob("*.csv"))[0]
    ones = []
    for _ in range(rounds):
        csv.write_text(csv.read_text() + csv.read_text().splitlines()[-1] + "\n")
        settle()
        ones.append(run(steadyline("build", str(root), "--out", str(site), "--quiet")))
    rows_out.append(
        _spread_row(
            "rebuild after one CSV changed", ones, f"read inputs {base:.2f} s", base, "under 0.5 s"
        )
    )
    settle()
    lat = watch_latency(root, work / "watch-site", csv)
    rows_out.append(
        _spread_row(
            f"watch, {projects} projects: saved CSV to rewritten page",
            lat,
            f"read inputs {base:.2f} s",
            base,
            "under 0.3 s",
        )
    )


def _spread_row(what: str, times: list[float], baseline: str, base: float, target: str) -> tuple:
    """A figure as the median of several runs, every run listed (the spread, not the best)."""
    mid = sorted(times)[len(times) // 2]
    runs = ", ".join(f"{t:.2f}" for t in times)
    return (
        f"{what} (median of {len(times)}: {runs} s)",
        f"{mid:.2f} s",
        baseline,
        f"{mid / base:.1f}x",
        target,
    )


def bench_watch_scale(work: Path, projects: int, rows_out: list):
    """Watch latency at a larger portfolio: *projects* projects of 3 metrics x 1,000 rows.
    A save is hashed and rebuilt alone, so the latency should not grow with the portfolio."""
    root = synth.generate(work / f"watch-{projects}", projects, 3, 1_000)
    settle()
    base = read_all(root)
    csv = sorted((root / "p0000").glob("*.csv"))[0]
    lat = watch_latency(root, work / f"watch-{projects}-site", csv)
    rows_out.append(
        _spread_row(
            f"watch, {projects:,} projects x 3 metrics x 1,000 rows: saved CSV to rewritten page",
            lat,
            f"read inputs {base:.2f} s",
            base,
            "under 0.3 s",
        )
    )
    shutil.rmtree(root)
    shutil.rmtree(work / f"watch-{projects}-site", ignore_errors=True)


def bench_pack(work: Path, projects: int, rows_out: list):
    """The hand-over pack's cost: the same portfolio built with and without it (first builds,
    alternating, three rounds), and a rebuild after one CSV changed, where only the changed
    project's pack is drawn again."""
    plain = synth.generate(work / "pack-off", projects, 3, 2_000)
    packed = synth.generate(work / "pack-on", projects, 3, 2_000, handover_pack=True)
    times: dict[str, list[float]] = {"off": [], "on": []}
    for _ in range(3):
        for key, root in (("off", plain), ("on", packed)):
            site = work / f"pack-{key}-site"
            shutil.rmtree(site, ignore_errors=True)
            forget_digests(root)
            settle()
            times[key].append(run(steadyline("build", str(root), "--out", str(site), "--quiet")))
    off = sorted(times["off"])[1]
    rows_out.append(
        _spread_row(
            f"full build, {projects} projects x 3 metrics x 2,000 rows, with the hand-over pack",
            times["on"],
            f"without it {off:.1f} s (median of {', '.join(f'{t:.1f}' for t in times['off'])})",
            off,
            "none set (the pack is asked for)",
        )
    )
    ones: dict[str, list[float]] = {"off": [], "on": []}
    for _ in range(3):
        for key, root in (("off", plain), ("on", packed)):
            csv = sorted((root / "p0000").glob("*.csv"))[0]
            csv.write_text(csv.read_text() + csv.read_text().splitlines()[-1] + "\n")
            settle()
            site = work / f"pack-{key}-site"
            ones[key].append(run(steadyline("build", str(root), "--out", str(site), "--quiet")))
    off1 = sorted(ones["off"])[1]
    rows_out.append(
        _spread_row(
            "rebuild after one CSV changed, with the hand-over pack",
            ones["on"],
            f"without it {off1:.2f} s (median of {', '.join(f'{t:.2f}' for t in ones['off'])})",
            off1,
            "one project's pack drawn again",
        )
    )
    for key in ("off", "on"):
        shutil.rmtree(work / f"pack-{key}", ignore_errors=True)
        shutil.rmtree(work / f"pack-{key}-site", ignore_errors=True)


def watch_latency(root: Path, site: Path, csv: Path, rounds: int = 5) -> list[float]:
    proc = subprocess.Popen(
        steadyline("watch", str(root), "--out", str(site), "--no-serve", "--quiet"),
        env=ENV,
        stdout=subprocess.DEVNULL,
        stderr=subprocess.DEVNULL,
    )
    page = site / "projects" / csv.parent.name / "results.json"
    try:
        deadline = time.time() + 900
        while not (site / ".steadyline-manifest.json").exists() and time.time() < deadline:
            time.sleep(0.2)
        time.sleep(1.0)
        times = []
        for _ in range(rounds):
            before = page.read_bytes()
            t = time.perf_counter()
            with open(csv, "a") as fh:
                fh.write(csv.read_text().splitlines()[-1] + "\n")
            while time.perf_counter() - t < 60:
                try:
                    if page.read_bytes() != before:
                        break
                except OSError:
                    pass
                time.sleep(0.01)
            times.append(time.perf_counter() - t)
            time.sleep(1.0)
        return times
    finally:
        proc.send_signal(signal.SIGINT)
        proc.wait(timeout=30)


def _mib(kib: int) -> str:
    return f"{kib / 1024:,.0f} MiB"


def _build_code(root: Path, site: Path) -> str:
    return (
        f"from steadyline.pipeline.build import build, BuildOptions\nfrom pathlib import Path\n"
        f"build(BuildOptions(Path({str(root)!r}), Path({str(site)!r}), jobs=1))"
    )


def _pandas_read(csv: Path) -> tuple[float, int]:
    """The floor: pandas reading the same file, every column, with its default C reader."""
    return child_peak_kib(f"import pandas as pd\npd.read_csv({str(csv)!r})")


def bench_rows(work: Path, sizes: list[int], rows_out: list, rollup: bool = True):
    """One metric, its file of five columns (the metric uses two), rolled up by day or not (then
    drawn by period past 400 points), at each size: page weight and the whole site's bytes,
    peak memory and time of the build, against the 10^3 case and a pandas read of the file."""
    pages, sites = {}, {}
    how = "a daily roll-up" if rollup else "no roll-up"
    for n in sizes:
        root = work / f"rows-{n}"
        csv = synth.write_wide_rows(root / "one", n, 5, rollup=rollup)
        (root / "portfolio.toml").write_text("max_file_mb = 2000\n")
        site = work / f"rows-{n}-site"
        settle()
        secs, peak = child_peak_kib(_build_code(root, site))
        settle()
        rsecs, rpeak = _pandas_read(csv)
        pages[n] = (site / "projects" / "one" / "index.html").stat().st_size
        sites[n] = tree_bytes(site / "projects" / "one")
        size = f"{csv.stat().st_size / 1e6:,.0f} MB" if n >= 10**5 else "small"
        what = f"one metric, {n:,} rows ({size}, 5 columns, {how})"
        first = sizes[0]
        rows_out.append(
            (
                f"{what}: page weight",
                f"{pages[n] / 1024:.0f} KiB",
                f"page at {first:,} rows {pages[first] / 1024:.0f} KiB",
                f"{pages[n] / pages[first]:.2f}x",
                "flat in rows",
            )
        )
        rows_out.append(
            (
                f"{what}: the project's site bytes (pages, results.json, downloads)",
                f"{sites[n] / 1024:.0f} KiB",
                f"at {first:,} rows {sites[first] / 1024:.0f} KiB",
                f"{sites[n] / sites[first]:.2f}x",
                "flat in rows",
            )
        )
        rows_out.append(
            (
                f"{what}: peak memory of the build",
                _mib(peak),
                f"pandas read {_mib(rpeak)}",
                f"{peak / rpeak:.2f}x",
                "under 3 GB at 10^7 rows" if n >= 10**7 else "bounded by the file",
            )
        )
        rows_out.append(
            (
                f"{what}: build time",
                f"{secs:.1f} s",
                f"pandas read {rsecs:.1f} s",
                f"{secs / rsecs:.1f}x",
                "none set",
            )
        )
        shutil.rmtree(root)
        shutil.rmtree(site)


def bench_large_file(work: Path, megabytes: int, rows_out: list):
    """A file of about *megabytes* MB and 16 columns, of which the metric uses two."""
    root = work / "large"
    rows = megabytes * 11_800  # about 85 bytes a row
    csv = synth.write_wide_rows(root / "one", rows, 16)
    (root / "portfolio.toml").write_text("max_file_mb = 2000\n")
    site = work / "large-site"
    settle()
    secs, peak = child_peak_kib(_build_code(root, site))
    settle()
    rsecs, rpeak = _pandas_read(csv)
    what = f"a {csv.stat().st_size / 1e6:,.0f} MB file ({rows:,} rows, 16 columns, 2 used)"
    rows_out.append(
        (
            f"{what}: peak memory of the build",
            _mib(peak),
            f"pandas read {_mib(rpeak)}",
            f"{peak / rpeak:.2f}x",
            "under 2 GB for 300 MB",
        )
    )
    rows_out.append(
        (
            f"{what}: build time",
            f"{secs:.1f} s",
            f"pandas read {rsecs:.1f} s",
            f"{secs / rsecs:.1f}x",
            "none set",
        )
    )
    shutil.rmtree(root)
    shutil.rmtree(site)


def bench_many_columns(work: Path, columns: int, rows_out: list):
    """A file of *columns* columns (and one row): refused, with its width named, from its first
    line alone; timed inside the process (the loader, not Python's start), against Python
    reading the first line of the file (pandas takes minutes to read a header this wide)."""
    root = work / "many-columns"
    csv = synth.write_many_columns(root / "one", columns)
    code = (
        f"from pathlib import Path\nfrom steadyline.config import load_portfolio, "
        f"load_project\nfrom steadyline.loading import load_metric\n"
        f"from steadyline.errors import ProjectError\nroot = Path({str(root)!r})\n"
        f"s, _ = load_portfolio(root)\nspec, _ = load_project(root / 'one', root, s)\n"
        f"t0 = time.perf_counter()\ntry:\n    load_metric(spec.metrics[0], s)\n"
        f"except ProjectError as e:\n    assert 'columns, over the limit' in "
        f"str(e.problems[0]), e.problems\nt = time.perf_counter() - t0\n"
    )
    code += (
        f"t0 = time.perf_counter()\nopen({str(csv)!r}, encoding='utf-8').readline()\n"
        f"print(t, time.perf_counter() - t0)\n"
    )
    out = subprocess.run(
        [sys.executable, "-c", "import time\n" + code],
        env=ENV,
        capture_output=True,
        text=True,
        check=True,
    ).stdout.split()
    secs, base = float(out[0]), float(out[1])
    rows_out.append(
        (
            f"a file of {columns:,} columns ({csv.stat().st_size / 1e6:,.0f} MB): "
            "refused, its width named",
            f"{secs:.2f} s",
            f"Python reads its first line {base:.2f} s",
            f"{secs / base:.1f}x",
            "under 1 s",
        )
    )
    shutil.rmtree(root)


def bench_stats(work: Path, n: int, rows_out: list):
    import numpy as np
    import pandas as pd

    rng = np.random.default_rng(1)
    csv = work / "stats.csv"
    pd.DataFrame({"v": np.round(rng.normal(10, 1, n), 4)}).to_csv(csv, index=False)
    read_secs, _ = child_peak_kib(f"import pandas as pd\npd.read_csv({str(csv)!r})")
    # scipy is imported before the clock starts: the figure is the computation, not the imports
    code = (
        f"import pandas as pd, numpy as np\nv = pd.read_csv({str(csv)!r})['v'].to_numpy()\n"
        "import scipy.stats, scipy.special, scipy.integrate\n"
        "from steadyline import stats\nt0=time.perf_counter()\n"
        "c = stats.individuals(v)\ns = stats.detect_signals(c, 'nelson')\n"
        "r = stats.analyse_runs(v)\nb = stats.box_summary(v)\nh = stats.histogram(v)\n"
        "a = stats.anderson_darling(v)\n"
        "k = stats.capability(v, c.process_sigma, lsl=6, usl=14, normality=a)\n"
        "t = time.perf_counter()-t0\nprint(t, 0)\nraise SystemExit\n"
    )
    runs = []
    for _ in range(5):  # five fresh processes: the first call's page faults vary run to run
        out = subprocess.run(
            [sys.executable, "-c", "import time\n" + code],
            env=ENV,
            capture_output=True,
            text=True,
            check=True,
        ).stdout.split()
        runs.append(float(out[0]))
    rows_out.append(
        _spread_row(
            f"all statistics of a {n:,}-row metric",
            runs,
            f"pandas read {read_secs:.2f} s",
            read_secs,
            "under 1 s",
        )
    )


def _write_workbook_pair(root: Path, n: int) -> tuple[Path, Path]:
    """The same *n* rows (a date-time, a measured value, a shift name) as a workbook (dates as
    spreadsheet dates, values as numbers) and as a CSV file, each in its own project."""
    import numpy as np
    import openpyxl
    import pandas as pd

    rng = np.random.default_rng(11)
    start = pd.Timestamp("2026-01-05 06:00")
    minutes = np.sort(rng.integers(0, 330 * 24 * 60, n))
    times = [start + pd.Timedelta(minutes=int(m)) for m in minutes]
    values = np.round(20 + rng.normal(0, 1, n), 3).tolist()
    shifts = [("early", "late", "night")[i % 3] for i in range(n)]
    paths = []
    for kind in ("xlsx", "csv"):
        folder = root / kind
        folder.mkdir(parents=True)
        (folder / "project.toml").write_text(
            f'title = "Workbook {kind}"\nowner = "Bench"\nphase = "measure"\n'
            f'problem = "Reading speed."\n\n[[metric]]\nid = "m"\nname = "M"\n'
            f'file = "data.{kind}"\ntype = "continuous"\ntime = "t"\nvalue = "v"\n'
            f'better = "lower"\n\n[metric.rollup]\nperiod = "day"\nstatistic = "mean"\n'
        )
        path = folder / f"data.{kind}"
        if kind == "csv":
            pd.DataFrame(
                {"t": [t.strftime("%Y-%m-%dT%H:%M") for t in times], "v": values, "shift": shifts}
            ).to_csv(path, index=False)
        else:
            wb = openpyxl.Workbook(write_only=True)
            ws = wb.create_sheet("Data")
            ws.append(["t", "v", "shift"])
            for row in zip((t.to_pydatetime() for t in times), values, shifts, strict=True):
                ws.append(row)
            wb.save(path)
        paths.append(path)
    return paths[0], paths[1]


def bench_workbook(work: Path, n: int, rows_out: list):
    """Reading and checking a metric of *n* rows from a workbook, against the same data as a
    CSV file, in one process (the median of five reads of each, alternating); and the reader
    chosen (python-calamine) against openpyxl's fastest mode (read-only, values only) reading
    the same sheet."""
    root = work / "workbook"
    xlsx, csv = _write_workbook_pair(root, n)
    code = (
        f"from pathlib import Path\nimport statistics, time\n"
        f"from steadyline.config import load_portfolio, load_project\n"
        f"from steadyline.loading import load_metric\nimport openpyxl, python_calamine\n"
        f"root = Path({str(root)!r})\ns, _ = load_portfolio(root)\n"
        f"specs = {{k: load_project(root / k, root, s)[0].metrics[0] for k in "
        f"('xlsx', 'csv')}}\nt = {{'xlsx': [], 'csv': [], 'openpyxl': [], 'calamine': []}}\n"
        f"for _ in range(5):\n"
        f"    for k in ('xlsx', 'csv'):\n"
        f"        t0 = time.perf_counter()\n        load_metric(specs[k], s)\n"
        f"        t[k].append(time.perf_counter() - t0)\n"
        f"    t0 = time.perf_counter()\n"
        f"    wb = openpyxl.load_workbook({str(xlsx)!r}, read_only=True, data_only=True)\n"
        f"    rows = list(wb['Data'].iter_rows(values_only=True))\n    wb.close()\n"
        f"    t['openpyxl'].append(time.perf_counter() - t0)\n"
        f"    t0 = time.perf_counter()\n"
        f"    rows = python_calamine.CalamineWorkbook.from_path({str(xlsx)!r})"
        f".get_sheet_by_name('Data').to_python()\n"
        f"    t['calamine'].append(time.perf_counter() - t0)\n"
        f"print(*(statistics.median(t[k]) for k in ('xlsx', 'csv', 'openpyxl', 'calamine')))\n"
    )
    out = subprocess.run(
        [sys.executable, "-c", code], env=ENV, capture_output=True, text=True, check=True
    ).stdout.split()
    wsecs, csecs, osecs, ksecs = (float(x) for x in out)
    size = f"{xlsx.stat().st_size / 1e6:.1f} MB; CSV {csv.stat().st_size / 1e6:.1f} MB"
    rows_out.append(
        (
            f"a {n:,}-row workbook ({size}, 3 columns): read and checked",
            f"{wsecs:.2f} s",
            f"the same data as CSV {csecs:.2f} s",
            f"{wsecs / csecs:.1f}x",
            "none set",
        )
    )
    rows_out.append(
        (
            "the same workbook's sheet read by python-calamine (the reader used)",
            f"{ksecs:.2f} s",
            f"openpyxl, read-only and values only {osecs:.2f} s",
            f"{ksecs / osecs:.2f}x",
            "none set",
        )
    )
    shutil.rmtree(root)


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true", help="small sizes, to check the script")
    ap.add_argument("--skip-portfolio", action="store_true")
    ap.add_argument(
        "--max-rows",
        type=int,
        default=None,
        help="the largest one-metric file, a power of ten (default 10^7)",
    )
    a = ap.parse_args()
    rows: list[tuple] = []
    with tempfile.TemporaryDirectory(prefix="steadyline-bench-") as tmp:
        work = Path(tmp)
        if a.quick:
            bench_stats(work, 100_000, rows)
            bench_workbook(work, 20_000, rows)
            bench_rows(work, [1_000, 10_000, 100_000], rows)
            bench_rows(work, [1_000, 10_000, 100_000], rows, rollup=False)
            bench_large_file(work, 20, rows)
            bench_many_columns(work, 100_000, rows)
            if not a.skip_portfolio:
                bench_portfolio(work, 6, 3, 2_000, rows)
                bench_watch_scale(work, 12, rows)
                bench_pack(work, 3, rows)
        else:
            bench_stats(work, 1_000_000, rows)
            bench_workbook(work, 100_000, rows)
            top = 7 if a.max_rows is None else round(math.log10(a.max_rows))
            bench_rows(work, [10**k for k in range(3, top + 1)], rows)
            bench_rows(work, [10**k for k in range(3, top + 1)], rows, rollup=False)
            bench_large_file(work, 300, rows)
            bench_many_columns(work, 1_000_000, rows)
            if not a.skip_portfolio:
                bench_portfolio(work, 200, 3, 5_000, rows)
                bench_watch_scale(work, 1_000, rows)
                bench_pack(work, 20, rows)
    lines = [
        "| figure | measured | baseline (same run) | ratio | target |",
        "|---|---|---|---|---|",
    ]
    lines += ["| " + " | ".join(r) + " |" for r in rows]
    text = "\n".join(lines)
    print(text)
    (HERE / "out").mkdir(exist_ok=True)
    (HERE / "out" / "results.md").write_text(
        f"machine: {os.cpu_count()} cores; python {sys.version.split()[0]}\n\n{text}\n"
    )
    shutil.rmtree(HERE / "__pycache__", ignore_errors=True)


if __name__ == "__main__":
    main()
