"""Building an ordinary project must not import scipy.stats, scipy.special or scipy.integrate.

Importing them costs most of a second, more than a rebuild of one project may take. The common
statistics (normal distribution, Welch's t-test, the exact binomial test behind the Poisson rate
comparison, the Anhøj crossings limit, the control-chart constants) are computed without scipy;
tests/stats/test_normal.py, test_special.py, test_binomial.py, test_compare.py, test_runs.py and
test_constants.py check them against scipy. This test builds synthetic projects with the common
metric kinds in a fresh interpreter (other tests import scipy freely, so it cannot run in this
process) and asks which modules were loaded.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]

CHILD = r"""
import json, sys
from pathlib import Path
sys.path.insert(0, sys.argv[2])
import synth  # benchmarks/synth.py: the benchmark's deterministic synthetic projects

root = Path(sys.argv[1])
for i in range(3):
    # metrics 0, 1, 2: a continuous value rolled up by day with an upper spec limit, subgroups of
    # 5 with both spec limits, 0/1 defectives rolled up into a daily proportion
    synth.write_project(root / f"p{i}", i, metrics=3, rows=2000, rotate=False)

# and defect counts per week, compared by the exact Poisson rate test
import numpy as np
weeks = np.arange(np.datetime64("2026-01-05"), np.datetime64("2026-11-30"), np.timedelta64(7, "D"))
counts = np.random.default_rng(1).poisson(np.where(weeks < np.datetime64("2026-06-01"), 16, 7))
(root / "p3").mkdir()
(root / "p3" / "defects.csv").write_text(
    "week,defects\n" + "".join(f"{w},{c}\n" for w, c in zip(weeks, counts)), "utf-8")
(root / "p3" / "project.toml").write_text(
    'title = "Defects per week"\nowner = "A. Owner"\nphase = "measure"\n'
    'problem = "Defects per week."\n\n[comparison]\nbaseline = [2026-01-05, 2026-05-25]\n'
    'after = [2026-06-01]\n\n[[metric]]\nid = "d"\nname = "Defects per week"\n'
    'file = "defects.csv"\ntype = "defects"\ntime = "week"\ncount = "defects"\n'
    'better = "lower"\nrun_rules = "perla"\n', "utf-8")

from steadyline.config import load_portfolio
from steadyline.pipeline.project import build_project

settings, _ = load_portfolio(root)
report = {"projects": []}
for i in range(4):
    out = build_project(root / f"p{i}", root, settings)
    results = json.loads(out.files["results.json"])
    report["projects"].append({
        "ok": out.ok,
        "metrics": [
            {"type": m["type"], "failures": m["failures"],
             "test": (m.get("comparison") or {}).get("test"),
             "capability": "capability" in m, "normality": "normality" in m,
             "chart": (m.get("control_chart") or {}).get("choice", {}).get("kind")}
            for m in results["metrics"]
        ],
    })
report["loaded"] = sorted(m for m in sys.modules if m == "scipy" or m.startswith("scipy."))
print(json.dumps(report))
"""


def test_common_path_imports_no_scipy(tmp_path):
    env = dict(os.environ, PYTHONPATH=str(REPO / "src"))
    proc = subprocess.run(
        [sys.executable, "-c", CHILD, str(tmp_path), str(REPO / "benchmarks")],
        env=env,
        capture_output=True,
        text=True,
        timeout=300,
        check=False,
    )
    assert proc.returncode == 0, proc.stderr
    report = json.loads(proc.stdout.strip().splitlines()[-1])

    # the statistics really ran: a capability study with a normality test on the measured
    # metrics, Welch's t-test, the two-proportion z-test and the exact Poisson rate test for the
    # comparisons
    assert len(report["projects"]) == 4
    defects = report["projects"].pop()
    assert defects["ok"] and not defects["metrics"][0]["failures"]
    assert defects["metrics"][0]["chart"] == "c"
    assert defects["metrics"][0]["test"] == "exact Poisson rate test"
    for project in report["projects"]:
        assert project["ok"]
        kinds = [m["type"] for m in project["metrics"]]
        assert kinds == ["continuous", "subgroups", "defectives"]
        cont, sub, dft = project["metrics"]
        assert all(not m["failures"] for m in project["metrics"])
        assert cont["capability"] and cont["normality"] and cont["chart"] == "xmr"
        assert sub["capability"] and sub["chart"] == "xbar-r"
        assert cont["test"] == sub["test"] == "Welch's t-test"
        assert dft["test"] == "two-proportion z-test"

    loaded = set(report["loaded"])
    assert not loaded & {"scipy.stats", "scipy.special", "scipy.integrate"}, sorted(loaded)
