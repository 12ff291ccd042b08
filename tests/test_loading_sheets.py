"""Reading workbooks (.xlsx) and Parquet files: the same points as the same data in a CSV file.

Each kind is read with its dates stored as dates (a spreadsheet's date cells, Parquet's date and
timestamp columns) and stored as text, and the points, labels and stages must equal those the
CSV reader makes of the same data. The reference is the CSV reader of this project, itself
checked against pandas' reader and hand-made files in tests/test_loading.py.
"""

from __future__ import annotations

import datetime as dt
import hashlib
import importlib.util
import sys
from pathlib import Path

import pyarrow as pa
import pytest
from corpus.books import good_rows, parquet, with_cached, xlsx
from corpus.kit import VALUES, dates, good_csv, meta, write

from steadyline.config import load_portfolio, load_project
from steadyline.errors import Problem
from steadyline.loading.metric import load_metric

ROOT = Path(__file__).resolve().parent.parent


def _load(tmp_path: Path, files: dict, metric: dict | None = None, **kw):
    root = write(tmp_path / "projects", {"p/project.toml": meta(metric=metric, **kw)} | files)
    settings, _ = load_portfolio(root)
    spec, _ = load_project(root / "p", root, settings)
    return load_metric(spec.metrics[0], settings)


def _same(a, b) -> None:
    cols = ["period", "label", "value", "n", "stage", "segment"]
    assert a.points[cols].equals(b.points[cols]), (a.points[cols], b.points[cols])
    assert a.kind == b.kind and a.raw_rows == b.raw_rows


@pytest.fixture
def from_csv(tmp_path):
    return _load(tmp_path / "csv", {"p/data.csv": good_csv()})


@pytest.mark.parametrize("as_text", [False, True], ids=["dates-as-dates", "dates-as-text"])
def test_workbook_reads_as_the_csv_does(tmp_path, from_csv, as_text):
    book = xlsx({"Audit": good_rows(as_text=as_text)})
    got = _load(tmp_path, {"p/data.xlsx": book}, {"file": "data.xlsx"})
    _same(got, from_csv)
    assert got.points["value"].tolist() == VALUES
    assert got.points["label"].tolist() == dates(30)


def test_workbook_date_times_and_the_named_sheet(tmp_path):
    """Date-time cells keep their time of day; the sheet named is read, not the first."""
    stamps = [dt.datetime(2026, 1, 5, 6, 30) + dt.timedelta(hours=7 * i) for i in range(30)]
    text = "date,value\n" + "".join(
        f"{t:%Y-%m-%dT%H:%M},{v}\n" for t, v in zip(stamps, VALUES, strict=True)
    )
    want = _load(tmp_path / "csv", {"p/data.csv": text})
    book = xlsx(
        {
            "Notes": [["not the data"]],
            "Audit": [["date", "value"]] + [[t, v] for t, v in zip(stamps, VALUES, strict=True)],
        }
    )
    got = _load(tmp_path, {"p/data.xlsx": book}, {"file": "data.xlsx", "sheet": "Audit"})
    _same(got, want)
    assert got.points["label"].iloc[1] == "2026-01-05 13:30"


def test_workbook_date_format_applies_to_text_and_date_cells(tmp_path, from_csv):
    """With date_format, dates stored as text are read in that format and date cells as they
    are: a column mixing both reads whole."""
    rows = good_rows()
    for r in rows[1::2]:
        if isinstance(r[0], dt.date):
            r[0] = r[0].strftime("%d.%m.%Y")
    got = _load(
        tmp_path,
        {"p/data.xlsx": xlsx({"Audit": rows})},
        {"file": "data.xlsx"},
        csv={"date_format": "%d.%m.%Y"},
    )
    _same(got, from_csv)


def test_whole_numbers_read_as_shown(tmp_path):
    """A category stored as a number reads as the spreadsheet shows it ("3", not "3.0"), and a
    count stored as a number is a whole number."""
    rows = [["date", "reason", "n"]] + [
        [dt.date(2026, 1, 5 + i), (i % 3) + 1, 2] for i in range(12)
    ]
    got = _load(
        tmp_path,
        {"p/data.xlsx": xlsx({"Audit": rows})},
        {
            "file": "data.xlsx",
            "type": "categories",
            "value": None,
            "category": "reason",
            "count": "n",
        },
    )
    assert sorted(set(got.points["category"])) == ["1", "2", "3"]
    assert got.points["weight"].tolist() == [2.0] * 12


def test_formulas_read_as_their_cached_values(tmp_path, from_csv):
    """A formula's value is the one the workbook holds from its last calculation; a formula
    never calculated (no cached value, as a program that writes workbooks without calculating
    leaves it) reads as a blank cell and is reported as one."""
    rows = good_rows()
    rows[3][1] = "=40+9.9"  # row 4 holds VALUES[2] = 49.9 once calculated
    book = xlsx({"Audit": rows})
    got = _load(
        tmp_path / "cached",
        {"p/data.xlsx": with_cached(book, {"B4": "49.9"})},
        {"file": "data.xlsx"},
    )
    _same(got, from_csv)
    uncached = _load(tmp_path / "uncached", {"p/data.xlsx": book}, {"file": "data.xlsx"})
    assert len(uncached.points) == 29
    assert [p.format() for p in uncached.problems] == [
        "p/data.xlsx:sheet 'Audit' row 4: warning: column 'value': blank cell; the row is left out"
    ]


def test_first_sheet_by_default_and_blank_rows_skipped(tmp_path, from_csv):
    rows = good_rows()
    rows.insert(10, [None, None])  # an empty row inside the table: skipped
    book = xlsx({"Data": rows, "Other": [["date", "value"], ["x", "y"]]})
    got = _load(tmp_path, {"p/data.xlsx": book}, {"file": "data.xlsx"})
    _same(got, from_csv)


@pytest.mark.parametrize("kind", ["date32", "timestamp", "text"])
def test_parquet_reads_as_the_csv_does(tmp_path, from_csv, kind):
    days = [dt.date.fromisoformat(d) for d in dates(30)]
    time = {
        "date32": pa.array(days, pa.date32()),
        "timestamp": pa.array(
            [dt.datetime.combine(d, dt.time()) for d in days], pa.timestamp("us")
        ),
        "text": pa.array(dates(30), pa.string()),
    }[kind]
    data = parquet({"date": time, "value": pa.array(VALUES), "extra": pa.array([[1]] * 30)})
    got = _load(tmp_path, {"p/data.parquet": data}, {"file": "data.parquet"})
    _same(got, from_csv)


def test_parquet_times_with_a_zone_follow_the_timezone_key(tmp_path):
    """Timestamps stored with a zone are converted to the metric's timezone, as times with a
    UTC offset in a CSV file are."""
    utc = [dt.datetime(2026, 1, 5, 23, 30, tzinfo=dt.UTC) + dt.timedelta(days=i) for i in range(30)]
    text = "date,value\n" + "".join(
        f"{t.isoformat()},{v}\n" for t, v in zip(utc, VALUES, strict=True)
    )
    want = _load(tmp_path / "csv", {"p/data.csv": text}, csv={"timezone": "Europe/Berlin"})
    data = parquet({"date": pa.array(utc, pa.timestamp("s", tz="UTC")), "value": pa.array(VALUES)})
    got = _load(
        tmp_path,
        {"p/data.parquet": data},
        {"file": "data.parquet"},
        csv={"timezone": "Europe/Berlin"},
    )
    _same(got, want)
    assert got.points["label"].iloc[0] == "2026-01-06 00:30"


def test_parquet_integers_and_flags(tmp_path):
    """0/1 flags stored as small integers roll up into proportions, as the CSV's do."""
    flags = [i % 4 == 0 for i in range(28)]
    stamps = [dt.datetime(2026, 1, 5, 8) + dt.timedelta(hours=6 * i) for i in range(28)]
    text = "t,bad\n" + "".join(
        f"{s:%Y-%m-%dT%H:%M},{int(f)}\n" for s, f in zip(stamps, flags, strict=True)
    )
    metric = {"type": "defectives", "time": "t", "value": "bad"}
    roll = {"period": "day", "statistic": "proportion"}
    want = _load(tmp_path / "csv", {"p/data.csv": text}, metric, rollup=roll)
    data = parquet(
        {
            "t": pa.array(stamps, pa.timestamp("s")),
            "bad": pa.array([int(f) for f in flags], pa.int8()),
        }
    )
    got = _load(tmp_path, {"p/data.parquet": data}, metric | {"file": "data.parquet"}, rollup=roll)
    _same(got, want)


def test_input_files_are_never_modified(tmp_path):
    book = xlsx({"Audit": good_rows()})
    data = parquet({"date": pa.array(dates(30)), "value": pa.array(VALUES)})
    root = write(
        tmp_path / "projects",
        {
            "p/project.toml": meta(metric={"file": "data.xlsx"}),
            "p/data.xlsx": book,
            "q/project.toml": meta(metric={"file": "data.parquet"}),
            "q/data.parquet": data,
        },
    )
    before = {p: hashlib.sha256(p.read_bytes()).hexdigest() for p in root.rglob("*.*")}
    settings, _ = load_portfolio(root)
    for slug in ("p", "q"):
        spec, _ = load_project(root / slug, root, settings)
        load_metric(spec.metrics[0], settings)
    assert before == {p: hashlib.sha256(p.read_bytes()).hexdigest() for p in root.rglob("*.*")}


def test_problem_locations_and_their_manifest_form():
    sheet = Problem("p/a.xlsx", 12, "column 'n'", "bad", sheet="Audit", rows=True)
    assert sheet.format() == "p/a.xlsx:sheet 'Audit' row 12: column 'n': bad"
    assert (
        Problem("p/a.xlsx", None, "", "gone", sheet="Audit").format()
        == "p/a.xlsx:sheet 'Audit': gone"
    )
    assert Problem("p/a.parquet", 3, "", "bad", rows=True).format() == "p/a.parquet:row 3: bad"
    plain = Problem("p/a.csv", 3, "", "bad")
    assert plain.as_dict() == {
        "path": "p/a.csv",
        "line": 3,
        "where": "",
        "message": "bad",
        "severity": "error",
    }  # as a CSV file's problems always were
    assert Problem(**sheet.as_dict()) == sheet


def _generator():
    spec = importlib.util.spec_from_file_location(
        "generate_demo", ROOT / "scripts" / "generate_demo.py"
    )
    mod = importlib.util.module_from_spec(spec)
    sys.modules["generate_demo"] = mod
    spec.loader.exec_module(mod)
    return mod


def test_demo_workbook_and_parquet_file_are_written_deterministically():
    """Two runs of the generator give the same bytes (every timestamp inside is pinned), and
    the committed files hold what it writes (compared cell by cell: the bytes also depend on
    the versions of the writing libraries)."""
    import io

    import pyarrow.parquet as pq
    import python_calamine as pc

    gen = _generator()
    paint = [gen.paint_finish_defects()["paint_batches.xlsx"] for _ in range(2)]
    weld = [gen.frame_weld_porosity()["weld_inspection.parquet"] for _ in range(2)]
    assert paint[0] == paint[1] and weld[0] == weld[1]

    def cells(data: bytes) -> dict:
        book = pc.CalamineWorkbook.from_filelike(io.BytesIO(data))
        return {n: book.get_sheet_by_name(n).to_python() for n in book.sheet_names}

    committed = ROOT / "projects" / "paint-finish-defects" / "paint_batches.xlsx"
    assert cells(committed.read_bytes()) == cells(paint[0])
    shipped = pq.read_table(ROOT / "projects" / "frame-weld-porosity" / "weld_inspection.parquet")
    assert shipped.equals(pq.read_table(pa.BufferReader(weld[0])))


def test_damaged_workbooks_give_a_problem_never_an_exception(tmp_path):
    """Bytes changed at random inside the parts of a valid workbook (its zip archive intact):
    each read either succeeds or ends in problems naming the file; nothing else escapes."""
    import io
    import random
    import zipfile

    from steadyline.errors import ProjectError

    z = zipfile.ZipFile(io.BytesIO(xlsx({"Audit": good_rows()})))
    parts = {i.filename: z.read(i.filename) for i in z.infolist()}
    rnd = random.Random(7)
    root = write(tmp_path / "projects", {"p/project.toml": meta(metric={"file": "data.xlsx"})})
    settings, _ = load_portfolio(root)
    outcomes = set()
    for _ in range(60):
        name = rnd.choice(sorted(parts))
        data = bytearray(parts[name])
        for _ in range(rnd.randint(1, 4)):
            data[rnd.randrange(len(data))] = rnd.randrange(256)
        out = io.BytesIO()
        with zipfile.ZipFile(out, "w") as w:
            for n, d in parts.items():
                w.writestr(n, bytes(data) if n == name else d)
        (root / "p" / "data.xlsx").write_bytes(out.getvalue())
        spec, _ = load_project(root / "p", root, settings)
        try:
            load_metric(spec.metrics[0], settings)
            outcomes.add("read")
        except ProjectError as e:
            assert all(p.path == "p/data.xlsx" for p in e.problems), e.problems
            outcomes.add("refused")
    assert outcomes == {"read", "refused"}


def test_start_reads_a_parquet_file_past_columns_of_lists(tmp_path):
    """`steadyline start` reads every column of a file: a Parquet column of lists (no single
    values, nothing to guess from) is passed over, not a reason to refuse the file."""
    import tomllib

    from steadyline.cli import main

    folder = tmp_path / "projects" / "weld"
    folder.mkdir(parents=True)
    (folder / "data.parquet").write_bytes(
        parquet(
            {
                "date": pa.array([dt.date.fromisoformat(d) for d in dates(30)]),
                "tags": pa.array([["a"]] * 30),
                "value": pa.array(VALUES),
            }
        )
    )
    assert main(["start", str(folder / "data.parquet"), "--quiet"]) == 0
    meta_ = tomllib.loads((folder / "project.toml").read_text(encoding="utf-8"))
    m = meta_["metric"][0]
    assert (m["file"], m["type"], m["time"], m["value"]) == (
        "data.parquet",
        "continuous",
        "date",
        "value",
    )
    assert "sheet" not in m and "csv" not in m
