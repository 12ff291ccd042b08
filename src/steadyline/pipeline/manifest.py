"""The manifest: what a published site records of itself (the version that built it, the
assets' key, and for each project its input hash, its files, its index entry and its
problems). The next build reads it to reuse what did not change, the output rule takes it as
the mark of a site of ours, and the merge reads the shards' manifests; the settings key is
part of every input hash and of a shard's record."""

from __future__ import annotations

import json
from pathlib import Path

from .. import __version__
from ..config import PortfolioSettings
from ..site.templates import templates_fingerprint
from .output_rule import MARKER

MANIFEST = MARKER  # the manifest is also the mark of a site steadyline published
LIVE_STATE = "live-state.json"


def _settings_key(settings: PortfolioSettings, live: bool) -> str:
    return json.dumps([__version__, templates_fingerprint(), repr(settings), live])


def _read_manifest(out: Path) -> dict:
    try:
        data = json.loads((out / MANIFEST).read_text(encoding="utf-8"))
        return data if data.get("version") == __version__ else {}
    except (OSError, ValueError):
        return {}


def manifest_record(
    akey: str,
    hashes: dict[str, str],
    entries: dict[str, dict],
    files_of: dict[str, list[str]],
    problems_of: dict[str, list[dict]],
    old: dict,
    shard: dict | None,
) -> dict:
    """The new manifest: every project listed (built now or reused), a reused project's
    problems carried over from the old manifest (*old*: its projects)."""
    record: dict = {
        "version": __version__,
        "assets": akey,
        "projects": {
            slug: {
                "hash": hashes[slug],
                "files": files_of[slug],
                "entry": entries[slug],
                "problems": problems_of.get(slug, old.get(slug, {}).get("problems", [])),
            }
            for slug in sorted(entries)
        },
    }
    if shard is not None:
        record["shard"] = shard
    return record
