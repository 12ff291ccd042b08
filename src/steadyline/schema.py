"""JSON Schemas of project.toml and portfolio.toml, for editors that check TOML against one.

The keys, their kinds, the required ones and the sets of choices come from
:data:`steadyline.config.keys.KEYS`: the key names and choices are those the validator checks
against, read from the same table; each key's kind (text, number, date ...) is held to what the
validator accepts by tests/test_editor_schema.py, which gives every key a value of the wrong
type and expects both to refuse it. The descriptions come from the comments of the two TOML
examples in the README (the format as users read it), so an editor shows the same words.

The schemas are JSON Schema draft 4, the draft the Taplo TOML language server (behind the common
editor extensions) reads. ``scripts/make_schemas.py`` writes them into ``steadyline/schemas/``;
the test holds the shipped files equal to what this module makes, and validates the demo's
files against them. A schema checks each key on its own; what only the whole file can tell
(periods that overlap, a target outside the limits, a column the data type needs) is left to
``steadyline check``.
"""

from __future__ import annotations

import json
import re
from typing import Any

from .config.keys import KEYS, SLUG_RE, Key

DRAFT = "http://json-schema.org/draft-04/schema#"
SCHEMA_FILES = {"project": "project.schema.json", "portfolio": "portfolio.schema.json"}

# A TOML date, as an editor hands it to a JSON Schema: its ISO 8601 text (from memory, for
# Taplo). The validator reads a date-time as its date, and a quoted ISO date as a date too.
_DATE = {"type": "string", "pattern": r"^\d{4}-\d{2}-\d{2}"}

# What a key of each kind is, when the README's example gives it no comment.
_KIND_WORDS = {
    "text": "text",
    "id": "lower-case letters, digits and hyphens",
    "number": "a number",
    "integer": "a whole number",
    "positive": "a positive number",
    "boolean": "true or false",
    "date": "a date like 2026-03-31",
    "period": "[start] or [start, end], dates, inclusive",
    "text-list": "a list of text",
    "char": "one character",
    "choice": "one of the choices",
    "bins": "a rule or a list of bin edges",
    "table": "a table",
    "tables": "tables",
}

_TABLE_HEADER = re.compile(r"^\[\[?\s*([\w.]+)\s*\]\]?\s*(?:#\s?(.*))?$")
_KEY_LINE = re.compile(r"^(#\s*)?(\w+)\s*=\s*.*?(?:\s#\s?(.*))?$")
_CONTINUED = re.compile(r"^\s+#\s?(.*)$")


def readme_descriptions(readme: str) -> dict[str, dict[str, str]]:
    """{file: {"table.key": comment}} from the README's two TOML examples (the blocks after
    the lines naming `portfolio.toml` and `project.toml`): a key's trailing comment, with the
    comment lines beneath it that continue it; a table header's comment describes the table."""
    out: dict[str, dict[str, str]] = {"project": {}, "portfolio": {}}
    lines = readme.splitlines()
    for file, marker in (
        ("portfolio", "`portfolio.toml` (every key optional):"),
        ("project", "`project.toml`, with every key:"),
    ):
        start = next(i for i, line in enumerate(lines) if line.startswith(marker))
        start = next(i for i in range(start, len(lines)) if lines[i].startswith("```toml"))
        table, last = "", None
        found = out[file]
        for line in lines[start + 1 :]:
            if line.startswith("```"):
                break
            if (m := _CONTINUED.match(line)) and last is not None:
                found[last] = f"{found[last]} {m.group(1).strip()}".strip()
                continue
            if m := _TABLE_HEADER.match(line):
                table = m.group(1)
                last = table
                found[last] = (m.group(2) or "").strip()
                continue
            if m := _KEY_LINE.match(line):
                last = f"{table}.{m.group(2)}" if table else m.group(2)
                found[last] = (m.group(3) or "").strip()
                continue
            last = None
        for key, text in list(found.items()):
            text = re.sub(r"\s+", " ", text)  # the README aligns its comments with spaces
            found[key] = text.removeprefix("… ").removesuffix(" …").strip()
    return out


def _value(k: Key) -> dict[str, Any]:
    kind = k.kind
    if kind == "text":
        return {"type": "string", "pattern": r"\S"} if k.required else {"type": "string"}
    if kind == "id":
        return {"type": "string", "pattern": SLUG_RE.pattern}
    if kind == "choice":
        return {"type": "string", "enum": list(k.choices)}
    if kind == "number":
        return {"type": "number"}
    if kind == "positive":
        return {"type": "number", "minimum": 0, "exclusiveMinimum": True}
    if kind == "integer":
        out: dict[str, Any] = {"type": "integer"}
        if k.minimum is not None:
            out["minimum"] = k.minimum
        return out
    if kind == "boolean":
        return {"type": "boolean"}
    if kind == "date":
        return dict(_DATE)
    if kind == "period":
        return {"type": "array", "items": dict(_DATE), "minItems": 1, "maxItems": 2}
    if kind == "text-list":
        return {"type": "array", "items": {"type": "string"}}
    if kind == "char":
        return {"type": "string", "minLength": 1, "maxLength": 1}
    if kind == "bins":
        return {
            "oneOf": [
                {"type": "string", "enum": list(k.choices)},
                {"type": "array", "items": {"type": "number"}, "minItems": 2},
            ]
        }
    raise ValueError(f"no schema for the kind {kind!r} of key {k.name!r}")


def _object(table: str, path: str, words: dict[str, str]) -> dict[str, Any]:
    """The schema of one table of KEYS; *path* is its dotted name in the README's example."""
    props: dict[str, Any] = {}
    for k in KEYS[table]:
        name = f"{path}.{k.name}" if path else k.name
        if k.kind in ("table", "tables"):
            sub = f"{table}.{k.name}" if table != "project" and table != "portfolio" else k.name
            body = _object(sub, name, words)
            prop = body
            if k.kind == "tables":  # [[metric]] is required, so one or more; [[event]] any
                prop = {"type": "array", "items": body, **({"minItems": 1} if k.required else {})}
        else:
            prop = _value(k)
        text = words.get(name) or _KIND_WORDS[k.kind]
        if text in ("required", "optional"):  # the README's comment says only that
            text = f"{text}: {_KIND_WORDS[k.kind]}"
        if k.kind == "choice" and "|" not in text and " or " not in f" {text}":
            text = f"{text}: one of {', '.join(json.dumps(c) for c in k.choices)}"
        prop = {"description": text, **prop}
        props[k.name] = prop
    out: dict[str, Any] = {"type": "object", "properties": props, "additionalProperties": False}
    required = [k.name for k in KEYS[table] if k.required]
    if required:
        out["required"] = required
    return out


_TITLES = {
    "project": (
        "steadyline project.toml",
        "The metadata of one improvement project: who leads it, its phase, problem, "
        "periods, events and the metrics drawn from its CSV files.",
    ),
    "portfolio": (
        "steadyline portfolio.toml",
        "Portfolio-wide settings for every project in the projects folder; every key is optional.",
    ),
}


def schema(file: str, readme: str) -> dict[str, Any]:
    """The JSON Schema of *file* ("project" or "portfolio"), described from *readme*."""
    words = readme_descriptions(readme)[file]
    body = _object(file, "", words)
    title, description = _TITLES[file]
    return {"$schema": DRAFT, "title": title, "description": description, **body}


def render(file: str, readme: str) -> str:
    """The schema file's text, as shipped: sorted keys, two-space indent, a final newline."""
    return json.dumps(schema(file, readme), indent=2, sort_keys=True, ensure_ascii=False) + "\n"
