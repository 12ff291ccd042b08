"""Small builders of Vega-Lite JSON as plain dicts.

The chart templates are written with these instead of composing Altair objects: Altair's layer
and concat constructors deep-copy every sub-chart (and validate), which made the first
composition of a template cost tenths of a second to seconds in every fresh worker process. A
plain dict costs microseconds, and the JSON written is exactly what is shown here.

Every function returns a new dict; nothing here is shared between templates.
"""

from __future__ import annotations

# The Vega-Lite schema version the specs are written for (what vega-embed in the site's bundle
# compiles; never fetched).
SCHEMA = "https://vega.github.io/schema/vega-lite/v6.4.1.json"

_TYPES = {"Q": "quantitative", "N": "nominal", "O": "ordinal", "T": "temporal"}


def field(shorthand: str, **props) -> dict:
    """A field definition from 'name:Q' (Q, N, O, T) plus channel properties."""
    name, _, t = shorthand.rpartition(":")
    if not name or t not in _TYPES:
        raise ValueError(f"field shorthand must be 'name:Q|N|O|T', got {shorthand!r}")
    return {"field": name, "type": _TYPES[t], **props}


def tip(shorthand: str, title: str, fmt: str | None = None, **props) -> dict:
    """One tooltip entry."""
    d = field(shorthand, title=title, **props)
    if fmt is not None:
        d["format"] = fmt
    return d


def mark(kind: str, **props) -> dict:
    return {"type": kind, **props}


def view(data: str, mark_def: dict, encoding: dict, transform: list | None = None) -> dict:
    """A unit view drawing from the named dataset ``data``."""
    v: dict = {"data": {"name": data}, "mark": mark_def, "encoding": encoding}
    if transform:
        v["transform"] = transform
    return v


def layer(*views: dict, **props) -> dict:
    return {"layer": list(views), **props}
