"""Bad-input corpus, the keys of the baseline's studies: each case with its exact printed line.

The cases run like those of tests/test_corpus.py (``steadyline check`` in-process, the printed
lines matched, the exit code, no traceback); tests/test_check_build_parity.py runs them through
``build`` too. Decisions recorded here (the checks are in src/steadyline/config.py,
``_check_study_keys``, the rules in the README's project.toml section):
- ``opportunities_per_unit`` is a positive number, for a defects metric with a ``size`` (the
  units checked) only: zero, a negative number, another type of metric and a defects metric
  without units are errors at the key;
- ``expected_change`` is a number other than zero, not for categories, and for defectives a
  change of the proportion between −1 and 1; a change the baseline cannot take (a proportion
  below 0) is a warning of the metric's after-sample display, and the project is built; a
  change the worse way (by ``better``) is a warning at the key;
- portfolio.toml's ``sigma_level`` is one of off, with-shift, without-shift.
"""

from __future__ import annotations

import re

import pytest
from corpus.kit import meta, portfolio
from test_corpus import Case
from test_corpus import test_case as run_case


def exact(line: str) -> str:
    """A pattern matching exactly this printed line."""
    return "^" + re.escape(line) + "$"


DEFECTS = {"type": "defects", "value": None, "count": "defects", "size": "units"}
DEFECTIVES = {"type": "defectives", "value": None, "count": "bad", "size": "checked"}
ATTR = "date,defects,units\n" + "".join(
    f"2026-01-{d:02d},{k},{u}\n"
    for d, k, u in zip(
        range(1, 21),
        [3, 1, 4, 1, 5, 2, 6, 2, 3, 5, 2, 4, 1, 3, 2, 5, 3, 2, 4, 1],
        [40, 35, 50, 45, 40, 30, 55, 40, 45, 50, 40, 35, 50, 45, 40, 30, 55, 40, 45, 50],
        strict=True,
    )
)
BAD_CHECKED = "date,bad,checked\n" + "".join(
    f"2026-01-{d:02d},{b},50\n"
    for d, b in zip(
        range(1, 21), [1, 0, 2, 1, 1, 0, 1, 2, 0, 1, 1, 0, 1, 1, 0, 2, 1, 0, 1, 1], strict=True
    )
)
CATS = "reason\n" + "".join(f"{r}\n" for r in "ababcabcaabbcab")


def _defects(**keys):
    return portfolio(toml=meta(metric=DEFECTS | keys), data=ATTR)


CASES = [
    Case(
        "opportunities-zero",
        _defects(opportunities_per_unit=0),
        [
            exact(
                "p/project.toml:18: metric[1].opportunities_per_unit: must be a positive number "
                "of places a defect can occur on one unit, got 0"
            )
        ],
        1,
    ),
    Case(
        "opportunities-negative",
        _defects(opportunities_per_unit=-4),
        [
            exact(
                "p/project.toml:18: metric[1].opportunities_per_unit: must be a positive number "
                "of places a defect can occur on one unit, got -4"
            )
        ],
        1,
    ),
    Case(
        "opportunities-text",
        _defects(opportunities_per_unit="twelve"),
        [r"^p/project\.toml:18: metric\[1\]\.opportunities_per_unit: expected a number"],
        1,
    ),
    Case(
        "opportunities-without-units",
        _defects(size=None, opportunities_per_unit=12),
        [
            exact(
                "p/project.toml:17: metric[1].opportunities_per_unit: needs 'size', the column "
                "with the number of units checked, to count the opportunities"
            )
        ],
        1,
    ),
    Case(
        "opportunities-on-defectives",
        portfolio(toml=meta(metric=DEFECTIVES | {"opportunities_per_unit": 3}), data=BAD_CHECKED),
        [
            exact(
                "p/project.toml:18: metric[1].opportunities_per_unit: applies to defects "
                "metrics only (this one is defectives); remove it"
            )
        ],
        1,
    ),
    Case(
        "expected-change-zero",
        portfolio(toml=meta(metric={"expected_change": 0})),
        [
            exact(
                "p/project.toml:17: metric[1].expected_change: must not be zero: it is the "
                "change the after sample is sized to detect"
            )
        ],
        1,
    ),
    Case(
        "expected-change-categories",
        portfolio(
            toml=meta(
                metric={
                    "type": "categories",
                    "time": None,
                    "value": None,
                    "category": "reason",
                    "expected_change": -2,
                }
            ),
            data=CATS,
        ),
        [
            exact(
                "p/project.toml:16: metric[1].expected_change: does not apply to a categories "
                "metric (no single measure to change); remove it"
            )
        ],
        1,
    ),
    Case(
        "expected-change-proportion-out-of-range",
        portfolio(toml=meta(metric=DEFECTIVES | {"expected_change": -5}), data=BAD_CHECKED),
        [
            exact(
                "p/project.toml:18: metric[1].expected_change: a change of a proportion lies "
                "between -1 and 1 (write -0.02 for two percentage points down), got -5"
            )
        ],
        1,
    ),
    Case(
        "expected-change-below-zero-proportion",
        portfolio(toml=meta(metric=DEFECTIVES | {"expected_change": -0.5}), data=BAD_CHECKED),
        [
            exact(
                "p/data.csv: warning: metric 'm', after sample: expected_change (-0.5) takes "
                "the baseline proportion 1.7% to -48.3%, which is not between 0% and 100%; no "
                "after sample is planned"
            )
        ],
        0,
    ),
    Case(
        "expected-change-the-worse-way",
        portfolio(toml=meta(metric={"expected_change": 2})),
        [
            exact(
                "p/project.toml:17: warning: metric[1].expected_change: 2 is a change for the "
                'worse (better = "lower"); the after sample is sized to detect it all the same'
            )
        ],
        0,
    ),
    Case(
        "sigma-level-unknown",
        portfolio(files={"portfolio.toml": 'sigma_level = "yes"\n'}),
        [
            r"^portfolio\.toml:1: sigma_level: expected one of off, with-shift, without-shift, got \'yes\'$"
        ],
        1,
    ),
]


@pytest.mark.parametrize("case", CASES, ids=[c.name for c in CASES])
def test_case(case: Case, tmp_path, capsys):
    run_case(case, tmp_path, capsys)
