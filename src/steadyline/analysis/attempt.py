"""One display's statistics tried on its own: a refusal becomes a sentence, not a failed metric.

Every module of the analysis calls the statistics through :func:`attempt`, so that a display the
data cannot support is named with its reason on the page while the metric's other displays are
still drawn.
"""

from __future__ import annotations

from collections.abc import Callable
from typing import Any, Protocol, TypeVar

from ..stats.results import StatsError

T = TypeVar("T")


class Failures(Protocol):
    """What collects the refusals: a list of (display, sentence)."""

    failures: list[tuple[str, str]]


def attempt(
    result: Failures, display: str, fn: Callable[..., T], *args: Any, **kwargs: Any
) -> T | None:
    """``fn(*args, **kwargs)``, or None with the statistics' reason kept under *display*."""
    try:
        return fn(*args, **kwargs)
    except StatsError as e:
        result.failures.append((display, str(e)))
        return None
