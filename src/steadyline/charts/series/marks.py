"""The words, shapes and codes of a series chart's point marks: the plain chart's ordinary
point and signal, the staged chart's change marks and its own-limits diamond, and the legend
and table cells made from them. One place, so that legend, sentences and table say the same.
"""

from __future__ import annotations

import numpy as np

from .. import style

MARK_ORDINARY = "point"
MARK_SIGNAL = "part of a signal"
# a point set aside (`set_aside` in project.toml): drawn, left out of the baseline's statistics
MARK_ASIDE = "set aside"
_MARK_DOMAIN = [MARK_ORDINARY, MARK_SIGNAL]
# The control chart by period tells a change from instability: a point outside the baseline
# judged against the baseline's limits carried forward, in a signal there, is evidence of a
# change (better / worse by the metric's "better"); a point in a signal on limits of its own
# period (the baseline on the baseline's, the after period on its own) is a signal of
# instability. The same words are used in the legend, the sentences under the chart and the
# README.
MARK_CHANGE_BETTER = "baseline limits: change, better"
MARK_CHANGE_WORSE = "baseline limits: change, worse"
MARK_CHANGE_UNJUDGED = "baseline limits: change, direction not judged"
MARK_OWN_SIGNAL = "signal on its own period's limits"
CHANGE_MARKS = {
    "better": MARK_CHANGE_BETTER,
    "worse": MARK_CHANGE_WORSE,
    "not judged": MARK_CHANGE_UNJUDGED,
}
# legend order, shapes and colours of the staged chart's marks
_STAGED_MARKS = (
    (MARK_ORDINARY, style.SHAPE_POINT, style.DATA),
    (MARK_CHANGE_BETTER, style.SHAPE_CHANGE_BETTER, style.CHANGE_BETTER),
    (MARK_CHANGE_WORSE, style.SHAPE_CHANGE_WORSE, style.CHANGE_WORSE),
    (MARK_CHANGE_UNJUDGED, style.SHAPE_CHANGE_UNJUDGED, style.CHANGE_UNJUDGED),
    (MARK_OWN_SIGNAL, style.SHAPE_SIGNAL, style.SIGNAL),
)


# The staged chart's mark of a point as one code: 2 * change + own, where change is 0 (none) or
# 1 + the index of its direction in _CHANGES, and own is 1 when the point is in a signal on
# its own period's limits.
_CHANGES = ("better", "worse", "not judged")
_MARK_TEXTS = ("",) + tuple(CHANGE_MARKS[c] for c in _CHANGES)
_MARK_CODES = 2 * len(_MARK_TEXTS)


def _mark_codes(evidence) -> np.ndarray:
    """Per point of a chart, its mark code from its :class:`stats.evidence.PointEvidence`."""
    change = np.zeros(len(evidence.change), dtype=np.int64)
    for k, c in enumerate(_CHANGES):
        change[evidence.change == c] = k + 1
    return 2 * change + np.asarray(evidence.unstable, dtype=np.int64)


def _staged_mark_values(main_marks, sec_marks) -> dict:
    """The staged chart's legend: the ordinary point and every mark drawn on either chart."""
    codes = main_marks if sec_marks is None else np.concatenate([main_marks, sec_marks])
    present = set(np.unique(codes).tolist())
    changes = {_MARK_TEXTS[m // 2] for m in present if m // 2}
    own = any(m % 2 for m in present)
    rows = [
        r
        for r in _STAGED_MARKS
        if r[0] == MARK_ORDINARY or r[0] in changes or (own and r[0] == MARK_OWN_SIGNAL)
    ]
    return {
        "mark_domain": [r[0] for r in rows],
        "mark_shapes": [r[1] for r in rows],
        "mark_colours": [r[2] for r in rows],
    }


def _mark_column(evidence, offset: int) -> list[str]:
    """The table's "mark" cell per point: the change mark of the main chart (and of the
    dispersion chart, named so), and the signal diamond, in the legend's words; each distinct
    combination written once."""
    ev_main, ev_sec = evidence
    n = len(ev_main.change)
    code = _mark_codes(ev_main)  # 2 * change + own
    sec_code = np.zeros(n, dtype=np.int64)
    if ev_sec is not None:
        sec_code[offset : offset + len(ev_sec.change)] = _mark_codes(ev_sec)[: n - offset]
    distinct, which = np.unique(code * _MARK_CODES + sec_code, return_inverse=True)
    texts = []
    for c in distinct.tolist():
        (m_change, m_own), (s_change, s_own) = (divmod(x, 2) for x in divmod(c, _MARK_CODES))
        words = []
        if m_change:
            words.append(_MARK_TEXTS[m_change])
        if s_change:
            words.append(_MARK_TEXTS[s_change] + " (dispersion chart)")
        if m_own:
            words.append(MARK_OWN_SIGNAL)
        if s_own:
            words.append(MARK_OWN_SIGNAL + " (dispersion chart)")
        texts.append("; ".join(words))
    return np.array(texts, dtype=object)[which.ravel()].tolist()
