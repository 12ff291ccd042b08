"""`steadyline start`: a project.toml guessed from a data file.

Each demo data file is copied alone into a fresh projects folder; the command must write a
project.toml that `check` accepts, whose guesses (data type, time column, the value, subgroup,
count, size and category columns, a roll-up) are those of the demo's own project.toml, where a
metric of that file is described by hand.
"""

from __future__ import annotations

import datetime as dt
import json
import os
import shutil
import tomllib
from importlib import resources
from pathlib import Path

import jsonschema
import pytest

from steadyline.cli import main

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "projects"


def _study_files() -> set[str]:
    """The demo files of measurement studies: `start` writes process metrics only (a study
    names its part, appraiser and value columns by hand), so these are not tried."""
    out = set()
    for meta in DEMO.glob("*/project.toml"):
        for m in tomllib.loads(meta.read_text(encoding="utf-8"))["metric"]:
            if m["type"] == "measurement-study":
                out.add(f"{meta.parent.name}/{m['file']}")
    return out


STUDY_FILES = _study_files()
DATA_FILES = sorted(
    p.relative_to(DEMO).as_posix()
    for p in DEMO.glob("*/*")
    if p.suffix in (".csv", ".xlsx", ".parquet")
    and p.relative_to(DEMO).as_posix() not in STUDY_FILES
)
COLUMNS = ("time", "value", "subgroup", "count", "size", "category")


def demo_metric(rel: str) -> dict:
    """The demo's metric drawn from this file; of two (orders.csv is charted per order and as
    a daily mean), the one without a roll-up: `start` rolls up only 0/1 flags, which cannot be
    charted row by row, and leaves every other row its own point."""
    slug, name = rel.split("/")
    meta = tomllib.loads((DEMO / slug / "project.toml").read_text(encoding="utf-8"))
    mine = [m for m in meta["metric"] if m["file"] == name]
    return next((m for m in mine if "rollup" not in m), mine[0])


def started(tmp_path: Path, rel: str, *args: str) -> tuple[Path, dict]:
    """The data file copied alone into a new project folder, and what `start` writes for it."""
    src = DEMO / rel
    folder = tmp_path / "projects" / src.stem.replace("_", "-")
    folder.mkdir(parents=True)
    shutil.copyfile(src, folder / src.name)
    assert main(["start", str(folder / src.name), "--quiet", *args]) == 0
    text = (folder / "project.toml").read_text(encoding="utf-8")
    return folder, tomllib.loads(text)


def test_every_demo_data_file_is_tried():
    assert len(DATA_FILES) >= 13
    assert {Path(p).suffix for p in DATA_FILES} == {".csv", ".xlsx", ".parquet"}


def test_a_measurement_study_is_not_started(tmp_path, capsys):
    rel = sorted(STUDY_FILES)[0]
    src = DEMO / rel
    folder = tmp_path / "projects" / "study"
    folder.mkdir(parents=True)
    shutil.copyfile(src, folder / src.name)
    code = main(["start", str(folder / src.name), "--type", "measurement-study", "--quiet"])
    assert code == 2
    assert (
        "start writes process metrics; a measurement study names its part, appraiser and "
        "value columns by hand" in capsys.readouterr().err
    )
    assert not (folder / "project.toml").exists()


@pytest.mark.parametrize("rel", DATA_FILES)
def test_guesses_match_the_demos_own_metadata(tmp_path, rel, capsys):
    folder, meta = started(tmp_path, rel)
    want = demo_metric(rel)
    got = meta["metric"][0]
    assert got["file"] == Path(rel).name
    assert got["type"] == want["type"]
    for key in COLUMNS:
        assert got.get(key) == want.get(key), key
    if "rollup" in want:
        assert got["rollup"] == want["rollup"]
    else:
        assert "rollup" not in got
    for key in ("delimiter", "decimal"):
        assert got.get("csv", {}).get(key) == want.get("csv", {}).get(key), key
    # what `check` says of it: no error and no warning
    capsys.readouterr()
    assert main(["check", str(folder.parent), "--strict", "--quiet"]) == 0
    assert capsys.readouterr().out == ""


@pytest.mark.parametrize(
    "rel",
    [
        "order-picking-errors/picking_audit.csv",
        "frame-dropout-alignment/supplier_alignment_export.csv",
        "frame-weld-porosity/weld_inspection.parquet",
        "paint-finish-defects/paint_batches.xlsx",
    ],
)
def test_every_guess_is_explained_in_a_comment(tmp_path, rel):
    folder, meta = started(tmp_path, rel)
    lines = (folder / "project.toml").read_text(encoding="utf-8").splitlines()
    for i, line in enumerate(lines):
        if "=" in line and not line.startswith("#"):
            above = next(a for a in reversed(lines[:i]) if not a.startswith("["))
            assert above.startswith("# "), line


def test_the_written_file_passes_the_editor_schema(tmp_path):
    _folder, meta = started(tmp_path, "paint-finish-defects/paint_scanner_weekly.csv")
    schema = json.loads(
        resources.files("steadyline")
        .joinpath("schemas", "project.schema.json")
        .read_text(encoding="utf-8")
    )

    def as_json(v):
        if isinstance(v, dict):
            return {k: as_json(x) for k, x in v.items()}
        if isinstance(v, list):
            return [as_json(x) for x in v]
        return v.isoformat() if isinstance(v, dt.date) else v

    assert list(jsonschema.Draft4Validator(schema).iter_errors(as_json(meta))) == []


def test_the_baseline_is_all_the_data(tmp_path):
    _folder, meta = started(tmp_path, "customer-returns/returns_weekly.csv")
    weeks = (DEMO / "customer-returns/returns_weekly.csv").read_text().split()[1:]
    first, last = weeks[0].split(",")[0], weeks[-1].split(",")[0]
    assert meta["comparison"]["baseline"] == [
        dt.date.fromisoformat(first),
        dt.date.fromisoformat(last),
    ]


def test_options_set_what_is_not_guessed(tmp_path):
    _folder, meta = started(
        tmp_path,
        "wheel-build-lead-time/orders.csv",
        "--time",
        "released",
        "--owner",
        "Ingrid Solberg",
        "--title",
        "Lead time",
        "--problem",
        "Orders wait.",
    )
    assert meta["metric"][0]["time"] == "released"
    assert meta["metric"][0]["value"] == "lead_time_h"
    assert (meta["owner"], meta["title"], meta["problem"]) == (
        "Ingrid Solberg",
        "Lead time",
        "Orders wait.",
    )
    _folder, meta = started(
        tmp_path / "b", "hub-bearing-press-fit/press_fit.csv", "--type", "continuous"
    )
    assert meta["metric"][0]["type"] == "continuous"
    assert "subgroup" not in meta["metric"][0]


def test_an_existing_project_toml_is_never_overwritten(tmp_path, capsys):
    folder = tmp_path / "projects" / "p"
    folder.mkdir(parents=True)
    shutil.copyfile(DEMO / "order-picking-errors/picking_audit.csv", folder / "picking_audit.csv")
    (folder / "project.toml").write_bytes(b"title = 'mine'\n")
    before = sorted(os.listdir(folder))
    assert main(["start", str(folder / "picking_audit.csv")]) == 2
    assert (folder / "project.toml").read_bytes() == b"title = 'mine'\n"
    assert sorted(os.listdir(folder)) == before
    assert "already exists" in capsys.readouterr().err


def test_an_unknown_column_option_is_refused(tmp_path, capsys):
    folder = tmp_path / "p"
    folder.mkdir()
    shutil.copyfile(DEMO / "order-picking-errors/picking_audit.csv", folder / "picking_audit.csv")
    assert main(["start", str(folder / "picking_audit.csv"), "--count", "errors"]) == 2
    err = capsys.readouterr().err
    assert "--count 'errors': no such column" in err and "orders_with_error" in err
    assert not (folder / "project.toml").exists()


def test_a_named_pipe_is_never_opened(tmp_path, capsys):
    folder = tmp_path / "p"
    folder.mkdir()
    os.mkfifo(folder / "data.csv")  # opening it for reading would block for ever
    assert main(["start", str(folder / "data.csv")]) == 2
    assert "named pipe" in capsys.readouterr().err
    assert not (folder / "project.toml").exists()


def test_a_file_with_nothing_to_chart_is_refused(tmp_path, capsys):
    folder = tmp_path / "p"
    folder.mkdir()
    (folder / "d.csv").write_text("serial,when\nA1,2026-01-05\nA2,2026-01-06\n")
    assert main(["start", str(folder / "d.csv")]) == 2
    assert "found no column to chart" in capsys.readouterr().err
    assert not (folder / "project.toml").exists()


def test_a_type_without_its_columns_is_refused(tmp_path, capsys):
    folder = tmp_path / "p"
    folder.mkdir()
    shutil.copyfile(DEMO / "order-picking-errors/picking_audit.csv", folder / "picking_audit.csv")
    assert main(["start", str(folder / "picking_audit.csv"), "--type", "categories"]) == 2
    assert "a categories metric needs a category column" in capsys.readouterr().err
    assert not (folder / "project.toml").exists()


@pytest.mark.parametrize(
    "encoding, declared",
    [("utf-16-le", "utf-16-le"), ("utf-16", None), ("latin-1", "latin-1"), ("utf-8-sig", None)],
)
def test_other_encodings_are_read_and_declared_when_needed(tmp_path, encoding, declared, capsys):
    text = (
        (DEMO / "frame-dropout-alignment/supplier_alignment_export.csv")
        .read_text(encoding="utf-8-sig")
        .replace("VB-2639", "Lieferung Müller")
    )
    folder = tmp_path / "projects" / "alignment"
    folder.mkdir(parents=True)
    (folder / "export.csv").write_bytes(text.encode(encoding))  # "utf-16" writes a mark
    assert main(["start", str(folder / "export.csv"), "--quiet"]) == 0
    metric = tomllib.loads((folder / "project.toml").read_text(encoding="utf-8"))["metric"][0]
    assert metric.get("csv", {}).get("encoding") == declared
    assert (metric["type"], metric["value"]) == ("continuous", "dropout_offset_mm")
    capsys.readouterr()
    assert main(["check", str(folder.parent), "--strict", "--quiet"]) == 0, capsys.readouterr()
