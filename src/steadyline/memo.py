"""A small memo for work repeated on the same objects, found again by identity."""

from __future__ import annotations

import functools
from collections.abc import Callable

_SCALARS = (int, float, str, bool, type(None))


def _same(a, b) -> bool:
    return a is b or (type(a) in _SCALARS and type(a) is type(b) and a == b)


def by_identity(size: int) -> Callable:
    """Remember a pure function's last ``size`` answers, found again by the identity of its
    arguments (plain numbers and texts by value). The memo holds the arguments, so an id is not
    reused while remembered; the arguments must not be changed after the call. This is for work
    that the project page's and the history page's charts of one metric both do on the same
    analysis objects; a metric's two sections are made one after the other, so a few entries
    are enough and memory stays bounded."""

    def decorate(fn: Callable) -> Callable:
        memo: list[tuple[tuple, object]] = []

        @functools.wraps(fn)
        def remembered(*args):
            for i, (seen, result) in enumerate(memo):
                if len(seen) == len(args) and all(map(_same, seen, args)):
                    if i:
                        memo.insert(0, memo.pop(i))
                    return result
            result = fn(*args)
            memo.insert(0, (args, result))
            del memo[size:]
            return result

        remembered.cache_clear = memo.clear  # type: ignore[attr-defined]
        return remembered

    return decorate
