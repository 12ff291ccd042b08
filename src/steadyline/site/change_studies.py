"""What the history page and results.json say of the studies of the change: the change in mix of
a categories metric (each share before and after, the test) and capability before versus after
(the indices side by side, their intervals, the test). Apart from the baseline's studies
(:mod:`steadyline.site.studies`) because only the history page shows them.
"""

from __future__ import annotations

from ..analysis import MetricAnalysis
from ..stats.compare import format_p_value
from ..stats.results_studies import MixChange
from ..vocab import percentage_points, plural
from .capability_view import counted_outside
from .figures_text import fmt
from .serialise import plain
from .studies import SIGMA_WORDS, sigma_level_text, yield_text

# ----------------------------------------------------------------------------- change in mix


def mix_sentence(x: MixChange) -> str:
    changed = x.p_value < 0.05
    return (
        f"The shares of the categories {'changed' if changed else 'did not change beyond chance'}"
        f" between the baseline and the after period ({x.test}, "
        f"{format_p_value(x.p_value)})."
    )


def mix_rows(x: MixChange) -> list[tuple[str, str, str]]:
    """The history page's table for a categories metric: each share before and after, the
    test, and the expected-count rule with what it led to."""
    rows = []
    for c, b, f, nb, nf in zip(
        x.categories, x.baseline_share, x.after_share, x.baseline, x.after, strict=True
    ):
        rows.append(
            (
                f"Share, {c}",
                f"{100 * b:.1f}% → {100 * f:.1f}%",
                f"{percentage_points(f - b, 1)} ({nb} → {nf})",
            )
        )
    stat = (
        ""
        if x.statistic is None or x.df is None  # Fisher's test has neither
        else f"chi-square {x.statistic:.2f} on {plural(x.df, 'degree')} of freedom"
    )
    rows.append(("Test", x.test, (stat + "; " if stat else "") + format_p_value(x.p_value)))
    rule = (
        "every expected count at least 1 and at most 20% of them below 5 (Cochran 1954, "
        "common practice)"
    )
    if x.test.startswith("Fisher"):
        done = (
            "not met even with the categories merged into two groups: Fisher's exact "
            "test is used instead"
        )
    elif x.merged:
        done = "met after merging " + ", ".join(x.merged) + f" into '{x.merged_name}'"
    else:
        done = "met by every category as counted"
    rows.append(("Expected counts", done, rule))
    return rows


def mix_json(a: MetricAnalysis) -> dict | None:
    if a.mix is None:
        return None
    return plain(a.mix) | {"shares_changed": a.mix.p_value < 0.05}


# ----------------------------------------------------------------------------- capability


def _index_ci(v: float | None, ci) -> str:
    if v is None:
        return "—"
    text = f"{v:.2f}"
    return text + (f" ({ci[0]:.2f} to {ci[1]:.2f})" if ci is not None else "")


def _outside(ppm: float | None) -> str:
    if ppm is None:
        return "—"
    if ppm == 0:
        return "none"
    return (
        f"{ppm / 1e4:.2f}% ({ppm:,.0f} per million)"
        if ppm >= 10
        else f"{fmt(ppm, digits=2)} per million"
    )


def capability_rows(a: MetricAnalysis) -> list[tuple[str, str, str]]:
    """Capability of the baseline and the after period side by side: the indices with their
    intervals, the expected share outside and the expected yield (one table, said once)."""
    caps = [(n, c) for n, _, c in a.period_histograms if c is not None]
    if len(caps) < 2:
        return []
    (_, b), (_, f) = caps[0], caps[-1]
    rows = [
        (
            "Cpk (95% interval, Bissell 1990)",
            _index_ci(b.cpk, b.cpk_ci),
            _index_ci(f.cpk, f.cpk_ci),
        ),
        ("Ppk", _index_ci(b.ppk, None), _index_ci(f.ppk, None)),
    ]
    if b.cp is not None or b.pp is not None:
        rows.insert(1, ("Cp", _index_ci(b.cp, None), _index_ci(f.cp, None)))
    rows = [r for r in rows if r[1:] != ("—", "—")]
    rows.append(
        ("Counted outside", f"{counted_outside(b)} of {b.n}", f"{counted_outside(f)} of {f.n}")
    )
    rows.append(
        (
            "Expected outside, sigma of all values",
            _outside(b.ppm_expected_overall),
            _outside(f.ppm_expected_overall),
        )
    )
    biz = dict(a.business)
    names = [n for n, _ in caps]
    if names[0] in biz and names[-1] in biz:
        fb, ff = biz[names[0]], biz[names[-1]]
        rows.append(("Expected yield", yield_text(fb.yield_), yield_text(ff.yield_)))
        if a.spec.sigma_level != "off":
            rows.append(("Sigma level", sigma_level_text(fb), sigma_level_text(ff)))
    return rows


def capability_sentence(a: MetricAnalysis) -> str:
    """Whether the change in Cpk is beyond its intervals, in one sentence."""
    x = a.capability_change
    if x is None:
        return ""
    direction = "rose" if x.change > 0 else "fell" if x.change < 0 else "did not move"
    if x.intervals_overlap:
        beyond = "the 95% intervals overlap, so the change is not shown beyond them"
    else:
        beyond = "the 95% intervals do not overlap: the change is beyond them"
    caps = [c for _, _, c in a.period_histograms if c is not None]
    # which period's Cpk is not to be trusted, in a clause: the reasons are each period's
    # block's own (said there, once)
    doubt = [
        name for name, c in (("baseline", caps[0]), ("after period", caps[-1])) if not c.trustworthy
    ]
    trust = (
        ""
        if not doubt
        else " Neither Cpk is to be trusted yet, nor its interval (the periods' blocks below "
        "say why)."
        if len(doubt) == 2
        else f" The {doubt[0]}'s Cpk is not to be trusted yet, nor its interval (its block "
        f"below says why)."
    )
    return (
        f"Cpk {direction} from {x.cpk_before:.2f} to {x.cpk_after:.2f}: {beyond}; the "
        f"{x.test} gives {format_p_value(x.p_value)}.{trust}"
    )


def capability_note(a: MetricAnalysis) -> str:
    """What the capability table's figures rest on, said once under it."""
    note = (
        "Expected shares and yields assume a normal distribution; each period's block below "
        "says whether its figures can be trusted."
    )
    if a.spec.sigma_level != "off" and any(f.kind == "measured" for _, f in a.business):
        note += f" Sigma level: {SIGMA_WORDS[a.spec.sigma_level]}."
    return note


def capability_json(a: MetricAnalysis) -> dict | None:
    if a.capability_change is None:
        return None
    return plain(a.capability_change) | {
        "beyond_intervals": not a.capability_change.intervals_overlap
    }
