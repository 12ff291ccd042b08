"""The build pipeline end to end: outputs, determinism, incremental builds, atomic publish."""

from __future__ import annotations

import hashlib
import json
import os
import random
import re
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest
from corpus.kit import good_csv, meta, write

from steadyline.cli import main
from steadyline.pipeline.build import build
from steadyline.pipeline.manifest import MANIFEST
from steadyline.pipeline.options import BuildOptions

REPO = Path(__file__).resolve().parent.parent
DEMO = REPO / "projects"
SMALL = ("order-picking-errors", "frame-dropout-alignment", "customer-returns")


def tree_hashes(root: Path) -> dict[str, str]:
    return {
        p.relative_to(root).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
        for p in sorted(root.rglob("*"))
        if p.is_file()
    }


def copy_projects(dst: Path, slugs=SMALL) -> Path:
    dst.mkdir(parents=True, exist_ok=True)
    shutil.copy(DEMO / "portfolio.toml", dst / "portfolio.toml")
    for s in slugs:
        shutil.copytree(DEMO / s, dst / s)
    return dst


def _no_nan(text: str):
    def bad(c):
        raise AssertionError(f"non-JSON constant {c} in results.json")

    return json.loads(text, parse_constant=bad)


def test_demo_has_index_page_and_results_per_project(demo_site: Path):
    slugs = sorted(p.name for p in DEMO.iterdir() if p.is_dir())
    assert (demo_site / "index.html").is_file()
    for slug in slugs:
        page = demo_site / "projects" / slug / "index.html"
        assert page.is_file(), slug
        doc = _no_nan((demo_site / "projects" / slug / "results.json").read_text("utf-8"))
        assert doc["schema"] == "steadyline-results/3"
        assert doc["project"]["slug"] == slug
        index = (demo_site / "index.html").read_text("utf-8")
        assert f'href="projects/{slug}/index.html"' in index


def test_all_six_display_families_across_the_demo(demo_site: Path):
    seen_keys, seen_cards = set(), set()
    for res in (demo_site / "projects").glob("*/results.json"):
        for m in json.loads(res.read_text("utf-8"))["metrics"]:
            seen_keys |= set(m)
    for page in (demo_site / "projects").glob("*/index.html"):
        text = page.read_text("utf-8")
        for key in ("run", "control", "histogram", "box", "column", "pareto"):
            if f'data-display="{key}"' in text:
                seen_cards.add(key)
    assert {
        "run_chart",
        "control_chart",
        "histogram",
        "box_plot",
        "column_chart",
        "pareto",
    } <= seen_keys
    assert seen_cards == {"run", "control", "histogram", "box", "column", "pareto"}


def test_every_chart_kind_of_the_family_is_used_by_the_demo(demo_site: Path):
    kinds = set()
    for res in (demo_site / "projects").glob("*/results.json"):
        for m in json.loads(res.read_text("utf-8"))["metrics"]:
            if "control_chart" in m:
                kinds.add(m["control_chart"]["choice"]["kind"])
    assert kinds == {"xmr", "xbar-r", "xbar-s", "p", "np", "c", "u", "laney-p", "laney-u"}


def test_the_demo_uses_every_setting_of_the_methods(demo_site: Path):
    rules = set()
    for res in (demo_site / "projects").glob("*/results.json"):
        for m in json.loads(res.read_text("utf-8"))["metrics"]:
            if m["type"] == "measurement-study":  # no rules: no chart of a process
                continue
            r = m["rules"]
            rules |= {
                ("signal", r["signal_rules"]),
                ("runs", r["run_rules"]),
                ("limits", r["limits"]),
                ("quartiles", r["quartiles"]),
                ("bins", "edges" if isinstance(r["bins"], list) else r["bins"]),
            }
    assert {
        ("signal", "western-electric"),
        ("signal", "nelson"),
        ("runs", "anhoj"),
        ("runs", "perla"),
        ("limits", "baseline"),
        ("limits", "per-period"),
        ("quartiles", "linear"),
        ("quartiles", "tukey-hinges"),
        ("bins", "fd"),
        ("bins", "sturges"),
        ("bins", "edges"),
    } <= rules


def test_a_defectives_run_chart_is_labelled_as_a_proportion(demo_site: Path):
    # the metric's unit names the items checked ("wheels"); the chart plots the proportion,
    # a share of those items: its median reads as a percentage of them, its axis likewise
    spec = json.loads(
        (
            demo_site
            / "projects"
            / "wheel-truing-first-pass-yield"
            / "data"
            / "retrue-rate-run.vl.json"
        ).read_text("utf-8")
    )
    (centre,) = spec["datasets"]["centre"]
    assert re.fullmatch(r"median \d+\.\d+% of wheels", centre["text"]), centre["text"]
    assert "Wheels needing re-truing (proportion)" in json.dumps(spec)


def test_capability_reasons_read_as_one_sentence_each(demo_site: Path):
    rolled_up = 0
    for res in (demo_site / "projects").glob("*/results.json"):
        for m in json.loads(res.read_text("utf-8"))["metrics"]:
            reasons = (m.get("capability") or {}).get("reasons", [])
            for r in reasons:
                assert r[0].isupper() and r.endswith(".") and "(The " not in r, r
            rolled_up += any("individual values before the roll-up" in r for r in reasons)
    assert rolled_up  # the demo's daily roll-up says why Cp and Cpk are missing


def test_period_histograms_share_their_bins_and_leave_no_value_out(demo_site: Path):
    seen = 0
    for res in (demo_site / "projects").glob("*/results.json"):
        for m in json.loads(res.read_text("utf-8"))["history"] or []:  # None: no after period
            hists = m.get("histograms") or {}
            if len(hists) < 2:
                continue
            seen += 1
            assert len({tuple(h["edges"]) for h in hists.values()}) == 1, m["id"]
            for h in hists.values():
                if h["rule"] != "edges":  # given edges keep the user's range
                    assert h["below_range"] == h["above_range"] == 0, m["id"]
                    assert sum(h["counts"]) == h["n"], m["id"]
    assert seen


def test_index_counts_the_projects_by_phase(demo_site: Path):
    from collections import Counter

    index = (demo_site / "index.html").read_text("utf-8")
    # reference: the phase each demo project's metadata names
    phases = Counter(
        re.search(r'^phase = "(\w+)"', (d / "project.toml").read_text("utf-8"), re.M)[1]
        for d in DEMO.iterdir()
        if (d / "project.toml").is_file()
    )
    order = ["define", "measure", "analyze", "improve", "control"]
    expected = ", ".join(f"{phases[p]} in {p}" for p in order if phases[p])
    assert f"By phase: {expected}." in index


def test_index_cards_say_how_fresh_each_projects_data_are(demo_site: Path):
    index = (demo_site / "index.html").read_text("utf-8")
    for res in (demo_site / "projects").glob("*/results.json"):
        doc = json.loads(res.read_text("utf-8"))
        last = max(m["points"]["period"][-1][:10] for m in doc["metrics"] if "points" in m)
        card = index[index.index(f'href="projects/{res.parent.name}/index.html"') :]
        shown = re.search(r"data to (\d{4}-\d{2}-\d{2})", card[: card.index("</li>")])
        assert shown and shown[1] >= last, res.parent.name
        assert doc["project"]["data_to"] == shown[1]  # results.json says the same
        page = (res.parent / "index.html").read_text("utf-8")
        assert f"data to {shown[1]}" in page  # and so does the project's page


def test_pages_carry_the_csp_and_load_nothing_from_elsewhere(demo_site: Path):
    for page in demo_site.rglob("*.html"):
        text = page.read_text("utf-8")
        import html

        assert "Content-Security-Policy" in text, page
        if page.name == "handover.html":  # the pack runs no script at all (tests/test_handover.py)
            assert "script-src" not in html.unescape(text) and "<script" not in text, page
        else:
            assert "script-src 'self';" in html.unescape(text), page
        for attr in ('src="http', "src='http", 'href="//', 'src="//', "@import"):
            assert attr not in text, (page, attr)
        # Only the site's own scripts and JSON data blocks: no inline code.
        import re

        for tag in re.findall(r"<script\b[^>]*>", text):
            assert 'src="' in tag or 'type="application/json"' in tag, (page, tag)


def test_the_safety_caution_is_on_safety_related_projects(demo_site: Path):
    for proj in DEMO.iterdir():
        toml = proj / "project.toml"
        if not toml.is_file():
            continue
        page = (demo_site / "projects" / proj.name / "index.html").read_text("utf-8")
        is_safety = "safety_related = true" in toml.read_text("utf-8")
        assert ("Before acting on these charts" in page) == is_safety, proj.name


def test_two_builds_of_the_same_input_are_byte_identical(demo_site: Path, tmp_path: Path):
    again = tmp_path / "again"
    build(BuildOptions(DEMO, again, jobs=1, force=True))
    assert tree_hashes(again) == tree_hashes(demo_site)


def test_a_rebuild_with_no_change_writes_nothing(tmp_path: Path):
    projects = copy_projects(tmp_path / "projects")
    out = tmp_path / "site"
    first = build(BuildOptions(projects, out, jobs=1))
    assert first.written and sorted(first.built) == sorted(SMALL)
    before = tree_hashes(out)
    stamp = (out / "index.html").stat().st_mtime_ns
    second = build(BuildOptions(projects, out, jobs=1))
    assert not second.written and second.built == [] and sorted(second.reused) == sorted(SMALL)
    assert tree_hashes(out) == before
    assert (out / "index.html").stat().st_mtime_ns == stamp


def test_a_changed_csv_rebuilds_only_its_project(tmp_path: Path):
    projects = copy_projects(tmp_path / "projects")
    out = tmp_path / "site"
    build(BuildOptions(projects, out, jobs=1))
    before = tree_hashes(out)
    csv = projects / "order-picking-errors" / "picking_audit.csv"
    lines = csv.read_text("utf-8").splitlines()
    lines[5] = lines[5].rsplit(",", 1)[0] + "," + str(int(lines[5].rsplit(",", 1)[1]) + 1)
    csv.write_text("\n".join(lines) + "\n", "utf-8")
    report = build(BuildOptions(projects, out, jobs=1))
    assert report.built == ["order-picking-errors"]
    assert sorted(report.reused) == sorted(s for s in SMALL if s != "order-picking-errors")
    after = tree_hashes(out)
    changed = {k for k in after if before.get(k) != after[k]}
    assert "projects/order-picking-errors/results.json" in changed
    assert not any(k.startswith("projects/customer-returns/") for k in changed)
    manifest = json.loads((out / MANIFEST).read_text("utf-8"))
    assert set(manifest["projects"]) == set(SMALL)


def test_force_rebuilds_everything(tmp_path: Path):
    projects = copy_projects(tmp_path / "projects", SMALL[:2])
    out = tmp_path / "site"
    build(BuildOptions(projects, out, jobs=1))
    report = build(BuildOptions(projects, out, jobs=1, force=True))
    assert sorted(report.built) == sorted(SMALL[:2]) and report.reused == []


def test_a_broken_project_is_a_notice_and_the_rest_still_builds(tmp_path: Path, capsys):
    projects = copy_projects(tmp_path / "projects", SMALL[:2])
    toml = projects / "frame-dropout-alignment" / "project.toml"
    toml.write_text(
        toml.read_text("utf-8").replace('type = "continuous"', 'type = "continous"'), "utf-8"
    )
    out = tmp_path / "site"
    code = main(["build", str(projects), "--out", str(out), "--jobs", "1", "--quiet"])
    err = capsys.readouterr().err
    assert code == 1
    assert "frame-dropout-alignment/project.toml:" in err and "did you mean 'continuous'" in err
    broken = (out / "projects" / "frame-dropout-alignment" / "index.html").read_text("utf-8")
    assert "could not be built" in broken and "did you mean" in broken
    assert (out / "projects" / "order-picking-errors" / "results.json").is_file()
    index = (out / "index.html").read_text("utf-8")
    assert "card-broken" in index and "Not built" in index


def test_check_reports_file_and_key_and_exits_nonzero(tmp_path: Path, capsys):
    projects = copy_projects(tmp_path / "projects", SMALL[:1])
    toml = projects / SMALL[0] / "project.toml"
    toml.write_text(toml.read_text("utf-8") + "\nowner_email = 'x'\n", "utf-8")
    before = tree_hashes(projects)
    assert main(["check", str(projects), "--quiet"]) == 1
    out = capsys.readouterr().out
    assert f"{SMALL[0]}/project.toml:" in out and "owner_email" in out and "unknown key" in out
    assert tree_hashes(projects) == before  # check writes nothing
    assert not (tmp_path / "site").exists()


def test_check_passes_on_the_demo(capsys):
    assert main(["check", str(DEMO), "--quiet"]) == 0


@pytest.mark.slow
def test_a_killed_build_leaves_the_published_site_whole(tmp_path: Path):
    """Kill a real build process at random moments: the site is always the old or the new one."""
    projects = copy_projects(tmp_path / "projects")
    out = tmp_path / "site"
    build(BuildOptions(projects, out, jobs=1))
    old = tree_hashes(out)
    csv = projects / "customer-returns" / "returns_weekly.csv"
    text = csv.read_text("utf-8")
    old_mtime = csv.stat().st_mtime_ns  # provenance shows modification times outside git
    lines = text.splitlines()
    lines[3] = lines[3].rsplit(",", 1)[0] + ",1"

    def save(content: str, mtime: int):
        csv.write_text(content, "utf-8")
        os.utime(csv, ns=(mtime, mtime))

    new_mtime = old_mtime + 10**9
    save("\n".join(lines) + "\n", new_mtime)
    reference = tmp_path / "reference"
    build(BuildOptions(projects, reference, jobs=1, force=True))
    new = tree_hashes(reference)
    assert new != old
    env = dict(os.environ, PYTHONPATH=str(REPO / "src"))
    cmd = [
        sys.executable,
        "-m",
        "steadyline",
        "build",
        str(projects),
        "--out",
        str(out),
        "--jobs",
        "1",
        "--force",
        "--quiet",
    ]
    # A full build takes a few seconds; kill at random points through it.
    t0 = time.monotonic()
    subprocess.run(cmd, env=env, check=True)
    full = time.monotonic() - t0
    build(BuildOptions(projects, out, jobs=1, force=True))  # ensure 'new' is published again
    rng = random.Random(20261202)
    outcomes = []
    for _ in range(6):
        # restore the old site, then kill a build that would publish the new one
        shutil.rmtree(out)
        shutil.copytree(reference, out, symlinks=True)
        save(text, old_mtime)
        build(BuildOptions(projects, out, jobs=1, force=True))
        assert tree_hashes(out) == old
        save("\n".join(lines) + "\n", new_mtime)
        proc = subprocess.Popen(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(rng.uniform(0.2, full * 1.1))
        proc.send_signal(signal.SIGKILL)
        proc.wait()
        now = tree_hashes(out)
        assert now in (old, new), "a killed build left a mixed or damaged site"
        outcomes.append("new" if now == new else "old")
    print("killed build outcomes:", outcomes)


def test_the_demo_with_several_projects_broken_publishes_the_healthy_ones(tmp_path, capsys):
    projects = tmp_path / "projects"
    shutil.copytree(DEMO, projects)
    # three projects broken three ways: a TOML syntax error, a bad CSV cell, a missing file
    toml = projects / "spoke-tension" / "project.toml"
    toml.write_text(
        toml.read_text("utf-8").replace('phase = "improve"', "phase = improve"), "utf-8"
    )
    csv = projects / "order-picking-errors" / "picking_audit.csv"
    lines = csv.read_text("utf-8").splitlines()
    lines[7] = lines[7].rsplit(",", 1)[0] + ",twelve"
    csv.write_text("\n".join(lines) + "\n", "utf-8")
    (projects / "customer-returns" / "returns.csv").unlink()
    before = tree_hashes(projects)
    out = tmp_path / "site"
    code = main(["build", str(projects), "--out", str(out), "--quiet"])
    err = capsys.readouterr().err
    assert code == 1
    assert "spoke-tension/project.toml:" in err
    assert "order-picking-errors/picking_audit.csv:8:" in err and "twelve" in err
    assert "customer-returns/project.toml:" in err and "returns.csv" in err
    assert tree_hashes(projects) == before  # no input file was touched
    broken = {"spoke-tension", "order-picking-errors", "customer-returns"}
    for slug in sorted(p.name for p in DEMO.iterdir() if p.is_dir()):
        page = (out / "projects" / slug / "index.html").read_text("utf-8")
        if slug in broken:
            assert "could not be built" in page, slug
        else:
            assert (out / "projects" / slug / "results.json").is_file(), slug
            assert "could not be built" not in page, slug
    index = (out / "index.html").read_text("utf-8")
    assert index.count("card-broken") == len(broken)


def test_dates_looked_up_once_for_a_large_portfolio_equal_each_projects_own(tmp_path: Path):
    # reference: git itself, asked per project (provenance's own lookup) for the same files
    from steadyline.config import load_portfolio, load_project
    from steadyline.pipeline.pool import BUILD_POOL_MIN
    from steadyline.pipeline.project import provenance

    root = tmp_path / "projects"
    root.mkdir()
    slugs = [f"copy-{i:02d}" for i in range(BUILD_POOL_MIN)]
    for s in slugs:
        shutil.copytree(DEMO / SMALL[0], root / s)
    git = ["git", "-c", "user.name=t", "-c", "user.email=t@example.invalid"]
    subprocess.run([*git, "init", "-q"], cwd=root, check=True)
    subprocess.run([*git, "add", "."], cwd=root, check=True)
    subprocess.run([*git, "commit", "-q", "-m", "data"], cwd=root, check=True)
    (root / slugs[3] / "project.toml").write_text(
        (root / slugs[3] / "project.toml").read_text("utf-8") + "\n", "utf-8"
    )  # uncommitted
    out = tmp_path / "site"
    build(BuildOptions(root, out, jobs=1))
    settings, _ = load_portfolio(root)
    for s in slugs:
        spec, _ = load_project(root / s, root, settings)
        got = json.loads((out / "projects" / s / "results.json").read_text("utf-8"))
        assert got["provenance"] == provenance(spec, root), s
    hows = {
        p["how"]
        for s in slugs
        for p in json.loads((out / "projects" / s / "results.json").read_text("utf-8"))[
            "provenance"
        ]
    }
    assert hows == {"last commit", "file modification time"}


def test_a_first_build_in_a_pool_started_early_and_flushed_matches_a_serial_build(
    tmp_path: Path, monkeypatch
):
    # Enough projects for a pool, nothing published: the pool starts before the inputs are
    # hashed. Its site must be the one a build in this process writes.
    import steadyline.pipeline.build as build_module
    import steadyline.pipeline.compute as compute_module
    from steadyline.pipeline.pool import BUILD_POOL_MIN

    projects = tmp_path / "projects"
    copy_projects(projects)
    for i in range(BUILD_POOL_MIN):
        shutil.copytree(DEMO / SMALL[i % len(SMALL)], projects / f"copy-{i:02d}")
    started = []
    real = build_module._early_pool
    monkeypatch.setattr(
        build_module, "_early_pool", lambda jobs: started.append(jobs) or real(jobs)
    )
    # a build of this many projects also flushes the staging folder while the workers write
    flushed = []
    real_syncfs = compute_module.syncfs
    monkeypatch.setattr(compute_module, "FLUSH_EVERY_S", 0.01)
    monkeypatch.setattr(
        compute_module, "syncfs", lambda folder: flushed.append(folder) or real_syncfs(folder)
    )
    pooled = build(BuildOptions(projects, tmp_path / "pooled", jobs=2))
    assert started == [2]
    assert flushed and all(".staging-" in f.name for f in flushed)
    serial = build(BuildOptions(projects, tmp_path / "serial", jobs=1))
    assert pooled.ok and serial.ok
    assert len(pooled.built) == len(SMALL) + BUILD_POOL_MIN
    assert tree_hashes(tmp_path / "pooled") == tree_hashes(tmp_path / "serial")
    # a rebuild with a site in place starts no pool before planning
    build(BuildOptions(projects, tmp_path / "pooled", jobs=2))
    assert started == [2]


def _caution_counts(site: Path) -> dict[str, tuple[int, int]]:
    """Per project: the cautions its index card counts, and the cautions its page shows (the
    cards' marked cautions and every warning line, under a metric or among the input notes)."""
    index = (site / "index.html").read_text("utf-8")
    out = {}
    for page in sorted(site.glob("projects/*/index.html")):
        slug = page.parent.name
        card = index[index.index(f'<li class="card" data-slug="{slug}"') :]
        card = card[: card.index("</li>")]
        counted = int(re.search(r"<span>(\d+) cautions?</span>", card).group(1))
        html = page.read_text("utf-8")
        marked = sum(
            u.count("<li>") for u in re.findall(r'<ul class="cautions"[^>]*>(.*?)</ul>', html, re.S)
        )
        out[slug] = (counted, marked + html.count('<li class="problem-warning">'))
    return out


def test_the_index_counts_the_cautions_the_project_page_shows(demo_site: Path, tmp_path: Path):
    # the method notes under a card's "How it is made" are no cautions: the index counted them
    # once (13 on a demo project whose page shows none)
    demo = _caution_counts(demo_site)
    assert all(counted == shown for counted, shown in demo.values()), demo
    assert sum(shown for _, shown in demo.values()) >= 5  # the demo has some to count
    # warnings of every kind: the metadata's (an older code), the data file's (rows out of
    # time order, a repeated time) and a display's
    rows = good_csv().splitlines()
    rows[3], rows[4] = rows[4], rows[3]
    rows.append(rows[-1])
    projects = write(
        tmp_path / "projects",
        {
            "w/project.toml": meta(metric={"limits": "per-phase", "spec_upper": 60.0}),
            "w/data.csv": "\n".join(rows) + "\n",
        },
    )
    report = build(BuildOptions(projects, tmp_path / "site", force=True, jobs=1))
    assert report.ok, report
    counted, shown = _caution_counts(tmp_path / "site")["w"]
    assert counted == shown >= 3
