"""Shards: which projects `build --shard I/N` builds, and the record a shard's manifest keeps
so that the merge (``merge.py``) can check the shards against each other."""

from __future__ import annotations

import hashlib
import os
from dataclasses import asdict

from ..config import PortfolioSettings
from .manifest import _settings_key


def shard_of(slug: str, count: int) -> int:
    """The shard (1 to *count*) that builds project *slug*: by a hash of its folder's name, so
    that a project stays in its shard when others are added or removed (each shard's
    published site, kept between runs, then reuses what did not change), and no shard needs
    the list of the others to know its own. Shards are even in size on average, not exactly."""
    digest = hashlib.sha256(os.fsencode(slug)).digest()
    return int.from_bytes(digest[:8], "big") % count + 1


def portfolio_digest(slugs: list[str]) -> str:
    """A hash of the sorted project slugs of a portfolio: shards of one portfolio agree on it."""
    h = hashlib.sha256()
    for slug in sorted(slugs):
        h.update(os.fsencode(slug) + b"\0")
    return h.hexdigest()


def shard_record(settings: PortfolioSettings, shard: tuple[int, int], slugs: list[str]) -> dict:
    """What a shard's manifest says about it, for the merge (``merge.py``) to check the
    shards against each other and render the index: which shard of how many, the whole
    portfolio it is a part of, and the settings and templates it was built with."""
    index, count = shard
    return {
        "index": index,
        "count": count,
        "portfolio": portfolio_digest(slugs),
        "projects_total": len(slugs),
        "settings": asdict(settings),
        "key": hashlib.sha256(_settings_key(settings, False).encode()).hexdigest(),
    }
