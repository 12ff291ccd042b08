"""Small portfolios written into a temporary folder, for the bad-input and hostile-content tests.

A portfolio is a mapping of relative path -> text (str) or raw bytes; ``write`` puts it on disk.
``meta`` renders a project.toml with one metric, any key of which can be overridden or removed.
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path

BASELINE = '["2026-01-01", "2026-12-31"]'


def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, int | float):
        return repr(v)
    if isinstance(v, list | tuple):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    if isinstance(v, _Raw):
        return v.text
    return json.dumps(v, ensure_ascii=False)  # a TOML basic string is a JSON string


class _Raw:
    """A TOML value written as it is (dates, inline tables)."""

    def __init__(self, text: str):
        self.text = text


def raw(text: str) -> _Raw:
    return _Raw(text)


DEFAULT_TOP = {
    "title": "Test project",
    "owner": "Tester",
    "phase": "measure",
    "problem": "Something takes too long.",
}
DEFAULT_METRIC = {
    "id": "m",
    "name": "Metric",
    "file": "data.csv",
    "type": "continuous",
    "time": "date",
    "value": "value",
    "better": "lower",
}


def meta(
    top: dict | None = None,
    metric: dict | None = None,
    *,
    csv: dict | None = None,
    rollup: dict | None = None,
    comparison: str | None = "default",
    more_metrics: list[dict] = (),
    extra: str = "",
) -> str:
    """project.toml text. A key given as None is left out."""
    t = dict(DEFAULT_TOP) | (top or {})
    m = dict(DEFAULT_METRIC) | (metric or {})
    lines = [f"{k} = {_toml_value(v)}" for k, v in t.items() if v is not None]
    if comparison == "default":
        lines += ["", "[comparison]", "baseline = [2026-01-01, 2026-12-31]"]
    elif comparison:
        lines += ["", "[comparison]", comparison]
    if extra:
        lines += ["", extra]
    for mm in [m, *more_metrics]:
        lines += ["", "[[metric]]"] + [
            f"{k} = {_toml_value(v)}" for k, v in mm.items() if v is not None
        ]
        if mm is m and rollup:
            lines += ["[metric.rollup]"] + [f"{k} = {_toml_value(v)}" for k, v in rollup.items()]
        if mm is m and csv:
            lines += ["[metric.csv]"] + [f"{k} = {_toml_value(v)}" for k, v in csv.items()]
    return "\n".join(lines) + "\n"


# 30 daily values with ordinary variation (no signals by construction is not needed here).
VALUES = [
    49.6,
    47.6,
    49.9,
    51.3,
    47.8,
    51.2,
    52.6,
    52.4,
    53.6,
    52.1,
    48.7,
    50.3,
    49.1,
    50.8,
    51.9,
    48.2,
    50.0,
    49.4,
    52.0,
    50.6,
    47.9,
    51.5,
    49.8,
    50.9,
    48.8,
    51.1,
    50.2,
    49.3,
    52.3,
    50.5,
]


def dates(n: int, start: str = "2026-01-05") -> list[str]:
    import datetime as dt

    d0 = dt.date.fromisoformat(start)
    return [(d0 + dt.timedelta(days=i)).isoformat() for i in range(n)]


def good_csv(values=VALUES, header: str = "date,value", sep: str = ",") -> str:
    rows = [header] + [f"{d}{sep}{v}" for d, v in zip(dates(len(values)), values, strict=True)]
    return "\n".join(rows) + "\n"


def portfolio(
    toml: str | None = None, data: str | bytes | None = None, files: dict | None = None
) -> dict:
    """The default one-project portfolio (folder 'p'), with project.toml, data.csv or any other
    file replaced (a file given as None in *files* is left out)."""
    base = {
        "p/project.toml": meta() if toml is None else toml,
        "p/data.csv": good_csv() if data is None else data,
    }
    base.update(files or {})
    return base


def write(root: Path, files: dict) -> Path:
    root.mkdir(parents=True, exist_ok=True)
    for name, content in files.items():
        if content is None:
            continue
        p = root / name
        if name.endswith("/"):
            p.mkdir(parents=True, exist_ok=True)
            continue
        p.parent.mkdir(parents=True, exist_ok=True)
        if isinstance(content, bytes):
            p.write_bytes(content)
        else:
            p.write_text(content, encoding="utf-8", newline="")
    return root


def tree_hashes(root: Path) -> dict[str, str]:
    """sha256 of every file under *root* (symlinks by their target text), with each mode."""
    out = {}
    for p in sorted(root.rglob("*")):
        key = p.relative_to(root).as_posix()
        if p.is_symlink():
            out[key] = "link:" + str(p.readlink())
        elif p.is_file():
            st = p.stat()
            out[key] = (
                hashlib.sha256(p.read_bytes()).hexdigest() + f":{st.st_mode:o}:{st.st_mtime_ns}"
            )
        elif p.is_dir():
            out[key] = "dir"
    return out


# ----------------------------------------------------------------------------- hostile content
# Strings that would run script if any page, chart or download let them through. Those that
# would run set window.__pwned (or call alert), which the browser test watches for.

PAYLOADS = [
    "<script>window.__pwned=1;alert(1)</script>",
    '"><img src=x onerror="window.__pwned=2;alert(1)">',
    "</script><script>window.__pwned=3;alert(1)</script>",
    "'><svg onload=window.__pwned=4>",
    "<!--<script>window.__pwned=5</script>-->",
    "javascript:window.__pwned=6",
    "{{7*7}}${window.__pwned=7}",
    "<iframe src=javascript:alert(1)>",
    "a\u2028</script>\u2029<b>x",
]
# Cells a spreadsheet would run as a formula when the CSV download is opened.
FORMULAS = ['=HYPERLINK("http://x","y")', "+SUM(1,2)", "-2+3", "@cmd", "=1+1"]

HOSTILE_NOTES = """# Notes <script>window.__pwned=10;alert(1)</script>

[click me](javascript:window.__pwned=11) and [ok link](https://example.invalid/page)
and <a href="jAvAsCrIpT:window.__pwned=12">mixed case</a>
and <a href=" javascript:window.__pwned=13">leading space</a>

<img src=x onerror="window.__pwned=14">

<svg xmlns="http://www.w3.org/2000/svg"><script>window.__pwned=15</script>
<circle onload="window.__pwned=16" r="4"/></svg>

<iframe src="data:text/html,<script>parent.__pwned=17</script>"></iframe>

<style>body { background: url(javascript:alert(1)) }</style>
<form action="javascript:alert(1)"><button formaction="javascript:alert(1)">go</button></form>
<object data="javascript:alert(1)"></object><embed src="javascript:alert(1)">
<math><mi xlink:href="javascript:alert(1)">x</mi></math>
<p style="background:url(javascript:alert(1))" onclick="alert(1)">styled</p>
<details open ontoggle="window.__pwned=18">t</details>
"""


def hostile_portfolio() -> dict:
    """A portfolio whose every free-text field, category and label is a payload."""
    p = PAYLOADS
    categories = p + FORMULAS
    cat_rows = "".join(
        f"{d},{_csv_quote(c)},{i % 3 + 1}\n"
        for i, (d, c) in enumerate(zip(dates(3 * len(categories)), categories * 3, strict=True))
    )
    values = [-3.5, 2.25, -0.5, 1.0, 3.75, -1.25] * 5
    top = {"title": p[0], "owner": p[1], "problem": p[2], "tags": [p[3], p[4], p[6]]}
    events = "\n".join(
        f"[[event]]\ndate = 2026-01-{10 + i}\nlabel = {json.dumps(s)}" for i, s in enumerate(p[:4])
    )
    sub_rows = "".join(
        f"{d},{_csv_quote(p[i % len(p)])},{v}\n"
        for i, (d, v) in enumerate(zip(dates(30), values, strict=True))
    )
    return {
        "portfolio.toml": f"title = {json.dumps(p[2])}\n",
        "evil/project.toml": meta(
            top=top,
            metric={"name": p[1], "unit": p[0], "file": "values.csv"},
            extra=events + "\n",
            more_metrics=[
                {
                    "id": "reasons",
                    "name": p[2],
                    "file": "reasons.csv",
                    "type": "categories",
                    "category": "reason",
                    "count": "n",
                    "better": "lower",
                    "unit": p[5],
                },
                {
                    "id": "batches",
                    "name": p[3],
                    "file": "batches.csv",
                    "type": "subgroups",
                    "time": "date",
                    "subgroup": "batch",
                    "value": "value",
                    "better": "target",
                    "target": 0.0,
                },
            ],
        ),
        "evil/values.csv": "date,value\n"
        + "".join(f"{d},{v}\n" for d, v in zip(dates(30), values, strict=True)),
        "evil/reasons.csv": "date,reason,n\n" + cat_rows,
        "evil/batches.csv": "date,batch,value\n" + sub_rows,
        "evil/notes.md": HOSTILE_NOTES,
        # a broken project: the payloads reach the error page through the problem messages
        "broken/project.toml": meta(top={"title": p[1]}, metric={"value": p[0], "name": p[2]}),
        "broken/data.csv": f"date,{_csv_quote(p[1])}\n2026-01-05,{_csv_quote(p[2])}\n",
        "broken2/project.toml": meta(),
        "broken2/data.csv": f"date,value\n2026-01-05,{_csv_quote(p[0])}\n{_csv_quote(p[3])},1\n",
    }


def _csv_quote(s: str) -> str:
    return '"' + s.replace('"', '""') + '"'
