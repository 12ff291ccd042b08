"""The index stage: the index's files rendered from every project's entry (always, since the
index lists them all, built or reused), and the stamps a watch session's pages poll to know
what changed."""

from __future__ import annotations

import hashlib

from ..config import PortfolioSettings
from ..errors import BuildError
from ..site.index import index_files
from ..status import build_date
from .manifest import LIVE_STATE


def index_page(entries: list[dict], settings: PortfolioSettings, live: bool) -> dict[str, bytes]:
    """The index stage's files: index.html and the CSV of every project's headline figures
    (site.index). Staleness is judged against the build date (SOURCE_DATE_EPOCH when set)."""
    try:
        today = build_date()
    except ValueError as e:
        raise BuildError(str(e)) from None
    return index_files(entries, settings, f"{LIVE_STATE} __index__" if live else None, today)


def live_stamps(hashes: dict[str, str], slugs: list[str], index: bytes) -> dict[str, str]:
    """A short stamp of each project's inputs and of the index page: a page reloads when its
    stamp in live-state.json changes."""
    stamps = {slug: hashes[slug][:16] for slug in slugs}
    stamps["__index__"] = hashlib.sha256(index).hexdigest()[:16]
    return stamps
