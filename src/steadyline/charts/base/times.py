"""Times along a series' x axis as text: ISO dates and datetimes read as UTC, written back as
Vega reads them (a date as it is, any other time in UTC with an explicit 'Z').
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from datetime import UTC, date, datetime

import numpy as np

_DATE_RE = re.compile(r"^\d{4}-\d{2}-\d{2}$")


def parse_time(text: str) -> datetime:
    """An ISO date or datetime as an aware UTC datetime (naive values are taken as UTC)."""
    if isinstance(text, datetime | date):
        raise TypeError("x values must be ISO strings, not date objects")
    s = text.strip()
    if s.endswith("Z"):
        s = s[:-1] + "+00:00"
    d = datetime.fromisoformat(s)
    if d.tzinfo is None:
        return d.replace(tzinfo=UTC)
    return d.astimezone(UTC)


def event_time(when: str | date) -> datetime:
    """An event's time as an aware UTC datetime: a date (or datetime, naive taken as UTC) as
    it is, ISO text read by :func:`parse_time`."""
    if isinstance(when, datetime):
        return when.replace(tzinfo=UTC) if when.tzinfo is None else when.astimezone(UTC)
    if isinstance(when, date):
        return datetime(when.year, when.month, when.day, tzinfo=UTC)
    return parse_time(when)


def event_text(when: str | date) -> str:
    """An event's time as written into a spec's rows (as :func:`time_text` writes x values)."""
    if isinstance(when, datetime):
        return utc_text(event_time(when))
    if isinstance(when, date):
        return when.isoformat()
    return time_text(when)


def time_text(text: str) -> str:
    """The x value as written into a spec: 'YYYY-MM-DD' as is (browsers read it as UTC), any
    datetime as UTC with an explicit 'Z' (a naive datetime would be read as local time)."""
    if not isinstance(text, str):
        raise TypeError(f"x values and event dates must be ISO strings, got {type(text).__name__}")
    s = text.strip()
    if _DATE_RE.match(s):
        return s
    return utc_text(parse_time(s))


_PLAIN_TIME = re.compile(r"\d{4}-\d{2}-\d{2}(?:[ T]\d{2}:\d{2}(?::\d{2})?)?")


def _plain_stamps(xs: Sequence[str]) -> np.ndarray | None:
    """The x values as datetime64[s] when every one is a plain date or a plain time to the
    minute or second with no offset (naive values are UTC, as :func:`parse_time` takes them);
    None otherwise (the one-by-one path handles the rest)."""
    if not xs or not all(type(x) is str for x in xs):
        return None
    if not all(map(_PLAIN_TIME.fullmatch, xs)):
        return None
    try:
        return np.array([x.replace(" ", "T") for x in xs], dtype="datetime64[s]")
    except ValueError:  # e.g. 2026-02-30: the one-by-one path says what is wrong
        return None


def utc_text(d: datetime) -> str:
    d = d.astimezone(UTC)
    if d.microsecond:
        return d.strftime("%Y-%m-%dT%H:%M:%S.") + f"{d.microsecond // 1000:03d}Z"
    return d.strftime("%Y-%m-%dT%H:%M:%SZ")
