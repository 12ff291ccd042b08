"""Property tests (hypothesis) for the measurement system study and the change in mix.

The references are the definitions in docs/methods.md §12–13: variance components are never
negative and add up; shares do not depend on the unit of measurement or the order of the rows;
the merged mix table keeps every count and meets Cochran's rule (common practice, from memory)
unless it is tested exactly.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from steadyline.stats import StatsError, gauge_study, mix_change
from steadyline.stats.mix import expected_counts, expected_rule_met

SETTINGS = settings(max_examples=40, deadline=None)


@st.composite
def studies(draw):
    p = draw(st.integers(2, 6))
    o = draw(st.integers(2, 4))
    r = draw(st.integers(2, 3))
    seed = draw(st.integers(0, 2**32 - 1))
    rng = np.random.default_rng(seed)
    scales = [draw(st.sampled_from([0.0, 0.1, 1.0, 5.0])) for _ in range(3)]
    cube = (
        rng.normal(0, scales[0], (p, 1, 1))
        + rng.normal(0, scales[1], (1, o, 1))
        + rng.normal(0, scales[2], (p, o, 1))
        + rng.normal(0, 1.0, (p, o, r))
    )
    return np.round(cube, 3)


def long_form(cube):
    idx = list(np.ndindex(*cube.shape))
    return ([float(cube[i]) for i in idx], [f"p{i[0]}" for i in idx], [f"o{i[1]}" for i in idx])


@SETTINGS
@given(studies(), st.floats(0.01, 100), st.floats(-1e3, 1e3), st.randoms(use_true_random=False))
def test_components_nonnegative_additive_and_invariant(cube, scale, shift, rnd):
    values, parts, appraisers = long_form(cube)
    try:
        study = gauge_study(values, parts, appraisers)
    except StatsError:
        assume(False)
    c = {x.source: x for x in study.components}
    assert all(x.variance >= 0 for x in study.components)
    assert c["reproducibility"].variance == pytest.approx(
        c["appraiser"].variance + c["part × appraiser"].variance
    )
    assert c["measurement system"].variance == pytest.approx(
        c["repeatability"].variance + c["reproducibility"].variance
    )
    assert c["total"].variance == pytest.approx(
        c["measurement system"].variance + c["part-to-part"].variance
    )
    assert c["measurement system"].contribution_percent + c[
        "part-to-part"
    ].contribution_percent == pytest.approx(100.0)
    # a change of unit (scale and offset) and another row order change no share
    order = list(range(len(values)))
    rnd.shuffle(order)
    other = gauge_study(
        [values[i] * scale + shift for i in order],
        [parts[i] for i in order],
        [appraisers[i] for i in order],
    )
    assert other.interaction_pooled == study.interaction_pooled
    # the same but for rounding where 1.41 σ_P / σ_gauge falls on a whole number
    assert abs(other.distinct_categories - study.distinct_categories) <= 1
    for a, b in zip(study.components, other.components, strict=True):
        assert b.study_percent == pytest.approx(a.study_percent, rel=1e-6, abs=1e-6)


@SETTINGS
@given(st.lists(st.tuples(st.integers(0, 60), st.integers(0, 60)), min_size=2, max_size=9))
def test_mix_keeps_every_count_and_meets_the_rule(pairs):
    names = [f"c{i}" for i in range(len(pairs))]
    b = [x for x, _ in pairs]
    a = [y for _, y in pairs]
    try:
        r = mix_change(names, b, a)
    except StatsError:
        assume(False)
    assert sum(r.baseline) == sum(b) and sum(r.after) == sum(a)
    table = np.array([r.baseline, r.after])
    assert r.expected_rule_met == expected_rule_met(expected_counts(table))
    if r.test.startswith("Pearson"):
        assert r.expected_rule_met
    else:
        assert len(r.categories) == 2 and not r.expected_rule_met
    assert 0.0 <= r.p_value <= 1.0 + 1e-12
    # merged categories are the smallest by total
    if r.merged:
        totals = {n: x + y for n, x, y in zip(names, b, a, strict=True)}
        kept = [n for n in r.categories if n != r.merged_name]
        assert max(totals[n] for n in r.merged) <= min(totals[n] for n in kept)
