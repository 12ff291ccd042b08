"""Bad input of a measurement study (type = "measurement-study") and of the key that names it.

Each case is a project of a process metric ('m', good data) and a study ('gauge', study.csv),
checked like every corpus case (and through `build` by test_check_build_parity.py). A study's
data that are not a crossed, balanced study cost that metric alone (exit 1, one line naming the
file and the row or column); a wrong key costs the project (its metadata has errors).
"""

from __future__ import annotations

import re

import pytest
from corpus.kit import meta
from test_corpus import Case
from test_corpus_files import assert_case, prepare, run

STUDY = {
    "id": "gauge",
    "name": "Gauge study",
    "file": "study.csv",
    "type": "measurement-study",
    "part": "part",
    "appraiser": "who",
    "value": "reading",
}


def study_rows(parts: int = 5, appraisers: int = 2, trials: int = 2) -> list[list[str]]:
    """[part, appraiser, reading] rows of a balanced crossed study, trials in the file's order."""
    rows = []
    for k in range(trials):
        for j in range(appraisers):
            for i in range(parts):
                v = 50 + i + 0.1 * j + 0.05 * ((7 * k + 3 * i + j) % 5)
                rows.append([f"P{i + 1}", f"A{j + 1}", f"{v:.2f}"])
    return rows


def study_csv(rows: list[list[str]]) -> str:
    return "part,who,reading\n" + "".join(",".join(r) + "\n" for r in rows)


def good_series() -> str:
    from corpus.kit import good_csv

    return good_csv()


def project(
    rows=None,
    *,
    study: dict | None = None,
    metric: dict | None = None,
    study_csv_text: str | None = None,
    studies_only: bool = False,
) -> dict:
    s = dict(STUDY) | (study or {})
    text = (
        study_csv_text
        if study_csv_text is not None
        else study_csv(rows if rows is not None else study_rows())
    )
    if studies_only:
        toml = meta(metric=s | {"time": None, "better": None})
        return {"p/project.toml": toml, "p/study.csv": text}
    toml = meta(metric=metric, more_metrics=[s])
    return {"p/project.toml": toml, "p/data.csv": good_series(), "p/study.csv": text}


def _drop(rows, line: int):
    """The rows without the data row on physical line *line* (header = line 1)."""
    return rows[: line - 2] + rows[line - 1 :]


def _bad_cell(rows, line: int, cell: str):
    rows = [list(r) for r in rows]
    rows[line - 2][2] = cell
    return rows


def _one(rows, col: int, name: str):
    return [[name if c == col else x for c, x in enumerate(r)] for r in rows]


def _without(rows, part: str, appraiser: str):
    return [r for r in rows if not (r[0] == part and r[1] == appraiser)]


CASES = [
    Case(
        "study-unbalanced-cell",
        project(_drop(study_rows(), 14)),
        [
            r"^p/study\.csv:4: column 'part': part 'P3' has 1 measurement by appraiser 'A1' "
            r"\(line 4\), the other pairs 2; every part needs the same number of trials by every "
            r"appraiser$"
        ],
        1,
    ),
    Case(
        "study-missing-cell",
        project(_without(study_rows(), "P2", "A2")),
        [
            r"^p/study\.csv: column 'who': appraiser 'A2' never measured part 'P2'; in a crossed "
            r"study every appraiser measures every part$"
        ],
        1,
    ),
    Case(
        "study-one-appraiser",
        project(_one(study_rows(), 1, "A1")),
        [
            r"^p/study\.csv: column 'who': every row names the same appraiser \('A1'\); a "
            r"measurement study needs at least two appraisers .*reproducibility cannot be "
            r"estimated from one$"
        ],
        1,
    ),
    Case(
        "study-one-part",
        project(_one(study_rows(), 0, "P1")),
        [r"^p/study\.csv: column 'part': every row names the same part \('P1'\)"],
        1,
    ),
    Case(
        "study-one-trial",
        project(study_rows(trials=1)),
        [
            r"^p/study\.csv: column 'reading': each appraiser measured each part once; "
            r"repeatability needs at least two trials"
        ],
        1,
    ),
    Case(
        "study-value-not-a-number",
        project(_bad_cell(study_rows(), 6, "12.3.4")),
        [r"^p/study\.csv:6: column 'reading': '12\.3\.4' is not a measurement$"],
        1,
    ),
    Case(
        "study-value-blank",
        project(_bad_cell(study_rows(), 9, "")),
        [
            r"^p/study\.csv:9: column 'reading': blank cell; a measurement study needs every "
            r"trial measured"
        ],
        1,
    ),
    Case(
        "study-part-blank",
        project(study_csv_text=study_csv(study_rows()).replace("\nP4,A1,", "\n,A1,", 1)),
        [r"^p/study\.csv:5: column 'part': blank cell; every measurement names its part$"],
        1,
    ),
    Case(
        "study-column-missing",
        project(study={"appraiser": "operator"}),
        [r"^p/study\.csv:1: column 'operator': not found \(metric 'gauge', key 'appraiser'\)"],
        1,
    ),
    Case(
        "study-no-appraiser-key",
        project(study={"appraiser": None}),
        [
            r"^p/project\.toml:\d+: metric\[2\]\.appraiser: a measurement-study metric needs "
            r"'appraiser': the column naming who measured it$"
        ],
        1,
    ),
    Case(
        "study-time-key",
        project(study={"time": "date"}),
        [
            r"^p/project\.toml:\d+: metric\[2\]\.time: 'time' does not apply to a measurement "
            r"study"
        ],
        1,
    ),
    Case(
        "study-better-key",
        project(study={"better": "lower"}),
        [
            r"^p/project\.toml:\d+: metric\[2\]\.better: 'better' does not apply to a measurement "
            r"study"
        ],
        1,
    ),
    Case(
        "study-as-headline",
        project(study={"headline": True}),
        [
            r"^p/project\.toml:\d+: metric\[2\]\.headline: a measurement study cannot be the "
            r"headline metric"
        ],
        1,
    ),
    Case(
        "study-only",
        project(studies_only=True),
        [
            r"^p/project\.toml:\d+: metric: every metric is a measurement study; a project needs "
            r"at least one process metric"
        ],
        1,
    ),
    Case(
        "study-named-missing",
        project(metric={"measurement_study": "gage"}),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.measurement_study: no metric of this project has "
            r"the id 'gage'; did you mean 'gauge'\?$"
        ],
        1,
    ),
    Case(
        "study-named-not-a-study",
        {
            "p/project.toml": meta(
                metric={"measurement_study": "second"},
                more_metrics=[
                    dict(STUDY),
                    {
                        "id": "second",
                        "name": "Second",
                        "file": "data.csv",
                        "type": "continuous",
                        "time": "date",
                        "value": "value",
                        "better": "lower",
                    },
                ],
            ),
            "p/data.csv": good_series(),
            "p/study.csv": study_csv(study_rows()),
        },
        [
            r"^p/project\.toml:\d+: metric\[1\]\.measurement_study: 'second' is a continuous "
            r"metric, not a measurement study"
        ],
        1,
    ),
    Case(
        "study-names-a-study",
        project(study={"measurement_study": "gauge"}),
        [
            r"^p/project\.toml:\d+: metric\[2\]\.measurement_study: 'measurement_study' does not "
            r"apply to a measurement study"
        ],
        1,
    ),
    Case(
        "part-key-on-a-process-metric",
        project(metric={"part": "part"}),
        [
            r"^p/project\.toml:\d+: metric\[1\]\.part: 'part' names a column of a measurement "
            r"study"
        ],
        1,
    ),
    Case(
        "study-trials-never-differ",
        project([[p, a, f"{50 + int(p[1:]) + 0.1 * int(a[1:]):.2f}"] for p, a, _ in study_rows()]),
        [
            r"^p/study\.csv: warning: metric 'gauge', measurement study: a measurement study "
            r"needs repeated trials that differ"
        ],
        0,
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    root = prepare(case, tmp_path / "projects")
    code, lines, text = run(case, ["check", "--quiet", str(root)], capsys)
    assert_case(case, code, lines, text)


def test_a_balanced_study_is_clean(tmp_path, capsys):
    case = Case("clean", project(metric={"measurement_study": "gauge"}), [], 0)
    root = prepare(case, tmp_path / "projects")
    code, lines, text = run(case, ["check", "--quiet", str(root)], capsys)
    assert_case(case, code, lines, text)
    assert not re.search("warning", text)
