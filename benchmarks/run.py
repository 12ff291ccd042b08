"""steadyline benchmarks: every figure is reported as a ratio to a baseline measured in the same run.

    python benchmarks/run.py            # the reference sizes (takes several minutes)
    python benchmarks/run.py --quick    # small sizes, to check the script works

Figures:
1. full build of P projects x M metrics x R rows, against the floor: reading the same CSVs with
   pandas and writing the same number of output bytes; builds and floors alternate over five
   rounds, each after the disk has caught up (sync), and the ratio is of the two medians
   (target: within 5x the floor);
2. no-op rebuild, and rebuild after one CSV changed (target: under 1 s for 200 projects), against
   reading every input file once;
3. watch latency from a saved CSV to the rewritten page (target: under 1 s), against the same;
4. page weight and peak memory of a one-metric project at 10^3, 10^5 and 10^6 rows, against the
   10^3 page and against the peak memory of a plain pandas read of the same file (page weight
   should stay flat in rows);
5. all statistics of a 10^6-row metric against a plain pandas read of the same file (target:
   under one second).
Results go to stdout and to benchmarks/out/results.md.
"""

from __future__ import annotations

import argparse
import os
import resource
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
ENV.update(PYTHONPATH=str(REPO / "src"), CI="1")


def run(cmd: list[str]) -> float:
    t = time.perf_counter()
    subprocess.run(cmd, env=ENV, check=False, stdout=subprocess.DEVNULL)
    return time.perf_counter() - t


def child_peak_kib(code: str) -> tuple[float, int]:
    """Run Python code in a fresh process; return (seconds, peak RSS in KiB)."""
    wrapper = ("import resource,sys,time\nt=time.perf_counter()\n" + code +
               "\nprint(time.perf_counter()-t, resource.getrusage(resource.RUSAGE_SELF).ru_maxrss)")
    out = subprocess.run([sys.executable, "-c", wrapper], env=ENV, check=True,
                         capture_output=True, text=True).stdout.split()
    return float(out[-2]), int(out[-1])


def steadyline(*args: str) -> list[str]:
    return [sys.executable, "-m", "steadyline", *args]


def floor_read_write(root: Path, out_bytes: int, scratch: Path) -> float:
    """Read every CSV with pandas and write out_bytes to disk: the work no build can avoid."""
    code = (f"import pandas as pd, pathlib, os\n"
            f"for p in sorted(pathlib.Path({str(root)!r}).rglob('*.csv')): pd.read_csv(p)\n"
            f"d = pathlib.Path({str(scratch)!r}); d.mkdir(exist_ok=True)\n"
            f"chunk = b'x' * (1 << 20); left = {out_bytes}; i = 0\n"
            f"while left > 0:\n"
            f"    n = min(left, 1 << 20); (d / f'f{{i}}').write_bytes(chunk[:n]); left -= n; i += 1\n")
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
    from steadyline.site.common import digest_memo_for

    digest_memo_for(root).path.unlink(missing_ok=True)


def bench_portfolio(work: Path, projects: int, metrics: int, rows: int, rows_out: list,
                    rounds: int = 5):
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
    rows_out.append((f"full build, {projects} projects x {metrics} metrics x {rows:,} rows "
                     f"(median of {rounds}: {', '.join(f'{t:.1f}' for t in fulls)} s)",
                     f"{full:.1f} s",
                     f"floor {floor:.1f} s (median of {', '.join(f'{t:.1f}' for t in floors)})",
                     f"{full / floor:.1f}x", "within 5x"))
    settle()
    base = read_all(root)
    settle()
    noop = run(steadyline("build", str(root), "--out", str(site), "--quiet"))
    rows_out.append(("no-op rebuild", f"{noop:.2f} s", f"read inputs {base:.2f} s",
                     f"{noop / base:.1f}x", "under 1 s"))
    csv = sorted((root / "p0000").glob("*.csv"))[0]
    csv.write_text(csv.read_text() + csv.read_text().splitlines()[-1] + "\n")
    settle()
    one = run(steadyline("build", str(root), "--out", str(site), "--quiet"))
    rows_out.append(("rebuild after one CSV changed", f"{one:.2f} s", f"read inputs {base:.2f} s",
                     f"{one / base:.1f}x", "under 1 s"))
    settle()
    lat = watch_latency(root, work / "watch-site", csv)
    rows_out.append(("watch: saved CSV to rewritten page", f"{lat:.2f} s",
                     f"read inputs {base:.2f} s", f"{lat / base:.1f}x", "under 1 s"))


def watch_latency(root: Path, site: Path, csv: Path, rounds: int = 3) -> float:
    proc = subprocess.Popen(steadyline("watch", str(root), "--out", str(site), "--no-serve",
                                       "--quiet"), env=ENV, stdout=subprocess.DEVNULL,
                            stderr=subprocess.DEVNULL)
    page = site / "projects" / csv.parent.name / "results.json"
    try:
        deadline = time.time() + 900
        while not (site / ".steadyline-manifest.json").exists() and time.time() < deadline:
            time.sleep(0.2)
        time.sleep(1.0)
        best = []
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
            best.append(time.perf_counter() - t)
            time.sleep(1.0)
        return sorted(best)[len(best) // 2]
    finally:
        proc.send_signal(signal.SIGINT)
        proc.wait(timeout=30)


def bench_rows(work: Path, sizes: list[int], rows_out: list):
    pages = {}
    for n in sizes:
        root = work / f"rows-{n}"
        synth.write_project(root / "one", 0, 1, n)
        site = work / f"rows-{n}-site"
        code = (f"from steadyline.site.build import build, BuildOptions\nfrom pathlib import Path\n"
                f"build(BuildOptions(Path({str(root)!r}), Path({str(site)!r}), jobs=1))")
        secs, peak = child_peak_kib(code)
        csv = next((root / "one").glob("*.csv"))
        rsecs, rpeak = child_peak_kib(f"import pandas as pd\npd.read_csv({str(csv)!r})")
        page = (site / "projects" / "one" / "index.html").stat().st_size
        pages[n] = page
        rows_out.append((f"one metric, {n:,} rows: page weight", f"{page / 1024:.0f} KiB",
                         f"page at {sizes[0]:,} rows {pages[sizes[0]] / 1024:.0f} KiB",
                         f"{page / pages[sizes[0]]:.2f}x", "flat in rows"))
        rows_out.append((f"one metric, {n:,} rows: peak memory of the build",
                         f"{peak / 1024:.0f} MiB", f"pandas read {rpeak / 1024:.0f} MiB",
                         f"{peak / rpeak:.1f}x", "fits a laptop"))


def bench_stats(work: Path, n: int, rows_out: list):
    import numpy as np
    import pandas as pd

    rng = np.random.default_rng(1)
    csv = work / "stats.csv"
    pd.DataFrame({"v": np.round(rng.normal(10, 1, n), 4)}).to_csv(csv, index=False)
    read_secs, _ = child_peak_kib(f"import pandas as pd\npd.read_csv({str(csv)!r})")
    # scipy is imported before the clock starts: the figure is the computation, not the imports
    code = (f"import pandas as pd, numpy as np\nv = pd.read_csv({str(csv)!r})['v'].to_numpy()\n"
            "import scipy.stats, scipy.special, scipy.integrate\n"
            "from steadyline import stats\nt0=time.perf_counter()\n"
            "c = stats.individuals(v)\ns = stats.detect_signals(c, 'nelson')\n"
            "r = stats.analyse_runs(v)\nb = stats.box_summary(v)\nh = stats.histogram(v)\n"
            "a = stats.anderson_darling(v)\n"
            "k = stats.capability(v, c.process_sigma, lsl=6, usl=14, normality=a)\n"
            "t = time.perf_counter()-t0\nprint(t, 0)\nraise SystemExit\n")
    out = subprocess.run([sys.executable, "-c", "import time\n" + code], env=ENV,
                         capture_output=True, text=True, check=True).stdout.split()
    secs = float(out[0])
    rows_out.append((f"all statistics of a {n:,}-row metric", f"{secs:.2f} s",
                     f"pandas read {read_secs:.2f} s", f"{secs / read_secs:.1f}x", "under 1 s"))


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__)
    ap.add_argument("--quick", action="store_true", help="small sizes, to check the script")
    ap.add_argument("--skip-portfolio", action="store_true")
    a = ap.parse_args()
    rows: list[tuple] = []
    with tempfile.TemporaryDirectory(prefix="steadyline-bench-") as tmp:
        work = Path(tmp)
        if a.quick:
            bench_stats(work, 100_000, rows)
            bench_rows(work, [1_000, 10_000], rows)
            if not a.skip_portfolio:
                bench_portfolio(work, 6, 3, 2_000, rows)
        else:
            bench_stats(work, 1_000_000, rows)
            bench_rows(work, [1_000, 100_000, 1_000_000], rows)
            if not a.skip_portfolio:
                bench_portfolio(work, 200, 3, 5_000, rows)
    lines = ["| figure | measured | baseline (same run) | ratio | target |",
             "|---|---|---|---|---|"]
    lines += ["| " + " | ".join(r) + " |" for r in rows]
    text = "\n".join(lines)
    print(text)
    (HERE / "out").mkdir(exist_ok=True)
    (HERE / "out" / "results.md").write_text(
        f"machine: {os.cpu_count()} cores; python {sys.version.split()[0]}\n\n{text}\n")
    shutil.rmtree(HERE / "__pycache__", ignore_errors=True)
    _ = resource  # imported for child measurement helpers


if __name__ == "__main__":
    main()
