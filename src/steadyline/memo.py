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


class _Remembered:
    """A pure function with its memo: called like the function; ``cache_clear`` forgets."""

    def __init__(self, fn: Callable, size: int):
        self._fn = fn
        self._size = size
        self._memo: dict[tuple, tuple[tuple, object]] = {}  # oldest first
        self.cache_clear = self._memo.clear
        _MEMOS.append(self._memo)
        functools.update_wrapper(self, fn)

    def __call__(self, *args):
        memo = self._memo
        key = tuple(map(_key, args))
        hit = memo.pop(key, None)
        if hit is None:
            hit = (args, self._fn(*args))
            if len(memo) >= self._size:
                del memo[next(iter(memo))]
        memo[key] = hit  # now the newest
        return hit[1]


def by_identity(size: int) -> Callable[[Callable], _Remembered]:
    """Remember a pure function's last ``size`` answers, found again by the identity of its
    arguments (plain numbers and texts by value). The memo holds the arguments, so an id is not
    reused while remembered; the arguments must not be changed after the call (the statistics'
    result arrays are read-only for this reason). This is for work that the project page's and
    the history page's charts of one metric both do on the same analysis objects; a metric's
    two sections are made one after the other, so a few entries are enough and memory stays
    bounded. For module-level functions only (the memo is not a method descriptor)."""

    def decorate(fn: Callable) -> _Remembered:
        return _Remembered(fn, size)

    return decorate
