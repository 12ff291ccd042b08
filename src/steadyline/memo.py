"""A small memo for work repeated on the same objects, found again by identity."""

from __future__ import annotations

import functools
from collections.abc import Callable

# plain values compared by value; anything else by identity
_SCALARS = frozenset((int, float, str, bool, type(None)))


def _key(arg) -> object:
    t = type(arg)
    return (t, arg) if t in _SCALARS else id(arg)


_MEMOS: list[dict] = []


def forget() -> None:
    """Drop every remembered answer (the build calls this after each metric, so nothing of one
    metric is held while the next is made)."""
    for memo in _MEMOS:
        memo.clear()


def by_identity(size: int) -> Callable:
    """Remember a pure function's last ``size`` answers, found again by the identity of its
    arguments (plain numbers and texts by value). The memo holds the arguments, so an id is not
    reused while remembered; the arguments must not be changed after the call. This is for work
    that the project page's and the history page's charts of one metric both do on the same
    analysis objects; a metric's two sections are made one after the other, so a few entries
    are enough and memory stays bounded."""

    def decorate(fn: Callable) -> Callable:
        memo: dict[tuple, tuple[tuple, object]] = {}  # oldest first
        _MEMOS.append(memo)

        @functools.wraps(fn)
        def remembered(*args):
            key = tuple(map(_key, args))
            hit = memo.pop(key, None)
            if hit is None:
                hit = (args, fn(*args))
                if len(memo) >= size:
                    del memo[next(iter(memo))]
            memo[key] = hit  # now the newest
            return hit[1]

        remembered.cache_clear = memo.clear  # type: ignore[attr-defined]
        return remembered

    return decorate
