#!/usr/bin/env python3
"""Generate the demo portfolio under projects/ (an invented company, invented data).

"Kestrel Cycle Works" is a fictional contract manufacturer of bicycle wheels, hubs and frames
running an improvement programme in 2026. Every project folder written here follows the project
folder format (project.toml, data files, notes.md) and every number is simulated. Most data
files are CSV; one is an Excel workbook and one a Parquet file, as exported by the systems that
hold such data.

Run from the repository root:

    python scripts/generate_demo.py            # (re)write projects/
    python scripts/generate_demo.py --check    # also print a summary of the planted signals

Output is deterministic: each project draws from its own numpy Generator seeded with a fixed
value, floats are written with explicit formats, files use "\\n" line endings, and every
timestamp inside the workbook and the Parquet file is pinned, so two runs give byte-identical
files (the Parquet file names the pyarrow version that wrote it, and the workbook is compressed
by zlib: the same versions give the same bytes). Writing the workbook needs openpyxl (the
"demo" extra: pip install -e ".[demo]"). Only the project folders named here and
projects/portfolio.toml are (re)written; a project folder is emptied before it is written, so no
stale files remain.
"""

from __future__ import annotations

import argparse
import csv
import datetime as dt
import io
import json
import shutil
import sys
import tomllib
from collections.abc import Callable, Iterable, Sequence
from pathlib import Path

import numpy as np

SEED = 20260105  # fixed; each project adds its own stream number
ROOT = Path(__file__).resolve().parents[1]
PROJECTS = ROOT / "projects"
D = dt.date


# --------------------------------------------------------------------------------------------
# small helpers
# --------------------------------------------------------------------------------------------


def rng_for(stream: int) -> np.random.Generator:
    """One independent, fixed stream per project, so editing one project leaves the others."""
    return np.random.default_rng([SEED, stream])


def working_days(start: D, end: D) -> list[D]:
    """Monday to Friday, both ends inclusive."""
    days, d = [], start
    while d <= end:
        if d.weekday() < 5:
            days.append(d)
        d += dt.timedelta(days=1)
    return days


def mondays(start: D, end: D) -> list[D]:
    """Monday dates (ISO week starts) from start (a Monday) to end inclusive."""
    assert start.weekday() == 0, start
    out, d = [], start
    while d <= end:
        out.append(d)
        d += dt.timedelta(days=7)
    return out


def in_range(d: D, start: D, end: D | None = None) -> bool:
    return start <= d and (end is None or d <= end)


def lognormal(rng: np.random.Generator, mean: float, sd: float, size=None):
    """Log-normal draws with the given arithmetic mean and standard deviation."""
    s2 = np.log1p((sd / mean) ** 2)
    return rng.lognormal(np.log(mean) - s2 / 2, np.sqrt(s2), size)


def iso_dt(t: dt.datetime) -> str:
    return t.strftime("%Y-%m-%dT%H:%M:%S")


def csv_text(
    header: Sequence[str], rows: Iterable[Sequence[object]], delimiter: str = ",", bom: bool = False
) -> str:
    """CSV text with "\\n" line endings; every cell must already be a string."""
    buf = io.StringIO()
    w = csv.writer(buf, delimiter=delimiter, lineterminator="\n", quoting=csv.QUOTE_MINIMAL)
    w.writerow(header)
    for row in rows:
        assert all(isinstance(c, str) for c in row), row
        w.writerow(row)
    return ("\ufeff" if bom else "") + buf.getvalue()


# Every timestamp a workbook or Parquet file could carry is this one, so that two runs give
# the same bytes: the zip entries' dates and the workbook's created and modified properties.
PINNED = dt.datetime(2026, 1, 5, 0, 0, 0)


def xlsx_bytes(sheets: Sequence[tuple[str, Sequence[str], Sequence[Sequence[object]]]]) -> bytes:
    """An .xlsx workbook of (sheet name, header, rows) sheets, first sheet first; dates are
    written as spreadsheet dates, numbers as numbers. openpyxl (the optional "demo" extra)
    writes it; its zip archive is then written again with every entry's date pinned and the
    document properties' times replaced by PINNED."""
    import re
    import zipfile

    import openpyxl

    wb = openpyxl.Workbook()
    for i, (name, header, rows) in enumerate(sheets):
        ws = wb.active if i == 0 else wb.create_sheet()
        ws.title = name
        ws.append(list(header))
        for row in rows:
            ws.append(list(row))
    wb.properties.creator = "Kestrel Cycle Works"
    wb.properties.created = wb.properties.modified = PINNED
    buf = io.BytesIO()
    wb.save(buf)
    stamp = PINNED.strftime("%Y-%m-%dT%H:%M:%SZ").encode()
    out = io.BytesIO()
    with zipfile.ZipFile(buf) as src, zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for info in src.infolist():
            data = src.read(info.filename)
            if info.filename == "docProps/core.xml":
                data = re.sub(
                    rb"(<dcterms:(?:created|modified)[^>]*>)[^<]*", rb"\g<1>" + stamp, data
                )
            pinned = zipfile.ZipInfo(info.filename, date_time=PINNED.timetuple()[:6])
            pinned.compress_type = zipfile.ZIP_DEFLATED
            pinned.create_system = 3
            pinned.external_attr = 0o644 << 16
            dst.writestr(pinned, data)
    return out.getvalue()


def parquet_bytes(columns: dict[str, object]) -> bytes:
    """A Parquet file of pyarrow arrays, one row group. It holds no timestamp of its own; its
    footer names the writing library's version ("created_by"), the same on every run with the
    same pyarrow."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    buf = pa.BufferOutputStream()
    pq.write_table(pa.table(columns), buf, compression="snappy")
    return buf.getvalue().to_pybytes()


def f1(x: float) -> str:
    return f"{x:.1f}"


def f2(x: float) -> str:
    return f"{x:.2f}"


def f3(x: float) -> str:
    return f"{x:.3f}"


# --------------------------------------------------------------------------------------------
# TOML writing (the standard library reads TOML but does not write it)
# --------------------------------------------------------------------------------------------


def tv(v: object) -> str:
    """One TOML value."""
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, (dt.datetime, dt.date)):
        return v.isoformat()
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        return repr(v)
    if isinstance(v, str):
        return json.dumps(v, ensure_ascii=False)  # JSON string escapes are valid TOML escapes
    if isinstance(v, (list, tuple)):
        return "[" + ", ".join(tv(x) for x in v) + "]"
    raise TypeError(f"no TOML form for {v!r}")


def toml_text(meta: dict) -> str:
    """Render a project or portfolio mapping in a fixed, readable key order."""
    lines: list[str] = []
    tables = ("phase_dates", "comparison")
    arrays = ("event", "metric")
    for k, v in meta.items():
        if k not in tables and k not in arrays:
            lines.append(f"{k} = {tv(v)}")
    for t in tables:
        if t in meta:
            lines += ["", f"[{t}]"] + [f"{k} = {tv(v)}" for k, v in meta[t].items()]
    for ev in meta.get("event", []):
        lines += ["", "[[event]]"] + [f"{k} = {tv(v)}" for k, v in ev.items()]
    for m in meta.get("metric", []):
        lines += ["", "[[metric]]"]
        lines += [
            f"{k} = {tv(v)}" for k, v in m.items() if not isinstance(v, dict) and k != "set_aside"
        ]
        for k, v in m.items():
            if isinstance(v, dict):
                lines += [f"[metric.{k}]"] + [f"{kk} = {tv(vv)}" for kk, vv in v.items()]
        for entry in m.get("set_aside", []):  # a list of tables: [[metric.set_aside]]
            lines += ["[[metric.set_aside]]"] + [f"{k} = {tv(v)}" for k, v in entry.items()]
    return "\n".join(lines) + "\n"


# --------------------------------------------------------------------------------------------
# the projects; each builder returns {file name: text}
# --------------------------------------------------------------------------------------------


def wheel_build_lead_time() -> dict[str, str]:
    rng = rng_for(1)
    start, end = D(2026, 1, 19), D(2026, 8, 28)
    customs = {D(2026, 2, 16), D(2026, 2, 17), D(2026, 2, 18)}  # rims held at customs
    rows = []
    n_order = 0
    for day in working_days(start, end):
        if day < D(2026, 3, 30):
            mean, sd = 52.0, 14.0
        elif day < D(2026, 4, 13):
            mean, sd = 40.0, 11.0  # changes going in
        else:
            mean, sd = 30.0, 8.0
        k = 1 + int(rng.poisson(1.2))
        # completion times within the shift, sorted and distinct to the minute
        minutes = np.sort(rng.choice(np.arange(7 * 60, 17 * 60), size=k, replace=False))
        for m in minutes:
            lt = float(lognormal(rng, mean, sd))
            if day in customs:
                lt += float(rng.uniform(38.0, 50.0))
            done = dt.datetime.combine(day, dt.time()) + dt.timedelta(minutes=int(m))
            received = done - dt.timedelta(hours=round(lt, 1))
            n_order += 1
            rows.append([f"KCW-WO-{26000 + n_order:05d}", iso_dt(received), iso_dt(done), f1(lt)])
    # the customs hold is a cause found and removed: its days are set aside from the baseline
    customs_aside = [
        {
            "dates": [min(customs), max(customs)],
            "reason": "Rim shipment held at customs; orders waited for rims",
        }
    ]
    meta = {
        "title": "Wheel-build lead time",
        "owner": "Ingrid Solberg",
        "phase": "control",
        "problem": (
            "Custom wheel orders took more than two days from order release to packed "
            "wheel, and the promised 72-hour turnaround was missed on about one order "
            "in seven."
        ),
        "tags": ["wheels", "lead time", "flow"],
        "safety_related": False,
        "phase_dates": {
            "define": D(2026, 1, 5),
            "measure": D(2026, 1, 19),
            "analyze": D(2026, 3, 2),
            "improve": D(2026, 3, 30),
            "control": D(2026, 6, 1),
        },
        "comparison": {
            "baseline": [D(2026, 1, 19), D(2026, 3, 27)],
            "after": [D(2026, 4, 13), D(2026, 8, 28)],
        },
        "event": [
            {"date": D(2026, 2, 16), "label": "Rim shipment held at customs for three days"},
            {"date": D(2026, 3, 30), "label": "Second truing stand commissioned"},
            {"date": D(2026, 4, 6), "label": "Wheel orders released to the cell by kanban card"},
        ],
        "metric": [
            {
                "id": "lead-time-daily",
                "name": "Lead time, by day",
                "file": "orders.csv",
                "type": "continuous",
                "time": "completed",
                "value": "lead_time_h",
                "unit": "hours",
                "better": "lower",
                "spec_upper": 72.0,
                "headline": True,
                "expected_change": -12.0,
                "rollup": {"period": "day", "statistic": "mean"},
                "set_aside": customs_aside,
            },
            {
                "id": "lead-time-order",
                "name": "Lead time per order",
                "file": "orders.csv",
                "type": "continuous",
                "time": "completed",
                "value": "lead_time_h",
                "unit": "hours",
                "better": "lower",
                "spec_upper": 72.0,
                "limits": "per-period",
                "bins": [0.0, 12.0, 24.0, 36.0, 48.0, 60.0, 72.0, 84.0, 96.0, 108.0, 120.0],
                "set_aside": customs_aside,
            },
        ],
    }
    notes = """\
## Background
Custom wheel orders (mostly 28- and 32-spoke builds for small frame brands) waited in three
queues: spoke cutting, lacing and truing. Only one truing stand was available, and work orders
were released to the cell in daily batches regardless of how much work was already waiting.
The customer promise is 72 hours from release to packed wheel.

In mid-February a rim shipment was held at customs for three days; orders completed on
16–18 February carry that delay. The cause was found and removed (rims now come with a week's
safety stock), so those days are set aside from the baseline.

## What was changed
- A second truing stand was commissioned on 30 March.
- From 6 April orders are released to the cell by kanban card: a new order starts only when a
  card comes back from packing (at most six wheels in the cell).

| | Baseline (19 Jan – 27 Mar) | After (13 Apr – 28 Aug) |
|---|---|---|
| Typical lead time | about 52 h | about 30 h |
| Orders over 72 h | about 1 in 7 | none |

The daily chart takes the mean of the orders completed each day ([orders.csv](orders.csv)).
"""
    return {
        "project.toml": toml_text(meta),
        "orders.csv": csv_text(["order_id", "released", "completed", "lead_time_h"], rows),
        "notes.md": notes,
    }


def spoke_tension() -> dict[str, str]:
    rng = rng_for(2)
    start, end = D(2026, 2, 2), D(2026, 7, 31)
    trainee_day = D(2026, 2, 24)
    gauge_low = (D(2026, 3, 9), D(2026, 3, 19))  # tensiometer T-3 reading low
    jig_day = D(2026, 4, 13)
    builders_before = ["A. Mensah", "R. Kowalczyk", "S. Iyer"]
    rows = []
    for i, day in enumerate(working_days(start, end)):
        if day < D(2026, 4, 6):
            mu, wheel_sd, sd = 117.8, 0.6, 4.0
        elif day < jig_day:
            mu, wheel_sd, sd = 119.0, 0.5, 3.0  # trial of the jig on one stand
        else:
            mu, wheel_sd, sd = 120.3, 0.4, 1.9
        wheel_mu = mu + rng.normal(0.0, wheel_sd)
        builder = builders_before[int(rng.integers(0, 3))]
        if day == trainee_day:
            wheel_mu -= 9.0
            sd *= 1.9
            builder = "trainee"
        if in_range(day, *gauge_low):
            wheel_mu -= 4.5
        t = dt.datetime.combine(day, dt.time(8, 0)) + dt.timedelta(
            minutes=int(rng.integers(0, 8 * 60))
        )
        wheel_id = f"W26-{1000 + i:04d}"
        for spoke in range(1, 6):
            x = wheel_mu + rng.normal(0.0, sd)
            rows.append(
                [wheel_id, iso_dt(t + dt.timedelta(minutes=spoke)), str(spoke), builder, f1(x)]
            )
    meta = {
        "title": "Spoke tension consistency",
        "owner": "Mateo Fernández",
        "phase": "improve",
        "problem": (
            "Spoke tension on finished road wheels varied so widely that some wheels "
            "left the cell below the 110 kgf minimum, which shows up later as wheels "
            "going out of true."
        ),
        "tags": ["wheels", "tension", "capability"],
        "phase_dates": {
            "define": D(2026, 1, 12),
            "measure": D(2026, 2, 2),
            "analyze": D(2026, 3, 23),
            "improve": D(2026, 4, 6),
        },
        "comparison": {"baseline": [D(2026, 2, 2), D(2026, 3, 27)], "after": [D(2026, 4, 20)]},
        "event": [
            {"date": trainee_day, "label": "Trainee built a wheel without a tension check"},
            {
                "date": gauge_low[0],
                "label": "Tensiometer T-3 dropped; it read low until recalibrated on 20 March",
            },
            {"date": jig_day, "label": "New spoke tensioning jig in use"},
        ],
        "metric": [
            {
                "id": "tension",
                "name": "Spoke tension (5 spokes per wheel)",
                "file": "spoke_tension.csv",
                "type": "subgroups",
                "time": "measured",
                "value": "tension_kgf",
                "subgroup": "wheel_id",
                "unit": "kgf",
                "better": "target",
                "spec_lower": 110.0,
                "spec_upper": 130.0,
                "target": 120.0,
                "headline": True,
                "normal_curve": True,
                "quartiles": "tukey-hinges",
                "measurement_study": "tension-meter",
            },
            {
                "id": "tension-meter",
                "name": "Tension-meter study",
                "file": "tension_meter_study.csv",
                "type": "measurement-study",
                "part": "spoke",
                "appraiser": "builder",
                "value": "reading_kgf",
                "unit": "kgf",
                "spec_lower": 110.0,
                "spec_upper": 130.0,
            },
        ],
    }
    notes = """\
## Background
One finished wheel a day is taken from the cell and five drive-side spokes are measured with a
tensiometer (kgf). The rim maker's window for these rims is 110–130 kgf with 120 kgf as target.
Before the project, builders tensioned by feel and pitch, and the baseline capability was poor.

Two known special causes sit in the baseline:
- **24 February**: a trainee built a wheel without a tension check; its mean is far below
  the other wheels.
- **9–19 March**: tensiometer T-3 was dropped and read about 4–5 kgf low until it was
  recalibrated; nine wheels in a row sit below the centre line. The wheels were fine, the
  measurement was not, which is why the gauge is now checked against a reference every Monday.

## What was changed
A spoke tensioning jig holds the rim and shows live tension for each spoke, so the builder
brings every spoke into a ±3 kgf band before stress relieving. It was trialled on one stand
from 6 April and used on all stands from 13 April.

| | Baseline | After |
|---|---|---|
| Mean tension | about 118 kgf | about 120 kgf |
| Within-wheel spread (σ) | about 4 kgf | about 2 kgf |
| Cpk | below 1 | above 1.33 |

Raw readings: [spoke_tension.csv](spoke_tension.csv). After T-3 was recalibrated, the three
builders each measured ten marked spokes of one reference wheel three times, in a new order
each round: [tension_meter_study.csv](tension_meter_study.csv).
"""
    return {
        "project.toml": toml_text(meta),
        "spoke_tension.csv": csv_text(
            ["wheel_id", "measured", "spoke_no", "builder", "tension_kgf"], rows
        ),
        "tension_meter_study.csv": tension_meter_study(builders_before),
        "notes.md": notes,
    }


def tension_meter_study(builders: list[str]) -> str:
    """A crossed study of tensiometer T-3 after its recalibration: 10 marked spokes of one
    reference wheel, tensioned across the process's range, each read 3 times by each of the
    3 builders, the spokes in a new random order each round (a stream of its own: the other
    files stay as they were)."""
    rng = rng_for(20)
    spokes = 120.0 + rng.normal(0.0, 3.0, 10)  # the spokes' true tensions
    bias = {b: d for b, d in zip(builders, (0.0, 0.35, -0.25), strict=True)}  # how each reads
    rows = []
    for _round in range(3):
        for b in builders:
            for i in rng.permutation(10):
                reading = spokes[i] + bias[b] + rng.normal(0.0, 0.55)
                rows.append([f"S{i + 1:02d}", b, f1(reading)])
    return csv_text(["spoke", "builder", "reading_kgf"], rows)


def hub_bearing_press_fit() -> dict[str, str]:
    rng = rng_for(3)
    start, end = D(2026, 1, 12), D(2026, 7, 31)
    oversize_lot = D(2026, 2, 11)
    loose_arbor = D(2026, 3, 6)
    rows = []
    days = [d for d in working_days(start, end) if d.weekday() in (0, 2, 4)]
    for day in days:
        if day < D(2026, 4, 1):
            mu, sd = 3.22, 0.32
        elif day < D(2026, 4, 13):
            mu, sd = 3.08, 0.22
        else:
            mu, sd = 3.02, 0.16
        n = int(rng.integers(8, 16))  # 8..15 hubs sampled from the lot
        if day == oversize_lot:
            mu -= 0.50
        if day == loose_arbor:
            sd *= 2.3
        lot = f"HL-{day:%m%d}"
        x = rng.normal(mu, sd, n)
        for j, v in enumerate(x, start=1):
            rows.append([lot, day.isoformat(), f"{lot}-{j:02d}", f2(v)])
    meta = {
        "title": "Hub bearing press-fit force",
        "owner": "Aisha Rahman",
        "phase": "control",
        "problem": (
            "Press-fit force for the 6902 cartridge bearings in rear hub shells spread "
            "outside the 2.0–4.0 kN window: too low lets the bearing creep in the "
            "shell, too high damages the races."
        ),
        "tags": ["hubs", "bearings", "press fit", "safety"],
        "safety_related": True,
        "phase_dates": {
            "define": D(2026, 1, 5),
            "measure": D(2026, 1, 12),
            "analyze": D(2026, 2, 23),
            "improve": D(2026, 3, 23),
            "control": D(2026, 5, 18),
        },
        "comparison": {
            "baseline": [D(2026, 1, 12), D(2026, 3, 20)],
            "after": [D(2026, 4, 13), D(2026, 7, 31)],
        },
        "event": [
            {
                "date": oversize_lot,
                "label": "Hub shells from machining batch HS-0211 bored oversize",
            },
            {"date": loose_arbor, "label": "Press arbor found loose and re-seated"},
            {
                "date": D(2026, 4, 1),
                "label": "Servo press with force–distance monitoring installed",
            },
        ],
        "metric": [
            {
                "id": "press-fit-force",
                "name": "Bearing press-fit force",
                "file": "press_fit.csv",
                "type": "subgroups",
                "time": "pressed",
                "value": "force_kn",
                "subgroup": "lot_id",
                "unit": "kN",
                "better": "target",
                "spec_lower": 2.0,
                "spec_upper": 4.0,
                "target": 3.0,
                "headline": True,
                "normal_curve": True,
                "signal_rules": "nelson",
            },
        ],
    }
    notes = """\
> Bearings that creep or are damaged at assembly can fail in use. This project is marked as
> safety-related; any out-of-window lot is quarantined, not just charted.

## Background
Rear hubs are assembled in lots (one lot each Monday, Wednesday and Friday). From every lot
8–15 hubs are pressed on the instrumented fixture and the peak press-fit force is recorded.
The window agreed with the bearing supplier is 2.0–4.0 kN with 3.0 kN as target.

Known special causes in the baseline:
- **11 February**: shells from machining batch HS-0211 were bored oversize, so the whole lot
  pressed in with low force.
- **6 March**: the press arbor had worked loose; forces scattered widely within the lot.

## What was changed
A servo press with force–distance monitoring replaced the pneumatic press on 1 April. It stops
on a force window and rejects the hub automatically, and the bore gauge check moved from
once a shift to every 20 shells.

| | Baseline | After |
|---|---|---|
| Mean force | about 3.2 kN | about 3.0 kN |
| Within-lot σ | about 0.32 kN | about 0.16 kN |
| Hubs sampled per lot | 8–15 | 8–15 |

Readings per hub: [press_fit.csv](press_fit.csv).
"""
    return {
        "project.toml": toml_text(meta),
        "press_fit.csv": csv_text(["lot_id", "pressed", "hub_serial", "force_kn"], rows),
        "notes.md": notes,
    }


def order_picking_errors() -> dict[str, str]:
    rng = rng_for(4)
    stock_take = D(2026, 3, 2)
    rows = []
    for wk in mondays(D(2026, 1, 5), D(2026, 11, 16)):
        if wk < D(2026, 5, 25):
            p = 0.045
        elif wk < D(2026, 6, 8):
            p = 0.030
        else:
            p = 0.018
        if wk == stock_take:
            p = 0.10
        n = int(rng.integers(300, 701))
        d = int(rng.binomial(n, p))
        rows.append([wk.isoformat(), str(n), str(d)])
    meta = {
        "title": "Order picking errors",
        "owner": "Tomasz Wiśniewski",
        "phase": "control",
        "problem": (
            "About one shipped order in twenty had a picking error (wrong part, wrong "
            "quantity or a missing item), each costing a re-shipment and a complaint."
        ),
        "tags": ["warehouse", "logistics", "errors"],
        "phase_dates": {
            "define": D(2026, 1, 5),
            "measure": D(2026, 1, 12),
            "analyze": D(2026, 4, 6),
            "improve": D(2026, 5, 11),
            "control": D(2026, 7, 6),
        },
        "comparison": {
            "baseline": [D(2026, 1, 5), D(2026, 5, 22)],
            "after": [D(2026, 6, 8), D(2026, 11, 20)],
        },
        "event": [
            {"date": stock_take, "label": "Stock-take week: agency pickers on the floor"},
            {"date": D(2026, 5, 25), "label": "Barcode scan confirmation at every pick face"},
        ],
        "metric": [
            {
                "id": "picking-error-rate",
                "name": "Orders with a picking error",
                "file": "picking_audit.csv",
                "type": "defectives",
                "time": "week_start",
                "count": "orders_with_error",
                "size": "orders_checked",
                "unit": "orders",
                "better": "lower",
                "headline": True,
            },
        ],
    }
    notes = """\
## Background
Outbound orders (hubs, wheelsets and spares for bike brands and dealers) are checked at the
packing bench against the pick list. Each week the number of orders checked varies between
about 300 and 700, so the limits on the chart step with the weekly count.

The week of **2 March** was the annual stock-take: regular pickers were counting stock and
agency staff picked orders. The error rate that week is a known special cause.

## What was changed
From 25 May every pick is confirmed by scanning the bin label and the part barcode; the
handheld refuses a wrong part and asks for a recount when the quantity is off.

| | Baseline | After |
|---|---|---|
| Orders with an error | about 5 % | about 1.8 % |
| Orders checked per week | 300–700 | 300–700 |

Weekly audit counts: [picking_audit.csv](picking_audit.csv).
"""
    return {
        "project.toml": toml_text(meta),
        "picking_audit.csv": csv_text(["week_start", "orders_checked", "orders_with_error"], rows),
        "notes.md": notes,
    }


def wheel_truing_first_pass_yield() -> dict[str, str]:
    rng = rng_for(5)
    rim_lot = D(2026, 3, 16)
    rows = []
    for wk in mondays(D(2026, 1, 5), D(2026, 10, 26)):
        if wk < D(2026, 6, 1):
            p0 = 0.075
        elif wk < D(2026, 6, 15):
            p0 = 0.055
        else:
            p0 = 0.040
        # week-to-week variation beyond binomial: rim lots, product mix, staffing
        p = p0 * float(np.exp(rng.normal(0.0, 0.07)))
        if wk == rim_lot:
            p = p0 * 1.32
        n = int(rng.integers(20000, 60001))
        d = int(rng.binomial(n, p))
        rows.append([wk.isoformat(), str(n), str(d)])
    meta = {
        "title": "Wheel truing first-pass yield",
        "owner": "Mei-Lin Chou",
        "phase": "improve",
        "problem": (
            "Across the three wheel lines about 7.5 % of wheels failed the automatic "
            "true-and-dish check after the first truing pass and had to be re-trued "
            "by hand."
        ),
        "tags": ["wheels", "truing", "yield", "overdispersion"],
        "phase_dates": {
            "define": D(2026, 1, 5),
            "measure": D(2026, 1, 19),
            "analyze": D(2026, 4, 13),
            "improve": D(2026, 5, 25),
        },
        "comparison": {"baseline": [D(2026, 1, 5), D(2026, 5, 29)], "after": [D(2026, 6, 15)]},
        "event": [
            {"date": rim_lot, "label": "Rim lot R-3316 with misaligned seams"},
            {
                "date": D(2026, 6, 1),
                "label": "Stress-relief step added before the final truing pass",
            },
        ],
        "metric": [
            {
                "id": "retrue-rate",
                "name": "Wheels needing re-truing",
                "file": "truing_weekly.csv",
                "type": "defectives",
                "time": "week_start",
                "count": "wheels_retrued",
                "size": "wheels_checked",
                "unit": "wheels",
                "better": "lower",
                "headline": True,
                "chart": "laney-p",
            },
            {
                "id": "nipple-audit",
                "name": "Cracked nipples in the daily audit of 200",
                "file": "nipple_audit.csv",
                "type": "defectives",
                "time": "audited",
                "count": "cracked",
                "size": "nipples_checked",
                "unit": "nipples",
                "better": "lower",
                "expected_change": -0.015,
            },
        ],
    }
    notes = """\
## Background
Every wheel leaving the truing stands passes an automatic true-and-dish check. Weekly volumes
are 20,000–60,000 wheels across the three lines. With subgroups this large, ordinary p-chart
limits are very narrow, and the normal week-to-week variation (rim lots, product mix,
staffing) is larger than the binomial model allows. The chart therefore uses Laney p′ limits,
which widen the limits by the observed between-week variation.

The week of **16 March** used rim lot R-3316, whose seams were misaligned; it is a known
special cause.

## What was changed
From 1 June a stress-relief step (squeezing parallel spoke pairs, then a second tension
pass) was added before the final truing pass, so that spokes settle before the check rather
than after it.

| | Baseline | After |
|---|---|---|
| Wheels re-trued | about 7.5 % | about 4 % |
| Wheels checked per week | 20,000–60,000 | 20,000–60,000 |

Weekly counts: [truing_weekly.csv](truing_weekly.csv).
"""
    audit_rng = rng_for(50)  # a stream of its own: the other files stay as they were
    audit_rows = []
    for day in working_days(D(2026, 1, 5), D(2026, 10, 30)):
        p_crack = 0.03 if day < D(2026, 6, 1) else 0.015
        audit_rows.append([day.isoformat(), "200", str(int(audit_rng.binomial(200, p_crack)))])
    notes = notes.replace(
        "Weekly counts:",
        "A sample of 200 spoke nipples is checked for "
        "cracks each working day:\n[nipple_audit.csv](nipple_audit.csv).\n\n"
        "Weekly counts:",
    )
    return {
        "project.toml": toml_text(meta),
        "nipple_audit.csv": csv_text(["audited", "nipples_checked", "cracked"], audit_rows),
        "truing_weekly.csv": csv_text(["week_start", "wheels_checked", "wheels_retrued"], rows),
        "notes.md": notes,
    }


PAINT_CATEGORIES = [
    "Dust inclusion",
    "Orange peel",
    "Runs",
    "Sag",
    "Thin coverage",
    "Chip",
    "Colour mismatch",
    "Fisheye",
    "Masking bleed",
    "Pinholes",
]
PAINT_P_BEFORE = [0.30, 0.16, 0.10, 0.08, 0.10, 0.09, 0.06, 0.05, 0.04, 0.02]
PAINT_P_AFTER = [0.12, 0.20, 0.10, 0.08, 0.14, 0.12, 0.08, 0.06, 0.06, 0.04]
PAINT_P_DUSTY = [0.75, 0.06, 0.03, 0.02, 0.04, 0.04, 0.02, 0.02, 0.01, 0.01]


def paint_finish_defects() -> dict[str, str]:
    rng = rng_for(6)
    clogged = D(2026, 2, 18)
    batch_rows, defect_rows = [], []
    n_def = 0
    days = [d for d in working_days(D(2026, 1, 12), D(2026, 8, 28)) if d.weekday() in (0, 2, 4)]
    for i, day in enumerate(days):
        if day < D(2026, 4, 20):
            u, probs = 0.35, PAINT_P_BEFORE
        elif day < D(2026, 5, 4):
            u, probs = 0.25, PAINT_P_AFTER
        else:
            u, probs = 0.15, PAINT_P_AFTER
        if day == clogged:
            u, probs = 0.85, PAINT_P_DUSTY
        frames = int(rng.integers(40, 121))
        c = int(rng.poisson(u * frames))
        batch = f"PB-{2600 + i:04d}"
        batch_rows.append([batch, day, frames, c])
        cats = rng.choice(len(PAINT_CATEGORIES), size=c, p=probs)
        for k in cats:
            n_def += 1
            frame_no = int(rng.integers(1, frames + 1))
            defect_rows.append(
                [f"PD-{n_def:05d}", batch, day.isoformat(), str(frame_no), PAINT_CATEGORIES[int(k)]]
            )
    meta = {
        "title": "Paint finish defects on frames",
        "owner": "Kwame Asante",
        "phase": "improve",
        "problem": (
            "Powder-coated frames averaged about one visible finish defect per three "
            "frames at final inspection, and each one means sanding and a touch-up or a "
            "full re-coat."
        ),
        "tags": ["frames", "paint", "finish", "defects"],
        "phase_dates": {
            "define": D(2026, 1, 5),
            "measure": D(2026, 1, 12),
            "analyze": D(2026, 3, 9),
            "improve": D(2026, 4, 13),
        },
        "comparison": {"baseline": [D(2026, 1, 12), D(2026, 4, 3)], "after": [D(2026, 5, 4)]},
        "event": [
            {"date": clogged, "label": "Booth intake filters clogged; replaced next morning"},
            {
                "date": D(2026, 4, 20),
                "label": "Booth kept at over-pressure; filters changed every two weeks",
            },
            {"date": D(2026, 4, 27), "label": "Tack-cloth wipe-down before the booth"},
        ],
        "metric": [
            {
                "id": "defects-per-frame",
                "name": "Finish defects per frame",
                "file": "paint_batches.xlsx",
                "sheet": "Batches",
                "type": "defects",
                "time": "painted",
                "count": "defects",
                "size": "frames_painted",
                "unit": "defects per frame",
                "better": "lower",
                "headline": True,
                "opportunities_per_unit": 24,
            },
            {
                "id": "scanner-blemishes",
                "name": "Scanner blemishes per square metre",
                "file": "paint_scanner_weekly.csv",
                "type": "defects",
                "time": "week_start",
                "count": "blemishes",
                "size": "area_m2",
                "unit": "blemishes per m²",
                "better": "lower",
            },
            {
                "id": "defect-types",
                "name": "Finish defects by type",
                "file": "paint_defects.csv",
                "type": "categories",
                "time": "found",
                "category": "defect_type",
                "unit": "defects",
                "better": "lower",
            },
        ],
    }
    notes = """\
## Background
Frames are powder coated in batches of 40–120 (one batch each Monday, Wednesday and Friday).
Final inspection logs every visible finish defect with its type. Because batch sizes differ,
the chart plots defects **per frame**, with limits that depend on each batch's size. The
inspection plan checks 24 zones on each frame, so a frame has 24 opportunities for a defect.

On **18 February** the booth intake filters were clogged; that batch shows a burst of dust
inclusions and is a known special cause.

Dust inclusion was the largest single defect type in the baseline, which pointed the analysis
at air handling in the booth rather than at the powder or the gun settings.

## What was changed
- 20 April: the booth is held at slight over-pressure and the intake filters are changed every
  two weeks instead of "when they look dirty".
- 27 April: frames are wiped with a tack cloth just before they enter the booth.

| | Baseline | After |
|---|---|---|
| Defects per frame | about 0.35 | about 0.15 |
| Share of dust inclusions | about 35 % | about 13 % |
| Defect types logged | 10 | 10 |

Batch totals are in the workbook [paint_batches.xlsx](paint_batches.xlsx) (sheet "Batches"),
single defects in
[paint_defects.csv](paint_defects.csv).
"""
    scan_rng = rng_for(60)  # a stream of its own: the other files stay as they were
    scan_rows = []
    for wk in mondays(D(2026, 1, 5), D(2026, 8, 31)):
        rate = 0.25 if wk < D(2026, 4, 20) else 0.15
        # week-to-week variation beyond Poisson (powder lots, humidity): Laney u' territory
        rate *= float(np.exp(scan_rng.normal(0.0, 0.12)))
        area = float(scan_rng.uniform(1800.0, 3200.0))
        scan_rows.append([wk.isoformat(), f"{area:.1f}", str(int(scan_rng.poisson(rate * area)))])
    notes = notes.replace(
        "Batch totals are in",
        "The inline scanner counts small blemishes over "
        "the painted area each week:\n[paint_scanner_weekly.csv]"
        "(paint_scanner_weekly.csv).\n\nBatch totals are in",
    )
    return {
        "project.toml": toml_text(meta),
        "paint_scanner_weekly.csv": csv_text(["week_start", "area_m2", "blemishes"], scan_rows),
        "paint_batches.xlsx": xlsx_bytes(
            [
                ("Batches", ["batch_id", "painted", "frames_painted", "defects"], batch_rows),
                (
                    "About",
                    ["note"],
                    [
                        [
                            "One row per powder-coating batch: the day it was "
                            "painted, frames painted, finish defects found at final "
                            "inspection."
                        ]
                    ],
                ),
            ]
        ),
        "paint_defects.csv": csv_text(
            ["defect_id", "batch_id", "found", "frame_in_batch", "defect_type"], defect_rows
        ),
        "notes.md": notes,
    }


RETURN_REASONS = [
    "Wheel out of true",
    "Bearing noise or play",
    "Spoke or nipple failure",
    "Paint or finish damage",
    "Wrong part or quantity",
    "Transit damage",
    "Frame alignment",
]
RETURN_P_BEFORE = [0.32, 0.20, 0.16, 0.12, 0.08, 0.07, 0.05]
RETURN_P_AFTER = [0.17, 0.19, 0.14, 0.18, 0.12, 0.12, 0.08]
RETURN_COMPONENT = {
    "Wheel out of true": "wheel",
    "Bearing noise or play": "hub",
    "Spoke or nipple failure": "wheel",
    "Paint or finish damage": "frame",
    "Wrong part or quantity": None,
    "Transit damage": None,
    "Frame alignment": "frame",
}


def customer_returns() -> dict[str, str]:
    rng = rng_for(7)
    dry_hubs = D(2026, 3, 23)
    ret_rows, weekly_rows = [], []
    n_rma = 0
    for wk in mondays(D(2026, 1, 5), D(2026, 11, 16)):
        if wk < D(2026, 6, 1):
            lam, probs = 14.0, RETURN_P_BEFORE
        elif wk < D(2026, 7, 6):
            lam, probs = 10.0, RETURN_P_AFTER
        else:
            lam, probs = 7.0, RETURN_P_AFTER
        reasons = list(rng.choice(len(RETURN_REASONS), size=int(rng.poisson(lam)), p=probs))
        if wk == dry_hubs:
            reasons += [1] * 17  # under-greased hub lot H-0312
        days = np.sort(rng.integers(0, 5, size=len(reasons)))
        order = rng.permutation(len(reasons))
        for dday, k in zip(days, (reasons[j] for j in order), strict=True):
            n_rma += 1
            reason = RETURN_REASONS[int(k)]
            comp = RETURN_COMPONENT[reason] or ["wheel", "hub", "frame"][int(rng.integers(0, 3))]
            received = wk + dt.timedelta(days=int(dday))
            ret_rows.append([f"RMA-26-{n_rma:04d}", received.isoformat(), comp, reason])
        weekly_rows.append([wk.isoformat(), str(len(reasons))])
    meta = {
        "title": "Customer returns",
        "owner": "Priya Natarajan",
        "phase": "control",
        "problem": (
            "Bike brands returned about 16 components a week under warranty or as "
            "wrong deliveries, at a fairly constant shipped volume of about 9,000 "
            "components a week."
        ),
        "tags": ["customers", "returns", "warranty"],
        "phase_dates": {
            "define": D(2026, 1, 5),
            "measure": D(2026, 1, 12),
            "analyze": D(2026, 4, 6),
            "improve": D(2026, 5, 4),
            "control": D(2026, 8, 3),
        },
        "comparison": {
            "baseline": [D(2026, 1, 5), D(2026, 5, 29)],
            "after": [D(2026, 7, 6), D(2026, 11, 20)],
        },
        "event": [
            {"date": dry_hubs, "label": "Hub lot H-0312 shipped with under-greased bearings"},
            {
                "date": D(2026, 6, 1),
                "label": "True-and-dish check and grease dosing check added at packing",
            },
        ],
        "metric": [
            {
                "id": "returns-weekly",
                "name": "Returned components per week",
                "file": "returns_weekly.csv",
                "type": "defects",
                "time": "week_start",
                "count": "returns",
                "unit": "returns per week",
                "better": "lower",
                "headline": True,
                "run_rules": "perla",
            },
            {
                "id": "return-reasons",
                "name": "Return reasons",
                "file": "returns.csv",
                "type": "categories",
                "time": "received",
                "category": "reason",
                "unit": "returns",
                "better": "lower",
            },
        ],
    }
    notes = """\
## Background
Every returned component gets a return number (RMA) and a reason code when it arrives at
goods-in. Shipped volume was close to constant through the year (about 9,000 components a
week), so the weekly count of returns is charted directly, without dividing by volume.

The week of **23 March** brought a cluster of returns from hub lot H-0312, which left assembly
with too little grease in the bearings. It is a known special cause.

## What was changed
From 1 June every wheel gets a true-and-dish check at the packing bench, and the grease
dosing nozzle on hub assembly is checked by weight at the start of each shift.

| | Baseline | After |
|---|---|---|
| Returns per week | about 16 | about 7 |
| Top reason | wheel out of true (28 %) | no single dominant reason |
| Reason codes | 7 | 7 |

One row per returned component: [returns.csv](returns.csv); weekly totals:
[returns_weekly.csv](returns_weekly.csv).
"""
    return {
        "project.toml": toml_text(meta),
        "returns.csv": csv_text(["rma_id", "received", "component", "reason"], ret_rows),
        "returns_weekly.csv": csv_text(["week_start", "returns"], weekly_rows),
        "notes.md": notes,
    }


def frame_dropout_alignment() -> dict[str, str]:
    rng = rng_for(8)
    second_fixture = D(2026, 10, 14)
    days = working_days(D(2026, 9, 28), D(2026, 10, 21))  # 18 frames, one a day
    rows = []
    for i, day in enumerate(days):
        x = float(lognormal(rng, 0.36, 0.10))
        if day == second_fixture:
            x += 0.55
        batch = "VB-2639" if day < D(2026, 10, 12) else "VB-2642"
        # exported by the supplier's system with decimal commas and semicolons
        rows.append([f"FR-{88410 + i}", day.isoformat(), f3(x).replace(".", ","), batch])
    meta = {
        "title": "Frame dropout alignment",
        "owner": "Lukas Brenner",
        "phase": "measure",
        "problem": (
            "Frames from our welding supplier arrive with rear dropouts out of "
            "alignment often enough that assembly has to cold-set some of them; we "
            "first need a baseline of how far off they are."
        ),
        "tags": ["frames", "supplier", "alignment"],
        "phase_dates": {"define": D(2026, 9, 7), "measure": D(2026, 9, 28)},
        "comparison": {"baseline": [D(2026, 9, 28), D(2026, 10, 23)]},
        "event": [
            {"date": D(2026, 10, 5), "label": "Repeatability check of the alignment gauge passed"},
            {
                "date": second_fixture,
                "label": "Supplier moved our frames to a second welding fixture",
            },
        ],
        "metric": [
            {
                "id": "dropout-offset",
                "name": "Rear dropout alignment deviation",
                "file": "supplier_alignment_export.csv",
                "type": "continuous",
                "time": "measured",
                "value": "dropout_offset_mm",
                "unit": "mm",
                "better": "lower",
                "spec_upper": 0.8,
                "headline": True,
                "bins": "sturges",
                "expected_change": -0.15,
                "csv": {"delimiter": ";", "decimal": ","},
            },
        ],
    }
    notes = """\
## Background
Aluminium frames are welded by a supplier and aligned on their fixture before heat treatment.
On arrival we measure one frame a day on the alignment gauge: the deviation of the rear
dropouts from the frame's centre plane, in millimetres (0.8 mm is the assembly limit).

The data comes straight from the supplier's measurement export, which uses semicolons as
separators and decimal commas; the project reads it as it is rather than converting it.

This project is still in the **measure** phase: there are only 18 points so far, which is
too few for a firm baseline, and there is no change to compare against yet.

On **14 October** the supplier moved our frames to a second welding fixture without telling
us; that frame is well above the rest.

| Step | Status |
|---|---|
| Gauge repeatability check | done 5 October |
| 25+ frames measured | in progress |
| Supplier fixture audit | planned |

Supplier export: [supplier_alignment_export.csv](supplier_alignment_export.csv).
"""
    return {
        "project.toml": toml_text(meta),
        "supplier_alignment_export.csv": csv_text(
            ["frame_serial", "measured", "dropout_offset_mm", "supplier_batch"],
            rows,
            delimiter=";",
            bom=True,
        ),
        "notes.md": notes,
    }


def frame_weld_porosity() -> dict[str, str]:
    rng = rng_for(9)
    wrong_gas = D(2026, 3, 16)
    rows = []
    n_frame = 0
    for wk in mondays(D(2026, 2, 2), D(2026, 4, 27)):
        p = 0.16 if wk == wrong_gas else 0.06
        n = int(rng.integers(170, 211))
        flags = rng.random(n) < p
        days = np.sort(rng.integers(0, 5, size=n))
        mins = rng.integers(6 * 60, 22 * 60, size=n)
        stamps = sorted(
            dt.datetime.combine(wk + dt.timedelta(days=int(dd)), dt.time())
            + dt.timedelta(minutes=int(mm))
            for dd, mm in zip(days, mins, strict=True)
        )
        for t, flag in zip(stamps, flags, strict=True):
            n_frame += 1
            rows.append([f"AF-{260000 + n_frame}", t, 1 if flag else 0])
    meta = {
        "title": "Frame weld porosity",
        "owner": "Fatima Al-Sayed",
        "phase": "analyze",
        "problem": (
            "About 6 % of in-house welded aluminium frames show porosity at the "
            "bottom-bracket and chainstay joints on inspection and must be repaired "
            "or scrapped."
        ),
        "tags": ["frames", "welding", "scrap"],
        "phase_dates": {
            "define": D(2026, 1, 26),
            "measure": D(2026, 2, 2),
            "analyze": D(2026, 5, 4),
        },
        "comparison": {"baseline": [D(2026, 2, 2), D(2026, 5, 1)]},
        "event": [
            {"date": wrong_gas, "label": "Wrong shielding-gas mix connected to weld cell 2"},
            {"date": D(2026, 5, 4), "label": "Sectioning study of porous joints started"},
        ],
        "metric": [
            {
                "id": "porosity-rate",
                "name": "Frames with weld porosity",
                "file": "weld_inspection.parquet",
                "type": "defectives",
                "time": "inspected",
                "value": "porosity_found",
                "unit": "frames",
                "better": "lower",
                "headline": True,
                "rollup": {"period": "week", "statistic": "proportion"},
            },
        ],
    }
    notes = """\
## Background
Every in-house welded frame is inspected after heat treatment; `porosity_found` is 1 when
porosity is found at any joint. The chart rolls the inspections up into ISO weeks and plots
the share of frames with porosity.

In the week of **16 March** a cylinder with the wrong shielding-gas mix was connected to weld
cell 2 for three days; that week is a known special cause and is excluded from the
root-cause work.

## Current work (analyze)
Porous joints are being sectioned to separate gas-related porosity from contamination
(tube cleaning) and fit-up gaps.

| Suspected cause | Evidence so far |
|---|---|
| Tube cleaning before welding | porosity clusters on Monday mornings |
| Gas flow at cell 2 | flow meter reads low at full manifold load |
| Fit-up gap at the chainstay | not yet checked |

Inspection records (a Parquet file exported from the inspection system):
[weld_inspection.parquet](weld_inspection.parquet).
"""
    return {
        "project.toml": toml_text(meta),
        "weld_inspection.parquet": _weld_parquet(rows),
        "notes.md": notes,
    }


def _weld_parquet(rows: list[list]) -> bytes:
    """The inspection records as an inspection system exports them: the serial as text, the
    time as a timestamp (to the second), the flag as a small integer."""
    import pyarrow as pa

    serial, inspected, flag = zip(*rows, strict=True)
    return parquet_bytes(
        {
            "frame_serial": pa.array(serial, pa.string()),
            "inspected": pa.array(inspected, pa.timestamp("s")),
            "porosity_found": pa.array(flag, pa.int8()),
        }
    )


PROJECT_BUILDERS: dict[str, Callable[[], dict[str, str]]] = {
    "wheel-build-lead-time": wheel_build_lead_time,
    "spoke-tension": spoke_tension,
    "hub-bearing-press-fit": hub_bearing_press_fit,
    "order-picking-errors": order_picking_errors,
    "wheel-truing-first-pass-yield": wheel_truing_first_pass_yield,
    "paint-finish-defects": paint_finish_defects,
    "customer-returns": customer_returns,
    "frame-dropout-alignment": frame_dropout_alignment,
    "frame-weld-porosity": frame_weld_porosity,
}

PORTFOLIO = {
    "title": "Kestrel Cycle Works — improvement portfolio",
    "signal_rules": "western-electric",
    "run_rules": "anhoj",
    "quartiles": "linear",
    "bins": "fd",
    "max_file_mb": 200,
    "sigma_level": "with-shift",
    "handover_pack": True,
}


def build_all() -> dict[str, dict[str, str]]:
    return {slug: build() for slug, build in PROJECT_BUILDERS.items()}


def write_all(out: Path, projects: dict[str, dict[str, str]]) -> None:
    out.mkdir(parents=True, exist_ok=True)
    (out / "portfolio.toml").write_text(toml_text(PORTFOLIO), encoding="utf-8", newline="\n")
    for slug, files in projects.items():
        folder = out / slug
        if folder.exists():
            shutil.rmtree(folder)
        folder.mkdir()
        for name, text in files.items():
            if isinstance(text, bytes):  # a workbook or a Parquet file
                (folder / name).write_bytes(text)
            else:
                (folder / name).write_text(text, encoding="utf-8", newline="\n")


# --------------------------------------------------------------------------------------------
# --check: recompute the planted signals with plain numpy so the demo's story can be verified
# (standard formulas as collected in the project's methods notes; d2(2) = 1.128, d2(5) = 2.326)
# --------------------------------------------------------------------------------------------


def _longest_side_run(x: np.ndarray, cl: float) -> int:
    best = run = 0
    prev = 0
    for v in x:
        s = int(np.sign(v - cl))
        run = run + 1 if (s != 0 and s == prev) else (1 if s != 0 else 0)
        prev = s
        best = max(best, run)
    return best


def check(out: Path) -> None:
    import pandas as pd

    def read(slug, m):
        opts = m.get("csv", {})
        if m["file"].endswith(".xlsx"):
            return pd.read_excel(
                out / slug / m["file"], sheet_name=m.get("sheet", 0), engine="calamine"
            )
        if m["file"].endswith(".parquet"):
            return pd.read_parquet(out / slug / m["file"])
        return pd.read_csv(
            out / slug / m["file"],
            sep=opts.get("delimiter", ","),
            decimal=opts.get("decimal", "."),
            encoding="utf-8-sig",
        )

    def periods(meta, m):
        b = m.get("baseline", meta["comparison"]["baseline"])
        a = m.get("after", meta["comparison"].get("after"))
        return b, a

    def mask(dates, per):
        if per is None:
            return np.zeros(len(dates), bool)
        lo = pd.Timestamp(per[0])
        hi = pd.Timestamp(per[1]) + pd.Timedelta(days=1) if len(per) > 1 else pd.Timestamp.max
        return np.asarray((dates >= lo) & (dates < hi))

    tomllib.loads((out / "portfolio.toml").read_text(encoding="utf-8"))
    for slug in PROJECT_BUILDERS:
        meta = tomllib.loads((out / slug / "project.toml").read_text(encoding="utf-8"))
        print(f"\n== {slug} [{meta['phase']}]")
        for m in meta["metric"]:
            df = read(slug, m)
            for key in ("time", "value", "subgroup", "count", "size", "category"):
                if key in m:
                    assert m[key] in df.columns, (slug, m["id"], key)
            b, a = periods(meta, m)
            t = m["type"]
            line = f"  {m['id']} ({t}, {len(df)} rows): "
            if t == "categories":
                tb = pd.to_datetime(df[m["time"]])
                vc_b = df[mask(tb, b)][m["category"]].value_counts()
                vc_a = df[mask(tb, a)][m["category"]].value_counts()
                print(
                    line + f"{df[m['category']].nunique()} categories; baseline top "
                    f"{vc_b.index[0]} {vc_b.iloc[0] / vc_b.sum():.0%}; after top "
                    f"{vc_a.index[0]} {vc_a.iloc[0] / vc_a.sum():.0%}"
                )
                continue
            tcol = pd.to_datetime(df[m["time"]])
            if t == "continuous":
                r = m.get("rollup")
                s = pd.Series(df[m["value"]].to_numpy(float), index=tcol)
                if r:
                    s = s.groupby(s.index.normalize()).mean()
                x, tt = s.to_numpy(), s.index
                mb = mask(tt, b)
                xb = x[mb]
                cl = xb.mean()
                mr = np.abs(np.diff(xb)).mean()
                ucl, lcl = cl + 2.66 * mr, cl - 2.66 * mr
                out_b = [
                    str(d.date()) for d, v in zip(tt[mb], xb, strict=True) if v > ucl or v < lcl
                ]
                ma = mask(tt, a)
                after = f"after mean {x[ma].mean():.3f}" if ma.any() else "no after"
                print(
                    line + f"{len(x)} points, baseline CL {cl:.3f} UCL {ucl:.3f} "
                    f"LCL {lcl:.3f}; beyond: {out_b}; longest run {_longest_side_run(xb, cl)}"
                    f"; {after}"
                )
            elif t == "subgroups":
                g = df.assign(_t=tcol).groupby(m["subgroup"], sort=False)
                tt = pd.DatetimeIndex(g["_t"].min())
                xbar = g[m["value"]].mean().to_numpy()
                n = g[m["value"]].size().to_numpy()
                s = g[m["value"]].std(ddof=1).to_numpy()
                rng_ = (g[m["value"]].max() - g[m["value"]].min()).to_numpy()
                lsl, usl = m.get("spec_lower"), m.get("spec_upper")
                for name, per in (("baseline", b), ("after", a)):
                    mm = mask(tt, per)
                    if not mm.any():
                        continue
                    if len(set(n)) == 1:  # X-bar R, n = 5
                        sig = rng_[mm].mean() / 2.326
                    else:  # pooled s (Montgomery's variable-n form); c4 ignored for the check
                        sig = np.sqrt(((n[mm] - 1) * s[mm] ** 2).sum() / (n[mm] - 1).sum())
                    xx = (xbar[mm] * n[mm]).sum() / n[mm].sum()
                    cpk = min(usl - xx, xx - lsl) / (3 * sig)
                    msg = f"{name}: mean {xx:.3f} sigma {sig:.3f} Cpk≈{cpk:.2f}"
                    if name == "baseline":
                        lim = 3 * sig / np.sqrt(n[mm])
                        beyond = [
                            str(d.date())
                            for d, v, l_ in zip(tt[mm], xbar[mm], lim, strict=True)
                            if abs(v - xx) > l_
                        ]
                        msg += (
                            f"; means beyond: {beyond}; longest run "
                            f"{_longest_side_run(xbar[mm], xx)}; max s {s[mm].max():.3f} "
                            f"on {tt[mm][int(np.argmax(s[mm]))].date()}"
                        )
                    print(line + msg)
                    line = "    "
            elif t in ("defectives", "defects"):
                if m.get("rollup"):
                    wk = tcol.dt.to_period("W-SUN").dt.start_time
                    agg = df.groupby(wk)[m["value"]].agg(["sum", "size"])
                    tt, c, n = agg.index, agg["sum"].to_numpy(float), agg["size"].to_numpy(float)
                else:
                    tt = pd.DatetimeIndex(tcol)
                    c = df[m["count"]].to_numpy(float)
                    n = df[m["size"]].to_numpy(float) if "size" in m else np.ones(len(df))
                mb = mask(tt, b)
                pbar = c[mb].sum() / n[mb].sum()
                if t == "defectives":
                    sd = np.sqrt(pbar * (1 - pbar) / n)
                else:
                    sd = np.sqrt(pbar / n)
                z = (c / n - pbar) / sd
                sigz = np.abs(np.diff(z[mb])).mean() / 1.128
                k = sigz if m.get("chart") == "laney-p" else 1.0
                beyond = [
                    str(d.date()) for d, zz in zip(tt[mb], z[mb], strict=True) if abs(zz) > 3 * k
                ]
                ma = mask(tt, a)
                after = f"after rate {c[ma].sum() / n[ma].sum():.4f}" if ma.any() else "no after"
                print(
                    line + f"{len(c)} points; baseline rate {pbar:.4f}; sigma_z {sigz:.2f}; "
                    f"beyond ({'Laney' if k != 1 else 'plain'}): {beyond}; {after}"
                )


def main(argv: Sequence[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", type=Path, default=PROJECTS, help="portfolio folder to write")
    ap.add_argument("--check", action="store_true", help="print the planted signals")
    args = ap.parse_args(argv)
    projects = build_all()
    write_all(args.out, projects)
    n_files = sum(len(f) for f in projects.values()) + 1
    print(f"wrote {len(projects)} projects ({n_files} files) to {args.out}")
    if args.check:
        check(args.out)
    return 0


if __name__ == "__main__":
    sys.exit(main())
