"""Bad-input corpus of how a data file is read: files far wider than a metric needs, and plain
files whose columns a metric does not use. Each case with its exact printed line.

The cases run like those of tests/test_corpus.py (``steadyline check`` in-process, the printed
lines matched, the exit code, no traceback), and through ``steadyline build`` too in
tests/test_check_build_parity.py.

Decisions recorded here (the reasons are beside the checks in src/steadyline/columns.py):
- a file whose header has more than 10,000 columns is refused, whatever its rows hold, with the
  width counted on the header line alone (delimiters inside quote marks do not count; UTF-16
  files are counted in their characters); every other project is built;
- a plain file is read for the columns its metric names only: what the other columns hold
  (words, blanks, any text) does not matter, but bytes that are not valid text in the file's
  encoding are refused wherever they are, as before.
"""

from __future__ import annotations

import re

import pytest
from corpus.kit import VALUES, dates, good_csv, meta, portfolio
from test_corpus import Case
from test_corpus import test_case as run_case

from steadyline.config import load_portfolio, load_project
from steadyline.loading.metric import load_metric


def exact(line: str) -> str:
    return "^" + re.escape(line) + "$"


OTHER = {"q/project.toml": meta(), "q/data.csv": good_csv()}  # a healthy second project
WIDE = "; a metric reads at most six of them: export only the columns the metrics use"


def _wide(extra: int, name=lambda i: f"c{i}", rows: int = 30, sep=",") -> str:
    """A file with the metric's two columns and *extra* more, every row complete."""
    header = sep.join(["date", "value"] + [name(i) for i in range(extra)])
    tail = sep + sep.join("1" for _ in range(extra)) if extra else ""
    body = "".join(f"{d}{sep}{v}{tail}\n" for d, v in zip(dates(rows), VALUES, strict=False))
    return header + "\n" + body


def _loaded(root, slug="p", metric=0):
    settings, _ = load_portfolio(root)
    spec, _ = load_project(root / slug, root, settings)
    return load_metric(spec.metrics[metric], settings)


def _v_values(root):
    d = _loaded(root)
    assert d.points["value"].tolist() == VALUES
    assert d.points["label"].tolist() == dates(30)


def _unused_columns(rows: int = 30) -> str:
    junk = ["n/a", "", "  x  ", "\u00e9t\u00e9", "12 5", "; ;", "\u2028", "NaN"]
    return "date,note,value,extra\n" + "".join(
        f"{d},{junk[i % len(junk)]},{v},{junk[(i + 3) % len(junk)]}\n"
        for i, (d, v) in enumerate(zip(dates(rows), VALUES, strict=False))
    )


CASES = [
    Case(
        "far-too-wide",
        portfolio(data=_wide(20_000), files=OTHER),
        [
            exact(
                "p/data.csv:1: header: the header has 20,002 columns, over the limit of 10,000"
                + WIDE
            )
        ],
        1,
        absent=[r"^q/"],
    ),
    Case(
        "far-too-wide-utf16",
        portfolio(data=_wide(12_000).encode("utf-16"), toml=meta(csv={"encoding": "utf-16"})),
        [
            exact(
                "p/data.csv:1: header: the header has 12,002 columns, over the limit of 10,000"
                + WIDE
            )
        ],
        1,
    ),
    Case(
        "far-too-wide-binary-rows",  # the width is counted before anything else is read
        portfolio(data=_wide(10_001, rows=0).encode() + b"\x00\x01" * 100),
        [
            exact(
                "p/data.csv:1: header: the header has 10,003 columns, over the limit of 10,000"
                + WIDE
            )
        ],
        1,
    ),
    Case(
        "wide-quoted-names-counted-as-read",  # 9,998 quoted names holding the delimiter
        portfolio(data=_wide(9_998, name=lambda i: f'"c,{i}"')),
        [],
        0,
        verify=_v_values,
    ),
    Case("wide-at-the-limit", portfolio(data=_wide(9_998)), [], 0, verify=_v_values),
    Case(
        "wide-semicolons-one-over",
        portfolio(data=_wide(9_999, sep=";"), toml=meta(csv={"delimiter": ";"})),
        [
            exact(
                "p/data.csv:1: header: the header has 10,001 columns, over the limit of 10,000"
                + WIDE
            )
        ],
        1,
    ),
    Case(
        "unused-columns-hold-anything", portfolio(data=_unused_columns()), [], 0, verify=_v_values
    ),
    Case(
        "unused-column-invalid-utf8",
        portfolio(data=_unused_columns().encode().replace(b"\xc3\xa9", b"\xe9", 1)),
        [
            exact(
                "p/data.csv:2: byte 0xe9 is not valid utf-8 text; save the file as UTF-8, or "
                'set [metric.csv] encoding = "latin-1" if it comes from an older system'
            )
        ],
        1,
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    run_case(case, tmp_path, capsys)
